% Particle filter: models written as Octave functions, forcing
% perturbation, parameter evolution, reporting of numerical trouble, and
% the errors a user can cause.

%!shared lin_obs
%! lin_obs = struct ('time', (1:5)', 'variable', {repmat({'x'}, 5, 1)}, ...
%!                   'value', [0.3; 0.1; -0.4; 0.2; 0.5], 'sigma', 0.7 * ones (5, 1));

%!test
%! % an Octave step map and the built-in linear model agree (no model noise,
%! % same forcing): x_k = 0.8 x_{k-1} + 0.5 u_k
%! f = @(t, X, P, U, dt) 0.8 * X + 0.5 * U;
%! spec_h = sluice.model (f, 'states', {'x'}, 'forcings', {'u'});
%! spec_l = sluice.model ('linear', 'A', 0.8, 'B', 0.5, 'states', {'x'}, 'forcings', {'u'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! forcing = struct ('time', (0:5)', 'values', cos (0:5)');
%! o = {'members', 2000, 'seed', 9, 't0', 0, 'forcing', forcing};
%! rh = sluice.filter (spec_h, pr, lin_obs, o{:});
%! rl = sluice.filter (spec_l, pr, lin_obs, o{:});
%! assert (rh.states.mean, rl.states.mean, 1e-12);
%! assert (rh.log_evidence, rl.log_evidence, 1e-10);
%! assert (rh.model_steps, 5);

%!test
%! % a static parameter and no parameter evolution: the filter is importance
%! % sampling of the prior, and for y_t = k t + e, e ~ N(0, s^2), k ~ N(m0, s0^2)
%! % the posterior is the conjugate normal one (textbook Bayes for a normal
%! % mean): precision 1/s0^2 + sum t^2/s^2, mean (m0/s0^2 + sum t y/s^2)/precision
%! f = @(t, X, P, U, dt) X + dt * P;
%! spec = sluice.model (f, 'states', {'x'}, 'params', {'k'});
%! pr = sluice.prior ('k', 'normal', [1 0.5]);
%! t = (1:4)'; y = [1.7; 3.1; 4.4; 6.2]; s = 1.2;
%! obs = struct ('time', t, 'variable', {repmat({'x'}, 4, 1)}, 'value', y, 'sigma', s * ones (4, 1));
%! r = sluice.filter (spec, pr, obs, 'members', 1e5, 'seed', 1, 't0', 0, 'resample_threshold', 0);
%! prec = 1 / 0.25 + sum (t.^2) / s^2;
%! mpost = (1 / 0.25 + sum (t .* y) / s^2) / prec;
%! w = r.final.w;
%! kbar = sum (w .* r.final.P);
%! kvar = sum (w .* (r.final.P - kbar).^2);
%! assert (kbar, mpost, 5 * sqrt (1 / prec / min (r.ess)));
%! assert (kvar, 1 / prec, 0.1 / prec);
%! assert (r.params.mean(end), kbar, 1e-12);

%!test
%! % multiplicative forcing noise keeps the mean (log-normal factor
%! % exp(e - sd^2/2), E = 1) and its AR(1) coefficient shows in the
%! % members' lag-1 correlation (common practice for AR(1) series)
%! f = @(t, X, P, U, dt) U;
%! spec = sluice.model (f, 'states', {'x'}, 'forcings', {'rain'});
%! forcing = struct ('time', (0:40)', 'values', 5 * ones (41, 1));
%! noise = struct ('kind', 'multiplicative', 'sd', 0.4, 'ar1', 0.6);
%! r = sluice.filter (spec, [], struct ('time', zeros (0, 1), 'variable', {{}}, 'value', [], 'sigma', []), ...
%!                    'members', 20000, 'seed', 2, 't0', 0, 'times', 1:40, ...
%!                    'forcing', forcing, 'forcing_noise', noise, 'history', true);
%! X = squeeze (r.history.X)';   % 40 x N
%! assert (mean (X(:)), 5, 0.05);
%! e = log (X / 5);
%! assert (std (e(:)), 0.4, 0.01);
%! c = corr (e(1:end-1, :)(:), e(2:end, :)(:));
%! assert (c, 0.6, 0.02);

%!test
%! % additive white forcing noise: variance sd^2
%! f = @(t, X, P, U, dt) U;
%! spec = sluice.model (f, 'states', {'x'}, 'forcings', {'u'});
%! forcing = struct ('time', [0; 10], 'values', [0; 10]);
%! noise = struct ('kind', 'additive', 'sd', 0.5, 'ar1', 0);
%! r = sluice.filter (spec, [], struct ('time', [], 'variable', {{}}, 'value', [], 'sigma', []), ...
%!                    'members', 20000, 'seed', 4, 't0', 0, 'times', 1:10, ...
%!                    'forcing', forcing, 'forcing_noise', noise, 'history', true);
%! X = squeeze (r.history.X)';
%! % the step from t uses the forcing at t (linear interpolation: u(t) = t)
%! assert (mean (X, 2)', 0:9, 0.03);
%! assert (std (X, 0, 2)', 0.5 * ones (1, 10), 0.02);

%!test
%! % Liu-West kernel shrinkage keeps the weighted mean and covariance of
%! % the parameters when no data arrive (Liu & West 2001)
%! f = @(t, X, P, U, dt) X;
%! spec = sluice.model (f, 'states', {'x'}, 'params', {'a', 'b'});
%! pr = sluice.prior ('a', 'normal', [2 0.5], 'b', 'lognormal', [0 0.3]);
%! r = sluice.filter (spec, pr, struct ('time', [], 'variable', {{}}, 'value', [], 'sigma', []), ...
%!                    'members', 40000, 'seed', 8, 't0', 0, 'times', 1:20, ...
%!                    'param_move', 'liu_west', 'liu_west_delta', 0.95, 'history', true);
%! P1 = r.history.P(:, :, 1); P20 = r.history.P(:, :, 20);
%! assert (mean (P20, 2), mean (P1, 2), 0.02);
%! assert (std (P20(1, :)), std (P1(1, :)), 0.02);
%! assert (std (log (P20(2, :))), std (log (P1(2, :))), 0.01);
%! assert (all (P20(2, :) > 0));

%!test
%! % a random walk in the log space of a positive parameter keeps it positive
%! f = @(t, X, P, U, dt) X;
%! spec = sluice.model (f, 'states', {'x'}, 'params', {'k'});
%! pr = sluice.prior ('k', 'lognormal', [0 0.1]);
%! r = sluice.filter (spec, pr, struct ('time', [], 'variable', {{}}, 'value', [], 'sigma', []), ...
%!                    'members', 5000, 'seed', 8, 't0', 0, 'times', 1:25, ...
%!                    'param_move', 'random_walk', 'param_step', 0.2, 'history', true);
%! L = log (squeeze (r.history.P));
%! % variance grows by step^2 per cycle after the first: 0.01 + 24 * 0.04
%! assert (var (L(:, end)), 0.01 + 24 * 0.04, 0.08);
%! assert (all (r.final.P > 0));

%!test
%! % observing a parameter directly
%! f = @(t, X, P, U, dt) X;
%! spec = sluice.model (f, 'states', {'x'}, 'params', {'k'});
%! pr = sluice.prior ('k', 'normal', [0 1]);
%! obs = struct ('time', 1, 'variable', {{'k'}}, 'value', 1, 'sigma', 1);
%! r = sluice.filter (spec, pr, obs, 'members', 1e5, 'seed', 2, 't0', 0);
%! assert (r.params.mean, 0.5, 0.02);

%!test
%! % every member impossible under the data: reported, never a silent NaN
%! spec = sluice.model ('linear', 'A', 1, 'states', {'x'}, 'x0', -5);
%! obs = struct ('time', [1; 2], 'variable', {{'x'; 'x'}}, 'value', [3; 3], ...
%!               'sigma', [0.1; 0.1], 'family', {{'lognormal'; 'lognormal'}});
%! warning ('off', 'sluice:filter:degenerate', 'local');
%! r = sluice.filter (spec, [], obs, 'members', 100, 'seed', 1, 't0', 0);
%! assert (r.degenerate, [true true]);
%! assert (r.log_evidence, -Inf);
%! assert (r.states.mean, [-5 -5]);
%! assert (all (isfinite (r.final.w)));
%! assert (r.ess, [0 0]);

%!test
%! % the ESS of a cycle where no member explains the data is 0, not that
%! % of the weights kept to go on with; the cycles around it are healthy
%! spec = sluice.model ('linear', 'A', 1, 'Q', 0, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [-3 0.3]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, 'value', [-3; 3; -3], ...
%!               'sigma', [1; 0.1; 1], 'family', {{'gaussian'; 'lognormal'; 'gaussian'}});
%! warning ('off', 'sluice:filter:degenerate', 'local');
%! warning ('off', 'sluice:filter:lowess', 'local');
%! r = sluice.filter (spec, pr, obs, 'members', 200, 'seed', 1, 't0', 0);
%! assert (r.degenerate, [false true false]);
%! assert (r.ess(2), 0);
%! assert (r.ess([1 3]) > 100);
%!warning <no member could explain> ...
%! spec = sluice.model ('linear', 'A', 1, 'states', {'x'}, 'x0', -5);
%! obs = struct ('time', 1, 'variable', {{'x'}}, 'value', 3, 'sigma', 0.1, 'family', {{'lognormal'}});
%! sluice.filter (spec, [], obs, 'members', 10, 'seed', 1, 't0', 0);

%!test
%! % members that blow up are counted and given zero weight
%! f = @(t, X, P, U, dt) [X(:, 1:7) * NaN, X(:, 8:end) + 1];
%! spec = sluice.model (f, 'states', {'x'});
%! warning ('off', 'sluice:filter:nonfinite', 'local');
%! r = sluice.filter (spec, [], lin_obs, 'members', 50, 'seed', 1, 't0', 0, 'resample_threshold', 0);
%! assert (r.nonfinite, 7 * ones (1, 5));
%! assert (all (r.final.w(1:7) == 0));
%! assert (all (isfinite (r.states.mean)));
%! assert (r.states.mean, 1:5, 1e-12);

%!error id=my:own:failure ...
%! f = @(t, X, P, U, dt) error ('my:own:failure', 'the reservoir is empty');
%! sluice.filter (sluice.model (f, 'states', {'x'}), [], struct ('time', 1, 'variable', {{'x'}}, 'value', 1, 'sigma', 1), 'members', 5, 't0', 0);
%!error <the reservoir is empty> ...
%! f = @(t, X, P, U, dt) error ('my:own:failure', 'the reservoir is empty');
%! sluice.filter (sluice.model (f, 'states', {'x'}), [], struct ('time', 1, 'variable', {{'x'}}, 'value', 1, 'sigma', 1), 'members', 5, 't0', 0);
%!error id=sluice:filter:badmodeloutput ...
%! f = @(t, X, P, U, dt) [X; X];
%! sluice.filter (sluice.model (f, 'states', {'x'}), [], struct ('time', 1, 'variable', {{'x'}}, 'value', 1, 'sigma', 1), 'members', 5, 't0', 0);
%!error id=sluice:filter:badmodeloutput ...
%! f = @(t, X, P, U, dt) single (X);
%! sluice.filter (sluice.model (f, 'states', {'x'}), [], struct ('time', 1, 'variable', {{'x'}}, 'value', 1, 'sigma', 1), 'members', 5, 't0', 0);

%!shared spec, pr, obs
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2], 'variable', {{'x'; 'x'}}, 'value', [1; 2], 'sigma', [1; 1]);
%!error id=sluice:filter:badmodel sluice.filter (3, pr, obs)
%!error id=sluice:filter:badprior sluice.filter (spec, sluice.prior ('y', 'normal', [0 1]), obs)
%!error id=sluice:filter:badprior sluice.filter (spec, 7, obs)
%!error id=sluice:filter:badobs sluice.filter (spec, pr, 5)
%!error id=sluice:filter:badobs sluice.filter (spec, pr, rmfield (obs, 'sigma'))
%!error <row 2: unknown variable 'y'> sluice.filter (spec, pr, setfield (obs, 'variable', {'x'; 'y'}))
%!error <row 2: time 0.5 comes before> sluice.filter (spec, pr, setfield (obs, 'time', [1; 0.5]))
%!error <row 1: time -1 lies before the start> sluice.filter (spec, pr, setfield (obs, 'time', [-1; 2]))
%!error <row 2: sigma must be finite and at least [^ ]* \(the smallest normal double\)> sluice.filter (spec, pr, setfield (obs, 'sigma', [1; 0]))
%!error <row 1: sigma must be finite and at least [^ ]* \(the smallest normal double\)> sluice.filter (spec, pr, setfield (obs, 'sigma', [NaN; 1]))
%!error <row 2: value is infinite> sluice.filter (spec, pr, setfield (obs, 'value', [1; Inf]))
%!error id=sluice:filter:badobs sluice.filter (spec, pr, setfield (obs, 'value', single ([1; 2])))
%!error id=sluice:filter:badobs sluice.filter (spec, pr, setfield (obs, 'value', [1; 2; 3]))
%!error id=sluice:filter:badobs sluice.filter (spec, pr, setfield (obs, 'variable', [1; 2]))
%!error id=sluice:filter:badfamily sluice.filter (spec, pr, setfield (obs, 'family', {'gaussian'; 'cauchy'}))
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'bogus', 1)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'members')
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'members', 0)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'members', 2.5)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'members', single (10))
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'seed', -1)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'quantiles', [0.5 1.5])
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'resample_threshold', 2)
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'param_move', 'jump')
%!error id=sluice:filter:badoption sluice.filter (spec, pr, obs, 'progress', 'sometimes')
%!error id=sluice:filter:badscheme sluice.filter (spec, pr, obs, 'resample', 'lottery')
%!error id=sluice:filter:badmethod sluice.filter (spec, pr, obs, 'method', 'magic')
%!error id=sluice:filter:badforcing sluice.filter (spec, pr, obs, 'forcing', struct ('time', 0, 'values', 1))
%!error id=sluice:filter:nomemory sluice.filter (sluice.model (@(t, X, P, U, dt) X, 'n', 5000), [], obs, 'members', 2^31)
%!error id=sluice:filter:badtimes sluice.filter (spec, pr, obs, 'times', -3)
%!error id=sluice:filter:offgrid sluice.filter (spec, pr, setfield (obs, 'time', [1; 2.5]), 't0', 0)
%!error id=sluice:filter:forcingrange ...
%! s2 = sluice.model ('linear', 'A', 1, 'B', 1, 'states', {'x'}, 'forcings', {'u'});
%! sluice.filter (s2, pr, obs, 't0', 0, 'forcing', struct ('time', [0.5; 3], 'values', [1; 1]))
%!error id=sluice:filter:forcingrange ...
%! s2 = sluice.model ('linear', 'A', 1, 'B', 1, 'states', {'x'}, 'forcings', {'u'});
%! sluice.filter (s2, pr, obs, 't0', 0, 'forcing', struct ('time', [0; 0.5], 'values', [1; 1]))

%!function X = slow_step (t, X, P, U, dt)
%!  pause (0.025);
%!endfunction
%!test
%! % the progress line of a long run (over 2 s) when asked for
%! spec = sluice.model (@slow_step, 'states', {'x'});
%! obs = struct ('time', 120, 'variable', {{'x'}}, 'value', 0, 'sigma', 1);
%! txt = evalc ('sluice.filter (spec, [], obs, ''members'', 10, ''t0'', 0, ''progress'', true);');
%! assert (~isempty (strfind (txt, '% done')));
%! assert (~isempty (strfind (txt, 'sluice: done in')));
%! % and none by default when the output is not a terminal
%! txt = evalc ('sluice.filter (spec, [], setfield (obs, ''time'', 3), ''members'', 10, ''t0'', 0);');
%! assert (isempty (strfind (txt, '% done')));
%!test
%! % the progress helper itself prints nothing unless asked
%! assert (evalc ('sluice.internal.progress (0.5, 3, 0)'), '');
%! assert (~isempty (strfind (evalc ('sluice.internal.progress (0.5, 3, 1)'), ' 50% done')));

%!test
%! % ranges (1:5) are arrays like any other for every gateway
%! assert (sluice.kernel.resample (1:5, 'systematic', 5, 1, 0), [2 3 4 5 5]);
%! f = @(t, X, P, U, dt) 1:columns (X);
%! spec = sluice.model (f, 'n', 1);
%! r = sluice.filter (spec, [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), ...
%!                    'members', 5, 'quantiles', 0.1:0.4:0.9, 'times', 1:1);
%! assert (squeeze (r.states.quantiles), [1 1 2]);
