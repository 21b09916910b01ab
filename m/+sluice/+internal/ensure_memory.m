function ensure_memory (need, fn, what, part_bytes, part_name, part_options)
  % Internal: refuse work that needs `need` bytes when the machine has
  % less available, before anything large is made:
  % sluice:<fn>:nomemory, "<what> needs about ... GB; ... GB are available".
  % With the largest parts of the need (their bytes, a cellstr of what
  % they are, and a cell of cellstrs of the options that drive each) the
  % message names them: "... needs about 80 GB (74 GB of it the analysis,
  % driven by 'method' and 'members'); ...". The compiled filter calls
  % this with its exact need (mex/pf_run.c).
  %
  % Test hook: the environment variable SLUICE_MEMORY_AVAILABLE (bytes),
  % when set, is taken as the memory available instead of asking
  % memory (); the compiled filter then checks at every size, not only
  % from 1 GiB (DEVELOPERS.md).
  avail = available ();
  if (need > avail)
    detail = '';
    if (nargin >= 6)
      if (ischar (part_name))
        part_name = {part_name};
        part_options = {part_options};
      end
      parts = cell (1, numel (part_bytes));
      for k = 1:numel (part_bytes)
        opt = strcat ('''', part_options{k}(:)', '''');
        if (numel (opt) > 1)
          opt = [strjoin(opt(1:end-1), ', '), ' and ', opt{end}];
        else
          opt = opt{1};
        end
        if (part_bytes(k) >= need)
          parts{k} = sprintf ('the %s, driven by %s', part_name{k}, opt);
        elseif (k == 1)
          parts{k} = sprintf ('%s of it the %s, driven by %s', gb (part_bytes(k)), ...
                              part_name{k}, opt);
        else
          parts{k} = sprintf ('%s the %s, driven by %s', gb (part_bytes(k)), part_name{k}, opt);
        end
      end
      detail = [' (', strjoin(parts, '; '), ')'];
    end
    error (['sluice:' fn ':nomemory'], '%s needs about %s%s; %s are available', ...
           what, gb (need), detail, gb (avail));
  end
end

function avail = available ()
  % the bytes the machine has available: the test hook's, memory ()'s,
  % or Inf where neither says
  avail = Inf;
  hook = getenv ('SLUICE_MEMORY_AVAILABLE');
  if (~isempty (hook))
    avail = str2double (hook);
    if (~(isreal (avail) && avail >= 0))
      error ('sluice:ensure_memory:badhook', ...
             'SLUICE_MEMORY_AVAILABLE must be a number of bytes >= 0, got ''%s''', hook);
    end
    return;
  end
  try
    [~, sys] = memory ();
    avail = sys.PhysicalMemory.Available;
  catch
    % memory () is not available on every platform: rely on allocation errors
  end
end

function s = gb (bytes)
  % bytes in GB (10^9 bytes), or in MB or kB below those; 3 digits
  units = {'GB', 1e9; 'MB', 1e6; 'kB', 1e3};
  k = find (bytes >= [units{:, 2}] | ~isfinite (bytes), 1);
  if (isempty (k))
    k = 3;
  end
  v = bytes / units{k, 2};
  if (v >= 1000)
    s = sprintf ('%.0f %s', v, units{k, 1});
  else
    s = sprintf ('%.3g %s', v, units{k, 1});
  end
end
