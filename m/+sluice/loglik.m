% -*- texinfo -*-
% @deftypefn  {} {@var{ll} =} sluice.loglik (@var{family}, @var{y}, @var{Yhat}, @var{sigma})
% @deftypefnx {} {@var{ll} =} sluice.loglik (@var{family}, @var{y}, @var{Yhat}, @var{sigma}, @var{aux})
% @deftypefnx {} {[@var{ll}, @var{nskipped}] =} sluice.loglik (@dots{})
% Log-likelihood of a set of observations for every member of an ensemble.
%
% @var{y} is a vector of @var{m} observed values; NaN marks a missing value,
% which is skipped and counted in @var{nskipped}.  @var{Yhat} is the
% @var{m}-by-@var{N} matrix of the values the @var{N} members predict for
% them, one column per member.  The result @var{ll} is 1-by-@var{N}: the sum
% over the rows @var{i} with a value of
% @code{log p (@var{y}(@var{i}) | @var{Yhat}(@var{i}, @var{j}))}.
%
% @var{family} is one family name for every row, or a cell array with one
% name per row.  @var{sigma} (the error scale) and @var{aux} (the family's
% auxiliary number) are scalars, used for every row, or vectors of length
% @var{m}.  For an observed value @var{y} and a predicted value @var{h}:
%
% @table @asis
% @item @qcode{"gaussian"}
% @var{y} ~ N(@var{h}, @var{sigma}^2).  @var{aux} is unused.
%
% @item @qcode{"lognormal"}
% log @var{y} ~ N(log @var{h}, @var{sigma}^2), the density of @var{y}
% itself; @var{y} must be > 0, and a member with @var{h} <= 0 gets -Inf.
% @var{aux} is unused.
%
% @item @qcode{"student_t"}
% (@var{y} - @var{h}) / @var{sigma} ~ t(@var{nu}), with @var{nu} = @var{aux}
% > 0 degrees of freedom.
%
% @item @qcode{"poisson"}
% @var{y} ~ Poisson(@var{h}), @var{y} a count (a whole number >= 0); a member
% with @var{h} < 0 gets -Inf.  @var{sigma} is unused.
%
% @item @qcode{"binomial"}
% @var{y} ~ Bin(@var{aux}, 1 / (1 + exp(-@var{h}))): @var{y} successes (a
% whole number from 0 to @var{aux}) out of @var{aux} trials, the number of
% trials n being a positive whole number, with @var{h} the logit of the
% success probability.  @var{sigma} is unused.
%
% @item @qcode{"censored"}
% Gaussian left-censored at the detection limit @var{L} = @var{aux}: a value
% @var{y} <= @var{L} contributes log Phi((@var{L} - @var{h}) / @var{sigma}),
% the probability of falling below the limit (finite however far in the
% tail), a larger value the N(@var{h}, @var{sigma}^2) density.
% @end table
%
% A non-finite predicted value (NaN or Inf in @var{Yhat}) gives -Inf for that
% member: a member that blew up cannot explain data.
%
% @var{aux} is required when a row's family is @qcode{"student_t"},
% @qcode{"binomial"} or @qcode{"censored"} (there is no default number of
% degrees of freedom, trials or detection limit); for the other families it
% may be left out.  Where a row's family does not use @var{sigma} or
% @var{aux}, any value, NaN included, may be given for that row.
%
% Errors have identifiers @code{sluice:loglik:@var{reason}}:
% @code{badclass}, @code{badsize} and @code{empty} for arguments of the wrong
% class or shape; @code{badfamily} for an unknown family name;
% @code{badsigma} for a @var{sigma} that is not finite and at least
% @code{realmin} (a subnormal scale makes the log-likelihood NaN);
% @code{badaux} for a bad number of degrees of freedom, trials or limit;
% @code{badvalue} for an infinite value or one outside the family's support;
% @code{missingaux} when @var{aux} is needed but not given.  Messages about a
% row name it (@qcode{"observation 3: @dots{}"}).
%
% Example: three observations, one missing, and four members:
%
% @example
% @group
% Yhat = [1.9 2.4 2.1 3.0; 0.5 0.4 0.6 0.5; 7 8 6 9];
% [ll, nskipped] = sluice.loglik ('gaussian', [2.385; NaN; 7.5], Yhat, 0.5)
% @end group
% @end example
%
% @seealso{sluice.kernel.loglik}
% @end deftypefn

function [ll, nskipped] = loglik (family, y, Yhat, sigma, aux)
  if (nargin < 4 || nargin > 5)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (nargin < 5)
    if (ischar (family) && isrow (family))
      names = {family};
    elseif (iscellstr (family))
      names = family(:)';
    else
      names = {};
    end
    needs = {'student_t', 'binomial', 'censored'};
    what = {'dof, the degrees of freedom', 'n, the number of trials', ...
            'limit, the detection limit'};
    for k = 1:numel (needs)
      if (any (strcmp (names, needs{k})))
        error ('sluice:loglik:missingaux', ...
               'argument 5 (aux) is required by the %s family (%s)', ...
               needs{k}, what{k});
      end
    end
    aux = NaN;
  end
  [ll, nskipped] = sluice.kernel.loglik (family, y, Yhat, sigma, aux);
end

% The normal density (handbook formula) written out for the checks below.
%!function v = normlog (y, h, s)
%!  v = -0.5 * log (2 * pi) - log (s) - 0.5 * ((y - h) ./ s) .^ 2;
%!endfunction

%!test
%! % one Gaussian row, three members: the normal log density
%! ll = sluice.loglik ('gaussian', 2.385, [1.7319 2.0 3.1], 0.6283);
%! assert (size (ll), [1 3]);
%! assert (ll, normlog (2.385, [1.7319 2.0 3.1], 0.6283), 1e-13);

%!test
%! % sum over rows; missing rows skipped and counted; scalar sigma expanded
%! y = [2.385; NaN; -0.75; NaN];
%! Yhat = [1.9 2.4; 5 6; -1.1 0.3; 0 0];
%! [ll, nskipped] = sluice.loglik ('gaussian', y, Yhat, 0.81);
%! assert (nskipped, 2);
%! assert (ll, normlog (y(1), Yhat(1,:), 0.81) + normlog (y(3), Yhat(3,:), 0.81), 1e-13);
%! assert (sluice.loglik ('gaussian', y', Yhat, 0.81 * ones (1, 4)), ll);
%! assert (sluice.loglik ('gaussian', y, Yhat, 0.81, NaN), ll);

%!test
%! % a row vector y and a per-row cell of families give the same result
%! y = [2.385 1.1];
%! Yhat = [2 2.5 3; 1 1.2 0.9];
%! a = sluice.loglik ({'gaussian', 'gaussian'}, y, Yhat, [0.5 1.5]);
%! b = sluice.loglik ({'gaussian'; 'gaussian'}, y', Yhat, [0.5; 1.5]);
%! assert (a, b);
%! assert (a, normlog (y(1), Yhat(1,:), 0.5) + normlog (y(2), Yhat(2,:), 1.5), 1e-13);

%!test
%! % all rows missing: zero log-likelihood
%! [ll, k] = sluice.loglik ('poisson', [NaN NaN], ones (2, 3), NaN);
%! assert (ll, zeros (1, 3));
%! assert (k, 2);

%!test
%! % a blown-up member (NaN or Inf prediction) gets -Inf, the rest are finite
%! ll = sluice.loglik ('gaussian', [1; 2], [1 NaN 1 1; 2 2 Inf -Inf], 1);
%! assert (ll(2:4), -Inf (1, 3));
%! assert (isfinite (ll(1)));
%! ll = sluice.loglik ('binomial', 3, [NaN 0.2], NaN, 10);
%! assert (ll(1), -Inf);
%! assert (isfinite (ll(2)));

%!test
%! % lognormal: log y ~ N(log h, s^2), density of y (Jacobian 1/y); h <= 0 -> -Inf
%! ll = sluice.loglik ('lognormal', 2.385, [1.7319 0 -1], 0.6283);
%! assert (ll(1), normlog (log (2.385), log (1.7319), 0.6283) - log (2.385), 1e-13);
%! assert (ll(2:3), [-Inf -Inf]);

%!test
%! % student_t: log Gamma((nu+1)/2) - log Gamma(nu/2) - log(nu pi)/2 - log s
%! %            - (nu+1)/2 log(1 + z^2/nu), z = (y - h)/s (handbook formula)
%! nu = 4.7; s = 0.6283; z = (2.385 - 1.7319) / s;
%! ref = gammaln ((nu + 1) / 2) - gammaln (nu / 2) - 0.5 * log (nu * pi) ...
%!       - log (s) - (nu + 1) / 2 * log1p (z ^ 2 / nu);
%! assert (sluice.loglik ('student_t', 2.385, 1.7319, s, nu), ref, 1e-13);
%! % a very large dof is the normal
%! assert (sluice.loglik ('student_t', 2.385, 1.7319, s, 1e300), ...
%!         normlog (2.385, 1.7319, s), 1e-13);

%!test
%! % poisson: y log h - h - log y!; P(0 | h = 0) = 1; h < 0 -> -Inf
%! ll = sluice.loglik ('poisson', 7, [4.385 0 -0.5], NaN);
%! assert (ll(1), 7 * log (4.385) - 4.385 - gammaln (8), 1e-13);
%! assert (ll(2:3), [-Inf -Inf]);
%! assert (sluice.loglik ('poisson', 0, 0, 1), 0);

%!test
%! % binomial with logit link: log C(n,y) + y log p + (n - y) log(1 - p)
%! h = 0.385; p = 1 / (1 + exp (-h));
%! ref = log (nchoosek (12, 7)) + 7 * log (p) + 5 * log1p (-p);
%! assert (sluice.loglik ('binomial', 7, h, NaN, 12), ref, 1e-13);
%! % far logits stay finite: all successes at h = 800 is certain
%! assert (sluice.loglik ('binomial', [12; 0], [800 -800; 800 -800], 1, 12), ...
%!         [-9600 -9600], 1e-10);

%!test
%! % censored: y <= L contributes log Phi((L - h)/s), else the normal density
%! s = 0.6283; L = 0.2;
%! ll = sluice.loglik ('censored', [0.05; 2.385], [1.7319 1.2; 1.9 2.0], s, L);
%! ref = log (0.5 * erfc (-(L - [1.7319 1.2]) / s / sqrt (2))) ...
%!       + normlog (2.385, [1.9 2.0], s);
%! assert (ll, ref, 1e-12);
%! % 40 sigma into the tail: log Phi(-40) = -804.6084420137538 (asymptotic
%! % series of the normal tail, Abramowitz & Stegun 26.2.12)
%! v = sluice.loglik ('censored', 0.1, L + 40 * s, s, L);
%! assert (isfinite (v));
%! z = -40; u = 1 / z ^ 2;
%! ref = -z ^ 2 / 2 - 0.5 * log (2 * pi) - log (-z) + log (1 - u + 3 * u ^ 2 - 15 * u ^ 3 + 105 * u ^ 4);
%! assert (v, ref, 1e-10);

%!test
%! % a mixed table: family, sigma and aux per row; unused entries may be NaN
%! fam = {'gaussian', 'poisson', 'binomial', 'censored'};
%! y = [2.385 3 4 -1];
%! Yhat = [2 2.5; 3.3 2.1; 0.4 -0.2; 0.5 -1.5];
%! s = [0.5 NaN NaN 0.9];
%! a = [NaN NaN 9 0];
%! ll = sluice.loglik (fam, y, Yhat, s, a);
%! ref = zeros (1, 2);
%! for k = 1:4
%!   ref = ref + sluice.loglik (fam{k}, y(k), Yhat(k,:), s(k), a(k));
%! end
%! assert (ll, ref, 1e-12);

% argument count
%!error id=sluice:loglik:usage sluice.loglik ()
%!error id=sluice:loglik:usage sluice.loglik ('gaussian', 1, 1)
%!error id=sluice:loglik:badclass sluice.loglik (cat (3, 'gaussian', 'gaussian'), 1, 1, 1)
%!error id=Octave:invalid-fun-call sluice.loglik ('gaussian', 1, 1, 1, 1, 1)
%!error id=sluice:loglik:nargin sluice.kernel.loglik ('gaussian', 1, 1, 1)
%!error id=sluice:loglik:nargout [a, b, c] = sluice.kernel.loglik ('gaussian', 1, 1, 1, NaN)

% aux is required where the family needs it
%!error id=sluice:loglik:missingaux sluice.loglik ('student_t', 1, 1, 1)
%!error id=sluice:loglik:missingaux sluice.loglik ('binomial', 1, 1, NaN)
%!error id=sluice:loglik:missingaux sluice.loglik ('censored', 1, 1, 1)
%!error id=sluice:loglik:missingaux sluice.loglik ({'gaussian', 'binomial'}, [1 2], [1; 1], 1)
%!error <required by the student_t family> sluice.loglik ('student_t', 1, 1, 1)

% family: class, size, unknown names
%!error id=sluice:loglik:badclass sluice.loglik (3, 1, 1, 1)
%!error id=sluice:loglik:badclass sluice.loglik (struct ('f', 'gaussian'), 1, 1, 1)
%!error id=sluice:loglik:badclass sluice.loglik (['gaussian'; 'gaussian'], [1 2], [1; 1], 1)
%!error id=sluice:loglik:badclass sluice.loglik ({'gaussian', 3}, [1 2], [1; 1], 1)
%!error id=sluice:loglik:badclass sluice.loglik ({'gaussian', {'poisson'}}, [1 2], [1; 1], 1)
%!error id=sluice:loglik:badsize sluice.loglik ({'gaussian', 'gaussian'}, [1 2 3], [1; 1; 1], 1)
%!error id=sluice:loglik:badsize sluice.loglik ({'gaussian', 'gaussian'; 'gaussian', 'gaussian'}, [1 2 3 4], ones (4, 1), 1)
%!error id=sluice:loglik:badfamily sluice.loglik ('normal', 1, 1, 1)
%!error id=sluice:loglik:badfamily sluice.loglik ('Gaussian', 1, 1, 1)
%!error id=sluice:loglik:badfamily sluice.loglik ('', 1, 1, 1)
%!error id=sluice:loglik:badfamily sluice.loglik ({'gaussian', 'poison'}, [1 2], [1; 1], 1)
%!error <unknown family 'poison'> sluice.loglik ({'gaussian', 'poison'}, [1 2], [1; 1], 1)
%!error <element 2> sluice.loglik ({'gaussian', 'poison'}, [1 2], [1; 1], 1)

% y: class, size, empty, values
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', single (1), 1, 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', int32 (1), 1, 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', true, 1, 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1 + 2i, 1, 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', sparse (1), 1, 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', {1}, 1, 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', struct ('y', 1), 1, 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 'a', 1, 1)
%!error id=sluice:loglik:badsize sluice.loglik ('gaussian', ones (2, 2), ones (4, 1), 1)
%!error id=sluice:loglik:badsize sluice.loglik ('gaussian', ones (1, 1, 2), ones (2, 1), 1)
%!error id=sluice:loglik:empty sluice.loglik ('gaussian', [], 1, 1)
%!error id=sluice:loglik:empty sluice.loglik ('gaussian', zeros (1, 0), zeros (0, 3), 1)
%!error id=sluice:loglik:badvalue sluice.loglik ('gaussian', [1 Inf], [1; 1], 1)
%!error id=sluice:loglik:badvalue sluice.loglik ('poisson', [1 -Inf], [1; 1], 1)
%!error <observation 2: value must be finite> sluice.loglik ('gaussian', [1 Inf], [1; 1], 1)
%!error id=sluice:loglik:badvalue sluice.loglik ('poisson', 2.5, 1, 1)
%!error id=sluice:loglik:badvalue sluice.loglik ('poisson', -1, 1, 1)
%!error id=sluice:loglik:badvalue sluice.loglik ('binomial', 13, 1, 1, 12)
%!error id=sluice:loglik:badvalue sluice.loglik ('binomial', 1.5, 1, 1, 12)
%!error id=sluice:loglik:badvalue sluice.loglik ('lognormal', 0, 1, 1)
%!error id=sluice:loglik:badvalue sluice.loglik ('lognormal', -2.385, 1, 1)

% Yhat: class, size, empty
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, single (1), 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, int32 (1), 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, true, 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, 1 + 2i, 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, sparse (1), 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, {1}, 1)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, struct ('h', 1), 1)
%!error id=sluice:loglik:badsize sluice.loglik ('gaussian', [1 2 3], ones (2, 4), 1)
%!error id=sluice:loglik:badsize sluice.loglik ('gaussian', [1 2], ones (1, 2), 1)
%!error id=sluice:loglik:badsize sluice.loglik ('gaussian', [1 2], ones (2, 2, 2), 1)
%!error id=sluice:loglik:empty sluice.loglik ('gaussian', [1 2], zeros (2, 0), 1)
%!error <argument 3 \(Yhat\)> sluice.loglik ('gaussian', [1 2 3], ones (2, 4), 1)

% sigma: class, size, empty, values
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, 1, single (1))
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, 1, int32 (1))
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, 1, true)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, 1, 1 + 2i)
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, 1, sparse (1))
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, 1, {1})
%!error id=sluice:loglik:badclass sluice.loglik ('gaussian', 1, 1, struct ('s', 1))
%!error id=sluice:loglik:badsize sluice.loglik ('gaussian', [1 2 3], ones (3, 2), [1 1])
%!error id=sluice:loglik:badsize sluice.loglik ('gaussian', [1 2], ones (2, 2), ones (2, 2))
%!error id=sluice:loglik:empty sluice.loglik ('gaussian', 1, 1, [])
%!error id=sluice:loglik:badsigma sluice.loglik ('gaussian', 1, 1, 0)
%!error id=sluice:loglik:badsigma sluice.loglik ('gaussian', 1, 1, 1e-320)
%!error id=sluice:loglik:badsigma sluice.loglik ('student_t', [1 2], ones (2, 1), [1 1e-310], 4)
%!error id=sluice:loglik:badsigma sluice.loglik ('gaussian', [1 2 3], ones (3, 1), [1 1 -1])
%!error id=sluice:loglik:badsigma sluice.loglik ('gaussian', 1, 1, NaN)
%!error id=sluice:loglik:badsigma sluice.loglik ('student_t', 1, 1, Inf, 4)
%!error id=sluice:loglik:badsigma sluice.loglik ('censored', 1, 1, -Inf, 0)
%!error id=sluice:loglik:badsigma sluice.loglik ('lognormal', 1, 1, -0.5)
%!error <observation 3: sigma must be finite and at least 2.2250738585072014e-308 \(the smallest normal double\), got -1$> sluice.loglik ('gaussian', [1 2 3], ones (3, 1), [1 1 -1])
%!error id=sluice:loglik:badsigma sluice.loglik ('gaussian', NaN, 1, NaN)

% aux: class, size, empty, values
%!error id=sluice:loglik:badclass sluice.loglik ('student_t', 1, 1, 1, single (4))
%!error id=sluice:loglik:badclass sluice.loglik ('student_t', 1, 1, 1, int32 (4))
%!error id=sluice:loglik:badclass sluice.loglik ('student_t', 1, 1, 1, true)
%!error id=sluice:loglik:badclass sluice.loglik ('student_t', 1, 1, 1, 4 + 2i)
%!error id=sluice:loglik:badclass sluice.loglik ('student_t', 1, 1, 1, sparse (4))
%!error id=sluice:loglik:badclass sluice.loglik ('student_t', 1, 1, 1, {4})
%!error id=sluice:loglik:badclass sluice.loglik ('student_t', 1, 1, 1, struct ('dof', 4))
%!error id=sluice:loglik:badsize sluice.loglik ('binomial', [1 2 3], ones (3, 1), 1, [5 5])
%!error id=sluice:loglik:empty sluice.loglik ('binomial', 1, 1, 1, [])
%!error id=sluice:loglik:badaux sluice.loglik ('student_t', 1, 1, 1, 0)
%!error id=sluice:loglik:badaux sluice.loglik ('student_t', 1, 1, 1, -4)
%!error id=sluice:loglik:badaux sluice.loglik ('student_t', 1, 1, 1, NaN)
%!error id=sluice:loglik:badaux sluice.loglik ('student_t', 1, 1, 1, Inf)
%!error id=sluice:loglik:badaux sluice.loglik ('binomial', 1, 1, 1, 0)
%!error id=sluice:loglik:badaux sluice.loglik ('binomial', 1, 1, 1, 2.5)
%!error id=sluice:loglik:badaux sluice.loglik ('binomial', 1, 1, 1, NaN)
%!error id=sluice:loglik:badaux sluice.loglik ('binomial', 1, 1, 1, 2 ^ 60)
%!error id=sluice:loglik:badaux sluice.loglik ('censored', 1, 1, 1, Inf)
%!error id=sluice:loglik:badaux sluice.loglik ('censored', 1, 1, 1, NaN)
%!error <observation 1: student_t dof must be finite and \S 0, got 0$> sluice.loglik ('student_t', 1, 1, 1, 0)
%!error <observation 2: binomial n must be a whole number> sluice.loglik ('binomial', [1 1], [1; 1], 1, [3 2.5])

% quantiles and draws of the families (sluice.kernel.loglik's 'quantile'
% and 'sample' modes, which sluice.twin uses)
%!test
%! % gaussian and lognormal against the normal quantile by erfinv,
%! % Phi^-1(u) = sqrt(2) erfinv(2u - 1) (handbook formula)
%! u = [0.0123 0.31 0.5 0.77 0.9987];
%! z = sqrt (2) * erfinv (2 * u - 1);
%! q = sluice.kernel.loglik ('quantile', 'gaussian', u, [1.7 -2 0 3 4], 0.63, NaN);
%! assert (q', [1.7 -2 0 3 4] + 0.63 * z, 1e-13);
%! q = sluice.kernel.loglik ('quantile', 'lognormal', u, 4.41, 0.39, NaN);
%! assert (q', exp (log (4.41) + 0.39 * z), 1e-12);
%! % censored: the limit up to Phi((L - h)/sigma), erfc form
%! q = sluice.kernel.loglik ('quantile', 'censored', u, 2, 0.8, 1.5);
%! assert (q', max (2 + 0.8 * z, 1.5), 1e-13);
%! % Student-t with 1 degree of freedom is the Cauchy: tan(pi (u - 1/2))
%! q = sluice.kernel.loglik ('quantile', 'student_t', u, 0.25, 1.9, 1);
%! assert (q', 0.25 + 1.9 * tan (pi * (u - 0.5)), 1e-9);

%!test
%! % counts: the smallest k with P(Y <= k) >= u, by Octave's gammainc
%! % (P(Y <= k) = Q(k + 1, lambda), Abramowitz & Stegun 26.4.21) and
%! % betainc (I_{1-p}(n - k, k + 1), 26.5.24)
%! u = [0.0123 0.31 0.5 0.77 0.9987];
%! k = sluice.kernel.loglik ('quantile', 'poisson', u, 3.7, NaN, NaN)';
%! assert (all (gammainc (3.7, k + 1, 'upper') >= u));
%! assert (all (k == 0 | gammainc (3.7, k, 'upper') < u));
%! p = 1 / (1 + exp (0.8));
%! k = sluice.kernel.loglik ('quantile', 'binomial', u, -0.8, NaN, 25)';
%! F = @(k) betainc (1 - p, 25 - k, k + 1);
%! assert (all (k == 25 | F (min (k, 24)) >= u));
%! assert (all (k == 0 | F (max (k - 1, 0)) < u));

%!test
%! % draws: z for the normal families, u for the others; a cell of
%! % families, one per row
%! y = sluice.kernel.loglik ('sample', {'gaussian', 'student_t', 'poisson'}, ...
%!                           [0.3 -1 2], [0.2 0.9 0.6], [1 2 3.7], [0.5 0.4 NaN], [NaN 3 NaN]);
%! assert (y(1), 1 + 0.5 * 0.3);
%! assert (y(2), sluice.kernel.loglik ('quantile', 'student_t', 0.9, 2, 0.4, 3));
%! assert (y(3), sluice.kernel.loglik ('quantile', 'poisson', 0.6, 3.7, NaN, NaN));
%! % outside the family's domain: NaN
%! assert (isnan (sluice.kernel.loglik ('quantile', 'lognormal', 0.5, -1, 1, NaN)));

%!error id=sluice:loglik:badprob sluice.kernel.loglik ('quantile', 'gaussian', 0, 1, 1, NaN)
%!error id=sluice:loglik:badprob sluice.kernel.loglik ('quantile', 'poisson', [0.5 1], [1 1], NaN, NaN)
%!error id=sluice:loglik:badprob sluice.kernel.loglik ('sample', 'gaussian', 0, NaN, 1, 1, NaN)
%!error id=sluice:loglik:badnormal sluice.kernel.loglik ('sample', 'gaussian', Inf, 0.5, 1, 1, NaN)
%!error id=sluice:loglik:badsigma sluice.kernel.loglik ('quantile', 'gaussian', 0.5, 1, -1, NaN)
%!error id=sluice:loglik:badaux sluice.kernel.loglik ('quantile', 'binomial', 0.5, 1, NaN, 2.5)
%!error id=sluice:loglik:badfamily sluice.kernel.loglik ('quantile', 'weibull', 0.5, 1, 1, NaN)
%!error id=sluice:loglik:badclass sluice.kernel.loglik ('quantile', 3, 0.5, 1, 1, NaN)
%!error id=sluice:loglik:badsize sluice.kernel.loglik ('quantile', 'gaussian', [0.5 0.6], [1 2 3], 1, NaN)
%!error id=sluice:loglik:badsize sluice.kernel.loglik ('quantile', {'gaussian'}, [0.5 0.6], [1 2], 1, NaN)
%!error id=sluice:loglik:nargin sluice.kernel.loglik ('quantile', 'gaussian', 0.5, 1, 1)
%!error id=sluice:loglik:nargin sluice.kernel.loglik ('sample', 'gaussian', 0.5, 1, 1, NaN)
%!error id=sluice:loglik:nargout [a, b] = sluice.kernel.loglik ('quantile', 'gaussian', 0.5, 1, 1, NaN)
