% Long runs that survive kill -9: a checkpointed PMMH run, a checkpointed
% particle filter and a sweep with a results file are each run in a child octave-cli, killed with SIGKILL
% at random moments, and started again with the same call; after every
% kill the file left behind must load whole, and the run finished at last
% must equal one run never stopped (the reference, also run in a child).
% The number of kills per run is SLUICE_KILLS (default 4; the reliability
% figures were measured with 50). A run that finishes before its kill
% comes does not count; the campaign then starts again from nothing.

%!function out = run_child (body, kill_after, d)
%!  % run body (Octave code, in directory d) in a child process; with
%!  % kill_after finite, SIGKILL it that many seconds after it started.
%!  % out: true if the child finished by itself (exit status 0).
%!  mdir = fileparts (fileparts (which ('sluice.filter')));   % .../m
%!  fid = fopen (fullfile (d, 'child.m'), 'w');
%!  fprintf (fid, 'warning (''off'', ''Octave:shadowed-function'');\n');
%!  fprintf (fid, 'warning (''off'', ''sluice:pmmh:notconverged'');\n');
%!  fprintf (fid, 'warning (''off'', ''sluice:pmmh:lowess'');\n');
%!  fprintf (fid, 'addpath (''%s'');\n%s\n', mdir, body);
%!  fclose (fid);
%!  [~] = unlink (fullfile (d, 'rc'));
%!  bin = fullfile (OCTAVE_HOME (), 'bin', 'octave-cli');
%!  system (sprintf (['cd ''%s'' && { ''%s'' --no-history --norc --quiet child.m > out.txt 2>&1 & ', ...
%!                    'echo $! > pid; wait $!; echo $? > rc; } > /dev/null 2>&1 &'], d, bin));
%!  pid = read_number (fullfile (d, 'pid'), 10);
%!  [~] = unlink (fullfile (d, 'pid'));
%!  t0 = tic ();
%!  limit = min (kill_after, 120);       % never left behind
%!  while (~exist (fullfile (d, 'rc'), 'file') && toc (t0) < limit)
%!    pause (0.02);
%!  end
%!  if (~exist (fullfile (d, 'rc'), 'file'))
%!    kill (pid, SIG ().KILL);
%!  end
%!  out = read_number (fullfile (d, 'rc'), 30) == 0;
%!endfunction

%!function v = read_number (f, wait)
%!  % the number the shell writes to file f (it may exist before it is
%!  % written), waiting at most `wait` seconds
%!  t0 = tic ();
%!  v = NaN;
%!  while (isnan (v) && toc (t0) < wait)
%!    if (exist (f, 'file'))
%!      v = str2double (fileread (f));
%!    end
%!    if (isnan (v))
%!      pause (0.01);
%!    end
%!  end
%!  assert (~isnan (v), 'no number in %s', f);
%!endfunction

%!function [ref, got, kills, early] = kill_campaign (body, check_file, seed, within)
%!  % the reference result (an unbroken child run), then kills at random
%!  % times within that run's duration (its first fraction `within`,
%!  % default 1), then a last run to the end
%!  if (nargin < 4)
%!    within = 1;
%!  end
%!  nk = str2double (getenv ('SLUICE_KILLS'));
%!  if (isnan (nk))
%!    nk = 4;
%!  end
%!  d = tempname ();
%!  mkdir (d);
%!  unwind_protect
%!    t0 = tic ();
%!    assert (run_child (strrep (body, 'FILE', 'ref.bin'), Inf, d), ...
%!            'the unbroken run failed:\n%s', fileread (fullfile (d, 'out.txt')));
%!    span = toc (t0);
%!    ref = load (fullfile (d, 'result.bin'));
%!    [~] = unlink (fullfile (d, 'result.bin'));
%!    rand ('seed', seed);
%!    kills = 0;
%!    early = 0;     % runs that finished before their kill came
%!    attempts = 0;
%!    while (kills < nk && attempts < 3 * nk)
%!      attempts = attempts + 1;
%!      if (run_child (strrep (body, 'FILE', 'run.bin'), within * span * rand (), d))
%!        early = early + 1;
%!        [~] = unlink (fullfile (d, 'run.bin'));   % start the campaign again
%!      else
%!        kills = kills + 1;
%!      end
%!      if (exist (fullfile (d, 'run.bin'), 'file'))
%!        check_file (fullfile (d, 'run.bin'));   % whole after any kill
%!      end
%!    end
%!    assert (kills == nk, 'only %d of %d runs were killed', kills, nk);
%!    assert (run_child (strrep (body, 'FILE', 'run.bin'), Inf, d), ...
%!            'the resumed run failed:\n%s', fileread (fullfile (d, 'out.txt')));
%!    got = load (fullfile (d, 'result.bin'));
%!  unwind_protect_cleanup
%!    confirm_recursive_rmdir (false, 'local');
%!    rmdir (d, 's');
%!  end_unwind_protect
%!endfunction

%!function check_pmmh_file (f)
%!  s = load (f);
%!  c = s.pmmh_checkpoint;
%!  assert (all (isfield (c, {'key', 'result', 'complete'})));
%!  assert (all (isfield (c.result, {'samples', 'chain_state', 'iterations'})));
%!endfunction

%!function check_filter_file (f)
%!  % every checkpoint of one run has the same size (the workspace and the
%!  % outputs do not grow) and opens with the format's magic text; the
%!  % checksum inside is verified when the next run resumes from it
%!  ref = dir (fullfile (fileparts (f), 'ref.bin'));
%!  got = dir (f);
%!  assert (got.bytes, ref.bytes);
%!  fid = fopen (f, 'r');
%!  magic = fread (fid, 8, 'char=>char')';
%!  fclose (fid);
%!  assert (magic, 'SLFCKPT1');
%!endfunction

%!function check_sweep_file (f)
%!  s = load (f);
%!  assert (all (isfield (s.sweep_done, {'key', 'seed', 'time', 'scores'})));
%!  assert (numel (s.sweep_done.key) == numel (s.sweep_done.scores));
%!endfunction

%!test
%! % PMMH with a checkpoint every 3 iterations (blocks inside the burn-in too)
%! body = [' spec = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, ''states'', {''x''}, ', ...
%!         '''params'', {''a''}, ''defaults'', 0.5);\n', ...
%!         ' pr = sluice.prior (''a'', ''uniform'', [-1 1], ''x'', ''normal'', [0 1]);\n', ...
%!         ' obs = struct (''time'', (1:5)'', ''variable'', {repmat({''x''}, 5, 1)}, ', ...
%!         '''value'', [0.3; -0.2; 0.5; 0.1; 0.4], ''sigma'', ones (5, 1));\n', ...
%!         ' r = sluice.pmmh (spec, pr, obs, ''members'', 40, ''chains'', 2, ''burnin'', 20, ', ...
%!         '''iterations'', 70, ''thin'', 2, ''seed'', 3, ''parallel'', false, ', ...
%!         '''filter'', struct (''t0'', 0, ''state_noise'', 1), ', ...
%!         '''checkpoint'', ''FILE'', ''checkpoint_every'', 3);\n', ...
%!         ' samples = r.samples; loglik = r.loglik; proposal = r.proposal; ', ...
%!         'calls = r.filter_calls; state = r.chain_state;\n', ...
%!         ' save (''-binary'', ''result.bin'', ''samples'', ''loglik'', ''proposal'', ', ...
%!         '''calls'', ''state'');\n'];
%! [ref, got, kills, early] = kill_campaign (sprintf (body), @check_pmmh_file, 11);
%! printf ('pmmh: %d kills, %d runs finished before their kill\n', kills, early);

%! assert (got.samples, ref.samples, 0);
%! assert (got.loglik, ref.loglik, 0);
%! assert (got.proposal, ref.proposal, 0);
%! assert (got.calls, ref.calls);
%! assert (isequaln (got.state, ref.state));

%!test
%! % a particle filter over 500 cycles, resample_move on noisy paths (its
%! % stored draws move too), a checkpoint every 10 cycles
%! body = [' spec = sluice.model (@(t, X, P, U, dt) P(1, :) .* X + 0.1, ''states'', {''x''}, ', ...
%!         '''params'', {''a''});\n', ...
%!         ' pr = sluice.prior (''a'', ''uniform'', [0.5 1], ''x'', ''normal'', [0 1]);\n', ...
%!         ' obs = struct (''time'', (1:500)'', ''variable'', {repmat({''x''}, 500, 1)}, ', ...
%!         '''value'', sin ((1:500)''), ''sigma'', 0.5 * ones (500, 1));\n', ...
%!         ' r = sluice.filter (spec, pr, obs, ''members'', 400, ''seed'', 5, ''t0'', 0, ', ...
%!         '''progress'', false, ''param_move'', ''resample_move'', ''state_noise'', 0.1, ', ...
%!         '''checkpoint'', ''FILE'', ''checkpoint_every'', 10);\n', ...
%!         ' r = rmfield (r, ''options'');\n', ...
%!         ' save (''-binary'', ''result.bin'', ''r'');\n'];
%! % kills within the first half of the unbroken run's time: a resumed
%! % run is shorter, and one that finishes first starts the campaign over
%! [ref, got, kills, early] = kill_campaign (sprintf (body), @check_filter_file, 13, 0.5);
%! printf ('filter: %d kills, %d runs finished before their kill\n', kills, early);
%! assert (isequaln (got.r, ref.r));

%!test
%! % a sweep of 30 points with a results file
%! body = [' spec = sluice.model (''linear'', ''A'', 0.8, ''states'', {''x''});\n', ...
%!         ' obs = struct (''time'', (1:10)'', ''variable'', {repmat({''x''}, 10, 1)}, ', ...
%!         '''value'', sin ((1:10)''), ''sigma'', ones (10, 1));\n', ...
%!         ' pr = sluice.prior (''x'', ''normal'', [0 1]);\n', ...
%!         ' fun = @(p) struct (''ev'', getfield (sluice.filter (spec, pr, obs, ''members'', p.members, ', ...
%!         '''seed'', p.seed, ''t0'', 0, ''state_noise'', 0.5), ''log_evidence''));\n', ...
%!         ' [t, info] = sluice.sweep (fun, struct (''members'', 100 * (1:30)), ', ...
%!         '''file'', ''FILE'', ''workers'', 1, ''seed'', 4);\n', ...
%!         ' ev = t.ev; seeds = t.seed;\n', ...
%!         ' save (''-binary'', ''result.bin'', ''ev'', ''seeds'');\n'];
%! [ref, got, kills, early] = kill_campaign (sprintf (body), @check_sweep_file, 12);
%! printf ('sweep: %d kills, %d runs finished before their kill\n', kills, early);

%! assert (got.ev, ref.ev, 0);
%! assert (got.seeds, ref.seeds, 0);
