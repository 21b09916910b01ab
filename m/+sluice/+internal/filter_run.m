function res = filter_run (model, prior, obs, args, fn)
  % Internal: the body of sluice.filter (see its help) for the public
  % function fn: sluice.filter itself, or a workflow that runs the filter
  % as its own step (sluice.evidence). Every error is raised as
  % sluice:<fn>:<reason>, here and, through the settings' caller, in the
  % compiled run; the warnings keep sluice:filter:<reason>, the filter's
  % own. args are the options as sluice.filter takes them (a cell of name,
  % value pairs or of one struct).
  %
  % filter_run ('-run', run, [], args, fn) runs a prepared run (made with
  % the option 'prepare') with the options args that a prepared run takes
  % (seed, params, values).
  %
  % A run is made in two steps: prepare (every check, and the settings of
  % the compiled run) and execute (the compiled run and the result). A
  % prepared run keeps the first step's work, so that running it again
  % with another seed, other values of fixed parameters or other
  % observation values redoes only what those change.
  if (ischar (model) && strcmp (model, '-run'))
    res = run_prepared (prior, args, fn);
    return;
  end
  [args, prep] = take_prepare (args, fn);
  opts = parse_options (args, fn);
  if (prep && ~isempty (opts.checkpoint))
    error (['sluice:' fn ':badoption'], ...
           ['a prepared run cannot have a checkpoint (each run of it may have another ', ...
            'seed); give the checkpoint to an unprepared call']);
  end
  R = prepare (model, prior, obs, opts, fn);
  if (prep)
    res = prepared_view (R);
    return;
  end
  res = execute (R);
end

function [args, prep] = take_prepare (args, fn)
  % the option 'prepare' (sluice.filter only): not a setting of the run,
  % so it is taken out before the run's options are read
  prep = false;
  if (~strcmp (fn, 'filter'))
    return;
  end
  args = sluice.internal.option_pairs (args);
  if (mod (numel (args), 2) ~= 0)
    return;   % parse_options reports it
  end
  names = args(1:2:end);
  k = [];
  for j = 1:numel (names)
    if (ischar (names{j}) && isrow (names{j}) && strcmp (names{j}, 'prepare'))
      k(end + 1) = j;
    end
  end
  if (isempty (k))
    return;
  end
  v = args{2 * k(end)};
  if (~((islogical (v) || isnumeric (v)) && isscalar (v) && isreal (v) && ~isnan (v)))
    error (['sluice:' fn ':badoption'], 'prepare must be true or false');
  end
  prep = logical (v);
  drop = [2 * k - 1, 2 * k];
  args(drop) = [];
end

function R = prepare (model, prior, obs, opts, fn)
  % every check of a run and its settings for the compiled run, with the
  % initial ensemble of opts.seed (drawn when not given)
  sluice.internal.check_model (model, 1, fn);
  n = numel (model.states);
  p = numel (model.params);
  q = numel (model.forcings);
  N = opts.members;
  seed_given = ~isempty (opts.seed);
  if (~seed_given)
    opts.seed = floor (rand () * 2^32);
  end
  % under mpirun, the members split across the ranks (option mpi)
  world = struct ('active', false, 'rank', 0, 'size', 1);
  if (~(islogical (opts.mpi) && ~opts.mpi))
    world = sluice.internal.mpi ('world', fn, opts.mpi);
  end
  if (world.active && ~seed_given)
    % one run: the seed rank 0 drew
    opts.seed = sluice.internal.mpi ('bcast', opts.seed, 0);
  end
  t0 = opts.t0;
  if (isempty (t0))
    t0 = model.t0;
  end

  check_memory (n, p, N, fn);

  % initial ensemble: prior draws by name
  plan = prior_plan (model, prior, fn);
  [X0, P0] = draw_members (plan, N, opts.seed, n, fn);
  lower = plan.lower;
  upper = plan.upper;
  check_spread (model, P0, lower, upper, opts, fn);

  % observations and the cycle times
  if (isempty (opts.operators))
    % none: the layout sluice.internal.operators gives for none
    ops = struct ('names', {cell(0, 1)}, 'H', zeros (0, n + p), 'funs', {cell(1, 0)}, ...
                  'rows', zeros (1, 0));
  else
    ops = sluice.internal.operators (opts.operators, model, fn);
  end
  tab = sluice.internal.obs_table (obs, [model.states(:); model.params(:); ops.names(:)], ...
                                  t0, fn, true);
  m = numel (tab.time);
  if (isempty (opts.times))
    % the table's times are in order (obs_table checked it): the cycles
    % start where the time changes
    starts = true (m, 1);
    starts(2:end) = tab.time(2:end) ~= tab.time(1:end-1);
    times = tab.time(starts)';
  else
    times = unique ([tab.time(:); opts.times(:)])';
  end
  if (isempty (times))
    error (['sluice:' fn ':noobs'], 'no observation and no output time to run to');
  end
  if (times(1) < t0)
    error (['sluice:' fn ':badtimes'], 'output time %g lies before the start time %g', ...
           times(1), t0);
  end
  T = numel (times);
  if (isempty (opts.times))
    % each row's cycle by counting; every cycle has rows
    cyc = cumsum (starts);
    obs_first = [0, find([starts(2:end); true])'];
  else
    [~, cyc] = ismember (tab.time, times);
    obs_first = [0, cumsum(accumarray (cyc(:), 1, [T 1]))'];
  end

  c = sluice.internal.model_config (model, opts.forcing, opts.forcing_noise, ...
                                  opts.events, opts.event_noise, fn, opts.calendar);
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
  c = summary_rows (c, opts.summarize, model, fn);
  c.state_noise = expand (opts.state_noise, n, 'state_noise', fn);
  if (all (c.state_noise == 0))
    c.state_noise = [];
  end
  c.lower = lower;
  c.upper = upper;
  c.param_move = opts.param_move;
  step = expand (opts.param_step, p, 'param_step', fn);
  c.param_step = step;
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
  c.prior_dist = plan.pdist.id;
  c.prior_a = plan.pdist.a;
  c.prior_b = plan.pdist.b;
  c.prior_lo = plan.pdist.lo;
  c.prior_hi = plan.pdist.hi;
  c.resample = opts.resample;
  c.threshold = opts.resample_threshold;
  c.temper_ess = opts.temper_ess;
  c.temper_max_steps = opts.temper_max_steps;
  c.seed = opts.seed;
  c.threads = opts.threads;
  c.probs = opts.quantiles;
  c.history = double (opts.history);
  c.lag = min (max (opts.lag), T);
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
  c = add_localization (c, opts, model, tab, obs, ops.names, fn);
  c = sluice.internal.coupling_settings (c, opts, model, tab, ops, fn);
  if (~isempty (opts.checkpoint))
    % the gateway fingerprints every setting; what it cannot see (the
    % text of a model's or an operator's function and the values it
    % captured) comes as comparable values
    c.checkpoint = opts.checkpoint;
    c.checkpoint_every = opts.checkpoint_every;
    % what a run killed while writing this checkpoint left beside it
    sluice.internal.stale_tmp (opts.checkpoint);
    c.checkpoint_key = {sluice.internal.comparable(model), ...
                        sluice.internal.comparable(opts.operators)};
  end

  if (world.active)
    % 1: the run must be split (mpi true); 2: split when the compiled run
    % can be, else every rank runs it whole ('auto')
    c.ranks = 1 + ischar (opts.mpi);
    if (world.rank > 0)
      c.progress = 0;
    end
    sluice.internal.mpi ('same', fn, ...
                         'runs (members, seed, times, observations or options)', ...
                         fingerprint ([N, opts.seed, numel(times), sum(times), sum(times .^ 2), ...
                                       numel(c.obs_value)], c.obs_value, ...
                                      [c.obs_var(:)' * (1:numel (c.obs_var))', n, p, q, c.lag, ...
                                       c.threshold, double(c.method), double(c.param_move), ...
                                       c.history, c.ranks]));
  end

  % the head of the result: the fields the settings alone decide. The
  % gateway lays out the result with it (settings field result), but for
  % a weakly coupled run, whose result execute assembles from the
  % recorded arrays
  head = result_head (model, c, opts);
  if (~isfield (c, 'comp'))
    c.result = struct ('head', head, 'derived_names', {ops.names(:)'}, 'lag', opts.lag);
  end

  % what execute needs, and what a prepared run needs to run again
  R = struct ();
  R.version = 2;
  R.fn = fn;
  R.model = model;
  R.opts = opts;
  R.seed_given = seed_given;
  R.c = c;
  R.ops_names = ops.names;
  R.plan = plan;
  R.param_step = step;
  R.obs_value = tab.value;
  R.obs_sigma = double (obs.sigma(:));   % as given (obs_table checked it)
  R.obs_counted = strcmp (tab.family, 'poisson') | strcmp (tab.family, 'binomial');
  R.cyc = cyc;
  % what every run of these settings shares: the head of the result and
  % the calibration check's grouping of the observation rows
  R.head = head;
  % (isfield on settings of many fields costs as much as a copy of them:
  % what a run asks of their layout is asked here once)
  R.split = isfield (c, 'ranks');
  R.coupled = isfield (c, 'comp');
  % the gateway lays out the result: sluice.kernel.pf_run always (a
  % user's gateway built before it did returns the recorded arrays)
  shared = ~strcmp (model.kind, 'user') && ...
           ~(strcmp (model.kind, 'composed') && isfield (model, 'engine') && ...
             ~isempty (model.engine));
  R.laid_out = isfield (c, 'result') && shared;
  % in Octave, execute calls the shared gateway itself as
  % sluice.internal.run_engine would (one call fewer)
  persistent is_octave
  if (isempty (is_octave))
    is_octave = sluice.internal.compat ('is_octave');
  end
  R.direct = shared && is_octave;
  R.calib = calibration_groups (c, [model.states(:); model.params(:); ops.names(:)]);
end

function head = result_head (model, c, opts)
  % the fields of the result that the settings alone decide, in the
  % result's order (the seed is each run's own)
  n = numel (model.states);
  head = struct ();
  head.method = opts.method;
  if (opts.wenkf)
    head.method = 'wenkf';
  end
  head.model = model.name;
  head.members = c.members;
  head.seed = [];
  head.t0 = c.t0;
  head.times = c.times;
  if (~isempty (opts.calendar))
    % the calendar of the time axis: model times as dates
    head.time_origin = opts.calendar.text;
    head.time_unit = opts.calendar.unit;
    head.dates = opts.calendar.datenum + c.times * opts.calendar.unit_days;
  end
  head.state_names = model.states;
  if (isfield (model, 'internal') && any (model.internal))
    % states that are the model's own bookkeeping: not drawn by default
    head.internal_states = logical (model.internal(:)');
  end
  if (isfield (c, 'summary_rows'))
    % the states whose means and quantiles were recorded (the others NaN)
    head.summarized_states = false (1, n);
    head.summarized_states(c.summary_rows(c.summary_rows <= n)) = true;
  end
  head.param_names = model.params;
  head.quantile_levels = opts.quantiles;
end

function g = calibration_groups (c, names)
  % the observation rows by variable for warn_calibration: S (variables x
  % rows, sparse) sums a column over each variable's rows, in increasing
  % order of the variable; counted marks the rows of the counts and the
  % censored family
  var = c.obs_var(:);   % 0-based indices into names
  g = struct ();
  present = false (numel (names), 1);
  present(var + 1) = true;
  g.vars = find (present) - 1;
  at = cumsum (present);
  m = numel (var);
  g.S = sparse (at(var + 1), (1:m)', 1, numel (g.vars), m);
  f = c.obs_family(:);
  g.counted = strcmp (f, 'poisson') | strcmp (f, 'binomial') | strcmp (f, 'censored');
  g.names = names;
  % what the candidate test of warn_calibration takes from the limits and
  % the members, once: the two tails, the share outside them but for the
  % counts' part, the factor of the test
  L = sluice.internal.diversity_limits ();
  N = c.members;
  g.taus = [L.calib_tail, L.calib_far_tail];
  g.upper = 1 - g.taus;
  g.p0 = 2 * g.taus + (g.taus < L.calib_tail) * 2 / (N + 1);
  g.any_counted = any (g.counted);
  g.bar = 0.999 * L.calib_factor;
  g.min = L.calib_min;
end

function res = execute (R)
  % the compiled run of the settings R.c and its result
  persistent L
  if (isempty (L))
    L = sluice.internal.diversity_limits ();   % constants
  end
  c = R.c;
  opts = R.opts;
  model = R.model;
  if (R.split && sluice.internal.mpi ('held'))
    % a prepared run executed inside work already dealt across the ranks
    c = rmfield (c, 'ranks');
  end
  if (R.direct)
    try
      r = sluice.internal.interruptible ('-run', 'sluice.kernel.pf_run', c);
    catch err
      sluice.internal.run_engine (model, c, err);   % raises it as its own run's
    end
  else
    r = sluice.internal.run_engine (model, c);
  end
  pf = strcmp (opts.method, 'pf');   % the particle filter (not the WEnKF)
  if (R.laid_out || (~R.coupled && isfield (r, 'states')))
    % laid out by the gateway (settings field result) but for two fields
    res = r;
    res.skipped_total = sum (r.skipped);
    res.options = opts;
  else
    res = assemble (R, r, c, opts, model, pf);
  end
  % the forecasts' calibration first: the warnings after it say what may
  % have caused a miscalibration (a bound, collapse, a low ESS)
  warn_calibration (res.pit, c.obs_var, R.calib, c.members);
  if (any (res.degenerate))
    k = find (res.degenerate, 1);
    warning ('sluice:filter:degenerate', ...
             ['no member could explain the observations at %d cycle(s), ', ...
              'first at t = %g: the weights were kept there and the log-evidence is -Inf'], ...
             sum (res.degenerate), c.times(k));
  end
  if (any (res.nonfinite > 0))
    k = find (res.nonfinite > 0, 1);
    warning ('sluice:filter:nonfinite', ...
             ['%d member(s) reached a non-finite state (first at t = %g); ', ...
              'they were given zero weight'], max (res.nonfinite), c.times(k));
  end
  if (pf && ~opts.wenkf && any (res.nanpredicted > 0))
    k = find (res.nanpredicted > 0, 1);
    warning ('sluice:filter:nanprediction', ...
             ['%d member(s) with a finite state got a NaN predicted observation ', ...
              '(an operator''s value) at %d cycle(s), first at t = %g; they were ', ...
              'given zero weight: check the operator for states outside its domain'], ...
             max (res.nanpredicted), sum (res.nanpredicted > 0), c.times(k));
  end
  % the general caveat first, the specific diagnostics after it
  % the default move on noisy paths is the kernel move, whose parameter
  % bands are approximate: say so once, with the way to exact ones
  est = c.lower < c.upper & any (c.P0 ~= c.P0(:, 1), 2);
  if (pf && strcmp (opts.param_move, 'auto') && ...
      strcmp (res.param_move, 'kernel') && any (est) && ~isempty (R.cyc))
    warning ('sluice:filter:approxparams', ...
             ['the paths hold noise (forcing, state or model noise), so the default ', ...
              'kernel move estimated the parameters (%s): their bands are approximate ', ...
              '(too narrow, or off, on long precise records). For better bands use ', ...
              'param_move ''resample_move'' (slower), for exact ones ''smc2'' (slowest), ', ...
              'or check against sluice.pmmh'], ...
             strjoin (res.param_names(est), ', '));
  end
  % (only when a warning is possible: an estimated parameter, or weights
  % whose ESS fell low, or a fixed-lag smoother)
  if (any (est) || ((pf || opts.wenkf) && (any (res.ess < L.lowess_ess) || any (opts.lag > 0))))
    warn_diversity (res, c.P0, c.lower, c.upper, R.obs_value, R.cyc, est);
  end
end

function res = assemble (R, r, c, opts, model, pf)
  % the result from the recorded arrays r of the gateway, for settings
  % without the field result (a weakly coupled run, or a user's gateway
  % built before the gateway laid the result out)
  n = numel (model.states);
  res = R.head;
  res.seed = opts.seed;
  res.states = struct ('mean', r.mean(1:n, :), 'quantiles', r.quantiles(1:n, :, :));
  res.params = struct ('mean', r.mean(n+1:end, :), ...
                       'quantiles', r.quantiles(n+1:end, :, :), ...
                       'distinct', r.distinct, 'spread', r.spread);
  res.forecast = struct ('mean', r.forecast_mean(1:n, :), ...
                         'params', r.forecast_mean(n+1:end, :));
  if (c.derived_summary)
    % the derived quantities of the option operators, summarised as the states
    res.derived = struct ('names', {R.ops_names(:)'}, 'mean', r.derived_mean, ...
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
  % the processes the members were split across (1: this one alone)
  res.ranks = r.ranks;
  if (pf)
    res.temper_steps = r.temper_steps;
    res.loglik_evals = r.loglik_evals;
    res.param_move = r.param_move;
    res.move_sweeps = r.move_sweeps;
    res.move_accept = r.move_accept;
  end
  if (pf && ~opts.wenkf)
    res.nanpredicted = r.nanpred;
  end
  % where each observation fell in the forecast's predictive distribution
  % (one per row of the observation table, in its order; NaN where missing
  % or not computed)
  res.pit = r.pit;
  if (~pf)
    res.inflation = r.inflation;
    res.floored = r.floored;
  end
  res.final = struct ('X', r.X, 'P', r.P, 'w', r.w);
  if (any (opts.lag > 0))
    meth = 'enks';
    if (pf)
      meth = 'fixed_lag';
    end
    res.smoothed = struct ('method', meth, 'lag', opts.lag, ...
                           'states', struct ('mean', r.smooth_mean(1:n, :), ...
                                             'quantiles', r.smooth_quantiles(1:n, :, :)), ...
                           'params', struct ('mean', r.smooth_mean(n+1:end, :), ...
                                             'quantiles', r.smooth_quantiles(n+1:end, :, :)), ...
                           'distinct', r.smooth_distinct);
  end
  if (opts.history)
    res.history = struct ('X', r.history_X, 'P', r.history_P, ...
                          'w', r.history_w, 'ancestors', r.history_ancestors);
  end
  if (R.coupled)
    res = sluice.internal.coupling_results (res, r, c, model);
  end
  res.options = opts;
end

function run = prepared_view (R)
  % a prepared run as sluice.filter returns it: a few fields to read, and
  % the prepared settings (field engine) that a run of it uses. Its
  % settings have the field draw, empty (X0 and P0 hold the members): a
  % run that sets it sets a field that exists, which is cheaper than
  % adding one to settings of many fields
  R.c.draw = [];
  run = struct ();
  run.prepared_for = 'sluice.filter';
  run.model = R.model.name;
  run.members = R.c.members;
  run.seed = [];
  if (R.seed_given)
    run.seed = R.opts.seed;
  end
  run.times = R.c.times;
  run.state_names = R.model.states;
  run.param_names = R.model.params;
  run.settable_params = R.model.params(R.plan.role(:)' >= 0);
  run.settable_params = run.settable_params(:)';
  run.obs_rows = numel (R.obs_value);
  run.engine = R;
end

function res = run_prepared (run, args, fn)
  % run a prepared run again: options seed, params, values; nothing
  % checked when it was prepared is checked again. Its prepared settings
  % (run.engine), or the error sluice:<fn>:badrun for anything else
  persistent need
  if (isempty (need))
    need = {'version', 'fn', 'model', 'opts', 'seed_given', 'c', 'ops_names', 'plan', ...
            'param_step', 'obs_value', 'obs_sigma', 'obs_counted', 'cyc', 'head', 'calib', ...
            'split', 'coupled', 'laid_out', 'direct'};
  end
  if (~(isstruct (run) && isscalar (run) && isfield (run, 'prepared_for') && ...
        strcmp (run.prepared_for, 'sluice.filter') && isfield (run, 'engine') && ...
        isstruct (run.engine) && isscalar (run.engine) && all (isfield (run.engine, need)) && ...
        isnumeric (run.engine.version) && isscalar (run.engine.version) && run.engine.version == 2))
    error (['sluice:' fn ':badrun'], ...
           ['argument 1 (run): expected a prepared run of sluice.filter (option ''prepare'') ', ...
            'as it was returned, got %s'], sluice.internal.describe (run));
  end
  R = run.engine;
  c = R.c;
  seed = [];
  redraw = false;
  if (numel (args) == 2 && ischar (args{1}) && strcmp (args{1}, 'seed'))
    % the common call, a seed alone
    seed = whole (args{2}, 'seed', 0, 2^53, fn);
    args = {};
  elseif (numel (args) == 1 && isstruct (args{1}))
    args = sluice.internal.option_pairs (args);
  end
  if (mod (numel (args), 2) ~= 0)
    error (['sluice:' fn ':badoption'], 'options must be a struct or name, value pairs');
  end
  for k = 1:2:numel (args)
    name = args{k};
    v = args{k + 1};
    if (~ischar (name) || ~isrow (name))
      error (['sluice:' fn ':badoption'], 'option names must be strings');
    end
    switch (name)
      case 'seed'
        seed = whole (v, 'seed', 0, 2^53, fn);
      case 'params'
        [R, c] = set_params (R, c, v, fn);
        redraw = true;
      case 'values'
        c = set_values (R, c, v, fn);
        R.obs_value = c.obs_value;
      otherwise
        if (isfield (sluice.internal.run_defaults (), name) || strcmp (name, 'prepare'))
          error (['sluice:' fn ':preparedchange'], ...
                 ['option ''%s'' cannot change in a prepared run (it takes seed, params ', ...
                  'and values): prepare the run again with it'], name);
        end
        error (['sluice:' fn ':badoption'], ...
               'unknown option ''%s'' (a prepared run takes seed, params and values)', name);
    end
  end
  split = R.split && ~sluice.internal.mpi ('held');
  if (isempty (seed))
    if (R.seed_given)
      seed = R.opts.seed;
    else
      seed = floor (rand () * 2^32);
      if (split)
        seed = sluice.internal.mpi ('bcast', seed, 0);   % one run: rank 0's seed
      end
    end
  end
  if (seed ~= c.seed || redraw)
    if (any (c.lower < c.upper))
      [c.X0, c.P0] = draw_members (R.plan, c.members, seed, numel (R.model.states), fn);
      check_spread (R.model, c.P0, c.lower, c.upper, R.opts, fn);
    else
      % no parameter can move: neither the spread check nor the warnings
      % read the initial members (their X0 and P0 stay the prepared
      % ones), so the gateway draws them from the plan (settings field
      % draw), the numbers draw_members would draw
      c.draw = R.plan;
    end
  end
  c.seed = seed;
  R.opts.seed = seed;
  R.c = c;
  if (split)
    % split across the ranks: every rank must run the same
    sluice.internal.mpi ('same', fn, 'runs of a prepared run (seed, params or values)', ...
                         fingerprint (seed, c.obs_value, [sum(c.P0(:)), sum(c.P0(:) .^ 2)], true));
  end
  res = execute (R);
end

function s = fingerprint (before, y, after, with_count)
  % what sluice.internal.mpi ('same', ...) compares across the ranks, as
  % text: the numbers before, the sum and the sum of squares of the
  % observation values y given (NaN: missing; with_count, their count
  % first), the numbers after
  v = double (y(:));
  v = v(~isnan (v));
  if (nargin > 3 && with_count)
    sums = [numel(v), sum(v), sum(v .^ 2)];
  else
    sums = [sum(v), sum(v .^ 2)];
  end
  s = sprintf ('%.17g|', before, sums, after);
end

function [R, c] = set_params (R, c, v, fn)
  % the option params of a prepared run: new values of parameters that no
  % prior draws (each as if its prior entry were sluice.prior (name,
  % 'fixed', value), or the model's default when the prior names it not)
  if (~(isstruct (v) && isscalar (v)))
    error (['sluice:' fn ':badparams'], ...
           'params must be a struct of parameter values (a field per parameter), got %s', ...
           sluice.internal.describe (v));
  end
  model = R.model;
  plan = R.plan;
  names = fieldnames (v);
  for k = 1:numel (names)
    ip = find (strcmp (names{k}, model.params));
    if (isempty (ip))
      error (['sluice:' fn ':preparedchange'], ...
             'params.%s: the model of the prepared run has no parameter of that name (it has %s)', ...
             names{k}, strjoin (model.params(:)', ', '));
    end
    if (plan.role(ip) < 0)
      error (['sluice:' fn ':preparedchange'], ...
             ['params.%s: the prior of the prepared run draws this parameter; a prepared run ', ...
              'sets only parameters with a fixed prior or none (prepare again with another prior)'], ...
             names{k});
    end
    x = v.(names{k});
    if (~(isa (x, 'double') && isreal (x) && ~issparse (x) && isscalar (x) && isfinite (x)))
      error (['sluice:' fn ':badparams'], 'params.%s must be a finite real double scalar, got %s', ...
             names{k}, sluice.internal.describe (x));
    end
    if (x < model.lower(ip) || x > model.upper(ip))
      error (['sluice:' fn ':badparams'], ...
             'params.%s = %g lies outside the parameter''s bounds [%g, %g]', ...
             names{k}, x, model.lower(ip), model.upper(ip));
    end
    e = plan.role(ip);
    if (e > 0)
      plan.a(e) = x;            % the fixed prior entry's value
      plan.pdist.a(ip) = x;
    else
      plan.def(ip) = x;         % the model's default
    end
    plan.lower(ip) = x;
    plan.upper(ip) = x;
  end
  R.plan = plan;
  c.lower = plan.lower;
  c.upper = plan.upper;
  c.prior_a = plan.pdist.a;
  c.param_step = R.param_step;
  c.param_step(plan.lower == plan.upper) = 0;
end

function c = set_values (R, c, v, fn)
  % the option values of a prepared run: new values of the observation
  % table's rows (times, variables, sigmas and families as prepared)
  m = numel (R.obs_value);
  if (~(isa (v, 'double') && isreal (v) && ~issparse (v) && (isvector (v) || isempty (v))))
    error (['sluice:' fn ':badobs'], ...
           'values must be a real double vector (one value per observation row), got %s', ...
           sluice.internal.describe (v));
  end
  if (numel (v) ~= m)
    error (['sluice:' fn ':preparedchange'], ...
           'values: the prepared run has %d observation rows, got %d values', m, numel (v));
  end
  v = v(:);
  s = R.obs_sigma(:);
  s(isnan (v) & isnan (s)) = 1;   % as sluice.internal.obs_table stands it in
  bad = isinf (v) | (~R.obs_counted & ~isnan (v) & ~(isfinite (s) & s >= realmin));
  i = find (bad, 1);
  if (~isempty (i))
    if (isinf (v(i)))
      error (['sluice:' fn ':badobs'], 'observation row %d: value is infinite', i);
    end
    error (['sluice:' fn ':badobs'], ['observation row %d: sigma must be finite and at ', ...
                                       'least %.17g (the smallest normal double), got %g'], ...
           i, realmin, s(i));
  end
  c.obs_value = v;
  c.obs_sigma = s;
end

function check_spread (model, P0, lower, upper, opts, fn)
  % an estimated parameter (its bounds let it move) whose prior gives
  % every member the same value cannot be moved by a move that takes its
  % size from the ensemble's spread
  if (~any (strcmp (opts.param_move, {'auto', 'kernel', 'liu_west', 'resample_move'})) || ...
      (~strcmp (opts.param_move, 'liu_west') && ~strcmp (opts.method, 'pf')))
    return;
  end
  for i = 1:size (P0, 1)
    if (lower(i) < upper(i) && all (P0(i, :) == P0(i, 1)))
      error (['sluice:' fn ':nospread'], ...
             ['parameter ''%s'' may move within [%g, %g] but its prior gives every member ', ...
              'the value %g: the %s move takes its size from the ensemble''s spread and ', ...
              'would never move it; give it a prior with spread, bounds [%g %g] to keep it ', ...
              'fixed, or param_move ''random_walk'''], model.params{i}, lower(i), upper(i), ...
             P0(i, 1), opts.param_move, P0(i, 1), P0(i, 1));
    end
  end
end

function warn_diversity (res, P0, lower, upper, obs_value, cyc, est)
  % warnings about the parameter ensemble and the weights; thresholds in
  % sluice.internal.diversity_limits; est marks the parameters estimated
  % (bounds that let them move and a spread among the initial members)
  persistent L
  if (isempty (L))
    L = sluice.internal.diversity_limits ();   % constants
  end
  N = res.members;
  names = res.param_names;
  if (isempty (res.params.distinct))
    est(:) = false;
  end
  for i = find (est(:))'
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
  if (any (strcmp (res.method, {'pf', 'wenkf'})) && ~isempty (cyc) && ...
      any (res.ess < L.lowess_ess))
    hasobs = false (1, numel (res.times));
    hasobs(cyc(~isnan (obs_value))) = true;
    low = (res.ess < L.lowess_ess) & hasobs;
    run = 0;
    longest = 0;
    first = find (low, 1);
    if (isempty (first))
      first = numel (low) + 1;
    end
    for k = first:numel (low)   % from the first low cycle on
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
  if (any (strcmp (res.method, {'pf', 'wenkf'})) && any (res.options.lag > 0) && ...
      isfield (res.smoothed, 'distinct') && ~isempty (res.smoothed.distinct))
    % path degeneracy of the fixed-lag smoother: the members at the end of
    % the window descend from a few of the members of the time smoothed
    % (weakly coupled: component by component, each at its own lag;
    % res.smoothed.distinct is then the fewest of the components)
    a = res.smoothed.distinct;
    who = '';
    if (isfield (res, 'coupling') && isfield (res.coupling, 'smoothed_distinct'))
      A = res.coupling.smoothed_distinct;
      limit = min (L.smooth_ancestors, L.smooth_fraction * N);
      bad = sum (A < limit, 2)' > L.smooth_share * size (A, 2);
      if (any (bad))
        a = A(find (bad, 1), :);
        who = sprintf (' (component%s %s; res.coupling.smoothed_distinct)', ...
                       ifelse_s (sum (bad) > 1), strjoin (res.coupling.components(bad), ', '));
      end
    end
    limit = min (L.smooth_ancestors, L.smooth_fraction * N);
    few = a < limit;
    if (sum (few) > L.smooth_share * numel (a))
      warning ('sluice:filter:smoothcollapse', ...
               ['the fixed-lag smoother''s paths coalesced%s: at %d of %d smoothed times ', ...
                '(%.0f%%) the %d members descended from fewer than %g distinct members of ', ...
                'the time smoothed (fewest %d, median %g; res.smoothed.distinct). The ', ...
                'smoothed quantiles come from those few ancestors'' paths: the smoothed ', ...
                'bands are too narrow to trust. Use a ', ...
                'shorter ''lag'', more ''members'', forcing or state noise or a ''param_move'' ', ...
                'that keeps the members diverse, or an ensemble Kalman smoother ', ...
                '(''method'' ''etkf'' with ''lag'')'], ...
               who, sum (few), numel (a), 100 * sum (few) / numel (a), N, limit, min (a), ...
               median (a));
    end
  end
end

function warn_calibration (pit, var, g, N)
  % the forecast calibration check: for each observed variable, how many
  % of its observations fell outside a central band of the forecast's
  % predictive distribution (a forecast PIT below tau or above 1 - tau),
  % for the 90% band (tau = 0.05) and a far one (tau = 0.001). A
  % calibrated forecast puts its PITs uniformly on (0, 1) (Dawid 1984;
  % Gneiting, Balabdaoui & Raftery 2007, JRSS B 69): 2 tau outside. For
  % the counts and the censored family the mid-distribution PIT is not
  % uniform but each of its tails holds less than 2 tau (a step that
  % carries a value past 1 - tau starts above 1 - 2 tau), so 4 tau at
  % most. In the far band an ensemble of N members also leaves a value
  % beyond all its members with probability up to 2 / (N + 1) (the rank
  % of a new draw among N exchangeable ones is uniform on N + 1 places;
  % common practice, the rank histogram), which precise observations turn
  % into a PIT near 0 or 1: that share is allowed on top. Too many
  % outside is overconfidence: bands too narrow for the data they meet.
  % Thresholds in sluice.internal.diversity_limits; g: the rows by
  % variable (calibration_groups).
  if (isempty (pit))
    return;
  end
  % the counts of every variable at once: the few variables that may be
  % miscalibrated (a candidate test a little looser than the one below)
  % are looked at one by one
  % (a PIT lies in [0, 1] or is NaN, missing, which no comparison holds)
  x = pit(:);
  ok = isfinite (x);
  taus = g.taus;
  u = g.upper;
  if (g.any_counted)
    sums = g.S * double ([ok, x < taus(1) | x > u(1), x < taus(2) | x > u(2), ok & g.counted]);
    p0 = g.p0 + (sums(:, 4) > 0) * (2 * taus);
  else
    sums = g.S * double ([ok, x < taus(1) | x > u(1), x < taus(2) | x > u(2)]);
    p0 = g.p0;
  end
  out = sums(:, 2:3);
  cand = sums(:, 1) >= g.min & any (out > 0 & out >= g.bar * p0 .* sums(:, 1), 2);
  if (~any (cand))
    return;
  end
  persistent L
  if (isempty (L))
    L = sluice.internal.diversity_limits ();   % constants
  end
  for v = g.vars(cand)'
    rows = ok & var(:) == v;
    n = sum (rows);
    for tau = taus
      p0 = 2 * tau;
      if (any (g.counted(rows)))
        p0 = 4 * tau;
      end
      if (tau < L.calib_tail)
        p0 = p0 + 2 / (N + 1);
      end
      k = sum (pit(rows) < tau | pit(rows) > 1 - tau);
      if (k == 0 || k < L.calib_factor * p0 * n)
        continue;
      end
      % P(K >= k) for K ~ Bin(n, p0) is the regularised incomplete beta
      % function I_p0(k, n - k + 1) (Abramowitz & Stegun 26.5.24)
      if (betainc (min (p0, 1), k, n - k + 1) < L.calib_alpha)
        warning ('sluice:filter:miscalibrated', ...
                 ['the forecasts of ''%s'' were overconfident: %d of its %d observations ', ...
                  '(%.0f%%) fell outside the central %g%% of the forecast''s predictive ', ...
                  'distribution (res.pit), where at most %.2g%% would for a calibrated ', ...
                  'filter; its bands (and those of what it informs) are too narrow to ', ...
                  'trust. Use more ''members'', noise on the forcings or states ', ...
                  '(''forcing_noise'', ''state_noise'') or on the parameters ', ...
                  '(''param_move''), or, for a model made of components, ''coupling'' ''weak'''], ...
                 g.names{v + 1}, k, n, 100 * k / n, 100 * (1 - 2 * tau), 100 * p0);
        break;   % one warning per variable
      end
    end
  end
end

function c = summary_rows (c, sm, model, fn)
  % the states the run summarises (option summarize): the visible ones
  % (not flagged internal by the model) and those named, or all; the
  % parameters always. With every row summarised the settings carry no
  % row list (the core's default: all rows).
  n = numel (model.states);
  internal = false (1, n);
  if (isfield (model, 'internal') && numel (model.internal) == n)
    internal = logical (model.internal(:)');
  end
  if (ischar (sm))
    summarized = ~internal | strcmp (sm, 'all');
  else
    [known, at] = ismember (sm, model.states);
    bad = find (~known & ~ismember (sm, model.params), 1);
    if (~isempty (bad))
      error (['sluice:' fn ':unknownstate'], ...
             'summarize names ''%s'', which is neither a state nor a parameter of the model', ...
             sm{bad});
    end
    summarized = ~internal;
    summarized(at(known)) = true;
  end
  if (~all (summarized))
    % 1-based rows, increasing: the states, then every parameter
    c.summary_rows = [find(summarized), n + (1:numel (model.params))];
  end
end

function opts = parse_options (args, fn)
  % the run's options: the defaults (sluice.internal.run_defaults),
  % checked and put in their working form once per session, with the
  % options given merged in; only the options given are checked again,
  % in the order below (the first bad one is reported)
  persistent base unset
  if (isempty (base))
    unset = sluice.internal.run_defaults ();
    names = fieldnames (unset);
    for k = 1:numel (names)
      unset.(names{k}) = true;
    end
    base = check_options (sluice.internal.run_defaults (), unset, 'filter');
    for k = 1:numel (names)
      unset.(names{k}) = false;
    end
  end
  [opts, g] = sluice.internal.name_value (base, args, fn, unset);
  if (numel (args) > 0)
    opts = check_options (opts, g, fn);
  end
end

function opts = check_options (opts, g, fn)
  % the checks of the options flagged in g (and of what depends on them)
  if (g.origin || g.time_unit)
    opts.calendar = [];
    if (~(isempty (opts.origin) && isnumeric (opts.origin)))
      opts.calendar = sluice.internal.time_origin (opts.origin, opts.time_unit, fn);
    else
      sluice.internal.time_unit (opts.time_unit, fn, 'time_unit');
    end
  end
  core = core_lists ();
  if (g.method)
    methods = core.analyses;
    if (~ischar (opts.method) || ~any (strcmp (opts.method, methods)))
      error (['sluice:' fn ':badmethod'], 'unknown method; the methods are %s', ...
             strjoin (methods, ', '));
    end
    % the weighted ensemble Kalman filter is a particle filter with another
    % proposal: the particle filter's path with a flag
    opts.wenkf = strcmp (opts.method, 'wenkf');
    if (opts.wenkf)
      opts.method = 'pf';
    end
  end
  if (g.inflation)
    opts.inflation = real_scalar (opts.inflation, 'inflation', fn);
    if (opts.inflation < 1)
      error (['sluice:' fn ':badoption'], 'inflation must be >= 1');
    end
  end
  for f = {'rtpp', 'rtps'}
    if (g.(f{1}))
      v = real_scalar (opts.(f{1}), f{1}, fn);
      if (v < 0 || v > 1)
        error (['sluice:' fn ':badoption'], '%s must lie in [0, 1]', f{1});
      end
    end
  end
  if (g.inflation_max)
    opts.inflation_max = real_scalar (opts.inflation_max, 'inflation_max', fn);
    if (opts.inflation_max < 1)
      error (['sluice:' fn ':badoption'], 'inflation_max must be >= 1');
    end
  end
  if (g.adaptive_inflation)
    if (~(islogical (opts.adaptive_inflation) || isnumeric (opts.adaptive_inflation)) || ...
        ~isscalar (opts.adaptive_inflation))
      error (['sluice:' fn ':badoption'], 'adaptive_inflation must be true or false');
    end
    opts.adaptive_inflation = logical (opts.adaptive_inflation);
  end

  if (g.members || g.param_move || g.inner_members)
    opts.members = whole (opts.members, 'members', 1, 2^31, fn);
  end
  if (g.seed && ~isempty (opts.seed))
    opts.seed = whole (opts.seed, 'seed', 0, 2^53, fn);
  end
  if (g.t0 && ~isempty (opts.t0))
    opts.t0 = real_scalar (opts.t0, 't0', fn);
  end
  if (g.times)
    opts.times = real_vector (opts.times, 'times', true, fn);
  end
  if (g.state_noise)
    opts.state_noise = real_vector (opts.state_noise, 'state_noise', false, fn);
    if (any (opts.state_noise < 0))
      error (['sluice:' fn ':badoption'], 'state_noise must be >= 0');
    end
  end
  if (g.param_move)
    moves = [{'auto'}, core.moves, {'smc2'}];
    if (~ischar (opts.param_move) || ~any (strcmp (opts.param_move, moves)))
      error (['sluice:' fn ':badoption'], 'param_move must be one of ''%s''', ...
             strjoin (moves, ''', '''));
    end
  end
  if (g.kernel_scale)
    ks = real_scalar (opts.kernel_scale, 'kernel_scale', fn);
    if (~(ks > 0))
      error (['sluice:' fn ':badoption'], ...
             'kernel_scale (a factor on the kernel bandwidth) must be > 0, got %g', ks);
    end
  end
  if (g.temper_ess)
    te = opts.temper_ess;
    if (ischar (te) && strcmp (te, 'off'))
      opts.temper_ess = 0;
    else
      te = real_scalar (te, 'temper_ess', fn);
      if (~(te >= 0 && te <= 1))
        error (['sluice:' fn ':badoption'], ...
               'temper_ess (a fraction of the members) must lie in (0, 1], or 0 or ''off'', got %g', te);
      end
      opts.temper_ess = te;
    end
  end
  if (g.temper_max_steps)
    opts.temper_max_steps = whole (opts.temper_max_steps, 'temper_max_steps', 1, 10000, fn);
  end
  if (g.move_diversity)
    md = real_scalar (opts.move_diversity, 'move_diversity', fn);
    if (~(md > 0 && md <= 1))
      error (['sluice:' fn ':badoption'], ...
             'move_diversity (a fraction of the members) must lie in (0, 1], got %g', md);
    end
  end
  if (g.move_sweeps)
    opts.move_sweeps = whole (opts.move_sweeps, 'move_sweeps', 1, 1000, fn);
  end
  if (g.move_paths)
    mp = real_scalar (opts.move_paths, 'move_paths', fn);
    if (~(mp >= 0 && mp <= 1))
      error (['sluice:' fn ':badoption'], ...
             'move_paths (the starting step of the path moves) must lie in [0, 1] (0: off), got %g', mp);
    end
  end
  if (g.inner_members)
    opts.inner_members = whole (opts.inner_members, 'inner_members', 1, 2^31, fn);
  end
  if (strcmp (opts.param_move, 'smc2'))
    if (~strcmp (opts.method, 'pf'))
      error (['sluice:' fn ':badoption'], 'param_move ''smc2'' is a particle method: use method ''pf''');
    end
    % members counts the parameter vectors; each runs inner_members states
    if (opts.members * opts.inner_members > 2^31)
      error (['sluice:' fn ':badoption'], ...
             'members x inner_members must be at most 2^31, got %d x %d', ...
             opts.members, opts.inner_members);
    end
    opts.members = opts.members * opts.inner_members;
  end
  if (g.move_scale)
    ms = real_scalar (opts.move_scale, 'move_scale', fn);
    if (~(ms > 0) || ~isfinite (ms))
      error (['sluice:' fn ':badoption'], ...
             'move_scale (a factor on the proposal step) must be finite and > 0, got %g', ms);
    end
  end
  if (g.param_step)
    opts.param_step = real_vector (opts.param_step, 'param_step', false, fn);
    if (any (opts.param_step < 0))
      error (['sluice:' fn ':badoption'], 'param_step must be >= 0');
    end
  end
  if (g.liu_west_delta)
    d = real_scalar (opts.liu_west_delta, 'liu_west_delta', fn);
    if (~(d > 0 && d <= 1))
      error (['sluice:' fn ':badoption'], 'liu_west_delta must lie in (0, 1]');
    end
  end
  if (g.resample)
    if (~ischar (opts.resample) || ...
        ~any (strcmp (opts.resample, core.resamplers)))
      error (['sluice:' fn ':badscheme'], ...
             'resample must be ''systematic'', ''stratified'', ''residual'' or ''multinomial''');
    end
  end
  if (g.resample_threshold)
    th = real_scalar (opts.resample_threshold, 'resample_threshold', fn);
    if (~(th >= 0 && th <= 1))
      error (['sluice:' fn ':badoption'], 'resample_threshold must lie in [0, 1]');
    end
  end
  if (g.quantiles)
    opts.quantiles = real_vector (opts.quantiles, 'quantiles', true, fn);
    if (any (opts.quantiles < 0 | opts.quantiles > 1))
      error (['sluice:' fn ':badoption'], 'quantile levels must lie in [0, 1]');
    end
    opts.quantiles = opts.quantiles(:)';
  end
  if (g.history)
    if (~(islogical (opts.history) || isnumeric (opts.history)) || ~isscalar (opts.history) || ...
        isnan (opts.history))
      error (['sluice:' fn ':badoption'], 'history must be true or false');
    end
    opts.history = logical (opts.history);
  end
  if (g.derived_summary)
    if (~(islogical (opts.derived_summary) || isnumeric (opts.derived_summary)) || ...
        ~isscalar (opts.derived_summary) || isnan (opts.derived_summary))
      error (['sluice:' fn ':badoption'], 'derived_summary must be true or false');
    end
    opts.derived_summary = logical (opts.derived_summary);
  end
  if (g.summarize)
    sm = opts.summarize;
    if (ischar (sm) && isrow (sm) && any (strcmp (sm, {'visible', 'all'})))
      % a keyword
    elseif (iscellstr (sm) && all (cellfun (@(x) isrow (x) || isempty (x), sm(:))))
      opts.summarize = sm(:)';
    else
      error (['sluice:' fn ':badoption'], ...
             'summarize must be ''visible'', ''all'' or a cell of state names, got %s', ...
             sluice.internal.describe (sm));
    end
  end
  if (g.lag)
    lag = opts.lag;
    % (a vector: one lag per component, weak coupling only, checked
    % with the components by coupling_settings)
    if (~isa (lag, 'double') || ~isreal (lag) || isempty (lag) || ~isvector (lag) || ...
        any (isnan (lag)) || any (lag < 0) || any (isfinite (lag) & lag ~= fix (lag)))
      error (['sluice:' fn ':badoption'], ...
             'lag must be a whole number of cycles >= 0, or Inf (or one per component)');
    end
  end
  if (g.threads)
    opts.threads = whole (opts.threads, 'threads', 0, 256, fn);
  end
  ck = opts.checkpoint;
  if (g.checkpoint)
    if (~(ischar (ck) && (isempty (ck) || isrow (ck))))
      error (['sluice:' fn ':badoption'], 'checkpoint must be a file name (text), or '''' for none');
    end
  end
  if (g.checkpoint_every)
    opts.checkpoint_every = whole (opts.checkpoint_every, 'checkpoint_every', 1, 1e15, fn);
  end
  if (~isempty (ck) && isempty (opts.seed))
    error (['sluice:' fn ':badoption'], ...
           'a run with a checkpoint needs a ''seed'': a resumed run must draw the same numbers');
  end
  if (g.mpi)
    v = opts.mpi;
    if (ischar (v) && strcmpi (v, 'auto'))
      opts.mpi = 'auto';
    elseif ((islogical (v) || isnumeric (v)) && isscalar (v) && (v == 0 || v == 1))
      opts.mpi = logical (v);
    else
      error (['sluice:' fn ':badoption'], 'mpi must be ''auto'', true or false');
    end
  end
  if (g.progress)
    pr = opts.progress;
    if (ischar (pr) && strcmp (pr, 'auto'))
      opts.progress = 2;
    elseif ((islogical (pr) || isnumeric (pr)) && isscalar (pr) && ~isnan (pr))
      opts.progress = double (logical (pr));
    else
      error (['sluice:' fn ':badoption'], 'progress must be ''auto'', true or false');
    end
  end
end

function v = whole (v, what, lo, hi, fn)
  if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v) || ...
      v ~= fix (v) || v < lo || v > hi)
    error (['sluice:' fn ':badoption'], '%s must be a whole number from %g to %g', ...
           what, lo, hi);
  end
  v = double (v);
end

function v = real_scalar (v, what, fn)
  if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v))
    error (['sluice:' fn ':badoption'], '%s must be a finite real scalar', what);
  end
  v = double (v);
end

function v = real_vector (v, what, allow_empty, fn)
  if (~isa (v, 'double') || ~isreal (v) || issparse (v) || ...
      (~allow_empty && isempty (v)) || (~isempty (v) && ~isvector (v)) || ...
      any (~isfinite (v(:))))
    error (['sluice:' fn ':badoption'], '%s must be a finite real vector', what);
  end
  v = double (v(:));
end

function v = expand (v, n, what, fn)
  if (n == 0)
    v = zeros (0, 1);
  elseif (isscalar (v))
    v = v(ones (n, 1), 1);
  elseif (numel (v) ~= n)
    error (['sluice:' fn ':badoption'], '%s needs 1 or %d values, got %d', what, n, numel (v));
  end
end

function c = add_localization (c, opts, model, tab, obs, derived, fn)
  % positions of states and observations for the ensemble Kalman methods
  % (none: the builder's settings stand)
  L = opts.localization;
  if (isempty (L))
    if (strcmp (opts.method, 'letkf'))
      error (['sluice:' fn ':badlocalization'], ...
             'the LETKF needs opts.localization (geometry, positions, radius)');
    end
    return;
  end
  if (strcmp (opts.method, 'pf'))
    error (['sluice:' fn ':badoption'], 'localization applies to the ensemble Kalman methods');
  end
  if (~isstruct (L) || ~isscalar (L) || ~isfield (L, 'radius'))
    error (['sluice:' fn ':badlocalization'], ...
           'localization must be a struct with fields geometry, radius and positions');
  end
  geom = 'line';
  if (isfield (L, 'geometry'))
    geom = L.geometry;
  end
  core = core_lists ();
  if (~ischar (geom) || ~any (strcmp (geom, core.geometries)))
    error (['sluice:' fn ':badlocalization'], ...
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
    error (['sluice:' fn ':badlocalization'], 'localization.positions (n x 2) are needed in 2-D');
  end
  if (~isa (pos, 'double') || ~isreal (pos) || ~isequal (size (pos), [n dim]) || ...
      any (~isfinite (pos(:))))
    error (['sluice:' fn ':badlocalization'], ...
           'localization.positions must be %d x %d finite real doubles (one row per state)', n, dim);
  end
  c.geometry = geom;
  if (strcmp (geom, 'ring'))
    if (~isfield (L, 'period'))
      error (['sluice:' fn ':badlocalization'], 'a ring needs localization.period');
    end
    c.period_or_radius = real_scalar (L.period, 'localization.period', fn);
  elseif (strcmp (geom, 'sphere'))
    c.period_or_radius = 6371;
    if (isfield (L, 'sphere_radius'))
      c.period_or_radius = real_scalar (L.sphere_radius, 'localization.sphere_radius', fn);
    end
  end
  if (c.period_or_radius < 0 || (any (strcmp (geom, {'ring', 'sphere'})) && c.period_or_radius == 0))
    error (['sluice:' fn ':badlocalization'], 'the period or sphere radius must be > 0');
  end
  % parameters are not localised: they see every observation, damped by
  % param_factor
  c.state_pos = [pos; nan(p, dim)];
  if (isfield (L, 'param_factor'))
    c.param_factor = real_scalar (L.param_factor, 'localization.param_factor', fn);
    if (c.param_factor <= 0 || c.param_factor > 1)
      error (['sluice:' fn ':badlocalization'], 'localization.param_factor must lie in (0, 1]');
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
        error (['sluice:' fn ':badobs'], ...
               'observation column ''%s'' must give one finite position per row (NaN: the observed state''s)', ...
               cols{d});
      end
      given = ~isnan (v(:));
      opos(given, d) = v(given);
    end
  end
  bad = find (any (isnan (opos), 2), 1);
  if (~isempty (bad))
    error (['sluice:' fn ':badobs'], ...
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
        error (['sluice:' fn ':badlocalization'], ...
               'localization.radius.%s: the model has no state, parameter or derived quantity of that name', f{k});
      end
      if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v) || v <= 0)
        error (['sluice:' fn ':badlocalization'], ...
               'localization.radius.%s must be one finite real number > 0', f{k});
      end
      oc(strcmp (names(tab.var), f{k})) = v;
    end
    bad = find (isnan (oc), 1);
    if (~isempty (bad))
      error (['sluice:' fn ':badlocalization'], ...
             'observation row %d (%s): no localisation radius for this variable', bad, names{tab.var(bad)});
    end
  else
    oc = repmat (real_scalar (r, 'localization.radius', fn), m, 1);
  end
  if (any (~(oc > 0)))
    error (['sluice:' fn ':badlocalization'], 'localisation radii must be > 0');
  end
  c.obs_pos = opos;
  c.obs_c = oc;
end

function check_memory (n, p, N, fn)
  % refuse up front an initial ensemble that cannot be drawn: the states
  % and parameters of every member, and as much again while they are
  % drawn. What the run needs besides (its workspace, outputs and
  % history, by part) the compiled run checks exactly before it
  % allocates anything (sluice.kernel.pf_run).
  need = 16 * N * (n + p);
  if (need < 2^30 && isempty (getenv ('SLUICE_MEMORY_AVAILABLE')))
    return;   % small runs: not worth the 3 ms memory () costs per call
  end
  sluice.internal.ensure_memory (need, fn, sprintf ('the initial ensemble of %d members', N), ...
                                 need, 'states and parameters of every member', {'members'});
end

function plan = prior_plan (model, prior, fn)
  % the checks of the prior against the model, and what the initial
  % ensemble is drawn from: the entries' distributions as
  % sluice.kernel.draw takes them, the row each entry fills, the columns
  % (x0, defaults) of the rows no entry fills, the parameters' bounds and
  % their priors as the core weighs them (id -1: no prior, the default
  % holds); role (p x 1) says where each parameter's value comes from: 0
  % the default, k > 0 the fixed prior entry k, -1 draws of its prior
  n = numel (model.states);
  p = numel (model.params);
  plan = struct ();
  plan.x0 = model.x0(:);
  plan.def = model.defaults(:);
  plan.lower = model.defaults(:);
  plan.upper = model.defaults(:);
  plan.pdist = struct ('id', -ones (p, 1), 'a', zeros (p, 1), 'b', zeros (p, 1), ...
                       'lo', zeros (p, 1), 'hi', zeros (p, 1));
  plan.role = zeros (p, 1);
  plan.ids = [];
  plan.a = [];
  plan.b = [];
  plan.lo = [];
  plan.hi = [];
  plan.state_rows = zeros (0, 1);   % (row of X0, prior entry) pairs
  plan.state_entries = zeros (0, 1);
  plan.param_rows = zeros (0, 1);   % (row of P0, prior entry) pairs
  plan.param_entries = zeros (0, 1);
  if (~isempty (prior))
    [plan.ids, plan.a, plan.b, plan.lo, plan.hi, prior_names] = ...
        sluice.internal.check_prior (prior, 2, fn);
    % one look-up of every name (sorted: a wide model has thousands)
    [in_s, srow] = ismember (prior_names, model.states);
    [in_p, prow] = ismember (prior_names, model.params);
    bad = find (~in_s & ~in_p, 1);
    if (~isempty (bad))
      error (['sluice:' fn ':badprior'], ...
             'the prior names ''%s'', which is neither a state nor a parameter of the model', ...
             prior_names{bad});
    end
    core = core_lists ();
    fixed = find (strcmp ('fixed', core.distributions)) - 1;
    plan.state_entries = find (in_s(:));
    plan.state_rows = reshape (srow(plan.state_entries), [], 1);
    for k = reshape (find (~in_s), 1, [])
      j = prow(k);
      plan.param_rows(end + 1, 1) = j;
      plan.param_entries(end + 1, 1) = k;
      plan.lower(j) = prior(k).lower;
      plan.upper(j) = prior(k).upper;
      plan.pdist = prior_entry (plan.pdist, j, prior(k));
      if (plan.ids(k) == fixed)
        plan.role(j) = k;
      else
        plan.role(j) = -1;
      end
      if (plan.lower(j) < model.lower(j) || plan.upper(j) > model.upper(j))
        error (['sluice:' fn ':badprior'], ...
               ['the prior of ''%s'' allows [%g, %g], outside the parameter''s bounds ', ...
                '[%g, %g]: choose a prior within them (lognormal, truncnormal, uniform)'], ...
               prior_names{k}, plan.lower(j), plan.upper(j), model.lower(j), model.upper(j));
      end
    end
  end
  % a prior draw is never NaN: only a default can be missing
  missing = find (isnan (plan.def) & plan.role == 0, 1);
  if (~isempty (missing))
    error (['sluice:' fn ':badprior'], ...
           'parameter ''%s'' has neither a prior nor a default value', ...
           model.params{missing});
  end
end

function [X0, P0] = draw_members (plan, N, seed, n, fn)
  % the initial ensemble of N members for the seed
  try
    X0 = plan.x0(:, ones (1, N));
    P0 = plan.def(:, ones (1, N));
  catch err
    error (['sluice:' fn ':nomemory'], 'cannot hold %d members of %d states: %s', ...
           N, n, err.message);
  end
  if (~isempty (plan.ids))
    D = sluice.kernel.draw (plan.ids, plan.a, plan.b, plan.lo, plan.hi, N, seed);
    X0(plan.state_rows, :) = D(plan.state_entries, :);
    P0(plan.param_rows, :) = D(plan.param_entries, :);
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

function t = ifelse_s (plural)
  t = '';
  if (plural)
    t = 's';
  end
end
