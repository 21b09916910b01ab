% The particle filter's log-evidence (sluice.evidence) against the exact
% log-likelihood of linear-Gaussian models. Reference: the Kalman filter
% (Kalman 1960) and its log-likelihood by the prediction-error
% decomposition, sum_k log N(y_k; H m_k|k-1, H P_k|k-1 H' + R), in
% tests/octave/ar1_loglik.m from the textbook equations; the worked example of the project's
% model notes (random walk A = 1, Q = R = 1, x0 ~ N(0, 1), y = (1, 2, 0):
% log-likelihood -(3/2) log 2pi - (1/2) log 21 - 13/14, computed by hand).
% The exact value must lie within 4 Monte Carlo standard errors of the
% mean of the R estimates (the bias of a mean of logs, -var/2 per run, is
% far below that here: var ~ (0.05)^2 for the short series, (0.3)^2 for
% the long one).

%!test
%! % the worked example, first through the reference itself
%! ll = -1.5 * log (2 * pi) - 0.5 * log (21) - 13 / 14;
%! assert (ar1_loglik (1, 1, 1, 0, 1, [1 2 0]), ll, 1e-13);
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, ...
%!               'value', [1; 2; 0], 'sigma', [1; 1; 1]);
%! ev = sluice.evidence (spec, pr, obs, 'members', 2000, 't0', 0, 'seed', 21);
%! assert (ev.repeats, 10);
%! assert (ev.se > 0 && ev.se < 0.05);
%! assert (abs (ev.log_evidence - ll) < 4 * ev.se);
%! assert (abs (ev.log_mean_exp - ll) < 4 * ev.se);

%!test
%! % a longer synthetic series: AR(1) a = 0.9, q = 0.5, r = 0.3, 50 steps
%! T = 50; a = 0.9; q = 0.5; r = 0.3;
%! randn ('state', 4);
%! x = randn (); y = zeros (T, 1);
%! for k = 1:T
%!   x = a * x + sqrt (q) * randn ();
%!   y(k) = x + sqrt (r) * randn ();
%! end
%! ll = ar1_loglik (a, q, r, 0, 1, y);
%! spec = sluice.model ('linear', 'A', a, 'Q', q, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, 'value', y, ...
%!               'sigma', sqrt (r) * ones (T, 1));
%! ev = sluice.evidence (spec, pr, obs, 'members', 1000, 't0', 0, 'seed', 31, ...
%!                       'repeats', 12);
%! assert (numel (ev.values), 12);
%! assert (ev.se > 0 && ev.se < 0.2);
%! assert (abs (ev.log_evidence - ll) < 4 * ev.se);
%! assert (abs (ev.log_mean_exp - ll) < 4 * ev.se);
%! % a wrong model (q ten times too small) is much less likely
%! bad = sluice.model ('linear', 'A', a, 'Q', q / 10, 'states', {'x'});
%! evb = sluice.evidence (bad, pr, obs, 'members', 1000, 't0', 0, 'seed', 31, ...
%!                        'repeats', 4);
%! assert (evb.log_evidence < ll - 10);

%!test
%! % adaptive tempering inside the cycle (Jasra et al. 2011): the
%! % log-evidence is the sum over steps of the log mean incremental
%! % weights and must still match the exact Kalman log-likelihood. Sharp
%! % observations (sd 0.2 against a prior sd near 1) so that every cycle
%! % takes several steps at a target ESS of N/2
%! T = 10; randn ('state', 8);
%! x = cumsum (randn (T, 1)); y = x + 0.2 * randn (T, 1);
%! ll = ar1_loglik (1, 1, 0.04, 0, 1, y);
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, 'value', y, ...
%!               'sigma', 0.2 * ones (T, 1));
%! r = sluice.filter (spec, pr, obs, 'members', 2000, 't0', 0, 'seed', 41, ...
%!                    'temper_ess', 0.5, 'progress', false);
%! assert (all (r.temper_steps >= 2) && all (r.temper_steps <= 50));
%! assert (r.loglik_evals, 2000 * ones (1, T));   % no parameter: one pass a cycle
%! assert (sum (r.log_evidence_steps), r.log_evidence, 1e-12);
%! ev = sluice.evidence (spec, pr, obs, 'members', 2000, 't0', 0, 'seed', 41, ...
%!                       'temper_ess', 0.5);
%! assert (ev.se > 0 && ev.se < 0.1);
%! assert (abs (ev.log_evidence - ll) < 4 * ev.se);
%! assert (abs (ev.log_mean_exp - ll) < 4 * ev.se);
