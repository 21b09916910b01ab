function check_result (res, pos, fn, need)
  % Internal: argument pos of sluice.<fn> must be a result of
  % sluice.filter (also as a twin's res.filter). A result is a plain
  % struct a user may edit and pass back in: the fields the reports,
  % scores and smoothers read are checked here, so an edited one is
  % refused with sluice:<fn>:badresult naming the field. need (optional)
  % lists fields the caller needs beyond the summaries every caller reads
  % (times, state_names, states, quantile_levels, ess, resampled); with
  % 'params' among them, param_names and params are checked too. The
  % other fields are checked when present.
  if (nargin < 4)
    need = {};
  end
  need = [{'times', 'state_names', 'states', 'quantile_levels', 'ess', 'resampled'}, need];
  if (any (strcmp (need, 'params')) && ~any (strcmp (need, 'param_names')))
    need{end+1} = 'param_names';   % the parameters' summaries are read by name
  end
  [id, where] = sluice.internal.result_fields (res, pos, fn, 'badresult', 'sluice.filter', ...
                                             'a filter result', need);
  t = res.times;
  if (~(is_real (t) && isrow (t) && all (isfinite (t))))
    error (id, '%s: field ''times'' must be a non-empty finite real double row (1 x T), got %s', ...
           where, sluice.internal.describe (t));
  end
  T = numel (t);
  n = name_list (res.state_names, 'state_names', where, id);
  lv = res.quantile_levels;
  if (~(is_real (lv) && (isvector (lv) || isempty (lv)) && all (lv >= 0 & lv <= 1)))
    error (id, '%s: field ''quantile_levels'' must be a real double vector of levels in [0, 1], got %s', ...
           where, sluice.internal.describe (lv));
  end
  L = numel (lv);
  summary (res.states, 'states', n, L, T, where, id);
  per_cycle (res.ess, 'ess', T, where, id);
  per_cycle (res.resampled, 'resampled', T, where, id);
  if (any (strcmp (need, 'params')))
    % only a caller that reads the parameters' summaries asks for them
    p = name_list (res.param_names, 'param_names', where, id);
    summary (res.params, 'params', p, L, T, where, id);
  end
  if (isfield (res, 'summarized_states'))
    f = res.summarized_states;
    if (~((islogical (f) || is_real (f)) && isvector (f) && numel (f) == n && ...
          all (f == 0 | f == 1)))
      error (id, ['%s: field ''summarized_states'' must be %d logical flags, one per ', ...
                  'state, got %s'], where, n, sluice.internal.describe (f));
    end
  end
  if (isfield (res, 'members'))
    m = res.members;
    if (~(is_real (m) && isscalar (m) && isfinite (m) && m >= 1 && m == fix (m)))
      error (id, '%s: field ''members'' must be a positive whole number, got %s', where, ...
             sluice.internal.describe (m, 'value'));
    end
  end
  if (isfield (res, 'method') && ~(ischar (res.method) && (isrow (res.method) || isempty (res.method))))
    error (id, '%s: field ''method'' must be a character string, got %s', where, ...
           sluice.internal.describe (res.method));
  end
  scalars = {'seed', 'log_evidence', 'skipped_total', 't0'};
  for k = 1:numel (scalars)
    if (isfield (res, scalars{k}))
      v = res.(scalars{k});
      if (~(is_real (v) && isscalar (v)))
        error (id, '%s: field ''%s'' must be a real double scalar, got %s', where, ...
               scalars{k}, sluice.internal.describe (v));
      end
    end
  end
  cycles = {'skipped', 'nonfinite', 'nanpredicted', 'degenerate', 'move_sweeps', 'move_accept'};
  for k = 1:numel (cycles)
    if (isfield (res, cycles{k}))
      per_cycle (res.(cycles{k}), cycles{k}, T, where, id);
    end
  end
  texts = {'param_move', 'model'};
  for k = 1:numel (texts)
    if (isfield (res, texts{k}))
      v = res.(texts{k});
      if (~(ischar (v) && (isrow (v) || isempty (v))))
        error (id, '%s: field ''%s'' must be a character string, got %s', where, ...
               texts{k}, sluice.internal.describe (v));
      end
    end
  end
  if (isfield (res, 'options'))
    o = res.options;
    if (~(isstruct (o) && isscalar (o)))
      error (id, '%s: field ''options'' must be a struct of the run''s options, got %s', ...
             where, sluice.internal.describe (o));
    end
    if (isfield (o, 'resample_threshold') && ~(is_real (o.resample_threshold) && ...
                                               isscalar (o.resample_threshold)))
      error (id, '%s: field ''options.resample_threshold'' must be a real double scalar, got %s', ...
             where, sluice.internal.describe (o.resample_threshold));
    end
  end
  % the ensemble history and the forecast summaries: their callers check
  % the sizes of what they read; each is a scalar struct or [] (not kept)
  nested = {'history', 'forecast'};
  for k = 1:numel (nested)
    if (isfield (res, nested{k}))
      v = res.(nested{k});
      if (isstruct (v) ~= (isstruct (v) && isscalar (v)) || (~isstruct (v) && ~isempty (v)))
        error (id, '%s: field ''%s'' must be a scalar struct (or [] when not kept), got %s', ...
               where, nested{k}, sluice.internal.describe (v));
      end
    end
  end
  if (isfield (res, 'forecast') && isstruct (res.forecast) && isfield (res.forecast, 'mean') ...
      && ~is_real (res.forecast.mean))
    error (id, '%s: field ''forecast.mean'' must be a real double array, got %s', where, ...
           sluice.internal.describe (res.forecast.mean));
  end
  if (isfield (res, 'derived') && ~isempty (res.derived))
    % the summaries of the option operators' derived quantities
    dv = res.derived;
    if (~(isstruct (dv) && isscalar (dv) && isfield (dv, 'names')))
      error (id, '%s: field ''derived'' must be a struct with names, mean and quantiles, got %s', ...
             where, sluice.internal.describe (dv));
    end
    d = name_list (dv.names, 'derived.names', where, id);
    summary (dv, 'derived', d, L, T, where, id);
  end
  if (isfield (res, 'smoothed') && ~isempty (res.smoothed))
    sm = res.smoothed;
    if (~(isstruct (sm) && isscalar (sm) && isfield (sm, 'states')))
      error (id, '%s: field ''smoothed'' must be a struct with the smoothed states, got %s', ...
             where, sluice.internal.describe (sm));
    end
    summary (sm.states, 'smoothed.states', n, L, T, where, id);
    if (any (strcmp (need, 'params')) && isfield (sm, 'params'))
      summary (sm.params, 'smoothed.params', numel (res.param_names), L, T, where, id);
    end
  end
end

function tf = is_real (v)
  tf = isnumeric (v) && isa (v, 'double') && isreal (v) && ~issparse (v);
end

function k = name_list (c, what, where, id)
  if (~iscell (c) || ~all (cellfun (@(s) ischar (s) && isrow (s) && ~isempty (s), c(:)')))
    error (id, '%s: field ''%s'' must be a cell array of names, got %s', where, what, ...
           sluice.internal.describe (c));
  end
  k = numel (c);
end

function summary (s, what, n, L, T, where, id)
  % a struct of the mean (n x T) and quantiles (n x L x T) over cycles
  if (~(isstruct (s) && isscalar (s) && isfield (s, 'mean') && isfield (s, 'quantiles')))
    error (id, '%s: field ''%s'' must be a struct with fields mean and quantiles, got %s', ...
           where, what, sluice.internal.describe (s));
  end
  if (~(is_real (s.mean) && ndims (s.mean) == 2 && size (s.mean, 1) == n && size (s.mean, 2) == T))
    error (id, '%s: field ''%s.mean'' must be a real double %dx%d array, got %s', ...
           where, what, n, T, sluice.internal.describe (s.mean));
  end
  q = s.quantiles;
  if (~(is_real (q) && ndims (q) <= 3 && size (q, 1) == n && size (q, 2) == L && ...
        size (q, 3) == T))
    error (id, '%s: field ''%s.quantiles'' must be a real double %dx%dx%d array, got %s', ...
           where, what, n, L, T, sluice.internal.describe (q));
  end
end

function per_cycle (v, what, T, where, id)
  % one real value per cycle
  if (~((is_real (v) || islogical (v)) && numel (v) == T && (isvector (v) || T == 0)))
    error (id, '%s: field ''%s'' must hold one real value per cycle (%d), got %s', ...
           where, what, T, sluice.internal.describe (v));
  end
end
