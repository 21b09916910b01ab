% test_loglik_reference.m - sluice.loglik against the densities of Octave's
% statistics package (normpdf, lognpdf, tpdf, poisspdf, binopdf, normcdf):
% the log of the reference density, summed over rows, for several members.

%!test
%! % gaussian: normpdf (statistics package)
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! y = [2.385; -0.731; 11.07];
%! s = [0.6283; 1.917; 3.35];
%! Yhat = [1.7319 2.9 2.2 2.385; -1.4 0.05 -0.731 -2.2; 9.6 12.8 11.1 4.3];
%! ref = sum (log (normpdf (repmat (y, 1, 4), Yhat, repmat (s, 1, 4))), 1);
%! assert (sluice.loglik ('gaussian', y, Yhat, s), ref, -1e-12);

%!test
%! % lognormal: lognpdf with mu = log h (statistics package)
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! y = [2.385; 0.0371; 417.3];
%! s = [0.6283; 1.35; 0.071];
%! Yhat = [1.7319 2.9 0.8; 0.112 0.02 0.5; 388.1 420.5 430];
%! ref = sum (log (lognpdf (repmat (y, 1, 3), log (Yhat), repmat (s, 1, 3))), 1);
%! assert (sluice.loglik ('lognormal', y, Yhat, s), ref, -1e-12);

%!test
%! % student_t: tpdf of the standardised residual, divided by sigma
%! % (statistics package)
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! y = [2.385; -3.3; 9.8; 1.1];
%! s = [0.6283; 1.1; 2.2; 0.9];
%! nu = [4.7; 0.37; 37.9; 2];
%! Yhat = [1.7319 2.0 3.1; 2.1 -3.0 -8.2; 1.2 9.7 15.3; 2.385 1.1 0.4];
%! Y = repmat (y, 1, 3); S = repmat (s, 1, 3); NU = repmat (nu, 1, 3);
%! ref = sum (log (tpdf ((Y - Yhat) ./ S, NU) ./ S), 1);
%! assert (sluice.loglik ('student_t', y, Yhat, s, nu), ref, -1e-12);

%!test
%! % poisson: poisspdf (statistics package); sigma unused
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! y = [7; 0; 23; 1];
%! Yhat = [4.385 7.2 11.9; 2.718 0.31 5.5; 31.7 22.4 18.05; 0.0137 1.6 0.9];
%! ref = sum (log (poisspdf (repmat (y, 1, 3), Yhat)), 1);
%! assert (sluice.loglik ('poisson', y, Yhat, NaN), ref, -1e-12);

%!test
%! % binomial with logit link: binopdf with p = 1/(1 + exp(-h))
%! % (statistics package); sigma unused
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! y = [7; 0; 12; 3];
%! n = [12; 5; 12; 40];
%! Yhat = [0.385 -1.2 2.4; -2.3 0.7 -0.1; 1.9 3.3 0.2; -0.7 -2.6 -1.9];
%! P = 1 ./ (1 + exp (-Yhat));
%! ref = sum (log (binopdf (repmat (y, 1, 3), repmat (n, 1, 3), P)), 1);
%! assert (sluice.loglik ('binomial', y, Yhat, NaN, n), ref, -1e-12);

%!test
%! % censored: normcdf below the limit, normpdf above it (statistics package)
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! y = [0.05; 2.385; 0.2; -7.5];
%! s = [0.6283; 0.6283; 0.47; 1.95];
%! L = [0.2; 0.2; 0.2; -2.5];
%! Yhat = [1.7319 0.1 -0.6; 1.9 2.7 3.05; -0.3 0.2 1.45; 3.85 -4.1 0.0];
%! ref = log (normcdf (repmat (L([1 3 4]), 1, 3), Yhat([1 3 4], :), repmat (s([1 3 4]), 1, 3)));
%! ref = sum (ref, 1) + log (normpdf (y(2), Yhat(2, :), s(2)));
%! assert (sluice.loglik ('censored', y, Yhat, s, L), ref, -1e-12);

%!test
%! % a mixed table, one family per row (cellstr), missing rows skipped:
%! % each row's reference density from the statistics package
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! fam = {'gaussian'; 'lognormal'; 'student_t'; 'poisson'; 'binomial'; ...
%!        'censored'; 'censored'; 'gaussian'; 'poisson'};
%! y     = [2.385; 0.62; 3.1; 6; 4; -0.4; 1.75; NaN; NaN];
%! sigma = [0.6283; 0.35; 0.81; NaN; NaN; 0.47; 1.2; 1; NaN];
%! aux   = [NaN; NaN; 3.7; NaN; 9; 0.1; 0.1; NaN; NaN];
%! N = 5;
%! t = 0.37 * sin (1.3 * (0:N-1) + 0.7 * (1:9)');
%! Yhat = 2.1 + 3 * t;
%! Yhat(2, :) = 0.71 * exp (t(2, :));
%! Yhat(4, :) = 5.3 * exp (t(4, :));
%! Yhat(5, :) = 0.2 + 2 * t(5, :);
%! Yhat(8, 2) = NaN;   % a missing row: its prediction is never used
%! ref = log (normpdf (y(1), Yhat(1, :), sigma(1))) ...
%!     + log (lognpdf (y(2), log (Yhat(2, :)), sigma(2))) ...
%!     + log (tpdf ((y(3) - Yhat(3, :)) / sigma(3), aux(3)) / sigma(3)) ...
%!     + log (poisspdf (y(4), Yhat(4, :))) ...
%!     + log (binopdf (y(5), aux(5), 1 ./ (1 + exp (-Yhat(5, :))))) ...
%!     + log (normcdf (aux(6), Yhat(6, :), sigma(6))) ...
%!     + log (normpdf (y(7), Yhat(7, :), sigma(7)));
%! [ll, nskipped] = sluice.loglik (fam, y, Yhat, sigma, aux);
%! assert (size (ll), [1 N]);
%! assert (nskipped, 2);
%! assert (ll, ref, -1e-12);
%! % the same table given row-wise
%! assert (sluice.loglik (fam', y', Yhat, sigma', aux'), ll);

%!test
%! % many members, one row per family, Gaussian and Poisson side by side
%! warning ('off', 'Octave:shadowed-function', 'local');  % the package's own notices
%! pkg load statistics
%! N = 1000;
%! j = 0:N-1;
%! Yhat = [1.5 + 0.9 * sin(0.37 * j); 3 + 2 * cos(0.61 * j)];
%! y = [2.385; 4];
%! ref = log (normpdf (y(1), Yhat(1, :), 0.43)) + log (poisspdf (y(2), Yhat(2, :)));
%! ll = sluice.loglik ({'gaussian', 'poisson'}, y, Yhat, [0.43 NaN]);
%! assert (ll, ref, -1e-12);
