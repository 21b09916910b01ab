function run_octave_tests (root)
  % Run the %!test blocks of every public function (m/+sluice/*.m) and of
  % every test file tests/octave/test_*.m; print "octave: N passed, N failed".
  files = {};
  d = dir (fullfile (root, 'm', '+sluice', '*.m'));
  for k = 1:numel (d)
    files{end+1} = fullfile (root, 'm', '+sluice', d(k).name);
  end
  % the internal helpers of +internal that carry tests (sluice.internal.compat)
  d = dir (fullfile (root, 'm', '+sluice', '+internal', '*.m'));
  for k = 1:numel (d)
    f = fullfile (root, 'm', '+sluice', '+internal', d(k).name);
    if (~isempty (strfind (fileread (f), [char(10) '%!'])))
      files{end+1} = f;
    end
  end
  d = dir (fullfile (root, 'tests', 'octave', 'test_*.m'));
  for k = 1:numel (d)
    files{end+1} = fullfile (root, 'tests', 'octave', d(k).name);
  end
  only = getenv ('SLUICE_TEST_ONLY');
  npass = 0; nfail = 0;
  for k = 1:numel (files)
    [~, name] = fileparts (files{k});
    if (! isempty (only) && isempty (strfind (files{k}, only)))
      continue;
    end
    logf = [tempname() '.log'];
    fid = fopen (logf, 'w');
    t0 = tic ();
    try
      [n, nmax] = test (files{k}, 'quiet', fid);
    catch err
      n = 0; nmax = 1;
      fprintf (fid, 'test harness error: %s\n', err.message);
    end
    fclose (fid);
    npass += n; nfail += nmax - n;
    if (n < nmax)
      printf ('FAIL %s: %d of %d failed\n', files{k}, nmax - n, nmax);
      txt = fileread (logf);
      printf ('%s\n', txt(1:min (end, 6000)));
    else
      printf ('ok   %-28s %3d tests  %6.1f s\n', name, nmax, toc (t0));
    end
    delete (logf);
  end
  printf ('octave: %d passed, %d failed\n', npass, nfail);
  if (nfail > 0)
    exit (1);
  end
end
