% Observation files as spreadsheets leave them: each of the twelve common
% edits of a plain file reads back to the plain file's table; dates checked
% against Octave's datenum and hand-computed leap-year and offset cases;
% every refusal names the file and the line.

%!function f = csvfile (txt)
%!  f = [tempname() '.csv'];
%!  fid = fopen (f, 'w'); fwrite (fid, txt); fclose (fid);
%!endfunction

%!function [obs, nm, info, wid, wmsg] = read_text (txt, varargin)
%!  f = csvfile (txt);
%!  lastwarn ('', '');
%!  unwind_protect
%!    % evalc keeps the warning off the test log; lastwarn still has it
%!    evalc ('[obs, nm, info] = sluice.read_obs (f, varargin{:});');
%!    [wmsg, wid] = lastwarn ();
%!    wmsg = strrep (wmsg, f, '<file>');
%!  unwind_protect_cleanup
%!    delete (f);
%!  end_unwind_protect
%!endfunction

%!function refused (txt, id, where, varargin)
%!  % the identifier, and a message that starts with the file and the line
%!  f = csvfile (txt);
%!  try
%!    sluice.read_obs (f, varargin{:});
%!    msg = ''; eid = '';
%!  catch e
%!    msg = e.message; eid = e.identifier;
%!  end
%!  delete (f);
%!  assert (eid, id);
%!  assert (strncmp (msg, [f ' ' where], numel (f) + 1 + numel (where)), msg);
%!endfunction

%!shared plain
%! plain = struct ('time', [0; 1; 2], 'variable', {{'h'; 'h'; 'q'}}, ...
%!                 'value', [1.5; NaN; 2.5], 'sigma', [0.1; 0.1; 0.2]);

%!test
%! % the plain file itself
%! [obs, nm, info] = read_text (sprintf ('time,variable,value,sigma\n0,h,1.5,0.1\n1,h,NaN,0.1\n2,q,2.5,0.2\n'));
%! assert (isequaln (obs, plain));
%! assert (nm, 1);
%! assert (info.time_form, 'numbers');
%! assert (info.time_origin, '');
%! assert (info.time_unit, '');
%! assert (info.separator, ',');
%! assert (info.sorted, 0);

%!test
%! % each edit a user makes in a spreadsheet (issue 14's list) reads back to
%! % the plain table
%! crlf = char ([13 10]);
%! edits = { ...
%!   'dates', sprintf('time,variable,value,sigma\n2001-01-01,h,1.5,0.1\n2001-01-02,h,NaN,0.1\n2001-01-03T00:00Z,q,2.5,0.2\n'), {'origin', '2001-01-01'};
%!   'datenums', sprintf('time,variable,value,sigma\n730852,h,1.5,0.1\n730853,h,NaN,0.1\n730854,q,2.5,0.2\n'), {'origin', '2001-01-01', 'time_numbers', 'datenum'};
%!   'comment lines', sprintf('# Lowmarsh gauge, read by hand\ntime,variable,value,sigma\n0,h,1.5,0.1\n%% checked 2024-05-02\n1,h,NaN,0.1\n  # again\n2,q,2.5,0.2\n'), {};
%!   'Time capitalised', sprintf('Time,Variable,VALUE,Sigma\n0,h,1.5,0.1\n1,h,NaN,0.1\n2,q,2.5,0.2\n'), {};
%!   'units in the header', sprintf('time [d],variable,value [m3/s],sigma (m3/s)\n0,h,1.5,0.1\n1,h,NaN,0.1\n2,q,2.5,0.2\n'), {};
%!   'trailing empty columns', sprintf('time,variable,value,sigma,,,\n0,h,1.5,0.1,,,\n1,h,NaN,0.1,,,\n2,q,2.5,0.2,,,\n,,,,,,\n'), {};
%!   'NA', sprintf('time,variable,value,sigma\n0,h,1.5,0.1\n1,h,NA,0.1\n2,q,2.5,0.2\n'), {};
%!   'semicolons, decimal commas', sprintf('time;variable;value;sigma\n0;h;1,5;0,1\n1;h;;0,1\n2;q;2,5;0,2\n'), {};
%!   'tabs', sprintf('time\tvariable\tvalue\tsigma\n0\th\t1.5\t0.1\n1\th\t\t0.1\n2\tq\t2.5\t0.2\n'), {};
%!   'unsorted rows', sprintf('time,variable,value,sigma\n2,q,2.5,0.2\n0,h,1.5,0.1\n1,h,NaN,0.1\n'), {};
%!   'CRLF and a BOM', [char([239 187 191]) 'time,variable,value,sigma' crlf '0,h,1.5,0.1' crlf '1,h,#N/A,0.1' crlf '2,q,2.5,0.2' crlf], {}};
%! for k = 1:size (edits, 1)
%!   obs = read_text (edits{k, 2}, edits{k, 3}{:});
%!   assert (isequaln (obs, plain), ['edit: ' edits{k, 1}]);
%! end

%!test
%! % blank sigma on the missing row: NaN there, the rest as the plain table
%! obs = read_text (sprintf ('time,variable,value,sigma\n0,h,1.5,0.1\n1,h,,\n2,q,2.5,0.2\n'));
%! want = plain; want.sigma(2) = NaN;
%! assert (isequaln (obs, want));

%!test
%! % an extra text column is kept as cellstr, an extra numeric one as double
%! obs = read_text (sprintf ('time,variable,value,sigma,site,depth\n0,h,1.5,0.1,Vell bridge,2\n1,h,NaN,0.1,7,NA\n2,q,2.5,0.2,Vell bridge,3.5\n'));
%! assert (obs.site, {'Vell bridge'; '7'; 'Vell bridge'});
%! assert (obs.depth, [2; NaN; 3.5]);
%! assert (isequaln (rmfield (obs, {'site', 'depth'}), plain));

%!test
%! % a header in another order: the same columns in the file's order
%! obs = read_text (sprintf ('sigma,value,variable,time\n0.1,1.5,h,0\n0.1,NaN,h,1\n0.2,2.5,q,2\n'));
%! assert (fieldnames (obs), {'sigma'; 'value'; 'variable'; 'time'});
%! assert (isequaln (orderfields (obs, plain), plain));

%!test
%! % all edits at once, a column of site names among them
%! txt = [char([239 187 191]) sprintf(['# station list: Lowmarsh\r\n' ...
%!        'Site;Sigma (m3/s);Value [m3/s];Variable;TIME;;\r\n' ...
%!        'Vell bridge;0,2;2,5;q;2001-01-03;;\r\n' ...
%!        'Vell bridge;0,1;1,5;h;2001-01-01T01:00+01:00;;\r\n' ...
%!        'Mill weir;;NA;h;2001-01-02;;\r\n;;;;;;\r\n'])];
%! [obs, nm, info, wid, wmsg] = read_text (txt, 'origin', '2001-01-01');
%! assert (obs.site, {'Vell bridge'; 'Mill weir'; 'Vell bridge'});
%! assert (obs.time, [0; 1; 2]);
%! assert (obs.value, [1.5; NaN; 2.5]);
%! assert (obs.sigma, [0.1; NaN; 0.2]);
%! assert (obs.variable, {'h'; 'h'; 'q'});
%! assert (nm, 1);
%! assert (info.units, struct ('sigma', 'm3/s', 'value', 'm3/s'));
%! assert (info.separator, ';');
%! assert (info.time_form, 'dates');
%! assert (info.time_origin, '2001-01-01');
%! assert (info.time_unit, 'days');
%! assert (info.origin_datenum, datenum (2001, 1, 1));
%! assert (info.sorted, 1);
%! assert (wid, 'sluice:read_obs:sorted');
%! assert (wmsg, '<file>: 1 rows were out of time order (the first on line 4); sorted by time, rows with equal times kept in the file''s order');

%!test
%! % unsorted rows: a stable sort by time and a warning naming the file
%! % and the first line out of order
%! txt = sprintf ('time,variable,value,sigma,k\n2,a,1,1,1\n1,b,1,1,2\n2,c,1,1,3\n0,d,1,1,4\n1,e,1,1,5\n');
%! f = csvfile (txt);
%! lastwarn ('', '');
%! evalc ('obs = sluice.read_obs (f);');
%! [msg, id] = lastwarn ();
%! delete (f);
%! assert (obs.k, [4; 2; 5; 1; 3]);
%! assert (obs.variable, {'d'; 'b'; 'e'; 'a'; 'c'});
%! assert (id, 'sluice:read_obs:sorted');
%! assert (strncmp (msg, [f ': 2 rows were out of time order (the first on line 3)'], numel (f) + 50));

%!test
%! % dates against Octave's datenum: 2000 random instants of 1899-2101
%! % (across 1900 and 2100, not leap years, and 2000, one) with times of
%! % day, read against the origin 1950-01-01 in days
%! rand ('seed', 11);
%! n = 2000;
%! dn = datenum (1899, 1, 1) + floor (rand (n, 1) * (datenum (2102, 1, 1) - datenum (1899, 1, 1)));
%! [y, mo, d] = datevec (dn);
%! hh = floor (rand (n, 1) * 24); mi = floor (rand (n, 1) * 60); ss = floor (rand (n, 1) * 60);
%! [~, order] = sort (datenum (y, mo, d, hh, mi, ss));
%! y = y(order); mo = mo(order); d = d(order); hh = hh(order); mi = mi(order); ss = ss(order);
%! lines = cell (n, 1);
%! for i = 1:n
%!   lines{i} = sprintf ('%04d-%02d-%02dT%02d:%02d:%02d,x,1,1\n', y(i), mo(i), d(i), hh(i), mi(i), ss(i));
%! end
%! obs = read_text (['time,variable,value,sigma' char(10) lines{:}], 'origin', '1950-01-01');
%! want = datenum (y, mo, d, hh, mi, ss) - datenum (1950, 1, 1);
%! % datenum adds the time of day as a fraction of a day: rounding of
%! % about 1e-10 days at these magnitudes; the whole days are exact
%! assert (obs.time, want, 1e-9);
%! assert (floor (obs.time + 1e-12), datenum (y, mo, d) - datenum (1950, 1, 1));

%!test
%! % hand-computed cases: leap days, years that are not leap years, offsets
%! txt = sprintf (['time,variable,value,sigma\n' ...
%!   '2000-02-28,x,1,1\n2000-02-29,x,1,1\n2000-03-01,x,1,1\n' ...   % 2000 is a leap year
%!   '2000-12-31T23:30Z,x,1,1\n2001-01-01T00:30+01:00,x,1,1\n' ...   % the same instant
%!   '2001-01-01T06:00-06:00,x,1,1\n' ...                             % 12:00 UTC
%!   '2001-03-01,x,1,1\n']);                                          % 2001 is not
%! obs = read_text (txt, 'origin', '2000-02-28');
%! assert (obs.time, [0; 1; 2; 308 - 1/48; 308 - 1/48; 308.5; 367]);
%! % 1900 and 2100: February has 28 days (the Gregorian rule)
%! obs = read_text (sprintf ('time,variable,value,sigma\n1900-02-28,x,1,1\n1900-03-01,x,1,1\n2100-02-28,x,1,1\n2100-03-01,x,1,1\n'), ...
%!                  'origin', '1900-01-01');
%! % 200 years hold 49 leap days (1904 ... 2096, 2000 among them)
%! assert (obs.time, [58; 59; 73049 + 58; 73049 + 59]);
%! assert (obs.time(3), datenum (2100, 2, 28) - datenum (1900, 1, 1));
%! refused (sprintf ('time,variable,value,sigma\n1900-02-29,x,1,1\n'), 'sluice:read_obs:baddate', ...
%!          'line 2, column time: ''1900-02-29'' is not a date: February 1900 has 28 days', 'origin', '1900-01-01');
%! refused (sprintf ('time,variable,value,sigma\n2100-02-29,x,1,1\n'), 'sluice:read_obs:baddate', ...
%!          'line 2, column time', 'origin', '1900-01-01');

%!test
%! % years of 365.25 days; an origin given as a datenum or a date-time
%! txt = sprintf ('time,variable,value,sigma\n2000-01-01,x,1,1\n2000-07-02T12:00,x,1,1\n2004-01-01,x,1,1\n');
%! [obs, ~, info] = read_text (txt, 'origin', datenum (2000, 1, 1), 'unit', 'years');
%! assert (obs.time, [0; 183.5 / 365.25; 1461 / 365.25]);
%! assert (info.time_unit, 'years');
%! assert (info.time_origin, '2000-01-01');
%! [obs, ~, info] = read_text (txt, 'origin', '1999-12-31T12:00');
%! assert (obs.time, [0.5; 184; 1461.5]);
%! assert (info.time_origin, '1999-12-31T12:00:00Z');
%! % numbers with an origin stay model times
%! [obs, ~, info] = read_text (sprintf ('time,variable,value,sigma\n3,x,1,1\n'), 'origin', '2000-01-01');
%! assert (obs.time, 3);
%! assert (info.time_origin, '');

%!test
%! % a filter run on a file with a blank sigma on its missing row gives
%! % what the plain table gives (the missing row is skipped either way)
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = read_text (sprintf ('time,variable,value,sigma\n1,x,1,1\n2,x,,\n3,x,0,1\n'));
%! direct = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, ...
%!                  'value', [1; NaN; 0], 'sigma', [1; 1; 1]);
%! r1 = sluice.filter (spec, pr, obs, 'members', 500, 'seed', 3, 't0', 0);
%! r2 = sluice.filter (spec, pr, direct, 'members', 500, 'seed', 3, 't0', 0);
%! assert (r1.states.mean, r2.states.mean);
%! assert (r1.skipped_total, 1);

%!test
%! % every refusal: its identifier, and the file and line first in the message
%! h = sprintf ('time,variable,value,sigma\n');
%! refused ([h sprintf('2001-01-01,x,1,1\n')], 'sluice:read_obs:noorigin', ...
%!          'line 2, column time: the times are dates (''2001-01-01''), but no origin');
%! refused ([h sprintf('2001-01-01,x,1,1\n2001-13-01,x,1,1\n')], 'sluice:read_obs:baddate', ...
%!          'line 3, column time: ''2001-13-01'' is not a date: month 13', 'origin', '2001-01-01');
%! refused ([h sprintf('2001-01-01,x,1,1\n# note\n3,x,1,1\n')], 'sluice:read_obs:badtime', ...
%!          'line 4, column time: ''3'' is a number, but line 2 holds a date', 'origin', '2001-01-01');
%! refused ([h sprintf('15/03/2001,x,1,1\n')], 'sluice:read_obs:badnumber', ...
%!          'line 2, column time: ''15/03/2001'' is not a number or a date', 'origin', '2001-01-01');
%! refused ([h sprintf('0,x,1,1\n,x,1,1\n')], 'sluice:read_obs:badtime', ...
%!          'line 3, column time: the time is missing');
%! refused ([h sprintf('0.5,x,1,1\n')], 'sluice:read_obs:baddate', ...
%!          'line 2, column time: the day number 0.5', 'origin', '2001-01-01', 'time_numbers', 'datenum');
%! refused (sprintf ('time,variable,value,sigma,\n0,x,1,1,note\n'), 'sluice:read_obs:badfield', ...
%!          'line 2, column 5: ''note'' stands in a column without a name');
%! refused ([h sprintf('0,x,1,1,,7\n')], 'sluice:read_obs:badfield', 'line 2, column 6');
%! refused (sprintf ('time,variable,value [m3/s,sigma\n'), 'sluice:read_obs:badheader', ...
%!          'line 1, column 3: ''value [m3/s'': the unit''s bracket is never closed');
%! refused (sprintf ('time,variable,value [m3/s] daily,sigma\n'), 'sluice:read_obs:badheader', ...
%!          'line 1, column 3');
%! refused (sprintf ('time,variable,[m3/s],sigma\n'), 'sluice:read_obs:badheader', ...
%!          'line 1, column 3: the unit ''[m3/s]'' has no column name');
%! refused (sprintf ('Time,variable,value,sigma,TIME\n'), 'sluice:read_obs:badheader', ...
%!          'line 1, column TIME: the name appears twice (columns 1 and 5)');
%! refused (sprintf ('time,variable,value,sigma,gauge id\n'), 'sluice:read_obs:badheader', ...
%!          'line 1, column 5: ''gauge id'' is not a column name');
%! refused ([h sprintf('0,x,1,\n')], 'sluice:read_obs:badsigma', 'line 2, column sigma');
%! refused (sprintf ('time;variable;value;sigma\n0;x;1,2,3;1\n'), 'sluice:read_obs:badnumber', ...
%!          'line 2, column value: ''1,2,3'' is not a number');
%! refused (sprintf ('time,variable,value,sigma,n\n0,x,1,1,ten\n'), 'sluice:read_obs:badnumber', ...
%!          'line 2, column n');
%! refused ([char([255 254]) 't' char(0)], 'sluice:read_obs:badencoding', ...
%!          'line 1: the file is UTF-16 text; save it as UTF-8');
%! refused (sprintf ('# an empty sheet\n;;;\n'), 'sluice:read_obs:badheader', 'line 3: no header row');
%! refused ([h sprintf('1,x,1,1\n0,x,1,1\n')], 'sluice:read_obs:badorder', 'line 3, column time', 'sort', false);

%!test
%! % the missing origin: the message says how to give it
%! f = csvfile (sprintf ('time,variable,value,sigma\n2001-01-01,x,1,1\n'));
%! try
%!   sluice.read_obs (f); msg = '';
%! catch e
%!   msg = e.message;
%! end
%! delete (f);
%! assert (~isempty (strfind (msg, 'give it as sluice.read_obs (file, ''origin'', ''YYYY-MM-DD'')')), msg);
%! assert (isempty (strfind (msg, 'obsfile')), msg);

%!error id=sluice:read_obs:badorigin sluice.read_obs ('x.csv', 'origin', '2001-02-30')
%!error <option 'origin': '2001-02-30' is not a date: February 2001 has 28 days> sluice.read_obs ('x.csv', 'origin', '2001-02-30')
%!error id=sluice:read_obs:badorigin sluice.read_obs ('x.csv', 'origin', {'2001-01-01'})
%!error id=sluice:read_obs:badorigin sluice.read_obs ('x.csv', 'origin', NaN)
%!error id=sluice:read_obs:badorigin sluice.read_obs ('x.csv', 'origin', -5)
%!error id=sluice:read_obs:badorigin sluice.read_obs ('x.csv', 'origin', int32 (730000))
%!error id=sluice:read_obs:badoption sluice.read_obs ('x.csv', 'unit', 'hours')
%!error id=sluice:read_obs:badoption sluice.read_obs ('x.csv', 'unit', 3)
%!error id=sluice:read_obs:badoption sluice.read_obs ('x.csv', 'time_numbers', 'excel')
%!error id=sluice:read_obs:noorigin sluice.read_obs ('x.csv', 'time_numbers', 'datenum')
%!error id=sluice:read_obs:badoption sluice.read_obs ('x.csv', 'sort', 'yes')
%!error id=sluice:read_obs:badoption sluice.read_obs ('x.csv', 'sort', [true true])
%!error id=sluice:read_obs:badoption sluice.read_obs ('x.csv', 'sorted', true)
%!error id=sluice:read_obs:badoption sluice.read_obs ('x.csv', 'origin')

%!test
%! % the kernel's option arguments (what a power user may pass)
%! f = csvfile (sprintf ('time,variable,value,sigma\n0,x,1,1\n'));
%! bad = {{'read', f, [], 1, false}, {'read', f, [], 0, false, true}, ...
%!        {'read', f, [], NaN, false, true}, {'read', f, [], 1, 2, true}, ...
%!        {'read', f, [], 1, false, 'yes'}, {'read', f, {1}, 1, false, true}, ...
%!        {'read', f, 'x', 1, false, true}, {'read', f, 1e9, 1, false, true}};
%! ids = {'sluice:read_obs:nargin', 'sluice:read_obs:badoption', 'sluice:read_obs:nonfinite', ...
%!        'sluice:read_obs:badoption', 'sluice:read_obs:badoption', 'sluice:read_obs:badorigin', ...
%!        'sluice:read_obs:badorigin', 'sluice:read_obs:badorigin'};
%! for k = 1:numel (bad)
%!   try
%!     sluice.kernel.obsfile (bad{k}{:});
%!     eid = '';
%!   catch e
%!     eid = e.identifier;
%!   end
%!   assert (eid, ids{k});
%! end
%! [t, nm, codes, info] = sluice.kernel.obsfile ('read', f, '2001-01-01', 1, false, true);
%! delete (f);
%! assert (t.variable, {'x'});
%! assert (codes.variable, 1);
%! assert (info.time_form, 'numbers');
