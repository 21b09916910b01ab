function c = model_config (model, forcing, forcing_noise, events, event_noise, fn)
  % Internal: the model, forcing and event fields of the configuration
  % that sluice.kernel.pf_run reads, checked, for the workflow function fn
  % (its name is used in error identifiers: sluice:<fn>:<reason>). The
  % caller has checked the spec on entry (sluice.kernel.check_model).
  n = numel (model.states);
  p = numel (model.params);
  q = numel (model.forcings);
  c = struct ();
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
  c = add_forcing (c, forcing, forcing_noise, q, model, fn);
  c = add_events (c, events, event_noise, model, fn);
end

function c = add_forcing (c, f, fn_noise, q, model, fn)
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
  if (~isa (vals, 'double') || ~isreal (vals) || size (vals, 1) ~= numel (tf) || size (vals, 2) ~= q)
    error (id, ['forcing values must be %d x %d real doubles (one row per forcing ', ...
                'time, one column per forcing: %s)'], numel (tf), q, strjoin (model.forcings, ', '));
  end
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
  [ok, k] = ismember (kinds, {'none', 'additive', 'multiplicative'});
  if (~all (ok))
    error (id, 'perturbation kind must be ''none'', ''additive'' or ''multiplicative''');
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
