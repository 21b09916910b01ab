% -*- texinfo -*-
% @deftypefn  {} {@var{post} =} sluice.esmda (@var{fun}, @var{prior}, @var{y}, @var{R})
% @deftypefnx {} {@var{post} =} sluice.esmda (@var{fun}, @var{prior}, @var{y}, @var{R}, @var{opts})
% @deftypefnx {} {@var{post} =} sluice.esmda (@var{model}, @var{prior}, @var{obs})
% @deftypefnx {} {@var{post} =} sluice.esmda (@var{model}, @var{prior}, @var{obs}, @var{opts})
% @deftypefnx {} {[@var{post}, @var{info}] =} sluice.esmda (@dots{})
% @deftypefnx {} {[@dots{}] =} sluice.esmda (@dots{}, @var{name}, @var{value}, @dots{})
% Calibrate parameters on a whole record with the ES-MDA ensemble smoother.
% ES-MDA is the ensemble smoother with multiple data assimilation
% (Emerick & Reynolds 2013).
%
% An ensemble of parameter vectors is drawn from @var{prior} (a struct
% array from @code{sluice.prior}); each of the @var{Na} iterations runs
% the forward model for every member and moves the ensemble by one
% stochastic ensemble Kalman analysis (@code{sluice.enkf}, method
% @code{'enkf'}) with the observation error covariance inflated to
% @code{alpha(i) * R}. With @code{sum (1 ./ alpha) == 1} the iterations
% together assimilate the data once; for a linear model with Gaussian
% prior and errors the ensemble tends to the exact posterior as it grows.
% Parameters are updated in the space of their prior's bounds (lower,
% upper): unchanged when unbounded, @code{log (x - lo)} when bounded
% below, @code{log (hi - x)} when bounded above, @code{log ((x - lo) /
% (hi - x))} when bounded on both sides, and reported in natural units,
% so every member stays inside its bounds. A @code{'fixed'} prior entry
% keeps its value.
%
% The forward model is given in one of two ways:
% @table @asis
% @item a function handle @var{fun}
% @code{Y = fun (P)} maps a p x N ensemble of parameters (natural units,
% one column per member, rows in the order of @var{prior}) to the m x N
% predicted observations (a real double array without NaN or Inf).
% @var{y} holds the m observations; @var{R} their error covariance: an
% m x m symmetric positive definite matrix, a vector of the m error
% variances, or one variance for all.
% @item a model spec @var{model} from @code{sluice.model}
% with @var{obs}, an observation table as @code{sluice.filter} takes it
% (a struct of columns @code{time}, @code{variable}, @code{value},
% @code{sigma}; Gaussian rows only; rows with a NaN value are missing:
% skipped and counted, whatever their family, and their sigma may be NaN).
% For lognormal rows give the function form the logarithms of the values
% and of the predictions, or use @code{sluice.filter}.
% An entry of @var{prior} named after a parameter of the model is that
% parameter's prior, one named after a state the distribution of its
% initial value; other parameters keep the model's defaults, other
% states start at the model's @code{x0}. A member's prediction of a row
% is its state at the row's time (or its parameter, for a row that
% observes a parameter), from one run of the whole ensemble with each
% member's own parameters from the start time through the observation
% times (@code{sluice.propagate}); R is diag (sigma.^2).
% @end table
%
% Options (a struct or name/value pairs):
% @table @code
% @item members
% ensemble size N (default 200, at least 2).
% @item alpha
% the inflation schedule, a vector of Na values > 0 with
% sum (1 ./ alpha) = 1 (to a relative 1e-12). Default: Na values equal
% to Na.
% @item iterations
% Na when alpha is not given (default 4); when both are given they must
% agree.
% @item seed
% whole number from 0 to 2^53 (default drawn from Octave's @code{rand}).
% The prior ensemble is @code{sluice.draw (prior, N, seed)}; the perturbed
% observations of iteration i are those of @code{sluice.enkf} with this
% seed and @code{cycle} i. The same seed gives the same result.
% @item quantiles
% levels of the posterior quantiles (default [0.05 0.5 0.95]).
% @item threads
% OpenMP threads of the analyses and model runs (default 0: all).
% @item t0, forcing, events
% for a model spec only: the start time (default the model's @code{t0}),
% the forcing and the event series, as for @code{sluice.filter}. A model
% with noise of its own draws it with the seed above, the same at every
% iteration.
% @end table
%
% @var{post} has @code{names} (p x 1 cellstr), @code{P} (p x N, the
% posterior ensemble in natural units), @code{mean} (p x 1),
% @code{quantiles} (p x nq), @code{quantile_levels}, @code{Y} (m x N, the
% predicted observations of the posterior ensemble) and @code{y} (the m
% observations used). @var{info} has @code{alpha} (the schedule used),
% @code{iterations}, @code{misfit} (1 x Na+1: the data misfit of the
% prior ensemble and after each iteration, the mean over members of
% (y - Y_j)' R^-1 (y - Y_j) / m), @code{seed}, @code{members},
% @code{cycles} (the analysis keys, 1..Na), @code{skipped} (missing
% observations) and @code{forward_runs} (Na + 1).
%
% Errors: @code{sluice:esmda:badmodel}, @code{:badprior}, @code{:badobs},
% @code{:badnoise} (R), @code{:badalpha} (a schedule with a value <= 0,
% non-finite, or sum (1 ./ alpha) ~= 1), @code{:badoption},
% @code{:badoutput} (fun returned the wrong class or size),
% @code{:nonfinite} (a member's predictions, or an analysis, are not
% finite), @code{:nomemory}.
%
% Example:
% @example
% @group
% G = [1 0.5; 0.2 1; 1 1];
% pr = sluice.prior ('a', 'normal', [0 1], 'b', 'lognormal', [0 0.5]);
% [post, info] = sluice.esmda (@@(P) G * P, pr, [0.7; 1.4; 2.1], 0.1, ...
%                              'members', 500, 'seed', 3);
% post.mean, info.misfit
% @end group
% @end example
% @seealso{sluice.enkf, sluice.prior, sluice.draw, sluice.filter}
% @end deftypefn
function [post, info] = esmda (fwd, prior, data, varargin)
  if (nargin < 3)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (isa (fwd, 'function_handle'))
    if (nargin < 4)
      sluice.internal.compat ('usage', mfilename ());
    end
    noise = varargin{1};
    opts = parse_options (varargin(2:end), false);
  elseif (isstruct (fwd))
    opts = parse_options (varargin, true);
  else
    error ('sluice:esmda:badmodel', ...
           'argument 1: expected a function handle or a spec from sluice.model, got %s', ...
           sluice.internal.describe (fwd));
  end
  if (isstruct (fwd))
    sluice.internal.check_model (fwd, 1, 'esmda');
  end
  sluice.internal.check_prior (prior, 2, 'esmda');
  if (isempty (opts.seed))
    opts.seed = floor (rand () * 2^32);
  end
  N = opts.members;
  names = {prior.name}';
  p = numel (prior);
  lo = [prior.lower]';
  hi = [prior.upper]';
  fixed = (lo == hi);

  if (isa (fwd, 'function_handle'))
    y = data;
    if (~isa (y, 'double') || ~isreal (y) || issparse (y) || isempty (y) || ...
        ~isvector (y) || any (~isfinite (y)))
      error ('sluice:esmda:badobs', ...
             'argument 3 (y): expected a non-empty finite real double vector, got %s', ...
             sluice.internal.describe (y));
    end
    y = y(:);
    m = numel (y);
    [R, Rfac] = check_noise (noise, m);
    forward = @(P) call_fun (fwd, P, m);
    skipped = 0;
  else
    [forward, y, R, Rfac, skipped] = model_forward (fwd, prior, data, opts, N);
    m = numel (y);
  end

  % P, Z and the posterior (p x N each), the predictions Y and the
  % perturbed data of an analysis (m x N each): refuse at once what
  % cannot fit rather than fail in the middle of the iterations
  sluice.internal.ensure_memory (8 * N * (3 * p + 2 * m), 'esmda', ...
                               sprintf ('a run of %d members (%d parameters, %d data)', N, p, m));

  alpha = opts.alpha;
  Na = numel (alpha);

  P = draw_prior (prior, N, opts.seed);
  Z = to_free (P, lo, hi);
  misfit = zeros (1, Na + 1);
  for i = 1:Na
    Y = forward (P);
    misfit(i) = data_misfit (Y, y, Rfac);
    Z = analysis (Z, Y, y, alpha(i) * R, opts.seed, i, opts.threads);
    P = from_free (Z, lo, hi);
    P(fixed, :) = repmat (lo(fixed), 1, N);
  end
  Y = forward (P);
  misfit(Na + 1) = data_misfit (Y, y, Rfac);

  post = struct ();
  post.names = names;
  post.P = P;
  post.mean = mean (P, 2);
  if (isempty (opts.quantiles))
    post.quantiles = zeros (p, 0);
  else
    post.quantiles = reshape (quantile (P, opts.quantiles, 2), p, numel (opts.quantiles));
  end
  post.quantile_levels = opts.quantiles;
  post.Y = Y;
  post.y = y;
  info = struct ('alpha', alpha, 'iterations', Na, 'misfit', misfit, ...
                 'seed', opts.seed, 'members', N, 'cycles', 1:Na, ...
                 'skipped', skipped, 'forward_runs', Na + 1);
end

function opts = parse_options (args, is_model)
  opts = struct ('members', 200, 'alpha', [], 'iterations', [], 'seed', [], ...
                 'quantiles', [0.05 0.5 0.95], 'threads', 0, 't0', [], ...
                 'forcing', [], 'events', []);
  opts = sluice.internal.name_value (opts, args, 'esmda');
  if (~is_model)
    % options that only a model spec can use
    extra = {'t0', 'forcing', 'events'};
    for k = 1:numel (extra)
      if (~isempty (opts.(extra{k})))
        error ('sluice:esmda:badoption', ...
               'option ''%s'' applies to a model spec, not to a function handle', extra{k});
      end
    end
  end
  opts.members = whole (opts.members, 'members', 2, 2^31);
  if (~isempty (opts.iterations))
    opts.iterations = whole (opts.iterations, 'iterations', 1, 1e6);
  end
  if (~isempty (opts.seed))
    opts.seed = whole (opts.seed, 'seed', 0, 2^53);
  end
  opts.threads = whole (opts.threads, 'threads', 0, 256);
  q = opts.quantiles;
  if (~isa (q, 'double') || ~isreal (q) || issparse (q) || (~isempty (q) && ~isvector (q)) || ...
      any (~(q(:) >= 0 & q(:) <= 1)))
    error ('sluice:esmda:badoption', 'quantiles must be a real vector of levels in [0, 1]');
  end
  opts.quantiles = q(:)';
  a = opts.alpha;
  if (isempty (a))
    Na = opts.iterations;
    if (isempty (Na))
      Na = 4;
    end
    opts.alpha = Na * ones (1, Na);
    return;
  end
  if (~isa (a, 'double') || ~isreal (a) || issparse (a) || ~isvector (a))
    error ('sluice:esmda:badalpha', ...
           'alpha must be a real double vector (one inflation per iteration), got %s', ...
           sluice.internal.describe (a));
  end
  if (numel (a) > 1e6)
    error ('sluice:esmda:badalpha', 'alpha has %d values; at most 1e6 iterations', numel (a));
  end
  if (any (~isfinite (a)) || any (a <= 0))
    error ('sluice:esmda:badalpha', 'every alpha must be finite and > 0, got %s', ...
           mat2str (a(:)', 6));
  end
  s = sum (1 ./ a);
  if (abs (s - 1) > 1e-12)
    error ('sluice:esmda:badalpha', ...
           'the schedule must satisfy sum (1 ./ alpha) = 1; it gives %.15g', s);
  end
  if (~isempty (opts.iterations) && opts.iterations ~= numel (a))
    error ('sluice:esmda:badalpha', ...
           'iterations = %d but alpha has %d values', opts.iterations, numel (a));
  end
  opts.alpha = a(:)';
end

function Z = analysis (Z, Y, y, R, seed, cycle, threads)
  % one stochastic EnKF analysis keyed by (seed, cycle); its errors are
  % raised again as this function's
  try
    Z = sluice.enkf (Z, Y, y, R, 'method', 'enkf', 'seed', seed, 'cycle', cycle, ...
                     'threads', threads);
  catch err
    id = strrep (err.identifier, 'sluice:enkf:', 'sluice:esmda:');
    sluice.internal.raise_again (id, 'sluice:esmda:failed', ...
                               sprintf ('iteration %d: %s', cycle, regexprep (err.message, '^enkf: ', '')));
  end
end

function v = whole (v, what, lo, hi)
  if (~isa (v, 'double') || ~isreal (v) || issparse (v) || ~isscalar (v) || ~isfinite (v) || ...
      v ~= fix (v) || v < lo || v > hi)
    error ('sluice:esmda:badoption', '%s must be a whole number from %g to %g', what, lo, hi);
  end
end

function P = draw_prior (prior, N, seed)
  try
    P = sluice.draw (prior, N, seed);
  catch err
    id = strrep (err.identifier, 'sluice:draw:', 'sluice:esmda:');
    sluice.internal.raise_again (id, 'sluice:esmda:failed', regexprep (err.message, '^draw: ', ''));
  end
end

function [R, Rfac] = check_noise (R, m)
  if (~isa (R, 'double') || ~isreal (R) || issparse (R) || isempty (R) || ndims (R) ~= 2)
    error ('sluice:esmda:badnoise', ...
           'argument 4 (R): expected a real double matrix or vector, got %s', ...
           sluice.internal.describe (R));
  end
  if (any (~isfinite (R(:))))
    error ('sluice:esmda:badnoise', 'argument 4 (R): must be finite');
  end
  if (isscalar (R) || (isvector (R) && numel (R) == m && m > 1))
    if (any (R(:) <= 0))
      error ('sluice:esmda:badnoise', 'argument 4 (R): error variances must be > 0');
    end
    if (isscalar (R) && m > 1)
      R = repmat (R, m, 1);
    end
    R = R(:);
    Rfac = sqrt (R);
    return;
  end
  if (~isequal (size (R), [m m]))
    error ('sluice:esmda:badnoise', ...
           'argument 4 (R): expected %d x %d, %d variances or a scalar for %d observations, got %s', ...
           m, m, m, m, sluice.internal.describe (R));
  end
  if (norm (R - R', 1) > 1e-12 * norm (R, 1))
    error ('sluice:esmda:badnoise', 'argument 4 (R): must be symmetric');
  end
  [Rfac, fail] = chol (R, 'lower');
  if (fail ~= 0)
    error ('sluice:esmda:badnoise', 'argument 4 (R): must be positive definite');
  end
end

function v = data_misfit (Y, y, Rfac)
  % mean over members of (y - Y_j)' R^-1 (y - Y_j) / m
  D = y - Y;
  if (size (Rfac, 2) == 1)
    D = D ./ Rfac;      % the error standard deviations
  else
    D = Rfac \ D;       % the lower Cholesky factor of R
  end
  v = mean (sum (D .^ 2, 1)) / size (D, 1);
end

function Y = call_fun (fun, P, m)
  Y = fun (P);
  N = size (P, 2);
  if (~isa (Y, 'double') || ~isreal (Y) || issparse (Y) || ~isequal (size (Y), [m N]))
    error ('sluice:esmda:badoutput', ...
           'the forward model must return a real double %d x %d array (observations x members), got %s', ...
           m, N, sluice.internal.describe (Y));
  end
  bad = find (any (~isfinite (Y), 1), 1);
  if (~isempty (bad))
    error ('sluice:esmda:nonfinite', ...
           'the forward model returned non-finite predictions for member %d (%d member(s) in all)', ...
           bad, sum (any (~isfinite (Y), 1)));
  end
end

% ------------------------------------------------------------ transforms

function Z = to_free (P, lo, hi)
  % natural units -> the unbounded space of each row's bounds (the core's
  % transforms, as the filter uses them)
  Z = sluice.kernel.prior_eval ('forward', lo, hi, P);
end

function P = from_free (Z, lo, hi)
  % the unbounded space -> natural units, strictly inside the bounds
  P = sluice.kernel.prior_eval ('inverse', lo, hi, Z);
end

% ------------------------------------------------------ a model spec's run

function [forward, y, R, Rfac, skipped] = model_forward (model, prior, obs, opts, N)
  n = numel (model.states);
  np = numel (model.params);
  t0 = opts.t0;
  if (isempty (t0))
    t0 = model.t0;
  end
  if (~isa (t0, 'double') || ~isreal (t0) || ~isscalar (t0) || ~isfinite (t0))
    error ('sluice:esmda:badoption', 't0 must be a finite real scalar');
  end
  % where each prior entry goes: a state's initial value or a parameter
  [is_state, srow] = ismember ({prior.name}, model.states);
  [is_param, prow] = ismember ({prior.name}, model.params);
  for k = 1:numel (prior)
    if (~is_state(k) && ~is_param(k))
      error ('sluice:esmda:badprior', ...
             'the prior names ''%s'', which is neither a state nor a parameter of the model', ...
             prior(k).name);
    end
    if (is_param(k))
      i = prow(k);
      if (prior(k).lower < model.lower(i) || prior(k).upper > model.upper(i))
        error ('sluice:esmda:badprior', ...
               'the prior of ''%s'' allows [%g, %g], outside the parameter''s bounds [%g, %g]', ...
               prior(k).name, prior(k).lower, prior(k).upper, model.lower(i), model.upper(i));
      end
    end
  end
  defaults = model.defaults(:);
  unnamed = true (np, 1);
  unnamed(prow(is_param)) = false;
  bad = find (unnamed & isnan (defaults), 1);
  if (~isempty (bad))
    error ('sluice:esmda:badprior', ...
           'parameter ''%s'' has neither a prior nor a default value', model.params{bad});
  end
  defaults(~unnamed) = 0;

  tab = check_obs (obs, model, t0);
  keep = ~isnan (tab.value);
  skipped = sum (~keep);
  if (~any (keep))
    error ('sluice:esmda:badobs', 'every observation is missing (NaN): nothing to calibrate on');
  end
  y = tab.value(keep);
  R = tab.sigma(keep) .^ 2;
  Rfac = tab.sigma(keep);
  var = tab.var(keep);
  t = tab.time(keep);
  times = unique (t(t > t0))';
  [~, cyc] = ismember (t, times);
  run = struct ('events', opts.events, 'seed', opts.seed, 'threads', opts.threads);
  forcing = opts.forcing;
  x0 = model.x0(:);
  forward = @(P) predict (model, P, x0, defaults, is_state, srow, is_param, prow, ...
                          t0, times, forcing, run, var, cyc, n, N);
end

function Y = predict (model, P, x0, defaults, is_state, srow, is_param, prow, ...
                      t0, times, forcing, run, var, cyc, n, N)
  X0 = repmat (x0, 1, N);
  X0(srow(is_state), :) = P(is_state, :);
  Pm = repmat (defaults, 1, N);
  Pm(prow(is_param), :) = P(is_param, :);
  if (isempty (times))
    X = zeros (n, N, 0);
  else
    X = sluice.internal.run_states (model, X0, Pm, t0, times, forcing, run, 'esmda');
    X = reshape (X, n, N, numel (times));
  end
  m = numel (var);
  Y = zeros (m, N);
  for k = 1:m
    v = var(k);
    if (v > n)
      Y(k, :) = Pm(v - n, :);
    elseif (cyc(k) == 0)
      Y(k, :) = X0(v, :);
    else
      Y(k, :) = X(v, :, cyc(k));
    end
  end
  bad = find (any (~isfinite (Y), 1), 1);
  if (~isempty (bad))
    error ('sluice:esmda:nonfinite', ...
           'member %d of the ensemble has non-finite predictions (%d member(s) in all)', ...
           bad, sum (any (~isfinite (Y), 1)));
  end
end

function tab = check_obs (obs, model, t0)
  % the filter's table checks (rows in any order), then what ES-MDA adds:
  % at least one row, Gaussian rows only. A missing row (NaN value) is
  % skipped whatever its family and needs no sigma (DESIGN.md 2: NaN
  % value = missing): a NaN sigma there passes the checks as 1 and is
  % never used
  if (isstruct (obs) && isscalar (obs) && isfield (obs, 'value') && isfield (obs, 'sigma'))
    v = obs.value;
    sg = obs.sigma;
    if (isa (sg, 'double') && isempty (sg) && isa (v, 'double') && ~isempty (v))
      sg = nan (size (v));   % a blank sigma column
    end
    if (isa (v, 'double') && isa (sg, 'double') && isreal (sg) && ~issparse (sg) && ...
        isequal (size (v), size (sg)))
      sg(isnan (v) & isnan (sg)) = 1;
    end
    obs.sigma = sg;
  end
  tab = sluice.internal.obs_table (obs, [model.states(:); model.params(:)], t0, 'esmda', false);
  if (isempty (tab.time))
    error ('sluice:esmda:badobs', 'the observation table is empty');
  end
  bad = find (~strcmpi (tab.family, 'gaussian') & ~isnan (tab.value), 1);
  if (~isempty (bad) && strcmpi (tab.family{bad}, 'lognormal'))
    error ('sluice:esmda:badobs', ...
           ['observation row %d: family ''lognormal'', but ES-MDA takes Gaussian rows only. ', ...
            'To calibrate on lognormal data, call sluice.esmda (fun, prior, log (value), sigma.^2) ', ...
            'with fun returning the logarithms of the predictions (log y = log x + sigma z is ', ...
            'Gaussian in the logarithms), or assimilate the table with sluice.filter, which ', ...
            'takes every family'], bad);
  elseif (~isempty (bad))
    error ('sluice:esmda:badobs', ...
           ['observation row %d: family ''%s'', but ES-MDA takes Gaussian rows only. ', ...
            'Assimilate the table with sluice.filter, which takes every family, or give ', ...
            'the rows as Gaussian with a sigma'], bad, tab.family{bad});
  end
end

%!shared G, pr, y
%! G = [1 0.5; 0.2 1; 1 1];
%! pr = sluice.prior ('a', 'normal', [0 1], 'b', 'lognormal', [0 0.5]);
%! y = [0.7; 1.4; 2.1];

%!test
%! % the example of the help text: a linear forward model, 500 members
%! [post, info] = sluice.esmda (@(P) G * P, pr, y, 0.1, 'members', 500, 'seed', 3);
%! assert (size (post.P), [2 500]);
%! assert (size (post.quantiles), [2 3]);
%! assert (post.quantile_levels, [0.05 0.5 0.95]);
%! assert (size (post.Y), [3 500]);
%! assert (info.seed, 3);
%! assert (info.forward_runs, 5);
%! assert (all (post.P(2, :) > 0));
%! assert (info.misfit(end) < info.misfit(1));

%!test
%! % options as a struct; the seed is drawn and returned when not given
%! [post, info] = sluice.esmda (@(P) G * P, pr, y, [0.1 0.2 0.1], ...
%!                              struct ('members', 20, 'iterations', 2, 'quantiles', []));
%! assert (info.alpha, [2 2]);
%! assert (size (post.quantiles), [2 0]);
%! [post2, info2] = sluice.esmda (@(P) G * P, pr, y, [0.1 0.2 0.1], ...
%!                                'members', 20, 'iterations', 2, 'seed', info.seed);
%! assert (isequal (post2.P, post.P));

%!test
%! % a user's own error in the forward model keeps its identifier
%! fail = @(P) error ('mine:broken', 'the forward model is broken');
%! try
%!   sluice.esmda (fail, pr, y, 0.1, 'members', 10, 'seed', 1);
%!   assert (false);
%! catch err
%!   assert (err.identifier, 'mine:broken');
%! end

%!error <Invalid call> sluice.esmda ()
%!error <Invalid call> sluice.esmda (@(P) P, pr)
%!error <Invalid call> sluice.esmda (@(P) G * P, pr, y)
%!error id=sluice:esmda:badmodel sluice.esmda (5, pr, y, 0.1)
%!error id=sluice:esmda:badmodel sluice.esmda ('linear', pr, y, 0.1)
%!error id=sluice:esmda:badmodel sluice.esmda ({@(P) P}, pr, y, 0.1)
%!error id=sluice:esmda:badmodel sluice.esmda (struct ('a', 1), pr, struct ())
%!error id=sluice:esmda:badprior sluice.esmda (@(P) G * P, [], y, 0.1)
%!error id=sluice:esmda:badprior sluice.esmda (@(P) G * P, struct ('name', 'a'), y, 0.1)
%!error id=sluice:esmda:badprior sluice.esmda (@(P) G * P, {'a', 'normal', [0 1]}, y, 0.1)
%!error id=sluice:esmda:badprior
%! q = pr; q(1).args = [0 -1];
%! sluice.esmda (@(P) G * P, q, y, 0.1, 'seed', 1);
%!error id=sluice:esmda:badprior
%! q = pr; q(1).lower = NaN;
%! sluice.esmda (@(P) G * P, q, y, 0.1, 'seed', 1);
%!error id=sluice:esmda:badobs sluice.esmda (@(P) G * P, pr, [], 0.1)
%!error id=sluice:esmda:nomemory sluice.esmda (@(P) ones (1e4, columns (P)), pr, ones (1e4, 1), 0.1, 'members', 2^31)
%!error id=sluice:esmda:badobs sluice.esmda (@(P) G * P, pr, [1; NaN; 2], 0.1)
%!error id=sluice:esmda:badobs sluice.esmda (@(P) G * P, pr, [1; Inf; 2], 0.1)
%!error id=sluice:esmda:badobs sluice.esmda (@(P) G * P, pr, single (y), 0.1)
%!error id=sluice:esmda:badobs sluice.esmda (@(P) G * P, pr, y + 1i, 0.1)
%!error id=sluice:esmda:badobs sluice.esmda (@(P) G * P, pr, [y y], 0.1)
%!error id=sluice:esmda:badobs sluice.esmda (@(P) G * P, pr, {1, 2, 3}, 0.1)
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, [0.1 0.2])
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, eye (2))
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, [])
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, 0)
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, [0.1 -0.2 0.1])
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, NaN)
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, Inf)
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, single (0.1))
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, int32 (1))
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, 0.1 + 1i)
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, sparse (eye (3)))
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, {0.1})
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, [1 0.5 0; 0 1 0; 0 0 1])
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, [1 2 0; 2 1 0; 0 0 1])
%!error id=sluice:esmda:badnoise sluice.esmda (@(P) G * P, pr, y, ones (3, 3, 2))
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', [1 1])
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', [9.333 7 4 2])
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', [2 2 + 1e-9])
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', [0.5 -1])
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', [1 0])
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', [1 Inf])
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', [2 NaN])
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', [4 4; 4 4])
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', {2, 2})
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', single ([2 2]))
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', [2 2] + 1i)
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', '22')
%!error id=sluice:esmda:badalpha sluice.esmda (@(P) G * P, pr, y, 0.1, 'alpha', [2 2], 'iterations', 3)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'members', 1)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'members', 2.5)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'members', [])
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'members', int32 (10))
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'members', 1e300)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'iterations', 0)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'seed', -1)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'seed', 0.5)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'seed', '1')
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'threads', -1)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'quantiles', 1.5)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'quantiles', NaN)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'bogus', 1)
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'members')
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 'forcing', struct ('time', 0, 'values', 1))
%!error id=sluice:esmda:badoption sluice.esmda (@(P) G * P, pr, y, 0.1, 't0', 0)
%!error id=sluice:esmda:badoutput sluice.esmda (@(P) P, pr, y, 0.1, 'seed', 1)
%!error id=sluice:esmda:badoutput sluice.esmda (@(P) (G * P)', pr, y, 0.1, 'seed', 1)
%!error id=sluice:esmda:badoutput sluice.esmda (@(P) single (G * P), pr, y, 0.1, 'seed', 1)
%!error id=sluice:esmda:badoutput sluice.esmda (@(P) G * P + 1i, pr, y, 0.1, 'seed', 1)
%!error id=sluice:esmda:badoutput sluice.esmda (@(P) {G * P}, pr, y, 0.1, 'seed', 1)
%!error id=sluice:esmda:badoutput sluice.esmda (@(P) sparse (G * P), pr, y, 0.1, 'seed', 1)
%!error id=sluice:esmda:nonfinite sluice.esmda (@(P) G * P ./ (P(1, :) > 0), pr, y, 0.1, 'seed', 1)
%!error id=sluice:esmda:nonfinite sluice.esmda (@(P) NaN (3, columns (P)), pr, y, 0.1, 'seed', 1)
%!error id=sluice:esmda:nonfinite sluice.esmda (@(P) 1e200 * G * P, pr, y, 0.1, 'seed', 1)
%!error id=sluice:esmda:nomemory
%! q = sluice.prior ('a', 'normal', [0 1], 'b', 'normal', [0 1], 'c', 'normal', [0 1], ...
%!                   'd', 'normal', [0 1], 'e', 'normal', [0 1], 'f', 'normal', [0 1], ...
%!                   'g', 'normal', [0 1], 'h', 'normal', [0 1]);
%! sluice.esmda (@(P) P(1, :), q, 1, 0.1, 'members', 2^31, 'seed', 1);

%% the model-spec interface
%!shared spec, q, obs
%! f = @(t, X, P, U, dt) X .* exp (-P(1, :) * dt);
%! spec = sluice.model (f, 'states', {'x'}, 'params', {'k'}, 'x0', 5);
%! q = sluice.prior ('k', 'lognormal', [log(0.5) 0.5]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'k'}}, ...
%!               'value', [3.7; 2.7; 0.31], 'sigma', [0.1; 0.1; 0.05]);
%!test
%! % observations of a state and of a parameter; a row at the start time
%! % sees the initial state
%! o = obs; o.time = [0; 2; 3]; o.value = [5.1; 2.7; 0.31];
%! [post, info] = sluice.esmda (spec, q, o, 'members', 50, 'seed', 2);
%! assert (post.Y(1, :), 5 * ones (1, 50));
%! assert (post.Y(3, :), post.P);
%! assert (post.Y(2, :), 5 * exp (-2 * post.P), 1e-12);
%!error id=sluice:esmda:badprior sluice.esmda (spec, sluice.prior ('z', 'normal', [0 1]), obs)
%!error id=sluice:esmda:badprior sluice.esmda (sluice.model (@(t, X, P, U, dt) X, 'states', {'x'}, 'params', {'k', 'r'}), q, obs)
%!error id=sluice:esmda:badprior
%! s2 = sluice.model ('lorenz63');
%! sluice.esmda (s2, sluice.prior ('sigma', 'normal', [10 1]), ...
%!               struct ('time', 1, 'variable', 'x', 'value', 1, 'sigma', 1));
%!error id=sluice:esmda:badobs sluice.esmda (spec, q, 5)
%!error id=sluice:esmda:badobs sluice.esmda (spec, q, rmfield (obs, 'sigma'))
%!error id=sluice:esmda:badobs
%! o = obs; o.variable{2} = 'y';
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.family = {'gaussian'; 'poisson'; 'gaussian'};
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.family = {'gaussian'};
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.sigma(2) = 0;
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.sigma(2) = NaN;
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.time(1) = -1;
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.time(1) = NaN;
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.value(1) = Inf;
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.value(:) = NaN;
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.value = single (o.value);
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.time = [1; 2];
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs
%! o = obs; o.variable = 'x';
%! sluice.esmda (spec, q, o);
%!error id=sluice:esmda:badobs sluice.esmda (spec, q, struct ('time', [], 'variable', {{}}, 'value', [], 'sigma', []))
%!error id=sluice:esmda:badoption sluice.esmda (spec, q, obs, 't0', NaN)
%!error id=sluice:esmda:badoption sluice.esmda (spec, q, obs, 'members', 0)
%!error id=sluice:esmda:nonfinite
%! s2 = sluice.model (@(t, X, P, U, dt) X ./ (P(1, :) > 0.5), 'states', {'x'}, ...
%!                    'params', {'k'}, 'x0', 1);
%! warning ('off', 'sluice:esmda:nonfinite', 'local');
%! sluice.esmda (s2, q, obs, 'members', 20, 'seed', 1);

%!demo
%! % Lowmarsh on the invented river Vell: calibrate the town gauge's rating
%! % curve Q = a (h - 0.5)^b from five invented gaugings, by ES-MDA.
%! h = [0.9; 1.3; 1.8; 2.4; 3.1];                  % stage (m)
%! q = [2.1; 6.0; 12.8; 24.5; 41.0];               % measured flow (m3/s), invented
%! rating = @(P) P(1, :) .* (h - 0.5) .^ P(2, :);  % 5 x N flows for N members
%! pr = sluice.prior ('a', 'lognormal', [log(8) 0.5], 'b', 'normal', [1.5 0.3]);
%! [post, info] = sluice.esmda (rating, pr, q, (0.08 * q) .^ 2, 'members', 500, 'seed', 3);
%! names = {'a', 'b'};
%! for k = 1:2
%!   fprintf ('%s: median %.3f, 90%% interval %.3f to %.3f\n', names{k}, ...
%!            post.quantiles(k, 2), post.quantiles(k, 1), post.quantiles(k, 3));
%! end
%! fprintf ('misfit from %.3g to %.3g over %d forward runs\n', ...
%!          info.misfit(1), info.misfit(end), info.forward_runs);
