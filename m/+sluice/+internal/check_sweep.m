function check_sweep (t, pos, fn)
  % Internal: argument pos of sluice.<fn> must be a table of sluice.sweep:
  % a scalar struct of columns (the dimensions, then seed, then the
  % scores), each a real numeric or logical column or a cellstr, all of
  % one length. A table is a plain struct a user may edit: a bad column
  % raises sluice:<fn>:badsweep naming it.
  id = ['sluice:' fn ':badsweep'];
  where = sprintf ('argument %d (table)', pos);
  if (~isstruct (t) || ~isscalar (t) || ~isfield (t, 'seed'))
    error (id, '%s: expected a table of sluice.sweep (a struct of columns with ''seed''), got %s', ...
           where, sluice.internal.describe (t));
  end
  s = t.seed;
  if (~(isa (s, 'double') && isreal (s) && isvector (s) && all (isfinite (s))))
    error (id, '%s: column ''seed'' must be a finite real double column, got %s', where, ...
           sluice.internal.describe (s));
  end
  R = numel (s);
  f = fieldnames (t);
  for k = 1:numel (f)
    v = t.(f{k});
    ok = numel (v) == R && (isvector (v) || R == 0);
    if (ok && iscell (v))
      ok = iscellstr (v) && all (cellfun (@(c) isrow (c) || isempty (c), v(:)));
    elseif (ok)
      ok = (isnumeric (v) || islogical (v)) && isreal (v) && ~issparse (v);
    end
    if (~ok)
      error (id, ['%s: column ''%s'' must be a real numeric or logical column or a ', ...
                  'cellstr of %d rows (one per point, as the seed column), got %s'], ...
             where, f{k}, R, sluice.internal.describe (v));
    end
  end
end
