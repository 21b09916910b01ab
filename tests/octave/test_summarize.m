% Which states a run summarises (option summarize of sluice.filter): a
% model's internal states (GR4J's unit-hydrograph slots) are left out by
% default, their rows NaN; the rows summarised are bit for bit those of a
% run that summarises everything; 'all' and named states fill them; the
% option's errors; the consumers of results (scores, save_run, report)
% take a result with rows left out.

%!function b = bits (x)
%! b = typecast (x(:), 'uint64');
%!endfunction

%!shared s, pr, obs, fo, truth, o, vis
%! s = sluice.model ('gr4j');
%! vis = ~s.internal(:)';
%! Tn = 40;
%! rand ('state', 4); randn ('state', 4);
%! P = (rand (Tn + 1, 1) < 0.4) .* (-6 * log (rand (Tn + 1, 1)));
%! fo = struct ('time', (0:Tn)', 'values', [P, 2 * ones(Tn + 1, 1)], 'interp', 'previous');
%! X = sluice.simulate (s, [], [350; 0.6; 90; 1.7], 0:Tn, fo);
%! truth = struct ('times', 0:Tn, 'X', X);
%! y = X(63, 2:end)' .* exp (0.1 * randn (Tn, 1));
%! obs = struct ('time', (1:Tn)', 'variable', {repmat({'Q'}, Tn, 1)}, 'value', y, ...
%!               'sigma', 0.1 * ones (Tn, 1), 'family', {repmat({'lognormal'}, Tn, 1)});
%! pr = sluice.prior ('X1', 'lognormal', [log(300) 0.7], 'X2', 'normal', [0 1.5], ...
%!                    'X3', 'lognormal', [log(100) 0.7], 'X4', 'uniform', [0.5 4]);
%! o = {'members', 200, 'seed', 5, 'forcing', fo, 'progress', false, ...
%!      'param_move', 'kernel', 'lag', 3};

%!test
%! % default: GR4J's 60 queue slots are not summarised; the visible rows,
%! % the parameters, the forecast and smoothed summaries and the ensemble
%! % are bit for bit those of the run that summarises every row
%! assert (sum (vis), 3);
%! a = sluice.filter (s, pr, obs, o{:});
%! b = sluice.filter (s, pr, obs, o{:}, 'summarize', 'all');
%! assert (a.summarized_states, vis);
%! assert (~isfield (b, 'summarized_states'));
%! assert (size (a.states.mean), size (b.states.mean));
%! assert (size (a.states.quantiles), size (b.states.quantiles));
%! assert (bits (a.states.mean(vis, :)), bits (b.states.mean(vis, :)));
%! assert (bits (a.states.quantiles(vis, :, :)), bits (b.states.quantiles(vis, :, :)));
%! assert (bits (a.forecast.mean(vis, :)), bits (b.forecast.mean(vis, :)));
%! assert (bits (a.smoothed.states.mean(vis, :)), bits (b.smoothed.states.mean(vis, :)));
%! assert (bits (a.smoothed.states.quantiles(vis, :, :)), ...
%!         bits (b.smoothed.states.quantiles(vis, :, :)));
%! for f = {'mean', 'quantiles', 'distinct', 'spread'}
%!   assert (bits (a.params.(f{1})), bits (b.params.(f{1})));
%! end
%! assert (bits (a.smoothed.params.mean), bits (b.smoothed.params.mean));
%! assert (bits (a.forecast.params), bits (b.forecast.params));
%! for f = {'X', 'P', 'w'}
%!   assert (bits (a.final.(f{1})), bits (b.final.(f{1})));
%! end
%! assert (bits ([a.ess, a.log_evidence]), bits ([b.ess, b.log_evidence]));
%! % the internal rows: NaN by default, numbers with 'all'
%! assert (all (isnan (a.states.mean(~vis, :)(:))));
%! assert (all (isnan (a.states.quantiles(~vis, :, :)(:))));
%! assert (all (isnan (a.forecast.mean(~vis, :)(:))));
%! assert (all (isnan (a.smoothed.states.mean(~vis, :)(:))));
%! assert (all (isnan (a.smoothed.states.quantiles(~vis, :, :)(:))));
%! assert (all (isfinite (b.states.mean(:))));
%! assert (all (isfinite (b.states.quantiles(:))));

%!test
%! % named states join the visible ones; a parameter's name changes nothing
%! b = sluice.filter (s, pr, obs, o{:}, 'summarize', 'all');
%! c = sluice.filter (s, pr, obs, o{:}, 'summarize', {s.states{5}, 'X2', s.states{40}});
%! want = vis;
%! want([5 40]) = true;
%! assert (c.summarized_states, want);
%! assert (bits (c.states.mean(want, :)), bits (b.states.mean(want, :)));
%! assert (bits (c.states.quantiles(want, :, :)), bits (b.states.quantiles(want, :, :)));
%! assert (bits (c.smoothed.states.mean(want, :)), bits (b.smoothed.states.mean(want, :)));
%! assert (all (isnan (c.states.mean(~want, :)(:))));
%! % every internal state named: as 'all'
%! d = sluice.filter (s, pr, obs, o{:}, 'summarize', s.states(~vis));
%! assert (~isfield (d, 'summarized_states'));
%! assert (bits (d.states.quantiles), bits (b.states.quantiles));
%! % an empty list: the visible states
%! e = sluice.filter (s, pr, obs, o{:}, 'summarize', {});
%! assert (e.summarized_states, vis);

%!test
%! % an ensemble Kalman run leaves the same rows out, the others as 'all'
%! warning ('off', 'sluice:filter:nonfinite', 'local');   % a member's stores may blow up
%! og = struct ('time', obs.time, 'variable', {obs.variable}, 'value', obs.value, ...
%!              'sigma', 0.1 * obs.value + 0.01);
%! q = {'members', 100, 'seed', 2, 'forcing', fo, 'progress', false, 'method', 'enkf'};
%! a = sluice.filter (s, pr, og, q{:});
%! b = sluice.filter (s, pr, og, q{:}, 'summarize', 'all');
%! assert (bits (a.states.mean(vis, :)), bits (b.states.mean(vis, :)));
%! assert (bits (a.params.quantiles), bits (b.params.quantiles));
%! assert (all (isnan (a.states.mean(~vis, :)(:))));

%!test
%! % a model with no internal state: 'visible' is 'all', bit for bit
%! lin = sluice.model ('linear', 'A', [0.9 0.1; 0 0.8], 'Q', diag ([0.1 0.1]), ...
%!                     'states', {'u', 'v'});
%! lp = sluice.prior ('u', 'normal', [0 1], 'v', 'normal', [0 1]);
%! lo = struct ('time', (1:5)', 'variable', {repmat({'u'}, 5, 1)}, 'value', [0.3; 0.1; -0.2; 0.4; 0], ...
%!              'sigma', 0.5 * ones (5, 1));
%! a = sluice.filter (lin, lp, lo, 'members', 300, 'seed', 1, 't0', 0, 'progress', false);
%! b = sluice.filter (lin, lp, lo, 'members', 300, 'seed', 1, 't0', 0, 'progress', false, ...
%!                    'summarize', 'all');
%! assert (~isfield (a, 'summarized_states'));
%! assert (bits (a.states.quantiles), bits (b.states.quantiles));
%! assert (bits (a.forecast.mean), bits (b.forecast.mean));

%!test
%! % scores: a state not summarised has NaN error, RMSE and coverage; the
%! % figures over states are those of the summarised states (the same
%! % numbers as the 'all' run's restricted to them)
%! q = {'members', 200, 'seed', 5, 'forcing', fo, 'progress', false};
%! a = sluice.filter (s, pr, obs, q{:});
%! b = sluice.filter (s, pr, obs, q{:}, 'summarize', 'all');
%! sa = sluice.scores (a, truth);
%! sb = sluice.scores (b, truth);
%! assert (all (isnan (sa.rmse(~vis))));
%! assert (all (isnan (sa.coverage(~vis, :)(:))));
%! assert (sa.rmse(vis), sb.rmse(vis));
%! E = sb.error(vis, :);
%! assert (sa.rmse_all, sqrt (mean (E(:) .^ 2)));   % root mean square, by definition
%! assert (sa.rmse_time, sqrt (mean (E .^ 2, 1)));
%! assert (isfinite (sa.spread_all) && isfinite (sa.coverage_all(1)));

%!test
%! % save_run and load_run keep the NaN rows and the flags; report draws
%! % the result (the internal states are not drawn by default)
%! sluice.internal.compat ('netcdf', 'save_run');
%! a = sluice.filter (s, pr, obs, 'members', 100, 'seed', 5, 'forcing', fo, 'progress', false);
%! d = tempname ();
%! mkdir (d);
%! unwind_protect
%!   f = fullfile (d, 'gr4j.nc');
%!   sluice.save_run (a, f);
%!   back = sluice.load_run (f);
%!   assert (logical (back.summarized_states), a.summarized_states);
%!   assert (bits (back.states.mean), bits (a.states.mean));
%!   assert (bits (back.states.quantiles), bits (a.states.quantiles));
%!   files = sluice.report (back, 'outdir', fullfile (d, 'report'), 'obs', obs);
%!   assert (numel (files) >= 3);
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (d, 's');
%! end_unwind_protect

%!error id=sluice:filter:badoption ...
%! sluice.filter (s, pr, obs, 'members', 10, 'forcing', fo, 'progress', false, 'summarize', 'some')
%!error id=sluice:filter:badoption ...
%! sluice.filter (s, pr, obs, 'members', 10, 'forcing', fo, 'progress', false, 'summarize', 3)
%!error id=sluice:filter:badoption ...
%! sluice.filter (s, pr, obs, 'members', 10, 'forcing', fo, 'progress', false, 'summarize', {'S', 3})
%!error id=sluice:filter:unknownstate ...
%! sluice.filter (s, pr, obs, 'members', 10, 'forcing', fo, 'progress', false, 'summarize', {'S', 'nosuch'})
%!error id=sluice:evidence:unknownstate ...
%! sluice.evidence (s, pr, obs, 'members', 10, 'forcing', fo, 'progress', false, 'summarize', {'nosuch'})
