% The prior gateway sluice.kernel.prior_eval: a prior's log-densities (per
% entry and joint) against Octave's statistics package (unifpdf, normpdf,
% lognpdf; the truncated normal as normpdf over the mass normcdf gives),
% the transforms of bounded parameters against their definitions
% (log (x - lo), log (hi - x), log ((x - lo) / (hi - x))), the
% log-Jacobian of the inverse against a central difference and by the
% change-of-variables formula (any probability handbook: the density of z
% integrates to 1), and every error a caller can cause.

%!shared q, ids, a, b, lo, hi
%! q = sluice.prior ('n', 'normal', [-1.37 2.385], 'l', 'lognormal', [0.3 0.7], ...
%!                   'u', 'uniform', [0.5 4], 't', 'truncnormal', [0.2 0.9 -1 0.95]);
%! [ids, a, b, lo, hi] = sluice.internal.check_prior (q, 1, 'x');

%!test
%! pkg load statistics
%! x = [-3.1 0.2 1.9 5.5; 0.4 1.3 2.2 -1; 0.6 0.5 3.99 4.2; -0.9 0.1 0.94 1.2];
%! L = sluice.kernel.prior_eval ('logpdf', ids, a, b, lo, hi, x);
%! mass = normcdf (0.95, 0.2, 0.9) - normcdf (-1, 0.2, 0.9);
%! assert (L(1, :), log (normpdf (x(1, :), -1.37, 2.385)), -1e-13);
%! assert (L(2, 1:3), log (lognpdf (x(2, 1:3), 0.3, 0.7)), -1e-13);
%! assert (L(3, 1:3), log (unifpdf (x(3, 1:3), 0.5, 4)), -1e-13);
%! assert (L(4, 1:3), log (normpdf (x(4, 1:3), 0.2, 0.9) / mass), -1e-13);
%! assert (L(2:4, 4), -Inf (3, 1));
%! % the joint log-density: the rows' sum, -Inf when one point is outside
%! J = sluice.kernel.prior_eval ('logprior', ids, a, b, lo, hi, x);
%! assert (size (J), [1 4]);
%! assert (J(1:3), sum (L(:, 1:3), 1), -1e-14);
%! assert (J(4), -Inf);
%! assert (sluice.kernel.prior_eval ('logprior', ids, a, b, lo, hi, NaN (4, 1)), -Inf);
%! assert (sluice.kernel.prior_eval ('logprior', ids, a, b, lo, hi, zeros (4, 0)), zeros (1, 0));

%!test
%! % the transforms: definitions, round trips, strictly inside the bounds
%! L0 = [-Inf; 2.385; -Inf; -1.37]; H0 = [Inf; Inf; 7.91; 2.385];
%! f = [0.0137 0.31831 0.5 0.7071 0.93];
%! X = [-37.7 + 100 * f; 2.385 + 40 * f; 7.91 - 40 * f; -1.37 + 3.755 * f];
%! Z = sluice.kernel.prior_eval ('forward', L0, H0, X);
%! assert (Z(1, :), X(1, :));
%! assert (Z(2, :), log (X(2, :) - 2.385), -1e-13);
%! assert (Z(3, :), log (7.91 - X(3, :)), -1e-13);
%! assert (Z(4, :), log ((X(4, :) + 1.37) ./ (2.385 - X(4, :))), 1e-14);
%! assert (sluice.kernel.prior_eval ('inverse', L0, H0, Z), X, -1e-14);
%! far = sluice.kernel.prior_eval ('inverse', L0, H0, repmat ([-800 800], 4, 1));
%! assert (all (far(2:4, :)(:) > [2.385; -Inf; -1.37; 2.385; -Inf; -1.37]));
%! assert (all (far([3 4], :)(:) < [7.91; 2.385; 7.91; 2.385]));
%! % a fixed value (lower == upper) has the identity
%! assert (sluice.kernel.prior_eval ('forward', 3.3, 3.3, 3.3), 3.3);

%!test
%! % the log-Jacobian of the inverse: the sum over rows of log |dx/dz|,
%! % against central differences (h = 1e-5)
%! L0 = [-Inf; 2.385; -Inf; -1.37]; H0 = [Inf; Inf; 7.91; 2.385];
%! Z = [-3 -0.2 0 1.3 4; 0.5 -2 1 0 3; -1 2 0.3 -0.7 1; -3 -0.2 0 1.3 4];
%! h = 1e-5;
%! D = (sluice.kernel.prior_eval ('inverse', L0, H0, Z + h) - ...
%!      sluice.kernel.prior_eval ('inverse', L0, H0, Z - h)) / (2 * h);
%! J = sluice.kernel.prior_eval ('logjac', L0, H0, Z);
%! assert (size (J), [1 5]);
%! assert (J, sum (log (abs (D)), 1), 1e-8);

%!test
%! % change of variables: exp (logprior (x (z)) + logjac (z)) is the density
%! % of z and integrates to 1 (midpoint rule over [-40, 40])
%! dz = 1e-3;
%! z = -40 + dz / 2 : dz : 40;
%! for k = 1:numel (q)
%!   x = sluice.kernel.prior_eval ('inverse', q(k).lower, q(k).upper, z);
%!   lp = sluice.kernel.prior_eval ('logprior', ids(k), a(k), b(k), lo(k), hi(k), x);
%!   lj = sluice.kernel.prior_eval ('logjac', q(k).lower, q(k).upper, z);
%!   assert (sum (exp (lp + lj)) * dz, 1, 1e-6);
%! end

% every error a caller can cause
%!error id=sluice:prior_eval:nargin sluice.kernel.prior_eval ()
%!error id=sluice:prior_eval:nargin sluice.kernel.prior_eval ('forward', 0, 1)
%!error id=sluice:prior_eval:nargin sluice.kernel.prior_eval ('logpdf', 1, 0, 1, 0, 0)
%!error id=sluice:prior_eval:nargin sluice.kernel.prior_eval ('inverse', 0, 1, 0.5, 1)
%!error id=sluice:prior_eval:nargout [u, v] = sluice.kernel.prior_eval ('forward', 0, 1, 0.5)
%!error id=sluice:prior_eval:badclass sluice.kernel.prior_eval (3, 0, 1, 0.5)
%!error id=sluice:prior_eval:badclass sluice.kernel.prior_eval ({'forward'}, 0, 1, 0.5)
%!error <expected 'logpdf', 'logprior', 'forward', 'inverse', 'logjac' or 'check', got 'backward'> sluice.kernel.prior_eval ('backward', 0, 1, 0.5)
%!error id=sluice:prior_eval:badmode sluice.kernel.prior_eval ('Forward', 0, 1, 0.5)
%!error id=sluice:prior_eval:badclass sluice.kernel.prior_eval ('forward', single (0), 1, 0.5)
%!error id=sluice:prior_eval:badclass sluice.kernel.prior_eval ('forward', 0, int8 (1), 0.5)
%!error id=sluice:prior_eval:badclass sluice.kernel.prior_eval ('inverse', 0, 1, 1i)
%!error id=sluice:prior_eval:badclass sluice.kernel.prior_eval ('inverse', 0, 1, sparse (0.5))
%!error id=sluice:prior_eval:badclass sluice.kernel.prior_eval ('logjac', 0, 1, true)
%!error id=sluice:prior_eval:empty sluice.kernel.prior_eval ('forward', [], [], 0.5)
%!error id=sluice:prior_eval:badsize sluice.kernel.prior_eval ('forward', [0 0], 1, [0.5; 0.5])
%!error id=sluice:prior_eval:badsize sluice.kernel.prior_eval ('forward', 0, 1, [0.5; 0.5])
%!error id=sluice:prior_eval:badsize sluice.kernel.prior_eval ('forward', 0, 1, ones (1, 2, 2))
%!error <parameter 2: the bounds \[1 0\] must be lower <= upper> sluice.kernel.prior_eval ('forward', [0 1], [1 0], [0.5; 0.5])
%!error id=sluice:prior_eval:badbounds sluice.kernel.prior_eval ('inverse', NaN, 1, 0.5)
%!error id=sluice:prior_eval:badbounds sluice.kernel.prior_eval ('logjac', 0, NaN, 0.5)
%!error id=sluice:prior_eval:badclass sluice.kernel.prior_eval ('logpdf', single (1), 0, 1, 0, 0, 1)
%!error id=sluice:prior_eval:badclass sluice.kernel.prior_eval ('logprior', 1, {0}, 1, 0, 0, 1)
%!error id=sluice:prior_eval:badclass sluice.kernel.prior_eval ('logpdf', 1, 0, 1, 0, 0, single (1))
%!error id=sluice:prior_eval:empty sluice.kernel.prior_eval ('logpdf', [], [], [], [], [], 1)
%!error id=sluice:prior_eval:nonfinite sluice.kernel.prior_eval ('logpdf', NaN, 0, 1, 0, 0, 1)
%!error id=sluice:prior_eval:badsize sluice.kernel.prior_eval ('logpdf', 1, 0, [1 1], 0, 0, 1)
%!error id=sluice:prior_eval:badsize sluice.kernel.prior_eval ('logpdf', 1, 0, 1, -Inf, Inf, ones (2, 3))
%!error <argument 2 \(dist_ids\): element 1 is 1.5> sluice.kernel.prior_eval ('logpdf', 1.5, 0, 1, -Inf, Inf, 1)
%!error id=sluice:prior_eval:baddist sluice.kernel.prior_eval ('logprior', 7, 0, 1, -Inf, Inf, 1)
%!error id=sluice:prior_eval:baddist sluice.kernel.prior_eval ('logprior', -1, 0, 1, -Inf, Inf, 1)
%!error <parameter 1 \(normal \[mean sd\] = \[0 -1\]\): the standard deviation> sluice.kernel.prior_eval ('logpdf', 1, 0, -1, -Inf, Inf, 1)
%!error id=sluice:prior_eval:badprior sluice.kernel.prior_eval ('logprior', [0 3], [0 0], [1 1], [0 2], [0 1], [0.5; 0.5])

% mode 'check': the core's verdict on every entry (sl_prior_fault) and its
% support, raising nothing; the supports are those the header gives each
% distribution (include/sluice/prior.h), the verdicts its checks' words
%!test
%! ids = [0 1 2 3 4 0 1 3 7 3];
%! a = [-1.37 0 0 0.2 1.25 2 0 0 0 0];
%! b = [2.385 1 0.4 0.1 0 1 -1 1 1 1];
%! lo = [-Inf -Inf -Inf 0 -Inf -Inf -Inf NaN -Inf 3];
%! hi = [Inf Inf Inf Inf Inf Inf Inf 2 Inf 2];
%! [r, w, slo, shi] = sluice.kernel.prior_eval ('check', ids, a, b, lo, hi);
%! assert (r, {'', '', '', '', '', 'badprior', 'badprior', 'badprior', 'baddist', 'badprior'});
%! assert (w(1:5), {'', '', '', '', ''});
%! assert (w{6}, 'the lower limit must be below the upper limit');
%! assert (w{7}, 'the standard deviation must be positive and finite');
%! assert (w{8}, 'the truncation bounds must not be NaN');
%! assert (w{9}, 'unknown distribution id');
%! assert (w{10}, 'the lower truncation bound must be below the upper one');
%! assert (slo, [-1.37 -Inf 0 0 1.25 NaN NaN NaN NaN NaN]);
%! assert (shi, [2.385 Inf Inf Inf 1.25 NaN NaN NaN NaN NaN]);
%!test
%! % one output: the reasons alone
%! assert (sluice.kernel.prior_eval ('check', 4, NaN, 0, -Inf, Inf), {'badprior'});
%!error id=sluice:prior_eval:nargin sluice.kernel.prior_eval ('check', 0, 0, 1, -Inf, Inf, 1)
%!error id=sluice:prior_eval:nargout [a, b, c, d, e] = sluice.kernel.prior_eval ('check', 0, 0, 1, -Inf, Inf)
%!error id=sluice:prior_eval:nargout [a, b] = sluice.kernel.prior_eval ('logpdf', 0, 0, 1, -Inf, Inf, 0.5)
%!error <argument 2 \(dist_ids\): element 1 is 0.5> sluice.kernel.prior_eval ('check', 0.5, 0, 1, -Inf, Inf)
%!error id=sluice:prior_eval:badsize sluice.kernel.prior_eval ('check', [0 1], 0, [1 1], [0 0], [1 1])
