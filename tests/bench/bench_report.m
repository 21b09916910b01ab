function bench_report ()
  % sluice.report of a 67-state GR4J run (60 of them unit-hydrograph
  % queues, left out of the figures by default) over 5 years of daily
  % cycles with a calendar: yearly panels, the overview, the CSV tables of
  % all 67 states. The baseline in the same run is one plain figure of the
  % same record drawn and printed by the same toolkit (a line and the
  % observations as points, 800 x 450 pixels, plot and print): the ratio
  % says how many such figures the report costs. The filter run itself is
  % shown for scale. Times are the best of 2 runs. Target (issue
  % "Observations and results as practitioners have them"): the report
  % in under 10 s.
  nrep = 2;
  s = sluice.model ('gr4j');
  T = 5 * 365;
  t = (0:T)';
  rand ('state', 3);
  randn ('state', 3);
  E = max (0.2, 2.2 + 1.8 * sin (2 * pi * (t - 100) / 365));
  P = (rand (T + 1, 1) < 0.35) .* (-6 * log (rand (T + 1, 1)));
  f = struct ('time', t, 'values', [P E], 'interp', 'previous');
  X = sluice.simulate (s, s.x0, s.defaults, 0:T, f);
  y = X(63, 2:end)' .* exp (0.1 * randn (T, 1));
  ob = struct ('time', (1:T)', 'variable', {repmat({'Q'}, T, 1)}, 'value', y, ...
               'sigma', 0.1 * ones (T, 1), 'family', {repmat({'lognormal'}, T, 1)});
  pr = sluice.prior ('X1', 'lognormal', [log(350) 0.3]);
  t0 = tic ();
  r = sluice.filter (s, pr, ob, 'members', 200, 'seed', 2, 't0', 0, 'forcing', f, ...
                     'progress', false, 'quantiles', [0.05 0.25 0.5 0.75 0.95], ...
                     'origin', '2001-01-01');
  tf = toc (t0);
  printf ('   report: gr4j, %d states and %d parameters, %d daily cycles (2001-2005), %d members\n', ...
          numel (r.state_names), numel (r.param_names), numel (r.times), r.members);
  printf ('   load average before: %s\n', load_average ());
  d = tempname ();
  cleanup = onCleanup (@() remove_dir (d));

  tr = Inf;
  for k = 1:nrep
    t0 = tic ();
    files = sluice.report (r, 'outdir', fullfile (d, sprintf ('r%d', k)), 'obs', ob);
    tr = min (tr, toc (t0));
  end
  npng = sum (~cellfun ('isempty', regexp (files, '\.png$', 'once')));

  tp = Inf;
  for k = 1:nrep
    t0 = tic ();
    plain_figure (r, ob, fullfile (d, sprintf ('plain%d.png', k)));
    tp = min (tp, toc (t0));
  end
  printf ('   sluice.report %.2f s (%d PNG files and 3 tables); one plain figure %.2f s: ratio %.1fx\n', ...
          tr, npng, tp, tr / tp);
  printf ('   the filter run itself: %.2f s; target < 10 s for the report: %s\n', tf, ...
          ifelse (tr < 10, 'met', 'NOT met'));
  printf ('   load average after: %s\n', load_average ());
end

function plain_figure (r, ob, f)
  % the record's flow drawn the plainest way: a line and the points
  % the toolkit the report draws with when no display is at hand
  h = sluice.internal.compat ('hidden_figure', 'gnuplot');
  set (h, 'paperunits', 'inches', 'paperposition', [0 0 8 4.5]);
  q = find (strcmp (r.state_names, 'Q'));
  x = datenum (2001, 1, 1) + r.times;
  plot (x, r.states.mean(q, :), '-', datenum (2001, 1, 1) + ob.time, ob.value, 'o');
  print (h, '-dpng', '-r100', f);
  close (h);
end

function s = load_average ()
  s = 'unknown';
  fid = fopen ('/proc/loadavg', 'r');
  if (fid >= 0)
    s = strtrim (fgetl (fid));
    fclose (fid);
  end
end

function remove_dir (d)
  if (exist (d, 'dir'))
    confirm_recursive_rmdir (false, 'local');
    rmdir (d, 's');
  end
end

function s = ifelse (c, a, b)
  if (c)
    s = a;
  else
    s = b;
  end
end
