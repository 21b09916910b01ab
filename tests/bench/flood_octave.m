function X = flood_octave (X, p, t0, t1, dt, te, W)
  % Fixed-step RK4 on the whole ensemble with the compiled run's step grid;
  % an event at time t_e in (t_s, t_s + h] splits that step: RK4 over
  % (t_s, t_e), the jump at t_e, RK4 over the rest. F and R have zero
  % derivatives (RK4 leaves them unchanged), and dH = -kappaT H,
  % dM = -muS M are linear with constant coefficients: RK4 over a piece h
  % multiplies them by 1 + z + z^2/2 + z^3/6 + z^4/24 (z = -kappaT h,
  % -muS h), and M's stage values, which enter dD/dt, are M times the
  % matching partial sums. The result is RK4 on all six states, as
  % compiled, up to rounding. p holds the parameters, one column for all
  % members or one per member.
  xiH = p(1, :); alphaH = p(2, :); rhoE = p(3, :); gammaE = p(4, :); lambdaP = p(5, :);
  sigmaP = p(6, :); epsT = p(7, :); kappaT = p(8, :); alphaS = p(9, :); muS = p(10, :);
  G = X(1, :); D = X(2, :); H = X(3, :); M = X(4, :); F = X(5, :); R = X(6, :);
  [nsteps, h] = step_grid (t0, t1, dt);
  ne = numel (te);
  e = find (te > t0, 1);
  if (isempty (e))
    e = ne + 1;
  end
  for l = 0:nsteps-1
    ts = t0 + l * h;
    if (l + 1 == nsteps)
      tend = t1;
    else
      tend = t0 + (l + 1) * h;
    end
    tc = ts;
    while (e <= ne && te(e) <= tend)
      [G, D, H, M] = flood_rk4 (G, D, H, M, te(e) - tc, rhoE, lambdaP, sigmaP, kappaT, muS);
      tc = te(e);
      % the jump (eqs. 4-6) at a flood of level W(e)
      level = W(e) + xiH .* H;
      F = -expm1 (-level ./ (alphaH .* D));
      F(~(level > H)) = 0;
      Rstar = epsT .* (level - H);
      % (a G that is not > 0 gives no levee in both: NaN or 0 tests false)
      c = gammaE .* Rstar .* sqrt (max (G, 0));
      FG = F .* G;
      raise = F > 0 & FG > c & G - FG > c;
      R = zeros (size (G));
      R(raise) = Rstar(raise);
      cost = zeros (size (G));
      cost(raise) = c(raise);
      S = F;
      aF = alphaS .* F;
      S(R > 0) = aF(R > 0);
      G = G - FG - cost;
      H = H + R;
      M = M + S;
      e = e + 1;
    end
    [G, D, H, M] = flood_rk4 (G, D, H, M, tend - tc, rhoE, lambdaP, sigmaP, kappaT, muS);
  end
  X = [G; D; H; M; F; R];
end

function [G, D, H, M] = flood_rk4 (G, D, H, M, h, rhoE, lambdaP, sigmaP, kappaT, muS)
  % one RK4 step of length h (nothing for h <= 0)
  if (~(h > 0))
    return;
  end
  z = -muS * h;
  m2 = 1 + 0.5 * z;                 % M at the stages: M + h/2 kM1, ...
  m3 = 1 + 0.5 * z .* m2;
  m4 = 1 + z .* m3;
  % a stage with G <= 0 lies outside the model's domain: the compiled
  % right-hand side gives NaN derivatives there, and so does this one
  [G1, bad] = outside (G, false (size (G)));
  [g1, d1] = flood_gd (G1, D, M, rhoE, lambdaP, sigmaP);
  G2 = G + 0.5 * h * g1;
  D2 = D + 0.5 * h * d1;
  [G2, bad] = outside (G2, bad);
  [g2, d2] = flood_gd (G2, D2, m2 .* M, rhoE, lambdaP, sigmaP);
  G3 = G + 0.5 * h * g2;
  D3 = D + 0.5 * h * d2;
  [G3, bad] = outside (G3, bad);
  [g3, d3] = flood_gd (G3, D3, m3 .* M, rhoE, lambdaP, sigmaP);
  G4 = G + h * g3;
  D4 = D + h * d3;
  [G4, bad] = outside (G4, bad);
  [g4, d4] = flood_gd (G4, D4, m4 .* M, rhoE, lambdaP, sigmaP);
  G = G + (h / 6) * (g1 + 2 * g2 + 2 * g3 + g4);
  D = D + (h / 6) * (d1 + 2 * d2 + 2 * d3 + d4);
  y = -kappaT * h;
  H = H .* (1 + y .* (1 + y .* (1 / 2 + y .* (1 / 6 + y / 24))));
  M = M .* (1 + z .* (1 + z .* (1 / 2 + z .* (1 / 6 + z / 24))));
  if (any (bad))
    H(bad) = NaN;
    M(bad) = NaN;
  end
end

function [G, bad] = outside (G, bad)
  % members whose stage value of G is not > 0: NaN (a real NaN root, not a
  % complex one)
  b = ~(G > 0);
  if (any (b))
    G(b) = NaN;
    bad = bad | b;
  end
end

function [g, d] = flood_gd (G, D, M, rhoE, lambdaP, sigmaP)
  % dG/dt and dD/dt (eqs. 3a-b)
  g = rhoE .* (1 - D) .* G;
  d = (M - D ./ lambdaP) .* sigmaP ./ sqrt (G);
end
