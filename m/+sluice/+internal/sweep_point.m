function r = sweep_point (fun, point, key, spill)
  % Internal: run one point of sluice.sweep and time it; an error comes
  % back in r (ok, message, identifier). With a file name `spill`, a
  % finished point is also written there at once (to a temporary file,
  % then renamed: the file is always whole), so that a parallel sweep
  % stopped part-way keeps the points its workers finished. A package
  % function, so that worker processes of the parallel package can call it.
  r = struct ('ok', true, 'scores', [], 'time', 0, 'message', '', 'identifier', '');
  t0 = tic ();
  try
    r.scores = fun (point);
  catch err
    r.ok = false;
    r.message = err.message;
    r.identifier = err.identifier;
  end
  r.time = toc (t0);
  if (r.ok && nargin > 3 && ~isempty (spill))
    sweep_part = struct ('key', key, 'seed', point.seed, 'time', r.time, ...
                         'scores', {r.scores});
    tmp = sprintf ('%s.tmp%d', spill, sluice.internal.compat ('pid'));
    try
      sluice.internal.compat ('save_binary', tmp, 'sweep_part', sweep_part);
      sluice.internal.compat ('rename', tmp, spill);
    catch
      % the parent writes the point with its batch; nothing is lost but
      % the early copy
    end
  end
end
