% -*- texinfo -*-
% @deftypefn  {} {@var{counts} =} sluice.rank_histogram (@var{X}, @var{Y})
% @deftypefnx {} {[@var{counts}, @var{edges}, @var{chi2}, @var{p}] =} sluice.rank_histogram (@var{X}, @var{Y}, 'seed', @var{seed})
% Rank histogram of an ensemble forecast against its observations.
% It counts how often the observation falls
% below all N members, between members 1 and 2, ..., above all of them.
%
% @var{X} is an m x N real double matrix of finite values (m quantities,
% N members) for one time, with @var{Y} m x 1; or m x N x T for T times,
% with @var{Y} m x T. For every quantity and time the rank of the
% observation among the members is 1 + (number of members below it); ties
% with members are broken at random, so a reliable ensemble gives a flat
% histogram even for discrete data. NaN observations are skipped.
%
% @var{counts} (1 x (N+1)) counts the ranks 1 .. N+1 over all rows and
% times; @var{edges} (1 x (N+2)) are the bin edges 0.5, 1.5, ...,
% N+1.5 for plotting, e.g. @code{bar (1:N+1, counts, 1)}. @var{chi2} is
% Pearson's statistic of flatness, sum (counts - n/(N+1))^2 / (n/(N+1))
% over the n counted observations, and @var{p} its p-value under a
% chi-square distribution with N degrees of freedom (@code{gammainc}).
% The p-value assumes independent ranks; ranks of neighbouring times or
% places are often correlated, which makes it too small.
%
% A flat histogram is what a reliable ensemble gives; a U shape (the end
% ranks over-populated) means an under-dispersed ensemble, a dome an
% over-dispersed one, a slope a biased one.
%
% Option @code{'seed'} (whole number 0 .. 2^53, default 0) keys the
% random tie-breaking: the same inputs and seed give the same counts.
% When every observation is NaN, @var{counts} is zero and @var{chi2}
% and @var{p} are NaN.
% @seealso{sluice.crps}
% @end deftypefn
function [counts, edges, chi2, p] = rank_histogram (X, Y, varargin)
  if (nargin < 2)
    sluice.internal.compat ('usage', mfilename ());
  end
  opts = sluice.internal.name_value (struct ('seed', 0), varargin, 'rank_histogram');
  sluice.internal.check_real (X, 1, 'X', false, 'rank_histogram');
  sluice.internal.check_real (Y, 2, 'Y', true, 'rank_histogram');
  if (ndims (X) > 3)
    error ('sluice:rank_histogram:badsize', ...
           'argument 1 (X): expected an m x N or m x N x T array, got %s', sluice.internal.describe (X));
  end
  m = size (X, 1);
  N = size (X, 2);
  T = size (X, 3);
  if (ndims (Y) ~= 2 || size (Y, 1) ~= m || size (Y, 2) ~= T)
    error ('sluice:rank_histogram:badsize', ...
           'argument 2 (Y): expected %dx%d (rows of X by times of X), got %s', ...
           m, T, sluice.internal.describe (Y));
  end
  seed = opts.seed;
  if (~isa (seed, 'double') || ~isreal (seed) || issparse (seed) || numel (seed) ~= 1 ...
      || ~isfinite (seed) || seed < 0 || seed > 2^53 || seed ~= floor (seed))
    error ('sluice:rank_histogram:badseed', ...
           'option seed: expected a whole number from 0 to 2^53');
  end
  if (T > 1)
    X = reshape (permute (X, [1 3 2]), m * T, N);
  end
  r = sluice.kernel.scores ('rank', X, Y(:), seed);
  r = r(~isnan (r));
  counts = accumarray (r, 1, [N + 1, 1])';
  edges = (0:N + 1) + 0.5;
  n = numel (r);
  if (n == 0)
    chi2 = NaN;
    p = NaN;
  else
    e = n / (N + 1);
    chi2 = sum ((counts - e) .^ 2) / e;
    p = gammainc (chi2 / 2, N / 2, 'upper');
  end
end



%!test
%! % exact ranks without ties: {1, 2, 4} at 3 -> 3, at 0 -> 1, at 5 -> 4
%! [c, e] = sluice.rank_histogram ([1 2 4; 4 2 1; 2 1 4], [3; 0; 5]);
%! assert (c, [1 0 1 1]);
%! assert (e, [0.5 1.5 2.5 3.5 4.5]);
%!test
%! % m x N x T with Y m x T, NaN observations skipped
%! X = cat (3, [1 2 4; 1 2 4], [1 2 4; 1 2 4]);
%! c = sluice.rank_histogram (X, [0 5; 3 NaN]);
%! assert (c, [1 0 1 1]);
%!test
%! % same seed, same counts; the seed changes how ties fall
%! X = ones (500, 3); Y = ones (500, 1);
%! a = sluice.rank_histogram (X, Y, 'seed', 7);
%! assert (a, sluice.rank_histogram (X, Y, 'seed', 7));
%! assert (sum (a), 500);
%! assert (~isequal (a, sluice.rank_histogram (X, Y, 'seed', 8)));
%!test
%! % all NaN observations: zero counts, NaN statistic
%! [c, e, x2, p] = sluice.rank_histogram ([1 2; 3 4], [NaN; NaN]);
%! assert (c, [0 0 0]);
%! assert (isnan (x2) && isnan (p));
%!error <Invalid call> sluice.rank_histogram (1)
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram (single ([1 2]), 1)
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram (int32 ([1 2]), 1)
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram (true (1, 2), 1)
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram ([1 2] + 1i, 1)
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram (sparse ([1 2]), 1)
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram ({1, 2}, 1)
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram (struct ('a', 1), 1)
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram ([1 2], single (1))
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram ([1 2], int32 (1))
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram ([1 2], true)
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram ([1 2], 1i)
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram ([1 2], sparse (1))
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram ([1 2], {1})
%!error id=sluice:rank_histogram:badclass sluice.rank_histogram ([1 2], struct ('a', 1))
%!error id=sluice:rank_histogram:empty sluice.rank_histogram ([], [])
%!error id=sluice:rank_histogram:empty sluice.rank_histogram (zeros (2, 0), [1; 2])
%!error id=sluice:rank_histogram:empty sluice.rank_histogram ([1 2], [])
%!error id=sluice:rank_histogram:badsize sluice.rank_histogram (ones (2, 3, 2, 2), ones (2, 2))
%!error id=sluice:rank_histogram:badsize sluice.rank_histogram (ones (2, 3), [1; 2; 3])
%!error id=sluice:rank_histogram:badsize sluice.rank_histogram (ones (2, 3), [1 2])
%!error id=sluice:rank_histogram:badsize sluice.rank_histogram (ones (2, 3, 4), ones (2, 3))
%!error id=sluice:rank_histogram:nonfinite sluice.rank_histogram ([1 NaN], 1)
%!error id=sluice:rank_histogram:nonfinite sluice.rank_histogram ([1 Inf], 1)
%!error id=sluice:rank_histogram:nonfinite sluice.rank_histogram ([1 2], Inf)
%!error id=sluice:rank_histogram:badoption sluice.rank_histogram ([1 2], 1, 'sede', 1)
%!error id=sluice:rank_histogram:badoption sluice.rank_histogram ([1 2], 1, 'seed')
%!error id=sluice:rank_histogram:badseed sluice.rank_histogram ([1 2], 1, 'seed', -1)
%!error id=sluice:rank_histogram:badseed sluice.rank_histogram ([1 2], 1, 'seed', 1.5)
%!error id=sluice:rank_histogram:badseed sluice.rank_histogram ([1 2], 1, 'seed', 'a')
%!error id=sluice:rank_histogram:badseed sluice.rank_histogram ([1 2], 1, 'seed', [1 2])
%!error id=sluice:rank_histogram:badseed sluice.rank_histogram ([1 2], 1, 'seed', NaN)
%!error id=sluice:rank_histogram:badoption sluice.rank_histogram ([1 2], 1, cat (3, 'seed', 'seed'), 1)
