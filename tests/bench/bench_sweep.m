function bench_sweep ()
  % Overhead of sluice.sweep per grid point, outside the function being
  % swept: a trivial function over 200 points (a 10 x 5 x 4 grid with a
  % text dimension), serially, without and with a results file (rewritten
  % after every point), and a rerun that reuses the whole file. Best of 3.
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
end
