% -*- texinfo -*-
% @deftypefn  {} {@var{P} =} sluice.draw (@var{prior}, @var{N}, @var{seed})
% @deftypefnx {} {[@var{P}, @var{names}] =} sluice.draw (@dots{})
% Draw an ensemble of @var{N} members from a prior.
%
% @var{prior} is a struct array from @code{sluice.prior} (or several
% joined with @code{[p1, p2]}); its names must be unique. The result
% @var{P} is p-by-@var{N}, in natural units: row @var{k} holds the draws of
% parameter @var{k}, column @var{j} member @var{j}. @var{names} is the
% p-by-1 cell array of the parameter names, in the order of the rows.
%
% @var{seed} (a whole number from 0 to 2^53) is required. Draws come from
% counter-based streams: member @var{j} uses a stream of its own, keyed by
% @var{seed} and @var{j}, so the same seed always gives the same ensemble,
% and member @var{j}'s values do not depend on @var{N}. Uniform and
% truncated normal draws lie strictly inside their bounds; truncated
% normals are drawn by inversion, accurately however far in a tail the
% interval lies.
%
% Example:
% @example
% @group
% pr = sluice.prior ('K', 'lognormal', [log(2.5) 0.4], ...
%                    'alpha', 'uniform', [0 1]);
% [P, names] = sluice.draw (pr, 1000, 7);
% hist (P(1, :), 40)
% @end group
% @end example
%
% Errors: @code{sluice:draw:badprior} (not a prior struct array, names
% missing or repeated, arguments invalid), @code{sluice:draw:badcount}
% (@var{N} not a positive whole number), @code{sluice:draw:badseed},
% @code{sluice:draw:nomemory} (the p-by-@var{N} result cannot be
% allocated).
% @seealso{sluice.prior}
% @end deftypefn

function [P, names] = draw (prior, N, seed)
  if (nargin ~= 3)
    sluice.internal.compat ('usage', mfilename ());
  end
  [ids, a, b, lo, hi, names] = sluice.internal.check_prior (prior, 1, 'draw');
  p = numel (ids);

  if (~(isa (N, 'double') && isreal (N) && ~issparse (N) && isscalar (N) ...
        && isfinite (N) && N == fix (N) && N >= 1 && N <= flintmax ()))
    error ('sluice:draw:badcount', ...
           'argument 2 (N): expected a positive whole number (a real double scalar), got %s', ...
           sluice.internal.describe (N, 'value'));
  end
  if (~(isa (seed, 'double') && isreal (seed) && ~issparse (seed) ...
        && isscalar (seed) && isfinite (seed) && seed == fix (seed) ...
        && seed >= 0 && seed <= flintmax ()))
    error ('sluice:draw:badseed', ...
           'argument 3 (seed): expected a whole number from 0 to 2^53 (a real double scalar), got %s', ...
           sluice.internal.describe (seed, 'value'));
  end

  % the output alone is p x N doubles: refuse at once what cannot fit
  sluice.internal.ensure_memory (8 * p * N, 'draw', ...
                               sprintf ('a draw of %d members of %d parameter(s)', N, p));
  P = sluice.kernel.draw (ids, a, b, lo, hi, N, seed);
end

%!shared pr
%! pr = sluice.prior ('K', 'lognormal', [log(2.5) 0.4], ...
%!                    'alpha', 'uniform', [0.1 0.9], 'bounds', [0 1], ...
%!                    'mu', 'truncnormal', [0.2 0.1 0 Inf], ...
%!                    'theta', 'normal', [-1.37 2.385], ...
%!                    'dt', 'fixed', 1.25);

%!test
%! [P, names] = sluice.draw (pr, 50, 42);
%! assert (size (P), [5 50]);
%! assert (class (P), 'double');
%! assert (names, {'K'; 'alpha'; 'mu'; 'theta'; 'dt'});
%! assert (all (P(1, :) > 0));
%! assert (all (P(2, :) > 0.1 & P(2, :) < 0.9));
%! assert (all (P(3, :) > 0));
%! assert (all (isfinite (P(4, :))));
%! assert (P(5, :), 1.25 * ones (1, 50));

%!test
%! % determinism: the same seed gives the same ensemble; member j does not
%! % depend on N; another seed gives another ensemble
%! A = sluice.draw (pr, 200, 7);
%! B = sluice.draw (pr, 200, 7);
%! C = sluice.draw (pr, 3, 7);
%! D = sluice.draw (pr, 200, 8);
%! assert (isequal (A, B));
%! assert (isequal (A(:, 1:3), C));
%! assert (all (all (A(1:4, :) ~= D(1:4, :))));

%!test
%! % joined priors; a column struct array is accepted too
%! q = [sluice.prior('a', 'normal', [0 1]), sluice.prior('b', 'uniform', [2 3])];
%! [P, names] = sluice.draw (q, 10, 0);
%! assert (size (P), [2 10]);
%! assert (names, {'a'; 'b'});
%! assert (isequal (sluice.draw (q(:), 10, 0), P));

%!test
%! % the largest seed and N = 1 work
%! P = sluice.draw (pr, 1, flintmax ());
%! assert (size (P), [5 1]);

%!error <Invalid call> sluice.draw ()
%!error <Invalid call> sluice.draw (pr, 10)
%!error <called with too many inputs> sluice.draw (pr, 10, 1, 2)
%!error id=sluice:draw:badprior sluice.draw ([], 10, 1)
%!error <needs about 4000 GB> sluice.draw (sluice.prior ('a', 'normal', [0 1]), 5e11, 1)
%!error id=sluice:draw:nomemory sluice.draw (pr, 1e13, 1)
%!test
%! % bounds widened past the support are kept: the draws lie inside them
%! q = sluice.prior ('a', 'uniform', [0.2 0.4], 'bounds', [0 1]);
%! q.upper = 2;
%! P = sluice.draw (q, 200, 3);
%! assert (all (P >= 0.2 & P <= 0.4));
%!error <must contain the support \[-Inf Inf\] of the normal> q = sluice.prior ('a', 'normal', [0 1]); q.lower = -1; q.upper = 1; sluice.draw (q, 10, 1)
%!error id=sluice:draw:badprior q = sluice.prior ('a', 'uniform', [0 1]); q.upper = 0.5; sluice.draw (q, 10, 1)
%!error id=sluice:draw:badprior q = sluice.prior ('a', 'lognormal', [0 1]); q.lower = 0.1; sluice.draw (q, 10, 1)
%!error id=sluice:draw:badprior q = sluice.prior ('a', 'truncnormal', [0 1 -1 1]); q.lower = 0; sluice.draw (q, 10, 1)
%!error id=sluice:draw:badprior q = sluice.prior ('a', 'fixed', 2); q.lower = 3; q.upper = 4; sluice.draw (q, 10, 1)
%!error id=sluice:draw:badprior q = sluice.prior ('a', 'normal', [0 1]); q.lower = NaN; sluice.draw (q, 10, 1)
%!error id=sluice:draw:badprior q = sluice.prior ('a', 'normal', [0 1]); q.lower = [1 2]; sluice.draw (q, 10, 1)
%!error id=sluice:draw:badprior q = sluice.prior ('a', 'normal', [0 1]); q.upper = 'x'; sluice.draw (q, 10, 1)
%!error id=sluice:draw:badprior sluice.draw (struct ('name', {}), 10, 1)
%!error id=sluice:draw:badprior sluice.draw ({'a', 'normal', [0 1]}, 10, 1)
%!error id=sluice:draw:badprior sluice.draw (1, 10, 1)
%!error id=sluice:draw:badprior sluice.draw (rmfield (pr, 'upper'), 10, 1)
%!error id=sluice:draw:badprior sluice.draw (rmfield (pr, 'args'), 10, 1)
%!error id=sluice:draw:badprior sluice.draw (repmat (pr(1), 2, 2), 10, 1)
%!error id=sluice:draw:badprior sluice.draw ([pr, sluice.prior('K', 'normal', [0 1])], 10, 1)
%!error id=sluice:draw:badprior
%! q = pr; q(2).name = 'not valid';
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(2).name = 3;
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(2).dist = 'gamma';
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(2).dist = {'uniform'};
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(2).args = [0 1 2];
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(2).args = single ([0 1]);
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(2).args = int32 ([0 1]);
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(2).args = [0 1] + 1i;
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(2).args = {0, 1};
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! % arguments no longer valid after editing the struct: checked in C
%! q = pr; q(4).args = [0 -1];
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(2).args = [1 0];
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(3).args = [0 1 NaN 1];
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badprior
%! q = pr; q(5).args = Inf;
%! sluice.draw (q, 10, 1);
%!error id=sluice:draw:badcount sluice.draw (pr, 0, 1)
%!error id=sluice:draw:badcount sluice.draw (pr, -3, 1)
%!error id=sluice:draw:badcount sluice.draw (pr, 2.5, 1)
%!error id=sluice:draw:badcount sluice.draw (pr, NaN, 1)
%!error id=sluice:draw:badcount sluice.draw (pr, Inf, 1)
%!error id=sluice:draw:badcount sluice.draw (pr, 1e300, 1)
%!error id=sluice:draw:badcount sluice.draw (pr, [], 1)
%!error id=sluice:draw:badcount sluice.draw (pr, [10 10], 1)
%!error id=sluice:draw:badcount sluice.draw (pr, '10', 1)
%!error id=sluice:draw:badcount sluice.draw (pr, single (10), 1)
%!error id=sluice:draw:badcount sluice.draw (pr, int32 (10), 1)
%!error id=sluice:draw:badcount sluice.draw (pr, true, 1)
%!error id=sluice:draw:badcount sluice.draw (pr, 10 + 1i, 1)
%!error id=sluice:draw:badcount sluice.draw (pr, sparse (10), 1)
%!error id=sluice:draw:badcount sluice.draw (pr, {10}, 1)
%!error id=sluice:draw:badcount sluice.draw (pr, struct ('n', 10), 1)
%!error id=sluice:draw:badseed sluice.draw (pr, 10, -1)
%!error id=sluice:draw:badseed sluice.draw (pr, 10, 0.5)
%!error id=sluice:draw:badseed sluice.draw (pr, 10, NaN)
%!error id=sluice:draw:badseed sluice.draw (pr, 10, Inf)
%!error id=sluice:draw:badseed sluice.draw (pr, 10, 2 * flintmax ())
%!error id=sluice:draw:badseed sluice.draw (pr, 10, [])
%!error id=sluice:draw:badseed sluice.draw (pr, 10, [1 2])
%!error id=sluice:draw:badseed sluice.draw (pr, 10, '1')
%!error id=sluice:draw:badseed sluice.draw (pr, 10, single (1))
%!error id=sluice:draw:badseed sluice.draw (pr, 10, int32 (1))
%!error id=sluice:draw:badseed sluice.draw (pr, 10, true)
%!error id=sluice:draw:badseed sluice.draw (pr, 10, 1 + 1i)
%!error id=sluice:draw:badseed sluice.draw (pr, 10, sparse (1))
%!error id=sluice:draw:badseed sluice.draw (pr, 10, {1})
%!error id=sluice:draw:badseed sluice.draw (pr, 10, struct ('s', 1))
%!error id=sluice:draw:nomemory sluice.draw (pr, 1e15, 1)
%!error id=sluice:draw:nomemory sluice.draw (pr(1), 2^40, 1)

%% the kernel itself: every argument checked, nothing crashes
%!error id=sluice:draw:nargin sluice.kernel.draw (0, 0, 1, 0, 0, 1)
%!error id=sluice:draw:nargout [a, b] = sluice.kernel.draw (0, 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (single (0), 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (int32 (0), 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (false, 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (1i, 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (sparse (1), 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw ({1}, 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (struct ('a', 1), 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (1, single (0), 1, 0, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (1, 0, int32 (1), 0, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (1, 0, 1, true, 0, 1, 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (1, 0, 1, 0, {0}, 1, 1)
%!error id=sluice:draw:empty sluice.kernel.draw ([], [], [], [], [], 1, 1)
%!error id=sluice:draw:badsize sluice.kernel.draw ([1 1], 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badsize sluice.kernel.draw ([1 1; 1 1], [0 0 0 0], [1 1 1 1], [0 0 0 0], [0 0 0 0], 1, 1)
%!error id=sluice:draw:badsize sluice.kernel.draw (1, 0, [1 1], 0, 0, 1, 1)
%!error id=sluice:draw:nonfinite sluice.kernel.draw (NaN, 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:baddist sluice.kernel.draw (0.5, 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:baddist sluice.kernel.draw (5, 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:baddist sluice.kernel.draw (-1, 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:baddist sluice.kernel.draw (1e12, 0, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badprior sluice.kernel.draw (1, 0, -1, 0, 0, 1, 1)
%!error id=sluice:draw:badprior sluice.kernel.draw (0, NaN, 1, 0, 0, 1, 1)
%!error id=sluice:draw:badprior sluice.kernel.draw (3, 0, 1, 2, 1, 1, 1)
%!error id=sluice:draw:badvalue sluice.kernel.draw (1, 0, 1, 0, 0, 0, 1)
%!error id=sluice:draw:badvalue sluice.kernel.draw (1, 0, 1, 0, 0, 2^53 + 2, 1)
%!error id=sluice:draw:badvalue sluice.kernel.draw (1, 0, 1, 0, 0, 1, -1)
%!error id=sluice:draw:badclass sluice.kernel.draw (1, 0, 1, 0, 0, int32 (1), 1)
%!error id=sluice:draw:badclass sluice.kernel.draw (1, 0, 1, 0, 0, 1, single (1))
%!error id=sluice:draw:nonfinite sluice.kernel.draw (1, 0, 1, 0, 0, Inf, 1)
%!error id=sluice:draw:nomemory sluice.kernel.draw ([1 1], [0 0], [1 1], [0 0], [0 0], 2^52, 1)
%!error id=sluice:draw:baddraw sluice.kernel.draw (2, 800, 1, 0, 0, 4, 1)
%!test
%! % ignored entries may hold anything; truncation bounds may be infinite
%! P = sluice.kernel.draw ([0; 3], [0 1], [1 2], [NaN -Inf], [NaN Inf], 4, 3);
%! assert (size (P), [2 4]);
%! assert (all (P(1, :) > 0 & P(1, :) < 1));
