% Weakly and strongly coupled assimilation (sluice.filter's option
% 'coupling') on a coupled linear-Gaussian model of two blocks, x and y,
% each its own component, with a known coupling (A and Q not block
% diagonal). References: the Kalman filters of tests/octave/
% kalman_coupled.m from the textbook equations (Kalman 1960): the joint
% filter for strong coupling; for the weakly coupled ensemble Kalman
% filter, the filter whose gain has zero cross-block blocks, its
% covariance by the Joseph form (valid for any gain: Bucy & Joseph 1968);
% for the weakly coupled particle filter, the filter that updates each
% block's marginal by its own observations and zeroes the cross-block
% covariance after every analysis; for its fixed-lag smoother, that
% filter on the state augmented with its past (kalman_coupled_lag.m).
% Plus the bit-for-bit checks and the errors a user can cause.

%!function [spec, pr, obs, A, Q, H, R, m0, P0, Y] = coupled_case (T, obs_x_only)
%!  % x_k = A x_{k-1} + q: the blocks feed each other through A and Q; x
%!  % observed precisely, y loosely, so the coupling matters
%!  A = [0.7 0.6; -0.5 0.6]; Q = [0.5 0.35; 0.35 0.4];
%!  H = eye (2); R = diag ([0.1 1.5]);
%!  m0 = [0.5; -0.3]; P0 = diag ([1 0.8]);
%!  randn ('state', 3); x = m0; Y = zeros (2, T);
%!  for k = 1:T
%!    x = A * x + chol (Q)' * randn (2, 1);
%!    Y(:, k) = x + sqrt (diag (R)) .* randn (2, 1);
%!  end
%!  if (nargin > 1 && obs_x_only)
%!    Y(2, :) = NaN;
%!  end
%!  spec = sluice.model ('linear', 'A', A, 'Q', Q, 'states', {'x', 'y'}, ...
%!                       'components', {'cx', {'x'}, 'cy', {'y'}});
%!  pr = sluice.prior ('x', 'normal', [0.5 1], 'y', 'normal', [-0.3 sqrt(0.8)]);
%!  obs = struct ('time', kron ((1:T)', [1; 1]), 'variable', {repmat({'x'; 'y'}, T, 1)}, ...
%!                'value', Y(:), 'sigma', repmat (sqrt (diag (R)), T, 1));
%!endfunction

%!function C = ens_cov (X)
%!  % the ensemble covariance of every cycle of a history (n x N x T)
%!  C = zeros (rows (X), rows (X), size (X, 3));
%!  for k = 1:size (X, 3)
%!    C(:, :, k) = cov (X(:, :, k)');
%!  end
%!endfunction

%!function check_mean_cov (r, m, P, N, what, full)
%!  % means within 5 standard errors sd / sqrt(N); variances (and with
%!  % full the cross-covariance) within 6 standard errors of a sample
%!  % covariance of N Gaussian draws, sqrt((P_ii P_jj + P_ij^2) / N)
%!  % (Anderson 2003, An Introduction to Multivariate Statistical
%!  % Analysis, sec. 3.4: the variance of a sample covariance)
%!  sd = sqrt ([squeeze(P(1, 1, :))'; squeeze(P(2, 2, :))']);
%!  assert (all (abs (r.states.mean(:) - m(:)) <= 5 * sd(:) / sqrt (N)), ...
%!          '%s: mean off by %g standard errors', what, ...
%!          max (abs (r.states.mean(:) - m(:)) ./ (sd(:) / sqrt (N))));
%!  C = ens_cov (r.history.X);
%!  pairs = [1 1; 2 2];
%!  if (full)
%!    pairs = [pairs; 1 2];
%!  end
%!  for e = 1:rows (pairs)
%!    i = pairs(e, 1); j = pairs(e, 2);
%!    se = sqrt ((P(i, i, :) .* P(j, j, :) + P(i, j, :) .^ 2) / N);
%!    assert (all (abs (C(i, j, :) - P(i, j, :)) <= 6 * se), ...
%!            '%s: covariance (%d, %d) off by %g standard errors', what, i, j, ...
%!            max (abs (C(i, j, :) - P(i, j, :)) ./ se));
%!  end
%!endfunction

%!test
%! % the references first: with this coupling the three differ by many
%! % Monte Carlo standard errors of the runs below (about 0.005 at
%! % N = 20000), so the comparisons tell them apart
%! T = 8;
%! [~, ~, ~, A, Q, H, R, m0, P0, Y] = coupled_case (T);
%! [ms, Ps] = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'strong');
%! [mw, Pw] = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'weak');
%! [mp, Pp] = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'weak_pf');
%! assert (max (abs (ms(:) - mw(:))) > 0.2);
%! assert (max (abs (mw(:) - mp(:))) > 0.02);
%! assert (max (abs (Pw(1, 2, :))) > 0.04);
%! assert (squeeze (Pp(1, 2, :)), zeros (T, 1));
%! % the strong reference is the joint Kalman filter of kalman_rts.m
%! [~, ~, mr, Pr] = kalman_rts (A, Q, H, R, m0, P0, Y);
%! assert (ms, mr, 1e-13);
%! assert (Ps, Pr, 1e-13);
%! % one block observed, nothing crossing: weak = strong when the prior and
%! % the model keep the blocks apart (A, Q, P0 diagonal)
%! [a1, b1] = kalman_coupled (diag ([0.7 0.6]), diag ([0.5 0.4]), H, R, m0, P0, Y, [1 2], 'weak');
%! [a2, b2] = kalman_coupled (diag ([0.7 0.6]), diag ([0.5 0.4]), H, R, m0, P0, Y, [1 2], 'strong');
%! assert (a1, a2, 1e-13);
%! assert (b1, b2, 1e-13);

%!test
%! % strong coupling: the stochastic EnKF and the particle filter against
%! % the exact Kalman filter of the joint system (the EnKF also its full
%! % covariance)
%! T = 8; N = 20000;
%! [spec, pr, obs, A, Q, H, R, m0, P0, Y] = coupled_case (T);
%! [m, P] = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'strong');
%! o = {'members', N, 'seed', 2, 't0', 0, 'progress', false, 'history', true};
%! r = sluice.filter (spec, pr, obs, o{:}, 'method', 'enkf');
%! check_mean_cov (r, m, P, N, 'strong enkf', true);
%! r = sluice.filter (spec, pr, obs, o{:}, 'method', 'enkf', 'coupling', 'strong');
%! check_mean_cov (r, m, P, N, 'strong enkf', true);
%! assert (~isfield (r, 'coupling'));
%! % the particle filter: Monte Carlo error of a weighted mean sd / sqrt(ESS)
%! Np = 100000;
%! r = sluice.filter (spec, pr, obs, o{:}, 'members', Np, 'history', false);
%! sd = sqrt ([squeeze(P(1, 1, :))'; squeeze(P(2, 2, :))']);
%! assert (all (all (abs (r.states.mean - m) <= 5 * sd ./ sqrt (r.ess))));

%!test
%! % weak coupling, stochastic EnKF: means and the full covariance (the
%! % cross-block covariance too) of the zero-cross-gain Kalman filter in
%! % Joseph form, over 8 cycles; and not the strong reference
%! T = 8; N = 20000;
%! [spec, pr, obs, A, Q, H, R, m0, P0, Y] = coupled_case (T);
%! [m, P] = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'weak');
%! o = {'members', N, 'seed', 2, 't0', 0, 'progress', false, 'history', true};
%! r = sluice.filter (spec, pr, obs, o{:}, 'method', 'enkf', 'coupling', 'weak');
%! check_mean_cov (r, m, P, N, 'weak enkf', true);
%! assert (r.coupling.mode, 'weak');
%! assert (r.coupling.components, {'cx', 'cy'});
%! ms = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'strong');
%! assert (max (abs (r.states.mean(:) - ms(:))) > 0.1);

%!test
%! % weak coupling, the deterministic filters (ETKF, serial EnSRF and
%! % EAKF): their analysed cross-block covariance is not the Joseph form's
%! % (each block's perturbations are transformed apart), so one analysis:
%! % its means and within-block variances against the reference
%! N = 20000;
%! [spec, pr, obs, A, Q, H, R, m0, P0, Y] = coupled_case (1);
%! [m, P] = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'weak');
%! o = {'members', N, 'seed', 4, 't0', 0, 'progress', false, 'history', true, ...
%!      'coupling', 'weak'};
%! for meth = {'etkf', 'ensrf', 'eakf'}
%!   r = sluice.filter (spec, pr, obs, o{:}, 'method', meth{1});
%!   check_mean_cov (r, m, P, N, ['weak ' meth{1}], false);
%! end
%! % the LETKF with a half-width far beyond the grid is the ETKF (every
%! % local analysis sees every observation at weight 1), weak too; an
%! % N x N analysis per point, so fewer members
%! o = {'members', 300, 'seed', 4, 't0', 0, 'progress', false, 'coupling', 'weak'};
%! e = sluice.filter (spec, pr, obs, o{:}, 'method', 'etkf');
%! l = sluice.filter (spec, pr, obs, o{:}, 'method', 'letkf', 'localization', ...
%!                    struct ('radius', 1e6));
%! assert (l.final.X, e.final.X, 1e-10);

%!test
%! % weak coupling, particle filter: each block weighed by its own
%! % observations and resampled apart; against the block-marginal Kalman
%! % filter with the blocks independent after every analysis (full
%! % covariance: the cross-block one is 0 after independent resampling)
%! T = 8; N = 100000;
%! [spec, pr, obs, A, Q, H, R, m0, P0, Y] = coupled_case (T);
%! [m, P] = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'weak_pf');
%! r = sluice.filter (spec, pr, obs, 'members', N, 'seed', 6, 't0', 0, 'progress', false, ...
%!                    'history', true, 'coupling', 'weak');
%! assert (size (r.coupling.ess), [2 T]);
%! % resampled every cycle, so the error of a mean is sd / sqrt(ESS) with
%! % the smaller component ESS of the cycle (res.ess)
%! assert (r.ess, min (r.coupling.ess, [], 1));
%! assert (all (r.resampled));
%! sd = sqrt ([squeeze(P(1, 1, :))'; squeeze(P(2, 2, :))']);
%! assert (all (all (abs (r.states.mean - m) <= 5 * sd ./ sqrt (r.ess))));
%! C = ens_cov (r.history.X);
%! assert (all (abs (C(1, 2, :)) <= 6 * sqrt (P(1, 1, :) .* P(2, 2, :) ./ min (r.ess))));
%! for i = 1:2
%!   se = sqrt (2 ./ r.ess(:)) .* squeeze (P(i, i, :));
%!   assert (all (abs (squeeze (C(i, i, :) - P(i, i, :))) <= 6 * se));
%! end
%! % the evidence of the weak run: the components' sums
%! assert (r.log_evidence, sum (r.coupling.log_evidence), 1e-12);
%! assert (r.log_evidence_steps, sum (r.coupling.log_evidence_steps, 1), 1e-12);
%! % and not the weak ensemble Kalman reference
%! mw = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'weak');
%! assert (max (abs (r.states.mean(:) - mw(:))) > 0.01);

%!test
%! % the evidence of one component by itself: with only x observed, the
%! % weak particle filter's log-evidence is that of x's observations under
%! % the block-marginal filter (the prediction-error decomposition, Harvey
%! % 1989, sec. 3.4, of the marginal: y's block never enters x's
%! % likelihood); within 0.05 at N = 1e5
%! T = 6;
%! [spec, pr, obs, A, Q, H, R, m0, P0, Y] = coupled_case (T, true);
%! r = sluice.filter (spec, pr, obs, 'members', 100000, 'seed', 8, 't0', 0, ...
%!                    'progress', false, 'coupling', 'weak');
%! m = m0; P = P0; ll = 0;
%! for k = 1:T
%!   m = A * m; P = A * P * A' + Q;
%!   S = P(1, 1) + R(1, 1); v = Y(1, k) - m(1);
%!   ll = ll - 0.5 * (log (2 * pi * S) + v^2 / S);
%!   K = P(1, 1) / S; m(1) = m(1) + K * v; P(1, 1) = (1 - K) * P(1, 1);
%!   P(1, 2) = 0; P(2, 1) = 0;
%! end
%! assert (r.coupling.log_evidence(1), ll, 0.05);
%! assert (r.coupling.log_evidence(2), 0);
%! assert (all (isnan (r.coupling.ess(2, :))));

%!test
%! % observations of one block only: with weak coupling the other block's
%! % ensemble is exactly the forecast's (bit for bit), for the ensemble
%! % Kalman methods and the particle filter; the forecast is the run whose
%! % x observation is missing (same seed: same draws); strong coupling
%! % moves y too
%! [spec, pr, obs] = coupled_case (1, true);
%! miss = obs;
%! miss.value(:) = NaN;
%! o = {'members', 500, 'seed', 9, 't0', 0, 'progress', false};
%! for meth = {'pf', 'enkf', 'etkf', 'ensrf', 'eakf', 'letkf'}
%!   if (strcmp (meth{1}, 'letkf'))
%!     o = [o, {'localization', struct('radius', 3)}];
%!   end
%!   f = sluice.filter (spec, pr, miss, o{:}, 'method', meth{1}, 'coupling', 'weak');
%!   w = sluice.filter (spec, pr, obs, o{:}, 'method', meth{1}, 'coupling', 'weak');
%!   s = sluice.filter (spec, pr, obs, o{:}, 'method', meth{1});
%!   assert (w.final.X(2, :), f.final.X(2, :));
%!   assert (any (w.final.X(1, :) ~= f.final.X(1, :)));
%!   if (strcmp (meth{1}, 'pf'))
%!     % the strong filter weighs (and, at this ESS, resamples) the whole
%!     % members: y's ensemble changes with x's observation
%!     assert (s.resampled(1));
%!   end
%!   assert (any (s.final.X(2, :) ~= f.final.X(2, :)));
%! end

%!test
%! % the fixed-lag ensemble Kalman smoother, weak: the window's rows of y
%! % are y's own, so with only x observed y's smoothed means are its
%! % filtered ones exactly; strong coupling smooths y with x's observations
%! [spec, pr, obs] = coupled_case (3, true);
%! o = {'members', 300, 'seed', 5, 't0', 0, 'progress', false, 'method', 'etkf', 'lag', 2};
%! w = sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak');
%! s = sluice.filter (spec, pr, obs, o{:});
%! assert (w.smoothed.states.mean(2, :), w.states.mean(2, :));
%! assert (any (w.smoothed.states.mean(1, 1:2) ~= w.states.mean(1, 1:2)));
%! assert (any (s.smoothed.states.mean(2, 1:2) ~= s.states.mean(2, 1:2)));

%!test
%! % the fixed-lag references (kalman_coupled_lag.m, the augmented-state
%! % Kalman filter) checked against their own sources: 'strong' with a
%! % lag reaching back to the first step is the RTS smoother of
%! % kalman_rts.m (Rauch, Tung & Striebel 1965); 'weak_pf' with lag 0 is
%! % kalman_coupled.m's weak_pf filter
%! T = 8;
%! [~, ~, ~, A, Q, H, R, m0, P0, Y] = coupled_case (T);
%! [ms, Ps] = kalman_coupled_lag (A, Q, H, R, m0, P0, Y, [1 2], 'strong', T - 1);
%! [mr, Pr] = kalman_rts (A, Q, H, R, m0, P0, Y);
%! assert (ms, mr, 1e-12);
%! assert (Ps, Pr, 1e-12);
%! [mp, Pp] = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'weak_pf');
%! [m0l, P0l] = kalman_coupled_lag (A, Q, H, R, m0, P0, Y, [1 2], 'weak_pf', 0);
%! assert (m0l, mp, 1e-12);
%! assert (P0l, Pp, 1e-12);

%!test
%! % the weakly coupled particle filter's fixed-lag smoother: each block's
%! % window rows follow its own ancestry, so block c's smoothed mean at s
%! % is the block's slot of the weak_pf augmented-state filter at s + lag
%! % (kalman_coupled_lag.m: Anderson & Moore 1979, sec. 7.3, with the
%! % groups of block rows updated by their own observations and
%! % independent after each analysis). Monte Carlo error of a smoothed
%! % mean: sd / sqrt(n), n the fewer of the component's distinct
%! % ancestors at s and its ESS at s (the smoothed members are copies of
%! % at most that many independent ones: common practice); within 5 of
%! % them, while the filtered and the strongly coupled smoothed means lie
%! % many of them away. One lag for both blocks, and one per block.
%! T = 8; N = 100000;
%! [spec, pr, obs, A, Q, H, R, m0, P0, Y] = coupled_case (T);
%! mf = kalman_coupled (A, Q, H, R, m0, P0, Y, [1 2], 'weak_pf');
%! for lag = {2, [1 3]}
%!   r = sluice.filter (spec, pr, obs, 'members', N, 'seed', 6, 't0', 0, 'progress', false, ...
%!                      'coupling', 'weak', 'lag', lag{1});
%!   [mw, Pw] = kalman_coupled_lag (A, Q, H, R, m0, P0, Y, [1 2], 'weak_pf', lag{1});
%!   ms = kalman_coupled_lag (A, Q, H, R, m0, P0, Y, [1 2], 'strong', lag{1});
%!   sd = sqrt ([squeeze(Pw(1, 1, :))'; squeeze(Pw(2, 2, :))']);
%!   ne = min (r.coupling.smoothed_distinct, r.coupling.ess);
%!   se = sd ./ sqrt (ne);
%!   err = abs (r.smoothed.states.mean - mw) ./ se;
%!   assert (all (err(:) <= 5), 'lag %s: off by %g standard errors', mat2str (lag{1}), max (err(:)));
%!   % the smoothed means are not the filtered ones (nor the strong smoother's)
%!   assert (max (abs (mw(:) - mf(:)) ./ se(:)) > 20);
%!   assert (max (abs (mw(:) - ms(:)) ./ se(:)) > 20);
%!   assert (r.smoothed.distinct, min (r.coupling.smoothed_distinct, [], 1));
%!   % the last time is smoothed by nothing more: its filtered value
%!   assert (r.smoothed.states.mean(:, end), r.states.mean(:, end));
%! end

%!test
%! % one lag per component, bit for bit: each component's smoothed rows
%! % are those of the run with its lag for every component (the same
%! % draws: a component's window rows follow its own resampling alone);
%! % lag 0 is the filtered estimate itself
%! [spec, pr, obs] = coupled_case (10);
%! o = {'members', 400, 'seed', 12, 't0', 0, 'progress', false, 'coupling', 'weak'};
%! a = sluice.filter (spec, pr, obs, o{:}, 'lag', [1 4]);
%! b1 = sluice.filter (spec, pr, obs, o{:}, 'lag', 1);
%! b4 = sluice.filter (spec, pr, obs, o{:}, 'lag', 4);
%! assert (a.smoothed.states.mean(1, :), b1.smoothed.states.mean(1, :));
%! assert (a.smoothed.states.quantiles(1, :, :), b1.smoothed.states.quantiles(1, :, :));
%! assert (a.smoothed.states.mean(2, :), b4.smoothed.states.mean(2, :));
%! assert (a.coupling.smoothed_distinct(1, :), b1.coupling.smoothed_distinct(1, :));
%! assert (a.coupling.smoothed_distinct(2, :), b4.coupling.smoothed_distinct(2, :));
%! assert (a.states.mean, b1.states.mean);
%! assert (a.smoothed.lag, [1 4]);
%! z = sluice.filter (spec, pr, obs, o{:}, 'lag', [0 2]);
%! assert (z.smoothed.states.mean(1, :), z.states.mean(1, :));
%! assert (z.smoothed.states.quantiles(1, :, :), z.states.quantiles(1, :, :));
%! assert (z.coupling.smoothed_distinct(1, :), 400 * ones (1, 10));
%! assert (any (z.smoothed.states.mean(2, :) ~= z.states.mean(2, :)));
%! % every lag 0: no smoother, as lag 0
%! assert (~isfield (sluice.filter (spec, pr, obs, o{:}, 'lag', [0 0]), 'smoothed'));
%! % and through a checkpoint, the window's ids of every component too
%! f = [tempname() '.ck'];
%! c1 = sluice.filter (spec, pr, obs, o{:}, 'lag', [1 4], 'checkpoint', f, 'checkpoint_every', 3);
%! c2 = sluice.filter (spec, pr, obs, o{:}, 'lag', [1 4], 'checkpoint', f, 'checkpoint_every', 3);
%! delete (f);
%! assert (c1.smoothed, a.smoothed);
%! assert (c2.smoothed, a.smoothed);
%! assert (c2.coupling, a.coupling);

%!test
%! % coupling switched off (A, Q and the prior block diagonal): the weak
%! % smoother of each block is that block's own particle-filter smoother
%! % run alone. Not bit for bit: the weak run resamples component c from
%! % the stream of sl_fnv1a(seed, c), the run alone from seed's, and the
%! % joint model draws its noise as a 2-vector (y's from the member's
%! % second draw), so the two are independent Monte Carlo estimates of
%! % the same smoothed means: within 5 standard errors of their
%! % difference, and each within 5 of the exact fixed-lag smoother of
%! % the block alone (kalman_coupled_lag.m 'strong' on that block)
%! T = 8; N = 50000; L = 2;
%! [~, ~, ~, ~, ~, H, R, m0, P0, Y] = coupled_case (T);
%! A = diag ([0.7 0.6]); Q = diag ([0.5 0.4]);
%! names = {'x', 'y'};
%! spec = sluice.model ('linear', 'A', A, 'Q', Q, 'states', names, ...
%!                      'components', {'cx', {'x'}, 'cy', {'y'}});
%! pr = sluice.prior ('x', 'normal', [0.5 1], 'y', 'normal', [-0.3 sqrt(0.8)]);
%! obs = struct ('time', kron ((1:T)', [1; 1]), 'variable', {repmat(names', T, 1)}, ...
%!               'value', Y(:), 'sigma', repmat (sqrt (diag (R)), T, 1));
%! o = {'members', N, 't0', 0, 'progress', false, 'lag', L};
%! w = sluice.filter (spec, pr, obs, o{:}, 'seed', 21, 'coupling', 'weak');
%! for i = 1:2
%!   one = sluice.model ('linear', 'A', A(i, i), 'Q', Q(i, i), 'states', names(i));
%!   sel = strcmp (obs.variable, names{i});
%!   ob = struct ('time', obs.time(sel), 'variable', {obs.variable(sel)}, ...
%!                'value', obs.value(sel), 'sigma', obs.sigma(sel));
%!   a = sluice.filter (one, pr(i), ob, o{:}, 'seed', 22);
%!   [me, Pe] = kalman_coupled_lag (A(i, i), Q(i, i), 1, R(i, i), m0(i), P0(i, i), Y(i, :), ...
%!                                  1, 'strong', L);
%!   sd = sqrt (squeeze (Pe)');
%!   sw = sd ./ sqrt (min (w.coupling.smoothed_distinct(i, :), w.coupling.ess(i, :)));
%!   sa = sd ./ sqrt (min (a.smoothed.distinct, a.ess));
%!   d = w.smoothed.states.mean(i, :) - a.smoothed.states.mean;
%!   assert (all (abs (d) <= 5 * sqrt (sw .^ 2 + sa .^ 2)));
%!   assert (all (abs (w.smoothed.states.mean(i, :) - me) <= 5 * sw));
%!   assert (all (abs (a.smoothed.states.mean - me) <= 5 * sa));
%! end

%!test
%! % path degeneracy, component by component: a block observed precisely
%! % and smoothed over a long lag coalesces onto a few members, and the
%! % warning names it; the other, at lag 0, does not
%! T = 40;
%! [spec, pr, obs] = coupled_case (T);
%! obs.sigma(2:2:end) = 0.05;
%! o = {'members', 60, 'seed', 3, 't0', 0, 'progress', false, 'coupling', 'weak'};
%! lastwarn ('');
%! r = sluice.filter (spec, pr, obs, o{:}, 'lag', [0 30]);
%! [msg, id] = lastwarn ();
%! assert (id, 'sluice:filter:smoothcollapse');
%! assert (~isempty (strfind (msg, 'component cy')), msg);
%! assert (all (r.coupling.smoothed_distinct(1, :) == 60));
%! assert (min (r.coupling.smoothed_distinct(2, :)) < 20);

%!test
%! % operators: a linear row on one block belongs to that block; a row
%! % over both, or a function, needs obs_components; then it runs
%! [spec, pr, obs] = coupled_case (3);
%! % (one cycle: later cycles carry x's analysis into y through A)
%! op = struct ('names', 'twice_x', 'H', [2 0]);
%! ob = struct ('time', 1, 'variable', {{'twice_x'}}, 'value', 1, 'sigma', 1);
%! o = {'members', 200, 'seed', 1, 't0', 0, 'progress', false, 'coupling', 'weak'};
%! f = sluice.filter (spec, pr, ob, o{:}, 'method', 'enkf', 'operators', op);
%! g = sluice.filter (spec, pr, setfield (ob, 'value', NaN), o{:}, 'method', 'enkf', ...
%!                    'operators', op);
%! assert (f.final.X(2, :), g.final.X(2, :));
%! both = struct ('names', 'total', 'H', [1 1]);
%! ob.variable(:) = {'total'};
%! assert_error = @(varargin) sluice.filter (spec, pr, ob, o{:}, varargin{:});
%! try
%!   assert_error ('operators', both);
%!   error ('no error');
%! catch e
%!   assert (e.identifier, 'sluice:filter:obscomponent');
%! end
%! r = sluice.filter (spec, pr, ob, o{:}, 'operators', both, ...
%!                    'obs_components', struct ('total', 'cy'), 'method', 'etkf');
%! assert (r.coupling.mode, 'weak');
%! fop = struct ('names', 'total', 'fun', @(t, X, P) X(1, :) + X(2, :));
%! try
%!   assert_error ('operators', fop);
%!   error ('no error');
%! catch e
%!   assert (e.identifier, 'sluice:filter:obscomponent');
%! end
%! r = sluice.filter (spec, pr, ob, o{:}, 'operators', fop, 'obs_components', struct ('total', 'cx'));
%! assert (r.coupling.mode, 'weak');

%!test
%! % river_town, a twin: a yearly census of the town (G) and nothing of
%! % the river. Strong coupling carries the census into the catchment's
%! % X1 through the ensemble's cross-covariances and narrows its band
%! % about the truth; weak coupling leaves the river's parameter exactly
%! % where the prior put it (the ETKF moves X1 only by analyses of its own
%! % component, and the river has no observation)
%! L = 60; Y = 10; D = L * Y;
%! rt = sluice.model ('river_town', 'year_length', L);
%! rand ('seed', 11);
%! rain = 25 * rand (D + 1, 1) .* (rand (D + 1, 1) < 0.35);
%! forcing = struct ('time', (0:D)', 'values', [rain, 2 * ones(D + 1, 1)]);
%! ptrue = rt.defaults; iX1 = strcmp (rt.params, 'X1'); ptrue(iX1) = 150;
%! X = sluice.simulate (rt, [], ptrue, 0:D, forcing);
%! tc = (L:L:D)';
%! G = X(strcmp (rt.states, 'G'), tc + 1)';
%! randn ('state', 5);
%! census = struct ('time', tc, 'variable', {repmat({'G'}, Y, 1)}, ...
%!                  'value', G .* (1 + 0.03 * randn (Y, 1)), 'sigma', 0.03 * G);
%! pr = sluice.prior ('X1', 'uniform', [50 600]);
%! o = {'members', 200, 'seed', 3, 't0', 0, 'forcing', forcing, 'method', 'etkf', ...
%!      'progress', false, 'quantiles', [0.05 0.95]};
%! s = sluice.filter (rt, pr, census, o{:});
%! w = sluice.filter (rt, pr, census, o{:}, 'coupling', 'weak');
%! bs = squeeze (s.params.quantiles(iX1, :, end));
%! bw = squeeze (w.params.quantiles(iX1, :, end));
%! assert (bs(1) < 150 && 150 < bs(2));
%! assert (diff (bs) < 0.2 * diff (bw));
%! assert (w.params.quantiles(iX1, :, :), repmat (w.params.quantiles(iX1, :, 1), [1 1 Y]));
%! assert (all (w.params.mean(iX1, :) == w.params.mean(iX1, 1)));

%!test
%! % the compiled run's own checks of the components (sluice.kernel.pf_run,
%! % the low-level layer): each row's component a whole number below
%! % n_comp, for the states and parameters and for the observations
%! spec = sluice.model ('linear', 'A', [0.9 0.1; 0 0.8], 'states', {'x', 'y'}, ...
%!                      'components', {'cx', {'x'}, 'cy', {'y'}});
%! c = sluice.internal.model_config (spec, [], [], [], [], 'twin');
%! c.members = 5; c.t0 = 0; c.times = [1 2]; c.obs_first = [0 1 1];
%! c.obs_var = 0; c.obs_value = 0.5; c.obs_sigma = 1; c.obs_aux = 0;
%! c.obs_family = {'gaussian'}; c.lower = zeros (0, 1); c.upper = zeros (0, 1);
%! c.seed = 7; c.progress = 0; c.X0 = zeros (2, 5); c.P0 = zeros (0, 5);
%! c.n_comp = 2; c.comp = [0; 1]; c.obs_comp = 0;
%! r = sluice.kernel.pf_run (c);
%! assert (size (r.comp_ess), [2 2]);
%! assert (isnan (r.comp_ess(2, 1)));
%! % (the components' own lags: whole numbers, one per component, none
%! % beyond the window's lag)
%! bad = {{'comp', [0; 2]}, {'comp', [0; 0.5]}, {'comp', [0; NaN]}, {'obs_comp', -1}, ...
%!        {'obs_comp', 2}, {'comp', 0}, {'comp_lag', [0; 2]}, {'comp_lag', [0; 0.5]}, ...
%!        {'comp_lag', [0; 1; 1]}};
%! why = {'badcoupling', 'badcoupling', 'nonfinite', 'badcoupling', 'badcoupling', 'badsize', ...
%!        'badcoupling', 'badcoupling', 'badsize'};
%! for k = 1:numel (bad)
%!   b = c;
%!   b.lag = 1;
%!   b.(bad{k}{1}) = bad{k}{2};
%!   try
%!     sluice.kernel.pf_run (b);
%!     error ('no error');
%!   catch e
%!     assert (e.identifier, ['sluice:twin:' why{k}]);
%!   end
%! end
%! % the weak particle filter's default move is the random walk
%! assert (r.param_move, 'random_walk');
%! b = c;
%! b.n_comp = 0;
%! try
%!   sluice.kernel.pf_run (b);
%!   error ('no error');
%! catch e
%!   assert (strncmp (e.identifier, 'sluice:twin:', 12) && ~strcmp (e.message, 'no error'));
%! end

%!test
%! % a weak run with checkpoints returns what a run without them returns,
%! % the components' records too, also when it returns from its final
%! % checkpoint
%! [spec, pr, obs] = coupled_case (6);
%! f = [tempname() '.ck'];
%! o = {'members', 300, 'seed', 4, 't0', 0, 'progress', false, 'coupling', 'weak'};
%! a = sluice.filter (spec, pr, obs, o{:});
%! b = sluice.filter (spec, pr, obs, o{:}, 'checkpoint', f, 'checkpoint_every', 2);
%! c = sluice.filter (spec, pr, obs, o{:}, 'checkpoint', f, 'checkpoint_every', 2);
%! delete (f);
%! assert (b.coupling, a.coupling);
%! assert (c.coupling, a.coupling);
%! assert (c.states.mean, a.states.mean);

%!shared spec, pr, obs, o
%! [spec, pr, obs] = coupled_case (3);
%! o = {'members', 50, 'seed', 1, 't0', 0, 'progress', false};
%!error id=sluice:filter:badcoupling sluice.filter (spec, pr, obs, o{:}, 'coupling', 'loose')
%!error id=sluice:filter:badcoupling sluice.filter (spec, pr, obs, o{:}, 'coupling', 3)
%!error id=sluice:filter:badcoupling sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'obs_components', struct ('x', 'nowhere'))
%!error id=sluice:filter:badcoupling sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'obs_components', struct ('x', 1))
%!error id=sluice:filter:badcoupling sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'obs_components', {'x', 'cx'})
%!error id=sluice:filter:nocomponents sluice.filter (sluice.model ('linear', 'A', eye (2), 'states', {'x', 'y'}), pr, obs, o{:}, 'coupling', 'weak')
%!error id=sluice:filter:badcoupling sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'method', 'etkf', 'adaptive_inflation', true)
%!error id=sluice:filter:badcoupling sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'method', 'wenkf', 'state_noise', 0.1)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'lag', [1 2])
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'lag', [1 2 3])
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'lag', [1 2], 'method', 'etkf')
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'lag', [1 -2])
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'lag', [1 1.5])
%!error id=sluice:filter:badcoupling sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'temper_ess', 0.5)
%!error id=sluice:filter:badcoupling sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'param_move', 'kernel')
%!error id=sluice:filter:badcoupling sluice.filter (spec, pr, obs, o{:}, 'coupling', 'weak', 'param_move', 'smc2')
%!error id=sluice:evidence:badcoupling sluice.evidence (spec, pr, obs, o{:}, 'coupling', 'odd')
