function varargout = mpi (op, varargin)
  % Internal: the processes of an mpirun job, for sluice's distributed runs.
  %
  %   w = sluice.internal.mpi ('world', fn, want)
  %     want: 'auto' (distributed when launched by mpirun and the gateway
  %     sluice.kernel.mpi is built), true (the gateway must be built, else
  %     sluice:<fn>:mpiunavailable naming the make command; outside mpirun
  %     the run is this process alone) or false (this process alone).
  %     w: active (more than one rank shares the work), rank, size.
  %     Inside work already dealt across the ranks (a hold, below) w is
  %     this process alone: a sweep's point or an MCMC chain that runs a
  %     filter runs it whole on its own rank.
  %   h = sluice.internal.mpi ('hold')  the ranks' work is dealt out until
  %     h (an onCleanup) is cleared; tf = sluice.internal.mpi ('held')
  %   tf = sluice.internal.mpi ('built')     the gateway is built
  %   tf = sluice.internal.mpi ('launched')  this Octave was started by mpirun
  %   sluice.internal.mpi ('same', fn, what, text)
  %     every rank must pass the same text (what it was given: the call's
  %     arguments as text); otherwise sluice:<fn>:mpimismatch on every rank
  %   sluice.internal.mpi ('agree', err)
  %     every rank says whether its piece of work failed (err: [] or a
  %     caught error); if any did, every rank raises the error of the
  %     lowest failing rank, its identifier kept, the message naming it
  %   v = sluice.internal.mpi ('bcast', v, root)  any value, from rank root
  %   c = sluice.internal.mpi ('gather', v, root) root: 1 x size cell of
  %     every rank's value; other ranks: {}
  %
  % Values travel as the bytes of Octave's own binary save format.
  persistent held   % holds in force (they nest)
  if (isempty (held))
    held = 0;
  end
  switch (op)
    case 'hold'
      held = held + 1;
      varargout{1} = onCleanup (@() sluice.internal.mpi ('release'));
    case 'release'
      held = max (held - 1, 0);
    case 'held'
      varargout{1} = held > 0;
    case 'built'
      varargout{1} = built ();
    case 'launched'
      varargout{1} = launched ();
    case 'world'
      if (held > 0)
        varargout{1} = struct ('active', false, 'rank', 0, 'size', 1);
      else
        varargout{1} = world (varargin{:});
      end
    case 'same'
      same (varargin{:});
    case 'agree'
      agree (varargin{1});
    case 'bcast'
      [v, root] = varargin{:};
      varargout{1} = unpack (sluice.kernel.mpi ('bcast', pack (v), root));
    case 'gather'
      [v, root] = varargin{:};
      c = sluice.kernel.mpi ('gather', pack (v), root);
      for k = 1:numel (c)
        c{k} = unpack (c{k});
      end
      varargout{1} = c;
    otherwise
      error ('sluice:mpi:badarg', 'unknown operation ''%s''', op);
  end
end

function tf = built ()
  here = fileparts (mfilename ('fullpath'));
  tf = exist (fullfile (fileparts (here), '+kernel', ['mpi.' mexext()]), 'file') > 0;
end

function tf = launched ()
  % mpirun (Open MPI) and PMIx-based launchers (srun) set these
  tf = ~isempty (getenv ('OMPI_COMM_WORLD_SIZE')) || ~isempty (getenv ('PMIX_RANK')) ...
       || ~isempty (getenv ('PMI_RANK'));
end

function w = world (fn, want)
  w = struct ('active', false, 'rank', 0, 'size', 1);
  if (islogical (want) && ~want)
    return;
  end
  have = built ();
  if (islogical (want) && want && ~have)
    error (['sluice:' fn ':mpiunavailable'], ...
           ['%s: distributed runs (option ''mpi'', true) need the MPI gateway ', ...
            'sluice.kernel.mpi, which this build lacks: build it with "make MPI=1" ', ...
            '(or "make mpi"; it installs Open MPI, the Debian packages ', ...
            'libopenmpi-dev and openmpi-bin), then start Octave with ', ...
            '"mpirun -np P octave-cli script.m"'], fn);
  end
  if (~have || ~launched ())
    return;
  end
  [r, n] = sluice.kernel.mpi ('init');
  w.rank = r;
  w.size = n;
  w.active = n > 1;
end

function same (fn, what, text)
  % a hash of the text (the sweep's documented point hash), and its length
  b = double (text);
  h = 0;
  for i = 1:numel (b)
    h = mod (h * 65599 + b(i), 4294967291);
  end
  v = [h, numel(b)];
  lo = sluice.kernel.mpi ('allreduce', v, 'min');
  hi = sluice.kernel.mpi ('allreduce', v, 'max');
  if (any (lo ~= hi))
    [r, n] = sluice.kernel.mpi ('init');
    error (['sluice:' fn ':mpimismatch'], ...
           ['%s: rank %d of %d: the ranks were given different %s; every rank of ', ...
            'the job must make the same call (same script, same arguments)'], ...
           fn, r, n, what);
  end
end

function agree (err)
  [r, n] = sluice.kernel.mpi ('init');
  mark = n;
  if (~isempty (err))
    mark = r;
  end
  first = sluice.kernel.mpi ('allreduce', mark, 'min');
  if (first >= n)
    return;
  end
  e = struct ('identifier', '', 'message', '');
  if (r == first)
    e.identifier = err.identifier;
    e.message = err.message;
  end
  e = sluice.internal.mpi ('bcast', e, first);
  id = e.identifier;
  if (isempty (id))
    id = 'sluice:mpi:rankfailed';
  end
  if (r == first)
    error (id, '%s', e.message);
  end
  error (id, '%s (raised on rank %d of %d)', e.message, first, n);
end

function b = pack (v)
  f = [tempname() '.sluice-mpi'];
  sluice.internal.compat ('save_binary', f, 'v', v);
  fid = fopen (f, 'r');
  if (fid < 0)
    error ('sluice:mpi:failed', 'cannot read back the temporary file %s', f);
  end
  b = fread (fid, Inf, '*uint8');
  fclose (fid);
  delete (f);
end

function v = unpack (b)
  f = [tempname() '.sluice-mpi'];
  fid = fopen (f, 'w');
  if (fid < 0)
    error ('sluice:mpi:failed', 'cannot write the temporary file %s', f);
  end
  fwrite (fid, b, 'uint8');
  fclose (fid);
  s = sluice.internal.compat ('load_binary', f);
  delete (f);
  v = s.v;
end
