function X = planted_step (P, X)
  % Test helper (tests/mpi/on_ranks.m): the model x' = a x, failing when
  % a member's parameter a is exactly 0.875 (a chain started there).
  if (any (P(1, :) == 0.875))
    error ('test:planted', 'planted model failure');
  end
  X = P(1, :) .* X;
end
