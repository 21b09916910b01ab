function [ids, a, b, lo, hi, names] = check_prior (prior, pos, fn)
  % Internal: argument pos of sluice.<fn> must be a prior, a struct array
  % as sluice.prior makes it (entries joined with [p1, p2] allowed). A
  % prior is a plain struct a user may edit: every field is checked here
  % and a bad one raises sluice:<fn>:badprior naming the entry and field.
  % Returns what the draws need: the distributions' ids (0-based, in the
  % order uniform, normal, lognormal, truncnormal, fixed), their first
  % two arguments a, b, truncation bounds lo, hi (1 x p each) and the
  % names (p x 1).
  % the core's distributions (sluice.kernel.core_names), asked once: this
  % check runs on every filter call
  persistent core
  if (isempty (core))
    core = sluice.kernel.core_names ();
  end
  dists = core.distributions;
  counts = core.distribution_args;
  forms = core.distribution_forms;
  fields = {'name', 'dist', 'args', 'lower', 'upper'};
  id = ['sluice:' fn ':badprior'];
  if (ischar (pos))
    where = pos;   % an option, named as the caller says
  else
    where = sprintf ('argument %d (prior)', pos);
  end

  if (~isstruct (prior) || isempty (prior) || ~isvector (prior))
    error (id, '%s: expected a non-empty struct array from sluice.prior, got %s', ...
           where, sluice.internal.describe (prior));
  end
  for f = 1:numel (fields)
    if (~isfield (prior, fields{f}))
      error (id, '%s: the struct array has no field ''%s''', where, fields{f});
    end
  end
  p = numel (prior);
  ids = zeros (1, p);
  a = zeros (1, p);
  b = zeros (1, p);
  lo = -Inf (1, p);
  hi = Inf (1, p);
  names = cell (p, 1);
  % the first entry whose name repeats an earlier one, among the entries
  % before the first invalid name (found by sorting: a wide model has
  % thousands); the loop reports it where it meets it
  all_names = {prior.name};
  valid = cellfun (@(x) ischar (x) && isrow (x) && isvarname (x), all_names);
  last = find (~valid, 1) - 1;
  if (isempty (last))
    last = p;
  end
  twice = sluice.internal.first_repeat (all_names(1:last));
  for k = 1:p
    name = prior(k).name;
    if (~(ischar (name) && isrow (name) && isvarname (name)))
      error (id, '%s: entry %d: the name is not a valid variable name', where, k);
    end
    if (k == twice)
      error (id, '%s: entry %d: parameter ''%s'' is named twice', where, k, name);
    end
    names{k} = name;
    dist = prior(k).dist;
    d = [];
    if (ischar (dist) && isrow (dist))
      d = find (strcmp (dist, dists));
    end
    if (isempty (d))
      error (id, '%s: entry %d (''%s''): unknown distribution; expected one of %s', ...
             where, k, name, strjoin (dists, ', '));
    end
    args = prior(k).args;
    if (~(isa (args, 'double') && isreal (args) && ~issparse (args) ...
          && isvector (args) && numel (args) == counts(d)))
      error (id, '%s: entry %d (''%s''): a %s prior takes %d real double arguments, got %s', ...
             where, k, name, dist, counts(d), sluice.internal.describe (args));
    end
    ids(k) = d - 1;
    a(k) = args(1);
    if (counts(d) >= 2)
      b(k) = args(2);
    end
    if (counts(d) == 4)
      lo(k) = args(3);
      hi(k) = args(4);
    end
  end
  % the numbers of every entry and their supports: the core's verdict
  [reasons, whats, slo, shi] = sluice.kernel.prior_eval ('check', ids, a, b, lo, hi);
  for k = 1:p
    lower = prior(k).lower;
    upper = prior(k).upper;
    if (isempty (reasons{k}) && isa (lower, 'double') && isa (upper, 'double') && ...
        isreal (lower) && isreal (upper) && isscalar (lower) && isscalar (upper) && ...
        lower <= slo(k) && upper >= shi(k) && lower <= upper)
      continue;   % what check_bounds accepts (NaN fails the comparisons)
    end
    if (~isempty (reasons{k}))
      error (id, '%s: entry %d (''%s''): %s arguments %s = %s: %s', where, k, ...
             names{k}, dists{ids(k) + 1}, forms{ids(k) + 1}, ...
             mat2str (prior(k).args(:)'), whats{k});
    end
    check_bounds (prior(k), k, names{k}, dists{ids(k) + 1}, [slo(k) shi(k)], where, id);
  end
end

function check_bounds (pr, k, name, dist, support, where, id)
  % The bounds of an entry are what the filters transform with (log,
  % logit) and clip to; sluice.prior makes them contain the support of
  % the distribution, so every draw lies inside them. A hand-edited entry
  % whose bounds cut into the support would get draws outside its bounds:
  % refuse it rather than draw values the rest of sluice calls impossible.
  lower = pr.lower;
  upper = pr.upper;
  if (~(isa (lower, 'double') && isa (upper, 'double') && isreal (lower) && isreal (upper) ...
        && isscalar (lower) && isscalar (upper) && ~isnan (lower) && ~isnan (upper) ...
        && lower <= upper))
    error (id, '%s: entry %d (''%s''): lower and upper must be real scalars with lower <= upper', ...
           where, k, name);
  end
  if (~(lower <= support(1) && upper >= support(2)))
    error (id, ['%s: entry %d (''%s''): the bounds [%g %g] must contain ', ...
                'the support [%g %g] of the %s distribution (edit args, or remake the ', ...
                'entry with sluice.prior and its bounds option)'], ...
           where, k, name, lower, upper, support(1), support(2), dist);
  end
end
