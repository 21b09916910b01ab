function [X, P] = check_state (model, X, P, N, fn)
  % Internal: states X (n x N; empty: the model's x0) and parameters P
  % (p x N, p x 1 or empty: the model's defaults) of a run, checked against
  % the model's sizes and parameter bounds. N = [] takes it from X.
  sluice.internal.check_model (model, 1, fn);
  n = numel (model.states);
  p = numel (model.params);
  if (isempty (X))
    X = model.x0(:);
  end
  if (~isa (X, 'double') || ~isreal (X) || issparse (X) || size (X, 1) ~= n || ndims (X) ~= 2)
    error (['sluice:' fn ':badstate'], 'the state must be a real double array with %d rows (%s), got %s %s', ...
           n, strjoin (model.states(1:min (n, 6)), ', '), mat2str (size (X)), class (X));
  end
  if (any (~isfinite (X(:))))
    error (['sluice:' fn ':badstate'], 'the state must be finite');
  end
  if (isempty (N))
    N = size (X, 2);
  elseif (size (X, 2) ~= N)
    error (['sluice:' fn ':badstate'], 'the state must have %d column(s)', N);
  end
  if (isempty (P))
    P = model.defaults(:);
  end
  if (~isa (P, 'double') || ~isreal (P) || issparse (P) || size (P, 1) ~= p || ...
      ~(size (P, 2) == 1 || size (P, 2) == N))
    error (['sluice:' fn ':badparams'], 'parameters must be a real double %d x 1 or %d x %d array', ...
           p, p, N);
  end
  if (any (isnan (P(:))))
    error (['sluice:' fn ':badparams'], 'parameters must not be NaN (give the model''s parameters: %s)', ...
           strjoin (model.params, ', '));
  end
  if (p > 0)
    lo = repmat (model.lower(:), 1, size (P, 2));
    hi = repmat (model.upper(:), 1, size (P, 2));
    [i, j] = find (P < lo | P > hi, 1);
    if (~isempty (i))
      error (['sluice:' fn ':badparams'], 'parameter ''%s'' = %g lies outside its bounds [%g, %g]', ...
             model.params{i}, P(i, j), model.lower(i), model.upper(i));
    end
  end
  P = repmat (P, 1, N / size (P, 2));
end
