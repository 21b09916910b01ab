function t = ifelse_text (ok)
  % Test helper (tests/mpi/on_ranks.m): the verdict word of a case.
  if (ok)
    t = 'PASS';
  else
    t = 'FAIL';
  end
end
