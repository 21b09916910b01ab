function r = first_repeat (names)
  % r = sluice.internal.first_repeat (names): the index of the first of
  % the texts in the cell names that equals an earlier one, 0 if none;
  % by sorting, O(n log n).
  r = 0;
  if (numel (names) < 2)
    return;
  end
  [~, first] = unique (names(:), 'first');
  again = true (numel (names), 1);
  again(first) = false;
  k = find (again, 1);
  if (~isempty (k))
    r = k;
  end
end

%!assert (sluice.internal.first_repeat ({}), 0)
%!assert (sluice.internal.first_repeat ({'a'}), 0)
%!assert (sluice.internal.first_repeat ({'a', 'b', 'c'}), 0)
%!assert (sluice.internal.first_repeat ({'b', 'a', 'c', 'a', 'b'}), 4)
%!assert (sluice.internal.first_repeat ({'x'; 'y'; 'x'}), 3)
