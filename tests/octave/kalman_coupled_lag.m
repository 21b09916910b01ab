function [ms, Ps] = kalman_coupled_lag (A, Q, H, R, m0, P0, Y, blk, mode, lag)
  % The fixed-lag smoothers of the coupled-assimilation tests: the
  % filters of kalman_coupled.m ('strong', 'weak_pf') run on the state
  % augmented with its past (the fixed-lag smoother as a Kalman filter of
  % the augmented state: Anderson & Moore 1979, Optimal Filtering, sec.
  % 7.3). With lag(c) the lag of block c (one number: every block), L =
  % max(lag) and z_k = [x_k; x_{k-1}; ...; x_{k-L}] (n (L + 1) rows),
  %   forecast  z_k = F z_{k-1} + G q,  F = [A 0 ... 0; I 0 ... 0; 0 I 0
  %             ... 0; ...] (the past shifts down one slot, the oldest
  %             drops out), G = [I; 0; ...]: m = F m, P = F P F' + G Q G';
  %   analysis  y_k = H x_k + r reads the first slot only, Hz = [H 0 ... 0].
  % 'strong'  the Kalman update of the whole augmented state: its slot l
  %           at step k is E[x_{k-l} | y_1..k], the fixed-lag smoother;
  %           with L >= T - 1 the last step's slots are the RTS smoother's
  %           (a check of this function in test_coupling.m).
  % 'weak_pf' the weakly coupled particle filter whose window's rows of a
  %           block follow that block's own ancestry: block c's group (its
  %           rows in every slot) is weighed by c's own observations and
  %           resampled apart from the other groups. The weighed group is
  %           the exact posterior of the group's marginal given c's
  %           observations (they read c's rows of the first slot only, so
  %           conditioning the joint and taking the group's marginal is
  %           conditioning the group's marginal: the Kalman update of
  %           N(m_g, P_gg) with the rows of H and R of c's observations,
  %           K = P_g,g1 Hc' (Hc P_g1,g1 Hc' + Rc)^-1 for g1 the group's rows
  %           of the first slot); after resampling every group apart the
  %           groups are independent: the covariance between groups is set
  %           to 0 (after each step with observations). With L = 0 this is
  %           kalman_coupled.m's 'weak_pf'.
  % Returns ms (n x T): block c's rows of column s are its slot k - s at
  % step k = min(s + lag(c), T), i.e. E[x_s | y_1..s+lag(c)] under the
  % mode, and Ps (n x n x T) the covariances of those slots (within a
  % block; between blocks the entries of the slots of the block of the
  % row).
  T = columns (Y); n = numel (m0);
  nb = max (blk);
  if (isscalar (lag))
    lag = repmat (lag, 1, nb);
  end
  L = max (lag);
  nz = n * (L + 1);
  F = zeros (nz); F(1:n, 1:n) = A;
  for l = 1:L
    F(l * n + (1:n), (l - 1) * n + (1:n)) = eye (n);
  end
  G = zeros (nz, n); G(1:n, :) = eye (n);
  % before the first step every slot holds x_0 (slots beyond the steps
  % taken are never read)
  m = repmat (m0, L + 1, 1);
  P = repmat (P0, L + 1, L + 1);
  zb = repmat (blk(:), L + 1, 1);          % the block of every augmented row
  obs_blk = zeros (rows (H), 1);
  for j = 1:rows (H)
    obs_blk(j) = blk(find (H(j, :), 1));
  end
  ms = NaN (n, T); Ps = NaN (n, n, T);
  for k = 1:T
    m = F * m; P = F * P * F' + G * Q * G';
    o = ~isnan (Y(:, k));
    Hz = [H, zeros(rows (H), n * L)];
    switch mode
      case 'strong'
        if (any (o))
          Hk = Hz(o, :); S = Hk * P * Hk' + R(o, o);
          K = P * Hk' / S;
          m = m + K * (Y(o, k) - Hk * m); P = P - K * Hk * P;
        end
      case 'weak_pf'
        if (any (o))
          Pn = zeros (nz);
          for c = 1:nb
            g = zb == c; r = o & obs_blk == c;
            Pg = P(g, g); mg = m(g);
            if (any (r))
              Hg = Hz(r, g); Kg = Pg * Hg' / (Hg * Pg * Hg' + R(r, r));
              mg = mg + Kg * (Y(r, k) - Hg * mg); Pg = Pg - Kg * Hg * Pg;
            end
            m(g) = mg; Pn(g, g) = Pg;
          end
          P = Pn;
        end
      otherwise
        error ('kalman_coupled_lag: unknown mode %s', mode);
    end
    % the block rows whose lag ends at this step (or all, at the last)
    for c = 1:nb
      for s = 1:k
        if (s + lag(c) == k || (k == T && s + lag(c) > T))
          rr = (k - s) * n + (1:n);
          b = blk(:) == c;
          ms(b, s) = m(rr(b));
          Ps(b, :, s) = P(rr(b), rr);
        end
      end
    end
  end
end
