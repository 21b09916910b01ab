% Saving and reopening runs: sluice.save_run and sluice.load_run. Round
% trips of filter, ensemble Kalman, smoothed and twin results through
% NetCDF and Octave's binary format, the file read by the netcdf
% package's own readers against the CF conventions ("NetCDF Climate and
% Forecast (CF) Metadata Conventions", version 1.8), and every error.

%!function same (a, b, where)
%! % a and b equal in class, size and, for numbers, every bit
%! assert (strcmp (class (a), class (b)), 'class differs at %s', where);
%! assert (isequal (size (a), size (b)), 'size differs at %s', where);
%! if (isstruct (a))
%!   assert (isequal (fieldnames (a), fieldnames (b)), 'fields differ at %s', where);
%!   f = fieldnames (a);
%!   for k = 1:numel (a)
%!     for j = 1:numel (f)
%!       same (a(k).(f{j}), b(k).(f{j}), sprintf ('%s(%d).%s', where, k, f{j}));
%!     end
%!   end
%! elseif (iscell (a))
%!   for k = 1:numel (a)
%!     same (a{k}, b{k}, sprintf ('%s{%d}', where, k));
%!   end
%! elseif (isa (a, 'double'))
%!   assert (isequal (typecast (a(:), 'uint64'), typecast (b(:), 'uint64')), ...
%!           'numbers differ at %s', where);
%! elseif (isa (a, 'function_handle'))
%!   assert (strcmp (func2str (a), func2str (b)), 'handles differ at %s', where);
%! else
%!   assert (isequal (a, b), 'values differ at %s', where);
%! end
%!endfunction

%!function d = scratch ()
%! d = tempname ();
%! mkdir (d);
%!endfunction

%!function drop (d)
%! confirm_recursive_rmdir (false, 'local');
%! rmdir (d, 's');
%!endfunction

%!function v = attr (info, name)
%! % a global attribute from ncinfo
%! k = find (strcmp ({info.Attributes.Name}, name));
%! assert (numel (k), 1, name);
%! v = info.Attributes(k).Value;
%!endfunction

%!function f = format_of (name)
%! f = 'octave';
%! if (numel (name) > 3 && strcmp (name(end-2:end), '.nc'))
%!   f = 'netcdf';
%! end
%!endfunction

%!function id = lasterror_id (f)
%! id = '';
%! try
%!   f ();
%! catch err
%!   id = err.identifier;
%! end
%!endfunction

%!shared spec, pr, obs, pf, ops
%! sluice.internal.compat ('netcdf', 'save_run');   % loads the netcdf package
%! % x(t + 1) = a x(t) with an estimated a; a derived quantity 'twice'
%! % observed through a function handle (which NetCDF keeps as text)
%! spec = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, 'params', {'a'});
%! pr = [sluice.prior('x', 'normal', [1.3 0.2]), sluice.prior('a', 'uniform', [0.85 1.05])];
%! obs = struct ('time', [1; 2; 2; 3; 4], 'variable', {{'x'; 'x'; 'twice'; 'x'; 'x'}}, ...
%!               'value', [1.21; 1.17; 2.27; NaN; 1.02], 'sigma', [0.1; 0.1; 0.2; 0.1; 0.1]);
%! ops = struct ('names', 'twice', 'fun', @(t, X, P) 2 * X);
%! pf = sluice.filter (spec, pr, obs, 'members', 300, 'seed', 17, 'progress', false, ...
%!                     'operators', ops, ...
%!                     'quantiles', [0.05 0.25 0.5 0.75 0.95]);

%!test
%! % a particle-filter run with parameters and a function operator
%! d = scratch ();
%! unwind_protect
%!   f = fullfile (d, 'pf.nc');
%!   sluice.save_run (pf, f, 'units', struct ('x', 'm'), 'institution', 'Vell river board');
%!   back = sluice.load_run (f);
%!   assert (back.saved.format, 'netcdf');
%!   assert (back.saved.file, f);
%!   assert (back.saved.sluice_version, sluice.internal.version ());
%!   % the handle comes back as its text, and the result says so
%!   assert (back.saved.rerunnable, false);
%!   assert (~isempty (strfind (back.saved.note, 'options.operators.fun')));
%!   assert (back.options.operators.fun, func2str (pf.options.operators.fun));
%!   want = pf;
%!   want.options.operators.fun = func2str (pf.options.operators.fun);
%!   same (rmfield (back, 'saved'), want, 'res');
%!   % what the consumers of results take
%!   sluice.internal.check_result (back, 1, 'x', {'params'});
%!   files = sluice.report (back, 'outdir', fullfile (d, 'report'), 'obs', obs);
%!   assert (numel (files) >= 4);
%!   assert (exist (fullfile (d, 'report', 'fan_x.png'), 'file') > 0);
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect

%!test
%! % the same file through the netcdf package's own readers (ncinfo,
%! % ncread, ncreadatt): CF 1.8 sections 2.6 (global attributes), 3.1
%! % (units), 3.3 (standard_name), 4.4 (time) and 3.5 (flags)
%! d = scratch ();
%! unwind_protect
%!   f = fullfile (d, 'pf.nc');
%!   sluice.save_run (pf, f, 'units', struct ('x', 'm'), 'title', 'Vell at the mill');
%!   info = ncinfo (f);
%!   assert (attr (info, 'Conventions'), 'CF-1.8');
%!   assert (attr (info, 'title'), 'Vell at the mill');
%!   assert (attr (info, 'source'), ['sluice ' sluice.internal.version()]);
%!   assert (~isempty (regexp (attr (info, 'history'), ...
%!                             '^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ written by sluice.save_run$', 'once')));
%!   assert (attr (info, 'model'), pf.model);
%!   assert (attr (info, 'method'), 'pf');
%!   assert (attr (info, 'members'), 300);
%!   assert (attr (info, 'seed'), 17);
%!   % the settings as JSON text: the handle as its text form
%!   s = jsondecode (attr (info, 'settings'));
%!   assert (s.members, 300);
%!   assert (s.operators.fun, '@(t, X, P) 2 * X');
%!   % every variable has long_name and units; none a standard_name, as
%!   % time without a calendar is not a CF time coordinate
%!   for k = 1:numel (info.Variables)
%!     v = info.Variables(k);
%!     names = {v.Attributes.Name};
%!     assert (any (strcmp (names, 'long_name')), v.Name);
%!     assert (any (strcmp (names, 'units')), v.Name);
%!     assert (~any (strcmp (names, 'standard_name')), v.Name);
%!   end
%!   % no calendar: model times, unit "1", no standard_name
%!   assert (ncread (f, 'time'), pf.times(:));
%!   assert (ncreadatt (f, 'time', 'units'), '1');
%!   assert (ncread (f, 'quantile'), pf.quantile_levels(:));
%!   assert (ncread (f, 'x_mean'), pf.states.mean(:));
%!   assert (ncreadatt (f, 'x_mean', 'units'), 'm');
%!   assert (ncreadatt (f, 'a_mean', 'units'), '1');
%!   % quantiles: time x quantile in the file, quantile x time in Octave
%!   assert (ncread (f, 'a_quantiles'), squeeze (pf.params.quantiles(1, :, :)));
%!   assert (ncread (f, 'ess'), pf.ess(:));
%!   assert (ncread (f, 'log_evidence'), pf.log_evidence);
%!   assert (logical (ncread (f, 'resampled')), pf.resampled(:));
%!   assert (ncreadatt (f, 'resampled', 'flag_values'), int8 ([0 1]));
%!   assert (ncreadatt (f, 'resampled', 'flag_meanings'), 'kept resampled');
%!   assert (ncread (f, 'x_final'), pf.final.X(:));
%!   k = find (strcmp ({info.Variables.Name}, 'x_quantiles'));
%!   assert ({info.Variables(k).Dimensions.Name}, {'quantile', 'time'});
%!   assert (class (ncread (f, 'x_quantiles')), 'double');
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect

%!test
%! % an ensemble Kalman run with the fixed-lag smoother, through both formats
%! r = sluice.filter (spec, pr, obs, 'members', 60, 'seed', 5, 'method', 'etkf', ...
%!                    'lag', 2, 'progress', false, 'operators', ops);
%! assert (r.smoothed.method, 'enks');
%! d = scratch ();
%! unwind_protect
%!   for name = {'enkf.nc', 'enkf.mat', 'enkf.run'}
%!     f = fullfile (d, name{1});
%!     sluice.save_run (r, f);
%!     back = sluice.load_run (f);
%!     want = r;
%!     if (strcmp (back.saved.format, 'netcdf'))
%!       want.options.operators.fun = func2str (r.options.operators.fun);
%!     end
%!     same (rmfield (back, 'saved'), want, name{1});
%!     assert (back.saved.format, format_of (name{1}));
%!   end
%!   f = fullfile (d, 'enkf.nc');
%!   assert (ncread (f, 'x_smoothed_mean'), r.smoothed.states.mean(:));
%!   assert (ncread (f, 'a_smoothed_quantiles'), squeeze (r.smoothed.params.quantiles(1, :, :)));
%!   assert (ncread (f, 'x_forecast_mean'), r.forecast.mean(:));
%!   % the Octave file keeps the function handle itself
%!   back = sluice.load_run (fullfile (d, 'enkf.mat'));
%!   assert (back.saved.rerunnable, true);
%!   assert (isa (back.options.operators.fun, 'function_handle'));
%!   assert (back.options.operators.fun (0, 3, 1), 6);
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect

%!test
%! % the ensemble history and a genealogy smoother (sluice.smooth)
%! r = sluice.filter (spec, pr, obs, 'members', 40, 'seed', 2, 'history', true, ...
%!                    'progress', false, 'param_move', 'kernel', 'operators', ops);
%! s = sluice.smooth (r);
%! d = scratch ();
%! unwind_protect
%!   f = fullfile (d, 'smooth.nc');
%!   sluice.save_run (s, f);
%!   back = sluice.load_run (f);
%!   want = s;
%!   want.options.operators.fun = func2str (s.options.operators.fun);
%!   same (rmfield (back, 'saved'), want, 'smoothed');
%!   % the member dimension: member x time in Octave, time x member in the file
%!   info = ncinfo (f);
%!   k = find (strcmp ({info.Variables.Name}, 'x_ensemble'));
%!   assert ({info.Variables(k).Dimensions.Name}, {'member', 'time'});
%!   assert ([info.Variables(k).Dimensions.Length], [40, numel(r.times)]);
%!   assert (ncread (f, 'x_ensemble'), squeeze (r.history.X(1, :, :)));
%!   assert (ncread (f, 'a_ensemble'), squeeze (r.history.P(1, :, :)));
%!   assert (ncread (f, 'weight'), r.history.w);
%!   assert (ncread (f, 'ancestor'), r.history.ancestors);
%!   assert (ncread (f, 'x_smoothed_mean'), s.smoothed.states.mean(:));
%!   % the smoother accepts the reopened run again
%!   again = sluice.smooth (rmfield (back, 'saved'));
%!   same (again.smoothed.states, s.smoothed.states, 'resmoothed');
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect

%!test
%! % a run with dates: "days since" units that Octave's datenum reads back
%! % to the run's dates (CF 1.8 section 4.4: "days since YYYY-MM-DD hh:mm:ss")
%! d = scratch ();
%! unwind_protect
%!   for unit = {'days', 'years'}
%!     r = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 9, 'progress', false, ...
%!                        'operators', struct ('names', 'twice', 'H', 2), ...
%!                        'origin', '2003-07-14T09:30:00+02:00', 'time_unit', unit{1});
%!     f = fullfile (d, ['dates_' unit{1} '.nc']);
%!     sluice.save_run (r, f);
%!     u = ncreadatt (f, 'time', 'units');
%!     tok = regexp (u, '^days since (\d{4}-\d\d-\d\d \d\d:\d\d:\d\d)$', 'tokens', 'once');
%!     assert (~isempty (tok), u);
%!     assert (tok{1}, '2003-07-14 07:30:00');
%!     dates = datenum (tok{1}, 'yyyy-mm-dd HH:MM:SS') + ncread (f, 'time');
%!     % a datenum near 7.3e5 carries about 1e-10 days of rounding
%!     assert (dates, r.dates(:), 1e-9);
%!     assert (ncreadatt (f, 'time', 'standard_name'), 'time');
%!     assert (ncreadatt (f, 'time', 'calendar'), 'standard');
%!     assert (ncreadatt (f, 'time', 'axis'), 'T');
%!     back = sluice.load_run (f);
%!     assert (back.saved.rerunnable, true);
%!     same (rmfield (back, 'saved'), r, unit{1});
%!   end
%!   % years of 365.25 days: the exact model times beside the days
%!   assert (ncread (f, 'model_time'), r.times(:));
%!   assert (ncread (f, 'time'), r.times(:) * 365.25);
%!   % before the Gregorian reform the standard calendar is Julian
%!   r = sluice.filter (spec, pr, obs, 'members', 20, 'seed', 9, 'progress', false, ...
%!                      'operators', struct ('names', 'twice', 'H', 2), 'origin', '1500-03-01');
%!   f = fullfile (d, 'old.nc');
%!   sluice.save_run (r, f);
%!   assert (ncreadatt (f, 'time', 'calendar'), 'proleptic_gregorian');
%!   assert (ncreadatt (f, 'time', 'units'), 'days since 1500-03-01 00:00:00');
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect

%!test
%! % a twin: its filter in the root group, the open loop and the truth in groups
%! m = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'level'});
%! net = struct ('variable', 'level', 'every', 2, 'sigma', 0.3, 'missing', 0.2);
%! tw = sluice.twin (m, struct ('times', 0:12, 'x0', 1.7), net, 'seed', 4, ...
%!                   'prior', sluice.prior ('level', 'normal', [0 1]), ...
%!                   'filter', {'members', 200, 'progress', false});
%! d = scratch ();
%! unwind_protect
%!   for name = {'twin.nc', 'twin.mat'}
%!     f = fullfile (d, name{1});
%!     sluice.save_run (tw, f, 'units', struct ('level', 'm'));
%!     back = sluice.load_run (f);
%!     same (rmfield (back, 'saved'), tw, name{1});
%!     sc = sluice.scores (back.filter, back.truth, back.obs);
%!     same (sc, sluice.scores (tw.filter, tw.truth, tw.obs), 'scores');
%!   end
%!   f = fullfile (d, 'twin.nc');
%!   info = ncinfo (f);
%!   assert (sort ({info.Groups.Name}), {'openloop', 'twin'});
%!   assert (attr (info, 'sluice_kind'), 'twin');
%!   assert (ncread (f, 'level_mean'), tw.filter.states.mean(:));
%!   assert (ncread (f, '/openloop/level_mean'), tw.openloop.states.mean(:));
%!   assert (ncread (f, '/twin/true_level'), tw.truth.X(:));
%!   assert (ncread (f, '/twin/time'), tw.truth.times(:));
%!   assert (ncread (f, '/twin/obs_value'), tw.obs.value);
%!   assert (ncreadatt (f, '/twin/true_level', 'units'), 'm');
%!   files = sluice.report (back, 'outdir', fullfile (d, 'report'));
%!   assert (exist (fullfile (d, 'report', 'fan_level.png'), 'file') > 0);
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect

%!test
%! % every kind of value a result or its settings may hold comes back
%! % from NetCDF with its class, size and bits
%! r = pf;
%! r.options.operators = {};
%! r.options.odd = struct ('a', {1, 'two'}, 'b', {int16([3 -4]), {}});
%! r.options.nested = {1, {'x', 'yz'}, struct(), struct('q', {}), zeros(0, 3, 'single')};
%! r.options.rows = ['ab'; 'cd'];
%! r.options.numbers = {-0, [NaN, Inf, -Inf, realmin / 4], uint64(2)^60 + 1, int8(-128), ...
%!                      single(pi), true(2, 3), reshape(1:24, 2, 3, 4), 1e-300};
%! r.options.text = {'', 'a "quoted" name', sprintf('tab\there'), char([104 195 169])};
%! r.notes = 'saved for the spring review';
%! d = scratch ();
%! unwind_protect
%!   f = fullfile (d, 'kinds.nc');
%!   sluice.save_run (r, f);
%!   back = sluice.load_run (f);
%!   assert (back.saved.rerunnable, true);
%!   same (rmfield (back, 'saved'), r, 'res');
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect

%!test
%! % an error while writing leaves neither the file nor a temporary one,
%! % and an existing file as it was
%! d = scratch ();
%! unwind_protect
%!   f = fullfile (d, 'run.nc');
%!   r = pf;
%!   sluice.save_run (r, f);
%!   before = fileread (f);
%!   r.extra = [1 + 2i, 3];
%!   try
%!     sluice.save_run (r, f);
%!     error ('no error');
%!   catch err
%!     assert (err.identifier, 'sluice:save_run:unsupported');
%!   end
%!   assert (strcmp (fileread (f), before));
%!   g = fullfile (d, 'new.nc');
%!   try
%!     sluice.save_run (r, g);
%!   catch
%!   end
%!   assert (~exist (g, 'file'));
%!   assert ({dir(d).name}, {'.', '..', 'run.nc'});
%!   % the complex field goes to Octave's format as it is
%!   sluice.save_run (r, fullfile (d, 'run.mat'));
%!   back = sluice.load_run (fullfile (d, 'run.mat'));
%!   assert (back.extra, [1 + 2i, 3]);
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect

%!test
%! % files that are not saved runs
%! d = scratch ();
%! unwind_protect
%!   % a NetCDF file of another program, made with the netcdf package
%!   f = fullfile (d, 'other.nc');
%!   nccreate (f, 'level', 'Dimensions', {'time', 4});
%!   ncwrite (f, 'level', [1 2 3 4]);
%!   ncwriteatt (f, '/', 'Conventions', 'CF-1.8');
%!   try
%!     sluice.load_run (f);
%!     error ('no error');
%!   catch err
%!     assert (err.identifier, 'sluice:load_run:notsluice');
%!     assert (~isempty (strfind (err.message, 'not written by sluice.save_run')));
%!   end
%!   % a text file, and an Octave file of something else
%!   g = fullfile (d, 'notes.nc');
%!   fid = fopen (g, 'w');
%!   fprintf (fid, 'level at the mill\n');
%!   fclose (fid);
%!   assert (lasterror_id (@() sluice.load_run (g)), 'sluice:load_run:notsluice');
%!   h = fullfile (d, 'other.mat');
%!   level = 3;
%!   save ('-binary', h, 'level');
%!   assert (lasterror_id (@() sluice.load_run (h)), 'sluice:load_run:notsluice');
%!   % a saved run cut short
%!   sluice.save_run (pf, fullfile (d, 'run.nc'));
%!   fid = fopen (fullfile (d, 'run.nc'), 'r');
%!   bytes = fread (fid, 2000, 'uint8');
%!   fclose (fid);
%!   fid = fopen (fullfile (d, 'cut.nc'), 'w');
%!   fwrite (fid, bytes, 'uint8');
%!   fclose (fid);
%!   assert (lasterror_id (@() sluice.load_run (fullfile (d, 'cut.nc'))), ...
%!           'sluice:load_run:unreadable');
%!   % a format newer than this sluice knows
%!   ncwriteatt (fullfile (d, 'run.nc'), '/', 'sluice_format_version', 2);
%!   assert (lasterror_id (@() sluice.load_run (fullfile (d, 'run.nc'))), ...
%!           'sluice:load_run:newer');
%!   % an edited file whose summaries no longer fit the times
%!   sluice.save_run (pf, fullfile (d, 'run2.mat'));
%!   s = load (fullfile (d, 'run2.mat'));
%!   s.sluice_run.result.ess(end+1) = 1;
%!   save ('-binary', fullfile (d, 'run2.mat'), '-struct', 's');
%!   assert (lasterror_id (@() sluice.load_run (fullfile (d, 'run2.mat'))), ...
%!           'sluice:load_run:badresult');
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect

%!test
%! % without Octave's netcdf package: the package unloaded and pkg made to
%! % fail, as on a machine where octave-netcdf is not installed
%! d = scratch ();
%! fake = fullfile (d, 'fakepkg');
%! mkdir (fake);
%! fid = fopen (fullfile (fake, 'pkg.m'), 'w');
%! fprintf (fid, 'function varargout = pkg (varargin)\n  error (''package netcdf is not installed'');\nend\n');
%! fclose (fid);
%! sluice.save_run (pf, fullfile (d, 'run.nc'));
%! pkg unload netcdf
%! evalin ('base', 'clear doc_file pkg_dir');   % what the package's PKG_DEL leaves
%! addpath (fake);
%! unwind_protect
%!   try
%!     sluice.save_run (pf, fullfile (d, 'new.nc'));
%!     error ('no error');
%!   catch err
%!     assert (err.identifier, 'sluice:save_run:nonetcdf');
%!     assert (~isempty (strfind (err.message, 'octave-netcdf')));
%!     assert (~isempty (strfind (err.message, 'package netcdf is not installed')));
%!   end
%!   assert (~exist (fullfile (d, 'new.nc'), 'file'));
%!   assert (lasterror_id (@() sluice.load_run (fullfile (d, 'run.nc'))), ...
%!           'sluice:load_run:nonetcdf');
%!   % Octave's own format needs no package
%!   sluice.save_run (pf, fullfile (d, 'run.mat'));
%!   back = sluice.load_run (fullfile (d, 'run.mat'));
%!   assert (back.ess, pf.ess);
%! unwind_protect_cleanup
%!   rmpath (fake);
%!   sluice.internal.compat ('netcdf', 'save_run');
%!   drop (d);
%! end_unwind_protect

%!test
%! d = scratch ();
%! unwind_protect
%!   f = fullfile (d, 'x.nc');
%!   assert (lasterror_id (@() sluice.save_run (42, f)), 'sluice:save_run:badresult');
%!   assert (lasterror_id (@() sluice.save_run (struct ('times', 1), f)), ...
%!           'sluice:save_run:badresult');
%!   tw = struct ('truth', 1, 'filter', rmfield (pf, 'ess'));
%!   assert (lasterror_id (@() sluice.save_run (tw, f)), 'sluice:save_run:badresult');
%!   bad = pf;
%!   bad.time_origin = 'the spring flood';
%!   bad.time_unit = 'days';
%!   assert (lasterror_id (@() sluice.save_run (bad, f)), 'sluice:save_run:badresult');
%!   % unwritable places: a folder that does not exist, a file as the folder
%!   assert (lasterror_id (@() sluice.save_run (pf, fullfile (d, 'no', 'x.nc'))), ...
%!           'sluice:save_run:cannotwrite');
%!   sluice.save_run (pf, fullfile (d, 'a.mat'));
%!   assert (lasterror_id (@() sluice.save_run (pf, fullfile (d, 'a.mat', 'x.nc'))), ...
%!           'sluice:save_run:cannotwrite');
%!   assert (lasterror_id (@() sluice.save_run (pf, d)), 'sluice:save_run:cannotwrite');
%!   assert (lasterror_id (@() sluice.save_run (pf, 3)), 'sluice:save_run:badfile');
%!   % options
%!   assert (lasterror_id (@() sluice.save_run (pf, f, 'units', 'm')), ...
%!           'sluice:save_run:badoption');
%!   assert (lasterror_id (@() sluice.save_run (pf, f, 'units', struct ('y', 'm'))), ...
%!           'sluice:save_run:badoption');
%!   assert (lasterror_id (@() sluice.save_run (pf, f, 'units', struct ('x', 3))), ...
%!           'sluice:save_run:badoption');
%!   assert (lasterror_id (@() sluice.save_run (pf, f, 'title', 7)), ...
%!           'sluice:save_run:badoption');
%!   assert (lasterror_id (@() sluice.save_run (pf, f, 'format', 'nc')), ...
%!           'sluice:save_run:badoption');
%!   assert (~exist (f, 'file'));
%!   assert (lasterror_id (@() sluice.save_run (pf)), 'sluice:save_run:usage');
%!   % reading
%!   assert (lasterror_id (@() sluice.load_run (fullfile (d, 'missing.nc'))), ...
%!           'sluice:load_run:nofile');
%!   assert (lasterror_id (@() sluice.load_run (d)), 'sluice:load_run:nofile');
%!   assert (lasterror_id (@() sluice.load_run (3)), 'sluice:load_run:badfile');
%!   assert (lasterror_id (@() sluice.load_run ()), 'sluice:load_run:usage');
%! unwind_protect_cleanup
%!   drop (d);
%! end_unwind_protect
