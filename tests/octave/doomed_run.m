function s = doomed_run (p, parent)
  % Test helper: a point of sluice.sweep (p.a, p.seed) as a small particle
  % filter whose model is doomed_step with the parameter a = p.a; the
  % score is its log-evidence. A function in a file, so that the parallel
  % package's worker processes can run it.
  spec = sluice.model (@(t, X, P, U, dt) doomed_step (t, X, P, U, dt, parent), ...
                       'states', {'x'}, 'params', {'a'}, 'defaults', p.a);
  obs = struct ('time', (1:4)', 'variable', {repmat({'x'}, 4, 1)}, ...
                'value', [0.2; 0.5; 0.4; 0.7], 'sigma', ones (4, 1));
  r = sluice.filter (spec, sluice.prior ('x', 'normal', [0 1]), obs, 'members', 20, ...
                     'seed', p.seed, 't0', 0, 'threads', 1, 'progress', false);
  s = struct ('ev', r.log_evidence);
end
