% -*- texinfo -*-
% @deftypefn {} {@var{y} =} good (@var{x})
% Octave syntax in help text is only text: @code{x != y}, @code{x += 1},
% "double quotes", # hash, printf, rows (x), endif.
% @end deftypefn

function [y, n] = good (x, varargin)
  % each line below is valid in both Octave and MATLAB
  if (nargin < 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (~isempty (x) && x(1) ~= 1)
    y = x';
  end
  y = [x' x'];
  y = x.';
  s = 'a ! b # c != d " e';
  t = 'it''s';
  u = ['x' 'y'];
  fprintf ('%d\n', 3);
  fprintf (1, '%s\n', 'endif');
  disp ('printf ("%d", rows (x))');
  f = @(z)(z + 1);
  g = @(a, b) (a - b);
  y = f (2) + g (3, 1);
  opts.rows = 1;
  opts.columns = 2;
  n = numel (x);   % a comment with != and # and "quotes"
  m = size (x, 1) * size (x, 2) ^ 2 .^ 1;
  y = x.^2 - -1;
  c = {1, 2};
  v = c{1}(1);
  w = s(1:end - 1);
  z = ...  continuation, with "text" that is a comment
      1;
  for k = 1:3
    while (false)
    end
  end
  try
    error ('sluice:good:bad', 'a message with %s', '!');
  catch err
    z = err.identifier;
  end
  %{
  if !x, x += 1; endif   an ordinary block comment
  %}
  switch (s)
    case {'a', 'b'}
      z = 1;
    otherwise
      z = 2;
  end
  index = 3;
  y = index + 1;
  y = here (y);
end

function y = here (x)
  y = x;
end

% MATLAB never runs the test blocks, so Octave syntax is allowed there:
%!test
%! x = 1; x += 1; printf ("%d\n", x);
%!assert (rows (1), 1)
