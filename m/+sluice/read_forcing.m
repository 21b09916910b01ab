% -*- texinfo -*-
% @deftypefn  {} {@var{forcing} =} sluice.read_forcing (@var{filename})
% @deftypefnx {} {@var{forcing} =} sluice.read_forcing (@var{filename}, @var{name}, @var{value}, @dots{})
% @deftypefnx {} {[@var{forcing}, @var{info}] =} sluice.read_forcing (@dots{})
% Read forcing series (rain, evaporation, inflow ...) from a CSV file.
%
% The file is wide: a header row, then one row per time. One column holds
% the time and is named @code{time} or @code{date}; every other column is
% one series, named by its header (a letter followed by letters, digits or
% underscores, matched without regard to case and returned in lower case),
% optionally followed by its unit in brackets: @code{P [mm/d]} or
% @code{E (mm/d)}. For example
% @example
% date,P [mm/d],E [mm/d]
% 2001-01-01,0,0.8
% 2001-01-02,12.5,0.6
% @end example
%
% The text forms are those of @code{sluice.read_obs}: commas, semicolons
% or tabs (detected from the header; with semicolons or tabs a decimal
% comma), quotes, comment lines (@code{#}, @code{%}), blank lines, LF,
% CRLF or CR line ends, a UTF-8 byte order mark, header columns without a
% name that hold nothing. Times are numbers in the model's time units, or
% ISO 8601 dates and date-times (@code{2001-03-15}, @code{2001-03-15T06:00},
% with an optional zone @code{Z} or offset @code{+01:00}) or Octave
% datenums, which need @code{origin}, exactly as for @code{sluice.read_obs}.
%
% Every value must be a number: text in a series is refused with its line
% and column (@code{badnumber}), infinite values too. A missing value
% (an empty field, @code{NA}, @code{N/A}, @code{#N/A}, @code{NaN}) is
% refused unless the option @code{missing} says how to fill it. Every time
% must appear once (@code{duptime} names both lines). Rows out of time
% order are sorted with the warning @code{sluice:read_forcing:sorted}.
%
% Options:
% @table @code
% @item origin
% the date of model time 0 (ISO 8601 text or an Octave datenum); required
% when the times are dates or datenums. The forcing then carries it, and
% @code{sluice.filter} refuses to run it against another @code{origin}.
% @item unit
% the model's time unit: @code{'days'} (default) or @code{'years'} (of
% 365.25 days).
% @item time_numbers
% @code{'model'} (default): numbers in the time column are model times;
% @code{'datenum'}: they are Octave datenums (needs @code{origin}).
% @item sort
% @code{true} (default): rows out of order are sorted with a warning;
% @code{false}: they are an error (@code{badorder}).
% @item missing
% what a missing value becomes: @code{'error'} (default: refused, naming
% the line and the column), @code{'interpolate'} (linear in time between
% the nearest earlier and later values of the same series; a gap at the
% start or the end of a series is still refused) or @code{'zero'}.
% Interpolation suits smooth series: temperature, potential
% evapotranspiration, a river's inflow. For rain it spreads a storm over
% the gap; fill rain with @code{'zero'} only where a blank in the record
% means that no rain fell, and otherwise complete the file from a
% neighbouring gauge. @code{@var{info}.filled} counts what was filled.
% @item interp
% how the run reads the forcing between its times, stored in
% @code{@var{forcing}.interp}: @code{'linear'} (default) or
% @code{'previous'} (each value holds until the next time: totals per
% interval, such as daily rain).
% @end table
%
% @var{forcing} is a struct that @code{sluice.filter},
% @code{sluice.simulate}, @code{sluice.twin} (as @code{truth.forcing}),
% @code{sluice.propagate} and @code{sluice.esmda} take as their forcing:
% @code{time} (m x 1, increasing), @code{values} (m x q, one column per
% series in the file's order), @code{names} and @code{units} (1 x q
% cellstr; @code{''} where no unit was given), @code{interp},
% @code{time_origin} (the origin as ISO 8601 text, or @code{''} when the
% times were model times) and @code{time_unit} (@code{'days'},
% @code{'years'}, or @code{''} likewise). A run matches the series to the
% model's forcings by name without regard to case (@code{p} feeds the
% forcing @code{P}), in any order; series the model does not use are left
% aside, and a forcing of the model without a series is an error
% (@code{sluice:filter:noforcing}). Rename series with
% @code{forcing.names = @{'P', 'E'@}} where the file's names differ from
% the model's.
%
% @var{info}: @code{time_form} (@code{'numbers'}, @code{'dates'} or
% @code{'datenums'}), @code{time_origin}, @code{time_unit},
% @code{origin_datenum}, @code{separator}, @code{sorted} (rows that were
% out of order), @code{missing} (missing cells in the file) and
% @code{filled} (1 x q, cells filled per series).
%
% Errors start with the file name, the line and the column
% (@code{"rain.csv line 5, column p: the value is missing ('NA')"}), with
% identifiers @code{sluice:read_forcing:missing}, @code{badnumber},
% @code{badtime}, @code{duptime}, @code{badorder}, @code{baddate},
% @code{noorigin}, @code{badheader} (no time column, two time columns, no
% series, a bad name), @code{badfield}, @code{empty} (no rows),
% @code{badencoding}, @code{nofile}, @code{badorigin} and
% @code{badoption}.
% @seealso{sluice.write_forcing, sluice.read_obs, sluice.filter}
% @end deftypefn
function [forcing, info] = read_forcing (filename, varargin)
  if (nargin < 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (~ischar (filename) || isempty (filename) || ~isrow (filename))
    error ('sluice:read_forcing:badfilename', ...
           'argument 1 (filename): expected a file name (a character string)');
  end
  opts = struct ('origin', [], 'unit', 'days', 'time_numbers', 'model', 'sort', true, ...
                 'missing', 'error', 'interp', 'linear');
  opts = sluice.internal.name_value (opts, varargin, 'read_forcing');
  tm = sluice.internal.file_time (opts, 'read_forcing');
  origin = tm.origin;
  unit_name = tm.unit_name;
  unit_days = tm.unit_days;
  datenums = tm.datenums;
  fills = {'error', 'interpolate', 'zero'};
  if (~ischar (opts.missing) || ~isrow (opts.missing) || ~any (strcmpi (opts.missing, fills)))
    error ('sluice:read_forcing:badoption', ...
           'option ''missing'': expected ''error'', ''interpolate'' or ''zero''');
  end
  interps = {'linear', 'previous'};
  if (~ischar (opts.interp) || ~any (strcmp (opts.interp, interps)))
    error ('sluice:read_forcing:badoption', ...
           'option ''interp'': expected ''linear'' or ''previous''');
  end
  try
    [tab, kinfo] = sluice.kernel.obsfile ('series', filename, origin, unit_days, ...
                                          datenums, tm.sort, lower (opts.missing));
  catch err
    % the gateway's name is an internal detail: drop Octave's prefix
    msg = regexprep (err.message, '^obsfile: ', '');
    switch (err.identifier)
      case 'sluice:read_forcing:noorigin'
        msg = [msg '; give it as sluice.read_forcing (file, ''origin'', ''YYYY-MM-DD'')'];
      case 'sluice:read_forcing:missing'
        msg = [msg '; complete the file, or fill gaps with the option ''missing'' ' ...
               '(''interpolate'' or ''zero'')'];
    end
    sluice.internal.raise_again (err.identifier, 'sluice:read_forcing:failed', msg);
  end
  if (kinfo.unsorted > 0)
    warning ('sluice:read_forcing:sorted', ...
             '%s: %d rows were out of time order (the first on line %d); sorted by time', ...
             filename, kinfo.unsorted, kinfo.unsorted_line);
  end
  dated = ~strcmp (kinfo.time_form, 'numbers');
  time_unit = '';
  if (dated)
    time_unit = unit_name;
  end
  forcing = struct ('time', tab.time, 'values', tab.values, 'names', {tab.names}, ...
                    'units', {tab.units}, 'interp', opts.interp, ...
                    'time_origin', kinfo.time_origin, 'time_unit', time_unit);
  if (nargout > 1)
    info = struct ('time_form', kinfo.time_form, 'time_origin', kinfo.time_origin, ...
                   'time_unit', time_unit, 'origin_datenum', kinfo.origin_datenum, ...
                   'separator', kinfo.separator, 'sorted', kinfo.unsorted, ...
                   'missing', kinfo.nmissing, 'filled', kinfo.filled);
  end
end

%!function f = csvfile (txt)
%!  f = [tempname() '.csv'];
%!  fid = fopen (f, 'w'); fwrite (fid, txt); fclose (fid);
%!endfunction

%!test
%! f = csvfile (sprintf ('date,P [mm/d],E [mm/d]\n2001-01-01,0,0.8\n2001-01-02,12.5,0.6\n2001-01-03,3,0.7\n'));
%! [fo, info] = sluice.read_forcing (f, 'origin', '2001-01-01', 'interp', 'previous');
%! delete (f);
%! assert (fo.time, [0; 1; 2]);
%! assert (fo.values, [0 0.8; 12.5 0.6; 3 0.7]);
%! assert (fo.names, {'p', 'e'});
%! assert (fo.units, {'mm/d', 'mm/d'});
%! assert (fo.interp, 'previous');
%! assert (fo.time_origin, '2001-01-01');
%! assert (fo.time_unit, 'days');
%! % the origin's day number against Octave's datenum
%! assert (info.origin_datenum, datenum (2001, 1, 1));
%! assert (info.time_form, 'dates');
%! assert (info.filled, [0 0]);

%!test
%! % model times; a gap filled by interpolation in time (an exact line)
%! f = csvfile (sprintf ('time,inflow\n0,1\n1,NA\n4,5\n'));
%! [fo, info] = sluice.read_forcing (f, 'missing', 'interpolate');
%! delete (f);
%! assert (fo.values, [1; 2; 5]);
%! assert (fo.time_origin, '');
%! assert (fo.time_unit, '');
%! assert (info.filled, 1);

%!error <Invalid call> sluice.read_forcing ()
%!error id=sluice:read_forcing:badfilename sluice.read_forcing (3)
%!error id=sluice:read_forcing:nofile sluice.read_forcing ([tempname() '.csv'])
%!error id=sluice:read_forcing:badoption sluice.read_forcing ('x.csv', 'missing', 'mean')
%!error id=sluice:read_forcing:badoption sluice.read_forcing ('x.csv', 'missing', 1)
%!error id=sluice:read_forcing:badoption sluice.read_forcing ('x.csv', 'interp', 'spline')
%!error id=sluice:read_forcing:badoption sluice.read_forcing ('x.csv', 'unit', 'hours')
%!error id=sluice:read_forcing:badoption sluice.read_forcing ('x.csv', 'time_numbers', 'excel')
%!error id=sluice:read_forcing:badoption sluice.read_forcing ('x.csv', 'sort', 'yes')
%!error id=sluice:read_forcing:badoption sluice.read_forcing ('x.csv', 'bogus', 1)
%!error id=sluice:read_forcing:noorigin sluice.read_forcing ('x.csv', 'time_numbers', 'datenum')
%!error id=sluice:read_forcing:badorigin sluice.read_forcing ('x.csv', 'origin', {'2001-01-01'})
%!error id=sluice:read_forcing:badorigin sluice.read_forcing ('x.csv', 'origin', '2001-02-30')
%!error id=sluice:read_forcing:badfilename sluice.read_forcing (cat (3, 'a.csv', 'b.csv'))
%!error id=sluice:read_forcing:badoption sluice.read_forcing ('x.csv', 'missing', cat (3, 'zero', 'zero'))
%!test
%! f = csvfile (sprintf ('time,rain\n0,1\n1,\n'));
%! try
%!   sluice.read_forcing (f); msg = ''; id = '';
%! catch e
%!   msg = e.message; id = e.identifier;
%! end
%! delete (f);
%! assert (id, 'sluice:read_forcing:missing');
%! assert (strncmp (msg, [f ' line 3, column rain: the value is missing'], numel (f) + 42), msg);
%! assert (~isempty (strfind (msg, 'option ''missing''')), msg);
