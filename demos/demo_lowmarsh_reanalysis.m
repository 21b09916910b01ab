% demo_lowmarsh_reanalysis - a coupled reanalysis of the river Vell and the
% town of Lowmarsh with the built-in model river_town (GR4J daily flow,
% each year's largest flow through a rating curve into the human-flood
% model of the town). The town, the river, its catchment, the weather and
% every number below are invented inside this script.
%
% demo_lowmarsh_reanalysis ()          60 years, writes into out/reanalysis
% demo_lowmarsh_reanalysis (outdir)    writes into outdir (created if needed)
% demo_lowmarsh_reanalysis (outdir, 'small')  6 years and few members (tests)
% [res, info] = demo_lowmarsh_reanalysis (...)  also returns the written
%        reanalysis result (the run cut to its visible states and estimated
%        parameters, as saved) and a struct of the truth, observations,
%        files and timings
%
% The story. 60 years of daily rain fall on the Vell's catchment above
% Lowmarsh: a wet-day chain whose chances follow the seasons (wetter
% winters), exponential amounts with a seasonal mean and now and then a
% storm of three times the usual amount; evapotranspiration follows a
% seasonal curve from 0.4 to 3 mm/d. A truth run of river_town with
% chosen parameters (production store X1 = 380 mm, rating curve a = 0.5,
% memory decay muS = 0.12 per year; the model's defaults otherwise) is
% then observed at the rates a town would keep, all in one table:
%   - daily flows Q from year 20, when the gauge was built (lognormal
%     errors, sdlog 0.1; about 3% of the days missing);
%   - the annual flood level at every year end (Gaussian, sd 0.15);
%   - a census of the settlement size G every 10 years (lognormal, sdlog
%     0.05);
%   - levee surveys of the levee height H every 15 years (Gaussian, sd
%     0.1);
%   - an awareness questionnaire every 5 years: n = 150 residents asked
%     whether they expect the Vell to flood the town again. The share
%     answering yes is taken to be p = M / (1 + M) of the collective
%     memory M (an invented link: none with no memory, one half at M = 1).
%     The filter's binomial family observes the logit of p, which is
%     log(M): the derived quantity 'aware' = log(M), an operator.
% The rain the filter is given is the catchment's gauge record: each
% day's true total times a lognormal error (sdlog 0.25), which the filter
% models as multiplicative forcing noise of the same size.
% The reanalysis: the particle filter (1000 members), weakly coupled (the
% river's states, X1 and a weighed by the river's observations, the
% town's states and muS by the town's), with X1, a and muS unknown
% (lognormal priors around the model's defaults) and let to drift as
% slow random walks (0.003 a day in log space), a little noise on the
% town's distance D and levee height H, and a calendar from 1960-01-01
% (the model's years are 365 days long, so year ends drift from
% 1 January by a day every four years). The reanalysis is SMOOTHED: a
% fixed-lag smoother whose window's rows of each component follow that
% component's own ancestry, with a lag per component. The town's
% densest record is the questionnaire, every 5 years: a lag of 5 years
% (1825 days) brings at least one later town observation to every day.
% The river is observed every day from the gauge on, and resampled by
% it nearly every day, so its paths coalesce: over 30 days they keep
% enough distinct ancestors (res.coupling.smoothed_distinct) while
% spanning GR4J's routing (its unit hydrographs last 2 X4 days, a few
% days here); before the gauge a river day learns from the flood level
% of its year end only if that is within those 30 days. The window
% holds 1826 slots of the 90 rows of 1000 members (1.3 GB). As a twin
% experiment it prints how often the smoothed and the filtered 90%
% bands hold the truth and whether the parameters' final bands do. It
% writes, into out/reanalysis:
%   reanalysis_states.csv  per day: the smoothed mean and 5/50/95% points
%                          of every visible state (GR4J's unit-hydrograph
%                          queues and the day counter left out)
%   reanalysis_params.csv  per day: the same of the estimated parameters
%   filtered_states.csv, filtered_params.csv  the same, filtered (each
%                          day given the record up to it)
%   reanalysis.nc          the reanalysis as NetCDF-4 (CF-1.8) through
%                          sluice.save_run, with units and long names:
%                          smoothed (<name>_smoothed_mean, _quantiles)
%                          and filtered (<name>_mean, _quantiles)
%   flows.png, levels.png, population.png, memory.png, levee.png,
%   params.png             smoothed bands (filled), filtered bands
%                          (dashed), observations and the (here known)
%                          truth
% and prints the speed of the coupled filter against GR4J alone.
%
% The numbers support a study of an invented record; they are not a flood
% warning and not a basis for the design of defences.
function [res, info] = demo_lowmarsh_reanalysis (outdir, scale)
  if (nargin > 2)
    error ('sluice:demo_lowmarsh_reanalysis:usage', ...
           'usage: [res, info] = demo_lowmarsh_reanalysis (outdir, scale)');
  end
  if (nargin < 1 || isempty (outdir))
    outdir = fullfile (fileparts (fileparts (mfilename ('fullpath'))), 'out', 'reanalysis');
  end
  if (nargin < 2)
    scale = 'full';
  end
  if (~ischar (outdir) || size (outdir, 1) ~= 1)
    error ('sluice:demo_lowmarsh_reanalysis:badoutdir', ...
           'argument 1 (outdir): expected a directory name (a character row)');
  end
  if (~ischar (scale) || ~any (strcmp (scale, {'full', 'small'})))
    error ('sluice:demo_lowmarsh_reanalysis:badscale', ...
           'argument 2 (scale): expected ''full'' or ''small''');
  end
  if (~exist (outdir, 'dir'))
    [ok, msg] = mkdir (outdir);
    if (~ok)
      error ('sluice:demo_lowmarsh_reanalysis:badoutdir', ...
             'argument 1 (outdir): cannot create ''%s'': %s', outdir, msg);
    end
  end
  if (strcmp (scale, 'full'))
    c = struct ('years', 60, 'gauge', 20, 'census', 10, 'survey', 15, 'quest', 5, ...
                'members', 1000, 'bench_years', 10, 'river_lag', 30);
  else
    c = struct ('years', 6, 'gauge', 2, 'census', 3, 'survey', 4, 'quest', 2, ...
                'members', 60, 'bench_years', 1, 'river_lag', 30);
  end
  % the town's lag: the interval of its densest record (the questionnaire)
  c.town_lag = 365 * c.quest;
  t_all = tic ();
  gp = warning ('query', 'Octave:gnuplot-graphics');
  warning ('off', 'Octave:gnuplot-graphics');
  restore = onCleanup (@() warning (gp));

  % --- 1. the invented weather of the catchment ----------------------------
  T = 365 * c.years;
  [P, E] = weather (T, 1961);
  forcing = struct ('time', (0:T-1)', 'values', [P, E], 'interp', 'previous');

  % --- 2. the truth ----------------------------------------------------------
  spec = sluice.model ('river_town');
  p_true = spec.defaults(:);
  truth_values = {'X1', 380; 'a', 0.5; 'muS', 0.12};
  for k = 1:size (truth_values, 1)
    p_true(strcmp (spec.params, truth_values{k, 1})) = truth_values{k, 2};
  end
  X = sluice.simulate (spec, [], p_true, 0:T, forcing);
  ix = @(name) find (strcmp (spec.states, name));
  % the rain as the catchment's gauges caught it: each day's total off by
  % a lognormal factor (sdlog 0.25, mean 1); evapotranspiration exact
  Zr = sluice.draw (sluice.prior ('z', 'normal', [0 1]), T, 1965);
  gauge_forcing = forcing;
  gauge_forcing.values(:, 1) = P .* exp (0.25 * Zr(:) - 0.25^2 / 2);

  % --- 3. the observations, at their own rates, in one table ---------------
  Z = sluice.draw (sluice.prior ('z', 'normal', [0 1]), T + 1000, 1962);
  U = sluice.draw (sluice.prior ('u', 'uniform', [0 1]), T + 1000, 1963);
  rows = {};
  % daily flows from the gauge's first day (day t is the flow of the day
  % ending at t)
  tq = (365 * c.gauge + 1:T)';
  q = X(ix ('Q'), tq + 1)' .* exp (0.1 * Z(tq)');
  q(U(tq) < 0.03) = NaN;                      % days the gauge was down
  rows(end + 1, :) = {tq, 'Q', q, 0.1, 'lognormal', NaN};
  % the flood level of every year end
  ty = 365 * (1:c.years)';
  y = X(ix ('level'), ty + 1)' + 0.15 * Z(T + (1:c.years))';
  rows(end + 1, :) = {ty, 'level', y, 0.15, 'gaussian', NaN};
  tc = 365 * (c.census:c.census:c.years)';
  y = X(ix ('G'), tc + 1)' .* exp (0.05 * Z(T + 100 + (1:numel (tc)))');
  rows(end + 1, :) = {tc, 'G', y, 0.05, 'lognormal', NaN};
  ts = 365 * (c.survey:c.survey:c.years)';
  y = X(ix ('H'), ts + 1)' + 0.1 * Z(T + 200 + (1:numel (ts)))';
  rows(end + 1, :) = {ts, 'H', y, 0.1, 'gaussian', NaN};
  % the questionnaire: 150 answers, each yes with p = M / (1 + M)
  tw = 365 * (c.quest:c.quest:c.years)';
  n_ask = 150;
  M = X(ix ('M'), tw + 1)';
  yes = zeros (numel (tw), 1);
  Ua = sluice.draw (sluice.prior ('u', 'uniform', [0 1]), n_ask * numel (tw), 1964);
  for k = 1:numel (tw)
    yes(k) = sum (Ua((k - 1) * n_ask + (1:n_ask)) < M(k) / (1 + M(k)));
  end
  rows(end + 1, :) = {tw, 'aware', yes, NaN, 'binomial', n_ask};
  obs = one_table (rows);
  % the questionnaire's operator: the logit of p = M / (1 + M) is log(M)
  iM = ix ('M');
  ops = struct ('names', 'aware', 'fun', @(t, X, P) log (X(iM, :)));

  % --- 4. the reanalysis -------------------------------------------------------
  prior = sluice.prior ('X1', 'lognormal', [log(320) 0.3], ...
                        'a', 'lognormal', [log(0.4) 0.3], ...
                        'muS', 'lognormal', [log(0.215) 0.5]);
  rain_noise = struct ('kind', {{'multiplicative', 'none'}}, 'sd', [0.25 0], 'ar1', [0 0]);
  % the town's slow states get a little noise each day (the distance D
  % and the levee height H, sd 0.002), and the parameters a slow random
  % walk (0.003 a day in their log space)
  town_noise = zeros (numel (spec.states), 1);
  town_noise(strcmp (spec.states, 'D')) = 0.002;
  town_noise(strcmp (spec.states, 'H')) = 0.002;
  % weakly coupled: the river (its states, X1 and a) is weighed and
  % resampled by the flows and levels, the town (its states and muS) by
  % the censuses, surveys, levels and the questionnaire alone, so the
  % daily flows no longer thin the town to a few lines between censuses
  % (strongly coupled, the same filter ended with X1 321 [305, 341] for a
  % truth of 380 and muS 0.071 [0.069, 0.073] for 0.12). Smoothed with a
  % lag per component (river, town: the order of spec.components).
  fopts = {'lag', [c.river_lag, c.town_lag], 't0', 0, 'times', 1:T, 'forcing', gauge_forcing, 'forcing_noise', rain_noise, ...
           'state_noise', town_noise, 'operators', ops, 'coupling', 'weak', ...
           'obs_components', struct('aware', 'town'), ...
           'param_move', 'random_walk', 'param_step', 0.003, 'members', c.members, 'seed', 2031, ...
           'origin', '1960-01-01', 'quantiles', [0.05 0.5 0.95], 'progress', false};
  t_run = tic ();
  r = sluice.filter (spec, prior, obs, fopts{:});
  run_s = toc (t_run);

  % the speed of the coupled cycle against GR4J alone: the same members,
  % days, flows and settings, one after the other in this session
  nb = 365 * c.bench_years;
  sel = obs.time > 365 * c.gauge & obs.time <= 365 * c.gauge + nb & strcmp (obs.variable, 'Q');
  bobs = struct ('time', obs.time(sel) - 365 * c.gauge, 'variable', {obs.variable(sel)}, ...
                 'value', obs.value(sel), 'sigma', obs.sigma(sel), 'family', {obs.family(sel)});
  bforcing = struct ('time', (0:nb-1)', ...
                     'values', gauge_forcing.values(365 * c.gauge + (1:nb), :), ...
                     'interp', 'previous');
  bprior = sluice.prior ('X1', 'lognormal', [log(320) 0.3]);
  bopts = {'t0', 0, 'forcing', bforcing, 'forcing_noise', rain_noise, 'param_move', 'kernel', ...
           'members', c.members, 'seed', 7, 'progress', false};
  % (speed runs only: their parameter's collapse and dead members are
  % not reported)
  pc = warning ('query', 'sluice:filter:paramcollapse');
  nf = warning ('query', 'sluice:filter:nonfinite');
  warning ('off', 'sluice:filter:paramcollapse');
  warning ('off', 'sluice:filter:nonfinite');
  t_b = tic ();
  sluice.filter (spec, bprior, bobs, bopts{:});
  coupled_s = toc (t_b);
  t_b = tic ();
  sluice.filter (sluice.model ('gr4j'), bprior, bobs, bopts{:});
  gr4j_s = toc (t_b);
  warning (pc.state, 'sluice:filter:paramcollapse');
  warning (nf.state, 'sluice:filter:nonfinite');

  % --- 5. the outputs ---------------------------------------------------------
  visible = spec.states(~spec.internal);
  estimated = {prior.name};
  res = cut_result (r, visible, estimated);
  [units, long_names] = descriptions ();
  files = {};
  sm = res.smoothed;
  f = fullfile (outdir, 'reanalysis_states.csv');
  write_bands (f, res, sm.states, res.state_names);
  files{end + 1} = f;
  f = fullfile (outdir, 'reanalysis_params.csv');
  write_bands (f, res, sm.params, res.param_names);
  files{end + 1} = f;
  f = fullfile (outdir, 'filtered_states.csv');
  write_bands (f, res, res.states, res.state_names);
  files{end + 1} = f;
  f = fullfile (outdir, 'filtered_params.csv');
  write_bands (f, res, res.params, res.param_names);
  files{end + 1} = f;
  f = fullfile (outdir, 'reanalysis.nc');
  sluice.save_run (res, f, 'units', units, 'long_names', long_names, ...
                   'title', 'Reanalysis of the river Vell and the town of Lowmarsh (invented record)', ...
                   'institution', 'the Lowmarsh study (fictional)');
  files{end + 1} = f;
  truth = struct ('times', 0:T, 'X', X, 'params', p_true, 'state_names', {spec.states}, ...
                  'param_names', {spec.params});
  files = [files, figures(outdir, res, obs, truth, n_ask)];

  % --- 6. what it found -----------------------------------------------------
  info = struct ('truth', truth, 'obs', obs, 'files', {files}, 'run_seconds', run_s, ...
                 'coupled_seconds', coupled_s, 'gr4j_seconds', gr4j_s, 'filter', r, ...
                 'lag', [c.river_lag, c.town_lag]);
  fprintf ('\nLowmarsh on the river Vell (invented catchment, weather and town): %d years of daily rain\n', ...
           c.years);
  fprintf ('observations in one table: %d rows (daily flows from year %d, %d flood levels,\n', ...
           numel (obs.time), c.gauge, numel (ty));
  fprintf ('  %d censuses, %d levee surveys, %d questionnaires of %d residents)\n', ...
           numel (tc), numel (ts), numel (tw), n_ask);
  fprintf (['particle filter, %d members, weakly coupled (river and town), smoothed with ', ...
            'lags of %d (river) and %d days (town): %.1f s\n'], r.members, c.river_lag, ...
           c.town_lag, run_s);
  % a twin experiment: the truth is known, so the run can be checked
  fprintf (['  the estimated parameters at the end (mean [90%% band]) against the invented truth\n', ...
            '  (they drift as random walks, so these are their values at the end of the record):\n']);
  for k = 1:numel (estimated)
    i = find (strcmp (res.param_names, estimated{k}));
    v = p_true(strcmp (spec.params, estimated{k}));
    lo = res.params.quantiles(i, 1, end);
    hi = res.params.quantiles(i, end, end);
    word = 'inside';
    if (v < lo || v > hi)
      word = 'OUTSIDE';
    end
    fprintf ('    %-4s %8.3f [%8.3f, %8.3f]   truth %8.3f (%s the band)   prior median %8.3f   %d distinct values\n', ...
             estimated{k}, res.params.mean(i, end), lo, hi, v, word, exp (prior(k).args(1)), ...
             r.params.distinct(strcmp (r.param_names, estimated{k}), end));
  end
  % the town at its censuses: the census, the truth and the reanalysis
  iG = find (strcmp (res.state_names, 'G'));
  sel = strcmp (obs.variable, 'G');
  fprintf ('  settlement size G at the censuses: census, truth, smoothed median [90%% band]\n');
  tcen = obs.time(sel);
  vcen = obs.value(sel);
  sq = res.smoothed.states.quantiles;
  fq = res.states.quantiles;
  for k = 1:numel (tcen)
    j = find (res.times == tcen(k));
    fprintf ('    year %2d  %8.4f  %8.4f  %8.4f [%8.4f, %8.4f]\n', tcen(k) / 365, vcen(k), ...
             X(ix ('G'), tcen(k) + 1), sq(iG, 2, j), sq(iG, 1, j), sq(iG, 3, j));
  end
  % how often the 90% bands hold the truth (a calibrated band: about 0.9)
  fprintf (['  share of the days whose 90%% band holds the truth, smoothed (filtered), ', ...
            'all days / from the gauge on:\n   ']);
  gauge_on = res.times > 365 * c.gauge;
  cover = struct ();
  for name = {'G', 'M', 'H', 'Q', 'level'}
    i = find (strcmp (res.state_names, name{1}));
    tr = X(ix (name{1}), res.times + 1);
    in = tr >= squeeze (sq(i, 1, :))' & tr <= squeeze (sq(i, end, :))';
    inf_ = tr >= squeeze (fq(i, 1, :))' & tr <= squeeze (fq(i, end, :))';
    cover.(name{1}) = [mean(in), mean(inf_), mean(in(gauge_on)), mean(inf_(gauge_on))];
    fprintf (' %s %.2f (%.2f) / %.2f (%.2f);', name{1}, cover.(name{1}));
  end
  % the smoothed paths' diversity: distinct ancestors of each component
  nd = r.coupling.smoothed_distinct;
  fprintf (['\n  distinct members on the smoothed paths (median, fewest): river %g, %g; ', ...
            'town %g, %g of %d'], median (nd(1, :)), min (nd(1, :)), median (nd(2, :)), ...
           min (nd(2, :)), r.members);
  fprintf ('\n  ESS (the smaller component''s): median %.0f of %d; resampled at %d of %d cycles; %d cycles degenerate\n', ...
           median (res.ess), r.members, sum (res.resampled), numel (res.times), ...
           sum (res.degenerate));
  info.coverage = cover;
  coupled_rate = c.members * nb / coupled_s;
  gr4j_rate = c.members * nb / gr4j_s;
  fprintf (['speed over %d years of daily flows, %d members, this session: coupled %.3g ', ...
            'member-days/s, GR4J alone %.3g; the coupled cycle takes %.2f times as long\n'], ...
           c.bench_years, c.members, coupled_rate, gr4j_rate, coupled_s / gr4j_s);
  fprintf ('written into %s:\n', outdir);
  for k = 1:numel (files)
    [~, nm, ext] = fileparts (files{k});
    fprintf ('  %s%s\n', nm, ext);
  end
  fprintf ('(%.0f s in all)\n', toc (t_all));
  fprintf (['caution: an invented record. Numbers like these support a study of how a ', ...
            'river and a town\nshaped each other; they are not a flood warning and not a ', ...
            'basis for the design of defences.\n\n']);
end

function [P, E] = weather (T, seed)
  % daily rain (mm/d): a wet-day chain with seasonal chances (wetter in
  % winter, day 0 = 1 January), exponential amounts with a seasonal mean,
  % 4% of wet days a storm of three times the amount; evapotranspiration
  % (mm/d) from 0.4 in winter to 3 in summer
  u = sluice.draw (sluice.prior ('u', 'uniform', [0 1]), 3 * T, seed);
  u = u(:);
  ph = 2 * pi * (0:T-1)' / 365.25;
  p_dry_wet = 0.22 + 0.10 * cos (ph);
  p_wet_wet = 0.62 + 0.08 * cos (ph);
  wet = false (T, 1);
  w = false;
  for k = 1:T
    if (w)
      w = u(k) < p_wet_wet(k);
    else
      w = u(k) < p_dry_wet(k);
    end
    wet(k) = w;
  end
  amount = -(5 + 2 * cos (ph)) .* log (u(T+1:2*T));
  storm = u(2*T+1:3*T) < 0.04;
  amount(storm) = 3 * amount(storm);
  P = wet .* amount;
  E = 0.4 + 2.6 * (0.5 - 0.5 * cos (ph));
end

function obs = one_table (rows)
  % the long table of every observation, in time order
  t = [];
  v = {};
  y = [];
  s = [];
  fam = {};
  n = [];
  for k = 1:size (rows, 1)
    m = numel (rows{k, 1});
    t = [t; rows{k, 1}(:)];
    v = [v; repmat(rows(k, 2), m, 1)];
    y = [y; rows{k, 3}(:)];
    s = [s; repmat(rows{k, 4}, m, 1)];
    fam = [fam; repmat(rows(k, 5), m, 1)];
    n = [n; repmat(rows{k, 6}, m, 1)];
  end
  [t, o] = sort (t);
  obs = struct ('time', t, 'variable', {v(o)}, 'value', y(o), 'sigma', s(o), ...
                'family', {fam(o)}, 'n', n(o));
end

function r = cut_result (r, states, params)
  % the run restricted to the named states and parameters (the others are
  % GR4J's queues, the day counter and parameters the run did not
  % estimate): every summary keeps its rows of them
  is = cellfun (@(s) find (strcmp (r.state_names, s)), states);
  ip = cellfun (@(s) find (strcmp (r.param_names, s)), params);
  r.state_names = r.state_names(is);
  r.param_names = r.param_names(ip);
  r.states.mean = r.states.mean(is, :);
  r.states.quantiles = r.states.quantiles(is, :, :);
  if (isfield (r, 'summarized_states'))
    r.summarized_states = r.summarized_states(is);
  end
  r.params = rows_of (r.params, ip);
  if (isfield (r, 'smoothed'))
    r.smoothed.states = rows_of (r.smoothed.states, is);
    r.smoothed.params = rows_of (r.smoothed.params, ip);
  end
  if (isstruct (r.forecast))
    r.forecast.mean = r.forecast.mean(is, :);
    r.forecast.params = r.forecast.params(ip, :);
  end
  r.final.X = r.final.X(is, :);
  r.final.P = r.final.P(ip, :);
end

function s = rows_of (s, i)
  f = fieldnames (s);
  for k = 1:numel (f)
    v = s.(f{k});
    if (isnumeric (v) && ~isempty (v))
      s.(f{k}) = v(i, :, :);
    end
  end
end

function [units, long] = descriptions ()
  % units (UDUNITS text, as CF asks) and long names of the saved states
  % and parameters. GR4J's flows are depths over the catchment per day
  % (mm/d), not volumes per second: CF's water_volume_transport_in_river_channel
  % (m3 s-1) does not fit them, and CF has no standard name for them.
  % The flood model's quantities are relative; its levels are read here
  % as metres above the bank of the town.
  units = struct ('S', 'mm', 'R', 'mm', 'Q', 'mm d-1', 'G', '1', 'D', '1', 'H', 'm', ...
                  'M', '1', 'F', '1', 'R_levee', 'm', 'Qmax', 'mm d-1', 'level', 'm', ...
                  'X1', 'mm', 'a', '1', 'muS', '1');
  long = struct ( ...
    'S', 'production store level of GR4J', ...
    'R', 'routing store level of GR4J', ...
    'Q', 'river flow at the town gauge, as a depth of runoff over the catchment per day', ...
    'G', 'settlement size of the town, relative', ...
    'D', 'distance of the settlement from the river, relative', ...
    'H', 'levee height above the bank', ...
    'M', 'collective memory of floods, relative', ...
    'F', 'damage fraction of the latest flood', ...
    'R_levee', 'levee raising after the latest flood', ...
    'Qmax', 'largest daily flow so far in the model year', ...
    'level', 'high-water level of the latest year end, from the rating curve', ...
    'X1', 'capacity of the GR4J production store', ...
    'a', 'factor of the rating curve level = a (Qmax - Q0)^b, in m per (mm/d)^b', ...
    'muS', 'decay rate of the flood memory, per year of 365 days');
end

function write_bands (f, r, sm, names)
  % one row per cycle: time, date, then per variable the mean and the
  % 5%, 50% and 95% points of the summary sm (smoothed or filtered, 10
  % significant digits)
  lv = r.quantile_levels;
  T = numel (r.times);
  head = {'time', 'date'};
  cols = zeros (T, 4 * numel (names));
  for k = 1:numel (names)
    head = [head, strcat(names{k}, {'_mean', '_q05', '_q50', '_q95'})];
    cols(:, 4 * k - 3) = sm.mean(k, :)';
    for j = 1:3
      cols(:, 4 * k - 3 + j) = squeeze (sm.quantiles(k, j, :));
    end
  end
  if (~isequal (lv(:)', [0.05 0.5 0.95]))
    error ('sluice:demo_lowmarsh_reanalysis:internal', 'the run has other quantile levels');
  end
  dates = cellstr (datestr (r.dates(:), 'yyyy-mm-dd'));
  body = sprintf ([strjoin(repmat ({'%.10g'}, 1, size (cols, 2)), ','), '\n'], cols');
  lines = regexp (body(1:end-1), '\n', 'split');
  tt = regexp (sprintf ('%.10g\n', r.times), '\n', 'split');
  out = [tt(1:T); dates'; lines];
  fid = fopen (f, 'w');
  if (fid < 0)
    error ('sluice:demo_lowmarsh_reanalysis:cannotwrite', '%s: cannot be written', f);
  end
  fprintf (fid, '%s\n', strjoin (head, ','));
  fprintf (fid, '%s,%s,%s\n', out{:});
  fclose (fid);
end

function files = figures (outdir, r, obs, truth, n_ask)
  % bands of the smoothed estimate (90%, filled) with its median, the
  % filtered 90% band (dashed), the observations and the truth
  files = {};
  t = r.times;
  yr = t / 365;
  T = numel (t);
  band = [0.80 0.86 0.95];
  cs = [0.15 0.30 0.60];
  get = @(name) find (strcmp (r.state_names, name));
  tr = @(name, k) truth.X(strcmp (truth.state_names, name), t(k) + 1);
  ob = @(name) strcmp (obs.variable, name);

  % flows: the last two years, daily
  k = find (t > t(end) - 730);
  f = fullfile (outdir, 'flows.png');
  h = figure ('visible', 'off');
  i = get ('Q');
  fan (yr(k), r, i, k, band, cs);
  hold on;
  sel = ob ('Q') & obs.time > t(k(1)) - 1;
  plot (obs.time(sel) / 365, obs.value(sel), 'k.', 'markersize', 4);
  plot (yr(k), tr ('Q', k), '-', 'color', [0.84 0.37 0], 'linewidth', 0.5);
  set (gca, 'yscale', 'log');
  xlabel ('years since 1960-01-01 (model years of 365 days)');
  ylabel ('Q (mm/d)');
  title ('River flow: smoothed 90% band, filtered (dashed), gauge (dots), truth');
  print (h, '-dpng', '-r90', f);
  close (h);
  files{end + 1} = f;

  % levels: one value per year end
  ty = 365 * (1:floor (t(end) / 365));
  k = arrayfun (@(x) find (t == x), ty);
  i = get ('level');
  f = fullfile (outdir, 'levels.png');
  h = figure ('visible', 'off');
  q = squeeze (r.smoothed.states.quantiles(i, :, k));
  errorbar (ty / 365, q(2, :), q(2, :) - q(1, :), q(3, :) - q(2, :), 'o');
  hold on;
  qf = squeeze (r.states.quantiles(i, :, k));
  plot (ty / 365 + 0.25, qf([1 3], :), 'v', 'color', [0.5 0.5 0.5], 'markersize', 3);
  sel = ob ('level');
  plot (obs.time(sel) / 365, obs.value(sel), 'k.', 'markersize', 10);
  plot (ty / 365, tr ('level', k), 'x', 'color', [0.84 0.37 0]);
  xlabel ('model year');
  ylabel ('level (m above the bank)');
  title ('Flood level: smoothed median, 90% band, filtered (v), readings (dots), truth (x)');
  print (h, '-dpng', '-r90', f);
  close (h);
  files{end + 1} = f;

  % the slow states, every 10th day
  k = 1:10:T;
  spec = {'population.png', 'G', 'settlement size G (relative)', true, ...
          'Settlement size: smoothed band, filtered (dashed), census (dots), truth'; ...
          'levee.png', 'H', 'levee height H (m)', false, ...
          'Levee height: smoothed band, filtered (dashed), surveys (dots), truth'};
  for s = 1:size (spec, 1)
    f = fullfile (outdir, spec{s, 1});
    i = get (spec{s, 2});
    h = figure ('visible', 'off');
    fan (yr(k), r, i, k, band, cs);
    hold on;
    sel = ob (spec{s, 2});
    plot (obs.time(sel) / 365, obs.value(sel), 'k.', 'markersize', 14);
    plot (yr(k), tr (spec{s, 2}, k), '-', 'color', [0.84 0.37 0]);
    if (spec{s, 4})
      set (gca, 'yscale', 'log');
    end
    xlabel ('model year');
    ylabel (spec{s, 3});
    title (spec{s, 5});
    print (h, '-dpng', '-r90', f);
    close (h);
    files{end + 1} = f;
  end

  % memory and the share it predicts
  f = fullfile (outdir, 'memory.png');
  i = get ('M');
  h = figure ('visible', 'off');
  subplot (2, 1, 1);
  fan (yr(k), r, i, k, band, cs);
  hold on;
  plot (yr(k), tr ('M', k), '-', 'color', [0.84 0.37 0]);
  ylabel ('memory M');
  title ('Flood memory M: smoothed band, filtered (dashed), truth');
  subplot (2, 1, 2);
  q = squeeze (r.smoothed.states.quantiles(i, :, k));
  share = q ./ (1 + q);                   % p = M / (1 + M) is monotone in M
  fill ([yr(k), fliplr(yr(k))], [share(1, :), fliplr(share(3, :))], band, 'edgecolor', 'none');
  hold on;
  plot (yr(k), share(2, :), '-', 'color', cs);
  sel = ob ('aware');
  plot (obs.time(sel) / 365, obs.value(sel) / n_ask, 'k.', 'markersize', 14);
  m = tr ('M', k);
  plot (yr(k), m ./ (1 + m), '-', 'color', [0.84 0.37 0]);
  xlabel ('model year');
  ylabel ('share aware');
  title (sprintf ('Awareness p = M/(1+M): band, questionnaire shares of %d (dots), truth', n_ask));
  print (h, '-dpng', '-r90', f);
  close (h);
  files{end + 1} = f;

  % the estimated parameters narrowing
  f = fullfile (outdir, 'params.png');
  h = figure ('visible', 'off');
  np = numel (r.param_names);
  for j = 1:np
    subplot (np, 1, j);
    q = squeeze (r.smoothed.params.quantiles(j, :, k));
    fill ([yr(k), fliplr(yr(k))], [q(1, :), fliplr(q(3, :))], band, 'edgecolor', 'none');
    hold on;
    plot (yr(k), q(2, :), '-', 'color', cs);
    qf = squeeze (r.params.quantiles(j, :, k));
    plot (yr(k), qf([1 3], :), '--', 'color', [0.5 0.5 0.5]);
    v = truth.params(strcmp (truth.param_names, r.param_names{j}));
    plot (yr(k([1 end])), [v v], '-', 'color', [0.84 0.37 0]);
    ylabel (r.param_names{j});
    if (j == 1)
      title ('Estimated parameters: smoothed median and 90% band, filtered band (dashed), truth');
    end
  end
  xlabel ('model year');
  print (h, '-dpng', '-r90', f);
  close (h);
  files{end + 1} = f;
end

function fan (x, r, i, k, band, cs)
  % the smoothed 90% band filled, its median, the filtered band dashed
  q = squeeze (r.smoothed.states.quantiles(i, :, k));
  fill ([x, fliplr(x)], [q(1, :), fliplr(q(3, :))], band, 'edgecolor', 'none');
  hold on;
  plot (x, q(2, :), '-', 'color', cs, 'linewidth', 1);
  qf = squeeze (r.states.quantiles(i, :, k));
  plot (x, qf([1 3], :), '--', 'color', [0.5 0.5 0.5], 'linewidth', 0.5);
end
