% Ensemble Kalman filters on the Lorenz-96 twin experiment of the trade:
% n = 40, F = 8, every variable observed every 0.05 time units with error
% variance 1 (common practice). A well-tuned filter reaches an analysis
% RMSE of about 0.2 (reported in the ensemble Kalman filter literature);
% the targets: ETKF with 40 members <= 0.22, LETKF with 20 members <= 0.25.

%!shared truth, obs, spec, T, pr
%! spec = sluice.model ('lorenz96', 'n', 40);
%! randn ('state', 96); rand ('state', 96);
%! x0 = 8 + randn (40, 1);
%! % spin the truth up onto the attractor, then 600 cycles of 0.05
%! xs = sluice.simulate (spec, x0, [], [0 10]);
%! T = 600;
%! truth = sluice.simulate (spec, xs(:, end), [], 0:0.05:0.05*T);
%! truth = truth(:, 2:end);
%! y = truth + randn (size (truth));
%! t = repmat (0.05 * (1:T), 40, 1);
%! names = repmat (spec.states(:), 1, T);
%! obs = struct ('time', t(:), 'variable', {names(:)}, 'value', y(:), 'sigma', ones (40 * T, 1));
%! % the prior: climatological spread around a guess
%! args = {};
%! for i = 1:40
%!   args = [args, {spec.states{i}, 'normal', [xs(i, end) + 1, 2]}];
%! end
%! pr = sluice.prior (args{:});

%!test
%! % ETKF, 40 members, 1% inflation (inflation 1.01 of the perturbations)
%! r = sluice.filter (spec, pr, obs, 'method', 'etkf', 'members', 40, 'seed', 1, ...
%!                    't0', 0, 'inflation', 1.01, 'progress', false);
%! err = r.states.mean(:, 101:end) - truth(:, 101:end);   % after 100 cycles of spin-up
%! rmse = sqrt (mean (err(:).^2));
%! assert (rmse <= 0.22, sprintf ('ETKF analysis RMSE %.3f', rmse));

%!test
%! % LETKF, 20 members, Gaspari-Cohn half-width 6 grid points (support 12)
%! % on the ring of 40, 2% inflation (a small sweep here: half-widths 2-8,
%! % inflation 1-1.06, RTPS 0-0.5; this setting measured 0.204)
%! loc = struct ('geometry', 'ring', 'period', 40, 'radius', 6);
%! r = sluice.filter (spec, pr, obs, 'method', 'letkf', 'members', 20, 'seed', 2, ...
%!                    't0', 0, 'inflation', 1.02, 'localization', loc, 'progress', false);
%! err = r.states.mean(:, 101:end) - truth(:, 101:end);
%! rmse = sqrt (mean (err(:).^2));
%! assert (rmse <= 0.25, sprintf ('LETKF analysis RMSE %.3f', rmse));
