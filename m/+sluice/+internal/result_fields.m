function [id, where] = result_fields (res, pos, fn, reason, maker, label, need)
  % Internal: the opening check shared by check_result and check_chains.
  % Argument pos of sluice.<fn> (a number, or a text naming where the
  % struct came from) must be a scalar struct made by maker (for example
  % 'sluice.filter') holding every field in need; otherwise
  % sluice:<fn>:<reason> is raised, a missing field named as one "of
  % <label>" (for example 'a filter result'). Returns the identifier and
  % the description of the argument that the caller's further checks use.
  id = ['sluice:' fn ':' reason];
  if (ischar (pos))
    where = pos;
  else
    where = sprintf ('argument %d (res)', pos);
  end
  if (~isstruct (res) || ~isscalar (res))
    error (id, '%s: expected a result of %s, got %s', where, maker, sluice.internal.describe (res));
  end
  for k = 1:numel (need)
    if (~isfield (res, need{k}))
      error (id, '%s: the field ''%s'' of %s is missing', where, need{k}, label);
    end
  end
end
