% -*- texinfo -*-
% @deftypefn  {} {@var{res} =} sluice.twin (@var{model}, @var{truth}, @var{network}, @var{opts})
% @deftypefnx {} {@var{res} =} sluice.twin (@var{model}, @var{truth}, @var{network}, @var{name}, @var{value}, @dots{})
% Twin experiment: assimilate synthetic observations of a known truth.
% It runs a known truth, observes it through a synthetic
% network, assimilates the observations and scores the filter against the
% truth.
%
% @var{model} is a spec from @code{sluice.model}. @var{truth} is a struct
% with @code{times} (increasing output times of the truth run, which
% starts at @code{times(1)}) and optionally @code{x0} (n x 1, default the
% model's @code{x0}), @code{params} (p x 1, default the model's defaults),
% @code{forcing} and @code{events} (as @code{sluice.simulate} takes them).
% The truth is run with @code{sluice.simulate}.
%
% @var{network} is a struct array, one element per observed series:
% @table @code
% @item variable
% the name of a state or parameter of the model, or of a derived
% quantity defined by the filter option @code{operators} (given in
% @code{filter}); the truth of a derived quantity is the operator applied
% to the true states and parameters.
% @item every
% the observation interval (model time, > 0).
% @item from, to
% the window of the series (default the truth's first and last time; it
% must lie within them). Observations are made at from, from + every,
% @dots{} up to to.
% @item sigma
% the error standard deviation (> 0; not used by the count families).
% @item family
% the likelihood of the observations, as in @code{sluice.filter}:
% @code{'gaussian'} (default: y = x + sigma z), @code{'lognormal'}
% (log y = log x + sigma z; the truth must be > 0 there),
% @code{'student_t'} (y = x + sigma t with @code{dof} degrees of
% freedom), @code{'censored'} (y = max(x + sigma z, @code{limit}): a
% value at the detection limit means "at or below"), @code{'poisson'}
% (a count y ~ Poisson(x); the truth must be >= 0) or @code{'binomial'}
% (y successes of @code{n} trials, success probability 1/(1 + exp(-x)):
% x is the logit, e.g. a derived quantity; the answers of a
% questionnaire). Gaussian, lognormal and censored values are made from
% the standard normal of the observation (see @code{seed}); Student-t,
% Poisson and binomial values invert the family's CDF exactly at a
% uniform from the same stream. The truth observed must be finite.
% @item n, dof, limit
% the family's extra number: binomial trials (a whole number >= 1),
% Student-t degrees of freedom (> 0), detection limit.
% @item missing
% the fraction of the series' observations dropped at random (in [0, 1],
% default 0): round(missing * count) of them, chosen at random, get the
% value NaN, which the filter skips and counts.
% @end table
%
% Options (a struct or name/value pairs):
% @table @code
% @item seed
% whole number from 0 to 2^51 - 1 (default 1). Everything random follows
% from it: the truth run, the observation errors (standard normals from
% @code{sluice.draw}'s counter-based streams, one stream per observation,
% so they do not depend on Octave's generators) and the filter runs. The
% three use different streams, so no member of the filter shares the
% truth's noise.
% @item prior
% a struct array from @code{sluice.prior}: the filter's prior (required).
% @item filter
% a cell of name/value options passed to @code{sluice.filter}, e.g.
% @code{@{'members', 500, 'method', 'enkf'@}}. By default the filter
% starts at the truth's first time (@code{t0}), uses the truth's forcing
% and events and the seed derived from @code{seed}; each of these may be
% set here instead. The truth's times are always added to the filter's
% output @code{times}, and the quantile levels 0.05 and 0.95 to its
% @code{quantiles}.
% @item openloop
% true (default) to run the filter also with no observations, with the
% same prior, options and seed: the open-loop reference. With a
% @code{'checkpoint'} file among the filter's options, the open loop, a
% run of its own, keeps its checkpoint in @var{file}@code{.openloop}; the
% same call then resumes both.
% @end table
%
% The result @var{res} has @code{truth} (@code{times}, @code{X} n x T,
% @code{params} p x 1), @code{obs} (the long observation table that was
% assimilated: @code{time}, @code{variable}, @code{value}, @code{sigma},
% @code{family}, in time order), @code{filter} (the result of
% @code{sluice.filter}), @code{openloop} (its open-loop counterpart, or
% [] when not asked), @code{seed} and @code{scores}:
% @table @code
% @item names
% (n + p + d) x 1: the states, the parameters, then the d derived
% quantities of the filter option @code{operators}.
% @item times
% the truth's times, where the scores are taken.
% @item rmse, spread
% (n + p + d) x 1: the root-mean-square error of the filter mean against
% the truth, and the mean width of the filter's 90% band (quantiles 0.05
% to 0.95), both over @code{times}. A derived quantity is scored against
% its truth (the operator applied to the true states and parameters,
% at every time) through the filter's summary of it (@code{res.derived}).
% With the filter option @code{derived_summary} false there is no such
% summary: the mean of a linear one (@code{H}) is then H times the mean
% of the states and parameters, and the mean of a function operator
% (@code{fun}) and every derived band are NaN.
% @item openloop_rmse, openloop_spread
% the same for the open loop (NaN without it).
% @item param_error, openloop_param_error
% p x 1: the mean at the last cycle minus the true parameter.
% @end table
%
% Example:
% @example
% @group
% spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1);
% truth = struct ('times', 0:50, 'x0', 2);
% net = struct ('variable', 'x1', 'every', 2, 'sigma', 0.3);
% res = sluice.twin (spec, truth, net, 'seed', 3, ...
%                    'prior', sluice.prior ('x1', 'normal', [0 2]), ...
%                    'filter', @{'members', 500@});
% [res.scores.rmse, res.scores.openloop_rmse]
% plot (res.truth.times, res.truth.X, res.filter.times, res.filter.states.mean)
% @end group
% @end example
%
% Errors: @code{sluice:twin:badtruth}, @code{sluice:twin:badnetwork}
% (not a struct array, unknown variable, unknown family, invalid interval,
% window, sigma or fraction, a non-finite truth, lognormal observation of
% a truth <= 0, Poisson observation of a truth < 0 or above 2^53),
% @code{sluice:twin:emptynetwork} (no observation time at all),
% @code{sluice:twin:noprior}, @code{sluice:twin:badoption}; the truth's
% state and parameters raise @code{sluice:twin:badstate} and
% @code{sluice:twin:badparams}, errors of the truth run
% @code{sluice:twin:<reason>}, and errors of the filter options keep
% their @code{sluice:filter:} identifiers.
% @seealso{sluice.filter, sluice.simulate, sluice.draw, sluice.prior}
% @end deftypefn
function res = twin (model, truth, network, varargin)
  if (nargin < 3)
    sluice.internal.compat ('usage', mfilename ());
  end
  opts = struct ('seed', 1, 'prior', [], 'filter', {{}}, 'openloop', true);
  opts = sluice.internal.name_value (opts, varargin, 'twin');
  seed = opts.seed;
  if (~isa (seed, 'double') || ~isreal (seed) || ~isscalar (seed) || ~isfinite (seed) || ...
      seed ~= fix (seed) || seed < 0 || seed > 2^51 - 1)
    error ('sluice:twin:badoption', 'seed must be a whole number from 0 to 2^51 - 1');
  end
  sluice.internal.check_model (model, 1, 'twin');
  if (isempty (opts.prior))
    error ('sluice:twin:noprior', 'option ''prior'' (a struct array from sluice.prior) is required');
  end
  sluice.internal.check_prior (opts.prior, 'option ''prior''', 'twin');
  if (~iscell (opts.filter) || mod (numel (opts.filter), 2) ~= 0)
    error ('sluice:twin:badoption', ...
           'option ''filter'' must be a cell of name/value pairs for sluice.filter, got %s', ...
           sluice.internal.describe (opts.filter));
  end
  ol = opts.openloop;
  if (~(islogical (ol) || isnumeric (ol)) || ~isscalar (ol) || ~isreal (ol) || isnan (ol))
    error ('sluice:twin:badoption', 'openloop must be true or false');
  end
  opts.openloop = logical (ol);
  % separate, non-overlapping streams for the truth, the observation
  % errors and the filter
  seed_truth = 4 * seed;
  seed_obs = 4 * seed + 1;
  seed_filter = 4 * seed + 2;

  [x0, params, times, forcing, events] = check_truth (model, truth);
  names = [model.states(:); model.params(:)];
  n = numel (model.states);
  ops = sluice.internal.operators (filter_option (opts.filter, 'operators'), model);
  net = check_network (network, [names; ops.names], times);

  % the truth, at its own times and at every observation time
  tobs = cell2mat (cellfun (@(t) t(:), {net.times}', 'UniformOutput', false));
  tall = unique ([times(:); tobs(:)])';
  try
    % run as this function's step: its errors are sluice:twin:<reason>
    Xall = sluice.internal.simulate_run (model, x0, params, tall, forcing, ...
                                       struct ('events', events, 'seed', seed_truth), 'twin');
  catch err
    sluice.internal.raise_again (err.identifier, 'sluice:twin:failed', ...
                               ['the truth run failed: ' err.message]);
  end
  truth_all = [Xall; repmat(params(:), 1, numel (tall))];
  if (~isempty (ops.names))
    truth_all = [truth_all; derived_truth(ops, model, tall, Xall, params, net, numel (names), ...
                                          summarised (opts.filter))];
  end

  obs = synthesize (net, [names; ops.names], tall, truth_all, seed_obs);

  % filter options: the twin's defaults, then the user's
  fo = opts.filter(:)';
  given = fo(1:2:end);
  if (~iscellstr (given))
    error ('sluice:twin:badoption', 'option ''filter'': the option names must be strings');
  end
  base = {'t0', times(1), 'seed', seed_filter};
  if (~isempty (forcing))
    base = [base, {'forcing', forcing}];
  end
  if (~isempty (events))
    base = [base, {'events', events}];
  end
  keep = true (1, numel (base) / 2);
  for k = 1:2:numel (base)
    keep((k + 1) / 2) = ~any (strcmp (base{k}, given));
  end
  base = reshape (base, 2, []);
  base = base(:, keep);
  extra_times = [];
  levels = [];
  rest = {};
  for k = 1:2:numel (fo)
    switch (fo{k})
      case 'times'
        extra_times = fo{k + 1};
      case 'quantiles'
        levels = fo{k + 1};
      otherwise
        rest = [rest, fo(k:k+1)];
    end
  end
  if (~isa (extra_times, 'double') || ~isreal (extra_times) || any (~isfinite (extra_times(:))))
    error ('sluice:filter:badoption', 'times must be a finite real vector');
  end
  if (~isa (levels, 'double') || ~isreal (levels) || any (~isfinite (levels(:))))
    error ('sluice:filter:badoption', 'quantile levels must lie in [0, 1]');
  end
  if (isempty (levels))
    levels = [0.05 0.5 0.95];
  end
  levels = unique ([levels(:)', 0.05, 0.95]);
  out_times = unique ([times(:); extra_times(:)])';
  fargs = [base(:)', rest, {'times', out_times, 'quantiles', levels}];

  rf = sluice.filter (model, opts.prior, obs, fargs{:});
  ro = [];
  if (opts.openloop)
    empty = struct ('time', zeros (0, 1), 'variable', {cell(0, 1)}, ...
                    'value', zeros (0, 1), 'sigma', zeros (0, 1));
    % a checkpoint of the filter: the open loop, another run, keeps its
    % own, <checkpoint>.openloop
    oargs = fargs;
    ic = 2 * find (strcmp (oargs(1:2:end), 'checkpoint'));
    if (~isempty (ic) && ischar (oargs{ic(end)}) && ~isempty (oargs{ic(end)}))
      oargs{ic(end)} = [oargs{ic(end)} '.openloop'];
    end
    ro = sluice.filter (model, opts.prior, empty, oargs{:});
  end

  res = struct ();
  [~, it] = ismember (times, tall);
  res.truth = struct ('times', times, 'X', Xall(:, it), 'params', params(:));
  res.obs = obs;
  res.filter = rf;
  res.openloop = ro;
  res.seed = seed;
  Xt = truth_all(:, it);
  sc = struct ('names', {[names; ops.names]}, 'times', times);
  [sc.rmse, sc.spread, sc.param_error] = score (rf, Xt, times, params, ops);
  if (opts.openloop)
    [sc.openloop_rmse, sc.openloop_spread, sc.openloop_param_error] = ...
        score (ro, Xt, times, params, ops);
  else
    sc.openloop_rmse = nan (numel (sc.names), 1);
    sc.openloop_spread = nan (numel (sc.names), 1);
    sc.openloop_param_error = nan (numel (params), 1);
  end
  res.scores = sc;
end

function v = filter_option (fo, name)
  v = [];
  if (iscell (fo))
    for k = 1:2:numel (fo) - 1
      if (ischar (fo{k}) && strcmp (fo{k}, name))
        v = fo{k + 1};
      end
    end
  end
end

function tf = summarised (fo)
  % whether the filter summarises the derived quantities: its option
  % derived_summary (default true; the filter checks the value)
  tf = true;
  for k = 1:2:numel (fo) - 1
    if (ischar (fo{k}) && strcmp (fo{k}, 'derived_summary') && isscalar (fo{k + 1}) && ...
        (islogical (fo{k + 1}) || isnumeric (fo{k + 1})))
      tf = logical (fo{k + 1});
    end
  end
end

function Y = derived_truth (ops, model, tall, Xall, params, net, v, every)
  % the derived quantities along the truth: linear rows at every time,
  % function rows at every time when the filter summarises them (every),
  % otherwise only where a series needs them (one call per time)
  T = numel (tall);
  P = repmat (params(:), 1, T);
  if (isempty (P))
    P = zeros (0, T);
  end
  nl = size (ops.H, 1);
  Y = nan (numel (ops.names), T);
  if (nl > 0)
    Y(1:nl, :) = ops.H * [Xall; P];
  end
  if (~isempty (ops.funs))
    used = [net.var] > v + nl;
    need = false (1, T);
    for e = net(used)
      need = need | ismember (tall, e.times);
    end
    if (every)
      need(:) = true;
    end
    for it = find (need)
      [y, msg, id] = sluice.internal.observe (ops.funs, ops.rows, tall(it), Xall(:, it), P(:, it));
      if (~isempty (msg))
        if (isempty (id))
          id = 'sluice:twin:badoperator';
        end
        error (id, 'on the truth: %s', msg);
      end
      Y(nl+1:end, it) = y;
    end
  end
end

function [x0, params, times, forcing, events] = check_truth (model, truth)
  if (~isstruct (truth) || ~isscalar (truth) || ~isfield (truth, 'times'))
    error ('sluice:twin:badtruth', ...
           'argument 2 (truth): expected a struct with field times, got %s', ...
           sluice.internal.describe (truth));
  end
  known = {'times', 'x0', 'params', 'forcing', 'events'};
  f = fieldnames (truth);
  for k = 1:numel (f)
    if (~any (strcmp (f{k}, known)))
      error ('sluice:twin:badtruth', ...
             'argument 2 (truth): unknown field ''%s'' (the fields are %s)', ...
             f{k}, strjoin (known, ', '));
    end
  end
  times = truth.times;
  if (~isa (times, 'double') || ~isreal (times) || issparse (times) || isempty (times) || ...
      ~isvector (times) || any (~isfinite (times)) || any (diff (times) <= 0))
    error ('sluice:twin:badtruth', ...
           'argument 2 (truth): times must be a non-empty, finite, increasing real double vector');
  end
  times = times(:)';
  x0 = [];
  params = [];
  forcing = [];
  events = [];
  if (isfield (truth, 'x0'))
    x0 = truth.x0;
  end
  if (isfield (truth, 'params'))
    params = truth.params;
  end
  if (isfield (truth, 'forcing'))
    forcing = truth.forcing;
  end
  if (isfield (truth, 'events'))
    events = truth.events;
  end
  [x0, params] = sluice.internal.check_state (model, x0, params, 1, 'twin');
end

function net = check_network (network, names, times)
  if (isempty (network) && (isstruct (network) || isnumeric (network)))
    error ('sluice:twin:emptynetwork', 'argument 3 (network): the network observes nothing');
  end
  if (~isstruct (network) || ~isvector (network))
    error ('sluice:twin:badnetwork', ...
           'argument 3 (network): expected a struct array, got %s', ...
           sluice.internal.describe (network));
  end
  known = {'variable', 'every', 'from', 'to', 'sigma', 'family', 'missing', 'n', 'dof', 'limit'};
  f = fieldnames (network);
  for k = 1:numel (f)
    if (~any (strcmp (f{k}, known)))
      error ('sluice:twin:badnetwork', ...
             'argument 3 (network): unknown field ''%s'' (the fields are %s)', ...
             f{k}, strjoin (known, ', '));
    end
  end
  for k = {'variable', 'every'}
    if (~isfield (network, k{1}))
      error ('sluice:twin:badnetwork', 'argument 3 (network): the field ''%s'' is required', k{1});
    end
  end
  t1 = times(1);
  tT = times(end);
  net = struct ('var', {}, 'times', {}, 'sigma', {}, 'family', {}, 'missing', {}, 'aux', {});
  core = sluice.kernel.core_names ();   % the core's table of families
  families = core.families;
  for k = 1:numel (network)
    e = network(k);
    v = e.variable;
    if (~ischar (v) || ~isrow (v))
      error ('sluice:twin:badnetwork', 'network(%d).variable must be a name (a string)', k);
    end
    iv = find (strcmp (v, names));
    if (isempty (iv))
      error ('sluice:twin:badnetwork', ...
             'network(%d).variable: the model has no state, parameter or derived quantity ''%s'' (it has %s)', ...
             k, v, strjoin (names', ', '));
    end
    every = positive (e.every, k, 'every');
    fam = field_or (e, 'family', 'gaussian');
    if (~ischar (fam) || ~any (strcmp (fam, families)))
      error ('sluice:twin:badnetwork', 'network(%d).family must be one of %s', ...
             k, strjoin (families, ', '));
    end
    counts = any (strcmp (fam, {'poisson', 'binomial'}));
    if (counts)
      sigma = NaN;
    elseif (~isfield (e, 'sigma') || isempty (e.sigma))
      error ('sluice:twin:badnetwork', 'network(%d): a %s series needs sigma', k, fam);
    else
      sigma = positive (e.sigma, k, 'sigma');
    end
    aux = NaN;
    switch (fam)
      case 'binomial'
        aux = field_or (e, 'n', []);
        if (~isa (aux, 'double') || ~isreal (aux) || ~isscalar (aux) || ~isfinite (aux) || ...
            aux < 1 || aux ~= fix (aux) || aux > 2^31)
          error ('sluice:twin:badnetwork', ...
                 'network(%d).n must be the number of trials, a whole number >= 1', k);
        end
      case 'student_t'
        aux = positive (field_or (e, 'dof', []), k, 'dof');
      case 'censored'
        aux = finite_scalar (field_or (e, 'limit', []), k, 'limit');
    end
    from = field_or (e, 'from', t1);
    to = field_or (e, 'to', tT);
    from = finite_scalar (from, k, 'from');
    to = finite_scalar (to, k, 'to');
    if (from < t1 || to > tT)
      error ('sluice:twin:badnetwork', ...
             'network(%d): the window [%g, %g] must lie within the truth''s times [%g, %g]', ...
             k, from, to, t1, tT);
    end
    miss = field_or (e, 'missing', 0);
    if (~isa (miss, 'double') || ~isreal (miss) || ~isscalar (miss) || ~(miss >= 0 && miss <= 1))
      error ('sluice:twin:badnetwork', 'network(%d).missing must be a fraction in [0, 1]', k);
    end
    if (to < from)
      t = zeros (1, 0);
    else
      K = floor ((to - from) / every * (1 + 1e-12) + 1e-9);
      if (K > 1e7)
        error ('sluice:twin:badnetwork', ...
               'network(%d): %g observations are too many (at most 1e7 per series)', k, K + 1);
      end
      t = from + (0:K) * every;
      t = min (t, to);
    end
    net(k) = struct ('var', iv, 'times', t, 'sigma', sigma, 'family', fam, 'missing', miss, ...
                     'aux', aux);
  end
  if (sum (cellfun (@numel, {net.times})) == 0)
    error ('sluice:twin:emptynetwork', ...
           'argument 3 (network): no window holds an observation time');
  end
end

function v = field_or (e, name, default)
  v = default;
  if (isfield (e, name) && ~isempty (e.(name)))
    v = e.(name);
  end
end

function v = positive (v, k, what)
  if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v) || v <= 0)
    error ('sluice:twin:badnetwork', 'network(%d).%s must be a finite real number > 0', k, what);
  end
end

function v = finite_scalar (v, k, what)
  if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v))
    error ('sluice:twin:badnetwork', 'network(%d).%s must be a finite real number', k, what);
  end
end

function obs = synthesize (net, names, tall, truth_all, seed)
  % one standard normal and one uniform per observation; observation j of
  % the series in network order uses member j's stream
  counts = cellfun (@numel, {net.times});
  m = sum (counts);
  D = sluice.draw ([sluice.prior('z', 'normal', [0 1]), ...
                    sluice.prior('u', 'uniform', [0 1]), ...
                    sluice.prior('v', 'uniform', [0 1])], m, seed);
  time = zeros (m, 1);
  var = cell (m, 1);
  value = zeros (m, 1);
  sigma = zeros (m, 1);
  family = cell (m, 1);
  aux = nan (m, 1);
  j = 0;
  for k = 1:numel (net)
    e = net(k);
    r = j + (1:counts(k));
    [~, it] = ismember (e.times, tall);
    x = truth_all(e.var, it);
    bad = find (~isfinite (x), 1);
    if (~isempty (bad))
      error ('sluice:twin:badnetwork', ...
             'network(%d): a %s observation of ''%s'' needs a finite truth, got %g at t = %g', ...
             k, e.family, names{e.var}, x(bad), e.times(bad));
    end
    switch (e.family)
      case 'lognormal'
        bad = find (~(x > 0), 1);
        if (~isempty (bad))
          error ('sluice:twin:badnetwork', ...
                 'network(%d): a lognormal observation of ''%s'' needs a truth > 0, got %g at t = %g', ...
                 k, names{e.var}, x(bad), e.times(bad));
        end
      case 'poisson'
        bad = find (~(x >= 0 & x <= 2^53), 1);
        if (~isempty (bad))
          error ('sluice:twin:badnetwork', ...
                 'network(%d): a Poisson observation of ''%s'' needs a truth from 0 to 2^53, got %g at t = %g', ...
                 k, names{e.var}, x(bad), e.times(bad));
        end
    end
    % the family's draw in the core: gaussian, lognormal and censored from
    % the normal z, the others by inverting the CDF at the uniform
    y = zeros (1, counts(k));
    if (counts(k) > 0)
      y = sluice.kernel.loglik ('sample', e.family, D(1, r), D(3, r), x, e.sigma, e.aux)';
    end
    drop = round (e.missing * counts(k));
    if (drop > 0)
      [~, order] = sort (D(2, r));
      y(order(1:drop)) = NaN;
    end
    time(r) = e.times;
    var(r) = names(e.var);
    value(r) = y;
    sigma(r) = e.sigma;
    family(r) = {e.family};
    aux(r) = e.aux;
    j = j + counts(k);
  end
  [~, order] = sort (time);   % stable: series order within a time
  obs = struct ('time', time(order), 'variable', {var(order)}, 'value', value(order), ...
                'sigma', sigma(order), 'family', {family(order)});
  % the families' extra columns, where some series uses them
  extra = {'n', 'binomial'; 'dof', 'student_t'; 'limit', 'censored'};
  for k = 1:size (extra, 1)
    sel = strcmp (family(order), extra{k, 2});
    if (any (sel))
      a = aux(order);
      a(~sel) = NaN;
      obs.(extra{k, 1}) = a;
    end
  end
end

function [rmse, spread, perr] = score (r, Xt, times, params, ops)
  % rows: the states, the parameters, then the derived quantities, from
  % the filter's summary of them (res.derived). Without it (the filter
  % option derived_summary false) the mean of a linear one is H times
  % the mean of the states and parameters (the weighted mean is linear);
  % a function's mean and every derived band would need the ensemble,
  % and are NaN
  [~, it] = ismember (times, r.times);
  M = [r.states.mean(:, it); r.params.mean(:, it)];
  Qs = [r.states.quantiles(:, :, it); r.params.quantiles(:, :, it)];
  lo = find (abs (r.quantile_levels - 0.05) < 1e-12, 1);
  hi = find (abs (r.quantile_levels - 0.95) < 1e-12, 1);
  v = size (M, 1);
  nd = numel (ops.names);
  nl = size (ops.H, 1);
  D = nan (nd, numel (it));
  if (nl > 0)
    D(1:nl, :) = ops.H * M;
  end
  width = reshape (Qs(:, hi, :) - Qs(:, lo, :), v, []);
  dwidth = nan (nd, 1);
  if (nd > 0 && isfield (r, 'derived') && ~isempty (r.derived))
    D = r.derived.mean(:, it);
    Qd = r.derived.quantiles(:, :, it);
    dwidth = mean (reshape (Qd(:, hi, :) - Qd(:, lo, :), nd, []), 2);
  end
  rmse = sqrt (mean (([M; D] - Xt) .^ 2, 2));
  spread = [mean(width, 2); dwidth];
  perr = r.params.mean(:, end) - params(:);
  if (v + nd == 0)
    rmse = zeros (0, 1);
    spread = zeros (0, 1);
  end
end

%!shared spec, pr, truth, net
%! spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1);
%! pr = sluice.prior ('x1', 'normal', [0 2]);
%! truth = struct ('times', 0:40, 'x0', 2);
%! net = struct ('variable', 'x1', 'every', 1, 'sigma', 0.3);

%!test
%! % assimilation beats the open loop on state RMSE (common practice)
%! r = sluice.twin (spec, truth, net, 'seed', 5, 'prior', pr, 'filter', {'members', 400});
%! assert (r.scores.rmse < r.scores.openloop_rmse);
%! assert (r.scores.spread < r.scores.openloop_spread);
%! assert (r.truth.times, 0:40);
%! assert (size (r.truth.X), [1 41]);
%! assert (numel (r.obs.time), 41);
%! assert (all (ismember (0:40, r.filter.times)));
%! assert (r.openloop.skipped_total, 0);
%! assert (r.scores.names, {'x1'});

%!test
%! % the filter's options may come as a column of name, value pairs
%! a = sluice.twin (spec, truth, net, 'seed', 9, 'prior', pr, 'filter', {'members', 30});
%! b = sluice.twin (spec, truth, net, 'seed', 9, 'prior', pr, 'filter', {'members'; 30});
%! assert (b.filter.states.mean, a.filter.states.mean);

%!test
%! % same seed, identical result; another seed, other observations
%! a = sluice.twin (spec, truth, net, 'seed', 9, 'prior', pr, 'filter', {'members', 100});
%! b = sluice.twin (spec, truth, net, struct ('seed', 9, 'prior', pr, 'filter', {{'members', 100}}));
%! c = sluice.twin (spec, truth, net, 'seed', 10, 'prior', pr, 'filter', {'members', 100});
%! assert (isequaln (a, b));   % NaN marks cycles without a parameter move
%! assert (~isequal (a.obs.value, c.obs.value));
%! assert (~isequal (a.truth.X, c.truth.X));

%!test
%! % the observation errors are the draws of sluice.draw's standard normal
%! % stream under the observation seed (4 seed + 1): value - truth = sigma z
%! r = sluice.twin (spec, truth, net, 'seed', 2, 'prior', pr, 'openloop', false, ...
%!                  'filter', {'members', 50});
%! z = sluice.draw ([sluice.prior('z', 'normal', [0 1]), sluice.prior('u', 'uniform', [0 1])], 41, 9);
%! assert (r.obs.value', r.truth.X + 0.3 * z(1, :), 1e-12);
%! assert (isempty (r.openloop));
%! assert (isnan (r.scores.openloop_rmse));

%!test
%! % windows, intervals and the missing fraction
%! n2 = struct ('variable', {'x1', 'x1'}, 'every', {5, 2}, 'from', {0, 12}, ...
%!              'to', {20, 19.5}, 'sigma', {0.5, 0.2}, 'missing', {0, 0.5});
%! r = sluice.twin (spec, truth, n2, 'prior', pr, 'openloop', false, 'filter', {'members', 50});
%! assert (r.obs.time', sort ([0:5:20, 12:2:18]));
%! assert (sum (isnan (r.obs.value)), 2);        % round (0.5 * 4)
%! assert (all (r.obs.sigma(ismember (r.obs.time, 12:2:18)) == 0.2));
%! assert (all (isnan (r.obs.value) <= ismember (r.obs.time, 12:2:18)));
%! assert (r.filter.skipped_total, 2);

%!test
%! % Student-t values invert the t CDF at the third uniform of each
%! % observation's stream (seed 4 seed + 1 = 9): for t > 0,
%! % P(T > t) = I_{nu/(nu + t^2)}(nu/2, 1/2) / 2 (Abramowitz & Stegun
%! % 26.7.1), by Octave's betainc
%! n3 = struct ('variable', 'x1', 'every', 1, 'family', 'student_t', 'sigma', 0.3, 'dof', 2.7);
%! r = sluice.twin (spec, truth, n3, 'seed', 2, 'prior', pr, 'openloop', false, ...
%!                  'filter', {'members', 50});
%! D = sluice.draw ([sluice.prior('z', 'normal', [0 1]), sluice.prior('u', 'uniform', [0 1]), ...
%!                   sluice.prior('v', 'uniform', [0 1])], 41, 9);
%! t = (r.obs.value' - r.truth.X) / 0.3;
%! tail = betainc (2.7 ./ (2.7 + t .^ 2), 2.7 / 2, 0.5) / 2;
%! F = tail; F(t > 0) = 1 - tail(t > 0);
%! assert (F, D(3, :), 1e-12);

%!error <needs a finite truth> sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5, 'x0', 1), struct ('variable', 'big', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]), 'filter', {'operators', struct('names', 'big', 'fun', @(t, X, P) Inf * X)})
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5, 'x0', 1), struct ('variable', 'big', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]), 'filter', {'operators', struct('names', 'big', 'fun', @(t, X, P) Inf * X)})
%!error id=sluice:twin:emptynetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', {}, 'every', {}, 'sigma', {}), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:emptynetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), [], 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:emptynetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1, 'from', 3, 'to', 2), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error <no state, parameter or derived quantity 'level'> sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'level', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'level', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1, 'family', 'weibull'), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 0, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', -1), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', single (1)), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1, 'missing', 1.5), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1, 'to', 9), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1, 'bogus', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), {'x1'}, 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badnetwork sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5, 'x0', -1), struct ('variable', 'x1', 'every', 1, 'sigma', 1, 'family', 'lognormal'), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:noprior sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1))
%!error id=sluice:twin:badoption sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]), 'seed', 1.5)
%!error id=sluice:twin:badoption sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]), 'seed', -1)
%!error id=sluice:twin:badoption sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]), 'filter', struct ())
%!error id=sluice:twin:badoption sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]), 'openloop', 'yes')
%!error id=sluice:twin:badoption sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]), 'bogus', 1)
%!error id=sluice:filter:badoption sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5), struct ('variable', 'x1', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]), 'filter', {'members', -3})
%!error id=sluice:twin:badtruth sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', [0 2 1]), struct ('variable', 'x1', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badtruth sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('x0', 1), struct ('variable', 'x1', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badtruth sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5, 'x00', 1), struct ('variable', 'x1', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badstate sluice.twin (sluice.model ('linear', 'A', 0.9), struct ('times', 0:5, 'x0', [1; 2]), struct ('variable', 'x1', 'every', 1, 'sigma', 1), 'prior', sluice.prior ('x1', 'normal', [0 1]))
%!error id=sluice:twin:badforcing sluice.twin (sluice.model ('lorenz63'), struct ('times', 0:0.1:0.5, 'forcing', struct ('time', 0, 'values', 1)), struct ('variable', 'x', 'every', 0.1, 'sigma', 1), 'prior', sluice.prior ('x', 'normal', [0 1]))
%!error <Invalid call> sluice.twin (1, 2)

%!demo
%! % Lowmarsh on the invented river Vell: what is a yearly survey of the
%! % town's flood storage worth against one every 2 or 5 years? One twin
%! % experiment per design: the same invented truth, observed and filtered.
%! m = sluice.model ('linear', 'A', 0.9, 'Q', 0.05, 'states', {'storage'});
%! pr = sluice.prior ('storage', 'normal', [0 1]);
%! truth = struct ('times', 0:30, 'x0', 1.5);
%! for every = [1 2 5]
%!   net = struct ('variable', 'storage', 'every', every, 'sigma', 0.3);
%!   r = sluice.twin (m, truth, net, 'seed', 4, 'prior', pr, 'filter', {'members', 500});
%!   fprintf ('survey every %d year(s): RMSE %.3f, spread %.3f (no survey: RMSE %.3f)\n', ...
%!            every, r.scores.rmse, r.scores.spread, r.scores.openloop_rmse);
%! end
%! fprintf ('(a comparison of designs under one invented truth; a few seeds would show its noise)\n');
