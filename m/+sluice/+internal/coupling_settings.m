function c = coupling_settings (c, opts, model, tab, ops, fn)
  % Internal: the settings of sluice.filter's option 'coupling' for the
  % compiled run c. 'strong' (the default) leaves c as it is; 'weak' adds
  % the component of every state and parameter row (c.comp) and of every
  % observation row (c.obs_comp), 0-based, and their number (c.n_comp).
  % An observation of a state or a parameter belongs to its component; of
  % a linear operator row, to the one component its non-zero columns all
  % lie in; of a function operator (or a linear row over several
  % components), to the component the option obs_components names for it
  % (a struct: field = the observed name, value = the component's name).
  % (With the particle filter, param_move 'auto' is then a random walk:
  % the compiled run's choice.) A lag with one entry per component (the
  % particle filter only) becomes c.comp_lag, each at most c.lag.
  % Errors: sluice:<fn>:badcoupling (the option's value),
  % sluice:<fn>:badoption (a lag per component where it cannot be),
  % sluice:<fn>:nocomponents (a model without components),
  % sluice:<fn>:obscomponent (an observation whose component is unknown).
  cp = opts.coupling;
  if (~ischar (cp) || ~any (strcmp (cp, {'strong', 'weak'})))
    error (['sluice:' fn ':badcoupling'], 'coupling must be ''strong'' or ''weak''');
  end
  oc = opts.obs_components;
  if (~(isempty (oc) && isnumeric (oc)) && ~(isstruct (oc) && isscalar (oc)))
    error (['sluice:' fn ':badcoupling'], ...
           'obs_components must be a struct (observed name: component name), got %s', ...
           class (oc));
  end
  lag = opts.lag;
  if (strcmp (cp, 'strong'))
    if (~isscalar (lag))
      error (['sluice:' fn ':badoption'], ...
             'lag: one lag per component needs coupling ''weak'' (got %d lags)', numel (lag));
    end
    return;
  end
  if (~isfield (model, 'components') || isempty (model.components))
    error (['sluice:' fn ':nocomponents'], ...
           ['coupling ''weak'' needs a model made of components: give them to ', ...
            'sluice.model (option ''components'')']);
  end
  names = model.components;
  n = numel (model.states);
  p = numel (model.params);
  comp = [model.state_component(:); model.param_component(:)];
  given = zeros (1, 0);
  given_names = cell (1, 0);
  if (isstruct (oc))
    given_names = fieldnames (oc)';
    given = zeros (size (given_names));
    for k = 1:numel (given_names)
      v = oc.(given_names{k});
      ok = ischar (v);
      if (ok)
        [ok, at] = ismember (v, names);
      end
      if (~ok)
        error (['sluice:' fn ':badcoupling'], ...
               'obs_components.%s must name a component of the model (%s)', ...
               given_names{k}, strjoin (names, ', '));
      end
      given(k) = at;
    end
  end
  all_names = [model.states(:); model.params(:); ops.names(:)];
  nl = size (ops.H, 1);
  m = numel (tab.var);
  obs_comp = zeros (m, 1);
  for r = 1:m
    v = tab.var(r);
    [ok, at] = ismember (all_names{v}, given_names);
    if (ok)
      obs_comp(r) = given(at);
    elseif (v <= n + p)
      obs_comp(r) = comp(v);
    elseif (v <= n + p + nl)
      cols = comp(ops.H(v - n - p, :) ~= 0);
      if (isempty (cols) || any (cols ~= cols(1)))
        error (['sluice:' fn ':obscomponent'], ...
               ['observation row %d (''%s''): its operator reads %s, so its component ', ...
                'is not its own; name it in obs_components'], r, all_names{v}, ...
               ifelse_text (isempty (cols), 'no state or parameter', 'several components'));
      end
      obs_comp(r) = cols(1);
    else
      error (['sluice:' fn ':obscomponent'], ...
             ['observation row %d (''%s''): an operator function''s value belongs to no ', ...
              'component by itself; name its component in obs_components'], r, all_names{v});
    end
  end
  c.n_comp = numel (names);
  c.comp = comp - 1;
  c.obs_comp = obs_comp - 1;
  if (~isscalar (lag))
    % each component smoothed at its own lag: the particle filter's (its
    % window's rows follow each component's own ancestry); the ensemble
    % Kalman smoother updates the whole window at once
    if (numel (lag) ~= c.n_comp || ~strcmp (opts.method, 'pf'))
      error (['sluice:' fn ':badoption'], ...
             ['lag: one lag per component (%d: %s) with the particle filter, ', ...
              'or one lag for all; got %d lags with method ''%s'''], c.n_comp, ...
             strjoin (names, ', '), numel (lag), opts.method);
    end
    c.comp_lag = min (lag(:), c.lag);
  end
end

function t = ifelse_text (cond, a, b)
  if (cond)
    t = a;
  else
    t = b;
  end
end
