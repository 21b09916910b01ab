% sluice.report on a sweep table (heat maps, CSV, summary) and on a run
% with a smoothed estimate (dashed smoothed band, smoothed.csv).

%!test
%! d = tempname ();
%! unwind_protect
%!   g = struct ('interval', [5 10 20], 'method', {{'pf', 'etkf'}}, 'rep', 1:3);
%!   f = @(p) struct ('rmse', p.interval / 10 + strcmp (p.method, 'etkf') + p.rep / 100, ...
%!                    'spread', p.rep);
%!   t = sluice.sweep (f, g, 'workers', 1);
%!   files = sluice.report (t, 'outdir', d, 'axes', {'interval', 'method'});
%!   assert (any (strcmp (files, fullfile (d, 'heat_rmse.png'))));
%!   assert (any (strcmp (files, fullfile (d, 'heat_spread.png'))));
%!   for k = 1:numel (files)
%!     info = dir (files{k});
%!     assert (info.bytes > 0);
%!   end
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   % the smallest rmse: interval 5, pf, rep 1 -> 0.5 + 0.01
%!   assert (~isempty (strfind (txt, 'rmse: smallest 0.51 at interval=5, method=pf, rep=1')));
%!   assert (~isempty (strfind (txt, 'not a flood warning')));
%!   c = fileread (fullfile (d, 'sweep.csv'));
%!   lines = strsplit (strtrim (c), "\n");
%!   assert (lines{1}, 'interval,method,rep,seed,rmse,spread');
%!   assert (numel (lines), 19);
%!   % one dimension: a line chart
%!   files = sluice.report (t, 'outdir', d, 'axes', 'interval', 'scores', 'rmse');
%!   assert (any (strcmp (files, fullfile (d, 'heat_rmse.png'))));
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   if (exist (d, 'dir'))
%!     rmdir (d, 's');
%!   end
%! end_unwind_protect

%!test
%! d = tempname ();
%! unwind_protect
%!   spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1);
%!   obs = struct ('time', (1:20)', 'variable', {repmat({'x1'}, 20, 1)}, ...
%!                 'value', sin ((1:20)' / 3), 'sigma', 0.3 * ones (20, 1));
%!   r = sluice.filter (spec, sluice.prior ('x1', 'normal', [0 1]), obs, 'members', 500, ...
%!                      'seed', 1, 'lag', 5, 'progress', false);
%!   files = sluice.report (r, 'outdir', d);
%!   assert (any (strcmp (files, fullfile (d, 'smoothed.csv'))));
%!   s = dlmread (fullfile (d, 'smoothed.csv'), ',', 1, 0);
%!   assert (s(:, 2)', r.smoothed.states.mean, 1e-8);
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   if (exist (d, 'dir'))
%!     rmdir (d, 's');
%!   end
%! end_unwind_protect

%!error id=sluice:report:badsweep sluice.report (struct ('a', 1, 'seed', 1), 'outdir', tempname ())
%!error id=sluice:report:badsweep sluice.report (struct ('a', [1; 2], 'seed', [1; 2], 'v', [1; 2]), 'outdir', tempname (), 'axes', {'b'})
%!error id=sluice:report:badsweep sluice.report (struct ('a', [1; 2], 'seed', [1; 2], 'v', [1; 2]), 'outdir', tempname (), 'scores', {'w'})
%!error id=sluice:report:badoption sluice.report (struct ('a', [1; 2], 'seed', [1; 2], 'v', [1; 2]), 'outdir', tempname (), 'axes', 3)
