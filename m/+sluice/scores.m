% -*- texinfo -*-
% @deftypefn  {} {@var{s} =} sluice.scores (@var{res}, @var{truth})
% @deftypefnx {} {@var{s} =} sluice.scores (@var{res}, @var{truth}, @var{obs})
% Verification summaries of a filter result against a known truth.
%
% @var{res} is a result of @code{sluice.filter}. @var{truth} is a struct
% with @code{times} (1 x Tt) and @code{X} (n x Tt, one row per state of
% the result, finite), for instance the output of @code{sluice.simulate}
% packed as @code{struct ('times', t, 'X', X)}. The cycles of @var{res}
% whose times equal a truth time exactly are scored (K of them, listed in
% @code{s.times}); the others are left out. With no common time the call
% fails (@code{sluice:scores:notimes}).
%
% The result @var{s} has, per state (n x 1 columns) and over all states
% (the field with suffix @code{_all}). A state the run did not summarise
% (@code{res.summarized_states} false: a model's internal state, by
% default) has NaN error, RMSE and coverage, and the figures over states
% (@code{_all}, @code{rmse_time}) are taken over the summarised states:
% @table @code
% @item error
% n x K: @code{mean - truth} at each scored time.
% @item rmse, rmse_all, rmse_time
% root mean square error of the ensemble mean over the scored times; over
% states and times; and per time over the states (1 x K).
% @item spread, spread_all, spread_time
% ensemble standard deviation: per time (n x K), and as the root of its
% mean square over time (and states), so that it compares directly with
% the RMSE.
% @item spread_source
% how the spread was obtained: @code{'history'} (the weighted standard
% deviation of the recorded ensemble, sqrt (sum_j w_j (x_j - m)^2), when
% the run kept its history), @code{'quantiles'} (the width of the widest
% central interval of the recorded quantiles divided by
% 2 Phi^-1(1 - a), exact for a normal ensemble) or @code{'none'} (no
% history and no symmetric pair of quantile levels: the spread is NaN).
% @item spread_skill, spread_skill_all
% spread / RMSE; near 1 for a well-specified filter (the mean's own Monte
% Carlo error adds a factor sqrt (1 + 1/ESS) to the RMSE).
% @item coverage, coverage_all, coverage_nominal, coverage_levels
% for each symmetric pair of quantile levels (a, 1 - a) of the result
% (b pairs, listed in @code{coverage_levels}, b x 2, with nominal
% probability 1 - 2a in @code{coverage_nominal}, 1 x b): the fraction of
% scored times at which the truth lies in the closed band between the two
% quantiles (n x b; over all states 1 x b).
% @item crps, crps_all, crps_time
% the continuous ranked probability score of the ensemble at the truth
% (history only; otherwise NaN): per time n x K and its means. A cycle with
% equal weights is scored with @code{sluice.crps}; a weighted ensemble with
% the weighted form E|X - y| - E|X - X'|/2 with E_w |X - X'| the double sum
% of w_j w_k |x_j - x_k|, which equals the CRPS of the resampled
% equivalent (each member repeated in proportion to its weight), computed
% in the C core; a member of weight 0 has no part in it.
% @item ess_mean, ess_min, ess_mean_fraction, resampling_rate, resampled_count
% effective sample size and resampling statistics over all cycles of the
% run (they need no truth); the fraction is ESS / N.
% @end table
%
% With the observation table @var{obs} (the long table of
% @code{sluice.filter}: @code{time}, @code{variable}, @code{value},
% @code{sigma}; rows with a @code{family} other than @code{gaussian} and
% rows with a NaN value are left out and counted), each observation is
% taken as a direct, linear observation of the state (or parameter) it
% names, and @code{s.innovation} holds the observation-minus-analysis
% residuals d_oa = y - x_a at the observation times (the analysis mean of
% that cycle), per observed variable (the cellstr @code{variables}):
% @code{count}, @code{mean}, @code{variance} (about zero: E[d_oa^2]),
% @code{sigma2} (mean sigma^2), @code{ratio} = variance / sigma2 and
% @code{ratio_with_spread} = (variance + mean analysis variance at the
% observation times, from the history for states when the run kept it,
% else from the widest central band of the quantiles as for the spread;
% NaN when neither is there) / sigma2, and the residuals themselves
% (@code{d_oa}, with @code{rows}, the rows of @var{obs} used).
%
% For a linear-Gaussian analysis that weighs forecast and observations
% correctly, d_oa = R S^-1 d_ob with S = H B H' + R, so
% E[d_oa d_oa'] = R S^-1 R = R - H A H' (A the analysis error
% covariance): @code{ratio} is below 1 and @code{ratio_with_spread} is
% near 1. The full check of Desroziers et al. (2005),
% E[d_oa d_ob'] = R, needs the forecast (observation-minus-background)
% residuals d_ob: @code{sluice.filter} records the forecast means in
% @code{res.forecast.mean}, from which d_ob is formed, and the innovation also gets
% @code{d_ob}, @code{cross} (mean of d_oa d_ob) and @code{cross_ratio}
% (cross / sigma2, near 1); otherwise those fields are empty
% (@code{has_forecast} false).
%
% The observation table also gives hydrograph skill scores, per observed
% variable (a state, a parameter, or a derived quantity the result
% summarises in @code{res.derived}), in @code{s.skill}: @code{variables} (1 x v cellstr),
% @code{count} (the pairs used), @code{nse}, the Nash-Sutcliffe
% efficiency 1 - sum (m - y)^2 / sum (y - mean y)^2 (Nash & Sutcliffe
% 1970), and @code{kge}, the Kling-Gupta efficiency
% 1 - sqrt ((r - 1)^2 + (alpha - 1)^2 + (beta - 1)^2) with its parts
% @code{r} (the correlation of m and y), @code{alpha} = sd(m) / sd(y) and
% @code{beta} = mean(m) / mean(y) (Gupta et al. 2009). Both are 1 for a
% perfect fit; an NSE of 0 is no better than the observed mean. m is the
% ensemble mean (the weighted mean the filter reports, not the median) at
% each observation's time: the analysis mean, which has already seen that
% observation, so the scores flatter the filter; @code{nse_forecast} and
% @code{kge_forecast} score the forecast mean, which has not, when the
% result records it (states only; NaN otherwise, @code{has_forecast}).
% Rows of every family but binomial (whose counts are on another scale
% than their logit) are used; rows with a NaN value are missing and left
% out. What a series cannot define (fewer than 2 pairs, constant
% observations, an observed mean of 0 for beta and KGE, a constant mean
% for r and KGE) is NaN.
% @seealso{sluice.filter, sluice.crps, sluice.rank_histogram}
% @end deftypefn
function s = scores (res, truth, obs)
  if (nargin < 2 || nargin > 3)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (nargin > 2)
    % the innovations read the parameters' summaries too
    sluice.internal.check_result (res, 1, 'scores', {'param_names', 'params'});
  else
    sluice.internal.check_result (res, 1, 'scores');
  end
  n = numel (res.state_names);
  check_truth (truth, n);

  [in_truth, loc] = ismember (res.times, truth.times(:)');
  cyc = find (in_truth);
  if (isempty (cyc))
    error ('sluice:scores:notimes', ...
           'argument 2 (truth): none of its times equals a cycle time of the result');
  end
  K = numel (cyc);
  Y = truth.X(:, loc(cyc));
  M = res.states.mean(:, cyc);

  s = struct ();
  s.times = res.times(cyc);
  s.state_names = res.state_names;

  % the states the run summarised (option summarize of sluice.filter):
  % the others have NaN means and quantiles and stay out of the figures
  % over states
  keep = true (n, 1);
  if (isfield (res, 'summarized_states') && numel (res.summarized_states) == n)
    keep = logical (res.summarized_states(:));
  end

  % skill of the mean
  E = M - Y;
  s.error = E;
  s.rmse = sqrt (mean (E .^ 2, 2));
  Ek = E(keep, :);
  s.rmse_all = sqrt (mean (Ek(:) .^ 2));
  s.rmse_time = sqrt (mean (Ek .^ 2, 1));

  % bands of symmetric quantile levels
  lev = res.quantile_levels(:)';
  [ilo, ihi] = symmetric_pairs (lev);
  b = numel (ilo);
  s.coverage_levels = [lev(ilo)', lev(ihi)'];
  s.coverage_nominal = lev(ihi) - lev(ilo);
  s.coverage = zeros (n, b);
  s.coverage_all = zeros (1, b);
  for j = 1:b
    lo = reshape (res.states.quantiles(:, ilo(j), cyc), n, K);
    hi = reshape (res.states.quantiles(:, ihi(j), cyc), n, K);
    inside = (Y >= lo) & (Y <= hi);
    s.coverage(:, j) = mean (inside, 2);
    inside = inside(keep, :);
    s.coverage_all(j) = mean (inside(:));
  end
  s.coverage(~keep, :) = NaN;

  % spread and CRPS
  has_history = isfield (res, 'history') && isstruct (res.history) && ...
                isfield (res.history, 'X') && isfield (res.history, 'w');
  if (has_history)
    check_history (res.history, n, numel (res.times));
    HX = res.history.X(:, :, cyc);
    W = res.history.w(:, cyc);
    [V, s.crps_time] = ensemble_scores (HX, W, Y);
    s.spread_source = 'history';
  else
    s.crps_time = NaN (n, K);
    if (b > 0)
      [~, j] = max (s.coverage_nominal);
      lo = reshape (res.states.quantiles(:, ilo(j), cyc), n, K);
      hi = reshape (res.states.quantiles(:, ihi(j), cyc), n, K);
      z = -sqrt (2) * erfcinv (2 * (1 - lev(ilo(j))));   % Phi^-1(1 - a)
      V = ((hi - lo) / (2 * z)) .^ 2;
      s.spread_source = 'quantiles';
    else
      V = NaN (n, K);
      s.spread_source = 'none';
    end
  end
  s.spread_time = sqrt (V);
  s.spread = sqrt (mean (V, 2));
  Vk = V(keep, :);
  s.spread_all = sqrt (mean (Vk(:)));
  s.spread_skill = s.spread ./ s.rmse;
  s.spread_skill_all = s.spread_all / s.rmse_all;
  s.crps = mean (s.crps_time, 2);
  Ck = s.crps_time(keep, :);
  s.crps_all = mean (Ck(:));

  % effective sample size and resampling over the whole run
  ess = res.ess(:)';
  s.ess_mean = mean (ess);
  s.ess_min = min (ess);
  if (isfield (res, 'members') && isnumeric (res.members) && isscalar (res.members) ...
      && res.members > 0)
    s.ess_mean_fraction = s.ess_mean / double (res.members);
  else
    s.ess_mean_fraction = NaN;
  end
  rs = logical (res.resampled(:)');
  s.resampling_rate = mean (rs);
  s.resampled_count = sum (rs);

  if (nargin == 3)
    s.innovation = innovations (res, obs, has_history);
    s.skill = sluice.internal.hydrograph_skill (res, obs);
  end
end

function [ilo, ihi] = symmetric_pairs (lev)
  % index pairs (a, 1 - a) with a < 1/2, widest first
  ilo = zeros (1, 0);
  ihi = zeros (1, 0);
  for i = find (lev < 0.5)
    j = find (abs (lev + lev(i) - 1) < 1e-9, 1);
    if (~isempty (j))
      ilo(end+1) = i;
      ihi(end+1) = j;
    end
  end
  [~, o] = sort (lev(ilo));
  ilo = ilo(o);
  ihi = ihi(o);
end

function [V, C] = ensemble_scores (X, W, Y)
  % weighted variance and CRPS of n x N x K members with N x K weights at
  % the n x K truth, all rows and times at once, in the core
  N = size (X, 2);
  W = W ./ sum (W, 1);
  [~, V] = sluice.kernel.scores ('moments', X, W);
  C = sluice.kernel.scores ('crps_weighted', X, Y, W);
  % cycles with equal weights: the ensemble CRPS itself
  equal = all (abs (W - 1 / N) <= 1e-12 / N, 1);
  for k = find (equal)
    C(:, k) = sluice.crps (X(:, :, k), Y(:, k));
  end
end

function inn = innovations (res, obs, has_history)
  check_obs (obs);
  [names, means, Q] = sluice.internal.summaries (res);
  nrow = numel (obs.time);
  keep = ~isnan (obs.value(:));
  skipped_missing = sum (~keep);
  if (isfield (obs, 'family'))
    fam = obs.family;
    if (ischar (fam))
      fam = repmat ({fam}, nrow, 1);
    end
    gauss = strcmpi (fam(:), 'gaussian');
  else
    gauss = true (nrow, 1);
  end
  skipped_family = sum (keep & ~gauss);
  keep = keep & gauss;
  [known, vi] = ismember (obs.variable(:), names);
  if (any (~known))
    r = find (~known, 1);
    error ('sluice:scores:unknownvariable', ...
           'argument 3 (obs): row %d names ''%s'', which is no state, parameter or derived quantity of the result', ...
           r, obs.variable{r});
  end
  [at, ci] = ismember (obs.time(:), res.times(:));
  if (any (~at))
    r = find (~at, 1);
    error ('sluice:scores:obstimes', ...
           'argument 3 (obs): row %d has time %g, which is no cycle time of the result', ...
           r, obs.time(r));
  end
  rows = find (keep);
  lin = sub2ind (size (means), vi(rows), ci(rows));
  lin = lin(:);
  y = obs.value(rows);
  y = y(:);
  d_oa = y - reshape (means(lin), [], 1);
  sig2 = reshape (obs.sigma(rows), [], 1) .^ 2;

  % analysis variance at the observed points: from the history for states
  % when it was kept, else from the widest central band of the quantiles
  n = numel (res.state_names);
  av = NaN (numel (rows), 1);
  lev = res.quantile_levels(:)';
  [ilo, ihi] = symmetric_pairs (lev);
  if (~isempty (ilo))
    z = -sqrt (2) * erfcinv (2 * (1 - lev(ilo(1))));   % Phi^-1(1 - a)
    lo = Q(sub2ind (size (Q), vi(rows), repmat (ilo(1), numel (rows), 1), ci(rows)));
    hi = Q(sub2ind (size (Q), vi(rows), repmat (ihi(1), numel (rows), 1), ci(rows)));
    av = reshape (((hi - lo) / (2 * z)) .^ 2, [], 1);
  end
  if (has_history)
    isst = vi(rows) <= n;
    if (any (isst))
      X = res.history.X;
      W = res.history.w;
      rr = rows(isst);
      % each observed point as a one-row block with the weights of its
      % cycle: the weighted variance of its members, in the core
      xs = zeros (1, size (X, 2), numel (rr));
      for k = 1:numel (rr)
        xs(1, :, k) = X(vi(rr(k)), :, ci(rr(k)));
      end
      [~, v] = sluice.kernel.scores ('moments', xs, W(:, ci(rr)));
      av(isst) = v(:);
    end
  end

  has_fc = isfield (res, 'forecast') && isstruct (res.forecast) && ...
           isfield (res.forecast, 'mean') && isequal (size (res.forecast.mean), size (res.states.mean));
  if (has_fc)
    % no forecast of the parameters or derived quantities is recorded
    fmeans = [res.forecast.mean; NaN(size (means, 1) - size (res.forecast.mean, 1), size (means, 2))];
    d_ob = y - reshape (fmeans(lin), [], 1);
  else
    d_ob = [];
  end

  vars = unique (obs.variable(rows));
  nv = numel (vars);
  inn = struct ();
  inn.variables = vars(:)';
  inn.count = zeros (1, nv);
  inn.mean = zeros (1, nv);
  inn.variance = zeros (1, nv);
  inn.sigma2 = zeros (1, nv);
  inn.ratio = zeros (1, nv);
  inn.ratio_with_spread = zeros (1, nv);
  inn.has_forecast = has_fc;
  inn.cross = [];
  inn.cross_ratio = [];
  if (has_fc)
    inn.cross = zeros (1, nv);
    inn.cross_ratio = zeros (1, nv);
  end
  v_of_row = obs.variable(rows);
  for j = 1:nv
    sel = strcmp (v_of_row(:), vars{j});
    d = d_oa(sel);
    inn.count(j) = numel (d);
    inn.mean(j) = mean (d);
    inn.variance(j) = mean (d .^ 2);
    inn.sigma2(j) = mean (sig2(sel));
    inn.ratio(j) = inn.variance(j) / inn.sigma2(j);
    inn.ratio_with_spread(j) = (inn.variance(j) + mean (av(sel))) / inn.sigma2(j);
    if (has_fc)
      inn.cross(j) = mean (d .* d_ob(sel));
      inn.cross_ratio(j) = inn.cross(j) / inn.sigma2(j);
    end
  end
  inn.d_oa = d_oa;
  inn.d_ob = d_ob;
  inn.rows = rows;
  inn.skipped_missing = skipped_missing;
  inn.skipped_family = skipped_family;
end

function check_truth (truth, n)
  if (~isstruct (truth) || ~isscalar (truth) || ~isfield (truth, 'times') || ~isfield (truth, 'X'))
    error ('sluice:scores:badtruth', ...
           'argument 2 (truth): expected a struct with fields times and X, got %s', describe (truth));
  end
  if (~is_real (truth.times) || isempty (truth.times) || ~isvector (truth.times) || ...
      any (~isfinite (truth.times)))
    error ('sluice:scores:badtruth', ...
           'argument 2 (truth): times must be a non-empty finite real double vector, got %s', ...
           describe (truth.times));
  end
  if (~is_real (truth.X) || ~isequal (size (truth.X), [n numel(truth.times)]))
    error ('sluice:scores:badtruth', ...
           'argument 2 (truth): X must be a real double %d x %d matrix (states x times), got %s', ...
           n, numel (truth.times), describe (truth.X));
  end
  if (any (~isfinite (truth.X(:))))
    error ('sluice:scores:badtruth', 'argument 2 (truth): X must be finite (NaN or Inf found)');
  end
end

function check_history (h, n, T)
  if (~is_real (h.X) || size (h.X, 1) ~= n || size (h.X, 3) ~= T || ~is_real (h.w) || ...
      ~isequal (size (h.w), [size(h.X, 2) T]) || any (h.w(:) < 0) || any (sum (h.w, 1) <= 0))
    error ('sluice:scores:badresult', ...
           'argument 1 (res): history.X must be n x N x T and history.w N x T non-negative weights');
  end
end

function check_obs (obs)
  ok = isstruct (obs) && isscalar (obs) && all (isfield (obs, {'time', 'variable', 'value', 'sigma'}));
  if (ok)
    m = numel (obs.time);
    ok = is_real (obs.time) && iscellstr (obs.variable) && numel (obs.variable) == m && ...
         is_real (obs.value) && numel (obs.value) == m && is_real (obs.sigma) && ...
         numel (obs.sigma) == m && m > 0;
  end
  if (~ok)
    error ('sluice:scores:badobs', ...
           ['argument 3 (obs): expected the observation table (struct of equally long ', ...
            'columns time, variable (cellstr), value, sigma)']);
  end
  bad = find (isinf (obs.value(:)), 1);
  if (~isempty (bad))
    error ('sluice:scores:badobs', ...
           'argument 3 (obs): row %d: value is infinite (NaN marks a missing value)', bad);
  end
  % a missing value (NaN) needs no sigma
  bad = find (~isnan (obs.value(:)) & ~(isfinite (obs.sigma(:)) & obs.sigma(:) > 0), 1);
  if (~isempty (bad))
    error ('sluice:scores:badobs', ...
           'argument 3 (obs): row %d: sigma must be finite and positive, got %g', bad, obs.sigma(bad));
  end
  if (isfield (obs, 'family'))
    fam = obs.family;
    if (~((ischar (fam) && isrow (fam)) || (iscellstr (fam) && numel (fam) == m)))
      error ('sluice:scores:badobs', ...
             ['argument 3 (obs): column ''family'' must be one family name or a cellstr ', ...
              'with one per row (%d), got %s'], m, describe (fam));
    end
  end
end

function t = is_real (a)
  t = isa (a, 'double') && isreal (a) && ~issparse (a);
end

function s = describe (a)
  d = sprintf ('%dx', size (a));
  s = [d(1:end-1) ' '];
  if (issparse (a))
    s = [s 'sparse '];
  end
  if (isnumeric (a) && ~isreal (a))
    s = [s 'complex '];
  end
  s = [s class(a)];
end

%!shared res0, tr0
%! % a hand-made result: one state, four cycles, levels 5/50/95 and 25/75
%! res0 = struct ('times', [1 2 3 4], 'state_names', {{'x'}}, 'param_names', {{}}, ...
%!                'quantile_levels', [0.05 0.25 0.5 0.75 0.95], 'ess', [10 4 8 2], ...
%!                'resampled', logical ([0 1 0 1]), 'members', 10);
%! q = zeros (1, 5, 4);
%! q(1, :, 1) = [0 0.5 1 1.5 2];
%! q(1, :, 2) = [1 1.5 2 2.5 3];
%! q(1, :, 3) = [2 2.5 3 3.5 4];
%! q(1, :, 4) = [3 3.5 4 4.5 5];
%! res0.states = struct ('mean', [1 2 3 4], 'quantiles', q);
%! res0.params = struct ('mean', zeros (0, 4), 'quantiles', zeros (0, 5, 4));
%! tr0 = struct ('times', [0 1 2 3 4], 'X', [9 1 3 3 2]);

%!test
%! % by hand: errors 0, -1, 0, 2 -> RMSE sqrt(5/4); 90% band [m-1, m+1]
%! % holds the truth at t = 1, 2, 3 (t = 2: 3 on the edge) -> 3/4; 50% band
%! % [m-0.5, m+0.5] at t = 1, 3 -> 1/2
%! s = sluice.scores (res0, tr0);
%! assert (s.times, [1 2 3 4]);
%! assert (s.error, [0 -1 0 2]);
%! assert (s.rmse, sqrt (5/4), 1e-15);
%! assert (s.rmse_time, [0 1 0 2], 1e-15);
%! assert (s.coverage_levels, [0.05 0.95; 0.25 0.75]);
%! assert (s.coverage_nominal, [0.9 0.5], 1e-15);
%! assert (s.coverage, [3/4 1/2]);
%! % spread from the widest band: width 2 / (2 * 1.644853627) (the normal
%! % 95% point, from memory; here through erfcinv)
%! assert (s.spread_source, 'quantiles');
%! assert (s.spread, 1 / 1.644853627, 1e-9);
%! assert (s.spread_skill, (1 / 1.644853627) / sqrt (5/4), 1e-9);
%! assert (all (isnan (s.crps)));
%! assert ([s.ess_mean s.ess_min s.ess_mean_fraction], [6 2 0.6]);
%! assert ([s.resampling_rate s.resampled_count], [0.5 2]);

%!test
%! % hydrograph skill by hand: means m = {1, 2, 3, 4} at t = 1..4 against
%! % y = {1.5, 2, 2.5, 5}; a missing row (NaN) and a binomial row are left
%! % out, a lognormal row is used. sum (m - y)^2 = 1.5,
%! % sum (y - mean y)^2 = 7.25: NSE = 1 - 1.5/7.25 (Nash & Sutcliffe
%! % 1970); centred products 5.5, sum (m - mean m)^2 = 5: r =
%! % 5.5/sqrt(5 * 7.25), alpha = sqrt(5/7.25), beta = 2.5/2.75, KGE =
%! % 1 - sqrt((r-1)^2 + (alpha-1)^2 + (beta-1)^2) (Gupta et al. 2009)
%! o = struct ('time', [1; 2; 2; 3; 4; 4], 'variable', {repmat({'x'}, 6, 1)}, ...
%!             'value', [1.5; NaN; 2; 2.5; 5; 7], 'sigma', ones (6, 1), ...
%!             'family', {{'gaussian'; 'gaussian'; 'lognormal'; 'gaussian'; 'gaussian'; 'binomial'}});
%! s = sluice.scores (res0, tr0, o);
%! r = 5.5 / sqrt (5 * 7.25); a = sqrt (5 / 7.25); b = 2.5 / 2.75;
%! assert (s.skill.variables, {'x'});
%! assert (s.skill.count, 4);
%! assert (s.skill.nse, 1 - 1.5 / 7.25, 1e-15);
%! assert ([s.skill.r s.skill.alpha s.skill.beta], [r a b], 1e-15);
%! assert (s.skill.kge, 1 - sqrt ((r - 1)^2 + (a - 1)^2 + (b - 1)^2), 1e-15);
%! assert (~s.skill.has_forecast && isnan (s.skill.nse_forecast));
%! % a forecast mean equal to the observations scores 1 and 1
%! rf = res0; rf.forecast = struct ('mean', [1.5 2 2.5 5]);
%! s = sluice.scores (rf, tr0, o);
%! assert ([s.skill.nse_forecast s.skill.kge_forecast], [1 1], 1e-15);
%! % the kernel alone: the same numbers the other way round (C tests)
%! k = sluice.kernel.scores ('skill', [1.5 2 2.5 5], [1 2 3 4]);
%! assert (k([1 6]), [0.7 4], 1e-15);

%!test
%! % history with weights: members {1, 2, 4}, weights {1/2, 1/4, 1/4},
%! % truth 3. By hand: E|X - y| = 3/2, E|X - X'| = 5/4, CRPS = 7/8, the
%! % score of the equal-weight ensemble {1, 1, 2, 4} (sluice.crps);
%! % weighted mean 2, weighted variance 1/2 * 1 + 1/4 * 0 + 1/4 * 4 = 3/2
%! r = res0;
%! r.times = [1 2]; r.ess = [3 3]; r.resampled = [false false];
%! r.states.mean = [2 2]; r.states.quantiles = r.states.quantiles(:, :, 1:2);
%! r.history = struct ('X', reshape ([1 2 4 1 2 4], 1, 3, 2), 'w', [0.5 1/3; 0.25 1/3; 0.25 1/3]);
%! s = sluice.scores (r, struct ('times', [1 2], 'X', [3 3]));
%! assert (s.spread_source, 'history');
%! assert (s.crps_time(1), 7/8, 1e-15);
%! assert (s.crps_time(1), sluice.crps ([1 1 2 4], 3), 1e-15);
%! assert (s.crps_time(2), sluice.crps ([1 2 4], 3), 1e-15);
%! assert (s.spread_time(1), sqrt (3/2), 1e-15);
%! assert (s.spread_time(2), std ([1 2 4], 1), 1e-15);

%!test
%! % the vectorised weighted CRPS against the double sum of its definition
%! rand ('state', 3); randn ('state', 4);
%! N = 37; X = randn (2, N, 3); W = rand (N, 3); W = W ./ sum (W);
%! Y = randn (2, 3);
%! r = res0; r.state_names = {'a', 'b'}; r.times = 1:3; r.ess = [1 1 1];
%! r.resampled = false (1, 3); r.quantile_levels = 0.5;
%! r.states = struct ('mean', zeros (2, 3), 'quantiles', zeros (2, 1, 3));
%! r.history = struct ('X', X, 'w', W);
%! s = sluice.scores (r, struct ('times', 1:3, 'X', Y));
%! ref = zeros (2, 3);
%! for k = 1:3
%!   for i = 1:2
%!     x = X(i, :, k); w = W(:, k)';
%!     ref(i, k) = sum (w .* abs (x - Y(i, k))) - 0.5 * sum (sum ((w' * w) .* abs (x' - x)));
%!   end
%! end
%! assert (s.crps_time, ref, 1e-12);
%! assert (isempty (s.coverage));

%!test
%! % innovations by hand: rows at t = 1, 2, 4, one missing; analysis means
%! % 1, 2, 4 -> d_oa = 0.5, -1, 1; sigma 1, 1, 2
%! obs = struct ('time', [1; 2; 3; 4], 'variable', {{'x'; 'x'; 'x'; 'x'}}, ...
%!               'value', [1.5; 1; NaN; 5], 'sigma', [1; 1; 1; 2]);
%! s = sluice.scores (res0, tr0, obs);
%! v = s.innovation;
%! assert (v.variables, {'x'});
%! assert (v.d_oa, [0.5; -1; 1]);
%! assert (v.rows, [1; 2; 4]);
%! assert ([v.count v.mean v.variance v.sigma2], [3 1/6 0.75 2], 1e-15);
%! assert (v.ratio, 0.375, 1e-15);
%! % analysis variance from the 90% band (width 2): (1/1.644853627)^2
%! assert (v.ratio_with_spread, (0.75 + 1 / 1.644853627^2) / 2, 1e-9);
%! assert (v.skipped_missing, 1);
%! assert (~v.has_forecast && isempty (v.cross));
%! % with a recorded forecast: d_ob = y - forecast mean = 1.5, 1, 2
%! r = res0; r.forecast = struct ('mean', [0 0 0 3]);
%! s = sluice.scores (r, tr0, obs);
%! v = s.innovation;
%! assert (v.d_ob, [1.5; 1; 2]);
%! assert (v.cross, (0.75 - 1 + 2) / 3, 1e-15);
%! assert (v.cross_ratio, v.cross / 2, 1e-15);

%!error <Invalid call> sluice.scores (1)
%!error id=sluice:scores:badresult sluice.scores (1, struct ('times', 1, 'X', 1))
%!error id=sluice:scores:badresult sluice.scores (struct ('times', 1), struct ('times', 1, 'X', 1))
%!error id=sluice:scores:badresult sluice.scores ([res0 res0], struct ('times', 1, 'X', 1))
%!error id=sluice:scores:badresult
%! r = res0; r.states.mean = [1 2 3];
%! sluice.scores (r, struct ('times', 1, 'X', 1));
%!error id=sluice:scores:badresult
%! r = res0; r.history = struct ('X', ones (1, 3, 4), 'w', -ones (3, 4));
%! sluice.scores (r, struct ('times', 1, 'X', 1));
%!error id=sluice:scores:badtruth sluice.scores (res0, 1)
%!error id=sluice:scores:badtruth sluice.scores (res0, struct ('times', 1, 'X', 1i))
%!error id=sluice:scores:badtruth sluice.scores (res0, struct ('times', int32 (1), 'X', 1))
%!error id=sluice:scores:badtruth sluice.scores (res0, struct ('times', 1, 'X', Inf))
%!error id=sluice:scores:badtruth sluice.scores (res0, struct ('times', 1))
%!error id=sluice:scores:badtruth sluice.scores (res0, struct ('times', [1 2], 'X', 1))
%!error id=sluice:scores:badtruth sluice.scores (res0, struct ('times', 1, 'X', single (1)))
%!error id=sluice:scores:badtruth sluice.scores (res0, struct ('times', 1, 'X', NaN))
%!error id=sluice:scores:badtruth sluice.scores (res0, struct ('times', {{1}}, 'X', 1))
%!error id=sluice:scores:notimes sluice.scores (res0, struct ('times', 1.5, 'X', 1))
%!error id=sluice:scores:badobs sluice.scores (res0, tr0, struct ('time', 1))
%!error id=sluice:scores:badobs sluice.scores (res0, tr0, struct ('time', 1, 'variable', {{'x'}}, 'value', 1, 'sigma', 0))
%!error id=sluice:scores:badobs sluice.scores (res0, tr0, struct ('time', 1, 'variable', 'x', 'value', 1, 'sigma', 1))
%!error id=sluice:scores:badobs sluice.scores (res0, tr0, struct ('time', [1 2], 'variable', {{'x'}}, 'value', 1, 'sigma', 1))
%!error id=sluice:scores:unknownvariable sluice.scores (res0, tr0, struct ('time', 1, 'variable', {{'y'}}, 'value', 1, 'sigma', 1))
%!error id=sluice:scores:obstimes sluice.scores (res0, tr0, struct ('time', 7, 'variable', {{'x'}}, 'value', 1, 'sigma', 1))
%!error id=sluice:scores:badobs sluice.scores (res0, tr0, struct ('time', [1; 2], 'variable', {{'x'; 'x'}}, 'value', [1; Inf], 'sigma', [1; 1]))
%!error id=sluice:scores:badsize sluice.kernel.scores ('skill', [1 2], [1 2 3])
%!error id=sluice:scores:nonfinite sluice.kernel.scores ('skill', [1 Inf 2], [1 2 3])
%!error id=sluice:scores:nonfinite sluice.kernel.scores ('skill', [1 2 3], [1 -Inf 3])
%!error id=sluice:scores:nargin sluice.kernel.scores ('skill', [1 2])
%!error id=sluice:scores:badclass sluice.kernel.scores ('skill', single ([1 2]), [1 2])

% the weighted CRPS kernel
%!test
%! % two members x1 < x2 with weights w, 1 - w, by the definition:
%! % w |x1 - y| + (1 - w) |x2 - y| - w (1 - w) (x2 - x1)
%! c = sluice.kernel.scores ('crps_weighted', [-0.731 2.385], 0.5, [0.3; 0.7]);
%! assert (c, 0.3 * 1.231 + 0.7 * 1.885 - 0.21 * 3.116, 1e-15);
%! % a member of weight 0 has no part, even NaN; NaN truth gives NaN
%! X = reshape ([-0.731 NaN 2.385 1 2 3], 1, 3, 2);   % 1 row, 3 members, 2 blocks
%! c = sluice.kernel.scores ('crps_weighted', X, [0.5 NaN], [3 0 7; 1 1 1]');
%! assert (size (c), [1 2]);
%! assert (c(1), 0.3 * 1.231 + 0.7 * 1.885 - 0.21 * 3.116, 1e-15);
%! assert (isnan (c(2)));
%!error id=sluice:scores:badweights sluice.kernel.scores ('crps_weighted', [1 2], 1, [1; -1])
%!error id=sluice:scores:badweights sluice.kernel.scores ('crps_weighted', [1 2], 1, [0; 0])
%!error id=sluice:scores:nonfinite sluice.kernel.scores ('crps_weighted', [1 Inf], 1, [1; 1])
%!error id=sluice:scores:badweights sluice.kernel.scores ('crps_weighted', [1 2], 1, [1; NaN])
%!error id=sluice:scores:badsize sluice.kernel.scores ('crps_weighted', [1 2], [1 2], [1; 1])
%!error id=sluice:scores:badsize sluice.kernel.scores ('crps_weighted', [1 2], 1, [1; 1; 1])
%!error id=sluice:scores:badclass sluice.kernel.scores ('crps_weighted', single ([1 2]), 1, [1; 1])
%!error id=sluice:scores:badclass sluice.kernel.scores ('crps_weighted', ones (1, 2, 2, 2), 1, [1; 1])
%!error id=sluice:scores:empty sluice.kernel.scores ('crps_weighted', zeros (1, 0), 1, zeros (0, 1))
%!error id=sluice:scores:nargin sluice.kernel.scores ('crps_weighted', [1 2], 1)

% the weighted mean and variance kernel
%!test
%! % members {1, 2, 4}, weights {1, 1, 2} -> {1/4, 1/4, 1/2}: mean 2.75,
%! % variance (1.75^2 + 0.75^2) / 4 + 1.25^2 / 2 = 1.6875 (by hand); equal
%! % weights: Octave's var (x, 1); a member of weight 0 has no part, even NaN
%! [mu, v] = sluice.kernel.scores ('moments', [1 2 4], [1; 1; 2]);
%! assert ([mu v], [2.75 1.6875], 1e-15);
%! X = cat (3, [1 NaN 2 4; 3 NaN 5 9], [1 7 2 4; 0.5 -2 8 1]);
%! W = [1 0 1 2; 1 1 1 1]';
%! [mu, v] = sluice.kernel.scores ('moments', X, W);
%! assert (size (mu), [2 2]);
%! assert (mu(:, 1), [2.75; 6.5], 1e-15);
%! assert (v(:, 1), [1.6875; 0.25 * 3.5^2 + 0.25 * 1.5^2 + 0.5 * 2.5^2], 1e-14);
%! assert (mu(:, 2), mean (X(:, :, 2), 2), 1e-15);
%! assert (v(:, 2), var (X(:, :, 2), 1, 2), 1e-14);
%! assert (sluice.kernel.scores ('moments', [1 2 4], [1; 1; 2]), 2.75, 1e-15);
%!error id=sluice:scores:badweights sluice.kernel.scores ('moments', [1 2], [1; -1])
%!error id=sluice:scores:badweights sluice.kernel.scores ('moments', [1 2], [0; 0])
%!error id=sluice:scores:badweights sluice.kernel.scores ('moments', [1 2], [1; NaN])
%!error id=sluice:scores:nonfinite sluice.kernel.scores ('moments', [1 Inf], [1; 1])
%!error id=sluice:scores:badsize sluice.kernel.scores ('moments', [1 2], [1; 1; 1])
%!error id=sluice:scores:badclass sluice.kernel.scores ('moments', single ([1 2]), [1; 1])
%!error id=sluice:scores:badclass sluice.kernel.scores ('moments', ones (1, 2, 2, 2), [1; 1])
%!error id=sluice:scores:empty sluice.kernel.scores ('moments', zeros (1, 0), zeros (0, 1))
%!error id=sluice:scores:nargin sluice.kernel.scores ('moments', [1 2], [1; 1], 1)
%!error id=sluice:scores:nargout [a, b, c] = sluice.kernel.scores ('moments', [1 2], [1; 1])
%!error id=sluice:scores:nargout [a, b] = sluice.kernel.scores ('crps', [1 2], 1)
