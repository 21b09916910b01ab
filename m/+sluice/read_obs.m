% -*- texinfo -*-
% @deftypefn  {} {@var{obs} =} sluice.read_obs (@var{filename})
% @deftypefnx {} {[@var{obs}, @var{nmissing}] =} sluice.read_obs (@var{filename})
% Read a long observation table from the CSV file @var{filename}.
%
% The file has a header row naming its columns, then one row per observed
% value. Required columns (in any order, names case-sensitive):
% @table @code
% @item time
% observation time, in the model's own time units; finite, rows in
% non-decreasing time order.
% @item variable
% name of the observed state or parameter (text).
% @item value
% the observed value; an empty field or @code{NaN} marks a missing value
% (kept as NaN, counted in @var{nmissing}); infinite values are refused.
% @item sigma
% the observation error scale, in the units of @code{value}: finite and
% > 0, except on @code{poisson} and @code{binomial} rows, where it is
% unused and may be empty.
% @end table
% Optional columns: @code{family} (text: @code{gaussian} (default),
% @code{lognormal}, @code{student_t}, @code{poisson}, @code{binomial},
% @code{censored}), @code{n} (binomial trials), @code{dof} (Student-t
% degrees of freedom), @code{limit} (detection limit of a censored value),
% and any other numeric column, kept under its name. A column name is a
% letter followed by letters, digits or underscores (at most 63).
%
% Fields are separated by commas; spaces around a field are dropped; a
% field may be enclosed in double quotes (two double quotes inside stand
% for one; commas and line breaks inside quotes are kept). Numbers are
% decimal (@code{-1.5e-3}), @code{NaN}, @code{Inf} or empty (= NaN). Lines
% end in LF or CRLF; blank lines are skipped; a UTF-8 byte order mark is
% allowed.
%
% @var{obs} is a struct of column vectors in the order of the file's
% columns: @code{variable} and @code{family} are cellstr, every other
% column double. It can be passed to @code{sluice.filter} as it is.
% Errors name the file, the line (the header is line 1) and the column:
% @code{"obs.csv line 4, column sigma: ..."}, with identifiers
% @code{sluice:read_obs:badheader}, @code{badnumber}, @code{badfield},
% @code{badsigma}, @code{badtime}, @code{badorder}, @code{badfamily} and
% @code{nofile} (the file cannot be opened).
% @seealso{sluice.write_obs, sluice.filter}
% @end deftypefn
function [obs, nmissing] = read_obs (filename)
  if (nargin ~= 1)
    sluice.kernel.compat ('usage', mfilename ());
  end
  if (~ischar (filename) || isempty (filename) || size (filename, 1) ~= 1)
    error ('sluice:read_obs:badfilename', ...
           'argument 1 (filename): expected a file name (a character string)');
  end
  [obs, nmissing] = sluice.kernel.obsfile ('read', filename);
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
