function bench_param_move ()
  % What the parameter moves cost per filter cycle, relative to the plain
  % bootstrap cycle (param_move 'fixed') on the same record, and how many
  % member likelihood evaluations each spends per effective parameter
  % sample at the end (evaluations / min(final ESS, distinct values of the
  % parameter with the fewest)). An invented GR4J catchment: a spin-up
  % year, then one year of daily flows with 10% lognormal error; four
  % estimated parameters; 1 thread; best of 2.
  %   deterministic paths: fixed, kernel, resample_move (the default there)
  %   perturbed rain and evaporation: fixed, kernel (the default there),
  %   resample_move (with moves of the paths' draws), smc2 with 100
  %   parameter vectors x 20 members
  S0 = 365; Tn = 365; t = (-S0:Tn-1)';
  rand ('state', 21); randn ('state', 21);
  E = max (0.2, 2.2 + 1.8 * sin (2 * pi * (t - 100) / 365));
  P = (rand (S0 + Tn, 1) < 0.38) .* (-7 * log (rand (S0 + Tn, 1)));
  s = sluice.model ('gr4j');
  truth = [350; 0.6; 90; 1.7];
  f = struct ('time', t, 'values', [P E], 'interp', 'previous');
  X = sluice.simulate (s, [], truth, -S0:Tn, f);
  y = X(63, S0+2:end)' .* exp (0.1 * randn (Tn, 1));
  obs = struct ('time', (1:Tn)', 'variable', {repmat({'Q'}, Tn, 1)}, 'value', y, ...
                'sigma', 0.1 * ones (Tn, 1), 'family', {repmat({'lognormal'}, Tn, 1)});
  pr = sluice.prior ('X1', 'lognormal', [log(300) 0.5], 'X2', 'normal', [0 1], ...
                     'X3', 'lognormal', [log(100) 0.5], 'X4', 'uniform', [0.5 4]);
  fn = struct ('kind', {{'multiplicative', 'multiplicative'}}, 'sd', [0.2 0.1], 'ar1', 0);
  common = {'seed', 1, 't0', -S0, 'forcing', f, 'progress', false, 'threads', 1};
  printf ('   GR4J, spin-up year + %d daily cycles, 1 thread, best of 2\n', Tn);
  cases = {'deterministic paths, N = 1000', {'members', 1000}, ...
           {{'param_move', 'fixed'}, {'param_move', 'kernel'}, {'param_move', 'resample_move'}};
           'perturbed forcing, N = 2000', {'members', 2000, 'forcing_noise', fn}, ...
           {{'param_move', 'fixed'}, {'param_move', 'kernel'}, {'param_move', 'resample_move'}, ...
            {'param_move', 'smc2', 'members', 100, 'inner_members', 20}}};
  for c = 1:rows (cases)
    printf ('   %s\n', cases{c, 1});
    base = NaN;
    runs = cases{c, 3};
    for k = 1:numel (runs)
      best = Inf;
      for rep = 1:2
        t0 = tic ();
        r = sluice.filter (s, pr, obs, common{:}, cases{c, 2}{:}, runs{k}{:});
        best = min (best, toc (t0));
      end
      if (k == 1)
        base = best;
      end
      evals = sum (r.loglik_evals);
      eff = min (r.ess(end), min (r.params.distinct(:, end)));
      printf ('     %-14s %7.2f ms/cycle  ratio %7.1f  evals/cycle %9.0f  evals per effective sample %9.0f\n', ...
              r.param_move, 1e3 * best / Tn, best / base, evals / Tn, evals / max (eff, 1));
    end
  end
end
