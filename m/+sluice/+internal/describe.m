function s = describe (x, how)
  % Internal: size and class of a value for error messages, e.g.
  % "1x3 single", "2x2 sparse double", "1x1 complex double"; with how =
  % 'value', a real double scalar is shown as its value instead.
  if (nargin > 1 && strcmp (how, 'value') && isa (x, 'double') && isreal (x) && ...
      ~issparse (x) && isscalar (x))
    s = sprintf ('%.17g', x);
    return;
  end
  d = size (x);
  s = sprintf ('%dx', d);
  s = s(1:end-1);
  extra = '';
  if (issparse (x))
    extra = [extra 'sparse '];
  end
  if (isnumeric (x) && ~isreal (x))
    extra = [extra 'complex '];
  end
  s = [s ' ' extra class(x)];
end
