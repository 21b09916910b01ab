function bench_pf (only)
  % The particle filter on the built-in linear-Gaussian model: n = 4
  % states (A = 0.9 times two rotation blocks, Q = 0.1 I), every state
  % observed at times 1..100 with Gaussian errors of sd 0.5, N = 1e5
  % members drawn from x0 ~ N(0, I), systematic resampling when
  % ESS < N/2, and at every cycle the weighted means, the weighted
  % quantiles at [0.05 0.5 0.95], the ESS and the log-evidence increments.
  % The compiled run (sluice.filter, 1 and 2 threads) is timed against the
  % fastest vectorised Octave implementation of the same computation, with
  % the quantiles recorded and without them. Before timing, a small case
  % checks that the Octave version computes the same statistics. Times are
  % the best of 3 full runs.
  % bench_pf ('gr4j') runs only the GR4J filters, bench_pf ('flood') only
  % the flood model's
  if (nargin > 0 && strcmp (only, 'gr4j'))
    bench_gr4j_summaries (3);
    bench_gr4j_octave (3);
    return;
  elseif (nargin > 0 && strcmp (only, 'flood'))
    bench_flood_octave (3);
    return;
  end
  N = 1e5;
  probs = [0.05 0.5 0.95];
  seed = 20240611;
  nrep = 3;

  % the model and synthetic data from a truth run (linear_case.m)
  [spec, pr, obs, Y, A, Q, sigma] = linear_case ();
  [n, T] = size (Y);
  L = spec.L;
  printf ('   linear model, n = %d, A = 0.9 [R(0.3) 0; 0 R(1.1)], Q = 0.1 I, x0 ~ N(0, I)\n', n);
  printf ('   all states observed at t = 1..%d, sigma = %g; systematic resampling when ESS < N/2\n', ...
          T, sigma);

  % ---- checks on a small case before timing
  check_quantile_code ();
  Ns = 2000;
  Ts = 10;
  small = obs_table (Y(:, 1:Ts), sigma, spec.states);
  rc = sluice.filter (spec, pr, small, 'members', Ns, 'seed', seed, ...
                      'history', true, 'progress', false);
  [kf_m, kf_v, kf_logz] = kalman (A, Q, sigma ^ 2 * eye (n), Y(:, 1:Ts));
  randn ('state', 11);
  rand ('state', 11);
  [bm, ~, bess, blogz] = vectorised_pf (A, L, Y(:, 1:Ts), sigma, Ns, probs);
  zc = max (max (abs (rc.states.mean - kf_m) ./ sqrt (kf_v ./ rc.ess)));
  zb = max (max (abs (bm - kf_m) ./ sqrt (kf_v ./ bess)));
  printf ('   check N = %d, %d cycles, means against the exact Kalman filter: max |error| / (sd/sqrt(ESS)) = %.2f compiled, %.2f Octave (%s)\n', ...
          Ns, Ts, zc, zb, yes_no (zc < 5 && zb < 5, 'both within Monte Carlo error', 'OUTSIDE Monte Carlo error'));
  printf ('   check log-evidence: Kalman %.3f, compiled %.3f, Octave %.3f\n', ...
          sum (kf_logz), rc.log_evidence, sum (blogz));
  same_stats (rc, Y(:, 1:Ts), sigma, probs);

  % ---- timing: one full run each, best of 3
  printf ('   timing N = %g, T = %d, best of %d runs\n', N, T, nrep);
  levels = {probs, []};
  label = {'quantiles [0.05 0.5 0.95]', 'quantiles off'};
  for v = 1:2
    t1 = Inf;
    t2 = Inf;
    for r = 1:nrep
      t0 = tic ();
      r1 = sluice.filter (spec, pr, obs, 'members', N, 'seed', seed, 'threads', 1, ...
                          'quantiles', levels{v}, 'progress', false);
      t1 = min (t1, toc (t0));
      t0 = tic ();
      r2 = sluice.filter (spec, pr, obs, 'members', N, 'seed', seed, 'threads', 2, ...
                          'quantiles', levels{v}, 'progress', false);
      t2 = min (t2, toc (t0));
    end
    same = isequal (r1.states, r2.states) && isequal (r1.ess, r2.ess) && ...
           isequal (r1.log_evidence_steps, r2.log_evidence_steps);
    clear r1 r2;
    to = Inf;
    for r = 1:nrep
      randn ('state', 100 + r);
      rand ('state', 100 + r);
      t0 = tic ();
      [bm, bq, bess, blogz] = vectorised_pf (A, L, Y, sigma, N, levels{v});
      to = min (to, toc (t0));
      clear bm bq bess blogz;
    end
    printf ('   pf linear n=4 N=1e5 T=100 (%s): compiled 1 thread %.3f s, 2 threads %.3f s; vectorised Octave %.3f s; ratio %.1f (target >= 20), 2-thread speed-up %.2f\n', ...
            label{v}, t1, t2, to, to / t1, t1 / t2);
    printf ('      1 and 2 threads give identical results: %s\n', yes_no (same, 'yes', 'NO'));
    if (v == 2)
      forecast_floor (spec, N, T, seed, nrep, to);
    end
  end
  if (any (strcmp ('gr4j', sluice.kernel.model_info ())))
    bench_gr4j_summaries (nrep);
    bench_gr4j_octave (nrep);
  end
  bench_flood_octave (nrep);
end

function forecast_floor (spec, N, T, seed, nrep, t_octave)
  % What bounds the ratio: the filter's forecast alone (the model noise,
  % n normal draws a member a step from the member-keyed streams, and
  % x <- A x + L e) for the same N members over the same T steps, run by
  % sluice.propagate on 1 thread. No filter can take less, so the
  % vectorised Octave filter's time over it is the largest ratio there is
  % room for; Octave's own randn for the same draws is printed beside it.
  n = numel (spec.states);
  X0 = zeros (n, N);
  tf = Inf;
  tr = Inf;
  for r = 1:nrep
    t0 = tic ();
    X1 = sluice.propagate (spec, X0, [], 0, T, [], 'seed', seed, 'threads', 1);
    tf = min (tf, toc (t0));
    t0 = tic ();
    for k = 1:T
      E = randn (n, N);
    end
    tr = min (tr, toc (t0));
  end
  clear X1 E;
  printf ('      the forecast alone (%d normal draws a member a step and A x, sluice.propagate, 1 thread) %.3f s = %.1f ns a member-step;\n', ...
          n, tf, 1e9 * tf / (N * T));
  printf ('      Octave''s randn for the same draws %.3f s: no compiled filter can beat this vectorised Octave one by more than %.1fx\n', ...
          tr, t_octave / tf);
end

% ------------------------------------------------------------------------
% GR4J: which rows are summarised

function bench_gr4j_octave (nrep)
  % The GR4J particle filter at N = 1000 over the 10 years of gr4j_case
  % (3650 daily cycles; X1..X4 estimated, kernel move; default summaries:
  % means and [0.05 0.5 0.95] quantiles of S, R, Q and the parameters)
  % against the same filter in vectorised Octave: the daily map of
  % gr4j_octave.m carrying the queue slots X4 <= 4 reaches, lognormal
  % likelihood, systematic resampling when ESS < N/2, then the kernel move
  % in the transformed space (log X1, X2, log X3, logit of X4 on
  % [0.5, 4]). Both are Monte Carlo runs with different draws: the check
  % compares their log-evidence and final parameter means.
  [s, fo, obs, pr] = gr4j_case ();
  N = 1000;
  probs = [0.05 0.5 0.95];
  o = {'members', N, 'seed', 1, 'forcing', fo, 'progress', false, ...
       'param_move', 'kernel'};
  tc = [Inf Inf];
  for r = 1:nrep
    for thr = 1:2
      t0 = tic ();
      res = sluice.filter (s, pr, obs, o{:}, 'threads', thr);
      tc(thr) = min (tc(thr), toc (t0));
    end
  end
  to = Inf;
  for r = 1:max (1, nrep - 1)
    randn ('state', 40 + r);
    rand ('state', 40 + r);
    t0 = tic ();
    [pm, logz] = gr4j_pf_octave (s, obs, fo, N, probs);
    to = min (to, toc (t0));
  end
  printf ('   gr4j pf N=1000 T=%d daily, kernel move: compiled 1 thread %.3f s, 2 threads %.3f s; vectorised Octave %.3f s; ratio %.1f (target >= 30), 2-thread speed-up %.2f\n', ...
          numel (obs.time), tc(1), tc(2), to, to / tc(1), tc(1) / tc(2));
  printf ('      compiled %.0f ns, Octave %.0f ns per member-cycle; log-evidence compiled %.1f, Octave %.1f; final parameter means compiled [%s], Octave [%s]\n', ...
          1e9 * tc(1) / (N * numel (obs.time)), 1e9 * to / (N * numel (obs.time)), ...
          res.log_evidence, logz, sprintf (' %.3g', res.params.mean(:, end)), sprintf (' %.3g', pm));
end

function [pm, logz] = gr4j_pf_octave (s, obs, fo, N, probs)
  % the parameters drawn from gr4j_case's prior
  z = [log(300) + 0.7 * randn(1, N); 1.5 * randn(1, N); ...
       log(100) + 0.7 * randn(1, N); log_odds(rand (1, N))];
  Pm = from_z (z);
  X = repmat (s.x0(:), 1, N);
  y = obs.value(:)';
  sig = obs.sigma(1);
  T = numel (y);
  vis = [1 2 63];
  d = 4;
  hk = min (1, (4 / (d + 2)) ^ (1 / (d + 4)) * N ^ (-1 / (d + 4)));
  ak = sqrt (1 - hk ^ 2);
  nq = numel (probs);
  m = zeros (7, T);
  qs = zeros (7, nq, T);
  logw = repmat (-log (N), 1, N);
  logz = 0;
  for k = 1:T
    X = gr4j_octave (X, Pm, 1, fo.values(k, 1), fo.values(k, 2), 4);
    lq = log (X(63, :));
    lw = logw + (-log (y(k)) - log (sig) - 0.5 * log (2 * pi) - 0.5 * ((log (y(k)) - lq) / sig) .^ 2);
    mx = max (lw);
    e = exp (lw - mx);
    se = sum (e);
    logz = logz + mx + log (se);
    w = e / se;
    ess = 1 / sumsq (w);
    S = [X(vis, :); Pm];
    m(:, k) = S * w';
    qs(:, :, k) = weighted_quantiles (S, w, sum (w), probs);
    if (ess < 0.5 * N)
      % kernel fitted to the weighted ensemble before resampling
      mz = z * w';
      dz = z - mz;
      L = chol ((dz .* w) * dz' + 1e-300 * eye (d), 'lower');
      c = cumsum (w);
      a = lookup (c, ((0:N-1) + rand ()) * (c(end) / N)) + 1;
      a(a > N) = find (w > 0, 1, 'last');
      X = X(:, a);
      z = ak * z(:, a) + (1 - ak) * mz + hk * (L * randn (d, N));
      Pm = from_z (z);
      logw(:) = -log (N);
    else
      logw = lw - mx - log (se);
    end
  end
  pm = m(4:7, end);
end

function P = from_z (z)
  P = [exp(z(1, :)); z(2, :); exp(z(3, :)); 0.5 + 3.5 ./ (1 + exp (-z(4, :)))];
end

function z = log_odds (u)
  z = log (u ./ (1 - u));
end

function bench_gr4j_summaries (nrep)
  % The GR4J particle filter at N = 1000 over 10 years of invented daily
  % flows observed daily (lognormal errors of 10%; X1..X4 estimated with
  % the kernel move; 1 thread), with the default summaries (the 3 visible
  % states and the 4 parameters; 'summarize', 'visible') against every row
  % summarised ('summarize', 'all': the 63 states, 60 of them
  % unit-hydrograph slots, as every run did before the option). The ratio
  % is after / before in one session; the visible rows must agree bit for
  % bit. No vectorised Octave GR4J filter exists to compare with.
  [s, fo, obs, pr] = gr4j_case ();
  Tn = numel (obs.time);
  o = {'members', 1000, 'seed', 1, 'forcing', fo, 'progress', false, 'threads', 1, ...
       'param_move', 'kernel'};
  modes = {'all', 'visible'};
  best = [Inf Inf];
  res = cell (1, 2);
  for r = 1:nrep
    for m = 1:2   % alternated, so that a change of load falls on both
      t0 = tic ();
      res{m} = sluice.filter (s, pr, obs, o{:}, 'summarize', modes{m});
      best(m) = min (best(m), toc (t0));
    end
  end
  v = ~s.internal(:)';
  same = isequal (typecast (res{1}.states.mean(v, :)(:), 'uint64'), ...
                  typecast (res{2}.states.mean(v, :)(:), 'uint64')) && ...
         isequal (typecast (res{1}.states.quantiles(v, :, :)(:), 'uint64'), ...
                  typecast (res{2}.states.quantiles(v, :, :)(:), 'uint64')) && ...
         isequal (res{1}.params, res{2}.params) && isequal (res{1}.final, res{2}.final);
  printf ('   gr4j pf N=1000 T=%d daily, kernel move, 1 thread: every row summarised %.3f s, visible rows and parameters %.3f s; ratio after/before %.2f\n', ...
          Tn, best(1), best(2), best(2) / best(1));
  printf ('      the visible rows, parameters and final ensemble agree bit for bit: %s\n', ...
          yes_no (same, 'yes', 'NO'));
end

% ------------------------------------------------------------------------
% the flood model against a vectorised Octave filter

function bench_flood_octave (nrep)
  % The human-flood model's particle filter at N = 1000 over 60 invented
  % years: RK4 with dt = 0.01, one flood a year (at mid-year, generalized-
  % Pareto levels, theta = 0.28), the settlement size G observed yearly
  % with lognormal errors of 10%; muS and lambdaP estimated (lognormal
  % priors, kernel move), the other parameters at their defaults; default
  % summaries. Against the same filter in vectorised Octave (the RK4 and
  % jumps of flood_octave.m, lognormal likelihood, systematic resampling
  % when ESS < N/2, the kernel move in log space). Monte Carlo runs with
  % different draws: the check compares log-evidence and parameter means.
  [spec, pr, obs, ev, iS, iL] = flood_case ();
  Ty = numel (obs.time);
  y = obs.value;
  te = ev.time;
  W = ev.values;
  N = 1000;
  probs = [0.05 0.5 0.95];
  o = {'members', N, 'seed', 1, 'events', ev, 'progress', false, 'param_move', 'kernel'};
  tc = [Inf Inf];
  for r = 1:nrep
    for thr = 1:2
      t0 = tic ();
      res = sluice.filter (spec, pr, obs, o{:}, 'threads', thr);
      tc(thr) = min (tc(thr), toc (t0));
    end
  end
  to = Inf;
  for r = 1:max (1, nrep - 1)
    randn ('state', 50 + r);
    t0 = tic ();
    [pm, logz] = flood_pf_octave (spec, y, 0.1, te, W, N, probs, iS, iL);
    to = min (to, toc (t0));
  end
  printf ('   flood pf N=1000, %d years, rk4 dt = 0.01, yearly floods, kernel move: compiled 1 thread %.3f s, 2 threads %.3f s; vectorised Octave %.3f s; ratio %.1f (target >= 30), 2-thread speed-up %.2f\n', ...
          Ty, tc(1), tc(2), to, to / tc(1), tc(1) / tc(2));
  printf ('      compiled %.1f ns, Octave %.1f ns per member-step; log-evidence compiled %.2f, Octave %.2f; final means of muS, lambdaP compiled [%.3g %.3g], Octave [%.3g %.3g]\n', ...
          1e9 * tc(1) / (N * 100 * Ty), 1e9 * to / (N * 100 * Ty), res.log_evidence, logz, ...
          res.params.mean(iS, end), res.params.mean(iL, end), pm(1), pm(2));
  % the same filter with the model's default integrator (adaptive
  % Dormand-Prince, dt = 0.1, rtol 1e-6): the run a user gets before any
  % tuning. Not the Octave filter's computation, so its time is set
  % beside the compiled RK4 run's, not against Octave's.
  sd = sluice.model ('flood');
  td = Inf;
  for r = 1:nrep
    t0 = tic ();
    rd = sluice.filter (sd, pr, obs, o{:}, 'threads', 1);
    td = min (td, toc (t0));
  end
  printf ('      default integrator (%s, dt = %g): compiled 1 thread %.3f s = %.0f ns per member-year, %.2f times the rk4 run; log-evidence %.2f, final means [%.3g %.3g]\n', ...
          sd.integrator, sd.dt, td, 1e9 * td / (N * Ty), td / tc(1), rd.log_evidence, ...
          rd.params.mean(iS, end), rd.params.mean(iL, end));
end

function [pm, logz] = flood_pf_octave (spec, y, sig, te, W, N, probs, iS, iL)
  z = [log(0.215) + 0.5 * randn(1, N); 0.5 * randn(1, N)];
  P = repmat (spec.defaults(:), 1, N);
  P([iS iL], :) = exp (z);
  X = repmat (spec.x0(:), 1, N);
  T = numel (y);
  d = 2;
  hk = min (1, (4 / (d + 2)) ^ (1 / (d + 4)) * N ^ (-1 / (d + 4)));
  ak = sqrt (1 - hk ^ 2);
  m = zeros (8, T);
  qs = zeros (8, numel (probs), T);
  logw = repmat (-log (N), 1, N);
  logz = 0;
  for k = 1:T
    X = flood_octave (X, P, k - 1, k, spec.dt, te, W);
    lw = logw + (-log (y(k)) - log (sig) - 0.5 * log (2 * pi) - 0.5 * ((log (y(k)) - log (X(1, :))) / sig) .^ 2);
    lw(isnan (lw)) = -Inf;
    mx = max (lw);
    e = exp (lw - mx);
    se = sum (e);
    logz = logz + mx + log (se);
    w = e / se;
    ess = 1 / sumsq (w);
    S = [X; P([iS iL], :)];
    m(:, k) = S * w';
    qs(:, :, k) = weighted_quantiles (S, w, sum (w), probs);
    if (ess < 0.5 * N)
      mz = z * w';
      dz = z - mz;
      L = chol ((dz .* w) * dz' + 1e-300 * eye (d), 'lower');
      c = cumsum (w);
      a = lookup (c, ((0:N-1) + rand ()) * (c(end) / N)) + 1;
      a(a > N) = find (w > 0, 1, 'last');
      X = X(:, a);
      z = ak * z(:, a) + (1 - ak) * mz + hk * (L * randn (d, N));
      P([iS iL], :) = exp (z);
      logw(:) = -log (N);
    else
      logw = lw - mx - log (se);
    end
  end
  pm = m(7:8, end);
end

% ------------------------------------------------------------------------
% checks

function check_quantile_code ()
  % The quantile code against a slow direct reading of the definition
  % (the smallest x_i of positive weight with sum_{x_j <= x_i} w_j >= p W)
  % on fixed integer weights: sums are exact, W is a multiple of 20 so the
  % levels below hit cumulative sums exactly (ties), x has repeated values
  % and zero-weight members sit at the extremes.
  rand ('state', 3);
  randn ('state', 3);
  n = 4;
  N = 2000;
  X = round (10 * randn (n, N)) / 10;
  w = floor (4 * rand (1, N));
  w(1:10) = 0;
  X(:, 1:5) = -100;
  X(:, 6:10) = 100;
  w(end) = w(end) + 20 - mod (sum (w), 20);
  W = sum (w);
  probs = [0 0.05 0.25 0.5 0.75 0.95 1];
  q = weighted_quantiles (X, w, W, probs);
  ref = zeros (n, numel (probs));
  pos = find (w > 0);
  for r = 1:n
    S = zeros (1, numel (pos));
    for i = 1:numel (pos)
      S(i) = sum (w(X(r, :) <= X(r, pos(i))));
    end
    for l = 1:numel (probs)
      ref(r, l) = min (X(r, pos(S >= probs(l) * W)));
    end
  end
  printf ('   check quantile code against the direct definition (integer weights, ties, %d levels): %s\n', ...
          numel (probs), yes_no (isequal (q, ref), 'identical', 'DIFFERENT'));
end

function same_stats (rc, Y, sigma, probs)
  % The Octave code's statistics recomputed on the compiled run's own
  % ensembles (its history: the members and weights at each record, before
  % resampling) against what the compiled run recorded.
  [n, T] = size (Y);
  N = rc.members;
  c0 = -n * (log (sigma) + 0.5 * log (2 * pi));
  dm = 0;
  dz = 0;
  de = 0;
  nsame = 0;
  for k = 1:T
    X = rc.history.X(:, :, k);
    w = rc.history.w(:, k)';
    if (k == 1 || rc.resampled(k - 1))
      wp = repmat (1 / N, 1, N);
    else
      wp = rc.history.w(:, k - 1)';
    end
    lw = log (wp) + (c0 - 0.5 * sumsq ((X - Y(:, k)) / sigma, 1));
    mx = max (lw);
    lz = mx + log (sum (exp (lw - mx)));
    W = sum (w);
    m = (X * w') / W;
    q = weighted_quantiles (X, w, W, probs);
    dm = max (dm, max (abs (m - rc.states.mean(:, k))));
    dz = max (dz, abs (lz - rc.log_evidence_steps(k)));
    de = max (de, abs (1 / sumsq (w) - rc.ess(k)) / rc.ess(k));
    nsame = nsame + sum (sum (q == rc.states.quantiles(:, :, k)));
  end
  printf ('   check Octave statistics on the compiled ensembles: quantiles identical %d/%d, max |mean diff| %.1e, max |log-evidence step diff| %.1e, max ESS rel. diff %.1e\n', ...
          nsame, n * numel (probs) * T, dm, dz, de);
end

function [m, v, logz] = kalman (A, Q, R, Y)
  % exact filtering means, variances and log-evidence increments,
  % x0 ~ N(0, I), y_k = x_k + N(0, R)
  [n, T] = size (Y);
  mu = zeros (n, 1);
  P = eye (n);
  m = zeros (n, T);
  v = zeros (n, T);
  logz = zeros (1, T);
  for k = 1:T
    mu = A * mu;
    P = A * P * A' + Q;
    S = P + R;
    d = Y(:, k) - mu;
    logz(k) = -0.5 * (n * log (2 * pi) + log (det (S)) + d' * (S \ d));
    K = P / S;
    mu = mu + K * d;
    P = (eye (n) - K) * P;
    P = (P + P') / 2;
    m(:, k) = mu;
    v(:, k) = diag (P);
  end
end

% ------------------------------------------------------------------------

function obs = obs_table (Y, sigma, names)
  [n, T] = size (Y);
  obs = struct ();
  obs.time = repelem ((1:T)', n);
  obs.variable = repmat (names(:), T, 1);
  obs.value = Y(:);
  obs.sigma = repmat (sigma, n * T, 1);
end
