% -*- texinfo -*-
% @deftypefn  {} {@var{X1} =} sluice.propagate (@var{model}, @var{X}, @var{P}, @var{t0}, @var{t1})
% @deftypefnx {} {@var{X1} =} sluice.propagate (@var{model}, @var{X}, @var{P}, @var{t0}, @var{t1}, @var{forcing})
% @deftypefnx {} {@var{X1} =} sluice.propagate (@dots{}, @var{name}, @var{value}, @dots{})
% Advance an ensemble of states with a model from one time to another.
% @var{X} (n x N states, one column per member) and
% @var{P} (p x N parameters, or p x 1 for all members, or empty for the
% model's defaults) go from time @var{t0} to @var{t1} with @var{model}; the
% result is n x N. Forcing and options as for @code{sluice.simulate}
% (@code{'events'}, @code{'seed'}), plus @code{'threads'}. Members whose
% state becomes non-finite are returned as NaN columns with a warning
% (@code{sluice:propagate:nonfinite}).
% @seealso{sluice.simulate, sluice.filter}
% @end deftypefn
function X1 = propagate (model, X, P, t0, t1, forcing, varargin)
  if (nargin < 5)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (nargin < 6)
    forcing = [];
  end
  opts = struct ('events', [], 'seed', 1, 'threads', 0);
  opts = sluice.internal.name_value (opts, varargin, 'propagate');
  for v = {t0, t1}
    if (~isa (v{1}, 'double') || ~isreal (v{1}) || ~isscalar (v{1}) || ~isfinite (v{1}))
      error ('sluice:propagate:badtimes', 't0 and t1 must be finite real scalars');
    end
  end
  if (t1 < t0)
    error ('sluice:propagate:badtimes', 't1 (%g) lies before t0 (%g)', t1, t0);
  end
  [X, P] = sluice.internal.check_state (model, X, P, [], 'propagate');
  if (t1 == t0)
    X1 = X;
    return;
  end
  X1 = sluice.internal.run_states (model, X, P, t0, t1, forcing, opts, 'propagate');
  X1 = reshape (X1, size (X));
end

%!test
%! % every member of an ensemble is its own trajectory
%! s = sluice.model ('lorenz96', 'n', 8);
%! X = 8 + 0.01 * reshape (1:40, 8, 5);
%! Y = sluice.propagate (s, X, [], 0, 0.3);
%! for j = 1:5
%!   y = sluice.simulate (s, X(:, j), [], [0 0.3]);
%!   assert (Y(:, j), y(:, end), 1e-13);
%! end
%!test
%! % per-member parameters: x' = -k x
%! f = @(t, X, P, U) -P .* X;
%! s = sluice.model (f, 'states', {'x'}, 'params', {'k'}, 'kind', 'rhs', ...
%!                   'integrator', 'dopri5', 'rtol', 1e-10, 'atol', 1e-12, 'dt', 0.5);
%! Y = sluice.propagate (s, [1 1 1], [0.1 0.5 2], 0, 2);
%! assert (Y, exp (-[0.1 0.5 2] * 2), 1e-8);
%!test
%! % the same result with one thread and two
%! s = sluice.model ('lorenz96', 'n', 40);
%! X = 8 + randn (40, 3000);
%! assert (isequal (sluice.propagate (s, X, [], 0, 0.2, [], 'threads', 1), ...
%!                  sluice.propagate (s, X, [], 0, 0.2, [], 'threads', 2)));
%!test
%! % a long run is still accepted: 60 years of days at dt = 0.01 (2.19e6
%! % steps); a random walk with q = 0 stays where it is
%! s = sluice.model ('linear', 'A', 1, 'Q', 0, 'dt', 0.01);
%! assert (sluice.propagate (s, [1 2], [], 0, 60 * 365.25), [1 2]);
%!test
%! % the refusal names the count and what to change
%! s = sluice.model ('linear', 'A', 1, 'Q', 0.1);
%! try
%!   sluice.propagate (s, [1 2], [], 0, 1e10);
%!   error ('not refused');
%! catch err
%!   assert (err.identifier, 'sluice:propagate:toomanysteps');
%!   assert (~isempty (strfind (err.message, '10000000000 model steps')));
%!   assert (~isempty (strfind (err.message, 'larger dt')));
%! end
%!shared lin
%! lin = sluice.model ('linear', 'A', 1, 'Q', 0.1);
%!error id=sluice:propagate:toomanysteps sluice.propagate (lin, [1 2], [], 0, 2^53 + 1)
%!error id=sluice:propagate:toomanysteps sluice.propagate (lin, [1 2], [], 0, 1e300)
%!error id=sluice:propagate:toomanysteps sluice.propagate (lin, [1 2], [], -1e308, 1e308)
%!error id=sluice:propagate:toomanysteps sluice.propagate (lin, [1 2], [], 0, 2^32)
%!error id=sluice:propagate:toomanysteps sluice.propagate (sluice.model ('lorenz63', 'dt', 1e-300), [1;1;1], [], 0, 1)
%!error id=sluice:propagate:toomanysteps sluice.propagate (sluice.model (@(t, X, P, U, dt) X, 'states', {'x'}, 'dt', 1e-6), 1, [], 0, 1e6)
%!error <1\.1e\+15 member-state-steps> sluice.propagate (sluice.model ('linear', 'A', eye (100)), zeros (100, 1e4), [], 0, 1.1e9)
%!error id=sluice:propagate:badtimes sluice.propagate (sluice.model ('lorenz63'), [1;1;1], [], 1, 0)
%!error id=sluice:propagate:badstate sluice.propagate (sluice.model ('lorenz63'), ones (2, 3), [], 0, 1)
%!error id=sluice:propagate:badstate sluice.propagate (sluice.model ('lorenz63'), int32 (ones (3, 3)), [], 0, 1)
%!error id=sluice:propagate:badparams sluice.propagate (sluice.model ('lorenz63'), ones (3, 3), ones (3, 2), 0, 1)
