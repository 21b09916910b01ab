function bench_enkf ()
  % Ensemble Kalman analyses, compiled (sluice.enkf) against the fastest
  % vectorised Octave implementation of the same analysis.
  %  1. LETKF on Lorenz-96 forecast ensembles: a ring of n points
  %     (n = 40, 400, 4000), N = 20 members, an observation at every
  %     point with error variance 1, Gaspari-Cohn half-width 4 grid points
  %     with R-localisation (R_kk / weight), no inflation. Octave has to
  %     loop over the grid points (one eig each); two versions are timed:
  %     the tight loop that does everything per point, and the one that
  %     builds every local matrix at once (a banded sparse weight matrix)
  %     and keeps only the eig calls in the loop. The better of the two
  %     is the reference. Also timed: the bare eig calls alone, the floor
  %     of any Octave LETKF with an eig per point; and the compiled
  %     analysis with 2 threads and with the default count (one thread
  %     while points x N^3 is below 1e7).
  %  2. ETKF (symmetric square root) with n = 1000 state rows, N = 100
  %     members, p = 1000 observations, diagonal R, HX given.
  %  3. ETKF with n = 1000 rows, N = 1000 members and p = 1, 10, 100
  %     observed rows: the compiled analysis works in observation space
  %     there, and so does the Octave reference.
  %  4. ETKF cycled: N = 2000 members, n = 3 states, p = 5 observations a
  %     cycle, 100 cycles; the observation-space form (the default there)
  %     against the N x N form forced with etkf_form 'ensemble' (timed
  %     per cycle on the first cycles: one N x N eigenproblem takes
  %     seconds) and against the Octave ETKF in observation space.
  % Before timing, each Octave version is checked against the compiled
  % analysis. Times are the best of 3 calls.
  nrep = 3;
  N = 20;
  c = 4;
  F = 8;
  printf ('   LETKF: Lorenz-96 (F = %g) forecast ensembles on a ring, N = %d, every point observed, r = 1,\n', F, N);
  printf ('   Gaspari-Cohn half-width %g points (support %g), R-localisation, no inflation; best of %d\n', ...
          c, 2 * c, nrep);
  % the observations in reach of a point: ring offsets with weight > 0
  o = (-ceil (2 * c):ceil (2 * c))';
  g = gaspari_cohn_weight (abs (o), c);
  o = o(g > 0);
  g = g(g > 0);
  for n = [40 400 4000]
    [X, truth] = lorenz96_ensemble (n, N, F, 1000 + n);
    randn ('state', 2000 + n);
    HX = X;                              % every point observed
    r = ones (n, 1);
    y = truth + sqrt (r) .* randn (n, 1);
    loc = struct ('geometry', 'ring', 'period', n, 'state_pos', (1:n)', ...
                  'obs_pos', (1:n)', 'radius', c);
    opt = {'method', 'letkf', 'localization', loc};

    % ---- checks
    Xa1 = sluice.enkf (X, HX, y, r, opt{:}, 'threads', 1);
    Xa2 = sluice.enkf (X, HX, y, r, opt{:}, 'threads', 2);
    Xl = letkf_loop (X, HX, y, r, o, g);
    [Xb, A] = letkf_hoisted (X, HX, y, r, o, g);
    e1 = max (abs (Xl(:) - Xa1(:)));
    e2 = max (abs (Xb(:) - Xa1(:)));
    printf ('   n = %d: check max |Octave - compiled|: per-point loop %.1e, hoisted %.1e (%s); 1 and 2 threads identical: %s\n', ...
            n, e1, e2, yes_no (max (e1, e2) < 1e-10, 'agree to 1e-10', 'DIFFER'), ...
            yes_no (isequal (Xa1, Xa2), 'yes', 'NO'));
    clear Xa1 Xa2 Xl Xb;

    % ---- timing
    t1 = Inf;
    t2 = Inf;
    td = Inf;
    tl = Inf;
    th = Inf;
    te = Inf;
    for k = 1:nrep
      t0 = tic ();
      Xa = sluice.enkf (X, HX, y, r, opt{:}, 'threads', 1);
      t1 = min (t1, toc (t0));
      t0 = tic ();
      Xa = sluice.enkf (X, HX, y, r, opt{:}, 'threads', 2);
      t2 = min (t2, toc (t0));
      t0 = tic ();
      Xa = sluice.enkf (X, HX, y, r, opt{:});   % the default thread count
      td = min (td, toc (t0));
      t0 = tic ();
      Xa = letkf_loop (X, HX, y, r, o, g);
      tl = min (tl, toc (t0));
      t0 = tic ();
      Xa = letkf_hoisted (X, HX, y, r, o, g);
      th = min (th, toc (t0));
      t0 = tic ();
      eig_only (A, N);
      te = min (te, toc (t0));
    end
    clear Xa A;
    to = min (tl, th);
    us = 1e6 / n;
    printf ('   letkf ring n=%d N=%d: compiled 1 thread %.4f s (%.1f us/point), 2 threads %.4f s (%.1f us/point); Octave %.4f s (%.1f us/point); ratio %.1f (target >= 10), 2-thread speed-up %.2f (target >= 1.8)\n', ...
            n, N, t1, t1 * us, t2, t2 * us, to, to * us, to / t1, t1 / t2);
    printf ('      Octave per-point loop %.1f us/point, hoisted %.1f us/point, its eig calls alone %.1f us/point (the floor: ratio <= %.1f)\n', ...
            tl * us, th * us, te * us, te / t1);
    printf ('      default threads %.4f s: 1 thread / default %.2f (one thread below %g points x N^3)\n', ...
            td, t1 / td, 1e7);
  end

  % ---- ETKF
  n = 1000;
  N = 100;
  p = 1000;
  [X, truth] = lorenz96_ensemble (n, N, F, 77);
  rand ('state', 78);
  randn ('state', 78);
  HX = X;                                % p = n, every row observed
  r = 0.5 + rand (p, 1);                 % unequal error variances
  y = truth + sqrt (r) .* randn (p, 1);
  printf ('   ETKF: n = %d, N = %d, p = %d, diagonal R (variances in [0.5, 1.5]), HX given; best of %d\n', ...
          n, N, p, nrep);
  Xa = sluice.enkf (X, HX, y, r, 'method', 'etkf');
  Xo = etkf_octave (X, HX, y, r);
  e = max (abs (Xo(:) - Xa(:)));
  printf ('   check max |Octave - compiled| %.1e (%s)\n', e, ...
          yes_no (e < 1e-10, 'agree to 1e-10', 'DIFFER'));
  % the N x N matrix of the analysis, for timing its eig alone
  s = 1 ./ sqrt (r);
  S = (HX - mean (HX, 2)) .* s;
  A = S' * S + (N - 1) * eye (N);
  clear S;
  tc = Inf;
  to = Inf;
  te = Inf;
  for k = 1:nrep
    t0 = tic ();
    Xa = sluice.enkf (X, HX, y, r, 'method', 'etkf');
    tc = min (tc, toc (t0));
    t0 = tic ();
    Xo = etkf_octave (X, HX, y, r);
    to = min (to, toc (t0));
    t0 = tic ();
    [Q, lam] = eig (A, 'vector');
    te = min (te, toc (t0));
  end
  printf ('   etkf n=%d N=%d p=%d: compiled %.4f s; Octave %.4f s; ratio %.2f (target >= 2)\n', ...
          n, N, p, tc, to, to / tc);
  printf ('      Octave eig of the %d x %d matrix alone %.4f s (the compiled analysis does the same eigen-decomposition: ratio <= %.2f)\n', ...
          N, N, te, to / te);

  % ---- ETKF with fewer observations than members (observation space)
  n = 1000;
  N = 1000;
  [X, truth] = lorenz96_ensemble (n, N, F, 91);
  for p = [1 10 100]
    rand ('state', 92 + p);
    randn ('state', 92 + p);
    rows = round (linspace (1, n, p));
    HX = X(rows, :);                     % p of the n rows observed
    r = 0.5 + rand (p, 1);
    y = truth(rows) + sqrt (r) .* randn (p, 1);
    Xa = sluice.enkf (X, HX, y, r, 'method', 'etkf');
    Xo = etkf_octave_obs (X, HX, y, r);
    e = max (abs (Xo(:) - Xa(:)));
    tc = Inf;
    to = Inf;
    for k = 1:nrep
      t0 = tic ();
      Xa = sluice.enkf (X, HX, y, r, 'method', 'etkf');
      tc = min (tc, toc (t0));
      t0 = tic ();
      Xo = etkf_octave_obs (X, HX, y, r);
      to = min (to, toc (t0));
    end
    printf ('   etkf n=%d N=%d p=%d (observation space): compiled %.4f s; Octave in observation space %.4f s; ratio %.2f; check max |Octave - compiled| %.1e (%s)\n', ...
            n, N, p, tc, to, to / tc, e, yes_no (e < 1e-10, 'agree to 1e-10', 'DIFFER'));
  end
  clear X HX Xa Xo;

  % ---- many members, a handful of observations, cycled
  bench_etkf_cycles (nrep);

  % the fixed cost of one call (a 2 x 2 ETKF)
  X = [1.3 2.9; 0.4 -0.7];
  tf = Inf;
  for k = 1:nrep
    t0 = tic ();
    for j = 1:100
      Xa = sluice.enkf (X, [1.1 2.6], 2.2, 0.8, 'method', 'etkf');
    end
    tf = min (tf, toc (t0) / 100);
  end
  printf ('   fixed cost of one sluice.enkf call (2 members, 2 rows, 1 observation): %.0f us\n', tf * 1e6);
end

% ------------------------------------------------------------------------
% case 4: a damped linear model x <- M x + noise on n = 3 states, observed
% through a fixed 5 x 3 operator each cycle; the same forecasts and
% observations are given to every version

function bench_etkf_cycles (nrep)
  n = 3;
  N = 2000;
  p = 5;
  ncyc = 100;
  nfull = 3;                           % cycles for the forced N x N form
  rand ('state', 501);
  randn ('state', 501);
  M = [0.9 0.2 0; -0.1 0.85 0.1; 0 0.15 0.8];
  H = [1 0 0; 0 1 0; 0 0 1; 1 1 0; 0 1 -1];
  r = 0.2 + 0.1 * (1:p)';
  X0 = randn (n, N);
  truth = zeros (n, ncyc);
  x = [1; -0.5; 0.3];
  Y = zeros (p, ncyc);
  for t = 1:ncyc
    x = M * x + 0.3 * randn (n, 1);
    truth(:, t) = x;
    Y(:, t) = H * x + sqrt (r) .* randn (p, 1);
  end
  noise = 0.3 * randn (n, N, ncyc);
  printf ('   ETKF cycled: N = %d members, n = %d states, p = %d observations a cycle, %d cycles; best of %d\n', ...
          N, n, p, ncyc, nrep);
  % checks: the forms and the Octave version on the first cycles
  Xa = X0;
  Xb = X0;
  Xo = X0;
  e = 0;
  eo = 0;
  for t = 1:nfull
    Xa = M * Xa + noise(:, :, t);
    Xb = M * Xb + noise(:, :, t);
    Xo = M * Xo + noise(:, :, t);
    Xa = sluice.enkf (Xa, H * Xa, Y(:, t), r, 'method', 'etkf');
    Xb = sluice.enkf (Xb, H * Xb, Y(:, t), r, 'method', 'etkf', 'etkf_form', 'ensemble');
    Xo = etkf_octave_obs (Xo, H * Xo, Y(:, t), r);
    e = max (e, max (abs (Xa(:) - Xb(:))) / max (abs (Xb(:))));
    eo = max (eo, max (abs (Xa(:) - Xo(:))) / max (abs (Xo(:))));
  end
  printf ('   check over %d cycles: |m x m - N x N| / max|Xa| %.1e, |compiled - Octave| / max|Xa| %.1e (%s)\n', ...
          nfull, e, eo, yes_no (max (e, eo) < 1e-10, 'agree to 1e-10', 'DIFFER'));
  tc = Inf;
  tf = Inf;
  to = Inf;
  for k = 1:nrep
    t0 = tic ();
    X = X0;
    for t = 1:ncyc
      X = M * X + noise(:, :, t);
      X = sluice.enkf (X, H * X, Y(:, t), r, 'method', 'etkf');
    end
    tc = min (tc, toc (t0));
    t0 = tic ();
    X = X0;
    for t = 1:ncyc
      X = M * X + noise(:, :, t);
      X = etkf_octave_obs (X, H * X, Y(:, t), r);
    end
    to = min (to, toc (t0));
  end
  X = X0;
  t0 = tic ();
  for t = 1:nfull
    X = M * X + noise(:, :, t);
    X = sluice.enkf (X, H * X, Y(:, t), r, 'method', 'etkf', 'etkf_form', 'ensemble');
  end
  tf = toc (t0) / nfull;
  printf ('   etkf cycled N=%d n=%d p=%d: m x m form %.4f s for %d cycles (%.2f ms a cycle); N x N form forced %.3f s a cycle (over %d cycles): ratio %.0f a cycle; Octave in observation space %.4f s: ratio %.2f\n', ...
          N, n, p, tc, ncyc, 1e3 * tc / ncyc, tf, nfull, tf / (tc / ncyc), to, to / tc);
end

% ------------------------------------------------------------------------
% the Octave LETKF (Hunt, Kostelich & Szunyogh 2007, R-localisation) on a
% ring with one observation per point: observation i + o of point i has
% weight g(o); its local error variance is r / g

function Xa = letkf_loop (X, HX, y, r, o, g)
  % everything per point, on precomputed perturbations
  [n, N] = size (X);
  nm1 = N - 1;
  E = nm1 * eye (N);
  xbar = mean (X, 2);
  XpT = (X - xbar)';                      % one column per point
  ybar = mean (HX, 2);
  YbT = (HX - ybar)';                     % one column per observation
  d = y - ybar;
  XaT = zeros (N, n);
  for i = 1:n
    k = mod (i - 1 + o, n) + 1;           % the local observations
    sw = sqrt (g ./ r(k))';
    Z = YbT(:, k) .* sw;                  % C = Z' diag(sw): A = Z Z' + (N-1) I
    [Q, lam] = eig (Z * Z' + E, 'vector');
    w = Q * ((Q' * (Z * (sw' .* d(k)))) ./ lam);
    XaT(:, i) = xbar(i) + (Q * (sqrt (nm1 ./ lam) .* Q') + w)' * XpT(:, i);
  end
  Xa = XaT';
end

function [Xa, A] = letkf_hoisted (X, HX, y, r, o, g)
  % every local matrix A_i = (N-1) I + sum_k (g_ik / r_k) y'_k y'_k^T
  % and vector c_i = sum_k (g_ik / r_k) d_k y'_k at once through the
  % banded weight matrix G (m x n); the loop holds only the eig calls;
  % the transform of each point is applied without forming it:
  % xa_j = xbar + sum_e Q_je s_e p_e + sum_e p_e (q_e' c) / lam_e with
  % p_e = xp' q_e, s_e = sqrt((N-1) / lam_e)
  [n, N] = size (X);
  m = rows (HX);
  nm1 = N - 1;
  xbar = mean (X, 2);
  XpT = (X - xbar)';
  ybar = mean (HX, 2);
  YbT = (HX - ybar)';
  d = y - ybar;
  pt = repmat (1:n, numel (o), 1);
  ob = mod (pt - 1 + o, n) + 1;
  G = sparse (ob(:), pt(:), repmat (g, n, 1) ./ r(ob(:)), m, n);
  E = nm1 * eye (N);
  A = reshape (reshape (YbT, N, 1, m) .* reshape (YbT, 1, N, m), N * N, m) * G + E(:);
  C = (YbT .* d') * G;
  Q = zeros (N, N, n);
  lam = zeros (N, n);
  for i = 1:n
    [Q(:, :, i), lam(:, i)] = eig (reshape (A(:, i), N, N), 'vector');
  end
  P = reshape (sum (reshape (XpT, N, 1, n) .* Q, 1), N, n);
  QC = reshape (sum (Q .* reshape (C, N, 1, n), 1), N, n);
  XaT = reshape (sum (Q .* reshape (sqrt (nm1 ./ lam) .* P, 1, N, n), 2), N, n) ...
        + sum (P .* QC ./ lam, 1) + xbar';
  Xa = XaT';
end

function eig_only (A, N)
  % the eig calls of the loops above and nothing else
  for i = 1:columns (A)
    [Q, lam] = eig (reshape (A(:, i), N, N), 'vector');
  end
end

% ------------------------------------------------------------------------
% the Octave ETKF, symmetric square root (Hunt, Kostelich & Szunyogh 2007):
% S = R^{-1/2} (HX - ybar), d = R^{-1/2} (y - ybar),
% Pa~ = [(N-1) I + S'S]^{-1} = Q diag(1/lam) Q', w = Pa~ S' d,
% T = Q diag(sqrt((N-1)/lam)) Q' + w 1', Xa = xbar + (X - xbar) T

function Xa = etkf_octave (X, HX, y, r)
  N = columns (X);
  ybar = mean (HX, 2);
  s = 1 ./ sqrt (r);
  S = (HX - ybar) .* s;
  [Q, lam] = eig (S' * S + (N - 1) * eye (N), 'vector');
  w = Q * ((Q' * (S' * ((y - ybar) .* s))) ./ lam);
  T = Q * (sqrt ((N - 1) ./ lam) .* Q') + w;
  xbar = mean (X, 2);
  Xa = (X - xbar) * T + xbar;
end

% the same analysis worked out in observation space, for p < N: with
% S S' = U diag(lam) U' (p x p) and L = (N-1) + lam, w = S' U diag(1/L) U' d
% and the symmetric square root I - V'V, V = diag(1/sqrt(L + sqrt((N-1) L))) U' S
% (the eigenvectors of S'S outside the span of S' keep the eigenvalue 1),
% applied to the perturbations without forming an N x N matrix

function Xa = etkf_octave_obs (X, HX, y, r)
  nm1 = columns (X) - 1;
  ybar = mean (HX, 2);
  s = 1 ./ sqrt (r);
  S = (HX - ybar) .* s;
  [U, lam] = eig (S * S', 'vector');
  L = nm1 + max (lam, 0);
  q = U * ((U' * ((y - ybar) .* s)) ./ L);
  V = (1 ./ sqrt (L + sqrt (nm1 * L))) .* (U' * S);
  xbar = mean (X, 2);
  Xp = X - xbar;
  Xa = xbar + Xp * (S' * q) + Xp - (Xp * V') * V;
end

% ------------------------------------------------------------------------

function [X, truth] = lorenz96_ensemble (n, N, F, seed)
  % A Lorenz-96 truth spun up for 10 time units, and a forecast ensemble:
  % the truth plus unit normal perturbations, run forward with it for 0.5
  % time units (RK4, dt = 0.05), so the perturbations carry the model's
  % spatial structure.
  randn ('state', seed);
  dt = 0.05;
  x = F + 0.01 * randn (n, 1);
  for k = 1:200
    x = rk4 (x, dt, F);
  end
  X = x + randn (n, N);
  for k = 1:10
    x = rk4 (x, dt, F);
    X = rk4 (X, dt, F);
  end
  truth = x;
end

function x = rk4 (x, dt, F)
  k1 = l96 (x, F);
  k2 = l96 (x + 0.5 * dt * k1, F);
  k3 = l96 (x + 0.5 * dt * k2, F);
  k4 = l96 (x + dt * k3, F);
  x = x + (dt / 6) * (k1 + 2 * k2 + 2 * k3 + k4);
end

function dx = l96 (x, F)
  % dx_i/dt = (x_{i+1} - x_{i-2}) x_{i-1} - x_i + F, indices on the ring
  n = rows (x);
  dx = (x([2:n 1], :) - x([n-1 n 1:n-2], :)) .* x([n 1:n-1], :) - x + F;
end

function w = gaspari_cohn_weight (d, c)
  % Gaspari & Cohn (1999) eq. 4.10, z = d / c
  z = d / c;
  w = zeros (size (z));
  a = z <= 1;
  za = z(a);
  w(a) = -za .^ 5 / 4 + za .^ 4 / 2 + 5 * za .^ 3 / 8 - 5 * za .^ 2 / 3 + 1;
  b = z > 1 & z < 2;
  zb = z(b);
  w(b) = zb .^ 5 / 12 - zb .^ 4 / 2 + 5 * zb .^ 3 / 8 + 5 * zb .^ 2 / 3 - 5 * zb + 4 - 2 ./ (3 * zb);
end
