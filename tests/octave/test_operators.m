% Observation operators inside sluice.filter: a linear matrix, an Octave
% function handle h(t, X, P), several variables at different rates.

%!shared spec, pr, obs, T, y, yd, A, Q, H, R
%! % a 2-state linear-Gaussian model: the level x1 is observed every
%! % cycle, the sum x1 + x2 only every fifth cycle (two rates in one run)
%! A = [0.95 0.1; 0 0.9]; Q = diag ([0.05 0.02]); T = 40;
%! spec = sluice.model ('linear', 'A', A, 'Q', Q, 'states', {'a', 'b'});
%! pr = sluice.prior ('a', 'normal', [0 1], 'b', 'normal', [1 0.5]);
%! randn ('state', 4);
%! x = [0; 1]; X = zeros (2, T);
%! for k = 1:T
%!   x = A * x + sqrt (diag (Q)) .* randn (2, 1);
%!   X(:, k) = x;
%! end
%! y = X(1, :) + 0.3 * randn (1, T);
%! yd = X(1, 5:5:T) + X(2, 5:5:T) + 0.2 * randn (1, T / 5);
%! tt = [(1:T)'; (5:5:T)'];
%! [tt, order] = sort (tt);
%! val = [y'; yd']; sig = [0.3 * ones(T, 1); 0.2 * ones(T / 5, 1)];
%! var = [repmat({'a'}, T, 1); repmat({'total'}, T / 5, 1)];
%! obs = struct ('time', tt, 'variable', {var(order)}, 'value', val(order), ...
%!               'sigma', sig(order));
%! H = [1 1];
%! R = [];

%!test
%! % Against the exact Kalman filter (Kalman 1960; kalman_rts.m) with the
%! % same H rows, the sum missing (NaN) at the cycles without it: for a
%! % linear-Gaussian model the ETKF and the particle filter differ from it
%! % only by sampling error.
%! Y = [y; nan(1, T)]; Y(2, 5:5:T) = yd;
%! [~, ~, kf] = kalman_rts (A, Q, [1 0; 1 1], diag ([0.09 0.04]), [0; 1], diag ([1 0.25]), Y);
%! ops = struct ('names', 'total', 'H', [1 1]);
%! r = sluice.filter (spec, pr, obs, 'members', 500, 'seed', 2, 't0', 0, ...
%!                    'method', 'etkf', 'operators', ops, 'progress', false);
%! % the ETKF keeps the sampling error of its initial ensemble (sd 1 /
%! % sqrt(500) = 0.045 in the mean) in its gains; the largest of the 80
%! % errors was 0.028 to 0.058 over seeds 1-8: 0.1
%! assert (max (abs (r.states.mean(:) - kf(:))) < 0.1);
%! % the particle filter with 2e4 members: 0.007 to 0.016 over seeds 1-8
%! r = sluice.filter (spec, pr, obs, 'members', 20000, 'seed', 2, 't0', 0, ...
%!                    'operators', ops, 'progress', false);
%! assert (max (abs (r.states.mean(:) - kf(:))) < 0.03);

%!test
%! % the same operator as a matrix and as a function handle: identical runs
%! for m = {'pf', 'enkf'}
%!   r1 = sluice.filter (spec, pr, obs, 'members', 500, 'seed', 9, 't0', 0, 'method', m{1}, ...
%!                       'operators', struct ('names', 'total', 'H', H), 'progress', false);
%!   r2 = sluice.filter (spec, pr, obs, 'members', 500, 'seed', 9, 't0', 0, 'method', m{1}, ...
%!                       'operators', struct ('names', 'total', 'fun', @(t, X, P) H * X), ...
%!                       'progress', false);
%!   assert (r2.states.mean, r1.states.mean, 1e-12);
%!   assert (r2.ess, r1.ess, 1e-9);
%! end

%!test
%! % an observation table that names a state directly gives the same run
%! % as an operator that picks it out (H = [1 0]); a function handle sees
%! % the cycle time and is called only at the cycles that need it (every
%! % fifth of the 40)
%! o = struct ('time', (1:T)', 'variable', {repmat({'a'}, T, 1)}, 'value', y', ...
%!             'sigma', 0.3 * ones (T, 1));
%! r1 = sluice.filter (spec, pr, o, 'members', 300, 'seed', 1, 't0', 0, 'progress', false);
%! o.variable = repmat ({'lev'}, T, 1);
%! r2 = sluice.filter (spec, pr, o, 'members', 300, 'seed', 1, 't0', 0, 'progress', false, ...
%!                     'operators', struct ('names', 'lev', 'H', [1 0]));
%! assert (r2.states.mean, r1.states.mean, 1e-14);
%! assert (r2.log_evidence, r1.log_evidence, 1e-10);
%! % (it fails if called at any time but 5, 10, ...; the summary of the
%! % derived quantities, which calls it every cycle, is turned off)
%! f = @(t, X, P) sum (X, 1) + only_at_fifth (t);
%! r3 = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, 'progress', false, ...
%!                     'operators', struct ('names', 'total', 'fun', f), 'derived_summary', false);
%! assert (numel (r3.times), T);
%! assert (~isfield (r3, 'derived'));
%! % with the summary (the default) it is called every cycle too
%! msg = '';
%! try
%!   sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, 'progress', false, ...
%!                  'operators', struct ('names', 'total', 'fun', f));
%! catch e
%!   msg = e.message;
%! end
%! assert (! isempty (strfind (msg, 'called at t = 1')));
%! function z = only_at_fifth (t)
%!   if (mod (t, 5) ~= 0)
%!     error ('called at t = %g', t);
%!   end
%!   z = 0;
%! end

%!test
%! % operators on parameters: a k x (n + p) H and a handle reading P give
%! % the run that observes the parameter by name (Lorenz-63, rho)
%! s = sluice.model ('lorenz63');
%! p = sluice.prior ('rho', 'uniform', [20 36]);
%! o = struct ('time', [0.1; 0.2], 'variable', {{'rho'; 'rho'}}, 'value', [28; 28.5], ...
%!             'sigma', [1; 1]);
%! r1 = sluice.filter (s, p, o, 'members', 200, 'seed', 3, 'progress', false);
%! o.variable = {'r'; 'r'};
%! r2 = sluice.filter (s, p, o, 'members', 200, 'seed', 3, 'progress', false, ...
%!                     'operators', struct ('names', 'r', 'H', [0 0 0 0 1 0]));
%! r3 = sluice.filter (s, p, o, 'members', 200, 'seed', 3, 'progress', false, ...
%!                     'operators', {struct('names', 'r', 'fun', @(t, X, P) P(2, :))});
%! assert (r2.params.mean, r1.params.mean, 1e-12);
%! assert (r3.params.mean, r1.params.mean, 1e-12);

%!test
%! % several quantities from one handle, rows in the order of its names
%! ops = struct ('names', {{'total', 'diff'}}, 'fun', @(t, X, P) [X(1,:) + X(2,:); X(1,:) - X(2,:)]);
%! o = obs;
%! o.variable(strcmp (o.variable, 'total')) = {'diff'};
%! r1 = sluice.filter (spec, pr, o, 'members', 300, 'seed', 5, 't0', 0, 'progress', false, ...
%!                     'operators', ops);
%! r2 = sluice.filter (spec, pr, o, 'members', 300, 'seed', 5, 't0', 0, 'progress', false, ...
%!                     'operators', struct ('names', 'diff', 'H', [1 -1]));
%! assert (r1.states.mean, r2.states.mean, 1e-12);

%!error <observation operator 1 .* failed at t = 5: boom> sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'progress', false, 'operators', struct ('names', 'total', 'fun', @(t, X, P) error ('boom')), 'derived_summary', false)
%!error <observation operator 1 .* failed at t = 1: boom> sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'progress', false, 'operators', struct ('names', 'total', 'fun', @(t, X, P) error ('boom')))
%!error id=user:oops sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'progress', false, 'operators', struct ('names', 'total', 'fun', @(t, X, P) error ('user:oops', 'no')))
%!error id=sluice:filter:badoperatoroutput sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'progress', false, 'operators', struct ('names', 'total', 'fun', @(t, X, P) X))
%!error id=sluice:filter:badoperatoroutput sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'progress', false, 'operators', struct ('names', 'total', 'fun', @(t, X, P) single (sum (X))))
%!error id=sluice:filter:badoperatoroutput sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'progress', false, 'operators', struct ('names', 'total', 'fun', @(t, X, P) {1}))
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', 3)
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', struct ('H', [1 1]))
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', struct ('names', 'total'))
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', struct ('names', 'total', 'H', [1 1], 'fun', @(t, X, P) X))
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', struct ('names', 'total', 'H', [1 1 1]))
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', struct ('names', 'total', 'H', [1 NaN]))
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', struct ('names', 'total', 'H', single ([1 1])))
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', struct ('names', {{'total', 'x'}}, 'H', [1 1]))
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', struct ('names', 'total', 'fun', 'sum'))
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', struct ('names', 'a', 'H', [1 1]))
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', {struct('names', 'total', 'H', [1 1]), struct('names', 'total', 'H', [1 0])})
%!error id=sluice:filter:badoperator sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'operators', struct ('names', '1x', 'H', [1 1]))
%!error <unknown variable 'total'> sluice.filter (spec, pr, obs, 'members', 20, 't0', 0)
%!error <no position> sluice.filter (spec, pr, obs, 'members', 20, 't0', 0, 'method', 'letkf', 'operators', struct ('names', 'total', 'H', [1 1]), 'localization', struct ('radius', 2))

%!test
%! % res.derived: the summary of an observed derived quantity every cycle.
%! % For the linear total x1 + x2 the exact Kalman filter (Kalman 1960)
%! % gives its filtered distribution N(H m_k, H P_k H'); the particle
%! % filter with 2e4 members matches it up to sampling error.
%! m = [0; 1]; P = diag ([1 0.25]); dm = zeros (1, T); ds = dm;
%! for k = 1:T
%!   m = A * m; P = A * P * A' + Q;
%!   Hk = [1 0]; yk = y(k); Rk = 0.09;
%!   if (mod (k, 5) == 0)
%!     Hk = [1 0; 1 1]; yk = [y(k); yd(k / 5)]; Rk = diag ([0.09 0.04]);
%!   end
%!   K = P * Hk' / (Hk * P * Hk' + Rk);
%!   m = m + K * (yk - Hk * m); P = (eye (2) - K * Hk) * P;
%!   dm(k) = H * m; ds(k) = sqrt (H * P * H');
%! end
%! z = sqrt (2) * erfinv (2 * [0.05; 0.5; 0.95] - 1);   % standard normal quantiles
%! ops = struct ('names', 'total', 'H', [1 1]);
%! r = sluice.filter (spec, pr, obs, 'members', 20000, 'seed', 2, 't0', 0, ...
%!                    'operators', ops, 'progress', false);
%! assert (r.derived.names, {'total'});
%! assert (size (r.derived.mean), [1 T]);
%! assert (size (r.derived.quantiles), [1 3 T]);
%! % the mean of the total equals the sum of the two states' means (the
%! % same weights, the same members): to rounding
%! assert (r.derived.mean, sum (r.states.mean, 1), 1e-12);
%! % against the Kalman filter: means within 0.03 (seeds 1-8 gave at most
%! % 0.013 on the states), quantiles within 0.05 + 0.1 sd
%! assert (max (abs (r.derived.mean - dm)) < 0.03);
%! Q3 = reshape (r.derived.quantiles, 3, T);
%! assert (all (abs (Q3 - (dm + z * ds))(:) < 0.05 + 0.1 * repmat (ds, 3, 1)(:)));

%!test
%! % a nonlinear derived quantity: the summary is the weighted mean and the
%! % weighted quantiles (the smallest value whose cumulative weight reaches
%! % the level, the inverse of the weighted distribution function; common
%! % practice) of the function's values over the members, computed here
%! % from the kept ensemble history; linear rows come first in names
%! f = @(t, X, P) [exp(X(1, :)); X(2, :) .^ 2 + t];
%! ops = {struct('names', {{'ea', 'b2'}}, 'fun', f), struct('names', 'total', 'H', H)};
%! for meth = {'pf', 'enkf'}
%!   r = sluice.filter (spec, pr, obs, 'members', 300, 'seed', 5, 't0', 0, 'method', meth{1}, ...
%!                      'operators', ops, 'history', true, 'progress', false);
%!   assert (r.derived.names, {'total', 'ea', 'b2'});
%!   for k = [1 5 17 T]
%!     Xk = r.history.X(:, :, k); wk = r.history.w(:, k)';
%!     if (strcmp (meth{1}, 'enkf'))
%!       wk = ones (1, 300) / 300;
%!     end
%!     Y = [H * Xk; f(r.times(k), Xk, [])];
%!     assert (r.derived.mean(:, k), Y * wk', 1e-10);
%!     for i = 1:3
%!       [v, o] = sort (Y(i, :)); c = cumsum (wk(o));
%!       for l = 1:3
%!         lv = r.quantile_levels(l);
%!         assert (r.derived.quantiles(i, l, k), v(find (c >= lv * c(end) - 1e-12, 1)));
%!       end
%!     end
%!   end
%! end

%!function Y = counted_total (X, cnt)
%!  % an operator function that counts its calls in cnt (a handle object)
%!  cnt('n') = cnt('n') + 1;
%!  Y = X(1, :) + X(2, :) + 0.1 * X(2, :) .^ 2;
%!endfunction

%!test
%! % an observed derived quantity of a function: the particle filter's
%! % summary reuses the values its weighting computed, so the function is
%! % called once a cycle (here 8 cycles observe it, 32 only need it for
%! % the summary: 40 calls, not 48); with tempering, which resamples the
%! % members after the weighting, the summary calls it again. Either way
%! % the summary is the weighted mean of the function's values over the
%! % members the cycle ends with (an identity; common practice), checked
%! % here against the kept ensemble history.
%! for temper = [0 0.9]
%!   cnt = containers.Map ();
%!   cnt('n') = 0;
%!   ops = struct ('names', 'total', 'fun', @(t, X, P) counted_total (X, cnt));
%!   r = sluice.filter (spec, pr, obs, 'members', 300, 'seed', 5, 't0', 0, ...
%!                      'operators', ops, 'history', true, 'temper_ess', temper, ...
%!                      'progress', false);
%!   % with tempering, once more at each of the 8 cycles that observe it
%!   assert (cnt('n'), T + 8 * (temper > 0));
%!   for k = [1 4 5 10 T]
%!     Xk = r.history.X(:, :, k); wk = r.history.w(:, k)';
%!     Y = Xk(1, :) + Xk(2, :) + 0.1 * Xk(2, :) .^ 2;
%!     assert (r.derived.mean(k), Y * wk', 1e-10);
%!   end
%! end

%!test
%! % a derived quantity that is NaN for a member of positive weight has
%! % no summary that cycle (NaN), and the run goes on
%! ob = obs; keep = ~strcmp (ob.variable, 'total');
%! ob = struct ('time', ob.time(keep), 'variable', {ob.variable(keep)}, ...
%!              'value', ob.value(keep), 'sigma', ob.sigma(keep));
%! ops = struct ('names', 'total', 'fun', @(t, X, P) (X(1, :) + X(2, :)) + 0 ./ (t ~= 3));
%! r = sluice.filter (spec, pr, ob, 'members', 200, 'seed', 5, 't0', 0, ...
%!                    'operators', ops, 'progress', false);
%! assert (isnan (r.derived.mean(3)) && all (isnan (r.derived.quantiles(1, :, 3))));
%! assert (all (isfinite (r.derived.mean([1:2, 4:T]))));

%!test
%! % no operators: no derived summary
%! ob = obs; keep = ~strcmp (ob.variable, 'total');
%! ob = struct ('time', ob.time(keep), 'variable', {ob.variable(keep)}, ...
%!              'value', ob.value(keep), 'sigma', ob.sigma(keep));
%! r = sluice.filter (spec, pr, ob, 'members', 100, 'seed', 5, 't0', 0, 'progress', false);
%! assert (~isfield (r, 'derived'));

%!error <derived_summary must be true or false> sluice.filter (spec, pr, obs, 'members', 100, 'derived_summary', 'yes')
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'members', 100, 'derived_summary', NaN)

%!test
%! % sluice.scores with observations of a derived quantity: its innovations
%! % and skill come from the run's summary of it (they were refused as an
%! % unknown variable). NSE = 1 - sum (m - y)^2 / sum (y - mean y)^2 (Nash
%! % & Sutcliffe 1970), computed here from res.derived.
%! r = sluice.filter (spec, pr, obs, 'members', 500, 'seed', 4, 't0', 0, 'progress', false, ...
%!                    'operators', struct ('names', 'total', 'H', H));
%! truth = struct ('times', r.times, 'X', zeros (2, T));
%! s = sluice.scores (r, truth, obs);
%! assert (s.skill.variables, {'a', 'total'});
%! sel = strcmp (obs.variable, 'total');
%! [~, it] = ismember (obs.time(sel), r.times);
%! m = r.derived.mean(1, it)'; yv = obs.value(sel);
%! assert (s.skill.nse(2), 1 - sum ((m - yv) .^ 2) / sum ((yv - mean (yv)) .^ 2), 1e-12);
%! assert (s.skill.count(2), T / 5);
%! % no forecast mean is recorded for derived quantities
%! assert (isnan (s.skill.nse_forecast(2)));
