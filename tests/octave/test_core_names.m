% The names the core knows (sluice.kernel.core_names), which the .m layer
% checks options against instead of keeping copies: every listed name is
% accepted where it is used, and the messages built from the lists read
% as they did when the lists were written out in the .m files (the texts
% below are those messages, recorded before).

%!shared c
%! c = sluice.kernel.core_names ();

%!test
%! f = {'integrators', 'resamplers', 'families', 'distributions', 'distribution_forms', ...
%!      'methods', 'moves', 'smoothers', 'geometries'};
%! for k = 1:numel (f)
%!   v = c.(f{k});
%!   assert (iscellstr (v) && size (v, 1) == 1 && numel (v) >= 2, f{k});
%!   assert (numel (unique (v)), numel (v), f{k});
%! end
%! assert (size (c.distribution_args), size (c.distributions));

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
%!   sluice.kernel.check_model (s, 1, 'filter');
%! end

% the messages built from the lists, word for word
%!error <integrator must be 'euler', 'rk4', 'dopri5' or 'discrete'> sluice.model ('lorenz63', 'integrator', 'rk5')
%!error <field 'integrator' must be one of euler, rk4, dopri5, discrete>
%! s = sluice.model ('lorenz63'); s.integrator = 'rk5';
%! sluice.kernel.check_model (s, 1, 'filter');
%!error <unknown resampling scheme 'fair'; expected systematic, stratified, residual or multinomial> sluice.resample ([0.5 0.5], 'fair')
%!error <expected one of uniform, normal, lognormal, truncnormal, fixed, got 'gamma'> sluice.prior ('a', 'gamma', [1 2])
%!error <a truncnormal prior takes a real double vector \[mean sd lo hi\]> sluice.prior ('a', 'truncnormal', [0 1])
%!error <unknown distribution; expected one of uniform, normal, lognormal, truncnormal, fixed>
%! pr = sluice.prior ('a', 'normal', [0 1]); pr.dist = 'gamma';
%! sluice.kernel.check_prior (pr, 1, 'draw');
%!error <the methods are pf, wenkf, enkf, etkf, ensrf, eakf, letkf>
%! sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'method', 'kf');
%!error <param_move must be one of 'auto', 'kernel', 'fixed', 'random_walk', 'liu_west', 'resample_move', 'smc2'>
%! sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'param_move', 'walk');
%!error <resample must be 'systematic', 'stratified', 'residual' or 'multinomial'>
%! sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'resample', 'fair');
%!error <localization.geometry must be 'line', 'ring', 'plane' or 'sphere'>
%! sluice.filter (sluice.model ('linear', 'A', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'method', 'ensrf', 'localization', struct ('geometry', 'torus', 'radius', 1));
%!error <method must be 'genealogy' or 'ffbsi'>
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1);
%! r = sluice.filter (spec, [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'members', 20, 'history', true, 'progress', false);
%! sluice.smooth (r, 'method', 'enks');

% the gateway's own errors
%!error id=sluice:core_names:nargin sluice.kernel.core_names (1)
%!error id=sluice:core_names:nargout [a, b] = sluice.kernel.core_names ()
