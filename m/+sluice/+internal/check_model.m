function check_model (model, pos, fn)
  % Internal: argument pos of sluice.<fn> must be a model spec as
  % sluice.model (or sluice.build_model) makes it. A spec is a plain
  % struct a user may edit: every field the runs read is checked here,
  % so an edited one is refused with sluice:<fn>:badmodel and a message
  % naming the field, rather than failing somewhere inside.
  % the core's names (sluice.kernel.core_names), asked once: this check
  % runs on every filter call
  persistent core
  if (isempty (core))
    core = sluice.kernel.core_names ();
  end
  if (quick_ok (model, core))
    return;
  end
  id = ['sluice:' fn ':badmodel'];
  if (ischar (pos))
    where = pos;   % an option, named as the caller says
  else
    where = sprintf ('argument %d (model)', pos);
  end
  if (~isstruct (model) || ~isscalar (model))
    error (id, '%s: expected a spec from sluice.model, got %s', where, ...
           sluice.internal.describe (model));
  end
  need = {'kind', 'name', 'states', 'params', 'forcings', 'events', 'defaults', ...
          'lower', 'upper', 'dt', 't0', 'x0', 'integrator', 'rtol', 'atol', ...
          'A', 'B', 'c', 'Q', 'L', 'fun', 'handle_kind'};
  has = isfield (model, need);
  if (~all (has))
    error (id, '%s: the spec has no field ''%s'' (make the spec with sluice.model)', ...
           where, need{find (~has, 1)});
  end
  kinds = {'linear', 'handle', 'builtin', 'user', 'composed'};
  if (~is_text (model.kind) || ~any (strcmp (model.kind, kinds)))
    error (id, '%s: field ''kind'' must be one of %s', where, strjoin (kinds, ', '));
  end
  if (~is_text (model.name))
    error (id, '%s: field ''name'' must be a character string, got %s', where, ...
           sluice.internal.describe (model.name));
  end
  n = names (model.states, 'states', where, id, true);
  p = names (model.params, 'params', where, id, false);
  q = names (model.forcings, 'forcings', where, id, false);
  names (model.events, 'events', where, id, false);
  all_names = [model.states(:); model.params(:); model.forcings(:); model.events(:)];
  if (numel (unique (all_names)) ~= numel (all_names))
    error (id, '%s: state, parameter, forcing and event names must all differ', where);
  end

  lo = vec (model.lower, p, 'lower', where, id, 'no NaN', false);
  hi = vec (model.upper, p, 'upper', where, id, 'no NaN', false);
  def = vec (model.defaults, p, 'defaults', where, id, '', true);
  bad = find (~(lo <= hi), 1);
  if (~isempty (bad))
    error (id, '%s: parameter ''%s'': lower bound %g is above upper bound %g', where, ...
           model.params{bad}, lo(bad), hi(bad));
  end
  bad = find (def < lo | def > hi, 1);
  if (~isempty (bad))
    error (id, '%s: parameter ''%s'': default %g lies outside its bounds [%g, %g]', ...
           where, model.params{bad}, def(bad), lo(bad), hi(bad));
  end
  vec (model.x0, n, 'x0', where, id, 'finite', false);
  scalar (model.dt, 'dt', where, id, @(v) v > 0, 'a positive finite number');
  scalar (model.t0, 't0', where, id, @(v) true, 'a finite number');
  scalar (model.rtol, 'rtol', where, id, @(v) v >= 0, 'a finite number >= 0');
  scalar (model.atol, 'atol', where, id, @(v) v >= 0, 'a finite number >= 0');

  integrators = core.integrators;
  if (~is_text (model.integrator) || ~any (strcmp (model.integrator, integrators)))
    error (id, '%s: field ''integrator'' must be one of %s', where, strjoin (integrators, ', '));
  end
  switch (model.kind)
    case 'linear'
      check_linear (model, n, q, where, id);
    case 'handle'
      if (~isa (model.fun, 'function_handle'))
        error (id, '%s: field ''fun'' must be the model''s function handle, got %s', ...
               where, sluice.internal.describe (model.fun));
      end
      if (~is_text (model.handle_kind) || ~any (strcmp (model.handle_kind, {'step', 'rhs'})))
        error (id, '%s: field ''handle_kind'' must be ''step'' or ''rhs''', where);
      end
      if (strcmp (model.handle_kind, 'step') ~= strcmp (model.integrator, 'discrete'))
        error (id, ['%s: a step map (handle_kind ''step'') needs integrator ''discrete'', ', ...
                    'a right-hand side (''rhs'') euler, rk4 or dopri5'], where);
      end
      if (~isempty (model.events))
        error (id, '%s: a function model has no events', where);
      end
    otherwise
      check_compiled (model, n, p, q, where, id);
  end
  if (isfield (model, 'internal') && ...
      ~((islogical (model.internal) || isnumeric (model.internal)) && ...
        numel (model.internal) == n && all (model.internal(:) == 0 | model.internal(:) == 1)))
    error (id, '%s: field ''internal'' must be %d true/false flags, one per state', where, n);
  end
end

function ok = quick_ok (m, core)
  % true when the spec passes every check of check_model: the same checks
  % as one expression each, with no call per field. A false reports
  % nothing: the spec then goes through the checks one by one, which name
  % what is wrong. (A spec this accepts, they accept too.)
  ok = false;
  need = {'kind', 'name', 'states', 'params', 'forcings', 'events', 'defaults', ...
          'lower', 'upper', 'dt', 't0', 'x0', 'integrator', 'rtol', 'atol', ...
          'A', 'B', 'c', 'Q', 'L', 'fun', 'handle_kind'};
  if (~(isstruct (m) && isscalar (m) && all (isfield (m, need)) && ...
        ischar (m.kind) && isrow (m.kind) && ischar (m.name) && (isrow (m.name) || isempty (m.name)) && ...
        ischar (m.integrator) && isrow (m.integrator) && any (strcmp (m.integrator, core.integrators))))
    return;
  end
  all_names = {};
  lists = {m.states, m.params, m.forcings, m.events};
  for k = 1:4
    c = lists{k};
    if (~iscellstr (c))
      return;
    end
    for j = 1:numel (c)
      if (size (c{j}, 1) ~= 1 || ~isvarname (c{j}))
        return;
      end
    end
    all_names = [all_names; c(:)];
  end
  n = numel (m.states);
  p = numel (m.params);
  q = numel (m.forcings);
  if (n == 0)
    return;
  end
  if (sluice.internal.first_repeat (all_names) > 0)
    return;
  end
  lo = m.lower;
  hi = m.upper;
  def = m.defaults;
  x0 = m.x0;
  if (~(is_vec (lo, p) && is_vec (hi, p) && is_vec (def, p) && is_vec (x0, n) && ...
        ~any (isnan (lo(:))) && ~any (isnan (hi(:))) && all (lo(:) <= hi(:)) && ...
        ~any (def(:) < lo(:) | def(:) > hi(:)) && all (isfinite (x0(:)))))
    return;
  end
  if (~(is_num (m.dt) && m.dt > 0 && is_num (m.t0) && is_num (m.rtol) && m.rtol >= 0 && ...
        is_num (m.atol) && m.atol >= 0))
    return;
  end
  if (isfield (m, 'internal') && ...
      ~((islogical (m.internal) || isnumeric (m.internal)) && ...
        numel (m.internal) == n && all (m.internal(:) == 0 | m.internal(:) == 1)))
    return;
  end
  switch (m.kind)
    case 'linear'
      if (~(strcmp (m.integrator, 'discrete') && p == 0 && isempty (m.events) && ...
            is_mat (m.A, n, n, false) && is_mat (m.B, n, q, q == 0) && ...
            ((isempty (m.c) && isnumeric (m.c)) || (is_vec (m.c, n) && all (isfinite (m.c(:))))) && ...
            is_mat (m.Q, n, n, true) && is_mat (m.L, n, n, true) && ...
            isempty (m.Q) == isempty (m.L)))
        return;
      end
      if (~isempty (m.Q) && ~(norm (m.L * m.L' - m.Q, 1) <= 1e-8 * max (1, norm (m.Q, 1))))
        return;
      end
      ok = true;
    case 'handle'
      ok = isa (m.fun, 'function_handle') && ischar (m.handle_kind) && ...
           (strcmp (m.handle_kind, 'step') || strcmp (m.handle_kind, 'rhs')) && ...
           strcmp (m.handle_kind, 'step') == strcmp (m.integrator, 'discrete') && ...
           isempty (m.events);
    otherwise
      % a compiled model: its own checks, whose message is not needed here
      try
        % (a real identifier: error () with an empty one raises nothing)
        check_compiled (m, n, p, q, 'spec', 'sluice:check_model:quick');
        ok = true;
      catch
        ok = false;
      end
  end
end

function tf = is_vec (v, len)
  % as vec below, without its rule
  tf = isa (v, 'double') && isreal (v) && ~issparse (v) && numel (v) == len && ...
       (len == 0 || isvector (v));
end

function tf = is_num (v)
  % as scalar below, without its test
  tf = isa (v, 'double') && isreal (v) && ~issparse (v) && isscalar (v) && isfinite (v);
end

function tf = is_mat (v, r, c, may_be_empty)
  % as matrix below
  tf = (may_be_empty && isempty (v) && isnumeric (v)) || ...
       (isa (v, 'double') && isreal (v) && ~issparse (v) && ndims (v) == 2 && ...
        size (v, 1) == r && size (v, 2) == c && all (isfinite (v(:))));
end

function tf = is_text (v)
  tf = ischar (v) && (isrow (v) || isempty (v));
end

function k = names (c, what, where, id, need_one)
  % a cellstr of valid names (one row of characters each); its length
  if (~iscellstr (c) || ~all (cellfun ('size', c(:), 1) == 1) || ...
      ~all (cellfun (@isvarname, c(:))))
    error (id, '%s: field ''%s'' must be a cell array of valid names, got %s', ...
           where, what, sluice.internal.describe (c));
  end
  k = numel (c);
  if (need_one && k == 0)
    error (id, '%s: field ''%s'' must name at least one state', where, what);
  end
end

function v = vec (v, len, what, where, id, rule, allow_nan)
  % a real double vector of len values (empty when len is 0)
  ok = isa (v, 'double') && isreal (v) && ~issparse (v) && ...
       (numel (v) == len && (len == 0 || isvector (v)));
  if (ok)
    v = v(:);
    switch (rule)
      case 'finite'
        ok = all (isfinite (v));
      case 'no NaN'
        ok = ~any (isnan (v));
    end
  end
  if (~ok)
    extra = '';
    if (~isempty (rule))
      extra = sprintf (', %s', rule);
    end
    if (allow_nan)
      extra = ' (NaN: no default)';
    end
    error (id, '%s: field ''%s'' must be a real double vector of %d value(s)%s, got %s', ...
           where, what, len, extra, sluice.internal.describe (v));
  end
end

function scalar (v, what, where, id, test, expected)
  if (~(isa (v, 'double') && isreal (v) && ~issparse (v) && isscalar (v) && ...
        isfinite (v) && test (v)))
    error (id, '%s: field ''%s'' must be %s, got %s', where, what, expected, ...
           sluice.internal.describe (v, 'value'));
  end
end

function matrix (v, r, c, what, where, id, may_be_empty)
  if (may_be_empty && isempty (v) && isnumeric (v))
    return;
  end
  if (~(isa (v, 'double') && isreal (v) && ~issparse (v) && ndims (v) == 2 && ...
        size (v, 1) == r && size (v, 2) == c && all (isfinite (v(:)))))
    error (id, '%s: field ''%s'' must be a finite real double %dx%d matrix, got %s', ...
           where, what, r, c, sluice.internal.describe (v));
  end
end

function check_linear (model, n, q, where, id)
  if (~strcmp (model.integrator, 'discrete'))
    error (id, '%s: the linear model steps as a discrete map: integrator must be ''discrete''', where);
  end
  if (~isempty (model.params) || ~isempty (model.events))
    error (id, '%s: the linear model has no parameters and no events', where);
  end
  matrix (model.A, n, n, 'A', where, id, false);
  matrix (model.B, n, q, 'B', where, id, q == 0);
  if (~isempty (model.c) || ~isnumeric (model.c))
    vec (model.c, n, 'c', where, id, 'finite', false);
  end
  matrix (model.Q, n, n, 'Q', where, id, true);
  matrix (model.L, n, n, 'L', where, id, true);
  % L is the factor of Q that sluice.model worked out; the runs use L
  if (isempty (model.Q) ~= isempty (model.L) || (~isempty (model.Q) && ...
      norm (model.L * model.L' - model.Q, 1) > 1e-8 * max (1, norm (model.Q, 1))))
    error (id, ['%s: fields ''Q'' and ''L'' disagree (L*L'' must equal Q): ', ...
                'change Q with sluice.model (''linear'', ..., ''Q'', Q)'], where);
  end
end

function check_compiled (model, n, p, q, where, id)
  if (strcmp (model.kind, 'composed'))
    if (~isfield (model, 'parts') || ~isstruct (model.parts) || ~isscalar (model.parts))
      error (id, '%s: a composed model''s spec needs the field ''parts'' that sluice.compose sets', ...
             where);
    end
    return;   % the gateway checks the components and links against their definitions
  end
  if (strcmp (model.kind, 'user'))
    if (~isfield (model, 'engine') || ~is_text (model.engine) || isempty (model.engine))
      error (id, '%s: a compiled model''s spec needs the field ''engine'' that sluice.build_model sets', ...
             where);
    end
    return;   % its gateway checks the counts against the compiled definition
  end
  % what a built-in model is cannot change while Octave runs: asked once
  % per model name
  persistent known
  if (isempty (known))
    known = struct ();
  end
  key = ['m_' model.name];
  if (isvarname (key) && isfield (known, key))
    info = known.(key);
  else
    try
      info = sluice.kernel.model_info (model.name);
    catch
      error (id, '%s: field ''name'': there is no built-in model ''%s''', where, model.name);
    end
    if (isvarname (key))
      known.(key) = info;
    end
  end
  if ((info.n_state > 0 && n ~= info.n_state) || n < info.n_min || ...
      p ~= numel (info.params) || q ~= numel (info.forcings) || ...
      numel (model.events) ~= numel (info.events))
    if (info.n_state > 0)
      ns = sprintf ('%d', info.n_state);
    else
      ns = sprintf ('at least %d', info.n_min);
    end
    error (id, ['%s: model ''%s'' has %s states, %d parameters, %d forcings and %d events; ', ...
                'the spec names %d, %d, %d and %d'], where, model.name, ns, ...
           numel (info.params), numel (info.forcings), numel (info.events), ...
           n, p, q, numel (model.events));
  end
  if (strcmp (model.integrator, 'discrete') && ~info.has_map)
    error (id, '%s: model ''%s'' is continuous: integrator must be euler, rk4 or dopri5', ...
           where, model.name);
  end
  if (~strcmp (model.integrator, 'discrete') && ~info.has_rhs)
    error (id, '%s: model ''%s'' is a discrete map: integrator must be ''discrete''', ...
           where, model.name);
  end
  if (strcmp (model.integrator, 'discrete') && ~info.has_rhs && model.dt ~= info.dt)
    error (id, '%s: model ''%s'' is a map that steps by dt = %g, not %g', where, ...
           model.name, info.dt, model.dt);
  end
end
