% Prior draws of sluice.draw against the distribution functions of Octave's
% statistics package (unifcdf, normcdf, logncdf, normpdf; the truncated
% normal CDF built from normcdf), by a Kolmogorov-Smirnov statistic at the
% 1% level (critical value 1.628/sqrt(n), common practice) and by sample
% moments within 4 standard errors of the textbook moments; and the
% determinism of the draws.

%!test
%! % uniform, normal, lognormal
%! s = warning ('off', 'Octave:shadowed-function');
%! pkg load statistics
%! warning (s);
%! pr = sluice.prior ('u', 'uniform', [-1.37 2.385], ...
%!                    'n', 'normal', [3.17 0.629], ...
%!                    'l', 'lognormal', [0.413 0.347]);
%! n = 1e5;
%! P = sluice.draw (pr, n, 20240611);
%! crit = 1.628 / sqrt (n);
%! ks = @(F) max (max (F - (0:n-1)' / n), max ((1:n)' / n - F));
%! % uniform: mean (a+b)/2, variance w^2/12, fourth central moment w^4/80
%! x = sort (P(1, :)');
%! a = -1.37; b = 2.385; w = b - a;
%! assert (all (x > a & x < b));
%! assert (ks (unifcdf (x, a, b)) < crit);
%! assert (abs (mean (x) - (a + b) / 2) < 4 * sqrt (w^2 / 12 / n));
%! assert (abs (var (x) - w^2 / 12) < 4 * sqrt ((w^4 / 80 - (w^2 / 12)^2) / n));
%! % normal: mean mu, variance sd^2 (standard error sd^2 sqrt(2/n))
%! x = sort (P(2, :)');
%! assert (ks (normcdf (x, 3.17, 0.629)) < crit);
%! assert (abs (mean (x) - 3.17) < 4 * 0.629 / sqrt (n));
%! assert (abs (var (x) - 0.629^2) < 4 * 0.629^2 * sqrt (2 / n));
%! % lognormal: raw moments E[X^k] = exp(k mu + k^2 s^2 / 2), so the mean
%! % is exp(mu + s^2/2); central moments from the raw ones
%! x = sort (P(3, :)');
%! mu = 0.413; sg = 0.347;
%! r = exp ((1:4) * mu + (1:4).^2 * sg^2 / 2);
%! v = r(2) - r(1)^2;
%! c4 = r(4) - 4 * r(3) * r(1) + 6 * r(2) * r(1)^2 - 3 * r(1)^4;
%! assert (all (x > 0));
%! assert (ks (logncdf (x, mu, sg)) < crit);
%! assert (abs (mean (x) - r(1)) < 4 * sqrt (v / n));
%! assert (abs (var (x) - v) < 4 * sqrt ((c4 - v^2) / n));

%!test
%! % truncated normals: straddling the mean, [5, 6] sd above it, below
%! % -3.3 sd, above 0.3 sd. CDF (Phi(z) - Phi(al)) / (Phi(be) - Phi(al)) in
%! % standard units (handbook), formed from upper-tail probabilities
%! % Phi(-z) when the interval lies above the mean; moments (handbook):
%! % mean = mu + sd (phi(al) - phi(be)) / Z,
%! % var = sd^2 [1 + (al phi(al) - be phi(be)) / Z - ((phi(al) - phi(be)) / Z)^2]
%! s = warning ('off', 'Octave:shadowed-function');
%! pkg load statistics
%! warning (s);
%! cases = {[1.2 2.3 -0.7 4.1], [0.5 1.5 8 9.5], [2 0.8 -Inf 2-3.3*0.8], ...
%!          [-0.25 0.71 -0.25+0.3*0.71 Inf]};
%! pr = sluice.prior ('t1', 'truncnormal', cases{1}, 't2', 'truncnormal', cases{2}, ...
%!                    't3', 'truncnormal', cases{3}, 't4', 'truncnormal', cases{4});
%! n = 1e5;
%! P = sluice.draw (pr, n, 77);
%! crit = 1.628 / sqrt (n);
%! ks = @(F) max (max (F - (0:n-1)' / n), max ((1:n)' / n - F));
%! for k = 1:numel (cases)
%!   c = cases{k}; mu = c(1); sd = c(2); lo = c(3); hi = c(4);
%!   x = sort (P(k, :)');
%!   assert (all (x > lo & x < hi));
%!   al = (lo - mu) / sd; be = (hi - mu) / sd; z = (x - mu) / sd;
%!   if (al >= 0)
%!     F = (normcdf (-al) - normcdf (-z)) / (normcdf (-al) - normcdf (-be));
%!     Z = normcdf (-al) - normcdf (-be);
%!   else
%!     F = (normcdf (z) - normcdf (al)) / (normcdf (be) - normcdf (al));
%!     Z = normcdf (be) - normcdf (al);
%!   end
%!   assert (ks (F) < crit);
%!   pa = normpdf (al); pb = normpdf (be);
%!   apa = 0; bpb = 0;
%!   if (isfinite (al)) apa = al * pa; end
%!   if (isfinite (be)) bpb = be * pb; end
%!   m = mu + sd * (pa - pb) / Z;
%!   v = sd^2 * (1 + (apa - bpb) / Z - ((pa - pb) / Z)^2);
%!   % standard error of the variance from the sample's fourth central
%!   % moment (common practice)
%!   m4 = mean ((x - mean (x)).^4);
%!   assert (abs (mean (x) - m) < 4 * sqrt (v / n));
%!   assert (abs (var (x) - v) < 4 * sqrt (abs (m4 - var (x)^2) / n));
%! end

%!test
%! % fixed: every member gets the value
%! P = sluice.draw (sluice.prior ('f', 'fixed', -2.75), 1000, 5);
%! assert (P, -2.75 * ones (1, 1000));

%!test
%! % determinism: the same seed gives identical draws, another seed other
%! % draws, and member j is the same whatever N
%! pr = sluice.prior ('a', 'normal', [0 1], 'b', 'uniform', [0.13 8.8], ...
%!                    'c', 'truncnormal', [1 2 0 3.5], 'd', 'lognormal', [0 0.5]);
%! A = sluice.draw (pr, 1000, 123456789);
%! assert (isequal (A, sluice.draw (pr, 1000, 123456789)));
%! assert (isequal (A(:, 1:5), sluice.draw (pr, 5, 123456789)));
%! assert (isequal (A(:, 1), sluice.draw (pr, 1, 123456789)));
%! B = sluice.draw (pr, 1000, 123456790);
%! assert (~any (any (A == B)));
%! % a parameter's draws depend on its own prior and those before it only
%! C = sluice.draw (pr(1:2), 1000, 123456789);
%! assert (isequal (A(1:2, :), C));
