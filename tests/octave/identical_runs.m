function [h, names] = identical_runs (name)
  % [h, names] = identical_runs (name): the MD5 digest of the outputs of
  % one fixed run of the filters or smoothers (tests/octave/
  % test_identical_runs.m compares it with the digest recorded from an
  % earlier build); names lists every case. The digest is taken over the
  % bytes of the chosen output arrays (as doubles, in the order listed),
  % so it changes with any bit of any of them, and with nothing else (new
  % fields of a result do not enter it). Every run is seeded and its
  % observations are fixed numbers, so it depends only on the code, the
  % compiler and the BLAS it runs with.
  names = {'pf', 'pf_lag', 'resample_move', 'liu_west', 'smc2', 'wenkf', ...
           'etkf_ensemble', 'etkf_observation', 'letkf', 'enkf', 'ensrf', 'eakf', ...
           'etkf_lag', 'smooth_genealogy', 'smooth_ffbsi', 'analysis', 'pmmh', 'esmda'};
  if (nargin < 1)
    h = '';
    return;
  end
  q = {'progress', false, 't0', 0};
  switch name
    case 'pf'
      [spec, pr, obs] = linear_case ();
      r = sluice.filter (spec, pr, obs, 'members', 500, 'seed', 3, q{:}, 'history', true);
      h = digest (r, {'states.mean', 'states.quantiles', 'forecast.mean', 'ess', ...
                      'log_evidence', 'log_evidence_steps', 'final.X', 'final.w', ...
                      'history.X', 'history.w', 'history.ancestors'});
    case 'pf_lag'
      [spec, pr, obs] = linear_case ();
      r = sluice.filter (spec, pr, obs, 'members', 400, 'seed', 4, q{:}, 'lag', 3);
      h = digest (r, {'states.mean', 'smoothed.states.mean', 'smoothed.states.quantiles', ...
                      'final.X', 'final.w'});
    case 'resample_move'
      [spec, pr, obs] = recession_case ();
      r = sluice.filter (spec, pr, obs, 'members', 300, 'seed', 5, q{:}, ...
                         'param_move', 'resample_move');
      h = digest (r, {'states.mean', 'params.mean', 'params.quantiles', 'move_accept', ...
                      'log_evidence', 'final.X', 'final.P', 'final.w'});
    case 'liu_west'
      [spec, pr, obs] = recession_case ();
      r = sluice.filter (spec, pr, obs, 'members', 300, 'seed', 6, q{:}, ...
                         'state_noise', 0.05, 'param_move', 'liu_west');
      h = digest (r, {'states.mean', 'params.mean', 'params.quantiles', 'log_evidence', ...
                      'final.X', 'final.P', 'final.w'});
    case 'smc2'
      [spec, pr, obs] = recession_case ();
      obs = row_subset (obs, 1:12);
      r = sluice.filter (spec, pr, obs, 'members', 40, 'inner_members', 20, 'seed', 7, ...
                         q{:}, 'state_noise', 0.05, 'param_move', 'smc2', 'threads', 1);
      h = digest (r, {'states.mean', 'params.mean', 'params.quantiles', 'log_evidence', ...
                      'final.X', 'final.P', 'final.w'});
    case 'wenkf'
      [spec, pr, obs] = linear_case ();
      r = sluice.filter (spec, pr, obs, 'method', 'wenkf', 'members', 300, 'seed', 8, ...
                         q{:}, 'state_noise', 0.3);
      h = digest (r, {'states.mean', 'states.quantiles', 'ess', 'log_evidence', ...
                      'final.X', 'final.w'});
    case {'etkf_ensemble', 'etkf_observation', 'letkf', 'enkf', 'ensrf', 'eakf'}
      [spec, pr, obs] = ring_case ();
      o = {'members', 20, 'seed', 9, q{:}, 'inflation', 1.02};
      loc = {'localization', struct('geometry', 'ring', 'period', 12, 'radius', 3)};
      switch name
        case 'etkf_ensemble'     % m = 12 observations >= N = 10 members
          r = sluice.filter (spec, pr, obs, 'method', 'etkf', o{:}, 'members', 10);
        case 'etkf_observation'  % m = 12 < N = 20
          r = sluice.filter (spec, pr, obs, 'method', 'etkf', o{:});
        case 'letkf'
          r = sluice.filter (spec, pr, obs, 'method', 'letkf', o{:}, loc{:});
        case 'enkf'
          r = sluice.filter (spec, pr, obs, 'method', 'enkf', o{:}, loc{:}, 'rtps', 0.3);
        otherwise
          r = sluice.filter (spec, pr, obs, 'method', name, o{:}, loc{:}, 'rtpp', 0.2);
      end
      h = digest (r, {'states.mean', 'states.quantiles', 'forecast.mean', 'final.X'});
    case 'etkf_lag'
      [spec, pr, obs] = linear_case ();
      r = sluice.filter (spec, pr, obs, 'method', 'etkf', 'members', 30, 'seed', 10, ...
                         q{:}, 'lag', 4, 'inflation', 1.05);
      h = digest (r, {'states.mean', 'smoothed.states.mean', 'smoothed.states.quantiles', ...
                      'final.X'});
    case 'smooth_genealogy'
      [spec, pr, obs] = linear_case ();
      r = sluice.filter (spec, pr, obs, 'members', 300, 'seed', 11, q{:}, 'history', true);
      s = sluice.smooth (r);
      h = digest (s, {'smoothed.trajectories', 'smoothed.states.mean', ...
                      'smoothed.states.quantiles', 'smoothed.distinct'});
    case 'smooth_ffbsi'
      [spec, pr, obs] = linear_case ();
      r = sluice.filter (spec, pr, obs, 'members', 200, 'seed', 12, q{:}, 'history', true);
      s = sluice.smooth (r, 'method', 'ffbsi', 'model', spec, 'trajectories', 40, ...
                         'threads', 1);
      h = digest (s, {'smoothed.trajectories', 'smoothed.indices', 'smoothed.states.mean', ...
                      'smoothed.states.quantiles'});
    case 'analysis'
      % single analyses: the ETKF with a full R (both forms), the stochastic EnKF
      n = 5; N = 12;
      X = sin ((1:n)' * (1:N) / 3) + (1:n)';
      H = [1 0 0 0 0; 0 0 1 0 0.5; 0 1 0 0 0];
      R = [0.5 0.1 0; 0.1 0.4 0.05; 0 0.05 0.6]; y = [1.2; 2.9; 2.2];
      a = sluice.enkf (X, H * X, y, R, 'method', 'etkf');
      b = sluice.enkf (X, H * X, y, diag (R), 'method', 'enkf', 'seed', 9);
      c = sluice.enkf (X(:, 1:2), H * X(:, 1:2), y, diag (R), 'method', 'etkf');
      h = digest (struct ('a', a, 'b', b, 'c', c), {'a', 'b', 'c'});
    case 'pmmh'
      % one free parameter per transform (logit, log, neglog, none), so
      % that every prior density and transform of the core is on the path
      [spec, pr, obs] = pmmh_case ();
      w = warning ('off', 'sluice:pmmh:notconverged');   % a short run, on purpose
      warning ('off', 'sluice:pmmh:lowess');
      r = sluice.pmmh (spec, pr, obs, 'members', 30, 'chains', 2, 'iterations', 60, ...
                       'burnin', 20, 'seed', 13, 'parallel', false, ...
                       'filter', struct ('t0', 0, 'state_noise', 0.3));
      warning (w);
      h = digest (r, {'samples', 'loglik', 'logpost', 'acceptance', 'proposal'});
    case 'esmda'
      G = [1 0.5 0.2 0.1; 0.2 1 0.3 0.5; 1 1 1 1; 0.3 0.1 0.9 0.4; 0.5 0.5 0.1 1];
      pr = sluice.prior ('a', 'uniform', [-1 2], 'g', 'lognormal', [0 0.5], ...
                         'v', 'truncnormal', [0 1 -Inf 1.5], 'bounds', [-Inf 1.5], ...
                         'w', 'normal', [0 1]);
      [post, info] = sluice.esmda (@(P) G * P, pr, [0.9; 1.2; 2.3; 0.7; 1.1], 0.1, ...
                                   'members', 60, 'seed', 14, 'threads', 1);
      h = digest (struct ('post', post, 'info', info), {'post.P', 'post.Y', 'info.misfit'});
    otherwise
      error ('identical_runs: unknown case %s', name);
  end
end

function h = digest (s, paths)
  bytes = uint8 ([]);
  for k = 1:numel (paths)
    v = s;
    parts = strsplit (paths{k}, '.');
    for j = 1:numel (parts)
      v = v.(parts{j});
    end
    b = typecast (double (v(:)), 'uint8');
    bytes = [bytes; b(:)];
  end
  h = hash ('md5', char (bytes'));
end

function [spec, pr, obs] = linear_case ()
  % two states, both observed at t = 1..15 (fixed invented values)
  spec = sluice.model ('linear', 'A', [0.9 0.2; -0.1 0.8], 'Q', diag ([0.1 0.05]), ...
                       'states', {'u', 'v'});
  pr = sluice.prior ('u', 'normal', [0 1], 'v', 'normal', [0.5 0.7]);
  t = kron ((1:15)', [1; 1]);
  obs = struct ('time', t, 'variable', {repmat({'u'; 'v'}, 15, 1)}, ...
                'value', sin (t / 3) + 0.1 * cos (7 * (1:30)'), 'sigma', 0.5 * ones (30, 1));
end

function [spec, pr, obs] = recession_case ()
  % x_t = a x_(t-1) from x_0 = 5, observed at t = 1..30
  T = 30;
  spec = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, 'params', {'a'}, ...
                       'x0', 5);
  pr = sluice.prior ('a', 'normal', [0.9 0.1]);
  y = 5 * 0.95 .^ (1:T)' + 0.3 * sin (5 * (1:T)');
  obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, 'value', y, ...
                'sigma', 0.3 * ones (T, 1));
end

function [spec, pr, obs] = pmmh_case ()
  % x_t = a x_(t-1) observed at t = 1..12; g, v and w do not enter the model
  T = 12;
  spec = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, ...
                       'params', {'a', 'g', 'v', 'w'}, 'x0', 2);
  pr = sluice.prior ('a', 'uniform', [-1 1], 'g', 'lognormal', [0.3 1], ...
                     'v', 'truncnormal', [0 1 -Inf 0.5], 'bounds', [-Inf 1], ...
                     'w', 'normal', [0.2 1.5]);
  y = 2 * 0.8 .^ (1:T)' + 0.3 * sin (5 * (1:T)');
  obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, 'value', y, ...
                'sigma', 0.4 * ones (T, 1));
end

function [spec, pr, obs] = ring_case ()
  % Lorenz-96 on a ring of 12, every state observed every 0.05 for 20
  % cycles; the observations a fixed smooth pattern
  n = 12; T = 20;
  spec = sluice.model ('lorenz96', 'n', n);
  args = {};
  for i = 1:n
    args = [args, {spec.states{i}, 'normal', [8 + sin(i), 2]}];
  end
  pr = sluice.prior (args{:});
  [i, k] = ndgrid (1:n, 1:T);
  t = 0.05 * k;
  obs = struct ('time', t(:), 'variable', {spec.states(i(:))'}, ...
                'value', 8 + 3 * sin (i(:) / 2 + k(:) / 4), 'sigma', ones (n * T, 1));
end

function obs = row_subset (obs, rows)
  f = fieldnames (obs);
  for k = 1:numel (f)
    obs.(f{k}) = obs.(f{k})(rows);
  end
end
