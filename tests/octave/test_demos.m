% Every %!demo block of every public function (m/+sluice/*.m) runs without
% error, with figures kept off screen, so the demos cannot rot. A demo's
% printed output is captured and dropped.

%!function n = run_demos (file)
%!  [code, idx] = test (file, 'grabdemo');
%!  n = numel (idx) - 1;
%!  for k = 1:n
%!    block = code(idx(k):idx(k + 1) - 1);
%!    try
%!      evalc_block (block);
%!    catch err
%!      error ('demo %d of %s failed: %s', k, file, err.message);
%!    end
%!    close all;
%!  end
%!endfunction

%!function evalc_block (block___)
%!  % a function of its own, so a demo's variables stay in this workspace
%!  evalc (block___);
%!endfunction

%!test
%! root = fileparts (which ('sluice.filter'));
%! d = dir (fullfile (root, '*.m'));
%! old_visible = get (0, 'defaultfigurevisible');
%! old_warn = warning ('off', 'Octave:gnuplot-graphics');
%! set (0, 'defaultfigurevisible', 'off');
%! counts = struct ();
%! unwind_protect
%!   for k = 1:numel (d)
%!     [~, name] = fileparts (d(k).name);
%!     counts.(name) = run_demos (fullfile (root, d(k).name));
%!   end
%! unwind_protect_cleanup
%!   set (0, 'defaultfigurevisible', old_visible);
%!   warning (old_warn);
%!   close all;
%! end_unwind_protect
%! % the main entry points each show themselves in a demo
%! main = {'filter', 'twin', 'sweep', 'smooth', 'esmda', 'pmmh', 'report'};
%! for k = 1:numel (main)
%!   assert (counts.(main{k}) >= 1, 'sluice.%s has no demo', main{k});
%! end
