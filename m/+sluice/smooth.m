% -*- texinfo -*-
% @deftypefn  {} {@var{res} =} sluice.smooth (@var{res})
% @deftypefnx {} {@var{res} =} sluice.smooth (@var{res}, @var{opts})
% @deftypefnx {} {@var{res} =} sluice.smooth (@var{res}, @var{name}, @var{value}, @dots{})
% Smooth a filter run: its states and parameters given all its observations.
% The smoothed distributions are computed after the run from its
% history.
%
% @var{res} is a result of @code{sluice.filter} run with
% @code{'history', true} (otherwise the call fails with
% @code{sluice:smooth:nohistory}). The particle filter's result
% (@code{method} @code{'pf'}) can be smoothed in two ways:
%
% @table @code
% @item 'genealogy'
% (default) each final particle is traced back through the ancestors the
% resampling chose; the smoothed distribution at cycle s is the particles
% @code{res.history.X(:, idx(j, s), s)} with the final weights
% @code{res.history.w(:, end)}. It costs next to nothing and handles
% estimated parameters, but the number of distinct ancestors falls going
% back in time (@code{smoothed.distinct}): far from the end the smoothed
% ensemble collapses onto a few particles.
% @item 'ffbsi'
% forward filtering, backward simulation: @code{trajectories} M paths are
% drawn backwards, each choosing at cycle s particle i with probability
% proportional to w_s(i) p(x_@{s+1@} | x_s^i), the filter weight times the
% transition density to the path's state at the next cycle. The density is
% Gaussian: its mean is the particle propagated to the next cycle without
% noise (@code{sluice.propagate} with the run's forcing and events) and its
% covariance that of the noise the filter added: the model's own noise
% for the linear model (Q, summed over the model steps of a cycle) plus
% the run's @code{state_noise}. This needs the model (option
% @code{model}) and a density: every state must receive noise, forcing and
% event noise must be off and all members must share the same parameters
% (otherwise @code{sluice:smooth:nodensity}; use the genealogy). Cost
% N M n per cycle (the number of density evaluations is reported); it
% needs about as much memory again as @code{res.history.X}.
% @end table
%
% The ensemble Kalman smoother (@code{'enks'}, the only smoother of the
% ensemble Kalman methods' results) runs inside the filter, with the
% filter's own analysis applied to a window of past ensembles: run
% @code{sluice.filter} with @code{'lag', L} (@code{Inf}: over the whole
% record), which fills @code{res.smoothed}; @code{sluice.smooth} returns
% such a result as it is, and otherwise fails with
% @code{sluice:smooth:nowindow} saying so. The particle filter's
% @code{'lag'} gives a fixed-lag smoother with bounded memory in the same
% way, without the history.
%
% Options (a struct or name/value pairs):
% @table @code
% @item method
% @code{'genealogy'} or @code{'ffbsi'}.
% @item model
% the model spec of the run (needed for @code{'ffbsi'}).
% @item trajectories
% number of backward paths M (default min (N, 100)).
% @item rejection_tries
% for @code{'ffbsi'}: 0 (default) sums all N densities for every backward
% draw; k > 0 first proposes up to k particles from the filter weights and
% accepts one with probability exp(-d^2/2) (the density over its bound, d
% the Mahalanobis distance), then falls back to the exact sum. The draws
% have the same distribution either way; the rejection form is cheaper when
% the backward kernel is broad compared with the filter's spread.
% @item seed
% keys the backward draws (default the run's @code{res.seed}).
% @item threads
% OpenMP threads (default the run's; for a run with the default, all
% cores when the smoother's work is large, about 10 ms or more on one
% core, and one thread below that, since a thread that slept while
% Octave ran can take milliseconds to start). The results are the same
% for any count.
% @end table
%
% The result is @var{res} with the field @code{smoothed}: @code{method},
% @code{states.mean} (n x T), @code{states.quantiles} (n x nq x T, at the
% run's @code{quantile_levels}), @code{params.mean}, @code{params.quantiles}
% (p x ...), @code{trajectories} (ffbsi: n x M x T states of the paths;
% genealogy: the traced indices idx, N x T), @code{indices} (the particle
% of each cycle on each path, 1-based: M x T or N x T), @code{distinct}
% (1 x T: distinct particles on the paths at each cycle), @code{members}
% (N) and @code{cost} (@code{seconds}, @code{evaluations} of the
% transition density, @code{fallbacks} to the exact sum).
%
% @seealso{sluice.filter, sluice.propagate}
% @end deftypefn
function res = smooth (res, varargin)
  if (nargin < 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  t_start = tic ();
  opts = struct ('method', '', 'model', [], 'trajectories', [], ...
                 'rejection_tries', 0, 'seed', [], 'threads', []);
  opts = sluice.internal.name_value (opts, varargin, 'smooth');
  sluice.internal.check_result (res, 1, 'smooth', {'method'});
  [names, default] = smoothers_for (res.method);
  if (any (strcmp (names, 'enks')))
    % the ensemble Kalman smoother ran inside the filter (option 'lag')
    if (~isempty (opts.method) && ~(ischar (opts.method) && strcmp (opts.method, 'enks')))
      error ('sluice:smooth:badsmoother', ...
             'the result of the ''%s'' filter is smoothed by ''enks'' only', res.method);
    end
    if (~isfield (res, 'smoothed') || ~isstruct (res.smoothed) || ...
        ~isfield (res.smoothed, 'method') || ~strcmp (res.smoothed.method, 'enks'))
      error ('sluice:smooth:nowindow', ...
             ['the ensemble Kalman smoother runs inside the filter: run sluice.filter ', ...
              'with ''lag'', L (Inf for the whole record)']);
    end
    return;
  end
  if (isempty (names))
    error ('sluice:smooth:badmethod', ...
           ['this result is from the ''%s'' filter; the smoothers genealogy and ffbsi ', ...
            'need a particle-filter run (method ''pf'')'], res.method);
  end
  if (isempty (opts.method))
    opts.method = default;
  end
  if (~ischar (opts.method) || ~any (strcmp (opts.method, names)))
    error ('sluice:smooth:badsmoother', 'method must be %s', ...
           strjoin (strcat ('''', names, ''''), ' or '));
  end
  h = check_history (res);
  probs = [0.05 0.5 0.95];
  if (isfield (res, 'quantile_levels'))
    probs = res.quantile_levels;
  end
  threads = whole (opts.threads, run_option (res, 'threads', 0), 'threads', 0, 256, 'badoption');
  switch (opts.method)
    case 'genealogy'
      s = run_kernel ('genealogy', h.X, h.P, h.w, probs, threads, h.ancestors);
      sm = struct ('method', 'genealogy');
      sm.trajectories = s.index;
    case 'ffbsi'
      M = whole (opts.trajectories, min (h.N, 100), 'trajectories', 1, 2^32 - 2, ...
                 'badtrajectories');
      seed = 0;
      if (isfield (res, 'seed'))
        seed = res.seed;
      end
      seed = whole (opts.seed, seed, 'seed', 0, 2^53, 'badoption');
      tries = whole (opts.rejection_tries, 0, 'rejection_tries', 0, 1000, 'badoption');
      n = size (h.X, 1);
      sluice.internal.ensure_memory (8 * (n * M * h.T + M * h.T + 2 * M) + 16 * n * h.N * h.T, ...
                                   'smooth', 'the smoother');
      [F, L] = transitions (res, h, opts.model, threads);
      s = run_kernel ('ffbsi', h.X, h.P, h.w, probs, threads, F, L, M, seed, tries);
      sm = struct ('method', 'ffbsi');
      sm.trajectories = s.trajectories;
  end
  sm.indices = s.index;
  sm.states = struct ('mean', s.mean, 'quantiles', s.quantiles);
  sm.params = struct ('mean', s.param_mean, 'quantiles', s.param_quantiles);
  sm.distinct = s.distinct;
  sm.members = h.N;
  sm.cost = struct ('seconds', toc (t_start), 'evaluations', s.evaluations, ...
                    'fallbacks', s.fallbacks);
  res.smoothed = sm;
end

function s = run_kernel (varargin)
  % the compiled smoother; its messages name the fields of res.history
  try
    if (sluice.internal.compat ('is_octave'))
      % a Ctrl-C that escapes the gateway is still the run's error
      s = sluice.internal.interruptible ('-run', 'sluice.kernel.smooth', varargin{:});
    else
      s = sluice.kernel.smooth (varargin{:});
    end
  catch err
    if (strcmp (err.identifier, 'sluice:kernel:interrupted'))
      error ('sluice:smooth:interrupted', 'the smoother was interrupted (Ctrl-C); no result is returned');
    end
    msg = regexprep (err.message, '^smooth: ', '');
    from = {'argument 2 \(X\)', 'argument 3 \(P\)', 'argument 4 \(weights\)', ...
            'argument 7 \(ancestors\)'};
    to = {'res.history.X', 'res.history.P', 'res.history.w', 'res.history.ancestors'};
    for k = 1:numel (from)
      msg = regexprep (msg, from{k}, to{k});
    end
    sluice.internal.raise_again (err.identifier, 'sluice:smooth:failed', msg);
  end
end


function [names, default] = smoothers_for (method)
  % the smoothers that apply to the result of each filter method (the
  % core's lists, sluice.kernel.core_names, asked once)
  persistent core
  if (isempty (core))
    core = sluice.kernel.core_names ();
  end
  switch (method)
    case 'pf'
      names = core.smoothers;
      default = 'genealogy';
    case core.methods
      names = {'enks'};
      default = 'enks';
    otherwise
      names = {};
      default = '';
  end
end

function h = check_history (res)
  if (~isfield (res, 'history') || isempty (res.history))
    error ('sluice:smooth:nohistory', ...
           'the run kept no history: run sluice.filter with ''history'', true');
  end
  h = res.history;
  if (~isstruct (h) || ~all (isfield (h, {'X', 'P', 'w', 'ancestors'})))
    error ('sluice:smooth:badhistory', 'res.history must have fields X, P, w and ancestors');
  end
  n = numel (res.state_names);
  T = numel (res.times);
  N = size (h.X, 2);
  if (~isa (h.X, 'double') || size (h.X, 1) ~= n || size (h.X, 3) ~= T || ndims (h.X) > 3)
    error ('sluice:smooth:badhistory', 'res.history.X must be %d x N x %d, got %s', ...
           n, T, sluice.internal.describe (h.X));
  end
  if (~isa (h.w, 'double') || ~isequal (size (h.w), [N T]))
    error ('sluice:smooth:badhistory', 'res.history.w must be %d x %d, got %s', ...
           N, T, sluice.internal.describe (h.w));
  end
  if (~isa (h.ancestors, 'double') || ~isequal (size (h.ancestors), [N T]))
    error ('sluice:smooth:badhistory', 'res.history.ancestors must be %d x %d, got %s', ...
           N, T, sluice.internal.describe (h.ancestors));
  end
  h.N = N;
  h.T = T;
end

function v = run_option (res, name, default)
  v = default;
  if (isfield (res, 'options') && isstruct (res.options) && isfield (res.options, name))
    v = res.options.(name);
  end
end

function v = whole (v, default, what, lo, hi, reason)
  if (isempty (v))
    v = default;
  end
  if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v) || ...
      v ~= fix (v) || v < lo || v > hi)
    error (['sluice:smooth:' reason], '%s must be a whole number from %.0f to %.0f, got %s', ...
           what, lo, hi, sluice.internal.describe (v, 'value'));
  end
end

function on = noise_on (spec)
  % true when a forcing or event perturbation of the run draws noise
  on = false;
  if (isempty (spec))
    return;
  end
  kinds = spec.kind;
  if (ischar (kinds))
    kinds = {kinds};
  end
  sd = 0;
  if (isfield (spec, 'sd'))
    sd = spec.sd(:);
  end
  on = any (~strcmp (kinds(:), 'none') & sd > 0);
end

function [F, L] = transitions (res, h, model, threads)
  % the transition densities of backward simulation: means F (n x N x
  % (T - 1)) and lower Cholesky factors L (n x n x (T - 1)) of the
  % covariances
  if (isempty (model))
    error ('sluice:smooth:nomodel', ...
           'ffbsi needs the model of the run: give opts.model (the spec from sluice.model)');
  end
  if (~isstruct (model) || ~isscalar (model) || ~isfield (model, 'kind') || ...
      ~isfield (model, 'states') || ~isfield (model, 'params'))
    error ('sluice:smooth:badmodel', 'opts.model must be a spec from sluice.model');
  end
  if (~isequal (model.states(:), res.state_names(:)) || ...
      ~isequal (model.params(:), res.param_names(:)))
    error ('sluice:smooth:badmodel', ...
           'opts.model has other states or parameters than the run (%s)', ...
           strjoin ([res.state_names(:); res.param_names(:)]', ', '));
  end
  n = numel (res.state_names);
  N = h.N;
  T = h.T;
  if (noise_on (run_option (res, 'forcing_noise', [])) || ...
      noise_on (run_option (res, 'event_noise', [])))
    error ('sluice:smooth:nodensity', ...
           ['the run perturbed its forcing or events: the transition density is not ', ...
            'tractable, so ffbsi cannot be used; use the genealogy']);
  end
  if (~isempty (h.P) && any (any (any (h.P ~= h.P(:, ones (1, N), :)))))
    error ('sluice:smooth:nodensity', ...
           ['the members'' parameters differ (they were estimated): the joint transition ', ...
            'of states and parameters has no density, so ffbsi cannot be used; use the genealogy']);
  end
  sd = run_option (res, 'state_noise', 0);
  sd = sd(:);
  if (isscalar (sd))
    sd = repmat (sd, n, 1);
  end
  linear = strcmp (model.kind, 'linear');
  Q = zeros (n);
  if (linear && ~isempty (model.Q))
    Q = model.Q;
  end
  t = res.times;
  L = zeros (n, n, T - 1);
  for s = 1:T-1
    S = diag (sd .^ 2);
    if (linear)
      % the model's noise, summed over the steps of the cycle:
      % sum_{i < m} A^i Q (A^i)'
      m = floor ((t(s + 1) - t(s)) / model.dt + 0.5);
      Ai = eye (n);
      for i = 1:m
        S = S + Ai * Q * Ai';
        Ai = model.A * Ai;
      end
    end
    [R, fail] = chol ((S + S') / 2);
    if (fail ~= 0)
      if (linear)
        why = 'the model''s Q plus the state noise is singular';
      else
        k = find (sd <= 0, 1);
        why = sprintf ('state ''%s'' has no noise (state_noise must be > 0 for every state)', ...
                       res.state_names{k});
      end
      error ('sluice:smooth:nodensity', ...
             'from t = %g to %g, %s: the transition has no density, so ffbsi cannot be used', ...
             t(s), t(s + 1), why);
    end
    L(:, :, s) = R';
  end
  % the means: each particle propagated without noise
  if (linear)
    model.Q = [];
    model.L = [];
  end
  forcing = run_option (res, 'forcing', []);
  events = run_option (res, 'events', []);
  state = warning ('off', 'sluice:propagate:nonfinite');
  cleanup = onCleanup (@() warning (state));
  % every cycle's particles at once: the settings are made once (about
  % 1 ms a cycle saved), each cycle's members run on their own
  P = [];
  if (~isempty (h.P))
    P = h.P(:, ones (1, N), 1:T-1);
  end
  % a member that failed in the run (non-finite, weight 0) runs as a copy
  % of a finite member of its cycle and gets NaN means, which the
  % smoother never reads for a member of weight 0
  X = h.X(:, :, 1:T-1);
  bad = any (~isfinite (X), 1);
  for s = find (any (bad, 2))'
    good = find (~bad(1, :, s), 1);
    if (isempty (good))
      X(:, :, s) = 0;
    else
      X(:, bad(1, :, s), s) = X(:, good(ones (1, nnz (bad(1, :, s)))), s);
    end
  end
  F = sluice.internal.run_states (model, X, P, t(1:T-1), t(2:T), forcing, ...
                                  struct ('events', events, 'seed', 1, 'threads', threads), ...
                                  'propagate');
  F(:, bad(:)) = NaN;
  F = reshape (F, n, N, T - 1);
end

%!shared spec, pr, obs
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, ...
%!               'value', [1; 2; 0], 'sigma', [1; 1; 1]);

%!test
%! % the genealogy at the last cycle is the filter itself; going back, the
%! % traced indices follow the recorded ancestors
%! r = sluice.filter (spec, pr, obs, 'members', 500, 'seed', 4, 't0', 0, 'history', true);
%! r = sluice.smooth (r);
%! sm = r.smoothed;
%! assert (sm.method, 'genealogy');
%! assert (size (sm.states.mean), [1 3]);
%! assert (size (sm.states.quantiles), [1 3 3]);
%! assert (sm.states.mean(:, 3), r.states.mean(:, 3), 1e-12);
%! assert (sm.states.quantiles(:, :, 3), r.states.quantiles(:, :, 3), 1e-12);
%! idx = sm.trajectories;
%! assert (idx(:, 3), (1:500)');
%! a = r.history.ancestors;
%! assert (idx(:, 2), a(idx(:, 3), 2));
%! assert (idx(:, 1), a(idx(:, 2), 1));
%! assert (sm.distinct, arrayfun (@(s) numel (unique (idx(:, s))), 1:3));
%! % the smoothed mean from the traced particles and the final weights
%! w = r.history.w(:, 3);
%! x1 = squeeze (r.history.X(1, idx(:, 1), 1))';
%! assert (sm.states.mean(1), sum (w .* x1) / sum (w), 1e-12);
%! assert (sm.cost.evaluations, 0);

%!function b = rmfield_cost (b, a)
%!  b.cost = a.cost;
%!endfunction

%!test
%! % ffbsi: paths of particles, the same for 1 and 2 threads
%! r = sluice.filter (spec, pr, obs, 'members', 400, 'seed', 8, 't0', 0, 'history', true);
%! a = sluice.smooth (r, 'method', 'ffbsi', 'model', spec, 'trajectories', 50, 'threads', 1);
%! b = sluice.smooth (r, 'method', 'ffbsi', 'model', spec, 'trajectories', 50, 'threads', 2);
%! assert (isequal (a.smoothed, rmfield_cost (b.smoothed, a.smoothed)));
%! sm = a.smoothed;
%! assert (size (sm.trajectories), [1 50 3]);
%! assert (size (sm.indices), [50 3]);
%! assert (sm.cost.evaluations, 400 * 50 * 2);
%! for s = 1:3
%!   assert (squeeze (sm.trajectories(1, :, s))', r.history.X(1, sm.indices(:, s), s)');
%!   assert (sm.states.mean(s), mean (sm.trajectories(1, :, s)), 1e-12);
%! end
%! % the seed keys the draws; the rejection form gives other draws
%! c = sluice.smooth (r, 'method', 'ffbsi', 'model', spec, 'trajectories', 50, 'seed', 1);
%! assert (~isequal (c.smoothed.indices, sm.indices));
%! d = sluice.smooth (r, 'method', 'ffbsi', 'model', spec, 'trajectories', 50, ...
%!                    'rejection_tries', 5);
%! assert (d.smoothed.cost.evaluations < 400 * 50 * 2);

%!test
%! % a single cycle: both smoothers are the filter
%! o1 = struct ('time', 1, 'variable', {{'x'}}, 'value', 1, 'sigma', 1);
%! r = sluice.filter (spec, pr, o1, 'members', 300, 'seed', 2, 't0', 0, 'history', true);
%! g = sluice.smooth (r);
%! assert (g.smoothed.states.mean, r.states.mean, 1e-12);
%! f = sluice.smooth (r, 'method', 'ffbsi', 'model', spec);
%! assert (size (f.smoothed.trajectories), [1 100]);

%!test
%! % estimated parameters: the genealogy smooths them too
%! f = @(t, X, P, U, dt) P .* X;
%! m = sluice.model (f, 'states', {'x'}, 'params', {'a'}, 'x0', 1);
%! p2 = sluice.prior ('a', 'uniform', [0.5 1.5]);
%! o = struct ('time', (1:4)', 'variable', {repmat({'x'}, 4, 1)}, ...
%!             'value', 0.9 .^ (1:4)', 'sigma', 0.05 * ones (4, 1));
%! r = sluice.filter (m, p2, o, 'members', 2000, 'seed', 3, 'state_noise', 0.01, ...
%!                    'history', true);
%! g = sluice.smooth (r);
%! assert (size (g.smoothed.params.mean), [1 4]);
%! assert (g.smoothed.params.mean(4), r.params.mean(4), 1e-12);
%! assert (abs (g.smoothed.params.mean(1) - 0.9) < 0.05);

%!error <Invalid call> sluice.smooth ()
%!error id=sluice:smooth:badresult sluice.smooth (3)
%!error id=sluice:smooth:badresult sluice.smooth (struct ('a', 1))
%!error id=sluice:smooth:nohistory ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0))
%!error id=sluice:smooth:nowindow ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'method', 'etkf', 'history', true))
%!error id=sluice:smooth:badsmoother ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'method', 'etkf', 'lag', 3), 'method', 'ffbsi')
%!test
%! % an ensemble Kalman run with a window comes back as it is
%! r = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, 'method', 'enkf', ...
%!                    'lag', Inf, 'progress', false);
%! s = sluice.smooth (r);
%! assert (s.smoothed, r.smoothed);
%! assert (s.smoothed.method, 'enks');
%!error id=sluice:smooth:nomodel ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'method', 'ffbsi')
%!error id=sluice:smooth:badmodel ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'method', 'ffbsi', ...
%!                'model', sluice.model ('lorenz63'))
%!error id=sluice:smooth:badtrajectories ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'method', 'ffbsi', 'model', spec, ...
%!                'trajectories', 0)
%!error id=sluice:smooth:badtrajectories ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'method', 'ffbsi', 'model', spec, ...
%!                'trajectories', 2.5)
%!error id=sluice:smooth:badtrajectories ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'method', 'ffbsi', 'model', spec, ...
%!                'trajectories', int32 (10))
%!error id=sluice:smooth:nomemory ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'method', 'ffbsi', 'model', spec, ...
%!                'trajectories', 2^32 - 2)
%!error id=sluice:smooth:badsmoother ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'method', 'bogus')
%!error id=sluice:smooth:badoption ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'bogus', 1)
%!error id=sluice:smooth:badoption ...
%! sluice.smooth (sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'method', 'ffbsi', 'model', spec, ...
%!                'rejection_tries', -1)
%!error id=sluice:smooth:nodensity ...
%! % a deterministic model with no state noise
%! m = sluice.model (@(t, X, P, U, dt) 0.9 * X, 'states', {'x'});
%! sluice.smooth (sluice.filter (m, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'method', 'ffbsi', 'model', m)
%!error id=sluice:smooth:nodensity ...
%! % noise on one state of two only
%! m = sluice.model (@(t, X, P, U, dt) 0.9 * X, 'states', {'x', 'y'});
%! sluice.smooth (sluice.filter (m, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'state_noise', [1; 0], 'history', true), ...
%!                'method', 'ffbsi', 'model', m)
%!error id=sluice:smooth:nodensity ...
%! % members with their own parameters
%! m = sluice.model (@(t, X, P, U, dt) P .* X, 'states', {'x'}, 'params', {'a'});
%! sluice.smooth (sluice.filter (m, [pr, sluice.prior('a', 'uniform', [0 1])], obs, ...
%!                               'members', 50, 'seed', 1, 't0', 0, 'state_noise', 1, ...
%!                               'history', true), 'method', 'ffbsi', 'model', m)
%!error id=sluice:smooth:nodensity ...
%! % perturbed forcing
%! m = sluice.model ('linear', 'A', 1, 'Q', 1, 'B', 1, 'forcings', {'u'}, 'states', {'x'});
%! fo = struct ('time', [0; 5], 'values', [1; 1]);
%! fn = struct ('kind', 'additive', 'sd', 0.3);
%! sluice.smooth (sluice.filter (m, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'forcing', fo, 'forcing_noise', fn, 'history', true), ...
%!                'method', 'ffbsi', 'model', m)
%!error id=sluice:smooth:nodensity ...
%! % the linear model without noise
%! m = sluice.model ('linear', 'A', 0.9, 'states', {'x'});
%! sluice.smooth (sluice.filter (m, pr, obs, 'members', 50, 'seed', 1, 't0', 0, ...
%!                               'history', true), 'method', 'ffbsi', 'model', m)
%!error id=sluice:smooth:badhistory ...
%! r = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, 'history', true);
%! r.history.w = r.history.w(1:10, :);
%! sluice.smooth (r)
%!error id=sluice:smooth:badancestor ...
%! r = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, 'history', true);
%! r.history.ancestors(3, 1) = 51;
%! sluice.smooth (r)
%!error id=sluice:smooth:badweight ...
%! r = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, 'history', true);
%! r.history.w(3, 3) = NaN;
%! sluice.smooth (r)
%!error id=sluice:smooth:badhistory ...
%! r = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 1, 't0', 0, 'history', true);
%! r.history.X = single (r.history.X);
%! sluice.smooth (r)

%!demo
%! % Lowmarsh on the invented river Vell: a reanalysis of ten years of the
%! % town's flood storage. The filter knows each year only the readings up
%! % to it; the smoother looks back from the whole record.
%! m = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'storage'});
%! pr = sluice.prior ('storage', 'normal', [0 1]);
%! value = [0.4; NaN; 1.1; 0.9; NaN; NaN; 0.2; -0.3; 0.1; 0.5];   % invented
%! obs = struct ('time', (1:10)', 'variable', {repmat({'storage'}, 10, 1)}, ...
%!               'value', value, 'sigma', 0.3 * ones (10, 1));
%! r = sluice.filter (m, pr, obs, 'members', 1000, 'seed', 2, 't0', 0, ...
%!                    'history', true, 'progress', false);
%! r = sluice.smooth (r, 'method', 'ffbsi', 'model', m);
%! fprintf ('year  reading  filtered  smoothed\n');
%! for k = 1:10
%!   fprintf ('%4d  %7.2f  %8.3f  %8.3f\n', r.times(k), value(k), ...
%!            r.states.mean(k), r.smoothed.states.mean(k));
%! end
%! figure ();
%! plot (r.times, r.states.mean, 'b-', r.times, r.smoothed.states.mean, 'r-', ...
%!       obs.time, value, 'k.');
%! legend ('filtered mean', 'smoothed mean', 'readings');
%! xlabel ('year');
%! title ('Vell at Lowmarsh: filter and reanalysis');
