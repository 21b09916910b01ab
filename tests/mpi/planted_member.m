function X = planted_member (t, P, X)
  % Test helper (tests/mpi/on_ranks.m): the model x' = a x, failing after
  % t = 3 on the members whose parameter b exceeds 0.98 -- some members,
  % on whichever ranks hold them.
  if (t > 3 && any (P(2, :) > 0.98))
    error ('test:planted', 'planted failure of a member');
  end
  X = P(1, :) .* X;
end
