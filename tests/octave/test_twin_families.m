% Synthetic observations of a twin experiment in every likelihood family:
% the draws follow the family's distribution (goodness of fit against
% Octave's statistics package), and a twin observed through a derived
% quantity (a questionnaire: counts out of n of a logit) works end to end.

%!shared spec, pr, T
%! pkg load statistics
%! % a constant truth: x_k = x_{k-1}, no noise
%! T = 4000;
%! spec = sluice.model ('linear', 'A', 1, 'Q', 0, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);

%!function [y, r] = draws (spec, pr, T, x0, net)
%!  r = sluice.twin (spec, struct ('times', 0:T, 'x0', x0), net, 'seed', 11, ...
%!                   'prior', pr, 'openloop', false, 'filter', {'members', 20, 'progress', false});
%!  y = r.obs.value;
%!endfunction

%!function p = chi2_pvalue (counts, expected)
%!  % Pearson's chi-square test, cells with expected < 5 pooled into the
%!  % last one (common practice)
%!  keep = expected >= 5;
%!  o = [counts(keep), sum(counts(~keep))];
%!  e = [expected(keep), sum(expected(~keep))];
%!  if (e(end) == 0)
%!    o(end) = []; e(end) = [];
%!  end
%!  stat = sum ((o - e) .^ 2 ./ e);
%!  p = 1 - chi2cdf (stat, numel (o) - 1);
%!endfunction

%!test
%! % Poisson counts of a rate 3.7: chi-square against poisspdf; level 0.001
%! % (a false alarm once in a thousand seeds)
%! [y, r] = draws (spec, pr, T, 3.7, struct ('variable', 'x', 'every', 1, 'family', 'poisson'));
%! assert (all (y == fix (y) & y >= 0));
%! assert (all (strcmp (r.obs.family, 'poisson')));
%! k = 0:max (y);
%! p = chi2_pvalue (histc (y', k), numel (y) * poisspdf (k, 3.7));
%! assert (p > 0.001);
%! assert (abs (mean (y) - 3.7) < 4 * sqrt (3.7 / numel (y)));

%!test
%! % binomial answers of 25 trials with success logit -0.8 (p = 0.31):
%! % chi-square against binopdf
%! net = struct ('variable', 'x', 'every', 1, 'family', 'binomial', 'n', 25);
%! [y, r] = draws (spec, pr, T, -0.8, net);
%! pr_ = 1 / (1 + exp (0.8));
%! assert (all (r.obs.n == 25));
%! k = 0:25;
%! p = chi2_pvalue (histc (y', k), numel (y) * binopdf (k, 25, pr_));
%! assert (p > 0.001);

%!test
%! % Student-t errors with 3 degrees of freedom: the counts in 20 cells
%! % between the tcdf quantiles are uniform
%! net = struct ('variable', 'x', 'every', 1, 'family', 'student_t', 'sigma', 0.5, 'dof', 3);
%! [y, r] = draws (spec, pr, T, 2, net);
%! assert (all (r.obs.dof == 3));
%! u = tcdf ((y' - 2) / 0.5, 3);
%! h = histc (u, 0:0.05:1);      % bin 21 holds u == 1 only
%! p = chi2_pvalue (h(1:20), numel (y) / 20 * ones (1, 20));
%! assert (p > 0.001);

%!test
%! % censored at a detection limit 1.5 below which values read 1.5: the
%! % share at the limit is normcdf((1.5 - 2) / 0.8); the rest are normal
%! net = struct ('variable', 'x', 'every', 1, 'family', 'censored', 'sigma', 0.8, 'limit', 1.5);
%! y = draws (spec, pr, T, 2, net);
%! f = mean (y == 1.5);
%! f0 = normcdf ((1.5 - 2) / 0.8);
%! assert (abs (f - f0) < 4 * sqrt (f0 * (1 - f0) / numel (y)));
%! assert (all (y >= 1.5));

%!test
%! % a questionnaire of 200 people every 10 steps observes the logit of the
%! % awareness a = 1 / (1 + exp(-x)) through a derived quantity; the truth
%! % of the derived quantity is the operator applied to the truth
%! s = sluice.model ('linear', 'A', 0.98, 'Q', 0.01, 'states', {'x'});
%! ops = struct ('names', 'aware', 'fun', @(t, X, P) X);
%! net = struct ('variable', {'aware', 'x'}, 'every', {10, 5}, 'family', {'binomial', 'gaussian'}, ...
%!               'n', {200, []}, 'sigma', {[], 0.5});
%! r = sluice.twin (s, struct ('times', 0:100, 'x0', 1), net, 'seed', 4, ...
%!                  'prior', sluice.prior ('x', 'normal', [0 1]), ...
%!                  'filter', {'members', 2000, 'operators', ops, 'progress', false});
%! sel = strcmp (r.obs.variable, 'aware');
%! assert (nnz (sel), 11);
%! assert (all (r.obs.n(sel) == 200) && all (isnan (r.obs.n(~sel))));
%! assert (r.scores.rmse(1) < r.scores.openloop_rmse(1));
%! % the same through H
%! r2 = sluice.twin (s, struct ('times', 0:100, 'x0', 1), net, 'seed', 4, ...
%!                   'prior', sluice.prior ('x', 'normal', [0 1]), ...
%!                   'filter', {'members', 2000, 'progress', false, ...
%!                              'operators', struct('names', 'aware', 'H', 1)});
%! assert (r2.obs.value, r.obs.value);
%! assert (r2.filter.states.mean, r.filter.states.mean, 1e-12);

%!error id=sluice:twin:badnetwork sluice.twin (spec, struct ('times', 0:5, 'x0', -1), struct ('variable', 'x', 'every', 1, 'family', 'poisson'), 'prior', pr)
%!error id=sluice:twin:badnetwork sluice.twin (spec, struct ('times', 0:5), struct ('variable', 'x', 'every', 1, 'family', 'binomial'), 'prior', pr)
%!error id=sluice:twin:badnetwork sluice.twin (spec, struct ('times', 0:5), struct ('variable', 'x', 'every', 1, 'family', 'binomial', 'n', 2.5), 'prior', pr)
%!error id=sluice:twin:badnetwork sluice.twin (spec, struct ('times', 0:5), struct ('variable', 'x', 'every', 1, 'family', 'student_t', 'sigma', 1), 'prior', pr)
%!error id=sluice:twin:badnetwork sluice.twin (spec, struct ('times', 0:5), struct ('variable', 'x', 'every', 1, 'family', 'censored', 'sigma', 1), 'prior', pr)
%!error id=sluice:twin:badnetwork sluice.twin (spec, struct ('times', 0:5), struct ('variable', 'x', 'every', 1), 'prior', pr)
%!error id=sluice:twin:badnetwork sluice.twin (spec, struct ('times', 0:5), struct ('variable', 'aware', 'every', 1, 'sigma', 1), 'prior', pr)
%!error id=user:bad sluice.twin (spec, struct ('times', 0:5), struct ('variable', 'aware', 'every', 1, 'sigma', 1), 'prior', pr, 'filter', {'operators', struct('names', 'aware', 'fun', @(t, X, P) error ('user:bad', 'no'))})
%!error id=sluice:filter:badoperator sluice.twin (spec, struct ('times', 0:5), struct ('variable', 'x', 'every', 1, 'sigma', 1), 'prior', pr, 'filter', {'operators', 5})
