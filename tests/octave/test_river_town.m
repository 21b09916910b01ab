% The coupled model river_town (GR4J and the human-flood model) through
% the public functions (sluice.model, sluice.simulate, sluice.filter):
% against the two models run alone, and against the annual maxima and
% the rating curve computed here with Octave's own cummax and power.
% Forcing is invented: three years of gamma-like rain and a seasonal
% evapotranspiration of a fictional catchment.

%!shared s, g, fl, forcing, T, scale, iq, ifl, iqmax, ilevel, iday
%! s = sluice.model ('river_town');
%! g = sluice.model ('gr4j');
%! fl = sluice.model ('flood', 'dt', 1);
%! T = 3 * 365;
%! rand ('seed', 11);
%! P = -8 * log (rand (T, 1)) .* (rand (T, 1) < 0.45);   % rain on 45% of days
%! E = 2 + 1.5 * sin (2 * pi * (0:T-1)' / 365);
%! forcing = struct ('time', (0:T-1)', 'values', [P E], 'interp', 'previous');
%! % the flood model's rates per year, as the coupled model passes them
%! % (per day, years of 365 days): rhoE, sigmaP, kappaT, muS
%! scale = ones (10, 1); scale([3 6 8 10]) = 1 / 365;
%! iq = 63; ifl = 64:69; iqmax = 70; ilevel = 71; iday = 72;

%!test
%! % the spec: GR4J's and the flood model's names, defaults and bounds
%! % (their own specs are the reference), then the coupling's
%! assert (numel (s.states), 72);
%! assert (s.states(1:63), g.states);
%! assert (s.states(64:72), {'G', 'D', 'H', 'M', 'F', 'R_levee', 'Qmax', 'level', 'day'});
%! assert (s.params, [g.params, fl.params, {'a', 'b', 'Q0', 'year_length'}]);
%! assert (s.defaults, [g.defaults; fl.defaults; 0.4; 0.6; 5; 365]);
%! assert (s.lower, [g.lower; fl.lower; 0; 0.1; 0; 365]);
%! assert (s.upper, [g.upper; fl.upper; Inf; 3; Inf; 365]);
%! assert (s.x0, [g.x0; fl.x0; 0; 0; 0]);
%! assert (s.internal, [g.internal; false(8, 1); true]);
%! assert (s.forcings, {'P', 'E'});
%! assert (s.events, {'W'});
%! assert (s.dt, 1);
%! assert (s.integrator, 'discrete');
%! s2 = sluice.model ('river_town', 'rating', [0.2 1.5 3], 'year_length', 360);
%! assert (s2.defaults(15:18), [0.2; 1.5; 3; 360]);
%! assert ([s2.lower(18), s2.upper(18)], [360 360]);

%!test
%! % coupling off (a = 0: the river never floods the town): the GR4J part
%! % equals GR4J alone and the town equals the flood model alone, in days
%! % with its rates divided by 365, with the same given floods; bit for bit
%! p = s.defaults; p(15) = 0;
%! ev = struct ('time', [100; 400; 401; 900], 'values', [1.2; 3.1; 0.4; 2.2]);
%! X = sluice.simulate (s, [], p, 0:T, forcing, 'events', ev);
%! Xg = sluice.simulate (g, [], [], 0:T, forcing);
%! Xf = sluice.simulate (fl, [], fl.defaults .* scale, 0:T, [], 'events', ev);
%! assert (isequal (X(1:63, :), Xg));
%! assert (isequal (X(ifl, :), Xf));
%! assert (all (X(ilevel, :) == 0));
%! assert (Xf(5, 101) > 0 && Xf(6, 101) > 0);   % the first flood did damage, a levee was raised

%!test
%! % coupling on: Qmax is the running maximum of Q within each year
%! % (Octave's cummax), each year end's level is a (max Q - Q0)^b from that
%! % maximum, and the town equals the flood model alone fed those levels
%! % as floods at days 365, 730 and 1095
%! X = sluice.simulate (s, [], [], 0:T, forcing);
%! Q = X(iq, 2:end); p = s.defaults;
%! W = zeros (3, 1);
%! for y = 1:3
%!   d = (y - 1) * 365 + (1:365);             % the days of year y
%!   cm = cummax (Q(d));
%!   assert (X(iqmax, d(1:364) + 1), cm(1:364));
%!   assert (X(iday, d + 1), [1:364, 0]);
%!   W(y) = p(15) * (max (Q(d)) - p(17)) ^ p(16);
%!   assert (max (Q(d)) > p(17));
%!   assert (X(ilevel, d(end) + 1), W(y), 1e-14 * W(y));
%!   assert (X(iqmax, d(end) + 1), 0);
%! end
%! ev = struct ('time', [365; 730; 1095], 'values', X(ilevel, [366 731 1096])');
%! Xf = sluice.simulate (fl, [], fl.defaults .* scale, 0:T, [], 'events', ev);
%! assert (isequal (X(ifl, :), Xf));
%! assert (Xf(5, 366) > 0);   % the first year's flood did damage

%!test
%! % a year whose largest flow stays at or below Q0 brings no flood: with
%! % Q0 above every flow the town is the flood model alone, with no events
%! s3 = sluice.model ('river_town', 'rating', [0.4 0.6 1e4]);
%! X = sluice.simulate (s3, [], [], 0:T, forcing);
%! Xf = sluice.simulate (fl, [], fl.defaults .* scale, 0:T);
%! assert (isequal (X(ifl, :), Xf));
%! assert (all (X(ilevel, :) == 0));

%!test
%! % a shorter year (100 days) ends at days 100, 200, ...; the town's rates
%! % are divided by 100
%! s4 = sluice.model ('river_town', 'year_length', 100);
%! X = sluice.simulate (s4, [], [], 0:300, forcing);
%! assert (find (X(iday, :) == 0) - 1, [0 100 200 300]);
%! sc = ones (10, 1); sc([3 6 8 10]) = 1 / 100;
%! ev = struct ('time', [100; 200; 300], 'values', X(ilevel, [101 201 301])');
%! Xf = sluice.simulate (fl, [], fl.defaults .* sc, 0:300, [], 'events', ev);
%! assert (isequal (X(ifl, :), Xf));

%!test
%! % a particle filter on the coupled model: the rating curve's a and the
%! % production store X1 estimated from daily flows and one yearly
%! % observation of the settlement size G
%! X = sluice.simulate (s, [], [], 0:730, forcing);
%! t = (5:5:730)';
%! qo = X(iq, t + 1)';
%! obs = struct ('time', [t; 730], 'variable', {[repmat({'Q'}, numel (t), 1); {'G'}]}, ...
%!               'value', [qo; X(ifl(1), 731)], 'sigma', [0.1 * qo + 0.05; 0.3], ...
%!               'family', {[repmat({'gaussian'}, numel (t), 1); {'lognormal'}]});
%! pr = sluice.prior ('a', 'lognormal', [log(0.4) 0.3], 'X1', 'lognormal', [log(300) 0.2]);
%! r = sluice.filter (s, pr, obs, 'members', 200, 't0', 0, 'seed', 3, 'forcing', forcing);
%! assert (all (isfinite (r.params.mean(:))));
%! % the visible states are summarised, GR4J's queues and the day counter
%! % not (option summarize); no member's state was ever non-finite
%! v = ~s.internal(:)';
%! assert (r.summarized_states, v);
%! assert (all (isfinite (r.states.mean(v, :)(:))));
%! assert (all (isnan (r.states.mean(~v, :)(:))));
%! assert (all (r.nonfinite == 0));
%! assert (all (isfinite (r.final.X(:))));

%!error id=sluice:model:badrating sluice.model ('river_town', 'rating', [0.4 0.6 5 1])
% a rating curve that is not defined (b <= 0, a < 0, Q0 < 0, NaN), as
% the option, as parameter values and as a prior whose support allows
% it: refused with a clear error each (a year at or below Q0 is no
% flood by design: the tests above)
%!error <b = 0 lies outside> sluice.model ('river_town', 'rating', [0.4 0 5])
%!error id=sluice:model:badrating sluice.model ('river_town', 'rating', [0.4 -0.5 5])
%!error <a = -0.1 lies outside> sluice.model ('river_town', 'rating', [-0.1 0.6 5])
%!error <Q0 = -1 lies outside> sluice.model ('river_town', 'rating', [0.4 0.6 -1])
%!error id=sluice:model:nonfinite sluice.model ('river_town', 'rating', [0.4 NaN 5])
%!error id=sluice:simulate:badparams sluice.simulate (sluice.model ('river_town'), [], [s.defaults(1:15); 0; 5; 365], 0:3, struct ('time', (0:3)', 'values', ones (4, 2)))
%!error id=sluice:simulate:badparams sluice.simulate (sluice.model ('river_town'), [], [s.defaults(1:16); -2; 365], 0:3, struct ('time', (0:3)', 'values', ones (4, 2)))
%!error <prior of 'b' allows> sluice.filter (sluice.model ('river_town'), sluice.prior ('b', 'normal', [0.6 0.2]), struct ('time', 1, 'variable', {{'Q'}}, 'value', 1, 'sigma', 1), 'forcing', struct ('time', (0:3)', 'values', ones (4, 2)))
%!error id=sluice:filter:badprior sluice.filter (sluice.model ('river_town'), sluice.prior ('a', 'uniform', [-0.5 1]), struct ('time', 1, 'variable', {{'Q'}}, 'value', 1, 'sigma', 1), 'forcing', struct ('time', (0:3)', 'values', ones (4, 2)))
%!error id=sluice:filter:badprior sluice.filter (sluice.model ('river_town'), sluice.prior ('Q0', 'normal', [5 1]), struct ('time', 1, 'variable', {{'Q'}}, 'value', 1, 'sigma', 1), 'forcing', struct ('time', (0:3)', 'values', ones (4, 2)))
%!error id=sluice:model:badyear sluice.model ('river_town', 'year_length', 365.5)
%!error id=sluice:simulate:badparams sluice.simulate (sluice.model ('river_town'), [], [s.defaults(1:17); 365.5], 0:3, struct ('time', (0:3)', 'values', ones (4, 2)))
%!error id=sluice:simulate:badparams sluice.simulate (sluice.model ('river_town'), [], [s.defaults(1:14); -0.1; 0.6; 5; 365], 0:3, struct ('time', (0:3)', 'values', ones (4, 2)))
%!error id=sluice:filter:badprior sluice.filter (sluice.model ('river_town'), sluice.prior ('year_length', 'uniform', [360 370]), struct ('time', 1, 'variable', {{'Q'}}, 'value', 1, 'sigma', 1), 'forcing', struct ('time', (0:3)', 'values', ones (4, 2)))
%!error id=sluice:simulate:badforcing sluice.simulate (sluice.model ('river_town'), [], [], 0:3)
%!error id=sluice:simulate:badevents sluice.simulate (sluice.model ('river_town'), [], [], 0:3, struct ('time', (0:3)', 'values', ones (4, 2)), 'events', struct ('time', [2; 1], 'values', [1; 1]))
