% on_ranks.m - run by every rank of `mpirun -np P octave-cli` (tests/mpi/run.sh):
% the case named by SLUICE_MPI_CASE. Each rank writes "RANK r: PASS name"
% or "RANK r: FAIL name: why" to SLUICE_MPI_DIR/rank<r>; run.sh reads
% them and times the job.
warning ('off', 'Octave:shadowed-function');
here = fileparts (mfilename ('fullpath'));
addpath (fullfile (here, '..', '..', 'm'));
addpath (here);
crash_dumps_octave_core (false);
% short chains: their convergence warnings are not the point here
warning ('off', 'sluice:pmmh:notconverged');
warning ('off', 'sluice:pmmh:lowess');
kase = getenv ('SLUICE_MPI_CASE');
dir_out = getenv ('SLUICE_MPI_DIR');
rank = str2double (getenv ('OMPI_COMM_WORLD_RANK'));
% the verdict goes to the rank's own file (lines of ranks interleave on
% the terminal) and to the output
say = @(ok, why) verdict (fullfile (dir_out, sprintf ('rank%d', rank)), ...
                          sprintf ('RANK %d: %s %s%s', rank, ifelse_text (ok), kase, why));

% a point: a small particle filter on a linear-Gaussian model, one thread
m = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'x'});
pr = sluice.prior ('x', 'normal', [0 1]);
obs = struct ('time', (1:8)', 'variable', {repmat({'x'}, 8, 1)}, ...
              'value', sin (1:8)' / 2, 'sigma', 0.5 * ones (8, 1));
run = @(p) sluice.filter (m, pr, obs, 'members', p.members, 'seed', p.seed, 't0', 0, ...
                          'progress', false, 'threads', 1);
fun = @(p) struct ('ll', getfield (run (p), 'log_evidence'), 'mult', p.k * p.members);
grid = struct ('members', [50 80 120], 'k', [1 2 3]);

sluice.kernel.mpi ('init');
if (strcmp (kase, 'rankleft') && rank == 1)
  % outside any try: this rank's Octave ends here with its own error
  error ('test:planted', 'rank 1 stops before the sweep');
end
% a chain: particle MCMC of one parameter of a small model
cspec = sluice.model (@(t, X, P, U, dt) planted_step (P, X), 'states', {'x'}, ...
                      'params', {'a', 'b'}, 'defaults', [0.5; 1]);
cpr = sluice.prior ('a', 'uniform', [-1 1], 'x', 'normal', [0 1]);
cobs = struct ('time', (1:5)', 'variable', {repmat({'x'}, 5, 1)}, ...
               'value', [0.3; -0.2; 0.5; 0.1; 0.4], 'sigma', ones (5, 1));
copt = {'members', 40, 'chains', 5, 'iterations', 10, 'burnin', 4, 'seed', 3, ...
        'filter', struct('t0', 0, 'state_noise', 1, 'threads', 1)};
same_chains = @(a, b) isequal (a.samples, b.samples) && isequal (a.loglik, b.loglik) ...
    && isequal (a.logpost, b.logpost) && isequal (a.acceptance, b.acceptance) ...
    && isequal (a.proposal, b.proposal) && isequal (a.scale, b.scale) ...
    && isequal (a.start, b.start) && isequal (a.chain_state, b.chain_state) ...
    && isequal (a.summary, b.summary);

try
  switch (kase)
    case 'gateway'
      % values through bcast and gather come back equal (isequal), and a
      % bad argument is a clear error, not a crash or a hang
      [r, n] = sluice.kernel.mpi ('init');
      v = struct ('a', {{'text', [1 2; 3 4], int8(-3)}}, 'b', single (pi), 'c', true (2, 1));
      got = sluice.internal.mpi ('bcast', setfield (v, 'from', r), n - 1);
      ok = isequal (got, setfield (v, 'from', n - 1));
      c = sluice.internal.mpi ('gather', {r, 'x'}, 0);
      if (r == 0)
        ok = ok && isequal (c, arrayfun (@(k) {k, 'x'}, 0:n-1, 'UniformOutput', false));
      else
        ok = ok && isempty (c);
      end
      s = sluice.kernel.mpi ('allreduce', [r; 1], 'sum');
      ok = ok && isequal (s, [n * (n - 1) / 2; n]);
      ok = ok && isequal (sluice.kernel.mpi ('allreduce', r, 'max'), n - 1);
      bad = {{'allreduce', int32(1), 'sum'}, {'allreduce', 1, 'prod'}, ...
             {'allreduce', 1i, 'sum'}, {'bcast', 1, 0}, {'bcast', uint8(1), n}, ...
             {'bcast', uint8(1), 0.5}, {'gather', uint8(1), -1}, {'gather', uint8(1)}, ...
             {'nonsense'}, {3}};
      for k = 1:numel (bad)
        try
          sluice.kernel.mpi (bad{k}{:});
          ok = false;
          printf ('rank %d: no error for case %d\n', r, k);
        catch err
          ok = ok && strcmp (err.identifier, 'sluice:mpi:badarg');
        end
      end
      say (ok, '');
    case 'chains'
      % chains dealt across the ranks = one process, bit for bit
      a = sluice.pmmh (cspec, cpr, cobs, copt{:});
      b = sluice.pmmh (cspec, cpr, cobs, copt{:}, 'mpi', false, 'parallel', false);
      say (same_chains (a, b) && ~a.parallel, '');
    case 'chaincheckpoint'
      % a checkpoint written by rank 0 alone, every few iterations; the
      % same call then resumes from it; continuing gives the longer run
      f = fullfile (dir_out, 'chains.ckpt');
      a = sluice.pmmh (cspec, cpr, cobs, copt{:}, 'checkpoint', f, 'checkpoint_every', 5);
      a2 = sluice.pmmh (cspec, cpr, cobs, copt{:}, 'checkpoint', f, 'checkpoint_every', 5);
      c = sluice.pmmh (cspec, cpr, cobs, 'continue', a, 'iterations', 6);
      b = sluice.pmmh (cspec, cpr, cobs, copt{:}, 'mpi', false, 'parallel', false);
      o = copt; o{6} = 16;
      d = sluice.pmmh (cspec, cpr, cobs, o{:}, 'mpi', false, 'parallel', false);
      say (same_chains (a, b) && same_chains (a2, b) && same_chains (c, d) ...
           && exist (f, 'file') == 2, '');
    case 'chainfails'
      % chain 4 starts where the model fails: on every rank, the error
      % the single-process run raises
      st = -0.5 * ones (1, 5);
      st(4) = 0.875;
      try
        sluice.pmmh (cspec, cpr, cobs, copt{:}, 'start', st, 'mpi', false, 'parallel', false);
        one = struct ('identifier', 'none', 'message', '');
      catch one
      end
      try
        sluice.pmmh (cspec, cpr, cobs, copt{:}, 'start', st);
        say (false, ': no error');
      catch err
        say (strcmp (err.identifier, 'test:planted') && strcmp (err.identifier, one.identifier) ...
             && strcmp (err.message, one.message), [': ' err.identifier ' ' err.message]);
      end
    case 'chainmismatch'
      try
        sluice.pmmh (cspec, cpr, cobs, copt{:}, 'iterations', 10 + rank);
        say (false, ': no error');
      catch err
        say (strcmp (err.identifier, 'sluice:pmmh:mpimismatch'), [': ' err.identifier]);
      end
    case 'equal'
      % the distributed sweep = the single-process sweep, bit for bit
      [t, info] = sluice.sweep (fun, grid, 'seed', 5, 'workers', 1);
      [u, uinfo] = sluice.sweep (fun, grid, 'seed', 5, 'workers', 1, 'mpi', false);
      ok = isequal (t, u) && info.ranks == str2double (getenv ('OMPI_COMM_WORLD_SIZE')) ...
           && uinfo.ranks == 1 && info.computed == 9 && isequal (info.rank, rank);
      say (ok, sprintf (' (ranks %d)', info.ranks));
    case 'idle'
      % more ranks than points: the extra ranks idle, the table is whole
      g = struct ('members', [50 80]);
      t = sluice.sweep (@(p) fun (setfield (p, 'k', 1)), g, 'seed', 2, 'workers', 1);
      u = sluice.sweep (@(p) fun (setfield (p, 'k', 1)), g, 'seed', 2, 'workers', 1, 'mpi', false);
      say (isequal (t, u) && numel (t.ll) == 2, '');
    case 'resume'
      % a file written by one process is resumed by the ranks, and the
      % file the ranks complete is the single-process file's content
      f = fullfile (dir_out, 'sweep.mat');
      g2 = struct ('members', [50 80], 'k', [1 2 3]);
      if (rank == 0)
        sluice.sweep (fun, g2, 'seed', 5, 'workers', 1, 'file', f, 'mpi', false);
      end
      sluice.kernel.mpi ('barrier');
      [t, info] = sluice.sweep (fun, grid, 'seed', 5, 'workers', 1, 'file', f);
      u = sluice.sweep (fun, grid, 'seed', 5, 'workers', 1, 'mpi', false);
      ok = isequal (t, u) && info.nreused == 6 && info.computed == 3;
      sluice.kernel.mpi ('barrier');
      [t2, info2] = sluice.sweep (fun, grid, 'seed', 5, 'workers', 1, 'file', f, 'mpi', false);
      ok = ok && isequal (t2, u) && info2.nreused == 9;
      say (ok, '');
    case 'mismatch'
      % a different seed, then a different grid, on each rank: the same
      % error on every rank
      ok = true;
      g2 = grid;
      g2.members(end) = 120 + rank;
      calls = {{fun, grid, 'seed', 5 + rank, 'workers', 1}, {fun, g2, 'seed', 5, 'workers', 1}};
      for k = 1:2
        try
          sluice.sweep (calls{k}{:});
          ok = false;
        catch err
          ok = ok && strcmp (err.identifier, 'sluice:sweep:mpimismatch');
        end
      end
      say (ok, [': ' err.identifier]);
    case 'pointfails'
      % a point that fails on its rank: sluice:sweep:pointfailed on every
      % rank, naming the point
      bad = @(p) ifelse_error (p.members == 80 && p.k == 2, fun, p);
      try
        sluice.sweep (bad, grid, 'seed', 5, 'workers', 1);
        say (false, ': no error');
      catch err
        say (strcmp (err.identifier, 'sluice:sweep:pointfailed') ...
             && ~isempty (strfind (err.message, '(k=2, members=80)')) ...
             && ~isempty (strfind (err.message, 'test:planted')), [': ' err.message]);
      end
    case 'badfile'
      % rank 0 cannot read the results file: sluice:sweep:badfile everywhere
      f = fullfile (dir_out, 'not_results.mat');
      if (rank == 0)
        fid = fopen (f, 'w'); fputs (fid, 'not a results file'); fclose (fid);
      end
      sluice.kernel.mpi ('barrier');
      try
        sluice.sweep (fun, grid, 'seed', 5, 'workers', 1, 'file', f);
        say (false, ': no error');
      catch err
        say (strcmp (err.identifier, 'sluice:sweep:badfile'), [': ' err.identifier]);
      end
    case 'rankleft'
      % rank 1 stops with its own error before the sweep: the others raise
      % sluice:mpi:rankleft naming it, and the job ends
      try
        sluice.sweep (fun, grid, 'seed', 5, 'workers', 1);
        say (false, ': no error');
      catch err
        ok = strcmp (err.identifier, 'sluice:mpi:rankleft') ...
             && ~isempty (strfind (err.message, 'rank 1 left'));
        % caught and tried again: refused at once, not a hang
        try
          sluice.sweep (fun, grid, 'seed', 5, 'workers', 1);
          ok = false;
        catch err
          ok = ok && strcmp (err.identifier, 'sluice:mpi:rankleft') ...
               && ~isempty (strfind (err.message, 'has left the job'));
        end
        say (ok, [': ' err.identifier]);
      end
    case 'pfequal'
      % the particle filter split across the ranks = one process, bit for
      % bit, every field; then a joint state-parameter run (forcing noise,
      % the kernel move at resampling, the default) the same
      nr = str2double (getenv ('OMPI_COMM_WORLD_SIZE'));
      a = sluice.filter (m, pr, obs, 'members', 1001, 'seed', 4, 't0', 0, ...
                         'progress', false, 'mpi', true);
      b = sluice.filter (m, pr, obs, 'members', 1001, 'seed', 4, 't0', 0, ...
                         'progress', false, 'mpi', false);
      ok = a.ranks == nr && b.ranks == 1 && sum (a.resampled) > 0 ...
           && isequaln (rmfield (a, {'ranks', 'options'}), rmfield (b, {'ranks', 'options'}));
      jm = sluice.model (@(t, X, P, U, dt) P(1, :) .* X + U(1, :), 'states', {'x'}, ...
                         'params', {'a', 'b'}, 'forcings', {'u'}, 'defaults', [0.5; 1]);
      jp = sluice.prior ('a', 'uniform', [0.2 1], 'x', 'normal', [0 1]);
      ft = (0:40)';
      jo = {'members', 500, 'seed', 8, 't0', 0, 'progress', false, ...
            'forcing', struct('time', ft, 'values', 0.1 * cos (ft)), ...
            'forcing_noise', struct('kind', 'additive', 'sd', 0.2)};
      warning ('off', 'sluice:filter:approxparams');
      a = sluice.filter (jm, jp, obs, jo{:}, 'mpi', 'auto');   % splits
      b = sluice.filter (jm, jp, obs, jo{:}, 'mpi', false);
      ok = ok && a.ranks == nr && strcmp (a.param_move, 'kernel') ...
           && isequaln (rmfield (a, {'ranks', 'options'}), rmfield (b, {'ranks', 'options'}));
      % members whose state turns non-finite (their flags gathered: 1000
      % members make byte counts of 500 or 250 a rank)
      warning ('off', 'sluice:filter:nonfinite');
      dm = sluice.model (@(t, X, P, U, dt) X ./ (P(1, :) > 0.3), 'states', {'x'}, ...
                         'params', {'a'}, 'defaults', 0.5);
      dp = sluice.prior ('a', 'uniform', [0.2 1], 'x', 'normal', [0 1]);
      a = sluice.filter (dm, dp, obs, 'members', 1000, 'seed', 5, 't0', 0, ...
                         'progress', false, 'state_noise', 0.1, 'mpi', true);
      b = sluice.filter (dm, dp, obs, 'members', 1000, 'seed', 5, 't0', 0, ...
                         'progress', false, 'state_noise', 0.1);
      ok = ok && a.ranks == nr && max (a.nonfinite) > 50 ...
           && isequaln (rmfield (a, {'ranks', 'options'}), rmfield (b, {'ranks', 'options'}));
      % a prepared run split across the ranks: with a seed, the
      % one-process run; without, one seed (rank 0's) on every rank
      run = sluice.filter (m, pr, obs, 'members', 300, 't0', 0, 'progress', false, ...
                           'mpi', true, 'prepare', true);
      a = sluice.filter (run, 'seed', 11);
      b = sluice.filter (m, pr, obs, 'members', 300, 't0', 0, 'progress', false, 'seed', 11);
      c = sluice.filter (run);
      ok = ok && a.ranks == nr && c.ranks == nr ...
           && isequaln (rmfield (a, {'ranks', 'options'}), rmfield (b, {'ranks', 'options'})) ...
           && sluice.kernel.mpi ('allreduce', c.seed, 'min') ...
              == sluice.kernel.mpi ('allreduce', c.seed, 'max');
      say (ok, sprintf (' (ranks %d)', a.ranks));
    case 'pfkalman'
      % split across the ranks, against the exact Kalman filter of the
      % linear-Gaussian model (x' = 0.9 x + w, Q = 0.1; y = x + v, R =
      % 0.25; x0 ~ N(0, 1)): predict m = A m, P = A^2 P + Q; update K =
      % P / (P + R) (the Kalman filter's textbook equations)
      r = sluice.filter (m, pr, obs, 'members', 20000, 'seed', 6, 't0', 0, ...
                         'progress', false, 'mpi', true);
      mk = 0; Pk = 1; ll = 0; err_m = 0;
      for k = 1:numel (obs.time)
        mk = 0.9 * mk; Pk = 0.81 * Pk + 0.1;
        S = Pk + 0.25; d = obs.value(k) - mk;
        ll = ll - 0.5 * (log (2 * pi * S) + d ^ 2 / S);
        K = Pk / S; mk = mk + K * d; Pk = (1 - K) * Pk;
        % within 6 standard errors of the mean of N / 2 effective members
        err_m = max (err_m, abs (r.states.mean(1, k) - mk) / sqrt (Pk / 10000));
      end
      ok = err_m < 6 && abs (r.log_evidence - ll) < 0.1;
      say (ok, sprintf (' (mean within %.2f se, log-evidence %.4f vs %.4f)', err_m, ...
                        r.log_evidence, ll));
    case 'pffails'
      % some members' model fails (on whichever ranks hold them): every
      % rank stops, with the model's own error or sluice:filter:rankfailed
      % (the default 'mpi' false: each rank alone, the same error)
      fm = sluice.model (@(t, X, P, U, dt) planted_member (t, P, X), 'states', {'x'}, ...
                         'params', {'a', 'b'}, 'defaults', [0.5; 1]);
      fp = sluice.prior ('a', 'uniform', [0.2 1], 'b', 'uniform', [0 1], 'x', 'normal', [0 1]);
      ids = {};
      for mode = {false, true}
        try
          sluice.filter (fm, fp, obs, 'members', 200, 'seed', 3, 't0', 0, ...
                         'progress', false, 'state_noise', 0.1, 'mpi', mode{1});
          ids{end+1} = 'none';
        catch err
          ids{end+1} = err.identifier;
          msg = err.message;
        end
      end
      ok = strcmp (ids{1}, 'test:planted') ...
           && any (strcmp (ids{2}, {'test:planted', 'sluice:filter:rankfailed'}));
      say (ok, sprintf (': %s, %s (%s)', ids{:}, msg));
    case 'pfsplit'
      % fewer members than ranks, or a checkpoint: refused with mpi true,
      % run whole on every rank with 'auto'; a run the members cannot
      % split (a lag) splits its forecasts, the ETKF its members: still
      % the one-process run bit for bit
      nr = str2double (getenv ('OMPI_COMM_WORLD_SIZE'));
      ids = {};
      ck = fullfile (dir_out, sprintf ('ck%d.mat', rank));
      calls = {{'members', nr - 1, 'mpi', true}, {'members', 50, 'checkpoint', ck, 'mpi', true}};
      for k = 1:2
        try
          sluice.filter (m, pr, obs, 'seed', 3, 't0', 0, 'progress', false, calls{k}{:});
          ids{end+1} = 'none';
        catch err
          ids{end+1} = err.identifier;
        end
      end
      a = sluice.filter (m, pr, obs, 'seed', 3, 't0', 0, 'progress', false, 'members', nr - 1, ...
                         'mpi', 'auto');
      % by default the run is this process's (every rank the same run)
      c = sluice.filter (m, pr, obs, 'seed', 3, 't0', 0, 'progress', false, 'members', 50);
      ok = strcmp (ids{1}, 'sluice:filter:ranksempty') ...
           && strcmp (ids{2}, 'sluice:filter:ranksunsupported') && a.ranks == 1 && c.ranks == 1;
      for extra = {{'lag', 3}, {'method', 'etkf'}}
        x = sluice.filter (m, pr, obs, 'seed', 3, 't0', 0, 'progress', false, 'members', 60, ...
                           extra{1}{:}, 'mpi', true);
        y = sluice.filter (m, pr, obs, 'seed', 3, 't0', 0, 'progress', false, 'members', 60, ...
                           extra{1}{:});
        ok = ok && x.ranks == nr && y.ranks == 1 ...
             && isequaln (rmfield (x, {'ranks', 'options'}), rmfield (y, {'ranks', 'options'}));
      end
      say (ok, sprintf (': %s, %s', ids{:}));
    case 'kalmanrows'
      % a wide model (Lorenz-96, 160 states): the ensemble Kalman filters
      % split their members across the ranks, each rank analysing its rows
      % of every member (the LETKF those of its grid points), the EAKF
      % with the forcing F estimated; every output is the one-process
      % run's
      lspec = sluice.model ('lorenz96', 'n', 160);
      T = 8;
      t = repmat (0.05 * (1:T), 40, 1);
      names = repmat (lspec.states(4:4:160)', 1, T);
      y = 8 + sin ((1:40 * T)' / 7);
      lobs = struct ('time', t(:), 'variable', {names(:)}, 'value', y, 'sigma', ones (40 * T, 1));
      args = {};
      for i = 1:160
        args = [args, {lspec.states{i}, 'normal', [8 + sin(i / 9), 2]}];
      end
      lpr = sluice.prior (args{:});
      fpr = sluice.prior (args{:}, 'F', 'normal', [8 0.5]);
      loc = struct ('geometry', 'ring', 'period', 160, 'radius', 6);
      calls = {{'method', 'letkf', 'members', 20, 'localization', loc, 'inflation', 1.02}, ...
               {'method', 'etkf', 'members', 30, 'inflation', 1.01}, ...
               {'method', 'enkf', 'members', 420, 'localization', loc, 'rtps', 0.3}, ...
               {'method', 'eakf', 'members', 40, 'localization', loc}};
      priors = {lpr, lpr, lpr, fpr};
      ok = true;
      why = '';
      for k = 1:numel (calls)
        o = [calls{k}, {'seed', 5, 't0', 0, 'progress', false, 'threads', 1}];
        x = sluice.filter (lspec, priors{k}, lobs, o{:}, 'mpi', true);
        z = sluice.filter (lspec, priors{k}, lobs, o{:});
        same = x.ranks == str2double (getenv ('OMPI_COMM_WORLD_SIZE')) && z.ranks == 1 ...
               && isequaln (rmfield (x, {'ranks', 'options'}), rmfield (z, {'ranks', 'options'}));
        ok = ok && same;
        why = [why sprintf(' %s %d', calls{k}{2}, same)];
      end
      say (ok, [':' why]);
    case 'pfmismatch'
      % a different seed on each rank: the same error on every rank
      try
        sluice.filter (m, pr, obs, 'members', 100, 'seed', 3 + rank, 't0', 0, ...
                       'progress', false, 'mpi', true);
        say (false, ': no error');
      catch err
        say (strcmp (err.identifier, 'sluice:filter:mpimismatch'), [': ' err.identifier]);
      end
    otherwise
      say (false, ': unknown case');
  end
catch err
  say (false, [': ' err.identifier ' ' err.message]);
end
