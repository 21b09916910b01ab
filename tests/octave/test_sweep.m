% sluice.sweep: the documented point-seed hash recomputed independently,
% seeds and results independent of value order, dimension order and
% evaluation order, an interrupted sweep resumed from its file, and the
% parallel path when Octave's parallel package is there.

%!function h = ref_seed (root, key)
%!  % the hash of the help text, in exact 64-bit integer arithmetic
%!  % (an implementation independent of the one in sweep.m)
%!  txt = [sprintf('%.17g', root) '|' key];
%!  h = uint64 (0);
%!  M = uint64 (4294967291);
%!  for c = uint64 (txt)
%!    h = h * uint64 (65599) + c;
%!    h = h - idivide (h, M, 'floor') * M;
%!  end
%!  h = double (h);
%!endfunction

%!function s = noisy (p)
%!  % a score that depends on the point's seed and values
%!  global sweep_calls sweep_seen sweep_fail_at
%!  sweep_calls = sweep_calls + 1;
%!  if (sweep_calls == sweep_fail_at)
%!    error ('test:stop', 'stopped on purpose');
%!  end
%!  sweep_seen{end + 1} = sprintf ('%g/%s', p.interval, p.method);
%!  rand ('state', p.seed);
%!  s = struct ('err', p.interval * mean (rand (1, 5)), 'len', numel (p.method));
%!endfunction

%!function s = some_scores (p)
%!  s = struct ('x', double (p.n));
%!  if (p.n == 2)
%!    s.y = 1;
%!  end
%!endfunction

%!function s = fail_at_two (p)
%!  if (p.a == 2)
%!    error ('test:two', 'two is refused');
%!  end
%!  s = p.a;
%!endfunction

%!test
%! % the seeds are the documented hash of the sorted-name key; a worked
%! % example by hand: key of a = 1 is "a=n:1;"
%! g = struct ('b', [0.1 -1e-300], 'a', {{'pf', 7}});
%! t = sluice.sweep (@(p) 0, g, 'seed', 12345, 'workers', 1);
%! keys = {'a=s2:pf;b=n:0.10000000000000001;'; 'a=s2:pf;b=n:-1e-300;'; ...
%!         'a=n:7;b=n:0.10000000000000001;'; 'a=n:7;b=n:-1e-300;'};
%! for k = 1:4
%!   assert (t.seed(k), ref_seed (12345, keys{k}));
%! end
%! t1 = sluice.sweep (@(p) 0, struct ('a', 1), 'workers', 1);
%! % "1|a=n:1;" = bytes 49 124 97 61 110 58 49 59, folded by hand with
%! % h = mod (h * 65599 + b, 4294967291)
%! h = 0;
%! for b = [49 124 97 61 110 58 49 59]
%!   h = mod (h * 65599 + b, 4294967291);
%! end
%! assert (t1.seed, h);
%! assert (t1.seed, ref_seed (1, 'a=n:1;'));
%! assert (t1.seed, 441089960);   % the loop's value, recorded once (regression pin)

%!test
%! % results do not depend on the order of values, of dimensions, or of
%! % evaluation; they do depend on opts.seed
%! global sweep_calls sweep_seen sweep_fail_at
%! sweep_calls = 0; sweep_seen = {}; sweep_fail_at = -1;
%! g1 = struct ('interval', [5 10 20], 'members', [100 500], 'method', {{'pf', 'etkf'}});
%! g2 = struct ('method', {{'etkf', 'pf'}}, 'interval', [20 5 10], 'members', [500 100]);
%! f = @(p) setfield (noisy (p), 'm', p.members);
%! t1 = sluice.sweep (f, g1, 'seed', 3, 'workers', 1);
%! t2 = sluice.sweep (f, g2, 'seed', 3, 'workers', 1);
%! t3 = sluice.sweep (f, g1, 'seed', 4, 'workers', 1);
%! assert (numel (t1.seed), 12);
%! assert (numel (unique (t1.seed)), 12);
%! k1 = strcat (num2str (t1.interval), '/', num2str (t1.members), '/', t1.method);
%! k2 = strcat (num2str (t2.interval), '/', num2str (t2.members), '/', t2.method);
%! [tf, loc] = ismember (k1, k2);
%! assert (all (tf));
%! assert (t2.seed(loc), t1.seed);
%! assert (t2.err(loc), t1.err);
%! assert (t1.m, t1.members);
%! assert (t1.len, cellfun ('length', t1.method));
%! assert (all (t3.seed ~= t1.seed));
%! clear -global sweep_calls sweep_seen sweep_fail_at

%!test
%! % an interrupted sweep resumes: fun errors at call k, the rerun computes
%! % only the points not yet in the file and gives the same table as an
%! % uninterrupted sweep
%! global sweep_calls sweep_seen sweep_fail_at
%! g = struct ('interval', [5 10 20 40], 'method', {{'pf', 'etkf'}});
%! f = [tempname() '.mat'];
%! unwind_protect
%!   k = 5;
%!   sweep_calls = 0; sweep_seen = {}; sweep_fail_at = k;
%!   id = ''; msg = '';
%!   try
%!     sluice.sweep (@noisy, g, 'seed', 9, 'workers', 1, 'file', f);
%!   catch e
%!     id = e.identifier; msg = e.message;
%!   end
%!   assert (id, 'sluice:sweep:pointfailed');
%!   assert (~isempty (strfind (msg, '(interval=5, method=etkf)')), msg);
%!   assert (~isempty (strfind (msg, 'stopped on purpose')), msg);
%!   first = sweep_seen;
%!   assert (numel (first), k - 1);
%!   sweep_calls = 0; sweep_seen = {}; sweep_fail_at = -1;
%!   [t, info] = sluice.sweep (@noisy, g, 'seed', 9, 'workers', 1, 'file', f);
%!   assert (sweep_calls, 8 - (k - 1));
%!   assert (isempty (intersect (first, sweep_seen)));
%!   assert (info.computed, 8 - (k - 1));
%!   assert (info.nreused, k - 1);
%!   assert (info.reused, [true(k - 1, 1); false(8 - k + 1, 1)]);
%!   % a third run reuses everything
%!   sweep_calls = 0;
%!   [t3, info3] = sluice.sweep (@noisy, g, 'seed', 9, 'workers', 1, 'file', f);
%!   assert (sweep_calls, 0);
%!   assert (info3.nreused, 8);
%!   assert (t3, t);
%!   % the uninterrupted sweep
%!   sweep_calls = 0;
%!   tref = sluice.sweep (@noisy, g, 'seed', 9, 'workers', 1);
%!   assert (t, tref);
%!   % another root seed reuses nothing
%!   sweep_calls = 0;
%!   [~, info4] = sluice.sweep (@noisy, g, 'seed', 10, 'workers', 1, 'file', f);
%!   assert (sweep_calls, 8);
%!   assert (info4.nreused, 0);
%!   s = load (f);
%!   assert (numel (s.sweep_done.key), 16);
%!   assert (isempty (dir ([f '.tmp*'])));
%! unwind_protect_cleanup
%!   clear -global sweep_calls sweep_seen sweep_fail_at
%!   if (exist (f, 'file'))
%!     delete (f);
%!   end
%! end_unwind_protect

%!test
%! % scores missing at some points are NaN; point values keep their class
%! g = struct ('n', int32 ([1 2 3]), 'c', {{'u', 2}});
%! t = sluice.sweep (@some_scores, g, 'workers', 1);
%! assert (t.n, [1; 2; 3; 1; 2; 3]);
%! assert (class (t.n), 'double');
%! assert (t.c, {'u'; 'u'; 'u'; 2; 2; 2});
%! assert (t.x, [1; 2; 3; 1; 2; 3]);
%! assert (t.y, [NaN; 1; NaN; NaN; 1; NaN]);
%! t = sluice.sweep (@(p) double (isa (p.n, 'int32')), g, 'workers', 1);
%! assert (t.score, ones (6, 1));

%!test
%! % the parallel path gives the same table as the serial one
%! ok = false;
%! try
%!   pkg load parallel
%!   ok = exist ('pararrayfun') > 0;
%! catch
%!   ok = false;
%! end
%! if (~ok)
%!   printf ('note: Octave''s parallel package is not installed: parallel sweep not tested\n');
%! else
%!   g = struct ('a', 1:7, 'b', {{'x', 'y'}});
%!   fun = @(p) struct ('v', p.a + p.seed / 2^32, 'w', numel (p.b));
%!   f = [tempname() '.mat'];
%!   unwind_protect
%!     [ts, is] = sluice.sweep (fun, g, 'workers', 1);
%!     [tp, ip] = sluice.sweep (fun, g, 'workers', 2, 'file', f);
%!     assert (ip.parallel);
%!     assert (~is.parallel);
%!     assert (tp, ts);
%!     [tr, ir] = sluice.sweep (fun, g, 'workers', 2, 'file', f);
%!     assert (ir.nreused, 14);
%!     assert (tr, ts);
%!     g2 = struct ('a', 1:3);
%!     id = '';
%!     try
%!       sluice.sweep (@fail_at_two, g2, 'workers', 2);
%!     catch e
%!       id = e.identifier;
%!     end
%!     assert (id, 'sluice:sweep:pointfailed');
%!   unwind_protect_cleanup
%!     if (exist (f, 'file'))
%!       delete (f);
%!     end
%!   end_unwind_protect
%! end
