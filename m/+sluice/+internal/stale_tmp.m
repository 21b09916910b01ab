function removed = stale_tmp (file)
  % Internal: remove what writers killed mid-write left beside file. A
  % checkpoint or results file is written to <file>.tmp<pid> and renamed
  % over file; a process killed (kill -9, a power cut) between the two
  % leaves its <file>.tmp<pid> behind for good. Such a sibling is removed
  % when no process <pid> exists, i.e. there is no /proc/<pid>; one of a
  % live process (a writer now, or a process that took the pid since) is
  % kept, and where /proc cannot tell (no /proc/<own pid>: not Linux)
  % nothing is removed. removed lists the files removed. Called before a
  % run writes or resumes file (sluice.filter's and sluice.pmmh's
  % 'checkpoint', sluice.sweep's 'file').
  removed = {};
  if (isempty (file) || ~exist (proc_dir (sluice.internal.compat ('pid')), 'dir'))
    return;
  end
  [folder, name, ext] = fileparts (file);
  if (isempty (folder))
    folder = '.';
  end
  pattern = ['^' regexptranslate('escape', [name ext]) '\.tmp(\d+)$'];
  % only the names that start as the file's temporaries do, not the
  % whole folder (dir of a shared /tmp stats every entry and warns of
  % those that vanish meanwhile); the pattern above then picks exactly
  found = sluice.internal.compat ('glob', [fullfile(folder, [name ext]) '.tmp*']);
  for k = 1:numel (found)
    [~, base, bext] = fileparts (found{k});
    tok = regexp ([base bext], pattern, 'tokens', 'once');
    if (isempty (tok) || exist (found{k}, 'dir'))
      continue;
    end
    % the pid as the writer printed it (%d); more digits than any pid
    % has name no process
    if (numel (tok{1}) > 15 || ~exist (proc_dir (str2double (tok{1})), 'dir'))
      f = fullfile (folder, [base bext]);
      if (sluice.internal.compat ('delete_file', f) == 0)
        removed{end + 1} = f;
      end
    end
  end
end

function d = proc_dir (pid)
  d = sprintf ('/proc/%d', pid);
end
