function t = file_time (opts, fn)
  % Internal: the time options of the file readers (sluice.read_obs,
  % sluice.read_forcing) checked in one place: origin (a date text, a
  % datenum or []), unit, time_numbers ('model' or 'datenum') and sort.
  % Returns origin, unit_name, unit_days, datenums (logical) and sort
  % (logical). Errors are sluice:<fn>:badorigin, :badoption, :noorigin.
  origin = opts.origin;
  if (~(isempty (origin) && isnumeric (origin)) && ...
      ~(ischar (origin) && isrow (origin)) && ...
      ~(isa (origin, 'double') && isreal (origin) && isscalar (origin) && isfinite (origin)))
    error (['sluice:' fn ':badorigin'], ...
           'option ''origin'': expected a date such as ''2001-01-01'' or a datenum, got %s', ...
           sluice.internal.describe (origin));
  end
  [unit_name, unit_days] = sluice.internal.time_unit (opts.unit, fn, 'unit');
  if (~ischar (opts.time_numbers) || ~any (strcmpi (opts.time_numbers, {'model', 'datenum'})))
    error (['sluice:' fn ':badoption'], ...
           'option ''time_numbers'': expected ''model'' or ''datenum''');
  end
  datenums = strcmpi (opts.time_numbers, 'datenum');
  if (datenums && isempty (origin))
    error (['sluice:' fn ':noorigin'], ...
           'option ''time_numbers'' ''datenum'' needs the option ''origin'' (the date of model time 0)');
  end
  s = opts.sort;
  if (~((islogical (s) || isnumeric (s)) && isscalar (s) && isreal (s) && (s == 0 || s == 1)))
    error (['sluice:' fn ':badoption'], 'option ''sort'': expected true or false');
  end
  t = struct ('origin', {origin}, 'unit_name', unit_name, 'unit_days', unit_days, ...
              'datenums', datenums, 'sort', logical (s));
end
