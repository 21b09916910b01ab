% kalman_scaling.m - run by every rank of `mpirun -np P octave-cli`
% (tests/bench/mpi/run.sh): one ensemble Kalman filter on the Lorenz-96
% model with SLUICE_BENCH_STATES states (F = 8, every 2nd state observed
% every 0.05 time units with error variance 1, 30 cycles), method
% SLUICE_BENCH_METHOD ('letkf': 40 members, ring localisation of radius
% 6; 'etkf': 40 members), one thread a rank, split across the ranks
% by members, each rank analysing its rows of every member (the LETKF:
% the rows of its grid points). Rank 0
% prints "method M states n ranks P seconds S comm C bytes B split R":
% the prepared run's wall time, the most seconds any rank spent in the filter's
% collectives (waiting included) and the bytes it received.
warning ('off', 'Octave:shadowed-function');
here = fileparts (mfilename ('fullpath'));
addpath (fullfile (here, '..', '..', '..', 'm'));
crash_dumps_octave_core (false);
n = str2double (getenv ('SLUICE_BENCH_STATES'));
method = getenv ('SLUICE_BENCH_METHOD');
T = 30;
spec = sluice.model ('lorenz96', 'n', n);
seen = 2:2:n;
t = repmat (0.05 * (1:T), numel (seen), 1);
names = repmat (spec.states(seen)', 1, T);
y = 8 + 3 * sin ((1:numel (t))' / 11);
obs = struct ('time', t(:), 'variable', {names(:)}, 'value', y, 'sigma', ones (numel (t), 1));
args = cell (1, 3 * n);
for i = 1:n
  args(3 * i - 2:3 * i) = {spec.states{i}, 'normal', [8 + sin(i / 9), 2]};
end
pr = sluice.prior (args{:});
if (strcmp (method, 'letkf'))
  o = {'method', 'letkf', 'members', 40, 'inflation', 1.02, ...
       'localization', struct('geometry', 'ring', 'period', n, 'radius', 6)};
else
  o = {'method', 'etkf', 'members', 40, 'inflation', 1.01};
end
o = [o, {'seed', 1, 't0', 0, 'progress', false, 'threads', 1, 'mpi', true}];
[r, P] = sluice.kernel.mpi ('init');
% warm-up: the first cycle
sluice.filter (spec, pr, structfun (@(v) v(1:numel (seen)), obs, 'UniformOutput', false), o{:});
sluice.kernel.mpi ('stats');
sluice.kernel.mpi ('barrier');
% the run prepared outside the clock (the checks and the prior's plan
% are this process's, whatever the ranks): the time of the run itself
prep = sluice.filter (spec, pr, obs, o{:}, 'prepare', true);
t0 = tic ();
res = sluice.filter (prep, 'seed', 2);
wall = toc (t0);
st = sluice.kernel.mpi ('stats');
comm = sluice.kernel.mpi ('allreduce', st(1), 'max');
bytes = sluice.kernel.mpi ('allreduce', st(2), 'max');
if (r == 0)
  printf ('method %s states %d ranks %d seconds %.3f comm %.3f bytes %.0f split %d\n', method, ...
          n, P, wall, comm, bytes, res.ranks);
end

