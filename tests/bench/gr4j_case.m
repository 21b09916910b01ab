function [s, fo, obs, pr] = gr4j_case (Tn)
  % gr4j_case.m - the benchmarks' GR4J case (tests/bench/bench_pf.m,
  % tests/bench/mpi/pf_scaling.m): Tn days (default 3650, 10 years) of
  % invented daily rain and evaporation, flows from the model at
  % X = [350 0.6 90 1.7] observed daily with lognormal errors of 10%, and
  % a prior on the four parameters.
  if (nargin < 1)
    Tn = 3650;
  end
  s = sluice.model ('gr4j');
  rand ('state', 3);
  randn ('state', 3);
  t = (0:Tn)';
  E = max (0.2, 2.2 + 1.8 * sin (2 * pi * (t - 100) / 365));
  P = (rand (Tn + 1, 1) < 0.35) .* (-6 * log (rand (Tn + 1, 1)));
  fo = struct ('time', t, 'values', [P E], 'interp', 'previous');
  X = sluice.simulate (s, [], [350; 0.6; 90; 1.7], 0:Tn, fo);
  y = X(63, 2:end)' .* exp (0.1 * randn (Tn, 1));
  obs = struct ('time', (1:Tn)', 'variable', {repmat({'Q'}, Tn, 1)}, 'value', y, ...
                'sigma', 0.1 * ones (Tn, 1), 'family', {repmat({'lognormal'}, Tn, 1)});
  pr = sluice.prior ('X1', 'lognormal', [log(300) 0.7], 'X2', 'normal', [0 1.5], ...
                     'X3', 'lognormal', [log(100) 0.7], 'X4', 'uniform', [0.5 4]);
end
