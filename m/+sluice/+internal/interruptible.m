function out = interruptible (what, varargin)
  % Internal, Octave only: out = interruptible ('-run', gateway, args...)
  % runs a whole compiled run, out = gateway (args...), with its errors
  % passed through, and turns a Ctrl-C that Octave acts on during it into
  % the error sluice:kernel:interrupted, which the caller raises as
  % sluice:<fn>:interrupted.
  %
  % Inside the run the gateway takes a pending Ctrl-C at its polls, and
  % its calls of Octave functions catch one that unwinds them
  % (mex/mexcall.cc). What reaches here is a Ctrl-C that Octave acted on
  % outside those calls: one that came after the run's last poll, which
  % the interpreter acts on at the first statement after the call, or one
  % in a call the gateway makes without that catch. A Ctrl-C is Octave's
  % interrupt, which try/catch does not catch; an error raised in an
  % unwind_protect_cleanup block replaces it.
  %
  % unwind_protect is Octave's own syntax: this file is the one place in
  % m/ that uses it (tools/lint_matlab allows it here), and MATLAB, whose
  % runs call their gateway directly, never reads it. The interpreter
  % acts on a pending interrupt before each statement, so the protection
  % starts at the second statement.
  if (~strcmp (what, '-run'))
    error ('sluice:interruptible:badop', 'argument 1: expected ''-run''');
  end
  unwind_protect
    returned = false;
    failed = [];
    out = [];
    try
      out = feval (varargin{:});
    catch err
      failed = err;
    end
    returned = true;
  unwind_protect_cleanup
    if (~(exist ('returned', 'var') && returned))
      error ('sluice:kernel:interrupted', 'interrupted (Ctrl-C)');
    end
  end
  if (~isempty (failed))
    rethrow (failed);
  end
end

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

%!error id=sluice:interruptible:badop sluice.internal.interruptible ('max', 1)
