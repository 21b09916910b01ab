% pf_scaling.m - run by every rank of `mpirun -np P octave-cli`
% (tests/bench/mpi/run.sh): one GR4J particle filter of
% SLUICE_BENCH_MEMBERS members over SLUICE_BENCH_DAYS days of the
% benchmarks' GR4J case (gr4j_case.m: flows observed daily), the four
% parameters estimated with the kernel move (forcing noise on the rain),
% one thread a rank, split across the ranks. Rank 0 prints
% "members N ranks P seconds S comm C bytes B": the run's wall time,
% the most seconds any rank spent in the filter's collectives (waiting
% included) and the bytes it received.
warning ('off', 'Octave:shadowed-function');
warning ('off', 'sluice:filter:approxparams');
here = fileparts (mfilename ('fullpath'));
addpath (fullfile (here, '..', '..', '..', 'm'));
addpath (fullfile (here, '..'));   % gr4j_case
crash_dumps_octave_core (false);
N = str2double (getenv ('SLUICE_BENCH_MEMBERS'));
Tn = str2double (getenv ('SLUICE_BENCH_DAYS'));
[s, fo, obs, pr] = gr4j_case (Tn);
opts = {'t0', 0, 'forcing', fo, 'seed', 1, 'progress', false, 'threads', 1, 'mpi', true, ...
        'forcing_noise', struct('kind', {{'multiplicative', 'none'}}, 'sd', [0.3 0])};
[r, n] = sluice.kernel.mpi ('init');
sluice.filter (s, pr, obs, opts{:}, 'members', max (n, 100));   % warm-up
sluice.kernel.mpi ('stats');
sluice.kernel.mpi ('barrier');
t0 = tic ();
res = sluice.filter (s, pr, obs, opts{:}, 'members', N);
wall = toc (t0);
st = sluice.kernel.mpi ('stats');
comm = sluice.kernel.mpi ('allreduce', st(1), 'max');
bytes = sluice.kernel.mpi ('allreduce', st(2), 'max');
if (r == 0)
  printf ('members %d ranks %d seconds %.3f comm %.3f bytes %.0f split %d\n', N, n, wall, ...
          comm, bytes, res.ranks);
end
