% -*- texinfo -*-
% @deftypefn  {} {@var{res} =} sluice.filter (@var{model}, @var{prior}, @var{obs})
% @deftypefnx {} {@var{res} =} sluice.filter (@var{model}, @var{prior}, @var{obs}, @var{opts})
% @deftypefnx {} {@var{res} =} sluice.filter (@dots{}, @var{name}, @var{value}, @dots{})
% Assimilate a record of observations into an ensemble run of @var{model}.
%
% @var{model} is a spec from @code{sluice.model}. @var{prior} is a struct
% array from @code{sluice.prior}: an entry named after a parameter is that
% parameter's prior, an entry named after a state is the distribution of
% its initial value (other states start at the model's @code{x0},
% parameters not named keep the model's @code{defaults}). @var{obs} is the
% long observation table: a struct of column vectors @code{time},
% @code{variable} (cellstr of state or parameter names), @code{value}
% (NaN = missing: skipped and counted) and @code{sigma}, optionally
% @code{family} (cellstr: @code{gaussian} (default), @code{lognormal},
% @code{student_t}, @code{poisson}, @code{binomial}, @code{censored}) and
% the family's extra column: @code{n} (binomial trials), @code{dof}
% (Student-t degrees of freedom) or @code{limit} (detection limit of a
% censored observation). Rows must be in time order. A @code{variable}
% may also name a derived quantity defined by the option @code{operators}.
%
% The whole run is one call into compiled code: each member is advanced to
% the next observation time, weighted by the likelihood of the
% observations there, and the ensemble is resampled when its effective
% sample size falls below a threshold.
%
% Options (a struct or name/value pairs):
% @table @code
% @item method
% @code{'pf'} (default): the particle filter. @code{'wenkf'}: the
% weighted ensemble Kalman filter (Papadakis, Memin, Cuzol & Gengembre
% 2010), a particle filter for models between the two regimes: at a cycle
% with observations each member's states move by a perturbed-observation
% ensemble Kalman update (the gain from the weighted forecast ensemble)
% and the member is weighted by likelihood x transition density /
% proposal density, so the weights correct the update (exact as the
% members grow, tested against the Kalman filter) and the log-evidence
% stays an estimate of the evidence. The transition is the model's step
% plus @code{state_noise}, which must be > 0 on every state; observations
% Gaussian, of states, parameters or linear operators; parameters move
% by @code{param_move}, not by the update. The ensemble Kalman methods
% (Gaussian observations only; states and parameters updated together by
% state augmentation, parameters in their transformed space):
% @code{'enkf'} (stochastic, perturbed observations), @code{'etkf'}
% (symmetric square root; worked out with m x m matrices when a cycle has
% m observations, fewer than the members, else with N x N ones), @code{'ensrf'} and @code{'eakf'} (serial, one
% observation at a time), @code{'letkf'} (local, needs
% @code{localization}). Their log-evidence is NaN; dead members are
% replaced by copies of living ones.
% @item inflation
% multiplicative prior inflation of the perturbations (>= 1, default 1).
% @item rtpp, rtps
% relaxation to prior perturbations / to prior spread, in [0, 1].
% @item adaptive_inflation
% true to re-estimate the inflation each cycle from the innovations
% (starting at @code{inflation}, at most @code{inflation_max}, default 2).
% @item localization
% struct: @code{geometry} (@code{'line'}, @code{'ring'} with
% @code{period}, @code{'plane'}, @code{'sphere'} with lon/lat in degrees and
% @code{sphere_radius}, default 6371), @code{positions} (n x 1 or n x 2,
% one row per state; default 1..n in 1-D), @code{radius} (the
% Gaspari-Cohn half-width c, support 2c: a scalar, or a struct of one
% radius per observed variable), @code{param_factor} (weight of every
% observation on the parameters, default 1). An observation sits at the
% position of the state it observes, or at the table's columns @code{x}
% (and @code{y}).
% @item operators
% derived quantities to observe besides the states and parameters: a
% struct (or a struct array, or a cell of structs), each with
% @code{names} (a name or a cellstr of k names, unique and different from
% the model's states and parameters) and either @code{H}, a k x n matrix
% acting on the states or a k x (n + p) matrix acting on the states and
% the parameters in natural units (a linear operator, evaluated in
% compiled code), or @code{fun}, a function handle
% @code{Y = fun (t, X, P)} returning k x N predicted values for the whole
% ensemble (X n x N, P p x N; called once per cycle whose observations
% need it, and once more per cycle for the summary in @code{res.derived}
% unless @code{derived_summary} is false). Rows of the observation table
% then name them like states. For
% the ensemble Kalman methods with localisation, observations of derived
% quantities need the position columns @code{x} (and @code{y}).
% @item members
% ensemble size N (default 1000).
% @item seed
% whole number; the same seed gives identical results whatever the number
% of threads. Default: drawn from Octave's @code{rand}; the seed used is
% returned in @code{res.seed}.
% @item t0
% start time (default the model's @code{t0}).
% @item times
% extra times at which to record the ensemble without observations.
% @item origin
% the date of model time 0 (ISO 8601 text such as @code{'2001-01-01'} or
% @code{'2001-01-01T06:00+01:00'}, or an Octave datenum; default none),
% for a run whose observations were read with dates
% (@code{sluice.read_obs (file, 'origin', ...)}): the result then carries
% @code{time_origin}, @code{time_unit} and @code{dates} (the datenums of
% @code{times}), and @code{sluice.report} draws and writes dates.
% @item time_unit
% the model's time unit when @code{origin} is given: @code{'days'}
% (default) or @code{'years'} (of 365.25 days).
% @item forcing
% struct with @code{time} (nt x 1), @code{values} (nt x q, a column per
% forcing of the model) and @code{interp} (@code{'linear'} (default) or
% @code{'previous'}: hold each value until the next). A model step from
% t uses the forcing at t. With a field @code{names} (a cellstr, one per
% column of @code{values}, as @code{sluice.read_forcing} returns) the
% columns are matched to the model's forcings by name, without regard to
% case where no name is equal, in any order; other columns are left aside
% and a forcing without a column is an error
% (@code{sluice:filter:noforcing}). A forcing read with dates carries
% @code{time_origin} and @code{time_unit}; they must then equal the run's
% @code{origin} and @code{time_unit} (@code{sluice:filter:forcingorigin}
% otherwise: the times are not converted). A run without @code{origin}
% takes the forcing's times as model times.
% @item forcing_noise
% struct with @code{kind} (@code{'none'}, @code{'additive'} or
% @code{'multiplicative'}; a string, or a cellstr with one per forcing),
% @code{sd} and @code{ar1} (scalars or one per forcing): each member gets
% its own perturbed copy of every forcing, e = AR(1) in model steps with
% standard deviation sd; additive u + e, multiplicative u exp(e - sd^2/2).
% @item events
% for a model with events (the flood model's high-water levels): struct
% with @code{time} (ne x 1, increasing) and @code{values} (ne x nv, one
% column per event series of the model). Events in (t, t + dt] of a step
% are applied once, at their times.
% @item event_noise
% struct with @code{kind} and @code{sd} as for forcing_noise (no ar1):
% each member gets its own perturbed copy of every event value.
% @item state_noise
% standard deviations of additive Gaussian noise put on the states at each
% cycle (scalar or n-vector; default 0: off).
% @item param_move
% how estimated parameters (those whose prior has spread) move, in their
% transformed space (log for positive, logit for bounded):
% @table @code
% @item 'auto'
% (default) @code{'resample_move'} when every member's path is a
% deterministic function of its initial state and parameters (no
% forcing noise, state noise, event noise or model noise), where it
% samples the exact posterior; @code{'kernel'} otherwise. The move used
% is in @code{res.param_move}.
% @item 'resample_move'
% (Gilks & Berzuini 2001) after the particle filter resamples, when an
% estimated parameter has fewer than @code{move_diversity} * N distinct
% values among the members, every member proposes z' = z + s L e (L L'
% the members' covariance, s = @code{move_scale} * 2.38 / sqrt(d),
% Roberts & Rosenthal 2001), its whole path is re-run from the start
% with z' (the same initial state, forcing perturbations, state noise
% and model draws its ancestors had), and z' is accepted with
% probability min(1, prior(z') L(z') / (prior(z) L(z))), L the
% likelihood of every observation so far (at the current exponent when
% tempering). Sweeps repeat, the scale adapting toward an acceptance rate
% of 0.234, until every estimated parameter has (1 + move_diversity) / 2
% * N distinct values or @code{move_sweeps} sweeps are done; the
% per-cycle sweeps and acceptance rates are in @code{res.move_sweeps} and
% @code{res.move_accept}. A Metropolis-Hastings move of the joint
% posterior of parameters and paths: exact (up to Monte Carlo error) when
% the paths are deterministic. With random paths (forcing or state
% noise) the members keep their paths' standard normal draws, and every
% other sweep moves the draws instead of the parameters, z' = rho z +
% beta e with rho = sqrt(1 - beta^2) (preconditioned Crank-Nicolson,
% Cotter, Roberts, Stuart & White 2013; beta starts at
% @code{move_paths} and adapts toward 0.234), accepted by the likelihood
% ratio: without it the parameters stay conditional on the few early
% paths that survive resampling. On a linear-Gaussian test its bands were
% still 0.5-0.75 of the exact width with the default sweeps (0.7-0.95
% with 40). Models that draw by member index (the flood model with
% perturbed events, the linear model's noise) re-run their draws through
% the recorded parents and do not move them. The cost grows with the
% record: a sweep re-runs the whole record so far. It does not combine
% with @code{lag}.
% @item 'smc2'
% SMC2 (Chopin, Jacob & Papaspiliopoulos 2013), for the exact posterior
% of the parameters of a model with noisy paths: @code{members} parameter
% vectors, each running its own particle filter of
% @code{inner_members} members (so members x inner_members states in
% all). Each vector is weighted by its filter's likelihood increments;
% when the ESS of those weights falls below @code{resample_threshold}
% times their number, the vectors are resampled and each takes
% particle-marginal Metropolis-Hastings steps (Andrieu, Doucet &
% Holenstein 2010): a proposal as resample_move's, a new particle filter
% run with it from the start, accepted by the ratio of the filters'
% likelihood estimates times the priors (sweeps, scale and diversity as
% resample_move's). Exact for the parameters as the number of vectors
% grows, for any inner_members; more inner members raise the acceptance
% rate. The state summaries weigh every member by its vector's weight
% times its weight within the vector, and @code{log_evidence} estimates
% the evidence. Costly: a move re-runs every vector's filter over the
% record so far. Not with @code{lag}, @code{history}, tempering or an
% ensemble Kalman method; @code{forecast} holds NaN (the forecast means
% are not recorded).
% @item 'kernel'
% each time the particle filter resamples, every member's
% parameters are moved by the kernel of the regularised particle filter
% (Musso, Oudjane & Le Gland 2001) with the shrinkage of Liu & West
% (2001): z <- a z + (1 - a) m + h L e, e standard normal, where m and
% L L' are the weighted mean and covariance of the ensemble before it was
% resampled, h = s A N^(-1/(d+4)) with A = (4/(d+2))^(1/(d+4)) the
% optimal Gaussian-kernel bandwidth for the d parameters with spread
% (s = @code{kernel_scale}, h at most 1) and a = sqrt(1 - h^2), so the
% move keeps the ensemble's mean and covariance. The bandwidth follows
% the current spread: nothing to tune. When the weighted ESS is below
% 10, the covariance is that of the members without their weights (a
% weighted covariance from so few effective members would shrink the
% kernel to nothing). Parameters without spread stay exactly put. The
% ensemble Kalman methods move parameters by their analysis and ignore
% this move.
% @item 'fixed'
% parameters keep the values they were drawn with; resampling alone
% thins them (over a long record to a few values: see the warnings).
% @item 'random_walk'
% before every cycle z <- z + step e (step @code{param_step}).
% @item 'liu_west'
% before every cycle, kernel shrinkage with discount
% @code{liu_west_delta} (default 0.98; Liu & West 2001).
% @end table
% @item kernel_scale
% factor on the kernel bandwidth h (default 1; > 0).
% @item move_diversity
% resample_move acts when an estimated parameter has fewer than this
% fraction of N distinct values (in (0, 1], default 0.5).
% @item move_sweeps
% most Metropolis-Hastings sweeps per move of resample_move (1 to 1000,
% default 10).
% @item inner_members
% members of each parameter vector's particle filter with @code{'smc2'}
% (a whole number >= 1, default 100).
% @item move_scale
% factor on resample_move's starting proposal scale 2.38 / sqrt(d)
% (finite, > 0; default 1).
% @item move_paths
% resample_move's starting step beta of the moves of the paths' draws,
% in [0, 1] (default 0.1; 0: the draws are not moved).
% @item temper_ess
% adaptive likelihood tempering inside a cycle of the particle filter
% (Jasra, Stephens, Doucet & Tsagaris 2011; Beskos, Jasra, Kantas &
% Thiery 2016): a fraction in (0, 1], or 0 or @code{'off'} (default: off).
% When a cycle's likelihood L would bring the conditional ESS (Zhou,
% Johansen & Aston 2016) below @code{temper_ess} * N, it enters in steps
% L^(phi_s - phi_(s-1)), 0 = phi_0 < @dots{} < phi_K = 1, each exponent
% chosen by bisection so that the step's conditional ESS is the target.
% After every step but the last the ensemble is resampled and, with
% @code{param_move = 'kernel'}, the parameters get a kernel move fitted to
% that step's weights (the other moves act only at their usual times).
% What is exact and what is not: the weights, the resampling and the
% log-evidence (the sum over steps of the log mean incremental weights)
% are those of a sequential Monte Carlo sampler over the tempered
% targets, so with parameters that do not move (no parameters, or
% @code{'fixed'}) the log-evidence estimates the model's evidence as
% without tempering (tested against the Kalman filter). The kernel move
% does not leave the tempered target invariant: it is the same
% artificial parameter dynamics as the kernel move at resampling, applied
% once per step, and the states (which carry the parameters' past) are
% not moved. Tempering therefore keeps the weights from collapsing in
% one cycle but does not make joint state-parameter estimates exact; on
% a GR4J test record it did not remove the kernel move's bias (see NEWS).
% With nothing to move between steps it only resamples more often.
% The ensemble Kalman methods ignore it.
% @item temper_max_steps
% most tempering steps per cycle (a whole number >= 1, default 50); the
% last step takes whatever exponent is left.
% @item param_step
% random-walk standard deviations in the transformed space (default 0.05).
% @item resample
% @code{'systematic'} (default), @code{'stratified'}, @code{'residual'},
% @code{'multinomial'}.
% @item resample_threshold
% resample when ESS < threshold * N (default 0.5).
% @item quantiles
% quantile levels to record (default [0.05 0.5 0.95]).
% @item history
% true to keep the whole ensemble at every cycle (default false).
% @item derived_summary
% true (default) to record the mean and quantiles of every derived
% quantity of @code{operators} at every cycle (@code{res.derived}); false
% calls an operator function only at the cycles whose observations need
% it.
% @item lag
% fixed-lag smoothing over that many cycles (a whole number; default 0:
% off; @code{Inf}: over the whole run). For every cycle s the run also
% records the ensemble given the observations up to cycle s + lag:
% the particle filter carries each member's recent past with it when it
% resamples (the genealogy over the window) and weighs it with the
% current weights; the ensemble Kalman methods update the window with the
% same analysis as the current ensemble (the ensemble Kalman smoother;
% prior inflation acts on the current ensemble only). Memory: lag x
% (n + p) x N doubles, whatever the length of the run. The result gets
% @code{smoothed} (see below).
% @item threads
% OpenMP threads (default: @env{OMP_NUM_THREADS} or all cores).
% @item progress
% @code{'auto'} (default: a progress line on a terminal for runs over
% 2 s), true or false.
% @end table
%
% The result @var{res} has @code{times} (1 x T cycle times; with
% @code{origin} also @code{time_origin}, @code{time_unit} and
% @code{dates}, 1 x T datenums),
% @code{state_names}, @code{param_names}, @code{states.mean} (n x T),
% @code{states.quantiles} (n x nq x T), @code{params.mean},
% @code{params.quantiles}, @code{quantile_levels}, @code{ess},
% @code{resampled}, @code{degenerate} (cycles where no member explained
% the data: the weights were kept, the evidence is -Inf and the ESS 0),
% @code{log_evidence} and its increments @code{log_evidence_steps},
% @code{params.distinct} (p x T: distinct values of each parameter among
% the members at the end of each cycle, after resampling and any move),
% @code{params.spread} (p x T: each parameter's weighted standard
% deviation in its transformed space at the end of each cycle),
% @code{temper_steps} (1 x T: likelihood steps of each cycle, 1 without
% tempering, 0 with no observation), @code{loglik_evals} (1 x T:
% member likelihood evaluations per cycle, N per pass; a pass is redone
% after a tempering step's move only when the observations depend on the
% parameters; resample_move adds N per cycle it re-runs),
% @code{param_move} (the move used), @code{move_sweeps} and
% @code{move_accept} (1 x T: resample_move's sweeps and acceptance rate
% per cycle, NaN where it did not act) for the particle filter,
% @code{nanpredicted} (particle filter: members per cycle with a finite
% state but a NaN predicted observation, from an operator, given zero
% weight; warning @code{sluice:filter:nanprediction}),
% @code{skipped} (missing observations per cycle), @code{nonfinite}
% (members whose state was not finite, given zero weight), @code{final}
% (the last ensemble: @code{X}, @code{P}, @code{w}) and, when asked,
% @code{history} (@code{X} n x N x T, @code{P}, @code{w} N x T,
% @code{ancestors} N x T, 1-based). @code{forecast.mean} (n x T) and
% @code{forecast.params} are the means before each update (the forecast),
% for innovation statistics (@code{sluice.scores}). With
% @code{operators} (and @code{derived_summary} true), @code{derived} has @code{names} (1 x d, linear
% operators first), @code{mean} (d x T) and @code{quantiles} (d x nq x T):
% the derived quantities of the ensemble each cycle ends with, weighted
% as the states (NaN where a member of positive weight gives NaN). With @code{lag},
% @code{smoothed} has @code{method} (@code{'fixed_lag'} for the particle
% filter, @code{'enks'} for the ensemble Kalman methods), @code{lag},
% @code{states.mean}, @code{states.quantiles}, @code{params.mean} and
% @code{params.quantiles}, laid out as the filtered ones.
%
% The run warns (the thresholds are in @code{sluice.kernel.diversity_limits}):
% @code{sluice:filter:paramcollapse} when an estimated parameter ends with
% (nearly) one value, @code{sluice:filter:atbound} when at least half of
% a parameter's final posterior weight lies in the outermost 5% of its
% prior next to a finite bound, @code{sluice:filter:lowess} when the ESS
% stays below 2 for 10 or more consecutive cycles with observations,
% @code{sluice:filter:approxparams} when the default move estimated
% parameters with the kernel move because the paths hold noise (their
% bands are then approximate), besides @code{sluice:filter:degenerate},
% @code{sluice:filter:nonfinite} and @code{sluice:filter:nanprediction}.
% A prior without spread for a parameter whose bounds let it move is an
% error (@code{sluice:filter:nospread}) with the moves @code{'auto'},
% @code{'kernel'}, @code{'resample_move'} and @code{'liu_west'}.
%
% @seealso{sluice.model, sluice.prior, sluice.loglik, sluice.resample}
% @end deftypefn
function res = filter (model, prior, obs, varargin)
  if (nargin < 3)
    sluice.kernel.compat ('usage', mfilename ());
  end
  opts = parse_options (varargin);
  sluice.kernel.check_model (model, 1, 'filter');
  n = numel (model.states);
  p = numel (model.params);
  q = numel (model.forcings);
  N = opts.members;
  if (isempty (opts.seed))
    opts.seed = floor (rand () * 2^32);
  end
  t0 = opts.t0;
  if (isempty (t0))
    t0 = model.t0;
  end

  check_memory (n, p, q, N, obs_field (obs, 'time'), opts);

  % initial ensemble: prior draws by name
  [X0, P0, lower, upper, pdist] = initial_ensemble (model, prior, N, opts.seed);
  check_spread (model, P0, lower, upper, opts);

  % observations and the cycle times
  ops = sluice.kernel.operators (opts.operators, model);
  tab = sluice.kernel.obs_table (obs, [model.states(:); model.params(:); ops.names(:)], ...
                                  t0, 'filter', true);
  times = unique ([tab.time(:); opts.times(:)])';
  if (isempty (times))
    error ('sluice:filter:noobs', 'no observation and no output time to run to');
  end
  if (times(1) < t0)
    error ('sluice:filter:badtimes', 'output time %g lies before the start time %g', ...
           times(1), t0);
  end
  T = numel (times);
  [~, cyc] = ismember (tab.time, times);
  obs_first = [0, cumsum(accumarray (cyc(:), 1, [T 1]))'];

  c = sluice.kernel.model_config (model, opts.forcing, opts.forcing_noise, ...
                                  opts.events, opts.event_noise, 'filter', opts.calendar);
  c.members = N;
  c.t0 = t0;
  c.times = times;
  c.obs_first = obs_first;
  c.obs_var = tab.var - 1;
  c.obs_value = tab.value;
  c.obs_sigma = tab.sigma;
  c.obs_aux = tab.aux;
  c.obs_family = tab.family;
  c.op_H = ops.H;
  c.op_funs = ops.funs;
  c.op_rows = ops.rows;
  c.derived_summary = double (opts.derived_summary && ~isempty (ops.names));
  c.state_noise = expand (opts.state_noise, n, 'state_noise');
  if (all (c.state_noise == 0))
    c.state_noise = [];
  end
  c.lower = lower;
  c.upper = upper;
  c.param_move = opts.param_move;
  c.param_step = expand (opts.param_step, p, 'param_step');
  c.param_step(lower == upper) = 0;
  c.lw_delta = opts.liu_west_delta;
  c.kernel_scale = opts.kernel_scale;
  c.move_diversity = opts.move_diversity;
  c.move_sweeps = opts.move_sweeps;
  c.move_scale = opts.move_scale;
  c.move_paths = opts.move_paths;
  if (strcmp (opts.param_move, 'smc2'))
    c.param_move = 'resample_move';
    c.inner = opts.inner_members;
  end
  c.prior_dist = pdist.id;
  c.prior_a = pdist.a;
  c.prior_b = pdist.b;
  c.prior_lo = pdist.lo;
  c.prior_hi = pdist.hi;
  c.resample = opts.resample;
  c.threshold = opts.resample_threshold;
  c.temper_ess = opts.temper_ess;
  c.temper_max_steps = opts.temper_max_steps;
  c.seed = opts.seed;
  c.threads = opts.threads;
  c.probs = opts.quantiles;
  c.history = double (opts.history);
  c.lag = min (opts.lag, T);
  c.progress = opts.progress;
  c.X0 = X0;
  c.P0 = P0;
  c.method = opts.method;
  c.wenkf = double (opts.wenkf);
  c.inflation = opts.inflation;
  c.rtpp = opts.rtpp;
  c.rtps = opts.rtps;
  c.adaptive_inflation = double (opts.adaptive_inflation);
  c.inflation_max = opts.inflation_max;
  c = add_localization (c, opts, model, tab, obs, ops.names);

  r = sluice.kernel.run_engine (model, c);

  res = struct ();
  res.method = opts.method;
  if (opts.wenkf)
    res.method = 'wenkf';
  end
  res.model = model.name;
  res.members = N;
  res.seed = opts.seed;
  res.t0 = t0;
  res.times = times;
  if (~isempty (opts.calendar))
    % the calendar of the time axis: model times as dates
    res.time_origin = opts.calendar.text;
    res.time_unit = opts.calendar.unit;
    res.dates = opts.calendar.datenum + times * opts.calendar.unit_days;
  end
  res.state_names = model.states;
  if (isfield (model, 'internal') && any (model.internal))
    % states that are the model's own bookkeeping: not drawn by default
    res.internal_states = logical (model.internal(:)');
  end
  res.param_names = model.params;
  res.quantile_levels = opts.quantiles;
  res.states = struct ('mean', r.mean(1:n, :), 'quantiles', r.quantiles(1:n, :, :));
  res.params = struct ('mean', r.mean(n+1:end, :), ...
                       'quantiles', r.quantiles(n+1:end, :, :), ...
                       'distinct', r.distinct, 'spread', r.spread);
  res.forecast = struct ('mean', r.forecast_mean(1:n, :), ...
                         'params', r.forecast_mean(n+1:end, :));
  if (c.derived_summary)
    % the derived quantities of the option operators, summarised as the states
    res.derived = struct ('names', {ops.names(:)'}, 'mean', r.derived_mean, ...
                          'quantiles', r.derived_quantiles);
  end
  res.ess = r.ess;
  res.resampled = logical (r.resampled);
  res.degenerate = logical (r.degenerate);
  res.log_evidence = r.log_evidence;
  res.log_evidence_steps = r.logz;
  res.skipped = r.skipped;
  res.skipped_total = sum (r.skipped);
  res.nonfinite = r.nonfinite;
  res.model_steps = r.steps;
  if (strcmp (opts.method, 'pf'))
    res.temper_steps = r.temper_steps;
    res.loglik_evals = r.loglik_evals;
    res.param_move = r.param_move;
    res.move_sweeps = r.move_sweeps;
    res.move_accept = r.move_accept;
  end
  if (strcmp (res.method, 'pf'))
    res.nanpredicted = r.nanpred;
  end
  if (~strcmp (opts.method, 'pf'))
    res.inflation = r.inflation;
    res.floored = r.floored;
  end
  res.final = struct ('X', r.X, 'P', r.P, 'w', r.w);
  if (opts.lag > 0)
    meth = 'enks';
    if (strcmp (opts.method, 'pf'))
      meth = 'fixed_lag';
    end
    res.smoothed = struct ('method', meth, 'lag', opts.lag, ...
                           'states', struct ('mean', r.smooth_mean(1:n, :), ...
                                             'quantiles', r.smooth_quantiles(1:n, :, :)), ...
                           'params', struct ('mean', r.smooth_mean(n+1:end, :), ...
                                             'quantiles', r.smooth_quantiles(n+1:end, :, :)));
  end
  if (opts.history)
    res.history = struct ('X', r.history_X, 'P', r.history_P, ...
                          'w', r.history_w, 'ancestors', r.history_ancestors);
  end
  res.options = opts;
  if (any (res.degenerate))
    k = find (res.degenerate, 1);
    warning ('sluice:filter:degenerate', ...
             ['no member could explain the observations at %d cycle(s), ', ...
              'first at t = %g: the weights were kept there and the log-evidence is -Inf'], ...
             sum (res.degenerate), times(k));
  end
  if (any (res.nonfinite > 0))
    k = find (res.nonfinite > 0, 1);
    warning ('sluice:filter:nonfinite', ...
             ['%d member(s) reached a non-finite state (first at t = %g); ', ...
              'they were given zero weight'], max (res.nonfinite), times(k));
  end
  if (isfield (res, 'nanpredicted') && any (res.nanpredicted > 0))
    k = find (res.nanpredicted > 0, 1);
    warning ('sluice:filter:nanprediction', ...
             ['%d member(s) with a finite state got a NaN predicted observation ', ...
              '(an operator''s value) at %d cycle(s), first at t = %g; they were ', ...
              'given zero weight: check the operator for states outside its domain'], ...
             max (res.nanpredicted), sum (res.nanpredicted > 0), times(k));
  end
  % the general caveat first, the specific diagnostics after it
  % the default move on noisy paths is the kernel move, whose parameter
  % bands are approximate: say so once, with the way to exact ones
  est = lower < upper & any (P0 ~= P0(:, 1), 2);
  if (strcmp (opts.param_move, 'auto') && isfield (res, 'param_move') && ...
      strcmp (res.param_move, 'kernel') && any (est) && ~isempty (cyc))
    warning ('sluice:filter:approxparams', ...
             ['the paths hold noise (forcing, state or model noise), so the default ', ...
              'kernel move estimated the parameters (%s): their bands are approximate ', ...
              '(too narrow, or off, on long precise records). For better bands use ', ...
              'param_move ''resample_move'' (slower), for exact ones ''smc2'' (slowest), ', ...
              'or check against sluice.pmmh'], ...
             strjoin (res.param_names(est), ', '));
  end
  warn_diversity (res, P0, lower, upper, tab, cyc);
end

function check_spread (model, P0, lower, upper, opts)
  % an estimated parameter (its bounds let it move) whose prior gives
  % every member the same value cannot be moved by a move that takes its
  % size from the ensemble's spread
  if (~any (strcmp (opts.param_move, {'auto', 'kernel', 'liu_west', 'resample_move'})) || ...
      (~strcmp (opts.param_move, 'liu_west') && ~strcmp (opts.method, 'pf')))
    return;
  end
  for i = 1:size (P0, 1)
    if (lower(i) < upper(i) && all (P0(i, :) == P0(i, 1)))
      error ('sluice:filter:nospread', ...
             ['parameter ''%s'' may move within [%g, %g] but its prior gives every member ', ...
              'the value %g: the %s move takes its size from the ensemble''s spread and ', ...
              'would never move it; give it a prior with spread, bounds [%g %g] to keep it ', ...
              'fixed, or param_move ''random_walk'''], model.params{i}, lower(i), upper(i), ...
             P0(i, 1), opts.param_move, P0(i, 1), P0(i, 1));
    end
  end
end

function warn_diversity (res, P0, lower, upper, tab, cyc)
  % warnings about the parameter ensemble and the weights; thresholds in
  % sluice.kernel.diversity_limits
  L = sluice.kernel.diversity_limits ();
  N = res.members;
  names = res.param_names;
  for i = 1:size (P0, 1)
    if (~(lower(i) < upper(i)) || all (P0(i, :) == P0(i, 1)) || isempty (res.params.distinct))
      continue;   % not estimated
    end
    dv = res.params.distinct(i, end);
    sp = res.params.spread(i, :);
    if (dv < max (L.collapse_min, L.collapse_fraction * N) || ...
        sp(end) < L.collapse_spread * max (sp))
      warning ('sluice:filter:paramcollapse', ...
               ['parameter ''%s'' has collapsed: %d distinct value(s) among %d members at the ', ...
                'end (spread %.3g of its largest); its band is too narrow to trust. ', ...
                'Use param_move ''auto'' (the default), ''kernel'' or ''resample_move'', or more members'], ...
               names{i}, dv, N, sp(end) / max (max (sp), realmin));
    end
    w = res.final.w(:)';
    x = res.final.P(i, :);
    pq = sort (P0(i, :));
    bounds = [lower(i), upper(i)];
    tails = [pq(max (1, floor (L.bound_tail * N))), pq(min (N, ceil ((1 - L.bound_tail) * N)))];
    mass = [sum(w(x <= tails(1))), sum(w(x >= tails(2)))];
    side = {'lower', 'upper'};
    for b = 1:2
      if (isfinite (bounds(b)) && mass(b) >= L.bound_mass)
        warning ('sluice:filter:atbound', ...
                 ['parameter ''%s'': %.0f%% of the posterior weight lies in the prior''s ', ...
                  'outermost %g%% next to its %s bound %g; the prior may be cutting off ', ...
                  'the values the data support'], names{i}, 100 * mass(b), ...
                 100 * L.bound_tail, side{b}, bounds(b));
      end
    end
  end
  if (any (strcmp (res.method, {'pf', 'wenkf'})) && ~isempty (cyc))
    hasobs = false (1, numel (res.times));
    hasobs(unique (cyc(~isnan (tab.value)))) = true;
    low = (res.ess < L.lowess_ess) & hasobs;
    run = 0;
    longest = 0;
    for k = 1:numel (low)
      if (low(k))
        run = run + 1;
        longest = max (longest, run);
      elseif (hasobs(k))
        run = 0;
      end
    end
    if (longest >= L.lowess_cycles)
      warning ('sluice:filter:lowess', ...
               ['the ESS stayed below %g for %d consecutive cycles with observations ', ...
                '(%d cycles in all): one member carried the weight; the likelihood is ', ...
                'sharp for %d members (more members, or check the observation errors)'], ...
               L.lowess_ess, longest, sum (low), N);
    end
  end
end

function opts = parse_options (args)
  opts = struct ('method', 'pf', 'members', 1000, 'seed', [], 't0', [], ...
                 'times', zeros (1, 0), 'forcing', [], 'forcing_noise', [], ...
                 'events', [], 'event_noise', [], ...
                 'state_noise', 0, 'param_move', 'auto', 'param_step', 0.05, ...
                 'kernel_scale', 1, 'temper_ess', 0, 'temper_max_steps', 50, ...
                 'move_diversity', 0.5, 'move_sweeps', 10, 'move_scale', 1, 'move_paths', 0.1, ...
                 'inner_members', 100, ...
                 'liu_west_delta', 0.98, 'resample', 'systematic', ...
                 'resample_threshold', 0.5, 'quantiles', [0.05 0.5 0.95], ...
                 'history', false, 'threads', 0, 'progress', 'auto', ...
                 'inflation', 1, 'rtpp', 0, 'rtps', 0, 'adaptive_inflation', false, ...
                 'inflation_max', 2, 'localization', [], 'operators', [], 'lag', 0, ...
                 'origin', [], 'time_unit', 'days', 'derived_summary', true);
  opts = sluice.kernel.name_value (opts, args, 'filter');
  opts.calendar = [];
  if (~(isempty (opts.origin) && isnumeric (opts.origin)))
    opts.calendar = sluice.kernel.time_origin (opts.origin, opts.time_unit, 'filter');
  else
    sluice.kernel.time_unit (opts.time_unit, 'filter', 'time_unit');
  end
  core = core_lists ();
  methods = core.analyses;
  if (~ischar (opts.method) || ~any (strcmp (opts.method, methods)))
    error ('sluice:filter:badmethod', 'unknown method; the methods are %s', ...
           strjoin (methods, ', '));
  end
  % the weighted ensemble Kalman filter is a particle filter with another
  % proposal: the particle filter's path with a flag
  opts.wenkf = strcmp (opts.method, 'wenkf');
  if (opts.wenkf)
    opts.method = 'pf';
  end
  opts.inflation = real_scalar (opts.inflation, 'inflation');
  if (opts.inflation < 1)
    error ('sluice:filter:badoption', 'inflation must be >= 1');
  end
  for f = {'rtpp', 'rtps'}
    v = real_scalar (opts.(f{1}), f{1});
    if (v < 0 || v > 1)
      error ('sluice:filter:badoption', '%s must lie in [0, 1]', f{1});
    end
  end
  opts.inflation_max = real_scalar (opts.inflation_max, 'inflation_max');
  if (opts.inflation_max < 1)
    error ('sluice:filter:badoption', 'inflation_max must be >= 1');
  end
  if (~(islogical (opts.adaptive_inflation) || isnumeric (opts.adaptive_inflation)) || ...
      ~isscalar (opts.adaptive_inflation))
    error ('sluice:filter:badoption', 'adaptive_inflation must be true or false');
  end
  opts.adaptive_inflation = logical (opts.adaptive_inflation);

  opts.members = whole (opts.members, 'members', 1, 2^31);
  if (~isempty (opts.seed))
    opts.seed = whole (opts.seed, 'seed', 0, 2^53);
  end
  if (~isempty (opts.t0))
    opts.t0 = real_scalar (opts.t0, 't0');
  end
  opts.times = real_vector (opts.times, 'times', true);
  opts.state_noise = real_vector (opts.state_noise, 'state_noise', false);
  if (any (opts.state_noise < 0))
    error ('sluice:filter:badoption', 'state_noise must be >= 0');
  end
  moves = [{'auto'}, core.moves, {'smc2'}];
  if (~ischar (opts.param_move) || ~any (strcmp (opts.param_move, moves)))
    error ('sluice:filter:badoption', 'param_move must be one of ''%s''', ...
           strjoin (moves, ''', '''));
  end
  ks = real_scalar (opts.kernel_scale, 'kernel_scale');
  if (~(ks > 0))
    error ('sluice:filter:badoption', ...
           'kernel_scale (a factor on the kernel bandwidth) must be > 0, got %g', ks);
  end
  te = opts.temper_ess;
  if (ischar (te) && strcmp (te, 'off'))
    opts.temper_ess = 0;
  else
    te = real_scalar (te, 'temper_ess');
    if (~(te >= 0 && te <= 1))
      error ('sluice:filter:badoption', ...
             'temper_ess (a fraction of the members) must lie in (0, 1], or 0 or ''off'', got %g', te);
    end
    opts.temper_ess = te;
  end
  opts.temper_max_steps = whole (opts.temper_max_steps, 'temper_max_steps', 1, 10000);
  md = real_scalar (opts.move_diversity, 'move_diversity');
  if (~(md > 0 && md <= 1))
    error ('sluice:filter:badoption', ...
           'move_diversity (a fraction of the members) must lie in (0, 1], got %g', md);
  end
  opts.move_sweeps = whole (opts.move_sweeps, 'move_sweeps', 1, 1000);
  mp = real_scalar (opts.move_paths, 'move_paths');
  if (~(mp >= 0 && mp <= 1))
    error ('sluice:filter:badoption', ...
           'move_paths (the starting step of the path moves) must lie in [0, 1] (0: off), got %g', mp);
  end
  opts.inner_members = whole (opts.inner_members, 'inner_members', 1, 2^31);
  if (strcmp (opts.param_move, 'smc2'))
    if (~strcmp (opts.method, 'pf'))
      error ('sluice:filter:badoption', 'param_move ''smc2'' is a particle method: use method ''pf''');
    end
    % members counts the parameter vectors; each runs inner_members states
    if (opts.members * opts.inner_members > 2^31)
      error ('sluice:filter:badoption', ...
             'members x inner_members must be at most 2^31, got %d x %d', ...
             opts.members, opts.inner_members);
    end
    opts.members = opts.members * opts.inner_members;
  end
  ms = real_scalar (opts.move_scale, 'move_scale');
  if (~(ms > 0) || ~isfinite (ms))
    error ('sluice:filter:badoption', ...
           'move_scale (a factor on the proposal step) must be finite and > 0, got %g', ms);
  end
  opts.param_step = real_vector (opts.param_step, 'param_step', false);
  if (any (opts.param_step < 0))
    error ('sluice:filter:badoption', 'param_step must be >= 0');
  end
  d = real_scalar (opts.liu_west_delta, 'liu_west_delta');
  if (~(d > 0 && d <= 1))
    error ('sluice:filter:badoption', 'liu_west_delta must lie in (0, 1]');
  end
  if (~ischar (opts.resample) || ...
      ~any (strcmp (opts.resample, core.resamplers)))
    error ('sluice:filter:badscheme', ...
           'resample must be ''systematic'', ''stratified'', ''residual'' or ''multinomial''');
  end
  th = real_scalar (opts.resample_threshold, 'resample_threshold');
  if (~(th >= 0 && th <= 1))
    error ('sluice:filter:badoption', 'resample_threshold must lie in [0, 1]');
  end
  opts.quantiles = real_vector (opts.quantiles, 'quantiles', true);
  if (any (opts.quantiles < 0 | opts.quantiles > 1))
    error ('sluice:filter:badoption', 'quantile levels must lie in [0, 1]');
  end
  opts.quantiles = opts.quantiles(:)';
  if (~(islogical (opts.history) || isnumeric (opts.history)) || ~isscalar (opts.history))
    error ('sluice:filter:badoption', 'history must be true or false');
  end
  opts.history = logical (opts.history);
  if (~(islogical (opts.derived_summary) || isnumeric (opts.derived_summary)) || ...
      ~isscalar (opts.derived_summary) || isnan (opts.derived_summary))
    error ('sluice:filter:badoption', 'derived_summary must be true or false');
  end
  opts.derived_summary = logical (opts.derived_summary);
  lag = opts.lag;
  if (~isa (lag, 'double') || ~isreal (lag) || ~isscalar (lag) || isnan (lag) || ...
      lag < 0 || (isfinite (lag) && lag ~= fix (lag)))
    error ('sluice:filter:badoption', 'lag must be a whole number of cycles >= 0, or Inf');
  end
  opts.threads = whole (opts.threads, 'threads', 0, 256);
  pr = opts.progress;
  if (ischar (pr) && strcmp (pr, 'auto'))
    opts.progress = 2;
  elseif ((islogical (pr) || isnumeric (pr)) && isscalar (pr))
    opts.progress = double (logical (pr));
  else
    error ('sluice:filter:badoption', 'progress must be ''auto'', true or false');
  end
end

function v = whole (v, what, lo, hi)
  if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v) || ...
      v ~= fix (v) || v < lo || v > hi)
    error ('sluice:filter:badoption', '%s must be a whole number from %g to %g', ...
           what, lo, hi);
  end
  v = double (v);
end

function v = real_scalar (v, what)
  if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v))
    error ('sluice:filter:badoption', '%s must be a finite real scalar', what);
  end
  v = double (v);
end

function v = real_vector (v, what, allow_empty)
  if (~isa (v, 'double') || ~isreal (v) || issparse (v) || ...
      (~allow_empty && isempty (v)) || (~isempty (v) && ~isvector (v)) || ...
      any (~isfinite (v(:))))
    error ('sluice:filter:badoption', '%s must be a finite real vector', what);
  end
  v = double (v(:));
end

function v = expand (v, n, what)
  if (n == 0)
    v = zeros (0, 1);
  elseif (isscalar (v))
    v = repmat (v, n, 1);
  elseif (numel (v) ~= n)
    error ('sluice:filter:badoption', '%s needs 1 or %d values, got %d', what, n, numel (v));
  end
end

function c = add_localization (c, opts, model, tab, obs, derived)
  % positions of states and observations for the ensemble Kalman methods
  c.geometry = '';
  c.period_or_radius = 0;
  c.state_pos = [];
  c.obs_pos = [];
  c.obs_c = [];
  c.param_factor = 1;
  L = opts.localization;
  if (isempty (L))
    if (strcmp (opts.method, 'letkf'))
      error ('sluice:filter:badlocalization', ...
             'the LETKF needs opts.localization (geometry, positions, radius)');
    end
    return;
  end
  if (strcmp (opts.method, 'pf'))
    error ('sluice:filter:badoption', 'localization applies to the ensemble Kalman methods');
  end
  if (~isstruct (L) || ~isscalar (L) || ~isfield (L, 'radius'))
    error ('sluice:filter:badlocalization', ...
           'localization must be a struct with fields geometry, radius and positions');
  end
  geom = 'line';
  if (isfield (L, 'geometry'))
    geom = L.geometry;
  end
  core = core_lists ();
  if (~ischar (geom) || ~any (strcmp (geom, core.geometries)))
    error ('sluice:filter:badlocalization', ...
           'localization.geometry must be %s', quoted_list (core.geometries));
  end
  dim = core.geometry_dims(strcmp (geom, core.geometries));
  n = numel (model.states);
  p = numel (model.params);
  if (isfield (L, 'positions'))
    pos = L.positions;
  elseif (dim == 1)
    pos = (1:n)';
  else
    error ('sluice:filter:badlocalization', 'localization.positions (n x 2) are needed in 2-D');
  end
  if (~isa (pos, 'double') || ~isreal (pos) || ~isequal (size (pos), [n dim]) || ...
      any (~isfinite (pos(:))))
    error ('sluice:filter:badlocalization', ...
           'localization.positions must be %d x %d finite real doubles (one row per state)', n, dim);
  end
  c.geometry = geom;
  if (strcmp (geom, 'ring'))
    if (~isfield (L, 'period'))
      error ('sluice:filter:badlocalization', 'a ring needs localization.period');
    end
    c.period_or_radius = real_scalar (L.period, 'localization.period');
  elseif (strcmp (geom, 'sphere'))
    c.period_or_radius = 6371;
    if (isfield (L, 'sphere_radius'))
      c.period_or_radius = real_scalar (L.sphere_radius, 'localization.sphere_radius');
    end
  end
  if (c.period_or_radius < 0 || (any (strcmp (geom, {'ring', 'sphere'})) && c.period_or_radius == 0))
    error ('sluice:filter:badlocalization', 'the period or sphere radius must be > 0');
  end
  % parameters are not localised: they see every observation, damped by
  % param_factor
  c.state_pos = [pos; nan(p, dim)];
  if (isfield (L, 'param_factor'))
    c.param_factor = real_scalar (L.param_factor, 'localization.param_factor');
    if (c.param_factor <= 0 || c.param_factor > 1)
      error ('sluice:filter:badlocalization', 'localization.param_factor must lie in (0, 1]');
    end
  end
  m = numel (tab.time);
  opos = nan (m, dim);
  obs_state = tab.var <= n;
  opos(obs_state, :) = pos(tab.var(obs_state), :);
  cols = {'x', 'y'};
  for d = 1:dim
    if (isfield (obs, cols{d}))
      v = obs.(cols{d});
      if (~isa (v, 'double') || ~isreal (v) || numel (v) ~= m || any (isinf (v(:))))
        error ('sluice:filter:badobs', ...
               'observation column ''%s'' must give one finite position per row (NaN: the observed state''s)', ...
               cols{d});
      end
      given = ~isnan (v(:));
      opos(given, d) = v(given);
    end
  end
  bad = find (any (isnan (opos), 2), 1);
  if (~isempty (bad))
    error ('sluice:filter:badobs', ...
           'observation row %d has no position (give column x%s for observations of parameters or derived quantities)', ...
           bad, repmat (' and y', 1, dim == 2));
  end
  r = L.radius;
  if (isstruct (r))
    names = [model.states(:); model.params(:); derived(:)];
    oc = nan (m, 1);
    f = fieldnames (r);
    for k = 1:numel (f)
      v = r.(f{k});
      if (~any (strcmp (f{k}, names)))
        error ('sluice:filter:badlocalization', ...
               'localization.radius.%s: the model has no state, parameter or derived quantity of that name', f{k});
      end
      if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v) || v <= 0)
        error ('sluice:filter:badlocalization', ...
               'localization.radius.%s must be one finite real number > 0', f{k});
      end
      oc(strcmp (names(tab.var), f{k})) = v;
    end
    bad = find (isnan (oc), 1);
    if (~isempty (bad))
      error ('sluice:filter:badlocalization', ...
             'observation row %d (%s): no localisation radius for this variable', bad, names{tab.var(bad)});
    end
  else
    oc = repmat (real_scalar (r, 'localization.radius'), m, 1);
  end
  if (any (~(oc > 0)))
    error ('sluice:filter:badlocalization', 'localisation radii must be > 0');
  end
  c.obs_pos = opos;
  c.obs_c = oc;
end

function v = obs_field (obs, name)
  v = [];
  if (isstruct (obs) && isscalar (obs) && isfield (obs, name))
    v = obs.(name);
  end
end

function check_memory (n, p, q, N, obs_time, opts)
  % refuse a run that cannot fit before anything large is allocated
  m = numel (obs_time);
  T = m + numel (opts.times);
  need = 8 * N * (3 * n + 5 * p + 3 * q + min (m, 1e4) + 8);
  if (opts.history)
    need = need + 8 * N * T * (n + p + 2);
  end
  nwin = 0;
  if (opts.lag > 0)
    % the window, and for the ensemble Kalman methods its augmented copy
    nwin = min (opts.lag, T);
    need = need + 8 * N * (n + p) * (nwin + 2) * (1 + ~strcmp (opts.method, 'pf'));
  end
  if (~strcmp (opts.method, 'pf') && N >= 2 && m > 0)
    % the analysis workspace as the core asks for it (N x N matrices for
    % the LETKF, and for the ETKF only with as many observations in one
    % cycle as members), for the most rows of one time; it never shrinks
    % as the rows grow, so all m rows at once bound it cheaply first
    rows = (n + p) * (nwin + 1);
    work = sluice.kernel.enkf ('workspace', opts.method, rows, N, m, opts.threads);
    if (need + work >= 2^30)
      try
        [~, ~, k] = unique (obs_time(:));
        work = sluice.kernel.enkf ('workspace', opts.method, rows, N, ...
                                   max (accumarray (k(:), 1)), opts.threads);
      catch
        % a malformed table: the table check reports it later
      end
    end
    need = need + work;
  end
  if (need < 2^30)
    return;   % small runs: not worth the 3 ms memory () costs per call
  end
  sluice.kernel.ensure_memory (need, 'filter', sprintf ('a run of %d members', N));
end

function [X0, P0, lower, upper, pdist] = initial_ensemble (model, prior, N, seed)
  n = numel (model.states);
  p = numel (model.params);
  % the parameters' priors as the core weighs them (id -1: no prior, the
  % default holds)
  pdist = struct ('id', -ones (p, 1), 'a', zeros (p, 1), 'b', zeros (p, 1), ...
                  'lo', zeros (p, 1), 'hi', zeros (p, 1));
  try
    X0 = repmat (model.x0(:), 1, N);
    P0 = repmat (model.defaults(:), 1, N);
  catch err
    error ('sluice:filter:nomemory', 'cannot hold %d members of %d states: %s', ...
           N, n, err.message);
  end
  lower = model.defaults(:);
  upper = model.defaults(:);
  if (isempty (prior))
    prior_names = {};
  else
    sluice.kernel.check_prior (prior, 2, 'filter');
    prior_names = {prior.name};
  end
  for k = 1:numel (prior_names)
    if (~any (strcmp (prior_names{k}, [model.states(:); model.params(:)])))
      error ('sluice:filter:badprior', ...
             'the prior names ''%s'', which is neither a state nor a parameter of the model', ...
             prior_names{k});
    end
  end
  if (~isempty (prior_names))
    D = sluice.draw (prior, N, seed);
    for k = 1:numel (prior_names)
      is = find (strcmp (prior_names{k}, model.states));
      ip = find (strcmp (prior_names{k}, model.params));
      if (~isempty (is))
        X0(is, :) = D(k, :);
      else
        P0(ip, :) = D(k, :);
        lower(ip) = prior(k).lower;
        upper(ip) = prior(k).upper;
        pdist = prior_entry (pdist, ip, prior(k));
        if (lower(ip) < model.lower(ip) || upper(ip) > model.upper(ip))
          error ('sluice:filter:badprior', ...
                 ['the prior of ''%s'' allows [%g, %g], outside the parameter''s bounds ', ...
                  '[%g, %g]: choose a prior within them (lognormal, truncnormal, uniform)'], ...
                 prior_names{k}, lower(ip), upper(ip), model.lower(ip), model.upper(ip));
        end
      end
    end
  end
  missing = find (isnan (P0(:, 1)));
  if (~isempty (missing))
    error ('sluice:filter:badprior', ...
           'parameter ''%s'' has neither a prior nor a default value', ...
           model.params{missing(1)});
  end
end



function s = quoted_list (names)
  % 'a', 'b' or 'c'
  q = strcat ({''''}, names, {''''});
  if (numel (q) > 1)
    s = [strjoin(q(1:end-1), ', '), ' or ', q{end}];
  else
    s = q{1};
  end
end

function c = core_lists ()
  % the names the core knows (sluice.kernel.core_names), asked once
  persistent lists
  if (isempty (lists))
    lists = sluice.kernel.core_names ();
  end
  c = lists;
end

function pdist = prior_entry (pdist, ip, pr)
  % distribution ids as sluice.kernel.draw numbers them: the core's
  core = core_lists ();
  a = pr.args;
  pdist.id(ip) = find (strcmp (pr.dist, core.distributions)) - 1;
  pdist.a(ip) = a(1);
  if (numel (a) >= 2)
    pdist.b(ip) = a(2);
  end
  if (numel (a) >= 4)
    pdist.lo(ip) = a(3);
    pdist.hi(ip) = a(4);
  end
end

%!shared m, pr, obs, y, km, kq, kll
%! % a scalar linear-Gaussian river level: x_t = 0.9 x_(t-1) + N(0, 0.1),
%! % x_0 ~ N(0, 1), observed with sd 0.4 at t = 1..8
%! m = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'level'});
%! pr = sluice.prior ('level', 'normal', [0 1]);
%! y = [0.5; 0.9; 0.4; -0.3; 0.2; 0.8; 1.1; 0.6];
%! obs = struct ('time', (1:8)', 'variable', {repmat({'level'}, 8, 1)}, ...
%!               'value', y, 'sigma', 0.4 * ones (8, 1));
%! % reference: the exact Kalman filter (Kalman 1960) written out for this
%! % model; the evidence is the product of the innovation densities
%! % N(y_t; m_f, P_f + R) (the prediction error decomposition, Harvey 1989)
%! mk = 0; P = 1; R = 0.16; kll = 0; km = zeros (1, 8); kq = zeros (3, 8);
%! z = sqrt (2) * erfinv (2 * [0.05; 0.5; 0.95] - 1);   % standard normal quantiles
%! for t = 1:8
%!   mk = 0.9 * mk; P = 0.81 * P + 0.1; S = P + R;
%!   kll = kll - 0.5 * log (2 * pi * S) - 0.5 * (y(t) - mk)^2 / S;
%!   K = P / S; mk = mk + K * (y(t) - mk); P = (1 - K) * P;
%!   km(t) = mk; kq(:, t) = mk + z * sqrt (P);
%! end

%!test
%! % the particle filter's mean, quantiles and log-evidence against the
%! % exact Kalman filter; 20000 members leave a Monte Carlo error of about
%! % 0.005 on the means (tolerances: a few times that, common practice)
%! r = sluice.filter (m, pr, obs, 'members', 20000, 'seed', 3, 't0', 0, 'progress', false);
%! assert (r.times, 1:8);
%! assert (r.states.mean, km, 0.02);
%! assert (reshape (r.states.quantiles(1, :, :), 3, 8), kq, 0.04);
%! assert (r.log_evidence, kll, 0.05);
%! assert (r.members, 20000);
%! assert (sum (r.skipped), 0);

%!test
%! % same seed, same result; a missing value is skipped and counted
%! o = obs;
%! o.value(3) = NaN;
%! a = sluice.filter (m, pr, o, 'members', 500, 'seed', 9, 't0', 0, 'progress', false);
%! b = sluice.filter (m, pr, o, 'members', 500, 'seed', 9, 't0', 0, 'progress', false);
%! assert (a.states.mean, b.states.mean);
%! assert (sum (a.skipped), 1);

%!error <Invalid call> sluice.filter ()
%!error id=sluice:filter:noobs sluice.filter (m, pr, struct ('time', zeros (0, 1), 'variable', {cell(0, 1)}, 'value', zeros (0, 1), 'sigma', zeros (0, 1)))
%!error id=sluice:filter:badoption sluice.filter (m, pr, obs, 'members', -3)
%!error id=sluice:filter:badoption sluice.filter (m, pr, obs, 'no_such_option', 1)
%!error id=sluice:filter:badmethod sluice.filter (m, pr, obs, 'method', 'nope')
%!error <row 2: unknown variable 'flow'> o = obs; o.variable{2} = 'flow'; sluice.filter (m, pr, o)
%!error id=sluice:filter:badobs o = obs; o.sigma(4) = 0; sluice.filter (m, pr, o)
%!error <smallest normal double> o = obs; o.sigma(4) = 1e-320; sluice.filter (m, pr, o)

%!demo
%! % Lowmarsh, an invented town on the invented river Vell: twenty years of
%! % annual peak levels (m) at the town gauge, two years unread. Is the
%! % peak level drifting? A level-and-trend model, filtered year by year.
%! years = (1:20)';
%! value = [3.02 3.21 2.95 NaN 3.18 3.31 3.07 3.12 3.40 3.22 NaN 3.35 ...
%!          3.28 3.51 3.30 3.46 3.58 3.37 3.55 3.62]';   % invented record
%! obs = struct ('time', years, 'variable', {repmat({'level'}, 20, 1)}, ...
%!               'value', value, 'sigma', 0.1 * ones (20, 1));
%! trend = sluice.model ('linear', 'A', [1 1; 0 1], 'Q', diag ([0.08^2 0.002^2]), ...
%!                       'states', {'level', 'trend'});
%! prior = sluice.prior ('level', 'normal', [3 0.5], 'trend', 'normal', [0 0.03]);
%! r = sluice.filter (trend, prior, obs, 'members', 5000, 'seed', 7, 't0', 0, ...
%!                    'progress', false);
%! q = r.states.quantiles(2, :, end);
%! fprintf ('Vell at Lowmarsh, year 20: peak level %.2f m, trend %.3f m/year\n', ...
%!          r.states.mean(1, end), r.states.mean(2, end));
%! fprintf ('  90%% interval of the trend: %.3f to %.3f m/year\n', q(1), q(3));
%! fprintf ('  %d unread years skipped; log-evidence %.2f\n', sum (r.skipped), r.log_evidence);
%! fprintf ('  (an input to a flood-risk study of an invented town, not a flood warning)\n');
%! L = reshape (r.states.quantiles(1, :, :), 3, []);
%! figure ();
%! plot (r.times, L(2, :), 'b-', r.times, L(1, :), 'b:', r.times, L(3, :), 'b:', ...
%!       years, value, 'k.');
%! xlabel ('year');
%! ylabel ('annual peak level (m)');
%! title ('Vell at Lowmarsh: filtered median and 90% band; dots: readings');
