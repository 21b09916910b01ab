% -*- texinfo -*-
% @deftypefn {} {} sluice.write_obs (@var{filename}, @var{obs})
% Write the long observation table @var{obs} to the CSV file @var{filename}.
%
% @var{obs} is a struct of column vectors as @code{sluice.filter} takes
% it: @code{time} (in the model's time units, finite, non-decreasing),
% @code{variable} (cellstr of names), @code{value} (NaN = missing) and
% @code{sigma} (in the units of @code{value}; finite and >= realmin except on
% @code{poisson} and @code{binomial} rows), optionally @code{family}
% (cellstr, or one name for every row), @code{n}, @code{dof}, @code{limit}
% and any other numeric or text (cellstr) column; names must differ in more
% than case (@code{sluice.read_obs} compares them without regard to case).
% A text column whose every entry reads as a number comes back from
% @code{sluice.read_obs} as a numeric column. The file has a header row with the field
% names in the struct's order, then one line per row; numbers are written
% with 17 significant digits (@code{%.17g}), so @code{sluice.read_obs}
% gives back the same doubles to the bit; NaN is written @code{NaN},
% infinities @code{Inf} / @code{-Inf}; text holding a comma, a double
% quote, a line break or leading or trailing blanks is quoted. See
% @code{sluice.read_obs} for the format.
%
% The table is checked before anything is written: a malformed table
% raises @code{sluice:write_obs:badobs}; bad rows raise
% @code{badtime}, @code{badorder}, @code{badsigma}, @code{badfamily},
% @code{badnumber} (infinite value) or @code{badheader} (a field name that
% is not a column name), naming the line the row would have
% (@code{"obs.csv line 3, column sigma: ..."}); a file that cannot be
% created raises @code{sluice:write_obs:nofile}.
% @seealso{sluice.read_obs, sluice.filter}
% @end deftypefn
function write_obs (filename, obs)
  if (nargin ~= 2 || nargout > 0)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (~ischar (filename) || isempty (filename) || ~isrow (filename))
    error ('sluice:write_obs:badfilename', ...
           'argument 1 (filename): expected a file name (a character string)');
  end
  tab = check_table (obs);
  sluice.kernel.obsfile ('write', filename, tab);
end

function tab = check_table (obs)
  if (~isstruct (obs) || ~isscalar (obs))
    error ('sluice:write_obs:badobs', ...
           'argument 2 (obs): expected a struct of columns time, variable, value, sigma');
  end
  need = {'time', 'variable', 'value', 'sigma'};
  for k = 1:numel (need)
    if (~isfield (obs, need{k}))
      error ('sluice:write_obs:badobs', 'the observation table has no column ''%s''', need{k});
    end
  end
  m = numel (obs.time);
  tab = struct ();
  names = fieldnames (obs);
  for k = 1:numel (names)
    nm = names{k};
    v = obs.(nm);
    known_text = any (strcmp (nm, {'variable', 'family'}));
    other_text = iscell (v) && ~any (strcmpi (nm, {'time', 'value', 'sigma', 'n', 'dof', 'limit'}));
    if (known_text || other_text)
      if (known_text && ischar (v) && (m == 1 || strcmp (nm, 'family')) && size (v, 1) <= 1)
        v = repmat ({v}, m, 1);
      end
      if (~iscellstr (v) || numel (v) ~= m || (m > 0 && ~isvector (v)))
        error ('sluice:write_obs:badobs', ...
               'observation column ''%s'' must be a cellstr with one entry per row (%d)', nm, m);
      end
      i = find (cellfun ('size', v, 1) > 1, 1);
      if (~isempty (i))
        error ('sluice:write_obs:badobs', ...
               'observation column ''%s'', row %d: expected a character string', nm, i);
      end
      tab.(nm) = v(:);
    else
      required = any (strcmp (nm, {'time', 'value', 'sigma'}));
      if (required)
        ok = isa (v, 'double');
      else
        ok = isnumeric (v);
      end
      if (~ok || ~isreal (v) || issparse (v) || (~isempty (v) && ~isvector (v)) || numel (v) ~= m)
        error ('sluice:write_obs:badobs', ...
               'observation column ''%s'' must be a real %s vector with one entry per row (%d), got %s', ...
               nm, ifelse_text (required, 'double', 'numeric'), m, class (v));
      end
      tab.(nm) = double (full (v(:)));
    end
  end
end

function s = ifelse_text (c, a, b)
  if (c)
    s = a;
  else
    s = b;
  end
end

%!shared f
%! f = [tempname() '.csv'];

%!test
%! % (a subnormal value round-trips; sigma at its floor, realmin)
%! obs = struct ('time', [0; 1; 1; 2; 3], 'variable', {{'h'; 'q'; 'h, x'; ' h'; 'h'}}, ...
%!               'value', [1.5; -0; pi; 1e308; 5e-324], ...
%!               'sigma', [0.1; 2; 1/3; realmin; 1]);
%! sluice.write_obs (f, obs);
%! back = sluice.read_obs (f);
%! delete (f);
%! assert (isequal (back, obs));
%! assert (1 / back.value(2), -Inf);

%!test
%! % family given as one name, single precision extra column, a missing value
%! obs = struct ('time', [0 1], 'variable', {{'h', 'h'}}, 'value', [1 NaN], ...
%!               'sigma', [0.5 0.5], 'family', 'gaussian', 'gauge', single ([3 4]));
%! sluice.write_obs (f, obs);
%! [back, nm] = sluice.read_obs (f);
%! delete (f);
%! assert (back.family, {'gaussian'; 'gaussian'});
%! assert (back.gauge, [3; 4]);
%! assert (nm, 1);

%!test
%! % a text column besides variable and family: written and read back
%! obs = struct ('time', [0; 1; 2], 'variable', {{'h'; 'h'; 'q'}}, 'value', [1; NaN; 2], ...
%!               'sigma', [0.1; NaN; 0.2], 'site', {{'Vell bridge'; 'weir, upper'; 'Vell bridge'}});
%! sluice.write_obs (f, obs);
%! back = sluice.read_obs (f);
%! delete (f);
%! assert (isequaln (back, obs));

%!error <Invalid call> sluice.write_obs ('x.csv')
%!error id=sluice:write_obs:badobs sluice.write_obs (f, struct ('time', 1, 'variable', 'h', 'value', 1, 'sigma', 1, 'dof', {{'4'}}))
%!error id=sluice:write_obs:badobs sluice.write_obs (f, struct ('time', 1, 'variable', 'h', 'value', 1, 'sigma', 1, 'site', {{3}}))
%!error <line 1, column Site: the name appears twice> sluice.write_obs (f, struct ('time', 1, 'variable', 'h', 'value', 1, 'sigma', 1, 'site', 1, 'Site', 2))
%!error id=sluice:write_obs:badfilename sluice.write_obs (1, struct ())
%!error id=sluice:write_obs:badobs sluice.write_obs (f, 3)
%!error id=sluice:write_obs:badobs sluice.write_obs (f, struct ('time', 1, 'variable', 'h', 'value', 1))
%!error id=sluice:write_obs:badobs sluice.write_obs (f, struct ('time', single (1), 'variable', 'h', 'value', 1, 'sigma', 1))
%!error id=sluice:write_obs:badobs sluice.write_obs (f, struct ('time', [1 2], 'variable', {{'h'}}, 'value', [1 2], 'sigma', [1 1]))
%!error id=sluice:write_obs:badobs sluice.write_obs (f, struct ('time', 1, 'variable', {{3}}, 'value', 1, 'sigma', 1))
%!error <row 2: expected a character string> sluice.write_obs (f, struct ('time', [1 2], 'variable', {{'a', ['b'; 'c']}}, 'value', [1 1], 'sigma', [1 1]))
%!error id=sluice:write_obs:badobs sluice.write_obs (f, struct ('time', 1, 'variable', 'h', 'value', 1i, 'sigma', 1))
%!error id=sluice:write_obs:badobs sluice.write_obs (f, struct ('time', 1, 'variable', 'h', 'value', 1, 'sigma', 1, 'n', true))
%!error id=sluice:write_obs:badobs sluice.write_obs (f, struct ('time', [1 2], 'variable', {{'h'; 'h'}}, 'value', [1 2], 'sigma', [1 1], 'family', {{'gaussian'}}))
%!error id=sluice:write_obs:badtime sluice.write_obs (f, struct ('time', NaN, 'variable', 'h', 'value', 1, 'sigma', 1))
%!error id=sluice:write_obs:badsigma sluice.write_obs (f, struct ('time', 1, 'variable', 'h', 'value', 1, 'sigma', 0))
%!error id=sluice:write_obs:badsigma sluice.write_obs (f, struct ('time', 1, 'variable', 'h', 'value', 1, 'sigma', 1e-320))
%!error id=sluice:write_obs:badnumber sluice.write_obs (f, struct ('time', 1, 'variable', 'h', 'value', Inf, 'sigma', 1))
%!error id=sluice:write_obs:badfamily sluice.write_obs (f, struct ('time', 1, 'variable', 'h', 'value', 1, 'sigma', 1, 'family', 'normal'))
%!error <line 3, column time> sluice.write_obs (f, struct ('time', [2 1], 'variable', {{'h', 'h'}}, 'value', [1 1], 'sigma', [1 1]))
%!error id=sluice:write_obs:badorder sluice.write_obs (f, struct ('time', [2 1], 'variable', {{'h', 'h'}}, 'value', [1 1], 'sigma', [1 1]))
%!error id=sluice:write_obs:badfilename sluice.write_obs (cat (3, 'a.csv', 'b.csv'), struct ('time', 1, 'variable', 'h', 'value', 1, 'sigma', 1))
%!error id=sluice:write_obs:nofile sluice.write_obs ([tempname() '/no/such/dir.csv'], struct ('time', 1, 'variable', 'h', 'value', 1, 'sigma', 1))
