% The flood-town demo (demos/demo_flood_town.m) run end to end at its
% reduced size: it prints the posterior of muS and lambdaP, the caution,
% and writes the sweep table as a CSV with one row per census interval
% (5, 10, 20 years). The checks are of the demo's own output (common
% practice for a scenario script); the model and filter have their own
% tests against references.

%!test
%! root = fileparts (fileparts (fileparts (which ('sluice.filter'))));
%! addpath (fullfile (root, 'demos'));
%! out = tempname ();
%! unwind_protect
%!   txt = evalc ('res = demo_flood_town (out, ''small'');');
%!   assert (~isempty (strfind (txt, 'posterior of muS')));
%!   assert (~isempty (strfind (txt, 'posterior of lambdaP')));
%!   assert (~isempty (strfind (txt, 'supports studies, not warnings or the design of defences')));
%!   assert (~isempty (strfind (txt, 'licensed engineering practice')));
%!   file = fullfile (out, 'demo_flood_sweep.csv');
%!   assert (exist (file, 'file') == 2);
%!   assert (~isempty (strfind (txt, file)));
%!   lines = strsplit (strtrim (fileread (file)), char (10));
%!   assert (strncmp (lines{1}, 'census_years,surveys,seeds,rmse_G', 33));
%!   assert (numel (lines) - 1 >= 3);
%!   data = dlmread (file, ',', 1, 0);
%!   assert (sort (data(:, 1))', [5 10 20]);
%!   assert (all (isfinite (data(:))));
%!   % the printed posterior is the returned one; its 90% band is ordered
%!   m = res.posterior_muS;
%!   assert (m(2) < m(3) && m(3) < m(4));
%!   assert (~isempty (strfind (txt, sprintf ('mean %.3f', m(1)))));
%!   assert (res.truth_muS, 0.10);
%! unwind_protect_cleanup
%!   if (exist (out, 'dir'))
%!     confirm_recursive_rmdir (false, 'local');
%!     rmdir (out, 's');
%!   end
%! end_unwind_protect

%!error id=sluice:demo_flood_town:badscale
%! addpath (fullfile (fileparts (fileparts (fileparts (which ('sluice.filter')))), 'demos'));
%! demo_flood_town (tempname (), 'huge');

%!error id=sluice:demo_flood_town:badoutdir
%! addpath (fullfile (fileparts (fileparts (fileparts (which ('sluice.filter')))), 'demos'));
%! demo_flood_town (3);
