function [opts, given] = name_value (opts, args, fn, given)
  % Internal: merge name/value pairs (or one struct) into the defaults
  % opts; unknown names raise sluice:<fn>:badoption. With `given` (a
  % struct of the same fields), the names given are set true in it.
  args = sluice.internal.option_pairs (args);
  if (mod (numel (args), 2) ~= 0)
    error (['sluice:' fn ':badoption'], 'options must be a struct or name, value pairs');
  end
  for k = 1:2:numel (args)
    name = args{k};
    if (~ischar (name) || ~isrow (name))
      error (['sluice:' fn ':badoption'], 'option names must be strings');
    end
    if (~isfield (opts, name))
      error (['sluice:' fn ':badoption'], 'unknown option ''%s''', name);
    end
    opts.(name) = args{k + 1};
    if (nargin > 3)
      given.(name) = true;
    end
  end
end
