function bench_smooth ()
  % Particle smoothers. (1) Backward simulation (FFBSi) on the history of a
  % particle filter: N = 1000 particles, M = 100 paths, T = 100 cycles,
  % n = 4 states, the compiled kernel (1 and 2 threads, exact sum and the
  % rejection form) against a vectorised Octave implementation of the same
  % backward pass (vectorised over particles and paths, a loop over
  % cycles). (2) The genealogy of N = 1e5 particles over T = 100 cycles:
  % the compiled tracing and summaries against Octave's. Times are the best
  % of 3 runs.
  nrep = 3;
  [X, w, F, L, probs] = ffbsi_case ();
  [n, N, T] = size (X);
  M = 100;
  P = zeros (0, N, T);
  printf ('   FFBSi: N = %d, M = %d, T = %d, n = %d (%g density evaluations)\n', ...
          N, M, T, n, N * M * (T - 1));
  tk = zeros (1, 3);
  conf = {{1, 0}, {2, 0}, {1, 10}};
  for c = 1:3
    tk(c) = Inf;
    for r = 1:nrep
      t0 = tic ();
      s = sluice.kernel.smooth ('ffbsi', X, P, w, probs, conf{c}{1}, F, L, M, 7, conf{c}{2});
      tk(c) = min (tk(c), toc (t0));
      if (c == 3)
        ev = s.evaluations;
      end
    end
    if (c == 1)
      sk = s;
    end
  end
  to = Inf;
  for r = 1:nrep
    rand ('state', r);
    t0 = tic ();
    [idx, mo, qo] = ffbsi_octave (X, w, F, L, M, probs);
    to = min (to, toc (t0));
  end
  % the two draw different paths (different random numbers): compare the
  % smoothed means with their Monte Carlo error, sd / sqrt (M) per path set
  sd = squeeze (std (sk.trajectories, 1, 2));
  z = max (abs (sk.mean(:) - mo(:)) ./ (sd(:) * sqrt (2 / M)));
  printf ('   kernel  1 thread, exact sum        %8.1f ms  (%.2f ns per density)\n', ...
          1e3 * tk(1), 1e9 * tk(1) / (N * M * (T - 1)));
  printf ('   kernel  2 threads, exact sum       %8.1f ms\n', 1e3 * tk(2));
  printf ('   kernel  1 thread, rejection (10)   %8.1f ms  (%.3g evaluations, %.0f%% of the exact sum)\n', ...
          1e3 * tk(3), ev, 100 * ev / (N * M * (T - 1)));
  printf ('   Octave  vectorised backward pass   %8.1f ms  (largest mean difference %.1f standard errors)\n', ...
          1e3 * to, z);
  printf ('   Octave / kernel = %.2f (1 thread), %.2f (2 threads), %.2f (rejection)\n', ...
          to / tk(1), to / tk(2), to / tk(3));

  % genealogy
  N = 1e5; T = 100; n = 4;
  randn ('state', 1); rand ('state', 1);
  X = randn (n, N, T);
  w = rand (N, T) .^ 4;
  anc = zeros (N, T);
  for s = 1:T
    anc(:, s) = sluice.kernel.resample (w(:, s), 'systematic', N, 3, s - 1)';
  end
  P = zeros (0, N, T);
  printf ('   genealogy: N = %g, T = %d, n = %d, weights U^4, systematic resampling\n', N, T, n);
  tg = Inf;
  for r = 1:nrep
    t0 = tic ();
    g = sluice.kernel.smooth ('genealogy', X, P, w, probs, 1, anc);
    tg = min (tg, toc (t0));
  end
  tg2 = Inf;
  for r = 1:nrep
    t0 = tic ();
    g = sluice.kernel.smooth ('genealogy', X, P, w, probs, 2, anc);
    tg2 = min (tg2, toc (t0));
  end
  tm = Inf;
  for r = 1:nrep
    t0 = tic ();
    g0 = sluice.kernel.smooth ('genealogy', X, P, w, [], 1, anc);
    tm = min (tm, toc (t0));
  end
  tt = Inf;
  for r = 1:nrep
    t0 = tic ();
    idx = trace_octave (anc);
    tt = min (tt, toc (t0));
  end
  tom = Inf;
  for r = 1:nrep
    t0 = tic ();
    mo = lineage_means_octave (X, w(:, end), idx);
    tom = min (tom, toc (t0));
  end
  same_m = max (abs (mo(:) - g0.mean(:))) < 1e-12;
  same = isequal (idx, g.index);
  ts = Inf;
  for r = 1:2
    t0 = tic ();
    [mo, qo] = lineage_summary_octave (X, w(:, end), idx, probs);
    ts = min (ts, toc (t0));
  end
  same_s = max (abs (mo(:) - g.mean(:))) < 1e-12 && isequal (qo, g.quantiles);
  printf ('   kernel  tracing + means            %8.1f ms (1 thread, no quantile levels)\n', ...
          1e3 * tm);
  printf ('   kernel  tracing + summaries        %8.1f ms (1 thread), %.1f ms (2 threads)\n', ...
          1e3 * tg, 1e3 * tg2);
  printf ('   Octave  tracing alone              %8.1f ms  same indices: %s\n', 1e3 * tt, ...
          yes_no (same));
  printf ('   Octave  tracing + means            %8.1f ms  same means: %s\n', 1e3 * (tt + tom), ...
          yes_no (same_m));
  printf ('   Octave  tracing + summaries        %8.1f ms  same summaries: %s\n', ...
          1e3 * (tt + ts), yes_no (same_s));
  printf ('   Octave / kernel = %.2f (tracing + means), %.2f (tracing + summaries, 1 thread)\n', ...
          (tt + tom) / tm, (tt + ts) / tg);
  printf ('   distinct ancestors at the first cycle: %d of %d\n', g.distinct(1), N);
end

function [X, w, F, L, probs] = ffbsi_case ()
  % a particle filter run of a 4-state linear model, two states observed:
  % its history, the noise-free means A x of every particle and the
  % Cholesky factor of Q
  A = [0.9 0.1 0 0; -0.1 0.9 0.1 0; 0 0 0.8 0.2; 0 0.1 -0.2 0.8];
  Q = 0.3 * eye (4) + 0.05;
  T = 100;
  randn ('state', 4);
  x = zeros (4, 1); Lq = chol (Q)';
  Y = zeros (2, T);
  for k = 1:T
    x = A * x + Lq * randn (4, 1);
    Y(:, k) = x([1 3]) + 0.5 * randn (2, 1);
  end
  spec = sluice.model ('linear', 'A', A, 'Q', Q, 'states', {'a', 'b', 'c', 'd'});
  obs = struct ('time', kron ((1:T)', [1; 1]), 'variable', {repmat({'a'; 'c'}, T, 1)}, ...
                'value', Y(:), 'sigma', 0.5 * ones (2 * T, 1));
  r = sluice.filter (spec, [], obs, 'members', 1000, 'seed', 5, 't0', 0, ...
                     'history', true, 'progress', false);
  X = r.history.X;
  w = r.history.w;
  F = zeros (4, 1000, T - 1);
  for s = 1:T-1
    F(:, :, s) = A * X(:, :, s);
  end
  L = repmat (Lq, [1 1 T - 1]);
  probs = r.quantile_levels;
end

function [idx, mo, qo] = ffbsi_octave (X, w, F, L, M, probs)
  % the same backward pass in vectorised Octave: at each cycle the N x M
  % squared Mahalanobis distances by one matrix product, the backward
  % weights of all paths at once, one uniform per path; then the paths'
  % means and quantiles (the inverse empirical distribution function)
  [n, N, T] = size (X);
  idx = zeros (M, T);
  c = cumsum (w(:, T));
  idx(:, T) = lookup (c, rand (M, 1) * c(end)) + 1;
  lw = log (w);
  for s = T-1:-1:1
    G = L(:, :, s) \ F(:, :, s);
    Z = L(:, :, s) \ X(:, idx(:, s + 1), s + 1);
    D2 = sumsq (G, 1)' + sumsq (Z, 1) - 2 * (G' * Z);
    LW = lw(:, s) - 0.5 * D2;
    C = cumsum (exp (LW - max (LW, [], 1)), 1);
    idx(:, s) = sum (C <= rand (1, M) .* C(end, :), 1)' + 1;
  end
  nq = numel (probs);
  mo = zeros (n, T);
  qo = zeros (n, nq, T);
  k = max (ceil (probs * M), 1);
  for s = 1:T
    Xs = X(:, idx(:, s), s);
    mo(:, s) = mean (Xs, 2);
    S = sort (Xs, 2);
    qo(:, :, s) = S(:, k);
  end
end

function idx = trace_octave (anc)
  [N, T] = size (anc);
  idx = zeros (N, T);
  idx(:, T) = (1:N)';
  for s = T-1:-1:1
    idx(:, s) = anc(idx(:, s + 1), s);
  end
end

function mo = lineage_means_octave (X, wT, idx)
  % weighted means of the traced particles with the final weights
  [n, N, T] = size (X);
  mo = zeros (n, T);
  for s = 1:T
    W = accumarray (idx(:, s), wT, [N 1]);
    mo(:, s) = (X(:, :, s) * W) / sum (W);
  end
end

function [mo, qo] = lineage_summary_octave (X, wT, idx, probs)
  % weighted means and quantiles of the traced particles with the final
  % weights: the smallest x with cumulative weight >= p W
  [n, N, T] = size (X);
  nq = numel (probs);
  mo = zeros (n, T);
  qo = zeros (n, nq, T);
  for s = 1:T
    W = accumarray (idx(:, s), wT, [N 1]);
    Wt = sum (W);
    mo(:, s) = (X(:, :, s) * W) / Wt;
    for i = 1:n
      [xs, o] = sort (X(i, :, s));
      cw = cumsum (W(o));
      for l = 1:nq
        qo(i, l, s) = xs(find (cw >= probs(l) * Wt, 1));
      end
    end
  end
end

function s = yes_no (b)
  if (b)
    s = 'yes';
  else
    s = 'no';
  end
end
