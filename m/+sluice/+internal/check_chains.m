function [n, d, C] = check_chains (res, pos, fn)
  % Internal: argument pos of sluice.<fn> must be a result of sluice.pmmh
  % (its chains of draws). A result is a plain struct a user may edit and
  % pass back in: the fields a reader of the chains uses are checked here,
  % so an edited one is refused with sluice:<fn>:badchains naming the
  % field. Required: samples (n x d x C), names (d), acceptance (C),
  % summary (sluice.chain_summary of the samples; [] only when n < 4),
  % converged, max_rhat, min_ess, burnin, thin. The other fields a
  % reader may use are checked when present. Returns the kept iterations
  % per chain n, the parameters d and the chains C.
  need = {'samples', 'names', 'acceptance', 'summary', 'converged', 'max_rhat', ...
          'min_ess', 'burnin', 'thin'};
  [id, where] = sluice.internal.result_fields (res, pos, fn, 'badchains', 'sluice.pmmh', ...
                                             'a sluice.pmmh result', need);

  X = res.samples;
  if (~(isa (X, 'double') && isreal (X) && ~issparse (X) && ndims (X) <= 3 && ~isempty (X)))
    error (id, ['%s: field ''samples'' must be a non-empty real double array, ', ...
                'kept iterations x parameters x chains, got %s'], where, sluice.internal.describe (X));
  end
  if (any (~isfinite (X(:))))
    error (id, '%s: field ''samples'' holds %d NaN or Inf draw(s)', where, sum (~isfinite (X(:))));
  end
  [n, d, C] = size (X);
  nm = res.names;
  if (~(iscellstr (nm) && isvector (nm) && numel (nm) == d && ...
        all (cellfun (@(s) isrow (s) && ~isempty (s), nm(:)))))
    error (id, ['%s: field ''names'' must be a cellstr of the %d parameter name(s), one per ', ...
                'column of samples (%dx%dx%d), got %s'], where, d, n, d, C, ...
           sluice.internal.describe (nm));
  end
  if (numel (unique (nm)) < d)
    error (id, '%s: field ''names'' names a parameter twice', where);
  end

  per_chain (res.acceptance, 'acceptance', C, where, id, false, true);
  if (isfield (res, 'acceptance_burnin'))
    per_chain (res.acceptance_burnin, 'acceptance_burnin', C, where, id, true, true);
  end
  counts = {'degenerate', 'outside', 'nonfinite_runs'};
  for k = 1:numel (counts)
    if (isfield (res, counts{k}))
      per_chain (res.(counts{k}), counts{k}, C, where, id, false, false);
    end
  end

  v = res.converged;
  if (~((islogical (v) || (isa (v, 'double') && isreal (v))) && isscalar (v) && (v == 0 || v == 1)))
    error (id, '%s: field ''converged'' must be true or false, got %s', where, ...
           sluice.internal.describe (v));
  end
  v = res.max_rhat;
  if (~(is_real (v) && isscalar (v) && v > 1 && v < Inf))
    error (id, '%s: field ''max_rhat'' must be a finite real number > 1, got %s', where, ...
           sluice.internal.describe (v, 'value'));
  end
  v = res.min_ess;
  if (~(is_real (v) && isscalar (v) && v >= 0 && v < Inf))
    error (id, '%s: field ''min_ess'' must be a finite real number >= 0, got %s', where, ...
           sluice.internal.describe (v, 'value'));
  end
  whole (res.burnin, 'burnin', 0, where, id);
  whole (res.thin, 'thin', 1, where, id);
  if (isfield (res, 'iterations'))
    whole (res.iterations, 'iterations', 0, where, id);
  end
  if (isfield (res, 'members'))
    whole (res.members, 'members', 1, where, id);
  end
  if (isfield (res, 'chains'))
    whole (res.chains, 'chains', 1, where, id);
    if (res.chains ~= C)
      error (id, '%s: field ''chains'' is %d but samples holds %d chain(s)', where, ...
             res.chains, C);
    end
  end
  if (isfield (res, 'seed') && ~(is_real (res.seed) && isscalar (res.seed) && isfinite (res.seed)))
    error (id, '%s: field ''seed'' must be a real double scalar, got %s', where, ...
           sluice.internal.describe (res.seed));
  end
  if (isfield (res, 'target_acceptance'))
    v = res.target_acceptance;
    if (~(is_real (v) && isscalar (v) && v > 0 && v < 1))
      error (id, '%s: field ''target_acceptance'' must be a number strictly between 0 and 1, got %s', ...
             where, sluice.internal.describe (v, 'value'));
    end
  end
  check_summary (res.summary, nm, n, d, C, where, id);
  if (isfield (res, 'prior') && ~isempty (res.prior))
    [~, ~, ~, ~, ~, pn] = sluice.internal.check_prior (res.prior, [where, '.prior'], fn);
    if (~isequal (pn(:), nm(:)))
      error (id, '%s: field ''prior'' must hold the prior entries of the parameters %s, in that order', ...
             where, strjoin (nm(:)', ', '));
    end
  end
end

function check_summary (s, nm, n, d, C, where, id)
  % the summary of sluice.chain_summary: its numbers are read as they are
  if (isempty (s) && ~isstruct (s))
    if (n >= 4)
      error (id, ['%s: field ''summary'' is empty, but the chains have %d kept ', ...
                  'iterations: put sluice.chain_summary (res.samples, ''names'', res.names) there'], ...
             where, n);
    end
    return;
  end
  if (~(isstruct (s) && isscalar (s)))
    error (id, '%s: field ''summary'' must be the struct of sluice.chain_summary, got %s', ...
           where, sluice.internal.describe (s));
  end
  f = {'names', 'mean', 'sd', 'quantile_levels', 'quantiles', 'rhat', 'ess', 'ess_bulk', ...
       'mcse', 'iterations', 'chains'};
  for k = 1:numel (f)
    if (~isfield (s, f{k}))
      error (id, '%s: field ''summary.%s'' is missing', where, f{k});
    end
  end
  if (~(iscellstr (s.names) && isequal (s.names(:), nm(:))))
    error (id, '%s: field ''summary.names'' must equal the names of the samples (%s)', ...
           where, strjoin (nm(:)', ', '));
  end
  if (~(is_real (s.iterations) && isequal (s.iterations, n) && is_real (s.chains) && ...
        isequal (s.chains, C)))
    error (id, ['%s: field ''summary'' describes other chains than samples ', ...
                '(%d kept iterations x %d chains): recompute it with sluice.chain_summary'], ...
           where, n, C);
  end
  col = {'mean', 'sd', 'rhat', 'ess', 'ess_bulk', 'mcse'};
  for k = 1:numel (col)
    v = s.(col{k});
    % a quantity whose draws are all equal has NaN diagnostics
    if (~(is_real (v) && isequal (size (v), [d 1]) && ~any (isinf (v))))
      error (id, '%s: field ''summary.%s'' must be a real double %dx1 column without Inf, got %s', ...
             where, col{k}, d, sluice.internal.describe (v));
    end
  end
  lv = s.quantile_levels;
  if (~(is_real (lv) && (isvector (lv) || isempty (lv)) && all (lv >= 0 & lv <= 1)))
    error (id, '%s: field ''summary.quantile_levels'' must be a real double vector of levels in [0, 1], got %s', ...
           where, sluice.internal.describe (lv));
  end
  q = s.quantiles;
  if (~(is_real (q) && isequal (size (q), [d numel(lv)]) && all (isfinite (q(:)))))
    error (id, '%s: field ''summary.quantiles'' must be a finite real double %dx%d matrix, got %s', ...
           where, d, numel (lv), sluice.internal.describe (q));
  end
end

function per_chain (v, name, C, where, id, allow_nan, fraction)
  % one number per chain: a rate in [0, 1] or a count
  ok = is_real (v) && isvector (v) && numel (v) == C;
  if (ok)
    x = v(~isnan (v));
    ok = (allow_nan || numel (x) == C) && all (isfinite (x));
    if (fraction)
      ok = ok && all (x >= 0 & x <= 1);
    else
      ok = ok && all (x >= 0 & x == fix (x));
    end
  end
  if (~ok)
    if (fraction)
      what = 'rates in [0, 1]';
    else
      what = 'whole counts >= 0';
    end
    error (id, '%s: field ''%s'' must be a real double vector of %d %s (one per chain), got %s', ...
           where, name, C, what, sluice.internal.describe (v));
  end
end

function whole (v, name, lo, where, id)
  if (~(is_real (v) && isscalar (v) && isfinite (v) && v == fix (v) && v >= lo))
    error (id, '%s: field ''%s'' must be a whole number >= %d, got %s', where, name, lo, ...
           sluice.internal.describe (v, 'value'));
  end
end

function tf = is_real (v)
  tf = isa (v, 'double') && isreal (v) && ~issparse (v);
end
