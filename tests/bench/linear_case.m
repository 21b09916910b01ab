function [spec, pr, obs, Y, A, Q, sigma] = linear_case ()
  % linear_case.m - the benchmarks' linear-Gaussian case (bench_pf.m,
  % bench_threads.m): n = 4 states, A = 0.9 times two rotation blocks (0.3
  % and 1.1 radians), Q = 0.1 I, a truth run from x0 ~ N(0, I) observed in
  % every state at t = 1..100 with Gaussian errors of sd 0.5 (the data Y,
  % n x 100, and the observation table obs), and a standard normal prior
  % on each state.
  n = 4;
  T = 100;
  sigma = 0.5;
  A = 0.9 * blkdiag (rotation (0.3), rotation (1.1));
  Q = 0.1 * eye (n);
  spec = sluice.model ('linear', 'A', A, 'Q', Q);
  L = spec.L;
  pr = sluice.prior ('x1', 'normal', [0 1], 'x2', 'normal', [0 1], ...
                     'x3', 'normal', [0 1], 'x4', 'normal', [0 1]);
  randn ('state', 7);
  x = randn (n, 1);
  Y = zeros (n, T);
  for k = 1:T
    x = A * x + L * randn (n, 1);
    Y(:, k) = x + sigma * randn (n, 1);
  end
  obs = struct ();
  obs.time = repelem ((1:T)', n);
  obs.variable = repmat (spec.states(:), T, 1);
  obs.value = Y(:);
  obs.sigma = repmat (sigma, n * T, 1);
end

function R = rotation (th)
  R = [cos(th) -sin(th); sin(th) cos(th)];
end
