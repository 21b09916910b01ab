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
  valid = cellfun ('isclass', all_names, 'char') & cellfun ('size', all_names, 1) == 1 ...
          & cellfun ('ndims', all_names) == 2;
  valid(valid) = cellfun (@isvarname, all_names(valid));
  last = find (~valid, 1) - 1;
  if (isempty (last))
    last = p;
  end
  twice = sluice.internal.first_repeat (all_names(1:last));
  % every entry at once when every one is well formed (a wide model has
  % thousands); otherwise the loop below finds the first bad one
  if (last == p && twice == 0)
    [ok, ids, a, b, lo, hi] = all_at_once (prior, dists, counts, ids, a, b, lo, hi);
    if (ok)
      names = all_names(:);
    end
  else
    ok = false;
  end
  for k = 1:p * ~ok
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
  % the bounds of every entry at once when all are what check_bounds
  % accepts; otherwise the loop below finds the first entry that is not
  ll = {prior.lower};
  ul = {prior.upper};
  fine = all (cellfun ('isempty', reasons)) && all (cellfun ('isclass', ll, 'double')) ...
         && all (cellfun ('isclass', ul, 'double')) && all (cellfun ('prodofsize', ll) == 1) ...
         && all (cellfun ('prodofsize', ul) == 1) && all (cellfun ('isreal', ll)) ...
         && all (cellfun ('isreal', ul));
  if (fine)
    lv = reshape ([ll{:}], 1, p);
    uv = reshape ([ul{:}], 1, p);
    fine = all (lv <= reshape (slo, 1, p) & uv >= reshape (shi, 1, p) & lv <= uv);
  end
  for k = 1:p * ~fine
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

function [ok, ids, a, b, lo, hi] = all_at_once (prior, dists, counts, ids, a, b, lo, hi)
  % The distributions and arguments of every entry with no loop over
  % them, when every distribution is a known name and every args a real,
  % full double vector of its count; ok false otherwise (ids, a, b, lo,
  % hi then come back as given). Fills the caller's ids, a, b, lo, hi
  % (1 x p, as check_prior made them: zeros, -Inf, Inf), which keep
  % their values where an entry has no such argument.
  p = numel (prior);
  dl = {prior.dist};
  al = {prior.args};
  ok = iscellstr (dl) && all (cellfun ('size', dl, 1) == 1);
  if (ok)
    [known, d] = ismember (dl, dists);
    ok = all (known);
  end
  if (ok)
    rows = cellfun ('size', al, 1);
    cols = cellfun ('size', al, 2);
    ok = all (cellfun ('isclass', al, 'double')) && all (cellfun ('isreal', al)) ...
         && all (cellfun ('ndims', al) == 2) && all (rows == 1 | cols == 1) ...
         && all (rows .* cols == reshape (counts(d), 1, p)) ...
         && ~any (cellfun (@issparse, al));
  end
  if (~ok)
    return;
  end
  ids = reshape (d - 1, 1, p);
  cd = reshape (counts(d), 1, p);
  for c = unique (cd)
    sel = cd == c;
    % row vectors side by side, then column vectors: c x (entries)
    r = sel & rows == 1;
    k = sel & rows ~= 1;
    M = zeros (c, p);
    M(:, find (r)) = reshape ([al{r}], c, []);
    M(:, find (k)) = [zeros(c, 0), al{k}];
    a(sel) = M(1, sel);
    if (c >= 2)
      b(sel) = M(2, sel);
    end
    if (c == 4)
      lo(sel) = M(3, sel);
      hi(sel) = M(4, sel);
    end
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

%!test
%! % many entries of every distribution, args as rows and as columns:
%! % the outputs are each entry's own (ids in the core's order uniform,
%! % normal, lognormal, truncnormal, fixed; a, b its first arguments; lo,
%! % hi a truncnormal's bounds), taken at once
%! forms = {{'uniform', [0 2]}, {'normal', [1; 3]}, {'lognormal', [0.5 0.2]}, ...
%!          {'truncnormal', [1 2 0 5]'}, {'fixed', 4}};
%! args = {};
%! for k = 1:300
%!   f = forms{mod (k, 5) + 1};
%!   args = [args, {sprintf('v%d', k), f{1}, f{2}}];
%! end
%! pr = sluice.prior (args{:});
%! [ids, a, b, lo, hi, names] = sluice.internal.check_prior (pr, 1, 'filter');
%! for k = [1 2 3 4 5 299 300]
%!   d = mod (k, 5) + 1;
%!   assert (ids(k), d - 1);
%!   assert (a(k), forms{d}{2}(1));
%!   assert (b(k), (numel (forms{d}{2}) >= 2) * forms{d}{2}(min (2, end)));
%!   if (d == 4)
%!     assert ([lo(k) hi(k)], [0 5]);
%!   else
%!     assert ([lo(k) hi(k)], [-Inf Inf]);
%!   end
%!   assert (names{k}, sprintf ('v%d', k));
%! end
%! assert (size (names), [300 1]);
%! % one edited entry far down: the same error as entry by entry
%! pr(250).args = [1 2 3];
%! try
%!   sluice.internal.check_prior (pr, 1, 'filter');
%!   error ('test:noerror', 'no error');
%! catch err
%!   assert (err.identifier, 'sluice:filter:badprior');
%!   assert (strncmp (err.message, 'argument 1 (prior): entry 250', 29));
%! end
%! pr = sluice.prior (args{:});
%! pr(120).upper = 0.5;
%! try
%!   sluice.internal.check_prior (pr, 1, 'filter');
%!   error ('test:noerror', 'no error');
%! catch err
%!   assert (strncmp (err.message, 'argument 1 (prior): entry 120', 29));
%! end
