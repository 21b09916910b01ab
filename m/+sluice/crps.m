% -*- texinfo -*-
% @deftypefn {} {@var{c} =} sluice.crps (@var{X}, @var{y})
% Continuous ranked probability score of an ensemble forecast. One score
% per row.
%
% @var{X} is an m x N real double matrix of finite values (one row per
% forecast quantity, one column per member) and @var{y} the m observations
% (a vector of length m). The result @var{c} is m x 1:
% @verbatim
%   c(i) = (1/N) sum_j |X(i,j) - y(i)|
%          - 1/(2 N^2) sum_j sum_k |X(i,j) - X(i,k)|
% @end verbatim
% that is E|X - y| - E|X - X'|/2, the CRPS of the empirical distribution
% of the members (Gneiting & Raftery 2007). It is computed from the sorted
% members in O(N log N) per row. Lower is better; the unit is that of
% @var{y}; a single member gives the absolute error.
%
% For members drawn from a forecast distribution F the score is biased
% upwards by E|X - X'|/(2N) (for a normal F with standard deviation s,
% s/(N sqrt(pi))). For reference, the CRPS of a normal N(mu, s^2) at y
% is, with z = (y - mu)/s,
% @verbatim
%   s * (z (2 Phi(z) - 1) + 2 phi(z) - 1/sqrt(pi))
% @end verbatim
% (N(0,1) at y = 0: (sqrt(2) - 1)/sqrt(pi) = 0.2336949773).
%
% A NaN observation gives a NaN score (average with @code{mean (c(~isnan (c)))}).
% @seealso{sluice.rank_histogram}
% @end deftypefn
function c = crps (X, y)
  if (nargin ~= 2)
    sluice.internal.compat ('usage', mfilename ());
  end
  sluice.internal.check_real (X, 1, 'X', false, 'crps');
  if (ndims (X) ~= 2)
    error ('sluice:crps:badsize', ...
           'argument 1 (X): expected an m x N matrix, got %s', sluice.internal.describe (X));
  end
  sluice.internal.check_real (y, 2, 'y', true, 'crps');
  if (~isvector (y) || numel (y) ~= size (X, 1))
    error ('sluice:crps:badsize', ...
           'argument 2 (y): expected a vector of length %d (the rows of X), got %s', ...
           size (X, 1), sluice.internal.describe (y));
  end
  c = sluice.kernel.scores ('crps', X, y(:));
end



%!test
%! % by hand: {1, 2, 4} at 3: E|X - y| = 4/3, E|X - X'|/2 = (2*6/9)/2 = 2/3,
%! % CRPS = 2/3; at 0: 7/3 - 2/3 = 5/3; one member: the absolute error
%! assert (sluice.crps ([1 2 4; 4 1 2], [3; 0]), [2/3; 5/3], 1e-15);
%! assert (sluice.crps ([2.385; -1], [1; 1]), [1.385; 2], 1e-15);
%!test
%! % NaN observation -> NaN score, the other rows unaffected; row vector y
%! c = sluice.crps ([1 2 4; 1 2 4], [NaN 3]);
%! assert (isnan (c(1)));
%! assert (c(2), 2/3, 1e-15);
%!test
%! % the O(N log N) result against the double sum of the definition
%! X = [randn(3, 57); floor(3 * rand(2, 57))];
%! y = [0.731; -2.2; 1e-3; 1; 0];
%! ref = mean (abs (X - y), 2) - sum (sum (abs (X - permute (X, [1 3 2])), 2), 3) / (2 * 57^2);
%! assert (sluice.crps (X, y), ref, 1e-12);
%!error <Invalid call> sluice.crps (1)
%!error id=sluice:crps:badclass sluice.crps (single ([1 2]), 1)
%!error id=sluice:crps:badclass sluice.crps (int32 ([1 2]), 1)
%!error id=sluice:crps:badclass sluice.crps (true (1, 2), 1)
%!error id=sluice:crps:badclass sluice.crps ([1 2] + 1i, 1)
%!error id=sluice:crps:badclass sluice.crps (sparse ([1 2]), 1)
%!error id=sluice:crps:badclass sluice.crps ({1, 2}, 1)
%!error id=sluice:crps:badclass sluice.crps (struct ('a', 1), 1)
%!error id=sluice:crps:badclass sluice.crps ([1 2], single (1))
%!error id=sluice:crps:badclass sluice.crps ([1 2], int32 (1))
%!error id=sluice:crps:badclass sluice.crps ([1 2], true)
%!error id=sluice:crps:badclass sluice.crps ([1 2], 1i)
%!error id=sluice:crps:badclass sluice.crps ([1 2], sparse (1))
%!error id=sluice:crps:badclass sluice.crps ([1 2], {1})
%!error id=sluice:crps:badclass sluice.crps ([1 2], struct ('a', 1))
%!error id=sluice:crps:empty sluice.crps ([], [])
%!error id=sluice:crps:empty sluice.crps (zeros (2, 0), [1; 2])
%!error id=sluice:crps:empty sluice.crps ([1 2], [])
%!error id=sluice:crps:badsize sluice.crps (ones (2, 3, 2), [1; 2])
%!error id=sluice:crps:badsize sluice.crps (ones (2, 3), [1; 2; 3])
%!error id=sluice:crps:badsize sluice.crps (ones (2, 3), ones (2, 2))
%!error id=sluice:crps:nonfinite sluice.crps ([1 NaN], 1)
%!error id=sluice:crps:nonfinite sluice.crps ([1 Inf], 1)
%!error id=sluice:crps:nonfinite sluice.crps ([1 2], -Inf)
