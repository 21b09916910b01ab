% Composed models (sluice.compose) through the public functions: the
% components run alone are the reference (sluice.simulate,
% sluice.propagate), the links' per-period maxima and rating curve are
% computed here with Octave's own max and power, GR4J's reference case
% is rerun inside a composition, and the built-in river_town is compared
% where the two agree by construction. Forcing is invented: three years of
% gamma-like rain and a seasonal evapotranspiration of a fictional
% catchment.

%!shared g, fl, forcing, T, L, m0, m
%! g = sluice.model ('gr4j');
%! fl = sluice.model ('flood', 'dt', 1);       % the town steps by a year
%! T = 3 * 365;
%! rand ('seed', 11);
%! P = -8 * log (rand (T, 1)) .* (rand (T, 1) < 0.45);   % rain on 45% of days
%! E = 2 + 1.5 * sin (2 * pi * (0:T-1)' / 365);
%! forcing = struct ('time', (0:T-1)', 'values', [P E], 'interp', 'previous');
%! L = struct ('from', 'river.Q', 'to', 'town.W', 'reduce', 'max', 'every', 365, ...
%!             'rating', [0.4, 0.6, 5]);
%! m0 = sluice.compose ('river', g, 'town', fl, 'time_scale', struct ('town', 365));
%! m = sluice.compose ('river', g, 'town', fl, 'link', L, 'time_scale', struct ('town', 365));

%!test
%! % the spec: qualified names, the components' defaults and bounds, then
%! % the link's bookkeeping and rating parameters
%! assert (numel (m.states), 63 + 6 + 3);
%! assert (m.states(1:2), {'river_S', 'river_R'});
%! assert (m.states(64:72), {'town_G', 'town_D', 'town_H', 'town_M', 'town_F', 'town_R', ...
%!                           'link1_acc', 'link1_count', 'link1_value'});
%! assert (m.params(end-2:end), {'link1_a', 'link1_b', 'link1_x0'});
%! assert (m.defaults, [g.defaults; fl.defaults; 0.4; 0.6; 5]);
%! assert (m.lower(end-2:end), [0; 0; -Inf]);
%! assert (m.x0, [g.x0; fl.x0; 0; 0; 0]);
%! assert (m.internal, [g.internal; false(6, 1); false; true; false]);
%! assert (m.forcings, {'P', 'E'});
%! assert (m.events, cell (1, 0));
%! assert (m.dt, 1);
%! assert (m.components, {'river', 'town'});
%! assert (m.state_component, [ones(63, 1); 2 * ones(6, 1); 1; 1; 1]);
%! assert (m.param_component, [ones(4, 1); 2 * ones(10, 1); 1; 1; 1]);

%!test
%! % no links: each component equals its run alone, bit for bit; the town
%! % (a year's step, scale 365) at its own step ends, with the same
%! % integrator (Dormand-Prince, adaptive) over the same yearly intervals
%! X = sluice.simulate (m0, [], [], 0:T, forcing);
%! Xg = sluice.simulate (g, [], [], 0:T, forcing);
%! Xf = sluice.simulate (fl, [], [], 0:3);
%! assert (isequal (X(1:63, :), Xg));
%! assert (isequal (X(64:69, 1:365:end), Xf));
%! % between its step ends the town keeps its latest state
%! assert (isequal (X(64:69, 2:365), repmat (Xf(:, 1), 1, 364)));
%! % an ensemble through sluice.propagate: the same
%! X0 = repmat (m0.x0, 1, 4); X0(1, :) = [100 150 200 250]; X0(65, :) = [0.5 0.8 1 1.2];
%! Y = sluice.propagate (m0, X0, m0.defaults, 0, 730, forcing);
%! Yg = sluice.propagate (g, X0(1:63, :), g.defaults, 0, 730, forcing);
%! Yf = sluice.propagate (fl, X0(64:69, :), fl.defaults, 0, 2);
%! assert (isequal (Y(1:63, :), Yg));
%! assert (isequal (Y(64:69, :), Yf));

%!test
%! % the GR4J -> flood link: the river equals GR4J alone; each year's
%! % largest daily flow (Octave's max) read through the power-law rating
%! % h = a (Q - Q0)^b ("common practice" for stage-discharge curves) is a
%! % flood of the town at the end of that year; the town equals the flood
%! % model alone given those floods as events, bit for bit
%! X = sluice.simulate (m, [], [], 0:T, forcing);
%! Xg = sluice.simulate (g, [], [], 0:T, forcing);
%! assert (isequal (X(1:63, :), Xg));
%! Q = reshape (Xg(63, 2:end), 365, 3);
%! qmax = max (Q);
%! assert (all (qmax > 5));
%! W = 0.4 * (qmax - 5) .^ 0.6;
%! assert (X(72, [366 731 1096]), W, 1e-14 * max (W));   % link1_value
%! ev = struct ('time', [1; 2; 3], 'values', X(72, [366 731 1096])');
%! Xf = sluice.simulate (fl, [], [], 0:3, [], 'events', ev);
%! assert (isequal (X(64:69, 1:365:end), Xf));
%! assert (Xf(5, 2) > 0);   % the first year's flood did damage
%! % the running maximum within a year (Octave's cummax), reset at its end
%! cm = cummax (Q(:, 1))';
%! assert (X(70, 2:365), cm(1:364));
%! assert (X(71, 2:366), [1:364, 0]);
%! % a rating threshold above every flow: no floods at all
%! p = m.defaults; p(end) = 1e4;
%! X2 = sluice.simulate (m, [], p, 0:T, forcing);
%! assert (isequal (X2(64:69, 1:365:end), sluice.simulate (fl, [], [], 0:3)));
%! assert (all (X2(72, :) == 0));

%!test
%! % GR4J's reference case (the model authors' reference spreadsheet,
%! % flow to 1e-9 mm/d on all 730 days, first-day Q = 4.1007378585214731;
%! % the same check as test_models) holds for the river of a composition
%! file = gr4j_reference_file ();
%! if (isempty (file))
%!   printf ('SKIP gr4j reference case: ../shared/reference/gr4j_reference_case.csv not found\n');
%!   return;
%! end
%! d = dlmread (file, ',', 1, 1);   % P, E, Qobs m3/s, Qobs mm/d, Qsim mm/d
%! Pr = d(:, 1); Er = d(:, 2); qsim = d(:, 5); Tr = rows (d);
%! X1 = 320.10730922522407; X3 = 69.627618031872942;
%! x0 = m.x0; x0(1) = 0.6 * X1; x0(2) = 0.7 * X3;
%! fr = struct ('time', (0:Tr-1)', 'values', [Pr Er], 'interp', 'previous');
%! X = sluice.simulate (m, x0, [], 0:Tr, fr);
%! Qr = X(63, 2:end)';
%! assert (Qr(1), 4.1007378585214731, 1e-12);
%! assert (max (abs (Qr - qsim)) < 1e-9);

%!test
%! % against river_town: the same river, the same yearly maxima and
%! % rating, the same flood times; river_town integrates the town daily
%! % with its rates per day (divided by 365), the composition yearly on
%! % the town's own clock, so the towns agree to the adaptive integrator's
%! % tolerances (rtol 1e-6) only; measured here: below 1e-5 relative
%! rt = sluice.model ('river_town');
%! Xr = sluice.simulate (rt, [], [], 0:T, forcing);
%! X = sluice.simulate (m, [], [], 0:T, forcing);
%! assert (isequal (X(1:63, :), Xr(1:63, :)));
%! assert (X(72, [366 731 1096]), Xr(71, [366 731 1096]), 1e-14);
%! k = 1:365:T+1;
%! a = X(64:67, k); b = Xr(64:67, k);
%! assert (max (abs (a(:) - b(:)) ./ max (abs (b(:)), 1e-3)) < 1e-5);

%!test
%! % a filter on the composed model, strong and weak coupling: finite
%! % results; weak coupling reads the components of the spec
%! X = sluice.simulate (m, [], [], 0:730, forcing);
%! t = (5:5:730)';
%! qo = X(63, t + 1)';
%! obs = struct ('time', [t; 730], 'variable', {[repmat({'river_Q'}, numel (t), 1); {'town_G'}]}, ...
%!               'value', [qo; X(64, 731)], 'sigma', [0.1 * qo + 0.05; 0.3], ...
%!               'family', {[repmat({'gaussian'}, numel (t), 1); {'lognormal'}]});
%! pr = sluice.prior ('link1_a', 'lognormal', [log(0.4) 0.3], 'river_X1', 'lognormal', [log(300) 0.2]);
%! pm = {};
%! for cp = {'strong', 'weak'}
%!   r = sluice.filter (m, pr, obs, 'members', 300, 't0', 0, 'seed', 3, 'forcing', forcing, ...
%!                      'coupling', cp{1});
%!   assert (all (isfinite (r.params.mean(:))));
%!   v = ~m.internal(:)';
%!   assert (all (isfinite (r.states.mean(v, :)(:))));
%!   assert (all (r.nonfinite == 0));
%!   assert (all (isfinite (r.final.X(:))));
%!   pm{end+1} = r.params.mean;
%! end
%! % weak coupling weighs each component by its own observations: another run
%! assert (~isequal (pm{1}, pm{2}));
%! % the composed step is safe on member blocks in parallel: the same run
%! % on one thread and on two gives the same bits
%! r1 = sluice.filter (m, pr, obs, 'members', 300, 't0', 0, 'seed', 3, 'forcing', forcing, ...
%!                     'threads', 1);
%! r2 = sluice.filter (m, pr, obs, 'members', 300, 't0', 0, 'seed', 3, 'forcing', forcing, ...
%!                     'threads', 2);
%! assert (isequal (r1.final.X, r2.final.X) && isequal (r1.params.mean, r2.params.mean));

%!test
%! % a forcing link: the river's mean flow over each 10 days is the rain of
%! % a second GR4J ('lake') for the next 10 days; the lake alone with that
%! % forcing (held, 'previous') is the reference, bit for bit
%! Lf = struct ('from', 'river.Q', 'to', 'lake.P', 'reduce', 'mean', 'every', 10);
%! mf = sluice.compose ('river', g, 'lake', g, 'link', Lf);
%! assert (mf.forcings, {'P', 'E'});   % shared by name; lake.P comes from the link
%! X = sluice.simulate (mf, [], [], 0:100, forcing);
%! Q = X(63, 2:end);
%! mq = mean (reshape (Q, 10, 10));
%! assert (X(63 + 63 + 3, 11:10:101), mq, 1e-14 * max (mq));
%! fin = [zeros(10, 1); kron(X(129, 11:10:91)', ones (10, 1))];
%! fl2 = struct ('time', (0:99)', 'values', [fin, forcing.values(1:100, 2)], 'interp', 'previous');
%! Xl = sluice.simulate (g, [], [], 0:100, fl2);
%! assert (isequal (X(64:126, :), Xl));

%!error id=sluice:compose:nosource sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Qx', 'to', 'town.W'), 'time_scale', struct ('town', 365))
%!error <its states: S, R> sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Qx', 'to', 'town.W'), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:nosource sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'lake.Q', 'to', 'town.W'), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:notarget sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'town.V'), 'time_scale', struct ('town', 365))
%!error <events: W> sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'town.V'), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:badtarget sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'town.G'), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:badperiod sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'town.W', 'every', 100), 'time_scale', struct ('town', 365))
%!error <period 100 must be a whole number> sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'town.W', 'every', 100), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:badperiod sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'town.W', 'every', 0.5), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:badstep sluice.compose ('river', g, 'town', sluice.model ('flood'), 'time_scale', struct ('town', 365))
%!error <36.5 composed time units> sluice.compose ('river', g, 'town', sluice.model ('flood'), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:notcompiled sluice.compose ('river', g, 'town', sluice.model ('linear', 'A', 1))
%!error id=sluice:compose:notcompiled sluice.compose ('river', g, 'town', 3)
%!error id=sluice:compose:duplicate sluice.compose ('river', g, 'river', g)
%!error id=sluice:compose:badname sluice.compose ('1river', g)
%!error id=sluice:compose:badrating sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'town.W', 'rating', [0.4 0 5]), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:badrating sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'town.W', 'rating', [-1 1 5]), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:badrating sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'town.W', 'rating', [1 1]), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:badscale sluice.compose ('river', g, 'town', fl, 'time_scale', struct ('town', -1))
%!error id=sluice:compose:badscale sluice.compose ('river', g, 'town', fl, 'time_scale', struct ('lake', 2))
%!error id=sluice:compose:badscale sluice.compose ('river', g, 'town', fl, 'time_scale', struct ('river', 2))
%!error id=sluice:compose:slowforcing sluice.compose ('river', sluice.model ('flood', 'dt', 1), 'lake', g, 'time_scale', struct ('lake', 7))
%!error id=sluice:compose:badlink sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'town.W', 'reduce', 'median'), 'time_scale', struct ('town', 365))
%!error id=sluice:compose:badlink sluice.compose ('river', g, 'town', fl, 'link', 5)
%!error id=sluice:compose:badlink sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q'))
%!error id=sluice:compose:badtarget sluice.compose ('river', g, 'town', fl, 'link', struct ('from', 'river.Q', 'to', 'river.P'))
%!error id=sluice:compose:nocomponents sluice.compose ('time_scale', struct ())
%!error id=sluice:compose:badoption sluice.compose ('river')
%!error id=sluice:compose:badoption sluice.compose (3, g)

%!test
%! % a component from sluice.build_model (the fixture cascade.c: two linear
%! % reservoirs, RK4, dt 0.01) feeding the flood model (a step of one time
%! % unit): the composition runs in the cascade's own gateway; the cascade
%! % equals its run alone bit for bit, and the town equals the flood model
%! % alone given the per-period maxima of x2 as floods (sampled at every
%! % 0.01: from a run alone output at those times, which agree with the
%! % composed steps to rounding, 1e-12)
%! root = fileparts (fileparts (fileparts (which ('sluice.build_model'))));
%! tmp = tempname ();
%! mkdir (tmp);
%! unwind_protect
%!   copyfile (fullfile (root, 'tests', 'octave', 'fixtures', 'cascade.c'), tmp);
%!   cs = sluice.build_model (fullfile (tmp, 'cascade.c'));
%!   addpath (tmp);
%!   tw = sluice.model ('flood', 'dt', 1);
%!   Lc = struct ('from', 'res.x2', 'to', 'town.W', 'reduce', 'max', 'every', 1);
%!   mc = sluice.compose ('res', cs, 'town', tw, 'link', Lc);
%!   assert (mc.engine, 'cascade_run');
%!   assert (mc.dt, 0.01);
%!   fc = struct ('time', [0; 10], 'values', [1.3; 1.3]);
%!   X = sluice.simulate (mc, [], [], 0:3, fc);
%!   Xc = sluice.simulate (cs, [], [], 0:3, fc);
%!   assert (isequal (X(1:2, :), Xc));
%!   Xs = sluice.simulate (cs, [], [], (0:300) / 100, fc);
%!   w = max (reshape (Xs(2, 2:end), 100, 3));
%!   assert (X(end, 2:end), w, 1e-12 * max (w));
%!   Xf = sluice.simulate (tw, [], [], 0:3, [], 'events', ...
%!                         struct ('time', (1:3)', 'values', X(end, 2:end)'));
%!   assert (isequal (X(3:8, :), Xf));
%! unwind_protect_cleanup
%!   rmpath (tmp);
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (tmp, 's');
%! end_unwind_protect
