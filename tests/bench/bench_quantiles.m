function bench_quantiles ()
  % The weighted quantiles of the filters' summaries (sl_weighted_summary:
  % levels [0.05 0.5 0.95], no mean) per call against the implementation
  % they replaced (tests/c/stats_reference.h), in C: quantiles_micro.c,
  % compiled here with gcc against build/libsluice.a and quantiles_ref.c
  % (the reference, a unit of its own with the library's flags), times both on the
  % same rows (thread CPU time, best of 5 interleaved rounds) at N = 1000
  % (contiguous rows, and rows of a 63-state ensemble as in GR4J) and
  % N = 1e5, for weights 1/N, uniform weights and 1/N with members in runs
  % of copies, and checks every level bit for bit. Then the weighted means
  % (sl_weighted_means) the same way: means_micro.c against the previous
  % version, on GR4J-like ensembles (63 states, all of them or 3
  % summarised; 4 parameters) and larger ones, every mean bit for bit.
  % Ratios new/old: below 1 is faster.
  here = fileparts (mfilename ('fullpath'));
  root = fileparts (fileparts (here));
  lib = fullfile (root, 'build', 'libsluice.a');
  if (~exist (lib, 'file'))
    error ('%s not built (make)', lib);
  end
  tmp = tempname ();
  mkdir (tmp);
  cleanup = onCleanup (@() remove_dir (tmp));
  exe = fullfile (tmp, 'quantiles_micro');
  % the library's flags (mk/build.mk), the reference in a unit of its own
  flags = sprintf ('-std=c11 -D_POSIX_C_SOURCE=200809L -O2 -g -fPIC -fopenmp -fno-math-errno -I%s -I%s', ...
                   fullfile (root, 'include'), fullfile (root, 'tests', 'c'));
  [rc, out] = system (sprintf ('gcc %s -o %s %s %s %s -lm 2>&1', flags, exe, ...
                               fullfile (here, 'quantiles_micro.c'), ...
                               fullfile (here, 'quantiles_ref.c'), lib));
  if (rc ~= 0)
    error ('quantiles_micro.c did not compile: %s', out);
  end
  [rc, out] = system (exe);
  if (rc ~= 0)
    error ('quantiles_micro failed: %s', out);
  end
  printf ('%s', out);
  exe = fullfile (tmp, 'means_micro');
  [rc, out] = system (sprintf ('gcc %s -o %s %s %s %s -lm 2>&1', flags, exe, ...
                               fullfile (here, 'means_micro.c'), ...
                               fullfile (here, 'quantiles_ref.c'), lib));
  if (rc ~= 0)
    error ('means_micro.c did not compile: %s', out);
  end
  [rc, out] = system (exe);
  if (rc ~= 0)
    error ('means_micro failed: %s', out);
  end
  printf ('%s', out);
end

function remove_dir (d)
  confirm_recursive_rmdir (false, 'local');
  rmdir (d, 's');
end
