% Particle smoothers against the exact Rauch-Tung-Striebel smoother on
% linear-Gaussian models, and the compiled smoother's argument checks.
% Reference: the Kalman filter (Kalman 1960) followed by the
% Rauch-Tung-Striebel smoother (Rauch, Tung & Striebel 1965), written in
% tests/octave/kalman_rts.m from the textbook equations. Worked example of
% the project's model notes (random walk A = 1, Q = R = 1, x0 ~ N(0, 1),
% y = (1, 2, 0)): smoothed
% means 6/7, 8/7, 4/7 and variances 10/21, 10/21, 13/21, computed by hand
% from the RTS equations and checked by hand against the joint Gaussian
% (posterior precision [2.5 -1 0; -1 3 -1; 0 -1 2], right-hand side y).

%!function v = diagonals (P)
%!  % n x T variances from n x n x T covariances
%!  n = rows (P); T = size (P, 3);
%!  v = zeros (n, T);
%!  for k = 1:T
%!    v(:, k) = diag (P(:, :, k));
%!  end
%!endfunction

%!function [m, v, ess] = lineage_moments (r, i)
%!  % mean, variance and effective size of the genealogy's smoothed
%!  % ensemble of state i: traced particles, final weights
%!  idx = r.smoothed.trajectories; w = r.history.w(:, end); w = w / sum (w);
%!  T = columns (idx); m = zeros (1, T); v = m; ess = m;
%!  for s = 1:T
%!    x = squeeze (r.history.X(i, idx(:, s), s))';
%!    m(s) = sum (w .* x); v(s) = sum (w .* (x - m(s)) .^ 2);
%!    W = accumarray (idx(:, s), w);
%!    ess(s) = 1 / sum (W .^ 2);
%!  end
%!endfunction

%!test
%! % the worked example: the reference itself first, then both smoothers
%! [ms, Ps] = kalman_rts (1, 1, 1, 1, 0, 1, [1 2 0]);
%! assert (ms, [6/7 8/7 4/7], 1e-14);
%! assert (squeeze (Ps)', [10/21 10/21 13/21], 1e-14);
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, ...
%!               'value', [1; 2; 0], 'sigma', [1; 1; 1]);
%! r = sluice.filter (spec, pr, obs, 'members', 1e5, 'seed', 21, 't0', 0, 'history', true);
%! g = sluice.smooth (r);
%! [m, v, ess] = lineage_moments (g, 1);
%! assert (g.smoothed.states.mean, m, 1e-12);
%! % Monte Carlo error of a weighted mean sqrt (var / ESS); 5 standard errors
%! assert (all (abs (m - ms) <= 5 * sqrt (squeeze (Ps)' ./ ess)));
%! % a sample variance has relative standard error about sqrt (2 / ESS)
%! assert (all (abs (v ./ squeeze (Ps)' - 1) <= 5 * sqrt (2 ./ ess)));
%! % the median of a Gaussian smoothed distribution is its mean
%! assert (squeeze (g.smoothed.states.quantiles(1, 2, :))', ms, 0.03);
%! % backward simulation: M = 4000 paths over N = 1e4 particles
%! r = sluice.filter (spec, pr, obs, 'members', 1e4, 'seed', 22, 't0', 0, 'history', true);
%! f = sluice.smooth (r, 'method', 'ffbsi', 'model', spec, 'trajectories', 4000);
%! tr = squeeze (f.smoothed.trajectories);
%! assert (f.smoothed.states.mean, mean (tr), 1e-12);
%! % error of a mean of M paths drawn from N particles: var (1/M + 2/N)
%! se = sqrt (squeeze (Ps)' * (1 / 4000 + 2 / 1e4));
%! assert (all (abs (mean (tr) - ms) <= 5 * se));
%! assert (all (abs (var (tr, 1) ./ squeeze (Ps)' - 1) <= 5 * sqrt (2 / 4000) + 0.05));
%! assert (f.smoothed.cost.evaluations, 1e4 * 4000 * 2);
%! % the rejection form draws from the same distribution
%! f = sluice.smooth (r, 'method', 'ffbsi', 'model', spec, 'trajectories', 4000, ...
%!                    'rejection_tries', 10);
%! tr = squeeze (f.smoothed.trajectories);
%! assert (all (abs (mean (tr) - ms) <= 5 * se));
%! assert (f.smoothed.cost.evaluations < 1e4 * 4000 * 2);

%!shared A, Q, H, R, T, Y, ms, Ps, spec, pr, obs
%! % two states, a damped rotation with correlated noise, the first state
%! % observed at 50 cycles
%! th = 0.4; A = 0.9 * [cos(th) -sin(th); sin(th) cos(th)];
%! Q = [0.5 0.2; 0.2 0.4]; H = [1 0]; R = 0.5; T = 50;
%! randn ('state', 3); x = [0; 0]; Y = zeros (1, T); Lq = chol (Q)';
%! for k = 1:T
%!   x = A * x + Lq * randn (2, 1);
%!   Y(k) = H * x + sqrt (R) * randn ();
%! end
%! [ms, Ps] = kalman_rts (A, Q, H, R, [0; 0], eye (2), Y);
%! spec = sluice.model ('linear', 'A', A, 'Q', Q, 'states', {'a', 'b'});
%! pr = sluice.prior ('a', 'normal', [0 1], 'b', 'normal', [0 1]);
%! obs = struct ('time', (1:T)', 'variable', {repmat({'a'}, T, 1)}, ...
%!               'value', Y(:), 'sigma', sqrt (R) * ones (T, 1));

%!test
%! % backward simulation converges to the RTS smoother; its error falls as
%! % N grows and stays small far back from the last cycle, where the
%! % genealogy has collapsed onto a few ancestors
%! sd = sqrt (diagonals (Ps));
%! err = zeros (1, 2);
%! Ns = [250 4000];
%! for k = 1:2
%!   r = sluice.filter (spec, pr, obs, 'members', Ns(k), 'seed', 30 + k, 't0', 0, ...
%!                      'history', true, 'resample_threshold', 1);
%!   f = sluice.smooth (r, 'method', 'ffbsi', 'model', spec, 'trajectories', 1000);
%!   e = (f.smoothed.states.mean - ms) ./ sd;
%!   err(k) = sqrt (mean (e(:) .^ 2));
%! end
%! % standardised RMS error, about sqrt (1/M + 2/N) or more (paths share
%! % particles): over 12 other seeds 0.11-0.19 at N = 250 and 0.035-0.063
%! % at N = 4000 (ratio 1.8-5.3), 0.03-0.07 over the first 10 cycles
%! assert (err(2) < 0.09);
%! assert (err(1) > 1.5 * err(2));
%! early = sqrt (mean (mean (e(:, 1:10) .^ 2)));
%! assert (early < 0.1);
%! % variances of the paths: mean relative error 0.043-0.047 and largest
%! % 0.12-0.40 over the 100 (state, cycle) pairs for those seeds
%! v = squeeze (var (f.smoothed.trajectories, 1, 2));
%! rel = abs (v(:) ./ (sd(:) .^ 2) - 1);
%! assert (mean (rel) < 0.08);
%! assert (max (rel) < 0.5);
%! % the genealogy of the same run (resampled at every cycle): the number
%! % of distinct ancestors never grows going back and is small at the start
%! g = sluice.smooth (r);
%! d = g.smoothed.distinct;
%! assert (d(end), 4000);
%! assert (all (diff (d) >= 0));
%! assert (d(1) < 0.05 * 4000);
%! % far back the collapsed genealogy is the worse estimate (0.13-0.27
%! % against 0.03-0.07 for backward simulation over those seeds)
%! eg = (g.smoothed.states.mean - ms) ./ sd;
%! assert (sqrt (mean (mean (eg(:, 1:10) .^ 2))) > early);
%! % at the last cycle the genealogy is the filter itself
%! assert (g.smoothed.states.mean(:, end), r.states.mean(:, end), 1e-12);

%!test
%! % several model steps per cycle and a forcing: x_{t+1} = A x_t + B u(t)
%! % + q, observed every second step; the reference steps the Kalman filter
%! % through every model step, the smoother sums Q over the cycle's steps
%! a = 0.8; q = 0.5; Tm = 20;
%! u = sin (0:Tm)';
%! randn ('state', 5); x = 0; Ym = nan (1, Tm);
%! for k = 1:Tm
%!   x = a * x + u(k) + sqrt (q) * randn ();
%!   if (mod (k, 2) == 0)
%!     Ym(k) = x + randn ();
%!   end
%! end
%! [m1, P1] = kalman_rts (a, q, 1, 1, 0, 1, Ym, u(1:Tm)');
%! m1 = m1(2:2:end); v1 = squeeze (P1(1, 1, 2:2:end))';
%! s1 = sluice.model ('linear', 'A', a, 'Q', q, 'B', 1, 'forcings', {'u'}, 'states', {'x'});
%! fo = struct ('time', (0:Tm)', 'values', u, 'interp', 'previous');
%! ob = struct ('time', (2:2:Tm)', 'variable', {repmat({'x'}, Tm / 2, 1)}, ...
%!              'value', Ym(2:2:end)', 'sigma', ones (Tm / 2, 1));
%! r = sluice.filter (s1, sluice.prior ('x', 'normal', [0 1]), ob, 'members', 4000, ...
%!                    'seed', 9, 't0', 0, 'forcing', fo, 'history', true);
%! f = sluice.smooth (r, 'method', 'ffbsi', 'model', s1, 'trajectories', 1000);
%! % over 5 other seeds: largest error 1.4-2.8 of these standard errors,
%! % largest relative error of a variance 0.08-0.11
%! se = sqrt (v1 * (1 / 1000 + 2 / 4000));
%! assert (all (abs (f.smoothed.states.mean - m1) <= 5 * se));
%! v = squeeze (var (f.smoothed.trajectories, 1, 2))';
%! assert (all (abs (v ./ v1 - 1) < 0.3));

%!test
%! % a deterministic Octave step map with additive state noise: the
%! % density's covariance is diag (state_noise .^ 2), the means come from
%! % propagating the particles; the same as the linear model with that Q
%! Ad = [0.95 0.1; -0.1 0.9]; sn = [0.7; 0.5]; Tn = 20;
%! randn ('state', 8); x = [1; 0]; Yn = zeros (2, Tn);
%! for k = 1:Tn
%!   x = Ad * x + sn .* randn (2, 1);
%!   Yn(:, k) = x + 0.6 * randn (2, 1);
%! end
%! [m2, P2] = kalman_rts (Ad, diag (sn .^ 2), eye (2), 0.36 * eye (2), [0; 0], eye (2), Yn);
%! fm = sluice.model (@(t, X, P, U, dt) Ad * X, 'states', {'p', 'q'});
%! ob = struct ('time', kron ((1:Tn)', [1; 1]), 'variable', {repmat({'p'; 'q'}, Tn, 1)}, ...
%!              'value', Yn(:), 'sigma', 0.6 * ones (2 * Tn, 1));
%! pr2 = sluice.prior ('p', 'normal', [0 1], 'q', 'normal', [0 1]);
%! r = sluice.filter (fm, pr2, ob, 'members', 3000, 'seed', 12, 't0', 0, ...
%!                    'state_noise', sn, 'history', true);
%! f = sluice.smooth (r, 'method', 'ffbsi', 'model', fm, 'trajectories', 800);
%! sd = sqrt (diagonals (P2));
%! e = (f.smoothed.states.mean - m2) ./ sd;
%! % standardised errors over 5 other seeds: RMS 0.049-0.074, largest
%! % 0.10-0.23 of the 40 (state, cycle) pairs
%! assert (sqrt (mean (e(:) .^ 2)) < 0.11);
%! assert (max (abs (e(:))) < 0.35);

%!test
%! % the compiled smoother never crashes on a bad argument: every one
%! % gives an error sluice:smooth:<reason>
%! n = 2; N = 5; T = 3;
%! X = randn (n, N, T); P = zeros (0, N, T); w = ones (N, T) / N; probs = [0.1 0.9];
%! anc = repmat ((1:N)', 1, T); F = randn (n, N, T - 1);
%! L = repmat (eye (n), [1 1 T - 1]);
%! g = {'genealogy', X, P, w, probs, 0, anc};
%! f = {'ffbsi', X, P, w, probs, 0, F, L, 4, 1, 0};
%! s = sluice.kernel.smooth (g{:});
%! assert (s.index, anc);
%! s = sluice.kernel.smooth (f{:});
%! assert (size (s.trajectories), [n 4 T]);
%! bad = {single(1), int32(1), true, 1i, sparse(1), {1}, struct('a', 1), 'abc', ...
%!        [], zeros(2, 2, 2, 2), NaN, Inf, -1, 2^60};
%! count = 0;
%! for args = {g, f}
%!   a = args{1};
%!   for pos = 1:numel (a)
%!     for b = 1:numel (bad)
%!       c = a;
%!       c{pos} = bad{b};
%!       id = '';
%!       try
%!         sluice.kernel.smooth (c{:});
%!       catch err
%!         id = err.identifier;
%!       end
%!       % some substitutes are valid (an empty list of levels, say)
%!       assert (isempty (id) || strncmp (id, 'sluice:smooth:', 14), ...
%!               'argument %d, substitute %d: %s', pos, b, id);
%!       count = count + 1;
%!     end
%!   end
%! end
%! assert (count, 18 * numel (bad));
%!error id=sluice:smooth:nargin sluice.kernel.smooth ()
%!error id=sluice:smooth:badmethod sluice.kernel.smooth ('bogus', 1, 2, 3, 4, 5, 6)
%!error id=sluice:smooth:nargin sluice.kernel.smooth ('genealogy', 1, 2, 3)
%!error id=sluice:smooth:badancestor ...
%! sluice.kernel.smooth ('genealogy', ones (1, 3, 2), [], ones (3, 2), 0.5, 0, [1 2; 2.5 1; 3 3])
%!error id=sluice:smooth:badsize ...
%! sluice.kernel.smooth ('ffbsi', ones (1, 3, 2), [], ones (3, 2), 0.5, 0, ones (1, 3), ...
%!                       ones (2, 2), 4, 1, 0)
%!error id=sluice:smooth:badfactor ...
%! sluice.kernel.smooth ('ffbsi', ones (1, 3, 2), [], ones (3, 2), 0.5, 0, ones (1, 3), ...
%!                       -1, 4, 1, 0)
%!error id=sluice:smooth:badvalue ...
%! sluice.kernel.smooth ('ffbsi', ones (1, 3, 2), [], ones (3, 2), 0.5, 0, ones (1, 3), ...
%!                       1, 2^40, 1, 0)
%!error id=sluice:smooth:zeroweights ...
%! sluice.kernel.smooth ('genealogy', ones (1, 3, 2), [], zeros (3, 2), 0.5, 0, ones (3, 2))
%!error id=sluice:smooth:badprobs ...
%! sluice.kernel.smooth ('genealogy', ones (1, 3, 2), [], ones (3, 2), 1.5, 0, ones (3, 2))

%!test
%! % a member that failed in the run (non-finite state, weight 0) at some
%! % cycles: backward simulation never reads it, so the result is the one
%! % with a finite state there instead (common practice: a particle of
%! % weight 0 carries no probability)
%! spec = sluice.model ('linear', 'A', [0.9 0.1; 0 0.8], 'Q', 0.1 * eye (2), ...
%!                      'states', {'x', 'y'});
%! pr = sluice.prior ('x', 'normal', [0 1], 'y', 'normal', [0 1]);
%! T = 8;
%! obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, ...
%!               'value', sin ((1:T)' / 3), 'sigma', 0.5 * ones (T, 1));
%! r = sluice.filter (spec, pr, obs, 'members', 60, 't0', 0, 'history', true, ...
%!                    'seed', 4, 'progress', false);
%! a = r;
%! b = r;
%! for s = [1 2 5 T]
%!   j = 3 + s;
%!   a.history.w(j, s) = 0;
%!   b.history.w(j, s) = 0;
%!   a.history.X(:, j, s) = [NaN; Inf];
%!   b.history.X(:, j, s) = [40; -7];
%! end
%! fa = sluice.smooth (a, 'method', 'ffbsi', 'model', spec, 'trajectories', 30);
%! fb = sluice.smooth (b, 'method', 'ffbsi', 'model', spec, 'trajectories', 30);
%! assert (isequal (fa.smoothed.trajectories, fb.smoothed.trajectories));
%! assert (isequal (fa.smoothed.states, fb.smoothed.states));
%! assert (all (isfinite (fa.smoothed.states.mean(:))));
