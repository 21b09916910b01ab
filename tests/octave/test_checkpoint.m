% Checkpoints of sluice.filter: a run stopped after a checkpoint and run
% again with the same file ends bit-identical to a run never stopped
% (the random streams are counter-based: the result depends on the
% settings alone); files that are damaged, foreign or of other settings
% are refused. A run is stopped by an observation operator that raises
% an error at a chosen cycle (checkpoint_trip.m), in this process.

%!function [ref, got, again] = stop_and_resume (m, pr, obs, args, stop_at, every)
%!  global SLUICE_TRIP_AT
%!  f = [tempname() '.ckpt'];
%!  op = struct ('names', 'y', 'fun', @checkpoint_trip);
%!  args = [args, {'operators', op, 'progress', false}];
%!  SLUICE_TRIP_AT = [];
%!  ref = sluice.filter (m, pr, obs, args{:});
%!  SLUICE_TRIP_AT = stop_at;
%!  try
%!    sluice.filter (m, pr, obs, args{:}, 'checkpoint', f, 'checkpoint_every', every);
%!    stopped = false;
%!  catch err
%!    stopped = ~isempty (strfind (err.message, 'stopped on purpose'));
%!  end
%!  SLUICE_TRIP_AT = [];
%!  assert (stopped);
%!  assert (exist (f, 'file') == 2);
%!  got = sluice.filter (m, pr, obs, args{:}, 'checkpoint', f, 'checkpoint_every', every);
%!  % a finished run keeps its final checkpoint: the same call returns it
%!  again = sluice.filter (m, pr, obs, args{:}, 'checkpoint', f, 'checkpoint_every', every);
%!  delete (f);
%!  clear -global SLUICE_TRIP_AT
%!  ref.options = []; got.options = []; again.options = [];
%!endfunction

%!shared m, pr, obs, mlin, prlin
%! m = sluice.model (@(t, X, P, U, dt) P(1, :) .* X + 0.1, 'states', {'x'}, 'params', {'a'});
%! pr = sluice.prior ('a', 'uniform', [0.5 1], 'x', 'normal', [0 1]);
%! T = 30;
%! obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, ...
%!               'value', sin (1:T)', 'sigma', 0.5 * ones (T, 1));
%! mlin = sluice.model ('linear', 'A', [0.9 0.1; -0.1 0.9], 'Q', 0.05 * eye (2), ...
%!                      'states', {'x', 'v'});
%! prlin = sluice.prior ('x', 'normal', [0 1], 'v', 'normal', [0 1]);

%!test
%! % particle filter, kernel move, state noise, kept history
%! [ref, got, again] = stop_and_resume (m, pr, obs, {'members', 200, 'seed', 4, 't0', 0, ...
%!                     'param_move', 'kernel', 'state_noise', 0.1, 'history', true}, 17, 4);
%! assert (isequaln (got, ref));
%! assert (isequaln (again, ref));
%! % the forecast PITs of the cycles before the stop come from the file
%! assert (all (isfinite (got.pit)) && isequal (got.pit, ref.pit));

%!test
%! % an interrupted run with a checkpoint says what it keeps and how to go on
%! global SLUICE_TRIP_AT SLUICE_TRIP_ID
%! f = [tempname() '.ckpt'];
%! op = struct ('names', 'y', 'fun', @checkpoint_trip);
%! SLUICE_TRIP_AT = 10;
%! SLUICE_TRIP_ID = 'sluice:filter:interrupted';
%! unwind_protect
%!   try
%!     sluice.filter (m, pr, obs, 'members', 50, 'seed', 3, 't0', 0, 'operators', op, ...
%!                    'progress', false, 'checkpoint', f, 'checkpoint_every', 4);
%!     error ('the run should have stopped');
%!   catch err
%!     assert (err.identifier, 'sluice:filter:interrupted');
%!     assert (~isempty (strfind (err.message, ['The checkpoint ' f ...
%!                                              ' keeps the run up to its last write (every 4 cycles)'])), ...
%!             '%s', err.message);
%!     assert (~isempty (strfind (err.message, 'the same call resumes from there')), '%s', err.message);
%!   end
%! unwind_protect_cleanup
%!   clear -global SLUICE_TRIP_AT SLUICE_TRIP_ID
%!   if (exist (f, 'file'))
%!     delete (f);
%!   end
%! end_unwind_protect

%!test
%! % resample_move on noisy paths (its stored draws move too), checkpoint every cycle
%! [ref, got] = stop_and_resume (m, pr, obs, {'members', 100, 'seed', 5, 't0', 0, ...
%!                     'param_move', 'resample_move', 'state_noise', 0.1}, 9, 1);
%! assert (isequaln (got, ref));

%!test
%! % tempering (ll and the ancestors it composes swap buffers)
%! [ref, got] = stop_and_resume (m, pr, obs, {'members', 150, 'seed', 6, 't0', 0, ...
%!                     'param_move', 'kernel', 'temper_ess', 0.8}, 12, 5);
%! assert (isequaln (got, ref));

%!test
%! % ETKF with adaptive inflation, and the ensemble Kalman smoother
%! [ref, got] = stop_and_resume (mlin, prlin, obs, {'members', 40, 'seed', 7, 't0', 0, ...
%!                     'method', 'etkf', 'adaptive_inflation', true}, 21, 6);
%! assert (isequaln (got, ref));
%! [ref, got] = stop_and_resume (mlin, prlin, obs, {'members', 40, 'seed', 7, 't0', 0, ...
%!                     'method', 'etkf', 'lag', 4}, 14, 3);
%! assert (isequaln (got, ref));

%!test
%! % the fixed-lag particle smoother (its window slots are resampled)
%! [ref, got] = stop_and_resume (m, pr, obs, {'members', 150, 'seed', 8, 't0', 0, ...
%!                     'param_move', 'kernel', 'state_noise', 0.1, 'lag', 5}, 19, 7);
%! assert (isequaln (got, ref));

%!test
%! % SMC2 (its two systems swap buffers)
%! [ref, got] = stop_and_resume (m, pr, obs, {'members', 20, 'inner_members', 10, ...
%!                     'seed', 9, 't0', 0, 'param_move', 'smc2'}, 16, 5);
%! assert (isequaln (got, ref));

%!function id = raised (f)
%!  id = '';
%!  try
%!    f ();
%!  catch err
%!    id = err.identifier;
%!  end
%!endfunction

%!test
%! % refused: a file of other settings, a damaged one, a foreign one
%! f = [tempname() '.ckpt'];
%! a = {'members', 50, 'seed', 3, 't0', 0, 'progress', false, 'checkpoint', f};
%! r = sluice.filter (mlin, prlin, obs, a{:});
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:}, 'members', 60)), ...
%!         'sluice:filter:badcheckpoint');
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:}, 'seed', 4)), ...
%!         'sluice:filter:badcheckpoint');
%! obs2 = obs; obs2.value(3) = 0.25;
%! assert (raised (@() sluice.filter (mlin, prlin, obs2, a{:})), 'sluice:filter:badcheckpoint');
%! m2 = sluice.model (@(t, X, P, U, dt) P(1, :) .* X + 0.2, 'states', {'x'}, 'params', {'a'});
%! g = [tempname() '.ckpt'];
%! sluice.filter (m, pr, obs, 'members', 20, 'seed', 3, 't0', 0, 'progress', false, 'checkpoint', g);
%! assert (raised (@() sluice.filter (m2, pr, obs, 'members', 20, 'seed', 3, 't0', 0, ...
%!                                    'progress', false, 'checkpoint', g)), ...
%!         'sluice:filter:badcheckpoint');
%! delete (g);
%! % changing the interval or the progress display is allowed
%! r2 = sluice.filter (mlin, prlin, obs, a{:}, 'checkpoint_every', 7);
%! assert (isequaln (r2.states, r.states));
%! % one byte changed in the middle, or the file cut short
%! fid = fopen (f, 'r'); bytes = fread (fid, Inf, 'uint8=>uint8'); fclose (fid);
%! bad = bytes; k = round (numel (bytes) / 2); bad(k) = bitxor (bad(k), 1);
%! fid = fopen (f, 'w'); fwrite (fid, bad); fclose (fid);
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:})), 'sluice:filter:badcheckpoint');
%! fid = fopen (f, 'w'); fwrite (fid, bytes(1:end-9)); fclose (fid);
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:})), 'sluice:filter:badcheckpoint');
%! fid = fopen (f, 'w'); fwrite (fid, [bytes; 0]); fclose (fid);
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:})), 'sluice:filter:badcheckpoint');
%! fid = fopen (f, 'w'); fprintf (fid, 'a river gauge log\n'); fclose (fid);
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:})), 'sluice:filter:badcheckpoint');
%! delete (f);

%!test
%! % refused up front: a directory that cannot be written, no seed, bad options
%! a = {'members', 20, 't0', 0, 'progress', false};
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:}, 'seed', 1, 'checkpoint', ...
%!                                    '/nonexistent-dir/run.ckpt')), 'sluice:filter:badcheckpoint');
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:}, 'checkpoint', ...
%!                                    [tempname() '.ckpt'])), 'sluice:filter:badoption');
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:}, 'seed', 1, 'checkpoint', 3)), ...
%!         'sluice:filter:badoption');
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:}, 'seed', 1, 'checkpoint', ...
%!                                    'x.ckpt', 'checkpoint_every', 0)), 'sluice:filter:badoption');
%! % another number of threads: named, not a silent mismatch
%! f = [tempname() '.ckpt'];
%! sluice.filter (mlin, prlin, obs, a{:}, 'seed', 1, 'checkpoint', f, 'threads', 1);
%! assert (raised (@() sluice.filter (mlin, prlin, obs, a{:}, 'seed', 1, 'checkpoint', f, ...
%!                                    'threads', 2)), 'sluice:filter:badcheckpoint');
%! delete (f);

%!test
%! % sluice.evidence runs one filter per seed: each keeps its own file,
%! % <checkpoint>.seed<s> (one file for all clashed at the second run).
%! % Stopped in its first run and called again, it resumes and gives what
%! % an unbroken call gives; called once more, it reads every run back.
%! global SLUICE_TRIP_AT
%! f = [tempname() '.ckpt'];
%! op = struct ('names', 'y', 'fun', @checkpoint_trip);
%! o = obs;
%! o.variable = repmat ({'y'}, numel (o.time), 1);
%! args = {'members', 50, 't0', 0, 'seed', 7, 'repeats', 3, 'operators', op};
%! SLUICE_TRIP_AT = [];
%! ref = sluice.evidence (mlin, prlin, o, args{:});
%! SLUICE_TRIP_AT = 12;
%! try
%!   sluice.evidence (mlin, prlin, o, args{:}, 'checkpoint', f, 'checkpoint_every', 5);
%!   stopped = false;
%! catch err
%!   stopped = ~isempty (strfind (err.message, 'stopped on purpose'));
%! end
%! SLUICE_TRIP_AT = [];
%! clear -global SLUICE_TRIP_AT
%! assert (stopped);
%! assert (exist ([f '.seed7'], 'file') == 2 && exist ([f '.seed8'], 'file') == 0);
%! got = sluice.evidence (mlin, prlin, o, args{:}, 'checkpoint', f, 'checkpoint_every', 5);
%! again = sluice.evidence (mlin, prlin, o, args{:}, 'checkpoint', f, 'checkpoint_every', 5);
%! assert (isequal (got, ref) && isequal (again, ref));
%! for s = 7:9
%!   assert (exist (sprintf ('%s.seed%d', f, s), 'file') == 2);
%!   delete (sprintf ('%s.seed%d', f, s));
%! end
%! assert (exist (f, 'file') == 0);

%!error id=sluice:evidence:badoption sluice.evidence (mlin, prlin, struct ('time', 1, 'variable', {{'x'}}, 'value', 0, 'sigma', 1), 'checkpoint', 'x.ckpt')
%!error id=sluice:evidence:badoption sluice.evidence (mlin, prlin, struct ('time', 1, 'variable', {{'x'}}, 'value', 0, 'sigma', 1), 'seed', 1, 'checkpoint', 5)

%!test
%! % sluice.drift_test: each candidate's runs have their own files
%! % (<checkpoint>.step<k>.seed<s>, step0 without drift); the same call
%! % reads them back and gives the same result
%! f = [tempname() '.ckpt'];
%! args = {'a', [0.05 0.2], 'members', 50, 'repeats', 2, 'seed', 3, 't0', 0};
%! ref = sluice.drift_test (m, pr, obs, args{:});
%! a = sluice.drift_test (m, pr, obs, args{:}, 'checkpoint', f);
%! b = sluice.drift_test (m, pr, obs, args{:}, 'checkpoint', f);
%! assert (isequal (a, ref) && isequal (b, ref));
%! for k = 0:2
%!   for s = 3:4
%!     g = sprintf ('%s.step%d.seed%d', f, k, s);
%!     assert (exist (g, 'file') == 2, g);
%!     delete (g);
%!   end
%! end
%!error id=sluice:drift_test:badoption sluice.drift_test (m, pr, obs, 'a', 0.1, 'repeats', 2, 't0', 0, 'checkpoint', 'x.ckpt')

%!test
%! % sluice.twin: the filter keeps the checkpoint, its open loop (another
%! % run) <checkpoint>.openloop; called again, the twin reads both back
%! f = [tempname() '.ckpt'];
%! net = struct ('variable', 'x', 'every', 1, 'sigma', 0.3);
%! t = {mlin, struct('times', 0:12, 'x0', [1; 0]), net, 'seed', 2, 'prior', prlin};
%! fo = {'members', 40, 'seed', 5};
%! ref = sluice.twin (t{:}, 'filter', fo);
%! a = sluice.twin (t{:}, 'filter', [fo, {'checkpoint', f}]);
%! b = sluice.twin (t{:}, 'filter', [fo, {'checkpoint', f}]);
%! assert (exist (f, 'file') == 2 && exist ([f '.openloop'], 'file') == 2);
%! delete (f);
%! delete ([f '.openloop']);
%! ref.filter.options = []; a.filter.options = []; b.filter.options = [];
%! ref.openloop.options = []; a.openloop.options = []; b.openloop.options = [];
%! assert (isequaln (a, ref) && isequaln (b, ref));
