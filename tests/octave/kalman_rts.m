function [ms, Ps, mf, Pf] = kalman_rts (A, Q, H, R, m0, P0, Y, c)
  % The exact reference of the smoother tests: the Kalman filter (Kalman
  % 1960) then the Rauch-Tung-Striebel smoother (Rauch, Tung & Striebel
  % 1965) over model steps k = 1..T: x_k = A x_{k-1} + c(:, k) + q,
  % q ~ N(0, Q); y_k = H x_k + r, r ~ N(0, R); x_0 ~ N(m0, P0). A NaN
  % column of Y is a step without observation. Smoothed means ms (n x T)
  % and covariances Ps (n x n x T), filtered mf and Pf.
  T = columns (Y); n = numel (m0);
  if (nargin < 8)
    c = zeros (n, T);
  end
  mf = zeros (n, T); Pf = zeros (n, n, T); mp = mf; Pp = Pf;
  m = m0; P = P0;
  for k = 1:T
    m = A * m + c(:, k); P = A * P * A' + Q;
    mp(:, k) = m; Pp(:, :, k) = P;
    if (~any (isnan (Y(:, k))))
      S = H * P * H' + R; K = P * H' / S;
      m = m + K * (Y(:, k) - H * m); P = (eye (n) - K * H) * P;
    end
    mf(:, k) = m; Pf(:, :, k) = P;
  end
  ms = mf; Ps = Pf;
  for k = T-1:-1:1
    J = Pf(:, :, k) * A' / Pp(:, :, k + 1);
    ms(:, k) = mf(:, k) + J * (ms(:, k + 1) - mp(:, k + 1));
    Ps(:, :, k) = Pf(:, :, k) + J * (Ps(:, :, k + 1) - Pp(:, :, k + 1)) * J';
  end
end
