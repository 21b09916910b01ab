% Fixed-lag smoothing inside the filter (option 'lag'): the particle
% filter's window and the ensemble Kalman smoother against the exact
% Rauch-Tung-Striebel smoother (Rauch, Tung & Striebel 1965), written
% in tests/octave/kalman_rts.m, for linear-Gaussian models.

%!test
%! % the worked example of a random walk (A = 1, Q = R = 1, x0 ~ N(0, 1),
%! % y = (1, 2, 0)): RTS smoothed means 6/7, 8/7, 4/7 and variances 10/21,
%! % 10/21, 13/21 (hand-computed from the filtered means 2/3, 3/2, 4/7 and
%! % variances 2/3, 5/8, 13/21)
%! [ms, Ps] = kalman_rts (1, 1, 1, 1, 0, 1, [1 2 0]);
%! assert (ms, [6/7 8/7 4/7], 1e-12);
%! assert (squeeze (Ps)', [10/21 10/21 13/21], 1e-12);
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1);
%! pr = sluice.prior ('x1', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x1'; 'x1'; 'x1'}}, 'value', [1; 2; 0], ...
%!               'sigma', [1; 1; 1]);
%! r = sluice.filter (spec, pr, obs, 'members', 100000, 'seed', 3, 'lag', Inf, ...
%!                    'quantiles', [0.05 0.5 0.95], 'progress', false);
%! assert (r.smoothed.method, 'fixed_lag');
%! % Monte Carlo error of a smoothed mean, sqrt(P / ESS) with the ESS of
%! % the traced paths >= 2e4 here: < 0.006; 0.02
%! assert (r.smoothed.states.mean, ms, 0.02);
%! % the 90% band is 2 x 1.645 smoothed sd wide (within 5%)
%! width = squeeze (r.smoothed.states.quantiles(1, 3, :) - r.smoothed.states.quantiles(1, 1, :))';
%! assert (width ./ (2 * 1.645 * sqrt (squeeze (Ps)')), ones (1, 3), 0.05);
%! % the last cycle's smoothed summary is the filtered one
%! assert (r.smoothed.states.mean(3), r.states.mean(3), 1e-12);
%! % the ensemble Kalman smoothers: sampling error of the initial ensemble,
%! % 1/sqrt(N) = 0.016 for N = 4000 (0.05 for 400; the ETKF works with
%! % N x N matrices, so a smaller ensemble)
%! for m = {'ensrf', 'enkf', 'eakf', 'etkf'}
%!   N = 4000 - 3600 * strcmp (m{1}, 'etkf');
%!   r = sluice.filter (spec, pr, obs, 'members', N, 'seed', 3, 'lag', Inf, ...
%!                      'method', m{1}, 'progress', false);
%!   assert (r.smoothed.method, 'enks');
%!   assert (r.smoothed.states.mean, ms, 4 / sqrt (N));
%! end

%!test
%! % with adaptive tempering (target 0.9 N: every cycle takes several
%! % steps and resamples between them) the window travels with the members
%! % through every step: the smoothed means still match the RTS smoother
%! % of the worked example (6/7, 8/7, 4/7; tolerance as above), and they
%! % equal, to rounding, the means over the paths traced back through the
%! % recorded ancestors (which then compose the steps' resamplings)
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1);
%! pr = sluice.prior ('x1', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x1'; 'x1'; 'x1'}}, 'value', [1; 2; 0], ...
%!               'sigma', [1; 1; 1]);
%! N = 100000;
%! r = sluice.filter (spec, pr, obs, 'members', N, 'seed', 3, 'lag', Inf, 'history', true, ...
%!                    'temper_ess', 0.9, 'progress', false);
%! assert (all (r.temper_steps >= 2));
%! assert (r.smoothed.states.mean, [6/7 8/7 4/7], 0.02);
%! w = r.history.w(:, 3); idx = (1:N)'; traced = zeros (1, 3);
%! for k = 3:-1:1
%!   traced(k) = sum (w .* r.history.X(1, idx, k)');
%!   if (k > 1)
%!     idx = r.history.ancestors(idx, k - 1);
%!   end
%! end
%! assert (traced, r.smoothed.states.mean, 1e-10);

%!test
%! % a 2-state model over 60 cycles, lag 5: against the exact fixed-lag
%! % smoother (the RTS smoother of the data up to cycle s + 5, for each s)
%! A = [0.9 0.2; -0.1 0.8]; Q = diag ([0.1 0.05]); H = [1 0]; R = 0.2; T = 60; L = 5;
%! randn ('state', 7);
%! x = [1; 0]; Y = zeros (1, T);
%! for k = 1:T
%!   x = A * x + sqrt (diag (Q)) .* randn (2, 1);
%!   Y(k) = H * x + sqrt (R) * randn ();
%! end
%! ref = zeros (2, T);
%! for s = 1:T
%!   ms = kalman_rts (A, Q, H, R, [1; 0], 0.5 * eye (2), Y(1:min (s + L, T)));
%!   ref(:, s) = ms(:, s);
%! end
%! spec = sluice.model ('linear', 'A', A, 'Q', Q);
%! pr = sluice.prior ('x1', 'normal', [1 sqrt(0.5)], 'x2', 'normal', [0 sqrt(0.5)]);
%! obs = struct ('time', (1:T)', 'variable', {repmat({'x1'}, T, 1)}, 'value', Y', ...
%!               'sigma', sqrt (R) * ones (T, 1));
%! r0 = sluice.filter (spec, pr, obs, 'members', 20000, 'seed', 5, 'progress', false);
%! r = sluice.filter (spec, pr, obs, 'members', 20000, 'seed', 5, 'lag', L, 'progress', false);
%! % the window does not change the filter
%! assert (r.states.mean, r0.states.mean);
%! assert (r.log_evidence, r0.log_evidence);
%! % measured: largest error 0.017 over the 120 values (seed 5)
%! assert (max (abs (r.smoothed.states.mean(:) - ref(:))) < 0.05);
%! % ... and smoothing beats filtering against the exact smoother
%! e_s = mean (abs (r.smoothed.states.mean(:) - ref(:)));
%! e_f = mean (abs (r.states.mean(:) - ref(:)));
%! assert (e_s < e_f / 3);
%! r0 = sluice.filter (spec, pr, obs, 'members', 400, 'seed', 5, 'method', 'etkf', 'progress', false);
%! r = sluice.filter (spec, pr, obs, 'members', 400, 'seed', 5, 'lag', L, 'method', 'etkf', ...
%!                    'progress', false);
%! assert (r.states.mean, r0.states.mean, 1e-10);
%! assert (max (abs (r.smoothed.states.mean(:) - ref(:))) < 0.1);
%! assert (mean (abs (r.smoothed.states.mean(:) - ref(:))) < 0.03);

%!test
%! % inflation acts on the current ensemble only: with inflation the
%! % filter part is the run without the window; localisation of the window
%! % rows: a LETKF with a huge radius gives the global ETKF's smoother
%! spec = sluice.model ('linear', 'A', 0.95 * eye (3), 'Q', 0.1 * eye (3));
%! pr = sluice.prior ('x1', 'normal', [0 1], 'x2', 'normal', [0 1], 'x3', 'normal', [0 1]);
%! T = 20;
%! obs = struct ('time', kron ((1:T)', [1; 1]), 'variable', {repmat({'x1'; 'x3'}, T, 1)}, ...
%!               'value', sin (kron ((1:T)', [1; 1]) / 3), 'sigma', 0.5 * ones (2 * T, 1));
%! a = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 2, 'method', 'etkf', ...
%!                    'inflation', 1.05, 'progress', false);
%! b = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 2, 'method', 'etkf', ...
%!                    'inflation', 1.05, 'lag', 4, 'progress', false);
%! assert (b.states.mean, a.states.mean, 1e-10);
%! c = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 2, 'method', 'letkf', ...
%!                    'inflation', 1.05, 'lag', 4, 'progress', false, ...
%!                    'localization', struct ('radius', 1e6));
%! assert (c.smoothed.states.mean, b.smoothed.states.mean, 1e-9);

%!error id=sluice:filter:badoption sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'lag', -1)
%!error id=sluice:filter:badoption sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'lag', 1.5)
%!error id=sluice:filter:badoption sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'lag', 'all')
