% demo_user_model - a model written in C by its user, compiled with
% sluice.build_model and used in a particle filter like a built-in model.
%
% The model is reservoir.c in this folder: a linear reservoir with a sill,
% storage S fed by rain and drained at the rate k above the sill s0, and
% Q the mean outflow of each day. It stands for the small upland catchment
% of Quillmere Brook above the weir at Farthing Mill (an invented brook and
% an invented mill; every number below is made up inside this script).
%
% The demo makes up 150 days of rain, runs the model with a "true" outlet
% rate k = 0.18 per day to get the true storage and outflow, reads the
% outflow at the weir with an error of 10% plus 0.2 mm/day (some days
% unread), and gives the filter only the readings and the rain gauge's
% record, which is itself 15% off from day to day. The filter estimates
% the storage, which nobody measures, together with k, starting from a
% guess of half the true value that may be off by a factor of three
% either way, and prints how the estimate of k closes in on the truth.
function demo_user_model ()
  here = fileparts (mfilename ('fullpath'));
  root = fileparts (fileparts (here));
  if (isempty (which ('sluice.filter')))
    addpath (fullfile (root, 'm'));
  end

  % --- compile the user's model (only when reservoir.c changed) ---------
  t_build = tic ();
  [spec, rebuilt] = sluice.build_model (fullfile (here, 'reservoir.c'), ...
                                        'outdir', fullfile (root, 'out', 'user_model'));
  if (rebuilt)
    printf ('compiled reservoir.c in %.1f s\n', toc (t_build));
  else
    printf ('reservoir.c is up to date\n');
  end
  printf ('model: %s\n  states %s; parameters %s; forcing %s; step %g day, integrator %s\n\n', ...
          spec.summary, strjoin (spec.states, ', '), strjoin (spec.params, ', '), ...
          strjoin (spec.forcings, ', '), spec.dt, spec.integrator);

  % --- the invented truth -------------------------------------------------
  days = 150;
  rand ('state', 2031);
  randn ('state', 2031);
  wet = false (days + 1, 1);
  for d = 2:days + 1
    % wet spells: a wet day follows a wet day with probability 0.6,
    % a dry day with probability 0.25
    wet(d) = rand () < 0.25 + 0.35 * wet(d - 1);
  end
  rain = wet .* (-7 * log (rand (days + 1, 1)));      % mm/day, mean 7 on wet days
  t = (0:days)';
  k_true = 0.18;
  s0 = 5;                                              % the sill, known
  truth = sluice.simulate (spec, [12; 0], [k_true; s0], t', ...
                           struct ('time', t, 'values', rain, 'interp', 'previous'));
  S_true = truth(1, :)';
  Q_true = truth(2, :)';

  % --- what the analyst has: gauge readings and a rain record -------------
  sigma = 0.1 * Q_true(2:end) + 0.2;                   % mm/day
  value = Q_true(2:end) + sigma .* randn (days, 1);
  value(rand (days, 1) < 0.1) = NaN;                   % days the weir was not read
  obs = struct ('time', t(2:end), 'variable', {repmat({'Q'}, days, 1)}, ...
                'value', value, 'sigma', sigma);
  rain_gauge = rain .* exp (0.15 * randn (days + 1, 1));

  % --- the filter: storage and outlet rate together -------------------------
  prior = sluice.prior ('S', 'uniform', [0 40], 'k', 'lognormal', [log(0.09) 0.7]);
  t_run = tic ();
  r = sluice.filter (spec, prior, obs, 'members', 4000, 'seed', 17, 't0', 0, ...
                     'forcing', struct ('time', t, 'values', rain_gauge, 'interp', 'previous'), ...
                     'forcing_noise', struct ('kind', 'multiplicative', 'sd', 0.15), ...
                     'param_move', 'liu_west', 'progress', false);
  elapsed = toc (t_run);

  % --- what it found --------------------------------------------------------
  iS = find (strcmp (r.state_names, 'S'));
  iQ = find (strcmp (r.state_names, 'Q'));
  ik = find (strcmp (r.param_names, 'k'));
  printf ('Quillmere Brook at Farthing Mill: %d days, %d gauge readings (%d days unread)\n', ...
          days, sum (~isnan (value)), sum (isnan (value)));
  printf ('  day   Q read   Q true   Q filt    S true   S filt [90%% band]     k filt [90%% band]      ESS\n');
  for d = [5 15 30 60 90 120 150]
    c = find (r.times == d);
    qS = squeeze (r.states.quantiles(iS, :, c));
    qk = squeeze (r.params.quantiles(ik, :, c));
    printf ('  %3d   %6.2f   %6.2f   %6.2f    %6.2f   %6.2f [%5.2f, %5.2f]   %6.3f [%5.3f, %5.3f]   %5.0f\n', ...
            d, value(d), Q_true(d + 1), r.states.mean(iQ, c), S_true(d + 1), ...
            r.states.mean(iS, c), qS(1), qS(3), r.params.mean(ik, c), qk(1), qk(3), r.ess(c));
  end
  qk = squeeze (r.params.quantiles(ik, :, end));
  late = r.times > 50;
  rmse = sqrt (mean ((r.states.mean(iS, late)' - S_true([false; late(:)])).^2));
  printf ('\n  outlet rate k: truth %.3f /day, estimate %.3f /day, 90%% band [%.3f, %.3f]\n', ...
          k_true, r.params.mean(ik, end), qk(1), qk(3));
  printf ('  storage S (never measured): RMSE of the filtered mean after day 50 %.2f mm\n', rmse);
  printf ('  filter: %d members, %d cycles, resampled %d times, %.2f s\n', ...
          r.members, numel (r.times), sum (r.resampled), elapsed);
end
