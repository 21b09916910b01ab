function s = slow_point (p, marker, slow)
  % Test helper (tests/octave/test_interrupt.m): a point of sluice.sweep
  % as a particle filter over 2000 cycles with a model written as an
  % Octave function; at a = slow that function first writes the file
  % marker (the slow point has started) and then waits 0.02 s a step.
  % The score, the log-evidence, does not depend on the waiting.
  if (p.a == slow)
    f = @(t, X, P, U, dt) 0.9 * X + 0 * mark_once (X, marker, 0.02);
  else
    f = @(t, X, P, U, dt) 0.9 * X;
  end
  T = 2000;
  obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, ...
                'value', 0.1 * sin (1:T)', 'sigma', ones (T, 1));
  r = sluice.filter (sluice.model (f, 'states', {'x'}), sluice.prior ('x', 'normal', [0 1]), ...
                     obs, 'members', 20, 'seed', p.seed, 't0', 0, 'progress', false);
  s = struct ('ev', r.log_evidence);
end
