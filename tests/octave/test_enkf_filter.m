% The ensemble Kalman methods run inside sluice.filter: against the exact
% Kalman filter on linear-Gaussian models (Kalman 1960; the textbook
% prediction and update in tests/octave/kalman_rts.m), joint
% state-parameter estimation by
% state augmentation against Bayes' rule on a grid, inflation, relaxation
% and localisation through the whole cycle, and the errors a user can cause.

%!function [m, P] = kalman_update (m, P, H, R, y)
%!  % one Kalman update of a mean and covariance: a step of the reference
%!  % (tests/octave/kalman_rts.m) with A = I, Q = 0
%!  n = numel (m);
%!  [~, ~, m, P] = kalman_rts (eye (n), zeros (n), H, R, m, P, y);
%!endfunction

%!test
%! % the worked example of the model notes (random walk, Q = R = 1,
%! % x0 ~ N(0, 1), y = (1, 2, 0): filtered means 2/3, 3/2, 4/7, computed by
%! % hand from the Kalman equations), first through the reference itself;
%! % filtered variances 2/3, 5/8, 13/21 by the same equations
%! [~, ~, m, P] = kalman_rts (1, 1, 1, 1, 0, 1, [1 2 0]);
%! assert (m, [2/3 3/2 4/7], 1e-14);
%! assert (squeeze (P)', [2/3 5/8 13/21], 1e-14);
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, ...
%!               'value', [1; 2; 0], 'sigma', [1; 1; 1]);
%! sd = sqrt ([2/3 5/8 13/21]);
%! % the ETKF works in ensemble space (an N x N eigen-decomposition per
%! % analysis), so it runs with N = 2000 here; the serial and stochastic
%! % filters with N = 20000. Tolerance 5 sd/sqrt(N) on every mean
%! % (Monte Carlo error of an ensemble mean, common practice)
%! for c = {'etkf', 2000; 'ensrf', 20000; 'eakf', 20000; 'enkf', 20000}'
%!   N = c{2};
%!   r = sluice.filter (spec, pr, obs, 'method', c{1}, 'members', N, 'seed', 11, ...
%!                      't0', 0, 'progress', false);
%!   assert (r.times, [1 2 3]);
%!   assert (abs (r.states.mean - [2/3 3/2 4/7]) <= 5 * sd / sqrt (N), c{1});
%!   % no evidence from the ensemble Kalman methods (documented: NaN)
%!   assert (isnan (r.log_evidence));
%!   % the last analysis spread: sample variance within 5 standard errors
%!   % of a Gaussian sample variance, sqrt(2/N) relative (common practice)
%!   assert (abs (var (r.final.X) / (13/21) - 1) <= 5 * sqrt (2 / N), c{1});
%! end

%!test
%! % a three-state rotation-and-decay model, two states observed, 25 cycles:
%! % every filter mean converges to the exact Kalman filter mean (textbook
%! % equations, kalman_rts.m). The Monte Carlo error of the filter mean is not only
%! % sd/sqrt(N): the sampled gain carries a relative error ~ sqrt(2/N) that
%! % multiplies the innovation, and it accumulates over cycles. Measured
%! % over 60 seeds at N = 2000 (this model and data) the standard deviation
%! % of the error of one entry reached 2.4 sd/sqrt(N) for the square-root
%! % filters and 2.7 sd/sqrt(N) for the stochastic one, its RMS over the 75
%! % entries 1.0-1.8 (2.2) sd/sqrt(N). Checks: every entry within
%! % 9 sd/sqrt(N) (over 3 of those standard deviations) and the RMS over
%! % entries within 3 sd/sqrt(N).
%! [A, Q, H, R, Y] = rotation_decay_case ();
%! T = 25;
%! [~, ~, m, P] = kalman_rts (A, Q, H, R, zeros (3, 1), eye (3), Y);
%! sd = sqrt ([squeeze(P(1, 1, :))'; squeeze(P(2, 2, :))'; squeeze(P(3, 3, :))']);
%! spec = sluice.model ('linear', 'A', A, 'Q', Q, 'states', {'a', 'b', 'c'});
%! pr = sluice.prior ('a', 'normal', [0 1], 'b', 'normal', [0 1], 'c', 'normal', [0 1]);
%! t = kron ((1:T)', [1; 1]);
%! obs = struct ('time', t, 'variable', {repmat({'a'; 'c'}, T, 1)}, ...
%!               'value', Y(:), 'sigma', repmat (sqrt (diag (R)), T, 1));
%! % the ETKF's N x N eigen-decomposition: N = 1000 keeps it to seconds
%! for c = {'etkf', 1000; 'ensrf', 5000; 'eakf', 5000; 'enkf', 5000}'
%!   N = c{2};
%!   r = sluice.filter (spec, pr, obs, 'method', c{1}, 'members', N, 'seed', 5, ...
%!                      't0', 0, 'progress', false);
%!   z = (r.states.mean - m) ./ (sd / sqrt (N));
%!   assert (max (abs (z(:))) <= 9, sprintf ('%s: max |z| %.2f', c{1}, max (abs (z(:)))));
%!   assert (sqrt (mean (z(:).^2)) <= 3, sprintf ('%s: rms z %.2f', c{1}, sqrt (mean (z(:).^2))));
%!   % the last analysis covariance against the Kalman P: relative error of
%!   % a sample variance sqrt(2/N) (common practice), with the same
%!   % allowance as the means for the sampled gain: 9 sqrt(2/N)
%!   C = cov (r.final.X');
%!   rel = abs (diag (C) ./ diag (P(:, :, end)) - 1);
%!   assert (all (rel <= 9 * sqrt (2 / N)), c{1});
%!   assert (all (abs (r.ess - N) < 1e-9 * N) && ~any (r.resampled));
%! end
%! % the error shrinks like 1/sqrt(N): ten times fewer members, about
%! % sqrt(10) = 3.2 times the error (common practice); at least twice here
%! e5000 = sqrt (mean ((r.states.mean(:) - m(:)).^2));
%! r = sluice.filter (spec, pr, obs, 'method', 'enkf', 'members', 500, 'seed', 5, ...
%!                    't0', 0, 'progress', false);
%! assert (sqrt (mean ((r.states.mean(:) - m(:)).^2)) >= 2 * e5000);

%!test
%! % one analysis through the cycle is the Kalman update of the forecast
%! % ensemble's own mean and (inflated) covariance: exact for the
%! % deterministic square-root filters (Bishop et al. 2001; Whitaker & Hamill
%! % 2002; Anderson 2001). The forecast ensemble is the run whose only
%! % observation is missing, with the same seed (same prior draws and model
%! % noise).
%! spec = sluice.model ('linear', 'A', [0.9 0.3; -0.2 0.8], 'Q', [0.4 0.1; 0.1 0.3], ...
%!                      'states', {'u', 'v'});
%! pr = sluice.prior ('u', 'normal', [0.5 1], 'v', 'normal', [-1 0.7]);
%! o = {'members', 300, 'seed', 8, 't0', 0, 'progress', false};
%! obs = struct ('time', 1, 'variable', {{'u'}}, 'value', 1.7, 'sigma', 0.6);
%! miss = obs; miss.value = NaN;
%! H = [1 0]; R = 0.36;
%! for method = {'etkf', 'ensrf', 'eakf'}
%!   f = sluice.filter (spec, pr, miss, o{:}, 'method', method{1});
%!   assert (f.skipped, 1);
%!   Xf = f.final.X; mf = mean (Xf, 2); Af = Xf - mf; Pf = Af * Af' / 299;
%!   sa = [];
%!   for lam = [1 1.5]
%!     r = sluice.filter (spec, pr, obs, o{:}, 'method', method{1}, 'inflation', lam);
%!     [ma, Pa] = kalman_update (mf, lam^2 * Pf, H, R, 1.7);
%!     Xa = r.final.X; Aa = Xa - mean (Xa, 2);
%!     assert (mean (Xa, 2), ma, 1e-10);
%!     assert (Aa * Aa' / 299, Pa, 1e-10);
%!     assert (r.states.mean, ma, 1e-10);
%!     % a fixed inflation is reported as it is
%!     assert (r.inflation, lam);
%!     sa(end + 1) = sqrt (Pa(1, 1));
%!     % RTPP 1 keeps the (inflated) prior perturbations about the analysis
%!     % mean (Zhang et al. 2004)
%!     r = sluice.filter (spec, pr, obs, o{:}, 'method', method{1}, 'inflation', lam, 'rtpp', 1);
%!     assert (mean (r.final.X, 2), ma, 1e-10);
%!     assert (r.final.X - mean (r.final.X, 2), lam * Af, 1e-10);
%!     % RTPS 1 restores the (inflated) prior spread of every row
%!     % (Whitaker & Hamill 2012), the mean stays the analysis mean
%!     r = sluice.filter (spec, pr, obs, o{:}, 'method', method{1}, 'inflation', lam, 'rtps', 1);
%!     assert (mean (r.final.X, 2), ma, 1e-10);
%!     assert (std (r.final.X, 0, 2), lam * std (Xf, 0, 2), 1e-10);
%!   end
%!   % inflation 1.5 widens the analysis spread
%!   assert (sa(2) > sa(1));
%!   % RTPS 1 without inflation as seen in the recorded quantiles: the
%!   % observed row is a scaled copy of its forecast perturbations (one
%!   % observation of it), so its quantile spread is the forecast's
%!   r = sluice.filter (spec, pr, obs, o{:}, 'method', method{1}, 'rtps', 1);
%!   wq = @(s) squeeze (s.states.quantiles(1, 3, :) - s.states.quantiles(1, 1, :));
%!   assert (wq (r), wq (f), 1e-10);
%!   r0 = sluice.filter (spec, pr, obs, o{:}, 'method', method{1});
%!   assert (wq (r0) < 0.9 * wq (f));
%! end
%! % the stochastic EnKF (Burgers et al. 1998): with the same seed the
%! % perturbed observations are the same, and inflation widens the spread;
%! % RTPS 1 restores the forecast spread exactly
%! f = sluice.filter (spec, pr, miss, o{:}, 'method', 'enkf');
%! r1 = sluice.filter (spec, pr, obs, o{:}, 'method', 'enkf');
%! r2 = sluice.filter (spec, pr, obs, o{:}, 'method', 'enkf', 'inflation', 1.5);
%! assert (all (std (r2.final.X, 0, 2) > std (r1.final.X, 0, 2)));
%! r = sluice.filter (spec, pr, obs, o{:}, 'method', 'enkf', 'rtps', 1);
%! assert (std (r.final.X, 0, 2), std (f.final.X, 0, 2), 1e-10);

%!test
%! % adaptive inflation from the innovations stays within [1, inflation_max]
%! % and grows when the model is wrong (its noise too small for the truth):
%! % with the right model E[d'd] = tr(HBH') + tr(R) and the estimate stays
%! % near 1 (common practice)
%! n = 3; T = 30; A = 0.8 * eye (n);
%! spec = sluice.model ('linear', 'A', A, 'Q', 0.1, 'states', {'a', 'b', 'c'});
%! pr = sluice.prior ('a', 'normal', [0 1], 'b', 'normal', [0 1], 'c', 'normal', [0 1]);
%! t = kron ((1:T)', ones (n, 1));
%! late = zeros (2, 4); Qts = [0.1 2];
%! randn ('state', 3);
%! for iq = 1:2
%!   Qt = Qts(iq);   % the truth's noise: the model's, then 20 times it
%!   x = zeros (n, 1); Y = zeros (n, T);
%!   for k = 1:T
%!     x = A * x + sqrt (Qt) * randn (n, 1);
%!     Y(:, k) = x + 0.5 * randn (n, 1);
%!   end
%!   obs = struct ('time', t, 'variable', {repmat({'a'; 'b'; 'c'}, T, 1)}, ...
%!                 'value', Y(:), 'sigma', 0.5 * ones (n * T, 1));
%!   methods = {'etkf', 'ensrf', 'eakf', 'enkf'};
%!   for im = 1:4
%!     for imax = [2 1.3]
%!       r = sluice.filter (spec, pr, obs, 'method', methods{im}, 'members', 100, ...
%!                          'seed', 2, 't0', 0, 'adaptive_inflation', true, ...
%!                          'inflation_max', imax, 'progress', false);
%!       assert (size (r.inflation), [1 T]);
%!       assert (all (r.inflation >= 1 & r.inflation <= imax));
%!       if (imax == 2)
%!         late(iq, im) = mean (r.inflation(21:end));
%!       end
%!     end
%!   end
%! end
%! assert (all (late(1, :) < 1.4));
%! assert (all (late(2, :) > late(1, :) + 0.2));

%!test
%! % the recorded inflation is the one in force on every cycle, also on
%! % output times without observations (a cycle with no analysis may
%! % record NaN, but not 0)
%! spec = sluice.model ('linear', 'A', 0.8, 'Q', 0.1, 'states', {'a'});
%! pr = sluice.prior ('a', 'normal', [0 1]);
%! obs = struct ('time', (1:10)', 'variable', {repmat({'a'}, 10, 1)}, ...
%!               'value', sin (1:10)', 'sigma', 0.5 * ones (10, 1));
%! o = {'method', 'etkf', 'members', 50, 'seed', 1, 't0', 0, 'progress', false, ...
%!      'adaptive_inflation', true};
%! r = sluice.filter (spec, pr, obs, o{:}, 'times', [11 12]);
%! v = r.inflation;
%! assert (all (isnan (v) | (v >= 1 & v <= 2)), sprintf ('inflation %s', mat2str (v, 3)));

%!test
%! % the help of sluice.filter: the adaptive inflation starts at
%! % 'inflation' and is "at most inflation_max", also when it starts above
%! spec = sluice.model ('linear', 'A', 0.8, 'Q', 0.1, 'states', {'a'});
%! pr = sluice.prior ('a', 'normal', [0 1]);
%! obs = struct ('time', (1:10)', 'variable', {repmat({'a'}, 10, 1)}, ...
%!               'value', sin (1:10)', 'sigma', 0.5 * ones (10, 1));
%! o = {'method', 'etkf', 'members', 50, 'seed', 1, 't0', 0, 'progress', false, ...
%!      'adaptive_inflation', true};
%! r = sluice.filter (spec, pr, obs, o{:}, 'inflation', 3, 'inflation_max', 2);
%! v = r.inflation;
%! assert (all (v >= 1 & v <= 2), sprintf ('inflation %s', mat2str (v, 3)));

%!test
%! % joint state-parameter estimation by state augmentation: a step map
%! % whose dynamics depend on a positive rate k, s' = s + dt (u - k s), a
%! % known forcing u, s observed with small error. The reference is Bayes'
%! % rule on a grid of (s0, k) (the states are deterministic given them):
%! % the posterior of k after 30 observations.
%! pkg load statistics
%! dt = 0.1; ktrue = 0.4; Tend = 30;
%! tf = (0:dt:Tend)'; u = 1 + 0.5 * sin (0.7 * tf);
%! f = @(t, X, P, U, dt) X + dt * (U - P(1, :) .* X);
%! spec = sluice.model (f, 'states', {'s'}, 'params', {'k'}, 'forcings', {'u'}, 'dt', dt);
%! x = 1.5; xs = zeros (1, numel (tf)); xs(1) = x;
%! for i = 1:numel (tf) - 1
%!   x = x + dt * (u(i) - ktrue * x); xs(i + 1) = x;
%! end
%! to = (1:Tend)'; io = round (to / dt) + 1;
%! randn ('state', 21);
%! sig = 0.05;
%! y = xs(io)' + sig * randn (size (to));
%! obs = struct ('time', to, 'variable', {repmat({'s'}, Tend, 1)}, 'value', y, ...
%!               'sigma', sig * ones (Tend, 1));
%! pr = sluice.prior ('s', 'normal', [1 0.5], 'k', 'lognormal', [log(0.2) 0.7]);
%! forc = struct ('time', tf, 'values', u);
%! % the grid posterior: prior densities normpdf, lognpdf (statistics
%! % package), Gaussian likelihood of every observation
%! kg = linspace (0.38, 0.42, 401); xg = linspace (1, 2, 401)';
%! [K, X0] = meshgrid (kg, xg);
%! lp = log (normpdf (X0, 1, 0.5)) + log (lognpdf (K, log (0.2), 0.7));
%! Xs = X0; oi = 1;
%! for i = 1:numel (tf) - 1
%!   Xs = Xs + dt * (u(i) - K .* Xs);
%!   if (oi <= Tend && i + 1 == io(oi))
%!     lp = lp - 0.5 * ((y(oi) - Xs) / sig).^2; oi = oi + 1;
%!   end
%! end
%! w = exp (lp - max (lp(:))); w = w / sum (w(:));
%! % the grid holds the posterior (nothing on its edges)
%! assert (max ([w(1, :), w(end, :), w(:, 1)', w(:, end)']) < 1e-12);
%! pk = sum (w(:) .* K(:)); sk = sqrt (sum (w(:) .* (K(:) - pk).^2));
%! for method = {'etkf', 'ensrf', 'eakf', 'enkf'}
%!   r = sluice.filter (spec, pr, obs, 'method', method{1}, 'members', 300, 'seed', 4, ...
%!                      't0', 0, 'forcing', forc, 'progress', false);
%!   km = r.params.mean(end); ks = std (r.final.P);
%!   % close to the truth and to the grid posterior mean, in posterior sds
%!   assert (abs (km - ktrue) <= 3 * sk, method{1});
%!   assert (abs (km - pk) <= 0.5 * sk, method{1});
%!   % the ensemble spread of k is the posterior's (within 30 %)
%!   assert (abs (ks / sk - 1) <= 0.3, method{1});
%!   % updated in log space: every member and every recorded quantile > 0
%!   assert (all (r.final.P > 0) && all (r.params.quantiles(:) > 0));
%!   assert (r.param_names, {'k'});
%! end

%!test
%! % state augmentation is in the parameter's transformed space: the first
%! % analysis of [s; log k] is the Kalman update of the forecast ensemble's
%! % mean and covariance in those coordinates (exact for the square-root
%! % filters), not in natural units; an observation far above the forecast
%! % (2.6 against a forecast mean of about 1.5) asks for a large cut of k
%! dt = 0.1;
%! f = @(t, X, P, U, dt) X + dt * (1 - P(1, :) .* X);
%! spec = sluice.model (f, 'states', {'s'}, 'params', {'k'}, 'dt', dt);
%! pr = sluice.prior ('s', 'normal', [1 0.5], 'k', 'lognormal', [log(0.3) 0.8]);
%! obs = struct ('time', 1, 'variable', {{'s'}}, 'value', 2.6, 'sigma', 0.1);
%! miss = obs; miss.value = NaN;
%! o = {'members', 200, 'seed', 6, 't0', 0, 'progress', false};
%! for method = {'etkf', 'ensrf', 'eakf'}
%!   fc = sluice.filter (spec, pr, miss, o{:}, 'method', method{1});
%!   Z = [fc.final.X; log(fc.final.P)];
%!   mf = mean (Z, 2); Af = Z - mf;
%!   [ma, Pa] = kalman_update (mf, Af * Af' / 199, [1 0], 0.01, 2.6);
%!   r = sluice.filter (spec, pr, obs, o{:}, 'method', method{1});
%!   Za = [r.final.X; log(r.final.P)];
%!   Aa = Za - mean (Za, 2);
%!   assert (mean (Za, 2), ma, 1e-10);
%!   assert (Aa * Aa' / 199, Pa, 1e-10);
%!   % the same update in natural units would cut the mean of k to less
%!   % than half of that (to about 0 or below: seed-dependent)
%!   Zn = [fc.final.X; fc.final.P];
%!   mn = kalman_update (mean (Zn, 2), cov (Zn'), [1 0], 0.01, 2.6);
%!   assert (mn(2) < 0.5 * r.params.mean && r.params.mean > 0.1);
%!   assert (all (r.final.P > 0));
%! end

%!test
%! % a drifting rate: k jumps from 0.4 to 0.7 at t = 20; a random walk of
%! % the parameter (in log space) follows it, a fixed one does not
%! dt = 0.1; Tend = 40;
%! tf = (0:dt:Tend)'; u = 1 + 0.5 * sin (0.7 * tf);
%! kt = 0.4 + 0.3 * (tf >= 20);
%! f = @(t, X, P, U, dt) X + dt * (U - P(1, :) .* X);
%! spec = sluice.model (f, 'states', {'s'}, 'params', {'k'}, 'forcings', {'u'}, 'dt', dt);
%! x = 1.5; xs = zeros (1, numel (tf)); xs(1) = x;
%! for i = 1:numel (tf) - 1
%!   x = x + dt * (u(i) - kt(i) * x); xs(i + 1) = x;
%! end
%! to = (1:Tend)'; io = round (to / dt) + 1;
%! randn ('state', 21);
%! y = xs(io)' + 0.05 * randn (size (to));
%! obs = struct ('time', to, 'variable', {repmat({'s'}, Tend, 1)}, 'value', y, ...
%!               'sigma', 0.05 * ones (Tend, 1));
%! pr = sluice.prior ('s', 'normal', [1 0.5], 'k', 'lognormal', [log(0.2) 0.7]);
%! o = {'method', 'etkf', 'members', 300, 'seed', 4, 't0', 0, 'progress', false, ...
%!      'forcing', struct('time', tf, 'values', u)};
%! rw = sluice.filter (spec, pr, obs, o{:}, 'param_move', 'random_walk', 'param_step', 0.05);
%! fx = sluice.filter (spec, pr, obs, o{:});
%! sdk = squeeze (rw.params.quantiles(1, 3, :) - rw.params.quantiles(1, 1, :))' / (2 * 1.645);
%! % before the jump both find 0.4; over the last ten cycles the random
%! % walk is within 3 of its own spreads (5-95 % range / 3.29) of 0.7
%! assert (abs (rw.params.mean(19) - 0.4) < 0.02 && abs (fx.params.mean(19) - 0.4) < 0.02);
%! assert (all (abs (rw.params.mean(31:40) - 0.7) <= 3 * sdk(31:40)));
%! assert (abs (fx.params.mean(end) - 0.7) > 0.1);
%! assert (all (rw.final.P > 0));

%!test
%! % localisation through the cycle: ten uncoupled states on a line, an
%! % observation of the first every cycle, Gaspari-Cohn half-width 1
%! % (support 2: Gaspari & Cohn 1999, eq. 4.10): states 3-10 are never
%! % touched and equal the open-loop run with the same seed exactly
%! n = 10; T = 8;
%! spec = sluice.model ('linear', 'A', 0.9 * eye (n), 'Q', 0.2);
%! args = {};
%! for i = 1:n
%!   args = [args, {spec.states{i}, 'normal', [0 1]}];
%! end
%! pr = sluice.prior (args{:});
%! obs = struct ('time', (1:T)', 'variable', {repmat({'x1'}, T, 1)}, ...
%!               'value', 2 + 0.1 * (1:T)', 'sigma', 0.3 * ones (T, 1));
%! miss = obs; miss.value(:) = NaN;
%! o = {'members', 30, 'seed', 12, 't0', 0, 'progress', false};
%! L = struct ('geometry', 'line', 'positions', (1:n)', 'radius', 1);
%! for method = {'ensrf', 'eakf', 'letkf', 'enkf'}
%!   ol = sluice.filter (spec, pr, miss, o{:}, 'method', method{1}, 'localization', L);
%!   assert (ol.skipped, ones (1, T));
%!   r = sluice.filter (spec, pr, obs, o{:}, 'method', method{1}, 'localization', L);
%!   assert (r.states.mean(3:n, :), ol.states.mean(3:n, :));
%!   assert (r.states.quantiles(3:n, :, :), ol.states.quantiles(3:n, :, :));
%!   assert (r.final.X(3:n, :), ol.final.X(3:n, :));
%!   % the observed state and its neighbour at distance 1 are updated
%!   assert (all (abs (r.states.mean(1, :) - ol.states.mean(1, :)) > 1e-3));
%!   assert (any (abs (r.states.mean(2, :) - ol.states.mean(2, :)) > 1e-6));
%! end
%! % without localisation 30 members carry spurious correlations to the
%! % far states, which do move
%! r = sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf');
%! assert (any (abs (r.states.mean(n, :) - ol.states.mean(n, :)) > 1e-6));

%!test
%! % parameters are not localised: every observation reaches them, weighted
%! % by param_factor. For one observation the serial square-root filter
%! % moves the mean by rho K d (Whitaker & Hamill 2002 with a Schur-product
%! % localisation of the gain), so param_factor 0.5 halves the increment of
%! % the mean of log k; far states are still untouched
%! f = @(t, X, P, U, dt) X + dt * (1 - P(1, :) .* X);
%! spec = sluice.model (f, 'states', {'s1', 's2', 's3', 's4'}, 'params', {'k'}, 'dt', 0.5);
%! pr = sluice.prior ('s1', 'normal', [1 0.3], 's2', 'normal', [1 0.3], ...
%!                    's3', 'normal', [1 0.3], 's4', 'normal', [1 0.3], ...
%!                    'k', 'lognormal', [log(0.5) 0.5]);
%! obs = struct ('time', 1, 'variable', {{'s1'}}, 'value', 1.6, 'sigma', 0.1);
%! miss = obs; miss.value = NaN;
%! o = {'method', 'ensrf', 'members', 40, 'seed', 3, 't0', 0, 'progress', false};
%! L = struct ('geometry', 'line', 'radius', 0.5);
%! fc = sluice.filter (spec, pr, miss, o{:}, 'localization', L);
%! r1 = sluice.filter (spec, pr, obs, o{:}, 'localization', L);
%! L.param_factor = 0.5;
%! r2 = sluice.filter (spec, pr, obs, o{:}, 'localization', L);
%! d1 = mean (log (r1.final.P)) - mean (log (fc.final.P));
%! d2 = mean (log (r2.final.P)) - mean (log (fc.final.P));
%! assert (abs (d1) > 0.01);
%! assert (d2, 0.5 * d1, 1e-10);
%! assert (r1.final.X(2:4, :), fc.final.X(2:4, :));
%! assert (r2.final.X(2:4, :), fc.final.X(2:4, :));

%!shared spec, pr, obs, o, L, specp, prp, obp
%! spec = sluice.model ('linear', 'A', 0.9 * eye (3), 'Q', 0.1, 'states', {'a', 'b', 'c'});
%! pr = sluice.prior ('a', 'normal', [0 1]);
%! obs = struct ('time', [1; 2], 'variable', {{'a'; 'c'}}, 'value', [0.5; 0.2], 'sigma', [1; 1]);
%! o = {'members', 20, 'seed', 1, 't0', 0, 'progress', false};
%! L = struct ('geometry', 'line', 'radius', 1);
%! specp = sluice.model (@(t, X, P, U, dt) X + dt * (1 - P(1, :) .* X), ...
%!                       'states', {'s1', 's2'}, 'params', {'k'});
%! prp = sluice.prior ('k', 'lognormal', [log(0.3) 0.4]);
%! obp = struct ('time', [1; 1], 'variable', {{'s1'; 'k'}}, 'value', [0.5; 0.3], ...
%!               'sigma', [0.1; 0.1]);

%!test
%! % an observation of a parameter is placed by the table's column x
%! ob = obp; ob.x = [NaN; 1.5];
%! for method = {'ensrf', 'letkf'}
%!   r = sluice.filter (specp, prp, ob, o{:}, 'method', method{1}, 'localization', L);
%!   assert (all (r.final.P > 0));
%! end

% the LETKF needs positions
%!error <LETKF needs> sluice.filter (spec, pr, obs, o{:}, 'method', 'letkf')
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'letkf')
% the ETKF is global and takes none
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'localization', L)
% the particle filter takes none
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'pf', 'localization', L)
% Gaussian observations only
%!test
%! ob = obs; ob.family = {'lognormal'; 'gaussian'};
%! for method = {'enkf', 'etkf', 'ensrf', 'eakf'}
%!   raised = false;
%!   try
%!     sluice.filter (spec, pr, ob, o{:}, 'method', method{1});
%!   catch e
%!     raised = true;
%!     assert (e.identifier, 'sluice:filter:badfamily');
%!     assert (~isempty (strfind (e.message, 'Gaussian observations only')));
%!   end
%!   assert (raised, method{1});
%! end
%!error id=sluice:filter:badfamily
%! ob = obs; ob.family = {'gaussian'; 'student_t'}; ob.dof = [3; 3];
%! sluice.filter (spec, pr, ob, o{:}, 'method', 'enkf');
%!error id=sluice:filter:badfamily
%! ob = obs; ob.family = {'poisson'; 'gaussian'}; ob.value = [1; 0.2];
%! sluice.filter (spec, pr, ob, o{:}, 'method', 'letkf', 'localization', L);
% at least two members
%!error <at least 2 members> sluice.filter (spec, pr, obs, 'members', 1, 'seed', 1, 't0', 0, 'method', 'etkf')
%!error id=sluice:filter:badconfig sluice.filter (spec, pr, obs, 'members', 1, 'seed', 1, 't0', 0, 'method', 'etkf')
%!error id=sluice:filter:badconfig sluice.filter (spec, pr, obs, 'members', 1, 'seed', 1, 't0', 0, 'method', 'enkf')
% inflation, relaxation, inflation_max, adaptive_inflation
%!error <inflation must be .= 1> sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'inflation', 0.5)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'inflation', 0.5)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'inflation', NaN)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'inflation', Inf)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'inflation', [1 2])
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'inflation', single (1.2))
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'inflation', 1 + 1i)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'inflation', '2')
%!error <rtpp must lie in> sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'rtpp', 1.5)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'rtpp', -0.1)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'rtpp', NaN)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'rtpp', true)
%!error <rtps must lie in> sluice.filter (spec, pr, obs, o{:}, 'method', 'eakf', 'rtps', 1.5)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'eakf', 'rtps', -0.1)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'eakf', 'rtps', [0 1])
%!error <inflation_max must be .= 1> sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'adaptive_inflation', true, 'inflation_max', 0.5)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'adaptive_inflation', true, 'inflation_max', 0.5)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'adaptive_inflation', true, 'inflation_max', NaN)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'adaptive_inflation', 'yes')
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf', 'adaptive_inflation', [1 1])
% the localisation struct
%!error <must be a struct> sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', 5)
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line'))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', {'line', 'line'}, 'radius', 1))
%!error <geometry must be> sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'cube', 'radius', 1))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 3, 'radius', 1))
%!error <radii must be . 0> sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', 0))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'letkf', 'localization', struct ('geometry', 'line', 'radius', -2))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', struct ('a', 1, 'c', -1)))
%!error <no localisation radius> sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', struct ('a', 1)))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', struct ('a', 1)))
%!error <positions must be 3 x 1> sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', 1, 'positions', [1; 2]))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', 1, 'positions', [1 2 3]))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', 1, 'positions', [1; NaN; 3]))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', 1, 'positions', single ([1; 2; 3])))
%!error <positions \(n x 2\) are needed> sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'plane', 'radius', 1))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'plane', 'radius', 1, 'positions', [1; 2; 3]))
%!error <a ring needs localization.period> sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'ring', 'radius', 1))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'ring', 'radius', 1))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'ring', 'radius', 1, 'period', 0))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'ring', 'radius', 1, 'period', -3))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'sphere', 'radius', 1, 'positions', [0 0; 10 0; 20 0], 'sphere_radius', -1))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'sphere', 'radius', 1, 'positions', [0 0; 10 95; 20 0]))
%!error <param_factor must lie in> sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', 1, 'param_factor', 0))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', 1, 'param_factor', 1.5))
% non-finite scalars in the localisation struct are refused as bad options
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', NaN))
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', Inf))
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', [1 2]))
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'ring', 'radius', 1, 'period', NaN))
% one radius per observed variable: a value that is not one positive number
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', struct ('a', 1, 'c', [1 2])))
%!error id=sluice:filter:badlocalization sluice.filter (spec, pr, obs, o{:}, 'method', 'ensrf', 'localization', struct ('geometry', 'line', 'radius', struct ('a', 1, 'c', 'x')));
% observation positions: an observation of a parameter needs column x
%!error <observation row 2 has no position> sluice.filter (specp, prp, obp, o{:}, 'method', 'ensrf', 'localization', L)
%!error id=sluice:filter:badobs sluice.filter (specp, prp, obp, o{:}, 'method', 'letkf', 'localization', L)
%!error id=sluice:filter:badobs
%! ob = obs; ob.x = [1; 2; 3];
%! sluice.filter (spec, pr, ob, o{:}, 'method', 'ensrf', 'localization', L);
%!error id=sluice:filter:badobs
%! ob = obs; ob.x = int32 ([1; 2]);
%! sluice.filter (spec, pr, ob, o{:}, 'method', 'ensrf', 'localization', L);
% a non-finite position in column x is the table's fault: named as such
%!error id=sluice:filter:badobs
%! ob = obs; ob.x = [1; Inf];
%! sluice.filter (spec, pr, ob, o{:}, 'method', 'ensrf', 'localization', L);

% memory: the filter's guard counts the analysis workspace the core asks
% for (sluice.kernel.enkf ('workspace', ...)), not a formula
%!test
%! % 1e5 members and one observation a cycle: the ETKF works in observation
%! % space and needs nothing N x N (three N x N matrices would be 240 GB);
%! % its mean is the Kalman filter's (Kalman 1960; kalman_rts.m) up to the
%! % sampling error of 1e5 members (sd about 2e-3 here)
%! sp = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'x'});
%! ob = struct ('time', (1:3)', 'variable', {{'x'; 'x'; 'x'}}, ...
%!              'value', [0.37; -0.21; 0.52], 'sigma', [0.5; 0.5; 0.5]);
%! r = sluice.filter (sp, sluice.prior ('x', 'normal', [0 1]), ob, 'members', 1e5, ...
%!                    'seed', 1, 't0', 0, 'method', 'etkf', 'progress', false);
%! [~, ~, km] = kalman_rts (0.9, 0.1, 1, 0.25, 0, 1, ob.value');
%! assert (r.states.mean, km, 0.02);
%!assert (sluice.kernel.enkf ('workspace', 'etkf', 5, 1e5, 1, 1) < 8 * 100 * 1e5)
%!assert (sluice.kernel.enkf ('workspace', 'etkf', 5, 100, 100, 1) > 8 * 2 * 100^2)
%!assert (sluice.kernel.enkf ('workspace', 'etkf', 5, 2^31, 1, 1), Inf)
% the LETKF still needs N x N matrices: 1e6 members cannot fit
%!error id=sluice:filter:nomemory
%! sp = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'x'});
%! ob = struct ('time', 1, 'variable', {{'x'}}, 'value', 0.37, 'sigma', 0.5);
%! sluice.filter (sp, sluice.prior ('x', 'normal', [0 1]), ob, 'members', 1e6, 'seed', 1, ...
%!                't0', 0, 'method', 'letkf', 'localization', struct ('radius', 1), ...
%!                'progress', false);
%!error id=sluice:enkf:badquery sluice.kernel.enkf ('bogus', 'etkf', 5, 10, 1, 1)
%!error id=sluice:enkf:badmethod sluice.kernel.enkf ('workspace', 'kalman', 5, 10, 1, 1)
%!error id=sluice:enkf:nargin sluice.kernel.enkf ('workspace', 'etkf', 5, 10, 1)
