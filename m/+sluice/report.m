% -*- texinfo -*-
% @deftypefn  {} {@var{files} =} sluice.report (@var{res})
% @deftypefnx {} {@var{files} =} sluice.report (@var{res}, @var{opts})
% @deftypefnx {} {@var{files} =} sluice.report (@var{res}, @var{name}, @var{value}, @dots{})
% Write a report of a filter run or of a sweep: figures, tables, a summary.
% The PNG figures, CSV tables and plain-text summary go in one directory.
%
% @var{res} is a result of @code{sluice.filter} or of @code{sluice.twin}
% (whose filter run is reported, with its truth and observations), or
% the table of @code{sluice.sweep} (a sweep report, below). When the run
% has a smoothed estimate (@code{res.smoothed}, from the filter's
% @code{lag} or from @code{sluice.smooth}), the fan charts also draw the
% smoothed median (an orange line) and 90% band (orange dashes), and @code{smoothed.csv}
% holds them.
% The figures are drawn without a display (@code{figure ('visible', 'off')}
% and @code{print}); when no graphics toolkit can print, the error
% @code{sluice:report:nographics} says so.
%
% Files written:
% @table @code
% @item fan_<name>.png
% one per state and per parameter: the ensemble median as a line, the
% 50% and 90% bands as shaded areas (from the quantile levels 0.25, 0.75
% and 0.05, 0.95 of the run; a band whose levels were not recorded is left
% out and the summary says so), the observations of that variable as
% points and the truth as a line when known.
% @item ess.png
% effective sample size over time, the resampling threshold, and marks at
% the cycles where the ensemble was resampled.
% @item params.png
% parameter trajectories: mean and 90% band over time, one panel each
% (only when the model has parameters).
% @item rank.png
% rank histogram, when @code{opts.rank} gives the counts.
% @item summary.txt
% method, members, seed, times, log-evidence, skipped observations,
% non-finite members, final parameter means and 90% intervals.
% @item summary.csv
% one row per cycle: time, the mean and every recorded quantile of each
% state and parameter, the ESS and whether the ensemble was resampled.
% The first line holds the column names.
% @item final.csv
% the last cycle's mean and 90% interval of every state and parameter.
% @end table
%
% A sweep report (@var{res} a table of @code{sluice.sweep}: its columns
% before @code{seed} are the dimensions, those after it the scores)
% writes @code{heat_<score>.png} for every score: the score over two
% dimensions (@code{opts.axes}, default the first two; a cell dimension
% such as a method name is drawn as categories) as coloured cells with
% their values written in, averaged over the other dimensions (seeds or
% replicates, say), darker for larger values; over one dimension, a line
% with points. Plus @code{sweep.csv} (the table) and @code{summary.txt}
% (the best point of every score).
%
% Options (a struct or name/value pairs):
% @table @code
% @item outdir
% directory of the report (default @code{'out/report'}; created when
% missing).
% @item obs
% observation table (as @code{sluice.filter} takes it) to draw as points;
% default the twin's observations.
% @item truth
% struct with @code{times} (1 x T) and @code{X} (n x T, one row per
% state), optionally @code{params} (p x 1); or a twin result. Default the
% twin's truth.
% @item rank
% rank histogram counts from @code{sluice.rank_histogram}.
% @item units
% struct of unit strings by variable name, e.g.
% @code{struct ('level', 'm')}, used in the axis labels.
% @item time_unit
% unit of time for the axis labels (default none). A run with a calendar
% (@code{sluice.filter} with @code{origin}) is drawn against dates
% instead, and its CSV tables get a @code{date} column (ISO 8601, UTC)
% beside @code{time}.
% @item title
% a heading for the summary (default the model's name).
% @item variables
% cellstr of the states and parameters to draw (default: every state
% except the model's internal ones, such as GR4J's unit-hydrograph
% queues, and every parameter that moved). The CSV tables hold them all.
% @item log_scale
% cellstr of variables whose fan chart is drawn on a logarithmic axis
% (for quantities that grow by orders of magnitude, such as settlement
% size).
% @item axes
% sweep report: the two dimensions of the heat maps (a cellstr).
% @item scores
% sweep report: the scores to draw (default all).
% @end table
%
% @var{files} is a cellstr of the files written.
%
% @seealso{sluice.filter, sluice.twin, sluice.rank_histogram}
% @end deftypefn
function files = report (res, varargin)
  if (nargin < 1)
    sluice.kernel.compat ('usage', mfilename ());
  end
  opts = parse_options (varargin);
  if (is_sweep_table (res))
    sluice.kernel.check_sweep (res, 1, 'report');
    toolkit = find_toolkit ();
    old = warning ('off', 'Octave:gnuplot-graphics');
    restore = onCleanup (@() warning (old));
    make_outdir (opts.outdir);
    files = sweep_report (res, opts, toolkit);
    return;
  end
  [rf, obs, truth, scores] = unpack (res, opts);
  % the time axis: model times, or dates when the run has a calendar
  xa = time_axis (rf, opts);
  toolkit = find_toolkit ();
  % the gnuplot toolkit is the one that prints without a display: its
  % notice that another toolkit is preferred for interactive use is moot here
  old = warning ('off', 'Octave:gnuplot-graphics');
  restore = onCleanup (@() warning (old));

  outdir = opts.outdir;
  make_outdir (outdir);

  lv = rf.quantile_levels(:)';
  i05 = level (lv, 0.05);
  i25 = level (lv, 0.25);
  i50 = level (lv, 0.5);
  i75 = level (lv, 0.75);
  i95 = level (lv, 0.95);
  bands = struct ('outer', ~isempty (i05) && ~isempty (i95), ...
                  'inner', ~isempty (i25) && ~isempty (i75), ...
                  'median', ~isempty (i50));
  idx = struct ('q05', i05, 'q25', i25, 'q50', i50, 'q75', i75, 'q95', i95);

  files = {};
  names = [rf.state_names(:); rf.param_names(:)];
  n = numel (rf.state_names);
  used = {};
  moving = varying_params (rf);
  show = shown_variables (rf, opts, names, n);
  sm = smoothed_of (rf);
  for k = 1:numel (names)
    if (~show(k) || (k > n && ~moving(k - n)))
      continue;   % not asked for, internal, or a parameter held fixed
    end
    if (k <= n)
      M = rf.states.mean(k, :);
      Q = reshape (rf.states.quantiles(k, :, :), numel (lv), []);
    else
      M = rf.params.mean(k - n, :);
      Q = reshape (rf.params.quantiles(k - n, :, :), numel (lv), []);
    end
    S = [];
    if (~isempty (sm))
      S = smoothed_row (sm, k, n, lv);
    end
    [tt, yt] = truth_of (truth, names{k}, k, n, rf.times);
    [to, yo] = obs_of (obs, names{k});
    base = unique_name (['fan_', safe_name(names{k})], used);
    used{end + 1} = base;
    f = fullfile (outdir, [base, '.png']);
    fan_chart (f, toolkit, xa.x (rf.times), M, Q, idx, bands, xa.x (to), yo, xa.x (tt), yt, ...
               names{k}, label (names{k}, opts), xa, k > n, ...
               any (strcmp (names{k}, opts.log_scale)), S);
    files{end + 1} = f;
  end

  f = fullfile (outdir, 'ess.png');
  ess_chart (f, toolkit, rf, xa);
  files{end + 1} = f;

  moving = moving & show(n + 1:end);
  if (any (moving))
    f = fullfile (outdir, 'params.png');
    param_chart (f, toolkit, rf, idx, bands, truth, opts, xa, moving);
    files{end + 1} = f;
  end

  if (~isempty (opts.rank))
    f = fullfile (outdir, 'rank.png');
    rank_chart (f, toolkit, opts.rank);
    files{end + 1} = f;
  end

  f = fullfile (outdir, 'summary.csv');
  write_series (f, rf, names, n, xa);
  files{end + 1} = f;
  f = fullfile (outdir, 'final.csv');
  write_final (f, rf, names, n, idx);
  files{end + 1} = f;
  if (~isempty (sm))
    f = fullfile (outdir, 'smoothed.csv');
    write_series (f, smoothed_result (rf, sm), names, n, xa);
    files{end + 1} = f;
  end
  f = fullfile (outdir, 'summary.txt');
  write_text (f, rf, opts, bands, toolkit, scores, ~isempty (obs), ~isempty (truth), xa);
  files{end + 1} = f;
  files = files(:);
end

function opts = parse_options (args)
  opts = struct ('outdir', 'out/report', 'obs', [], 'truth', [], 'rank', [], ...
                 'units', struct (), 'time_unit', '', 'title', '', 'log_scale', {{}}, ...
                 'axes', {{}}, 'scores', {{}}, 'variables', []);
  args = sluice.kernel.option_pairs (args);
  if (mod (numel (args), 2) ~= 0)
    error ('sluice:report:badoption', ...
           'options must be a struct or name/value pairs, got %d trailing argument(s)', numel (args));
  end
  for k = 1:2:numel (args)
    name = args{k};
    if (~ischar (name) || ~isfield (opts, name))
      if (ischar (name))
        what = ['''', name, ''''];
      else
        what = ['a ', class(name)];
      end
      error ('sluice:report:badoption', 'unknown option %s; the options are %s', ...
             what, strjoin (fieldnames (opts)', ', '));
    end
    opts.(name) = args{k + 1};
  end
  d = opts.outdir;
  if (~ischar (d) || isempty (d) || size (d, 1) ~= 1)
    error ('sluice:report:badoutdir', 'outdir must be a non-empty string (a directory path)');
  end
  if (~isstruct (opts.units) || ~isscalar (opts.units))
    error ('sluice:report:badoption', 'units must be a struct of unit strings by variable name');
  end
  f = fieldnames (opts.units);
  for k = 1:numel (f)
    if (~ischar (opts.units.(f{k})))
      error ('sluice:report:badoption', 'units.%s must be a string', f{k});
    end
  end
  if (~ischar (opts.time_unit))
    error ('sluice:report:badoption', 'time_unit must be a string');
  end
  if (ischar (opts.variables))
    opts.variables = {opts.variables};
  end
  if (~(isempty (opts.variables) && isnumeric (opts.variables)) && ~iscellstr (opts.variables))
    error ('sluice:report:badoption', 'variables must be a cellstr of state and parameter names');
  end
  if (ischar (opts.log_scale))
    opts.log_scale = {opts.log_scale};
  end
  if (~iscellstr (opts.log_scale))
    error ('sluice:report:badoption', 'log_scale must be a cellstr of variable names');
  end
  if (~ischar (opts.title))
    error ('sluice:report:badoption', 'title must be a string');
  end
  for f = {'axes', 'scores'}
    v = opts.(f{1});
    if (ischar (v))
      v = {v};
    end
    if (~iscellstr (v))
      error ('sluice:report:badoption', '%s must be a cellstr of column names', f{1});
    end
    opts.(f{1}) = v;
  end
  r = opts.rank;
  if (~isempty (r) && (~isa (r, 'double') || ~isreal (r) || ~isvector (r) || ...
                       numel (r) < 2 || any (~isfinite (r)) || any (r < 0)))
    error ('sluice:report:badoption', ...
           'rank must be the counts of sluice.rank_histogram (a vector of >= 2 finite counts >= 0)');
  end
end

function [rf, obs, truth, scores] = unpack (res, opts)
  scores = [];
  obs = [];
  truth = [];
  if (isstruct (res) && isscalar (res) && isfield (res, 'filter') && isfield (res, 'truth'))
    rf = res.filter;
    truth = res.truth;
    if (isfield (res, 'obs'))
      obs = res.obs;
    end
    if (isfield (res, 'scores'))
      scores = res.scores;
      check_twin_scores (scores);
    end
    where = 'argument 1 (res.filter)';
  else
    rf = res;
    where = 'argument 1 (res)';
  end
  if (~isstruct (rf) || ~isscalar (rf))
    error ('sluice:report:badresult', ...
           'argument 1 (res): expected a result of sluice.filter or sluice.twin, got %s', ...
           describe (res));
  end
  sluice.kernel.check_result (rf, where, 'report', {'param_names', 'params', 'members'});
  rf.method_label = 'unknown method';
  if (isfield (rf, 'method') && ischar (rf.method))
    rf.method_label = rf.method;
  end
  if (~isempty (opts.obs))
    obs = opts.obs;
  end
  if (~isempty (obs))
    if (~isstruct (obs) || ~isscalar (obs) || ~isfield (obs, 'time') || ...
        ~isfield (obs, 'variable') || ~isfield (obs, 'value') || ...
        numel (obs.time) ~= numel (obs.value))
      error ('sluice:report:badoption', ...
             'obs must be an observation table with columns time, variable, value');
    end
  end
  if (~isempty (opts.truth))
    truth = opts.truth;
    if (isstruct (truth) && isscalar (truth) && isfield (truth, 'truth'))
      truth = truth.truth;
    end
  end
  if (~isempty (truth))
    n = numel (rf.state_names);
    if (~isstruct (truth) || ~isscalar (truth) || ~isfield (truth, 'times') || ...
        ~isfield (truth, 'X') || ~isa (truth.X, 'double') || size (truth.X, 1) ~= n || ...
        size (truth.X, 2) ~= numel (truth.times))
      error ('sluice:report:badoption', ...
             'truth must be a struct with times (1 x T) and X (%d x T), or a twin result', n);
    end
  end
end

function check_twin_scores (sc)
  % the twin's scores that the summary prints
  if (isempty (sc))
    return;
  end
  if (~isstruct (sc) || ~isscalar (sc))
    error ('sluice:report:badresult', ...
           'argument 1 (res.scores): expected the scores struct of sluice.twin, got %s', ...
           describe (sc));
  end
  f = {'rmse', 'spread', 'openloop_rmse', 'openloop_spread'};
  for k = 1:numel (f)
    if (isfield (sc, f{k}))
      v = sc.(f{k});
      if (~(isa (v, 'double') && isreal (v) && ~issparse (v)))
        error ('sluice:report:badresult', ...
               'argument 1 (res.scores): field ''%s'' must be a real double array, got %s', ...
               f{k}, describe (v));
      end
    end
  end
  if (isfield (sc, 'rmse') && ~isfield (sc, 'spread'))
    error ('sluice:report:badresult', 'argument 1 (res.scores): field ''spread'' is missing');
  end
  if (isfield (sc, 'openloop_rmse') && ~isfield (sc, 'openloop_spread'))
    error ('sluice:report:badresult', ...
           'argument 1 (res.scores): field ''openloop_spread'' is missing');
  end
end

function s = describe (a)
  s = sprintf ('%s %s', strjoin (arrayfun (@num2str, size (a), 'UniformOutput', false), 'x'), class (a));
end

function tk = find_toolkit ()
  % a toolkit that can print without a display
  tk = '';
  if (~sluice.kernel.compat ('is_octave'))
    tk = 'native';
    return;
  end
  avail = sluice.kernel.compat ('graphics_toolkits');
  if (isempty (avail))
    error ('sluice:report:nographics', ...
           ['no graphics toolkit is available to draw the figures ', ...
            '(install gnuplot, or run Octave with a display); %s'], graphics_packages ());
  end
  if (any (strcmp (avail, 'gnuplot')))
    tk = 'gnuplot';
    check_print_tools ();
  elseif (~isempty (getenv ('DISPLAY')))
    tk = avail{1};
  else
    error ('sluice:report:nographics', ...
           ['no graphics toolkit can print without a display (available: %s); ', ...
            'install gnuplot or run Octave with a display; %s'], strjoin (avail, ', '), ...
           graphics_packages ());
  end
end

function check_print_tools ()
  % what printing a PNG with gnuplot needs: a working gnuplot and Ghostscript
  % (the figure goes to PostScript first); a missing font shows only when
  % printing, where save_figure catches it
  gp = gnuplot_binary ();
  if (isempty (sluice.kernel.find_program (gp)))
    error ('sluice:report:nographics', ...
           'the gnuplot program (''%s'') is not on the PATH; %s', gp, graphics_packages ());
  end
  [st, out] = system (sprintf ('"%s" --version 2>&1', gp));
  if (st ~= 0)
    error ('sluice:report:nographics', 'gnuplot does not run (%s); %s', ...
           strtrim (out), graphics_packages ());
  end
  if (isempty (sluice.kernel.find_program ('gs')) && ...
      isempty (sluice.kernel.find_program (getenv ('GSC'))))
    error ('sluice:report:nographics', ...
           'Ghostscript (gs) is not on the PATH: printing PNG figures needs it; %s', ...
           graphics_packages ());
  end
end

function s = graphics_packages ()
  s = ['the report draws its figures with gnuplot, Ghostscript and a font ', ...
       '(on Debian: apt-get install gnuplot-nox ghostscript fonts-freefont-otf)'];
end

function h = new_figure (tk, wh)
  h = sluice.kernel.compat ('hidden_figure', tk);
  set (h, 'paperunits', 'inches', 'paperposition', [0 0 wh / 100]);
end

function save_figure (h, f)
  try
    print (h, '-dpng', '-r100', f);
  catch err
    close (h);
    error ('sluice:report:nographics', 'cannot print the figure %s: %s; %s', f, ...
           err.message, graphics_packages ());
  end
  close (h);
  d = dir (f);
  if (isempty (d) || d.bytes == 0)
    error ('sluice:report:nographics', 'printing gave no image in %s; %s', f, ...
           graphics_packages ());
  end
end

function tidy_axes (xgrid)
  % light dotted grid under the data
  set (gca, 'layer', 'bottom', 'gridcolor', [0.7 0.7 0.7], 'gridlinestyle', ':', ...
       'ygrid', 'on', 'xgrid', xgrid, 'box', 'on');
end

function c = palette (which)
  % the report's own colours, chosen for grey prints and colour-blind
  % readers: see sluice.kernel.report_palette for the choice and the values
  c = sluice.kernel.report_palette (which);
end

function i = level (lv, p)
  i = find (abs (lv - p) < 1e-9, 1);
end

function hb = band (t, lo, hi, c)
  hb = [];
  ok = isfinite (lo) & isfinite (hi);
  t = t(ok);
  lo = lo(ok);
  hi = hi(ok);
  if (isempty (t))
    return;
  end
  hb = fill ([t, fliplr(t)], [lo, fliplr(hi)], c, 'edgecolor', c);
end

function make_outdir (outdir)
  if (~exist (outdir, 'dir'))
    if (exist (outdir, 'file'))
      error ('sluice:report:badoutdir', ...
             'outdir ''%s'' exists and is not a directory', outdir);
    end
    [ok, msg] = mkdir (outdir);
    if (~ok)
      error ('sluice:report:badoutdir', 'cannot create outdir ''%s'': %s', outdir, msg);
    end
  end
end

function sm = smoothed_of (rf)
  sm = [];
  if (isfield (rf, 'smoothed') && isstruct (rf.smoothed) && isfield (rf.smoothed, 'states') ...
      && isfield (rf.smoothed.states, 'quantiles'))
    sm = rf.smoothed;
  end
end

function S = smoothed_row (sm, k, n, lv)
  % the smoothed median and 90% band of row k (the run's quantile levels)
  S = [];
  if (k <= n)
    Q = sm.states.quantiles;
    r = k;
  else
    Q = sm.params.quantiles;
    r = k - n;
  end
  if (size (Q, 2) ~= numel (lv))
    return;
  end
  Q = reshape (Q(r, :, :), numel (lv), []);
  i05 = level (lv, 0.05);
  i50 = level (lv, 0.5);
  i95 = level (lv, 0.95);
  if (~isempty (i50))
    S.median = Q(i50, :);
  end
  if (~isempty (i05) && ~isempty (i95))
    S.lo = Q(i05, :);
    S.hi = Q(i95, :);
  end
end

function r = smoothed_result (rf, sm)
  % the smoothed summaries in the layout write_series reads
  r = rf;
  r.states = struct ('mean', sm.states.mean, 'quantiles', sm.states.quantiles);
  if (isfield (sm, 'params') && isfield (sm.params, 'mean') && ...
      size (sm.params.mean, 1) == numel (rf.param_names))
    r.params = struct ('mean', sm.params.mean, 'quantiles', sm.params.quantiles);
  end
end

function tf = is_sweep_table (res)
  tf = isstruct (res) && isscalar (res) && isfield (res, 'seed') && ...
       ~isfield (res, 'state_names') && ~isfield (res, 'filter');
end

function files = sweep_report (t, opts, tk)
  f = fieldnames (t)';
  is = find (strcmp (f, 'seed'), 1);
  dims = f(1:is - 1);
  sc = f(is + 1:end);
  if (isempty (dims) || isempty (sc))
    error ('sluice:report:badsweep', ...
           'a sweep table needs dimension columns before ''seed'' and score columns after it');
  end
  if (~isempty (opts.scores))
    bad = setdiff (opts.scores, sc);
    if (~isempty (bad))
      error ('sluice:report:badsweep', 'the sweep has no score ''%s'' (it has %s)', ...
             bad{1}, strjoin (sc, ', '));
    end
    sc = opts.scores;
  end
  ax = opts.axes;
  if (isempty (ax))
    ax = dims(1:min (2, numel (dims)));
  end
  bad = setdiff (ax, dims);
  if (~isempty (bad) || numel (ax) > 2 || numel (unique (ax)) < numel (ax))
    error ('sluice:report:badsweep', ...
           'axes must name one or two different dimensions of the sweep (%s)', strjoin (dims, ', '));
  end
  files = {};
  lines = {'sluice sweep report', '', ...
           sprintf('%d points; dimensions: %s', numel(t.seed), strjoin(dims, ', ')), ...
           sprintf('drawn over: %s (mean over the other dimensions)', strjoin(ax, ' x ')), ''};
  for k = 1:numel (sc)
    y = t.(sc{k});
    if (~isnumeric (y) && ~islogical (y))
      continue;
    end
    y = double (y(:));
    [lab1, g1] = categories (t.(ax{1}));
    if (numel (ax) == 2)
      [lab2, g2] = categories (t.(ax{2}));
    else
      lab2 = {''};
      g2 = ones (size (g1));
    end
    ok = isfinite (y);
    M = accumarray ([g2(ok), g1(ok)], y(ok), [numel(lab2), numel(lab1)], @mean, NaN);
    fn = fullfile (opts.outdir, ['heat_', safe_name(sc{k}), '.png']);
    if (numel (ax) == 2)
      heat_chart (fn, tk, M, lab1, lab2, ax{1}, ax{2}, sc{k});
    else
      line_chart (fn, tk, M, lab1, ax{1}, sc{k});
    end
    files{end + 1} = fn;
    [best, ib] = min (y);
    [worst, iw] = max (y);
    lines{end + 1} = sprintf ('%s: smallest %.4g at %s; largest %.4g at %s', sc{k}, ...
                              best, point_of (t, dims, ib), worst, point_of (t, dims, iw));
  end
  fn = fullfile (opts.outdir, 'sweep.csv');
  fid = open_file (fn);
  cols = [dims, {'seed'}, f(is + 1:end)];
  fprintf (fid, '%s\n', strjoin (cols, ','));
  for i = 1:numel (t.seed)
    cells = cell (1, numel (cols));
    for c = 1:numel (cols)
      v = t.(cols{c});
      if (iscell (v))
        cells{c} = v{i};
      else
        cells{c} = sprintf ('%.10g', v(i));
      end
    end
    fprintf (fid, '%s\n', strjoin (cells, ','));
  end
  fclose (fid);
  files{end + 1} = fn;
  lines = [lines, {'', ['This report supports studies of flood risk; it is not a flood ', ...
                        'warning and not a design method for defences: defer to local ', ...
                        'codes and licensed engineering practice.']}];
  fn = fullfile (opts.outdir, 'summary.txt');
  fid = open_file (fn);
  fprintf (fid, '%s\n', lines{:});
  fclose (fid);
  files{end + 1} = fn;
  files = files(:);
end

function s = point_of (t, dims, i)
  parts = cell (1, numel (dims));
  for d = 1:numel (dims)
    v = t.(dims{d});
    if (iscell (v))
      parts{d} = sprintf ('%s=%s', dims{d}, v{i});
    else
      parts{d} = sprintf ('%s=%g', dims{d}, v(i));
    end
  end
  s = strjoin (parts, ', ');
end

function [labels, g] = categories (v)
  if (iscell (v))
    % categories in the order they first appear
    [labels, ia, g] = unique (v(:));
    [~, ord] = sort (ia);
    rank = zeros (numel (ord), 1);
    rank(ord) = 1:numel (ord);
    labels = labels(ord)';
    g = rank(g);
  else
    [u, ~, g] = unique (double (v(:)));
    labels = arrayfun (@(x) sprintf ('%g', x), u(:)', 'UniformOutput', false);
  end
  g = g(:);
end

function heat_chart (f, tk, M, lab1, lab2, n1, n2, score)
  h = new_figure (tk, [760 480]);
  imagesc (M);
  % light to dark blue: the report's ensemble colours
  c0 = [0.95 0.97 1.00];
  c1 = palette ('line');
  z = linspace (0, 1, 64)';
  colormap (c0 + z * (c1 - c0));
  cb = colorbar ();
  ylabel (cb, score, 'interpreter', 'none');
  lo = min (M(:));
  hi = max (M(:));
  for i = 1:size (M, 1)
    for j = 1:size (M, 2)
      if (isfinite (M(i, j)))
        dark = hi > lo && (M(i, j) - lo) / (hi - lo) > 0.55;
        text (j, i, sprintf ('%.3g', M(i, j)), 'horizontalalignment', 'center', ...
              'color', ifelse (dark, [1 1 1], [0 0 0]));
      end
    end
  end
  set (gca, 'xtick', 1:numel (lab1), 'xticklabel', lab1, 'ytick', 1:numel (lab2), ...
       'yticklabel', lab2, 'ydir', 'normal');
  xlabel (n1, 'interpreter', 'none');
  ylabel (n2, 'interpreter', 'none');
  title (sprintf ('%s over %s and %s', score, n1, n2), 'interpreter', 'none');
  save_figure (h, f);
end

function line_chart (f, tk, M, lab1, n1, score)
  h = new_figure (tk, [700 420]);
  plot (1:numel (lab1), M(1, :), '-o', 'color', palette ('line'), ...
        'markerfacecolor', palette ('line'), 'linewidth', 2);
  set (gca, 'xtick', 1:numel (lab1), 'xticklabel', lab1);
  xlim ([0.5, numel(lab1) + 0.5]);
  tidy_axes ('on');
  xlabel (n1, 'interpreter', 'none');
  ylabel (score, 'interpreter', 'none');
  title (sprintf ('%s over %s', score, n1), 'interpreter', 'none');
  save_figure (h, f);
end

function fan_chart (f, tk, t, M, Q, idx, bands, to, yo, tt, yt, name, ylab, xa, is_param, logy, S)
  h = new_figure (tk, [800 450]);
  hold on;
  hs = [];
  leg = {};
  if (bands.outer)
    hb = band (t, Q(idx.q05, :), Q(idx.q95, :), palette ('outer'));
    hs(end + 1:end + numel (hb)) = hb;
    leg(end + 1:end + numel (hb)) = {'90% band'};
  end
  if (bands.inner)
    hb = band (t, Q(idx.q25, :), Q(idx.q75, :), palette ('inner'));
    hs(end + 1:end + numel (hb)) = hb;
    leg(end + 1:end + numel (hb)) = {'50% band'};
  end
  if (bands.median)
    hs(end + 1) = plot (t, Q(idx.q50, :), '-', 'color', palette ('line'), 'linewidth', 2);
    leg{end + 1} = 'median';
  else
    hs(end + 1) = plot (t, M, '--', 'color', palette ('line'), 'linewidth', 2);
    leg{end + 1} = 'mean (no median recorded)';
  end
  if (~isempty (S))
    if (isfield (S, 'median'))
      hs(end + 1) = plot (t, S.median, '-', 'color', palette ('smooth'), 'linewidth', 2);
      leg{end + 1} = 'smoothed median';
    end
    if (isfield (S, 'lo'))
      hs(end + 1) = plot (t, S.lo, '--', 'color', palette ('smooth'), 'linewidth', 1.5);
      leg{end + 1} = 'smoothed 90% band';
      plot (t, S.hi, '--', 'color', palette ('smooth'), 'linewidth', 1.5);
    end
  end
  if (~isempty (tt))
    hs(end + 1) = plot (tt, yt, '-', 'color', palette ('truth'), 'linewidth', 1.5);
    leg{end + 1} = 'truth';
  end
  if (~isempty (to))
    hs(end + 1) = plot (to, yo, 'o', 'color', palette ('obs'), ...
                        'markerfacecolor', palette ('obs'), 'markersize', 4);
    leg{end + 1} = 'observations';
  end
  hold off;
  tidy_axes ('on');
  if (logy)
    set (gca (), 'yscale', 'log');
  end
  date_ticks (xa, t);
  xlabel (xa.label);
  ylabel (ylab);
  if (is_param)
    kind = 'parameter';
  else
    kind = 'state';
  end
  title (sprintf ('%s %s: ensemble median and bands', kind, name), 'interpreter', 'none');
  legend (hs, leg, 'location', 'northeastoutside');
  save_figure (h, f);
end

function ess_chart (f, tk, rf, xa)
  h = new_figure (tk, [800 400]);
  t = xa.x (rf.times);
  N = rf.members;
  hold on;
  hs = plot (t, rf.ess, '-', 'color', palette ('line'), 'linewidth', 1.5);
  leg = {'ESS'};
  th = NaN;
  if (isfield (rf, 'options') && isfield (rf.options, 'resample_threshold'))
    th = rf.options.resample_threshold * N;
  end
  if (isfinite (th))
    hs(end + 1) = plot ([t(1), t(end)], [th, th], '--', 'color', [0.4 0.4 0.4]);
    leg{end + 1} = 'resampling threshold';
  end
  r = logical (rf.resampled(:)');
  if (any (r))
    hs(end + 1) = plot (t(r), rf.ess(r), 'v', 'color', palette ('mark'), ...
                        'markerfacecolor', palette ('mark'), 'markersize', 6);
    leg{end + 1} = 'resampled';
  end
  if (isfield (rf, 'degenerate') && any (rf.degenerate))
    d = logical (rf.degenerate(:)');
    hs(end + 1) = plot (t(d), rf.ess(d), 'x', 'color', palette ('truth'), 'markersize', 8);
    leg{end + 1} = 'degenerate';
  end
  hold off;
  tidy_axes ('on');
  ylim ([0, 1.05 * N]);
  date_ticks (xa, t);
  xlabel (xa.label);
  ylabel (sprintf ('effective sample size (of %d members)', N));
  title (sprintf ('ESS over time (%s, %d of %d cycles resampled)', ...
                  rf.method_label, sum (r), numel (t)), 'interpreter', 'none');
  legend (hs, leg, 'location', 'northeastoutside');
  save_figure (h, f);
end

function show = shown_variables (rf, opts, names, n)
  % the states and parameters to draw: those asked for, or all but the
  % model's internal states
  if (isempty (opts.variables))
    show = true (numel (names), 1);
    if (isfield (rf, 'internal_states') && numel (rf.internal_states) == n)
      show(1:n) = ~logical (rf.internal_states(:));
    end
  else
    [show, ~] = ismember (names(:), opts.variables(:));
    unknown = setdiff (opts.variables(:), names(:));
    if (~isempty (unknown))
      error ('sluice:report:badoption', ...
             'variables: ''%s'' is not a state or parameter of the run (they are %s)', ...
             unknown{1}, strjoin (names(:)', ', '));
    end
  end
end

function moving = varying_params (rf)
  % parameters whose ensemble has any spread or change over the run
  p = numel (rf.param_names);
  moving = false (p, 1);
  for k = 1:p
    v = [reshape(rf.params.quantiles(k, :, :), 1, []), rf.params.mean(k, :)];
    moving(k) = max (v(:)) > min (v(:));
  end
end

function param_chart (f, tk, rf, idx, bands, truth, opts, xa, moving)
  ks = find (moving)';
  p = numel (ks);
  h = new_figure (tk, [800, 160 + 240 * p]);
  t = xa.x (rf.times);
  for j = 1:p
    k = ks(j);
    subplot (p, 1, j);
    hold on;
    if (bands.outer)
      Q = reshape (rf.params.quantiles(k, :, :), numel (rf.quantile_levels), []);
      band (t, Q(idx.q05, :), Q(idx.q95, :), palette ('outer'));
    end
    plot (t, rf.params.mean(k, :), '-', 'color', palette ('line'), 'linewidth', 2);
    if (~isempty (truth) && isfield (truth, 'params') && numel (truth.params) == numel (rf.param_names))
      plot ([t(1), t(end)], truth.params(k) * [1 1], '-', 'color', palette ('truth'), ...
            'linewidth', 1.5);
    end
    hold off;
    tidy_axes ('on');
    date_ticks (xa, t);
    ylabel (label (rf.param_names{k}, opts));
    if (j == 1)
      if (bands.outer)
        what = 'mean (line) and 90% band';
      else
        what = 'mean (no 90% band recorded)';
      end
      title (sprintf ('parameter trajectories: %s', what));
    end
    if (j == p)
      xlabel (xa.label);
    end
  end
  save_figure (h, f);
end

function rank_chart (f, tk, counts)
  counts = counts(:)';
  K = numel (counts);
  h = new_figure (tk, [700 400]);
  bar (1:K, counts, 1, 'facecolor', palette ('inner'), 'edgecolor', palette ('line'));
  hold on;
  flat = sum (counts) / K;
  plot ([0.5, K + 0.5], [flat, flat], '--', 'color', palette ('obs'));
  hold off;
  xlim ([0.5, K + 0.5]);
  tidy_axes ('off');
  xlabel (sprintf ('rank of the observation among the members (1 .. %d)', K));
  ylabel ('count');
  title (sprintf ('rank histogram (%d observations; dashed: flat)', sum (counts)));
  save_figure (h, f);
end

function [tt, yt] = truth_of (truth, name, k, n, times)
  tt = [];
  yt = [];
  if (isempty (truth))
    return;
  end
  if (k <= n)
    tt = truth.times(:)';
    yt = truth.X(k, :);
  elseif (isfield (truth, 'params') && numel (truth.params) >= k - n)
    tt = [times(1), times(end)];
    yt = truth.params(k - n) * [1 1];
  end
end

function [to, yo] = obs_of (obs, name)
  to = [];
  yo = [];
  if (isempty (obs))
    return;
  end
  v = obs.variable;
  if (ischar (v))
    v = {v};
  end
  sel = strcmp (v(:), name) & isfinite (obs.value(:));
  to = obs.time(sel);
  to = to(:)';
  yo = obs.value(sel);
  yo = yo(:)';
end

function s = label (name, opts)
  % axis labels are read as TeX (units such as m^3/s): keep the name literal
  s = strrep (name, '_', '\_');
  if (isfield (opts.units, name) && ~isempty (opts.units.(name)))
    s = sprintf ('%s (%s)', s, opts.units.(name));
  end
end

function xa = time_axis (rf, opts)
  % the x axis of the time charts: xa.x maps model times to the values
  % drawn (themselves, or datenums for a run with a calendar), xa.label
  % names the axis, xa.dates (1 x T ISO 8601 texts, or {}) go in the tables
  xa = struct ('dated', false, 'x', @(t) t, 'label', 'time', 'dates', {{}}, ...
               'origin', '', 'unit', '');
  if (~isempty (opts.time_unit))
    xa.label = sprintf ('time (%s)', opts.time_unit);
  end
  if (isfield (rf, 'time_origin') && ~isempty (rf.time_origin))
    cal = sluice.kernel.time_origin (rf.time_origin, rf.time_unit, 'report');
    xa.dated = true;
    xa.x = @(t) cal.datenum + t * cal.unit_days;
    xa.label = 'date (UTC)';
    [~, xa.dates] = sluice.kernel.obsfile ('date', xa.x (rf.times(:)'));
    xa.origin = cal.text;
    xa.unit = cal.unit;
  end
end

function date_ticks (xa, t)
  % dates on the x axis, as fine as the span asks
  if (~xa.dated || isempty (t))
    return;
  end
  span = max (t(:)) - min (t(:));
  if (span >= 3 * 365)
    fmt = 'yyyy';
  elseif (span >= 60)
    fmt = 'yyyy-mm';
  else
    fmt = 'yyyy-mm-dd';
  end
  datetick ('x', fmt, 'keeplimits');
end

function s = safe_name (name)
  s = regexprep (name, '[^A-Za-z0-9_.-]', '_');
end

function s = unique_name (s, used)
  base = s;
  k = 1;
  while (any (strcmp (s, used)))
    k = k + 1;
    s = sprintf ('%s_%d', base, k);
  end
end

function s = qname (p)
  s = sprintf ('q%02d', round (100 * p));
  if (abs (100 * p - round (100 * p)) > 1e-9)
    s = sprintf ('q%s', regexprep (sprintf ('%.6g', 100 * p), '\.', '_'));
  end
end

function write_series (f, rf, names, n, xa)
  lv = rf.quantile_levels(:)';
  T = numel (rf.times);
  nq = numel (lv);
  K = numel (names);
  % columns filled in place: growing the matrix column by column copies
  % it every time, which a run with many states and cycles feels
  head = cell (1, 1 + K * (nq + 1));
  head{1} = 'time';
  cols = zeros (T, 1 + K * (nq + 1) + 2);
  cols(:, 1) = rf.times(:);
  c = 1;
  for k = 1:K
    if (k <= n)
      M = rf.states.mean(k, :);
      Q = reshape (rf.states.quantiles(k, :, :), nq, T);
    else
      M = rf.params.mean(k - n, :);
      Q = reshape (rf.params.quantiles(k - n, :, :), nq, T);
    end
    c = c + 1;
    head{c} = [safe_name(names{k}), '_mean'];
    cols(:, c) = M(:);
    for j = 1:nq
      c = c + 1;
      head{c} = [safe_name(names{k}), '_', qname(lv(j))];
      cols(:, c) = Q(j, :)';
    end
  end
  head = [head, {'ess', 'resampled'}];
  cols(:, end - 1) = rf.ess(:);
  cols(:, end) = double (rf.resampled(:));
  fid = open_file (f);
  if (xa.dated)
    % the date beside the model time: time,date,...; the numbers of all
    % rows are formatted in one call, then joined to their dates
    fprintf (fid, '%s\n', strjoin ([head(1), {'date'}, head(2:end)], ','));
    rest = [strjoin(repmat ({'%.10g'}, 1, size (cols, 2) - 1), ','), '\n'];
    body = sprintf (rest, cols(:, 2:end)');
    tt = sprintf ('%.10g\n', cols(:, 1));
    lines = cell (3, T);
    lines(1, :) = regexp (tt(1:end - 1), '\n', 'split');
    lines(2, :) = xa.dates(:)';
    lines(3, :) = regexp (body(1:end - 1), '\n', 'split');
    fprintf (fid, '%s,%s,%s\n', lines{:});
  else
    fprintf (fid, '%s\n', strjoin (head, ','));
    fmt = [strjoin(repmat ({'%.10g'}, 1, size (cols, 2)), ','), '\n'];
    fprintf (fid, fmt, cols');
  end
  fclose (fid);
end

function write_final (f, rf, names, n, idx)
  fid = open_file (f);
  fprintf (fid, 'variable,kind,mean,lower90,upper90\n');
  for k = 1:numel (names)
    [m, lo, hi] = final_of (rf, k, n, idx);
    if (k <= n)
      kind = 'state';
    else
      kind = 'parameter';
    end
    fprintf (fid, '%s,%s,%.10g,%.10g,%.10g\n', names{k}, kind, m, lo, hi);
  end
  fclose (fid);
end

function [m, lo, hi] = final_of (rf, k, n, idx)
  lo = NaN;
  hi = NaN;
  if (k <= n)
    m = rf.states.mean(k, end);
    Q = rf.states.quantiles(k, :, end);
  else
    m = rf.params.mean(k - n, end);
    Q = rf.params.quantiles(k - n, :, end);
  end
  if (~isempty (idx.q05) && ~isempty (idx.q95))
    lo = Q(idx.q05);
    hi = Q(idx.q95);
  end
end

function fid = open_file (f)
  [fid, msg] = fopen (f, 'w');
  if (fid < 0)
    error ('sluice:report:badoutdir', 'cannot write %s: %s', f, msg);
  end
end

function write_text (f, rf, opts, bands, tk, scores, have_obs, have_truth, xa)
  fid = open_file (f);
  heading = opts.title;
  if (isempty (heading) && isfield (rf, 'model'))
    heading = sprintf ('model %s', rf.model);
  end
  fprintf (fid, 'Report of a filter run: %s\n\n', heading);
  fprintf (fid, 'method:              %s\n', rf.method_label);
  fprintf (fid, 'members:             %d\n', rf.members);
  if (isfield (rf, 'seed'))
    fprintf (fid, 'seed:                %.17g\n', rf.seed);
  end
  t = rf.times;
  fprintf (fid, 'cycles:              %d, times %g to %g\n', numel (t), t(1), t(end));
  if (xa.dated)
    fprintf (fid, 'dates:               %s to %s (UTC; time 0 is %s, time in %s)\n', ...
             xa.dates{1}, xa.dates{end}, xa.origin, xa.unit);
  end
  if (isfield (rf, 'log_evidence'))
    fprintf (fid, 'log-evidence:        %.10g\n', rf.log_evidence);
  end
  if (isfield (rf, 'skipped'))
    fprintf (fid, 'skipped (missing) observations: %d\n', sum (rf.skipped(:)));
  end
  if (isfield (rf, 'nonfinite'))
    nf = rf.nonfinite(:);
    fprintf (fid, 'non-finite members:  %d at most in one cycle, in %d cycle(s)\n', ...
             max ([0; nf]), sum (nf > 0));
  end
  if (isfield (rf, 'degenerate'))
    fprintf (fid, 'degenerate cycles:   %d\n', sum (rf.degenerate(:)));
  end
  fprintf (fid, 'resampled cycles:    %d of %d\n', sum (rf.resampled(:)), numel (t));
  fprintf (fid, 'quantile levels:     %s\n', sprintf ('%g ', rf.quantile_levels));

  fprintf (fid, '\nFigures (drawn with the %s graphics toolkit):\n', tk);
  fprintf (fid, '  fan charts: median line%s%s%s', ...
           ifelse (bands.inner, ', 50% band', ''), ...
           ifelse (bands.outer, ', 90% band', ''), ...
           ifelse (have_obs, ', observations as points', ''));
  fprintf (fid, '%s\n', ifelse (have_truth, ', truth as a red line', ''));
  if (~bands.median)
    fprintf (fid, '  no 0.5 quantile was recorded: the fan charts show the mean instead of the median\n');
  end
  if (~bands.inner)
    fprintf (fid, '  the 50%% band is not drawn: the run did not record the 0.25 and 0.75 quantiles\n');
  end
  if (~bands.outer)
    fprintf (fid, '  the 90%% band is not drawn: the run did not record the 0.05 and 0.95 quantiles\n');
  end
  if (~bands.inner || ~bands.outer || ~bands.median)
    fprintf (fid, '  (run sluice.filter with ''quantiles'', [0.05 0.25 0.5 0.75 0.95] for every band)\n');
  end

  p = numel (rf.param_names);
  n = numel (rf.state_names);
  idx = struct ('q05', level (rf.quantile_levels(:)', 0.05), ...
                'q95', level (rf.quantile_levels(:)', 0.95));
  if (p > 0)
    fprintf (fid, '\nFinal parameters (mean, 90%% interval):\n');
    for k = 1:p
      [m, lo, hi] = final_of (rf, n + k, n, idx);
      if (isnan (lo))
        fprintf (fid, '  %-12s %.6g  (no 90%% interval recorded)\n', rf.param_names{k}, m);
      else
        fprintf (fid, '  %-12s %.6g  [%.6g, %.6g]\n', rf.param_names{k}, m, lo, hi);
      end
    end
    if (isfield (rf.params, 'distinct') && size (rf.params.distinct, 1) == p && ...
        ~isempty (rf.params.distinct))
      fprintf (fid, ['\nParameter diversity at the last cycle (distinct values among ', ...
                     'the %d members; smallest over the run):\n'], rf.members);
      for k = 1:p
        dv = rf.params.distinct(k, :);
        fprintf (fid, '  %-12s %d  (smallest %d)\n', rf.param_names{k}, dv(end), min (dv));
      end
    end
    if (isfield (rf, 'param_move') && ischar (rf.param_move))
      fprintf (fid, '\nParameter move: %s', rf.param_move);
      if (isfield (rf, 'move_accept') && any (~isnan (rf.move_accept)))
        acc = rf.move_accept(~isnan (rf.move_accept));
        fprintf (fid, ' (%d Metropolis-Hastings sweeps in %d cycles, acceptance %.2f on average)', ...
                 sum (rf.move_sweeps), numel (acc), mean (acc));
      end
      fprintf (fid, '\n');
    end
  else
    fprintf (fid, '\nThe model has no parameters.\n');
  end
  fprintf (fid, '\nFinal states (mean, 90%% interval):\n');
  for k = 1:n
    [m, lo, hi] = final_of (rf, k, n, idx);
    fprintf (fid, '  %-12s %.6g  [%.6g, %.6g]\n', rf.state_names{k}, m, lo, hi);
  end
  if (~isempty (scores) && isfield (scores, 'rmse'))
    fprintf (fid, '\nScores against the truth:\n');
    fprintf (fid, '  RMSE %.6g, spread %.6g', mean (scores.rmse(:)), mean (scores.spread(:)));
    if (isfield (scores, 'openloop_rmse'))
      fprintf (fid, '; open loop: RMSE %.6g, spread %.6g', ...
               mean (scores.openloop_rmse(:)), mean (scores.openloop_spread(:)));
    end
    fprintf (fid, '\n');
  end
  fprintf (fid, ['\nThis report supports studies of flood risk. It is not a flood warning ', ...
                 'and not a basis for the design of defences; follow local codes and ', ...
                 'licensed engineering practice.\n']);
  fclose (fid);
end

function s = ifelse (c, a, b)
  if (c)
    s = a;
  else
    s = b;
  end
end

%!error <Invalid call> sluice.report ()
%!error id=sluice:report:badresult sluice.report (1)
%!error id=sluice:report:badresult sluice.report (struct ('filter', 1))
%!error id=sluice:report:badoutdir sluice.report (struct ('times', 1, 'state_names', {{}}, 'param_names', {{}}, 'states', 1, 'params', 1, 'quantile_levels', 0.5, 'ess', 1, 'resampled', false, 'members', 1), 'outdir', 7)

%!shared r0, o0
%! m0 = sluice.model ('linear', 'A', 0.8, 'Q', 0.05, 'states', {'level'});
%! o0 = struct ('time', (1:8)', 'variable', {repmat({'level'}, 8, 1)}, ...
%!              'value', [0.4; 0.1; -0.2; 0.3; 0.5; 0.2; 0; -0.1], 'sigma', 0.3 * ones (8, 1));
%! r0 = sluice.filter (m0, [], o0, 'members', 100, 'seed', 5, 'progress', false, ...
%!                     'quantiles', [0.05 0.25 0.5 0.75 0.95]);

%!test
%! % the main job: the files of a filter run's report, a PNG among them
%! d = tempname ();
%! unwind_protect
%!   files = sluice.report (r0, 'outdir', d, 'obs', o0);
%!   assert (numel (files), 5);
%!   assert (exist (fullfile (d, 'fan_level.png'), 'file'), 2);
%!   % a PNG starts with the bytes 137 'PNG' (PNG specification, section 5.2)
%!   fid = fopen (fullfile (d, 'fan_level.png'), 'r');
%!   sig = fread (fid, 4)';
%!   fclose (fid);
%!   assert (sig, [137 80 78 71]);
%!   C = csvread (fullfile (d, 'summary.csv'), 1, 0);
%!   assert (C(:, 2), r0.states.mean(:), 1e-8);
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   if (exist (d, 'dir')), rmdir (d, 's'); end
%! end_unwind_protect

%!test
%! % the summary names the parameter move and its acceptance
%! m1 = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, 'params', {'a'}, 'x0', 5);
%! o1 = struct ('time', (1:20)', 'variable', {repmat({'x'}, 20, 1)}, ...
%!              'value', 5 * 0.9 .^ (1:20)', 'sigma', 0.05 * ones (20, 1));
%! r1 = sluice.filter (m1, sluice.prior ('a', 'normal', [0.9 0.1]), o1, 'members', 200, ...
%!                     'seed', 1, 't0', 0, 'progress', false);
%! d = tempname ();
%! unwind_protect
%!   sluice.report (r1, 'outdir', d);
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'Parameter move: resample_move (')));
%!   assert (~isempty (regexp (txt, 'acceptance 0\.\d\d on average', 'once')));
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   if (exist (d, 'dir')), rmdir (d, 's'); end
%! end_unwind_protect

%!test
%! % no Ghostscript on the PATH (gnuplot alone): refused before drawing,
%! % with the Debian packages named
%! gp = sluice.kernel.find_program (gnuplot_binary ());
%! bin = tempname ();
%! d = tempname ();
%! mkdir (bin);
%! symlink (gp, fullfile (bin, 'gnuplot'));
%! old = getenv ('PATH');
%! oldgsc = getenv ('GSC');
%! unwind_protect
%!   setenv ('PATH', bin);
%!   unsetenv ('GSC');
%!   try
%!     sluice.report (r0, 'outdir', d);
%!     error ('no error');
%!   catch err
%!     assert (err.identifier, 'sluice:report:nographics');
%!     assert (~isempty (strfind (err.message, 'Ghostscript')));
%!     assert (~isempty (strfind (err.message, 'gnuplot-nox ghostscript fonts-freefont-otf')));
%!   end
%!   setenv ('PATH', '');
%!   fail ('sluice.report (r0, ''outdir'', d)', 'gnuplot program');
%! unwind_protect_cleanup
%!   setenv ('PATH', old);
%!   if (~isempty (oldgsc)), setenv ('GSC', oldgsc); end
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (bin, 's');
%!   if (exist (d, 'dir')), rmdir (d, 's'); end
%! end_unwind_protect

%!test
%! % a Ghostscript that fails (as it does without a font): the print comes
%! % out as sluice:report:nographics, not as a crash or a silent gap
%! bin = tempname ();
%! d = tempname ();
%! mkdir (bin);
%! fid = fopen (fullfile (bin, 'gs'), 'w');
%! fprintf (fid, '#!/bin/sh\nexit 1\n');
%! fclose (fid);
%! system (sprintf ('chmod 755 "%s"', fullfile (bin, 'gs')));
%! old = getenv ('PATH');
%! oldgsc = getenv ('GSC');
%! unwind_protect
%!   setenv ('PATH', [bin, pathsep(), old]);
%!   unsetenv ('GSC');
%!   clear functions;   % print keeps the Ghostscript it found first
%!   fail ('sluice.report (r0, ''outdir'', d)', 'fonts-freefont-otf');
%!   try
%!     sluice.report (r0, 'outdir', d);
%!   catch err
%!     assert (err.identifier, 'sluice:report:nographics');
%!   end
%! unwind_protect_cleanup
%!   setenv ('PATH', old);
%!   if (~isempty (oldgsc)), setenv ('GSC', oldgsc); end
%!   clear functions;
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (bin, 's');
%!   if (exist (d, 'dir')), rmdir (d, 's'); end
%! end_unwind_protect

%!demo
%! % Lowmarsh on the invented river Vell: a report of a filter run over
%! % fifteen invented yearly levels, written to a temporary folder.
%! m = sluice.model ('linear', 'A', 0.9, 'Q', 0.05, 'states', {'level'});
%! value = [0.8; 1.1; 0.7; NaN; 0.4; 0.6; 0.9; 1.3; 1.0; 0.5; 0.3; NaN; 0.6; 0.8; 0.7];
%! obs = struct ('time', (1:15)', 'variable', {repmat({'level'}, 15, 1)}, ...
%!               'value', value, 'sigma', 0.2 * ones (15, 1));
%! r = sluice.filter (m, [], obs, 'members', 1000, 'seed', 8, 't0', 0, 'progress', false, ...
%!                    'quantiles', [0.05 0.25 0.5 0.75 0.95]);
%! d = tempname ();
%! files = sluice.report (r, 'outdir', d, 'obs', obs, 'units', struct ('level', 'm'), ...
%!                        'time_unit', 'year', 'title', 'Vell at Lowmarsh (invented)');
%! fprintf ('report written to %s:\n', d);
%! fprintf ('  %s\n', files{:});
%! fprintf ('%s', fileread (fullfile (d, 'summary.txt')));
