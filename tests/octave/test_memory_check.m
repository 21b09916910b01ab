% The memory check of a run: the compiled filter adds up what it will
% allocate (the core's workspace to the byte, by part, and the arrays of
% its result, the history among them) and refuses only what would not
% fit, naming the largest part and the
% option that drives it. The test hook SLUICE_MEMORY_AVAILABLE (bytes)
% stands for the machine's available memory and makes the check run at
% every size, so the boundary can be put anywhere: for every method and
% option the run is refused 1 byte below its need, with
% sluice:<caller>:nomemory and the right option named, and starts at it.
% The need itself is checked against what the options must add (8 bytes
% a double, 4 an index: common practice).

%!function X = stoppable (t, X, P, U, dt)
%!  % x <- a x (a the parameter, 0.9 without one); with the flag set the
%!  % run stops at its first step, once its memory check has passed
%!  global sluice_memory_test_stop
%!  if (sluice_memory_test_stop)
%!    error ('test:stopped', 'stopped at the first step');
%!  end
%!  if (isempty (P))
%!    X = 0.9 * X;
%!  else
%!    X = P(1, :) .* X;
%!  end
%!endfunction

%!function [r, msg] = refused (call, avail)
%!  % whether call () is refused for memory with avail bytes available
%!  setenv ('SLUICE_MEMORY_AVAILABLE', sprintf ('%.17g', avail));
%!  r = false;
%!  msg = '';
%!  try
%!    call ();
%!  catch err
%!    r = ~isempty (regexp (err.identifier, '^sluice:\w+:nomemory$', 'once'));
%!    msg = err.message;
%!    if (~r && ~strcmp (err.identifier, 'test:stopped'))
%!      rethrow (err);
%!    end
%!  end
%!endfunction

%!function [B, msg, res] = boundary (call)
%!  % the least available memory at which call () is not refused (found
%!  % by bisection, the runs stopped at their first step), the refusal's
%!  % message 1 byte below it, and the whole run made with exactly B
%!  global sluice_memory_test_stop
%!  sluice_memory_test_stop = true;
%!  unwind_protect
%!    lo = 0;
%!    hi = 2^40;
%!    assert (refused (call, lo));
%!    assert (~refused (call, hi));
%!    while (hi - lo > 1)
%!      mid = floor ((lo + hi) / 2);
%!      if (refused (call, mid))
%!        lo = mid;
%!      else
%!        hi = mid;
%!      end
%!    end
%!    B = hi;
%!    [r, msg] = refused (call, B - 1);
%!    assert (r);
%!    sluice_memory_test_stop = false;
%!    setenv ('SLUICE_MEMORY_AVAILABLE', sprintf ('%.17g', B));
%!    res = call ();
%!  unwind_protect_cleanup
%!    clear -global sluice_memory_test_stop;
%!    unsetenv ('SLUICE_MEMORY_AVAILABLE');
%!  end_unwind_protect
%!endfunction

%!function check_named (msg, what, option)
%!  % the compiled run's refusal, naming its largest part and option
%!  assert (strncmp (msg, 'a run of ', 9), msg);
%!  assert (~isempty (strfind (msg, what)), msg);
%!  assert (~isempty (strfind (msg, sprintf ('driven by ''%s''', option))), msg);
%!  check_options (msg);
%!endfunction

%!function check_options (msg)
%!  % every option a refusal names is one of sluice.filter's
%!  % (sluice.internal.run_defaults)
%!  names = regexp (msg, 'driven by ([^;)]*)', 'tokens');
%!  assert (~isempty (names), msg);
%!  d = sluice.internal.run_defaults ();
%!  for k = 1:numel (names)
%!    opts = regexp (names{k}{1}, '''(\w+)''', 'tokens');
%!    assert (~isempty (opts), msg);
%!    for j = 1:numel (opts)
%!      assert (isfield (d, opts{j}{1}), sprintf ('%s: %s is no option', msg, opts{j}{1}));
%!    end
%!  end
%!endfunction

%!shared spec, spec_a, pr_a, obs, obsm, o
%! % a river level's recession x <- 0.9 x (or a x, a ~ N(0.9, 0.02)) as an
%! % Octave function, observed at t = 1..20; invented data. obsm: 120
%! % observations at each of 3 times (as many as the ETKF's members below)
%! spec = sluice.model (@stoppable, 'states', {'x'}, 'x0', 1);
%! spec_a = sluice.model (@stoppable, 'states', {'x'}, 'params', {'a'}, 'x0', 1, ...
%!                        'defaults', 0.9);
%! pr_a = sluice.prior ('a', 'normal', [0.9 0.02]);
%! T = 20;
%! obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, ...
%!               'value', 0.9 .^ (1:T)' + 0.1 * sin (1:T)', 'sigma', 0.2 * ones (T, 1));
%! tm = kron ((1:3)', ones (120, 1));
%! obsm = struct ('time', tm, 'variable', {repmat({'x'}, 360, 1)}, ...
%!                'value', 0.9 .^ tm + 0.1 * cos (1:360)', 'sigma', 0.3 * ones (360, 1));
%! o = {'seed', 3, 't0', 0, 'progress', false, 'threads', 1};

%!test
%! % the particle filter: the boundary, and what 'history' adds: the
%! % states, parameters, weights and ancestors of every member at every
%! % cycle, N x T x (n + p + 2) doubles (sluice.filter's help)
%! N = 500; T = 20;
%! B0 = boundary (@() sluice.filter (spec, [], obs, o{:}, 'members', N));
%! [B, msg, res] = boundary (@() sluice.filter (spec, [], obs, o{:}, 'members', N, ...
%!                                            'history', true));
%! check_named (msg, 'history', 'history');
%! assert (B - B0, 8 * N * T * (1 + 0 + 2));
%! assert (size (res.history.X), [1 N T]);

%!test
%! % the lag window: lag + 1 slots of (n + p) x N doubles and N 4-byte
%! % ancestor indices, a summary buffer of (n + p) x N doubles, lag + 1
%! % slot pointers (in whole 64-byte lines), and the smoothed means and
%! % quantiles (n + p) x (nq + 1) x T and distinct ancestors 1 x T (pf.h,
%! % the help's "lag x (n + p) x N doubles"); 1 x 512 x 8 and 512 x 4
%! % bytes are multiples of 64, so no other alignment enters
%! N = 512; T = 20; L = 12;
%! B0 = boundary (@() sluice.filter (spec, [], obs, o{:}, 'members', N));
%! [B, msg, res] = boundary (@() sluice.filter (spec, [], obs, o{:}, 'members', N, 'lag', L));
%! check_named (msg, 'lag window', 'lag');
%! assert (B - B0, 64 * ceil (8 * (L + 1) / 64) + (L + 1) * (8 * 1 + 4) * N + 8 * 1 * N + ...
%!                 8 * (1 * (3 + 1) + 1) * T);
%! assert (isfield (res, 'smoothed'));

%!test
%! % the weakly coupled particle filter's lag window: its slots hold a row
%! % of N 4-byte ancestor indices per component (each component's rows
%! % follow that component's own ancestry), so lag + 1 slots of (n + p) x
%! % N doubles and n_comp x N indices, the summary buffer, the slot
%! % pointers, the smoothed records and the components' distinct
%! % ancestors n_comp x T (pf.h); two states, two components, the
%! % components' own lags within the window's
%! N = 512; T = 20; L = 12;
%! spec_w = sluice.model (@stoppable, 'states', {'x', 'y'}, 'x0', [1; 1], ...
%!                        'components', {'cx', {'x'}, 'cy', {'y'}});
%! ow = [o, {'coupling', 'weak', 'members', N}];
%! B0 = boundary (@() sluice.filter (spec_w, [], obs, ow{:}));
%! [B, msg, res] = boundary (@() sluice.filter (spec_w, [], obs, ow{:}, 'lag', L));
%! check_named (msg, 'lag window', 'lag');
%! need = 64 * ceil (8 * (L + 1) / 64) + (L + 1) * (8 * 2 + 4 * 2) * N + 8 * 2 * N + ...
%!        8 * (2 * (3 + 1) + 1) * T + 8 * 2 * T;
%! assert (B - B0, need);
%! assert (size (res.coupling.smoothed_distinct), [2 T]);
%! % one lag per component: the window is the longest's, the same bytes
%! B2 = boundary (@() sluice.filter (spec_w, [], obs, ow{:}, 'lag', [3 L]));
%! assert (B2, B);

%!test
%! % the ETKF with as many observations at a time as members works with
%! % two N x N matrices (8 N^2 bytes each)
%! N = 120;
%! B0 = boundary (@() sluice.filter (spec, [], obsm, o{:}, 'members', N));
%! [B, msg] = boundary (@() sluice.filter (spec, [], obsm, o{:}, 'members', N, ...
%!                                       'method', 'etkf'));
%! check_named (msg, 'analysis', 'method');
%! assert (~isempty (strfind (msg, '''method'' ''etkf''')), msg);
%! assert (B - B0 >= 2 * 8 * N^2);

%!test
%! % the serial and stochastic analyses keep the predicted observations'
%! % perturbations, m x N (m the observations of one time), the
%! % stochastic one its perturbed innovations m x N too
%! N = 300; m = 120;
%! B0 = boundary (@() sluice.filter (spec, [], obsm, o{:}, 'members', N));
%! for method = {'ensrf', 'eakf', 'enkf'}
%!   [B, msg] = boundary (@() sluice.filter (spec, [], obsm, o{:}, 'members', N, ...
%!                                         'method', method{1}));
%!   check_named (msg, 'analysis', 'method');
%!   assert (B - B0 >= 8 * m * N * (1 + strcmp (method{1}, 'enkf')));
%! end

%!test
%! % the LETKF: an N x N matrix per local analysis; more threads, more
%! % of them (the thread scratch grows)
%! N = 150;
%! loc = struct ('radius', 2);
%! B0 = boundary (@() sluice.filter (spec, [], obs, o{:}, 'members', N));
%! [B, msg] = boundary (@() sluice.filter (spec, [], obs, o{:}, 'members', N, ...
%!                                       'method', 'letkf', 'localization', loc));
%! check_named (msg, 'analysis', 'method');
%! assert (B - B0 >= 8 * N^2);
%! [B2, msg2] = boundary (@() sluice.filter (spec, [], obs, o{:}, 'members', N, ...
%!                                         'method', 'letkf', 'localization', loc, ...
%!                                         'threads', 2));
%! assert (B2 - B >= 8 * N^2);

%!test
%! % the weighted ensemble Kalman filter: its gain's buffers, m x N twice
%! N = 300; m = 120;
%! B0 = boundary (@() sluice.filter (spec, [], obsm, o{:}, 'members', N, 'state_noise', 0.1));
%! [B, msg] = boundary (@() sluice.filter (spec, [], obsm, o{:}, 'members', N, ...
%!                                       'method', 'wenkf', 'state_noise', 0.1));
%! check_named (msg, 'analysis', 'method');
%! assert (~isempty (strfind (msg, '''method'' ''wenkf''')), msg);
%! assert (B - B0 >= 2 * 8 * m * N);

%!test
%! % resample_move keeps every cycle's ancestors and the paths being
%! % re-run (T x N 4-byte indices each) and a re-run ensemble
%! N = 400; T = 20;
%! B0 = boundary (@() sluice.filter (spec_a, pr_a, obs, o{:}, 'members', N, ...
%!                                   'param_move', 'fixed'));
%! [B, msg, res] = boundary (@() sluice.filter (spec_a, pr_a, obs, o{:}, 'members', N, ...
%!                                            'param_move', 'resample_move'));
%! check_named (msg, 'parameter moves', 'param_move');
%! assert (B - B0 >= 2 * 4 * T * N + 8 * N * (2 * 1 + 3 * 1));
%! assert (res.param_move, 'resample_move');

%!test
%! % on paths with noise resample_move keeps every member's standard
%! % normal draws, three copies of T x (noisy states) x N doubles
%! N = 400; T = 20;
%! q = {o{:}, 'members', N, 'param_move', 'resample_move', 'state_noise', 0.05};
%! B0 = boundary (@() sluice.filter (spec_a, pr_a, obs, q{:}, 'move_paths', 0));
%! [B, msg] = boundary (@() sluice.filter (spec_a, pr_a, obs, q{:}, 'move_paths', 0.1));
%! check_named (msg, 'path draws', 'move_paths');
%! assert (B - B0 >= 3 * 8 * T * N);
%! assert (B - B0 < 3 * 8 * T * N + 1024);

%!test
%! % SMC2: members x inner_members in all, each group's filter re-run
%! [B, msg, res] = boundary (@() sluice.filter (spec_a, pr_a, obs, o{:}, 'members', 20, ...
%!                                            'inner_members', 30, 'param_move', 'smc2', ...
%!                                            'state_noise', 0.05));
%! assert (strncmp (msg, 'a run of 20 x 30 members', 24), msg);
%! assert (~isempty (strfind (msg, 'driven by ''param_move'' and ''inner_members''')), msg);
%! check_options (msg);
%! assert (res.param_move, 'smc2');
%! assert (B > 8 * 600 * 2);

%!test
%! % tempering runs at its boundary and is refused 1 byte below
%! [B, msg, res] = boundary (@() sluice.filter (spec, [], obs, o{:}, 'members', 300, ...
%!                                            'temper_ess', 0.5));
%! assert (strncmp (msg, 'a run of 300 members with ''method'' ''pf''', 39), msg);
%! check_options (msg);
%! assert (numel (res.temper_steps), 20);

%!test
%! % the workflows built on the filter raise their own identifier
%! setenv ('SLUICE_MEMORY_AVAILABLE', '0');
%! unwind_protect
%!   try
%!     sluice.evidence (spec_a, pr_a, obs, 'members', 100, 'seed', 1, 't0', 0, ...
%!                      'progress', false);
%!     error ('test:noerror', 'not refused');
%!   catch err
%!     assert (err.identifier, 'sluice:evidence:nomemory');
%!   end
%! unwind_protect_cleanup
%!   unsetenv ('SLUICE_MEMORY_AVAILABLE');
%! end_unwind_protect

%!test
%! % EnSRF, EAKF and the stochastic EnKF at N = 1e5 on one state (the
%! % analysis sluice.enkf does at that size in 0.01 s): they run on this
%! % machine, and with the hook at their exact need
%! sp = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'x'});
%! ob = struct ('time', (1:3)', 'variable', {{'x'; 'x'; 'x'}}, ...
%!              'value', [0.37; -0.21; 0.52], 'sigma', [0.5; 0.5; 0.5]);
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! for method = {'ensrf', 'eakf', 'enkf'}
%!   r = sluice.filter (sp, pr, ob, o{:}, 'members', 1e5, 'method', method{1});
%!   assert (all (isfinite (r.states.mean)));
%!   [B, msg, r2] = boundary (@() sluice.filter (spec, pr, ob, o{:}, 'members', 1e5, ...
%!                                             'method', method{1}));
%!   assert (strncmp (msg, sprintf ('a run of 100000 members with ''method'' ''%s''', ...
%!                                  method{1}), 40), msg);
%!   assert (all (isfinite (r2.states.mean)));
%!   % the need is tens of MB, far from the GB the old estimate asked
%!   assert (B < 100e6);
%! end

%!test
%! % a hook that is not a number of bytes
%! setenv ('SLUICE_MEMORY_AVAILABLE', 'plenty');
%! unwind_protect
%!   try
%!     sluice.filter (spec, [], obs, o{:}, 'members', 10);
%!     error ('test:noerror', 'not refused');
%!   catch err
%!     assert (err.identifier, 'sluice:ensure_memory:badhook');
%!   end
%! unwind_protect_cleanup
%!   unsetenv ('SLUICE_MEMORY_AVAILABLE');
%! end_unwind_protect

%!test
%! % the other callers of the memory check read the hook: refused 1 byte
%! % below what they state (a draw: p x N doubles; ES-MDA: 3 p + 2 m
%! % rows of N doubles; a model spec: 400 bytes a state), run at it
%! pr2 = sluice.prior ('a', 'normal', [0 1], 'b', 'uniform', [0 1]);
%! unwind_protect
%!   setenv ('SLUICE_MEMORY_AVAILABLE', sprintf ('%d', 8 * 2 * 1000 - 1));
%!   assert (refused (@() sluice.draw (pr2, 1000, 1), 8 * 2 * 1000 - 1));
%!   assert (~refused (@() sluice.draw (pr2, 1000, 1), 8 * 2 * 1000));
%!   need = 8 * 200 * (3 * 2 + 2 * 3);
%!   es = @() sluice.esmda (@(P) [P; P(1, :)], pr2, [0.1; 0.5; 0.2], 0.1, 'members', 200, ...
%!                          'seed', 1);
%!   assert (refused (es, need - 1));
%!   assert (~refused (es, need));
%!   assert (refused (@() sluice.model ('lorenz96', 'n', 1000), 400 * 1000 - 1));
%!   assert (~refused (@() sluice.model ('lorenz96', 'n', 1000), 400 * 1000));
%!   % simulate states its own need, then the compiled run checks its own
%!   sim = @() sluice.simulate (sluice.model ('lorenz63'), [1; 1; 1], [], 0:0.01:1);
%!   assert (refused (sim, 0));
%!   assert (~refused (sim, 1e12));
%!   % the smoother of a filter's history
%!   unsetenv ('SLUICE_MEMORY_AVAILABLE');
%!   sp = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'x'});
%!   rh = sluice.filter (sp, sluice.prior ('x', 'normal', [0 1]), obs, o{:}, 'members', 50, ...
%!                       'history', true);
%!   sm = @() sluice.smooth (rh, 'method', 'ffbsi', 'model', sp);
%!   assert (refused (sm, 0));
%!   assert (~refused (sm, 1e12));
%! unwind_protect_cleanup
%!   unsetenv ('SLUICE_MEMORY_AVAILABLE');
%! end_unwind_protect

%!test
%! % a few members and many quantile levels: the summaries of every
%! % cycle, v x (nq + 2) x T doubles and 13 series of T, dominate
%! N = 10; T = 20; nq = 99;
%! B0 = boundary (@() sluice.filter (spec, [], obs, o{:}, 'members', N, 'quantiles', 0.5));
%! [B, msg] = boundary (@() sluice.filter (spec, [], obs, o{:}, 'members', N, ...
%!                                       'quantiles', (1:nq) / 100));
%! check_named (msg, 'summaries of every cycle', 'quantiles');
%! assert (B - B0 >= 8 * T * (nq - 1));

%!test
%! % resuming a checkpoint reads the run's whole workspace and weights
%! % into memory of their own, besides the run's (the first call writes
%! % the file, the second resumes its last write)
%! N = 300;
%! f = [tempname() '.ckpt'];
%! unwind_protect
%!   run = @() sluice.filter (spec, [], obs, o{:}, 'members', N, 'checkpoint', f);
%!   B1 = boundary (run);
%!   assert (exist (f, 'file') == 2);
%!   [B2, msg] = boundary (run);
%!   check_named (msg, 'checkpoint', 'checkpoint');
%!   % the copy is the workspace, which holds the members' states at least
%!   % twice over (8 bytes a double), and the N weights
%!   assert (B2 - B1 >= 8 * N + 2 * 8 * N);
%! unwind_protect_cleanup
%!   if (exist (f, 'file'))
%!     delete (f);
%!   end
%! end_unwind_protect
