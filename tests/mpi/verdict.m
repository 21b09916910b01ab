function verdict (file, line)
  % Test helper (tests/mpi/on_ranks.m): a rank's verdict line, to its
  % own file and to the output.
  fid = fopen (file, 'a');
  fprintf (fid, '%s\n', line);
  fclose (fid);
  printf ('%s\n', line);
end
