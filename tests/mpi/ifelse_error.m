function s = ifelse_error (fails, fun, p)
  % Test helper (tests/mpi/on_ranks.m): fun (p), or a planted error.
  if (fails)
    error ('test:planted', 'planted failure');
  end
  s = fun (p);
end
