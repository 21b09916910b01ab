% The names the core knows (sluice.kernel.core_names), which the .m layer
% checks options against instead of keeping copies: every listed name is
% accepted where it is used, and the messages built from the lists read
% as they did when the lists were written out in the .m files (the texts
% below are those messages, recorded before).

%!shared c
%! c = sluice.kernel.core_names ();

%!test
%! f = {'integrators', 'resamplers', 'families', 'distributions', 'distribution_forms', ...
%!      'analyses', 'methods', 'moves', 'smoothers', 'geometries', 'forcing_noises'};
%! for k = 1:numel (f)
%!   v = c.(f{k});
%!   assert (iscellstr (v) && size (v, 1) == 1 && numel (v) >= 2, f{k});
%!   assert (numel (unique (v)), numel (v), f{k});
%! end
%! assert (size (c.distribution_args), size (c.distributions));
%! assert (size (c.geometry_dims), size (c.geometries));
%! % the ensemble Kalman analyses are among the analyses, in their order
%! assert (c.analyses(end-numel (c.methods)+1:end), c.methods);

%!test
%! % every analysis runs a filter (the weighted ensemble Kalman filter
%! % with the state noise it needs), and every geometry localises with
%! % positions of as many coordinates as listed
%! spec = sluice.model ('linear', 'A', [0.9 0.1; 0 0.8], 'Q', 0.1 * eye (2));
%! obs = struct ('time', (1:4)', 'variable', {{'x1'; 'x2'; 'x1'; 'x2'}}, ...
%!               'value', [0.3; -0.2; 0.5; 0.1], 'sigma', 0.4 * ones (4, 1));
%! o = {'members', 30, 'seed', 2, 'progress', false, 't0', 0, 'state_noise', 0.2};
%! loc = struct ('geometry', 'line', 'radius', 5, 'positions', [1; 2]);
%! for a = c.analyses
%!   l = {};
%!   if (any (strcmp (a{1}, setdiff (c.methods, {'etkf'}))))
%!     l = {'localization', loc};
%!   end
%!   r = sluice.filter (spec, [], obs, o{:}, 'method', a{1}, l{:});
%!   assert (r.method, a{1});
%!   assert (all (isfinite (r.states.mean(:))), a{1});
%! end
%! pos = {[1; 2], [1; 2], [1 1; 2 1], [10 5; 12 6]};
%! for k = 1:numel (c.geometries)
%!   L = struct ('geometry', c.geometries{k}, 'radius', 5, 'positions', pos{k}, ...
%!               'period', 10, 'sphere_radius', 100);
%!   assert (columns (pos{k}), c.geometry_dims(k));
%!   r = sluice.filter (spec, [], obs, o{:}, 'method', 'letkf', 'localization', L);
%!   assert (all (isfinite (r.states.mean(:))), c.geometries{k});
%! end

%!test
%! % every perturbation kind perturbs a forcing: 'none' leaves every
%! % member on the series, the others spread them
%! spec = sluice.model (@(t, X, P, U, dt) U, 'states', {'x'}, 'forcings', {'u'});
%! forcing = struct ('time', [0; 10], 'values', [2; 2]);
%! none = struct ('time', zeros (0, 1), 'variable', {{}}, 'value', [], 'sigma', []);
%! for k = 1:numel (c.forcing_noises)
%!   r = sluice.filter (spec, [], none, 'members', 50, 'seed', 3, 't0', 0, 'times', 1:3, ...
%!                      'progress', false, 'forcing', forcing, ...
%!                      'forcing_noise', struct ('kind', c.forcing_noises{k}, 'sd', 0.2));
%!   spread = std (r.final.X);
%!   assert (spread == 0, strcmp (c.forcing_noises{k}, 'none'));
%! end

%!test
%! % every scheme resamples, every distribution makes a prior with the
%! % number of arguments listed, every analysis sizes a workspace
%! w = [0.1 0.2 0.3 0.4];
%! for s = c.resamplers
%!   a = sluice.resample (w, s{1}, 'seed', 3);
%!   assert (numel (a), 4);
%! end
%! args = {[0 1], [0 1], [0 1], [0 1 -1 1], 0.5};
%! assert (cellfun (@numel, args), c.distribution_args);
%! for k = 1:numel (c.distributions)
%!   pr = sluice.prior ('a', c.distributions{k}, args{k});
%!   assert (pr.dist, c.distributions{k});
%! end
%! for m = c.methods
%!   assert (sluice.kernel.enkf ('workspace', m{1}, 5, 10, 3, 1) > 0, m{1});
%! end

%!test
%! % every integrator is accepted in a model spec (a right-hand side for
%! % the continuous ones, a step map for the discrete one)
%! for k = 1:numel (c.integrators)
%!   in = c.integrators{k};
%!   if (strcmp (in, 'discrete'))
%!     s = sluice.model (@(t, X, P, U, dt) 0.9 * X, 'n', 1, 'integrator', in);
%!   else
%!     s = sluice.model (@(t, X, P, U) -X, 'n', 1, 'kind', 'rhs', 'integrator', in);
%!   end
%!   assert (s.integrator, in);
%!   sluice.internal.check_model (s, 1, 'filter');
%! end

% the messages built from the lists, word for word
%!error <integrator must be 'euler', 'rk4', 'dopri5' or 'discrete'> sluice.model ('lorenz63', 'integrator', 'rk5')
%!error <field 'integrator' must be one of euler, rk4, dopri5, discrete>
%! s = sluice.model ('lorenz63'); s.integrator = 'rk5';
%! sluice.internal.check_model (s, 1, 'filter');
%!error <unknown resampling scheme 'fair'; expected systematic, stratified, residual or multinomial> sluice.resample ([0.5 0.5], 'fair')
%!error <expected one of uniform, normal, lognormal, truncnormal, fixed, got 'gamma'> sluice.prior ('a', 'gamma', [1 2])
%!error <a truncnormal prior takes a real double vector \[mean sd lo hi\]> sluice.prior ('a', 'truncnormal', [0 1])
%!error <unknown distribution; expected one of uniform, normal, lognormal, truncnormal, fixed>
%! pr = sluice.prior ('a', 'normal', [0 1]); pr.dist = 'gamma';
%! sluice.internal.check_prior (pr, 1, 'draw');
%!error <the methods are pf, wenkf, enkf, etkf, ensrf, eakf, letkf>
%! sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'method', 'kf');
%!error <param_move must be one of 'auto', 'kernel', 'fixed', 'random_walk', 'liu_west', 'resample_move', 'smc2'>
%! sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'param_move', 'walk');
%!error <resample must be 'systematic', 'stratified', 'residual' or 'multinomial'>
%! sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'resample', 'fair');
%!error <perturbation kind must be 'none', 'additive' or 'multiplicative'>
%! spec = sluice.model (@(t, X, P, U, dt) U, 'states', {'x'}, 'forcings', {'u'});
%! sluice.filter (spec, [], struct ('time', 1, 'variable', {{'x'}}, 'value', 1, 'sigma', 1), 'forcing', struct ('time', [0; 2], 'values', [1; 1]), 'forcing_noise', struct ('kind', 'lognormal', 'sd', 1));
%!error <localization.geometry must be 'line', 'ring', 'plane' or 'sphere'>
%! sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'method', 'ensrf', 'localization', struct ('geometry', 'torus', 'radius', 1));
%!error <method must be 'genealogy' or 'ffbsi'>
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1);
%! r = sluice.filter (spec, [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'members', 20, 'history', true, 'progress', false);
%! sluice.smooth (r, 'method', 'enks');

% the gateway's own errors
%!error id=sluice:core_names:nargin sluice.kernel.core_names (1)
%!error id=sluice:core_names:nargout [a, b] = sluice.kernel.core_names ()
