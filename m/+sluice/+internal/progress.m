function progress (fraction, elapsed, show)
  % Internal: progress line of a long compiled run. show = 1 prints the
  % line, 2 ends it, 3 ends it for a run that Ctrl-C stopped; 0 prints
  % nothing (the call still lets Ctrl-C through).
  if (show == 1)
    left = elapsed * (1 - fraction) / max (fraction, 1e-9);
    fprintf (1, '\rsluice: %3.0f%% done, %.0f s elapsed, about %.0f s left   ', ...
             100 * fraction, elapsed, left);
    sluice.internal.compat ('flush');
  elseif (show == 2)
    fprintf (1, '\rsluice: done in %.1f s%s\n', elapsed, blanks (30));
    sluice.internal.compat ('flush');
  elseif (show == 3)
    fprintf (1, '\rsluice: stopped after %.1f s%s\n', elapsed, blanks (30));
    sluice.internal.compat ('flush');
  end
end
