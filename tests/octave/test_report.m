% Tests of sluice.report: the files of a report and its errors.

%!function s = fgetl_first (f)
%! fid = fopen (f, 'r');
%! s = fgetl (fid);
%! fclose (fid);
%!endfunction

%!shared res, obs, dir0
%! m = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'level'});
%! T = 25;
%! obs = struct ('time', (1:T)', 'variable', {repmat({'level'}, T, 1)}, ...
%!               'value', sin ((1:T)' / 4) + 0.3 * cos ((1:T)' * 1.7), ...
%!               'sigma', 0.4 * ones (T, 1));
%! obs.value(7) = NaN;
%! res = sluice.filter (m, [], obs, 'members', 200, 'seed', 11, ...
%!                      'quantiles', [0.05 0.25 0.5 0.75 0.95], 'progress', false);
%! dir0 = tempname ();

%!test
%! d = dir0;
%! unwind_protect
%!   files = sluice.report (res, 'outdir', d, 'obs', obs, 'units', struct ('level', 'm'), ...
%!                          'rank', [4 6 5 7 3]);
%!   names = {'fan_level.png', 'ess.png', 'rank.png', 'summary.csv', 'final.csv', 'summary.txt', ...
%!            'skill.csv'};
%!   assert (sort (cellfun (@(f) [fliplr(strtok (fliplr (f), filesep))], files, ...
%!                          'UniformOutput', false)), sort (names(:)));
%!   for k = 1:numel (names)
%!     s = dir (fullfile (d, names{k}));
%!     assert (numel (s), 1);
%!     assert (s.bytes > 0);
%!   end
%!   % a PNG starts with the signature 137 'PNG' (PNG specification, section 5.2)
%!   fid = fopen (fullfile (d, 'fan_level.png'), 'r');
%!   sig = fread (fid, 4)';
%!   fclose (fid);
%!   assert (sig, [137 80 78 71]);
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, ['This report supports studies of flood risk. ', ...
%!     'It is not a flood warning and not a basis for the design of defences; ', ...
%!     'follow local codes and licensed engineering practice.'])));
%!   assert (~isempty (strfind (txt, 'members:             200')));
%!   assert (~isempty (strfind (txt, 'skipped (missing) observations: 1')));
%!   % one row per cycle after the header: time, mean and 5 quantiles, ess, resampled
%!   C = dlmread (fullfile (d, 'summary.csv'), ',', 1, 0);
%!   assert (size (C), [numel(res.times), 1 + 6 + 2]);
%!   assert (C(:, 1), res.times(:), 1e-9);
%!   assert (C(:, 2), res.states.mean(:), 1e-8 * max (1, max (abs (res.states.mean))));
%!   assert (C(:, 4)', reshape (res.states.quantiles(1, 2, :), 1, []), 1e-8);
%!   assert (C(:, 8), res.ess(:), 1e-6);
%!   C2 = csvread (fullfile (d, 'summary.csv'), 1, 0);
%!   assert (C2, C);
%!   head = strtrim (fgetl_first (fullfile (d, 'summary.csv')));
%!   assert (head, 'time,level_mean,level_q05,level_q25,level_q50,level_q75,level_q95,ess,resampled');
%! unwind_protect_cleanup
%!   if (exist (d, 'dir'))
%!     confirm_recursive_rmdir (false, 'local');
%!     rmdir (d, 's');
%!   end
%! end_unwind_protect
%! assert (~exist (d, 'dir'));

%!test
%! % fewer quantile levels: the missing 50% band is said in the summary
%! m = sluice.model ('linear', 'A', 0.9, 'Q', 0.1);
%! o = struct ('time', (1:6)', 'variable', {repmat({'x1'}, 6, 1)}, ...
%!             'value', [0.3; -0.2; 0.1; 0.5; 0.2; -0.1], 'sigma', 0.5 * ones (6, 1));
%! r = sluice.filter (m, [], o, 'members', 50, 'seed', 2, 'progress', false);
%! d = tempname ();
%! unwind_protect
%!   files = sluice.report (r, struct ('outdir', d));
%!   assert (numel (files), 5);
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'the 50% band is not drawn')));
%!   C = csvread (fullfile (d, 'summary.csv'), 1, 0);
%!   assert (rows (C), 6);
%! unwind_protect_cleanup
%!   if (exist (d, 'dir'))
%!     confirm_recursive_rmdir (false, 'local');
%!     rmdir (d, 's');
%!   end
%! end_unwind_protect

%!test
%! % an outdir that is a plain file, and one that cannot be created
%! f = tempname ();
%! fid = fopen (f, 'w');
%! fputs (fid, 'not a directory');
%! fclose (fid);
%! unwind_protect
%!   id = '';
%!   try
%!     sluice.report (res, 'outdir', f);
%!   catch err
%!     id = err.identifier;
%!   end
%!   assert (id, 'sluice:report:badoutdir');
%!   id = '';
%!   try
%!     sluice.report (res, 'outdir', fullfile (f, 'sub'));
%!   catch err
%!     id = err.identifier;
%!   end
%!   assert (id, 'sluice:report:badoutdir');
%!   assert (~exist (fullfile (f, 'sub'), 'dir'));
%! unwind_protect_cleanup
%!   delete (f);
%! end_unwind_protect

%!error <Invalid call> sluice.report ()
%!error id=sluice:report:badresult sluice.report (42)
%!error id=sluice:report:badresult sluice.report (struct ('times', 1:3))
%!error id=sluice:report:badresult sluice.report ({res})
%!error id=sluice:report:badoutdir sluice.report (res, 'outdir', 3)
%!error id=sluice:report:badoutdir sluice.report (res, 'outdir', '')
%!error id=sluice:report:badoption sluice.report (res, 'colour', 'blue')
%!error id=sluice:report:badoption sluice.report (res, 'outdir')
%!error id=sluice:report:badoption sluice.report (res, 'rank', [1 NaN])
%!error id=sluice:report:badoption sluice.report (res, 'truth', struct ('times', 1:3, 'X', ones (2, 3)))
%!error id=sluice:report:badoption sluice.report (res, 'obs', struct ('time', 1))

%!test
%! % dates through the whole path: observations read with dates (across
%! % the 29th of February 2004), a run given the same origin, a report
%! % drawn and written with dates. Expected dates from Octave's datenum
%! % and datestr (their own calendar), and by hand: day 59 after
%! % 2004-01-01 is 2004-02-29 (2004 is a leap year, Gregorian rule).
%! d = tempname ();
%! mkdir (d);
%! unwind_protect
%!   f = fullfile (d, 'gauge.csv');
%!   fid = fopen (f, 'w');
%!   fprintf (fid, 'Time;Variable;Value [m];Sigma\n');
%!   days = [0 30 59 60 90];
%!   for k = 1:numel (days)
%!     fprintf (fid, '%s;level;%g;0,4\n', datestr (datenum (2004, 1, 1) + days(k), 'yyyy-mm-dd'), ...
%!              sin (k / 2));
%!   end
%!   fclose (fid);
%!   ob = sluice.read_obs (f, 'origin', '2004-01-01');
%!   assert (ob.time', days);
%!   m = sluice.model ('linear', 'A', 0.99, 'Q', 0.01, 'states', {'level'});
%!   r = sluice.filter (m, [], ob, 'members', 100, 'seed', 3, 'progress', false, ...
%!                      'origin', '2004-01-01', 't0', 0);
%!   assert (r.time_origin, '2004-01-01');
%!   assert (r.time_unit, 'days');
%!   assert (r.dates, datenum (2004, 1, 1) + days);
%!   files = sluice.report (r, 'outdir', fullfile (d, 'out'), 'obs', ob);
%!   txt = fileread (fullfile (d, 'out', 'summary.csv'));
%!   lines = strsplit (strtrim (txt), "\n");
%!   assert (strncmp (lines{1}, 'time,date,level_mean', 20));
%!   assert (strncmp (lines{4}, '59,2004-02-29,', 14));
%!   assert (strncmp (lines{6}, '90,2004-03-31,', 14));
%!   txt = fileread (fullfile (d, 'out', 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'dates:               2004-01-01 to 2004-03-31')));
%!   % years as the unit: time 1 is 365.25 days after the origin
%!   r = sluice.filter (m, [], struct ('time', [1; 2], 'variable', {{'level'; 'level'}}, ...
%!                      'value', [0.1; 0.2], 'sigma', [1; 1]), 'members', 50, 'seed', 1, ...
%!                      'progress', false, 'origin', datenum (2000, 1, 1), ...
%!                      'time_unit', 'years', 't0', 0);
%!   assert (r.time_origin, '2000-01-01');
%!   assert (r.dates, datenum (2000, 1, 1) + [365.25 730.5]);
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (d, 's');
%! end_unwind_protect

%!error id=sluice:filter:badorigin sluice.filter (sluice.model ('linear', 'A', 1, 'Q', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'origin', '2001-02-30', 'progress', false)
%!error id=sluice:filter:badorigin sluice.filter (sluice.model ('linear', 'A', 1, 'Q', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'origin', {1}, 'progress', false)
%!error id=sluice:filter:badoption sluice.filter (sluice.model ('linear', 'A', 1, 'Q', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'origin', '2001-01-01', 'time_unit', 'hours', 'progress', false)
%!error id=sluice:filter:badoption sluice.filter (sluice.model ('linear', 'A', 1, 'Q', 1), [], struct ('time', 1, 'variable', {{'x1'}}, 'value', 1, 'sigma', 1), 'time_unit', 3, 'progress', false)

%!test
%! % a GR4J run: its 60 unit-hydrograph queues are internal states, so the
%! % report draws S, R and Q only (and the parameters that moved); the
%! % tables keep every state; 'variables' chooses others
%! s = sluice.model ('gr4j');
%! assert (s.internal, strncmp (s.states(:), 'uh', 2));
%! assert (sum (s.internal), 60);
%! T = 60; t = (0:T)';
%! rand ('state', 4);
%! f = struct ('time', t, 'values', [8 * (rand (T + 1, 1) < 0.3), 2 * ones(T + 1, 1)], ...
%!             'interp', 'previous');
%! X = sluice.simulate (s, s.x0, s.defaults, 0:T, f);
%! ob = struct ('time', (1:T)', 'variable', {repmat({'Q'}, T, 1)}, 'value', X(63, 2:end)', ...
%!              'sigma', 0.1 * ones (T, 1), 'family', {repmat({'lognormal'}, T, 1)});
%! pr = sluice.prior ('X1', 'lognormal', [log(350) 0.3]);
%! r = sluice.filter (s, pr, ob, 'members', 100, 'seed', 2, 't0', 0, 'forcing', f, ...
%!                    'progress', false);
%! assert (r.internal_states, s.internal');
%! d = tempname ();
%! unwind_protect
%!   files = sluice.report (r, 'outdir', d, 'obs', ob);
%!   [~, nm] = cellfun (@fileparts, files, 'UniformOutput', false);
%!   assert (sort (nm(strncmp (nm, 'fan_', 4))), {'fan_Q'; 'fan_R'; 'fan_S'; 'fan_X1'});
%!   head = fgetl_first (fullfile (d, 'summary.csv'));
%!   assert (~isempty (strfind (head, 'uh2_40_mean')));
%!   files = sluice.report (r, 'outdir', fullfile (d, 'b'), 'variables', {'Q', 'uh1_3'});
%!   [~, nm] = cellfun (@fileparts, files, 'UniformOutput', false);
%!   assert (sort (nm(strncmp (nm, 'fan_', 4))), {'fan_Q'; 'fan_uh1_3'});
%!   assert (~any (strcmp (nm, 'params')));
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (d, 's');
%! end_unwind_protect

%!error id=sluice:report:badoption sluice.report (res, 'outdir', tempname (), 'variables', {'nosuch'})
%!error id=sluice:report:badoption sluice.report (res, 'outdir', tempname (), 'variables', 3)
%!error id=sluice:filter:badmodel sluice.filter (setfield (sluice.model ('gr4j'), 'internal', 1), [], struct ('time', 1, 'variable', {{'Q'}}, 'value', 1, 'sigma', 1), 'progress', false)

%!test
%! % derived quantities and binomial counts on their own axes. A state x is
%! % the logit of a share; a questionnaire of 200 counts answers (binomial,
%! % logit link: p = 1 / (1 + exp(-x)), McCullagh & Nelder 1989, ch. 4);
%! % the derived quantity 'twice' = 2 x (linear operator) is observed too,
%! % 'half' = x / 2 (function operator) is not.
%! m = sluice.model ('linear', 'A', 0.95, 'Q', 0.02, 'states', {'x'});
%! T = 30;
%! tt = [(1:T)'; 10; 20];
%! vv = [repmat({'twice'}, T, 1); {'x'; 'x'}];
%! yy = [2 * 0.5 * cos((1:T)' / 6); 130; 90];
%! fam = [repmat({'gaussian'}, T, 1); {'binomial'; 'binomial'}];
%! [tt, o] = sort (tt);
%! ob = struct ('time', tt, 'variable', {vv(o)}, 'value', yy(o), ...
%!              'sigma', [0.5 * ones(T, 1); NaN; NaN](o), 'family', {fam(o)}, ...
%!              'n', [nan(T, 1); 200; 200](o));
%! ops = {struct('names', 'twice', 'H', 2), struct('names', 'half', 'fun', @(t, X, P) X / 2)};
%! r = sluice.filter (m, sluice.prior ('x', 'normal', [0 1]), ob, 'members', 300, 'seed', 3, ...
%!                    'operators', ops, 'progress', false);
%! d = tempname ();
%! unwind_protect
%!   files = sluice.report (r, 'outdir', d, 'obs', ob);
%!   short = cellfun (@(f) fliplr (strtok (fliplr (f), filesep)), files, 'UniformOutput', false);
%!   assert (all (ismember ({'fan_x.png', 'fan_twice.png', 'counts_x.png', 'counts.csv'}, short)));
%!   % 'half' was not observed: not drawn unless asked for
%!   assert (~any (strcmp (short, 'fan_half.png')));
%!   % the table of counts: each observed count beside n p at the 5%, 50%
%!   % and 95% quantiles of x at its cycle (p monotone in x)
%!   fid = fopen (fullfile (d, 'counts.csv'));
%!   head = fgetl (fid);
%!   C = textscan (fid, '%s %f %f %f %f %f %f', 'delimiter', ',');
%!   fclose (fid);
%!   assert (head, 'variable,time,observed,trials,predicted_q05,predicted_median,predicted_q95');
%!   assert (C{1}, {'x'; 'x'});
%!   assert ([C{2:4}], [10 130 200; 20 90 200]);
%!   for i = 1:2
%!     k = find (r.times == C{2}(i));
%!     q = r.states.quantiles(1, :, k);
%!     assert ([C{5}(i), C{6}(i), C{7}(i)], 200 ./ (1 + exp (-q)), -1e-9);   % %.10g in the file
%!   end
%!   % summary.csv carries the derived quantities' columns
%!   X = dlmread (fullfile (d, 'summary.csv'), ',', 1, 0);
%!   h = strsplit (fgetl_first (fullfile (d, 'summary.csv')), ',');
%!   assert (X(:, strcmp (h, 'twice_mean'))', r.derived.mean(1, :), 1e-8);
%!   assert (X(:, strcmp (h, 'half_q50'))', reshape (r.derived.quantiles(2, 2, :), 1, []), 1e-8);
%!   % asked for by name, an unobserved derived quantity is drawn
%!   files = sluice.report (r, 'outdir', d, 'obs', ob, 'variables', {'half'});
%!   short = cellfun (@(f) fliplr (strtok (fliplr (f), filesep)), files, 'UniformOutput', false);
%!   assert (any (strcmp (short, 'fan_half.png')));
%!   assert (~any (strcmp (short, 'fan_x.png')));
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   if (exist (d, 'dir'))
%!     rmdir (d, 's');
%!   end
%! end_unwind_protect

%!error <not a state, parameter or derived quantity> sluice.report (res, 'outdir', tempname (), 'variables', {'nothing'})

%!test
%! % skill.csv and the summary's skill lines hold sluice.scores' NSE and
%! % KGE of the same observations (those are checked against
%! % hand-computed cases of Nash & Sutcliffe 1970 and Gupta et al. 2009)
%! d = tempname ();
%! unwind_protect
%!   sluice.report (res, 'outdir', d, 'obs', obs);
%!   truth = struct ('times', res.times, 'X', zeros (1, numel (res.times)));
%!   s = sluice.scores (res, truth, obs);
%!   fid = fopen (fullfile (d, 'skill.csv'));
%!   head = fgetl (fid);
%!   C = textscan (fid, '%s %f %f %f %f %f %f %f %f', 'delimiter', ',');
%!   fclose (fid);
%!   assert (head, 'variable,count,nse,kge,r,alpha,beta,nse_forecast,kge_forecast');
%!   assert (C{1}, {'level'});
%!   assert ([C{2:9}], [s.skill.count, s.skill.nse, s.skill.kge, s.skill.r, s.skill.alpha, ...
%!                      s.skill.beta, s.skill.nse_forecast, s.skill.kge_forecast], -1e-9);
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'Nash-Sutcliffe efficiency')));
%!   assert (~isempty (regexp (txt, sprintf ('level +%d +%.4f +%.4f', s.skill.count, ...
%!                                           s.skill.nse, s.skill.kge), 'once')));
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   if (exist (d, 'dir'))
%!     rmdir (d, 's');
%!   end
%! end_unwind_protect
