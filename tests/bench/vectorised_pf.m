function [m, qs, ess, logz] = vectorised_pf (A, L, Y, sigma, N, probs)
  % The particle filter of the linear-Gaussian model x <- A x + L e,
  % e ~ N(0, I), every state observed with Gaussian errors of sd sigma
  % (Y: n x T), as a careful Octave user writes it: one loop over the
  % cycles, none over members. x0 ~ N(0, I); weighted means, the weighted
  % quantiles at probs (none when empty), ESS and log-evidence increments
  % every cycle; systematic resampling when ESS < N/2. Shared by
  % bench_pf and bench_call.
  [n, T] = size (Y);
  nq = numel (probs);
  m = zeros (n, T);
  qs = zeros (n, nq, T);
  ess = zeros (1, T);
  logz = zeros (1, T);
  c0 = -n * (log (sigma) + 0.5 * log (2 * pi));   % Gaussian normalising term
  X = randn (n, N);                               % x0 ~ N(0, I)
  logw = repmat (-log (N), 1, N);
  for k = 1:T
    X = A * X + L * randn (n, N);
    lw = logw + (c0 - 0.5 * sumsq ((X - Y(:, k)) / sigma, 1));
    mx = max (lw);
    e = exp (lw - mx);
    s = sum (e);
    logz(k) = mx + log (s);
    w = e / s;
    ess(k) = 1 / sumsq (w);
    W = sum (w);
    m(:, k) = (X * w') / W;
    if (nq > 0)
      qs(:, :, k) = weighted_quantiles (X, w, W, probs);
    end
    if (ess(k) < 0.5 * N)
      % systematic: positions (j + u) W / N, j = 0..N-1, each mapped to the
      % first member whose running sum exceeds it
      c = cumsum (w);
      a = lookup (c, ([0:N-1] + rand ()) * (c(end) / N)) + 1;
      a(a > N) = find (w > 0, 1, 'last');         % rounding at the very end
      X = X(:, a);
      logw(:) = -log (N);
    else
      logw = lw - logz(k);
    end
  end
end
