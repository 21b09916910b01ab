% Particle filter against the exact Kalman filter on linear-Gaussian models.
% Reference: the Kalman filter (Kalman 1960) and its log-likelihood by the
% prediction-error decomposition (Harvey 1989), in tests/octave/kalman_rts.m
% from the textbook equations; the worked example of the project's model notes (random walk,
% Q = R = 1, x0 ~ N(0, 1), y = (1, 2, 0): filtered means 2/3, 3/2, 4/7,
% log-likelihood -(3/2) log 2pi - (1/2) log 21 - 13/14, computed by hand).

%!test
%! % the hand-computed worked example, first through the reference itself
%! [~, ~, m, P, ll] = kalman_rts (1, 1, 1, 1, 0, 1, [1 2 0]);
%! assert (m, [2/3 3/2 4/7], 1e-14);
%! assert (ll, -1.5*log (2*pi) - 0.5*log (21) - 13/14, 1e-13);
%! % then the particle filter: N = 1e5 members, posterior variances about
%! % 0.6, so the Monte Carlo error of a weighted mean is about
%! % sqrt(0.6/ESS) < 0.005; tolerance 0.025 (about 5 standard errors)
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, ...
%!               'value', [1; 2; 0], 'sigma', [1; 1; 1]);
%! r = sluice.filter (spec, pr, obs, 'members', 1e5, 'seed', 11, 't0', 0);
%! assert (r.times, [1 2 3]);
%! assert (r.states.mean, m, 0.025);
%! % log-evidence: the relative variance of the PF likelihood estimate is
%! % O(T/N); 0.05 is many standard errors at N = 1e5
%! assert (r.log_evidence, ll, 0.05);
%! assert (sum (r.log_evidence_steps), r.log_evidence, 1e-12);
%! % the median of a Gaussian posterior is its mean
%! assert (squeeze (r.states.quantiles(1, 2, :))', m, 0.03);

%!test
%! % a three-state rotation-and-decay model, two states observed, 25 cycles
%! [A, Q, H, R, Y] = rotation_decay_case ();
%! T = 25;
%! [~, ~, m, P, ll] = kalman_rts (A, Q, H, R, zeros (3, 1), eye (3), Y);
%! spec = sluice.model ('linear', 'A', A, 'Q', Q, 'states', {'a', 'b', 'c'});
%! pr = sluice.prior ('a', 'normal', [0 1], 'b', 'normal', [0 1], 'c', 'normal', [0 1]);
%! t = kron ((1:T)', [1; 1]);
%! obs = struct ('time', t, 'variable', {repmat({'a'; 'c'}, T, 1)}, ...
%!               'value', Y(:), 'sigma', repmat (sqrt (diag (R)), T, 1));
%! N = 40000;
%! r = sluice.filter (spec, pr, obs, 'members', N, 'seed', 5, 't0', 0);
%! sd = sqrt ([squeeze(P(1, 1, :))'; squeeze(P(2, 2, :))'; squeeze(P(3, 3, :))']);
%! % Monte Carlo error of a weighted mean ~ sd / sqrt(ESS) of that cycle
%! % (ESS dips to about N/20 after the most informative observations);
%! % 6 standard errors over 75 comparisons
%! assert (all (abs (r.states.mean - m) <= 6 * sd ./ sqrt (r.ess)));
%! assert (r.log_evidence, ll, 0.3);

%!test
%! % missing values (NaN) are skipped and counted, and change nothing else:
%! % the Kalman filter with y2 missing is the one with no update at t = 2
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, ...
%!               'value', [1; NaN; 0], 'sigma', [1; 1; 1]);
%! r = sluice.filter (spec, pr, obs, 'members', 1e5, 'seed', 3, 't0', 0);
%! % by hand: m1 = 2/3, P1 = 2/3; predict t = 2: P = 5/3 (no update);
%! % predict t = 3: P = 8/3, K = 8/11, m3 = 2/3 + 8/11*(0 - 2/3) = 2/11
%! assert (r.skipped, [0 1 0]);
%! assert (r.skipped_total, 1);
%! assert (r.states.mean, [2/3 2/3 2/11], 0.03);

%!test
%! % the same seed gives identical results; one thread and two threads too
%! spec = sluice.model ('linear', 'A', [0.9 0.1; 0 0.8], 'Q', 0.4, 'states', {'u', 'v'});
%! pr = sluice.prior ('u', 'normal', [0 1], 'v', 'uniform', [-1 1]);
%! obs = struct ('time', (1:10)', 'variable', {repmat({'u'}, 10, 1)}, ...
%!               'value', sin (1:10)', 'sigma', 0.5 * ones (10, 1));
%! % (5001 members: runs below 2048 members use one thread whatever is asked)
%! o = {'members', 5001, 'seed', 42, 't0', 0, 'history', true};
%! r1 = sluice.filter (spec, pr, obs, o{:}, 'threads', 1);
%! r2 = sluice.filter (spec, pr, obs, o{:}, 'threads', 2);
%! r3 = sluice.filter (spec, pr, obs, o{:}, 'threads', 2);
%! assert (isequal (r1.states, r2.states) && isequal (r2.states, r3.states));
%! assert (isequal (r1.history, r2.history));
%! assert (isequal (r1.log_evidence, r2.log_evidence));
%! r4 = sluice.filter (spec, pr, obs, 'members', 5001, 'seed', 43, 't0', 0);
%! assert (~isequal (r1.states.mean, r4.states.mean));

%!test
%! % every random path at once (forcing noise, state noise, parameter
%! % kernel, resampling) is bit-identical for one and two threads
%! f = @(t, X, P, U, dt) X + dt * (U - P(1, :) .* X);
%! spec = sluice.model (f, 'states', {'s'}, 'params', {'k'}, 'forcings', {'u'});
%! pr = sluice.prior ('s', 'uniform', [0 2], 'k', 'lognormal', [log(0.3) 0.4]);
%! obs = struct ('time', (2:2:20)', 'variable', {repmat({'s'}, 10, 1)}, ...
%!               'value', 1 + 0.2 * cos (1:10)', 'sigma', 0.3 * ones (10, 1));
%! o = {'members', 4099, 'seed', 77, 't0', 0, 'history', true, ...
%!      'forcing', struct('time', (0:20)', 'values', 0.3 + 0.1 * sin (0:20)'), ...
%!      'forcing_noise', struct('kind', 'multiplicative', 'sd', 0.3, 'ar1', 0.5), ...
%!      'state_noise', 0.01, 'param_move', 'liu_west'};
%! r1 = sluice.filter (spec, pr, obs, o{:}, 'threads', 1);
%! r2 = sluice.filter (spec, pr, obs, o{:}, 'threads', 2);
%! assert (any (r1.resampled));
%! assert (isequal (r1.history, r2.history));
%! assert (isequal (r1.params, r2.params) && isequal (r1.states, r2.states));
