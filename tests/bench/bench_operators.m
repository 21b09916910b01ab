function bench_operators ()
  % Cost of an observation operator written in Octave, called back from
  % the compiled cycle once per cycle, against the same operator as a
  % matrix evaluated in C: a particle filter of a 2-state linear model,
  % 1000 members, 1000 cycles, each observing x1 + x2. Best of 3.
  spec = sluice.model ('linear', 'A', [0.9 0.1; 0 0.9], 'Q', 0.1 * eye (2));
  T = 1000;
  N = 1000;
  obs = struct ('time', (1:T)', 'variable', {repmat({'tot'}, T, 1)}, ...
                'value', sin ((1:T)' / 9), 'sigma', 0.5 * ones (T, 1));
  pr = sluice.prior ('x1', 'normal', [0 1]);
  opsH = struct ('names', 'tot', 'H', [1 1]);
  opsF = struct ('names', 'tot', 'fun', @(t, X, P) X(1, :) + X(2, :));
  tH = Inf;
  tF = Inf;
  for r = 1:3
    t0 = tic ();
    a = sluice.filter (spec, pr, obs, 'members', N, 'seed', 1, 'progress', false, 'operators', opsH);
    tH = min (tH, toc (t0));
    t0 = tic ();
    b = sluice.filter (spec, pr, obs, 'members', N, 'seed', 1, 'progress', false, 'operators', opsF);
    tF = min (tF, toc (t0));
  end
  assert (isequal (a.states.mean, b.states.mean));
  printf ('   observation operator, %d members, %d cycles: matrix (in C) %.3f s, Octave handle %.3f s\n', ...
          N, T, tH, tF);
  printf ('   cost of one call back into Octave: %.1f us (%.2fx the matrix run)\n', ...
          1e6 * (tF - tH) / T, tF / tH);
end
