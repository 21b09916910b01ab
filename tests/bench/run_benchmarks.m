function run_benchmarks ()
  % Run every benchmark tests/bench/bench_*.m (script or function) in turn;
  % each prints its own lines. A benchmark that fails prints one line and
  % the others still run: benchmarks report, they never fail a build.
  here = fileparts (mfilename ('fullpath'));
  d = dir (fullfile (here, 'bench_*.m'));
  names = sort ({d.name});
  printf ('sluice benchmarks (%d): %s\n', numel (names), datestr (now ()));
  t_all = tic ();
  for k = 1:numel (names)
    [~, name] = fileparts (names{k});
    printf ('\n== %s\n', name);
    t0 = tic ();
    try
      run_one (name);
      printf ('   (%.1f s)\n', toc (t0));
    catch err
      printf ('   %s did not complete: %s\n', name, err.message);
    end
  end
  printf ('\nbenchmarks done in %.1f s\n', toc (t_all));
end

function run_one (name)
  % a workspace of its own, so a script cannot disturb the loop above
  eval (name);
end
