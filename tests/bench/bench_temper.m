function bench_temper ()
  % Cost of adaptive likelihood tempering per filter cycle, relative to
  % the plain bootstrap cycle (param_move 'fixed', no tempering), on an
  % invented GR4J catchment: one year of daily flows from known
  % parameters, 10% lognormal error, perturbed rain and evaporation,
  % N = 1000 members, 1 thread. Also reported: tempering steps and member
  % likelihood evaluations per cycle (GR4J's flow depends on the states
  % only, so a tempered cycle reuses one likelihood pass). Times are the
  % best of 2 runs.
  Tn = 365; t = (0:Tn-1)';
  randn ('state', 5); rand ('state', 5);
  E = max (0.2, 2.2 + 1.8 * sin (2 * pi * (t - 100) / 365));
  P = (rand (Tn, 1) < 0.38) .* (-7 * log (rand (Tn, 1)));
  s = sluice.model ('gr4j');
  truth = [350; 0.6; 90; 1.7];
  x0 = s.x0; x0(1) = 0.6 * truth(1); x0(2) = 0.7 * truth(3);
  forcing = struct ('time', t, 'values', [P E], 'interp', 'previous');
  Pt = P .* exp (0.2 * randn (Tn, 1) - 0.02); Et = E .* exp (0.1 * randn (Tn, 1) - 0.005);
  X = sluice.simulate (s, x0, truth, 0:Tn, struct ('time', t, 'values', [Pt Et], 'interp', 'previous'));
  y = X(63, 2:end)' .* exp (0.1 * randn (Tn, 1));
  obs = struct ('time', (1:Tn)', 'variable', {repmat({'Q'}, Tn, 1)}, 'value', y, ...
                'sigma', 0.1 * ones (Tn, 1), 'family', {repmat({'lognormal'}, Tn, 1)});
  pr = sluice.prior ('X1', 'lognormal', [log(300) 0.5], 'X2', 'normal', [0 1], ...
                     'X3', 'lognormal', [log(100) 0.5], 'X4', 'uniform', [0.5 4]);
  fn = struct ('kind', {{'multiplicative', 'multiplicative'}}, 'sd', [0.2 0.1], 'ar1', 0);
  common = {'members', 1000, 'seed', 1, 't0', 0, 'forcing', forcing, 'forcing_noise', fn, ...
            'progress', false, 'threads', 1};
  runs = {{'param_move', 'fixed'}, {}, {'temper_ess', 0.5}, {'temper_ess', 0.9}};
  names = {'bootstrap (fixed, no tempering)', 'kernel move, no tempering', ...
           'kernel move, temper_ess 0.5', 'kernel move, temper_ess 0.9'};
  printf ('   GR4J, %d daily cycles, N = 1000, 1 thread, best of 2\n', Tn);
  base = NaN;
  for k = 1:numel (runs)
    best = Inf;
    for rep = 1:2
      t0 = tic ();
      r = sluice.filter (s, pr, obs, common{:}, runs{k}{:});
      best = min (best, toc (t0));
    end
    if (k == 1)
      base = best;
    end
    printf ('   %-34s %6.2f ms/cycle  ratio %5.2f  steps/cycle %5.2f (max %d)  evals/cycle %6.0f\n', ...
            names{k}, 1e3 * best / Tn, best / base, mean (r.temper_steps), max (r.temper_steps), ...
            mean (r.loglik_evals));
  end
end
