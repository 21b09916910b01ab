function [out, msg, id] = interruptible (what, varargin)
  % Internal, Octave only: the compiled gateways built for Octave call the
  % Octave functions of a run through here: the user's model function
  % as interruptible (fun, t, X, P, U[, dt]) -- the same as
  % sluice.internal.guarded_call -- and the trampolines by name,
  % interruptible ('sluice.internal.observe', ...) and
  % interruptible ('sluice.internal.progress', ...). Errors come back as
  % values (out empty, msg and id the error's message and identifier).
  %
  % A Ctrl-C that arrives during the call is Octave's interrupt, which
  % try/catch does not catch and which would otherwise unwind through the
  % C core; an error raised in an unwind_protect_cleanup block replaces
  % it, so here it becomes the error sluice:kernel:interrupted, which the
  % gateway's trap catches: the core then unwinds normally and the gateway
  % raises sluice:<fn>:interrupted. Called with no argument after a
  % trapped call, the first output tells whether that call was stopped by
  % Ctrl-C (true) or by an error raised outside this function's try, such
  % as running out of memory while returning (false).
  %
  % out = interruptible ('-run', gateway, args...) runs a whole compiled
  % run the same way, with its errors passed through: an interrupt that
  % still escapes the gateway (one arriving in the few statements before
  % a callback is protected) becomes sluice:kernel:interrupted there.
  %
  % unwind_protect is Octave's own syntax: this file is the one place in
  % m/ that uses it (tools/lint_matlab allows it here), and MATLAB, whose
  % gateways call guarded_call, observe and progress directly, never
  % reads it. The interpreter acts on a pending interrupt before each
  % statement, so the protection starts at the second statement.
  persistent stopped
  unwind_protect
    returned = false;
    failed = [];
    out = [];
    msg = '';
    id = '';
    if (nargin == 0)
      out = isequal (stopped, true);
      stopped = false;
    else
      stopped = false;
      try
        if (~ischar (what))
          out = what (varargin{:});
        elseif (strcmp (what, '-run'))
          out = feval (varargin{:});
        elseif (nargout == 0)
          feval (what, varargin{:});
        else
          [out, msg, id] = feval (what, varargin{:});
        end
      catch err
        if (strcmp (what, '-run'))
          failed = err;
        else
          out = [];
          msg = err.message;
          id = err.identifier;
        end
      end
    end
    returned = true;
  unwind_protect_cleanup
    if (~(exist ('returned', 'var') && returned))
      stopped = true;
      error ('sluice:kernel:interrupted', 'interrupted (Ctrl-C)');
    end
  end
  if (~isempty (failed))
    rethrow (failed);
  end
end

%!test
%! % the model form: the function's result, or its error as values
%! [out, msg, id] = sluice.internal.interruptible (@(t, X) t * X, 2, [1 3]);
%! assert (out, [2 6]);
%! assert ({msg, id}, {'', ''});
%! [out, msg, id] = sluice.internal.interruptible (@(t, X) error ('Octave:bad-alloc', 'out of memory here'), 2, 1);
%! assert (isempty (out));
%! assert ({msg, id}, {'out of memory here', 'Octave:bad-alloc'});
%! assert (sluice.internal.interruptible (), false);

%!test
%! % a trampoline by name: its outputs, or an error it lets out as values
%! [out, msg, id] = sluice.internal.interruptible ('sluice.internal.guarded_call', @(x) x + 1, 1);
%! assert (out, 2);
%! assert ({msg, id}, {'', ''});
%! [out, msg, id] = sluice.internal.interruptible ('error', 'my:own:id', 'escaped');
%! assert (isempty (out));
%! assert ({msg, id}, {'escaped', 'my:own:id'});
%! sluice.internal.interruptible ('sluice.internal.progress', 0.5, 1, 0);
%! assert (sluice.internal.interruptible (), false);

%!test
%! % the run form passes results and errors through
%! assert (sluice.internal.interruptible ('-run', 'max', [3 1 2]), 3);
%! try
%!   sluice.internal.interruptible ('-run', 'error', 'my:run:failed', 'the run failed');
%!   error ('it should have failed');
%! catch err
%!   assert (err.identifier, 'my:run:failed');
%!   assert (err.message, 'the run failed');
%! end
%! assert (sluice.internal.interruptible (), false);
