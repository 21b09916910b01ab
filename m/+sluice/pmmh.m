% -*- texinfo -*-
% @deftypefn  {} {@var{res} =} sluice.pmmh (@var{model}, @var{prior}, @var{obs})
% @deftypefnx {} {@var{res} =} sluice.pmmh (@var{model}, @var{prior}, @var{obs}, @var{opts})
% @deftypefnx {} {@var{res} =} sluice.pmmh (@dots{}, @var{name}, @var{value}, @dots{})
% Sample a model's parameter posterior by particle marginal Metropolis-Hastings.
% The method is that of Andrieu, Doucet & Holenstein (2010, J. R. Statist.
% Soc. B 72, 269-342).
%
% @var{model} is a spec from @code{sluice.model}, @var{obs} the long
% observation table of @code{sluice.filter}. @var{prior} is a struct array
% from @code{sluice.prior}: every entry that names a parameter of the model
% with a distribution other than @code{fixed} is a free parameter, sampled
% here; @code{fixed} entries keep their value; entries that name states are
% the distributions of the initial states and go to the filter as they are.
%
% The target is p(theta | y) proportional to p(theta) p(y | theta). The
% prior term is the log-density of each free parameter's distribution
% (uniform, normal, lognormal, truncnormal; -Inf outside its support). The
% likelihood p(y | theta) is replaced by the particle filter's unbiased
% estimate: @code{sluice.filter} run with all @code{members} particles at
% the proposed values (as @code{fixed} priors), its @code{log_evidence}.
% A proposal with prior density zero is rejected without a filter run; a
% filter run whose log-evidence is -Inf or NaN (no particle explains the
% data) is a rejection, counted in @code{res.degenerate}.
%
% Proposals are a Gaussian random walk z' = z + L e in the transformed
% space of each parameter's bounds (the prior entry's @code{lower} and
% @code{upper}, as in @code{sluice.filter}: identity when unbounded, log
% z = log (x - lo) or z = log (hi - x) when bounded on one side, logit
% z = log ((x - lo)/(hi - x)) when bounded on both), L L' the proposal
% covariance. The acceptance ratio includes the Jacobian |dx/dz| of the
% back-transform: x - lo, hi - x and (x - lo)(hi - x)/(hi - lo).
%
% Adaptation (Haario, Saksman & Tamminen 2001, Bernoulli 7, 223-242): with
% @code{adapt} true, at each iteration t of the window
% @code{adapt_start} < t <= @code{adapt_end} the proposal covariance is
% (2.38^2/d) Cov + @code{adapt_eps} I, where Cov is the sample covariance
% of every state of the chain so far (the start and iterations 1 .. t-1,
% in the transformed space) and d the number of free parameters. By default
% the window is the second half of the burn-in (@code{adapt_start} =
% floor (burnin/2), @code{adapt_end} = burnin): the kept iterations then
% come from a fixed kernel. @code{adapt_end} = Inf adapts throughout, as
% in the original adaptive Metropolis algorithm. Until the chain has
% accepted d + 1 moves the proposal stays as it is.
%
% Options (a struct or name/value pairs):
% @table @code
% @item members
% particles of each filter run (default 500).
% @item chains
% independent chains, 1 to 1024 (default 4), each started from a draw of
% the prior (a start whose log-evidence is -Inf is redrawn, up to 100
% times).
% @item iterations
% iterations after the burn-in (default 2000); each one is one filter run.
% @item burnin
% iterations before those, discarded (default 500).
% @item thin
% keep every thin-th iteration after the burn-in (default 1): the result
% has floor (iterations/thin) rows.
% @item proposal
% the initial proposal covariance in the transformed space: a d x d
% symmetric positive definite matrix. Default: a diagonal of 0.01 times
% the prior variances of the transformed parameters (estimated from 2000
% prior draws), i.e. steps of a tenth of a prior standard deviation.
% @item adapt
% true (default) or false (fixed proposal).
% @item adapt_start, adapt_end, adapt_eps
% the adaptation window and regularisation (above; adapt_eps default
% 1e-10).
% @item seed
% whole number from 0 to 2^53 (default 1). Everything random follows from
% it, so results are identical whatever the parallel setting and number of
% threads. With H(s, k) = mod (h1, 2^31) 2^21 + mod (h2, 2^21), where h1
% and h2 fold the numbers floor (s/2^27), mod (s, 2^27), k into
% h = mod (h a + v, 4294967291) from h = 0 with a = 65599 and a = 69069,
% chain c (1-based) uses: the filter seed H(seed, 1) + (c - 1) + 1024 (i - 1)
% at iteration i; the random-walk steps and acceptance uniforms of
% iteration i drawn as member i of @code{sluice.draw} with seed
% H(seed, 2) + c - 1; its starting point (try k) as member k with seed
% H(seed, 3) + c - 1, evaluated with filter seed H(seed, 4) + c - 1 + 1024 (k - 1).
% @item filter
% a struct of further @code{sluice.filter} options (t0, times, forcing,
% forcing_noise, events, event_noise, state_noise, resample,
% resample_threshold, threads ...). Not allowed there: members, seed,
% history; method must be @code{'pf'} and param_move @code{'fixed'}.
% @item parallel
% @code{'auto'} (default): when there is more than one chain and more than
% one worker and Octave's @code{parallel} package loads, the chains run in
% separate processes (@code{parcellfun}), each filter with 1 OpenMP
% thread; @code{true}: the same, an error if the package does not load;
% @code{false}: one chain after another, each filter with the threads of
% @code{filter.threads}.
% @item workers
% processes for parallel chains (default @code{nproc ()}).
% @item progress
% true to print a line per chain at every tenth of its iterations
% (default false).
% @end table
%
% The result @var{res} has @code{samples} (floor (iterations/thin) x d x
% chains, natural units), @code{names} (d x 1), @code{loglik} and
% @code{logpost} (kept rows x chains: the log-evidence estimate and log
% prior density + log-evidence of each kept state), @code{acceptance}
% (1 x chains, after the burn-in) and @code{acceptance_burnin},
% @code{summary} (@code{sluice.mcmc_summary} of the samples; empty with
% fewer than 4 kept rows), @code{proposal} (d x d x chains, the proposal
% covariance at the end, transformed space), @code{transforms} (d x 1:
% 'none', 'log', 'neglog', 'logit'), @code{lower}, @code{upper},
% @code{start} (d x chains, the starting points), @code{degenerate}
% (1 x chains, filter runs with log-evidence -Inf or NaN),
% @code{outside} (proposals outside the prior's support),
% @code{nonfinite_runs} (runs in which some particle blew up),
% @code{filter_calls}, @code{time} (seconds, wall clock), @code{chain_time}
% and @code{filter_time} (1 x chains, seconds within each chain and within
% its filter calls), @code{parallel}, @code{workers}, @code{seed} and the
% options.
%
% Example:
% @example
% @group
% spec = sluice.model (@@(t, X, P, U, dt) P(1, :) .* X, 'states', @{'x'@}, ...
%                      'params', @{'a'@}, 'defaults', 0.5);
% pr = sluice.prior ('a', 'uniform', [-1 1], 'x', 'normal', [0 1]);
% obs = struct ('time', (1:20)', 'variable', @{repmat(@{'x'@}, 20, 1)@}, ...
%               'value', randn (20, 1), 'sigma', ones (20, 1));
% res = sluice.pmmh (spec, pr, obs, 'members', 200, 'iterations', 1000, ...
%                    'filter', struct ('t0', 0, 'state_noise', 1));
% res.summary.mean, res.summary.rhat
% @end group
% @end example
%
% With parallel chains each worker process runs its chain through
% @code{sluice.pmmh (@var{job}, @var{c})}, an internal form of this
% function.
%
% Errors: @code{sluice:pmmh:badmodel}, @code{sluice:pmmh:badprior}
% (not a prior, a name that is neither a state nor a parameter, bounds
% outside the model's), @code{sluice:pmmh:noparams} (no free parameter),
% @code{sluice:pmmh:baditerations}, @code{sluice:pmmh:badproposal},
% @code{sluice:pmmh:badoption}, @code{sluice:pmmh:noparallel},
% @code{sluice:pmmh:badstart}; errors of the filter keep their own
% identifiers.
% @seealso{sluice.filter, sluice.prior, sluice.mcmc_summary}
% @end deftypefn
function res = pmmh (model, prior, obs, varargin)
  if (nargin == 2 && isstruct (model) && isscalar (model) && isfield (model, 'pmmh_job'))
    % a worker process of a parallel run: one chain of the job (a worker
    % resolves only functions on the path, not this file's subfunctions)
    warning (model.warnings);
    res = run_chain (prior, model);
    return;
  end
  if (nargin < 3)
    sluice.kernel.compat ('usage', mfilename ());
  end
  t_all = tic ();
  check_model (model);
  opts = parse_options (varargin);
  S = setup (model, prior, obs, opts);
  d = numel (S.free);
  C = opts.chains;

  use_par = false;
  if (C > 1 && opts.workers > 1 && ~isequal (opts.parallel, false))
    use_par = sluice.kernel.compat ('has_parallel');
    if (~use_par && isequal (opts.parallel, true))
      error ('sluice:pmmh:noparallel', ...
             'parallel is true but Octave''s parallel package (parcellfun) cannot be loaded');
    end
  end
  if (use_par)
    S.fopts.threads = 1;
    S.pmmh_job = true;
    S.warnings = warning ();
    nw = min (opts.workers, C);
    out = sluice.kernel.compat ('parallel_map', nw, @(c) sluice.pmmh (S, c), num2cell (1:C));
  else
    out = cell (1, C);
    for c = 1:C
      out{c} = run_chain (c, S);
      if (~out{c}.ok)
        break;
      end
    end
  end
  for c = 1:C
    if (~isempty (out{c}) && ~out{c}.ok)
      chain_failed (c, out{c});
    end
  end

  nk = floor (opts.iterations / opts.thin);
  res = struct ();
  res.names = S.names;
  res.samples = zeros (nk, d, C);
  res.loglik = zeros (nk, C);
  res.logpost = zeros (nk, C);
  res.acceptance = zeros (1, C);
  res.acceptance_burnin = nan (1, C);
  res.proposal = zeros (d, d, C);
  res.start = zeros (d, C);
  res.degenerate = zeros (1, C);
  res.outside = zeros (1, C);
  res.nonfinite_runs = zeros (1, C);
  res.chain_time = zeros (1, C);
  res.filter_time = zeros (1, C);
  calls = 0;
  for c = 1:C
    o = out{c};
    res.samples(:, :, c) = o.X;
    res.loglik(:, c) = o.LL;
    res.logpost(:, c) = o.LP;
    res.acceptance(c) = o.acc_post / opts.iterations;
    if (opts.burnin > 0)
      res.acceptance_burnin(c) = o.acc_burn / opts.burnin;
    end
    res.proposal(:, :, c) = o.cov;
    res.start(:, c) = o.start;
    res.degenerate(c) = o.degenerate;
    res.outside(c) = o.outside;
    res.nonfinite_runs(c) = o.nonfinite;
    res.chain_time(c) = o.time;
    res.filter_time(c) = o.filter_time;
    calls = calls + o.calls;
  end
  if (nk >= 4)
    res.summary = sluice.mcmc_summary (res.samples, 'names', S.names);
  else
    res.summary = [];
  end
  res.transforms = S.tnames;
  res.lower = S.lo;
  res.upper = S.hi;
  res.members = opts.members;
  res.chains = C;
  res.iterations = opts.iterations;
  res.burnin = opts.burnin;
  res.thin = opts.thin;
  res.seed = opts.seed;
  res.filter_calls = calls;
  res.parallel = use_par;
  res.workers = 1;
  if (use_par)
    res.workers = min (opts.workers, C);
  end
  res.options = opts;
  res.time = toc (t_all);
end

% ---------------------------------------------------------------------------
% one chain: everything it needs is in S, everything random follows from
% (seed, chain, iteration)
function out = run_chain (c, S)
  out = struct ('ok', true, 'message', '', 'identifier', '');
  t0 = tic ();
  w1 = warning ('query', 'sluice:filter:degenerate');
  w2 = warning ('query', 'sluice:filter:nonfinite');
  warning ('off', 'sluice:filter:degenerate');
  warning ('off', 'sluice:filter:nonfinite');
  try
    out = chain_body (c, S, out);
  catch err
    out.ok = false;
    out.message = err.message;
    out.identifier = err.identifier;
  end
  warning (w1.state, 'sluice:filter:degenerate');
  warning (w2.state, 'sluice:filter:nonfinite');
  out.time = toc (t0);
end

function out = chain_body (c, S, out)
  d = numel (S.free);
  nb = S.opts.burnin;
  ni = S.opts.iterations;
  th = S.opts.thin;
  ntot = nb + ni;
  nk = floor (ni / th);
  ev = struct ('degenerate', 0, 'nonfinite', 0, 'calls', 0, 'time', 0);

  % the starting point: a prior draw with a finite log-evidence
  starts = sluice.draw (S.free_prior, 100, S.hash_start + c - 1);
  ll = -Inf;
  for k = 1:size (starts, 2)
    x = starts(:, k);
    [ll, ev] = loglik_at (S, x, S.hash_startfilter + (c - 1) + 1024 * (k - 1), ev);
    if (ll > -Inf)
      break;
    end
  end
  if (~(ll > -Inf))
    error ('sluice:pmmh:badstart', ...
           'chain %d: no particle filter run from 100 prior draws explained the observations (log-evidence -Inf)', c);
  end
  z = forward (S, x);
  lp = logprior (S, x);
  lj = logjac (S, z);
  out.start = x;

  % the random-walk steps and acceptance uniforms of every iteration
  R = sluice.draw (S.step_prior, ntot, S.hash_steps + c - 1);

  cov = S.proposal;
  L = chol (cov, 'lower');
  sd = 2.38 ^ 2 / d;
  hist_n = 1;
  hist_mean = z;
  hist_M2 = zeros (d, d);
  accepted = 0;
  acc_burn = 0;
  acc_post = 0;
  outside = 0;
  X = zeros (nk, d);
  LL = zeros (nk, 1);
  LP = zeros (nk, 1);
  a0 = S.opts.adapt_start;
  a1 = S.opts.adapt_end;
  tick = max (1, round (ntot / 10));

  for i = 1:ntot
    zp = z + L * R(1:d, i);
    xp = inverse (S, zp);
    lpp = logprior (S, xp);
    ljp = logjac (S, zp);
    ok = false;
    if (lpp > -Inf)
      [llp, ev] = loglik_at (S, xp, S.hash_filter + (c - 1) + 1024 * (i - 1), ev);
      la = (llp + lpp + ljp) - (ll + lp + lj);
      ok = log (R(d + 1, i)) < la;
    else
      outside = outside + 1;
    end
    if (ok)
      z = zp; x = xp; ll = llp; lp = lpp; lj = ljp;
      accepted = accepted + 1;
      if (i <= nb)
        acc_burn = acc_burn + 1;
      else
        acc_post = acc_post + 1;
      end
    end
    if (i > nb && mod (i - nb, th) == 0)
      r = (i - nb) / th;
      X(r, :) = x';
      LL(r) = ll;
      LP(r) = lp + ll;
    end
    % the history of the chain (Welford's running mean and covariance)
    % and, within the window, the adapted proposal for iteration i + 1
    if (S.opts.adapt)
      hist_n = hist_n + 1;
      delta = z - hist_mean;
      hist_mean = hist_mean + delta / hist_n;
      hist_M2 = hist_M2 + delta * (z - hist_mean)';
      if (i + 1 > a0 && i + 1 <= a1 && accepted >= d + 1)
        cn = sd * (hist_M2 / (hist_n - 1)) + S.opts.adapt_eps * eye (d);
        cn = (cn + cn') / 2;
        [Ln, fail] = chol (cn, 'lower');
        if (fail == 0)
          cov = cn;
          L = Ln;
        end
      end
    end
    if (S.opts.progress && mod (i, tick) == 0)
      fprintf (1, 'pmmh chain %d: %d of %d iterations, acceptance %.3f\n', ...
               c, i, ntot, accepted / i);
      sluice.kernel.compat ('flush');
    end
  end
  out.X = X;
  out.LL = LL;
  out.LP = LP;
  out.acc_burn = acc_burn;
  out.acc_post = acc_post;
  out.cov = cov;
  out.degenerate = ev.degenerate;
  out.nonfinite = ev.nonfinite;
  out.outside = outside;
  out.calls = ev.calls;
  out.filter_time = ev.time;
end

function [ll, ev] = loglik_at (S, x, seed, ev)
  pr = S.filter_prior;
  for k = 1:numel (S.free)
    j = S.free(k);
    pr(j).args = x(k);
    pr(j).lower = x(k);
    pr(j).upper = x(k);
  end
  fo = S.fopts;
  fo.seed = seed;
  t0 = tic ();
  r = sluice.filter (S.model, pr, S.obs, fo);
  ev.time = ev.time + toc (t0);
  ev.calls = ev.calls + 1;
  ll = r.log_evidence;
  if (any (r.nonfinite > 0))
    ev.nonfinite = ev.nonfinite + 1;
  end
  if (~(ll > -Inf))
    ll = -Inf;
    ev.degenerate = ev.degenerate + 1;
  end
end

function chain_failed (c, o)
  if (isempty (o.identifier))
    error ('sluice:pmmh:chainfailed', 'chain %d: %s', c, o.message);
  end
  error (o.identifier, '%s', o.message);
end

% ---------------------------------------------------------------------------
% transforms, their Jacobians and the prior's log-density (vectors of the
% d free parameters)
function z = forward (S, x)
  z = x;
  t = S.tkind;
  k = t == 1;
  z(k) = log (x(k) - S.lo(k));
  k = t == 2;
  z(k) = log (S.hi(k) - x(k));
  k = t == 3;
  z(k) = log (x(k) - S.lo(k)) - log (S.hi(k) - x(k));
end

function x = inverse (S, z)
  % as the filter's back-transform: the logistic from the nearer bound,
  % and a value that rounds onto a bound is moved just inside it
  x = z;
  t = S.tkind;
  lo = S.lo;
  hi = S.hi;
  k = t == 1;
  x(k) = lo(k) + exp (z(k));
  k = t == 2;
  x(k) = hi(k) - exp (z(k));
  k = t == 3;
  e = exp (-abs (z(k)));
  s = e ./ (1 + e);
  w = hi(k) - lo(k);
  xl = lo(k) + w .* s;
  xh = hi(k) - w .* s;
  neg = z(k) < 0;
  xk = xh;
  xk(neg) = xl(neg);
  x(k) = xk;
  b = t ~= 0 & isfinite (x);
  low = b & x <= lo;
  x(low) = lo(low) + eps (lo(low));
  high = b & x >= hi;
  x(high) = hi(high) - eps (hi(high));
end

function lj = logjac (S, z)
  % log |dx/dz|: z for log and neglog, log (hi - lo) + log s(z) + log (1 - s(z))
  % for the logistic s, written in z so that it stays exact far out
  t = S.tkind;
  lj = 0;
  k = t == 1 | t == 2;
  lj = lj + sum (z(k));
  k = t == 3;
  if (any (k))
    a = abs (z(k));
    lj = lj + sum (log (S.hi(k) - S.lo(k)) - a - 2 * log1p (exp (-a)));
  end
end

function lp = logprior (S, x)
  lp = 0;
  for k = 1:numel (x)
    a = S.args{k};
    v = x(k);
    switch (S.dist(k))
      case 1  % uniform [lo hi]
        if (v >= a(1) && v <= a(2))
          lp = lp - log (a(2) - a(1));
        else
          lp = -Inf;
        end
      case 2  % normal [mean sd]
        lp = lp - 0.5 * ((v - a(1)) / a(2)) ^ 2 - log (a(2)) - 0.5 * log (2 * pi);
      case 3  % lognormal [meanlog sdlog]
        if (v > 0 && v < Inf)
          lp = lp - 0.5 * ((log (v) - a(1)) / a(2)) ^ 2 - log (a(2)) - log (v) ...
               - 0.5 * log (2 * pi);
        else
          lp = -Inf;
        end
      case 4  % truncnormal [mean sd lo hi]
        if (v >= a(3) && v <= a(4) && isfinite (v))
          lp = lp - 0.5 * ((v - a(1)) / a(2)) ^ 2 - log (a(2)) - 0.5 * log (2 * pi) ...
               - S.logmass(k);
        else
          lp = -Inf;
        end
    end
    if (lp == -Inf)
      return;
    end
  end
  if (isnan (lp))
    lp = -Inf;
  end
end

function lm = log_normal_mass (a, b)
  % log (Phi(b) - Phi(a)) for a < b, accurate in either tail: on the upper
  % side Phi(b) - Phi(a) = (erfc(a/r2) - erfc(b/r2))/2, and
  % erfc(u) = erfcx(u) exp(-u^2) keeps far tails from underflowing
  if (a >= 0)
    u = a / sqrt (2);
    v = b / sqrt (2);
    if (isinf (v))
      tail = 0;
    else
      tail = erfcx (v) * exp (u ^ 2 - v ^ 2);
    end
    lm = log (0.5) - u ^ 2 + log (erfcx (u) - tail);
  elseif (b <= 0)
    lm = log_normal_mass (-b, -a);
  else
    lm = log1p (-0.5 * erfc (-a / sqrt (2)) - 0.5 * erfc (b / sqrt (2)));
  end
end

% ---------------------------------------------------------------------------
function check_model (model)
  if (~isstruct (model) || ~isscalar (model) || ~isfield (model, 'kind') || ...
      ~isfield (model, 'states') || ~isfield (model, 'params'))
    error ('sluice:pmmh:badmodel', 'argument 1 (model): expected a spec from sluice.model');
  end
end

function S = setup (model, prior, obs, opts)
  fields = {'name', 'dist', 'args', 'lower', 'upper'};
  if (~isstruct (prior) || isempty (prior) || ~isvector (prior) || ...
      ~all (isfield (prior, fields)))
    error ('sluice:pmmh:badprior', ...
           'argument 2 (prior): expected a non-empty struct array from sluice.prior, got %s', ...
           sluice.kernel.describe (prior));
  end
  prior = prior(:)';
  names = {prior.name};
  if (~iscellstr (names) || numel (unique (names)) ~= numel (names))
    error ('sluice:pmmh:badprior', 'argument 2 (prior): the names must be unique strings');
  end
  dists = {'uniform', 'normal', 'lognormal', 'truncnormal', 'fixed'};
  free = [];
  for k = 1:numel (prior)
    is_state = any (strcmp (names{k}, model.states));
    ip = find (strcmp (names{k}, model.params));
    if (~is_state && isempty (ip))
      error ('sluice:pmmh:badprior', ...
             'the prior names ''%s'', which is neither a state nor a parameter of the model (parameters: %s)', ...
             names{k}, strjoin (model.params(:)', ', '));
    end
    if (~ischar (prior(k).dist) || ~any (strcmp (prior(k).dist, dists)))
      error ('sluice:pmmh:badprior', 'prior entry ''%s'': unknown distribution', names{k});
    end
    if (~isempty (ip) && ~strcmp (prior(k).dist, 'fixed'))
      lo = prior(k).lower;
      hi = prior(k).upper;
      if (lo < model.lower(ip) || hi > model.upper(ip))
        error ('sluice:pmmh:badprior', ...
               ['the prior of ''%s'' allows [%g, %g], outside the parameter''s bounds ', ...
                '[%g, %g]: choose a prior within them (lognormal, truncnormal, uniform)'], ...
               names{k}, lo, hi, model.lower(ip), model.upper(ip));
      end
      free(end + 1) = k;
    end
  end
  if (isempty (free))
    error ('sluice:pmmh:noparams', ...
           'the prior gives no free parameter (every parameter entry is fixed, or it names only states)');
  end
  d = numel (free);
  S = struct ();
  S.model = model;
  S.obs = obs;
  S.opts = opts;
  S.free = free;
  S.names = names(free)';
  S.free_prior = prior(free);
  S.filter_prior = prior;
  for k = free
    S.filter_prior(k).dist = 'fixed';
  end
  S.lo = [prior(free).lower]';
  S.hi = [prior(free).upper]';
  S.tkind = zeros (d, 1);
  S.tkind(isfinite (S.lo) & ~isfinite (S.hi)) = 1;
  S.tkind(~isfinite (S.lo) & isfinite (S.hi)) = 2;
  S.tkind(isfinite (S.lo) & isfinite (S.hi) & S.lo < S.hi) = 3;
  tn = {'none', 'log', 'neglog', 'logit'};
  S.tnames = tn(S.tkind + 1)';
  [~, S.dist] = ismember ({prior(free).dist}, dists);
  S.args = {prior(free).args};
  S.logmass = zeros (d, 1);
  for k = 1:d
    if (S.dist(k) == 4)
      a = S.args{k};
      S.logmass(k) = log_normal_mass ((a(3) - a(1)) / a(2), (a(4) - a(1)) / a(2));
    end
  end

  % the filter's options: the user's, then ours
  fo = opts.filter;
  if (isempty (fo))
    fo = struct ();
  end
  if (~isstruct (fo) || ~isscalar (fo))
    error ('sluice:pmmh:badoption', 'filter must be a scalar struct of sluice.filter options');
  end
  for f = {'members', 'seed', 'history'}
    if (isfield (fo, f{1}))
      error ('sluice:pmmh:badoption', ...
             'filter.%s cannot be set: pmmh chooses it (use the pmmh option ''%s'' where there is one)', ...
             f{1}, f{1});
    end
  end
  if (isfield (fo, 'method') && ~isequal (fo.method, 'pf'))
    error ('sluice:pmmh:badoption', ...
           'filter.method must be ''pf'': the likelihood comes from the particle filter''s log-evidence');
  end
  if (isfield (fo, 'param_move') && ~isequal (fo.param_move, 'fixed'))
    error ('sluice:pmmh:badoption', ...
           'filter.param_move must be ''fixed'': the parameters stay at the proposed values in each run');
  end
  fo.members = opts.members;
  fo.param_move = 'fixed';
  fo.progress = false;
  if (~isfield (fo, 'quantiles'))
    fo.quantiles = zeros (1, 0);
  end
  S.fopts = fo;

  S.hash_filter = seed_hash (opts.seed, 1);
  S.hash_steps = seed_hash (opts.seed, 2);
  S.hash_start = seed_hash (opts.seed, 3);
  S.hash_startfilter = seed_hash (opts.seed, 4);
  ones_d = num2cell (repmat ([0 1], d, 1), 2);
  idx = (1:d)';
  step_names = arrayfun (@(k) sprintf ('e%d', k), idx, 'UniformOutput', false);
  step_args = [step_names, repmat({'normal'}, d, 1), ones_d];
  step_args = step_args';
  S.step_prior = sluice.prior (step_args{:}, 'u', 'uniform', [0 1]);

  if (isempty (opts.proposal))
    P = sluice.draw (S.free_prior, 2000, seed_hash (opts.seed, 5));
    Z = zeros (size (P));
    for j = 1:size (P, 2)
      Z(:, j) = forward (S, P(:, j));
    end
    v = var (Z, 0, 2);
    v(~(v > 0 & isfinite (v))) = 1;
    S.proposal = diag (0.01 * v);
  else
    S.proposal = check_proposal (opts.proposal, d);
  end
  if (opts.adapt && isempty (opts.adapt_start))
    S.opts.adapt_start = floor (opts.burnin / 2);
  end
  if (opts.adapt && isempty (opts.adapt_end))
    S.opts.adapt_end = opts.burnin;
  end
  if (opts.adapt && S.opts.adapt_start > S.opts.adapt_end)
    error ('sluice:pmmh:badoption', 'adapt_start (%g) must not exceed adapt_end (%g)', ...
           S.opts.adapt_start, S.opts.adapt_end);
  end
end

function C = check_proposal (C, d)
  if (~isa (C, 'double') || ~isreal (C) || issparse (C) || ~isequal (size (C), [d d]) || ...
      any (~isfinite (C(:))))
    error ('sluice:pmmh:badproposal', ...
           'proposal: expected a finite real %d x %d double matrix (one row per free parameter), got %s', ...
           d, d, sluice.kernel.describe (C));
  end
  if (norm (C - C', 1) > 1e-12 * norm (C, 1))
    error ('sluice:pmmh:badproposal', 'proposal: the covariance must be symmetric');
  end
  [~, fail] = chol (C);
  if (fail ~= 0)
    error ('sluice:pmmh:badproposal', 'proposal: the covariance must be positive definite');
  end
end

function h = seed_hash (seed, k)
  % two folds of (floor (seed/2^27), mod (seed, 2^27), k) modulo the largest
  % prime below 2^32; every product stays below 2^53, so it is exact
  v = [floor(seed / 2^27), mod(seed, 2^27), k];
  M = 4294967291;
  h1 = 0;
  h2 = 0;
  for j = 1:3
    h1 = mod (h1 * 65599 + v(j), M);
    h2 = mod (h2 * 69069 + v(j), M);
  end
  h = mod (h1, 2^31) * 2^21 + mod (h2, 2^21);
end

function opts = parse_options (args)
  opts = struct ('members', 500, 'chains', 4, 'iterations', 2000, 'burnin', 500, ...
                 'thin', 1, 'proposal', [], 'adapt', true, 'adapt_start', [], ...
                 'adapt_end', [], 'adapt_eps', 1e-10, 'seed', 1, 'filter', [], ...
                 'parallel', 'auto', 'workers', sluice.kernel.compat ('nproc'), 'progress', false);
  opts = sluice.kernel.name_value (opts, args, 'pmmh');
  opts.members = whole (opts.members, 'members', 1, 2^31, 'badoption');
  opts.chains = whole (opts.chains, 'chains', 1, 1024, 'badoption');
  opts.iterations = whole (opts.iterations, 'iterations', 1, 2^40, 'baditerations');
  opts.burnin = whole (opts.burnin, 'burnin', 0, 2^40, 'baditerations');
  opts.thin = whole (opts.thin, 'thin', 1, 2^40, 'baditerations');
  if (opts.thin > opts.iterations)
    error ('sluice:pmmh:baditerations', ...
           'thin (%d) must not exceed iterations (%d): nothing would be kept', ...
           opts.thin, opts.iterations);
  end
  opts.seed = whole (opts.seed, 'seed', 0, 2^53, 'badoption');
  opts.adapt = flag (opts.adapt, 'adapt');
  opts.progress = flag (opts.progress, 'progress');
  if (~isempty (opts.adapt_start))
    opts.adapt_start = whole (opts.adapt_start, 'adapt_start', 0, 2^41, 'badoption');
  end
  if (~isempty (opts.adapt_end))
    v = opts.adapt_end;
    if (~(isa (v, 'double') && isreal (v) && isscalar (v) && isinf (v) && v > 0))
      opts.adapt_end = whole (v, 'adapt_end', 0, 2^41, 'badoption');
    end
  end
  e = opts.adapt_eps;
  if (~(isa (e, 'double') && isreal (e) && isscalar (e) && isfinite (e) && e > 0))
    error ('sluice:pmmh:badoption', 'adapt_eps must be a finite real number > 0');
  end
  p = opts.parallel;
  if (ischar (p) && strcmp (p, 'auto'))
    opts.parallel = 'auto';
  elseif ((islogical (p) || isnumeric (p)) && isscalar (p) && isreal (p) && (p == 0 || p == 1))
    opts.parallel = logical (p);
  else
    error ('sluice:pmmh:badoption', 'parallel must be ''auto'', true or false');
  end
  opts.workers = whole (opts.workers, 'workers', 1, 1024, 'badoption');
end

function v = whole (v, what, lo, hi, reason)
  if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v) || ...
      v ~= fix (v) || v < lo || v > hi)
    error (['sluice:pmmh:' reason], '%s must be a whole number from %g to %g, got %s', ...
           what, lo, hi, sluice.kernel.describe (v, 'value'));
  end
  v = double (v);
end

function v = flag (v, what)
  if (~(islogical (v) || isnumeric (v)) || ~isscalar (v) || ~isreal (v) || ...
      ~(v == 0 || v == 1))
    error ('sluice:pmmh:badoption', '%s must be true or false', what);
  end
  v = logical (v);
end

%!shared spec, pr, obs
%! spec = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, ...
%!                      'params', {'a', 'b'}, 'defaults', [0.5; 1]);
%! pr = sluice.prior ('a', 'uniform', [-1 1], 'x', 'normal', [0 1]);
%! obs = struct ('time', (1:5)', 'variable', {repmat({'x'}, 5, 1)}, ...
%!               'value', [0.3; -0.2; 0.5; 0.1; 0.4], 'sigma', ones (5, 1));

%!test
%! % shapes and bookkeeping of a short run
%! r = sluice.pmmh (spec, pr, obs, 'members', 50, 'chains', 2, 'iterations', 12, ...
%!                  'burnin', 4, 'thin', 3, 'parallel', false, ...
%!                  'filter', struct ('t0', 0, 'state_noise', 1));
%! assert (size (r.samples), [4 1 2]);
%! assert (size (r.loglik), [4 2]);
%! assert (size (r.logpost), [4 2]);
%! assert (r.names, {'a'});
%! assert (r.transforms, {'logit'});
%! assert (all (r.samples(:) > -1 & r.samples(:) < 1));
%! assert (r.filter_calls, 2 * (1 + 16) - sum (r.outside));
%! assert (all (r.acceptance >= 0 & r.acceptance <= 1));
%! assert (size (r.proposal), [1 1 2]);
%! assert (isstruct (r.summary) && isfield (r.summary, 'rhat'));
%! assert (r.time >= max (r.chain_time) * 0.5);
%! % log posterior = log prior (uniform on [-1 1]: -log 2) + log-evidence
%! assert (r.logpost - r.loglik, -log (2) * ones (4, 2), 1e-12);

%!test
%! % the same seed gives the same chains; another seed others
%! o = {'members', 30, 'chains', 1, 'iterations', 6, 'burnin', 0, ...
%!      'filter', struct('t0', 0, 'state_noise', 1)};
%! r1 = sluice.pmmh (spec, pr, obs, o{:}, 'seed', 5);
%! r2 = sluice.pmmh (spec, pr, obs, o{:}, 'seed', 5);
%! r3 = sluice.pmmh (spec, pr, obs, o{:}, 'seed', 6);
%! assert (isequal (r1.samples, r2.samples) && isequal (r1.loglik, r2.loglik));
%! assert (~isequal (r1.samples, r3.samples));
%! assert (isempty (r1.summary) || isstruct (r1.summary));

%!test
%! % progress lines, one per tenth of the iterations
%! txt = evalc (['sluice.pmmh (spec, pr, obs, ''members'', 10, ''chains'', 1, ', ...
%!               '''iterations'', 10, ''burnin'', 0, ''progress'', true, ', ...
%!               '''filter'', struct (''t0'', 0))']);
%! assert (numel (strfind (txt, 'pmmh chain 1:')), 10);

%!error <Invalid call> sluice.pmmh ()
%!error <Invalid call> sluice.pmmh (spec, pr)
%!error id=sluice:pmmh:badmodel sluice.pmmh (3, pr, obs)
%!error id=sluice:pmmh:badprior sluice.pmmh (spec, [], obs)
%!error id=sluice:pmmh:badprior sluice.pmmh (spec, struct ('name', 'a'), obs)
%!error id=sluice:pmmh:badprior sluice.pmmh (spec, sluice.prior ('c', 'normal', [0 1]), obs)
%!error id=sluice:pmmh:noparams sluice.pmmh (spec, sluice.prior ('x', 'normal', [0 1]), obs)
%!error id=sluice:pmmh:noparams sluice.pmmh (spec, sluice.prior ('a', 'fixed', 0.5), obs)
%!error id=sluice:pmmh:badprior
%! s2 = spec; s2.lower = [0; 0]; s2.upper = [1; Inf];
%! sluice.pmmh (s2, pr, obs);
%!error id=sluice:pmmh:badproposal sluice.pmmh (spec, pr, obs, 'proposal', -1)
%!error id=sluice:pmmh:badproposal sluice.pmmh (spec, pr, obs, 'proposal', 0)
%!error id=sluice:pmmh:badproposal sluice.pmmh (spec, pr, obs, 'proposal', [1 0; 0 1])
%!error id=sluice:pmmh:badproposal sluice.pmmh (spec, pr, obs, 'proposal', NaN)
%!error id=sluice:pmmh:badproposal sluice.pmmh (spec, pr, obs, 'proposal', single (1))
%!error id=sluice:pmmh:badproposal sluice.pmmh (spec, pr, obs, 'proposal', 1i)
%!error id=sluice:pmmh:badproposal sluice.pmmh (spec, pr, obs, 'proposal', {1})
%!error id=sluice:pmmh:badproposal
%! p2 = sluice.prior ('a', 'uniform', [-1 1], 'b', 'lognormal', [0 1]);
%! sluice.pmmh (spec, p2, obs, 'proposal', [1 2; 2 1]);
%!error id=sluice:pmmh:badproposal
%! p2 = sluice.prior ('a', 'uniform', [-1 1], 'b', 'lognormal', [0 1]);
%! sluice.pmmh (spec, p2, obs, 'proposal', [1 0.5; 0 1]);
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'iterations', 0)
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'iterations', 2.5)
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'iterations', -3)
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'iterations', Inf)
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'iterations', NaN)
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'iterations', [10 20])
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'iterations', int32 (10))
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'iterations', '10')
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'burnin', -1)
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'burnin', 0.5)
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'thin', 0)
%!error id=sluice:pmmh:baditerations sluice.pmmh (spec, pr, obs, 'iterations', 10, 'thin', 11)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'chains', 0)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'chains', 2000)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'members', 0)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'seed', -1)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'seed', 2^54)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'parallel', 'yes')
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'parallel', 2)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'workers', 0)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'adapt', 'on')
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'adapt_eps', 0)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'adapt_start', 10, 'adapt_end', 5)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'adapt_end', -Inf)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'speed', 2)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'iterations')
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'filter', 3)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'filter', struct ('members', 10))
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'filter', struct ('seed', 1))
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'filter', struct ('history', true))
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'filter', struct ('method', 'etkf'))
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'filter', struct ('param_move', 'liu_west'))
%!error id=sluice:filter:badobs
%! o2 = obs; o2.variable{2} = 'nope';
%! sluice.pmmh (spec, pr, o2, 'members', 10, 'chains', 1, 'iterations', 2, 'burnin', 0, ...
%!              'filter', struct ('t0', 0));
%!error id=sluice:filter:badoption
%! sluice.pmmh (spec, pr, obs, 'members', 10, 'chains', 1, 'iterations', 2, 'burnin', 0, ...
%!              'filter', struct ('t0', 0, 'state_noise', -1));
%!error id=sluice:pmmh:badstart
%! % a model whose every member blows up: no start can explain the data
%! s2 = sluice.model (@(t, X, P, U, dt) X + NaN, 'states', {'x'}, 'params', {'a'});
%! sluice.pmmh (s2, pr, obs, 'members', 5, 'chains', 1, 'iterations', 2, 'burnin', 0, ...
%!              'filter', struct ('t0', 0));

%!demo
%! % Lowmarsh on the invented river Vell: how fast does the town's flood
%! % storage drain from one year to the next? Sample the recession factor
%! % a of x_t = a x_(t-1) + noise from twelve invented yearly readings.
%! m = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'storage'}, ...
%!                   'params', {'a'}, 'defaults', 0.8);
%! pr = sluice.prior ('a', 'uniform', [0 1], 'storage', 'normal', [1 0.5]);
%! value = [0.9; 0.62; 0.71; 0.38; 0.45; 0.30; 0.41; 0.12; 0.25; 0.20; 0.05; 0.16];
%! obs = struct ('time', (1:12)', 'variable', {repmat({'storage'}, 12, 1)}, ...
%!               'value', value, 'sigma', 0.1 * ones (12, 1));
%! r = sluice.pmmh (m, pr, obs, 'members', 50, 'chains', 2, 'iterations', 60, ...
%!                  'burnin', 20, 'parallel', false, 'seed', 5, ...
%!                  'filter', struct ('t0', 0, 'state_noise', 0.2));
%! s = r.samples(:);
%! fprintf ('recession factor a: posterior median %.3f, 90%% interval %.3f to %.3f\n', ...
%!          median (s), quantile (s, 0.05), quantile (s, 0.95));
%! fprintf ('acceptance %.2f; split R-hat %.3f\n', mean (r.acceptance(:)), r.summary.rhat);
%! fprintf ('(a short run to show the call: trust a posterior only from chains\n');
%! fprintf (' long enough that R-hat is near 1 and the effective sample size large)\n');
