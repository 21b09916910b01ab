function [spec, pr, obs, ev, iS, iL] = flood_case ()
  % flood_case.m - the benchmarks' human-flood case (bench_pf.m,
  % bench_threads.m): RK4 with dt = 0.01, 60 invented years with one flood
  % a year at mid-year (generalized-Pareto levels, theta = 0.28: the
  % events ev), the settlement size G from the model with muS = 0.10 and
  % lambdaP = 0.6 (the other parameters at their defaults) observed yearly
  % with lognormal errors of 10%, and lognormal priors on muS and lambdaP
  % (rows iS and iL of spec.params).
  spec = sluice.model ('flood', 'integrator', 'rk4', 'dt', 0.01);
  Ty = 60;
  theta = 0.28;
  rand ('state', 21);
  randn ('state', 21);
  te = (0.5:1:Ty)';
  W = ((theta + 1) / theta) * (1 - (1 - rand (Ty, 1)) .^ theta);
  ev = struct ('time', te, 'values', W);
  names = spec.params(:);
  iS = find (strcmp (names, 'muS'));
  iL = find (strcmp (names, 'lambdaP'));
  p_true = spec.defaults(:);
  p_true(iS) = 0.10;
  p_true(iL) = 0.6;
  X = sluice.simulate (spec, [], p_true, 0:Ty, [], 'events', ev);
  y = X(1, 2:end)' .* exp (0.1 * randn (Ty, 1));
  obs = struct ('time', (1:Ty)', 'variable', {repmat({'G'}, Ty, 1)}, 'value', y, ...
                'sigma', 0.1 * ones (Ty, 1), 'family', {repmat({'lognormal'}, Ty, 1)});
  pr = sluice.prior ('muS', 'lognormal', [log(0.215) 0.5], 'lambdaP', 'lognormal', [0 0.5]);
end
