% pf_scaling.m - run by every rank of `mpirun -np P octave-cli`
% (tests/bench/mpi/run.sh): one GR4J particle filter of
% SLUICE_BENCH_MEMBERS members over SLUICE_BENCH_DAYS days of invented
% daily rain and evaporation, flows observed daily (lognormal, 10%), the
% four parameters estimated with the kernel move (forcing noise on the
% rain), one thread a rank, split across the ranks. Rank 0 prints
% "members N ranks P seconds S comm C bytes B": the run's wall time,
% the most seconds any rank spent in the filter's collectives (waiting
% included) and the bytes it received.
warning ('off', 'Octave:shadowed-function');
warning ('off', 'sluice:filter:approxparams');
here = fileparts (mfilename ('fullpath'));
addpath (fullfile (here, '..', '..', '..', 'm'));
crash_dumps_octave_core (false);
N = str2double (getenv ('SLUICE_BENCH_MEMBERS'));
Tn = str2double (getenv ('SLUICE_BENCH_DAYS'));
s = sluice.model ('gr4j');
rand ('state', 3);
randn ('state', 3);
t = (0:Tn)';
E = max (0.2, 2.2 + 1.8 * sin (2 * pi * (t - 100) / 365));
P = (rand (Tn + 1, 1) < 0.35) .* (-6 * log (rand (Tn + 1, 1)));
fo = struct ('time', t, 'values', [P E], 'interp', 'previous');
X = sluice.simulate (s, [], [350; 0.6; 90; 1.7], 0:Tn, fo);
y = X(63, 2:end)' .* exp (0.1 * randn (Tn, 1));
obs = struct ('time', (1:Tn)', 'variable', {repmat({'Q'}, Tn, 1)}, 'value', y, ...
              'sigma', 0.1 * ones (Tn, 1), 'family', {repmat({'lognormal'}, Tn, 1)});
pr = sluice.prior ('X1', 'lognormal', [log(300) 0.7], 'X2', 'normal', [0 1.5], ...
                   'X3', 'lognormal', [log(100) 0.7], 'X4', 'uniform', [0.5 4]);
opts = {'t0', 0, 'forcing', fo, 'seed', 1, 'progress', false, 'threads', 1, ...
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
