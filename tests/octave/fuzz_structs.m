function [bad, ncalls, nerr, tally] = fuzz_structs (seed, budget, only)
  % Calls the public functions with the structs a user may edit and pass
  % back in (model specs, priors, results of the workflows, a twin's truth
  % and network) after changing one field at a time: the field removed,
  % emptied, of another class, size or shape, NaN, Inf, a cell where a
  % char was and the reverse. The changes tried are a fixed-seed sample of
  % at most budget(k) per call site k (all of them when budget is Inf).
  % Every error must carry an identifier starting with 'sluice:'; bad
  % lists those that do not, one line each ("site | path | change | id |
  % message"). ncalls counts the calls made, nerr the errors raised,
  % tally(k) the calls of site k. only (optional) names the sites to run.
  if (nargin < 3)
    only = {};
  end
  old_warn = warning ('off', 'all');
  old_state = rand ('state');
  rand ('state', seed);
  restore = onCleanup (@() restore_all (old_warn, old_state));
  outdir = tempname ();
  tidy = onCleanup (@() remove_dir (outdir));

  sites = fixtures (outdir);
  bad = {};
  ncalls = 0;
  nerr = 0;
  tally = zeros (1, numel (sites));
  for k = 1:numel (sites)
    s = sites(k);
    if (~isempty (only) && ~any (strcmp (s.name, only)))
      continue;
    end
    cases = changes_of (s.value, s.depth);
    pick = randperm (numel (cases));
    b = budget;
    if (numel (budget) > 1)
      b = budget(k);
    end
    if (isfinite (b) && isfield (s, 'weight'))
      b = ceil (b * s.weight);
    end
    pick = pick(1:min (end, b));
    for c = pick
      [v, ok] = apply_change (s.value, cases{c});
      if (~ok)
        continue;
      end
      ncalls = ncalls + 1;
      tally(k) = tally(k) + 1;
      try
        s.call (v);
      catch err
        nerr = nerr + 1;
        if (~strncmp (err.identifier, 'sluice:', 7))
          msg = strrep (err.message, char (10), ' ');
          bad{end+1} = sprintf ('%s | %s | %s | %s | %s', s.name, ...
                                path_text (cases{c}.path), cases{c}.change, ...
                                err.identifier, msg(1:min (end, 160)));
        end
      end
      close all;
    end
  end
end

function restore_all (old_warn, old_state)
  warning (old_warn);
  rand ('state', old_state);
end

function remove_dir (d)
  if (exist (d, 'dir'))
    confirm_recursive_rmdir (false, 'local');
    rmdir (d, 's');
  end
end

function sites = fixtures (outdir)
  % the valid structs and the calls that take them
  T = 6;
  lin = sluice.model ('linear', 'A', 0.9, 'Q', 0.1, 'states', {'level'});
  fun = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, ...
                      'params', {'a'}, 'defaults', 0.5);
  flood = sluice.model ('flood');
  lor = sluice.model ('lorenz63', 'dt', 0.01);
  val = [0.3; -0.2; 0.5; 0.1; 0.4; 0.2];
  obs_l = struct ('time', (1:T)', 'variable', {repmat({'level'}, T, 1)}, ...
                  'value', val, 'sigma', 0.5 * ones (T, 1));
  obs_x = obs_l;
  obs_x.variable = repmat ({'x'}, T, 1);
  obs_x.value = 1 + val;
  obs_g = struct ('time', (1:3)', 'variable', {repmat({'G'}, 3, 1)}, ...
                  'value', [0.011; 0.012; 0.013], 'sigma', 0.01 * ones (3, 1));
  obs_z = struct ('time', [0.1; 0.2], 'variable', {{'x'; 'z'}}, ...
                  'value', [1; 2], 'sigma', [1; 1]);
  pr_l = sluice.prior ('level', 'normal', [0 1]);
  pr_a = sluice.prior ('a', 'uniform', [0 1], 'x', 'normal', [1 0.5]);
  pr_e = sluice.prior ('a', 'normal', [0 1], 'b', 'lognormal', [0 0.5]);
  G = [1 0.5; 0.2 1; 1 1];
  truth = struct ('times', 0:T, 'x0', 1);
  net = struct ('variable', 'level', 'every', 1, 'sigma', 0.3);
  res = sluice.filter (lin, pr_l, obs_l, 'members', 30, 'seed', 1, 'progress', false, ...
                       'history', true, 't0', 0);
  resp = sluice.filter (fun, pr_a, obs_x, 'members', 30, 'seed', 1, 'progress', false, ...
                        't0', 0);
  tw = sluice.twin (lin, truth, net, 'seed', 2, 'prior', pr_l, 'filter', {'members', 30});
  sw = sluice.sweep (@(p) struct ('v', p.a), struct ('a', [1 2], 'm', {{'u', 'w'}}), ...
                     'workers', 1);
  ev = sluice.evidence (lin, pr_l, obs_l, 'members', 20, 'repeats', 2, 'seed', 1, 't0', 0);
  filt = {'members', 20, 'seed', 1, 'progress', false, 't0', 0};
  rep = @(r) sluice.report (r, 'outdir', outdir);
  pm = {'members', 10, 'chains', 1, 'iterations', 4, 'burnin', 0, 'parallel', false, ...
        'progress', false, 'filter', struct('t0', 0)};
  chain = sluice.pmmh (fun, pr_a(1), obs_x, pm{:});

  sites = struct ('name', {}, 'value', {}, 'depth', {}, 'call', {}, 'weight', {});
  % model specs
  sites(end+1) = site ('filter/linear', lin, 1, @(s) sluice.filter (s, [], obs_l, filt{:}));
  sites(end+1) = site ('filter/function', fun, 1, @(s) sluice.filter (s, pr_a, obs_x, filt{:}));
  sites(end+1) = site ('filter/flood', flood, 1, @(s) sluice.filter (s, [], obs_g, filt{:}));
  sites(end+1) = site ('filter/lorenz63', lor, 1, @(s) sluice.filter (s, [], obs_z, filt{:}));
  sites(end+1) = site ('simulate/linear', lin, 1, @(s) sluice.simulate (s, [], [], 0:2));
  sites(end+1) = site ('simulate/flood', flood, 1, @(s) sluice.simulate (s, [], [], 0:2));
  sites(end+1) = site ('propagate/function', fun, 1, @(s) sluice.propagate (s, [1 2], [], 0, 2));
  sites(end+1) = site ('propagate/lorenz63', lor, 1, @(s) sluice.propagate (s, ones (3, 2), [], 0, 0.1));
  sites(end+1) = site ('twin/linear', lin, 1, @(s) sluice.twin (s, truth, net, 'seed', 2, ...
                                                       'prior', pr_l, 'filter', {'members', 20}));
  sites(end+1) = site ('evidence/linear', lin, 1, @(s) sluice.evidence (s, [], obs_l, ...
                                                      'members', 20, 'repeats', 2, 't0', 0));
  sites(end+1) = site ('esmda/function', fun, 1, @(s) sluice.esmda (s, pr_a, obs_x, ...
                                                      'members', 20, 'seed', 1));
  sites(end+1) = site ('drift_test/function', fun, 1, @(s) sluice.drift_test (s, pr_a(1), ...
                         obs_x, 'a', 0.1, 'members', 20, 'repeats', 2, 'seed', 1, 't0', 0));
  sites(end+1) = site ('pmmh/function', fun, 1, @(s) sluice.pmmh (s, pr_a(1), obs_x, ...
                         pm{:}), 0.3);
  sites(end+1) = site ('pmmh/continue', chain, 1, @(c) sluice.pmmh (fun, pr_a(1), obs_x, ...
                         pm{:}, 'continue', c), 0.3);
  % priors
  sites(end+1) = site ('draw/prior', pr_e, 1, @(p) sluice.draw (p, 10, 1));
  sites(end+1) = site ('filter/prior', pr_a, 1, @(p) sluice.filter (fun, p, obs_x, filt{:}));
  sites(end+1) = site ('esmda/prior', pr_e, 1, @(p) sluice.esmda (@(P) G * P, p, ...
                         [0.7; 1.4; 2.1], 0.1, 'members', 20, 'seed', 1));
  sites(end+1) = site ('twin/prior', pr_l, 1, @(p) sluice.twin (lin, truth, net, 'seed', 2, ...
                         'prior', p, 'filter', {'members', 20}));
  sites(end+1) = site ('evidence/prior', pr_a, 1, @(p) sluice.evidence (fun, p, obs_x, ...
                         'members', 20, 'repeats', 2, 't0', 0));
  sites(end+1) = site ('pmmh/prior', pr_a(1), 1, @(p) sluice.pmmh (fun, p, obs_x, ...
                         pm{:}), 0.3);
  % a twin's truth and observing network
  sites(end+1) = site ('twin/truth', truth, 1, @(t) sluice.twin (lin, t, net, 'seed', 2, ...
                         'prior', pr_l, 'filter', {'members', 20}));
  sites(end+1) = site ('twin/network', net, 1, @(n) sluice.twin (lin, truth, n, 'seed', 2, ...
                         'prior', pr_l, 'filter', {'members', 20}));
  % results
  sites(end+1) = site ('scores/filter', res, 2, @(r) sluice.scores (r, tw.truth, obs_l));
  sites(end+1) = site ('scores/params', resp, 2, @(r) sluice.scores (r, ...
                         struct ('times', 0:T, 'X', ones (1, T + 1), 'params', 0.5)));
  sites(end+1) = site ('smooth/filter', res, 2, @(r) sluice.smooth (r));
  sites(end+1) = site ('report/filter', res, 2, rep, 0.25);
  sites(end+1) = site ('report/twin', tw, 2, rep, 0.25);
  sites(end+1) = site ('report/sweep', sw, 1, rep, 0.25);
  sites(end+1) = site ('scores/twin', tw.filter, 2, @(r) sluice.scores (r, tw.truth, tw.obs));
  sites(end+1) = site ('report/evidence', ev, 1, rep, 0.1);
  sites(end+1) = site ('report/pmmh', chain, 2, rep, 0.25);
  sites(end+1) = site ('save_run/filter', res, 2, @(r) save_load (r, outdir, 'fuzz.nc'), 0.25);
  sites(end+1) = site ('save_run/twin', tw, 2, @(r) save_load (r, outdir, 'fuzz.nc'), 0.25);
  sites(end+1) = site ('save_run/octave', resp, 2, @(r) save_load (r, outdir, 'fuzz.mat'), 0.1);
end

function save_load (r, outdir, name)
  % a run saved and read back: save_run and load_run take what the other gives
  if (~exist (outdir, 'dir'))
    mkdir (outdir);
  end
  f = fullfile (outdir, name);
  sluice.save_run (r, f);
  sluice.load_run (f);
end

function s = site (name, value, depth, call, weight)
  if (nargin < 5)
    weight = 1;
  end
  s = struct ('name', name, 'value', value, 'depth', depth, 'call', call, 'weight', weight);
end

function cases = changes_of (v, depth)
  % every (path, change) pair of a struct: paths go depth levels into
  % nested structs and into the first elements of small cell arrays
  paths = paths_of (v, struct ('type', {}, 'subs', {}), depth);
  names = {'delete', 'empty', 'char', 'cellswap', 'nan', 'inf', 'negative', 'zero', ...
           'huge', 'single', 'int', 'logical', 'struct', 'complex', 'longer', ...
           'shorter', 'transpose', 'nanentry', 'handle', 'nested_cell'};
  cases = {};
  for i = 1:numel (paths)
    for j = 1:numel (names)
      cases{end+1} = struct ('path', paths{i}, 'change', names{j});
    end
  end
end

function P = paths_of (v, S, depth)
  P = {};
  if (isstruct (v) && numel (v) > 1)
    for k = 1:numel (v)
      P = [P, paths_of(v(k), [S, struct('type', '()', 'subs', {{k}})], depth)];
    end
  elseif (isstruct (v) && numel (v) == 1)
    f = fieldnames (v);
    for k = 1:numel (f)
      Sf = [S, struct('type', '.', 'subs', f{k})];
      P{end+1} = Sf;
      if (depth > 0)
        P = [P, paths_of(v.(f{k}), Sf, depth - 1)];
      end
    end
  elseif (iscell (v) && ~isempty (v))
    for k = unique ([1, min(2, numel (v)), numel(v)])
      P{end+1} = [S, struct('type', '{}', 'subs', {{k}})];
    end
  end
end

function [out, ok] = apply_change (v, c)
  out = v;
  ok = true;
  S = c.path;
  try
    old = subsref (v, S);
  catch
    ok = false;
    return;
  end
  if (strcmp (c.change, 'delete'))
    if (~strcmp (S(end).type, '.'))
      ok = false;
      return;
    end
    if (numel (S) >= 2 && strcmp (S(end-1).type, '()'))
      S = S([1:end-2, end]);   % a field of one element: remove it from all
    end
    if (numel (S) == 1)
      out = rmfield (v, S(end).subs);
    else
      parent = subsref (v, S(1:end-1));
      out = subsasgn (v, S(1:end-1), rmfield (parent, S(end).subs));
    end
    return;
  end
  try
    new = changed (old, c.change);
  catch
    ok = false;   % a change that does not apply to this value
    return;
  end
  if (isequal (new, old) && strcmp (class (new), class (old)))
    ok = false;
    return;
  end
  try
    out = subsasgn (v, S, new);
  catch
    ok = false;
  end
end

function new = changed (old, how)
  switch (how)
    case 'empty'
      new = [];
    case 'char'
      new = 'x';
    case 'cellswap'
      if (ischar (old))
        new = {old};
      elseif (iscell (old) && ~isempty (old))
        new = old{1};
      else
        new = {old};
      end
    case 'nan'
      new = NaN;
    case 'inf'
      new = Inf;
    case 'negative'
      new = -1;
    case 'zero'
      new = 0;
    case 'huge'
      new = 1e300;
    case 'single'
      if (isnumeric (old) || islogical (old))
        new = single (old);
      else
        new = single (1);
      end
    case 'int'
      new = int32 (3);
    case 'logical'
      new = true;
    case 'struct'
      new = struct ('a', 1);
    case 'complex'
      if (isnumeric (old) && ~isempty (old))
        new = double (old) + 1i;
      else
        new = 1i;
      end
    case 'longer'
      if (ischar (old))
        new = [old old];
      elseif (isnumeric (old) || iscell (old) || islogical (old))
        new = [old(:); old(:)];
      else
        new = [old old];
      end
    case 'shorter'
      if (isnumeric (old) || iscell (old) || ischar (old) || islogical (old) || isstruct (old))
        new = old(1:end-1);
      else
        new = [];
      end
    case 'transpose'
      if (ndims (old) == 2 && ~isa (old, 'function_handle'))
        new = old.';
      else
        new = permute (old, [2 1 3:ndims(old)]);
      end
    case 'nanentry'
      if (isa (old, 'double') && ~isempty (old))
        new = old;
        new(ceil (end / 2)) = NaN;
      else
        new = {NaN};
      end
    case 'handle'
      new = @(varargin) 1;
    otherwise   % nested_cell
      new = {{old}};
  end
end

function s = path_text (S)
  s = '';
  for k = 1:numel (S)
    switch (S(k).type)
      case '.'
        s = [s '.' S(k).subs];
      case '()'
        s = sprintf ('%s(%d)', s, S(k).subs{1});
      otherwise
        s = sprintf ('%s{%d}', s, S(k).subs{1});
    end
  end
end
