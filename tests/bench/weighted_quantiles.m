function q = weighted_quantiles (X, w, W, probs)
  % Row r, level p: the smallest X(r, i) whose cumulative weight (in
  % sorted order) reaches p * W, i.e. sorted position #{c < p W} + 1. With
  % c non-decreasing, #{c < t} = #{c <= t'} for t' the double just below t,
  % which lookup gives in O(log N).
  [n, N] = size (X);
  [xs, ix] = sort (X, 2);
  c = cumsum (w(ix), 2);
  t = probs(:)' * W;
  tb = typecast (typecast (t, 'uint64') - 1, 'double');   % t >= 0: saturates at 0
  q = zeros (n, numel (probs));
  for r = 1:n
    k = min (lookup (c(r, :), tb) + 1, N);
    q(r, :) = xs(r, k);
  end
end
