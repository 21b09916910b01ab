function [ms, Ps, mf, Pf, ll] = kalman_rts (A, Q, H, R, m0, P0, Y, c)
  % The exact reference of the linear-Gaussian tests, from the textbook
  % equations: the Kalman filter (Kalman 1960), the Rauch-Tung-Striebel
  % smoother (Rauch, Tung & Striebel 1965) and the log-likelihood by the
  % prediction-error decomposition (Harvey 1989, Forecasting, structural
  % time series models and the Kalman filter, sec. 3.4), over model steps
  % k = 1..T:
  %   x_k = A_k x_{k-1} + c(:, k) + q,  q ~ N(0, Q_k);  x_0 ~ N(m0, P0)
  %   y_k = H x_k + r,                  r ~ N(0, R)
  % A and Q are n x n, or n x n x T for a model that changes with the
  % step (A_1 = I and Q_1 = 0 put the first observation at the start,
  % before any model step; one step with A = I, Q = 0 is a single Kalman
  % update of m0 and P0). A NaN in Y is a component not observed at that
  % step: the update uses the rows of H and R of the others, and a column
  % all NaN is a step without observation (no update, no term of the
  % likelihood). Returns the smoothed means ms (n x T) and covariances Ps
  % (n x n x T), the filtered mf and Pf, and ll = the sum over steps of
  % log N(y_k; H m_k|k-1, H P_k|k-1 H' + R) over the observed rows.
  T = columns (Y); n = numel (m0);
  if (nargin < 8)
    c = zeros (n, T);
  end
  mf = zeros (n, T); Pf = zeros (n, n, T); mp = mf; Pp = Pf;
  m = m0; P = P0; ll = 0;
  for k = 1:T
    Ak = A(:, :, min (k, size (A, 3))); Qk = Q(:, :, min (k, size (Q, 3)));
    m = Ak * m + c(:, k); P = Ak * P * Ak' + Qk;
    mp(:, k) = m; Pp(:, :, k) = P;
    o = ~isnan (Y(:, k));
    if (any (o))
      Hk = H(o, :); S = Hk * P * Hk' + R(o, o); v = Y(o, k) - Hk * m;
      ll = ll - 0.5 * (numel (v) * log (2*pi) + log (det (S)) + v' * (S \ v));
      K = P * Hk' / S;
      m = m + K * v; P = (eye (n) - K * Hk) * P;
    end
    mf(:, k) = m; Pf(:, :, k) = P;
  end
  ms = mf; Ps = Pf;
  for k = T-1:-1:1
    Ak = A(:, :, min (k + 1, size (A, 3)));
    J = Pf(:, :, k) * Ak' / Pp(:, :, k + 1);
    ms(:, k) = mf(:, k) + J * (ms(:, k + 1) - mp(:, k + 1));
    Ps(:, :, k) = Pf(:, :, k) + J * (Ps(:, :, k + 1) - Pp(:, :, k + 1)) * J';
  end
end
