function [A, Q, H, R, Y] = rotation_decay_case ()
  % The linear-Gaussian test case of three states: a rotation by 0.3 with
  % decay 0.95 of the first two, the third fed by the first (0.2) and kept;
  % process noise Q = diag(0.3, 0.2, 0.1); the first and third states
  % observed with error variances R = diag(0.5, 0.8) at 25 cycles, from a
  % truth starting at [1; -1; 0.5] (randn state 7). Y is 2 x 25.
  th = 0.3;
  A = 0.95 * [cos(th) -sin(th) 0; sin(th) cos(th) 0; 0 0 1];
  A(3, 1) = 0.2;
  Q = diag ([0.3 0.2 0.1]);
  H = [1 0 0; 0 0 1];
  R = diag ([0.5 0.8]);
  T = 25;
  x = [1; -1; 0.5];
  Y = zeros (2, T);
  randn ('state', 7);
  for k = 1:T
    x = A * x + sqrt (Q) * randn (3, 1);
    Y(:, k) = H * x + sqrt (R) * randn (2, 1);
  end
end
