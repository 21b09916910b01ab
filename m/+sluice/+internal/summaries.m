function [names, means, Q] = summaries (res)
  % Internal: the summaries of a filter result as one table of rows: the
  % states, the parameters, then the derived quantities of the option
  % operators when the run recorded them. names (v x 1 cellstr), means
  % (v x T) and quantiles Q (v x nq x T).
  names = [res.state_names(:); res.param_names(:)];
  means = [res.states.mean; res.params.mean];
  T = numel (res.times);
  L = numel (res.quantile_levels);
  Q = [reshape(res.states.quantiles, [], L, T); reshape(res.params.quantiles, [], L, T)];
  if (isfield (res, 'derived') && ~isempty (res.derived))
    names = [names; res.derived.names(:)];
    means = [means; res.derived.mean];
    Q = [Q; reshape(res.derived.quantiles, [], L, T)];
  end
end
