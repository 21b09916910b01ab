function [y, gq, gsd, lz] = ar1_record ()
  % The invented AR(1) record of the joint-estimation tests: a river
  % anomaly x_t = 0.8 x_(t-1) + N(0, 1), y_t = x_t + N(0, 0.25), t = 1..100,
  % x_0 ~ N(0, 1) (randn state 11). With a unknown and a uniform prior on
  % (-1, 1), the exact posterior of a on a grid of 4001 points: the Kalman
  % filter's likelihood by the prediction-error decomposition (Kalman
  % 1960; Harvey 1989; ar1_loglik) times the flat prior, normalised on the
  % grid. Its 5%, 50% and 95% quantiles gq, its sd gsd and the log
  % evidence lz (the integral of likelihood x prior density 1/2).
  T = 100; q = 1; r = 0.25;
  randn ('state', 11);
  x = zeros (T, 1); xp = randn ();
  for t = 1:T
    xp = 0.8 * xp + sqrt (q) * randn (); x(t) = xp;
  end
  y = x + sqrt (r) * randn (T, 1);
  g = linspace (-0.999, 0.999, 4001);
  ll = arrayfun (@(a) ar1_loglik (a, q, r, 0, 1, y), g);
  pw = exp (ll - max (ll)); pw = pw / sum (pw);
  [c, iu] = unique (cumsum (pw));
  gq = interp1 (c, g(iu), [0.05 0.5 0.95]);
  gsd = sqrt (sum (pw .* g.^2) - sum (pw .* g)^2);
  lz = log (sum (exp (ll - max (ll))) * (g(2) - g(1)) / 2) + max (ll);
end
