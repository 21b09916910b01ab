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
%!   names = {'fan_level.png', 'ess.png', 'overview.png', 'rank.png', 'summary.csv', ...
%!            'final.csv', 'summary.txt', 'skill.csv'};
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
%!   assert (numel (files), 6);
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
%!   % the overview holds at most 8 variables and the summary names the rest
%!   sluice.report (r, 'outdir', fullfile (d, 'c'), 'variables', s.states(4:13));
%!   txt = fileread (fullfile (d, 'c', 'summary.txt'));
%!   assert (~isempty (strfind (txt, ['overview.png: 2 variable(s) left out for room (', ...
%!                                    s.states{12}, ', ', s.states{13}, ')'])));
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

%!function [w, h] = png_size (f)
%! % width and height from the IHDR chunk, bytes 17-24, big-endian
%! % (PNG specification, sections 5.2 and 11.2.2)
%! fid = fopen (f, 'r');
%! b = fread (fid, 24)';
%! fclose (fid);
%! w = b(17:20) * (256 .^ (3:-1:0))';
%! h = b(21:24) * (256 .^ (3:-1:0))';
%!endfunction

%!function rm_dir (d)
%! if (exist (d, 'dir'))
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (d, 's');
%! end
%!endfunction

%!function L = srgb_to_linear (c)
%! % the sRGB transfer function (IEC 61966-2-1)
%! L = c / 12.92;
%! k = c > 0.04045;
%! L(k) = ((c(k) + 0.055) / 1.055) .^ 2.4;
%!endfunction

%!function lab = linear_to_lab (L)
%! % linear sRGB (rows) to CIELAB under D65: the sRGB-to-XYZ matrix of
%! % IEC 61966-2-1 and the CIE 1976 L*a*b* formulas (CIE 15:2004)
%! M = [0.4124 0.3576 0.1805; 0.2126 0.7152 0.0722; 0.0193 0.1192 0.9505];
%! X = min (max (L, 0), 1) * M' ./ [0.9505 1 1.0890];
%! d = 6 / 29;
%! g = X .^ (1 / 3);
%! k = X <= d ^ 3;
%! g(k) = X(k) / (3 * d ^ 2) + 4 / 29;
%! lab = [116 * g(:, 2) - 16, 500 * (g(:, 1) - g(:, 2)), 200 * (g(:, 2) - g(:, 3))];
%!endfunction

%!test
%! % the palette in grey: luma Y' = 0.299 R' + 0.587 G' + 0.114 B' on the
%! % gamma-encoded values (ITU-R BT.601); every role has a grey of its own,
%! % at least 0.1 from the next, the bands light and the lines dark
%! P = sluice.internal.report_palette ();
%! assert (size (P.rgb), [numel(P.names), 3]);
%! assert (all (P.rgb(:) >= 0 & P.rgb(:) <= 1));
%! Y = P.rgb * [0.299; 0.587; 0.114];
%! assert (all (diff (sort (Y)) >= 0.1));
%! grey = @(n) Y(strcmp (P.names, n));
%! assert (min (grey ('inner'), grey ('outer')) >= 0.7);
%! assert (max ([grey('line'), grey('truth'), grey('smooth'), grey('obs')]) <= 0.5);
%! % the truth line stands apart from the median line and from both bands
%! assert (abs (grey ('truth') - grey ('line')) >= 0.25);
%! assert (grey ('inner') - grey ('truth') >= 0.25);
%! % one entry by name, and an unknown name falls back to the marks' colour
%! assert (sluice.internal.report_palette ('truth'), P.rgb(strcmp (P.names, 'truth'), :));
%! assert (sluice.internal.report_palette ('other'), sluice.internal.report_palette ('mark'));

%!test
%! % colour-vision deficiencies: the full-severity (1.0) simulation
%! % matrices of Machado, Oliveira and Fernandes (2009), "A physiologically-
%! % based model for simulation of color vision deficiency", IEEE TVCG
%! % 15(6), applied to linear RGB. Every pair of palette colours stays at
%! % least 15 CIELAB units (Delta E*ab, CIE 1976) apart for normal vision
%! % and under protanopia, deuteranopia and tritanopia.
%! sim = {eye(3), ...
%!        [0.152286 1.052583 -0.204868; 0.114503 0.786281 0.099216; -0.003882 -0.048116 1.051998], ...
%!        [0.367322 0.860646 -0.227968; 0.280085 0.672501 0.047413; -0.011820 0.042940 0.968881], ...
%!        [1.255528 -0.076749 -0.178779; -0.078411 0.930809 0.147602; 0.004733 0.691367 0.303900]};
%! % each matrix keeps white white: its rows sum to 1 (a property the paper's matrices have)
%! for v = 2:4
%!   assert (sum (sim{v}, 2), ones (3, 1), 1e-5);
%! end
%! P = sluice.internal.report_palette ();
%! K = size (P.rgb, 1);
%! for v = 1:4
%!   lab = linear_to_lab (srgb_to_linear (P.rgb) * sim{v}');
%!   for i = 1:K
%!     for j = i + 1:K
%!       dE = norm (lab(i, :) - lab(j, :));
%!       assert (dE >= 15, sprintf ('vision %d: %s and %s only %.1f apart', v, ...
%!                                  P.names{i}, P.names{j}, dE));
%!     end
%!   end
%! end
%! % the CIELAB conversion itself: white is L* 100, black 0, and sRGB's
%! % pure red (Y = 0.2126, IEC 61966-2-1) is L* = 116 * 0.2126^(1/3) - 16
%! % = 53.24 (CIE 1976 formula, by hand)
%! lab = linear_to_lab ([1 1 1; 0 0 0; 1 0 0]);
%! assert (lab(1:2, 1), [100; 0], 1e-3);
%! assert (norm (lab(1, 2:3)), 0, 2e-3);
%! assert (lab(3, 1), 53.24, 0.01);

%!shared rd, od
%! % a daily GR4J record of 7 years with a calendar (2001-01-01 on): long
%! % enough for panels, and for a second page (6 years a page)
%! s = sluice.model ('gr4j');
%! T = datenum (2007, 12, 31) - datenum (2001, 1, 1);
%! t = (0:T)';
%! rand ('state', 7);
%! E = max (0.2, 2.2 + 1.8 * sin (2 * pi * (t - 100) / 365));
%! P = (rand (T + 1, 1) < 0.35) .* (-6 * log (rand (T + 1, 1)));
%! f = struct ('time', t, 'values', [P E], 'interp', 'previous');
%! X = sluice.simulate (s, s.x0, s.defaults, 0:T, f);
%! od = struct ('time', (1:T)', 'variable', {repmat({'Q'}, T, 1)}, 'value', X(63, 2:end)', ...
%!              'sigma', 0.1 * ones (T, 1), 'family', {repmat({'lognormal'}, T, 1)});
%! rd = sluice.filter (s, [], od, 'members', 30, 'seed', 4, 't0', 0, 'forcing', f, ...
%!                     'progress', false, 'origin', '2001-01-01', ...
%!                     'quantiles', [0.05 0.25 0.5 0.75 0.95]);

%!test
%! % a long daily record: one panel per calendar year, 6 a page, the 7th
%! % year on a second page; the overview besides; the tables whole
%! d = tempname ();
%! unwind_protect
%!   files = sluice.report (rd, 'outdir', d, 'obs', od, 'variables', {'Q'});
%!   [~, nm, ext] = cellfun (@fileparts, files, 'UniformOutput', false);
%!   nm = strcat (nm, ext);
%!   assert (sort (nm), sort ({'fan_Q.png'; 'fan_Q_page2.png'; 'ess.png'; 'overview.png'; ...
%!                             'summary.csv'; 'final.csv'; 'summary.txt'; 'skill.csv'}));
%!   for k = 1:numel (files)
%!     s = dir (files{k});
%!     assert (s.bytes > 0);
%!   end
%!   % a page of 6 panels is taller than wide, the second (one panel) is not
%!   [w1, h1] = png_size (fullfile (d, 'fan_Q.png'));
%!   [w2, h2] = png_size (fullfile (d, 'fan_Q_page2.png'));
%!   assert (h1 > w1);
%!   assert (w2, w1);
%!   assert (h2 < h1 / 3);
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'one panel per calendar year (2001 to 2007)')));
%!   assert (~isempty (strfind (txt, '6 panels a page on 2 pages')));
%!   [w, h] = png_size (fullfile (d, 'ess.png'));
%!   assert ([w, h], [800, 450]);
%!   % the CSV holds every cycle and every state, the unit-hydrograph queues too
%!   C = csvread (fullfile (d, 'summary.csv'), 1, 0);
%!   assert (size (C, 1), numel (rd.times));
%!   assert (C(:, 1), rd.times(:));
%!   head = fgetl_first (fullfile (d, 'summary.csv'));
%!   assert (~isempty (strfind (head, 'uh2_40_q95')));
%!   lines = strsplit (strtrim (fileread (fullfile (d, 'summary.csv'))), "\n");
%!   % the last day: day 2555 after 2001-01-01 is 2007-12-31 (Octave's datestr)
%!   assert (rd.times(end), 2555);
%!   assert (datestr (datenum (2001, 1, 1) + 2555, 'yyyy-mm-dd'), '2007-12-31');
%!   assert (strncmp (lines{end}, '2555,2007-12-31,', 16));
%!   % 'none': one chart of the usual size
%!   files = sluice.report (rd, 'outdir', fullfile (d, 'one'), 'obs', od, 'variables', {'Q'}, ...
%!                          'panels', 'none');
%!   assert (~any (~cellfun ('isempty', strfind (files, 'page2'))));
%!   [w, h] = png_size (fullfile (d, 'one', 'fan_Q.png'));
%!   assert ([w, h], [800, 450]);
%!   txt = fileread (fullfile (d, 'one', 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'time charts: the whole run in one chart each')));
%! unwind_protect_cleanup
%!   rm_dir (d);
%! end_unwind_protect

%!test
%! % 'period' as dates and as model times: one chart of that period,
%! % the tables still whole
%! d = tempname ();
%! unwind_protect
%!   sluice.report (rd, 'outdir', d, 'obs', od, 'variables', {'Q'}, ...
%!                  'period', {'2003-03-01', '2003-09-30'}, 'log_scale', 'Q');
%!   assert (exist (fullfile (d, 'fan_Q_page2.png'), 'file'), 0);
%!   [w, h] = png_size (fullfile (d, 'fan_Q.png'));
%!   assert ([w, h], [800, 450]);
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'time charts: the period 2003-03-01 to 2003-09-30 in one chart each')));
%!   C = csvread (fullfile (d, 'summary.csv'), 1, 0);
%!   assert (size (C, 1), numel (rd.times));
%!   % model times 400 to 800 are these dates (Octave's datestr), and span
%!   % under two years: one chart; 'year' asks for panels: 2002 and 2003
%!   sluice.report (rd, 'outdir', fullfile (d, 'b'), 'variables', {'Q'}, 'period', [400 800]);
%!   txt = fileread (fullfile (d, 'b', 'summary.txt'));
%!   want = sprintf ('the period %s to %s in one chart', ...
%!                   datestr (datenum (2001, 1, 1) + 400, 'yyyy-mm-dd'), ...
%!                   datestr (datenum (2001, 1, 1) + 800, 'yyyy-mm-dd'));
%!   assert (~isempty (strfind (txt, want)));
%!   assert (~isempty (strfind (want, '2002-02-05 to 2003-03-12')));
%!   sluice.report (rd, 'outdir', fullfile (d, 'c'), 'variables', {'Q'}, 'period', [400 800], ...
%!                  'panels', 'year');
%!   txt = fileread (fullfile (d, 'c', 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'one panel per calendar year (2002 to 2003)')));
%!   [w, h] = png_size (fullfile (d, 'c', 'fan_Q.png'));
%!   assert (w, 1000);
%! unwind_protect_cleanup
%!   rm_dir (d);
%! end_unwind_protect

%!error <no cycle of the run> sluice.report (rd, 'outdir', tempname (), 'period', [5000 6000])
%!error <no cycle of the run> sluice.report (rd, 'outdir', tempname (), 'period', {'1990-01-01', '1990-12-31'})
%!error <not a date> sluice.report (rd, 'outdir', tempname (), 'period', {'2003-02-30', '2003-04-01'})
%!error <does not come after> sluice.report (rd, 'outdir', tempname (), 'period', {'2003-04-01', '2003-01-01'})
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', {'2003-02-30', '2003-04-01'})
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', {'2003-04-01', '2003-01-01'})
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', [5000 6000])
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', [3 1])
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', [1 NaN])
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', [1 2 3])
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', '2003')
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', {'2003-01-01'})
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', {1, 2})
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', single ([1 2]))
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'period', [1 2i])
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'panels', 'weekly')
%!error id=sluice:report:badoption sluice.report (rd, 'outdir', tempname (), 'panels', 3)

%!test
%! % dates for a run without a calendar are refused
%! m = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'level'});
%! o = struct ('time', (1:5)', 'variable', {repmat({'level'}, 5, 1)}, 'value', (1:5)' / 5, ...
%!             'sigma', ones (5, 1));
%! r = sluice.filter (m, [], o, 'members', 20, 'seed', 1, 'progress', false);
%! d = tempname ();
%! try
%!   sluice.report (r, 'outdir', d, 'period', {'2003-01-01', '2003-02-01'});
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:report:badoption');
%!   assert (~isempty (strfind (err.message, 'calendar')));
%! end
%! assert (~exist (d, 'dir'));

%!test
%! % a long record without a calendar: panels of 365 cycles; a log axis
%! % with values <= 0 leaves them out and counts them; a variable with no
%! % positive value is drawn on a linear axis, and the summary says both
%! m = sluice.model ('linear', 'A', 0.95, 'Q', 0.1, 'states', {'level'});
%! T = 800;
%! randn ('state', 1);
%! v = sin ((1:T)' / 30) + 0.2 * randn (T, 1);
%! o = struct ('time', (1:T)', 'variable', {repmat({'level'}, T, 1)}, 'value', v, ...
%!             'sigma', 0.3 * ones (T, 1));
%! r = sluice.filter (m, [], o, 'members', 50, 'seed', 1, 'progress', false, ...
%!                    'quantiles', [0.05 0.25 0.5 0.75 0.95]);
%! m2 = sluice.model (@(t, X, P, U, dt) -abs (X) - 1, 'states', {'deficit'}, 'x0', -2);
%! o2 = struct ('time', (1:5)', 'variable', {repmat({'deficit'}, 5, 1)}, 'value', -2 * ones (5, 1), ...
%!              'sigma', ones (5, 1));
%! r2 = sluice.filter (m2, [], o2, 'members', 20, 'seed', 1, 'progress', false);
%! d = tempname ();
%! unwind_protect
%!   files = sluice.report (r, 'outdir', d, 'obs', o, 'log_scale', {'level'});
%!   [~, nm] = cellfun (@fileparts, files, 'UniformOutput', false);
%!   assert (any (strcmp (nm, 'overview')));
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'one panel per 365 cycles (3 panels)')));
%!   % the count: quantiles of the drawn period and observations <= 0
%!   Q = reshape (r.states.quantiles(1, :, :), 5, []);
%!   nbad = sum (Q(:) <= 0) + sum (v <= 0);
%!   assert (nbad > 0);
%!   assert (~isempty (strfind (txt, sprintf ('level: %d value(s) <= 0', nbad))));
%!   assert (all (r2.states.quantiles(:) < 0));
%!   sluice.report (r2, 'outdir', fullfile (d, 'b'), 'obs', o2, 'log_scale', 'deficit');
%!   txt = fileread (fullfile (d, 'b', 'summary.txt'));
%!   assert (~isempty (strfind (txt, ['deficit: no positive value in the drawn period, ', ...
%!                                    'drawn on a linear axis'])));
%!   assert (~isempty (strfind (txt, 'time charts: the whole run in one chart each')));
%! unwind_protect_cleanup
%!   rm_dir (d);
%! end_unwind_protect
