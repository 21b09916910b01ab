% test_scores_reference.m - sluice.crps and sluice.rank_histogram against
% outside references: the Gaussian closed form of the CRPS built from the
% statistics package's normcdf / normpdf, a value computed by hand, the
% double sum of the definition, and chi-square tests with chi2cdf.

%!function c = crps_gauss (mu, s, y)
%! % CRPS of N(mu, s^2) at y (Gneiting & Raftery 2007), with the
%! % statistics package's normcdf and normpdf
%! z = (y - mu) ./ s;
%! c = s .* (z .* (2 * normcdf (z) - 1) + 2 * normpdf (z) - 1 / sqrt (pi));

%!test
%! % the closed form itself: N(0,1) at y = 0 is (sqrt(2) - 1)/sqrt(pi)
%! % = 0.2336949773 (Gneiting & Raftery 2007; MODELS.md section 5)
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! assert (crps_gauss (0, 1, 0), (sqrt (2) - 1) / sqrt (pi), 1e-15);
%! assert (crps_gauss (0, 1, 0), 0.2336949773, 1e-10);

%!test
%! % by hand: members {1, 2, 4}, y = 3. E|X - y| = (2 + 1 + 1)/3 = 4/3;
%! % E|X - X'| = 2 (1 + 3 + 2)/9 = 4/3; CRPS = 4/3 - (1/2)(4/3) = 2/3.
%! % Check: the integral of (F - H(x - 3))^2 over the steps of the
%! % empirical F is (1/3)^2 + (2/3)^2 + (1/3)^2 = 2/3.
%! assert (sluice.crps ([4 1 2], 3), 2/3, 1e-15);

%!test
%! % O(N log N) result against the O(N^2) double sum of the definition,
%! % random cases with ties and with a large offset
%! randn ('state', 11); rand ('state', 12);
%! for N = [1 2 3 17 64 301]
%!   X = [2.385 * randn(2, N); floor(4 * rand (2, N)); 1e4 + randn(1, N)];
%!   y = [0.3; -5; 2; 1.5; 1e4 + 0.1];
%!   D = abs (repmat (X, [1 1 N]) - repmat (permute (X, [1 3 2]), [1 N 1]));
%!   ref = mean (abs (X - repmat (y, 1, N)), 2) - sum (sum (D, 2), 3) / (2 * N^2);
%!   assert (sluice.crps (X, y), ref, -1e-11);
%! end

%!test
%! % ensemble drawn from the forecast distribution itself converges to the
%! % closed form (Gneiting & Raftery 2007). The ensemble estimator is biased:
%! % E[c] = CRPS + E|X - X'|/(2N) = CRPS + s/(N sqrt(pi)) for N(mu, s^2);
%! % its spread falls as 1/sqrt(N), so that dominates the tolerance.
%! % (a) 2000 ensembles of N = 1000 at y = 0: mean within 4 standard errors
%! %     of CRPS + bias; (b) N = 1e4, 1e5, 1e6 in one row each, also for
%! %     N(0.3, 2^2) at y = 0.7: within bias + 5 sd (sd scaled from (a)).
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! randn ('state', 2024);
%! R = 2000; N = 1000;
%! c = sluice.crps (randn (R, N), zeros (R, 1));
%! ref = crps_gauss (0, 1, 0);
%! bias = 1 / (N * sqrt (pi));
%! sd1000 = std (c);
%! assert (abs (mean (c) - (ref + bias)) < 4 * sd1000 / sqrt (R));
%! for N = [1e4 1e5 1e6]
%!   tol = 1 / (N * sqrt (pi)) + 5 * sd1000 * sqrt (1e3 / N);
%!   assert (abs (sluice.crps (randn (1, N), 0) - ref) < tol);
%!   mu = 0.3; s = 2; y = 0.7;
%!   tol = s / (N * sqrt (pi)) + 5 * s * sd1000 * sqrt (1e3 / N);
%!   assert (abs (sluice.crps (mu + s * randn (1, N), y) - crps_gauss (mu, s, y)) < tol);
%! end

%!test
%! % rank histogram of a reliable ensemble (members and observation from
%! % the same distribution) is flat (Hamill 2001): Pearson chi-square with
%! % N degrees of freedom accepted at the 1% level, p from the statistics
%! % package's chi2cdf; the p-value returned agrees with chi2cdf.
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! randn ('state', 5);
%! m = 50; N = 9; T = 400;
%! X = 1.7 + 0.8 * randn (m, N, T);
%! Y = 1.7 + 0.8 * randn (m, T);
%! [counts, edges, x2, p] = sluice.rank_histogram (X, Y, 'seed', 3);
%! assert (sum (counts), m * T);
%! assert (numel (counts), N + 1);
%! e = m * T / (N + 1);
%! assert (x2, sum ((counts - e) .^ 2 / e), 1e-9);
%! assert (p, 1 - chi2cdf (x2, N), 1e-10);
%! assert (1 - chi2cdf (x2, N) > 0.01);

%!test
%! % under-dispersed ensemble (spread 0.5 for a truth of spread 1): U shape,
%! % the end ranks over-populated and flatness rejected (Hamill 2001)
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! randn ('state', 6);
%! m = 20000; N = 9;
%! [counts, ~, x2] = sluice.rank_histogram (0.5 * randn (m, N), randn (m, 1));
%! e = m / (N + 1);
%! assert (counts(1) > 2 * e && counts(end) > 2 * e);
%! assert (counts(5) < e && counts(6) < e);
%! assert (1 - chi2cdf (x2, N) < 1e-6);

%!test
%! % ties broken at random: an ensemble of identical members equal to the
%! % observation spreads the ranks uniformly over 1..N+1 (chi-square at the
%! % 1% level with chi2cdf); members {1, 2, 2, 3} at y = 2 give ranks
%! % 2, 3, 4 with probability 1/3 each (4 binomial standard deviations)
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! m = 30000; N = 4;
%! [counts, ~, x2] = sluice.rank_histogram (2.385 * ones (m, N), 2.385 * ones (m, 1), 'seed', 99);
%! assert (1 - chi2cdf (x2, N) > 0.01);
%! counts = sluice.rank_histogram (repmat ([1 2 2 3], m, 1), 2 * ones (m, 1), 'seed', 1);
%! assert (counts([1 5]), [0 0]);
%! assert (all (abs (counts(2:4) - m / 3) < 4 * sqrt (m * (1/3) * (2/3))));
