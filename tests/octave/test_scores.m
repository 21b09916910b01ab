% test_scores.m - sluice.scores on a linear-Gaussian twin experiment.
% Truth: an AR(1) process x_k = 0.9 x_{k-1} + sqrt(0.1) e_k written here
% in Octave, observed directly with sigma = 0.5 at 1000 times; the
% particle filter with the same (well-specified) model and its history.
% References: the Kalman filter (Kalman 1960) run here from the textbook
% equations gives the exact analysis variances P_a and innovation
% variances S; the statistics package's norminv gives the normal factor;
% the expected CRPS of a calibrated normal N(m, s^2) is s/sqrt(pi)
% (from the kernel form E|X - Y| - E|X - X'|/2 with X, Y independent
% N(0, s^2): 2 s/sqrt(pi) - s/sqrt(pi)).

%!shared r, rq, tr, obs, Pa, S, sig
%! a = 0.9; q = 0.1; sig = 0.5; T = 1000;
%! s0 = sqrt (q / (1 - a^2));           % stationary sd
%! randn ('state', 20261202);
%! x = s0 * randn ();
%! X = zeros (1, T);
%! for k = 1:T
%!   x = a * x + sqrt (q) * randn ();
%!   X(k) = x;
%! end
%! y = X + sig * randn (1, T);
%! tr = struct ('times', 1:T, 'X', X);
%! obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, ...
%!               'value', y', 'sigma', sig * ones (T, 1));
%! % Kalman filter variances (they do not depend on the data)
%! Pa = zeros (1, T); S = zeros (1, T); P = s0^2;
%! for k = 1:T
%!   Pf = a^2 * P + q; S(k) = Pf + sig^2; P = Pf * sig^2 / S(k); Pa(k) = P;
%! end
%! spec = sluice.model ('linear', 'A', a, 'Q', q, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 s0]);
%! r = sluice.filter (spec, pr, obs, 'members', 2000, 'seed', 17, 't0', 0, 'history', true);
%! rq = sluice.filter (spec, pr, obs, 'members', 2000, 'seed', 17, 't0', 0);

%!test
%! s = sluice.scores (r, tr);
%! assert (s.spread_source, 'history');
%! % coverage of the 5%-95% band: nominal 0.9, binomial sd
%! % sqrt(0.9 * 0.1 / 1000) = 0.0095; the filter errors are autocorrelated
%! % (lag-one coefficient (1 - K) a = 0.52), which inflates the sd by at most
%! % sqrt((1 + 0.52)/(1 - 0.52)) = 1.78 -> 0.017; tolerance 0.07 (4 sd)
%! assert (s.coverage_nominal, 0.9, 1e-12);
%! assert (abs (s.coverage - 0.9) <= 0.07);
%! % spread/skill near 1: the RMSE over ~575 effectively independent times
%! % has relative sd about 1/sqrt(2 * 575) = 0.03; tolerance 0.15 (5 sd)
%! assert (abs (s.spread_skill - 1) <= 0.15);
%! % the RMSE is below the observation error and near the Kalman value
%! assert (s.rmse < sig);
%! assert (abs (s.rmse / sqrt (mean (Pa)) - 1) <= 0.15);
%! % the ensemble spread matches the exact analysis sd (N = 2000 members,
%! % mean ESS about 1150: a few per cent)
%! assert (abs (s.spread / sqrt (mean (Pa)) - 1) <= 0.05);
%! % mean CRPS of a calibrated normal: s / sqrt(pi) (see the header);
%! % per-time CRPS has relative sd near 0.8, over ~575 times 0.035; tolerance 0.15
%! assert (abs (s.crps / mean (sqrt (Pa) / sqrt (pi)) - 1) <= 0.15);
%! % ESS and resampling statistics are those of the run
%! assert (s.ess_mean, mean (r.ess), 1e-12);
%! assert (s.ess_min, min (r.ess));
%! assert (s.resampling_rate, mean (r.resampled), 1e-15);
%! assert (s.ess_mean_fraction, mean (r.ess) / 2000, 1e-15);
%! printf ('  twin: rmse %.4f (KF %.4f), spread %.4f, spread/skill %.3f, 90%% coverage %.3f, crps %.4f (calibrated %.4f), ESS mean %.0f min %.0f, resampling rate %.3f\n', ...
%!         s.rmse, sqrt (mean (Pa)), s.spread, s.spread_skill, s.coverage, s.crps, ...
%!         mean (sqrt (Pa)) / sqrt (pi), s.ess_mean, s.ess_min, s.resampling_rate);

%!test
%! % without history: spread from the 90% band divided by 2 norminv(0.95)
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! s = sluice.scores (rq, tr);
%! h = sluice.scores (r, tr);
%! assert (s.spread_source, 'quantiles');
%! lo = squeeze (rq.states.quantiles(1, 1, :))';
%! hi = squeeze (rq.states.quantiles(1, 3, :))';
%! assert (s.spread_time, (hi - lo) / (2 * norminv (0.95)), 1e-12);
%! % same seed, same run: same means and bands; a normal posterior makes
%! % the two spreads agree to the Monte Carlo error of the quantiles
%! assert (s.rmse, h.rmse, 1e-12);
%! assert (s.coverage, h.coverage);
%! assert (abs (s.spread / h.spread - 1) <= 0.05);
%! assert (isnan (s.crps));
%! % the analysis variance of the innovation check then also comes from
%! % the band: E[d_oa^2] + P_a = R as in the next test, tolerance 0.1
%! s = sluice.scores (rq, tr, obs);
%! v = s.innovation;
%! assert (abs (v.ratio_with_spread - 1) <= 0.1);

%!test
%! % innovations d_oa = y - x_a. For the Kalman analysis d_oa = (R/S) d_ob
%! % with d_ob white of variance S, so E[d_oa^2] = R^2/S and
%! % E[d_oa^2] + P_a = R. Over 1000 independent residuals the mean square
%! % has relative sd sqrt(2/1000) = 0.045; tolerances 0.1 (absolute, on
%! % ratios near 0.58 and 1); the mean has sd sqrt(0.58 * 0.25 / 1000) = 0.012
%! s = sluice.scores (r, tr, obs);
%! v = s.innovation;
%! assert (v.count, 1000);
%! assert (v.sigma2, sig^2, 1e-15);
%! assert (abs (v.ratio - mean (sig^2 ./ S)) <= 0.1);
%! assert (abs (v.ratio_with_spread - 1) <= 0.1);
%! assert (abs (v.mean) <= 0.05);
%! % the filter records its forecast means, so the full check runs:
%! % E[d_oa d_ob] = R (Desroziers et al. 2005); relative sd of the mean of
%! % 1000 white products about sqrt(2/1000) = 0.045, tolerance 0.15
%! assert (v.has_forecast);
%! assert (abs (v.cross_ratio - 1) <= 0.15);
%! printf ('  innovations: mean %.4f, E[d_oa^2]/sigma^2 %.3f (Kalman %.3f), with spread %.3f\n', ...
%!         v.mean, v.ratio, mean (sig^2 ./ S), v.ratio_with_spread);

%!test
%! % hydrograph skill of the filter mean against the observations, by the
%! % definitions written out here: NSE (Nash & Sutcliffe 1970) and KGE
%! % with r, alpha = sd ratio, beta = mean ratio (Gupta et al. 2009)
%! s = sluice.scores (r, tr, obs);
%! [~, ci] = ismember (obs.time, r.times);
%! y = obs.value;
%! for src = {'mean', 'forecast'}
%!   if (strcmp (src{1}, 'mean'))
%!     m = r.states.mean(1, ci)'; nse = s.skill.nse; kge = s.skill.kge;
%!   else
%!     m = r.forecast.mean(1, ci)'; nse = s.skill.nse_forecast; kge = s.skill.kge_forecast;
%!   end
%!   c = corrcoef (m, y);
%!   a = std (m) / std (y); b = mean (m) / mean (y);
%!   assert (nse, 1 - sum ((m - y) .^ 2) / sum ((y - mean (y)) .^ 2), 1e-12);
%!   assert (kge, 1 - sqrt ((c(1, 2) - 1)^2 + (a - 1)^2 + (b - 1)^2), 1e-12);
%! end
%! assert (s.skill.count, 1000);
%! % the analysis mean has seen each observation, the forecast mean has
%! % not: the analysis scores higher (common practice)
%! assert (s.skill.nse > s.skill.nse_forecast);
