% Hand-edited model specs, priors, results and sweep tables are refused on
% entry with sluice:<fn>:badmodel, :badprior, :badresult or :badsweep and
% a message naming the field (sluice.internal.check_model, check_prior,
% check_result, check_sweep).

%!shared lin, flood, obs, pr, res, tw, net, truth
%! lin = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'level'});
%! flood = sluice.model ('flood');
%! obs = struct ('time', (1:4)', 'variable', {repmat({'level'}, 4, 1)}, ...
%!               'value', [0.3; -0.2; 0.5; 0.1], 'sigma', 0.5 * ones (4, 1));
%! pr = sluice.prior ('level', 'normal', [0 1]);
%! res = sluice.filter (lin, pr, obs, 'members', 30, 'seed', 1, 'progress', false, ...
%!                      't0', 0, 'history', true);
%! truth = struct ('times', 0:4, 'x0', 1);
%! net = struct ('variable', 'level', 'every', 1, 'sigma', 0.3);
%! tw = sluice.twin (lin, truth, net, 'seed', 2, 'prior', pr, 'filter', {'members', 30});

%!test
%! % the first example of issue 17: a state name replaced by a cell
%! s = flood;
%! s.states{3} = {'H'};
%! o = struct ('time', 1, 'variable', {{'G'}}, 'value', 0.01, 'sigma', 0.01);
%! try
%!   sluice.filter (s, [], o, 'members', 10, 'progress', false, 't0', 0);
%!   error ('no error');
%! catch e
%!   assert (e.identifier, 'sluice:filter:badmodel');
%!   assert (~isempty (strfind (e.message, 'states')));
%! end

%!test
%! % the second example of issue 17: a sweep table whose score column is
%! % shorter than the others
%! d = tempname ();
%! unwind_protect
%!   try
%!     sluice.report (struct ('a', [1; 2; 3; 4], 'seed', [1; 2; 3; 4], 'score', 7), 'outdir', d);
%!     error ('no error');
%!   catch e
%!     assert (e.identifier, 'sluice:report:badsweep');
%!     assert (~isempty (strfind (e.message, '''score''')));
%!   end
%! unwind_protect_cleanup
%!   if (exist (d, 'dir'))
%!     confirm_recursive_rmdir (false, 'local');
%!     rmdir (d, 's');
%!   end
%! end_unwind_protect

% model specs, through each public function that takes one
%!error <field 'states'> s = flood; s.states{3} = {'H'}; sluice.simulate (s, [], [], 0:1)
%!error id=sluice:filter:badmodel sluice.filter (rmfield (lin, 'c'), [], obs, 'progress', false)
%!error id=sluice:simulate:badmodel s = lin; s.forcings = 'u'; sluice.simulate (s, [], [], 0:2)
%!error id=sluice:propagate:badmodel s = flood; s.integrator = 'leapfrog'; sluice.propagate (s, [], [], 0, 1)
%!error id=sluice:propagate:badmodel s = flood; s.defaults = {1}; sluice.propagate (s, [], [], 0, 1)
%!error id=sluice:twin:badmodel s = lin; s.dt = 0; sluice.twin (s, truth, net, 'prior', pr)
%!error id=sluice:evidence:badmodel s = lin; s.x0 = [1 2]; sluice.evidence (s, pr, obs)
%!error id=sluice:esmda:badmodel s = lin; s.states = {}; sluice.esmda (s, pr, obs)
%!error id=sluice:pmmh:badmodel s = flood; s.params(2) = []; sluice.pmmh (s, sluice.prior ('xiH', 'uniform', [0 1]), obs)
%!error id=sluice:drift_test:badmodel s = flood; s.lower(1) = NaN; sluice.drift_test (s, [], obs, 'xiH', 0.1)
%!error <default 2 lies outside> s = flood; s.defaults(1) = 2; s.upper(1) = 1; sluice.simulate (s, [], [], 0:1)
%!error <fields 'Q' and 'L' disagree> s = lin; s.Q = 2; sluice.simulate (s, [], [], 0:1)
%!error <'fun'> s = sluice.model (@(t, X, P, U, dt) X, 'n', 1); s.fun = 'X'; sluice.simulate (s, [], [], 0:1)
%!error <no built-in model> s = flood; s.name = 'flod'; sluice.simulate (s, [], [], 0:1)
%!error <has 6 states> s = flood; s.states{end+1} = 'K'; s.x0(end+1) = 0; sluice.simulate (s, [], [], 0:1)
%!error <steps by dt = 1> s = sluice.model ('gr4j'); s.dt = 2; sluice.simulate (s, [], [], 0:2, struct ('time', [0; 2], 'values', [1 1; 1 1]))

% priors
%!error id=sluice:filter:badprior q = pr; q.args = [0 -1]; sluice.filter (lin, q, obs, 'progress', false)
%!error <the standard deviation must be positive> q = pr; q.args = [0 -1]; sluice.filter (lin, q, obs, 'progress', false)
%!error id=sluice:twin:badprior q = pr; q.dist = {'normal'}; sluice.twin (lin, truth, net, 'prior', q)
%!error <option 'prior'> q = pr; q.dist = {'normal'}; sluice.twin (lin, truth, net, 'prior', q)
%!error id=sluice:evidence:badprior sluice.evidence (lin, rmfield (pr, 'upper'), obs)
%!error id=sluice:esmda:badprior q = pr; q.args = [0 Inf]; sluice.esmda (lin, q, obs)
%!error id=sluice:pmmh:badprior q = sluice.prior ('a', 'uniform', [0 1]); q.args = [1 0]; sluice.pmmh (sluice.model (@(t, X, P, U, dt) X, 'states', {'x'}, 'params', {'a'}), q, obs)
%!error id=sluice:drift_test:badprior q = sluice.prior ('xiH', 'uniform', [0 1]); q.name = 7; sluice.drift_test (flood, q, obs, 'xiH', 0.1)
%!error id=sluice:draw:badprior q = pr; q.args = [NaN 1]; sluice.draw (q, 10, 1)

% results
%!error id=sluice:scores:badresult r = res; r.states.mean = r.states.mean'; sluice.scores (r, tw.truth)
%!error <states.quantiles> r = res; r.states.quantiles(:, :, end) = []; sluice.scores (r, tw.truth)
%!error id=sluice:scores:badresult r = res; r.params = 0; sluice.scores (r, tw.truth, obs)
%!error id=sluice:scores:badobs o = tw.obs; o.family = repmat ({'gaussian'}, 2, 1); sluice.scores (tw.filter, tw.truth, o)
%!error id=sluice:smooth:badresult r = res; r.times = {1}; sluice.smooth (r)
%!error id=sluice:smooth:badresult r = res; r.quantile_levels = [0.5 2]; sluice.smooth (r)
%!error <derived.mean. must be a real double 1x> r = res; r.derived = struct ('names', {{'d'}}, 'mean', 1, 'quantiles', 1); sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badresult r = res; r.derived = struct ('names', 5); sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badresult r = res; r.state_names{1} = -1; sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badresult r = res; r.members = struct ('a', 1); sluice.report (r, 'outdir', tempname ())
%!error <res.filter> r = tw; r.filter.ess(end) = []; sluice.report (r, 'outdir', tempname ())
%!error <'smoothed'> r = res; r.smoothed = 1; sluice.report (r, 'outdir', tempname ())
%!error <'times'> r = res; r.times = r.times'; sluice.report (r, 'outdir', tempname ())
%!error <'model'> r = res; r.model = {'linear'}; sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badoption r = tw; r.obs.variable(end) = []; sluice.report (r, 'outdir', tempname ())
%!error <param_names> r = tw; r.openloop = rmfield (r.openloop, 'param_names'); sluice.save_run (r, [tempname() '.nc'])
%!error <summarized_states> r = res; r.summarized_states = [true false]; sluice.scores (r, tw.truth)
%!error <summarized_states> r = res; r.summarized_states = 2; sluice.report (r, 'outdir', tempname ())
%!error <options.resample_threshold> r = res; r.options.resample_threshold = struct (); sluice.report (r, 'outdir', tempname ())
%!error <'history'> r = res; r.history = [r.history, r.history]; sluice.scores (r, tw.truth)
%!error id=sluice:smooth:badresult r = res; r.history = r.history([]); sluice.smooth (r)
%!error <'forecast'> r = res; r.forecast = 3; sluice.scores (r, tw.truth)
%!error <forecast.mean> r = res; r.forecast.mean = {1}; sluice.scores (r, tw.truth)
%!error <res.scores> r = tw; r.scores.openloop_spread = 'x'; sluice.report (r, 'outdir', tempname ())
%!error <'spread' is missing> r = tw; r.scores = rmfield (r.scores, 'spread'); sluice.report (r, 'outdir', tempname ())

% sweep tables
%!error id=sluice:report:badsweep sluice.report (struct ('a', [1; 2], 'seed', [1; 2], 'v', {{1; 2}}), 'outdir', tempname ())
%!error id=sluice:report:badsweep sluice.report (struct ('a', [1; 2], 'seed', {{1; 2}}, 'v', [1; 2]), 'outdir', tempname ())
%!error id=sluice:report:badsweep sluice.report (struct ('a', @sin, 'seed', 1, 'v', 1), 'outdir', tempname ())

%!test
%! % the opening check of a filter result (sluice.internal.result_fields):
%! % not a scalar struct, or a field missing, named with where it was found
%! msgs = cell (1, 3);
%! calls = {@() sluice.smooth ([res, res]), @() sluice.smooth (rmfield (res, 'ess')), ...
%!          @() sluice.save_run (setfield (tw, 'filter', rmfield (tw.filter, 'times')), [tempname() '.mat'])};
%! for k = 1:3
%!   try
%!     calls{k} ();
%!     msgs{k} = 'no error';
%!   catch e
%!     msgs{k} = [e.identifier ' | ' e.message];
%!   end
%! end
%! assert (msgs{1}, 'sluice:smooth:badresult | argument 1 (res): expected a result of sluice.filter, got 1x2 struct');
%! assert (msgs{2}, 'sluice:smooth:badresult | argument 1 (res): the field ''ess'' of a filter result is missing');
%! assert (msgs{3}, 'sluice:save_run:badresult | argument 1 (res.filter): the field ''times'' of a filter result is missing');
