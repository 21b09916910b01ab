% Ctrl-C during a long run: the run stops with sluice:<fn>:interrupted, an
% ordinary error that try/catch catches, and Octave carries on. Each case
% runs the work in a child octave-cli, sends it SIGINT (what Ctrl-C sends
% to the foreground process) once the run has started -- the run writes
% a marker file from inside it -- and reads what the child printed.
% Octave's own interrupt is no error: try/catch does not catch it, so the
% child's catch block printing the identifier is the evidence.

%!function [d, marker] = start_child (script)
%!  % start a child octave-cli on script (Octave code, which finds sluice,
%!  % the test helpers and the variable marker, a file name that is not
%!  % there yet) in a new folder d; its output goes to d/out.txt, its
%!  % process id to d/pid and, when it ends, its exit status to d/rc
%!  mdir = fileparts (fileparts (which ('sluice.filter')));   % .../m
%!  here = fileparts (which ('mark_once'));                   % tests/octave
%!  d = tempname ();
%!  mkdir (d);
%!  marker = fullfile (d, 'started');
%!  fid = fopen (fullfile (d, 'child.m'), 'w');
%!  fprintf (fid, 'warning (''off'', ''Octave:shadowed-function'');\n');
%!  fprintf (fid, 'addpath (''%s''); addpath (''%s'');\n', mdir, here);
%!  fprintf (fid, 'marker = ''%s'';\n%s', marker, script);
%!  fclose (fid);
%!  bin = fullfile (OCTAVE_HOME (), 'bin', 'octave-cli');
%!  system (sprintf (['cd ''%s'' && { ''%s'' --no-history --norc --quiet child.m > out.txt 2>&1 & ', ...
%!                    'echo $! > pid; wait $!; echo $? > rc; } > /dev/null 2>&1 &'], d, bin));
%!endfunction

%!function [out, rc] = interrupt_child (body, stop_after)
%!  % run body (Octave code; it must write the file named by the variable
%!  % marker once its long run has started) in a child process, send it
%!  % SIGINT stop_after seconds after the marker appears, and return its
%!  % output and exit status (NaN if it had to be killed)
%!  [d, marker] = start_child (sprintf (['try\n%s\n  printf (''FINISHED\\n'');\ncatch err\n', ...
%!                                       '  printf (''CAUGHT %%s\\n%%s\\n'', err.identifier, err.message);\n', ...
%!                                       '  x = sum (1:1000);\n  printf (''AFTER %%d\\n'', x);\n', ...
%!                                       '  exit (3);\nend\n'], body));
%!  rc = NaN;
%!  unwind_protect
%!    for k = 1:600                      % the run starts: at most 60 s
%!      if (exist (marker, 'file') || exist (fullfile (d, 'rc'), 'file'))
%!        break;
%!      end
%!      pause (0.1);
%!    end
%!    pid = str2double (fileread (fullfile (d, 'pid')));
%!    pause (stop_after);
%!    if (~exist (fullfile (d, 'rc'), 'file'))
%!      kill (pid, SIG ().INT);
%!    end
%!    for k = 1:600                      % it stops: at most 60 s
%!      if (exist (fullfile (d, 'rc'), 'file'))
%!        break;
%!      end
%!      pause (0.1);
%!    end
%!    if (exist (fullfile (d, 'rc'), 'file'))
%!      rc = str2double (fileread (fullfile (d, 'rc')));
%!    else
%!      kill (pid, SIG ().KILL);       % never left behind
%!    end
%!    out = fileread (fullfile (d, 'out.txt'));
%!  unwind_protect_cleanup
%!    confirm_recursive_rmdir (false, 'local');
%!    rmdir (d, 's');
%!  end_unwind_protect
%!endfunction

%!test
%! % a compiled model: the poll between steps takes the pending Ctrl-C
%! % (the observation operator only writes the marker)
%! body = [' spec = sluice.model (''linear'', ''A'', 0.8, ''states'', {''x''});\n', ...
%!         ' T = 20000;\n', ...
%!         ' obs = struct (''time'', (1:T)'', ''variable'', {repmat({''h''}, T, 1)}, ', ...
%!         '''value'', zeros (T, 1), ''sigma'', ones (T, 1));\n', ...
%!         ' ops = struct (''names'', ''h'', ''fun'', @(t, X, P) mark_once (X, marker, 0));\n', ...
%!         ' sluice.filter (spec, sluice.prior (''x'', ''normal'', [0 1]), obs, ', ...
%!         '''members'', 2000, ''t0'', 0, ''operators'', ops, ''progress'', false);'];
%! [out, rc] = interrupt_child (sprintf (body), 0.5);
%! assert (rc == 3, 'the child ended with %g:\n%s', rc, out);
%! assert (~isempty (strfind (out, 'CAUGHT sluice:filter:interrupted')), '%s', out);
%! assert (~isempty (regexp (out, 'interrupted .*no result is returned', 'once')), '%s', out);
%! assert (~isempty (strfind (out, 'AFTER 500500')), '%s', out);
%! assert (isempty (strfind (out, 'FINISHED')), '%s', out);

%!test
%! % a model written as an Octave function: the Ctrl-C arrives while the
%! % function runs (it pauses), and the gateway's call of it catches it
%! % as the run's error
%! body = [' f = @(t, X, P, U, dt) 0.9 * X + 0 * mark_once (X, marker, 0.02);\n', ...
%!         ' spec = sluice.model (f, ''states'', {''x''});\n', ...
%!         ' T = 5000;\n', ...
%!         ' obs = struct (''time'', (1:T)'', ''variable'', {repmat({''x''}, T, 1)}, ', ...
%!         '''value'', zeros (T, 1), ''sigma'', ones (T, 1));\n', ...
%!         ' sluice.filter (spec, sluice.prior (''x'', ''normal'', [0 1]), obs, ', ...
%!         '''members'', 50, ''t0'', 0, ''progress'', false);'];
%! [out, rc] = interrupt_child (sprintf (body), 0.5);
%! assert (rc == 3, 'the child ended with %g:\n%s', rc, out);
%! assert (~isempty (strfind (out, 'CAUGHT sluice:filter:interrupted')), '%s', out);
%! assert (~isempty (strfind (out, 'the model function was interrupted (Ctrl-C) at t =')), '%s', out);
%! assert (~isempty (strfind (out, 'AFTER 500500')), '%s', out);

%!test
%! % a serial sweep: the point's run stops, the sweep says where it
%! % stopped and that the finished points are in its file; a second call
%! % with that file runs only the points not finished, and its table is
%! % that of a sweep never stopped
%! f = [tempname() '.sweep'];
%! g = struct ('a', [1 2 3 4]);
%! body = sprintf ([' sluice.sweep (@(p) slow_point (p, marker, 3), struct (''a'', [1 2 3 4]), ', ...
%!                  '''workers'', 1, ''file'', ''%s'');'], f);
%! unwind_protect
%!   [out, rc] = interrupt_child (body, 0.5);
%!   assert (rc == 3, 'the child ended with %g:\n%s', rc, out);
%!   assert (~isempty (strfind (out, 'CAUGHT sluice:sweep:interrupted')), '%s', out);
%!   assert (~isempty (strfind (out, 'at point (a=3)')), '%s', out);
%!   assert (~isempty (strfind (out, ['2 finished point(s) are kept in ' f])), '%s', out);
%!   [t, info] = sluice.sweep (@(p) slow_point (p, '', NaN), g, 'workers', 1, 'file', f);
%!   assert (info.reused', [true true false false]);
%!   assert (t, sluice.sweep (@(p) slow_point (p, '', NaN), g, 'workers', 1));
%! unwind_protect_cleanup
%!   if (exist (f, 'file'))
%!     delete (f);
%!   end
%! end_unwind_protect

%!test
%! % every Ctrl-C is taken: one child runs filters with an observation
%! % operator written in Octave, one after another, and each run gets one
%! % Ctrl-C a moment after it started. A Ctrl-C that lands while Octave
%! % runs the operator must stop the run as surely as one that lands in
%! % the compiled cycle; one set aside would let that run finish (each
%! % would take several seconds). 40 rounds: before the callbacks caught
%! % Octave's interrupt themselves, about 1 Ctrl-C in 100 was lost here.
%! rounds = 40;
%! [d, marker] = start_child (sprintf ([ ...
%!   'spec = sluice.model (''linear'', ''A'', 0.8, ''states'', {''x''});\n', ...
%!   'T = 20000;\n', ...
%!   'obs = struct (''time'', (1:T)'', ''variable'', {repmat({''h''}, T, 1)}, ', ...
%!   '''value'', zeros (T, 1), ''sigma'', ones (T, 1));\n', ...
%!   'for r = 1:%d\n', ...
%!   '  m = sprintf (''%%s.%%d'', marker, r);\n', ...
%!   '  ops = struct (''names'', ''h'', ''fun'', @(t, X, P) mark_once (X, m, 0));\n', ...
%!   '  try\n', ...
%!   '    sluice.filter (spec, sluice.prior (''x'', ''normal'', [0 1]), obs, ', ...
%!   '''members'', 200, ''t0'', 0, ''operators'', ops, ''progress'', false);\n', ...
%!   '    printf (''FINISHED\\n'');\n', ...
%!   '  catch err\n', ...
%!   '    printf (''CAUGHT %%s\\n'', err.identifier);\n', ...
%!   '  end\n', ...
%!   '  fflush (stdout);\n', ...
%!   'end\n'], rounds));
%! out = '';
%! unwind_protect
%!   for k = 1:600
%!     if (exist (fullfile (d, 'pid'), 'file'))
%!       break;
%!     end
%!     pause (0.1);
%!   end
%!   pid = str2double (fileread (fullfile (d, 'pid')));
%!   for r = 1:rounds
%!     for k = 1:600                      % the run starts: at most 60 s
%!       if (exist (sprintf ('%s.%d', marker, r), 'file') || exist (fullfile (d, 'rc'), 'file'))
%!         break;
%!       end
%!       pause (0.02);
%!     end
%!     assert (~exist (fullfile (d, 'rc'), 'file'), 'the child ended early:\n%s', ...
%!             fileread (fullfile (d, 'out.txt')));
%!     pause (0.05 + 0.1 * rand ());
%!     kill (pid, SIG ().INT);
%!     for k = 1:3000                     % its line: at most 60 s
%!       out = fileread (fullfile (d, 'out.txt'));
%!       if (numel (regexp (out, '^(CAUGHT|FINISHED)', 'lineanchors')) >= r)
%!         break;
%!       end
%!       pause (0.02);
%!     end
%!   end
%! unwind_protect_cleanup
%!   % the child ends after its last run, or is stopped; the folder goes
%!   % once its shell has written the exit status
%!   for k = 1:3000
%!     if (exist (fullfile (d, 'rc'), 'file'))
%!       break;
%!     elseif (k == 500 && exist (fullfile (d, 'pid'), 'file'))
%!       kill (str2double (fileread (fullfile (d, 'pid'))), SIG ().KILL);
%!     end
%!     pause (0.02);
%!   end
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (d, 's');
%! end_unwind_protect
%! taken = numel (strfind (out, 'CAUGHT sluice:filter:interrupted'));
%! assert (taken == rounds, '%d of %d Ctrl-C were taken:\n%s', taken, rounds, out);
