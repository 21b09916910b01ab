function X = doomed_step (t, X, P, U, dt, parent)
  % Test helper (tests/octave/test_failure_modes.m): the step
  % x <- 0.9 x + 0.1 a of a model with the parameter a that fails on
  % purpose at two values of a:
  %   a = 3: ends its own process with SIGKILL, as a worker killed from
  %          outside or by the kernel's out-of-memory killer would end --
  %          only in a worker process, never in the process whose id is
  %          parent (the test's own);
  %   a = 5: raises an error without an identifier, in any process.
  if (any (P(1, :) == 3) && getpid () ~= parent)
    kill (getpid (), 9);
    pause (30);   % the signal ends the process before this returns
  end
  if (any (P(1, :) == 5))
    error ('the doomed step refuses a = 5');
  end
  X = 0.9 * X + 0.1 * P(1, :);
end
