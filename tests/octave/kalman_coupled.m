function [mf, Pf] = kalman_coupled (A, Q, H, R, m0, P0, Y, blk, mode)
  % The references of the coupled-assimilation tests: Kalman filters of a
  % linear-Gaussian model made of blocks (blk(i): the block of state i;
  % observation row j reads the states of block blk(find(H(j, :), 1))),
  % over model steps k = 1..T:
  %   x_k = A x_{k-1} + q,  q ~ N(0, Q);  x_0 ~ N(m0, P0);  y_k = H x_k + r
  % (a NaN in Y: that row not observed at that step). After the forecast
  % m = A m, P = A P A' + Q (Kalman 1960), the analysis of each mode:
  % 'strong'  the Kalman filter of the joint system: K = P H' S^-1,
  %           S = H P H' + R, m+ = m + K (y - H m), P+ = (I - K H) P.
  % 'weak'    every block c updated by its own observations only: the
  %           gain K = blockdiag (K_c), K_c = P_cc H_c' (H_c P_cc H_c' +
  %           R_c)^-1 (H_c: the rows of block c's observations on block c's
  %           columns), zero between blocks; m+ = m + K (y - H m) and the
  %           covariance by the Joseph form P+ = (I - K H) P (I - K H)' +
  %           K R K', which holds for any gain (Bucy & Joseph 1968; Gelb
  %           1974, Applied Optimal Estimation, sec. 4.2): the mean and
  %           covariance of x + K (y + e - H x) for x ~ N(m, P), e ~ N(0, R)
  %           independent, i.e. what the perturbed-observation ensemble
  %           Kalman filter with this gain does as N grows.
  % 'weak_pf' every block's marginal N(m_c, P_cc) updated by its own
  %           observations with the Kalman filter of that marginal (the
  %           exact posterior of the block's marginal: the particle filter
  %           that weighs the block by its own likelihood and resamples it
  %           with those weights converges to it), and the blocks
  %           independent after the analysis (they are resampled
  %           independently): the cross-block covariance is set to 0.
  % Returns the analysed means mf (n x T) and covariances Pf (n x n x T).
  T = columns (Y); n = numel (m0);
  mf = zeros (n, T); Pf = zeros (n, n, T);
  m = m0; P = P0;
  nb = max (blk);
  obs_blk = zeros (rows (H), 1);
  for j = 1:rows (H)
    obs_blk(j) = blk(find (H(j, :), 1));
  end
  for k = 1:T
    m = A * m; P = A * P * A' + Q;
    o = ~isnan (Y(:, k));
    switch mode
      case 'strong'
        if (any (o))
          Hk = H(o, :); S = Hk * P * Hk' + R(o, o);
          K = P * Hk' / S;
          m = m + K * (Y(o, k) - Hk * m); P = (eye (n) - K * Hk) * P;
        end
      case 'weak'
        if (any (o))
          Hk = H(o, :); Rk = R(o, o); K = zeros (n, sum (o));
          ob = obs_blk(o);
          for c = 1:nb
            s = blk(:) == c; r = ob == c;
            if (any (r))
              Hc = Hk(r, s);
              K(s, r) = P(s, s) * Hc' / (Hc * P(s, s) * Hc' + Rk(r, r));
            end
          end
          IKH = eye (n) - K * Hk;
          m = m + K * (Y(o, k) - Hk * m);
          P = IKH * P * IKH' + K * Rk * K';
        end
      case 'weak_pf'
        Pn = zeros (n);
        for c = 1:nb
          s = blk(:) == c; r = o & obs_blk == c;
          Pc = P(s, s); mc = m(s);
          if (any (r))
            Hc = H(r, s); Kc = Pc * Hc' / (Hc * Pc * Hc' + R(r, r));
            mc = mc + Kc * (Y(r, k) - Hc * mc); Pc = (eye (sum (s)) - Kc * Hc) * Pc;
          end
          m(s) = mc; Pn(s, s) = Pc;
        end
        P = Pn;
    end
    mf(:, k) = m; Pf(:, :, k) = P;
  end
end
