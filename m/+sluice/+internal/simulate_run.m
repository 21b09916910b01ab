function [X, times] = simulate_run (model, x0, params, times, forcing, opts, fn)
  % Internal: the body of sluice.simulate (see its help) for the public
  % function fn: sluice.simulate itself, or a workflow whose step it is
  % (the truth run of sluice.twin). opts holds events and seed; every
  % error is raised as sluice:<fn>:<reason>.

  % before times is checked (a range costs nothing until it is expanded):
  % the run keeps n x T states three times over (the run's history, its
  % copy and the result) and the times four times (checks and copies)
  sluice.internal.ensure_memory (8 * numel (times) * (3 * max (1, numel (x0)) + 4), fn, ...
                               sprintf ('a run over %d output times', numel (times)));
  if (~isa (times, 'double') || ~isreal (times) || isempty (times) || ~isvector (times) || ...
      any (~isfinite (times)) || any (diff (times) <= 0))
    error (['sluice:' fn ':badtimes'], 'times must be a finite, increasing real vector');
  end
  times = times(:)';
  [x0, params] = sluice.internal.check_state (model, x0, params, 1, fn);
  if (numel (times) == 1)
    X = x0;
    return;
  end
  X = sluice.internal.run_states (model, x0, params, times(1), times(2:end), forcing, ...
                                opts, fn);
  X = [x0, reshape(X, numel (x0), [])];
end
