% -*- texinfo -*-
% @deftypefn {} {} sluice.write_forcing (@var{filename}, @var{forcing})
% Write forcing series to a CSV file that sluice.read_forcing reads back.
%
% @var{forcing} is a struct as @code{sluice.read_forcing} returns it:
% @code{time} (m x 1, finite, increasing), @code{values} (m x q real
% doubles; NaN is written @code{NaN}, a gap that @code{sluice.read_forcing}
% refuses unless told how to fill it; infinities are refused),
% @code{names} (1 x q cellstr of column names: a letter, then letters,
% digits or underscores; distinct without regard to case; not @code{time}
% or @code{date}), optionally @code{units} (1 x q cellstr, @code{''} for
% none; no comma, quote, bracket or line break), @code{time_origin} and
% @code{time_unit}.
%
% The file has the header @code{time,name [unit],...} and one line per
% time; values with 17 significant digits (@code{%.17g}), so reading the
% file gives back the same doubles to the bit. When @code{time_origin} is
% a date (the forcing was read with dates), the times are written as ISO
% 8601 dates (@code{2001-01-02}, or @code{2001-01-02T06:00:00Z} with a
% time of day, to the microsecond): read the file back with
% @code{sluice.read_forcing (file, 'origin', forcing.time_origin, 'unit',
% forcing.time_unit)}. Times that came from dates to the second come back
% to the bit; otherwise times are written as numbers. @code{interp} is not
% written (give it to @code{sluice.read_forcing}).
%
% Errors: @code{sluice:write_forcing:badforcing} (a malformed struct),
% @code{badheader} (a bad name or unit), @code{badtime},
% @code{badorder} and @code{duptime} (times), @code{badnumber} (an
% infinite value), @code{baddate} (a time outside the years 0000-9999
% from the origin), @code{badorigin}, each naming the line the row would
% have; @code{nofile} when the file cannot be created.
% @seealso{sluice.read_forcing, sluice.write_obs}
% @end deftypefn
function write_forcing (filename, forcing)
  if (nargin ~= 2 || nargout > 0)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (~ischar (filename) || isempty (filename) || ~isrow (filename))
    error ('sluice:write_forcing:badfilename', ...
           'argument 1 (filename): expected a file name (a character string)');
  end
  id = 'sluice:write_forcing:badforcing';
  if (~isstruct (forcing) || ~isscalar (forcing) || ~isfield (forcing, 'time') || ...
      ~isfield (forcing, 'values') || ~isfield (forcing, 'names'))
    error (id, 'argument 2 (forcing): expected a struct with fields time, values and names, got %s', ...
           sluice.internal.describe (forcing));
  end
  t = forcing.time;
  v = forcing.values;
  if (~isa (t, 'double') || ~isreal (t) || issparse (t) || (~isempty (t) && ~isvector (t)))
    error (id, 'forcing.time must be a real double vector, got %s', sluice.internal.describe (t));
  end
  m = numel (t);
  if (~isa (v, 'double') || ~isreal (v) || issparse (v) || ndims (v) ~= 2 || size (v, 1) ~= m)
    error (id, 'forcing.values must be real doubles with one row per time (%d), got %s', ...
           m, sluice.internal.describe (v));
  end
  q = size (v, 2);
  names = forcing.names;
  if (~iscellstr (names) || numel (names) ~= q)
    error (id, 'forcing.names must be a cellstr with one name per column of values (%d)', q);
  end
  units = repmat ({''}, 1, q);
  if (isfield (forcing, 'units'))
    units = forcing.units;
    if (~iscellstr (units) || numel (units) ~= q)
      error (id, 'forcing.units must be a cellstr with one unit per column of values (%d)', q);
    end
  end
  if (any (cellfun ('size', names, 1) > 1) || any (cellfun ('size', units, 1) > 1))
    error (id, 'forcing.names and forcing.units must hold character strings (one row each)');
  end
  origin = '';
  unit_days = 1;
  if (isfield (forcing, 'time_origin') && ~isempty (forcing.time_origin))
    unit = 'days';
    if (isfield (forcing, 'time_unit') && ~isempty (forcing.time_unit))
      unit = forcing.time_unit;
    end
    cal = sluice.internal.time_origin (forcing.time_origin, unit, 'write_forcing');
    origin = cal.text;
    unit_days = cal.unit_days;
  end
  try
    sluice.kernel.obsfile ('write_series', filename, t(:), v, names(:)', units(:)', ...
                           origin, unit_days);
  catch err
    msg = regexprep (err.message, '^obsfile: ', '');
    sluice.internal.raise_again (err.identifier, 'sluice:write_forcing:failed', msg);
  end
end

%!shared f
%! f = [tempname() '.csv'];

%!test
%! % numbers: read back to the same bits
%! fo = struct ('time', [0; 0.5; 2], 'values', [pi 1e-300; -0 NaN; 1/3 7], ...
%!              'names', {{'rain', 'pet'}}, 'units', {{'mm/d', ''}});
%! sluice.write_forcing (f, fo);
%! back = sluice.read_forcing (f, 'missing', 'zero');
%! delete (f);
%! assert (back.names, {'rain', 'pet'});
%! assert (back.units, {'mm/d', ''});
%! assert (back.time, fo.time);
%! want = fo.values; want(2, 2) = 0;
%! assert (isequal (back.values, want));
%! assert (1 / back.values(2, 1), -Inf);

%!test
%! % dates: written as dates, read back with the origin to the same struct
%! fo = struct ('time', [0; 1; 1.25; 40], 'values', [1; 2; 3; 4], 'names', {{'p'}}, ...
%!              'units', {{''}}, 'interp', 'linear', 'time_origin', '2000-02-28', 'time_unit', 'days');
%! sluice.write_forcing (f, fo);
%! txt = fileread (f);
%! back = sluice.read_forcing (f, 'origin', fo.time_origin);
%! delete (f);
%! assert (txt, sprintf ('time,p\n2000-02-28,1\n2000-02-29,2\n2000-02-29T06:00:00Z,3\n2000-04-08,4\n'));
%! assert (isequal (back, fo));

%!error <Invalid call> sluice.write_forcing ('x.csv')
%!error id=sluice:write_forcing:badfilename sluice.write_forcing (1, struct ())
%!error id=sluice:write_forcing:badforcing sluice.write_forcing (f, struct ('time', 1, 'values', 1))
%!error id=sluice:write_forcing:badforcing sluice.write_forcing (f, struct ('time', single (1), 'values', 1, 'names', {{'a'}}))
%!error id=sluice:write_forcing:badforcing sluice.write_forcing (f, struct ('time', [1 2], 'values', 1, 'names', {{'a'}}))
%!error id=sluice:write_forcing:badforcing sluice.write_forcing (f, struct ('time', 1, 'values', 1, 'names', {{'a', 'b'}}))
%!error id=sluice:write_forcing:badforcing sluice.write_forcing (f, struct ('time', 1, 'values', 1, 'names', {{'a'}}, 'units', 'mm'))
%!error id=sluice:write_forcing:badforcing sluice.write_forcing (f, struct ('time', 1, 'values', 1, 'names', {{['a'; 'b']}}))
%!error id=sluice:write_forcing:badorigin sluice.write_forcing (f, struct ('time', 1, 'values', 1, 'names', {{'a'}}, 'time_origin', '2001-02-30'))
%!error id=sluice:write_forcing:badoption sluice.write_forcing (f, struct ('time', 1, 'values', 1, 'names', {{'a'}}, 'time_origin', '2001-01-01', 'time_unit', 'weeks'))
%!error <line 1, column 2: '1a' is not a column name> sluice.write_forcing (f, struct ('time', 1, 'values', 1, 'names', {{'1a'}}))
%!error id=sluice:write_forcing:badheader sluice.write_forcing (f, struct ('time', 1, 'values', 1, 'names', {{'Date'}}))
%!error id=sluice:write_forcing:badheader sluice.write_forcing (f, struct ('time', 1, 'values', [1 2], 'names', {{'a', 'A'}}))
%!error id=sluice:write_forcing:badheader sluice.write_forcing (f, struct ('time', 1, 'values', 1, 'names', {{'a'}}, 'units', {{'m]'}}))
%!error <line 3, column time: the same time as line 2> sluice.write_forcing (f, struct ('time', [1 1], 'values', [1; 2], 'names', {{'a'}}))
%!error id=sluice:write_forcing:badorder sluice.write_forcing (f, struct ('time', [2 1], 'values', [1; 2], 'names', {{'a'}}))
%!error id=sluice:write_forcing:badtime sluice.write_forcing (f, struct ('time', NaN, 'values', 1, 'names', {{'a'}}))
%!error <line 2, column a: the value is infinite> sluice.write_forcing (f, struct ('time', 1, 'values', Inf, 'names', {{'a'}}))
%!error id=sluice:write_forcing:baddate sluice.write_forcing (f, struct ('time', 1e9, 'values', 1, 'names', {{'a'}}, 'time_origin', '2001-01-01'))
%!error id=sluice:write_forcing:badfilename sluice.write_forcing (cat (3, 'a.csv', 'b.csv'), struct ('time', 1, 'values', 1, 'names', {{'a'}}))
%!error id=sluice:write_forcing:nofile sluice.write_forcing ([tempname() '/no/such/dir.csv'], struct ('time', 1, 'values', 1, 'names', {{'a'}}))
