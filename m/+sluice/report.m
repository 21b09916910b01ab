% -*- texinfo -*-
% @deftypefn  {} {@var{files} =} sluice.report (@var{res})
% @deftypefnx {} {@var{files} =} sluice.report (@var{res}, @var{opts})
% @deftypefnx {} {@var{files} =} sluice.report (@var{res}, @var{name}, @var{value}, @dots{})
% Write figures, tables and a summary of a filter run, a sweep or MCMC chains.
% The PNG figures, CSV tables and plain-text summary go in one directory.
%
% @var{res} is a result of @code{sluice.filter} or of @code{sluice.twin}
% (whose filter run is reported, with its truth and observations), or
% the table of @code{sluice.sweep} (a sweep report, below). When the run
% has a smoothed estimate (@code{res.smoothed}, from the filter's
% @code{lag} or from @code{sluice.smooth}), the fan charts also draw the
% smoothed median (a purple dash-dot line) and 90% band (purple dashes),
% and @code{smoothed.csv} holds them.
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
% black dots and the truth as a line when known. A state's long record
% is drawn in panels (see @code{panels} below): one panel per calendar
% year, stacked on a page of up to 6 panels; a longer record continues
% on @code{fan_<name>_page2.png}, @code{fan_<name>_page3.png}, @dots{}
% A parameter's fan chart is always one chart (parameters move slowly).
% @item ess.png
% effective sample size over the drawn period, the resampling threshold,
% and marks at the cycles where the ensemble was resampled (one chart: its
% dips show at 2 or 3 daily cycles a pixel).
% @item params.png
% parameter trajectories: mean and 90% band over the drawn period, one
% panel each (only when the model has parameters; never cut into years,
% since parameters move slowly).
% @item overview.png
% the main panels on one page, over the drawn period on one axis each:
% the fan charts of the observed states (of every drawn state when no
% observations are given), of the parameters that moved (at most 8
% charts in all; the summary names any left out) and the ESS.
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
% @item fan_<derived>.png
% for every derived quantity of the filter's @code{operators} that was
% observed (or named in @code{variables}): its median and bands
% (@code{res.derived}) with its observations; @code{summary.csv} holds
% the columns of every derived quantity.
% @item counts_<name>.png, counts.csv
% binomial observations (counts y of n trials), which observe the logit x
% of a share: the counts beside the band of the predicted count
% n / (1 + exp(-x)), and a table of each count with that prediction's
% 5%, 50% and 95% points at its cycle. Such counts are not drawn on the
% fan chart of x.
% @item skill.csv
% with observations: per observed variable (binomial counts aside), the
% Nash-Sutcliffe efficiency and the Kling-Gupta efficiency with its parts
% r, alpha, beta of the analysis mean, and of the forecast mean where
% recorded (as @code{sluice.scores}); @code{summary.txt} lists them. The
% analysis mean has seen the observations it is scored against and
% flatters the run; the forecast scores have not.
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
% An MCMC report (@var{res} a result of @code{sluice.pmmh}) writes, for
% every parameter, @code{trace_<name>.png} (each chain's kept draws
% against the iteration, the chains told apart by colour, line style and
% marker; its split R-hat and bulk ESS in the title) and
% @code{density_<name>.png} (a histogram of the draws of all chains as a
% density, bins by the Rice rule 2 N^(1/3) within 10 to 60, each
% chain's histogram as a line, the 2.5% and 97.5% quantiles, and the
% prior density when the result carries its prior or @code{opts.prior}
% gives it); @code{pairs.png} (the draws of every pair, for two to six
% parameters); @code{chains.csv} (one row per parameter: name, unit,
% and the numbers of the result's @code{summary} from
% @code{sluice.chain_summary}: mean, sd, quantiles, split R-hat, ESS,
% bulk ESS, Monte Carlo standard error); and @code{summary.txt} (the
% verdict: converged when every split R-hat is at most the run's
% @code{max_rhat} and every bulk ESS at least its @code{min_ess}, the
% numbers per parameter, each chain's acceptance rate). The burn-in is
% not kept by @code{sluice.pmmh}: the traces start after it. The summary
% of @code{sluice.chain_summary} alone is refused: it holds no draws.
% An edited result is refused with @code{sluice:report:badchains}
% naming the field.
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
% @code{struct ('level', 'm')}, used in the axis labels (and in
% @code{chains.csv}).
% @item time_unit
% unit of time for the axis labels (default none). A run with a calendar
% (@code{sluice.filter} with @code{origin}) is drawn against dates
% instead, and its CSV tables get a @code{date} column (ISO 8601, UTC)
% beside @code{time}.
% @item title
% a heading for the summary (default the model's name).
% @item variables
% cellstr of the states, parameters and derived quantities to draw
% (default: every state except the model's internal ones, such as GR4J's
% unit-hydrograph queues, every parameter that moved, and the derived
% quantities that were observed; in an MCMC report, every parameter).
% The CSV tables hold them all.
% @item prior
% MCMC report: a prior (@code{sluice.prior}) whose density to draw over
% the histograms, such as the one given to @code{sluice.pmmh}; entries
% for other names are ignored. Default the result's own @code{prior}.
% @item log_scale
% cellstr of variables whose fan chart is drawn on a logarithmic axis
% (for quantities that grow by orders of magnitude, such as settlement
% size, or river flow). Values <= 0 cannot be drawn there: they are left
% out (a line or band breaks at them) and the summary counts them; a
% variable with no positive value in the drawn period is drawn on a
% linear axis and the summary says so.
% @item period
% the part of the run the time charts draw: @code{[t1 t2]} in model time,
% or, for a run with a calendar, two dates such as
% @code{@{'2003-01-01', '2003-12-31'@}} (ISO 8601, UTC; both ends
% included, a date alone meaning its 00:00). Default the whole run. The
% CSV tables always hold the whole run. A period that holds no cycle of
% the run is an error.
% @item panels
% @code{'auto'} (default), @code{'year'} or @code{'none'}: how the fan
% charts of the states cut the drawn period. @code{'year'}: one
% panel per calendar year, each spanning the whole year so that the
% seasons line up from panel to panel, each with its own y range (the
% overview compares the years on one axis); a run without a calendar is
% cut into panels of 365 cycles instead. @code{'auto'} cuts a long
% record: more than 730 cycles drawn (two years of daily cycles) and, with
% a calendar, more than 730 days between the first and last of them.
% Shorter records, and every record with @code{'none'}, get one chart.
% @item axes
% sweep report: the two dimensions of the heat maps (a cellstr).
% @item scores
% sweep report: the scores to draw (default all).
% @end table
%
% @var{files} is a cellstr of the files written.
%
% @seealso{sluice.filter, sluice.twin, sluice.rank_histogram, sluice.pmmh, sluice.chain_summary}
% @end deftypefn
function files = report (res, varargin)
  if (nargin < 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  opts = parse_options (varargin);
  if (is_chain_result (res))
    % a result of sluice.pmmh: its chains (it has a seed, as a sweep table has)
    sluice.internal.check_chains (res, 1, 'report');
    toolkit = find_toolkit ();
    old = warning ('off', 'Octave:gnuplot-graphics');
    restore = onCleanup (@() warning (old));
    files = chain_report (res, opts, toolkit);
    return;
  end
  if (is_sweep_table (res))
    sluice.internal.check_sweep (res, 1, 'report');
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
  notes = {};
  names = [rf.state_names(:); rf.param_names(:)];
  n = numel (rf.state_names);
  used = {};
  moving = varying_params (rf);
  dnames = derived_names (rf);
  [show, dshow] = shown_variables (rf, opts, names, n, dnames, obs);
  sm = smoothed_of (rf);
  for k = 1:numel (names)
    if (~show(k) || (k > n && ~moving(k - n)))
      continue;   % not asked for, internal, or a parameter held fixed
    end
    [M, Q] = summary_of (rf, k, n, numel (names), lv);
    S = [];
    if (~isempty (sm))
      S = smoothed_row (sm, k, n, lv);
    end
    [tt, yt] = truth_of (truth, names{k}, k, n, rf.times);
    [to, yo] = obs_of (obs, names{k});
    base = unique_name (['fan_', safe_name(names{k})], used);
    used{end + 1} = base;
    f = fullfile (outdir, [base, '.png']);
    [fk, note] = fan_chart (f, toolkit, xa.x (rf.times), M, Q, idx, bands, xa.x (to), yo, ...
                            xa.x (tt), yt, names{k}, label (names{k}, opts), xa, k > n, ...
                            any (strcmp (names{k}, opts.log_scale)), S);
    files = [files, fk];
    notes{end + 1} = note;
  end
  % the derived quantities of the filter's operators: by default those
  % observed, drawn on their own axis with their observations
  for k = find (dshow(:)')
    [M, Q] = summary_of (rf, numel (names) + k, n, numel (names), lv);
    [to, yo] = obs_of (obs, dnames{k});
    base = unique_name (['fan_', safe_name(dnames{k})], used);
    used{end + 1} = base;
    f = fullfile (outdir, [base, '.png']);
    [fk, note] = fan_chart (f, toolkit, xa.x (rf.times), M, Q, idx, bands, xa.x (to), yo, ...
                            [], [], dnames{k}, label (dnames{k}, opts), xa, 'derived quantity', ...
                            any (strcmp (dnames{k}, opts.log_scale)), []);
    files = [files, fk];
    notes{end + 1} = note;
  end
  % binomial counts are not on the axis of the quantity they observe (its
  % logit): each such variable gets a chart of the counts beside the
  % predicted count's band
  all_names = [names; dnames(:)];
  all_show = [show(:); dshow(:)];
  counted = {};
  for k = find (all_show(:)')
    c = counts_of (obs, all_names{k});
    if (isempty (c.time))
      continue;
    end
    [~, Q] = summary_of (rf, k, n, numel (names), lv);
    base = unique_name (['counts_', safe_name(all_names{k})], used);
    used{end + 1} = base;
    f = fullfile (outdir, [base, '.png']);
    count_chart (f, toolkit, xa.x (rf.times), Q, idx, bands, c, xa.x (c.time), ...
                 all_names{k}, xa);
    files{end + 1} = f;
    counted{end + 1} = {k, c, Q};
  end
  if (~isempty (counted))
    f = fullfile (outdir, 'counts.csv');
    write_counts (f, rf, counted, all_names, idx, xa);
    files{end + 1} = f;
  end

  f = fullfile (outdir, 'ess.png');
  files = [files, ess_chart(f, toolkit, rf, xa)];

  moving = moving & show(n + 1:end);
  if (any (moving))
    f = fullfile (outdir, 'params.png');
    param_chart (f, toolkit, rf, idx, bands, truth, opts, xa, moving);
    files{end + 1} = f;
  end

  % one page of the main panels, besides the single figures
  f = fullfile (outdir, 'overview.png');
  notes{end + 1} = overview_chart (f, toolkit, rf, obs, truth, idx, bands, opts, xa, show, moving, sm);
  files{end + 1} = f;

  if (~isempty (opts.rank))
    f = fullfile (outdir, 'rank.png');
    rank_chart (f, toolkit, opts.rank);
    files{end + 1} = f;
  end

  f = fullfile (outdir, 'summary.csv');
  write_series (f, rf, [names; dnames(:)], n, xa);
  files{end + 1} = f;
  f = fullfile (outdir, 'final.csv');
  write_final (f, rf, names, n, idx);
  files{end + 1} = f;
  if (~isempty (sm))
    f = fullfile (outdir, 'smoothed.csv');
    write_series (f, smoothed_result (rf, sm), names, n, xa);   % no smoothed derived quantities
    files{end + 1} = f;
  end
  skill = [];
  if (~isempty (obs))
    % how well the ensemble mean follows the observations (NSE, KGE)
    skill = sluice.internal.hydrograph_skill (rf, obs);
    if (~isempty (skill.variables))
      f = fullfile (outdir, 'skill.csv');
      write_skill (f, skill);
      files{end + 1} = f;
    end
  end
  f = fullfile (outdir, 'summary.txt');
  write_text (f, rf, opts, bands, toolkit, scores, ~isempty (obs), ~isempty (truth), xa, ...
              notes(~cellfun ('isempty', notes)), skill);
  files{end + 1} = f;
  files = files(:);
end

function opts = parse_options (args)
  opts = struct ('outdir', 'out/report', 'obs', [], 'truth', [], 'rank', [], ...
                 'units', struct (), 'time_unit', '', 'title', '', 'log_scale', {{}}, ...
                 'axes', {{}}, 'scores', {{}}, 'variables', [], 'prior', [], 'period', [], ...
                 'panels', 'auto');
  args = sluice.internal.option_pairs (args);
  if (mod (numel (args), 2) ~= 0)
    error ('sluice:report:badoption', ...
           'options must be a struct or name/value pairs, got %d trailing argument(s)', numel (args));
  end
  for k = 1:2:numel (args)
    name = args{k};
    if (~ischar (name) || ~isrow (name) || ~isfield (opts, name))
      if (ischar (name) && isrow (name))
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
  if (~ischar (d) || isempty (d) || ~isrow (d))
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
  opts.period = check_period (opts.period);
  if (~ischar (opts.panels) || ~any (strcmp (opts.panels, {'auto', 'year', 'none'})))
    error ('sluice:report:badoption', 'panels must be ''auto'', ''year'' or ''none''');
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

function p = check_period (p)
  % 'period': [t1 t2] in model time, or two dates (a cellstr) for a run
  % with a calendar; whether the run has one is checked in time_layout
  if (isempty (p) && isnumeric (p))
    p = [];
    return;
  end
  if (isa (p, 'double') && isreal (p) && ~issparse (p) && numel (p) == 2)
    if (any (~isfinite (p)) || p(2) <= p(1))
      error ('sluice:report:badoption', ...
             'period [t1 t2] must be finite with t1 < t2, got [%g %g]', p(1), p(2));
    end
    p = p(:)';
    return;
  end
  if (iscellstr (p) && numel (p) == 2)
    p = p(:)';
    return;
  end
  error ('sluice:report:badoption', ...
         ['period must be [t1 t2] in model time, or two dates such as ', ...
          '{''2003-01-01'', ''2003-12-31''} for a run with a calendar; got %s'], describe (p));
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
  sluice.internal.check_result (rf, where, 'report', {'param_names', 'params', 'members'});
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
        numel (obs.time) ~= numel (obs.value) || ...
        ~(ischar (obs.variable) || (iscell (obs.variable) && ...
                                    numel (obs.variable) == numel (obs.value))))
      error ('sluice:report:badoption', ...
             ['obs must be an observation table with columns time, variable, value ', ...
              '(as many rows each)']);
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
  if (~sluice.internal.compat ('is_octave'))
    tk = 'native';
    return;
  end
  avail = sluice.internal.compat ('graphics_toolkits');
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
  if (isempty (sluice.internal.find_program (gp)))
    error ('sluice:report:nographics', ...
           'the gnuplot program (''%s'') is not on the PATH; %s', gp, graphics_packages ());
  end
  [st, out] = system (sprintf ('"%s" --version 2>&1', gp));
  if (st ~= 0)
    error ('sluice:report:nographics', 'gnuplot does not run (%s); %s', ...
           strtrim (out), graphics_packages ());
  end
  if (isempty (sluice.internal.find_program ('gs')) && ...
      isempty (sluice.internal.find_program (getenv ('GSC'))))
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
  h = sluice.internal.compat ('hidden_figure', tk);
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
  % readers: see sluice.internal.report_palette for the choice and the values
  c = sluice.internal.report_palette (which);
end

function i = level (lv, p)
  i = find (abs (lv - p) < 1e-9, 1);
end

function hb = band (t, lo, hi, c)
  % a shaded band between lo and hi, one patch per run of cycles where both
  % are finite (a gap, such as values left off a log axis, breaks it); hb
  % is the first patch, for the legend
  hb = [];
  ok = isfinite (lo(:)') & isfinite (hi(:)');
  d = diff ([false, ok, false]);
  s = find (d == 1);
  e = find (d == -1) - 1;
  for k = 1:numel (s)
    r = s(k):e(k);
    hk = fill ([t(r), fliplr(t(r))], [lo(r), fliplr(hi(r))], c, 'edgecolor', c);
    if (k == 1)
      hb = hk;
    end
  end
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

function [written, note] = fan_chart (f, tk, t, M, Q, idx, bands, to, yo, tt, yt, name, ylab, xa, is_param, logy, S)
  % the fan chart of one variable: one figure, or pages of panels (one per
  % year) when the record is long (xa.pages); written lists the files and
  % note says what a logarithmic axis left out ('' when nothing)
  if (ischar (is_param))
    kind = is_param;
  elseif (is_param)
    kind = 'parameter';
    xa = one_chart (xa);   % parameters move slowly: no panels per year
  else
    kind = 'state';
  end
  D = struct ('t', t, 'M', M, 'Q', Q, 'to', to, 'yo', yo, 'tt', tt, 'yt', yt, 'S', S, ...
              'outer', xa.lim);
  [D, logy, note] = log_ready (D, xa, logy, name);
  heading = sprintf ('%s %s: ensemble median and bands', kind, name);
  written = time_pages (f, tk, xa, heading, ylab, logy, @(lim) fan_axes (D, idx, bands, lim));
end

function [hs, leg] = band_layers (t, Q, M, idx, bands)
  % the 90% and 50% bands and the median line of quantiles Q (nq x T)
  % into the current axes, or the mean M when no median was recorded (and
  % M is given); hs and leg are the handles and names for the legend
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
    hs(end + 1) = plot (t, Q(idx.q50, :), '-', 'color', palette ('line'), 'linewidth', 3.5);
    leg{end + 1} = 'median';
  elseif (~isempty (M))
    hs(end + 1) = plot (t, M, '--', 'color', palette ('line'), 'linewidth', 3.5);
    leg{end + 1} = 'mean (no median recorded)';
  end
end

function [hs, leg] = fan_axes (D, idx, bands, lim)
  % a fan chart into the current axes, of the cycles in lim (and the one
  % on either side, so lines run to the panel's edges)
  i = near (D.t, lim, D.outer);
  t = D.t(i);
  Q = D.Q(:, i);
  hold on;
  [hs, leg] = band_layers (t, Q, D.M(i), idx, bands);
  S = D.S;
  if (~isempty (S))
    if (isfield (S, 'median'))
      hs(end + 1) = plot (t, S.median(i), '-.', 'color', palette ('smooth'), 'linewidth', 3.5);
      leg{end + 1} = 'smoothed median';
    end
    if (isfield (S, 'lo'))
      hs(end + 1) = plot (t, S.lo(i), '--', 'color', palette ('smooth'), 'linewidth', 2.5);
      leg{end + 1} = 'smoothed 90% band';
      plot (t, S.hi(i), '--', 'color', palette ('smooth'), 'linewidth', 2.5);
    end
  end
  if (~isempty (D.tt))
    [xt, yt] = clip_line (D.tt, D.yt, lim);
    if (~isempty (xt))
      hs(end + 1) = plot (xt, yt, '-', 'color', palette ('truth'), 'linewidth', 3);
      leg{end + 1} = 'truth';
    end
  end
  if (~isempty (D.to))
    j = D.to >= lim(1) & D.to <= lim(2) & isfinite (D.yo);
    if (any (j))
      % filled black dots: a shape of their own, apart from every line;
      % smaller where they are dense (daily), so the median shows between
      ms = 4 - 2 * (sum (j) > 120);
      hs(end + 1) = plot (D.to(j), D.yo(j), 'o', 'color', palette ('obs'), ...
                          'markerfacecolor', palette ('obs'), 'markersize', ms);
      leg{end + 1} = 'observations';
    end
  end
  hold off;
end

function [x, y] = clip_line (t, v, lim)
  % the line through (t, v) between lim(1) and lim(2): the points inside
  % and the line's values at the two ends (linear interpolation), so a
  % line such as a parameter's true value spans a period inside it
  x = [];
  y = [];
  if (numel (t) < 2 || any (diff (t) <= 0) || any (~isfinite (t)))
    k = t >= lim(1) & t <= lim(2);
    x = t(k);
    y = v(k);
    return;
  end
  e = lim(lim >= t(1) & lim <= t(end));
  x = unique ([t(t >= lim(1) & t <= lim(2)), e]);
  if (~isempty (x))
    y = interp1 (t, v, x);
  end
end

function i = near (t, lim, outer)
  % the cycles in [lim(1), lim(2)] and the one just outside on each side
  % (so lines run to a panel's edges), but none outside [outer(1), outer(2)]
  % (the period asked for)
  i = near_all (t, lim) & t >= outer(1) & t <= outer(2);
end

function i = near_all (t, lim)
  i = t >= lim(1) & t <= lim(2);
  a = find (i, 1);
  b = find (i, 1, 'last');
  if (isempty (a))
    a = find (t < lim(1), 1, 'last');
    b = find (t > lim(2), 1);
    if (isempty (a) || isempty (b))
      return;
    end
    i(a:b) = true;   % a panel between two cycles: the line that crosses it
    return;
  end
  if (a > 1)
    i(a - 1) = true;
  end
  if (b < numel (t))
    i(b + 1) = true;
  end
end

function [D, logy, note] = log_ready (D, xa, logy, name)
  % a logarithmic axis cannot show values <= 0: they are left out (a line
  % or band breaks there) and counted; a variable with no positive value
  % in the drawn period is drawn on a linear axis instead
  note = '';
  if (~logy)
    return;
  end
  in = D.t >= xa.lim(1) & D.t <= xa.lim(2);
  v = D.Q(:, in);
  if (~any (v(:) > 0) && ~any (D.M(in) > 0))
    logy = false;
    note = sprintf ('%s: no positive value in the drawn period, drawn on a linear axis', name);
    return;
  end
  bad = sum (v(:) <= 0);
  D.Q(D.Q <= 0) = NaN;
  D.M(D.M <= 0) = NaN;
  if (~isempty (D.yo))
    j = D.to >= xa.lim(1) & D.to <= xa.lim(2);
    bad = bad + sum (D.yo(j) <= 0);
    D.yo(D.yo <= 0) = NaN;
  end
  if (~isempty (D.yt))
    j = D.tt >= xa.lim(1) & D.tt <= xa.lim(2);
    bad = bad + sum (D.yt(j) <= 0);
    D.yt(D.yt <= 0) = NaN;
  end
  if (~isempty (D.S))
    for fn = {'median', 'lo', 'hi'}
      if (isfield (D.S, fn{1}))
        w = D.S.(fn{1});
        bad = bad + sum (w(in) <= 0);
        w(w <= 0) = NaN;
        D.S.(fn{1}) = w;
      end
    end
  end
  if (bad > 0)
    note = sprintf (['%s: %d value(s) <= 0 (quantiles, observations, truth) left out ', ...
                     'of the logarithmic axis; lines and bands break there'], name, bad);
  end
end

function written = time_pages (f, tk, xa, heading, ylab, logy, draw)
  % a time chart: one figure over the drawn period, or, for a record cut
  % into panels (xa.split not 'none'), pages of panels stacked one under
  % the other, each with its own y range (the overview has the whole run
  % on one axis), and the key right of the first panel; draw(lim) draws
  % into the current axes and returns the handles and labels of the key
  written = {};
  [d, base] = fileparts (f);
  for pg = 1:numel (xa.pages)
    L = xa.pages{pg};
    labels = xa.panel_labels{pg};
    if (strcmp (xa.split, 'none'))
      h = new_figure (tk, [800 450]);
      [hs, leg] = draw (L);
      time_panel (xa, L, logy, ylab);
      xlabel (xa.label);
      if (isempty (labels{1}))
        title (heading, 'interpreter', 'none');
      else
        title (sprintf ('%s, %s', heading, labels{1}), 'interpreter', 'none');
      end
      legend (hs, leg, 'location', 'northeastoutside');
    else
      % pixels: panels 190 high, 72 between them for the ticks and title
      np = size (L, 1);
      ph = 190;
      gap = 72;
      top = 40;
      bottom = 50;
      W = 1000;
      H = top + np * ph + (np - 1) * gap + bottom;
      h = new_figure (tk, [W, H]);
      for j = 1:np
        y = H - top - j * ph - (j - 1) * gap;
        axes ('position', [75 / W, y / H, 725 / W, ph / H]);
        % the panel's part of the period (a year panel may reach beyond it)
        [hs, leg] = draw ([max(L(j, 1), xa.lim(1)), min(L(j, 2), xa.lim(2))]);
        time_panel (xa, L(j, :), logy, ylab);
        if (j == 1)
          title (sprintf ('%s, %s', heading, labels{j}), 'interpreter', 'none');
          key_axes ([815 / W, y / H, 180 / W, ph / H], hs, leg);
        else
          title (labels{j}, 'interpreter', 'none');
        end
      end
      xlabel (xa.label);
    end
    if (pg == 1)
      fn = f;
    else
      fn = fullfile (d, sprintf ('%s_page%d.png', base, pg));
    end
    save_figure (h, fn);
    written{end + 1} = fn;
  end
end

function time_panel (xa, lim, logy, ylab)
  % the dressing of one time panel drawn into the current axes
  tidy_axes ('on');
  if (logy)
    set (gca (), 'yscale', 'log');
  end
  if (lim(2) > lim(1))
    xlim (lim);
  end
  panel_ticks (xa, lim);
  ylabel (ylab);
end

function key_axes (pos, hs, leg, orient)
  % a key in an axes of its own at pos (figure units): one sample of each
  % item, drawn outside the axes' limits, so panels keep equal widths
  % (a key placed outside an axes narrows that axes only)
  if (isempty (hs))
    return;
  end
  ax = gca ();
  k = axes ('position', pos);
  hold on;
  q = zeros (1, numel (hs));
  for i = 1:numel (hs)
    if (strcmp (get (hs(i), 'type'), 'patch'))
      c = get (hs(i), 'facecolor');
      q(i) = fill ([2 3 3 2], [2 2 3 3], c, 'edgecolor', c);
    else
      q(i) = plot ([2 3], [2 2], 'color', get (hs(i), 'color'), ...
                   'linestyle', get (hs(i), 'linestyle'), 'linewidth', get (hs(i), 'linewidth'), ...
                   'marker', get (hs(i), 'marker'), 'markersize', get (hs(i), 'markersize'), ...
                   'markerfacecolor', get (hs(i), 'markerfacecolor'));
    end
  end
  hold off;
  xlim ([0 1]);
  ylim ([0 1]);
  set (k, 'visible', 'off');
  if (nargin < 4)
    legend (q, leg, 'location', 'northwest');
  else
    legend (q, leg, 'location', 'north', 'orientation', orient);
  end
  axes (ax);
end

function written = ess_chart (f, tk, rf, xa)
  % one chart over the drawn period: the ESS is bounded and read for its
  % dips, which show at 2-3 daily cycles a pixel; no panels per year
  xa = one_chart (xa);
  N = rf.members;
  r = logical (rf.resampled(:)');
  heading = sprintf ('ESS over time (%s, %d of %d cycles resampled)', ...
                     rf.method_label, sum (r), numel (r));
  ylab = sprintf ('effective sample size (of %d members)', N);
  written = time_pages (f, tk, xa, heading, ylab, false, @(lim) ess_axes (rf, xa, lim));
end

function [hs, leg] = ess_axes (rf, xa, lim)
  t = xa.x (rf.times);
  N = rf.members;
  i = near (t, lim, xa.lim);
  hold on;
  hs = plot (t(i), rf.ess(i), '-', 'color', palette ('line'), 'linewidth', 2.5);
  leg = {'ESS'};
  th = NaN;
  if (isfield (rf, 'options') && isfield (rf.options, 'resample_threshold'))
    th = rf.options.resample_threshold * N;
  end
  if (isfinite (th))
    hs(end + 1) = plot (lim, [th, th], '--', 'color', [0.4 0.4 0.4]);
    leg{end + 1} = 'resampling threshold';
  end
  r = logical (rf.resampled(:)') & i;
  if (any (r))
    hs(end + 1) = plot (t(r), rf.ess(r), 'v', 'color', palette ('mark'), ...
                        'markerfacecolor', palette ('mark'), 'markersize', 6);
    leg{end + 1} = 'resampled';
  end
  if (isfield (rf, 'degenerate') && any (rf.degenerate))
    d = logical (rf.degenerate(:)') & i;
    if (any (d))
      hs(end + 1) = plot (t(d), rf.ess(d), 'x', 'color', palette ('truth'), 'markersize', 8);
      leg{end + 1} = 'degenerate';
    end
  end
  hold off;
  ylim ([0, 1.05 * N]);
end

function [show, dshow] = shown_variables (rf, opts, names, n, dnames, obs)
  % the states and parameters to draw (show) and the derived quantities
  % (dshow): those asked for, or all but the model's internal states and
  % the derived quantities that were observed
  if (isempty (opts.variables))
    show = true (numel (names), 1);
    if (isfield (rf, 'internal_states') && numel (rf.internal_states) == n)
      show(1:n) = ~logical (rf.internal_states(:));
    end
    dshow = false (numel (dnames), 1);
    if (~isempty (obs))
      v = obs.variable;
      if (ischar (v))
        v = {v};
      end
      % strcmp, not ismember: an edited table may hold a non-text entry
      dshow = cellfun (@(d) any (strcmp (v(:), d)), dnames(:));
    end
  else
    [show, ~] = ismember (names(:), opts.variables(:));
    [dshow, ~] = ismember (dnames(:), opts.variables(:));
    known = [names(:); dnames(:)];
    unknown = setdiff (opts.variables(:), known);
    if (~isempty (unknown))
      error ('sluice:report:badoption', ...
             'variables: ''%s'' is not a state, parameter or derived quantity of the run (they are %s)', ...
             unknown{1}, strjoin (known', ', '));
    end
  end
end

function d = derived_names (rf)
  % the names of the derived quantities the run summarised (1 x d)
  d = cell (1, 0);
  if (isfield (rf, 'derived') && ~isempty (rf.derived))
    d = rf.derived.names(:)';
  end
end

function [M, Q] = summary_of (rf, k, n, v, lv)
  % mean (1 x T) and quantiles (nq x T) of row k of [states; parameters;
  % derived quantities]
  if (k <= n)
    s = rf.states;
  elseif (k <= v)
    s = rf.params;
    k = k - n;
  else
    s = rf.derived;
    k = k - v;
  end
  M = s.mean(k, :);
  Q = reshape (s.quantiles(k, :, :), numel (lv), []);
end

function c = counts_of (obs, name)
  % the binomial rows observing name: times, counts and trials. Their
  % value is a count of n, the quantity observed the logit of the share
  c = struct ('time', zeros (1, 0), 'y', zeros (1, 0), 'n', zeros (1, 0));
  if (isempty (obs) || ~isfield (obs, 'family') || ~isfield (obs, 'n'))
    return;
  end
  v = obs.variable;
  fam = obs.family;
  if (ischar (v))
    v = {v};
  end
  if (ischar (fam))
    fam = repmat ({fam}, numel (obs.value), 1);
  end
  if (~iscellstr (fam) || numel (fam) ~= numel (obs.value) || numel (obs.n) ~= numel (obs.value))
    return;
  end
  sel = strcmp (v(:), name) & strcmpi (fam(:), 'binomial') & isfinite (obs.value(:));
  c.time = reshape (obs.time(sel), 1, []);
  c.y = reshape (obs.value(sel), 1, []);
  c.n = reshape (obs.n(sel), 1, []);
end

function count_chart (f, tk, t, Q, idx, bands, c, tc, name, xa)
  % binomial counts beside the band of the predicted count n p, p = 1 /
  % (1 + exp(-x)) of the quantity x observed (a monotone map, so the
  % quantiles of x map to those of n p); with trials that differ between
  % rows, shares y / n beside the band of p
  same_n = all (c.n == c.n(1));
  scale = 1;
  what = 'share answering yes';
  if (same_n)
    scale = c.n(1);
    what = sprintf ('count (of %d)', scale);
  end
  P = scale ./ (1 + exp (-Q));
  y = c.y;
  if (~same_n)
    y = c.y ./ c.n;
  end
  h = new_figure (tk, [800 450]);
  hold on;
  [hs, leg] = band_layers (t, P, [], idx, bands);
  hs(end + 1) = plot (tc, y, 's', 'color', palette ('obs'), ...
                      'markerfacecolor', palette ('obs'), 'markersize', 6);
  leg{end + 1} = 'observed';
  hold off;
  tidy_axes ('on');
  ylim ([0, scale]);
  date_ticks (xa, t);
  xlabel (xa.label);
  ylabel (what);
  title (sprintf ('binomial observations of %s: predicted %s', name, what), 'interpreter', 'none');
  legend (hs, leg, 'location', 'northeastoutside');
  save_figure (h, f);
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
  % the parameters' trajectories over the whole drawn period, one panel
  % each (they move slowly: no panels per year)
  ks = find (moving)';
  p = numel (ks);
  h = new_figure (tk, [800, 160 + 240 * p]);
  for j = 1:p
    k = ks(j);
    subplot (p, 1, j);
    param_axes (rf, k, idx, bands, truth, xa, xa.lim);
    tidy_axes ('on');
    if (xa.lim(2) > xa.lim(1))
      xlim (xa.lim);
    end
    date_ticks (xa, xa.lim);
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

function param_axes (rf, k, idx, bands, truth, xa, lim)
  % parameter k's mean, 90% band and true value into the current axes
  t = xa.x (rf.times);
  i = near (t, lim, xa.lim);
  hold on;
  if (bands.outer)
    Q = reshape (rf.params.quantiles(k, :, i), numel (rf.quantile_levels), []);
    band (t(i), Q(idx.q05, :), Q(idx.q95, :), palette ('outer'));
  end
  plot (t(i), rf.params.mean(k, i), '-', 'color', palette ('line'), 'linewidth', 3.5);
  if (~isempty (truth) && isfield (truth, 'params') && numel (truth.params) == numel (rf.param_names))
    plot (lim, truth.params(k) * [1 1], '-', 'color', palette ('truth'), 'linewidth', 3);
  end
  hold off;
end

function note = overview_chart (f, tk, rf, obs, truth, idx, bands, opts, xa, show, moving, sm)
  % one page over the whole drawn period: the fans of the observed states
  % (of every drawn state when no observation is given), the parameters
  % that moved, and the ESS; at most 8 variables, the rest in note
  note = '';
  n = numel (rf.state_names);
  names = [rf.state_names(:); rf.param_names(:)];
  lv = rf.quantile_levels(:)';
  ks = find (show(1:n)');
  if (~isempty (obs) && ~isempty (ks))
    seen = false (size (ks));
    for j = 1:numel (ks)
      to = obs_of (obs, names{ks(j)});
      seen(j) = ~isempty (to);
    end
    if (any (seen))
      ks = ks(seen);
    end
  end
  ks = [ks, n + find(moving(:)')];
  cap = 8;
  if (numel (ks) > cap)
    note = sprintf ('overview.png: %d variable(s) left out for room (%s); see their own charts', ...
                    numel (ks) - cap, strjoin (names(ks(cap + 1:end))', ', '));
    ks = ks(1:cap);
  end
  items = numel (ks) + 1;
  ncol = 1 + (items > 3);
  nrow = ceil (items / ncol);
  % pixels: cells 640 wide, panels 190 high with 75 between rows, a
  % heading and a key across the top
  cw = 640;
  ph = 190;
  gap = 75;
  top = 140;
  W = ncol * cw + 20;
  H = top + nrow * ph + (nrow - 1) * gap + 55;
  h = new_figure (tk, [W, H]);
  hk = [];
  lk = {};
  for j = 1:items
    r = ceil (j / ncol);
    c = j - (r - 1) * ncol;
    axes ('position', [((c - 1) * cw + 85) / W, (H - top - r * ph - (r - 1) * gap) / H, ...
                       (cw - 110) / W, ph / H]);
    if (j <= numel (ks))
      k = ks(j);
      logy = any (strcmp (names{k}, opts.log_scale));
      D = fan_data (rf, k, n, lv, sm, truth, obs, names{k}, xa);
      [D, logy] = log_ready (D, xa, logy, names{k});
      [hs, leg] = fan_axes (D, idx, bands, xa.lim);
      if (j == 1)
        hk = hs;
        lk = leg;
      end
      if (logy)
        set (gca (), 'yscale', 'log');
      end
      ylabel (label (names{k}, opts));
      title (sprintf ('%s %s', ifelse (k <= n, 'state', 'parameter'), names{k}), ...
             'interpreter', 'none');
    else
      ess_axes (rf, xa, xa.lim);
      ylabel (sprintf ('ESS (of %d)', rf.members));
      title (sprintf ('effective sample size (%s)', rf.method_label), 'interpreter', 'none');
    end
    tidy_axes ('on');
    if (xa.lim(2) > xa.lim(1))
      xlim (xa.lim);
    end
    date_ticks (xa, xa.lim);
    if (j > items - ncol)
      xlabel (xa.label);
    end
  end
  % the heading and the key of the fan panels, across the top
  heading = opts.title;
  if (isempty (heading) && isfield (rf, 'model') && ischar (rf.model))
    heading = sprintf ('model %s', rf.model);
  end
  what = 'the whole run';
  if (~isempty (xa.period_text))
    what = xa.period_text;
  end
  axes ('position', [0, (H - 45) / H, 1, 40 / H], 'visible', 'off');
  text (0.5, 0.5, sprintf ('Overview: %s (%s, %d members), %s', heading, rf.method_label, ...
                           rf.members, what), 'units', 'normalized', ...
        'horizontalalignment', 'center', 'fontweight', 'bold', 'interpreter', 'none');
  key_axes ([85 / W, (H - 110) / H, (W - 110) / W, 65 / H], hk, lk, 'horizontal');
  save_figure (h, f);
end

function D = fan_data (rf, k, n, lv, sm, truth, obs, name, xa)
  % what fan_axes draws for row k (a state, or parameter k - n)
  [M, Q] = summary_of (rf, k, n, n + numel (rf.param_names), lv);
  S = [];
  if (~isempty (sm))
    S = smoothed_row (sm, k, n, lv);
  end
  [tt, yt] = truth_of (truth, name, k, n, rf.times);
  [to, yo] = obs_of (obs, name);
  D = struct ('t', xa.x (rf.times), 'M', M, 'Q', Q, 'to', xa.x (to), 'yo', yo, ...
              'tt', xa.x (tt), 'yt', yt, 'S', S, 'outer', xa.lim);
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
  c = counts_of (obs, name);
  if (~isempty (c.time))
    % binomial counts: drawn on a chart of their own (count_chart)
    fam = obs.family;
    if (ischar (fam))
      fam = repmat ({fam}, numel (obs.value), 1);
    end
    sel = sel & ~strcmpi (fam(:), 'binomial');
  end
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
    cal = sluice.internal.time_origin (rf.time_origin, rf.time_unit, 'report');
    xa.dated = true;
    xa.x = @(t) cal.datenum + t * cal.unit_days;
    xa.label = 'date (UTC)';
    [~, xa.dates] = sluice.kernel.obsfile ('date', xa.x (rf.times(:)'));
    xa.origin = cal.text;
    xa.unit = cal.unit;
  end
  xa = time_layout (xa, rf, opts);
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

function xa = time_layout (xa, rf, opts)
  % what the time charts draw (opts.period) and how (opts.panels):
  % xa.lim [x1 x2] the drawn span in axis units; xa.split 'none', 'year'
  % (one panel per calendar year) or 'block' (one per 365 cycles);
  % xa.pages a cell of k x 2 panel limits, at most 6 panels a page, and
  % xa.panel_labels the names of those panels; xa.period_text says what
  % was asked for ('' for the whole run)
  x = xa.x (rf.times(:)');
  xa.period_text = '';
  if (isempty (opts.period))
    lim = [x(1), x(end)];
  else
    lim = period_limits (opts.period, xa);
    if (~any (x >= lim(1) & x <= lim(2)))
      error ('sluice:report:badoption', ...
             'period %s holds no cycle of the run (%s to %s)', period_string (xa, lim), ...
             time_string (xa, x(1)), time_string (xa, x(end)));
    end
    xa.period_text = period_string (xa, lim);
  end
  xa.lim = lim;
  in = find (x >= lim(1) & x <= lim(2));
  split = opts.panels;
  if (strcmp (split, 'auto'))
    % long records: more than 730 cycles (two years of daily cycles), and
    % with a calendar more than two years (730 days) between first and last
    long = numel (in) > 730 && (~xa.dated || x(in(end)) - x(in(1)) > 730);
    split = ifelse (long, 'year', 'none');
  end
  if (strcmp (split, 'year') && ~xa.dated)
    split = 'block';
  end
  xa.split = split;
  switch (split)
    case 'year'
      v0 = datevec (x(in(1)));
      v1 = datevec (x(in(end)));
      years = v0(1):v1(1);
      L = [datenum(years(:), 1, 1), datenum(years(:) + 1, 1, 1)];
      labels = arrayfun (@(y) sprintf ('%d', y), years, 'UniformOutput', false);
    case 'block'
      first = in(1:365:end);
      L = zeros (numel (first), 2);
      labels = cell (1, numel (first));
      for k = 1:numel (first)
        last = in(min (numel (in), (k - 1) * 365 + 365));
        L(k, 1) = x(first(k));
        if (k < numel (first))
          L(k, 2) = x(first(k + 1));
        else
          w = 0;
          if (numel (first) > 1)
            w = x(first(2)) - x(first(1));
          end
          L(k, 2) = max (x(last), x(first(k)) + w);
        end
        labels{k} = sprintf ('time %g to %g', rf.times(first(k)), rf.times(last));
      end
    otherwise
      L = lim;
      labels = {''};
      if (~isempty (xa.period_text))
        labels = {xa.period_text};
      end
  end
  per = 6;
  np = size (L, 1);
  xa.pages = {};
  xa.panel_labels = {};
  for a = 1:per:np
    b = min (np, a + per - 1);
    xa.pages{end + 1} = L(a:b, :);
    xa.panel_labels{end + 1} = labels(a:b);
  end
end

function xa = one_chart (xa)
  % the layout of one chart over the whole drawn period
  xa.split = 'none';
  xa.pages = {xa.lim};
  xa.panel_labels = {{xa.period_text}};
end

function lim = period_limits (p, xa)
  % opts.period in axis units: model times through xa.x, or dates
  if (isnumeric (p))
    lim = xa.x (p(:)');
    return;
  end
  if (~xa.dated)
    error ('sluice:report:badoption', ...
           ['period as dates needs a run with a calendar (sluice.filter''s origin); ', ...
            'give [t1 t2] in model time instead']);
  end
  lim = zeros (1, 2);
  for k = 1:2
    try
      lim(k) = sluice.kernel.obsfile ('date', p{k});
    catch err
      error ('sluice:report:badoption', 'period: ''%s'' is not a date (%s)', p{k}, err.message);
    end
  end
  if (lim(2) <= lim(1))
    error ('sluice:report:badoption', 'period: %s does not come after %s', p{2}, p{1});
  end
end

function s = time_string (xa, v)
  % a value of the time axis as the user reads it: a date, or model time
  if (xa.dated)
    [~, s] = sluice.kernel.obsfile ('date', v);
    s = s{1};
  else
    s = sprintf ('%g', v);
  end
end

function s = period_string (xa, lim)
  s = sprintf ('%s to %s', time_string (xa, lim(1)), time_string (xa, lim(2)));
end

function panel_ticks (xa, lim)
  % the x ticks of one panel: months in a year's panel, else as the span asks
  if (strcmp (xa.split, 'year'))
    v = datevec (lim(1));
    ticks = datenum (v(1), 1:13, 1);
    months = {'Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', ...
              'Oct', 'Nov', 'Dec', ''};
    set (gca (), 'xtick', ticks, 'xticklabel', months);
  else
    date_ticks (xa, lim);
  end
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
  v = n + numel (rf.param_names);   % names: states, parameters, derived quantities
  % columns filled in place: growing the matrix column by column copies
  % it every time, which a run with many states and cycles feels
  head = cell (1, 1 + K * (nq + 1));
  head{1} = 'time';
  cols = zeros (T, 1 + K * (nq + 1) + 2);
  cols(:, 1) = rf.times(:);
  c = 1;
  for k = 1:K
    [M, Q] = summary_of (rf, k, n, v, lv);
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

function write_counts (f, rf, counted, names, idx, xa)
  % every binomial observation beside its predicted count: n / (1 +
  % exp(-x)) at the quantiles of the quantity x observed, at its cycle
  fid = open_file (f);
  cols = {'variable', 'time', 'observed', 'trials', 'predicted_q05', 'predicted_median', ...
          'predicted_q95'};
  if (xa.dated)
    cols = [cols(1:2), {'date'}, cols(3:end)];
  end
  fprintf (fid, '%s\n', strjoin (cols, ','));
  for e = counted
    [k, c, Q] = deal (e{1}{:});
    [~, it] = ismember (c.time, rf.times);
    for i = 1:numel (c.time)
      q = nan (1, 3);
      lv = {idx.q05, idx.q50, idx.q95};
      for j = 1:3
        if (~isempty (lv{j}) && it(i) > 0)
          q(j) = c.n(i) / (1 + exp (-Q(lv{j}, it(i))));
        end
      end
      fprintf (fid, '%s,%.10g,', names{k}, c.time(i));
      if (xa.dated)
        [~, d] = sluice.kernel.obsfile ('date', xa.x (c.time(i)));
        fprintf (fid, '%s,', d{1});
      end
      fprintf (fid, '%.10g,%.10g,%.10g,%.10g,%.10g\n', c.y(i), c.n(i), q);
    end
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
  [M, Q] = summary_of (rf, k, n, n + numel (rf.param_names), rf.quantile_levels);
  m = M(end);
  if (~isempty (idx.q05) && ~isempty (idx.q95))
    lo = Q(idx.q05, end);
    hi = Q(idx.q95, end);
  end
end

function fid = open_file (f)
  [fid, msg] = fopen (f, 'w');
  if (fid < 0)
    error ('sluice:report:badoutdir', 'cannot write %s: %s', f, msg);
  end
end

function write_skill (f, sk)
  fid = open_file (f);
  fprintf (fid, 'variable,count,nse,kge,r,alpha,beta,nse_forecast,kge_forecast\n');
  for j = 1:numel (sk.variables)
    fprintf (fid, '%s,%d,%.10g,%.10g,%.10g,%.10g,%.10g,%.10g,%.10g\n', sk.variables{j}, ...
             sk.count(j), sk.nse(j), sk.kge(j), sk.r(j), sk.alpha(j), sk.beta(j), ...
             sk.nse_forecast(j), sk.kge_forecast(j));
  end
  fclose (fid);
end

function skill_text (fid, sk)
  % the skill scores in the summary: what they are and how to read them
  if (isempty (sk) || isempty (sk.variables))
    return;
  end
  fprintf (fid, ['\nSkill of the ensemble mean against the observations (Nash-Sutcliffe ', ...
                 'efficiency NSE; Kling-Gupta efficiency KGE; 1 is a perfect fit, an NSE ', ...
                 'of 0 no better than the observed mean):\n']);
  fprintf (fid, '  %-12s %6s %9s %9s %12s %12s\n', 'variable', 'pairs', 'NSE', 'KGE', ...
           'NSE forecast', 'KGE forecast');
  for j = 1:numel (sk.variables)
    fprintf (fid, '  %-12s %6d %9.4f %9.4f %12.4f %12.4f\n', sk.variables{j}, sk.count(j), ...
             sk.nse(j), sk.kge(j), sk.nse_forecast(j), sk.kge_forecast(j));
  end
  fprintf (fid, ['  (the analysis mean has seen each observation it is scored against, so ', ...
                 'it flatters the run;\n   the forecast mean, before the update, has not: ', ...
                 'judge a model by the forecast scores)\n']);
end

function write_text (f, rf, opts, bands, tk, scores, have_obs, have_truth, xa, notes, skill)
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
  if (isfield (rf, 'nanpredicted') && any (rf.nanpredicted(:) > 0))
    fprintf (fid, 'NaN predictions:     %d members at most in one cycle, in %d cycle(s) (an operator gave NaN)\n', ...
             max (rf.nanpredicted(:)), sum (rf.nanpredicted(:) > 0));
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
  fprintf (fid, '%s\n', ifelse (have_truth, ', truth as a vermilion line', ''));
  fprintf (fid, '  %s\n', layout_text (xa));
  fprintf (fid, '  overview.png: the main panels on one page; the CSV tables hold the whole run\n');
  for k = 1:numel (notes)
    fprintf (fid, '  %s\n', notes{k});
  end
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
  skill_text (fid, skill);
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

function s = layout_text (xa)
  % how the time charts are laid out, for the summary
  what = 'the whole run';
  if (~isempty (xa.period_text))
    what = sprintf ('the period %s', xa.period_text);
  end
  np = sum (cellfun (@(L) size (L, 1), xa.pages));
  switch (xa.split)
    case 'year'
      s = sprintf ('fan charts of the states: %s, one panel per calendar year (%s to %s)', ...
                   what, xa.panel_labels{1}{1}, xa.panel_labels{end}{end});
    case 'block'
      s = sprintf ('fan charts of the states: %s, one panel per 365 cycles (%d panels)', what, np);
    otherwise
      s = sprintf ('time charts: %s in one chart each', what);
      return;
  end
  if (numel (xa.pages) > 1)
    s = sprintf ('%s,\n  %d panels a page on %d pages (fan_<name>.png, fan_<name>_page2.png, ...)', ...
                 s, size (xa.pages{1}, 1), numel (xa.pages));
  end
  s = sprintf ('%s;\n  the parameters, the ESS and the overview: one chart each over %s', s, what);
end

function s = ifelse (c, a, b)
  if (c)
    s = a;
  else
    s = b;
  end
end

% ---------------------------------------------------------------------------
% The report of a sluice.pmmh result: traces, marginal densities, pairs,
% chains.csv and summary.txt. The statistics are those of the result's
% summary (sluice.chain_summary); nothing here recomputes them.

function tf = is_chain_result (res)
  % a result of sluice.pmmh (its draws), or the summary of
  % sluice.chain_summary alone, which is refused here: it holds no draws
  tf = false;
  if (~isstruct (res) || ~isscalar (res) || isfield (res, 'state_names') || ...
      isfield (res, 'filter'))
    return;
  end
  if (isfield (res, 'samples'))
    tf = true;
  elseif (isfield (res, 'rhat') && isfield (res, 'ess_bulk'))
    error ('sluice:report:badresult', ...
           ['argument 1 (res): this is a summary of sluice.chain_summary, which holds no ', ...
            'draws to draw; pass the result of sluice.pmmh (its field summary is such a ', ...
            'summary, and its samples are the draws)']);
  end
end

function files = chain_report (res, opts, tk)
  X = res.samples;
  [n, d, C] = size (X);
  names = res.names(:);
  show = chain_variables (names, opts);
  dens = chain_prior (res, opts, names);
  it = res.burnin + res.thin * (1:n)';       % the iterations kept (see sluice.pmmh)
  outdir = opts.outdir;
  make_outdir (outdir);
  files = {};
  for k = find (show(:))'
    Y = reshape (X(:, k, :), n, C);
    base = safe_name (names{k});
    f = fullfile (outdir, ['trace_', base, '.png']);
    trace_chart (f, tk, it, Y, names{k}, label (names{k}, opts), res, k);
    files{end + 1} = f;
    f = fullfile (outdir, ['density_', base, '.png']);
    density_chart (f, tk, Y, names{k}, label (names{k}, opts), res.summary, k, dens(k));
    files{end + 1} = f;
  end
  ks = find (show(:))';
  if (numel (ks) >= 2 && numel (ks) <= 6)
    f = fullfile (outdir, 'pairs.png');
    pairs_chart (f, tk, X(:, ks, :), names(ks), opts);
    files{end + 1} = f;
  end
  f = fullfile (outdir, 'chains.csv');
  write_chain_table (f, res, names, opts);
  files{end + 1} = f;
  f = fullfile (outdir, 'summary.txt');
  write_chain_text (f, res, opts, tk, show, dens);
  files{end + 1} = f;
  files = files(:);
end

function show = chain_variables (names, opts)
  % the parameters to draw: those asked for ('variables'), or all
  if (isempty (opts.variables))
    show = true (numel (names), 1);
    return;
  end
  show = ismember (names, opts.variables(:));
  unknown = setdiff (opts.variables(:), names);
  if (~isempty (unknown))
    error ('sluice:report:badoption', ...
           'variables: ''%s'' is not a parameter of the chains (they are %s)', ...
           unknown{1}, strjoin (names(:)', ', '));
  end
end

function dens = chain_prior (res, opts, names)
  % each parameter's prior entry, for its density: the option 'prior' (the
  % prior given to sluice.pmmh, its other entries ignored) or the result's
  % own; dens(k).ok is false when parameter k has none or a fixed one
  d = numel (names);
  dens = struct ('ok', num2cell (false (d, 1)), 'id', 0, 'a', 0, 'b', 0, 'lo', 0, 'hi', 0, ...
                 'dist', '');
  pr = opts.prior;
  where = 'option prior';
  if (isempty (pr) && isfield (res, 'prior') && ~isempty (res.prior))
    pr = res.prior;
    where = 'argument 1 (res): field ''prior''';
  end
  if (isempty (pr))
    return;
  end
  [ids, a, b, lo, hi, pn] = sluice.internal.check_prior (pr, where, 'report');
  for k = 1:d
    j = find (strcmp (pn, names{k}), 1);
    if (isempty (j) || strcmp (pr(j).dist, 'fixed'))
      continue;
    end
    dens(k) = struct ('ok', true, 'id', ids(j), 'a', a(j), 'b', b(j), 'lo', lo(j), ...
                      'hi', hi(j), 'dist', pr(j).dist);
  end
end

function [col, ls, mk] = chain_style (c)
  % chain c's colour, line style and marker: colours from the report's
  % palette, and styles and markers that differ too, so the chains stay
  % apart in grey print and for readers who do not tell the colours apart
  cols = {palette('line'), palette('smooth'), palette('obs'), palette('inner'), palette('mark')};
  styles = {'-', '--', ':', '-.'};
  marks = {'o', 's', '^', 'd', 'v', 'x', '+'};
  col = cols{mod (c - 1, numel (cols)) + 1};
  ls = styles{mod (c - 1, numel (styles)) + 1};
  mk = marks{mod (c - 1, numel (marks)) + 1};
end

function h = chain_lines (x, Y, c, every, width)
  % one chain as a line in its style, its marker on every every-th point
  % (shifted per chain so the marks of different chains do not sit on one
  % another); h is a legend handle showing line and marker together
  [col, ls, mk] = chain_style (c);
  m = numel (x);
  plot (x, Y, ls, 'color', col, 'linewidth', width);
  first = 1 + mod (round ((c - 1) * every / 3), max (every, 1));
  j = first:every:m;
  if (isempty (j))
    j = m;
  end
  plot (x(j), Y(j), mk, 'color', col, 'markerfacecolor', 'none', 'markersize', 6, ...
        'linewidth', width);
  h = plot (NaN, NaN, [ls, mk], 'color', col, 'linewidth', width, 'markersize', 6);
end

function s = chain_name (res, c)
  s = sprintf ('chain %d (acceptance %.2f)', c, res.acceptance(c));
end

function trace_chart (f, tk, it, Y, name, ylab, res, k)
  [n, C] = size (Y);
  h = new_figure (tk, [900 420]);
  hold on;
  hs = zeros (1, C);
  leg = cell (1, C);
  every = max (1, floor (n / 12));
  for c = 1:C
    hs(c) = chain_lines (it(:)', Y(:, c)', c, every, 1);
    leg{c} = chain_name (res, c);
  end
  hold off;
  tidy_axes ('on');
  if (n > 1)
    xlim ([res.burnin, it(end)]);
  end
  if (res.burnin > 0)
    xl = sprintf ('iteration (burn-in: iterations 1 to %d, not kept', res.burnin);
  else
    xl = 'iteration (no burn-in';
  end
  if (res.thin > 1)
    xl = sprintf ('%s; every %d-th iteration kept)', xl, res.thin);
  else
    xl = [xl, ')'];
  end
  xlabel (xl);
  ylabel (ylab);
  s = res.summary;
  if (isempty (s))
    diag_text = sprintf ('too few kept iterations (%d) for R-hat', n);
  else
    diag_text = sprintf ('split R-hat %.3f, bulk ESS %.0f', s.rhat(k), s.ess_bulk(k));
  end
  title (sprintf ('trace of %s: %d chain(s), %s', name, C, diag_text), 'interpreter', 'none');
  legend (hs, leg, 'location', 'northeastoutside');
  save_figure (h, f);
end

function [edges, dens] = histogram_density (x, edges)
  % counts of x in the bins [e(i), e(i+1)) (the last bin closed) as a
  % density: the bars' areas add up to 1
  cnt = histc (x(:), edges);
  cnt = cnt(:)';
  cnt(end - 1) = cnt(end - 1) + cnt(end);
  cnt = cnt(1:end - 1);
  dens = cnt / (numel (x) * (edges(2) - edges(1)));
end

function density_chart (f, tk, Y, name, xlab, s, k, pd)
  [n, C] = size (Y);
  x = Y(:);
  N = numel (x);
  % bins by the Rice rule, 2 N^(1/3), kept between 10 and 60
  nb = min (60, max (10, ceil (2 * N ^ (1/3))));
  lo = min (x);
  hi = max (x);
  if (hi <= lo)
    w = max (abs (lo), 1) * 1e-3;       % every draw equal: one narrow bin
    lo = lo - w;
    hi = hi + w;
    nb = 1;
  end
  edges = linspace (lo, hi, nb + 1);
  [edges, dp] = histogram_density (x, edges);
  mid = (edges(1:end - 1) + edges(2:end)) / 2;
  h = new_figure (tk, [900 450]);
  hold on;
  hs = bar (mid, dp, 1, 'facecolor', palette ('outer'), 'edgecolor', palette ('inner'));
  leg = {sprintf('all chains (%d draws)', N)};
  every = max (1, floor (nb / 5));
  if (C > 1)
    for c = 1:C
      [~, dc] = histogram_density (Y(:, c), edges);
      hs(end + 1) = chain_lines (mid, dc, c, every, 1.2);
      leg{end + 1} = sprintf ('chain %d', c);
    end
  end
  if (pd.ok)
    xg = linspace (edges(1), edges(end), 201);
    lp = sluice.kernel.prior_eval ('logpdf', pd.id, pd.a, pd.b, pd.lo, pd.hi, xg);
    hs(end + 1) = plot (xg, exp (lp), '-', 'color', palette ('truth'), 'linewidth', 2.5);
    leg{end + 1} = sprintf ('prior density (%s)', pd.dist);
  end
  if (~isempty (s))
    lv = s.quantile_levels(:)';
    i1 = level (lv, 0.025);
    i2 = level (lv, 0.975);
    if (~isempty (i1) && ~isempty (i2))
      top = max ([dp(:); 0]) * 1.05;
      q = s.quantiles(k, [i1 i2]);
      hs(end + 1) = plot ([q(1) q(1)], [0 top], '--', 'color', [0.3 0.3 0.3], 'linewidth', 1.5);
      plot ([q(2) q(2)], [0 top], '--', 'color', [0.3 0.3 0.3], 'linewidth', 1.5);
      leg{end + 1} = '95% interval (2.5% and 97.5% quantiles)';
    end
  end
  hold off;
  tidy_axes ('off');
  yl = ylim ();
  ylim ([0, yl(2)]);
  xlabel (xlab);
  ylabel ('density');
  title (sprintf ('marginal posterior of %s: histogram of the draws after burn-in (%d bins)', ...
                  name, numel (mid)), 'interpreter', 'none');
  legend (hs, leg, 'location', 'northeastoutside');
  save_figure (h, f);
end

function pairs_chart (f, tk, X, names, opts)
  % every pair of parameters: the draws of each chain as points in the
  % chain's colour and marker, at most about 2000 points in all
  [n, p, C] = size (X);
  step = max (1, ceil (n * C / 2000));
  rows = 1:step:n;
  h = new_figure (tk, [300 * (p - 1) + 320, 280 * (p - 1) + 120]);
  hs = zeros (1, C);
  for i = 2:p
    for j = 1:i - 1
      subplot (p - 1, p - 1, (i - 2) * (p - 1) + j);
      hold on;
      for c = 1:C
        [col, ~, mk] = chain_style (c);
        hc = plot (X(rows, j, c), X(rows, i, c), mk, 'color', col, 'markersize', 3);
        if (i == 2)
          hs(c) = hc;     % the first panel's, for the legend
        end
      end
      hold off;
      tidy_axes ('on');
      if (i == p)
        xlabel (label (names{j}, opts));
      end
      if (j == 1)
        ylabel (label (names{i}, opts));
      end
    end
  end
  subplot (p - 1, p - 1, 1);
  if (step > 1)
    what = sprintf ('every %d-th draw of each chain', step);
  else
    what = 'every draw';
  end
  title (sprintf ('pairs of parameters (%s)', what));
  % the legend beside the first panel, where the upper triangle is empty
  legend (hs, arrayfun (@(c) sprintf ('chain %d', c), 1:C, 'UniformOutput', false), ...
          'location', 'northeastoutside');
  save_figure (h, f);
end

function write_chain_table (f, res, names, opts)
  % one row per parameter, the numbers of the result's summary as they are
  s = res.summary;
  d = numel (names);
  if (isempty (s))
    lv = [0.025 0.25 0.5 0.75 0.975];
    Q = nan (d, numel (lv));
    cols = nan (d, 6);
  else
    lv = s.quantile_levels(:)';
    Q = s.quantiles;
    cols = [s.mean, s.sd, s.rhat, s.ess, s.ess_bulk, s.mcse];
  end
  head = [{'parameter', 'unit', 'mean', 'sd'}, arrayfun(@qname, lv, 'UniformOutput', false), ...
          {'rhat', 'ess', 'ess_bulk', 'mcse'}];
  fid = open_file (f);
  fprintf (fid, '%s\n', strjoin (head, ','));
  fmt = [strjoin(repmat ({'%.10g'}, 1, 6 + numel (lv)), ','), '\n'];
  for k = 1:d
    u = '';
    if (isfield (opts.units, names{k}))
      u = opts.units.(names{k});
    end
    fprintf (fid, '%s,%s,', names{k}, strrep (u, ',', ' '));
    fprintf (fid, fmt, [cols(k, 1:2), Q(k, :), cols(k, 3:6)]);
  end
  fclose (fid);
end

function [ok, bad_r, bad_e] = chain_verdict (res)
  % the rule of sluice.pmmh: every split R-hat at most max_rhat and every
  % bulk ESS at least min_ess (a NaN fails)
  s = res.summary;
  d = numel (res.names);
  if (isempty (s))
    ok = false;
    bad_r = true (d, 1);
    bad_e = true (d, 1);
    return;
  end
  bad_r = ~(s.rhat <= res.max_rhat);
  bad_e = ~(s.ess_bulk >= res.min_ess);
  ok = ~any (bad_r) && ~any (bad_e);
end

function write_chain_text (f, res, opts, tk, show, dens)
  [n, d, C] = size (res.samples);
  names = res.names(:);
  s = res.summary;
  fid = open_file (f);
  heading = opts.title;
  if (isempty (heading))
    heading = sprintf ('parameters %s', strjoin (names', ', '));
  end
  fprintf (fid, 'Report of an MCMC run (particle marginal Metropolis-Hastings): %s\n\n', heading);
  fprintf (fid, 'parameters:          %s\n', strjoin (names', ', '));
  fprintf (fid, 'chains:              %d, %d kept iteration(s) each (%d draws)\n', C, n, n * C);
  fprintf (fid, 'burn-in:             %d iteration(s) per chain, not kept\n', res.burnin);
  if (res.thin > 1)
    fprintf (fid, 'thinning:            every %d-th iteration kept\n', res.thin);
  else
    fprintf (fid, 'thinning:            none (every iteration kept)\n');
  end
  if (isfield (res, 'members'))
    fprintf (fid, 'particles per run:   %d\n', res.members);
  end
  if (isfield (res, 'seed'))
    fprintf (fid, 'seed:                %.17g\n', res.seed);
  end

  [ok, bad_r, bad_e] = chain_verdict (res);
  fprintf (fid, '\nConvergence: %s\n', ifelse (ok, 'CONVERGED', 'NOT CONVERGED'));
  fprintf (fid, ['  limits: split R-hat at most %.4g and bulk ESS at least %.4g for every ', ...
                 'parameter\n'], res.max_rhat, res.min_ess);
  if (isempty (s))
    fprintf (fid, ['  only %d kept iteration(s) per chain: split R-hat and ESS need at ', ...
                   'least 4; run longer\n'], n);
  else
    fprintf (fid, '  %-14s %10s %10s  %s\n', 'parameter', 'R-hat', 'bulk ESS', 'verdict');
    for k = 1:d
      why = {};
      if (bad_r(k))
        why{end + 1} = sprintf ('R-hat above %.4g', res.max_rhat);
      end
      if (bad_e(k))
        why{end + 1} = sprintf ('bulk ESS below %.4g', res.min_ess);
      end
      if (isempty (why))
        why = {'ok'};
      end
      fprintf (fid, '  %-14s %10.4f %10.1f  %s\n', names{k}, s.rhat(k), s.ess_bulk(k), ...
               strjoin (why, '; '));
    end
    if (~ok)
      fprintf (fid, ['  run longer (sluice.pmmh with ''continue''), or start the chains ', ...
                     'from a posterior (''start''); do not use these draws as they are\n']);
    end
  end
  if (logical (res.converged) ~= ok)
    fprintf (fid, ['  note: the result''s field converged says %s, which its summary and ', ...
                   'limits do not (was the result edited?)\n'], ifelse (res.converged, 'true', 'false'));
  end

  fprintf (fid, '\nAcceptance rates (after the burn-in');
  have_burn = isfield (res, 'acceptance_burnin') && res.burnin > 0;
  if (have_burn)
    fprintf (fid, '; during it');
  end
  fprintf (fid, ')');
  if (isfield (res, 'target_acceptance'))
    fprintf (fid, ', the adaptation''s target %.3g', res.target_acceptance);
  end
  fprintf (fid, ':\n');
  for c = 1:C
    fprintf (fid, '  chain %-3d %.3f', c, res.acceptance(c));
    if (have_burn)
      fprintf (fid, '  (%.3f)', res.acceptance_burnin(c));
    end
    extra = {};
    what = {'degenerate', 'filter runs with log-evidence -Inf or NaN'; ...
            'outside', 'proposals outside the prior''s support'; ...
            'nonfinite_runs', 'runs with non-finite particles'};
    for j = 1:size (what, 1)
      if (isfield (res, what{j, 1}))
        v = res.(what{j, 1});
        if (v(c) > 0)
          extra{end + 1} = sprintf ('%d %s', v(c), what{j, 2});
        end
      end
    end
    if (~isempty (extra))
      fprintf (fid, '; %s', strjoin (extra, ', '));
    end
    fprintf (fid, '\n');
  end

  if (~isempty (s))
    lv = s.quantile_levels(:)';
    i1 = level (lv, 0.025);
    i2 = level (lv, 0.975);
    fprintf (fid, '\nPosterior summaries (all chains pooled; chains.csv has every column):\n');
    for k = 1:d
      fprintf (fid, '  %-14s mean %.6g, sd %.6g', names{k}, s.mean(k), s.sd(k));
      if (~isempty (i1) && ~isempty (i2))
        fprintf (fid, ', 95%% interval [%.6g, %.6g]', s.quantiles(k, i1), s.quantiles(k, i2));
      end
      fprintf (fid, '\n');
    end
  end

  fprintf (fid, '\nFigures (drawn with the %s graphics toolkit):\n', tk);
  fprintf (fid, ['  trace_<name>.png: every chain''s kept draws against the iteration, ', ...
                 'each chain in its own colour, line style and marker\n']);
  fprintf (fid, ['  density_<name>.png: histogram of the pooled draws as a density, each ', ...
                 'chain''s histogram as a line, the 95%% interval']);
  if (any ([dens.ok]))
    fprintf (fid, ', the prior density (red)');
  end
  fprintf (fid, '\n');
  np = sum (show);
  if (np >= 2 && np <= 6)
    fprintf (fid, '  pairs.png: the draws of every pair of parameters\n');
  elseif (np > 6)
    fprintf (fid, '  no pairs chart: more than 6 parameters (choose some with ''variables'')\n');
  end
  fprintf (fid, ['\nThis report supports studies of flood risk. It is not a flood warning ', ...
                 'and not a basis for the design of defences; follow local codes and ', ...
                 'licensed engineering practice.\n']);
  fclose (fid);
end

%!error <Invalid call> sluice.report ()
%!error id=sluice:report:badresult sluice.report (1)
%!error id=sluice:report:badresult sluice.report (struct ('filter', 1))
%!error id=sluice:report:badoption sluice.report (struct ('filter', 1), ['o'; 'u'; 't'], 'x')
%!error id=sluice:report:badoutdir sluice.report (struct ('times', 1, 'state_names', {{}}, 'param_names', {{}}, 'states', 1, 'params', 1, 'quantile_levels', 0.5, 'ess', 1, 'resampled', false, 'members', 1), 'outdir', cat (3, 'ab', 'ab'))
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
%!   assert (numel (files), 7);
%!   assert (exist (fullfile (d, 'skill.csv'), 'file'), 2);
%!   assert (exist (fullfile (d, 'overview.png'), 'file'), 2);
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
%! gp = sluice.internal.find_program (gnuplot_binary ());
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
