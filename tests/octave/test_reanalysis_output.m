% The reanalysis output of the coupled model river_town: the demo
% demos/demo_lowmarsh_reanalysis.m at its reduced size (6 years, 60
% members) writes the smoothed trajectories of its weakly coupled run
% (a fixed-lag smoother with a lag per component) with their bands, and
% the filtered ones beside them, as CSV and as NetCDF through
% sluice.save_run. The NetCDF file is read back with Octave's netcdf
% package (its low-level netcdf_* functions) and, where installed, with the
% NetCDF library's own ncdump, and checked against the CF conventions
% ("NetCDF Climate and Forecast (CF) Metadata Conventions", version 1.8:
% 2.6.1 Conventions, 3.1 units, 3.2 long_name, 3.3 standard_name, 4.4
% time). The CSV is read back against the result at its printed
% precision (10 significant digits). A target that cannot be written is
% refused and leaves nothing behind.

%!function d = scratch ()
%! d = tempname ();
%! mkdir (d);
%!endfunction

%!function drop (d)
%! if (exist (d, 'dir'))
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (d, 's');
%! end
%!endfunction

%!function id = error_id (f)
%! id = '';
%! try
%!   f ();
%! catch err
%!   id = err.identifier;
%! end
%!endfunction

%!function v = nc_att (ncid, varid, name)
%! v = [];
%! try
%!   v = netcdf_getAtt (ncid, varid, name);
%! catch
%! end
%!endfunction

%!shared res, info, out, nc
%! root = fileparts (fileparts (fileparts (which ('sluice.filter'))));
%! addpath (fullfile (root, 'demos'));
%! out = tempname ();
%! txt = evalc ('[res, info] = demo_lowmarsh_reanalysis (out, ''small'');');
%! nc = fullfile (out, 'reanalysis.nc');
%! sluice.internal.compat ('netcdf', 'save_run');   % loads the netcdf package
%! assert (~isempty (strfind (txt, 'not a flood warning')));
%! assert (~isempty (strfind (txt, 'member-days/s')));

%!test
%! % the files the demo says it writes are there
%! for f = {'reanalysis_states.csv', 'reanalysis_params.csv', 'filtered_states.csv', ...
%!          'filtered_params.csv', 'reanalysis.nc', 'flows.png', ...
%!          'levels.png', 'population.png', 'memory.png', 'levee.png', 'params.png'}
%!   assert (exist (fullfile (out, f{1}), 'file'), 2, f{1});
%! end
%! % one observation table of every kind, the questionnaire as binomial
%! % counts of the derived quantity 'aware'
%! assert (sort (unique (info.obs.variable))', sort ({'Q', 'level', 'G', 'H', 'aware'}));
%! b = strcmp (info.obs.family, 'binomial');
%! assert (all (strcmp (info.obs.variable(b), 'aware')) && all (info.obs.n(b) == 150));
%! % the visible states only: GR4J's queues and the day counter left out
%! assert (res.state_names, {'S', 'R', 'Q', 'G', 'D', 'H', 'M', 'F', 'R_levee', 'Qmax', 'level'});
%! assert (res.param_names, {'X1', 'a', 'muS'});
%! % smoothed, a lag per component (river, town): the town's the
%! % questionnaire's interval (2 years at this size); the smoothed
%! % summaries hold every visible state and parameter at every time, the
%! % last time's equal to the filtered ones (nothing comes after it), the
%! % town's differ from the filtered ones before its observations
%! assert (res.smoothed.method, 'fixed_lag');
%! assert (res.smoothed.lag, [30 730]);
%! assert (info.lag, [30 730]);
%! assert (size (res.smoothed.states.quantiles), size (res.states.quantiles));
%! assert (all (isfinite (res.smoothed.states.quantiles(:))));
%! assert (all (isfinite (res.smoothed.params.quantiles(:))));
%! assert (res.smoothed.states.quantiles(:, :, end), res.states.quantiles(:, :, end));
%! iM = strcmp (res.state_names, 'M');
%! assert (any (res.smoothed.states.mean(iM, :) ~= res.states.mean(iM, :)));
%! assert (size (res.coupling.smoothed_distinct), [2 numel(res.times)]);
%! assert (res.smoothed.distinct, min (res.coupling.smoothed_distinct, [], 1));
%! % the coverage of the truth the demo prints: smoothed and filtered
%! assert (all (isfield (info.coverage, {'G', 'M', 'H', 'Q', 'level'})));

%!test
%! % the NetCDF file through the netcdf package's low-level functions (netcdf_*):
%! % every smoothed and filtered summary equal to the bit
%! ncid = netcdf_open (nc, 'NC_NOWRITE');
%! unwind_protect
%!   get = @(name) netcdf_getVar (ncid, netcdf_inqVarID (ncid, name));
%!   t = get ('time');
%!   assert (isequal (typecast (t(:), 'uint64'), typecast (res.times(:), 'uint64')));
%!   lv = get ('quantile');
%!   assert (lv(:)', res.quantile_levels);
%!   assert (res.coupling.mode, 'weak');
%!   sm = res.smoothed;
%!   for k = 1:numel (res.state_names)
%!     s = res.state_names{k};
%!     m = get ([s '_smoothed_mean']);
%!     assert (isequal (typecast (m(:), 'uint64'), typecast (sm.states.mean(k, :)', 'uint64')), s);
%!     q = get ([s '_smoothed_quantiles']);
%!     want = squeeze (sm.states.quantiles(k, :, :));
%!     assert (isequal (typecast (q(:), 'uint64'), typecast (want(:), 'uint64')), s);
%!   end
%!   for k = 1:numel (res.param_names)
%!     p = res.param_names{k};
%!     q = get ([p '_smoothed_quantiles']);
%!     want = squeeze (sm.params.quantiles(k, :, :));
%!     assert (isequal (typecast (q(:), 'uint64'), typecast (want(:), 'uint64')), p);
%!   end
%!   d = get ('smoothed_distinct');
%!   assert (d(:)', sm.distinct);
%!   for k = 1:numel (res.state_names)
%!     s = res.state_names{k};
%!     m = get ([s '_mean']);
%!     assert (isequal (typecast (m(:), 'uint64'), typecast (res.states.mean(k, :)', 'uint64')), s);
%!     q = get ([s '_quantiles']);                % quantile x time in Octave's order
%!     want = squeeze (res.states.quantiles(k, :, :));
%!     assert (isequal (typecast (q(:), 'uint64'), typecast (want(:), 'uint64')), s);
%!   end
%!   for k = 1:numel (res.param_names)
%!     p = res.param_names{k};
%!     m = get ([p '_mean']);
%!     assert (isequal (typecast (m(:), 'uint64'), typecast (res.params.mean(k, :)', 'uint64')), p);
%!     q = get ([p '_quantiles']);
%!     want = squeeze (res.params.quantiles(k, :, :));
%!     assert (isequal (typecast (q(:), 'uint64'), typecast (want(:), 'uint64')), p);
%!   end
%!   % CF: the Conventions attribute (2.6.1); time in days since a date
%!   % with its standard_name and calendar (4.4)
%!   G = netcdf_getConstant ('NC_GLOBAL');
%!   assert (netcdf_getAtt (ncid, G, 'Conventions'), 'CF-1.8');
%!   assert (~isempty (netcdf_getAtt (ncid, G, 'title')));
%!   tid = netcdf_inqVarID (ncid, 'time');
%!   assert (netcdf_getAtt (ncid, tid, 'units'), 'days since 1960-01-01 00:00:00');
%!   assert (netcdf_getAtt (ncid, tid, 'standard_name'), 'time');
%!   assert (netcdf_getAtt (ncid, tid, 'calendar'), 'standard');
%!   % every variable has long_name and units (3.1, 3.2); only time has a
%!   % standard_name (3.3: a name must come from the table, and GR4J's
%!   % flow in mm/d does not fit water_volume_transport_in_river_channel)
%!   [~, nvars] = netcdf_inq (ncid);
%!   for v = 0:nvars - 1
%!     name = netcdf_inqVar (ncid, v);
%!     ln = nc_att (ncid, v, 'long_name');
%!     un = nc_att (ncid, v, 'units');
%!     assert (ischar (ln) && ~isempty (ln), name);
%!     assert (ischar (un) && ~isempty (un), name);
%!     if (~strcmp (name, 'time'))
%!       assert (isempty (nc_att (ncid, v, 'standard_name')), name);
%!     end
%!   end
%!   % units and descriptions of the states from the demo's options
%!   qid = netcdf_inqVarID (ncid, 'Q_mean');
%!   assert (netcdf_getAtt (ncid, qid, 'units'), 'mm d-1');
%!   assert (~isempty (strfind (netcdf_getAtt (ncid, qid, 'long_name'), ...
%!                              'Q (river flow at the town gauge')));
%!   assert (netcdf_getAtt (ncid, netcdf_inqVarID (ncid, 'H_quantiles'), 'units'), 'm');
%!   assert (netcdf_getAtt (ncid, netcdf_inqVarID (ncid, 'X1_mean'), 'units'), 'mm');
%!   % the smoothed variables: the state's units, a long name saying so
%!   gid = netcdf_inqVarID (ncid, 'G_smoothed_quantiles');
%!   assert (netcdf_getAtt (ncid, gid, 'units'), '1');
%!   assert (~isempty (strfind (netcdf_getAtt (ncid, gid, 'long_name'), 'smoothed')));
%! unwind_protect_cleanup
%!   netcdf_close (ncid);
%! end_unwind_protect
%! % and the whole result back through sluice.load_run; the operator's
%! % function handle among the settings comes back as its text
%! back = sluice.load_run (nc);
%! assert (isequaln (rmfield (back, {'saved', 'options'}), rmfield (res, 'options')));
%! assert (back.options.operators.fun, func2str (res.options.operators.fun));
%! assert (back.saved.rerunnable, false);

%!test
%! % the NetCDF library's own reader: ncdump's header and its values at
%! % 17 significant digits, which give a double back exactly (IEEE 754)
%! p = sluice.internal.find_program ('ncdump');
%! if (isempty (p))
%!   printf ('skipped: ncdump is not installed (Debian netcdf-bin)\n');
%! else
%!   [st, head] = system (sprintf ('"%s" -h "%s"', p, nc));
%!   assert (st, 0);
%!   assert (~isempty (strfind (head, ':Conventions = "CF-1.8"')));
%!   assert (~isempty (strfind (head, 'time:units = "days since 1960-01-01 00:00:00"')));
%!   assert (~isempty (strfind (head, 'Q_mean:units = "mm d-1"')));
%!   [st, txt] = system (sprintf ('"%s" -p 17,17 -v Q_mean "%s"', p, nc));
%!   assert (st, 0);
%!   data = regexp (txt, 'Q_mean =([^;]*);', 'tokens', 'once');
%!   vals = str2double (strsplit (strtrim (strrep (data{1}, char (10), ' ')), ','));
%!   iq = find (strcmp (res.state_names, 'Q'));
%!   assert (isequal (vals, res.states.mean(iq, :)));
%! end

%!test
%! % the CSV tables: the header names every column; each number equals
%! % the result's at the printed precision (10 significant digits): the
%! % reanalysis files the smoothed summaries, the filtered files the
%! % filtered ones
%! for part = {'reanalysis', 'filtered'}
%! if (strcmp (part{1}, 'reanalysis'))
%!   S = res.smoothed.states;
%!   Pm = res.smoothed.params;
%! else
%!   S = res.states;
%!   Pm = res.params;
%! end
%! f = fullfile (out, [part{1} '_states.csv']);
%! lines = strsplit (strtrim (fileread (f)), char (10));
%! head = strsplit (lines{1}, ',');
%! assert (head(1:6), {'time', 'date', 'S_mean', 'S_q05', 'S_q50', 'S_q95'});
%! assert (numel (head), 2 + 4 * numel (res.state_names));
%! assert (numel (lines) - 1, numel (res.times));
%! first = strsplit (lines{2}, ',');
%! assert (first{2}, datestr (res.dates(1), 'yyyy-mm-dd'));
%! % the text to numbers with str2double (correctly rounded, as C's
%! % strtod; textscan's %f may land one unit in the last place away)
%! cells = cellfun (@(l) strsplit (l, ','), lines(2:end), 'UniformOutput', false);
%! cells = vertcat (cells{:});
%! printed = @(x) str2double (cellstr (num2str (x(:), '%.10g')));
%! assert (isequal (str2double (cells(:, 1)), printed (res.times)));
%! for k = 1:numel (res.state_names)
%!   s = res.state_names{k};
%!   c = 2 + 4 * (k - 1);
%!   assert (isequal (str2double (cells(:, c + 1)), printed (S.mean(k, :))), s);
%!   for j = 1:3
%!     assert (isequal (str2double (cells(:, c + 1 + j)), ...
%!                      printed (S.quantiles(k, j, :))), s);
%!   end
%! end
%! lines = strsplit (strtrim (fileread (fullfile (out, [part{1} '_params.csv']))), char (10));
%! assert (lines{1}, ['time,date,X1_mean,X1_q05,X1_q50,X1_q95,a_mean,a_q05,a_q50,a_q95,', ...
%!                    'muS_mean,muS_q05,muS_q50,muS_q95']);
%! cells = cellfun (@(l) strsplit (l, ','), lines(2:end), 'UniformOutput', false);
%! cells = vertcat (cells{:});
%! assert (isequal (str2double (cells(:, 3)), printed (Pm.mean(1, :))));
%! assert (isequal (str2double (cells(:, 14)), printed (Pm.quantiles(3, 3, :))));
%! end

%!test
%! % a target that cannot be written: a clear error and nothing at the
%! % target; a write that fails half-way leaves an existing file as it was
%! % and no temporary file (save_run writes beside the target, then renames)
%! d = scratch ();
%! unwind_protect
%!   f = fullfile (d, 'missing', 'r.nc');
%!   assert (error_id (@() sluice.save_run (res, f)), 'sluice:save_run:cannotwrite');
%!   assert (~exist (fullfile (d, 'missing'), 'dir'));
%!   g = fullfile (d, 'r.nc');
%!   sluice.save_run (res, g);
%!   before = fileread (g);
%!   bad = res;
%!   bad.extra = 1 + 2i;                        % NetCDF cannot hold it
%!   assert (error_id (@() sluice.save_run (bad, g)), 'sluice:save_run:unsupported');
%!   assert (strcmp (fileread (g), before));
%!   h = fullfile (d, 'new.nc');
%!   assert (error_id (@() sluice.save_run (bad, h)), 'sluice:save_run:unsupported');
%!   assert (~exist (h, 'file'));
%!   left = dir (d);
%!   assert (sort ({left(~[left.isdir]).name}), {'r.nc'});
%!   % a read-only folder (where the user is not allowed to override it)
%!   ro = fullfile (d, 'ro');
%!   mkdir (ro);
%!   system (sprintf ('chmod a-w "%s"', ro));
%!   [fid, ~] = fopen (fullfile (ro, 'probe'), 'w');
%!   if (fid >= 0)
%!     fclose (fid);
%!     delete (fullfile (ro, 'probe'));
%!     printf ('skipped the read-only folder: this user may write there anyway\n');
%!   else
%!     assert (error_id (@() sluice.save_run (res, fullfile (ro, 'r.nc'))), ...
%!             'sluice:save_run:cannotwrite');
%!     L = dir (ro);
%!     assert (all ([L.isdir]));
%!   end
%!   system (sprintf ('chmod u+w "%s"', ro));
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect

%!test
%! drop (out);

%!error id=sluice:demo_lowmarsh_reanalysis:badscale
%! addpath (fullfile (fileparts (fileparts (fileparts (which ('sluice.filter')))), 'demos'));
%! demo_lowmarsh_reanalysis (tempname (), 'huge');

%!error id=sluice:demo_lowmarsh_reanalysis:badoutdir
%! addpath (fullfile (fileparts (fileparts (fileparts (which ('sluice.filter')))), 'demos'));
%! demo_lowmarsh_reanalysis (3);
