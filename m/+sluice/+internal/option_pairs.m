function args = option_pairs (args)
  % Internal: options given as one scalar struct become name, value pairs
  % (field order kept); anything else is returned as it is, for the
  % caller's own checks.
  if (numel (args) == 1 && isstruct (args{1}) && isscalar (args{1}))
    names = fieldnames (args{1});
    vals = struct2cell (args{1});
    args = [names(:)'; vals(:)'];
    args = args(:)';
  end
end
