% Twin experiments (sluice.twin): the filter's scores against its truth.
% References: the Kalman filter (Kalman 1960; tests/octave/kalman_rts.m,
% from the textbook equations) for the linear-Gaussian twin; the lognormal
% distribution function of Octave's statistics package (logncdf) for the
% synthetic lognormal errors; comparisons of networks and with the open
% loop are common practice.

%!test
%! % a denser network beats a sparser one (common practice): observing
%! % every step against every 6th step, sigma 0.3, over 8 seeds (1..8) of
%! % the whole experiment; measured mean state RMSE 0.233 against 0.477
%! % (dense better at all 8 seeds); asserted: the dense mean is below 0.7
%! % times the sparse mean, and both beat the open loop
%! spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1);
%! pr = sluice.prior ('x1', 'normal', [0 2]);
%! truth = struct ('times', 0:60, 'x0', 2);
%! dense = struct ('variable', 'x1', 'every', 1, 'sigma', 0.3);
%! sparse_net = struct ('variable', 'x1', 'every', 6, 'sigma', 0.3);
%! d = zeros (1, 8); s = d; o = d;
%! for seed = 1:8
%!   a = sluice.twin (spec, truth, dense, 'seed', seed, 'prior', pr, 'filter', {'members', 300});
%!   b = sluice.twin (spec, truth, sparse_net, 'seed', seed, 'prior', pr, ...
%!                    'filter', {'members', 300}, 'openloop', false);
%!   assert (a.truth.X, b.truth.X);       % the same truth for both networks
%!   d(seed) = a.scores.rmse; s(seed) = b.scores.rmse; o(seed) = a.scores.openloop_rmse;
%! end
%! assert (mean (d) < 0.7 * mean (s));
%! assert (mean (s) < mean (o));

%!test
%! % the linear-Gaussian twin against the exact Kalman filter on the same
%! % synthetic observations: N = 2e4 members, posterior sd about 0.25, so
%! % the Monte Carlo error of a weighted mean is below 0.01; tolerance 0.04
%! spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1);
%! pr = sluice.prior ('x1', 'normal', [0 2]);
%! truth = struct ('times', 0:30, 'x0', 2);
%! net = struct ('variable', 'x1', 'every', 1, 'sigma', 0.3);
%! r = sluice.twin (spec, truth, net, 'seed', 4, 'prior', pr, ...
%!                  'filter', {'members', 2e4}, 'openloop', false);
%! assert (r.filter.times, 0:30);
%! % the first observation is at the start, before any model step:
%! % A = 1 and Q = 0 at the first step of the reference
%! T = numel (r.obs.value);
%! [~, ~, m, P] = kalman_rts (cat (3, 1, repmat (0.9, [1 1 T-1])), ...
%!                            cat (3, 0, repmat (0.1, [1 1 T-1])), 1, 0.09, 0, 4, r.obs.value');
%! P = P(:)';
%! assert (r.filter.states.mean, m, 0.04);
%! % the score is the RMSE of that mean against the truth
%! assert (r.scores.rmse, sqrt (mean ((m - r.truth.X) .^ 2)), 0.02);
%! % and the 90% band of a normal posterior is 2 * 1.6449 sd wide
%! % (normal quantile, from memory)
%! assert (r.scores.spread, mean (2 * 1.6449 * sqrt (P)), 0.03);

%!test
%! % lognormal errors: y / x is lognormal(0, sigma); its empirical
%! % distribution function against logncdf (statistics package) at a few
%! % points, 2001 observations: tolerance 4 sqrt(1/4 / 2001) = 0.045
%! pkg load statistics
%! spec = sluice.model ('linear', 'A', 0.9, 'c', 1, 'Q', 0.01);
%! pr = sluice.prior ('x1', 'normal', [10 0.5]);
%! truth = struct ('times', 0:2000, 'x0', 10);
%! net = struct ('variable', 'x1', 'every', 1, 'sigma', 0.2, 'family', 'lognormal');
%! r = sluice.twin (spec, truth, net, 'seed', 7, 'prior', pr, ...
%!                  'filter', {'members', 100}, 'openloop', false);
%! assert (all (r.truth.X > 0));
%! assert (all (strcmp (r.obs.family, 'lognormal')));
%! ratio = r.obs.value' ./ r.truth.X;
%! q = [0.7 0.85 1 1.15 1.4];
%! F = arrayfun (@(v) mean (ratio <= v), q);
%! assert (F, logncdf (q, 0, 0.2), 0.045);
%! % the truth's own sd is sqrt (Q / (1 - A^2)) = 0.229 (stationary AR(1),
%! % handbook); errors of sd about 2 add little: measured RMSE 0.232
%! assert (r.scores.rmse < 0.3);

%!test
%! % a parameter estimated through observations of the state and of the
%! % parameter itself (common practice: the posterior is far closer to
%! % the truth than the prior mean)
%! f = @(t, X, P, U, dt) P(1, :) .* X;
%! spec = sluice.model (f, 'states', {'x'}, 'params', {'a'}, 'defaults', 0.8, 'x0', 5);
%! pr = sluice.prior ('a', 'uniform', [0.5 1]);
%! truth = struct ('times', 0:10, 'params', 0.8);
%! net = struct ('variable', {'x', 'a'}, 'every', {1, 5}, 'sigma', {0.05, 0.02});
%! r = sluice.twin (spec, truth, net, 'seed', 3, 'prior', pr, 'filter', {'members', 2000});
%! assert (r.truth.X, 5 * 0.8 .^ (0:10), 1e-12);
%! assert (r.truth.params, 0.8);
%! assert (sum (strcmp (r.obs.variable, 'a')), 3);   % times 0, 5, 10
%! assert (r.scores.names, {'x'; 'a'});
%! assert (abs (r.scores.param_error) < 0.02);
%! % the open loop keeps the prior: mean 0.75; the mean of 2000 uniform
%! % draws has sd 0.5/sqrt(12*2000) = 0.0032
%! assert (r.scores.openloop_param_error, -0.05, 0.015);
%! assert (all (r.scores.rmse < r.scores.openloop_rmse));

%!test
%! % fractional intervals: 0, 0.1, ..., 1 are all 11 observation times
%! spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'dt', 0.1);
%! pr = sluice.prior ('x1', 'normal', [0 1]);
%! truth = struct ('times', 0:0.5:1);
%! net = struct ('variable', 'x1', 'every', 0.1, 'sigma', 0.5);
%! r = sluice.twin (spec, truth, net, 'prior', pr, 'filter', {'members', 50, 'times', 0.3});
%! assert (numel (r.obs.time), 11);
%! assert (r.obs.time', (0:10) / 10, 1e-12);
%! assert (any (abs (r.filter.times - 0.3) < 1e-12));
%! assert (r.scores.times, [0 0.5 1]);

%!test
%! % a derived quantity observed through a linear operator (total of two
%! % states) is scored against its own truth, H times the true states;
%! % the filter mean of a linear quantity is H times the state mean (the
%! % weighted mean is linear: common practice). This call failed with
%! % nonconformant arguments in the scoring.
%! spec = sluice.model ('linear', 'A', [0.9 0.1; 0 0.8], 'Q', 0.1);
%! pr = sluice.prior ('x1', 'normal', [0 2], 'x2', 'normal', [0 2]);
%! ops = struct ('names', 'total', 'H', [1 1]);
%! r = sluice.twin (spec, struct ('times', 0:20, 'x0', [2; 1]), ...
%!                  struct ('variable', 'total', 'every', 1, 'sigma', 0.3), ...
%!                  'prior', pr, 'filter', {'members', 200, 'operators', ops});
%! assert (r.scores.names, {'x1'; 'x2'; 'total'});
%! [~, it] = ismember (0:20, r.filter.times);
%! m = sum (r.filter.states.mean(:, it), 1);
%! assert (r.scores.rmse(3), sqrt (mean ((m - sum (r.truth.X, 1)) .^ 2)), 1e-12);
%! assert (r.scores.rmse(1:2), sqrt (mean ((r.filter.states.mean(:, it) - r.truth.X) .^ 2, 2)), 1e-12);
%! assert (size (r.scores.spread), [3 1]);
%! assert (all (isfinite (r.scores.spread)));
%! % the band of the total, from the filter's summary of it
%! Q = r.filter.derived.quantiles(1, :, it);
%! assert (r.scores.spread(3), mean (Q(1, 3, :) - Q(1, 1, :)), 1e-12);
%! assert (size (r.scores.openloop_rmse), [3 1]);
%! assert (r.scores.rmse(3) < r.scores.openloop_rmse(3));

%!test
%! % a 1-state model with a derived quantity: one row per name (the
%! % scoring broadcast the 1-row mean against the 2-row truth and scored a
%! % meaningless extra row). The derived quantity 2.5 x has an RMSE of
%! % exactly 2.5 times the state's (hand-computed from the definition).
%! spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1);
%! pr = sluice.prior ('x1', 'normal', [0 2]);
%! ops = struct ('names', 'scaled', 'H', 2.5);
%! r = sluice.twin (spec, struct ('times', 0:15, 'x0', 2), ...
%!                  struct ('variable', 'x1', 'every', 1, 'sigma', 0.3), ...
%!                  'prior', pr, 'openloop', false, ...
%!                  'filter', {'members', 100, 'operators', ops});
%! assert (r.scores.names, {'x1'; 'scaled'});
%! assert (size (r.scores.rmse), [2 1]);
%! assert (r.scores.rmse(2), 2.5 * r.scores.rmse(1), 1e-12);
%! assert (size (r.scores.openloop_rmse), [2 1]);

%!test
%! % a function operator on the flood model, observed by a Poisson count:
%! % the twin scores states, parameters and the count, whose mean and band
%! % come from the filter's summary; without that summary
%! % (derived_summary false) the count's scores are NaN
%! spec = sluice.model ('flood');
%! pr = sluice.prior ('H', 'uniform', [0 0.2]);
%! ops = struct ('names', 'count', 'fun', @(t, X, P) 50 + 100 * X(4, :));
%! r = sluice.twin (spec, struct ('times', 0:10), ...
%!                  struct ('variable', 'count', 'every', 5, 'family', 'poisson'), ...
%!                  'prior', pr, 'openloop', false, ...
%!                  'filter', {'members', 50, 'operators', ops});
%! k = numel (spec.states) + numel (spec.params);
%! assert (numel (r.scores.names), k + 1);
%! assert (r.scores.names{end}, 'count');
%! assert (all (isfinite (r.scores.rmse)) && all (isfinite (r.scores.spread)));
%! % scored at every time against the operator on the true states
%! [~, it] = ismember (0:10, r.filter.times);
%! assert (r.scores.rmse(end), ...
%!         sqrt (mean ((r.filter.derived.mean(1, it) - (50 + 100 * r.truth.X(4, :))) .^ 2)), 1e-12);
%! r = sluice.twin (spec, struct ('times', 0:10), ...
%!                  struct ('variable', 'count', 'every', 5, 'family', 'poisson'), ...
%!                  'prior', pr, 'openloop', false, ...
%!                  'filter', {'members', 50, 'operators', ops, 'derived_summary', false});
%! assert (all (isfinite (r.scores.rmse(1:k))));
%! assert (isnan (r.scores.rmse(end)) && isnan (r.scores.spread(end)));
