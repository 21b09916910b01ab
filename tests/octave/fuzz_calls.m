function [bad, ncalls, nerr, tally, names, missing] = fuzz_calls (seed, budget, only)
  % Calls every public function (m/+sluice/*.m) and every gateway
  % (m/+sluice/+kernel/*.mex) with arguments changed one at a time from
  % small valid seed calls (taken from each function's own tests): an
  % argument removed, one added, an unknown option added, or one argument
  % replaced from a palette (another class, empty, reshaped, NaN, Inf,
  % negative, zero, non-integer, 1e300, 2^53+1, a size no machine holds,
  % an unknown name). The cases are a fixed-seed sample of at most budget
  % per function (all of them when budget is Inf); a finite budget beyond
  % a function's cases is filled with random values (class, shape and
  % special entries drawn) put in one argument at a time. A call may succeed;
  % an error must carry an identifier starting with 'sluice:'. bad lists
  % the others, one line each ("function | seed | change | id |
  % message (where)"); ncalls counts the calls made, nerr the errors raised,
  % tally(k) the calls of names{k}; missing names the functions found in
  % the directories that have no seed calls here. only (optional) names
  % the functions to run. Calls run in a temporary directory (files they
  % write go there), sweeps and chains on one worker.
  if (nargin < 3)
    only = {};
  end
  here = fileparts (mfilename ('fullpath'));
  root = fileparts (fileparts (here));
  old_warn = warning ('off', 'all');
  old_state = {rand('state'), randn('state')};
  rand ('state', seed);
  outdir = tempname ();
  mkdir (outdir);
  old_dir = cd (outdir);
  restore = onCleanup (@() restore_all (old_warn, old_state, old_dir, outdir));

  seeds = seed_calls (outdir);
  names = listed (root);
  missing = setdiff (names, keys (seeds));
  bad = {};
  ncalls = 0;
  nerr = 0;
  tally = zeros (1, numel (names));
  logf = getenv ('SLUICE_FUZZ_LOG');   % each call's description, before it runs
  for k = 1:numel (names)
    name = names{k};
    if ((~isempty (only) && ~any (strcmp (name, only))) || ~isKey (seeds, name))
      continue;
    end
    S = seeds(name);
    fn = ['sluice.' name];
    cases = {};
    for i = 1:numel (S)
      cases = [cases, cases_of(i, S(i))];
    end
    % each seed as it is: it must run (or raise just the error it expects)
    for i = 1:numel (S)
      ncalls = ncalls + 1;
      tally(k) = tally(k) + 1;
      try
        evalc ('feval (fn, S(i).args{:});');
        got = '';
      catch err
        nerr = nerr + 1;
        got = err.identifier;
      end
      if (~strcmp (got, S(i).expect))
        bad{end+1} = sprintf ('%s | seed %d | as it is | %s | expected %s', name, i, ...
                              got, S(i).expect);
      end
    end
    % a sample of the cases; a budget beyond them adds random values
    pick = randperm (numel (cases));
    pick = pick(1:min (end, budget));
    nrand = 0;
    if (isfinite (budget))
      nrand = budget - numel (cases);
    end
    for r = 1:nrand
      i = randi (numel (S));
      a = free_args (S(i));
      if (isempty (a))
        break;
      end
      a = a(randi (numel (a)));
      cases{end+1} = struct ('seed', i, 'arg', a, 'change', 'random', ...
                             'value', {random_value(any (a == S(i).long))});
      pick(end+1) = numel (cases);
    end
    for c = pick
      cs = cases{c};
      [args, ok] = apply_case (S(cs.seed).args, cs);
      if (~ok)
        continue;
      end
      what = sprintf ('%s | seed %d | %s', name, cs.seed, case_text (cs));
      if (~isempty (logf))
        fid = fopen (logf, 'a');
        fprintf (fid, '%s\n', what);
        fclose (fid);
      end
      ncalls = ncalls + 1;
      tally(k) = tally(k) + 1;
      try
        evalc ('feval (fn, args{:});');
      catch err
        nerr = nerr + 1;
        if (~accepted (err))
          msg = strrep (err.message, char (10), ' ');
          at = '';
          if (~isempty (err.stack))
            at = sprintf (' (at %s:%d)', err.stack(1).name, err.stack(1).line);
          end
          bad{end+1} = sprintf ('%s | %s | %s%s', what, err.identifier, msg(1:min (end, 160)), at);
        end
      end
      close all;
      cd (outdir);   % a call that changed directory is put back
    end
  end
end

function ok = accepted (err)
  % sluice's own identifiers; Octave's refusal of more inputs than a
  % function declares, raised before the function runs; and an error of
  % the seeds' own functions (a user's function, given arguments it does
  % not take), which keeps the user's identifier
  ok = strncmp (err.identifier, 'sluice:', 7) || ...
       (strcmp (err.identifier, 'Octave:invalid-fun-call') && ...
        ~isempty (strfind (err.message, 'called with too many inputs'))) || ...
       (~isempty (err.stack) && strcmp (err.stack(1).file, [mfilename('fullpath') '.m']));
end

function restore_all (old_warn, old_state, old_dir, outdir)
  warning (old_warn);
  rand ('state', old_state{1});
  randn ('state', old_state{2});
  cd (old_dir);
  if (exist (outdir, 'dir'))
    confirm_recursive_rmdir (false, 'local');
    rmdir (outdir, 's');
  end
end

function names = listed (root)
  % the public functions and the built gateways, as 'f' and 'kernel.f'
  names = {};
  d = dir (fullfile (root, 'm', '+sluice', '*.m'));
  for k = 1:numel (d)
    [~, n] = fileparts (d(k).name);
    if (~strcmp (n, 'Contents'))
      names{end+1} = n;
    end
  end
  d = dir (fullfile (root, 'm', '+sluice', '+kernel', ['*.' mexext()]));
  for k = 1:numel (d)
    [~, n] = fileparts (d(k).name);
    names{end+1} = ['kernel.' n];
  end
end

function cases = cases_of (i, s)
  % every change of seed i: each palette entry on each argument not kept,
  % each argument removed, one added, an unknown option added
  pal = {'char', 'cell', 'struct', 'logical', 'int32', 'single', 'complex', 'sparse', ...
         'handle', 'empty', 'scalar', 'row', 'column', 'matrix', 'cube', 'nan', 'inf', ...
         'minusinf', 'negative', 'zero', 'fraction', 'huge', 'bigint', 'hugesize', ...
         'nanentry', 'unknown'};
  cases = {};
  n = numel (s.args);
  for a = 1:n
    if (any (a == s.keep))
      continue;
    end
    cases{end+1} = struct ('seed', i, 'arg', a, 'change', 'remove', 'value', []);
    for j = 1:numel (pal)
      if (any (a == s.long) && any (strcmp (pal{j}, {'huge', 'bigint', 'hugesize'})))
        continue;   % a valid but endless run, not a fault
      end
      cases{end+1} = struct ('seed', i, 'arg', a, 'change', pal{j}, 'value', []);
    end
  end
  cases{end+1} = struct ('seed', i, 'arg', n + 1, 'change', 'extra', 'value', []);
  cases{end+1} = struct ('seed', i, 'arg', n + 1, 'change', 'option', 'value', []);
end

function a = free_args (s)
  a = setdiff (1:numel (s.args), s.keep);
end

function v = random_value (long)
  % a value of a random class and shape: small numbers, or one of the
  % special values (not the huge ones for an argument that sets a run's
  % length)
  shapes = {[0 0], [1 1], [1 randi(5)], [randi(5) 1], [2 3], [2 2 2]};
  sz = shapes{randi (numel (shapes))};
  x = randn (sz) .* 10 .^ randi ([-2 2], sz);
  special = [NaN, Inf, -Inf, 0, -1, 0.5, 1, 2, 1e300, 2^53 + 1, 1e15];
  if (long)
    special = special(1:end-3);
  end
  if (~isempty (x) && rand () < 0.5)
    x(randi (numel (x))) = special(randi (numel (special)));
  end
  if (rand () < 0.3)
    x = round (x);
  end
  switch (randi (10))
    case 1
      v = single (x);
    case 2
      v = int32 (x(isfinite (x)));
    case 3
      v = x > 0;
    case 4
      v = char ('a' + mod (abs (round (x(isfinite (x)))), 26));
    case 5
      v = num2cell (x);
    case 6
      v = complex (x, 1);
    case 7
      if (ndims (x) == 2)
        v = sparse (x);
      else
        v = x;
      end
    case 8
      v = struct ('a', x);
    otherwise
      v = x;
  end
end

function s = case_text (cs)
  s = sprintf ('arg %d %s', cs.arg, cs.change);
end

function [args, ok] = apply_case (args, cs)
  ok = true;
  switch (cs.change)
    case 'remove'
      args(cs.arg) = [];
    case 'extra'
      args{end+1} = 1;
    case 'option'
      args = [args, {'no_such_option', 1}];
    case 'random'
      args{cs.arg} = cs.value;
    otherwise
      old = args{cs.arg};
      try
        new = changed (old, cs.change);
      catch
        ok = false;
        return;
      end
      if (isequal (new, old) && strcmp (class (new), class (old)) && ...
          isequal (size (new), size (old)))
        ok = false;   % no change
        return;
      end
      args{cs.arg} = new;
  end
end

function new = changed (old, how)
  num = isnumeric (old) || islogical (old);
  switch (how)
    case 'char'
      new = 'x';
    case 'cell'
      new = {old};
    case 'struct'
      new = struct ('a', 1);
    case 'logical'
      new = true;
    case 'int32'
      if (num && isreal (old))
        new = int32 (old);
      else
        new = int32 (3);
      end
    case 'single'
      if (num)
        new = single (old);
      else
        new = single (1);
      end
    case 'complex'
      if (num && ~isempty (old))
        new = double (old) + 1i;
      else
        new = 1i;
      end
    case 'sparse'
      if (num && ndims (old) == 2)
        new = sparse (double (old));
      else
        new = sparse (1);
      end
    case 'handle'
      new = @(varargin) 1;
    case 'empty'
      new = [];
    case 'scalar'
      new = old(1);
    case 'row'
      new = old(:)';
    case 'column'
      new = old(:);
    case 'matrix'
      if (mod (numel (old), 2) == 0 && numel (old) > 2)
        new = reshape (old, 2, []);
      else
        new = repmat (old, 2, 2);
      end
    case 'cube'
      new = cat (3, old, old);
    case 'nan'
      new = NaN;
    case 'inf'
      new = Inf;
    case 'minusinf'
      new = -Inf;
    case 'negative'
      if (isnumeric (old) && ~isempty (old))
        new = -abs (double (old)) - 1;
      else
        new = -1;
      end
    case 'zero'
      if (isnumeric (old) && ~isempty (old))
        new = zeros (size (old));
      else
        new = 0;
      end
    case 'fraction'
      if (isnumeric (old) && ~isempty (old))
        new = double (old) + 0.5;
      else
        new = 0.5;
      end
    case 'huge'
      new = 1e300;
    case 'bigint'
      new = 2^53 + 1;
    case 'hugesize'
      new = 1e15;   % a count or size that no memory holds
    case 'nanentry'
      if (isa (old, 'double') && ~isempty (old))
        new = old;
        new(ceil (end / 2)) = NaN;
      else
        new = {NaN};
      end
    otherwise   % unknown: a name nothing knows
      if (ischar (old))
        new = 'no_such_name';
      else
        error ('fuzz_calls:noapply', 'not a name');
      end
  end
end

function seeds = seed_calls (outdir)
  % small, fast, valid calls of every function (build_model's compiles
  % nothing: its file is missing); keep lists the arguments never changed
  % (those that would start worker processes)
  T = 6;
  val = [0.3; -0.2; 0.5; 0.1; 0.4; 0.2];
  lin = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'level'});
  fun = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, ...
                      'params', {'a'}, 'defaults', 0.5);
  obs = struct ('time', (1:T)', 'variable', {repmat({'level'}, T, 1)}, ...
                'value', val, 'sigma', 0.5 * ones (T, 1));
  obs_x = obs;
  obs_x.variable = repmat ({'x'}, T, 1);
  obs_x.value = 1 + val;
  pr = sluice.prior ('level', 'normal', [0 1]);
  pr_a = sluice.prior ('a', 'uniform', [0 1]);
  G = [1 0.5; 0.2 1; 1 1];
  pr2 = sluice.prior ('a', 'normal', [0 1], 'b', 'lognormal', [0 0.5]);
  res = sluice.filter (lin, pr, obs, 'members', 20, 'seed', 1, 'progress', false, ...
                       'history', true, 't0', 0);
  truth = struct ('times', 0:T, 'X', zeros (1, T + 1));
  net = struct ('variable', 'level', 'every', 1, 'sigma', 0.3);
  randn ('state', 3);
  x3 = randn (20, 2, 2);
  X = [1 2 4; 4 1 2];
  fo = struct ('time', [0; 0.5; 2], 'values', [1 2; 3 4; 5 6], ...
               'names', {{'rain', 'pet'}}, 'units', {{'mm/d', ''}});
  fo_file = fullfile (outdir, 'seed_forcing.csv');
  obs_file = fullfile (outdir, 'seed_obs.csv');
  run_file = fullfile (outdir, 'seed_run.nc');
  sluice.write_forcing (fo_file, fo);
  sluice.write_obs (obs_file, obs);
  sluice.save_run (res, run_file);
  pm = {'members', 10, 'chains', 1, 'iterations', 3, 'burnin', 0, 'parallel', false, ...
        'progress', false, 'filter', struct('t0', 0)};
  ip = 4 + find (strcmp (pm, 'parallel')) + 1;   % the value of 'parallel'
  % pf_run's settings, as sluice.internal.run_states makes them
  rc = sluice.internal.model_config (lin, [], [], [], [], 'simulate');
  rc.members = 2;
  rc.t0 = 0;
  rc.times = [1 2];
  rc.obs_first = zeros (1, 3);
  rc.obs_var = []; rc.obs_value = []; rc.obs_sigma = []; rc.obs_aux = []; rc.obs_family = {};
  rc.lower = lin.lower(:);
  rc.upper = lin.upper(:);
  rc.param_move = 'fixed';
  rc.param_step = zeros (0, 1);
  rc.threshold = 0;
  rc.seed = 1;
  rc.probs = [];
  rc.history = 2;
  rc.X0 = [1 2];
  rc.P0 = zeros (0, 2);
  ec = struct ('method', 'etkf', 'inflation', 1, 'rtpp', 0, 'rtps', 0, 'seed', 0, ...
               'cycle', 0, 'threads', 0, 'eig_floor', 0);
  Xf = [1 2 3 4; 0 1 0 1];
  tab = struct ('time', [0; 1], 'variable', {{'h'; 'q'}}, 'value', [1; 2], 'sigma', [1; 1]);

  seeds = struct ();
  seeds.build_model = sd ({fullfile(outdir, 'none.c')}, [], [], 'sluice:build_model:nofile');
  seeds.chain_summary = [sd({x3}), sd({x3, 'names', {'a', 'b'}, 'quantiles', [0.1 0.5]})];
  seeds.compose = sd ({'a', sluice.model('gr4j'), 'b', sluice.model('flood', 'dt', 1), ...
                       'link', struct('from', 'a.Q', 'to', 'b.W', 'every', 365, ...
                                      'rating', [0.4 0.6 5]), ...
                       'time_scale', struct('b', 365)});
  seeds.crps = sd ({X, [3; 0]});
  seeds.draw = sd ({pr2, 10, 1});
  seeds.drift_test = sd ({fun, pr_a, obs_x, 'a', [0.1 0.2], 'members', 20, 'repeats', 2, ...
                          'seed', 1, 't0', 0});
  seeds.enkf = [sd({Xf, Xf(1, :), 2, 0.5}), sd({Xf, Xf(1, :), 2, 0.5, 'method', 'ensrf', ...
                                                'inflation', 1.1})];
  seeds.esmda = sd ({@(P) G * P, pr2, [0.7; 1.4; 2.1], 0.1, 'members', 20, 'seed', 1});
  seeds.evidence = sd ({lin, pr, obs, 'members', 20, 'repeats', 2, 'seed', 1, 't0', 0});
  seeds.filter = [sd({lin, pr, obs, 'members', 20, 'seed', 1, 't0', 0, 'progress', false}), ...
                  sd({fun, pr_a, obs_x, 'members', 20, 'seed', 2, 't0', 0, 'progress', false, ...
                      'resample_threshold', 0.5, 'history', true})];
  seeds.gaspari_cohn = sd ({[0 0.6 3], 1.2});
  seeds.load_run = sd ({run_file});
  seeds.loglik = [sd({'gaussian', 2.385, [1.7 2.0 3.1], 0.6283}), ...
                  sd({'poisson', [1; 3], [1 2; 2 3], 1, NaN})];
  seeds.mcmc_summary = sd ({x3});
  seeds.model = [sd({'linear', 'A', 0.9, 'Q', 0.1, 'states', {'level'}}), ...
                 sd({@(t, X, P, U, dt) X, 'states', {'s'}, 'params', {'k'}, 'defaults', 0.3})];
  seeds.pmmh = sd ({fun, pr_a, obs_x, pm{:}}, ip);
  seeds.prior = [sd({'a', 'normal', [0 1]}), sd({'b', 'truncnormal', [1 2 -Inf 3.5]})];
  % a span of more model steps than a run may take is refused before
  % any work (sluice:<fn>:toomanysteps), so the times take huge values too
  seeds.propagate = [sd({lin, [1 2], [], 0, 2}), ...
                     sd({lin, [1 2], [], 0, 2^53 + 1}, [], [], 'sluice:propagate:toomanysteps')];
  seeds.rank_histogram = sd ({[1 2 4; 4 2 1; 2 1 4], [3; 0; 5], 'seed', 7});
  seeds.read_forcing = sd ({fo_file, 'missing', 'zero'});
  seeds.read_obs = sd ({obs_file});
  seeds.report = sd ({res, 'outdir', fullfile(outdir, 'report')});
  seeds.resample = sd ({[0.1 0.2 0.3 0.4], 'systematic', 'count', 10, 'seed', 1});
  seeds.save_run = sd ({res, fullfile(outdir, 'run.nc')});
  seeds.scores = sd ({res, truth, obs});
  seeds.simulate = [sd({lin, 1, [], 0:2}), ...
                    sd({lin, 1, [], [0 1e15]}, [], [], 'sluice:simulate:toomanysteps')];
  seeds.smooth = sd ({res});
  seeds.sweep = sd ({@(p) p.a ^ 2, struct('a', [2 3]), 'workers', 1}, 4);
  seeds.twin = sd ({lin, struct('times', 0:T, 'x0', 1), net, 'seed', 2, 'prior', pr, ...
                    'filter', {'members', 20}});
  seeds.weights = sd ({log([0.1 0.2 0.3 0.4])});
  seeds.write_forcing = sd ({fullfile(outdir, 'forcing.csv'), fo});
  seeds.write_obs = sd ({fullfile(outdir, 'obs.csv'), obs});
  % the gateways
  seeds.kernel.core_names = sd ({});
  seeds.kernel.draw = sd ({[0; 1], [0; 0], [1; 1], [0; 0], [0; 0], 5, 1});
  seeds.kernel.enkf = [sd({Xf, Xf(1, :), 2, 0.5, ec}), ...
                       sd({'workspace', 'etkf', 5, 10, 3, 1})];
  seeds.kernel.gaspari_cohn = sd ({[0 0.6 3], 1.2});
  seeds.kernel.loglik = [sd({'gaussian', 2.385, [1.7 2.0 3.1], 0.6283, NaN}), ...
                         sd({'quantile', 'gaussian', [0.2 0.7], [1.7 -2], 0.63, NaN})];
  seeds.kernel.model_info = [sd({}), sd({'lorenz63'})];
  seeds.kernel.obsfile = [sd({'read', obs_file, [], 1, false, true}), ...
                          sd({'series', fo_file, [], 1, false, true, 'zero'}), ...
                          sd({'date', 730000.25}), ...
                          sd({'write', fullfile(outdir, 'tab.csv'), tab})];
  seeds.kernel.pf_run = sd ({rc});
  % the MPI gateway (built with make MPI=1): never started here, so a
  % collective is refused before it reads its arguments; the command of
  % those seeds is kept, so no fuzzed call can start MPI ('init')
  nst = 'sluice:mpi:notstarted';
  seeds.kernel.mpi = [sd({'initialized'}), sd({'allreduce', [1 2], 'sum'}, 1, [], nst), ...
                      sd({'bcast', uint8([1 2]), 0}, 1, [], nst), ...
                      sd({'gather', uint8([1 2])}, 1, [], nst), sd({'barrier'}, 1, [], nst)];
  seeds.kernel.prior_eval = [sd({'logpdf', [0; 1], [0; 0], [1; 1], [-Inf; 0], [Inf; Inf], ...
                                 [0.5 1; 0.2 2]}), ...
                             sd({'forward', [0; -Inf], [1; Inf], [0.5 0.2; 3 4]})];
  seeds.kernel.resample = sd ({[0.1 0.2 0.3 0.4], 'systematic', 10, 1, 0});
  seeds.kernel.scores = [sd({'crps', X, [3; 0]}), sd({'rank', X, [3; 0], 7}), ...
                         sd({'skill', [1.5 2 2.5 5], [1 2 3 4]}), ...
                         sd({'crps_weighted', [-0.731 2.385], 0.5, [0.3; 0.7]})];
  seeds.kernel.smooth = sd ({'genealogy', ones(1, 3, 2), [], ones(3, 2), 0.5, 0, ones(3, 2)});
  seeds.kernel.weights = sd ({log([0.1 0.2 0.3 0.4])});
  % one map, by the listed names ('kernel.<name>' for the gateways)
  m = containers.Map ();
  f = fieldnames (seeds);
  for k = 1:numel (f)
    if (~strcmp (f{k}, 'kernel'))
      m(f{k}) = seeds.(f{k});
    end
  end
  g = fieldnames (seeds.kernel);
  for k = 1:numel (g)
    m(['kernel.' g{k}]) = seeds.kernel.(g{k});
  end
  seeds = m;
end

function s = sd (args, keep, long, expect)
  % a seed call: its arguments, those never changed, those never made
  % huge (an argument whose huge values would start a valid run without
  % end; the spans of a run are not: the core refuses one too long), the
  % error the call raises as it is ('' for none)
  if (nargin < 2)
    keep = [];
  end
  if (nargin < 3)
    long = [];
  end
  if (nargin < 4)
    expect = '';
  end
  s = struct ('args', {args}, 'keep', keep, 'long', long, 'expect', expect);
end
