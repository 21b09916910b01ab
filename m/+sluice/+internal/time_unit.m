function [name, days] = time_unit (unit, fn, option)
  % Internal: a model's time unit given as option `option` of sluice.<fn>:
  % 'days' or 'years' (any case; years of 365.25 days, the mean Julian
  % year, common practice); its name in lower case and its length in days.
  % Error: sluice:<fn>:badoption.
  units = {'days', 'years'};
  lengths = [1, 365.25];
  k = [];
  if (ischar (unit))
    k = find (strcmpi (unit, units));
  end
  if (isempty (k))
    error (['sluice:' fn ':badoption'], ...
           'option ''%s'': expected ''days'' or ''years'' (the model''s time unit)', option);
  end
  name = units{k};
  days = lengths(k);
end

%!test
%! [n, d] = sluice.internal.time_unit ('Years', 'x', 'unit');
%! assert (n, 'years');
%! assert (d, 365.25);
%! [n, d] = sluice.internal.time_unit ('days', 'x', 'unit');
%! assert ({n, d}, {'days', 1});
%!error <option 'unit': expected 'days' or 'years'> sluice.internal.time_unit ('weeks', 'x', 'unit')
%!error id=sluice:x:badoption sluice.internal.time_unit (1, 'x', 'unit')
