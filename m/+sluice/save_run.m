% -*- texinfo -*-
% @deftypefn  {} {} sluice.save_run (@var{res}, @var{file})
% @deftypefnx {} {} sluice.save_run (@var{res}, @var{file}, @var{opts})
% @deftypefnx {} {} sluice.save_run (@var{res}, @var{file}, @var{name}, @var{value}, @dots{})
% Save a run's result, with the settings that produced it, to a file.
%
% @code{sluice.load_run} reads the file back into a result that
% @code{sluice.report}, @code{sluice.scores}, @code{sluice.smooth} and
% the other consumers of results take as they take the original.
%
% @var{res} is a result of @code{sluice.filter} (also with
% @code{smoothed} from its @code{lag} or from @code{sluice.smooth}, and
% with the ensemble @code{history} when it was kept) or of
% @code{sluice.twin}. Other values raise @code{sluice:save_run:badresult}.
%
% The format follows the name of @var{file}:
% @table @code
% @item *.nc
% NetCDF-4 following the CF conventions, version 1.8 (the version that
% describes groups, which a twin's file uses; "NetCDF Climate and
% Forecast (CF) Metadata Conventions", cfconventions.org). Written with
% Octave's netcdf package (Debian's @code{octave-netcdf}); without it,
% @code{sluice:save_run:nonetcdf}. Readable by any NetCDF tool; the
% numbers are stored in their own types (doubles as NC_DOUBLE), so
% @code{sluice.load_run} gives them back to the bit.
% @item any other name (@code{*.mat}, @dots{})
% Octave's own binary format (@code{save -binary}): the whole result as
% one variable, function handles in the settings included. It is chosen
% over MATLAB's @code{-v7} format because that format cannot hold
% Octave's function handles; the file is for Octave only.
% @end table
%
% The NetCDF file of a filter result holds, in its root group:
% @table @code
% @item time
% dimension and coordinate variable: the cycle times. When the run has a
% calendar (the filter's option @code{origin}), @code{time} counts days
% since the origin (@code{units = "days since YYYY-MM-DD hh:mm:ss"}, UTC,
% @code{standard_name = "time"}, @code{calendar = "standard"}, or
% @code{"proleptic_gregorian"} when a date lies before 1582-10-15, where
% the two differ: Octave's datenums count the proleptic Gregorian
% calendar). A run in years (@code{time_unit 'years'}, of 365.25 days)
% is converted to days, since the CF conventions advise caution with
% the unit "year", which UDUNITS defines as 365.242198781 days (section
% 4.4); the exact model times are then in
% @code{model_time} (@code{units = "365.25 days"}). Without a calendar
% the model's time unit is unknown, so @code{time} holds the model
% times with @code{units = "1"} and no @code{standard_name}: a CF time
% coordinate needs a reference date the run does not have.
% @item quantile
% dimension and coordinate variable: the quantile levels.
% @item member
% dimension of the members (the last ensemble, and the history when kept).
% @item <name>_mean, <name>_quantiles
% for every state and parameter: the filtered mean (time) and quantiles
% (time x quantile); @code{<name>_forecast_mean}, the mean before each
% update; @code{<name>_smoothed_mean} and @code{<name>_smoothed_quantiles}
% when smoothed; @code{<name>_final} (member), the last ensemble;
% @code{<name>_ensemble} (time x member), the history when kept, with
% @code{weight} and @code{ancestor}; for parameters also
% @code{<name>_distinct} and @code{<name>_spread}.
% @item ess, resampled, degenerate, log_evidence, log_evidence_increment, @dots{}
% the per-cycle diagnostics (the flags as bytes with CF
% @code{flag_values} and @code{flag_meanings}) and the log-evidence.
% @item settings, run_values
% variables without data whose attributes hold the run's numeric
% settings (@code{res.options}) and the result's remaining numbers,
% one attribute each, exactly; larger settings (a forcing table) are
% variables @code{settings_*}.
% @end table
% A twin's file has its filter run in the root group, its open-loop run
% in the group @code{openloop} and its truth, observations and scores in
% the group @code{twin}.
%
% Every variable has @code{long_name} and @code{units}. The units of a
% state or parameter (and of its quantiles, forecasts and ensemble) come
% from the option @code{units}; without one they are @code{"1"}, which
% here means "not recorded": sluice does not know the units of a model's
% variables. Counts, weights, ESS and log-evidence are dimensionless,
% @code{"1"}. Only @code{time} has a @code{standard_name}: CF's standard
% names describe physical quantities, and a model's states are whatever
% its author made them. The CF conventions allow only names of their
% standard-name table (an invented name is not CF), and a name fits only
% in units convertible to its canonical units: GR4J's river flow, a
% depth over the catchment per day (@code{"mm d-1"}), is not
% @code{water_volume_transport_in_river_channel} (@code{"m3 s-1"}), so
% sluice writes none and describes each variable by @code{long_name}
% (option @code{long_names}) and @code{units} instead.
%
% Global attributes: @code{Conventions}, @code{title}, @code{institution}
% (when given), @code{source} (@code{"sluice <version>"}),
% @code{history} (the date of writing), @code{model}, @code{method},
% @code{members}, @code{seed}, and @code{settings}: the run's options as
% JSON text for people and other tools. In that text a function handle
% (an operator's @code{fun}) is its text form (@code{func2str}), since a
% handle cannot be stored, and NaN and Inf are @code{null}.
% @code{sluice_layout} (one per group) maps every field of the result to
% where it is stored; @code{sluice.load_run} reads it. After loading, a
% function handle of the settings is that text, and
% @code{res.saved.rerunnable} is false.
%
% Options (a struct or name/value pairs):
% @table @code
% @item units
% a struct of unit strings by state or parameter name, e.g.
% @code{struct ('level', 'm', 'Q', 'm3 s-1')} (UDUNITS syntax, as CF asks).
% @item long_names
% a struct of descriptions by state or parameter name, e.g.
% @code{struct ('Q', 'river flow at the gauge')}: the @code{long_name} of
% each variable of that state or parameter then names it with its
% description, @code{"smoothed mean of Q (river flow at the gauge)"}.
% @item title
% the file's title (default: "sluice <method> run of the model <model>").
% @item institution
% where the run was made (default: none, the attribute is left out).
% @end table
%
% The file is written under a temporary name beside @var{file} and
% renamed when complete, so an error leaves no half-written file (and an
% existing @var{file} untouched). Errors: @code{sluice:save_run:badresult},
% @code{sluice:save_run:badfile} (not a file name),
% @code{sluice:save_run:cannotwrite} (no such folder, or not writable),
% @code{sluice:save_run:badoption}, @code{sluice:save_run:nonetcdf},
% @code{sluice:save_run:unsupported} (a field NetCDF cannot hold, such as
% complex numbers: save to a .mat file).
%
% Example:
% @example
% @group
% res = sluice.filter (spec, prior, obs, 'origin', '2001-01-01');
% sluice.save_run (res, 'run.nc', 'units', struct ('level', 'm'));
% again = sluice.load_run ('run.nc');
% sluice.report (again);
% @end group
% @end example
% @seealso{sluice.load_run, sluice.filter, sluice.twin, sluice.report}
% @end deftypefn
function save_run (res, file, varargin)
  if (nargin < 2 || nargout > 0)
    sluice.internal.compat ('usage', mfilename ());
  end
  opts = struct ('units', struct (), 'long_names', struct (), 'title', '', 'institution', '');
  opts = sluice.internal.name_value (opts, varargin, 'save_run');
  [kind, main] = result_kind (res);
  opts.units = check_units (opts.units, main, 'units', 'unit strings', 'units');
  opts.long_names = check_units (opts.long_names, main, 'long_names', 'descriptions', ...
                                 'description');
  check_text (opts.title, 'title');
  check_text (opts.institution, 'institution');
  [file, tmp] = target (file);
  as_netcdf = numel (file) > 3 && strcmpi (file(end-2:end), '.nc');
  if (as_netcdf)
    nc = sluice.internal.compat ('netcdf', 'save_run');
  end
  try
    if (as_netcdf)
      write_netcdf (nc, tmp, res, kind, main, opts);
    else
      run = struct ('format', 'sluice.save_run', 'format_version', 1, 'kind', kind, ...
                    'sluice_version', sluice.internal.version (), 'saved', now_text (), ...
                    'result', []);
      run.result = res;
      sluice.internal.compat ('save_binary', tmp, 'sluice_run', run);
    end
  catch err
    remove (tmp);
    if (strncmp (err.identifier, 'sluice:', 7))
      rethrow (err);
    end
    error ('sluice:save_run:cannotwrite', '%s: could not be written: %s', file, err.message);
  end
  [failed, msg] = sluice.internal.compat ('rename', tmp, file);
  if (failed)
    remove (tmp);
    error ('sluice:save_run:cannotwrite', '%s: could not be written: %s', file, msg);
  end
end

function [kind, main] = result_kind (res)
  % a twin holds its filter run in res.filter; the units name the states
  % and parameters of that run
  if (isstruct (res) && isscalar (res) && isfield (res, 'filter') && isfield (res, 'truth'))
    kind = 'twin';
    main = res.filter;
    sluice.internal.check_result (main, 'argument 1 (res.filter)', 'save_run', {'params'});
    for f = {'obs', 'openloop', 'scores'}
      if (~isfield (res, f{1}))
        error ('sluice:save_run:badresult', ...
               'argument 1 (res): the field ''%s'' of a twin result is missing', f{1});
      end
    end
    if (~isempty (res.openloop))
      sluice.internal.check_result (res.openloop, 'argument 1 (res.openloop)', 'save_run', ...
                                  {'params'});
    end
  else
    kind = 'filter';
    main = res;
    sluice.internal.check_result (res, 1, 'save_run', {'params'});
  end
end

function units = check_units (units, main, opt, what, one)
  % a struct of strings by state or parameter name (the options units
  % and long_names)
  if (~(isstruct (units) && isscalar (units)))
    error ('sluice:save_run:badoption', ...
           'option ''%s'': expected a struct of %s by variable name, got %s', ...
           opt, what, sluice.internal.describe (units));
  end
  names = [main.state_names(:); main.param_names(:)];
  f = fieldnames (units);
  for k = 1:numel (f)
    if (~any (strcmp (f{k}, names)))
      error ('sluice:save_run:badoption', ...
             'option ''%s'': ''%s'' is not a state or parameter of the run (%s)', ...
             opt, f{k}, strjoin (names', ', '));
    end
    u = units.(f{k});
    if (~(ischar (u) && isrow (u)))
      error ('sluice:save_run:badoption', ...
             'option ''%s'': the %s of ''%s'' must be a string, got %s', opt, one, f{k}, ...
             sluice.internal.describe (u));
    end
  end
end

function check_text (v, what)
  if (~(ischar (v) && (isrow (v) || isempty (v))))
    error ('sluice:save_run:badoption', 'option ''%s'': expected a string, got %s', ...
           what, sluice.internal.describe (v));
  end
end

function [file, tmp] = target (file)
  % the file's folder must exist and take a new file: probed with the
  % temporary file the run is written to
  if (~(ischar (file) && isrow (file)))
    error ('sluice:save_run:badfile', 'argument 2 (file): expected a file name, got %s', ...
           sluice.internal.describe (file));
  end
  [folder, name, ext] = fileparts (file);
  if (isempty (folder))
    folder = '.';
  end
  if (~isfolder (folder))
    error ('sluice:save_run:cannotwrite', '%s: the folder %s does not exist', file, folder);
  end
  if (isfolder (file))
    error ('sluice:save_run:cannotwrite', '%s: is a folder', file);
  end
  tmp = fullfile (folder, sprintf ('.%s%s.%d-%06d.part', name, ext, ...
                                   sluice.internal.compat ('pid'), floor (rand () * 1e6)));
  [fid, msg] = fopen (tmp, 'w');
  if (fid < 0)
    error ('sluice:save_run:cannotwrite', '%s: cannot write in %s: %s', file, folder, msg);
  end
  fclose (fid);
end

function remove (f)
  if (exist (f, 'file'))
    sluice.internal.compat ('delete_file', f);
  end
end

function s = now_text ()
  s = datestr (sluice.internal.compat ('utc_now'), 'yyyy-mm-ddTHH:MM:SSZ');
end

% ---------------------------------------------------------------- NetCDF

function write_netcdf (nc, tmp, res, kind, main, opts)
  mode = bitor (nc.getConstant ('NC_NETCDF4'), nc.getConstant ('NC_CLOBBER'));
  ncid = nc.create (tmp, mode);
  try
    G = nc.getConstant ('NC_GLOBAL');
    title = opts.title;
    if (isempty (title))
      title = sprintf ('sluice %s run of the model %s', text_field (main, 'method'), ...
                       text_field (main, 'model'));
      if (strcmp (kind, 'twin'))
        title = [title ', a twin experiment'];
      end
    end
    nc.putAtt (ncid, G, 'Conventions', 'CF-1.8');
    nc.putAtt (ncid, G, 'title', title);
    if (~isempty (opts.institution))
      nc.putAtt (ncid, G, 'institution', opts.institution);
    end
    version = sluice.internal.version ();
    nc.putAtt (ncid, G, 'source', ['sluice ' version]);
    nc.putAtt (ncid, G, 'history', sprintf ('%s written by sluice.save_run', now_text ()));
    nc.putAtt (ncid, G, 'comment', ...
               ['A run of sluice (ensemble data assimilation). sluice.load_run reads ', ...
                'this file back; sluice_layout says where each field of the result is.']);
    nc.putAtt (ncid, G, 'sluice_format', 'sluice.save_run');
    nc.putAtt (ncid, G, 'sluice_format_version', 1);
    nc.putAtt (ncid, G, 'sluice_kind', kind);
    nc.putAtt (ncid, G, 'model', text_field (main, 'model'));
    nc.putAtt (ncid, G, 'method', text_field (main, 'method'));
    for f = {'members', 'seed'}
      if (isfield (main, f{1}))
        nc.putAtt (ncid, G, f{1}, main.(f{1}));
      end
    end
    write_group (nc, ncid, main, 'filter', main, opts);
    if (strcmp (kind, 'twin'))
      if (isstruct (res.openloop))
        write_group (nc, nc.defGrp (ncid, 'openloop'), res.openloop, 'filter', ...
                     res.openloop, opts);
      end
      write_group (nc, nc.defGrp (ncid, 'twin'), res, 'twin', main, opts);
    end
  catch err
    try
      nc.close (ncid);
    catch
    end
    rethrow (err);
  end
  nc.close (ncid);
end

function s = text_field (r, f)
  s = '';
  if (isfield (r, f) && ischar (r.(f)))
    s = r.(f);
  end
end

function write_group (nc, gid, r, kind, main, opts)
  % one group: the result r (kind 'filter') or a twin's own fields
  % (kind 'twin'), every field walked into variables and attributes
  c = struct ('nc', nc, 'gid', gid, 'kind', kind, 'units', opts.units, ...
              'long_names', opts.long_names, ...
              'states', {main.state_names}, 'params', {main.param_names}, ...
              'cal', calendar_of (main), 'dims', containers.Map (), ...
              'vars', containers.Map (), 'holders', containers.Map (), ...
              'atts', containers.Map ());
  c.vars('time') = true;                % kept for the coordinates
  c.vars('quantile') = true;
  if (strcmp (kind, 'filter'))
    add_dim (c, 'time', numel (r.times));
    add_dim (c, 'quantile', numel (r.quantile_levels));
    if (isfield (r, 'final') && isstruct (r.final) && isfield (r.final, 'w'))
      add_dim (c, 'member', numel (r.final.w));
    elseif (isfield (r, 'history') && isstruct (r.history) && isfield (r.history, 'w'))
      add_dim (c, 'member', size (r.history.w, 1));
    end
  else
    if (isstruct (r.truth) && isfield (r.truth, 'times'))
      add_dim (c, 'time', numel (r.truth.times));
    end
    if (isstruct (r.obs) && isfield (r.obs, 'time'))
      add_dim (c, 'obs', numel (r.obs.time));
    end
  end
  E = walk (c, r, {}, {});
  G = nc.getConstant ('NC_GLOBAL');
  nc.putAtt (gid, G, 'sluice_layout', jsonencode ([E{:}]));
  if (strcmp (kind, 'filter') && isfield (r, 'options'))
    nc.putAtt (gid, G, 'settings', jsonencode (readable (r.options)));
  end
end

function cal = calendar_of (r)
  % the time coordinate of a run with a calendar: CF units and calendar
  cal = [];
  if (~(isfield (r, 'time_origin') && isfield (r, 'time_unit')))
    return;
  end
  o = r.time_origin;
  t = [];
  if (ischar (o) && isrow (o))
    t = regexp (o, ['^(?<y>\d{4})-(?<mo>\d\d)-(?<d>\d\d)(?:[T ](?<h>\d\d):(?<mi>\d\d)', ...
                    '(?::(?<s>\d\d(?:\.\d+)?))?)?(?:Z|[+-]00:?00)?$'], 'names', 'once');
  end
  if (isempty (t) || isempty (t.y))
    error ('sluice:save_run:badresult', ...
           'argument 1 (res): field ''time_origin'' must be an ISO 8601 date, got %s', ...
           sluice.internal.describe (o));
  end
  u = r.time_unit;
  if (~ischar (u) || ~any (strcmp (u, {'days', 'years'})))
    error ('sluice:save_run:badresult', ...
           'argument 1 (res): field ''time_unit'' must be ''days'' or ''years''');
  end
  parts = {t.h, t.mi, t.s};
  for k = 1:3
    if (isempty (parts{k}))
      parts{k} = '00';
    end
  end
  origin = datenum (str2double ({t.y, t.mo, t.d, parts{:}}));
  cal.ref = sprintf ('%s-%s-%s %s:%s:%s', t.y, t.mo, t.d, parts{:});
  cal.unit_days = 1;
  if (strcmp (u, 'years'))
    cal.unit_days = 365.25;
  end
  % CF's "standard" calendar is Julian before 1582-10-15 and Gregorian
  % from then on; Octave's datenums are proleptic Gregorian throughout
  first = origin + min (0, min (r.times)) * cal.unit_days;
  cal.name = 'standard';
  if (first < datenum (1582, 10, 15))
    cal.name = 'proleptic_gregorian';
  end
end

function v = readable (v)
  % the settings for the JSON text: function handles as their text,
  % singles and 64-bit integers as doubles and empty struct arrays as [],
  % which Octave 7's jsonencode refuses (the numbers) or aborts on (an
  % empty struct array in a struct)
  if (isa (v, 'function_handle'))
    v = func2str (v);
  elseif (isa (v, 'single') || isa (v, 'int64') || isa (v, 'uint64'))
    v = double (v);
  elseif (isstruct (v) && isempty (v))
    v = [];
  elseif (isstruct (v))
    f = fieldnames (v);
    for k = 1:numel (v)
      for j = 1:numel (f)
        v(k).(f{j}) = readable (v(k).(f{j}));
      end
    end
  elseif (iscell (v))
    for k = 1:numel (v)
      v{k} = readable (v{k});
    end
  elseif (~(isnumeric (v) || islogical (v) || ischar (v)))
    v = sprintf ('<%s>', class (v));
  end
end

function E = walk (c, v, path, E)
  % the layout entries of value v at path (a cell of field names and
  % '(k)' / '{k}' indices), writing its numbers as it goes
  key = strjoin (path, '.');
  if (strcmp (c.kind, 'twin') && numel (path) == 1 && ...
      (strcmp (path{1}, 'filter') || (strcmp (path{1}, 'openloop') && isstruct (v))))
    group = '/';
    if (strcmp (path{1}, 'openloop'))
      group = 'openloop';
    end
    E{end+1} = entry (path, 'group', 'struct', size (v), {}, group);
  elseif (isa (v, 'function_handle'))
    E{end+1} = entry (path, 'handle', 'function_handle', [1 1], {}, func2str (v));
  elseif (isstruct (v))
    f = fieldnames (v)';
    E{end+1} = entry (path, 'struct', 'struct', size (v), {}, f);
    for k = 1:numel (v)
      at = path;
      if (~isscalar (v))
        at = [path, {sprintf('(%d)', k)}];
      end
      for j = 1:numel (f)
        E = walk (c, v(k).(f{j}), [at, f(j)], E);
      end
    end
  elseif (iscell (v))
    if (~isempty (v) && all (cellfun (@(s) ischar (s) && (isrow (s) || isempty (s)), v(:))))
      E{end+1} = put_names (c, v, path, key);
    else
      E{end+1} = entry (path, 'cell', 'cell', size (v), {}, '');
      for k = 1:numel (v)
        E = walk (c, v{k}, [path, {sprintf('{%d}', k)}], E);
      end
    end
  elseif (ischar (v))
    if (isrow (v) || isempty (v))
      E{end+1} = entry (path, 'text', 'char', size (v), {}, v);
    elseif (ndims (v) == 2)
      E{end+1} = entry (path, 'chars', 'char', size (v), {}, cellstr (v)');
    else
      unsupported (key, v);
    end
  elseif ((isnumeric (v) || islogical (v)) && isreal (v) && ~issparse (v))
    if (isempty (v))
      E{end+1} = entry (path, 'empty', class (v), size (v), {}, '');
    else
      E{end+1} = put_numbers (c, v, path, key);
    end
  else
    unsupported (key, v);
  end
end

function unsupported (key, v)
  error ('sluice:save_run:unsupported', ...
         'field %s (%s) cannot be written to NetCDF; save to a .mat file instead', ...
         key, sluice.internal.describe (v));
end

function e = entry (path, kind, cls, sz, var, value)
  e = struct ('path', {path}, 'kind', kind, 'class', cls, 'size', sz, 'var', {var}, ...
              'value', {value});
end

function e = put_numbers (c, v, path, key)
  in_settings = strcmp (c.kind, 'filter') && strcmp (path{1}, 'options');
  if (~in_settings)
    s = spec_of (c, key);
    if (~isempty (s))
      e = put_known (c, v, path, s);
      if (~isempty (e))
        return;
      end
    end
  end
  holder = 'run_values';
  name = key;
  if (in_settings)
    holder = 'settings';
    name = strjoin (path(2:end), '.');
  end
  if (isvector (v))
    [var, att] = put_in_holder (c, holder, name, v);
    e = entry (path, 'att', class (v), size (v), {var, att}, '');
  else
    base = strrep (key, '.', '_');
    if (in_settings)
      base = ['settings_' strrep(name, '.', '_')];
    end
    nm = put_var (c, base, v, {}, sprintf ('the field %s of the result', key), '1', {});
    e = entry (path, 'var', class (v), size (v), {nm}, '');
  end
end

function e = put_known (c, v, path, s)
  % a field the conventions of the format know: its own name, dimensions
  % and attributes; one variable per state or parameter when split.
  % Empty when the field's size does not fit (an edited result): then it
  % is stored as any other field.
  e = [];
  if (strcmp (s.special, 'time'))
    nm = put_time (c, v);
    e = entry (path, 'var', class (v), size (v), {nm}, '');
    return;
  end
  rows = {''};
  sz = size (v);
  inner = sz;
  if (~isempty (s.split))
    rows = c.(s.split);
    if (sz(1) ~= numel (rows))
      return;
    end
    inner = [sz(2:end), 1];
  end
  lens = zeros (1, numel (s.dims));
  for k = 1:numel (s.dims)
    if (~isKey (c.dims, s.dims{k}))
      return;
    end
    d = c.dims(s.dims{k});
    lens(k) = d(2);
  end
  if (~isequal (inner(inner ~= 1), lens(lens ~= 1)))
    return;
  end
  names = cell (1, numel (rows));
  for i = 1:numel (rows)
    if (isempty (s.split))
      part = v;
      unit = s.unit;
    else
      part = v(i, :);
      unit = unit_of (c, rows{i}, s.unit);
    end
    names{i} = put_var (c, sprintf (s.name, rows{i}), part, s.dims, ...
                        sprintf (s.long, label_of (c, rows{i})), unit, s.extra);
  end
  e = entry (path, 'var', class (v), sz, names, '');
end

function s = label_of (c, name)
  % a state or parameter in a long_name: its name, with its description
  % when the option long_names gives one
  s = name;
  if (~isempty (name) && isfield (c.long_names, name))
    s = sprintf ('%s (%s)', name, c.long_names.(name));
  end
end

function u = unit_of (c, name, how)
  u = how;
  if (strcmp (how, 'row'))
    u = '1';
    if (isfield (c.units, name))
      u = c.units.(name);
    end
  end
end

function nm = put_time (c, t)
  % the time coordinate; with a calendar in days since its origin
  extra = {};
  if (isempty (c.cal))
    values = t;
    units = '1';
    long = 'model time of the cycle (the model''s own unit: the run has no calendar)';
  else
    values = t * c.cal.unit_days;
    units = ['days since ' c.cal.ref];
    long = 'time of the cycle';
    extra = {'standard_name', 'time', 'calendar', c.cal.name, 'axis', 'T'};
  end
  nm = put_var (c, 'time', values, {'time'}, long, units, extra);
  if (~isempty (c.cal) && c.cal.unit_days ~= 1)
    % the exact model times, which days would round
    nm = put_var (c, 'model_time', t, {'time'}, ...
                  'model time of the cycle in years of 365.25 days since the origin', ...
                  '365.25 days', {});
  end
end

function nm = put_var (c, base, v, dims, long, units, extra)
  % define variable base (made unique) over the named dimensions (new
  % ones for the sizes of v when dims is empty) and write v
  nc = c.nc;
  if (any (strcmp (base, {'time', 'quantile'})) && isequal (dims, {base}))
    nm = base;                          % a coordinate: named as its dimension
  else
    nm = unique_name (c.vars, base);
  end
  c.vars(nm) = true;
  if (isempty (dims) && ~isscalar (v))
    sz = size (v);
    dims = {};
    for k = find (sz > 1)
      d = unique_name (c.dims, sprintf ('%s_n%d', nm, k));
      add_dim (c, d, sz(k));
      dims{end+1} = d;
    end
  end
  ids = zeros (1, numel (dims));
  lens = ones (1, numel (dims));
  for k = 1:numel (dims)
    d = c.dims(dims{k});
    ids(k) = d(1);
    lens(k) = d(2);
  end
  [type, data] = nc_type (v);
  id = nc.defVar (c.gid, nm, type, ids);
  nc.putAtt (c.gid, id, 'long_name', long);
  nc.putAtt (c.gid, id, 'units', units);
  for k = 1:2:numel (extra)
    nc.putAtt (c.gid, id, extra{k}, extra{k+1});
  end
  nc.putVar (c.gid, id, reshape (data, [lens, 1, 1]));
end

function e = put_names (c, v, path, key)
  % a cell of strings: a character variable (NUL-padded, one string per
  % column in Octave's order: CF's "array of characters")
  n = numel (v);
  len = max ([1, cellfun(@numel, v(:))']);
  data = repmat (char (0), len, n);
  for k = 1:n
    data(1:numel (v{k}), k) = v{k};
  end
  nm = unique_name (c.vars, strrep (key, '.', '_'));
  c.vars(nm) = true;
  count = '';
  if (strcmp (c.kind, 'twin') && any (strcmp (key, {'obs.variable', 'obs.family'})) && ...
      isKey (c.dims, 'obs'))
    d = c.dims('obs');
    if (d(2) == n)
      count = 'obs';
    end
  end
  if (isempty (count))
    count = unique_name (c.dims, [nm '_n']);
    add_dim (c, count, n);
  end
  strlen = unique_name (c.dims, [nm '_strlen']);
  add_dim (c, strlen, len);
  s = c.dims(strlen);
  d = c.dims(count);
  nc = c.nc;
  id = nc.defVar (c.gid, nm, 'NC_CHAR', [s(1), d(1)]);
  nc.putAtt (c.gid, id, 'long_name', sprintf ('the field %s of the result (names)', key));
  nc.putAtt (c.gid, id, 'units', '1');
  nc.putVar (c.gid, id, data);
  e = entry (path, 'names', 'cell', size (v), {nm}, '');
end

function [nm, att] = put_in_holder (c, holder, name, v)
  % a number or vector as an attribute of a variable without data (a
  % container, as CF's grid_mapping variables are)
  nc = c.nc;
  if (~isKey (c.holders, holder))
    nm = unique_name (c.vars, holder);
    c.vars(nm) = true;
    id = nc.defVar (c.gid, nm, 'NC_INT', []);
    if (strcmp (holder, 'settings'))
      long = 'the settings of the run (res.options), one attribute per number';
    else
      long = 'further numbers of the result, one attribute per field';
    end
    nc.putAtt (c.gid, id, 'long_name', long);
    nc.putAtt (c.gid, id, 'units', '1');
    c.holders(holder) = {id, nm};
    c.atts(holder) = containers.Map ({'long_name', 'units'}, {true, true});
  end
  h = c.holders(holder);
  nm = h{2};
  used = c.atts(holder);
  att = unique_name (used, name);
  used(att) = true;
  [~, data] = nc_type (v);
  nc.putAtt (c.gid, h{1}, att, data(:)');
end

function [type, data] = nc_type (v)
  data = v;
  switch (class (v))
    case 'double'
      type = 'NC_DOUBLE';
    case 'single'
      type = 'NC_FLOAT';
    case 'logical'
      type = 'NC_BYTE';
      data = int8 (v);
    case 'int8'
      type = 'NC_BYTE';
    case 'uint8'
      type = 'NC_UBYTE';
    case 'int16'
      type = 'NC_SHORT';
    case 'uint16'
      type = 'NC_USHORT';
    case 'int32'
      type = 'NC_INT';
    case 'uint32'
      type = 'NC_UINT';
    case 'int64'
      type = 'NC_INT64';
    otherwise
      type = 'NC_UINT64';
  end
end

function add_dim (c, name, len)
  if (len > 0 && ~isKey (c.dims, name))
    c.dims(name) = [c.nc.defDim(c.gid, name, len), len];
  end
end

function nm = unique_name (used, base)
  % a NetCDF name: no '/', a letter or underscore first; made unique
  base = regexprep (base, '[^A-Za-z0-9_.@+\-]', '_');
  if (isempty (base) || isempty (regexp (base(1), '[A-Za-z_]', 'once')))
    base = ['v_' base];
  end
  nm = base;
  k = 1;
  while (isKey (used, nm))
    k = k + 1;
    nm = sprintf ('%s_%d', base, k);
  end
end

function s = spec_of (c, key)
  % the fields stored under names of their own: name (%s: the state or
  % parameter), split ('states' or 'params': one variable per row),
  % dimensions, long_name (%s as in name), units ('row': the option
  % units of that state or parameter) and further attributes
  s = [];
  if (strcmp (c.kind, 'twin'))
    switch (key)
      case 'truth.times'
        s = known ('time', '', {}, '', '', {}, 'time');
      case 'truth.X'
        s = known ('true_%s', 'states', {'time'}, 'true %s (the truth run)', 'row', {});
      case 'truth.params'
        s = known ('true_%s', 'params', {}, 'true value of the parameter %s', 'row', {});
      otherwise
        tok = regexp (key, '^obs\.([^.]+)$', 'tokens', 'once');
        if (~isempty (tok))
          s = known (['obs_' tok{1}], '', {'obs'}, ...
                     sprintf ('observation table, column %s', tok{1}), '1', {});
        end
    end
    return;
  end
  flag = @(no, yes) {'flag_values', int8([0 1]), 'flag_meanings', [no ' ' yes]};
  cycle = @(name, long) known (name, '', {'time'}, long, '1', {});
  switch (key)
    case 'times'
      s = known ('time', '', {}, '', '', {}, 'time');
    case 'quantile_levels'
      s = known ('quantile', '', {'quantile'}, 'probability level of the quantile', '1', {});
    case 'dates'
      s = known ('dates', '', {'time'}, ...
                 'time of the cycle as an Octave datenum (days from 0000-01-00, proleptic Gregorian)', ...
                 'day', {});
    case 'states.mean'
      s = known ('%s_mean', 'states', {'time'}, 'filtered ensemble mean of %s', 'row', {});
    case 'states.quantiles'
      s = known ('%s_quantiles', 'states', {'quantile', 'time'}, ...
                 'filtered ensemble quantiles of %s', 'row', {});
    case 'params.mean'
      s = known ('%s_mean', 'params', {'time'}, 'ensemble mean of the parameter %s', 'row', {});
    case 'params.quantiles'
      s = known ('%s_quantiles', 'params', {'quantile', 'time'}, ...
                 'ensemble quantiles of the parameter %s', 'row', {});
    case 'params.distinct'
      s = known ('%s_distinct', 'params', {'time'}, ...
                 'distinct values of the parameter %s among the members', '1', {});
    case 'params.spread'
      s = known ('%s_spread', 'params', {'time'}, ...
                 'weighted standard deviation of the parameter %s in its transformed space', ...
                 '1', {});
    case 'forecast.mean'
      s = known ('%s_forecast_mean', 'states', {'time'}, ...
                 'forecast ensemble mean of %s (before the update)', 'row', {});
    case 'forecast.params'
      s = known ('%s_forecast_mean', 'params', {'time'}, ...
                 'forecast ensemble mean of the parameter %s (before the update)', 'row', {});
    case 'smoothed.states.mean'
      s = known ('%s_smoothed_mean', 'states', {'time'}, 'smoothed mean of %s', 'row', {});
    case 'smoothed.states.quantiles'
      s = known ('%s_smoothed_quantiles', 'states', {'quantile', 'time'}, ...
                 'smoothed quantiles of %s', 'row', {});
    case 'smoothed.params.mean'
      s = known ('%s_smoothed_mean', 'params', {'time'}, ...
                 'smoothed mean of the parameter %s', 'row', {});
    case 'smoothed.params.quantiles'
      s = known ('%s_smoothed_quantiles', 'params', {'quantile', 'time'}, ...
                 'smoothed quantiles of the parameter %s', 'row', {});
    case 'smoothed.distinct'
      s = cycle ('smoothed_distinct', 'distinct members on the smoothed paths');
    case 'history.X'
      s = known ('%s_ensemble', 'states', {'member', 'time'}, ...
                 '%s in each member of the ensemble', 'row', {});
    case 'history.P'
      s = known ('%s_ensemble', 'params', {'member', 'time'}, ...
                 'the parameter %s in each member of the ensemble', 'row', {});
    case 'history.w'
      s = known ('weight', '', {'member', 'time'}, 'normalised weight of the member', '1', {});
    case 'history.ancestors'
      s = known ('ancestor', '', {'member', 'time'}, ...
                 'parent of the member at the cycle (1-based member index)', '1', {});
    case 'final.X'
      s = known ('%s_final', 'states', {'member'}, '%s in each member at the last cycle', ...
                 'row', {});
    case 'final.P'
      s = known ('%s_final', 'params', {'member'}, ...
                 'the parameter %s in each member at the last cycle', 'row', {});
    case 'final.w'
      s = known ('final_weight', '', {'member'}, 'weight of the member at the last cycle', ...
                 '1', {});
    case 'ess'
      s = cycle ('ess', 'effective sample size of the weights');
    case 'resampled'
      s = known ('resampled', '', {'time'}, 'whether the ensemble was resampled at the cycle', ...
                 '1', flag ('kept', 'resampled'));
    case 'degenerate'
      s = known ('degenerate', '', {'time'}, ...
                 'whether no member could explain the observations of the cycle', '1', ...
                 flag ('explained', 'degenerate'));
    case 'log_evidence'
      s = known ('log_evidence', '', {}, 'log-evidence of the record (natural logarithm)', ...
                 '1', {});
    case 'log_evidence_steps'
      s = cycle ('log_evidence_increment', 'increment of the log-evidence at the cycle');
    case 'skipped'
      s = cycle ('skipped', 'missing observations skipped at the cycle');
    case 'nonfinite'
      s = cycle ('nonfinite', 'members with a non-finite state at the cycle');
    case 'temper_steps'
      s = cycle ('temper_steps', 'likelihood tempering steps of the cycle');
    case 'loglik_evals'
      s = cycle ('loglik_evals', 'member likelihood evaluations of the cycle');
    case 'move_sweeps'
      s = cycle ('move_sweeps', 'sweeps of the parameter move at the cycle');
    case 'move_accept'
      s = cycle ('move_accept', 'acceptance rate of the parameter move at the cycle');
    case 'inflation'
      s = cycle ('inflation', 'multiplicative inflation of the cycle');
    case 'floored'
      s = cycle ('floored', 'eigenvalues raised to the floor at the cycle');
  end
end

function s = known (name, split, dims, long, unit, extra, special)
  if (nargin < 7)
    special = '';
  end
  s = struct ('name', name, 'split', split, 'dims', {dims}, 'long', long, 'unit', unit, ...
              'extra', {extra}, 'special', special);
end

%!shared res
%! res = sluice.filter (sluice.model ('linear', 'A', 0.9, 'Q', 0.1), ...
%!                      sluice.prior ('x1', 'normal', [0 1]), ...
%!                      struct ('time', [1; 2; 4], 'variable', {{'x1'; 'x1'; 'x1'}}, ...
%!                              'value', [0.43; 0.17; -0.21], 'sigma', [0.5; 0.5; 0.5]), ...
%!                      'members', 30, 'seed', 1, 'progress', false);
%!test
%! % both formats give back every field, to the bit
%! d = tempname ();
%! mkdir (d);
%! unwind_protect
%!   for name = {'run.nc', 'run.mat'}
%!     f = fullfile (d, name{1});
%!     sluice.save_run (res, f, 'units', struct ('x1', 'm'));
%!     back = sluice.load_run (f);
%!     assert (isequaln (rmfield (back, 'saved'), res));
%!     assert (class (back.resampled), 'logical');
%!     assert (typecast (back.states.quantiles(:), 'uint64'), ...
%!             typecast (res.states.quantiles(:), 'uint64'));
%!   end
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (d, 's');
%! end_unwind_protect
%!error id=sluice:save_run:usage sluice.save_run (1)
%!error id=sluice:save_run:badresult sluice.save_run (42, 'x.nc')
%!error id=sluice:save_run:badresult sluice.save_run (struct ('times', [1 2]), 'x.nc')
%!error id=sluice:save_run:badoption sluice.save_run (res, 'x.nc', 'units', 3)
%!error id=sluice:save_run:badoption sluice.save_run (res, 'x.nc', 'units', struct ('h', 'm'))
%!error id=sluice:save_run:badoption sluice.save_run (res, 'x.nc', 'institution', {'a'})
%!error id=sluice:save_run:badoption sluice.save_run (res, 'x.nc', 'long_names', 'x1')
%!error id=sluice:save_run:badoption sluice.save_run (res, 'x.nc', 'long_names', struct ('h', 'height'))
%!error id=sluice:save_run:badoption sluice.save_run (res, 'x.nc', 'long_names', struct ('x1', 3))
%!error id=sluice:save_run:badfile sluice.save_run (res, {'x.nc'})
%!error id=sluice:save_run:cannotwrite sluice.save_run (res, fullfile (tempname (), 'x.nc'))
