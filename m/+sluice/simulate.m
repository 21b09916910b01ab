% -*- texinfo -*-
% @deftypefn  {} {[@var{X}, @var{t}] =} sluice.simulate (@var{model}, @var{x0}, @var{params}, @var{times})
% @deftypefnx {} {[@var{X}, @var{t}] =} sluice.simulate (@var{model}, @var{x0}, @var{params}, @var{times}, @var{forcing})
% @deftypefnx {} {[@var{X}, @var{t}] =} sluice.simulate (@dots{}, @var{name}, @var{value}, @dots{})
% Run one trajectory of a model from one initial state and parameter set.
% The run of @var{model} (a spec from @code{sluice.model}) starts from
% state @var{x0} (n x 1; empty: the model's @code{x0}) with parameters
% @var{params} (p x 1; empty: the model's defaults) and return the states
% at @var{times} (increasing; the run starts at @code{times(1)}, where
% @var{X}(:, 1) = @var{x0}). @var{X} is n x numel(@var{times}).
%
% @var{forcing} is a struct with @code{time} and @code{values} (one column
% per forcing of the model), as for @code{sluice.filter}; a struct from
% @code{sluice.read_forcing} has @code{names}, and its columns are matched
% to the model's forcings by name. Options:
% @code{'events'} (struct with @code{time}, @code{values} for a model with
% events, such as the flood model's high-water levels W), @code{'seed'}
% (for models whose own dynamics are random, default 1).
%
% This is the "truth" run of a twin experiment. A trajectory that blows
% up (a non-finite state) is returned as it is, with a warning
% (@code{sluice:simulate:nonfinite}).
% @seealso{sluice.propagate, sluice.model, sluice.filter, sluice.read_forcing}
% @end deftypefn
function [X, times] = simulate (model, x0, params, times, forcing, varargin)
  if (nargin < 4)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (nargin < 5)
    forcing = [];
  end
  opts = struct ('events', [], 'seed', 1);
  opts = sluice.internal.name_value (opts, varargin, 'simulate');
  [X, times] = sluice.internal.simulate_run (model, x0, params, times, forcing, opts, 'simulate');
end

%!test
%! % Lorenz-63 from (1, 1, 1): the state after a short time against a
%! % fine RK4 reference written here (classical RK4, step 1e-4)
%! s = sluice.model ('lorenz63', 'dt', 0.001);
%! X = sluice.simulate (s, [1; 1; 1], [], 0:0.5:1);
%! f = @(x) [10*(x(2)-x(1)); x(1)*(28-x(3))-x(2); x(1)*x(2)-8/3*x(3)];
%! x = [1; 1; 1]; h = 1e-4;
%! for k = 1:10000
%!   k1 = f(x); k2 = f(x + h/2*k1); k3 = f(x + h/2*k2); k4 = f(x + h*k3);
%!   x = x + h/6*(k1 + 2*k2 + 2*k3 + k4);
%! end
%! assert (size (X), [3 3]);
%! assert (X(:, 1), [1; 1; 1]);
%! assert (X(:, 3), x, 1e-6 * norm (x));
%!test
%! % a linear decay with forcing held: x' = -k x + u, exact solution
%! f = @(t, X, P, U) -P(1, :) .* X + U;
%! s = sluice.model (f, 'states', {'x'}, 'params', {'k'}, 'forcings', {'u'}, ...
%!                   'defaults', 0.5, 'kind', 'rhs', 'dt', 0.01);
%! X = sluice.simulate (s, 2, [], [0 1 2], struct ('time', [0; 10], 'values', [3; 3]));
%! ex = @(t) 6 + (2 - 6) * exp (-0.5 * t);
%! assert (X, ex ([0 1 2]), 1e-9);
%!error id=sluice:simulate:toomanysteps sluice.simulate (sluice.model ('linear', 'A', 1, 'Q', 0.1), 1, [], [0 1e15])
%!error id=sluice:simulate:toomanysteps sluice.simulate (sluice.model ('linear', 'A', 1, 'Q', 0.1), 1, [], [0 1 1e300])
%!error id=sluice:simulate:toomanysteps sluice.simulate (sluice.model ('lorenz63', 'integrator', 'dopri5'), [], [], [0 1e12])
%!error id=sluice:simulate:badtimes sluice.simulate (sluice.model ('lorenz63'), [], [], [0 2 1])
%!error id=sluice:simulate:nomemory sluice.simulate (sluice.model ('lorenz63'), [1; 1; 1], [], 0:1e-12:1)
%!error id=sluice:simulate:badtimes sluice.simulate (sluice.model ('lorenz63'), [], [], single ([0 1]))
%!error id=sluice:simulate:badstate sluice.simulate (sluice.model ('lorenz63'), [1; 2], [], [0 1])
%!error id=sluice:simulate:badstate sluice.simulate (sluice.model ('lorenz63'), [1; NaN; 2], [], [0 1])
%!error id=sluice:simulate:badparams sluice.simulate (sluice.model ('lorenz63'), [], [1 2], [0 1])
%!error id=sluice:simulate:badparams sluice.simulate (sluice.model ('lorenz63'), [], [10; -1; 2], [0 1])
%!error id=sluice:simulate:badoption sluice.simulate (sluice.model ('lorenz63'), [], [], [0 1], [], 'bogus', 1)
%!error id=sluice:simulate:badforcing sluice.simulate (sluice.model ('lorenz63'), [], [], [0 1], struct ('time', 0, 'values', 1))
%!error id=sluice:simulate:badmodel sluice.simulate (5, [], [], [0 1])
