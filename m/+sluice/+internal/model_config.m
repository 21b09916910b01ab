function c = model_config (model, forcing, forcing_noise, events, event_noise, fn, calendar)
  % Internal: the builder of a run's settings, the struct the gateway
  % sluice.kernel.pf_run reads (DEVELOPERS.md, "A run's settings"): the
  % caller's name, the model, forcing and event fields, checked, and every
  % other engine setting at its default from sluice.internal.run_defaults.
  % The caller (sluice.filter, sluice.internal.run_states) then sets the
  % members, times, observations and initial ensemble, and the settings
  % it chooses. fn is the public function the run is for: the gateway
  % raises its errors as sluice:<fn>:<reason> (field caller), and so do
  % the checks here. The caller has checked the spec on entry
  % (sluice.internal.check_model).
  % calendar (optional) is the run's time axis from
  % sluice.internal.time_origin, or []: a forcing that carries another
  % origin or time unit is refused (sluice:<fn>:forcingorigin).
  if (nargin < 7)
    calendar = [];
  end
  n = numel (model.states);
  p = numel (model.params);
  q = numel (model.forcings);
  % every field in its place, the defaults set (built once: the fields
  % and the defaults are constants), then this run's
  persistent blank
  if (isempty (blank))
    blank = struct ('caller', '', 'n_state', 0, 'n_param', 0, 'n_forcing', 0, 'dt', 0, ...
                    'model_kind', '', 'model_name', '', 'integrator', '', 'rtol', 0, ...
                    'atol', 0, 'A', [], 'B', [], 'c', [], 'L', [], 'fun', [], 'parts', []);
    blank = add_forcing (blank, [], [], 0, struct (), 'filter', []);
    blank = add_events (blank, [], [], struct ('events', {{}}), 'filter');
    blank = add_defaults (blank, 0, 0);
  end
  c = blank;
  c.caller = fn;
  c.n_state = n;
  c.n_param = p;
  c.n_forcing = q;
  c.dt = model.dt;
  c.model_kind = model.kind;
  c.model_name = model.name;
  c.integrator = model.integrator;
  c.rtol = model.rtol;
  c.atol = model.atol;
  c.A = model.A; c.B = model.B; c.c = model.c; c.L = model.L; c.fun = model.fun;
  if (strcmp (model.kind, 'composed'))
    c.parts = model.parts;                 % sluice.compose: components and links
  end
  c = add_forcing (c, forcing, forcing_noise, q, model, fn, calendar);
  c = add_events (c, events, event_noise, model, fn);
  c.param_step = step_default (p);
end

function s = step_default (p)
  % the default param_step for p parameters
  persistent d
  if (isempty (d))
    d = sluice.internal.run_defaults ();   % constants
  end
  s = d.param_step(ones (p, 1), 1);
end

function c = add_defaults (c, n, p)
  % the engine's settings at the defaults of sluice.filter's options, in
  % the gateway's form; no other place sets them
  persistent d
  if (isempty (d))
    d = sluice.internal.run_defaults ();   % constants
  end
  c.state_noise = [];                      % state_noise 0: none
  c.op_H = [];                             % operators []: none
  c.op_funs = {};
  c.op_rows = [];
  c.derived_summary = double (d.derived_summary);
  c.param_move = d.param_move;
  c.param_step = step_default (p);
  c.lw_delta = d.liu_west_delta;
  c.kernel_scale = d.kernel_scale;
  c.move_diversity = d.move_diversity;
  c.move_sweeps = d.move_sweeps;
  c.move_scale = d.move_scale;
  c.move_paths = d.move_paths;
  c.inner = 0;                             % param_move smc2 sets inner_members
  c.resample = d.resample;
  c.threshold = d.resample_threshold;
  c.temper_ess = d.temper_ess;
  c.temper_max_steps = d.temper_max_steps;
  c.threads = d.threads;
  c.probs = d.quantiles;
  c.history = double (d.history);
  c.lag = d.lag;
  c.progress = 2;                          % progress 'auto'
  c.method = d.method;
  c.wenkf = 0;                             % method 'wenkf' sets it
  c.inflation = d.inflation;
  c.rtpp = d.rtpp;
  c.rtps = d.rtps;
  c.adaptive_inflation = double (d.adaptive_inflation);
  c.inflation_max = d.inflation_max;
  c.geometry = '';                         % localization []: none
  c.period_or_radius = 0;
  c.state_pos = [];
  c.obs_pos = [];
  c.obs_c = [];
  c.param_factor = 1;
  c.checkpoint = d.checkpoint;             % '': none
  c.checkpoint_every = d.checkpoint_every;
  c.checkpoint_key = {};                   % the functions' text (filter_run)
end

function c = add_forcing (c, f, fn_noise, q, model, fn, calendar)
  c.forcing_time = [];
  c.forcing_value = zeros (0, q);
  c.forcing_hold = 0;
  c.forcing_noise = [];
  c.forcing_sd = [];
  c.forcing_phi = [];
  id = ['sluice:' fn ':badforcing'];
  if (q == 0)
    if (~isempty (f))
      error (id, 'the model takes no forcing');
    end
    return;
  end
  if (~isstruct (f) || ~isfield (f, 'time') || ~isfield (f, 'values'))
    error (id, 'the model needs forcing (%s): give a struct with fields time and values', ...
           strjoin (model.forcings, ', '));
  end
  tf = f.time(:);
  vals = f.values;
  if (isfield (f, 'names'))
    % series named (sluice.read_forcing): the model's forcings by name
    if (~isa (vals, 'double') || ~isreal (vals) || ndims (vals) ~= 2 || ...
        size (vals, 1) ~= numel (tf))
      error (id, 'forcing values must be real doubles with one row per forcing time (%d)', ...
             numel (tf));
    end
    vals = vals(:, series_columns (f.names, size (vals, 2), model.forcings, fn));
  end
  if (~isa (vals, 'double') || ~isreal (vals) || size (vals, 1) ~= numel (tf) || size (vals, 2) ~= q)
    error (id, ['forcing values must be %d x %d real doubles (one row per forcing ', ...
                'time, one column per forcing: %s)'], numel (tf), q, strjoin (model.forcings, ', '));
  end
  check_calendar (f, calendar, fn);
  if (~isa (tf, 'double') || ~isreal (tf) || any (~isfinite (tf)) || any (diff (tf) <= 0))
    error (id, 'forcing times must be finite, real and increasing');
  end
  c.forcing_time = double (tf);
  c.forcing_value = double (vals);
  if (isfield (f, 'interp'))
    if (strcmp (f.interp, 'previous'))
      c.forcing_hold = 1;
    elseif (~strcmp (f.interp, 'linear'))
      error (id, 'forcing interp must be ''linear'' or ''previous''');
    end
  end
  if (isempty (fn_noise))
    return;
  end
  [kind, sd, phi] = noise_spec (fn_noise, q, true, id);
  c.forcing_noise = kind;
  c.forcing_sd = sd;
  c.forcing_phi = phi;
end

function idx = series_columns (names, ncol, wanted, fn)
  % the column of each of the model's forcings among the named series:
  % the same name, else the one name equal without regard to case
  id = ['sluice:' fn ':badforcing'];
  if (~iscellstr (names) || numel (names) ~= ncol)
    error (id, 'forcing names must be a cellstr with one name per column of values (%d)', ncol);
  end
  names = names(:)';
  idx = zeros (1, numel (wanted));
  for k = 1:numel (wanted)
    hit = find (strcmp (names, wanted{k}));
    if (isempty (hit))
      hit = find (strcmpi (names, wanted{k}));
    end
    if (isempty (hit))
      error (['sluice:' fn ':noforcing'], ...
             ['the forcing has no series ''%s'' (the model''s forcings are %s; the ', ...
              'series are %s): name the file''s columns after the model''s forcings, ', ...
              'or set forcing.names'], ...
             wanted{k}, strjoin (wanted, ', '), strjoin (names, ', '));
    end
    if (numel (hit) > 1)
      error (id, 'the forcing names ''%s'' more than once (series %s)', wanted{k}, ...
             strjoin (arrayfun (@num2str, hit, 'UniformOutput', false), ', '));
    end
    idx(k) = hit;
  end
end

function check_calendar (f, calendar, fn)
  % a forcing read with dates carries its origin and unit: they must be
  % the run's (a run without an origin has nothing to compare)
  if (~isfield (f, 'time_origin') || ...
      (isempty (f.time_origin) && (ischar (f.time_origin) || isnumeric (f.time_origin))))
    return;
  end
  id = ['sluice:' fn ':badforcing'];
  unit = 'days';
  if (isfield (f, 'time_unit'))
    unit = f.time_unit;
  end
  try
    fc = sluice.internal.time_origin (f.time_origin, unit, fn);
  catch err
    error (id, 'forcing.time_origin / time_unit: %s', ...
           regexprep (err.message, '^option ''[a-z_]+'': ', ''));
  end
  if (isempty (calendar))
    return;
  end
  if (~strcmp (fc.text, calendar.text) || ~strcmp (fc.unit, calendar.unit))
    error (['sluice:' fn ':forcingorigin'], ...
           ['the forcing''s times count %s from %s (it was read with that origin), ', ...
            'the run''s count %s from %s (options origin and time_unit): read the ', ...
            'forcing with the run''s origin and unit'], ...
           fc.unit, fc.text, calendar.unit, calendar.text);
  end
end

function c = add_events (c, ev, ev_noise, model, fn)
  nv = numel (model.events);
  c.event_time = [];
  c.event_value = zeros (nv, 0);
  c.event_noise = [];
  c.event_sd = [];
  id = ['sluice:' fn ':badevents'];
  if (nv == 0)
    if (~isempty (ev))
      error (id, 'the model takes no events');
    end
    return;
  end
  if (isempty (ev))
    return;   % a run without events is allowed (nothing happens)
  end
  if (~isstruct (ev) || ~isfield (ev, 'time') || ~isfield (ev, 'values'))
    error (id, 'events must be a struct with fields time and values (%s)', ...
           strjoin (model.events, ', '));
  end
  te = ev.time(:);
  vals = ev.values;
  if (~isa (vals, 'double') || ~isreal (vals) || size (vals, 1) ~= numel (te) || size (vals, 2) ~= nv)
    error (id, 'event values must be %d x %d real doubles (one row per event, one column per %s)', ...
           numel (te), nv, strjoin (model.events, ', '));
  end
  if (~isa (te, 'double') || ~isreal (te) || any (~isfinite (te)) || any (diff (te) <= 0))
    error (id, 'event times must be finite, real and increasing');
  end
  if (any (~isfinite (vals(:))))
    error (id, 'event values must be finite');
  end
  c.event_time = te;
  c.event_value = vals';
  if (isempty (ev_noise))
    return;
  end
  [kind, sd] = noise_spec (ev_noise, nv, false, id);
  c.event_noise = kind;
  c.event_sd = sd;
end

function [kind, sd, phi] = noise_spec (spec, q, with_ar1, id)
  if (~isstruct (spec) || ~isfield (spec, 'kind'))
    error (id, 'a perturbation must be a struct with fields kind and sd%s', ...
           ifelse_str (with_ar1, ' (and ar1)', ''));
  end
  kinds = spec.kind;
  if (ischar (kinds))
    kinds = repmat ({kinds}, q, 1);
  end
  if (~iscellstr (kinds) || numel (kinds) ~= q)
    error (id, 'perturbation kind: one kind, or one per series (%d)', q);
  end
  % the core's kinds, in the order of their ids (sluice.kernel.core_names)
  persistent core
  if (isempty (core))
    core = sluice.kernel.core_names ();
  end
  [ok, k] = ismember (kinds, core.forcing_noises);
  if (~all (ok))
    q = strcat ({''''}, core.forcing_noises, {''''});
    error (id, 'perturbation kind must be %s or %s', strjoin (q(1:end-1), ', '), q{end});
  end
  sd = field_or (spec, 'sd', 0, q, id);
  phi = field_or (spec, 'ar1', 0, q, id);
  if (~with_ar1 && isfield (spec, 'ar1'))
    error (id, 'event perturbations have no ar1');
  end
  if (any (sd < 0) || any (phi < 0 | phi >= 1))
    error (id, 'perturbation sd must be >= 0 and ar1 in [0, 1)');
  end
  kind = k(:) - 1;
end

function v = field_or (s, name, default, q, id)
  v = default;
  if (isfield (s, name))
    v = s.(name);
  end
  if (~isa (v, 'double') || ~isreal (v) || any (~isfinite (v(:))) || ...
      ~(isscalar (v) || numel (v) == q))
    error (id, 'perturbation %s must be a finite real scalar or %d values', name, q);
  end
  v = repmat (v(:), q / numel (v), 1);
end

function s = ifelse_str (cond, a, b)
  if (cond)
    s = a;
  else
    s = b;
  end
end
