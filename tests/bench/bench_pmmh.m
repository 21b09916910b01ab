function bench_pmmh ()
  % Particle marginal Metropolis-Hastings of the flood model: 500
  % particles, 50 years of an invented record (census of G every 5 years,
  % levee surveys in years 25 and 45, flood levels read with a 5% error),
  % muS and lambdaP unknown. Times a few hundred iterations with 2 chains
  % one after another and in 2 worker processes, extrapolates to 10,000
  % iterations, and splits the cost of one filter call into the compiled
  % run and the .m code around it.
  warning ('off', 'sluice:filter:nonfinite');
  % short chains: the convergence warnings would only repeat the figures below
  warning ('off', 'sluice:pmmh:notconverged');
  warning ('off', 'sluice:pmmh:lowess');
  % other work on the machine slows the wall-clock figures: say how busy it was
  load_text = 'unknown';
  fid = fopen ('/proc/loadavg', 'r');
  if (fid >= 0)
    f = strsplit (strtrim (fgetl (fid)), ' ');
    load_text = strjoin (f(1:min (3, numel (f))), ' ');
    fclose (fid);
  end
  [spec, obs, fopts, prior, p_true] = flood_record ();
  members = 500;
  iters = 150;          % per chain, after a burn-in of 30
  burn = 30;
  chains = 2;

  % --- one filter call: the compiled run against the .m code around it
  names = spec.params(:);
  i_mu = find (strcmp (names, 'muS'));
  i_la = find (strcmp (names, 'lambdaP'));
  pf = sluice.prior ('muS', 'fixed', p_true(i_mu), 'lambdaP', 'fixed', p_true(i_la));
  fo = fopts;
  fo.members = members;
  fo.progress = false;
  fo.quantiles = zeros (1, 0);
  fo.threads = 1;
  % each figure is the fastest of ncall calls: the least disturbed by other
  % work on the machine
  ncall = 20;
  ll = zeros (1, ncall);
  t_plain = zeros (1, ncall);
  t_comp = zeros (1, ncall);
  t_mem = zeros (1, ncall);
  sluice.filter (spec, pf, obs, fo);
  for k = 1:ncall
    fo.seed = k;
    t0 = tic ();
    r = sluice.filter (spec, pf, obs, fo);
    t_plain(k) = toc (t0);
    ll(k) = r.log_evidence;
    % the compiled part, under the profiler (which slows only .m code)
    profile clear;
    profile on;
    sluice.filter (spec, pf, obs, fo);
    profile off;
    info = profile ('info');
    ft = info.FunctionTable;
    sel = strcmp ({ft.FunctionName}, 'pf_run') | strcmp ({ft.FunctionName}, 'sluice.kernel.pf_run');
    t_comp(k) = sum ([ft(sel).TotalTime]);
    t0 = tic ();
    [~, ~] = memory ();
    t_mem(k) = toc (t0);
  end
  profile clear;
  t_call = min (t_plain);
  t_c = min (t_comp);
  t_mem = min (t_mem);
  printf ('   flood model, %d particles, 50 years, %d observations, %d floods\n', ...
          members, numel (obs.time), numel (fopts.events.time));
  printf ('   one filter call (1 thread)        %8.2f ms\n', 1e3 * t_call);
  printf ('     compiled run (pf_run)           %8.2f ms (%.0f%%)\n', 1e3 * t_c, 100 * t_c / t_call);
  printf ('     .m code around it               %8.2f ms (%.0f%%), of which memory () %.2f ms\n', ...
          1e3 * (t_call - t_c), 100 * (t_call - t_c) / t_call, 1e3 * t_mem);
  printf ('   sd of the log-evidence estimate at the truth: %.3f (%d runs)\n', std (ll), ncall);

  % --- the chains: serially, then in 2 processes
  o = {'members', members, 'chains', chains, 'iterations', iters, 'burnin', burn, ...
       'seed', 2027, 'filter', fopts};
  c0 = cputime ();
  rs = sluice.pmmh (spec, prior, obs, o{:}, 'parallel', false);
  cpu_s = (cputime () - c0) / (chains * (iters + burn));
  rp = sluice.pmmh (spec, prior, obs, o{:}, 'parallel', 'auto', 'workers', 2);
  n_it = chains * (iters + burn);
  t_s = rs.time / n_it;                     % wall seconds per iteration, serial
  t_p = rp.time / n_it;                     % with the chains side by side
  printf ('   PMMH, %d chains x %d iterations (%d of burn-in), muS and lambdaP:\n', ...
          chains, iters + burn, burn);
  printf ('     serial                          %8.2f s  (%.1f ms per iteration, %.1f ms of CPU)\n', ...
          rs.time, 1e3 * t_s, 1e3 * cpu_s);
  if (rp.parallel)
    printf ('     2 processes                     %8.2f s  (%.1f ms per iteration)\n', ...
            rp.time, 1e3 * t_p);
    printf ('     2-core speed-up                 %8.2f x  (results identical: %s)\n', ...
            rs.time / rp.time, yesno (isequal (rs.samples, rp.samples)));
  else
    printf ('     the parallel package did not load: no 2-process figure\n');
  end
  % what the machine gives: the same 2-process split of a plain CPU-bound
  % computation (2 x on 2 idle cores)
  job = @(k) sum (arrayfun (@(j) sum (sin ((1:1e5) * j)), (1:600) + 0 * k));
  t0 = tic ();
  job (1);
  job (2);
  t_job = toc (t0);
  if (rp.parallel)
    t0 = tic ();
    parcellfun (2, job, {1, 2}, 'VerboseLevel', 0);
    printf ('     (the same split of a plain CPU-bound job: %.2f x on this machine now)\n', ...
            t_job / toc (t0));
  end
  printf ('     acceptance after burn-in         %s\n', sprintf ('%.2f ', rs.acceptance));
  % the cost of an effective draw: filter calls (burn-in included) per
  % bulk effective sample of the worst-mixing parameter
  printf ('     likelihood evaluations per effective sample %8.1f  (bulk ESS %s; short chains: rough)\n', ...
          rs.filter_calls / min (rs.summary.ess_bulk), sprintf ('%.0f ', rs.summary.ess_bulk));
  printf ('     posterior means (short chains)   muS %.3f, lambdaP %.3f (truth %.3f, %.3f)\n', ...
          mean (vec (rs.samples(:, 1, :))), mean (vec (rs.samples(:, 2, :))), ...
          p_true(i_mu), p_true(i_la));
  best = min (t_s, t_p);
  printf ('   extrapolated, 10,000 iterations (2 chains of 5,000 on 2 cores): %6.1f min\n', ...
          1e4 * best / 60);
  printf ('   extrapolated, 2 chains of 10,000 iterations each on 2 cores:    %6.1f min\n', ...
          2e4 * best / 60);
  printf ('   from the CPU time of one serial iteration, 2 idle cores would take %6.1f min\n', ...
          1e4 * cpu_s / 2 / 60);
  printf ('   (target: 10,000 iterations in minutes on 2 cores; one iteration is one\n');
  printf ('    filter call, %.0f%% of it the compiled run)\n', 100 * t_c / t_call);
  printf ('   load average when the benchmark started: %s\n', load_text);
end

function [spec, obs, fopts, prior, p_true] = flood_record ()
  % an invented 50-year record, made as in the flood-town demo
  spec = sluice.model ('flood');
  years = 0:50;
  theta = 0.28;
  U = sluice.draw (sluice.prior ('u', 'uniform', [0 1]), 400, 1871);
  t_ev = cumsum (-log (U(1:200)));          % Poisson arrivals, mean gap 1
  keep = t_ev < years(end);
  t_ev = t_ev(keep)';
  W = ((theta + 1) / theta) * (1 - (1 - U(201:400)) .^ theta);
  W = W(keep)';
  names = spec.params(:);
  p_true = spec.defaults(:);
  p_true(strcmp (names, 'muS')) = 0.10;
  p_true(strcmp (names, 'lambdaP')) = 0.6;
  events = struct ('time', t_ev, 'values', W);
  X = sluice.simulate (spec, [], p_true, years, [], 'events', events);
  iG = find (strcmp (spec.states, 'G'));
  iH = find (strcmp (spec.states, 'H'));
  Z = sluice.draw (sluice.prior ('z', 'normal', [0 1]), 300, 1872);
  nev = numel (t_ev);
  W_read = W .* exp (0.05 * Z(1:nev)');
  t_census = (5:5:50)';
  G_obs = X(iG, t_census + 1)' .* exp (0.1 * Z(201:200 + numel (t_census))');
  t_survey = [25; 45];
  H_obs = X(iH, t_survey + 1)' + 0.2 * Z(221:222)';
  nc = numel (t_census);
  time = [t_census; t_survey];
  variable = [repmat({'G'}, nc, 1); {'H'; 'H'}];
  value = [G_obs; H_obs];
  sigma = [0.1 * ones(nc, 1); 0.2; 0.2];
  family = [repmat({'lognormal'}, nc, 1); {'gaussian'; 'gaussian'}];
  [time, o] = sort (time);
  obs = struct ('time', time, 'variable', {variable(o)}, 'value', value(o), ...
                'sigma', sigma(o), 'family', {family(o)});
  fopts = struct ('t0', 0, 'events', struct ('time', t_ev, 'values', W_read), ...
                  'event_noise', struct ('kind', 'multiplicative', 'sd', 0.05));
  prior = sluice.prior ('muS', 'lognormal', [log(0.215) 0.5], ...
                        'lambdaP', 'lognormal', [log(1) 0.5]);
end

function s = yesno (v)
  if (v)
    s = 'yes';
  else
    s = 'no';
  end
end
