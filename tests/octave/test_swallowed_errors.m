% Errors without an identifier, raised inside a step that a public function
% catches and raises again, must still come out (Octave 7.3's
% error (id, '%s', msg) raises nothing when id is empty). Each test puts a
% stand-in for one internal step on the path, in a temporary folder, that
% fails with error ('plain message'), and checks the caller's error.

%!function check_raised (target, call, id)
%!  % run call () with the function target (a path under +sluice) replaced
%!  % by one that raises an error with no identifier; the error must come
%!  % out with identifier id and the original message
%!  d = tempname ();
%!  [folder, name] = fileparts (fullfile (d, target));
%!  mkdir (folder);
%!  fid = fopen (fullfile (folder, [name '.m']), 'w');
%!  fprintf (fid, 'function varargout = %s (varargin)\n  error (''plain message'');\nend\n', name);
%!  fclose (fid);
%!  addpath (d);
%!  raised = false;
%!  unwind_protect
%!    try
%!      call ();
%!    catch e
%!      raised = true;
%!    end
%!  unwind_protect_cleanup
%!    rmpath (d);
%!    confirm_recursive_rmdir (false, 'local');
%!    rmdir (d, 's');
%!  end_unwind_protect
%!  assert (raised, true);
%!  assert (e.identifier, id);
%!  assert (! isempty (strfind (e.message, 'plain message')));
%!endfunction

%!test
%! s = sluice.model ('lorenz63', 'dt', 0.001);
%! check_raised ('+sluice/+internal/run_engine', ...
%!               @() sluice.simulate (s, [1; 1; 1], [], 0:0.5:1), 'sluice:simulate:failed');

%!test
%! s = sluice.model ('lorenz63', 'dt', 0.001);
%! check_raised ('+sluice/+internal/run_engine', ...
%!               @() sluice.propagate (s, ones (3, 5), [], 0, 0.5), 'sluice:propagate:failed');

%!test
%! spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1);
%! pr = sluice.prior ('x1', 'normal', [0 2]);
%! truth = struct ('times', 0:5, 'x0', 2);
%! net = struct ('variable', 'x1', 'every', 1, 'sigma', 0.3);
%! check_raised ('+sluice/+internal/run_engine', ...
%!               @() sluice.twin (spec, truth, net, 'seed', 5, 'prior', pr, ...
%!                                'filter', {'members', 50}), 'sluice:twin:failed');

%!test
%! G = [1 0.5; 0.2 1; 1 1];
%! pr = sluice.prior ('a', 'normal', [0 1], 'b', 'lognormal', [0 0.5]);
%! y = [0.7; 1.4; 2.1];
%! check_raised ('+sluice/enkf', @() sluice.esmda (@(P) G * P, pr, y, 0.1, ...
%!                                                 'members', 50, 'seed', 3), ...
%!               'sluice:esmda:failed');
%! check_raised ('+sluice/draw', @() sluice.esmda (@(P) G * P, pr, y, 0.1, ...
%!                                                'members', 50, 'seed', 3), ...
%!               'sluice:esmda:failed');

%!test
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, ...
%!               'value', [1; 2; 0], 'sigma', [1; 1; 1]);
%! r = sluice.filter (spec, pr, obs, 'members', 50, 'seed', 4, 't0', 0, 'history', true);
%! check_raised ('+sluice/+kernel/smooth', @() sluice.smooth (r), 'sluice:smooth:failed');
