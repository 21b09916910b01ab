function o = time_origin (origin, unit, fn)
  % Internal: the calendar of a run's time axis. origin is the date of
  % model time 0 (ISO 8601 text such as '2001-01-01' or '2001-01-01T06:00+01:00',
  % or an Octave datenum), unit the model's time unit, 'days' or 'years'
  % (of 365.25 days, as sluice.read_obs counts them). o has fields text
  % (the origin as ISO 8601 text, in UTC), datenum, unit and unit_days;
  % o.datenum + t * o.unit_days are the datenums of model times t.
  % Errors: sluice:<fn>:badorigin, sluice:<fn>:badoption.
  if (~(ischar (origin) && isrow (origin) && ~isempty (origin)) && ...
      ~(isa (origin, 'double') && isreal (origin) && isscalar (origin) && isfinite (origin)))
    error (['sluice:' fn ':badorigin'], ...
           'option ''origin'': expected a date such as ''2001-01-01'' or a datenum, got %s', ...
           sluice.internal.describe (origin));
  end
  [unit, unit_days] = sluice.internal.time_unit (unit, fn, 'time_unit');
  try
    [dn, text] = sluice.kernel.obsfile ('date', origin);
  catch err
    msg = regexprep (err.message, '^(obsfile|date): ', '');
    error (['sluice:' fn ':badorigin'], 'option ''origin'': %s', msg);
  end
  if (iscell (text))
    text = text{1};
  end
  o = struct ('text', text, 'datenum', dn, 'unit', unit, 'unit_days', unit_days);
end

%!test
%! % against Octave's datenum (its own calendar arithmetic)
%! o = sluice.internal.time_origin ('2001-03-01', 'days', 'x');
%! assert (o.datenum, datenum (2001, 3, 1));
%! assert (o.text, '2001-03-01');
%! assert (o.unit_days, 1);
%! o = sluice.internal.time_origin ('2000-02-29T06:00+01:00', 'Years', 'x');
%! assert (o.datenum, datenum (2000, 2, 29, 5, 0, 0), 1e-9);
%! assert (o.text, '2000-02-29T05:00:00Z');
%! assert (o.unit, 'years');
%! assert (o.unit_days, 365.25);
%! o = sluice.internal.time_origin (datenum (1999, 12, 31), 'days', 'x');
%! assert (o.text, '1999-12-31');
%!error id=sluice:x:badorigin sluice.internal.time_origin ('2001-02-29', 'days', 'x')
%!error <^option 'origin': '2001-02-29' is not a date: February 2001 has 28 days> sluice.internal.time_origin ('2001-02-29', 'days', 'x')
%!error id=sluice:x:badorigin sluice.internal.time_origin ({'2001-01-01'}, 'days', 'x')
%!error id=sluice:x:badorigin sluice.internal.time_origin (NaN, 'days', 'x')
%!error id=sluice:x:badorigin sluice.internal.time_origin (1e9, 'days', 'x')
%!error id=sluice:x:badoption sluice.internal.time_origin ('2001-01-01', 'weeks', 'x')
