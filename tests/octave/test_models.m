% The compiled models through the public functions (sluice.model,
% sluice.simulate, sluice.filter), against closed forms, hand-computed
% values and independent vectorised Octave code written here.

%!test
%! % flood model between floods: H and M decay exactly as
%! % H0 exp(-kappaT t) and M0 exp(-muS t) (closed-form solutions of
%! % dH/dt = -kappaT H, dM/dt = -muS M)
%! s = sluice.model ('flood', 'rtol', 1e-10, 'atol', 1e-12);
%! x0 = [0.5; 0.7; 1.2; 0.8; 0; 0];
%! X = sluice.simulate (s, x0, [], 0:2:10);
%! assert (X(3, :), 1.2 * exp (-0.1 * (0:2:10)), 1e-8);
%! assert (X(4, :), 0.8 * exp (-0.215 * (0:2:10)), 1e-8);

%!test
%! % one flood by hand (the damage, levee and memory rules of the model
%! % notes, defaults): G = 2.5, D = 0.8, H = 0.3, W = 1.7 at t = 0.5
%! s = sluice.model ('flood', 'rtol', 1e-12, 'atol', 1e-14, 'dt', 0.5);
%! p = s.defaults;  % xiH alphaH rhoE gammaE lambdaP sigmaP epsT kappaT alphaS muS
%! x0 = [2.5; 0.8; 0.3; 0; 0; 0];
%! % integrate to just the flood time with no flood, then apply by hand
%! Xb = sluice.simulate (s, x0, [], [0 0.5]);
%! xb = Xb(:, end);
%! G = xb(1); D = xb(2); H = xb(3); M = xb(4); W = 1.7;
%! F = 1 - exp (-(W + p(1) * H) / (p(2) * D));
%! Rs = p(7) * (W + p(1) * H - H);
%! cost = p(4) * Rs * sqrt (G);
%! assert (F * G > cost && G - F * G > cost);   % worth it and affordable
%! want = [G - F * G - cost; D; H + Rs; M + p(9) * F; F; Rs];
%! X = sluice.simulate (s, x0, [], [0 0.5], [], 'events', struct ('time', 0.5, 'values', W));
%! assert (X(:, end), want, 1e-10);

%!test
%! % a society that never builds levees (gammaE = Inf) never raises one
%! s = sluice.model ('flood');
%! p = s.defaults; p(4) = Inf;
%! ev = struct ('time', [2.3; 5.1; 9.8], 'values', [1.2; 3.9; 2.2]);
%! X = sluice.simulate (s, [], p, 0:1:12, [], 'events', ev);
%! assert (all (X(3, :) == 0) && all (X(6, :) == 0));
%! assert (all (isfinite (X(:))));
%! assert (all (X(5, 4:end) > 0));          % every flood (from t = 2.3) did damage

%!test
%! % Lorenz-96, n = 40: sluice.simulate against a vectorised RK4 written here
%! s = sluice.model ('lorenz96', 'n', 40);
%! x0 = 8 * ones (40, 1); x0(20) = 8.01;
%! X = sluice.simulate (s, x0, [], [0 0.5 1]);
%! f = @(x) (circshift (x, -1) - circshift (x, 2)) .* circshift (x, 1) - x + 8;
%! x = x0; h = 0.01;
%! for k = 1:100
%!   k1 = f(x); k2 = f(x + h/2*k1); k3 = f(x + h/2*k2); k4 = f(x + h*k3);
%!   x = x + h/6*(k1 + 2*k2 + 2*k3 + k4);
%! end
%! assert (X(:, end), x, 1e-11);

%!test
%! % a particle filter on the flood model runs, with perturbed flood
%! % levels, and keeps G positive
%! s = sluice.model ('flood');
%! ev = struct ('time', [3.2; 7.5; 12.1], 'values', [1.5; 2.5; 0.8]);
%! pr = sluice.prior ('muS', 'lognormal', [log(0.2) 0.5], 'G', 'lognormal', [log(0.01) 0.3]);
%! obs = struct ('time', [10; 15], 'variable', {{'G'; 'H'}}, 'value', [0.3; 1], ...
%!               'sigma', [0.3; 0.3], 'family', {{'lognormal'; 'gaussian'}});
%! r = sluice.filter (s, pr, obs, 'members', 500, 't0', 0, 'seed', 4, 'events', ev, ...
%!                    'event_noise', struct ('kind', 'multiplicative', 'sd', 0.1));
%! assert (all (r.states.mean(1, :) > 0));
%! assert (all (isfinite (r.params.mean(:))));

%!error id=sluice:model:badmodel sluice.model ('flod')
%!error id=sluice:simulate:badevents sluice.simulate (sluice.model ('flood'), [], [], [0 1], [], 'events', struct ('time', [2; 1], 'values', [1; 1]))
%!error id=sluice:simulate:badevents sluice.simulate (sluice.model ('lorenz63'), [], [], [0 1], [], 'events', struct ('time', 1, 'values', 1))
%!error id=sluice:simulate:badparams sluice.simulate (sluice.model ('flood'), [], -ones (10, 1), [0 1])
%!error id=sluice:filter:badprior sluice.filter (sluice.model ('flood'), sluice.prior ('muS', 'normal', [0.2 0.1]), struct ('time', 1, 'variable', {{'G'}}, 'value', 1, 'sigma', 1))

%!test
%! % GR4J reproduces the model authors' reference spreadsheet case: flow
%! % to 1e-9 mm/d on all 730 days, first-day Q = 4.1007378585214731, and
%! % the Nash-Sutcliffe efficiency of days 366-730 = 0.91903003 (model notes
%! % section 2; the data stay outside the project)
%! file = gr4j_reference_file ();
%! if (isempty (file))
%!   printf ('SKIP gr4j reference case: ../shared/reference/gr4j_reference_case.csv not found\n');
%!   return;
%! end
%! d = dlmread (file, ',', 1, 1);   % P, E, Qobs m3/s, Qobs mm/d, Qsim mm/d
%! P = d(:, 1); E = d(:, 2); qobs = d(:, 4); qsim = d(:, 5); T = rows (d);
%! s = sluice.model ('gr4j');
%! X1 = 320.10730922522407; X3 = 69.627618031872942;
%! x0 = zeros (63, 1); x0(1) = 0.6 * X1; x0(2) = 0.7 * X3;
%! forcing = struct ('time', (0:T-1)', 'values', [P E], 'interp', 'previous');
%! X = sluice.simulate (s, x0, [], 0:T, forcing);
%! Q = X(63, 2:end)';
%! assert (Q(1), 4.1007378585214731, 1e-12);
%! assert (max (abs (Q - qsim)) < 1e-9);
%! o = qobs(366:730); q = Q(366:730);
%! nse = 1 - sum ((o - q).^2) / sum ((o - mean (o)).^2);   % textbook NSE
%! assert (nse, 0.91903003, 1e-8);
%!error id=sluice:simulate:forcingrange ...
%! s = sluice.model ('gr4j');
%! sluice.simulate (s, [], [], 0:10, struct ('time', (0:4)', 'values', ones (5, 2)))
%!error id=sluice:simulate:badforcing ...
%! sluice.simulate (sluice.model ('gr4j'), [], [], 0:3, struct ('time', (0:4)', 'values', ones (5, 1)))
