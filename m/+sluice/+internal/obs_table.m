function tab = obs_table (obs, names, t0, fn, ordered)
  % Internal: check the long observation table of sluice.<fn> and return
  % its columns: time, value, sigma, family (cellstr, default gaussian),
  % aux (the family's extra number: binomial n, Student-t dof, censoring
  % limit; NaN elsewhere) and var (the index of each row's variable in
  % names, the quantities that may be observed). Rows must lie at or after
  % t0 and, with ordered, be in time order. Every error is
  % sluice:<fn>:badobs and names the row.
  id = ['sluice:' fn ':badobs'];
  if (~isstruct (obs) || ~isscalar (obs))
    error (id, ...
           'argument 3 (obs): expected a struct of columns time, variable, value, sigma, got %s', ...
           sluice.internal.describe (obs));
  end
  need = {'time', 'variable', 'value', 'sigma'};
  for k = 1:numel (need)
    if (~isfield (obs, need{k}))
      error (id, 'the observation table has no column ''%s''', need{k});
    end
  end
  m = numel (obs.time);
  num = {'time', 'value', 'sigma'};
  for k = 1:numel (num)
    v = obs.(num{k});
    if (~isa (v, 'double') || ~isreal (v) || issparse (v) || ...
        (~isempty (v) && ~isvector (v)) || numel (v) ~= m)
      error (id, ...
             'observation column ''%s'' must be a real double vector with one entry per row (%d), got %s', ...
             num{k}, m, sluice.internal.describe (v));
    end
  end
  var = obs.variable;
  if (ischar (var) && m == 1)
    var = {var};
  end
  if (~iscellstr (var) || numel (var) ~= m)
    error (id, ...
           'observation column ''variable'' must be a cellstr with one name per row (%d)', m);
  end
  tab.time = double (obs.time(:));
  tab.value = double (obs.value(:));
  tab.sigma = double (obs.sigma(:));
  if (isfield (obs, 'family'))
    fam = obs.family;
    if (ischar (fam))
      fam = repmat ({fam}, m, 1);
    end
    if (~iscellstr (fam) || numel (fam) ~= m)
      error (id, ...
             'observation column ''family'' must be a cellstr with one name per row');
    end
    tab.family = fam(:);
  else
    tab.family = cell (m, 1);
    tab.family(:) = {'gaussian'};
  end
  tab.aux = nan (m, 1);
  extra = {'n', 'binomial'; 'dof', 'student_t'; 'limit', 'censored'};
  for k = 1:size (extra, 1)
    if (isfield (obs, extra{k, 1}))
      v = obs.(extra{k, 1});
      if (~isnumeric (v) || ~isreal (v) || numel (v) ~= m)
        error (id, ...
               'observation column ''%s'' must be numeric with one entry per row', extra{k, 1});
      end
      sel = strcmp (tab.family, extra{k, 2});
      tab.aux(sel) = double (v(sel));
    end
  end
  % a missing value needs no sigma: the engine never reads it there, and
  % checks every row's sigma, so an absent one (NaN) stands in as 1
  tab.sigma(isnan (tab.value) & isnan (tab.sigma)) = 1;
  % every row's checks at once; the first row that fails any of them is
  % then checked again alone, for the message of its first failing check
  var = var(:);
  % names differ: one index per row (0: no such name), by sorting
  [~, tab.var] = ismember (var, names);
  tab.var = reshape (double (tab.var), m, 1);
  t = tab.time;
  v = tab.value;
  s = tab.sigma;
  counted = false (m, 1);
  if (isfield (obs, 'family'))
    counted = strcmp (tab.family, 'poisson') | strcmp (tab.family, 'binomial');
  end
  bad = tab.var == 0 | ~isfinite (t) | t < t0 | isinf (v) | ...
        (~counted & ~isnan (v) & ~(isfinite (s) & s >= realmin));
  if (ordered && m > 1)
    bad(2:end) = bad(2:end) | t(2:end) < t(1:end-1);
  end
  i = find (bad, 1);
  if (~isempty (i))
    row_error (i, tab, var, names, t0, ordered, counted(i), id);
  end
end

function row_error (i, tab, var, names, t0, ordered, counted, id)
  % the first failing check of row i, in the order the checks are listed
  if (tab.var(i) == 0)
    error (id, ...
           'observation row %d: unknown variable ''%s'' (the model has %s)', ...
           i, var{i}, strjoin (names(:)', ', '));
  end
  if (~isfinite (tab.time(i)))
    error (id, 'observation row %d: time is not finite', i);
  end
  if (ordered && i > 1 && tab.time(i) < tab.time(i - 1))
    error (id, ...
           'observation row %d: time %g comes before the previous row''s %g (rows must be in time order)', ...
           i, tab.time(i), tab.time(i - 1));
  end
  if (tab.time(i) < t0)
    error (id, ...
           'observation row %d: time %g lies before the start of the run (%g)', ...
           i, tab.time(i), t0);
  end
  if (isinf (tab.value(i)))
    error (id, 'observation row %d: value is infinite', i);
  end
  % below realmin (a subnormal double) 1/sigma overflows and the
  % log-likelihood is NaN or -Inf: refused like 0. A missing value (NaN,
  % skipped) needs no sigma; nor do the counts (poisson, binomial).
  error (id, ['observation row %d: sigma must be finite and at least %.17g ', ...
              '(the smallest normal double), got %g'], i, realmin, tab.sigma(i));
end
