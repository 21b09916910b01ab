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
% Adaptation, during the burn-in only (defaults in brackets):
% @itemize
% @item
% Scale: the proposal covariance is exp (2 s) B. After every adapted
% iteration k the log-scale takes a Robbins-Monro step
% s <- s + k^(-0.6) (alpha - target), alpha = min (1, acceptance ratio)
% of that iteration (0 for a proposal outside the prior's support), so
% the acceptance rate is driven toward @code{target_acceptance} [0.234,
% or 0.44 with one free parameter: the rates of the best random-walk
% scaling for Gaussian targets, Roberts, Gelman & Gilks 1997, Ann. Appl.
% Probab. 7, 110-120, and Roberts & Rosenthal 2001, Statist. Sci. 16,
% 351-367; the scheme is that of Andrieu & Thoms 2008, Stat. Comput. 18,
% 343-373, and Roberts & Rosenthal 2009, J. Comput. Graph. Statist. 18,
% 349-367].
% @item
% Shape: up to iteration @code{adapt_start} [floor (burnin/4)] B is the
% initial proposal. After it, B = (2.38^2/d) Cov + @code{adapt_eps} I
% (Haario, Saksman & Tamminen 2001, Bernoulli 7, 223-242), where Cov is
% the sample covariance of the latter half of the chain's states since
% @code{adapt_start} (in the transformed space), so the climb out of the
% starting region is forgotten as the chain settles. It is used once that
% half holds d + 1 accepted moves; s then starts again from 0 and stays
% within [0, log 5]: for a Gaussian target 2.38/sqrt(d) is the best
% scale, and with a noisy likelihood estimate the best scale is no
% smaller (Sherlock, Thiery, Roberts & Rosenthal 2015, Ann. Statist. 43,
% 238-275), so an acceptance rate held down by that noise does not shrink
% the steps.
% @item
% Freeze: after iteration @code{adapt_end} [burnin] nothing changes: the
% kept iterations come from one fixed kernel. @code{adapt_end} = Inf
% adapts throughout.
% @end itemize
% The proposal at the end is @code{res.proposal}, its scale exp (s)
% @code{res.scale}.
%
% Starting values (option @code{start}): by default a draw of the prior
% per chain (dispersed: a start whose log-evidence is -Inf is redrawn, up
% to 100 times); a d x 1 (every chain) or d x chains matrix in natural
% units, each value inside its prior's support; or the result of
% @code{sluice.filter} (its final weighted parameter ensemble) or
% @code{sluice.esmda} (its posterior ensemble): the starts are then drawn,
% in the transformed space, from a normal around the ensemble's mean with
% twice its spread (at least a fifth of the prior's), and unless
% @code{proposal} is given the first proposal is 2.38^2/d times the
% ensemble's covariance.
%
% Convergence: at the end, the split R-hat and the bulk effective sample
% size of @code{sluice.chain_summary} are checked for every parameter.
% R-hat above @code{max_rhat} [1.05] warns @code{sluice:pmmh:notconverged},
% a bulk ESS below @code{min_ess} [400, the number Vehtari et al. 2021,
% Bayesian Analysis 16, 667-718, ask for] warns @code{sluice:pmmh:lowess};
% both give the numbers, and @code{res.converged} says whether both held.
%
% Continuing: @code{sluice.pmmh (@var{model}, @var{prior}, @var{obs},
% 'continue', @var{res}, 'iterations', @var{n})} runs @var{n} more
% iterations of every chain of @var{res} from its last state, with its
% proposal and adaptation state and the same random streams, and returns
% @var{res} with the new rows appended: the same as one longer run, bit
% for bit. Only @code{iterations}, @code{parallel}, @code{workers},
% @code{progress}, @code{max_rhat}, @code{min_ess}, @code{mpi} and the
% checkpoint options may be given then.
%
% Checkpoints: with @code{checkpoint} (a file name) the run writes its
% result so far to that file after every @code{checkpoint_every} [100]
% iterations of every chain, burn-in included: to a temporary file in the
% same directory, then renamed over it, so the file is always whole,
% whenever the run is stopped or killed (the temporary file a kill leaves
% goes at the next run with the same file, once its process is gone). The same call made again with the
% same file resumes after the last block written and returns what a run
% never stopped returns, bit for bit (only the times differ); a larger
% @code{iterations} extends a finished run. A checkpoint written by a run
% with another model, prior, observation table or options (other than
% @code{iterations}, @code{parallel}, @code{workers}, @code{progress},
% @code{max_rhat}, @code{min_ess} and @code{mpi}) is refused. Each block starts the
% parallel workers again, so a block should hold many seconds of work.
%
% Options (a struct or name/value pairs):
% @table @code
% @item members
% particles of each filter run (default 500).
% @item chains
% independent chains, 1 to 1024 (default 4).
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
% @item adapt_start, adapt_end, adapt_eps, target_acceptance
% the adaptation's settings (above; adapt_eps default 1e-10;
% target_acceptance strictly between 0 and 1).
% @item start
% starting values (above).
% @item continue
% an earlier result to continue (above).
% @item max_rhat, min_ess
% the convergence limits (above): a number > 1, a number >= 0.
% @item checkpoint, checkpoint_every
% a file to keep the run's result in as it goes, and the iterations
% between writes (above; default '' (none) and 100).
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
% @item mpi
% @code{'auto'} (default), true or false. With @code{'auto'}, a run in an
% Octave started by @code{mpirun -np P octave-cli script.m} (Open MPI),
% with sluice built by @code{make MPI=1}, deals the chains across the P
% processes (ranks), every rank calling @code{sluice.pmmh} with the same
% arguments: chain c runs on rank mod (c - 1, P), a rank's chains one
% after another (@code{parallel} and @code{workers} are not used). Every
% rank returns the whole result, equal bit for bit to a single process's
% (only the times differ); rank 0 alone writes the checkpoint. A failing
% chain is the same error on every rank; ranks given different runs raise
% @code{sluice:pmmh:mpimismatch}. false: each process runs every chain
% itself. true: as @code{'auto'}, but a build without the MPI gateway is
% the error @code{sluice:pmmh:mpiunavailable}. Outside mpirun every value
% runs in this process.
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
% @code{summary} (@code{sluice.chain_summary} of the samples; empty with
% fewer than 4 kept rows), @code{converged}, @code{max_rhat},
% @code{min_ess}, @code{target_acceptance}, @code{proposal} (d x d x
% chains, the proposal covariance at the end, transformed space),
% @code{scale} (1 x chains), @code{chain_state} (what a continuation
% needs), @code{prior} (d x 1, the prior entries of the free parameters,
% as @code{sluice.prior} made them), @code{transforms} (d x 1:
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
% @code{sluice:pmmh:badstart} (a start outside the prior's support, of
% the wrong shape or class, a result without the parameters, or no start
% with a finite log-evidence), @code{sluice:pmmh:badcontinue} (not a
% pmmh result, other parameters, an option that cannot change),
% @code{sluice:pmmh:badcheckpoint} (a checkpoint that cannot be
% written or read, holds no pmmh checkpoint, was written by a run with
% other settings, or holds more iterations than asked for),
% @code{sluice:pmmh:chainfailed} (an error without an identifier in a
% chain), @code{sluice:pmmh:workerfailed} (a worker process of parallel
% chains died -- killed, out of memory, a crash -- or the parallel package
% failed: the message names the chain; the other workers are stopped),
% @code{sluice:pmmh:interrupted} (Ctrl-C during a chain's filter run;
% nothing is returned, but a checkpoint keeps the blocks done: the message
% says how many), and the warnings @code{sluice:pmmh:notconverged}
% and @code{sluice:pmmh:lowess}; other errors of the filter keep their
% own identifiers.
% @code{sluice.report (@var{res})} draws the chains: traces, densities,
% a table and the convergence verdict.
% @seealso{sluice.filter, sluice.prior, sluice.chain_summary, sluice.report}
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
    sluice.internal.compat ('usage', mfilename ());
  end
  t_all = tic ();
  sluice.internal.check_model (model, 1, 'pmmh');
  [opts, prev] = parse_options (varargin);
  S = setup (model, prior, obs, opts);
  if (isempty (prev))
    S = setup_start (S, opts.start);
    S.resume = [];
    S.from = 1;
    S.to = opts.burnin + opts.iterations;
    base = 0;
  else
    S = setup_resume (S, prev);
    base = prev.burnin + prev.iterations;
  end
  target = S.to;
  world = sluice.internal.mpi ('world', 'pmmh', opts.mpi);
  % the work is this process's (dealt out to it, or all of it): a filter
  % run inside it runs on this rank alone
  held = sluice.internal.mpi ('hold');
  if (world.active)
    % every rank must run the same chains
    sluice.internal.mpi ('same', 'pmmh', 'runs (seed, chains, iterations, members or checkpoint)', ...
                         sprintf ('%.17g|', opts.seed, opts.chains, S.from, S.to, opts.burnin, ...
                                  opts.thin, opts.members, numel (S.free), opts.checkpoint_every, ...
                                  double (opts.checkpoint)));
  end
  ck = [];
  every = Inf;
  if (~isempty (opts.checkpoint))
    % a checkpoint of this same run: resume from it (the random streams
    % are keyed by iteration, so the result is that of one whole run);
    % under mpirun rank 0 reads it and sends it to the others
    if (world.active)
      err = [];
      got = {[], []};
      if (world.rank == 0)
        try
          [got{1}, got{2}] = checkpoint_open (opts, model, prior, obs, base, target);
        catch err
        end
      end
      sluice.internal.mpi ('agree', err);
      got = sluice.internal.mpi ('bcast', got, 0);
      [ck, saved] = got{:};
    else
      [ck, saved] = checkpoint_open (opts, model, prior, obs, base, target);
    end
    every = opts.checkpoint_every;
    if (~isempty (saved))
      prev = saved;
      S = setup_resume (S, prev);
      S.to = target;
    end
  end
  C = opts.chains;

  use_par = false;
  if (C > 1 && opts.workers > 1 && ~isequal (opts.parallel, false) && ~world.active)
    use_par = sluice.internal.compat ('has_parallel');
    if (~use_par && isequal (opts.parallel, true))
      error ('sluice:pmmh:noparallel', ...
             'parallel is true but Octave''s parallel package (parcellfun) cannot be loaded');
    end
  end
  if (use_par)
    S.fopts.threads = 1;
    S.pmmh_job = true;
    S.warnings = warning ();
  end

  % the iterations in blocks of `every`, a checkpoint after each
  while (true)
    S.to = min (target, S.from - 1 + every);
    if (world.active)
      out = run_chains_ranks (S, C, world);
    else
      out = run_chains (S, C, use_par, opts);
    end
    for c = 1:C
      if (~isempty (out{c}) && ~out{c}.ok)
        chain_failed (c, out{c}, ck, S.from - 1);
      end
    end
    final = S.to == target;
    res = assemble (S, opts, out, prev, use_par, toc (t_all), final);
    if (~isempty (ck) && world.active)
      % rank 0 alone writes it; a failure there is every rank's
      err = [];
      if (world.rank == 0)
        try
          checkpoint_write (ck, res, final);
        catch err
        end
      end
      sluice.internal.mpi ('agree', err);
    elseif (~isempty (ck))
      checkpoint_write (ck, res, final);
    end
    if (final)
      break;
    end
    t_all = tic ();
    prev = res;
    S = setup_resume (S, prev);
  end
  res = convergence_check (res, opts);
end

% Run iterations S.from .. S.to of every chain, in worker processes or one
% after another (stopping at the first that fails).
function out = run_chains (S, C, use_par, opts)
  if (use_par)
    nw = min (opts.workers, C);
    [out, broke] = sluice.internal.compat ('parallel_map', nw, @(c) sluice.pmmh (S, c), num2cell (1:C));
    if (~isempty (broke))
      worker_failed (broke);
    end
  else
    out = cell (1, C);
    for c = 1:C
      out{c} = run_chain (c, S);
      if (~out{c}.ok)
        break;
      end
    end
  end
end

% Under mpirun: chain c runs on rank mod (c - 1, P), the chains of a rank
% one after another; every rank then gets every chain's rows (gathered on
% rank 0, sent to all), so every rank assembles the same result. A rank
% stops at its first failing chain, like a serial run; the caller raises
% the failure of the lowest failing chain on every rank.
function out = run_chains_ranks (S, C, world)
  mine = (world.rank + 1):world.size:C;
  part = cell (1, numel (mine));
  for k = 1:numel (mine)
    part{k} = run_chain (mine(k), S);
    if (~part{k}.ok)
      break;
    end
  end
  got = sluice.internal.mpi ('gather', part, 0);
  out = cell (1, C);
  if (world.rank == 0)
    for r = 1:world.size
      cs = r:world.size:C;
      out(cs(1:numel (got{r}))) = got{r};
    end
  end
  % (a chain left empty follows a failed chain of its rank, which the
  % caller raises first)
  out = sluice.internal.mpi ('bcast', out, 0);
end

% The result of iterations 1 .. S.to: the chains' rows of this call (out)
% after those of prev (an earlier result, or empty). The summary only when
% final (a checkpoint between blocks needs none).
function res = assemble (S, opts, out, prev, use_par, elapsed, final)
  C = opts.chains;
  d = numel (S.free);
  % the rows kept in this call (iteration i > burnin with mod (i - burnin,
  % thin) = 0, counted over all calls)
  nb = opts.burnin;
  nk = kept_rows (S, nb, opts.thin);
  X = zeros (nk, d, C);
  LL = zeros (nk, C);
  LP = zeros (nk, C);
  res = struct ();
  res.names = S.names;
  res.proposal = zeros (d, d, C);
  res.scale = zeros (1, C);
  res.start = zeros (d, C);
  fresh = struct ('degenerate', zeros (1, C), 'outside', zeros (1, C), ...
                  'nonfinite_runs', zeros (1, C), 'chain_time', zeros (1, C), ...
                  'filter_time', zeros (1, C));
  calls = 0;
  for c = 1:C
    o = out{c};
    X(:, :, c) = o.X;
    LL(:, c) = o.LL;
    LP(:, c) = o.LP;
    res.proposal(:, :, c) = o.state.cov;
    res.scale(c) = exp (o.state.s);
    res.start(:, c) = o.start;
    fresh.degenerate(c) = o.degenerate;
    fresh.outside(c) = o.outside;
    fresh.nonfinite_runs(c) = o.nonfinite;
    fresh.chain_time(c) = o.time;
    fresh.filter_time(c) = o.filter_time;
    calls = calls + o.calls;
    states(c) = o.state;
  end
  % iterations after the burn-in, all calls (negative while a checkpointed
  % run is still in its burn-in: the next block starts at S.to + 1)
  ntot = S.to - nb;
  if (isempty (prev))
    res.samples = X;
    res.loglik = LL;
    res.logpost = LP;
  else
    res.samples = cat (1, prev.samples, X);
    res.loglik = [prev.loglik; LL];
    res.logpost = [prev.logpost; LP];
    res.start = prev.start;
    fields = fieldnames (fresh);
    for k = 1:numel (fields)
      fresh.(fields{k}) = fresh.(fields{k}) + prev.(fields{k});
    end
    calls = calls + prev.filter_calls;
  end
  res.acceptance = [states.acc_post] / max (ntot, 1);
  res.acceptance_burnin = nan (1, C);
  if (nb > 0)
    res.acceptance_burnin = [states.acc_burn] / min (nb, S.to);
  end
  res.target_acceptance = S.target;
  if (final && size (res.samples, 1) >= 4)
    res.summary = sluice.chain_summary (res.samples, 'names', S.names);
  else
    res.summary = [];
  end
  res.prior = S.free_prior(:);
  res.transforms = S.tnames;
  res.lower = S.lo;
  res.upper = S.hi;
  res.members = opts.members;
  res.chains = C;
  res.iterations = ntot;
  res.burnin = nb;
  res.thin = opts.thin;
  res.seed = opts.seed;
  res.degenerate = fresh.degenerate;
  res.outside = fresh.outside;
  res.nonfinite_runs = fresh.nonfinite_runs;
  res.chain_time = fresh.chain_time;
  res.filter_time = fresh.filter_time;
  res.filter_calls = calls;
  res.parallel = use_par;
  res.workers = 1;
  if (use_par)
    res.workers = min (opts.workers, C);
  end
  res.chain_state = states;
  opts.start = res.start;
  opts.continue = [];
  opts.checkpoint = '';
  res.options = opts;
  res.time = elapsed;
  if (~isempty (prev))
    res.time = res.time + prev.time;
  end
end

% Rows kept among iterations S.from .. S.to.
function nk = kept_rows (S, nb, th)
  nk = floor (max (S.to - nb, 0) / th) - floor (max (S.from - 1 - nb, 0) / th);
end

% ---------------------------------------------------------------------------
% split R-hat and bulk ESS of every parameter against the limits: a
% warning with the numbers, and the verdict in the result
function res = convergence_check (res, opts)
  res.max_rhat = opts.max_rhat;
  res.min_ess = opts.min_ess;
  s = res.summary;
  if (isempty (s))
    res.converged = false;
    warning ('sluice:pmmh:notconverged', ...
             'only %d kept iteration(s) per chain: too few for split R-hat (at least 4 are needed)', ...
             size (res.samples, 1));
    return;
  end
  rh = s.rhat;
  es = s.ess_bulk;
  bad_r = ~(rh <= opts.max_rhat);
  bad_e = ~(es >= opts.min_ess);
  res.converged = ~any (bad_r) && ~any (bad_e);
  if (any (bad_r))
    k = find (bad_r);
    txt = strjoin (arrayfun (@(j) sprintf ('%s %.3g', res.names{j}, rh(j)), k(:)', ...
                             'UniformOutput', false), ', ');
    warning ('sluice:pmmh:notconverged', ...
             ['the chains have not converged: split R-hat above %.3g for %s ', ...
              '(%d chains x %d kept iterations); run longer (''continue'') or start ', ...
              'from a posterior (''start'')'], opts.max_rhat, txt, res.chains, ...
             size (res.samples, 1));
  end
  if (any (bad_e))
    k = find (bad_e);
    txt = strjoin (arrayfun (@(j) sprintf ('%s %.1f', res.names{j}, es(j)), k(:)', ...
                             'UniformOutput', false), ', ');
    warning ('sluice:pmmh:lowess', ...
             ['bulk effective sample size below %g for %s (of %d draws); run longer ', ...
              '(''continue'') or with more members if the acceptance rate (%.3f) is low'], ...
             opts.min_ess, txt, numel (res.samples(:, 1, :)), mean (res.acceptance));
  end
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
  th = S.opts.thin;
  ev = struct ('degenerate', 0, 'nonfinite', 0, 'calls', 0, 'time', 0, 'run', []);
  if (isempty (S.resume))
    [st, ev] = chain_start (c, S, ev);
  else
    st = S.resume(c);
  end
  out.start = st.x;

  % the random-walk steps and acceptance uniforms of every iteration
  % (member i of the stream is iteration i, whichever call runs it)
  R = sluice.draw (S.step_prior, S.to, S.hash_steps + c - 1);

  nk = kept_rows (S, nb, th);
  X = zeros (nk, d);
  LL = zeros (nk, 1);
  LP = zeros (nk, 1);
  r = 0;
  outside = 0;
  a0 = S.opts.adapt_start;
  a1 = S.opts.adapt_end;
  tick = max (1, round ((S.to - S.from + 1) / 10));
  L = chol (exp (2 * st.s) * st.base, 'lower');

  for i = S.from:S.to
    zp = st.z + L * R(1:d, i);
    xp = inverse (S, zp);
    lpp = logprior (S, xp);
    ljp = logjac (S, zp);
    ok = false;
    alpha = 0;
    if (lpp > -Inf)
      [llp, ev] = loglik_at (S, xp, S.hash_filter + (c - 1) + 1024 * (i - 1), ev);
      la = (llp + lpp + ljp) - (st.ll + st.lp + st.lj);
      ok = log (R(d + 1, i)) < la;
      if (la > 0)
        alpha = 1;
      elseif (la > -Inf)
        alpha = exp (la);
      end
    else
      outside = outside + 1;
    end
    if (ok)
      st.z = zp; st.x = xp; st.ll = llp; st.lp = lpp; st.lj = ljp;
      if (i <= nb)
        st.acc_burn = st.acc_burn + 1;
      else
        st.acc_post = st.acc_post + 1;
      end
    end
    if (i > nb && mod (i - nb, th) == 0)
      r = r + 1;
      X(r, :) = st.x';
      LL(r) = st.ll;
      LP(r) = st.lp + st.ll;
    end
    if (S.opts.adapt && i <= a1)
      [st, Ln] = adapt_step (st, S, i, ok, alpha, a0);
      if (~isempty (Ln))
        L = Ln;
      end
      if (i == a1)
        st.hist = zeros (d, 0);     % frozen from here on: the history is not needed
        st.hacc = false (1, 0);
      end
    end
    st.iteration = i;
    if (S.opts.progress && mod (i - S.from + 1, tick) == 0)
      fprintf (1, 'pmmh chain %d: %d of %d iterations, acceptance %.3f\n', ...
               c, i, S.to, (st.acc_burn + st.acc_post) / i);
      sluice.internal.compat ('flush');
    end
  end
  st.cov = exp (2 * st.s) * st.base;
  out.X = X;
  out.LL = LL;
  out.LP = LP;
  out.state = st;
  out.degenerate = ev.degenerate;
  out.nonfinite = ev.nonfinite;
  out.outside = outside;
  out.calls = ev.calls;
  out.filter_time = ev.time;
end

% The adaptation after iteration i (documented in the help text): a
% Robbins-Monro step of the log-scale toward the target acceptance rate,
% and after adapt_start the covariance of the latter half of the chain's
% states since adapt_start. Returns the new Cholesky factor, or [] when
% the proposal stays as it was.
function [st, Ln] = adapt_step (st, S, i, ok, alpha, a0)
  d = numel (st.z);
  st.k = st.k + 1;
  st.s = st.s + st.k ^ (-S.gain_power) * (alpha - S.target);
  base = st.base;
  if (i > a0)
    st.hist(:, end + 1) = st.z;
    st.hacc(end + 1) = ok;
    nh = size (st.hist, 2);
    w = floor (nh / 2) + 1 : nh;
    if (sum (st.hacc(w)) >= d + 1)
      Z = st.hist(:, w);
      Zc = Z - mean (Z, 2);
      cn = S.sd * (Zc * Zc') / (numel (w) - 1) + S.opts.adapt_eps * eye (d);
      cn = (cn + cn') / 2;
      if (all (isfinite (cn(:))))
        base = cn;
        if (~st.learned)
          % the learned covariance carries the scale 2.38^2/d: start the
          % log-scale again from 0 with a fresh gain sequence
          st.learned = true;
          st.s = 0;
          st.k = 0;
        end
      end
    end
  end
  if (st.learned)
    st.s = min (max (st.s, S.scale_band(1)), S.scale_band(2));
  else
    st.s = min (max (st.s, -30), 30);
  end
  [Ln, fail] = chol (exp (2 * st.s) * base, 'lower');
  if (fail == 0)
    st.base = base;
  else
    Ln = [];
  end
end

% The starting point of chain c and the chain's first state.
function [st, ev] = chain_start (c, S, ev)
  d = numel (S.free);
  switch (S.start_kind)
    case 'prior'
      cand = sluice.draw (S.free_prior, 100, S.hash_start + c - 1);
    case 'posterior'
      % overdispersed around the posterior: z = m + 2 sd-spread draws
      E = sluice.draw (S.step_prior(1:d), 100, S.hash_start + c - 1);
      Zc = zeros (d, 100);
      for k = 1:100
        Zc(:, k) = S.post_mean + S.post_spread * E(:, k);
      end
      cand = inverse (S, Zc);
    otherwise
      cand = S.start(:, min (c, size (S.start, 2)));
  end
  lpc = logprior (S, cand);
  ll = -Inf;
  for k = 1:size (cand, 2)
    x = cand(:, k);
    if (~(lpc(k) > -Inf))
      continue;
    end
    [ll, ev] = loglik_at (S, x, S.hash_startfilter + (c - 1) + 1024 * (k - 1), ev);
    if (ll > -Inf)
      break;
    end
  end
  if (~(ll > -Inf))
    if (strcmp (S.start_kind, 'user'))
      error ('sluice:pmmh:badstart', ...
             'chain %d: the particle filter run at the given start explained no observation (log-evidence -Inf)', c);
    end
    error ('sluice:pmmh:badstart', ...
           'chain %d: no particle filter run from 100 %s draws explained the observations (log-evidence -Inf)', ...
           c, S.start_kind);
  end
  st = struct ();
  st.x = x;
  st.z = forward (S, x);
  st.ll = ll;
  st.lp = lpc(k);
  st.lj = logjac (S, st.z);
  st.s = 0;
  st.k = 0;
  st.base = S.proposal;
  st.learned = false;
  st.hist = zeros (d, 0);
  st.hacc = false (1, 0);
  st.acc_burn = 0;
  st.acc_post = 0;
  st.iteration = 0;
  st.cov = S.proposal;
end

function [ll, ev] = loglik_at (S, x, seed, ev)
  % the filter's log-evidence at the free parameters x: a run of the
  % chain's prepared filter (sluice.filter, option 'prepare') with the
  % free parameters' fixed prior entries set to x, prepared at the first
  % call; the same as an unprepared run with those entries
  % sluice.prior (name, 'fixed', x(k))
  t0 = tic ();
  if (isempty (ev.run))
    pr = S.filter_prior;
    for k = 1:numel (S.free)
      j = S.free(k);
      pr(j).args = x(k);
      pr(j).lower = x(k);
      pr(j).upper = x(k);
    end
    fo = S.fopts;
    fo.seed = seed;
    fo.prepare = true;
    ev.run = sluice.filter (S.model, pr, S.obs, fo);
  end
  r = sluice.filter (ev.run, 'seed', seed, 'params', cell2struct (num2cell (x(:)), S.names(:), 1));
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

function chain_failed (c, o, ck, done)
  % done: the iterations a checkpoint holds (ck not empty)
  if (isempty (ck))
    keep = ['Nothing is returned: run fewer iterations at a time and extend the ', ...
            'result with ''continue'', or give ''checkpoint'', to keep what a long run has done.'];
  elseif (done > 0)
    keep = sprintf (['The checkpoint %s holds the first %d iterations of every chain: ', ...
                     'the same call resumes from there.'], ck.file, done);
  else
    keep = 'No checkpoint was written yet.';
  end
  if (isempty (o.identifier))
    error ('sluice:pmmh:chainfailed', 'chain %d: %s', c, o.message);
  end
  id = o.identifier;
  if (strncmp (id, 'sluice:', 7) && numel (id) > 12 && strcmp (id(end-11:end), ':interrupted'))
    error ('sluice:pmmh:interrupted', 'chain %d: %s. %s', c, o.message, keep);
  end
  error (id, '%s', o.message);
end

% ---------------------------------------------------------------------------
% checkpoints: the result so far in a file, replaced whole after every block

% The checkpoint of this run, and what it holds (empty when the file does
% not exist yet). base: the iterations of an earlier result continued;
% target: those the run ends with.
function [ck, saved] = checkpoint_open (opts, model, prior, obs, base, target)
  key = opts;
  for f = {'iterations', 'parallel', 'workers', 'progress', 'max_rhat', 'min_ess', ...
           'checkpoint', 'checkpoint_every', 'continue', 'mpi'}
    key = rmfield (key, f{1});
  end
  ck = struct ('file', opts.checkpoint, 'key', []);
  ck.key = struct ('model', sluice.internal.comparable (model), ...
                   'prior', sluice.internal.comparable (prior), ...
                   'obs', sluice.internal.comparable (obs), ...
                   'options', sluice.internal.comparable (key), 'base', base);
  saved = [];
  file = ck.file;
  % what a run killed while writing this checkpoint left beside it
  sluice.internal.stale_tmp (file);
  if (~exist (file, 'file'))
    % find out now, not after the first block, that it cannot be written
    tmp = sprintf ('%s.tmp%d', file, sluice.internal.compat ('pid'));
    fid = fopen (tmp, 'w');
    if (fid < 0)
      error ('sluice:pmmh:badcheckpoint', 'checkpoint %s: cannot be written there', file);
    end
    fclose (fid);
    delete (tmp);
    return;
  end
  try
    s = sluice.internal.compat ('load_binary', file);
  catch err
    error ('sluice:pmmh:badcheckpoint', 'checkpoint %s: cannot be read: %s', file, err.message);
  end
  if (~isfield (s, 'pmmh_checkpoint') || ~isstruct (s.pmmh_checkpoint) || ...
      ~all (isfield (s.pmmh_checkpoint, {'key', 'result'})))
    error ('sluice:pmmh:badcheckpoint', ...
           'checkpoint %s: holds no sluice.pmmh checkpoint (variable pmmh_checkpoint)', file);
  end
  c = s.pmmh_checkpoint;
  parts = fieldnames (ck.key);
  for k = 1:numel (parts)
    if (~isstruct (c.key) || ~isfield (c.key, parts{k}) || ...
        ~isequaln (c.key.(parts{k}), ck.key.(parts{k})))
      error ('sluice:pmmh:badcheckpoint', ...
             ['checkpoint %s: written by a run with another %s; give another file, ', ...
              'or delete it to start again'], file, ...
             strrep (strrep (parts{k}, 'obs', 'observation table'), 'base', 'continued result'));
    end
  end
  check_previous (c.result);
  saved = c.result;
  done = saved.burnin + saved.iterations;
  if (done > target)
    error ('sluice:pmmh:badcheckpoint', ...
           ['checkpoint %s: holds %d iterations of every chain, more than this run asks ', ...
            'for (%d)'], file, done, target);
  end
end

% Write the result so far: to a temporary file, then renamed over the
% checkpoint, so a run killed at any moment leaves the old or the new one.
function checkpoint_write (ck, res, final)
  pmmh_checkpoint = struct ('key', ck.key, 'result', res, 'complete', final);
  tmp = sprintf ('%s.tmp%d', ck.file, sluice.internal.compat ('pid'));
  try
    sluice.internal.compat ('save_binary', tmp, 'pmmh_checkpoint', pmmh_checkpoint);
  catch err
    error ('sluice:pmmh:badcheckpoint', 'checkpoint %s: cannot be written: %s', ck.file, err.message);
  end
  [st, msg] = sluice.internal.compat ('rename', tmp, ck.file);
  if (st ~= 0)
    sluice.internal.compat ('delete_file', tmp);
    error ('sluice:pmmh:badcheckpoint', 'checkpoint %s: cannot replace it: %s', ck.file, msg);
  end
end

function worker_failed (broke)
  chains = strjoin (arrayfun (@(c) sprintf ('%d', c), broke.index, 'UniformOutput', false), ', ');
  if (isempty (broke.index))
    what = 'a worker process failed while the chains were running';
  elseif (broke.died)
    what = sprintf ('a worker process died while running chain %s', chains);
  else
    what = sprintf ('a worker process failed while chains %s were running', chains);
  end
  if (~isempty (broke.how))
    what = sprintf ('%s (%s: killed, out of memory, or a crash)', what, broke.how);
  end
  error ('sluice:pmmh:workerfailed', ['%s: %s. The other ', ...
         'workers were stopped and nothing is returned; ''parallel'', false runs ', ...
         'the chains in this process.'], what, broke.message);
end

% ---------------------------------------------------------------------------
% the transforms of the d free parameters, the log-Jacobian of the inverse
% and the prior's log-density, at the columns of a d x K matrix: computed
% by the core (sluice.kernel.prior_eval), as the filter computes them
function z = forward (S, x)
  z = sluice.kernel.prior_eval ('forward', S.lo, S.hi, x);
end

function x = inverse (S, z)
  % a value that rounds onto a bound is moved just inside it
  x = sluice.kernel.prior_eval ('inverse', S.lo, S.hi, z);
end

function lj = logjac (S, z)
  % log |dx/dz|, 1 x K
  lj = sluice.kernel.prior_eval ('logjac', S.lo, S.hi, z);
end

function lp = logprior (S, x)
  % the joint log-density in natural units, 1 x K (-Inf outside the support)
  lp = sluice.kernel.prior_eval ('logprior', S.pid, S.pa, S.pb, S.plo, S.phi, x);
end

% ---------------------------------------------------------------------------
function S = setup (model, prior, obs, opts)
  % ids: the core's distribution ids (0-based: uniform, normal, lognormal,
  % truncnormal, fixed); check_prior refuses any other distribution
  [ids, pa, pb, plo, phi] = sluice.internal.check_prior (prior, 2, 'pmmh');
  prior = prior(:)';
  names = {prior.name};
  free = [];
  for k = 1:numel (prior)
    is_state = any (strcmp (names{k}, model.states));
    ip = find (strcmp (names{k}, model.params));
    if (~is_state && isempty (ip))
      error ('sluice:pmmh:badprior', ...
             'the prior names ''%s'', which is neither a state nor a parameter of the model (parameters: %s)', ...
             names{k}, strjoin (model.params(:)', ', '));
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
  % the free entries as the core takes them (sluice.kernel.prior_eval)
  S.pid = ids(free);
  S.pa = pa(free);
  S.pb = pb(free);
  S.plo = plo(free);
  S.phi = phi(free);

  % the filter's options: the user's, then ours
  fo = opts.filter;
  if (isempty (fo))
    fo = struct ();
  end
  if (~isstruct (fo) || ~isscalar (fo))
    error ('sluice:pmmh:badoption', 'filter must be a scalar struct of sluice.filter options');
  end
  for f = {'members', 'seed', 'history', 'checkpoint'}
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

  % the prior's spread in the transformed space (2000 draws): the default
  % proposal, and the floor of the spread of starts drawn from a posterior
  P = sluice.draw (S.free_prior, 2000, seed_hash (opts.seed, 5));
  Z = forward (S, P);
  v = var (Z, 0, 2);
  v(~(v > 0 & isfinite (v))) = 1;
  S.prior_zvar = v;
  S.user_proposal = ~isempty (opts.proposal);
  if (S.user_proposal)
    S.proposal = check_proposal (opts.proposal, d);
  else
    S.proposal = diag (0.01 * v);
  end
  if (opts.adapt && isempty (opts.adapt_start))
    S.opts.adapt_start = floor (opts.burnin / 4);
  end
  if (opts.adapt && isempty (opts.adapt_end))
    S.opts.adapt_end = opts.burnin;
  end
  if (opts.adapt && S.opts.adapt_start > S.opts.adapt_end)
    error ('sluice:pmmh:badoption', 'adapt_start (%g) must not exceed adapt_end (%g)', ...
           S.opts.adapt_start, S.opts.adapt_end);
  end
  % the adaptation's constants (see the help text)
  S.sd = 2.38 ^ 2 / d;
  S.target = opts.target_acceptance;
  if (isempty (S.target))
    S.target = 0.234;
    if (d == 1)
      S.target = 0.44;
    end
  end
  S.gain_power = 0.6;
  S.scale_band = log ([1 5]);
end

% Starting values: 'prior' (draws of the prior), 'user' (a d x 1 or
% d x chains matrix) or 'posterior' (a sluice.filter or sluice.esmda
% result: draws overdispersed around its parameter ensemble).
function S = setup_start (S, start)
  d = numel (S.free);
  C = S.opts.chains;
  if (isempty (start) && isnumeric (start))
    S.start_kind = 'prior';
    return;
  end
  if (isstruct (start))
    S.start_kind = 'posterior';
    [E, w] = posterior_ensemble (S, start);
    Z = forward (S, E);
    m = Z * w;
    Zc = Z - m;
    Sig = (Zc .* w') * Zc';
    Sig = (Sig + Sig') / 2;
    % starts: twice the posterior spread, but at least a tenth of the prior's
    sd = sqrt (max (diag (Sig), 0));
    floor_sd = 0.1 * sqrt (S.prior_zvar);
    spread = Sig + diag (max (floor_sd .^ 2 - sd .^ 2, 0));
    [Ls, fail] = chol (4 * spread + 1e-12 * diag (S.prior_zvar), 'lower');
    if (fail ~= 0)
      Ls = diag (2 * max (sd, floor_sd));
    end
    S.post_mean = m;
    S.post_spread = Ls;
    if (~S.user_proposal)
      % the first proposal: 2.38^2/d times the posterior covariance, with
      % the default steps where the posterior has (almost) no spread
      cn = S.sd * Sig;
      thin_dir = diag (Sig) < 1e-6 * S.prior_zvar;
      cn(thin_dir, :) = 0;
      cn(:, thin_dir) = 0;
      dd = diag (cn);
      dd(thin_dir) = 0.01 * S.prior_zvar(thin_dir);
      cn(1:d + 1:end) = dd + 1e-10 * S.prior_zvar;
      [~, fail] = chol (cn);
      if (fail == 0)
        S.proposal = cn;
      end
    end
    return;
  end
  if (~isa (start, 'double') || ~isreal (start) || issparse (start) || ndims (start) ~= 2 || ...
      size (start, 1) ~= d || ~(size (start, 2) == 1 || size (start, 2) == C))
    error ('sluice:pmmh:badstart', ...
           ['start: expected a real double %d x 1 or %d x %d matrix (one row per free ', ...
            'parameter: %s), or a sluice.filter or sluice.esmda result, got %s'], ...
           d, d, C, strjoin (S.names', ', '), sluice.internal.describe (start));
  end
  L = sluice.kernel.prior_eval ('logpdf', S.pid, S.pa, S.pb, S.plo, S.phi, start);
  for c = 1:size (start, 2)
    x = start(:, c);
    for k = 1:d
      inside = isfinite (x(k)) && (x(k) > S.lo(k) || S.lo(k) == -Inf) && ...
               (x(k) < S.hi(k) || S.hi(k) == Inf) && L(k, c) > -Inf;
      if (~inside)
        error ('sluice:pmmh:badstart', ...
               'start: column %d gives %s = %g, outside the support of its prior (bounds [%g, %g])', ...
               c, S.names{k}, x(k), S.lo(k), S.hi(k));
      end
    end
  end
  S.start_kind = 'user';
  S.start = start;
end

% The parameter ensemble (natural units, free parameters in order) and its
% normalised weights from a sluice.filter or sluice.esmda result.
function [E, w] = posterior_ensemble (S, r)
  d = numel (S.free);
  if (~isscalar (r))
    error ('sluice:pmmh:badstart', 'start: expected one result struct, got a %s', ...
           sluice.internal.describe (r));
  end
  if (isfield (r, 'final') && isfield (r, 'param_names') && isstruct (r.final) && ...
      isscalar (r.final) && isfield (r.final, 'P') && isfield (r.final, 'w'))
    names = r.param_names;
    P = r.final.P;
    w = r.final.w;
    what = 'sluice.filter';
  elseif (isfield (r, 'names') && isfield (r, 'P') && ~isfield (r, 'chain_state'))
    names = r.names;
    P = r.P;
    w = [];
    what = 'sluice.esmda';
  else
    error ('sluice:pmmh:badstart', ...
           'start: a struct must be a sluice.filter result (param_names, final.P, final.w) or a sluice.esmda result (names, P)');
  end
  if (~iscellstr (names) || ~isa (P, 'double') || ~isreal (P) || ndims (P) ~= 2 || ...
      size (P, 1) ~= numel (names) || size (P, 2) < 1)
    error ('sluice:pmmh:badstart', 'start: the %s result''s parameter ensemble is malformed', what);
  end
  N = size (P, 2);
  if (isempty (w))
    w = ones (N, 1);
  end
  if (~isa (w, 'double') || ~isreal (w) || numel (w) ~= N)
    error ('sluice:pmmh:badstart', 'start: the %s result''s weights are malformed', what);
  end
  w = w(:);
  E = zeros (d, N);
  for k = 1:d
    j = find (strcmp (names, S.names{k}), 1);
    if (isempty (j))
      error ('sluice:pmmh:badstart', 'start: the %s result has no parameter ''%s''', ...
             what, S.names{k});
    end
    E(k, :) = P(j, :);
  end
  % members strictly inside the bounds, with finite values and weights
  ok = all (isfinite (E), 1)' & isfinite (w) & w >= 0;
  ok = ok & all (E > S.lo | S.lo == -Inf, 1)' & all (E < S.hi | S.hi == Inf, 1)';
  if (~any (ok) || ~(sum (w(ok)) > 0))
    error ('sluice:pmmh:badstart', ...
           'start: no member of the %s result lies inside the bounds of the prior', what);
  end
  E = E(:, ok);
  w = w(ok) / sum (w(ok));
end

% Continuing a run: the earlier result's options and chain states.
function S = setup_resume (S, prev)
  d = numel (S.free);
  if (~isequal (prev.names, S.names) || ~isequal (prev.lower, S.lo) || ...
      ~isequal (prev.upper, S.hi) || ~isequal (size (prev.chain_state), [1 S.opts.chains]) || ...
      ~isequal (size (prev.chain_state(1).z), [d 1]))
    error ('sluice:pmmh:badcontinue', ...
           'continue: the earlier run sampled other parameters (%s) than this prior gives (%s)', ...
           strjoin (prev.names(:)', ', '), strjoin (S.names', ', '));
  end
  S.start_kind = 'continued';
  S.resume = prev.chain_state;
  S.from = prev.burnin + prev.iterations + 1;
  S.to = prev.burnin + prev.iterations + S.opts.iterations;
end

function C = check_proposal (C, d)
  if (~isa (C, 'double') || ~isreal (C) || issparse (C) || ~isequal (size (C), [d d]) || ...
      any (~isfinite (C(:))))
    error ('sluice:pmmh:badproposal', ...
           'proposal: expected a finite real %d x %d double matrix (one row per free parameter), got %s', ...
           d, d, sluice.internal.describe (C));
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

function [opts, prev] = parse_options (args)
  opts = struct ('members', 500, 'chains', 4, 'iterations', 2000, 'burnin', 500, ...
                 'thin', 1, 'proposal', [], 'adapt', true, 'adapt_start', [], ...
                 'adapt_end', [], 'adapt_eps', 1e-10, 'target_acceptance', [], ...
                 'start', [], 'continue', [], 'max_rhat', 1.05, 'min_ess', 400, ...
                 'seed', 1, 'filter', [], 'parallel', 'auto', ...
                 'workers', sluice.internal.compat ('nproc'), 'progress', false, ...
                 'checkpoint', '', 'checkpoint_every', 100, 'mpi', 'auto');
  opts = sluice.internal.name_value (opts, args, 'pmmh');
  prev = opts.continue;
  if (~isempty (prev) || ~isnumeric (prev))
    % continuing: the earlier run's options, and only these may change
    check_previous (prev);
    given = sluice.internal.option_pairs (args);
    given = given(1:2:end);
    may = {'continue', 'iterations', 'parallel', 'workers', 'progress', 'max_rhat', 'min_ess', ...
           'checkpoint', 'checkpoint_every', 'mpi'};
    other = setdiff (given, may);
    if (~isempty (other))
      error ('sluice:pmmh:badcontinue', ...
             ['continue: option ''%s'' cannot change when a run is continued ', ...
              '(only %s can)'], other{1}, strjoin (may(2:end), ', '));
    end
    o2 = prev.options;
    o2.checkpoint = '';   % a checkpoint belongs to one call
    for k = 1:numel (given)
      o2.(given{k}) = opts.(given{k});
    end
    o2.start = [];
    o2.continue = [];
    opts = parse_options ({o2});
  end
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
  t = opts.target_acceptance;
  if (~isempty (t) && ~(isa (t, 'double') && isreal (t) && isscalar (t) && t > 0 && t < 1))
    error ('sluice:pmmh:badoption', ...
           'target_acceptance must be a real number strictly between 0 and 1, got %s', ...
           sluice.internal.describe (t, 'value'));
  end
  t = opts.max_rhat;
  if (~(isa (t, 'double') && isreal (t) && isscalar (t) && t > 1 && t < Inf))
    error ('sluice:pmmh:badoption', 'max_rhat must be a finite real number > 1, got %s', ...
           sluice.internal.describe (t, 'value'));
  end
  t = opts.min_ess;
  if (~(isa (t, 'double') && isreal (t) && isscalar (t) && t >= 0 && t < Inf))
    error ('sluice:pmmh:badoption', 'min_ess must be a finite real number >= 0, got %s', ...
           sluice.internal.describe (t, 'value'));
  end
  if (~isempty (opts.start) && ~isnumeric (opts.start) && ~isstruct (opts.start))
    error ('sluice:pmmh:badstart', ...
           'start: expected a matrix of starting values or a sluice.filter or sluice.esmda result, got %s', ...
           sluice.internal.describe (opts.start));
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
  p = opts.mpi;
  if (ischar (p) && strcmpi (p, 'auto'))
    opts.mpi = 'auto';
  elseif ((islogical (p) || isnumeric (p)) && isscalar (p) && isreal (p) && (p == 0 || p == 1))
    opts.mpi = logical (p);
  else
    error ('sluice:pmmh:badoption', 'mpi must be ''auto'', true or false, got %s', ...
           sluice.internal.describe (p, 'value'));
  end
  c = opts.checkpoint;
  if (~(ischar (c) && (isempty (c) || isrow (c))))
    error ('sluice:pmmh:badoption', 'checkpoint must be a file name (text), got %s', ...
           sluice.internal.describe (c));
  end
  opts.checkpoint_every = whole (opts.checkpoint_every, 'checkpoint_every', 1, 2^40, 'badoption');
end

function check_previous (prev)
  need = {'chain_state', 'options', 'names', 'samples', 'loglik', 'logpost', 'burnin', ...
          'iterations', 'lower', 'upper', 'start', 'filter_calls', 'time', 'degenerate', ...
          'outside', 'nonfinite_runs', 'chain_time', 'filter_time'};
  state = {'x', 'z', 'll', 'lp', 'lj', 's', 'k', 'base', 'learned', 'hist', 'hacc', ...
           'acc_burn', 'acc_post', 'iteration', 'cov'};
  if (~isstruct (prev) || ~isscalar (prev) || ~all (isfield (prev, need)) || ...
      ~isstruct (prev.chain_state) || isempty (prev.chain_state) || ...
      ~all (isfield (prev.chain_state, state)) || ~isstruct (prev.options))
    error ('sluice:pmmh:badcontinue', ...
           'continue: expected the result of an earlier sluice.pmmh run, got %s', ...
           sluice.internal.describe (prev));
  end
end

function v = whole (v, what, lo, hi, reason)
  if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v) || ...
      v ~= fix (v) || v < lo || v > hi)
    error (['sluice:pmmh:' reason], '%s must be a whole number from %g to %g, got %s', ...
           what, lo, hi, sluice.internal.describe (v, 'value'));
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

%!test
%! % continuing a run gives exactly the chains of one longer run: the same
%! % states, seeds and frozen proposal, samples appended (thinning counted
%! % over all calls)
%! warning ('off', 'sluice:pmmh:notconverged', 'local');
%! warning ('off', 'sluice:pmmh:lowess', 'local');
%! o = {'members', 20, 'chains', 2, 'burnin', 10, 'seed', 4, 'parallel', false, ...
%!      'filter', struct('t0', 0, 'state_noise', 1)};
%! r0 = sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 16, 'thin', 2);
%! r1 = sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 7, 'thin', 2);
%! r2 = sluice.pmmh (spec, pr, obs, 'continue', r1, 'iterations', 9);
%! assert (r2.samples, r0.samples, 0);
%! assert (r2.loglik, r0.loglik, 0);
%! assert (r2.acceptance, r0.acceptance, 0);
%! assert (r2.proposal, r0.proposal, 0);
%! assert (r2.start, r0.start, 0);
%! assert (r2.filter_calls, r0.filter_calls);
%! assert ([r2.iterations, r2.burnin], [16, 10]);
%! % continual adaptation (adapt_end Inf) carries the adaptation state too
%! r0 = sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 12, 'adapt_end', Inf);
%! r1 = sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 5, 'adapt_end', Inf);
%! r2 = sluice.pmmh (spec, pr, obs, 'continue', r1, 'iterations', 7);
%! assert (r2.samples, r0.samples, 0);
%! assert (r2.proposal, r0.proposal, 0);

%!test
%! % a checkpointed run (blocks of 3 iterations, the first ones inside the
%! % burn-in) equals one whole run bit for bit; the finished checkpoint
%! % extends with more iterations (runs killed between blocks:
%! % tests/octave/test_kill_resume.m)
%! warning ('off', 'sluice:pmmh:notconverged', 'local');
%! warning ('off', 'sluice:pmmh:lowess', 'local');
%! f = [tempname() '.ckp'];
%! unwind_protect
%!   o = {'members', 20, 'chains', 2, 'burnin', 7, 'seed', 5, 'parallel', false, ...
%!        'thin', 2, 'filter', struct('t0', 0, 'state_noise', 1)};
%!   r0 = sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 14);
%!   r1 = sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 14, 'checkpoint', f, ...
%!                     'checkpoint_every', 3);
%!   same = {'samples', 'loglik', 'logpost', 'acceptance', 'acceptance_burnin', 'proposal', ...
%!           'scale', 'start', 'filter_calls', 'iterations', 'burnin', 'degenerate', 'summary'};
%!   for k = 1:numel (same)
%!     assert (r1.(same{k}), r0.(same{k}), 0);
%!   end
%!   assert (isequaln (r1.chain_state, r0.chain_state));
%!   s = load (f);
%!   assert (s.pmmh_checkpoint.complete);
%!   assert (s.pmmh_checkpoint.result.samples, r0.samples, 0);
%!   % the same call again: nothing left to do, the same result
%!   r2 = sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 14, 'checkpoint', f, ...
%!                     'checkpoint_every', 3);
%!   assert (r2.samples, r0.samples, 0);
%!   assert (r2.filter_calls, r0.filter_calls);
%!   % extended: as one run of 20
%!   r3 = sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 20, 'checkpoint', f, ...
%!                     'checkpoint_every', 4);
%!   r4 = sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 20);
%!   assert (r3.samples, r4.samples, 0);
%!   assert (r3.proposal, r4.proposal, 0);
%! unwind_protect_cleanup
%!   if (exist (f, 'file'))
%!     delete (f);
%!   end
%! end_unwind_protect

%!test
%! % checkpoints refused: other settings, more iterations than asked, not
%! % a checkpoint, a place that cannot be written
%! warning ('off', 'sluice:pmmh:notconverged', 'local');
%! warning ('off', 'sluice:pmmh:lowess', 'local');
%! f = [tempname() '.ckp'];
%! unwind_protect
%!   o = {'members', 10, 'chains', 1, 'burnin', 2, 'parallel', false, ...
%!        'filter', struct('t0', 0, 'state_noise', 1)};
%!   sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 6, 'checkpoint', f);
%!   try
%!     sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 6, 'checkpoint', f, 'seed', 9);
%!     error ('no error');
%!   catch err
%!     assert (err.identifier, 'sluice:pmmh:badcheckpoint');
%!     assert (strfind (err.message, 'another options') > 0);
%!   end
%!   pr2 = sluice.prior ('a', 'uniform', [-0.9 1], 'x', 'normal', [0 1]);
%!   try
%!     sluice.pmmh (spec, pr2, obs, o{:}, 'iterations', 6, 'checkpoint', f);
%!     error ('no error');
%!   catch err
%!     assert (err.identifier, 'sluice:pmmh:badcheckpoint');
%!     assert (strfind (err.message, 'another prior') > 0);
%!   end
%!   try
%!     sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 5, 'checkpoint', f);
%!     error ('no error');
%!   catch err
%!     assert (err.identifier, 'sluice:pmmh:badcheckpoint');
%!     assert (strfind (err.message, 'holds 8 iterations') > 0);
%!   end
%!   x = 1;
%!   save ('-binary', f, 'x');
%!   try
%!     sluice.pmmh (spec, pr, obs, o{:}, 'iterations', 6, 'checkpoint', f);
%!     error ('no error');
%!   catch err
%!     assert (err.identifier, 'sluice:pmmh:badcheckpoint');
%!   end
%! unwind_protect_cleanup
%!   if (exist (f, 'file'))
%!     delete (f);
%!   end
%! end_unwind_protect
%!error id=sluice:pmmh:badcheckpoint sluice.pmmh (spec, pr, obs, 'checkpoint', fullfile (tempname (), 'no', 'ckp'))
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'checkpoint', 3)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'mpi', 'yes')
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'mpi', [true true])
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'checkpoint_every', 0)

%!test
%! % user starts: one column for all chains, or one per chain
%! warning ('off', 'sluice:pmmh:notconverged', 'local');
%! warning ('off', 'sluice:pmmh:lowess', 'local');
%! o = {'members', 10, 'iterations', 4, 'burnin', 0, 'parallel', false, ...
%!      'filter', struct('t0', 0)};
%! r = sluice.pmmh (spec, pr, obs, o{:}, 'chains', 3, 'start', [0.1 -0.2 0.7]);
%! assert (r.start, [0.1 -0.2 0.7]);
%! r = sluice.pmmh (spec, pr, obs, o{:}, 'chains', 2, 'start', 0.25);
%! assert (r.start, [0.25 0.25]);

%!test
%! % the verdict: too short a run warns with its numbers and says so
%! % (the warnings stay on: a disabled warning does not reach lastwarn)
%! o = {'members', 10, 'chains', 2, 'iterations', 40, 'burnin', 0, 'seed', 2, ...
%!      'parallel', false, 'filter', struct('t0', 0)};
%! lastwarn ('');
%! r = sluice.pmmh (spec, pr, obs, o{:});
%! [msg, id] = lastwarn ();
%! assert (id, 'sluice:pmmh:lowess');
%! assert (~isempty (strfind (msg, sprintf ('%.1f', r.summary.ess_bulk))));
%! assert (r.converged, false);
%! assert ([r.max_rhat, r.min_ess], [1.05 400]);
%! % with the limits set so that R-hat fails (any R-hat exceeds 1 + 1e-9
%! % unless the chains agree exactly) and ESS passes
%! lastwarn ('');
%! r = sluice.pmmh (spec, pr, obs, o{:}, 'max_rhat', 1 + 1e-9, 'min_ess', 0);
%! [msg, id] = lastwarn ();
%! assert (id, 'sluice:pmmh:notconverged');
%! assert (~isempty (strfind (msg, sprintf ('a %.3g', r.summary.rhat))));
%! assert (r.converged, false);
%! % generous limits: no warning, converged
%! lastwarn ('');
%! r = sluice.pmmh (spec, pr, obs, o{:}, 'max_rhat', 1e6, 'min_ess', 0);
%! assert (lastwarn (), '');
%! assert (r.converged, true);

%!test
%! % starts from an ES-MDA or a particle-filter posterior: dispersed draws
%! % around its ensemble, inside the support, one per chain
%! warning ('off', 'sluice:pmmh:notconverged', 'local');
%! warning ('off', 'sluice:pmmh:lowess', 'local');
%! fo = struct ('t0', 0, 'state_noise', 1);
%! post = struct ('names', {{'a'; 'b'}}, 'P', [0.3 + 0.05 * (-2:2); ones(1, 5)]);
%! o = {'members', 10, 'chains', 3, 'iterations', 4, 'burnin', 0, 'parallel', false, 'filter', fo};
%! r = sluice.pmmh (spec, pr, obs, o{:}, 'start', post);
%! assert (all (r.start > -1 & r.start < 1));
%! assert (numel (unique (r.start)), 3);
%! f = sluice.filter (spec, sluice.prior ('a', 'uniform', [-1 1], 'x', 'normal', [0 1]), ...
%!                    obs, 'members', 50, 'seed', 3, 't0', 0, 'state_noise', 1);
%! r = sluice.pmmh (spec, pr, obs, o{:}, 'start', f);
%! assert (all (r.start > -1 & r.start < 1));
%! assert (numel (unique (r.start)), 3);

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
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'target_acceptance', 0)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'target_acceptance', 1)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'target_acceptance', -0.2)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'target_acceptance', NaN)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'target_acceptance', [0.2 0.3])
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'target_acceptance', '0.2')
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'target_acceptance', 0.2i)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'max_rhat', 1)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'max_rhat', Inf)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'max_rhat', {1.1})
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'min_ess', -1)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'min_ess', NaN)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'adapt_start', -5)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'adapt_end', 2.5)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'adapt_eps', -1)
%!error id=sluice:pmmh:badoption sluice.pmmh (spec, pr, obs, 'adapt_eps', Inf)
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', 1.5)
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', -1)
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', NaN)
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', Inf)
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'chains', 2, 'start', [0.1 0.2 0.3])
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', [0.1; 0.2])
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', single (0.1))
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', 0.1i)
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', int8 (0))
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', {0.1})
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', 'a')
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', struct ('x', 1))
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', struct ('names', {{'b'}}, 'P', 1))
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', struct ('names', {{'a'}}, 'P', 3))
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', struct ('names', {{'a'}}, 'P', {1, 2}))
%!error id=sluice:pmmh:badstart sluice.pmmh (spec, pr, obs, 'start', struct ('names', {{'a'}}, 'P', 'x'))
%!error id=sluice:pmmh:badstart
%! % a start inside the bounds [-2 2] but outside the prior's support
%! p2 = sluice.prior ('a', 'truncnormal', [0 1 -0.5 0.5], 'bounds', [-2 2], 'x', 'normal', [0 1]);
%! sluice.pmmh (spec, p2, obs, 'start', 0.9);
%!error id=sluice:pmmh:badstart
%! % a start where the filter explains nothing
%! f = @(t, X, P, U, dt) P(1, :) .* X + 0 ./ (P(1, :) < 0.7);
%! s2 = sluice.model (f, 'states', {'x'}, 'params', {'a'});
%! sluice.pmmh (s2, pr, obs, 'members', 5, 'chains', 1, 'iterations', 2, 'burnin', 0, ...
%!              'start', 0.9, 'filter', struct ('t0', 0));
%!error id=sluice:pmmh:badcontinue sluice.pmmh (spec, pr, obs, 'continue', 3)
%!error id=sluice:pmmh:badcontinue sluice.pmmh (spec, pr, obs, 'continue', struct ('names', 1))
%!error id=sluice:pmmh:badcontinue
%! warning ('off', 'all', 'local');
%! o = {'members', 10, 'chains', 1, 'iterations', 4, 'burnin', 0, 'filter', struct('t0', 0)};
%! r = sluice.pmmh (spec, pr, obs, o{:});
%! sluice.pmmh (spec, pr, obs, 'continue', r, 'members', 20);
%!error id=sluice:pmmh:badcontinue
%! warning ('off', 'all', 'local');
%! o = {'members', 10, 'chains', 1, 'iterations', 4, 'burnin', 0, 'filter', struct('t0', 0)};
%! r = sluice.pmmh (spec, pr, obs, o{:});
%! sluice.pmmh (spec, sluice.prior ('a', 'uniform', [-0.9 1]), obs, 'continue', r);
%!error id=sluice:pmmh:badcontinue
%! warning ('off', 'all', 'local');
%! o = {'members', 10, 'chains', 1, 'iterations', 4, 'burnin', 0, 'filter', struct('t0', 0)};
%! r = sluice.pmmh (spec, pr, obs, o{:});
%! r.chain_state = 1;
%! sluice.pmmh (spec, pr, obs, 'continue', r);
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
