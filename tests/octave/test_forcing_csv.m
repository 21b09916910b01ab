% Forcing files as spreadsheets leave them: every accepted form of a wide
% file reads back to the plain file's struct; dates against Octave's
% datenum; gap filling against Octave's interp1; every refusal names the
% file, the line and the column; a GR4J run fed from a dated file gives
% the bits of the same run fed the numeric struct; the run refuses a
% forcing on another calendar.

%!function f = csvfile (txt)
%!  f = [tempname() '.csv'];
%!  fid = fopen (f, 'w'); fwrite (fid, txt); fclose (fid);
%!endfunction

%!function [fo, info, wid, wmsg] = read_text (txt, varargin)
%!  f = csvfile (txt);
%!  lastwarn ('', '');
%!  unwind_protect
%!    evalc ('[fo, info] = sluice.read_forcing (f, varargin{:});');
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
%!    sluice.read_forcing (f, varargin{:});
%!    msg = ''; eid = '';
%!  catch e
%!    msg = e.message; eid = e.identifier;
%!  end
%!  delete (f);
%!  assert (eid, id);
%!  assert (strncmp (msg, [f ' ' where], numel (f) + 1 + numel (where)), msg);
%!endfunction

%!shared plain, dated
%! plain = struct ('time', [0; 1; 2], 'values', [1.5 0.2; 0 0.3; 12.25 0.4], ...
%!                 'names', {{'p', 'e'}}, 'units', {{'', ''}}, 'interp', 'linear', ...
%!                 'time_origin', '', 'time_unit', '');
%! dated = plain;
%! dated.time_origin = '2001-01-01';
%! dated.time_unit = 'days';

%!test
%! % the plain file
%! [fo, info] = read_text (sprintf ('time,p,e\n0,1.5,0.2\n1,0,0.3\n2,12.25,0.4\n'));
%! assert (isequal (fo, plain));
%! assert (info.time_form, 'numbers');
%! assert (info.separator, ',');
%! assert (info.sorted, 0);
%! assert (info.missing, 0);

%!test
%! % each edit a spreadsheet or a hand makes reads back to the plain struct
%! crlf = char ([13 10]); cr = char (13);
%! edits = { ...
%!   'comment lines', sprintf('# Lowmarsh rain gauge, invented\ntime,p,e\n0,1.5,0.2\n%% checked\n1,0,0.3\n   # again\n2,12.25,0.4\n'), {};
%!   'capitalised header', sprintf('TIME,P,E\n0,1.5,0.2\n1,0,0.3\n2,12.25,0.4\n'), {};
%!   'trailing empty columns', sprintf('time,p,e,,\n0,1.5,0.2,,\n1,0,0.3,,\n2,12.25,0.4,,\n,,,,\n'), {};
%!   'semicolons, decimal commas', sprintf('time;p;e\n0;1,5;0,2\n1;0;0,3\n2;12,25;0,4\n'), {};
%!   'tabs', sprintf('time\tp\te\n0\t1.5\t0.2\n1\t0\t0.3\n2\t12.25\t0.4\n'), {};
%!   'spaces and quotes', sprintf('time , "p" ,e\n 0 , "1.5",0.2\n1,0 , 0.3\n2,12.25,"0.4"\n'), {};
%!   'blank lines', sprintf('\ntime,p,e\n\n0,1.5,0.2\n\n1,0,0.3\n2,12.25,0.4\n\n'), {};
%!   'exponents', sprintf('time,p,e\n0e0,15e-1,2E-1\n1,0.0,3e-1\n2,1.225e1,0.4\n'), {};
%!   'CRLF and a BOM', [char([239 187 191]) 'time,p,e' crlf '0,1.5,0.2' crlf '1,0,0.3' crlf '2,12.25,0.4' crlf], {};
%!   'CR alone', ['time,p,e' cr '0,1.5,0.2' cr '1,0,0.3' cr '2,12.25,0.4'], {}};
%! for k = 1:size (edits, 1)
%!   fo = read_text (edits{k, 2}, edits{k, 3}{:});
%!   assert (isequal (fo, plain), ['edit: ' edits{k, 1}]);
%! end

%!test
%! % dated forms read back to the plain struct on the calendar of 2001-01-01
%! edits = { ...
%!   'dates', sprintf('date,p,e\n2001-01-01,1.5,0.2\n2001-01-02,0,0.3\n2001-01-03,12.25,0.4\n'), {'origin', '2001-01-01'};
%!   'date-times, zones', sprintf('Date,p,e\n2001-01-01T00:00,1.5,0.2\n2001-01-02T01:00+01:00,0,0.3\n2001-01-02 19:00-05:00,12.25,0.4\n'), {'origin', '2001-01-01'};
%!   'origin as a datenum', sprintf('time,p,e\n2001-01-01,1.5,0.2\n2001-01-02,0,0.3\n2001-01-03,12.25,0.4\n'), {'origin', datenum(2001, 1, 1)};
%!   'datenums', sprintf('time,p,e\n730852,1.5,0.2\n730853,0,0.3\n730854,12.25,0.4\n'), {'origin', '2001-01-01', 'time_numbers', 'datenum'}};
%! for k = 1:size (edits, 1)
%!   fo = read_text (edits{k, 2}, edits{k, 3}{:});
%!   assert (isequal (fo, dated), ['edit: ' edits{k, 1}]);
%! end
%! % 730852 is 2001-01-01 as Octave counts days
%! assert (datenum (2001, 1, 1), 730852);

%!test
%! % units kept; the header's columns in another order come in that order
%! [fo, info] = read_text (sprintf ('E (mm/d);Date;P [mm/d]\n0,2;2001-01-01;1,5\n0,3;2001-01-02;0\n0,4;2001-01-03;12,25\n'), ...
%!                         'origin', '2001-01-01');
%! assert (fo.names, {'e', 'p'});
%! assert (fo.units, {'mm/d', 'mm/d'});
%! assert (fo.values, dated.values(:, [2 1]));
%! assert (fo.time, dated.time);
%! assert (info.separator, ';');

%!test
%! % unsorted rows: sorted stably by time, with a warning naming the file
%! % and the first line out of order
%! [fo, info, wid, wmsg] = read_text (sprintf ('time,p,e\n2,12.25,0.4\n0,1.5,0.2\n1,0,0.3\n'));
%! assert (isequal (fo, plain));
%! assert (info.sorted, 1);
%! assert (wid, 'sluice:read_forcing:sorted');
%! assert (wmsg, '<file>: 1 rows were out of time order (the first on line 3); sorted by time');

%!test
%! % dates against Octave's datenum: 1500 distinct hours of 1899-2101
%! % (across 1900 and 2100, not leap years, and 2000, one), unsorted
%! rand ('seed', 17);
%! n = 1500;
%! hours = unique (floor (rand (n, 1) * (datenum (2102, 1, 1) - datenum (1899, 1, 1)) * 24));
%! n = numel (hours);
%! order = randperm (n);
%! dn = datenum (1899, 1, 1) + hours(order) / 24;
%! [y, mo, d, hh] = datevec (dn);
%! hh = round (hh + (dn - datenum (y, mo, d, hh, 0, 0)) * 24);   % whole hours
%! lines = cell (n, 1);
%! for i = 1:n
%!   lines{i} = sprintf ('%04d-%02d-%02dT%02d:00,%d\n', y(i), mo(i), d(i), hh(i), order(i));
%! end
%! [fo, info, wid] = read_text (['date,k' char(10) lines{:}], 'origin', '1950-01-01');
%! want = sort (datenum (y, mo, d, hh, 0, 0)) - datenum (1950, 1, 1);
%! % datenum adds the hour as a fraction of a day: rounding of about 1e-10
%! % days at these magnitudes; the whole days are exact
%! assert (fo.time, want, 1e-9);
%! assert (floor (fo.time + 1e-12), floor (want + 1e-9));
%! assert (fo.values, (1:n)');
%! assert (wid, 'sluice:read_forcing:sorted');
%! % years of 365.25 days
%! fo = read_text (sprintf ('date,k\n2000-01-01,1\n2004-01-01,2\n'), 'origin', '2000-01-01', 'unit', 'years');
%! assert (fo.time, [0; 1461 / 365.25]);
%! assert (fo.time_unit, 'years');

%!test
%! % gaps: interpolation in time against Octave's interp1, zero, counts
%! txt = sprintf ('time,t_air,pet\n0,4,1\n0.5,NA,\n2,10,#N/A\n3,,N/A\n7,2,2\n');
%! [fo, info] = read_text (txt, 'missing', 'interpolate');
%! t = [0; 0.5; 2; 3; 7];
%! assert (fo.values(:, 1), interp1 ([0; 2; 7], [4; 10; 2], t), 1e-14);
%! assert (fo.values(:, 2), interp1 ([0; 7], [1; 2], t), 1e-14);
%! assert (info.missing, 5);
%! assert (info.filled, [2 3]);
%! [fo, info] = read_text (txt, 'missing', 'zero');
%! assert (fo.values, [4 1; 0 0; 10 0; 0 0; 2 2]);
%! assert (info.filled, [2 3]);
%! % gaps filled after sorting: the neighbours in time, not in the file
%! fo = read_text (sprintf ('time,q\n4,8\n0,0\n1,NA\n'), 'missing', 'interpolate');
%! assert (fo.values, [0; 2; 8]);

%!test
%! % every refusal: its identifier, and the file, line and column first
%! refused (sprintf ('time,p,e\n0,1,1\n1,NA,1\n'), 'sluice:read_forcing:missing', ...
%!          'line 3, column p: the value is missing (''NA'')');
%! refused (sprintf ('time,p,e\n0,1,1\n1,2,\n'), 'sluice:read_forcing:missing', ...
%!          'line 3, column e: the value is missing (an empty field)');
%! refused (sprintf ('time,p\n0,NA\n1,2\n'), 'sluice:read_forcing:missing', ...
%!          'line 2, column p: the value is missing and no earlier time has one', 'missing', 'interpolate');
%! refused (sprintf ('time,p\n0,1\n1,2\n# end\n2,\n'), 'sluice:read_forcing:missing', ...
%!          'line 5, column p: the value is missing and no later time has one', 'missing', 'interpolate');
%! refused (sprintf ('time,P [mm/d]\n0,1\n1,dry\n'), 'sluice:read_forcing:badnumber', ...
%!          'line 3, column P: ''dry'' is not a number');
%! refused (sprintf ('time;p\n0;1,2,3\n'), 'sluice:read_forcing:badnumber', ...
%!          'line 2, column p: ''1,2,3'' is not a number');
%! refused (sprintf ('time,p\n0,-Inf\n'), 'sluice:read_forcing:badnumber', ...
%!          'line 2, column p: the value is infinite');
%! refused (sprintf ('time,p\n0,1e999\n'), 'sluice:read_forcing:badnumber', ...
%!          'line 2, column p: ''1e999'' is out of the range of doubles');
%! refused (sprintf ('Date,p\n2001-01-01,1\n2001-01-02,1\n2001-01-02,2\n'), 'sluice:read_forcing:duptime', ...
%!          'line 4, column Date: the same time as line 3 (each time may appear once)', 'origin', '2001-01-01');
%! % the same instant written two ways, apart in the file: found after sorting
%! refused (sprintf ('date,p\n2001-01-02T01:00+01:00,1\n2001-01-01,1\n2001-01-02,2\n'), 'sluice:read_forcing:duptime', ...
%!          'line 4, column date: the same time as line 2', 'origin', '2001-01-01');
%! refused (sprintf ('time,p\n1,1\n0,1\n'), 'sluice:read_forcing:badorder', ...
%!          'line 3, column time: time 0 comes before', 'sort', false);
%! refused (sprintf ('time,p\n0,1\n,1\n'), 'sluice:read_forcing:badtime', ...
%!          'line 3, column time: the time is missing');
%! refused (sprintf ('date,p\n2001-01-01,1\n'), 'sluice:read_forcing:noorigin', ...
%!          'line 2, column date: the times are dates');
%! refused (sprintf ('date,p\n2001-02-29,1\n'), 'sluice:read_forcing:baddate', ...
%!          'line 2, column date: ''2001-02-29'' is not a date: February 2001 has 28 days', 'origin', '2001-01-01');
%! refused (sprintf ('date,p\n2001-01-01,1\n3,1\n'), 'sluice:read_forcing:badtime', ...
%!          'line 3, column date: ''3'' is a number, but line 2 holds a date', 'origin', '2001-01-01');
%! refused (sprintf ('time,p\n15/03/2001,1\n'), 'sluice:read_forcing:badnumber', ...
%!          'line 2, column time: ''15/03/2001'' is not a number or a date');
%! refused (sprintf ('p,e\n1,2\n'), 'sluice:read_forcing:badheader', ...
%!          'line 1: no time column (name one column time or date)');
%! refused (sprintf ('time,p,Date\n'), 'sluice:read_forcing:badheader', ...
%!          'line 1, column Date: a second time column (column 1 is one)');
%! refused (sprintf ('# nothing yet\ndate,,\n'), 'sluice:read_forcing:badheader', ...
%!          'line 2: no series besides the time column');
%! refused (sprintf ('time,p,P\n'), 'sluice:read_forcing:badheader', ...
%!          'line 1, column P: the name appears twice (columns 2 and 3)');
%! refused (sprintf ('time,rain gauge\n'), 'sluice:read_forcing:badheader', ...
%!          'line 1, column 2: ''rain gauge'' is not a column name');
%! refused (sprintf ('time,p [mm/d\n'), 'sluice:read_forcing:badheader', ...
%!          'line 1, column 2: ''p [mm/d'': the unit''s bracket is never closed');
%! refused (sprintf ('# only comments\n'), 'sluice:read_forcing:badheader', 'line 2: no header row');
%! refused (sprintf ('time,p\n# no rows\n'), 'sluice:read_forcing:empty', ...
%!          'line 3: no rows after the header (line 1)');
%! refused (sprintf ('time,p\n0,1,7\n'), 'sluice:read_forcing:badfield', ...
%!          'line 2, column 3: more fields than the header''s 2 columns');
%! refused (sprintf ('time,p,\n0,1,note\n'), 'sluice:read_forcing:badfield', ...
%!          'line 2, column 3: ''note'' stands in a column without a name');
%! refused (sprintf ('time,p,e\n0,1\n'), 'sluice:read_forcing:badfield', ...
%!          'line 2, column e: the row has 2 fields, the header 3');
%! refused (sprintf ('time,p\n0,"1\n'), 'sluice:read_forcing:badfield', ...
%!          'line 2, column p: the quoted field is never closed');
%! refused ([char([255 254]) 't' char(0)], 'sluice:read_forcing:badencoding', ...
%!          'line 1: the file is UTF-16 text');

%!test
%! % a GR4J run fed from a dated rain/PET file (PET first, names in other
%! % case) gives the bits of the same run fed the numeric struct
%! s = sluice.model ('gr4j');
%! Tn = 60; t = (0:Tn-1)';
%! rand ('state', 21);
%! P = round ((rand (Tn, 1) < 0.4) .* (-6 * log (rand (Tn, 1))) * 10) / 10;
%! E = 2 + sin (2 * pi * t / 365);
%! numeric = struct ('time', t, 'values', [P E], 'interp', 'previous');
%! dn = datenum (2003, 10, 1) + t;
%! lines = cell (Tn, 1);
%! for i = 1:Tn
%!   lines{i} = sprintf ('%s,%.17g,%.17g\n', datestr (dn(i), 'yyyy-mm-dd'), E(i), P(i));
%! end
%! f = csvfile (['Date,E [mm/d],P [mm/d],T_air [C]' char(10) strrep(lines, char(10), [',9' char(10)]){:}]);
%! fo = sluice.read_forcing (f, 'origin', '2003-10-01', 'interp', 'previous');
%! delete (f);
%! assert (fo.time, t);
%! assert (fo.names, {'e', 'p', 't_air'});
%! X1 = sluice.simulate (s, [], [300; 0.5; 80; 1.8], 0:Tn, numeric);
%! X2 = sluice.simulate (s, [], [300; 0.5; 80; 1.8], 0:Tn, fo);
%! assert (isequal (X1, X2));
%! o = struct ('time', (1:Tn-1)', 'variable', {repmat({'Q'}, Tn-1, 1)}, 'value', X1(63, 2:Tn)', ...
%!             'sigma', 0.2 * ones (Tn-1, 1), 'family', {repmat({'lognormal'}, Tn-1, 1)});
%! pg = sluice.prior ('X1', 'lognormal', [log(300) 0.3], 'X3', 'lognormal', [log(80) 0.3]);
%! fn = struct ('kind', 'multiplicative', 'sd', [0.2 0.1], 'ar1', 0.5);
%! run = {'members', 200, 'seed', 5, 't0', 0, 'forcing_noise', fn, 'progress', false};
%! r1 = sluice.filter (s, pg, o, run{:}, 'forcing', numeric);
%! r2 = sluice.filter (s, pg, o, run{:}, 'forcing', fo, 'origin', '2003-10-01');
%! % isequaln: the queues' rows are NaN in both (not summarised)
%! assert (isequaln (r1.states, r2.states));
%! assert (isequal (r1.params, r2.params));
%! assert (isequal (r1.log_evidence, r2.log_evidence));
%! assert (r2.time_origin, '2003-10-01');
%! % the twin experiment takes it as the truth's forcing
%! net = struct ('variable', 'Q', 'every', 1, 'sigma', 0.3);
%! tw = {'seed', 3, 'filter', {'members', 100, 'progress', false}, 'prior', pg};
%! w1 = sluice.twin (s, struct ('times', 0:20, 'params', [300; 0.5; 80; 1.8], 'forcing', numeric), net, tw{:});
%! w2 = sluice.twin (s, struct ('times', 0:20, 'params', [300; 0.5; 80; 1.8], 'forcing', fo), net, tw{:});
%! assert (isequal (w1.truth, w2.truth));
%! assert (isequaln (w1.filter.states, w2.filter.states));

%!test
%! % names decide, not the order: a forcing the file lacks is refused
%! s = sluice.model ('gr4j');
%! fo = struct ('time', [0; 10], 'values', [1 2; 1 2], 'names', {{'rain', 'pet'}}, 'interp', 'linear');
%! o = struct ('time', 1, 'variable', {{'Q'}}, 'value', 1, 'sigma', 1);
%! try
%!   sluice.filter (s, [], o, 'members', 10, 't0', 0, 'forcing', fo, 'progress', false);
%!   id = ''; msg = '';
%! catch e
%!   id = e.identifier; msg = e.message;
%! end
%! assert (id, 'sluice:filter:noforcing');
%! assert (msg, ['the forcing has no series ''P'' (the model''s forcings are P, E; the series ', ...
%!               'are rain, pet): name the file''s columns after the model''s forcings, or set forcing.names']);
%! % renamed, it runs
%! fo.names = {'P', 'E'};
%! r = sluice.filter (s, [], o, 'members', 10, 't0', 0, 'forcing', fo, 'progress', false);
%! assert (isfield (r, 'states'));
%! try
%!   sluice.simulate (s, [], [], 0:2, setfield (fo, 'names', {'P', 'pet'}));
%!   id = '';
%! catch e
%!   id = e.identifier;
%! end
%! assert (id, 'sluice:simulate:noforcing');

%!test
%! % the forcing's calendar against the run's: the same origin and unit
%! % run; another origin or unit is refused, not converted; a run without
%! % an origin takes the times as they are
%! s = sluice.model ('linear', 'A', 1, 'Q', 1, 'B', 1, 'forcings', {'u'}, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! o = struct ('time', [1; 2], 'variable', {{'x'; 'x'}}, 'value', [0; 1], 'sigma', [1; 1]);
%! fo = read_text (sprintf ('date,u\n2001-01-01,1\n2001-01-04,2\n'), 'origin', '2001-01-01');
%! run = {'members', 50, 'seed', 2, 't0', 0, 'forcing', fo, 'progress', false};
%! r1 = sluice.filter (s, pr, o, run{:}, 'origin', '2001-01-01T00:00Z');
%! r2 = sluice.filter (s, pr, o, run{:});
%! assert (isequal (r1.states, r2.states));
%! msgs = {};
%! for bad = {{'origin', '2000-12-31'}, {'origin', '2001-01-01', 'time_unit', 'years'}}
%!   try
%!     sluice.filter (s, pr, o, run{:}, bad{1}{:});
%!     id = ''; msg = '';
%!   catch e
%!     id = e.identifier; msg = e.message;
%!   end
%!   assert (id, 'sluice:filter:forcingorigin');
%!   msgs{end+1} = msg;
%! end
%! assert (msgs{1}, ['the forcing''s times count days from 2001-01-01 (it was read with that ', ...
%!                   'origin), the run''s count days from 2000-12-31 (options origin and ', ...
%!                   'time_unit): read the forcing with the run''s origin and unit']);
%! assert (~isempty (strfind (msgs{2}, 'the run''s count years from 2001-01-01')));
%! % a struct edited by hand: its calendar must be one
%! bad = fo; bad.time_origin = '2001-02-30';
%! try
%!   sluice.filter (s, pr, o, run{:}, 'forcing', bad);
%!   id = '';
%! catch e
%!   id = e.identifier; msg = e.message;
%! end
%! assert (id, 'sluice:filter:badforcing');
%! assert (msg, 'forcing.time_origin / time_unit: ''2001-02-30'' is not a date: February 2001 has 28 days, not 30');

%!test
%! % written and read back: hourly dates over three years, to the bit;
%! % numbers with gaps, to the bit
%! rand ('seed', 5);
%! t = sort (randperm (3 * 8766, 400))' / 24;
%! fo = struct ('time', t, 'values', [round(rand (400, 1) * 1e3) / 7, -rand(400, 1)], ...
%!              'names', {{'inflow', 't_air'}}, 'units', {{'m3/s', 'degC'}}, 'interp', 'linear', ...
%!              'time_origin', '1999-12-31T06:00:00Z', 'time_unit', 'days');
%! f = [tempname() '.csv'];
%! sluice.write_forcing (f, fo);
%! back = sluice.read_forcing (f, 'origin', fo.time_origin);
%! txt = fileread (f);
%! delete (f);
%! assert (isequal (back, fo));
%! assert (strncmp (txt, sprintf ('time,inflow [m3/s],t_air [degC]\n'), 31));
%! fo.time_origin = ''; fo.time_unit = '';
%! fo.values(3:7:end, 1) = NaN;
%! sluice.write_forcing (f, fo);
%! [back, info] = sluice.read_forcing (f, 'missing', 'zero');
%! delete (f);
%! assert (back.time, fo.time);
%! keep = ~isnan (fo.values);
%! assert (isequal (back.values(keep), fo.values(keep)));
%! assert (all (back.values(~keep) == 0));
%! assert (info.filled, [sum(isnan (fo.values(:, 1))) 0]);

%!test
%! % the kernel's arguments (what a power user may pass): identifiers, no crash
%! f = csvfile (sprintf ('time,p\n0,1\n'));
%! bad = {{'series', f}, {'series', f, [], 1, false, true, 'mean'}, ...
%!        {'series', f, [], 1, false, true, 3}, {'series', f, 'x', 1, false, true, 'zero'}, ...
%!        {'series', f, [], -1, false, true, 'zero'}, {'write_series', f, 1, 1, {'a'}, {''}, ''}, ...
%!        {'write_series', f, 1, [1 2], {'a'}, {''}, '', 1}, ...
%!        {'write_series', f, 1, 1, {3}, {''}, '', 1}, {'write_series', f, 1, 1, 'a', {''}, '', 1}, ...
%!        {'write_series', f, 1, 1, {'a'}, {''}, {1}, 1}, {'write_series', f, 1, single(1), {'a'}, {''}, '', 1}, ...
%!        {'write_series', f, 1, 1, {'a'}, {''}, '2001-01-01', 0}};
%! ids = {'sluice:read_forcing:nargin', 'sluice:read_forcing:badoption', ...
%!        'sluice:read_forcing:badclass', 'sluice:read_forcing:badorigin', ...
%!        'sluice:read_forcing:badoption', 'sluice:write_forcing:nargin', ...
%!        'sluice:write_forcing:badforcing', 'sluice:write_forcing:badforcing', ...
%!        'sluice:write_forcing:badforcing', 'sluice:write_forcing:badorigin', ...
%!        'sluice:write_forcing:badclass', 'sluice:write_forcing:badoption'};
%! for k = 1:numel (bad)
%!   try
%!     sluice.kernel.obsfile (bad{k}{:});
%!     eid = '';
%!   catch e
%!     eid = e.identifier;
%!   end
%!   assert (eid, ids{k}, sprintf ('case %d', k));
%! end
%! [t, info] = sluice.kernel.obsfile ('series', f, [], 1, false, true, 'error');
%! delete (f);
%! assert (t.names, {'p'});
%! assert (info.time_form, 'numbers');
