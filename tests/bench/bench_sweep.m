function bench_sweep ()
  % Overhead of sluice.sweep per grid point, outside the function being
  % swept: a trivial function over 200 points (a 10 x 5 x 4 grid with a
  % text dimension), serially, without and with a results file (rewritten
  % after every point), and a rerun that reuses the whole file. Best of 3.
  % Then the speed-up of 2 workers (Octave's parallel package) on a sweep
  % of 16 particle-filter runs of about 0.3 s each (2e4 members), one thread per run.
  grid = struct ('interval', 1:10, 'members', [50 100 200 500 1000], ...
                 'method', {{'pf', 'etkf', 'enkf', 'apf'}});
  fun = @(p) struct ('rmse', p.interval, 'crps', p.members);
  n = 200;
  nrep = 3;
  f = [tempname() '.mat'];
  best = struct ('plain', Inf, 'file', Inf, 'reuse', Inf);
  for r = 1:nrep
    [~, info] = sluice.sweep (fun, grid, 'workers', 1);
    best.plain = min (best.plain, info.overhead);
    if (exist (f, 'file'))
      delete (f);
    end
    [~, info] = sluice.sweep (fun, grid, 'workers', 1, 'file', f);
    best.file = min (best.file, info.overhead);
    t0 = tic ();
    [~, info] = sluice.sweep (fun, grid, 'workers', 1, 'file', f);
    best.reuse = min (best.reuse, toc (t0) / n);
    assert (info.nreused == n);
  end
  delete (f);
  printf ('   sweep overhead per point (%d points, trivial fun, target < 5 ms):\n', n);
  printf ('     serial, no file            %8.3f ms\n', 1e3 * best.plain);
  printf ('     serial, file after each    %8.3f ms\n', 1e3 * best.file);
  printf ('     rerun, all points reused   %8.3f ms\n', 1e3 * best.reuse);

  if (isempty (pkg ('list', 'parallel')) || nproc () < 2)
    printf ('   parallel sweep: skipped (needs the parallel package and 2 cores)\n');
    return;
  end
  spec = sluice.model ('linear', 'A', [0.9 0.1; 0 0.95], 'Q', 0.1 * eye (2));
  T = 200;
  obs = struct ('time', (1:T)', 'variable', {repmat({'x1'}, T, 1)}, ...
                'value', sin ((1:T)' / 7), 'sigma', 0.5 * ones (T, 1));
  pr = sluice.prior ('x1', 'normal', [0 1], 'x2', 'normal', [0 1]);
  % the filter is called through sluice.filter only, so that the worker
  % processes can run it (see sluice.sweep on functions in parallel)
  run = @(p) struct ('ev', getfield (sluice.filter (spec, pr, obs, 'members', p.members, ...
                                                   'seed', p.seed, 'threads', 1, ...
                                                   'progress', false), 'log_evidence'));
  g = struct ('members', [20000 20001 20002 20003], 'rep', 1:4);
  ts = Inf;
  tp = Inf;
  for r = 1:2
    t0 = tic ();
    [a, i1] = sluice.sweep (run, g, 'workers', 1);
    ts = min (ts, toc (t0));
    t0 = tic ();
    [b, i2] = sluice.sweep (run, g, 'workers', 2);
    tp = min (tp, toc (t0));
    assert (isequal (a, b) && i2.parallel);
  end
  printf ('   sweep of 16 filter runs (%.2f s each): serial %.2f s, 2 workers %.2f s: speed-up %.2f (target >= 1.8)\n', ...
          ts / 16, ts, tp, ts / tp);
end

