function X = run_states (model, X0, P0, t0, times, forcing, opts, fn)
  % Internal: run the ensemble (X0, P0) from t0 through the increasing
  % times with no observations and return the states at those times
  % (n x N x numel(times)). The settings name fn as the caller: the
  % compiled run raises its errors as sluice:<fn>:<reason> (a user's own
  % identifiers are kept; an error without one becomes sluice:<fn>:failed).
  try
    c = sluice.internal.model_config (model, forcing, [], opts.events, [], fn);
    N = size (X0, 2);
    T = numel (times);
    c.members = N;
    c.t0 = t0;
    c.times = times(:)';
    c.obs_first = zeros (1, T + 1);
    c.obs_var = []; c.obs_value = []; c.obs_sigma = []; c.obs_aux = []; c.obs_family = {};
    c.lower = model.lower(:);
    c.upper = model.upper(:);
    % parameters kept, no resampling, the states only
    c.param_move = 'fixed';
    c.param_step = zeros (numel (model.params), 1);
    c.threshold = 0;
    c.seed = opts.seed;
    if (isfield (opts, 'threads'))
      c.threads = opts.threads;
    end
    c.probs = [];
    c.history = 2;
    c.X0 = X0;
    c.P0 = P0;
    r = sluice.internal.run_engine (model, c);
  catch err
    % an error raised without an identifier: sluice:<fn>:failed
    sluice.internal.raise_again (err.identifier, ['sluice:' fn ':failed'], err.message);
  end
  X = r.history_X;
  if (any (r.nonfinite > 0))
    warning (['sluice:' fn ':nonfinite'], '%d member(s) reached a non-finite state', ...
             max (r.nonfinite));
  end
end
