function out = worker_call (fun, x, mark, k)
  % Internal: run fun (x), item k of sluice.internal.compat ('parallel_map'),
  % in a worker process. While it runs, the file <mark>/<k> holds the
  % worker's process id, so that when a worker dies (killed, out of
  % memory) the parent can tell which item it was running. An error of
  % fun is raised again unchanged (the caller's error handler sees it).
  % A package function, so that worker processes can call it.
  f = fullfile (mark, sprintf ('%d', k));
  fid = fopen (f, 'w');
  if (fid >= 0)
    fprintf (fid, '%d', sluice.internal.compat ('pid'));
    fclose (fid);
  end
  try
    out = fun (x);
  catch err
    forget (f);
    rethrow (err);
  end
  forget (f);
end

function forget (f)
  if (exist (f, 'file'))
    sluice.internal.compat ('delete_file', f);
  end
end
