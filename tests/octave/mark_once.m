function Y = mark_once (X, file, wait)
  % Test helper (tests/octave/test_interrupt.m): an observation operator
  % or a model step that writes the file the first time it runs (the
  % run has started), then waits `wait` seconds and returns the first
  % row of X.
  if (~exist (file, 'file'))
    fid = fopen (file, 'w');
    fclose (fid);
  end
  if (wait > 0)
    pause (wait);
  end
  Y = X(1, :);
end
