function bench_models (only)
  % The built-in models advanced by sluice.propagate (1 and 2 threads)
  % against a vectorised Octave implementation of the same model and the
  % same integrator (one loop over time steps, none over members), in
  % member-steps per second:
  %   lorenz96  n = 40, F = 8, RK4 with dt = 0.01;
  %   flood     the human-flood model, fixed-step RK4 with dt = 0.01, flood
  %             events at Poisson times (mean gap 1) with generalized-Pareto
  %             levels (theta = 0.28), the jumps applied at the event times
  %             inside the step that holds them;
  %   gr4j      the daily map with its unit-hydrograph queues, one parameter
  %             set per member, synthetic daily rain and evaporation (only
  %             when the model is registered).
  % Before timing, a small ensemble checks that both give the same states.
  % Each figure is the best of 3 runs of about 1 s (the Octave run has its
  % own number of steps), the fixed cost of a call included; N = 1e4 and
  % 1e5 members. The Octave versions are written for speed: flood treats
  % the linear dH/dt, dM/dt through RK4's growth factor, and gr4j carries
  % only the queue slots its ensemble's unit hydrographs reach (see their
  % comments); both give RK4's and the map's states as compiled.
  % GR4J is also held against a plain C loop of the same equations in
  % structure-of-arrays layout (tests/bench/gr4j_soa.c, one core, N = 1e4):
  % the figure is sluice's speed as a share of that loop's.
  % bench_models ({'gr4j', ...}) runs only the parts named
  if (nargin < 1)
    only = {};
  end
  cfg.only = only;
  cfg.Ns = [1e4 1e5];
  cfg.nrep = 3;
  cfg.target = 1.0;   % seconds per timed run
  printf ('   load average before: %s\n', load_average ());
  guarded (cfg, 'lorenz96', @() bench_lorenz96 (cfg));
  guarded (cfg, 'flood', @() bench_flood (cfg));
  if (any (strcmp ('gr4j', sluice.kernel.model_info ())))
    guarded (cfg, 'gr4j', @() bench_gr4j (cfg));
    guarded (cfg, 'gr4j_soa', @() bench_gr4j_soa (cfg));
  else
    printf ('   gr4j: not registered among the built-in models; skipped\n');
  end
  printf ('   load average after: %s\n', load_average ());
end

function guarded (cfg, name, fun)
  % one model that fails prints a line; the others still run
  if (~isempty (cfg.only) && ~any (strcmp (name, cfg.only)))
    return;
  end
  try
    fun ();
  catch err
    printf ('   %s did not complete: %s\n', name, err.message);
  end
end

% ------------------------------------------------------------------------
% Lorenz-96

function bench_lorenz96 (cfg)
  n = 40;
  F = 8;
  spec = sluice.model ('lorenz96', 'n', n);
  dt = spec.dt;
  printf ('   lorenz96: n = %d, F = %g, %s with dt = %g, members 8 + N(0, 1) per variable\n', ...
          n, F, spec.integrator, dt);
  randn ('state', 1);
  Xs = 8 + randn (n, 200);
  steps = 50;
  a = sluice.propagate (spec, Xs, [], 0, steps * dt, [], 'threads', 1);
  b = l96_octave (Xs, F, 0, steps * dt, dt);
  report_check ('lorenz96', columns (Xs), steps, a, b);
  for N = cfg.Ns
    randn ('state', 2);
    X0 = 8 + randn (n, N);
    comp = @(s, thr) sluice.propagate (spec, X0, [], 0, s * dt, [], 'threads', thr);
    oct = @(s) l96_octave (X0, F, 0, s * dt, dt);
    time_model ('lorenz96', N, comp, oct, cfg, 5);
  end
end

function X = l96_octave (X, F, t0, t1, dt)
  % RK4 on dx_i/dt = (x_{i+1} - x_{i-2}) x_{i-1} - x_i + F over the whole
  % ensemble at once, on the step grid of the compiled run
  n = rows (X);
  ip1 = [2:n 1];
  im2 = [n-1 n 1:n-2];
  im1 = [n 1:n-1];
  [nsteps, h] = step_grid (t0, t1, dt);
  for l = 0:nsteps-1
    hl = step_length (t0, t1, h, l, nsteps);
    k1 = (X(ip1, :) - X(im2, :)) .* X(im1, :) - X + F;
    Y = X + 0.5 * hl * k1;
    k2 = (Y(ip1, :) - Y(im2, :)) .* Y(im1, :) - Y + F;
    Y = X + 0.5 * hl * k2;
    k3 = (Y(ip1, :) - Y(im2, :)) .* Y(im1, :) - Y + F;
    Y = X + hl * k3;
    k4 = (Y(ip1, :) - Y(im2, :)) .* Y(im1, :) - Y + F;
    X = X + (hl / 6) * (k1 + 2 * k2 + 2 * k3 + k4);
  end
end

% ------------------------------------------------------------------------
% the human-flood model

function bench_flood (cfg)
  dt = 0.01;
  spec = sluice.model ('flood', 'integrator', 'rk4', 'dt', dt);
  p = spec.defaults(:);
  % flood events: Poisson arrivals with mean gap 1, levels
  % W = ((theta + 1) / theta) (1 - (1 - U)^theta), theta = 0.28
  rand ('state', 3);
  gaps = -log (rand (400, 1));
  te = cumsum (gaps);
  te = te(te < 300);
  theta = 0.28;
  W = ((theta + 1) / theta) * (1 - (1 - rand (numel (te), 1)) .^ theta);
  ev = struct ('time', te, 'values', W);
  printf ('   flood: default parameters, rk4 with dt = %g, events at Poisson times (mean gap 1), generalized-Pareto levels (theta = %g)\n', ...
          dt, theta);

  Xs = flood_ensemble (300, 4);
  t1 = 4;   % holds several events, some of them inside a step
  a = sluice.propagate (spec, Xs, [], 0, t1, [], 'events', ev, 'threads', 1);
  b = flood_octave (Xs, p, 0, t1, dt, te, W);
  nev = sum (te > 0 & te <= t1);
  report_check (sprintf ('flood (%d events)', nev), columns (Xs), step_grid (0, t1, dt), a, b);
  for N = cfg.Ns
    X0 = flood_ensemble (N, 5);
    comp = @(s, thr) sluice.propagate (spec, X0, [], 0, s * dt, [], 'events', ev, 'threads', thr);
    oct = @(s) flood_octave (X0, p, 0, s * dt, dt, te, W);
    time_model ('flood', N, comp, oct, cfg, 30);
  end
end

function X = flood_ensemble (N, seed)
  % states G, D, H, M, F, R around the model's start (G0 = 0.01, D0 = 1)
  randn ('state', seed);
  rand ('state', seed);
  X = zeros (6, N);
  X(1, :) = 0.01 * exp (0.2 * randn (1, N));
  X(2, :) = 1 + 0.05 * randn (1, N);
  X(3, :) = 0.5 * rand (1, N);
  X(4, :) = 0.1 * rand (1, N);
end

% ------------------------------------------------------------------------
% GR4J

function bench_gr4j (cfg)
  spec = sluice.model ('gr4j');
  st = spec.states;
  if (~(numel (st) == 63 && strcmp (st{1}, 'S') && strcmp (st{2}, 'R') && ...
        strcmp (st{3}, 'uh1_1') && strcmp (st{23}, 'uh2_1') && strcmp (st{63}, 'Q')))
    error ('the gr4j states are not laid out as S, R, uh1_1..uh1_20, uh2_1..uh2_40, Q, which the Octave version follows');
  end
  p0 = spec.defaults(:);
  % synthetic daily forcing: rain on 40% of days, exponential amounts of
  % mean 8 mm; evaporation 2 + 1.5 sin(2 pi t / 365) mm
  nd = 20000;
  rand ('state', 6);
  Pd = (rand (nd, 1) < 0.4) .* (-8 * log (rand (nd, 1)));
  Ed = 2 + 1.5 * sin (2 * pi * (0:nd-1)' / 365);
  frc = struct ('time', (0:nd-1)', 'values', [Pd Ed], 'interp', 'previous');
  printf ('   gr4j: daily map, %d states, one parameter set per member around the reference set, synthetic rain and evaporation\n', ...
          numel (spec.states));
  Ps = gr4j_params (p0, 300, 7);
  Xs = repmat (spec.x0(:), 1, columns (Ps));
  days = 60;
  a = sluice.propagate (spec, Xs, Ps, 0, days, frc, 'threads', 1);
  b = gr4j_octave (Xs, Ps, days, Pd, Ed);
  report_check ('gr4j', columns (Xs), days, a, b);
  for N = cfg.Ns
    P = gr4j_params (p0, N, 8);
    X0 = repmat (spec.x0(:), 1, N);
    comp = @(s, thr) sluice.propagate (spec, X0, P, 0, s, frc, 'threads', thr);
    oct = @(s) gr4j_octave (X0, P, s, Pd, Ed);
    time_model ('gr4j', N, comp, oct, cfg, 30);
  end
end

function bench_gr4j_soa (cfg)
  % sluice.propagate (1 thread) against gr4j_soa.c, compiled here with gcc
  % (-O3, no fused multiply-adds, like src/models/gr4j.c), on the same
  % members, parameters and forcing; the C program times itself (best of
  % cfg.nrep runs) and must end on sluice's states bit for bit.
  N = 1e4;
  spec = sluice.model ('gr4j');
  p0 = spec.defaults(:);
  here = fileparts (mfilename ('fullpath'));
  tmp = tempname ();
  mkdir (tmp);
  cleanup = onCleanup (@() remove_dir (tmp));
  exe = fullfile (tmp, 'gr4j_soa');
  flags = '-std=c11 -D_POSIX_C_SOURCE=200809L -O3 -fno-math-errno -ffp-contract=off';
  [rc, out] = system (sprintf ('gcc %s -o %s %s -lm 2>&1', flags, exe, ...
                               fullfile (here, 'gr4j_soa.c')));
  if (rc ~= 0)
    error ('gr4j_soa.c did not compile: %s', out);
  end
  nd = 20000;
  rand ('state', 6);
  Pd = (rand (nd, 1) < 0.4) .* (-8 * log (rand (nd, 1)));
  Ed = 2 + 1.5 * sin (2 * pi * (0:nd-1)' / 365);
  frc = struct ('time', (0:nd-1)', 'values', [Pd Ed], 'interp', 'previous');
  P = gr4j_params (p0, N, 8);
  X0 = repmat (spec.x0(:), 1, N);
  comp = @(s) sluice.propagate (spec, X0, P, 0, s, frc, 'threads', 1);
  days = min (calibrate (comp, cfg.target), nd);
  tc = Inf;
  for r = 1:cfg.nrep
    t0 = tic ();
    a = comp (days);
    tc = min (tc, toc (t0));
  end
  tone = Inf;
  for r = 1:cfg.nrep
    t0 = tic ();
    comp (1);
    tone = min (tone, toc (t0));
  end
  fin = fullfile (tmp, 'in.bin');
  fout = fullfile (tmp, 'out.bin');
  fid = fopen (fin, 'wb');
  fwrite (fid, [N; days; P(:); X0(:); Pd(1:days); Ed(1:days)], 'double');
  fclose (fid);
  [rc, out] = system (sprintf ('%s %s %s %d 2>&1', exe, fin, fout, cfg.nrep));
  if (rc ~= 0)
    error ('gr4j_soa failed: %s', out);
  end
  fid = fopen (fout, 'rb');
  v = fread (fid, Inf, 'double');
  fclose (fid);
  b = reshape (v(1:end-1), size (X0));
  ts = v(end);
  printf ('   gr4j N=1e4, %d days, 1 thread: sluice.propagate %.1f ns per member-step (%.1f beyond a one-step call of %.1f ms); C loop in structure-of-arrays layout %.1f ns; sluice at %.0f%% of the C loop (%.0f%% beyond the call) (target >= 50%%)\n', ...
          days, 1e9 * tc / (N * days), 1e9 * (tc - tone) / (N * (days - 1)), 1e3 * tone, ...
          1e9 * ts / (N * days), 100 * ts / tc, 100 * ts / (tc - tone) * (days - 1) / days);
  printf ('      final states equal bit for bit: %s\n', yes_no (isequal (a, b), 'yes', 'NO'));
end

function remove_dir (d)
  confirm_recursive_rmdir (false, 'local');
  rmdir (d, 's');
end

function P = gr4j_params (p0, N, seed)
  randn ('state', seed);
  P = zeros (4, N);
  P(1, :) = p0(1) * exp (0.2 * randn (1, N));
  P(2, :) = p0(2) + 0.5 * randn (1, N);
  P(3, :) = p0(3) * exp (0.2 * randn (1, N));
  P(4, :) = min (max (p0(4) * exp (0.2 * randn (1, N)), 0.5), 20);
end

% ------------------------------------------------------------------------
% timing and checks

function time_model (name, N, comp, oct, cfg, target_ratio)
  nrep = cfg.nrep;
  c0 = cpu_snapshot ();
  % the compiled run: steps for about cfg.target seconds on one thread
  sc = calibrate (@(s) comp (s, 1), cfg.target);
  t1 = Inf;
  t2 = Inf;
  n2 = 0;
  for r = 1:nrep
    t0 = tic ();
    a = comp (sc, 1);
    t1 = min (t1, toc (t0));
    % two threads meet once a step: with a core taken by another process a
    % step can wait a time slice; a run that slow is not repeated
    if (r == 1 || t2 < 3 * t1)
      t0 = tic ();
      b = comp (sc, 2);
      t2 = min (t2, toc (t0));
      n2 = n2 + 1;
    end
  end
  same = isequaln (a, b);
  bad = sum (any (~isfinite (a), 1));
  clear a b;
  % a one-step call: the fixed cost of a call (checks, copies, buffers)
  tone = Inf;
  tone2 = Inf;
  for r = 1:nrep
    t0 = tic ();
    a = comp (1, 1);
    tone = min (tone, toc (t0));
    clear a;
    t0 = tic ();
    a = comp (1, 2);
    tone2 = min (tone2, toc (t0));
    clear a;
  end
  so = calibrate (oct, cfg.target);
  to = Inf;
  for r = 1:nrep
    t0 = tic ();
    a = oct (so);
    to = min (to, toc (t0));
    clear a;
  end
  others = cpu_others (c0, cpu_snapshot ());
  x = N * sc / t1;
  y = N * sc / t2;
  z = N * so / to;
  printf ('%s N=%s: compiled %.3g member-steps/s (1 thread), %.3g (2 threads, speed-up %.2f); vectorised Octave %.3g; ratio %.1f (target >= %g; speed-up target >= 1.8 at N = 1e5)\n', ...
          name, pow10_str (N), x, y, t1 / t2, z, x / z, target_ratio);
  if (sc > 1 && t1 > tone && t2 > tone2)
    marginal = sprintf ('%.1f ns beyond the one-step call, 2-thread speed-up %.2f there', ...
                        1e9 * (t1 - tone) / ((sc - 1) * N), (t1 - tone) / (t2 - tone2));
  else
    marginal = 'the one-step call dominates';
  end
  printf ('      compiled %d steps in %.3f s (1 thread), %.3f s (2 threads); a one-step call %.1f ms (%.1f ms on 2 threads); %.1f ns per member-step (%s); Octave %d steps in %.3f s, %.1f ns per member-step\n', ...
          sc, t1, t2, 1e3 * tone, 1e3 * tone2, 1e9 / x, marginal, so, to, 1e9 / z);
  printf ('      1 and 2 threads identical: %s; non-finite members: %d; other processes used %s of the %d cores meanwhile%s\n', ...
          yes_no (same, 'yes', 'NO'), bad, others, nproc (), ...
          yes_no (n2 < nrep, sprintf ('; 2 threads timed %d time(s) only (over 3x the 1-thread time)', n2), ''));
end

function s = calibrate (fun, target)
  % steps for a run of about `target` seconds, the fixed cost of a call
  % included: double from 1 step until a run takes 0.4 target, then fit
  % time = a + b steps through the runs of 1 step and of the most steps
  s = 1;
  tfirst = NaN;
  while (true)
    t0 = tic ();
    a = fun (s);
    t = toc (t0);
    clear a;
    if (s == 1)
      tfirst = t;
    end
    if (t >= 0.4 * target || s >= 2 ^ 20)
      break;
    end
    s = 2 * s;
  end
  if (s > 1 && t > tfirst)
    b = (t - tfirst) / (s - 1);
    s = round ((target - max (t - b * s, 0)) / b);
  else
    s = round (s * target / t);
  end
  s = max (1, s);
end

function c = cpu_snapshot ()
  % [busy jiffies of the machine, jiffies of this process, wall seconds];
  % NaN where /proc is not there
  c = [NaN NaN now() * 86400];
  fid = fopen ('/proc/stat', 'r');
  if (fid >= 0)
    v = sscanf (fgetl (fid), 'cpu %f %f %f %f %f %f %f %f');
    fclose (fid);
    if (numel (v) >= 8)
      c(1) = sum (v([1:3 6:8]));
    end
  end
  fid = fopen ('/proc/self/stat', 'r');
  if (fid >= 0)
    line = fgetl (fid);
    fclose (fid);
    f = strsplit (strtrim (line(find (line == ')', 1, 'last') + 1:end)), ' ');
    if (numel (f) >= 13)
      c(2) = str2double (f{12}) + str2double (f{13});   % utime + stime
    end
  end
end

function s = cpu_others (c0, c1)
  % share of the machine's cores used by other processes between two
  % snapshots (jiffies of 1/100 s)
  d = c1 - c0;
  u = (d(1) - d(2)) / (100 * d(3) * nproc ());
  if (isfinite (u))
    s = sprintf ('%.0f%%', 100 * max (u, 0));
  else
    s = 'an unknown share';
  end
end

function report_check (name, N, steps, a, b)
  % elementwise relative difference; equal values (zeros included) count 0
  d = abs (a - b);
  d(a == b) = 0;
  rel = max (d(:) ./ max (abs (a(:)), realmin));
  nf = sum (any (~isfinite (a), 1)) + sum (any (~isfinite (b), 1));
  printf ('   check %s, %d members, %d steps: compiled and Octave states agree to %.1e relative (max over all states; %s)%s\n', ...
          name, N, steps, rel, yes_no (rel <= 1e-10, 'within 1e-10', 'NOT within 1e-10'), ...
          yes_no (nf == 0, '', sprintf ('; %d non-finite members', nf)));
end

function hl = step_length (t0, t1, h, l, nsteps)
  % step l (from 0) runs from t0 + l h to t0 + (l + 1) h, the last one to
  % t1 exactly: its length is the difference of the two
  if (l + 1 == nsteps)
    hl = t1 - (t0 + l * h);
  else
    hl = (t0 + (l + 1) * h) - (t0 + l * h);
  end
end

function s = pow10_str (N)
  k = round (log10 (N));
  if (10 ^ k == N)
    s = sprintf ('1e%d', k);
  else
    s = sprintf ('%d', N);
  end
end

function s = load_average ()
  s = 'unknown';
  fid = fopen ('/proc/loadavg', 'r');
  if (fid >= 0)
    s = strtrim (fgetl (fid));
    fclose (fid);
  end
end
