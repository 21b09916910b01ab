% -*- texinfo -*-
% @deftypefn  {} {[@var{table}, @var{info}] =} sluice.sweep (@var{fun}, @var{grid})
% @deftypefnx {} {[@var{table}, @var{info}] =} sluice.sweep (@var{fun}, @var{grid}, @var{opts})
% @deftypefnx {} {[@var{table}, @var{info}] =} sluice.sweep (@var{fun}, @var{grid}, @var{name}, @var{value}, @dots{})
% Run a function over a grid of option values and collect its scores.
% Every point of the grid is run and the scores go in one table.
%
% @var{grid} is a scalar struct whose fields are the dimensions of the
% sweep. Each field holds the values of that dimension: a non-empty real
% vector (double, single, integer or logical; no NaN) or a non-empty cell
% array whose elements are character rows or real scalars. Values within a
% dimension must be distinct. The sweep visits the Cartesian product of all
% dimensions, the first dimension varying fastest (as @code{ndgrid}).
% A dimension may not be called @code{seed}.
%
% @var{fun} is a function handle called as @code{@var{s} = fun (@var{point})}.
% @var{point} is a struct with one field per dimension, holding that
% point's value (an element of the vector, or the content of the cell), and
% the field @code{seed}: a whole number in [0, 2^32) to seed whatever random
% draws @var{fun} makes. @var{s} is either a real scalar (stored as the
% score @code{score}) or a scalar struct of real scalar scores (numeric or
% logical; NaN and Inf are kept). Points may return different sets of
% scores: a score a point did not return is NaN in its row.
%
% The seed of a point depends only on @code{opts.seed} and on the point's
% own values, never on its position in the grid, the order of the
% dimensions or the order of evaluation, so a sweep gives the same results
% serially, in parallel, or resumed. It is computed from the point's key,
% the text made of the dimensions in sorted name order, each written as
% @code{name=n:V;} for a number (V printed with @code{%.17g}) or
% @code{name=sL:T;} for a text T of L characters. With the bytes
% b_1 @dots{} b_L of the text @code{[sprintf('%.17g', opts.seed) '|' key]}:
% @example
% h_0 = 0,   h_i = mod (h_@{i-1@} * 65599 + b_i, 4294967291),   seed = h_L
% @end example
% (4294967291 is the largest prime below 2^32; every product is exact in
% double arithmetic).
%
% Options, as a struct @var{opts} or as name, value pairs:
% @table @code
% @item seed
% a whole number from 0 to 2^53 (default 1), the root of every point seed.
% @item workers
% a whole number >= 1 (default @code{nproc ()}). With more than one worker
% and Octave's @code{parallel} package loadable, points are run with
% @code{pararrayfun} (one call over all the points to run, each worker
% taking the next point when it is free); otherwise serially.
% Each worker is a separate Octave process, so in parallel @var{fun} must
% be callable there: a function in a file on the path, or an anonymous
% function that calls only such functions (not a subfunction or a
% function defined in a script). Each point then runs its filter with the
% OpenMP threads it asks for: give the filter @code{'threads', 1} to keep
% one thread per worker. Where the points change only the seed, the
% values of fixed parameters or the observation values, @var{fun} can run
% a filter prepared once before the sweep (@code{sluice.filter}, option
% @code{prepare}), which skips the checks every point would repeat:
% @code{run = sluice.filter (model, prior, obs, 'prepare', true)} and
% @code{fun = @@(p) struct ('ll', getfield (sluice.filter (run, 'seed',
% p.seed, 'params', struct ('k', p.k)), 'log_evidence'))} return what the
% unprepared calls return.
% @item file
% the name of a results file. After each finished point the results so
% far are written there: to a temporary file in
% the same directory, then renamed over it, so the file is always whole.
% In parallel, each worker also writes its finished point at once to
% @var{file}@code{.part}@var{k} (merged into @var{file} at the end, or by
% the next call), so a sweep stopped part-way loses no finished point.
% Under mpirun (option @code{mpi}) rank 0 alone writes it, after each
% round of points.
% It holds the variable @code{sweep_done}, a struct of columns @code{key}
% (the point keys), @code{seed}, @code{time} and @code{scores} (a cell of
% score structs), saved in Octave's own binary format (@code{save -binary}).
% Its cost grows with the number of points saved. A later call with the same
% file reuses every point whose key and seed are found there and runs only
% the others: an interrupted sweep resumes where it stopped.
% @item mpi
% @code{'auto'} (default), true or false. With @code{'auto'}, a sweep in an
% Octave started by @code{mpirun -np P octave-cli script.m} (Open MPI),
% with sluice built by @code{make MPI=1}, deals the points to run across
% the P processes (ranks), every rank calling @code{sluice.sweep} with the
% same arguments: rank k runs the points k+1, k+1+P, @dots{} of those to
% run, one at a time (@code{workers} is not used), in rounds of one point
% a rank. After each round rank 0 gathers the round's scores, writes the
% results file, and sends the scores back: every rank returns the whole
% table, equal bit for bit to the single-process sweep's (the point seeds
% do not depend on who runs a point). Ranks beyond the number of points
% idle. false: each process runs the whole sweep by itself. true: as
% @code{'auto'}, but a build without the MPI gateway is the error
% @code{sluice:sweep:mpiunavailable}. Outside mpirun every value runs the
% sweep in this process.
% @end table
%
% A sweep takes no @code{checkpoint} (@code{sluice:sweep:badoption}):
% its @code{file} is how it resumes. A filter that @var{fun} runs with a
% @code{'checkpoint'} needs a file of its own at each point (a name made
% of the point's values): one file for every point would be refused at
% the second point as written by a run with other settings
% (@code{sluice:sweep:pointfailed}).
%
% @var{table} is a struct of column vectors, one row per grid point: one
% column per dimension (double, or a cell column for a cell dimension),
% the column @code{seed}, then one double column per score.
%
% @var{info} has the fields @code{time} (a column: seconds spent in
% @var{fun} at each point; for a reused point, the time recorded in the
% file), @code{reused} (a logical column), @code{computed} and
% @code{nreused} (counts of points run now and taken from the file),
% @code{total} (seconds for the whole call), @code{overhead} (seconds per
% point computed now spent outside @var{fun}: (total - time in fun) /
% computed; under mpirun, summed over the ranks: (total * ranks - time in
% fun) / computed), @code{workers} and @code{parallel} (true if
% @code{pararrayfun} was used), @code{ranks} and @code{rank} (the number
% of mpirun processes sharing the points and this one's number from 0; 1
% and 0 otherwise).
%
% Example:
% @example
% @group
% grid = struct ('interval', [5 10 20], 'members', [100 500], ...
%                'method', @{@{'pf', 'etkf'@}@});
% score = @@(p) struct ('rmse', p.interval / sqrt (p.members), ...
%                       'fast', strcmp (p.method, 'etkf'));
% [t, info] = sluice.sweep (score, grid, 'seed', 7, 'file', 'sweep.mat');
% [~, best] = min (t.rmse);
% printf ('best: interval %g, members %g, %s\n', ...
%         t.interval(best), t.members(best), t.method@{best@});
% @end group
% @end example
%
% Errors: @code{sluice:sweep:badfun} (@var{fun} not a function handle, or
% one taking no argument), @code{sluice:sweep:badgrid} (not a scalar
% struct, no field, an empty or ill-typed dimension, a repeated value, a
% dimension named @code{seed}), @code{sluice:sweep:badoption} (unknown
% option, a name without a value, a bad value),
% @code{sluice:sweep:badfile} (a results file that cannot be read or
% written), @code{sluice:sweep:badscores} (@var{fun} returned something
% other than a real scalar or a struct of real scalars, or a score named
% like a dimension or @code{seed}), @code{sluice:sweep:pointfailed}
% (@var{fun} raised an error: the message names the point and repeats the
% original message; points finished before it are already in the file),
% @code{sluice:sweep:workerfailed} (in parallel, a worker process died --
% killed, out of memory, a crash -- or the parallel package failed: the
% message names the point it was running, what the package said, and how
% many finished points the file keeps; the other workers are stopped and
% the next call with the same file runs only the points not kept),
% @code{sluice:sweep:mpiunavailable} (option @code{mpi} true in a build
% without the MPI gateway: the message names @code{make MPI=1}),
% @code{sluice:sweep:mpimismatch} (under mpirun, the ranks were given
% different grids, seeds, files or functions: raised on every rank),
% @code{sluice:mpi:rankleft} (under mpirun, another rank's Octave ended --
% by its own error, say -- while this one waited for it: the message
% names that rank; a point's error, a bad results file or bad scores are
% raised on every rank with their own identifier),
% @code{sluice:sweep:interrupted} (Ctrl-C during a point of a serial
% sweep: the finished points are in the file; a Ctrl-C between points,
% or during a parallel sweep, is Octave's own interrupt, and there too the
% file keeps every finished point).
% @seealso{sluice.filter}
% @end deftypefn

function [table, info] = sweep (fun, grid, varargin)
  if (nargin < 2)
    sluice.internal.compat ('usage', mfilename ());
  end
  t_all = tic ();
  check_fun (fun);
  [names, vals, sizes, frags] = check_grid (grid);
  opts = parse_options (varargin);

  % every point: its subscripts, key and seed
  D = numel (names);
  N = prod (sizes);
  subs = cell (1, D);
  [subs{:}] = ind2sub ([sizes 1], (1:N)');
  [~, order] = sort (names);
  keys = repmat ({''}, N, 1);
  for d = order
    keys = strcat (keys, frags{d}(subs{d}));
  end
  seeds = point_seeds (keys, opts.seed);

  world = sluice.internal.mpi ('world', 'sweep', opts.mpi);
  % the work is this process's (dealt out to it, or all of it): a filter
  % run inside it runs on this rank alone
  held = sluice.internal.mpi ('hold');
  if (world.active)
    % every rank must sweep the same points with the same file: the point
    % seeds (hashes of the keys) stand for the grid, summed with weights
    % exactly (every term and the sum below 2^53)
    M = 4294967291;
    fp = [sum(seeds), sum(mod (seeds .* (1:N)', M))];
    sluice.internal.mpi ('same', 'sweep', 'sweeps (grid, seed, file or function)', ...
                         sprintf ('%.17g|%s|%s|%d|%.17g|%.17g', opts.seed, opts.file, ...
                                  func2str (fun), N, fp));
  end

  % results already in the file (read by rank 0 alone in a distributed
  % run, and sent to the others)
  if (~world.active)
    done = read_file (opts.file, names);
  else
    done = [];
    err = [];
    if (world.rank == 0)
      try
        done = read_file (opts.file, names);
      catch err
      end
    end
    sluice.internal.mpi ('agree', err);
    done = sluice.internal.mpi ('bcast', done, 0);
  end
  scores = cell (N, 1);
  times = zeros (N, 1);
  reused = false (N, 1);
  if (~isempty (done.key))
    [tf, loc] = ismember (keys, done.key);
    idx = find (tf);
    idx = idx(done.seed(loc(idx)) == seeds(idx));
    reused(idx) = true;
    scores(idx) = done.scores(loc(idx));
    times(idx) = done.time(loc(idx));
  end

  todo = find (~reused);
  use_par = false;
  if (opts.workers > 1 && numel (todo) > 1)
    use_par = sluice.internal.compat ('has_parallel');
  end

  t_fun = 0;
  if (world.active)
    use_par = false;
    [scores, times, t_fun] = run_ranks (world, fun, names, vals, subs, keys, seeds, ...
                                        todo, scores, times, done, opts.file);
  elseif (use_par)
    % one call over every point to run: the workers take points as they
    % free up (starting workers costs ~0.1 s a call); each finished point
    % is on disk at once through its part file
    nb = opts.workers;
    for b = 1:numel (todo):numel (todo)
      batch = todo;
      pts = cell (numel (batch), 1);
      for j = 1:numel (batch)
        pts{j} = make_point (names, vals, subs, batch(j), seeds(batch(j)));
      end
      spill = cell (numel (batch), 1);
      if (~isempty (opts.file))
        for j = 1:numel (batch)
          spill{j} = sprintf ('%s.part%d', opts.file, batch(j));
        end
      end
      % a failure of the worker itself (not of fun) comes back as a point
      % failure through the error handler
      on_error = @(e, varargin) struct ('ok', false, 'scores', [], 'time', 0, ...
                                        'message', e.message, 'identifier', e.identifier);
      [res, broke] = sluice.internal.compat ('parallel_map', min (nb, numel (batch)), ...
                               @(j) sluice.internal.sweep_point (fun, pts{j}, keys{batch(j)}, spill{j}), ...
                               num2cell (1:numel (batch)), on_error);
      if (~isempty (broke))
        % a worker died: what the workers finished is in their part files
        if (~isempty (opts.file))
          [done, merged] = merge_parts (opts.file, done, names);
          if (merged)
            save_done (opts.file, done);
            remove_parts (opts.file);
          end
        end
        worker_failed (keys(batch(broke.index)), broke, opts.file, numel (done.key));
      end
      failed = 0;
      for j = 1:numel (batch)
        r = res{j};
        p = batch(j);
        if (~r.ok)
          if (failed == 0)
            failed = j;
          end
          continue;
        end
        times(p) = r.time;
        t_fun = t_fun + r.time;
        scores{p} = check_scores (r.scores, names, keys{p});
        done = add_done (done, keys{p}, seeds(p), r.time, scores{p});
      end
      if (~isempty (opts.file))
        save_done (opts.file, done);
        remove_parts (opts.file);
      end
      if (failed > 0)
        point_failed (keys{batch(failed)}, res{failed});
      end
    end
  else
    for p = todo'
      point = make_point (names, vals, subs, p, seeds(p));
      r = sluice.internal.sweep_point (fun, point, keys{p});
      if (~r.ok)
        if (is_interrupt (r.identifier))
          interrupted (keys{p}, r, opts.file, numel (done.key));
        end
        point_failed (keys{p}, r);
      end
      times(p) = r.time;
      t_fun = t_fun + r.time;
      scores{p} = check_scores (r.scores, names, keys{p});
      if (~isempty (opts.file))
        done = add_done (done, keys{p}, seeds(p), r.time, scores{p});
        save_done (opts.file, done);
      end
    end
  end

  % the table: dimensions, seed, scores (union of names, NaN where absent)
  table = struct ();
  for d = 1:D
    v = vals{d}(subs{d});
    if (iscell (v))
      table.(names{d}) = v(:);
    else
      table.(names{d}) = double (v(:));
    end
  end
  table.seed = seeds;
  snames = {};
  for p = 1:N
    f = fieldnames (scores{p});
    snames = [snames; f(~ismember (f, snames))];
  end
  for k = 1:numel (snames)
    col = NaN (N, 1);
    for p = 1:N
      if (isfield (scores{p}, snames{k}))
        col(p) = scores{p}.(snames{k});
      end
    end
    table.(snames{k}) = col;
  end

  total = toc (t_all);
  ncomp = numel (todo);
  workers = opts.workers;
  if (world.active)
    workers = 1;
  end
  info = struct ('time', times, 'reused', reused, 'computed', ncomp, ...
                 'nreused', N - ncomp, 'total', total, ...
                 'overhead', (total * world.size - t_fun) / max (ncomp, 1), ...
                 'workers', workers, 'parallel', use_par, ...
                 'ranks', world.size, 'rank', world.rank);
end

function done = read_file (file, names)
  % the points a results file holds, with those that workers of a stopped
  % parallel sweep left in part files (merged into it)
  done = struct ('key', {cell(0, 1)}, 'seed', zeros (0, 1), ...
                 'time', zeros (0, 1), 'scores', {cell(0, 1)});
  if (~isempty (file) && exist (file, 'file'))
    done = load_done (file);
  end
  if (~isempty (file))
    % what a sweep killed while writing the file left beside it (the
    % workers' part files and theirs go with the merge below)
    sluice.internal.stale_tmp (file);
    % points that workers of a stopped parallel sweep finished
    [done, merged] = merge_parts (file, done, names);
    if (merged)
      save_done (file, done);
      remove_parts (file);
    end
  end
end

function [scores, times, t_fun] = run_ranks (world, fun, names, vals, subs, keys, ...
                                             seeds, todo, scores, times, done, file)
  % The points to run dealt across the ranks of an mpirun job, in rounds
  % of one point per rank: rank k runs todo(k+1), todo(k+1+P), ... After
  % each round rank 0 gathers the batch's results, keeps them in the file
  % (it alone writes it) and sends the batch's scores and its verdict to
  % every rank: a failure anywhere is the same error on every rank.
  P = world.size;
  t_fun = 0;
  for b = 1:P:numel (todo)
    batch = todo(b:min (b + P - 1, numel (todo)));
    res = [];
    if (world.rank < numel (batch))
      p = batch(world.rank + 1);
      point = make_point (names, vals, subs, p, seeds(p));
      res = sluice.internal.sweep_point (fun, point, keys{p});
    end
    got = sluice.internal.mpi ('gather', res, 0);
    verdict = struct ('times', zeros (numel (batch), 1), 'scores', {cell(numel (batch), 1)}, ...
                      'identifier', '', 'message', '');
    if (world.rank == 0)
      try
        fail = 0;
        for j = 1:numel (batch)
          r = got{j};
          p = batch(j);
          if (~r.ok)
            if (fail == 0)
              fail = j;
            end
            continue;
          end
          verdict.times(j) = r.time;
          verdict.scores{j} = check_scores (r.scores, names, keys{p});
          done = add_done (done, keys{p}, seeds(p), r.time, verdict.scores{j});
        end
        if (~isempty (file))
          save_done (file, done);
        end
        if (fail > 0)
          r = got{fail};
          if (is_interrupt (r.identifier))
            interrupted (keys{batch(fail)}, r, file, numel (done.key));
          end
          point_failed (keys{batch(fail)}, r);
        end
      catch err
        verdict.identifier = err.identifier;
        verdict.message = err.message;
      end
    end
    verdict = sluice.internal.mpi ('bcast', verdict, 0);
    if (~isempty (verdict.identifier) || ~isempty (verdict.message))
      id = verdict.identifier;
      if (isempty (id))
        id = 'sluice:sweep:pointfailed';
      end
      error (id, '%s', verdict.message);
    end
    times(batch) = verdict.times;
    scores(batch) = verdict.scores;
    t_fun = t_fun + sum (verdict.times);
  end
end

function check_fun (fun)
  if (~isa (fun, 'function_handle'))
    error ('sluice:sweep:badfun', ...
           'argument 1 (fun): expected a function handle, got %s', describe (fun));
  end
  n = -1;
  try
    n = nargin (fun);
  catch
    n = -1;
  end
  if (n == 0)
    error ('sluice:sweep:badfun', ...
           'argument 1 (fun): the function takes no argument; it must accept the point struct');
  end
end

function [names, vals, sizes, frags] = check_grid (grid)
  if (~isstruct (grid) || ~isscalar (grid))
    error ('sluice:sweep:badgrid', ...
           'argument 2 (grid): expected a scalar struct of dimensions, got %s', describe (grid));
  end
  names = fieldnames (grid)';
  if (isempty (names))
    error ('sluice:sweep:badgrid', 'argument 2 (grid): the struct has no field (no dimension)');
  end
  D = numel (names);
  vals = cell (1, D);
  frags = cell (1, D);
  sizes = zeros (1, D);
  for d = 1:D
    nm = names{d};
    v = grid.(nm);
    if (strcmp (nm, 'seed'))
      error ('sluice:sweep:badgrid', ...
             'argument 2 (grid): a dimension may not be called ''seed'' (the point seed uses that field)');
    end
    if (isempty (v))
      error ('sluice:sweep:badgrid', 'argument 2 (grid): dimension ''%s'' is empty', nm);
    end
    if (~isvector (v))
      error ('sluice:sweep:badgrid', ...
             'argument 2 (grid): dimension ''%s'' must be a vector, got %s', nm, describe (v));
    end
    n = numel (v);
    fr = cell (n, 1);
    if (iscell (v))
      for i = 1:n
        e = v{i};
        if (ischar (e) && (isrow (e) || isempty (e)))
          fr{i} = sprintf ('%s=s%d:%s;', nm, numel (e), e);
        elseif (good_number (e))
          fr{i} = sprintf ('%s=n:%.17g;', nm, double (e));
        else
          error ('sluice:sweep:badgrid', ...
                 'argument 2 (grid): dimension ''%s'', value %d: expected a character row or a real scalar, got %s', ...
                 nm, i, describe (e));
        end
      end
    elseif ((isnumeric (v) || islogical (v)) && isreal (v) && ~issparse (v))
      if (any (isnan (v)))
        error ('sluice:sweep:badgrid', 'argument 2 (grid): dimension ''%s'' holds NaN', nm);
      end
      for i = 1:n
        fr{i} = sprintf ('%s=n:%.17g;', nm, double (v(i)));
      end
    else
      error ('sluice:sweep:badgrid', ...
             'argument 2 (grid): dimension ''%s'': expected a real vector or a cell array, got %s', ...
             nm, describe (v));
    end
    [u, iu] = unique (fr);
    if (numel (u) < n)
      dup = setdiff (1:n, iu);
      error ('sluice:sweep:badgrid', ...
             'argument 2 (grid): dimension ''%s'', value %d repeats an earlier value', nm, dup(1));
    end
    vals{d} = v(:);
    frags{d} = fr;
    sizes(d) = n;
  end
end

function tf = good_number (e)
  tf = (isnumeric (e) || islogical (e)) && isscalar (e) && isreal (e) ...
       && ~issparse (e) && ~isnan (e);
end

function opts = parse_options (args)
  opts = struct ('seed', 1, 'workers', sluice.internal.compat ('nproc'), 'file', '', ...
                 'mpi', 'auto');
  if (numel (args) == 1 && isstruct (args{1}))
    if (~isscalar (args{1}))
      error ('sluice:sweep:badoption', 'argument 3 (opts): expected a scalar struct, got %s', ...
             describe (args{1}));
    end
    pairs = sluice.internal.option_pairs (args);
  else
    pairs = args;
    if (mod (numel (pairs), 2) ~= 0)
      error ('sluice:sweep:badoption', 'options must come in name, value pairs or as one struct');
    end
  end
  for k = 1:2:numel (pairs)
    nm = pairs{k};
    v = pairs{k + 1};
    if (~(ischar (nm) && isrow (nm)))
      error ('sluice:sweep:badoption', 'option %d: expected a name, got %s', ...
             (k + 1) / 2, describe (nm));
    end
    switch (lower (nm))
      case 'seed'
        if (~(isa (v, 'double') && isscalar (v) && isreal (v) && ~issparse (v) ...
              && v >= 0 && v <= 2^53 && v == fix (v)))
          error ('sluice:sweep:badoption', ...
                 'seed: expected a whole number from 0 to 2^53, got %s', describe (v));
        end
        opts.seed = v;
      case 'workers'
        if (~(isnumeric (v) && isscalar (v) && isreal (v) && ~issparse (v) ...
              && v >= 1 && v == fix (v) && isfinite (v)))
          error ('sluice:sweep:badoption', ...
                 'workers: expected a whole number >= 1, got %s', describe (v));
        end
        opts.workers = double (v);
      case 'file'
        if (~(ischar (v) && isrow (v)))
          error ('sluice:sweep:badoption', ...
                 'file: expected a file name (a character row), got %s', describe (v));
        end
        opts.file = v;
      case 'mpi'
        if (ischar (v) && strcmpi (v, 'auto'))
          opts.mpi = 'auto';
        elseif ((islogical (v) || isnumeric (v)) && isscalar (v) && isreal (v) ...
                && (v == 0 || v == 1))
          opts.mpi = logical (v);
        else
          error ('sluice:sweep:badoption', ...
                 'mpi: expected ''auto'', true or false, got %s', describe (v));
        end
      case {'checkpoint', 'checkpoint_every'}
        error ('sluice:sweep:badoption', ...
               ['a sweep takes no ''%s'': its ''file'' keeps every finished point and the ', ...
                'same call resumes; a filter run inside fun that keeps a checkpoint ', ...
                'needs a file of its own for each point (a name made of the point''s ', ...
                'values)'], nm);
      otherwise
        error ('sluice:sweep:badoption', ...
               'unknown option ''%s'' (known: seed, workers, file, mpi)', nm);
    end
  end
end

function seeds = point_seeds (keys, seed)
  % the documented hash, run over all keys at once, one byte column a step
  txt = strcat (sprintf ('%.17g|', seed), keys);
  len = cellfun ('length', txt);
  B = double (char (txt));
  M = 4294967291;
  seeds = zeros (numel (keys), 1);
  for i = 1:size (B, 2)
    m = len >= i;
    seeds(m) = mod (seeds(m) * 65599 + B(m, i), M);
  end
end

function point = make_point (names, vals, subs, p, seed)
  point = struct ();
  for d = 1:numel (names)
    v = vals{d};
    if (iscell (v))
      point.(names{d}) = v{subs{d}(p)};
    else
      point.(names{d}) = v(subs{d}(p));
    end
  end
  point.seed = seed;
end

function point_failed (key, r)
  if (isempty (r.identifier))
    why = r.message;
  else
    why = sprintf ('%s (%s)', r.message, r.identifier);
  end
  error ('sluice:sweep:pointfailed', 'the function failed at point %s: %s', ...
         point_text (key), why);
end

function tf = is_interrupt (id)
  % Ctrl-C in a run of fun (sluice:<fn>:interrupted)
  tf = strncmp (id, 'sluice:', 7) && numel (id) > 12 && strcmp (id(end-11:end), ':interrupted');
end

function interrupted (key, r, file, nkept)
  error ('sluice:sweep:interrupted', 'the sweep was interrupted (Ctrl-C) at point %s: %s. %s', ...
         point_text (key), r.message, kept_text (file, nkept));
end

function worker_failed (key, broke, file, nkept)
  pts = strjoin (cellfun (@point_text, key(:)', 'UniformOutput', false), ', ');
  if (isempty (key))
    what = 'a worker process failed while the sweep''s points were running';
  elseif (broke.died)
    what = sprintf ('a worker process died while running point %s', pts);
  else
    what = sprintf ('a worker process failed while points %s were running', pts);
  end
  if (~isempty (broke.how))
    what = sprintf ('%s (%s: killed, out of memory, or a crash)', what, broke.how);
  end
  error ('sluice:sweep:workerfailed', '%s: %s. %s', what, broke.message, ...
         kept_text (file, nkept));
end

function t = kept_text (file, nkept)
  if (isempty (file))
    t = 'No results file was given (option ''file''), so no finished point is kept.';
  else
    t = sprintf (['%d finished point(s) are kept in %s; call sluice.sweep again ', ...
                  'with the same file to run only the others.'], nkept, file);
  end
end

function s = check_scores (s, names, key)
  if (good_number (s))
    s = struct ('score', double (s));
    return;
  end
  if (~(isstruct (s) && isscalar (s) && numel (fieldnames (s)) > 0))
    error ('sluice:sweep:badscores', ...
           'at point %s: the function must return a real scalar or a struct of real scalars, got %s', ...
           point_text (key), describe (s));
  end
  f = fieldnames (s);
  for k = 1:numel (f)
    v = s.(f{k});
    if (strcmp (f{k}, 'seed') || any (strcmp (f{k}, names)))
      error ('sluice:sweep:badscores', ...
             'at point %s: score ''%s'' has the name of a table column', point_text (key), f{k});
    end
    if (~(good_number (v) || (isnumeric (v) && isscalar (v) && isreal (v) && isnan (v))))
      error ('sluice:sweep:badscores', ...
             'at point %s: score ''%s'' must be a real scalar, got %s', ...
             point_text (key), f{k}, describe (v));
    end
    s.(f{k}) = double (full (v));
  end
end

function t = point_text (key)
  % "a=n:5;m=s2:pf;" -> "(a=5, m=pf)"
  t = regexprep (key, '=n:', '=');
  t = regexprep (t, '=s\d+:', '=');
  t = ['(' strrep(t(1:end-1), ';', ', ') ')'];
end

function [done, merged] = merge_parts (file, done, names)
  parts = sluice.internal.compat ('glob', [file '.part*']);
  merged = false;
  for i = 1:numel (parts)
    try
      s = sluice.internal.compat ('load_binary', parts{i});
      e = s.sweep_part;
      if (~any (strcmp (e.key, done.key)))
        done = add_done (done, e.key, e.seed, e.time, check_scores (e.scores, names, e.key));
        merged = true;
      end
    catch
      % a part file that cannot be read is dropped: its point runs again
    end
  end
  merged = merged || ~isempty (parts);
end

function remove_parts (file)
  parts = sluice.internal.compat ('glob', [file '.part*']);
  for i = 1:numel (parts)
    delete (parts{i});
  end
end

function done = add_done (done, key, seed, time, scores)
  done.key{end + 1, 1} = key;
  done.seed(end + 1, 1) = seed;
  done.time(end + 1, 1) = time;
  done.scores{end + 1, 1} = scores;
end

function done = load_done (file)
  try
    s = sluice.internal.compat ('load_binary', file);
  catch err
    error ('sluice:sweep:badfile', 'file %s: cannot be read as a results file: %s', ...
           file, err.message);
  end
  ok = isfield (s, 'sweep_done') && isstruct (s.sweep_done) && isscalar (s.sweep_done) ...
       && all (isfield (s.sweep_done, {'key', 'seed', 'time', 'scores'}));
  if (ok)
    done = s.sweep_done;
    n = numel (done.key);
    ok = iscellstr (done.key) && iscell (done.scores) && isnumeric (done.seed) ...
         && isnumeric (done.time) && numel (done.seed) == n ...
         && numel (done.time) == n && numel (done.scores) == n;
  end
  if (~ok)
    error ('sluice:sweep:badfile', ...
           'file %s: holds no sweep results (variable sweep_done with key, seed, time, scores)', file);
  end
  done.key = done.key(:);
  done.seed = double (done.seed(:));
  done.time = double (done.time(:));
  done.scores = done.scores(:);
end

function save_done (file, done)
  sweep_done = done;
  tmp = sprintf ('%s.tmp%d', file, sluice.internal.compat ('pid'));
  try
    sluice.internal.compat ('save_binary', tmp, 'sweep_done', sweep_done);
  catch err
    error ('sluice:sweep:badfile', 'file %s: cannot write the results: %s', file, err.message);
  end
  [st, msg] = sluice.internal.compat ('rename', tmp, file);
  if (st ~= 0)
    delete (tmp);
    error ('sluice:sweep:badfile', 'file %s: cannot replace it with the new results: %s', file, msg);
  end
end

function t = describe (v)
  if (ischar (v) && isrow (v) && numel (v) < 40)
    t = sprintf ('''%s''', v);
  else
    sz = sprintf ('%dx', size (v));
    t = [sz(1:end-1) ' ' class(v)];
    if (isnumeric (v) && ~isreal (v))
      t = [t ' complex'];
    end
    if (issparse (v))
      t = [t ' sparse'];
    end
  end
end

%!test
%! g = struct ('a', [1 2 3], 'm', {{'x', 'yy'}});
%! [t, info] = sluice.sweep (@(p) struct ('v', p.a * numel (p.m)), g, 'workers', 1);
%! assert (t.a, [1; 2; 3; 1; 2; 3]);
%! assert (t.m, {'x'; 'x'; 'x'; 'yy'; 'yy'; 'yy'});
%! assert (t.v, [1; 2; 3; 2; 4; 6]);
%! assert (info.computed, 6);
%! assert (info.nreused, 0);
%! assert (all (t.seed >= 0 & t.seed < 2^32 & t.seed == fix (t.seed)));

%!test
%! % the example of the help text
%! grid = struct ('interval', [5 10 20], 'members', [100 500], ...
%!                'method', {{'pf', 'etkf'}});
%! score = @(p) struct ('rmse', p.interval / sqrt (p.members), ...
%!                      'fast', strcmp (p.method, 'etkf'));
%! [t, info] = sluice.sweep (score, grid, 'seed', 7, 'workers', 1);
%! [~, best] = min (t.rmse);
%! assert ([t.interval(best), t.members(best)], [5 500]);
%! assert (t.fast, [zeros(6, 1); ones(6, 1)]);
%! assert (numel (info.time), 12);
%! assert (info.overhead >= 0);

%!test
%! % a scalar result is the score 'score'
%! t = sluice.sweep (@(p) p.a ^ 2, struct ('a', [2 3]), struct ('workers', 1));
%! assert (t.score, [4; 9]);

%!error id=sluice:sweep:badfun sluice.sweep (3, struct ('a', 1))
%!error id=sluice:sweep:badfun sluice.sweep ('sin', struct ('a', 1))
%!error id=sluice:sweep:badfun sluice.sweep (@() 1, struct ('a', 1))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, 3)
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, {1, 2})
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ())
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', {1, 2}))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', []))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', {{}}))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', [1 2; 3 4]))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', [1 NaN]))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', [1 2 1]))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', {{'u', 'u'}}))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', {{'u', [1 2]}}))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', [1i 2]))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', 'abc'))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('seed', [1 2]))
%!error id=sluice:sweep:badgrid sluice.sweep (@(p) 1, struct ('a', {{struct()}}))
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'speed', 2)
%!error <its 'file' keeps every finished point> sluice.sweep (@(p) 1, struct ('a', 1), 'checkpoint', 'x.ckpt')
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), struct ('checkpoint_every', 5))
%!test
%! % a filter inside fun with one checkpoint file for every point: the
%! % second point's run is refused, never resumed from the first's
%! f = [tempname() '.ckpt'];
%! spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2], 'variable', {{'x'; 'x'}}, 'value', [0.2; 0.1], 'sigma', [1; 1]);
%! fun = @(p) getfield (sluice.filter (spec, pr, obs, 'members', p.members, 'seed', 1, ...
%!                                    't0', 0, 'progress', false, 'checkpoint', f), ...
%!                     'log_evidence');
%! try
%!   sluice.sweep (fun, struct ('members', [10 20]), 'workers', 1);
%!   error ('not refused');
%! catch err
%!   assert (err.identifier, 'sluice:sweep:pointfailed');
%!   assert (~isempty (strfind (err.message, 'other settings')));
%! end
%! delete (f);
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), struct ('speed', 2))
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'seed')
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 3, 4)
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'seed', -1)
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'seed', 1.5)
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'seed', int32 (3))
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'seed', 2^54)
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'mpi', 'yes')
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'mpi', 2)
%!test
%! % outside mpirun the sweep is this process alone, whatever 'mpi' says
%! % (true needs the gateway: tests/mpi/run.sh checks the error without it)
%! [t, info] = sluice.sweep (@(p) p.a, struct ('a', [1 2]), 'workers', 1, 'mpi', false);
%! assert ([info.ranks, info.rank], [1 0]);
%! assert (t.score, [1; 2]);
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'workers', 0)
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'workers', Inf)
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), 'file', 3)
%!error id=sluice:sweep:badoption sluice.sweep (@(p) 1, struct ('a', 1), struct ('seed', {1, 2}))
%!error id=sluice:sweep:badscores sluice.sweep (@(p) 'text', struct ('a', 1), 'workers', 1)
%!error id=sluice:sweep:badscores sluice.sweep (@(p) [1 2], struct ('a', 1), 'workers', 1)
%!error id=sluice:sweep:badscores sluice.sweep (@(p) struct (), struct ('a', 1), 'workers', 1)
%!error id=sluice:sweep:badscores sluice.sweep (@(p) struct ('r', [1 2]), struct ('a', 1), 'workers', 1)
%!error id=sluice:sweep:badscores sluice.sweep (@(p) struct ('r', 1i), struct ('a', 1), 'workers', 1)
%!error id=sluice:sweep:badscores sluice.sweep (@(p) struct ('a', 1), struct ('a', 1), 'workers', 1)
%!error id=sluice:sweep:badscores sluice.sweep (@(p) struct ('seed', 1), struct ('a', 1), 'workers', 1)
%!error id=sluice:sweep:pointfailed sluice.sweep (@(p) error ('my:id', 'no'), struct ('a', 1), 'workers', 1)
%!error <point \(a=2, m=pf\): bad interval> sluice.sweep (@(p) error ('bad interval'), struct ('a', 2, 'm', {{'pf'}}), 'workers', 1)
%!error id=sluice:sweep:badfile sluice.sweep (@(p) 1, struct ('a', 1), 'workers', 1, 'file', '/nonexistent_dir_sl/x.mat')
%!test
%! f = [tempname() '.mat'];
%! fid = fopen (f, 'w'); fputs (fid, 'not a results file'); fclose (fid);
%! unwind_protect
%!   for k = 1:2
%!     if (k == 2)
%!       x = 3; save ('-v7', f, 'x');
%!     end
%!     id = '';
%!     try
%!       sluice.sweep (@(p) 1, struct ('a', 1), 'file', f);
%!     catch e
%!       id = e.identifier;
%!     end
%!     assert (id, 'sluice:sweep:badfile');
%!   end
%! unwind_protect_cleanup
%!   delete (f);
%! end_unwind_protect

%!demo
%! % Lowmarsh on the invented river Vell: sweep the gauge's reading error
%! % and the ensemble size of the filter over a twin experiment, two seeds
%! % each, and collect the RMSE of every point in one table.
%! m = sluice.model ('linear', 'A', 0.9, 'Q', 0.05, 'states', {'level'});
%! pr = sluice.prior ('level', 'normal', [0 1]);
%! truth = struct ('times', 0:20, 'x0', 1);
%! run = @(p) sluice.twin (m, truth, struct ('variable', 'level', 'every', 1, ...
%!                                          'sigma', p.sigma), ...
%!                         'seed', p.seed, 'prior', pr, ...
%!                         'filter', {'members', p.members});
%! grid = struct ('sigma', [0.1 0.3], 'members', [50 500], 'replicate', [1 2]);
%! score = @(p) struct ('rmse', getfield (run (p), 'scores', 'rmse'));
%! t = sluice.sweep (score, grid, 'workers', 1, 'seed', 1);
%! for k = 1:numel (t.rmse)
%!   fprintf ('sigma %.1f, %3d members, replicate %d: RMSE %.3f\n', ...
%!            t.sigma(k), t.members(k), t.replicate(k), t.rmse(k));
%! end
