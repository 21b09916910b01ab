function bench_call ()
  % The fixed cost of a call of sluice.filter on a tiny problem, where the
  % Octave layer (option parsing, checks, settings, the result) is most
  % of the time: the linear model x_t = 0.9 x_(t-1) + N(0, 0.1), one
  % state, x_0 ~ N(0, 1), observed at t = 1..20 with sd 0.5, N = 100
  % members, systematic resampling when ESS < N/2, quantiles
  % [0.05 0.5 0.95]. Timed, as the median of many calls each:
  %   - the call itself, sluice.filter (model, prior, obs, ...);
  %   - a prepared run, sluice.filter (run, 'seed', s) (the option
  %     'prepare'): what a sweep over seeds or a Markov chain pays;
  %   - preparing alone, sluice.filter (..., 'prepare', true);
  %   - the compiled work alone: the gateway sluice.kernel.pf_run on the
  %     prepared settings;
  %   - a vectorised Octave particle filter of the same computation (one
  %     loop over the cycles, none over members; the means, quantiles, ESS
  %     and log-evidence), the best a careful Octave user would write.
  % The fixed cost is a call's time less the compiled work's. Benchmarks
  % print; they never assert times.
  N = 100;
  T = 20;
  sigma = 0.5;
  probs = [0.05 0.5 0.95];
  K = 300;   % calls per median

  spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'x'});
  pr = sluice.prior ('x', 'normal', [0 1]);
  randn ('state', 5);
  x = randn ();
  y = zeros (T, 1);
  for k = 1:T
    x = 0.9 * x + sqrt (0.1) * randn ();
    y(k) = x + sigma * randn ();
  end
  obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, 'value', y, ...
                'sigma', sigma * ones (T, 1));
  o = {'members', N, 't0', 0, 'progress', false, 'quantiles', probs};
  printf ('   linear model, 1 state, A = 0.9, Q = 0.1, x0 ~ N(0, 1); N = %d, %d observation times, sigma = %g\n', ...
          N, T, sigma);

  run = sluice.filter (spec, pr, obs, o{:}, 'prepare', true);
  c = run.engine.c;
  a = sluice.filter (spec, pr, obs, o{:}, 'seed', 1);
  b = sluice.filter (run, 'seed', 1);
  printf ('   check: the prepared run returns the same result as the call: %s\n', ...
          yes_no (isequaln (a, b), 'yes', 'NO'));

  % warm up every path, then interleave the timings so that a load that
  % comes and goes on the machine falls on all of them alike
  for k = 1:20
    sluice.filter (spec, pr, obs, o{:}, 'seed', k);
    sluice.filter (run, 'seed', k);
    sluice.kernel.pf_run (c);
    vectorised_pf (0.9, sqrt (0.1), y', sigma, N, probs);
  end
  % wall time (tic/toc) and the process's CPU time (cputime), which a
  % machine shared with other jobs inflates less
  t = zeros (5, K);
  u = zeros (5, K);
  for k = 1:K
    c.seed = k;
    for j = 1:5
      u0 = cputime ();
      t0 = tic ();
      switch (j)
        case 1
          sluice.filter (spec, pr, obs, o{:}, 'seed', k);
        case 2
          sluice.filter (run, 'seed', k);
        case 3
          sluice.filter (spec, pr, obs, o{:}, 'seed', k, 'prepare', true);
        case 4
          sluice.kernel.pf_run (c);
        otherwise
          vectorised_pf (0.9, sqrt (0.1), y', sigma, N, probs);
      end
      t(j, k) = toc (t0);
      u(j, k) = cputime () - u0;
    end
  end
  ms = 1e3 * median (t, 2);
  cpu = 1e3 * median (u, 2);
  printf ('   median of %d calls, ms wall [CPU]: call %.3f [%.3f], prepared run %.3f [%.3f], preparing alone %.3f [%.3f], compiled work %.3f [%.3f], vectorised Octave %.3f [%.3f]\n', ...
          K, ms(1), cpu(1), ms(2), cpu(2), ms(3), cpu(3), ms(4), cpu(4), ms(5), cpu(5));
  printf ('   fixed cost (call less compiled work), ms wall [CPU]: the call %.3f [%.3f], the prepared run %.3f [%.3f] (target <= 0.5 ms)\n', ...
          ms(1) - ms(4), cpu(1) - cpu(4), ms(2) - ms(4), cpu(2) - cpu(4));
  printf ('   ratios: call / compiled work %.1f, prepared run / compiled work %.1f; vectorised Octave / call %.2f, vectorised Octave / prepared run %.2f\n', ...
          ms(1) / ms(4), ms(2) / ms(4), ms(5) / ms(1), ms(5) / ms(2));
end

function s = yes_no (tf, a, b)
  if (tf)
    s = a;
  else
    s = b;
  end
end
