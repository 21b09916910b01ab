% A run's settings take one path (DEVELOPERS.md, "A run's settings"): the
% builder sluice.internal.model_config sets the caller's name and every
% default, the gateway sluice.kernel.pf_run decodes them section by
% section and raises its errors as sluice:<caller>:<reason> itself, so a
% workflow's errors carry its own identifier without being rewritten.
% The identifiers checked are the project's convention
% sluice:<function>:<reason> (STYLE and DEVELOPERS.md).

%!function c = settings (model, fn, N)
%!  % the builder's settings completed with a run's data only: two cycle
%!  % times, no observations, the model's defaults as parameters
%!  c = sluice.internal.model_config (model, [], [], [], [], fn);
%!  p = numel (model.params);
%!  c.members = N;
%!  c.t0 = 0;
%!  c.times = [1 2];
%!  c.obs_first = [0 0 0];
%!  c.obs_var = []; c.obs_value = []; c.obs_sigma = []; c.obs_aux = [];
%!  c.obs_family = {};
%!  c.lower = model.defaults(:);
%!  c.upper = model.defaults(:);
%!  c.seed = 7;
%!  c.progress = 0;
%!  c.X0 = repmat (model.x0(:), 1, N);
%!  c.P0 = repmat (model.defaults(:), 1, N);
%!endfunction

%!function id = raised (f)
%!  id = '';
%!  try
%!    f ();
%!  catch err
%!    id = err.identifier;
%!  end
%!endfunction

%!shared good, bad, obs
%! good = sluice.model (@(t, X, P, U, dt) 0.9 * X, 'states', {'level'}, 'x0', 1);
%! % a step map that gives two rows for one state: the gateway refuses it
%! bad = sluice.model (@(t, X, P, U, dt) [X; X], 'states', {'level'}, 'x0', 1);
%! obs = struct ('time', [1; 2], 'variable', {{'level'; 'level'}}, ...
%!               'value', [0.9; 0.8], 'sigma', [0.1; 0.1]);

%!test
%! % the builder's settings alone run: the gateway needs no default of its own
%! r = sluice.kernel.pf_run (settings (good, 'twin', 4));
%! assert (size (r.X), [1 4]);
%! % x_t = 0.9 x_(t-1) from x0 = 1, no noise: 0.9^2 after two steps (exact)
%! assert (r.X, repmat (0.81, 1, 4), 1e-12);

%!test
%! % every setting the gateway read with a default of its own before is
%! % now the builder's alone: without it, the gateway refuses the settings
%! % under the caller's identifier
%! c = settings (good, 'sweep', 4);
%! for f = {'rtol', 'atol', 'integrator', 'op_H', 'op_funs', 'derived_summary', ...
%!          'inner', 'wenkf', 'kernel_scale', 'move_scale', 'move_diversity', ...
%!          'move_sweeps', 'move_paths', 'temper_ess', 'temper_max_steps', 'lag'}
%!   id = raised (@() sluice.kernel.pf_run (rmfield (c, f{1})));
%!   assert ([f{1} ' ' id], [f{1} ' sluice:sweep:missingfield']);
%! end

%!test
%! % the gateway's own errors carry the caller's name: the model's output
%! % (mexrun.c), a setting's class (mexutil.c) and the core's check of
%! % the times (sl_pf_check)
%! assert (raised (@() sluice.kernel.pf_run (settings (bad, 'twin', 3))), ...
%!         'sluice:twin:badmodeloutput');
%! c = settings (good, 'evidence', 3);
%! c.lag = 'none';
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:evidence:badclass');
%! c = settings (good, 'drift_test', 3);
%! c.times = [-1 2];
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:drift_test:badtimes');

%!test
%! % an operator's output of the wrong size, under the caller's name
%! c = settings (good, 'smooth', 3);
%! c.op_funs = {@(t, X, P) [X; X]};
%! c.op_rows = 1;
%! c.obs_first = [0 1 1];
%! c.obs_var = 1; c.obs_value = 1; c.obs_sigma = 1; c.obs_aux = NaN;
%! c.obs_family = {'gaussian'};
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:smooth:badoperatoroutput');

%!test
%! % settings without a usable caller are refused under the gateway's name
%! c = settings (good, 'twin', 3);
%! assert (raised (@() sluice.kernel.pf_run (rmfield (c, 'caller'))), ...
%!         'sluice:pf_run:missingfield');
%! for v = {'', 'Twin', 'sluice:twin', '9lives', repmat('a', 1, 41), 3, {'twin'}}
%!   c.caller = v{1};
%!   id = raised (@() sluice.kernel.pf_run (c));
%!   assert (any (strcmp (id, {'sluice:pf_run:badcaller', 'sluice:pf_run:badclass'})), id);
%! end
%! assert (raised (@() sluice.kernel.pf_run (5)), 'sluice:pf_run:badclass');

%!test
%! % the workflows: an error raised inside the gateway during the truth
%! % run of sluice.twin is sluice:twin:*, with the twin's context added
%! truth = struct ('times', 0:2, 'x0', 1);
%! net = struct ('variable', 'level', 'every', 1, 'sigma', 0.3);
%! try
%!   sluice.twin (bad, truth, net, 'seed', 1, 'prior', sluice.prior ('level', 'normal', [1 0.1]), ...
%!                'filter', {'members', 5});
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:twin:badmodeloutput');
%!   assert (strncmp (err.message, 'the truth run failed: ', 22), err.message);
%! end

%!test
%! % ... and so in sluice.simulate, sluice.evidence and sluice.drift_test,
%! % whose runs are built for them by name; sluice.filter keeps its own
%! assert (raised (@() sluice.simulate (bad, 1, [], 0:2)), 'sluice:simulate:badmodeloutput');
%! assert (raised (@() sluice.filter (bad, [], obs, 'members', 5, 't0', 0, 'progress', false)), ...
%!         'sluice:filter:badmodeloutput');
%! assert (raised (@() sluice.evidence (bad, [], obs, 'members', 5, 't0', 0, 'repeats', 2)), ...
%!         'sluice:evidence:badmodeloutput');
%! drift = sluice.model (@(t, X, P, U, dt) [X; P], 'states', {'level'}, 'params', {'k'}, ...
%!                       'defaults', 0.5, 'x0', 1);
%! pk = sluice.prior ('k', 'uniform', [0 1]);
%! assert (raised (@() sluice.drift_test (drift, pk, obs, 'k', 0.1, 'members', 5, 't0', 0, ...
%!                                       'repeats', 2)), ...
%!         'sluice:drift_test:badmodeloutput');

%!test
%! % the filter's option errors reach a workflow that runs it under the
%! % workflow's name too (they were renamed after the fact before)
%! assert (raised (@() sluice.evidence (good, [], obs, 'members', 5, 'lag', -1)), ...
%!         'sluice:evidence:badoption');
%! assert (raised (@() sluice.filter (good, [], obs, 'members', 5, 'lag', -1)), ...
%!         'sluice:filter:badoption');

%!test
%! % one table of defaults: sluice.filter's options start from it
%! d = sluice.internal.run_defaults ();
%! r = sluice.filter (good, [], obs, 'members', 5, 't0', 0, 'progress', false, 'seed', 1);
%! for f = {'param_step', 'kernel_scale', 'move_sweeps', 'temper_max_steps', ...
%!          'liu_west_delta', 'resample', 'resample_threshold', 'inflation_max'}
%!   assert (r.options.(f{1}), d.(f{1}));
%! end
%! assert (r.options.quantiles, d.quantiles);

%!test
%! % the values of the settings are the core's to check (sl_pf_check, the
%! % tolerances' and the bounds' checks): the gateway converts, the core
%! % refuses, and the error carries the caller's name
%! c = settings (good, 'twin', 3);
%! for dt = [0 -1]
%!   c.dt = dt;
%!   assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:twin:badstep');
%! end
%! c = settings (good, 'twin', 3);
%! c.rtol = -1e-6;
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:twin:badtolerance');
%! c.rtol = 0; c.atol = 0;
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:twin:badtolerance');
%! c = settings (good, 'sweep', 3);
%! c.temper_ess = 1.5;
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:sweep:badconfig');
%! % observations: the order of the groups and the range of the variable
%! % index are the core's; a fraction cannot be converted (the gateway's)
%! c = settings (good, 'smooth', 3);
%! c.obs_var = 0; c.obs_value = 1; c.obs_sigma = 1; c.obs_aux = NaN;
%! c.obs_family = {'gaussian'};
%! c.obs_first = [0 1 1];
%! r = sluice.kernel.pf_run (c);
%! assert (size (r.X), [1 3]);
%! for of = {[0 1 0], [1 1 1]}
%!   c.obs_first = of{1};
%!   assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:smooth:badobs');
%! end
%! c.obs_first = [0 1 1];
%! for v = [1 0.5 -1]
%!   c.obs_var = v;
%!   assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:smooth:badobs');
%! end
%! % parameters: bounds in order (sl_transform_from_bounds), known prior
%! % distributions (sl_pf_check), whole-number ids (the gateway's)
%! drift = sluice.model (@(t, X, P, U, dt) X, 'states', {'level'}, 'params', {'k'}, ...
%!                       'defaults', 0.5, 'x0', 1);
%! c = settings (drift, 'evidence', 3);
%! c.lower = 1; c.upper = 0;
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:evidence:badbounds');
%! c = settings (drift, 'evidence', 3);
%! c.prior_dist = 1; c.prior_a = 0.5; c.prior_b = 0.1; c.prior_lo = -Inf; c.prior_hi = Inf;
%! r = sluice.kernel.pf_run (c);
%! assert (size (r.P), [1 3]);
%! for d = [99 0.5 -2]
%!   c.prior_dist = d;
%!   assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:evidence:badprior');
%! end

%!test
%! % sluice.filter's settings carry the head of its result (field result):
%! % the gateway lays the result out itself, the one sluice.filter returns
%! % but for the two fields it fills (skipped_total, options); without the
%! % field the gateway returns the recorded arrays
%! pr = sluice.prior ('level', 'normal', [1 0.2]);
%! o = {'members', 30, 't0', 0, 'progress', false, 'lag', 1};
%! run = sluice.filter (good, pr, obs, o{:}, 'seed', 3, 'prepare', true);
%! res = sluice.filter (run);
%! r = sluice.kernel.pf_run (run.engine.c);
%! assert (fieldnames (r), fieldnames (res));
%! assert (isempty (r.skipped_total) && isempty (r.options));
%! r.skipped_total = res.skipped_total;
%! r.options = res.options;
%! assert (isequaln (r, res));
%! raw = sluice.kernel.pf_run (rmfield (run.engine.c, 'result'));
%! assert (raw.mean, [res.states.mean; res.params.mean]);
%! assert (raw.smooth_mean, res.smoothed.states.mean);
%! assert (islogical (r.resampled) && ~islogical (raw.resampled));

%!test
%! % the fields result and draw out of shape: the caller's badsettings
%! pr = sluice.prior ('level', 'normal', [1 0.2]);
%! run = sluice.filter (good, pr, obs, 'members', 5, 't0', 0, 'progress', false, 'seed', 7, ...
%!                     'prepare', true);
%! c = run.engine.c;
%! for v = {3, struct('head', 1, 'derived_names', {{}}, 'lag', 0), ...
%!          struct('head', struct(), 'derived_names', {{}}, 'lag', 'none')}
%!   c.result = v{1};
%!   assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:filter:badsettings');
%! end
%! c.result = struct ('head', struct ());
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:filter:missingfield');
%! c = run.engine.c;
%! c.draw = 3;
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:filter:badsettings');
%! c.draw = run.engine.plan;
%! c.draw.state_rows = 2;   % the model has one state
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:filter:badsettings');
%! c.draw = rmfield (run.engine.plan, 'ids');
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:filter:missingfield');
%! % a plan whose rows leave a state without a value fails as X0 would
%! c.draw = run.engine.plan;
%! c.draw.x0 = NaN;
%! c.draw.state_rows = zeros (0, 1);
%! c.draw.state_entries = zeros (0, 1);
%! assert (raised (@() sluice.kernel.pf_run (c)), 'sluice:filter:nonfinite');
%! % a good plan draws the members of the seed as sluice.kernel.draw does:
%! % the same run as with those members given as X0
%! c.draw = run.engine.plan;
%! c.seed = 8;
%! a = sluice.kernel.pf_run (c);
%! c = rmfield (c, 'draw');
%! c.X0 = sluice.kernel.draw (run.engine.plan.ids, run.engine.plan.a, run.engine.plan.b, ...
%!                            run.engine.plan.lo, run.engine.plan.hi, 5, 8);
%! b = sluice.kernel.pf_run (c);
%! assert (isequaln (a, b));
%! b = sluice.kernel.pf_run (run.engine.c);   % seed 7's members
%! assert (~isequal (a.final.X, b.final.X));

%!test
%! % the families of the observation rows: a run of one text is decoded
%! % once; a row whose text differs from the row before is decoded again
%! % (the same text in runs or alternating gives the same run), and an
%! % unknown family is reported at its own row, after a run of known ones
%! c = settings (good, 'twin', 50);
%! c.times = 1:6;
%! c.obs_first = [0 1 2 3 4 5 6];
%! c.obs_var = zeros (6, 1);
%! c.obs_value = [1; 2; 0.9; 3; 0.8; 1];
%! c.obs_sigma = 0.5 * ones (6, 1);
%! c.obs_aux = nan (6, 1);
%! c.state_noise = 0.3;
%! c.obs_family = {'gaussian'; 'gaussian'; 'lognormal'; 'poisson'; 'lognormal'; 'gaussian'};
%! a = sluice.kernel.pf_run (c);
%! % the same rows, each family given as text built anew
%! c.obs_family = cellfun (@(f) char (double (f)), c.obs_family, 'UniformOutput', false);
%! b = sluice.kernel.pf_run (c);
%! assert (isequaln (a, b));
%! % a lognormal row among Gaussian ones changes the run (not taken from the row before)
%! c.obs_family{3} = 'gaussian';
%! d = sluice.kernel.pf_run (c);
%! assert (~isequaln (a, d));
%! c.obs_family(1:5) = {'gaussian'};
%! c.obs_family{6} = 'gaussiam';
%! try
%!   sluice.kernel.pf_run (c);
%!   error ('test:noerror', 'no error');
%! catch err
%!   assert (err.identifier, 'sluice:twin:badfamily');
%!   assert (strfind (err.message, 'observation 6'));
%! end
