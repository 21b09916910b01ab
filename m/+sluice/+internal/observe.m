function [Y, msg, id] = observe (funs, rows, t, X, P, fn)
  % Internal: the compiled cycle's call of the user's observation
  % operators. Handle i is called as h(t, X, P) and must give rows(i) x N
  % real doubles; the results are stacked in order. An error comes back as
  % values (the user's message and identifier), so that the C core can
  % unwind before it is raised again. fn (default 'filter') is the
  % function a result of the wrong size is reported for
  % (sluice:<fn>:badoperatoroutput): the gateway passes its caller.
  if (nargin < 6)
    fn = 'filter';
  end
  msg = '';
  id = '';
  N = size (X, 2);
  Y = zeros (sum (rows), N);
  r = 0;
  for i = 1:numel (funs)
    try
      y = funs{i} (t, X, P);
    catch err
      Y = [];
      msg = sprintf ('observation operator %d (%s) failed at t = %g: %s', ...
                     i, func2str (funs{i}), t, err.message);
      id = err.identifier;
      return;
    end
    % the checks of the result run methods of its class, which may fail
    % too: such an error comes back as values like the operator's own
    try
      if (~isa (y, 'double') || ~isreal (y) || issparse (y) || ~isequal (size (y), [rows(i), N]))
        Y = [];
        msg = sprintf (['observation operator %d (%s) must return a real double %dx%d ', ...
                        'matrix (quantities x members), got %s at t = %g'], ...
                       i, func2str (funs{i}), rows(i), N, sluice.internal.describe (y), t);
        id = ['sluice:' fn ':badoperatoroutput'];
        return;
      end
      Y(r+1:r+rows(i), :) = y;
    catch err
      Y = [];
      msg = err.message;
      id = err.identifier;
      return;
    end
    r = r + rows(i);
  end
end
