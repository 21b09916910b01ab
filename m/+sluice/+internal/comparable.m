function v = comparable (v)
  % Internal: v with every function handle replaced by its text and, for
  % an anonymous function, the values it captured, so that two settings
  % can be compared with isequaln after one of them was saved to a file and
  % read back (handles themselves never compare equal).
  if (isa (v, 'function_handle'))
    info = functions (v);
    captured = struct ();
    if (isfield (info, 'workspace') && ~isempty (info.workspace))
      captured = sluice.internal.comparable (info.workspace{1});
    end
    v = struct ('handle', func2str (v), 'captured', captured);
  elseif (iscell (v))
    for k = 1:numel (v)
      v{k} = sluice.internal.comparable (v{k});
    end
  elseif (isstruct (v))
    f = fieldnames (v);
    for k = 1:numel (v)
      for j = 1:numel (f)
        v(k).(f{j}) = sluice.internal.comparable (v(k).(f{j}));
      end
    end
  end
end

%!test
%! % handles compare by their text, everything else as it is
%! a = struct ('f', @(t, x) x + 1, 'g', {{@sin, 2}}, 'h', [1 NaN]);
%! b = struct ('f', @(t, x) x + 1, 'g', {{@sin, 2}}, 'h', [1 NaN]);
%! assert (isequaln (sluice.internal.comparable (a), sluice.internal.comparable (b)));
%! b.f = @(t, x) x + 2;
%! assert (~isequaln (sluice.internal.comparable (a), sluice.internal.comparable (b)));
%! c = sluice.internal.comparable (@cos);
%! assert (c.handle, 'cos');
%! % the values an anonymous function captured count
%! k = 1; a.f = @(x) k * x;
%! k = 2; b.f = @(x) k * x;
%! assert (~isequaln (sluice.internal.comparable (a), sluice.internal.comparable (b)));
