% When a run goes wrong: every failure mode of README.md's section "When a
% run goes wrong", what the result or the error says, and where it is
% tested. The modes tested elsewhere are listed with their test; the
% others are tested here.
%
%   mode                                   says                                  test
%   all members impossible (-Inf lik.)     res.degenerate, ESS 0, evidence -Inf,  test_pf_features.m ("every member
%                                          warning sluice:filter:degenerate        impossible", "%!warning <no member")
%   members that blow up (NaN/Inf state)   res.nonfinite, zero weight, warning    test_pf_features.m ("members that blow up")
%                                          sluice:filter:nonfinite; esmda:         esmda.m (%!error id=sluice:esmda:nonfinite)
%                                          sluice:esmda:nonfinite
%   model function errors, own id          the user's identifier and message       test_pf_features.m (id=my:own:failure)
%   model function errors, no id           sluice:filter:modelfailed               here
%   model function: wrong size or class    sluice:filter:badmodeloutput            test_pf_features.m
%   model function: NaN                    as "members that blow up"               test_pf_features.m
%   callback runs out of memory            the error's own id (Octave:bad-alloc),  here
%                                          never "interrupted"
%   operator errors / wrong size           its id, or sluice:filter:               test_operators.m (boom, user:oops,
%                                          badoperatoroutput                       badoperatoroutput)
%   operator returns NaN                   pf: zero likelihood, res.nanpredicted,  here
%                                          warning sluice:filter:nanprediction;
%                                          etkf: sluice:filter:nonfinite
%   operator result that fails its check   the error's own id (was reported as     here
%                                          an interrupt)
%   observation table errors               sluice:filter:badobs (row named),      test_pf_features.m, test_obs_csv.m,
%                                          sluice:read_obs:<reason> (file, line,   test_read_obs_forms.m
%                                          column named)
%   run too long to end (steps > 2^32 - 1  sluice:<fn>:toomanysteps, before any   propagate.m, simulate.m, filter.m;
%   or > 1e15 member-state-steps)          work                                    test_integrate.c, test_pf.c
%   memory refused before the run          sluice:<fn>:nomemory, naming the        test_memory_check.m (the boundary of
%                                          largest part and its option             every method and option), test_pf_
%                                                                                  features.m, draw.m, esmda.m, model.m,
%                                                                                  simulate.m, smooth.m
%   Ctrl-C                                 sluice:filter:interrupted (also         test_interrupt.m; test_enkf.c,
%                                          esmda, smooth, ...), sweep:interrupted, test_letkf.c, test_smooth.c (polls);
%                                          pmmh:interrupted                        here (pmmh mapping)
%   run killed (kill -9, power cut)        sweep 'file' / pmmh 'checkpoint' kept   test_kill_resume.m (random kills,
%                                          whole; the same call resumes, bit for   bit-identical resumes), pmmh.m
%                                          bit; sluice:pmmh:badcheckpoint          (%!error id=...badcheckpoint)
%                                          the <file>.tmp<pid> it left: removed    test_stale_tmp.m
%                                          by the next run, once <pid> is gone
%   parallel worker dies                   sluice:sweep:workerfailed,              here
%                                          sluice:pmmh:workerfailed
%   parallel point / chain errors          sluice:sweep:pointfailed; a chain's     here, test_sweep_parallel.m
%                                          own id (sluice:pmmh:chainfailed
%                                          without one)
%   parameter collapse / at a bound /      warnings sluice:filter:paramcollapse,   test_param_move.m, test_calibration.m,
%   low ESS / approximate parameters       :atbound, :lowess, :approxparams        test_wenkf.m, test_pf_features.m
%   fixed-lag smoother's paths coalesced   res.smoothed.distinct, warning          test_smooth_ancestors.m, test_pf.c
%   (smoothed bands too narrow)            sluice:filter:smoothcollapse            (check_lag_ancestors)
%   PMMH not converged / low ESS           warnings sluice:pmmh:notconverged,      test_pmmh.m
%                                          sluice:pmmh:lowess
%   mpirun: a point's / chain's / file's   the same id and message on every rank   tests/mpi/run.sh (pointfails,
%   error on one rank                                                              chainfails, badfile)
%   mpirun: ranks given different calls    sluice:sweep:mpimismatch,               tests/mpi/run.sh (mismatch,
%                                          sluice:pmmh:mpimismatch, every rank     chainmismatch)
%   mpirun: a rank's script stops          sluice:mpi:rankleft on the ranks        tests/mpi/run.sh (rankleft)
%                                          waiting for it; the job ends
%   MPI asked for, not built               sluice:<fn>:mpiunavailable, naming      tests/mpi/run.sh
%                                          make MPI=1
%   allocation failure inside OpenMP or    the process ends (an honest limit)      tools/lint_core + tests/lint: the core
%   OpenBLAS                                                                        itself never allocates

%!function kids = child_processes ()
%!  % the Octave processes that are children of this one (workers)
%!  [~, txt] = system (sprintf ('ps -o pid=,comm= --ppid %d', getpid ()));
%!  lines = strsplit (strtrim (txt), "\n");
%!  kids = lines(~cellfun ('isempty', regexp (lines, 'octave', 'once')));
%!endfunction

%!shared obs1
%! obs1 = struct ('time', (1:3)', 'variable', {repmat({'x'}, 3, 1)}, ...
%!                'value', [0.2; 0.1; 0.3], 'sigma', ones (3, 1));

%!test
%! % a model function that fails without an identifier
%! f = @(t, X, P, U, dt) error ('the weir gave way');
%! try
%!   sluice.filter (sluice.model (f, 'states', {'x'}), [], obs1, 'members', 5, 't0', 0);
%!   error ('the run should have failed');
%! catch err
%!   assert (err.identifier, 'sluice:filter:modelfailed');
%!   assert (~isempty (strfind (err.message, 'the model function failed at t = 0: the weir gave way')), '%s', err.message);
%! end

%!test
%! % a callback that runs out of memory: its own error, not an interrupt
%! % (Octave raises Octave:bad-alloc for an allocation that fails)
%! f = @(t, X, P, U, dt) error ('Octave:bad-alloc', 'out of memory or dimension too large for Octave''s index type');
%! try
%!   sluice.filter (sluice.model (f, 'states', {'x'}), [], obs1, 'members', 5, 't0', 0);
%!   error ('the run should have failed');
%! catch err
%!   assert (err.identifier, 'Octave:bad-alloc');
%!   assert (~isempty (strfind (err.message, 'out of memory')), '%s', err.message);
%! end
%! spec = sluice.model ('linear', 'A', 0.8, 'states', {'x'});
%! o = setfield (obs1, 'variable', repmat ({'h'}, 3, 1));
%! ops = struct ('names', 'h', 'fun', @(t, X, P) error ('Octave:bad-alloc', 'out of memory'));
%! try
%!   sluice.filter (spec, [], o, 'members', 5, 't0', 0, 'operators', ops);
%!   error ('the run should have failed');
%! catch err
%!   assert (err.identifier, 'Octave:bad-alloc');
%! end

%!test
%! % an operator's result whose check fails outside the operator's own
%! % code (its size cannot be asked): that error, with its identifier --
%! % not "the observation operator was interrupted" as it used to be
%! spec = sluice.model ('linear', 'A', 0.8, 'states', {'x'});
%! o = setfield (obs1, 'variable', repmat ({'h'}, 3, 1));
%! ops = struct ('names', 'h', 'fun', @(t, X, P) size_refuser ());
%! try
%!   sluice.filter (spec, [], o, 'members', 5, 't0', 0, 'operators', ops);
%!   error ('the run should have failed');
%! catch err
%!   assert (err.identifier, 'test:nosize');
%!   assert (err.message, 'this value refuses to tell its size');
%! end

%!test
%! % an operator that returns NaN for some members: the particle filter
%! % gives them a zero likelihood (they are not counted as blown up: their
%! % state is finite), counts them in res.nanpredicted and warns
%! % (sluice:filter:nanprediction); for every member the cycles are
%! % degenerate; the ETKF refuses the run
%! spec = sluice.model ('linear', 'A', 0.8, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! o = setfield (obs1, 'variable', repmat ({'h'}, 3, 1));
%! ops = struct ('names', 'h', 'fun', @(t, X, P) [NaN(1, 3), X(1, 4:end)]);
%! lastwarn ('');
%! r = sluice.filter (spec, pr, o, 'members', 20, 'seed', 4, 't0', 0, 'operators', ops, ...
%!                    'resample_threshold', 0);
%! [msg, id] = lastwarn ();
%! assert (id, 'sluice:filter:nanprediction');
%! assert (! isempty (strfind (msg, '3 member(s) with a finite state got a NaN predicted')));
%! assert (r.final.w(1:3), zeros (1, 3));
%! assert (r.nonfinite, [0 0 0]);
%! assert (r.nanpredicted, [3 3 3]);
%! assert (r.degenerate, false (1, 3));
%! % a missing observation needs no prediction: not counted
%! o2 = o; o2.value(2) = NaN;
%! r = sluice.filter (spec, pr, o2, 'members', 20, 'seed', 4, 't0', 0, 'operators', ops, ...
%!                    'resample_threshold', 0);
%! assert (r.nanpredicted, [3 0 3]);
%! % members whose state blew up (their predictions NaN too) are counted
%! % in res.nonfinite, not again in res.nanpredicted
%! f = @(t, X, P, U, dt) [0.8 * X(:, 1:4), X(:, 5:6) * NaN, 0.8 * X(:, 7:end)];
%! warning ('off', 'sluice:filter:nonfinite', 'local');
%! warning ('off', 'sluice:filter:nanprediction', 'local');
%! r = sluice.filter (sluice.model (f, 'states', {'x'}), pr, o, 'members', 20, 'seed', 4, ...
%!                    't0', 0, 'operators', ops, 'resample_threshold', 0);
%! assert (r.nonfinite, [2 2 2]);
%! assert (r.nanpredicted, [3 3 3]);
%! ops = struct ('names', 'h', 'fun', @(t, X, P) NaN (1, columns (X)));
%! warning ('off', 'sluice:filter:degenerate', 'local');
%! warning ('off', 'sluice:filter:nanprediction', 'local');
%! r = sluice.filter (spec, pr, o, 'members', 20, 'seed', 4, 't0', 0, 'operators', ops);
%! assert (r.degenerate, true (1, 3));
%! assert (r.ess, [0 0 0]);
%! try
%!   sluice.filter (spec, pr, o, 'members', 20, 'seed', 4, 't0', 0, 'operators', ops, 'method', 'etkf');
%!   error ('the run should have failed');
%! catch err
%!   assert (err.identifier, 'sluice:filter:nonfinite');
%!   assert (~isempty (strfind (err.message, 'is not finite')), '%s', err.message);
%! end

%!test
%! % a chain whose filter run was interrupted: sluice:pmmh:interrupted
%! % (the identifier a Ctrl-C gives the filter, raised here by the model)
%! f = @(t, X, P, U, dt) error ('sluice:filter:interrupted', 'the run was interrupted at cycle 2 of 3 (Ctrl-C)');
%! spec = sluice.model (f, 'states', {'x'}, 'params', {'a'});
%! pr = sluice.prior ('a', 'uniform', [0 1], 'x', 'normal', [0 1]);
%! try
%!   sluice.pmmh (spec, pr, obs1, 'members', 5, 'chains', 1, 'iterations', 2, 'burnin', 0, ...
%!                'parallel', false, 'filter', struct ('t0', 0));
%!   error ('the run should have failed');
%! catch err
%!   assert (err.identifier, 'sluice:pmmh:interrupted');
%!   assert (strncmp (err.message, 'chain 1: ', 9), '%s', err.message);
%!   assert (~isempty (strfind (err.message, 'the run was interrupted at cycle 2')), '%s', err.message);
%!   assert (~isempty (strfind (err.message, '''continue''')), '%s', err.message);
%! end

%!function X = stop_once (X, at)
%!  % the model x' = x that stops one run (as Ctrl-C would) at its at-th
%!  % call; at < 0 starts the count again
%!  persistent calls
%!  if (at < 0 || isempty (calls))
%!    calls = 0;
%!    return;
%!  end
%!  calls = calls + 1;
%!  if (calls == at)
%!    error ('sluice:filter:interrupted', 'the run was interrupted at cycle 1 of 3 (Ctrl-C)');
%!  end
%!endfunction

%!test
%! % the same with a checkpoint: the message says what it keeps, and the
%! % same call resumes to the result of a run never stopped
%! spec = sluice.model (@(t, X, P, U, dt) stop_once (X, 40), 'states', {'x'}, 'params', {'a'});
%! pr = sluice.prior ('a', 'uniform', [0 1], 'x', 'normal', [0 1]);
%! o = {'members', 5, 'chains', 1, 'iterations', 30, 'burnin', 0, 'parallel', false, ...
%!      'filter', struct('t0', 0), 'max_rhat', 1e9, 'min_ess', 0};
%! f = [tempname() '.ckp'];
%! unwind_protect
%!   stop_once ([], -1);
%!   try
%!     sluice.pmmh (spec, pr, obs1, o{:}, 'checkpoint', f, 'checkpoint_every', 4);
%!     error ('the run should have failed');
%!   catch err
%!     assert (err.identifier, 'sluice:pmmh:interrupted');
%!     done = regexp (err.message, 'holds the first (\d+) iterations', 'tokens', 'once');
%!     assert (~isempty (done), '%s', err.message);
%!     assert (mod (str2double (done{1}), 4), 0);
%!     assert (str2double (done{1}) > 0 && str2double (done{1}) < 30);
%!   end
%!   r1 = sluice.pmmh (spec, pr, obs1, o{:}, 'checkpoint', f, 'checkpoint_every', 4);
%!   r0 = sluice.pmmh (spec, pr, obs1, o{:});
%!   assert (r1.samples, r0.samples, 0);
%!   assert (r1.filter_calls, r0.filter_calls);
%! unwind_protect_cleanup
%!   if (exist (f, 'file'))
%!     delete (f);
%!   end
%! end_unwind_protect

%!test
%! % a parallel sweep whose model kills its own worker at a = 3: the
%! % error names the point and keeps what the workers finished; no worker
%! % is left behind; the same call again (serially: the model only kills
%! % worker processes) runs only the rest and gives the table of a sweep
%! % that was never stopped
%! if (isempty (pkg ('list', 'parallel')))
%!   return;    % no worker processes without the parallel package
%! end
%! parent = getpid ();
%! fun = @(p) doomed_run (p, parent);
%! g = struct ('a', [1 2 3 4 6 7]);
%! file = [tempname() '.sweep'];
%! unwind_protect
%!   try
%!     sluice.sweep (fun, g, 'workers', 2, 'file', file);
%!     error ('the sweep should have failed');
%!   catch err
%!     assert (err.identifier, 'sluice:sweep:workerfailed');
%!     assert (~isempty (strfind (err.message, 'a worker process died while running point (a=3)')), '%s', err.message);
%!     assert (~isempty (strfind (err.message, 'killed by signal 9')), '%s', err.message);
%!     assert (~isempty (strfind (err.message, ['are kept in ' file])), '%s', err.message);
%!   end
%!   assert (isempty (child_processes ()), 'left behind: %s', strjoin (child_processes (), '; '));
%!   kept = sluice.internal.compat ('load_binary', file);
%!   assert (~any (strcmp (kept.sweep_done.key, 'a=n:3;')));
%!   [t, info] = sluice.sweep (fun, g, 'workers', 1, 'file', file);
%!   assert (info.nreused, numel (kept.sweep_done.key));
%!   assert (t, sluice.sweep (fun, g, 'workers', 1));
%! unwind_protect_cleanup
%!   if (exist (file, 'file'))
%!     delete (file);
%!   end
%! end_unwind_protect

%!test
%! % without a results file the error says nothing is kept; a point whose
%! % model fails without an identifier is a point failure that names it
%! if (isempty (pkg ('list', 'parallel')))
%!   return;
%! end
%! parent = getpid ();
%! fun = @(p) doomed_run (p, parent);
%! try
%!   sluice.sweep (fun, struct ('a', [1 3]), 'workers', 2);
%!   error ('the sweep should have failed');
%! catch err
%!   assert (err.identifier, 'sluice:sweep:workerfailed');
%!   assert (~isempty (strfind (err.message, 'no finished point is kept')), '%s', err.message);
%! end
%! assert (isempty (child_processes ()), 'left behind: %s', strjoin (child_processes (), '; '));
%! try
%!   sluice.sweep (fun, struct ('a', [1 5 6]), 'workers', 2);
%!   error ('the sweep should have failed');
%! catch err
%!   assert (err.identifier, 'sluice:sweep:pointfailed');
%!   assert (~isempty (strfind (err.message, '(a=5)')), '%s', err.message);
%!   assert (~isempty (strfind (err.message, 'the doomed step refuses a = 5')), '%s', err.message);
%!   assert (~isempty (strfind (err.message, 'sluice:filter:modelfailed')), '%s', err.message);
%! end
%! % after a failure the next parallel call starts afresh
%! [t, info] = sluice.sweep (fun, struct ('a', [1 2]), 'workers', 2);
%! assert (info.parallel && all (isfinite (t.ev)));

%!test
%! % parallel PMMH chains: chain 2 starts at a = 3, where the model kills
%! % its worker; chain 2 starting at a = 5 fails without an identifier
%! if (isempty (pkg ('list', 'parallel')))
%!   return;
%! end
%! parent = getpid ();
%! spec = sluice.model (@(t, X, P, U, dt) doomed_step (t, X, P, U, dt, parent), ...
%!                      'states', {'x'}, 'params', {'a'});
%! pr = sluice.prior ('a', 'uniform', [0 8], 'x', 'normal', [0 1]);
%! o = {'members', 10, 'chains', 2, 'iterations', 3, 'burnin', 0, 'workers', 2, ...
%!      'parallel', true, 'filter', struct('t0', 0)};
%! try
%!   sluice.pmmh (spec, pr, obs1, o{:}, 'start', [1.5 3]);
%!   error ('the run should have failed');
%! catch err
%!   assert (err.identifier, 'sluice:pmmh:workerfailed');
%!   assert (~isempty (strfind (err.message, 'died while running chain 2 (killed by signal 9')), '%s', err.message);
%! end
%! assert (isempty (child_processes ()), 'left behind: %s', strjoin (child_processes (), '; '));
%! try
%!   sluice.pmmh (spec, pr, obs1, o{:}, 'start', [1.5 5]);
%!   error ('the run should have failed');
%! catch err
%!   assert (err.identifier, 'sluice:filter:modelfailed');
%!   assert (~isempty (strfind (err.message, 'the doomed step refuses a = 5')), '%s', err.message);
%! end

%!test
%! % the helper itself: without the failure output a dead worker is the
%! % error sluice:compat:workerfailed
%! if (isempty (pkg ('list', 'parallel')))
%!   return;
%! end
%! parent = getpid ();
%! try
%!   sluice.internal.compat ('parallel_map', 2, @(a) doomed_step (0, 1, a, [], 1, parent), {1, 3});
%!   error ('the map should have failed');
%! catch err
%!   assert (err.identifier, 'sluice:compat:workerfailed');
%! end
%! [out, failure] = sluice.internal.compat ('parallel_map', 2, @(a) doomed_step (0, 1, a, [], 1, parent), {1, 3});
%! assert (isempty (out));
%! assert (failure.index, 2);
%! assert (failure.died);
%! assert (failure.how, 'killed by signal 9');
%! assert (isempty (child_processes ()), 'left behind: %s', strjoin (child_processes (), '; '));
%! % a map that goes well keeps its workers for the next call (the
%! % parallel package's own habit)
%! [out, failure] = sluice.internal.compat ('parallel_map', 2, @(a) doomed_step (0, 1, a, [], 1, parent), {1, 2});
%! assert (out, {1, 1.1}, 1e-15);
%! assert (isempty (failure));
