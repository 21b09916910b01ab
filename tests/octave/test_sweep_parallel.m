% sluice.sweep in parallel (Octave's parallel package): the same table as
% the serial run, and a sweep stopped by a failing point keeps every point
% its workers finished.

%!test
%! if (isempty (pkg ('list', 'parallel')))
%!   return;    % the serial path is tested in sweep.m
%! end
%! g = struct ('a', 1:6, 'b', [0.5 2]);
%! f = @(p) struct ('v', p.a * p.b + mod (p.seed, 1000) / 1000, 'w', p.a - p.b);
%! [t1, i1] = sluice.sweep (f, g, 'workers', 1);
%! [t2, i2] = sluice.sweep (f, g, 'workers', 2);
%! assert (~i1.parallel && i2.parallel);
%! assert (t2, t1);

%!test
%! if (isempty (pkg ('list', 'parallel')))
%!   return;
%! end
%! file = [tempname() '.sweep'];
%! unwind_protect
%!   g = struct ('a', 1:8);
%!   % points with a >= 6 fail: the others are kept on disk
%!   bad = @(p) struct ('v', p.a ^ 2, 'w', validatestring (char ('a' + (p.a >= 6)), {'a'}) == 'a');
%!   try
%!     sluice.sweep (bad, g, 'workers', 2, 'file', file);
%!     error ('the sweep should have failed');
%!   catch err
%!     assert (err.identifier, 'sluice:sweep:pointfailed');
%!     assert (~isempty (strfind (err.message, 'a=6')));
%!   end
%!   good = @(p) struct ('v', p.a ^ 2, 'w', true);
%!   [t, info] = sluice.sweep (good, g, 'workers', 2, 'file', file);
%!   assert (info.nreused, 5);
%!   assert (info.reused', [true(1, 5), false(1, 3)]);
%!   assert (t.v', (1:8) .^ 2);
%!   assert (isempty (glob ([file '.part*'])));
%!   % everything is reused now
%!   [~, info] = sluice.sweep (good, g, 'workers', 2, 'file', file);
%!   assert (info.nreused, 8);
%! unwind_protect_cleanup
%!   if (exist (file, 'file'))
%!     delete (file);
%!   end
%!   parts = glob ([file '.part*']);
%!   for i = 1:numel (parts)
%!     delete (parts{i});
%!   end
%! end_unwind_protect

%!test
%! % a grid over the filter's options, one of which the filter does not
%! % know: the point fails with the filter's own message and identifier
%! spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1);
%! obs = struct ('time', (1:5)', 'variable', {repmat({'x1'}, 5, 1)}, ...
%!               'value', zeros (5, 1), 'sigma', ones (5, 1));
%! run = @(p) struct ('ev', getfield (sluice.filter (spec, [], obs, rmfield (p, 'seed')), ...
%!                                    'log_evidence'));
%! t = sluice.sweep (run, struct ('members', [10 20], 'progress', false), 'workers', 1);
%! assert (all (isfinite (t.ev)));
%! try
%!   sluice.sweep (run, struct ('members', [10 20], 'membrs', 5), 'workers', 1);
%!   error ('the sweep should have failed');
%! catch err
%!   assert (err.identifier, 'sluice:sweep:pointfailed');
%!   assert (~isempty (strfind (err.message, 'membrs')), err.message);
%!   assert (~isempty (strfind (err.message, 'sluice:filter:badoption')), err.message);
%! end
