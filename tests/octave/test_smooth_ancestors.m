% Path degeneracy of the particle filter's fixed-lag smoother: for every
% smoothed time the run returns res.smoothed.distinct, the number of
% distinct members of that time the members whose weights smoothed it
% descend from, and warns with sluice:filter:smoothcollapse when that
% number is small at many times (thresholds in
% sluice.internal.diversity_limits). The counts are checked against a
% recount from the recorded ancestors (res.history.ancestors, traced
% back as in test_lag_smoother.m): the outside check of the core's
% window.

%!function a = recount (r, L)
%!  % the distinct ancestors of every smoothed time, traced back through
%!  % the recorded ancestors: time s is smoothed with the weights of time
%!  % min (s + L, T), whose members descend through the resamplings of
%!  % the times before it
%!  [N, T] = size (r.history.ancestors);
%!  a = zeros (1, T);
%!  for s = 1:T
%!    e = min (s + L, T);
%!    idx = (1:N)';
%!    for c = e-1:-1:s
%!      idx = r.history.ancestors(idx, c);
%!    end
%!    a(s) = numel (unique (idx));
%!  end
%!endfunction

%!function [r, id, msg] = run_quiet (varargin)
%!  % the run and the last warning it raised ('' for none), the warnings
%!  % kept from the screen
%!  lastwarn ('');
%!  s = warning ('off', 'all');
%!  warning ('on', 'sluice:filter:smoothcollapse');
%!  unwind_protect
%!    [~] = evalc ('r = sluice.filter (varargin{:});');
%!  unwind_protect_cleanup
%!    warning (s);
%!  end_unwind_protect
%!  [msg, id] = lastwarn ();
%!endfunction

%!shared spec, pr, obs_of
%! % a random walk x_k = x_(k-1) + N(0, 1) observed every step (common
%! % practice: the linear-Gaussian test case)
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1);
%! pr = sluice.prior ('x1', 'normal', [0 1]);
%! obs_of = @(T, sigma) struct ('time', (1:T)', 'variable', {repmat({'x1'}, T, 1)}, ...
%!                              'value', cumsum (sin (1:T))', 'sigma', sigma * ones (T, 1));

%!test
%! % very informative observations (sigma 0.05 against a step of sd 1:
%! % an ESS near 10 of 200, a resampling every time) and a lag of 100:
%! % the window's paths coalesce onto a few members, the counts match the
%! % recount, and the run warns, saying what it means and what to do
%! T = 200; L = 100; N = 200;
%! [r, id, msg] = run_quiet (spec, pr, obs_of (T, 0.05), 'members', N, 'seed', 5, ...
%!                           'lag', L, 'history', true, 'progress', false, 't0', 0);
%! assert (all (r.resampled));
%! assert (size (r.smoothed.distinct), [1 T]);
%! assert (r.smoothed.distinct, recount (r, L));
%! assert (max (r.smoothed.distinct(1:T-L)) < 20);
%! assert (r.smoothed.distinct(T), N);   % the last time is the filter's own
%! assert (id, 'sluice:filter:smoothcollapse');
%! assert (~isempty (strfind (msg, 'too narrow')), msg);
%! assert (~isempty (strfind (msg, 'shorter ''lag''')), msg);
%! assert (~isempty (strfind (msg, 'res.smoothed.distinct')), msg);

%!test
%! % a moderate case (sigma 0.5, lag 10): counts between 1 and N, equal
%! % to the recount at every time
%! T = 60; L = 10; N = 300;
%! r = run_quiet (spec, pr, obs_of (T, 0.5), 'members', N, 'seed', 6, 'lag', L, ...
%!                'history', true, 'progress', false, 't0', 0);
%! a = r.smoothed.distinct;
%! assert (a, recount (r, L));
%! assert (any (a > 1 & a < N));
%! assert (all (diff (a(T-L:T)) >= 0));   % shorter lags at the end: no fewer

%!test
%! % well mixed: uninformative observations (sigma 100) keep the weights
%! % nearly equal, nothing is resampled and every member is its own
%! % ancestor at a short lag; no warning
%! T = 50; L = 3; N = 200;
%! [r, id] = run_quiet (spec, pr, obs_of (T, 100), 'members', N, 'seed', 7, 'lag', L, ...
%!                      'history', true, 'progress', false, 't0', 0);
%! assert (~any (r.resampled));
%! assert (r.smoothed.distinct, N * ones (1, T));
%! assert (r.smoothed.distinct, recount (r, L));
%! assert (id, '');

%!test
%! % the ensemble Kalman smoother resamples only dead members: every
%! % member is its own ancestor, and no warning
%! T = 30; N = 40;
%! [r, id] = run_quiet (spec, pr, obs_of (T, 0.05), 'members', N, 'seed', 8, 'lag', 10, ...
%!                      'method', 'etkf', 'progress', false, 't0', 0);
%! assert (r.smoothed.distinct, N * ones (1, T));
%! assert (~strcmp (id, 'sluice:filter:smoothcollapse'));

%!test
%! % the warning is ours: it can be switched off by its identifier
%! T = 120; L = 60;
%! s = warning ('off', 'sluice:filter:smoothcollapse');
%! unwind_protect
%!   lastwarn ('');
%!   r = sluice.filter (spec, pr, obs_of (T, 0.05), 'members', 100, 'seed', 9, 'lag', L, ...
%!                      'progress', false, 't0', 0);
%!   [~, id] = lastwarn ();
%!   assert (~strcmp (id, 'sluice:filter:smoothcollapse'));
%!   assert (min (r.smoothed.distinct) < 20);
%! unwind_protect_cleanup
%!   warning (s);
%! end_unwind_protect
