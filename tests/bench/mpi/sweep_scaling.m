% sweep_scaling.m - run by every rank of `mpirun -np P octave-cli`
% (tests/bench/mpi/run.sh): a sweep of SLUICE_BENCH_POINTS particle-filter
% runs (20000 members, 200 cycles, one thread each), after one warm-up
% point; rank 0 prints "points P seconds S fun F": the sweep's wall time
% and the seconds spent in the filter runs summed over the ranks.
warning ('off', 'Octave:shadowed-function');
here = fileparts (mfilename ('fullpath'));
addpath (fullfile (here, '..', '..', '..', 'm'));
crash_dumps_octave_core (false);
npts = str2double (getenv ('SLUICE_BENCH_POINTS'));
m = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'x'});
pr = sluice.prior ('x', 'normal', [0 1]);
T = 200;
obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, ...
              'value', sin (1:T)' / 2, 'sigma', 0.5 * ones (T, 1));
fun = @(p) getfield (sluice.filter (m, pr, obs, 'members', 20000, 'seed', p.seed, 't0', 0, ...
                                    'progress', false, 'threads', 1), 'log_evidence');
sluice.sweep (fun, struct ('r', 0), 'workers', 1, 'mpi', false);   % warm-up
t0 = tic ();
[t, info] = sluice.sweep (fun, struct ('r', 1:npts), 'workers', 1);
wall = toc (t0);
if (info.rank == 0)
  printf ('points %d ranks %d seconds %.3f fun %.3f\n', npts, info.ranks, wall, sum (info.time));
end
