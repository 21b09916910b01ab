% -*- texinfo -*-
% @deftypefn  {} {@var{obs} =} sluice.read_obs (@var{filename})
% @deftypefnx {} {@var{obs} =} sluice.read_obs (@var{filename}, @var{name}, @var{value}, @dots{})
% @deftypefnx {} {[@var{obs}, @var{nmissing}, @var{info}] =} sluice.read_obs (@dots{})
% Read a long observation table from the CSV file @var{filename}.
%
% The file has a header row naming its columns, then one row per observed
% value. Required columns (in any order):
% @table @code
% @item time
% observation time: numbers in the model's own time units, or dates
% (see below); finite. Rows out of time order are sorted by time (rows
% with equal times keep their order in the file) with the warning
% @code{sluice:read_obs:sorted}.
% @item variable
% name of the observed state or parameter (text).
% @item value
% the observed value; an empty field, @code{NaN}, @code{NA}, @code{N/A} or
% @code{#N/A} marks a missing value (kept as NaN, counted in
% @var{nmissing}); infinite values are refused.
% @item sigma
% the observation error scale, in the units of @code{value}: finite and
% > 0, except on @code{poisson} and @code{binomial} rows and on rows whose
% value is missing, where it may be empty.
% @end table
% Optional columns: @code{family} (text: @code{gaussian} (default),
% @code{lognormal}, @code{student_t}, @code{poisson}, @code{binomial},
% @code{censored}), @code{n} (binomial trials), @code{dof} (Student-t
% degrees of freedom), @code{limit} (detection limit of a censored value),
% and any other column, kept under its name: numeric when every field is
% a number (or empty, NA), else text (a cellstr, fields as written).
%
% Header names are matched without regard to case (@code{Time} is
% @code{time}) and returned in lower case; a name may be followed by its
% unit in brackets, @code{value [m3/s]} or @code{value (m3/s)} (returned in
% @code{@var{info}.units}). A name is a letter followed by letters, digits
% or underscores (at most 63). Header columns without a name, fields past
% the header and lines of separators only are ignored as long as they
% hold nothing (spreadsheets write them).
%
% Fields are separated by commas, semicolons or tabs: the first of these
% that the header row holds (outside quotes and brackets) separates every
% row. With semicolons or tabs a number may have a decimal comma
% (@code{1,5}). Spaces around a field are dropped; a field may be enclosed
% in double quotes (two double quotes inside stand for one; separators and
% line breaks inside quotes are kept). Numbers are decimal
% (@code{-1.5e-3}), @code{NaN}, @code{Inf} or missing as above. Lines end
% in LF, CRLF or CR; blank lines and comment lines (first non-blank
% character @code{#} or @code{%}) are skipped anywhere, before the header
% too; UTF-8 with or without a byte order mark.
%
% Dates: the time column may hold ISO 8601 dates and date-times,
% @code{2001-03-15}, @code{2001-03-15T06:00}, @code{2001-03-15 06:00:30}
% (seconds may have a fraction), with an optional zone @code{Z} or offset
% @code{+01:00} (@code{-0500}, @code{+01}); date-times with an offset are
% converted to UTC, those without one are taken as UTC. Leap days follow
% the Gregorian calendar; leap seconds are not counted. Every row must
% then hold a date, and the option @code{origin} is required. Options:
% @table @code
% @item origin
% the date of model time 0, as ISO 8601 text (@code{'2001-01-01'}) or an
% Octave datenum. Time becomes (date - origin) in the unit below, so
% @code{2001-01-02} with origin @code{2001-01-01} is time 1.
% @item unit
% the model's time unit: @code{'days'} (default) or @code{'years'}, of
% 365.25 days each (the Julian year; a calendar year of 365 days is then
% 0.99932).
% @item time_numbers
% @code{'model'} (default): numbers in the time column are model times;
% @code{'datenum'}: they are Octave datenums, converted like dates (needs
% @code{origin}).
% @item sort
% @code{true} (default): rows out of time order are sorted with a
% warning; @code{false}: they are an error (@code{badorder}).
% @end table
%
% @var{obs} is a struct of column vectors in the order of the file's
% named columns: @code{variable}, @code{family} and other text columns are
% cellstr, every other column double. It can be passed to
% @code{sluice.filter} as it is. @var{info} describes the file:
% @code{time_form} (@code{'numbers'}, @code{'dates'} or
% @code{'datenums'}), @code{time_origin} (the origin as ISO 8601 text, or
% @code{''} when the times were numbers of the model), @code{time_unit}
% (@code{'days'}, @code{'years'}, or @code{''} likewise),
% @code{origin_datenum} (so that @code{origin_datenum + time} are datenums
% when the unit is days), @code{units} (a struct: column name -> unit
% text, for columns that gave one), @code{separator} and @code{sorted}
% (the number of rows that were out of order).
%
% Errors start with the file name, the line (physical lines of the file,
% the first being 1) and the column: @code{"obs.csv line 4, column sigma:
% ..."}, with identifiers @code{sluice:read_obs:badheader},
% @code{badnumber}, @code{badfield}, @code{badsigma}, @code{badtime},
% @code{baddate} (not a date of the calendar), @code{noorigin} (dates
% without @code{origin}), @code{badorder}, @code{badfamily},
% @code{badencoding} (UTF-16 text), @code{nofile} (the file cannot be
% opened), @code{badorigin} and @code{badoption} (the options).
% @seealso{sluice.write_obs, sluice.filter}
% @end deftypefn
function [obs, nmissing, info] = read_obs (filename, varargin)
  if (nargin < 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (~ischar (filename) || isempty (filename) || ~isrow (filename))
    error ('sluice:read_obs:badfilename', ...
           'argument 1 (filename): expected a file name (a character string)');
  end
  opts = struct ('origin', [], 'unit', 'days', 'time_numbers', 'model', 'sort', true);
  opts = sluice.internal.name_value (opts, varargin, 'read_obs');
  tm = sluice.internal.file_time (opts, 'read_obs');
  origin = tm.origin;
  unit_name = tm.unit_name;
  unit_days = tm.unit_days;
  datenums = tm.datenums;
  try
    [obs, nmissing, codes, kinfo] = sluice.kernel.obsfile ('read', filename, origin, ...
        unit_days, datenums, tm.sort);
  catch err
    % the gateway's name is an internal detail: drop Octave's prefix
    msg = regexprep (err.message, '^obsfile: ', '');
    if (strcmp (err.identifier, 'sluice:read_obs:noorigin'))
      msg = [msg '; give it as sluice.read_obs (file, ''origin'', ''YYYY-MM-DD'')'];
    end
    sluice.internal.raise_again (err.identifier, 'sluice:read_obs:failed', msg);
  end
  % text columns come as their distinct texts and each row's index
  names = fieldnames (codes);
  for k = 1:numel (names)
    distinct = obs.(names{k});
    obs.(names{k}) = distinct(codes.(names{k}));
  end
  if (kinfo.unsorted > 0)
    warning ('sluice:read_obs:sorted', ...
             '%s: %d rows were out of time order (the first on line %d); sorted by time, rows with equal times kept in the file''s order', ...
             filename, kinfo.unsorted, kinfo.unsorted_line);
  end
  if (nargout > 2)
    info = struct ('time_form', kinfo.time_form, 'time_origin', kinfo.time_origin, ...
                   'time_unit', '', 'origin_datenum', kinfo.origin_datenum, ...
                   'units', kinfo.units, 'separator', kinfo.separator, ...
                   'sorted', kinfo.unsorted);
    if (~strcmp (kinfo.time_form, 'numbers'))
      info.time_unit = unit_name;
    else
      info.time_origin = '';
    end
  end
end

%!function f = csvfile (txt)
%!  f = [tempname() '.csv'];
%!  fid = fopen (f, 'w'); fwrite (fid, txt); fclose (fid);
%!endfunction

%!test
%! f = csvfile (sprintf ('time,variable,value,sigma\n0,h,1.5,0.1\n1,h,,0.1\n2,q,NaN,0.2\n'));
%! [obs, nm] = sluice.read_obs (f);
%! delete (f);
%! assert (fieldnames (obs), {'time'; 'variable'; 'value'; 'sigma'});
%! assert (obs.time, [0; 1; 2]);
%! assert (obs.variable, {'h'; 'h'; 'q'});
%! assert (obs.value, [1.5; NaN; NaN]);
%! assert (obs.sigma, [0.1; 0.1; 0.2]);
%! assert (nm, 2);

%!test
%! % any column order, optional columns, quotes, CRLF, a BOM, blank lines
%! txt = [char([239 187 191]) 'value, time ,variable,sigma,family,n,site' char([13 10]) ...
%!        char([13 10]) '3,0,"a,""b""",,poisson,,7' char([13 10]) ...
%!        '2,1.5,b,,binomial,10,8' char([13 10])];
%! f = csvfile (txt);
%! obs = sluice.read_obs (f);
%! delete (f);
%! assert (fieldnames (obs), {'value'; 'time'; 'variable'; 'sigma'; 'family'; 'n'; 'site'});
%! assert (obs.variable, {'a,"b"'; 'b'});
%! assert (obs.family, {'poisson'; 'binomial'});
%! assert (obs.n, [NaN; 10]);
%! assert (obs.site, [7; 8]);
%! assert (obs.sigma, [NaN; NaN]);

%!test
%! % a header alone: an empty table
%! f = csvfile (sprintf ('time,variable,value,sigma\n'));
%! obs = sluice.read_obs (f);
%! delete (f);
%! assert (size (obs.time), [0 1]);
%! assert (iscell (obs.variable) && isempty (obs.variable));

%!error <Invalid call> sluice.read_obs ()
%!error id=sluice:read_obs:badfilename sluice.read_obs (3)
%!error id=sluice:read_obs:badfilename sluice.read_obs ('')
%!error id=sluice:read_obs:badfilename sluice.read_obs (cat (3, 'a.csv', 'b.csv'))
%!error id=sluice:read_obs:nofile sluice.read_obs ([tempname() '.csv'])
%!test
%! f = csvfile (sprintf ('time,variable,value\n0,h,1\n'));
%! try
%!   sluice.read_obs (f); ok = false;
%! catch e
%!   ok = strcmp (e.identifier, 'sluice:read_obs:badheader') && ...
%!        ~isempty (strfind (e.message, [f ' line 1, column sigma']));
%! end
%! delete (f);
%! assert (ok);
%!test
%! f = csvfile (sprintf ('time,variable,value,sigma\n0,h,1,0.1\n1,h,x1,0.1\n'));
%! try
%!   sluice.read_obs (f); ok = false;
%! catch e
%!   ok = strcmp (e.identifier, 'sluice:read_obs:badnumber') && ...
%!        ~isempty (strfind (e.message, [f ' line 3, column value']));
%! end
%! delete (f);
%! assert (ok);
