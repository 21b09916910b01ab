function ll = ar1_loglik (a, q, r, m0, p0, y)
  % The exact reference of the scalar linear-Gaussian tests: the log
  % likelihood of y under x_k = a x_(k-1) + N(0, q), y_k = x_k + N(0, r),
  % x_0 ~ N(m0, p0), by the Kalman filter's prediction-error decomposition
  % (Kalman 1960; Harvey 1989, 3.4).
  ll = 0; m = m0; P = p0;
  for k = 1:numel (y)
    m = a * m; P = a * P * a + q;
    S = P + r; v = y(k) - m;
    ll = ll - 0.5 * (log (2 * pi) + log (S) + v ^ 2 / S);
    K = P / S; m = m + K * v; P = (1 - K) * P;
  end
end
