% -*- texinfo -*-
% @deftypefn  {} {@var{res} =} sluice.filter (@var{model}, @var{prior}, @var{obs})
% @deftypefnx {} {@var{res} =} sluice.filter (@var{model}, @var{prior}, @var{obs}, @var{opts})
% @deftypefnx {} {@var{res} =} sluice.filter (@dots{}, @var{name}, @var{value}, @dots{})
% @deftypefnx {} {@var{run} =} sluice.filter (@dots{}, 'prepare', true)
% @deftypefnx {} {@var{res} =} sluice.filter (@var{run}, @var{name}, @var{value}, @dots{})
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
% need it, and for the summary in @code{res.derived} unless
% @code{derived_summary} is false: the particle filter's summary reuses
% the values of the cycle's weighting when it has them, so it calls it
% once a cycle; the Kalman methods and tempering, which change the members
% after that call, call it once more). Rows of the observation table
% then name them like states. For
% the ensemble Kalman methods with localisation, observations of derived
% quantities need the position columns @code{x} (and @code{y}).
% @item coupling
% how the components of a coupled model (@code{sluice.model}'s option
% @code{'components'}; @code{'river_town'} has @code{river} and
% @code{town}) share the observations. @code{'strong'} (default): every
% observation updates the whole state, as for a model without
% components: the particle filter weighs whole members (new weights
% proportional to @math{w_j p(y | x_j)}), and the ensemble Kalman
% methods use the full ensemble covariances, @math{K = P H' (H P H' + R)^@{-1@}},
% cross-component blocks included. @code{'weak'}: each component c (its
% states and parameters x_c) is analysed by its own observations y_c
% only. The ensemble Kalman methods run one analysis per component with
% y_c, kept on x_c: the gain
% @math{K_c = P_@{cc@} H_c' (H_c P_@{cc@} H_c' + R_c)^@{-1@}} on x_c and
% zero between components (the stochastic EnKF's perturbations are drawn
% apart for each component; adaptive inflation is refused, a fixed
% inflation acts on a component at the cycles it has observations; a
% cycle costs one analysis per component with observations). The
% particle filter weighs each component by its own likelihood,
% @math{w_@{c,j@}} proportional to @math{p(y_c | x_@{c,j@})}, and resamples its block
% with those weights, independently of the other blocks, at every cycle
% where it has observations; the members are the recombined blocks,
% equally weighted (so after an analysis the components are independent
% in the ensemble; the model couples them again in the forecast). The
% weak particle filter moves parameters by @code{'random_walk'} (the
% default then) or not at all, and runs without
% @code{temper_ess}, @code{'smc2'} or forcing noise with an AR(1)
% coefficient; the weighted ensemble Kalman filter runs strongly coupled
% only (@code{sluice:filter:badcoupling}). An observation of a state or
% a parameter belongs to its component, a linear operator row to the one
% component its non-zero columns lie in; for a function operator, or a
% row over several components, name the component in
% @code{obs_components} (@code{sluice:filter:obscomponent} otherwise). A
% model without components runs strongly coupled only
% (@code{sluice:filter:nocomponents}). A weak run's result gets
% @code{coupling} (@code{mode}, @code{components}; for the particle
% filter each component's @code{ess}, n_comp x T, NaN where it had no
% observation, @code{log_evidence_steps} and their sums
% @code{log_evidence}); its @code{ess} is then the smallest component ESS
% of each cycle, @code{resampled} marks the cycles where a component was
% resampled (@code{history.ancestors} does not follow the components'
% resampling) and @code{log_evidence} is the sum of the components': the
% evidence of the weakly coupled approximation (each component's
% observations explained by that component alone), not of the coupled
% model. With @code{lag} the weak particle filter smooths each component
% along its own ancestry: a component's rows of the window move with that
% component's resampling only; @code{lag} may then be one number per
% component (in the order of the model's @code{components}), component
% c's rows of time s given the observations up to s + lag(c) (a long lag
% for a sparsely observed component, a short one for a component
% resampled every cycle, whose paths coalesce); the window is the
% longest lag's. @code{coupling.smoothed_distinct} (n_comp x T) counts
% each component's distinct ancestors, @code{smoothed.distinct} is the
% fewest of them, and @code{sluice:filter:smoothcollapse} names the
% components that coalesced. The ensemble Kalman smoother, weak, updates
% each component's rows of the window by its own observations (one lag
% for all).
% @item obs_components
% a struct naming the component of an observed quantity (field: the
% observed name, value: the component's name), for weak coupling; it
% overrides the component an observation would get.
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
% @item summarize
% which states get means and quantiles (filtered, forecast and smoothed):
% @code{'visible'} (default) the states the model does not flag as
% internal (@code{internal} of its spec, e.g. GR4J's unit-hydrograph
% slots), @code{'all'} every state, or a cell of state names: the visible
% states and those named (a parameter's name is accepted; the parameters
% are always summarised). A state not summarised is still forecast,
% observed, resampled and kept in @code{final} and @code{history}; its
% rows of @code{states.mean}, @code{states.quantiles},
% @code{forecast.mean} and @code{smoothed.states} are NaN (the arrays
% keep their sizes) and @code{res.summarized_states} (1 x n logical) says
% which were summarised (the field is there only when some state was
% not). The summarised rows are bit for bit those of @code{'all'}. A
% name that is no state or parameter of the model is an error
% (@code{sluice:filter:unknownstate}).
% @item lag
% fixed-lag smoothing over that many cycles (a whole number; default 0:
% off; @code{Inf}: over the whole run; with @code{coupling} @code{'weak'}
% and the particle filter also one per component, above). For every cycle s the run also
% records the ensemble given the observations up to cycle s + lag:
% the particle filter carries each member's recent past with it when it
% resamples (the genealogy over the window) and weighs it with the
% current weights; the ensemble Kalman methods update the window with the
% same analysis as the current ensemble (the ensemble Kalman smoother;
% prior inflation acts on the current ensemble only). Memory: lag x
% (n + p) x N doubles (and N indices per cycle of the window), whatever
% the length of the run. The result gets @code{smoothed} (see below).
% Every resampling in the window thins the particle filter's paths: over
% a long lag of frequent resamplings they coalesce onto a few members
% of the time smoothed, and the smoothed bands come out too narrow;
% @code{smoothed.distinct} counts them and the run warns
% (@code{sluice:filter:smoothcollapse}, below).
% @item threads
% OpenMP threads. Default: up to @env{OMP_NUM_THREADS} or all cores,
% the run timing its cycles and running those on one thread where more
% would be slower (short cycles, or no core free on a busy machine). A
% number given is used as it is, for every cycle. The result is the
% same, bit for bit, for any number of threads.
% @item checkpoint, checkpoint_every
% A file name (default @code{''}: none) and a number of cycles [100]:
% after every @code{checkpoint_every} cycles, and after the last, the
% run writes its whole state and the outputs so far to that file (to a
% temporary file first, then renamed over it, so a run killed at any
% moment leaves the old checkpoint or the new one, never a part; the
% temporary file such a kill leaves, @var{file}@code{.tmp}@var{pid}, goes
% at the next run with the same file once process @var{pid} is gone). The
% same call made again resumes from it and returns, bit for bit, what a
% run never stopped returns; a finished run keeps its final checkpoint,
% so the same call then returns at once (delete the file to run again).
% Needs @code{seed}. The file holds a fingerprint of every setting (the
% model, with the text of its functions and the values they captured,
% the observations and the options except @code{progress},
% @code{checkpoint_every} and @code{threads}); a file of other settings,
% of another number of threads, damaged or not a checkpoint is refused
% (@code{sluice:filter:badcheckpoint}), as is, up front, a place where
% the file cannot be written. It is as large as the run's working
% memory (with @code{history}, the history too) and is meant for the
% same build on the same machine type.
% @item progress
% @code{'auto'} (default: a progress line on a terminal for runs over
% 2 s), true or false.
% @item mpi
% Octave started by @code{mpirun -np P octave-cli script.m} (Open MPI;
% build with @code{make MPI=1}): the members of the run split across the
% P processes (ranks), each advancing and weighing its own (every
% random stream is keyed by the member's number, so the result is the
% one-process run's, bit for bit, for any P) and every rank returning
% the whole result. false (default): this process runs the whole run
% (under mpirun, every rank the same); true: split, or the error;
% @code{'auto'}: split when launched by mpirun and the run can be split,
% else each rank runs the whole run. Every rank must make the call
% (the ranks wait for each other in it): call it on every rank, never
% on one rank alone. Inside @code{sluice.sweep} and @code{sluice.pmmh},
% whose points and chains are dealt across the ranks already, the run is
% this process's alone whatever this option says. The particle filter
% (@code{method} @code{'pf'}, strong coupling) with @code{param_move}
% @code{'none'} or @code{'kernel'} (the default on noisy paths) splits
% by members: each rank keeps only its members' states, and of all
% members what is small (weights, parameters, the summarised rows).
% Every other run splits its forecasts (the model steps, usually the
% cost) and does the rest (the analysis, resampling, moves, summaries)
% whole on every rank: a @code{lag}, tempering, @code{history}, the
% ensemble Kalman methods, @code{'resample_move'} (its re-runs of paths
% are whole). A checkpoint or @code{'smc2'} cannot be split
% (@code{sluice:filter:ranksunsupported} with true). Every rank needs at
% least one member (@code{sluice:filter:ranksempty}); every rank must
% make the same call
% (@code{sluice:filter:mpimismatch}); a failing member stops the run on
% every rank, with its own error on its rank and
% @code{sluice:filter:rankfailed} naming that rank on the others.
% @item prepare
% true to return a prepared run instead of running (see below; default
% false).
% @end table
%
% A prepared run, for many runs that differ only in the seed, the values
% of fixed parameters or the observation values (a sweep over seeds, a
% Markov chain over parameters, twin experiments on one observing
% network): @code{run = sluice.filter (model, prior, obs, @dots{},
% 'prepare', true)} makes every check of the call and its settings once
% and returns them, without running. @code{sluice.filter (run)} then
% returns exactly what the call without @code{prepare} returns, and
% takes these options (a struct or name/value pairs), which change only
% what they say:
% @table @code
% @item seed
% the seed of this run (default: the seed the run was prepared with, or,
% when it had none, a new one drawn from Octave's @code{rand} each run).
% @item params
% a struct of parameter values, a field per parameter, for parameters
% that the prior does not draw: a parameter with a @code{fixed} prior
% entry runs as if the entry were @code{sluice.prior (name, 'fixed',
% value)}, one the prior does not name as if the model's default were
% the value. A value must be finite and within the parameter's bounds
% (@code{sluice:filter:badparams}); @code{run.settable_params} lists the
% parameters this takes.
% @item values
% the observation values, one per row of the table (NaN: missing): the
% same times, variables, sigmas and families.
% @end table
% Anything else cannot change a prepared run: another option of the
% run, a parameter the prior draws or the model lacks, or another number
% of values is refused with @code{sluice:filter:preparedchange} (prepare
% the run again instead), and a struct that is not a prepared run with
% @code{sluice:filter:badrun}. A prepared run cannot have a
% @code{checkpoint}. Its fields @code{model}, @code{members},
% @code{seed}, @code{times}, @code{state_names}, @code{param_names},
% @code{settable_params} and @code{obs_rows} describe it; the field
% @code{engine} holds the prepared settings and is not for editing.
% @code{sluice.pmmh} runs its filters this way.
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
% (members whose state was not finite, given zero weight), @code{ranks}
% (the processes the members were split across, option @code{mpi}; 1:
% this one alone), @code{final}
% (the last ensemble: @code{X}, @code{P}, @code{w}) and, when asked,
% @code{history} (@code{X} n x N x T, @code{P}, @code{w} N x T,
% @code{ancestors} N x T, 1-based). @code{forecast.mean} (n x T) and
% @code{forecast.params} are the means before each update (the forecast),
% for innovation statistics (@code{sluice.scores}). @code{pit} (one
% per row of the observation table, in its order) is the forecast
% probability integral transform of each observation: the share of the
% forecast's predictive distribution (the weighted members before the
% cycle's update, each with its observation error) below the value,
% P(Y < y) + P(Y = y)/2 for the count families and a censored value.
% A calibrated filter gives PITs spread evenly over (0, 1); PITs piled
% near 0 and 1 mean bands too narrow for the data they meet. NaN for a
% missing value and for the ensemble Kalman methods, @code{'wenkf'} and
% @code{'smc2'}, which do not compute it. Above 1024 members each row's PIT is the mean
% over 1024 members picked systematically by weight (an error of about
% 0.016 at most). With
% @code{operators} (and @code{derived_summary} true), @code{derived} has @code{names} (1 x d, linear
% operators first), @code{mean} (d x T) and @code{quantiles} (d x nq x T):
% the derived quantities of the ensemble each cycle ends with, weighted
% as the states (NaN where a member of positive weight gives NaN). With @code{lag},
% @code{smoothed} has @code{method} (@code{'fixed_lag'} for the particle
% filter, @code{'enks'} for the ensemble Kalman methods), @code{lag},
% @code{states.mean}, @code{states.quantiles}, @code{params.mean} and
% @code{params.quantiles}, laid out as the filtered ones, and
% @code{distinct} (1 x T): for each time s, how many distinct members
% of time s the members whose weights smoothed it (those of time
% s + lag, or of the last time) descend from; N where nothing was
% resampled in between (the ensemble Kalman smoother: N unless dead
% members were replaced).
%
% The run warns (the thresholds are in @code{sluice.internal.diversity_limits}):
% @code{sluice:filter:paramcollapse} when an estimated parameter ends with
% (nearly) one value, @code{sluice:filter:atbound} when at least half of
% a parameter's final posterior weight lies in the outermost 5% of its
% prior next to a finite bound, @code{sluice:filter:lowess} when the ESS
% stays below 2 for 10 or more consecutive cycles with observations,
% @code{sluice:filter:approxparams} when the default move estimated
% parameters with the kernel move because the paths hold noise (their
% bands are then approximate), @code{sluice:filter:smoothcollapse} when
% at more than 10% of the smoothed times of the particle filter's
% @code{lag} the members descend from fewer than 20 distinct members
% (half the members below 40) of the time smoothed: the smoothed
% quantiles come from those few paths and the smoothed bands are too
% narrow (use a shorter @code{lag}, more @code{members}, forcing or state
% noise or a @code{param_move} that keeps the members diverse, or an
% ensemble Kalman smoother, e.g. @code{'method'} @code{'etkf'} with
% @code{lag}), @code{sluice:filter:miscalibrated} when, for an observed
% variable with 5 or more PITs, far too many fell outside the central 90%
% or the central 99.8% of the forecast (at least twice the share a
% calibrated forecast leaves there, 10% or 0.2%, twice that for the count
% families and censored values, plus 2/(N + 1) in the 99.8% band for a
% value beyond all N members, and a binomial tail probability below
% 1e-4): the filter was overconfident and its
% bands are too narrow to trust (use more @code{members}, noise on the
% forcings, states or parameters, or for a model made of components
% @code{'coupling'} @code{'weak'}), besides @code{sluice:filter:degenerate},
% @code{sluice:filter:nonfinite} and @code{sluice:filter:nanprediction}.
% A prior without spread for a parameter whose bounds let it move is an
% error (@code{sluice:filter:nospread}) with the moves @code{'auto'},
% @code{'kernel'}, @code{'resample_move'} and @code{'liu_west'}.
% A run of 1 GiB or more that would not fit in the memory available is
% refused before anything large is made (@code{sluice:filter:nomemory});
% the message gives what it needs and names its largest part and the
% options that drive it (@code{members}, @code{method}, @code{lag},
% @code{history}, @code{param_move}, @code{move_paths},
% @code{inner_members}, @code{threads}, @dots{}).
%
% @seealso{sluice.model, sluice.prior, sluice.loglik, sluice.resample}
% @end deftypefn
function res = filter (model, prior, obs, varargin)
  if (nargin >= 1 && isstruct (model) && isfield (model, 'prepared_for'))
    % a prepared run: every other argument is an option of its run
    args = varargin;
    if (nargin >= 3)
      args = [{prior, obs}, varargin];
    elseif (nargin == 2)
      args = {prior};
    end
    res = sluice.internal.filter_run ('-run', model, [], args, 'filter');
    return;
  end
  if (nargin < 3)
    sluice.internal.compat ('usage', mfilename ());
  end
  res = sluice.internal.filter_run (model, prior, obs, varargin, 'filter');
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
%!error id=sluice:filter:toomanysteps sluice.filter (m, pr, obs, 't0', -1e15)
%!error id=sluice:filter:toomanysteps sluice.filter (m, pr, obs, 't0', 0, 'members', 1e6, 'times', [1e9 2e9])
%!error id=sluice:filter:badoption sluice.filter (m, pr, obs, 'no_such_option', 1)
%!error id=sluice:filter:badoption sluice.filter (m, pr, obs, cat (3, 'se', 'ed'), 1)
%!error id=sluice:filter:badoption sluice.filter (m, pr, obs, 'history', NaN)
%!error id=sluice:filter:badoption sluice.filter (m, pr, obs, 'progress', NaN)
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
