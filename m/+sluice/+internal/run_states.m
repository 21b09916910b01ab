function X = run_states (model, X0, P0, t0, times, forcing, opts, fn)
  % Internal: run the ensemble (X0, P0) from t0 through the increasing
  % times with no observations and return the states at those times
  % (n x N x numel(times)). The settings name fn as the caller: the
  % compiled run raises its errors as sluice:<fn>:<reason> (a user's own
  % identifiers are kept; an error without one becomes sluice:<fn>:failed).
  % With K > 1 starts: t0 and times K-vectors, X0 n x N x K and P0 p x N
  % x K (or empty), start k's ensemble runs from t0(k) to times(k) alone
  % and X is n x N x K. The settings are made once for all starts, and
  % each start gives what a call of its own gives.
  if (isempty (t0))
    X = zeros (size (X0, 1), size (X0, 2), 0);
    return;
  end
  try
    c = sluice.internal.model_config (model, forcing, [], opts.events, [], fn);
    N = size (X0, 2);
    K = numel (t0);
    if (K == 1)
      T = numel (times);
    else
      T = 1;
    end
    c.members = N;
    c.t0 = t0(1);
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
    if (K == 1)
      c.X0 = X0;
      c.P0 = P0;
      r = sluice.internal.run_engine (model, c);
      X = r.history_X;
      nonfinite = max (r.nonfinite);
    else
      X = zeros (size (X0, 1), N, K);
      nonfinite = 0;
      for k = 1:K
        c.t0 = t0(k);
        c.times = times(k);
        c.X0 = X0(:, :, k);
        if (isempty (P0))
          c.P0 = P0;
        else
          c.P0 = P0(:, :, k);
        end
        r = sluice.internal.run_engine (model, c);
        X(:, :, k) = r.history_X;
        nonfinite = max ([nonfinite, r.nonfinite(:)']);
      end
    end
  catch err
    sluice.internal.raise_again (err.identifier, ['sluice:' fn ':failed'], err.message);
  end
  if (nonfinite > 0)
    warning (['sluice:' fn ':nonfinite'], '%d member(s) reached a non-finite state', ...
             nonfinite);
  end
end
