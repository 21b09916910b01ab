% Temporary files that a writer killed mid-write leaves beside a
% checkpoint or results file (<file>.tmp<pid>: written, then renamed over
% the file) are removed by the next run that writes or resumes the same
% file, when their process is gone (no /proc/<pid>), and never when it
% lives. A pid above the kernel's pid_max (/proc/sys/kernel/pid_max:
% pids are below it) belongs to no process; live ones are this Octave's
% parent (getppid ()) and init (pid 1). (This Octave's own pid would not
% do: the run writes <file>.tmp<getpid ()> itself, then renames it.)

%!function [dead, live, other] = plant (file)
%!  % a stale sibling, a live one, and files the rule must not touch
%!  fid = fopen ('/proc/sys/kernel/pid_max', 'r');
%!  pid_max = fscanf (fid, '%d');
%!  fclose (fid);
%!  dead = {sprintf('%s.tmp%d', file, pid_max + 1), [file '.tmp99999999999999999999']};
%!  live = {sprintf('%s.tmp%d', file, getppid ()), [file '.tmp1']};
%!  other = {[file '.tmpx'], sprintf('%s.old.tmp%d', file, pid_max + 1), ...
%!           sprintf('%sx.tmp%d', file, pid_max + 1)};
%!  for f = [dead, live, other]
%!    fid = fopen (f{1}, 'w');
%!    fputs (fid, 'half a file');
%!    fclose (fid);
%!  end
%!endfunction

%!function check_and_clean (dead, live, other)
%!  for f = dead
%!    assert (exist (f{1}, 'file') == 0, ['left behind: ' f{1}]);
%!  end
%!  for f = [live, other]
%!    assert (exist (f{1}, 'file') == 2, ['removed: ' f{1}]);
%!    delete (f{1});
%!  end
%!endfunction

%!shared lin, pr, obs, have_proc
%! have_proc = exist (sprintf ('/proc/%d', getpid ()), 'dir') == 7 && ...
%!             exist (sprintf ('/proc/%d', getppid ()), 'dir') == 7 && exist ('/proc/1', 'dir') == 7;
%! lin = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'level'});
%! pr = sluice.prior ('level', 'normal', [0 1]);
%! obs = struct ('time', (1:6)', 'variable', {repmat({'level'}, 6, 1)}, ...
%!               'value', [0.3; -0.2; 0.5; 0.1; 0.4; 0.2], 'sigma', 0.5 * ones (6, 1));

%!test
%! % sluice.filter's 'checkpoint': at the first write and at a resume
%! if (have_proc)
%!   f = [tempname() '.ckpt'];
%!   o = {'members', 20, 'seed', 1, 't0', 0, 'progress', false, 'checkpoint', f};
%!   [dead, live, other] = plant (f);
%!   a = sluice.filter (lin, pr, obs, o{:});
%!   check_and_clean (dead, live, other);
%!   [dead, live, other] = plant (f);
%!   b = sluice.filter (lin, pr, obs, o{:});   % resumes the finished run
%!   check_and_clean (dead, live, other);
%!   assert (b.states.mean, a.states.mean);
%!   delete (f);
%! end

%!test
%! % sluice.pmmh's 'checkpoint'
%! if (have_proc)
%!   warning ('off', 'all', 'local');   % a chain far too short, on purpose
%!   f = [tempname() '.mat'];
%!   s = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, 'params', {'a'}, ...
%!                     'defaults', 0.5);
%!   o = obs;
%!   o.variable = repmat ({'x'}, 6, 1);
%!   [dead, live, other] = plant (f);
%!   sluice.pmmh (s, sluice.prior ('a', 'uniform', [0 1]), o, 'members', 10, 'chains', 1, ...
%!                'iterations', 3, 'burnin', 0, 'parallel', false, 'progress', false, ...
%!                'filter', struct ('t0', 0), 'checkpoint', f, 'seed', 1);
%!   check_and_clean (dead, live, other);
%!   delete (f);
%! end

%!test
%! % sluice.sweep's results 'file'
%! if (have_proc)
%!   f = [tempname() '.mat'];
%!   [dead, live, other] = plant (f);
%!   t = sluice.sweep (@(p) p.a ^ 2, struct ('a', [2 3]), 'workers', 1, 'file', f);
%!   check_and_clean (dead, live, other);
%!   assert (t.score, [4; 9]);
%!   delete (f);
%! end

%!test
%! % the rule itself: nothing is removed for a name without siblings, or
%! % an empty name; the list names what went
%! if (have_proc)
%!   f = [tempname() '.bin'];
%!   assert (isempty (sluice.internal.stale_tmp (f)));
%!   assert (isempty (sluice.internal.stale_tmp ('')));
%!   [dead, live, other] = plant (f);
%!   assert (sort (sluice.internal.stale_tmp (f)), sort (dead));
%!   check_and_clean (dead, live, other);
%! end
