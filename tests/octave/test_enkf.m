% Single ensemble Kalman analyses (sluice.enkf) against the Kalman
% analysis of the ensemble's own mean and covariance (textbook update:
% K = P H' (H P H' + R)^-1, mean + K (y - H mean), (I - K H) P, in
% tests/octave/kalman_rts.m), which the deterministic square-root filters
% reproduce exactly when N > n.

%!function [m, P] = kalman_update (X, H, R, y)
%!  % the update of the ensemble's mean and N-1 sample covariance: one step
%!  % of the reference with A = I, Q = 0
%!  [n, N] = size (X);
%!  A = X - mean (X, 2);
%!  [~, ~, m, P] = kalman_rts (eye (n), zeros (n), H, R, mean (X, 2), A * A' / (N - 1), y);
%!endfunction

%!test
%! randn ('state', 3);
%! n = 5; N = 12; H = [1 0 0 0 0; 0 0 1 0 0.5; 0 1 0 0 0];
%! X = randn (n, N) + (1:n)';
%! R = diag ([0.3 0.5 0.8]); y = [1.2; 2.9; 2.2];
%! [m, P] = kalman_update (X, H, R, y);
%! for method = {'etkf', 'ensrf', 'eakf'}
%!   Xa = sluice.enkf (X, H * X, y, diag (R), 'method', method{1});
%!   A = Xa - mean (Xa, 2);
%!   assert (mean (Xa, 2), m, 1e-10);
%!   assert (A * A' / (N - 1), P, 1e-10);
%! end
%! % a full R (correlated errors) for the ETKF
%! Rf = [0.5 0.1 0; 0.1 0.4 0.05; 0 0.05 0.6];
%! [m, P] = kalman_update (X, H, Rf, y);
%! Xa = sluice.enkf (X, H * X, y, Rf, 'method', 'etkf');
%! A = Xa - mean (Xa, 2);
%! assert (mean (Xa, 2), m, 1e-10);
%! assert (A * A' / (N - 1), P, 1e-10);
%! % the analysis perturbations of the ETKF stay centred (Hunt et al. 2007)
%! assert (sum (A, 2), zeros (n, 1), 1e-12);

%!test
%! % the stochastic EnKF converges to the Kalman mean at the Monte Carlo
%! % rate, and is reproducible for a seed
%! randn ('state', 4);
%! n = 3; N = 20000; H = [1 1 0];
%! X = randn (n, N) .* [1; 2; 0.5];
%! [m, P] = kalman_update (X, H, 0.7, 0.4);
%! Xa = sluice.enkf (X, H * X, 0.4, 0.7, 'method', 'enkf', 'seed', 9);
%! assert (mean (Xa, 2), m, 5 * sqrt (diag (P) / N));
%! assert (isequal (Xa, sluice.enkf (X, H * X, 0.4, 0.7, 'method', 'enkf', 'seed', 9)));

%!test
%! % inflation 1.2 is the analysis of perturbations scaled by 1.2
%! randn ('state', 5);
%! X = randn (4, 10); H = [eye(2), zeros(2)]; y = [0.5; -0.5];
%! Xi = mean (X, 2) + 1.2 * (X - mean (X, 2));
%! assert (sluice.enkf (X, H * X, y, [1 1], 'inflation', 1.2), ...
%!         sluice.enkf (Xi, H * Xi, y, [1 1]), 1e-12);
%! % RTPS with coefficient 1 restores the prior spread
%! Xa = sluice.enkf (X, H * X, y, [1 1], 'rtps', 1);
%! assert (std (Xa, 0, 2), std (X, 0, 2), 1e-12);

%!test
%! % localisation: an observation of row 1 on a line does not touch rows
%! % beyond twice the half-width
%! randn ('state', 6);
%! X = randn (10, 8);
%! loc = struct ('geometry', 'line', 'state_pos', (1:10)', 'obs_pos', 1, 'radius', 1.5);
%! for method = {'letkf', 'ensrf', 'eakf'}
%!   Xa = sluice.enkf (X, X(1, :), 0.3, 0.5, 'method', method{1}, 'localization', loc);
%!   assert (Xa(5:end, :), X(5:end, :));
%!   assert (any (abs (Xa(1, :) - X(1, :)) > 1e-3));
%! end

%!error id=sluice:enkf:badsize sluice.enkf (ones (3, 1), ones (1, 1), 1, 1)
%!error id=sluice:enkf:badsize sluice.enkf (randn (3, 5), randn (2, 4), [1; 1], [1 1])
%!error id=sluice:enkf:badsize sluice.enkf (randn (3, 5), randn (2, 5), [1; 1; 1], [1 1])
%!error id=sluice:enkf:notpd sluice.enkf (randn (3, 5), randn (2, 5), [1; 1], [1 2; 2 1])
%!error id=sluice:enkf:nondiagonal sluice.enkf (randn (3, 5), randn (2, 5), [1; 1], [1 0.2; 0.2 1], 'method', 'ensrf')
%!error id=sluice:enkf:nonfinite sluice.enkf ([1 NaN; 2 3], [1 2], 1, 1)
%!error id=sluice:enkf:badclass sluice.enkf (single (randn (3, 5)), randn (2, 5), [1; 1], [1 1])
%!error id=sluice:enkf:badmethod sluice.enkf (randn (3, 5), randn (2, 5), [1; 1], [1 1], 'method', 'magic')
%!error id=sluice:enkf:badlocalization sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'method', 'letkf', 'localization', struct ('geometry', 'line', 'state_pos', (1:3)', 'obs_pos', 1, 'radius', -1))
%!error id=sluice:enkf:badoption sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'inflation', NaN)

%!test
%! % the options reach the analysis alike in every documented spelling:
%! % name/value pairs or one struct (a later pair wins, as for every
%! % function of the package), one half-width for all observations or one
%! % each, a sphere's default radius of 6371 or the same radius given
%! randn ('state', 9);
%! X = randn (6, 10);
%! HX = X([1 4], :);
%! y = [0.4; -0.2];
%! r = [0.5; 0.3];
%! a = sluice.enkf (X, HX, y, r, 'method', 'enkf', 'seed', 4, 'cycle', 2, 'inflation', 1.1);
%! b = sluice.enkf (X, HX, y, r, struct ('method', 'enkf', 'seed', 4, 'cycle', 2, ...
%!                                       'inflation', 1.1));
%! c = sluice.enkf (X, HX, y, r, 'method', 'etkf', 'seed', 4, 'cycle', 2, 'inflation', 1.1, ...
%!                  'method', 'enkf');
%! assert (isequal (a, b) && isequal (a, c));
%! loc = struct ('geometry', 'line', 'state_pos', (1:6)', 'obs_pos', [1; 4], 'radius', 2);
%! d = sluice.enkf (X, HX, y, r, 'method', 'letkf', 'localization', loc);
%! loc.radius = [2; 2];
%! e = sluice.enkf (X, HX, y, r, 'method', 'letkf', 'localization', loc);
%! assert (isequal (d, e));
%! s = struct ('geometry', 'sphere', 'state_pos', [(0:5)' * 10, zeros(6, 1)], ...
%!             'obs_pos', [0 0; 30 0], 'radius', 3000);
%! f = sluice.enkf (X, HX, y, r, 'method', 'letkf', 'localization', s);
%! s.sphere_radius = 6371;
%! g = sluice.enkf (X, HX, y, r, 'method', 'letkf', 'localization', s);
%! assert (isequal (f, g));
%! s.sphere_radius = 637.1;   % a smaller globe: the same angles are nearer
%! assert (~isequal (sluice.enkf (X, HX, y, r, 'method', 'letkf', 'localization', s), f));
%! [~, info] = sluice.enkf (X, HX, y, r);
%! assert (fieldnames (info), {'floored'; 'local_skipped'; 'innovation'});

%!error id=sluice:enkf:badoption sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'inflation')
%!error id=sluice:enkf:badoption sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 3, 1)
%!error id=sluice:enkf:badoption sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'inflate', 1.1)
%!error id=sluice:enkf:badoption sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, struct ('rtps', {0.1, 0.2}))
%!error id=sluice:enkf:badoption sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, struct ('rtps', 0.1, 'bogus', 1))
%!error id=sluice:enkf:badoption sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'inflation', '1.1')
%!error id=sluice:enkf:badoption sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'rtpp', [0.1 0.2])
%!error id=sluice:enkf:badoption sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'eig_floor', sparse (1e-9))
%!error id=sluice:enkf:badoption sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'etkf_form', 'nope')
%!error id=sluice:enkf:badmethod sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'method', 3)
%!error id=sluice:enkf:badvalue sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'seed', 1.5)
%!error id=sluice:enkf:badvalue sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'threads', 300)
%!error id=sluice:enkf:badvalue sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'cycle', -1)
%!error id=sluice:enkf:badlocalization sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'method', 'letkf', 'localization', 4)
%!error id=sluice:enkf:badlocalization sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'method', 'letkf', 'localization', struct ('state_pos', (1:3)', 'obs_pos', 1))
%!error id=sluice:enkf:badlocalization sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'method', 'letkf', 'localization', struct ('geometry', 'cube', 'state_pos', (1:3)', 'obs_pos', 1, 'radius', 1))
%!error id=sluice:enkf:badlocalization sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'method', 'letkf', 'localization', struct ('geometry', '', 'state_pos', (1:3)', 'obs_pos', 1, 'radius', 1))
%!error id=sluice:enkf:badsize sluice.enkf (randn (3, 5), randn (2, 5), [1; 1], [1 1], 'method', 'letkf', 'localization', struct ('state_pos', (1:3)', 'obs_pos', [1; 2], 'radius', [1; 1; 1]))
%!error id=sluice:enkf:badsize sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'method', 'letkf', 'localization', struct ('state_pos', (1:2)', 'obs_pos', 1, 'radius', 1))
%!error id=sluice:enkf:nonfinite sluice.enkf (randn (3, 5), randn (1, 5), 1, 1, 'method', 'letkf', 'localization', struct ('geometry', 'ring', 'period', Inf, 'state_pos', (1:3)', 'obs_pos', 1, 'radius', 1))
