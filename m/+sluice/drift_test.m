% -*- texinfo -*-
% @deftypefn  {} {@var{res} =} sluice.drift_test (@var{model}, @var{prior}, @var{obs}, @var{names}, @var{steps})
% @deftypefnx {} {@var{res} =} sluice.drift_test (@var{model}, @var{prior}, @var{obs}, @var{names}, @var{steps}, @var{opts})
% @deftypefnx {} {@var{res} =} sluice.drift_test (@dots{}, @var{name}, @var{value}, @dots{})
% Test whether parameters of @var{model} drift in time. It compares the
% evidence of a fixed parameter with that of a drifting one.
%
% A drifting parameter is one that takes a random-walk step between
% observation times: @code{sluice.filter} with @code{param_move =
% 'random_walk'} and @code{param_step} the step's standard deviation in
% the parameter's transformed space (log for a parameter bounded on one
% side, logit for one bounded on both; the parameters not named stay
% fixed). @code{sluice.drift_test} estimates the log-evidence
% (@code{sluice.evidence}) of the data without drift (step 0) and with
% each candidate step, and takes as the estimate of the drift step the
% candidate with the highest mean log-evidence.
%
% Decision: drift is reported when the best candidate beats no drift by
% a log Bayes factor (the difference of their mean log-evidence) larger
% than @code{max (threshold, z * se)}, with se =
% @code{sqrt (se_best^2 + se_0^2)} the combined Monte Carlo standard
% error of the two estimates. The default @code{threshold = log (10)}
% asks for a Bayes factor above 10, inside the band that Kass & Raftery
% (1995) call "positive" evidence (Bayes factors 3 to 20; 20 to 150 they
% call "strong"; figures from memory); the default @code{z = 2} (common
% practice) keeps Monte Carlo noise from deciding. All candidates use the
% same seeds (common random numbers), which makes their differences less
% noisy than the combined standard error assumes, so the rule errs on the
% side of "no drift".
%
% @var{names} is a parameter name or a cellstr of q names; each must be a
% parameter of @var{model} with a prior entry that is not
% @code{'fixed'}. @var{steps} gives the candidate steps (> 0): a vector
% (each value a step shared by all the named parameters) or a K x q
% matrix (one candidate per row, one column per named parameter).
%
% Options (a struct or name/value pairs): @code{threshold} (>= 0, default
% log (10)), @code{z} (>= 0, default 2), and the options of
% @code{sluice.evidence} (@code{repeats}, @code{seed}, @code{members},
% @code{t0}, @dots{}) except @code{param_move} and @code{param_step},
% which this function sets. A @code{checkpoint} file @var{f} (with a
% @code{seed}) gives each candidate's runs their own files,
% @var{f}@code{.step}@var{k}@code{.seed}@var{s} (k = 0 for no drift, then
% the rows of @var{steps}), so the same call resumes.
%
% The result @var{res} has @code{names}, @code{steps} ((K+1) x q, the
% first row zeros: no drift), @code{log_evidence}, @code{se} and
% @code{log_mean_exp} ((K+1) x 1, as @code{sluice.evidence} gives them),
% @code{table} (the columns steps, log_evidence, se side by side),
% @code{best} (row of the best candidate), @code{estimate} (its steps,
% 1 x q), @code{log_bayes_factor} (best against no drift), @code{bar}
% (the value it had to exceed), @code{drift} (true or false),
% @code{seed} and @code{runs} (the struct array of the evidence results).
%
% Errors: @code{sluice:drift_test:badmodel}, @code{:badname},
% @code{:badsteps}, @code{:badoption}, and the errors of
% @code{sluice.evidence} under @code{sluice:drift_test:}.
%
% Example: a store that keeps 70% of its content each step and gets an
% inflow u, whose inflow doubles half-way through the record.
% @example
% @group
% f = @@(t, X, P, U, dt) 0.7 * X + P(1, :);
% spec = sluice.model (f, 'states', @{'x'@}, 'params', @{'u'@}, 'x0', 10/3);
% pr = sluice.prior ('u', 'lognormal', [0 0.5]);
% u = [ones(20, 1); 2 * ones(20, 1)];
% x = filter (1, [1 -0.7], u, 0.7 * 10/3);
% obs = struct ('time', (1:40)', 'variable', @{repmat(@{'x'@}, 40, 1)@}, ...
%               'value', x + 0.2 * randn (40, 1), 'sigma', 0.2 * ones (40, 1));
% res = sluice.drift_test (spec, pr, obs, 'u', [0.02 0.1 0.3], ...
%                          'members', 500, 'repeats', 5, 'seed', 1);
% disp (res.table); res.drift
% @end group
% @end example
% @seealso{sluice.evidence, sluice.filter}
% @end deftypefn
function res = drift_test (model, prior, obs, names, steps, varargin)
  if (nargin < 5)
    sluice.internal.compat ('usage', mfilename ());
  end
  sluice.internal.check_model (model, 1, 'drift_test');
  if (~isempty (prior))
    sluice.internal.check_prior (prior, 2, 'drift_test');
  end
  names = check_names (names, model, prior);
  q = numel (names);
  steps = check_steps (steps, q);

  args = sluice.internal.option_pairs (varargin);
  if (numel (args) == 1)
    error ('sluice:drift_test:badoption', ...
           'argument 6 (opts): expected a scalar struct or name, value pairs, got %s', ...
           sluice.internal.describe (args{1}));
  end
  if (mod (numel (args), 2) ~= 0)
    error ('sluice:drift_test:badoption', 'options must be a struct or name, value pairs');
  end
  threshold = log (10);
  z = 2;
  seed = [];
  pass = {};
  for k = 1:2:numel (args)
    name = args{k};
    if (~ischar (name) || ~isrow (name))
      error ('sluice:drift_test:badoption', 'option %d: expected a name', (k + 1) / 2);
    end
    switch (name)
      case 'threshold'
        threshold = nonneg (args{k + 1}, 'threshold');
      case 'z'
        z = nonneg (args{k + 1}, 'z');
      case 'seed'
        seed = args{k + 1};
      case {'param_move', 'param_step'}
        error ('sluice:drift_test:badoption', ...
               'option ''%s'' is set by the test itself (random-walk steps of the named parameters)', ...
               name);
      otherwise
        pass(end+1:end+2) = {name, args{k + 1}};
    end
  end
  ic = 2 * find (strcmp (pass(1:2:end), 'checkpoint'));
  if (isempty (seed) && ~isempty (ic) && ~isempty (pass{ic(end)}))
    error ('sluice:drift_test:badoption', ...
           ['a run with a checkpoint needs a ''seed'': the same call resumes its runs ', ...
            'only with the same seeds']);
  end
  if (isempty (seed))
    seed = floor (rand () * 2^32);
  end

  [~, idx] = ismember (names, model.params);
  p = numel (model.params);
  K = size (steps, 1);
  all_steps = [zeros(1, q); steps];
  lz = zeros (K + 1, 1);
  se = zeros (K + 1, 1);
  lme = zeros (K + 1, 1);
  for k = 1:K + 1
    if (k == 1)
      move = {'param_move', 'fixed'};
    else
      step = zeros (p, 1);
      step(idx) = all_steps(k, :);
      move = {'param_move', 'random_walk', 'param_step', step};
    end
    % a checkpoint: the candidates share their seeds, so each has its own
    % files, <checkpoint>.step<k-1>.seed<s> (step0: no drift)
    own = pass;
    ic = 2 * find (strcmp (own(1:2:end), 'checkpoint'));
    if (~isempty (ic) && ischar (own{ic(end)}) && ~isempty (own{ic(end)}))
      own{ic(end)} = sprintf ('%s.step%d', own{ic(end)}, k - 1);
    end
    % the evidence's and the filter's errors come out as this function's
    ev = sluice.internal.evidence_run (model, prior, obs, [own, move, {'seed', seed}], ...
                                     'drift_test');
    runs(k) = ev;
    lz(k) = ev.log_evidence;
    se(k) = ev.se;
    lme(k) = ev.log_mean_exp;
  end

  [~, best] = max (lz);
  if (lz(best) == -Inf)
    best = 1;
  end
  lbf = lz(best) - lz(1);
  if (best == 1)
    lbf = 0;
  end
  s = [se(best), se(1)];
  s(isnan (s)) = 0;
  bar = max (threshold, z * sqrt (sum (s .^ 2)));

  res = struct ();
  res.names = names;
  res.steps = all_steps;
  res.log_evidence = lz;
  res.se = se;
  res.log_mean_exp = lme;
  res.table = [all_steps, lz, se];
  res.best = best;
  res.estimate = all_steps(best, :);
  res.log_bayes_factor = lbf;
  res.bar = bar;
  res.drift = best > 1 && lbf > bar;
  res.seed = runs(1).seed;
  res.runs = runs;
end

function names = check_names (names, model, prior)
  if (ischar (names) && isrow (names))
    names = {names};
  end
  if (~iscellstr (names) || isempty (names))
    error ('sluice:drift_test:badname', ...
           'argument 4 (names): expected a parameter name or a cellstr of names, got %s', ...
           sluice.internal.describe (names));
  end
  names = names(:)';
  if (numel (unique (names)) ~= numel (names))
    error ('sluice:drift_test:badname', 'argument 4 (names): a parameter is named twice');
  end
  if (isstruct (prior) && isfield (prior, 'name') && isfield (prior, 'lower') && ...
      isfield (prior, 'upper'))
    pnames = {prior.name};
  else
    pnames = {};
  end
  for k = 1:numel (names)
    if (~any (strcmp (names{k}, model.params)))
      error ('sluice:drift_test:badname', ...
             'argument 4 (names): ''%s'' is not a parameter of the model (it has %s)', ...
             names{k}, strjoin (model.params(:)', ', '));
    end
    j = find (strcmp (names{k}, pnames), 1);
    if (isempty (j))
      error ('sluice:drift_test:badname', ...
             'argument 4 (names): ''%s'' has no prior entry: a parameter without one cannot move', ...
             names{k});
    end
    if (~(prior(j).lower < prior(j).upper))
      error ('sluice:drift_test:badname', ...
             'argument 4 (names): the prior of ''%s'' is a fixed value, which cannot drift', ...
             names{k});
    end
  end
end

function steps = check_steps (steps, q)
  if (~isa (steps, 'double') || ~isreal (steps) || issparse (steps) || isempty (steps) || ...
      ndims (steps) ~= 2)
    error ('sluice:drift_test:badsteps', ...
           'argument 5 (steps): expected a non-empty real double vector or matrix, got %s', ...
           sluice.internal.describe (steps));
  end
  if (any (~isfinite (steps(:))) || any (steps(:) <= 0))
    error ('sluice:drift_test:badsteps', ...
           'argument 5 (steps): the candidate steps must be finite and > 0 (no drift is always tried)');
  end
  if (isvector (steps))
    steps = repmat (steps(:), 1, q);
  elseif (size (steps, 2) ~= q)
    error ('sluice:drift_test:badsteps', ...
           'argument 5 (steps): a matrix needs one column per named parameter (%d), got %d', ...
           q, size (steps, 2));
  end
end

function v = nonneg (v, what)
  if (~isa (v, 'double') || ~isreal (v) || issparse (v) || ~isscalar (v) || ~isfinite (v) || v < 0)
    error ('sluice:drift_test:badoption', '%s must be a finite real number >= 0', what);
  end
end

%!shared spec, pr, t, xs
%! % a store that keeps 70% of its content each step and gets an inflow u
%! % (in its log space: the prior is lognormal)
%! f = @(t, X, P, U, dt) 0.7 * X + P(1, :);
%! spec = sluice.model (f, 'states', {'x'}, 'params', {'u'}, 'x0', 10/3);
%! pr = sluice.prior ('u', 'lognormal', [0 0.5]);
%! t = (1:40)';
%! xs = @(u) filter (1, [1 -0.7], u, 0.7 * 10/3);

%!test
%! % synthetic data whose inflow doubles half-way (u = 1, then 2): the
%! % drift is found, at a step of the size of the jump's spread, and the
%! % no-drift evidence is far below
%! randn ('state', 2);
%! u = [ones(20, 1); 2 * ones(20, 1)];
%! obs = struct ('time', t, 'variable', {repmat({'x'}, 40, 1)}, ...
%!               'value', xs (u) + 0.2 * randn (40, 1), 'sigma', 0.2 * ones (40, 1));
%! res = sluice.drift_test (spec, pr, obs, 'u', [0.02 0.1 0.3], ...
%!                          'members', 500, 'repeats', 5, 'seed', 1);
%! assert (res.drift);
%! assert (res.estimate > 0);
%! assert (res.best > 1);
%! assert (res.log_bayes_factor > res.bar);
%! assert (res.log_bayes_factor, res.log_evidence(res.best) - res.log_evidence(1));
%! assert (res.steps, [0; 0.02; 0.1; 0.3]);
%! assert (size (res.table), [4 3]);
%! assert (res.table(:, 2), res.log_evidence);
%! assert (res.table(:, 3), res.se);
%! assert (res.names, {'u'});
%! assert (res.seed, 1);
%! assert (numel (res.runs), 4);

%!test
%! % the same store with a constant inflow u = 1: no drift
%! randn ('state', 2);
%! obs = struct ('time', t, 'variable', {repmat({'x'}, 40, 1)}, ...
%!               'value', xs (ones (40, 1)) + 0.2 * randn (40, 1), ...
%!               'sigma', 0.2 * ones (40, 1));
%! res = sluice.drift_test (spec, pr, obs, {'u'}, [0.02; 0.1; 0.3], ...
%!                          struct ('members', 500, 'repeats', 5, 'seed', 1));
%! assert (~res.drift);
%! assert (res.bar >= log (10));
%! % the large steps fit worse than none
%! assert (res.log_evidence(4) < res.log_evidence(1));
%! % the rule: the bar is max (threshold, z * combined standard error)
%! s = [res.se(res.best), res.se(1)];
%! assert (res.bar, max (log (10), 2 * sqrt (sum (s .^ 2))), 1e-12);

%!test
%! % two parameters, one candidate per row of a matrix; a threshold of
%! % 1e300 never decides drift; the runs are those of sluice.evidence
%! g = @(t, X, P, U, dt) P(1, :) .* X + P(2, :);
%! s2 = sluice.model (g, 'states', {'x'}, 'params', {'a', 'b'}, 'x0', 1);
%! q = sluice.prior ('a', 'uniform', [0 1], 'b', 'normal', [0 1]);
%! obs = struct ('time', (1:5)', 'variable', {repmat({'x'}, 5, 1)}, ...
%!               'value', [1.2; 1.5; 1.4; 1.7; 1.6], 'sigma', 0.3 * ones (5, 1));
%! res = sluice.drift_test (s2, q, obs, {'a', 'b'}, [0.1 0.2; 0.3 0.05], ...
%!                          'members', 100, 'repeats', 2, 'seed', 3, 'threshold', 1e300);
%! assert (res.steps, [0 0; 0.1 0.2; 0.3 0.05]);
%! assert (size (res.table), [3 4]);
%! assert (~res.drift);
%! ev = sluice.evidence (s2, q, obs, 'members', 100, 'repeats', 2, 'seed', 3, ...
%!                       'param_move', 'random_walk', 'param_step', [0.3; 0.05]);
%! assert (res.log_evidence(3), ev.log_evidence);
%! ev0 = sluice.evidence (s2, q, obs, 'members', 100, 'repeats', 2, 'seed', 3);
%! assert (res.log_evidence(1), ev0.log_evidence);

%!error <Invalid call> sluice.drift_test ()
%!error <Invalid call> sluice.drift_test (spec, pr, struct (), 'u')
%!error id=sluice:drift_test:badmodel sluice.drift_test (5, pr, struct (), 'u', 0.1)
%!error id=sluice:drift_test:badmodel sluice.drift_test (struct ('a', 1), pr, struct (), 'u', 0.1)
%!error id=sluice:drift_test:badname sluice.drift_test (spec, pr, struct (), 'v', 0.1)
%!error id=sluice:drift_test:badname sluice.drift_test (spec, pr, struct (), {}, 0.1)
%!error id=sluice:drift_test:badname sluice.drift_test (spec, pr, struct (), 3, 0.1)
%!error id=sluice:drift_test:badname sluice.drift_test (spec, pr, struct (), {'u', 'u'}, 0.1)
%!error id=sluice:drift_test:badname sluice.drift_test (spec, pr, struct (), {'u', 2}, 0.1)
%!error id=sluice:drift_test:badname sluice.drift_test (spec, [], struct (), 'u', 0.1)
%!error id=sluice:drift_test:badname sluice.drift_test (spec, sluice.prior ('u', 'fixed', 1), struct (), 'u', 0.1)
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', 0)
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', -0.1)
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', [0.1 NaN])
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', Inf)
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', [])
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', single (0.1))
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', int32 (1))
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', 0.1i)
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', {0.1})
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', ones (2, 2))
%!error id=sluice:drift_test:badsteps sluice.drift_test (spec, pr, struct (), 'u', ones (2, 2, 2))
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'threshold', -1)
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'threshold', NaN)
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'z', [1 2])
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'z', '2')
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'param_move', 'fixed')
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'param_step', 0.1)
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'members')
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 5)
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 5, 6)
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'repeats', 1)
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'seed', -2)
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'method', 'enkf')
%!error id=sluice:drift_test:badoption sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'bogus', 1, 'seed', 1)
%!error id=sluice:drift_test:badobs sluice.drift_test (spec, pr, struct (), 'u', 0.1, 'seed', 1)
