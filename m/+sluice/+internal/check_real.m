function check_real (a, pos, name, allow_nan, fn)
  % Internal: argument pos (name) of sluice.<fn> must be a non-empty real
  % double array without Inf (and without NaN unless allow_nan); raises
  % sluice:<fn>:badclass, :empty or :nonfinite.
  if (~isa (a, 'double') || ~isreal (a) || issparse (a))
    error (['sluice:' fn ':badclass'], ...
           'argument %d (%s): expected a real double array, got %s', pos, name, ...
           sluice.internal.describe (a));
  end
  if (isempty (a))
    error (['sluice:' fn ':empty'], 'argument %d (%s): must not be empty', pos, name);
  end
  if (~allow_nan && any (isnan (a(:))))
    error (['sluice:' fn ':nonfinite'], 'argument %d (%s): NaN is not allowed', pos, name);
  end
  if (any (isinf (a(:))))
    error (['sluice:' fn ':nonfinite'], 'argument %d (%s): Inf is not allowed', pos, name);
  end
end
