% A prepared run of sluice.filter (option 'prepare'): run again with a
% seed, values of fixed parameters or observation values, it returns,
% field for field, what the same unprepared call returns (the reference
% here is sluice.filter itself, called with the equivalent model, prior
% and table); what it cannot change is refused with an identifier.

%!shared spec, pr, obs, opts
%! % x_t = a x_(t-1) from x_0 ~ N(5, 0.5^2), b and c fixed (b by a fixed
%! % prior entry, c by the model's default), observed at t = 1..15 with
%! % two rows at t = 4 and a missing value
%! T = 15;
%! spec = sluice.model (@(t, X, P, U, dt) P(1, :) .* X + 0 * P(2, :) + 0 * P(3, :), ...
%!                      'states', {'x'}, 'params', {'a', 'b', 'c'}, 'defaults', [0.9 1 2], ...
%!                      'x0', 5);
%! spec.lower = [0; -5; 0];
%! spec.upper = [2; 5; 10];
%! pr = sluice.prior ('x', 'normal', [5 0.5], 'a', 'uniform', [0.7 1.1], 'b', 'fixed', 1.5);
%! y = 5 * 0.93 .^ (1:T)' + 0.2 * sin (3 * (1:T)');
%! obs = struct ('time', [(1:4)'; 4; (5:T)'], 'variable', {repmat({'x'}, T + 1, 1)}, ...
%!               'value', [y(1:4); y(4) + 0.1; y(5:T)], 'sigma', 0.3 * ones (T + 1, 1));
%! obs.value(7) = NaN;
%! opts = {'members', 200, 't0', 0, 'progress', false, 'state_noise', 0.05};

%!test
%! % the same seed: the same result as the unprepared call, and again with
%! % another seed (the initial ensemble drawn again)
%! run = sluice.filter (spec, pr, obs, opts{:}, 'seed', 3, 'prepare', true);
%! assert (run.prepared_for, 'sluice.filter');
%! assert (run.seed, 3);
%! assert (run.settable_params, {'b', 'c'});
%! assert (run.obs_rows, 16);
%! assert (run.times, 1:15);
%! a = sluice.filter (spec, pr, obs, opts{:}, 'seed', 3);
%! assert (isequaln (sluice.filter (run), a));
%! b = sluice.filter (spec, pr, obs, opts{:}, 'seed', 11);
%! assert (isequaln (sluice.filter (run, 'seed', 11), b));
%! assert (isequaln (sluice.filter (run, struct ('seed', 11)), b));
%! assert (~isequal (a.final.X, b.final.X));

%!test
%! % parameters: a fixed prior entry and a default, as if the prior or the
%! % model said so
%! run = sluice.filter (spec, pr, obs, opts{:}, 'prepare', true);
%! assert (isempty (run.seed));
%! p2 = pr;
%! p2(3) = sluice.prior ('b', 'fixed', -0.25);
%! s2 = spec;
%! s2.defaults(3) = 7.5;
%! a = sluice.filter (s2, p2, obs, opts{:}, 'seed', 5);
%! r = sluice.filter (run, 'seed', 5, 'params', struct ('b', -0.25, 'c', 7.5));
%! assert (isequaln (r, a));
%! assert (r.final.P(2:3, :), repmat ([-0.25; 7.5], 1, 200));
%! % the prepared run itself is not changed by a run of it
%! assert (isequaln (sluice.filter (run, 'seed', 5), ...
%!                   sluice.filter (spec, pr, obs, opts{:}, 'seed', 5)));

%!test
%! % observation values: the same rows with other values (NaN: missing)
%! run = sluice.filter (spec, pr, obs, opts{:}, 'seed', 4, 'prepare', true);
%! o2 = obs;
%! o2.value = obs.value(end:-1:1) + 0.5;
%! o2.value([2 9]) = NaN;
%! a = sluice.filter (spec, pr, o2, opts{:}, 'seed', 4);
%! r = sluice.filter (run, 'values', o2.value);
%! assert (isequaln (r, a));
%! assert (r.skipped_total, 3);   % rows 2, 9 and 10 (row 7 reversed)
%! % all three at once
%! p2 = pr;
%! p2(3) = sluice.prior ('b', 'fixed', 0.5);
%! a = sluice.filter (spec, p2, o2, opts{:}, 'seed', 8);
%! r = sluice.filter (run, 'values', o2.value', 'params', struct ('b', 0.5), 'seed', 8);
%! assert (isequaln (r, a));

%!test
%! % a run without a seed draws a new one each time, as the unprepared
%! % call does; the seed drawn is in the result
%! run = sluice.filter (spec, pr, obs, opts{:}, 'prepare', true);
%! r1 = sluice.filter (run);
%! r2 = sluice.filter (run);
%! assert (r1.seed ~= r2.seed);
%! assert (isequaln (sluice.filter (run, 'seed', r1.seed), r1));

%!test
%! % the ensemble Kalman methods and the linear model take the same path
%! m = sluice.model ('linear', 'A', [0.9 0.1; 0 0.8], 'Q', 0.1 * eye (2));
%! p = sluice.prior ('x1', 'normal', [0 1], 'x2', 'normal', [1 1]);
%! o = struct ('time', (1:6)', 'variable', {{'x1'; 'x2'; 'x1'; 'x2'; 'x1'; 'x2'}}, ...
%!             'value', [0.3; 0.9; 0.1; 0.7; -0.2; 0.5], 'sigma', 0.4 * ones (6, 1));
%! run = sluice.filter (m, p, o, 'method', 'etkf', 'members', 30, 'progress', false, ...
%!                      'prepare', true);
%! a = sluice.filter (m, p, o, 'method', 'etkf', 'members', 30, 'progress', false, 'seed', 2);
%! assert (isequaln (sluice.filter (run, 'seed', 2), a));

%!test
%! % 'prepare', false is an ordinary call
%! a = sluice.filter (spec, pr, obs, opts{:}, 'seed', 3, 'prepare', false);
%! assert (isequaln (a, sluice.filter (spec, pr, obs, opts{:}, 'seed', 3)));

%!function r = prepared (spec, pr, obs, opts)
%!  r = sluice.filter (spec, pr, obs, opts{:}, 'seed', 1, 'prepare', true);
%!endfunction

% changed sizes and names, options a prepared run cannot change
%!error <the prepared run has 16 observation rows, got 15 values> sluice.filter (prepared (spec, pr, obs, opts), 'values', ones (15, 1))
%!error id=sluice:filter:preparedchange sluice.filter (prepared (spec, pr, obs, opts), 'values', ones (17, 1))
%!error <model of the prepared run has no parameter of that name> sluice.filter (prepared (spec, pr, obs, opts), 'params', struct ('k', 1))
%!error <params.a: the prior of the prepared run draws this parameter> sluice.filter (prepared (spec, pr, obs, opts), 'params', struct ('a', 1))
%!error id=sluice:filter:preparedchange sluice.filter (prepared (spec, pr, obs, opts), 'members', 50)
%!error <option 'state_noise' cannot change in a prepared run> sluice.filter (prepared (spec, pr, obs, opts), 'state_noise', 0.1)
%!error id=sluice:filter:preparedchange sluice.filter (prepared (spec, pr, obs, opts), 'prepare', true)
% bad values
%!error id=sluice:filter:badoption sluice.filter (prepared (spec, pr, obs, opts), 'no_such_option', 1)
%!error id=sluice:filter:badoption sluice.filter (prepared (spec, pr, obs, opts), 'seed')
%!error id=sluice:filter:badoption sluice.filter (prepared (spec, pr, obs, opts), 'seed', -1)
%!error id=sluice:filter:badoption sluice.filter (prepared (spec, pr, obs, opts), 'seed', 1.5)
%!error id=sluice:filter:badoption sluice.filter (prepared (spec, pr, obs, opts), {1}, 2)
%!error <option names must be strings> sluice.filter (prepared (spec, pr, obs, opts), {'seed'}, 2)
%!error <params.b = 6 lies outside the parameter's bounds \[-5, 5\]> sluice.filter (prepared (spec, pr, obs, opts), 'params', struct ('b', 6))
%!error id=sluice:filter:badparams sluice.filter (prepared (spec, pr, obs, opts), 'params', struct ('c', NaN))
%!error id=sluice:filter:badparams sluice.filter (prepared (spec, pr, obs, opts), 'params', struct ('c', single (1)))
%!error id=sluice:filter:badparams sluice.filter (prepared (spec, pr, obs, opts), 'params', [1 2])
%!error <observation row 3: value is infinite> sluice.filter (prepared (spec, pr, obs, opts), 'values', [1; 1; Inf; ones(13, 1)])
%!error id=sluice:filter:badobs sluice.filter (prepared (spec, pr, obs, opts), 'values', int8 (ones (16, 1)))
%!error id=sluice:filter:badobs sluice.filter (prepared (spec, pr, obs, opts), 'values', ones (4, 4))
% not a prepared run, or one edited out of shape
%!error id=sluice:filter:badrun sluice.filter (struct ('prepared_for', 'sluice.filter'))
%!error id=sluice:filter:badrun r = prepared (spec, pr, obs, opts); r.engine = rmfield (r.engine, 'plan'); sluice.filter (r)
%!error id=sluice:filter:badrun r = prepared (spec, pr, obs, opts); r.engine.version = 'x'; sluice.filter (r)
%!error id=sluice:filter:badrun r = prepared (spec, pr, obs, opts); r.prepared_for = 3; sluice.filter (r)
% prepare's own value, and a checkpoint (each run may have another seed)
%!error <prepare must be true or false> sluice.filter (spec, pr, obs, 'prepare', 'yes')
%!error <a prepared run cannot have a checkpoint> sluice.filter (spec, pr, obs, 'seed', 1, 'checkpoint', tempname (), 'prepare', true)

%!test
%! % a sweep over a fixed parameter with a prepared run: the same table as
%! % with a call per point
%! run = sluice.filter (spec, pr, obs, opts{:}, 'prepare', true);
%! f1 = @(p) struct ('ll', getfield (sluice.filter (run, 'seed', p.seed, ...
%!                                                 'params', struct ('c', p.c)), 'log_evidence'));
%! f2 = @(p) struct ('ll', getfield (sluice.filter (setfield (spec, 'defaults', [0.9; 1; p.c]), ...
%!                                                 pr, obs, opts{:}, 'seed', p.seed), 'log_evidence'));
%! g = struct ('c', [0.5 3 8]);
%! a = sluice.sweep (f1, g, 'seed', 2, 'workers', 1);
%! b = sluice.sweep (f2, g, 'seed', 2, 'workers', 1);
%! assert (a.ll, b.ll);
%! assert (numel (unique (a.seed)), 3);

%!test
%! % no parameter moves (a and b fixed by the prior, c by the default): a
%! % run with another seed draws its members in the gateway (settings
%! % field draw), the same numbers as the unprepared call draws in Octave
%! p2 = sluice.prior ('x', 'normal', [5 0.5], 'a', 'fixed', 0.92, 'b', 'fixed', 1.5);
%! run = sluice.filter (spec, p2, obs, opts{:}, 'seed', 2, 'prepare', true);
%! for s = [2 9 13]
%!   assert (isequaln (sluice.filter (run, 'seed', s), ...
%!                     sluice.filter (spec, p2, obs, opts{:}, 'seed', s)));
%! end
%! % and with new values of the fixed parameters (drawn again)
%! s2 = spec;
%! s2.defaults(3) = 4;
%! p3 = p2;
%! p3(2) = sluice.prior ('a', 'fixed', 0.8);
%! assert (isequaln (sluice.filter (run, 'seed', 9, 'params', struct ('a', 0.8, 'c', 4)), ...
%!                   sluice.filter (s2, p3, obs, opts{:}, 'seed', 9)));
%! % the draws do depend on the seed
%! a = sluice.filter (run, 'seed', 9);
%! b = sluice.filter (run, 'seed', 10);
%! assert (~isequal (a.final.X, b.final.X));
