function ops = operators (spec, model, fn)
  % Internal: check the derived observables of sluice.filter's option
  % 'operators' and lay them out for the compiled cycle: the linear rows
  % first (in the order given, H padded to n + p columns), then the rows
  % of the function handles; ops.names lists the derived names in that
  % order. Errors are sluice:<fn>:badoperator (fn: default 'filter').
  if (nargin < 3)
    fn = 'filter';
  end
  n = numel (model.states);
  p = numel (model.params);
  ops = struct ('names', {cell(0, 1)}, 'H', zeros (0, n + p), 'funs', {cell(1, 0)}, ...
                'rows', zeros (1, 0));
  if (isempty (spec))
    return;
  end
  if (isstruct (spec))
    spec = num2cell (spec);
  end
  if (~iscell (spec))
    error (['sluice:' fn ':badoperator'], ...
           'operators must be a struct (or struct array, or cell of structs) with names and H or fun');
  end
  lin_names = cell (0, 1);
  fun_names = cell (0, 1);
  for i = 1:numel (spec)
    e = spec{i};
    if (~isstruct (e) || ~isscalar (e) || ~isfield (e, 'names'))
      error (['sluice:' fn ':badoperator'], 'operator %d: expected a struct with a field ''names''', i);
    end
    nm = e.names;
    if (ischar (nm))
      nm = {nm};
    end
    if (~iscellstr (nm) || isempty (nm) || ~all (cellfun (@isvarname, nm)))
      error (['sluice:' fn ':badoperator'], ...
             'operator %d: names must be a valid name or a cellstr of valid names', i);
    end
    nm = nm(:);
    k = numel (nm);
    hasH = isfield (e, 'H') && ~isempty (e.H);
    hasF = isfield (e, 'fun') && ~isempty (e.fun);
    if (hasH == hasF)
      error (['sluice:' fn ':badoperator'], 'operator %d: give exactly one of H (a matrix) and fun (a function handle)', i);
    end
    if (hasH)
      H = e.H;
      if (~isa (H, 'double') || ~isreal (H) || issparse (H) || ndims (H) ~= 2 || ...
          size (H, 1) ~= k || ~any (size (H, 2) == [n, n + p]) || any (~isfinite (H(:))))
        error (['sluice:' fn ':badoperator'], ...
               'operator %d: H must be a finite real %dx%d (or %dx%d) double matrix, got %s', ...
               i, k, n, k, n + p, sluice.internal.describe (H));
      end
      if (size (H, 2) == n)
        H = [H, zeros(k, p)];
      end
      ops.H = [ops.H; H];
      lin_names = [lin_names; nm];
    else
      if (~isa (e.fun, 'function_handle'))
        error (['sluice:' fn ':badoperator'], 'operator %d: fun must be a function handle', i);
      end
      ops.funs{end + 1} = e.fun;
      ops.rows(end + 1) = k;
      fun_names = [fun_names; nm];
    end
  end
  ops.names = [lin_names; fun_names];
  all_names = [model.states(:); model.params(:); ops.names];
  [u, ~, j] = unique (all_names);
  if (numel (u) < numel (all_names))
    dup = u{find (accumarray (j(:), 1) > 1, 1)};
    error (['sluice:' fn ':badoperator'], ...
           'the derived quantity ''%s'' is named twice or is a state or parameter of the model', dup);
  end
end
