function sk = hydrograph_skill (res, obs)
  % Internal: NSE and KGE of the ensemble mean at the observation times
  % against the observed values, per observed variable (a state, a
  % parameter or a recorded derived quantity), computed in the compiled
  % core (sl_scores_skill: Nash & Sutcliffe 1970; Gupta et al. 2009,
  % eq. 9-11). Rows with a NaN value are missing and left out; binomial
  % rows are counts of another scale than their variable (a logit) and
  % left out; so are rows naming no row of the result or at no cycle
  % time (sluice.scores refuses those before it gets here). The forecast
  % scores cover the states, whose forecast means the result records.
  [names, means] = sluice.internal.summaries (res);
  n = numel (res.state_names);
  nrow = numel (obs.time);
  fam = repmat ({'gaussian'}, nrow, 1);
  if (isfield (obs, 'family'))
    fam = obs.family;
    if (ischar (fam))
      fam = repmat ({fam}, nrow, 1);
    end
  end
  v = obs.variable;
  if (ischar (v))
    v = {v};
  end
  % strcmp, not ismember: an edited table may hold a non-text entry
  vi = zeros (nrow, 1);
  for k = 1:numel (names)
    vi(strcmp (v(:), names{k})) = k;
  end
  [~, ci] = ismember (obs.time(:), res.times(:));
  use = ~strcmpi (fam(:), 'binomial') & vi > 0 & ci > 0 & ~isnan (obs.value(:));
  has_fc = isfield (res, 'forecast') && isstruct (res.forecast) && ...
           isfield (res.forecast, 'mean') && isequal (size (res.forecast.mean), size (res.states.mean));
  vars = unique (v(use));
  nv = numel (vars);
  sk = struct ('variables', {vars(:)'}, 'count', zeros (1, nv), 'nse', NaN (1, nv), ...
               'kge', NaN (1, nv), 'r', NaN (1, nv), 'alpha', NaN (1, nv), ...
               'beta', NaN (1, nv), 'nse_forecast', NaN (1, nv), 'kge_forecast', NaN (1, nv), ...
               'has_forecast', has_fc);
  for j = 1:nv
    rows = find (use & strcmp (v(:), vars{j}));
    o = obs.value(rows);
    lin = sub2ind (size (means), vi(rows), ci(rows));
    k = sluice.kernel.scores ('skill', means(lin), o(:));
    sk.nse(j) = k(1);
    sk.kge(j) = k(2);
    sk.r(j) = k(3);
    sk.alpha(j) = k(4);
    sk.beta(j) = k(5);
    sk.count(j) = k(6);
    if (has_fc && vi(rows(1)) <= n)
      lin = sub2ind (size (res.forecast.mean), vi(rows), ci(rows));
      k = sluice.kernel.scores ('skill', res.forecast.mean(lin), o(:));
      sk.nse_forecast(j) = k(1);
      sk.kge_forecast(j) = k(2);
    end
  end
end
