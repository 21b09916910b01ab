% The forecast probability integral transform of sluice.filter (res.pit)
% and its warning sluice:filter:miscalibrated. Reference: the exact
% one-step predictive distribution of the Kalman filter (Kalman 1960; the
% prediction-error decomposition, Harvey 1989, sec. 3.4), from
% tests/octave/kalman_rts.m: observation i of cycle k has the predictive
% N(H_i m_k|k-1, H_i P_k|k-1 H_i' + R_ii), and its PIT is
% Phi((y_i - H_i m_k|k-1) / sqrt(H_i P_k|k-1 H_i' + R_ii)). A calibrated
% forecast gives uniform PITs (Dawid 1984; Gneiting, Balabdaoui & Raftery
% 2007).

%!function u = ncdf (z)
%!  % the standard normal CDF through erfc (Abramowitz & Stegun 7.1.2, 26.2.29)
%!  u = 0.5 * erfc (-z / sqrt (2));
%!endfunction

%!function [u, mp, sp] = kalman_pit (A, Q, H, R, m0, P0, Y)
%!  % the Kalman filter's predictive PIT of every observation (rows of H
%!  % and Y), from the filtered moments of kalman_rts.m stepped once more
%!  [~, ~, mf, Pf] = kalman_rts (A, Q, H, R, m0, P0, Y);
%!  T = columns (Y); u = zeros (size (Y)); mp = u; sp = u;
%!  for k = 1:T
%!    if (k == 1)
%!      m = A * m0; P = A * P0 * A' + Q;
%!    else
%!      m = A * mf(:, k - 1); P = A * Pf(:, :, k - 1) * A' + Q;
%!    end
%!    mp(:, k) = H * m;
%!    sp(:, k) = sqrt (diag (H * P * H') + diag (R));
%!    u(:, k) = ncdf ((Y(:, k) - mp(:, k)) ./ sp(:, k));
%!  end
%!endfunction

%!function [id, msg, r] = run_quiet (varargin)
%!  % a filter run, its last sluice:filter:miscalibrated warning (id '' if none)
%!  lastwarn ('');
%!  s = warning ('off', 'all');
%!  warning ('on', 'sluice:filter:miscalibrated');
%!  unwind_protect
%!    r = sluice.filter (varargin{:});
%!    [msg, id] = lastwarn ();
%!  unwind_protect_cleanup
%!    warning (s);
%!  end_unwind_protect
%!  if (~strcmp (id, 'sluice:filter:miscalibrated'))
%!    id = ''; msg = '';
%!  end
%!endfunction

%!test
%! % the worked example of the model notes (random walk, Q = R = 1,
%! % x0 ~ N(0, 1), y = (1, 2, 0)): predictive variances 2 + 1, 5/3 + 1,
%! % 13/8 + 1 by hand (their product 21 is the one in the example's
%! % log-likelihood), so the first PIT is Phi(1/sqrt 3)
%! [u, mp, sp] = kalman_pit (1, 1, 1, 1, 0, 1, [1 2 0]);
%! assert (sp .^ 2, [3, 8/3, 21/8], 1e-12);
%! assert (u(1), ncdf (1 / sqrt (3)), 1e-15);
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, ...
%!               'value', [1; 2; 0], 'sigma', [1; 1; 1]);
%! % 1000 members: the exact weighted sum. The PIT is a weighted mean of
%! % values in [0, 1] of spread about 0.3: Monte Carlo error about
%! % 0.3 / sqrt (ESS) < 0.015 (ESS > 400 here); tolerance 0.05
%! r = sluice.filter (spec, pr, obs, 'members', 1000, 'seed', 11, 't0', 0, 'progress', false);
%! assert (size (r.pit), [3 1]);
%! assert (r.pit', u, 0.05);
%! % 20000 members: 1024 systematic picks, error sd at most 1/(2 sqrt 1024)
%! % = 0.016 more; tolerance 0.05 still over 3 of both together
%! r = sluice.filter (spec, pr, obs, 'members', 20000, 'seed', 11, 't0', 0, 'progress', false);
%! assert (r.pit', u, 0.05);

%!test
%! % a three-state rotation-and-decay model, two states observed per
%! % cycle, 25 cycles; the table lists c before a at odd cycles and has
%! % a missing value: res.pit follows the table's rows
%! [A, Q, H, R, Y] = rotation_decay_case ();
%! T = 25;
%! Y(2, 9) = NaN;
%! u = kalman_pit (A, Q, H, R, zeros (3, 1), eye (3), Y);
%! spec = sluice.model ('linear', 'A', A, 'Q', Q, 'states', {'a', 'b', 'c'});
%! pr = sluice.prior ('a', 'normal', [0 1], 'b', 'normal', [0 1], 'c', 'normal', [0 1]);
%! ord = repmat ([1; 2], 1, T); ord(:, 1:2:end) = repmat ([2; 1], 1, ceil (T / 2));
%! idx = ord + 2 * (0:T-1);   % table row -> element of Y(:)
%! names = {'a'; 'c'};
%! obs = struct ('time', kron ((1:T)', [1; 1]), 'variable', {names(ord(:))}, ...
%!               'value', Y(idx(:)), 'sigma', sqrt (diag (R))(ord(:)));
%! r = sluice.filter (spec, pr, obs, 'members', 1000, 'seed', 5, 't0', 0, 'progress', false);
%! ref = u(idx(:));
%! miss = isnan (obs.value);
%! assert (sum (miss), 1);
%! assert (isnan (r.pit(miss)));
%! % ESS dips to about N/20 after the most informative observations: the
%! % Monte Carlo error of a PIT is up to about 0.3 / sqrt (50) = 0.04;
%! % 4 of those for the largest of 49, and the mean error far smaller
%! d = abs (r.pit(~miss) - ref(~miss));
%! assert (max (d) < 0.16);
%! assert (mean (d) < 0.03);
%! % the same PITs for any thread count (20000 members: several threads
%! % and 1024 systematic picks)
%! r1 = sluice.filter (spec, pr, obs, 'members', 20000, 'seed', 5, 't0', 0, 'threads', 1, ...
%!                     'progress', false);
%! r2 = sluice.filter (spec, pr, obs, 'members', 20000, 'seed', 5, 't0', 0, 'threads', 2, ...
%!                     'progress', false);
%! assert (isequal (isnan (r1.pit), miss) && isequal (r1.pit(~miss), r2.pit(~miss)));
%! assert (mean (abs (r1.pit(~miss) - ref(~miss))) < 0.03);

%!shared spec, pr, T, obs
%! % a correctly specified twin: two independent AR(1) states
%! % x_k = 0.9 x_(k-1) + N(0, 0.5), observed with error sd 1 for 400 cycles
%! T = 400;
%! randn ('state', 21);
%! x = zeros (2, T + 1);
%! for k = 1:T
%!   x(:, k + 1) = 0.9 * x(:, k) + sqrt (0.5) * randn (2, 1);
%! end
%! Y = x(:, 2:end) + randn (2, T);
%! spec = sluice.model ('linear', 'A', 0.9 * eye (2), 'Q', 0.5 * eye (2), 'states', {'a', 'b'});
%! pr = sluice.prior ('a', 'normal', [0 1], 'b', 'normal', [0 1]);
%! obs = struct ('time', kron ((1:T)', [1; 1]), 'variable', {repmat({'a'; 'b'}, T, 1)}, ...
%!               'value', Y(:), 'sigma', ones (2 * T, 1));

%!test
%! % the correctly specified twin: 800 PITs uniform by Pearson's
%! % chi-square over 10 equal cells (critical value of chi-square with 9
%! % degrees of freedom at the 0.1% level, 27.88, Abramowitz & Stegun
%! % table 26.8), and no warning
%! [id, ~, r] = run_quiet (spec, pr, obs, 'members', 500, 'seed', 3, 't0', 0, 'progress', false);
%! assert (id, '');
%! assert (all (isfinite (r.pit)) && all (r.pit > 0 & r.pit < 1));
%! c = histc (r.pit, 0:0.1:1)(1:10);
%! stat = sum ((c - 80) .^ 2 / 80);
%! assert (stat < 27.88);
%! % and about 10% outside the central 90%: 80 +- 4 sd (sd sqrt(800 0.1 0.9) = 8.5)
%! assert (abs (sum (r.pit < 0.05 | r.pit > 0.95) - 80) < 34);
%! % the same twin through the weakly coupled particle filter, a and b
%! % its two components: calibrated too
%! specw = sluice.model ('linear', 'A', 0.9 * eye (2), 'Q', 0.5 * eye (2), ...
%!                       'states', {'a', 'b'}, 'components', {'ca', {'a'}, 'cb', {'b'}});
%! [id, ~, r] = run_quiet (specw, pr, obs, 'members', 500, 'seed', 3, 't0', 0, ...
%!                         'coupling', 'weak', 'progress', false);
%! assert (id, '');
%! assert (all (isfinite (r.pit)));
%! c = histc (r.pit, 0:0.1:1)(1:10);
%! assert (sum ((c - 80) .^ 2 / 80) < 27.88);

%!test
%! % an overconfident filter: the model of b has a hundredth of the
%! % truth's noise, so its forecasts of b are far too narrow; the warning
%! % names b, not a
%! bad = sluice.model ('linear', 'A', 0.9 * eye (2), 'Q', diag ([0.5 0.005]), ...
%!                     'states', {'a', 'b'});
%! [id, msg, r] = run_quiet (bad, pr, obs, 'members', 500, 'seed', 3, 't0', 0, 'progress', false);
%! assert (id, 'sluice:filter:miscalibrated');
%! assert (~isempty (strfind (msg, '''b''')));
%! assert (isempty (strfind (msg, '''a''')));
%! assert (~isempty (strfind (msg, 'too narrow to trust')));
%! assert (~isempty (strfind (msg, 'members')));
%! % the share of b's PITs outside the central 90% is far above 10%, a's not
%! pb = r.pit(2:2:end); pa = r.pit(1:2:end);
%! assert (mean (pb < 0.05 | pb > 0.95) > 0.3);
%! assert (mean (pa < 0.05 | pa > 0.95) < 0.2);

%!test
%! % a wrong fixed parameter (the decay of a 0.5 for a truth of 0.9) with
%! % a tiny model noise: the forecasts miss; a count family is held to its
%! % own bound (20% outside) and still caught
%! bad = sluice.model ('linear', 'A', diag ([0.5 0.9]), 'Q', diag ([0.01 0.5]), ...
%!                     'states', {'a', 'b'});
%! [id, msg] = run_quiet (bad, pr, obs, 'members', 300, 'seed', 4, 't0', 0, 'progress', false);
%! assert (id, 'sluice:filter:miscalibrated');
%! assert (~isempty (strfind (msg, '''a''')));

%!test
%! % few observations: no verdict below 5 PITs of a variable, whatever they are
%! bad = sluice.model ('linear', 'A', 0.9 * eye (2), 'Q', 1e-6 * eye (2), 'states', {'a', 'b'});
%! o4 = struct ('time', (1:4)', 'variable', {repmat({'a'}, 4, 1)}, 'value', [5; -6; 7; -8], ...
%!              'sigma', 0.01 * ones (4, 1));
%! [id, ~, r] = run_quiet (bad, pr, o4, 'members', 100, 'seed', 4, 't0', 0, 'progress', false);
%! assert (id, '');
%! assert (all (r.pit < 0.05 | r.pit > 0.95));
%! % 5 such: caught
%! o5 = struct ('time', (1:5)', 'variable', {repmat({'a'}, 5, 1)}, 'value', [5; -6; 7; -8; 9], ...
%!              'sigma', 0.01 * ones (5, 1));
%! id = run_quiet (bad, pr, o5, 'members', 100, 'seed', 4, 't0', 0, 'progress', false);
%! assert (id, 'sluice:filter:miscalibrated');

%!test
%! % the ensemble Kalman methods and wenkf do not compute it: NaN
%! o = struct ('time', (1:3)', 'variable', {{'a'; 'a'; 'a'}}, 'value', [0.1; 0.4; -0.2], ...
%!             'sigma', ones (3, 1));
%! r = sluice.filter (spec, pr, o, 'members', 50, 'seed', 1, 't0', 0, 'method', 'etkf', ...
%!                    'progress', false);
%! assert (size (r.pit), [3 1]);
%! assert (all (isnan (r.pit)));
%! r = sluice.filter (spec, pr, o, 'members', 50, 'seed', 1, 't0', 0, 'wenkf', true, 'state_noise', 0.5, ...
%!                    'progress', false);
%! assert (all (isnan (r.pit)));
%! % a run with output times only has no rows
%! r = sluice.filter (spec, pr, struct ('time', zeros (0, 1), 'variable', {cell(0, 1)}, ...
%!                    'value', zeros (0, 1), 'sigma', zeros (0, 1)), 'times', 1:3, ...
%!                    'members', 20, 'seed', 1, 't0', 0, 'progress', false);
%! assert (size (r.pit), [0 1]);

%!test
%! % the coupled model river_town, strongly coupled: the daily flows
%! % resample the whole state every day and thin the town's ensemble
%! % between its censuses, and the run ends with a narrow band on muS that
%! % misses the truth. Invented record: 30 years of rain, a truth with
%! % X1 = 380, a = 0.5, muS = 0.12; daily flows from year 6 (lognormal,
%! % sdlog 0.1), the flood level each year end (sd 0.15), a census of G
%! % every 2 years (lognormal, sdlog 0.05); the rain given to the filter
%! % off by a lognormal factor (sdlog 0.25), modelled as forcing noise.
%! % Measured (200 members): strong, muS 0.169 [0.163, 0.175] and 9 of 15
%! % censuses outside the forecast's 90% (PITs down to 3e-15); weak,
%! % muS 0.133 [0.102, 0.165] and 2 of 15
%! s = sluice.model ('river_town');
%! Y = 30; T = 365 * Y;
%! rand ('seed', 11); randn ('seed', 12);
%! P = -8 * log (rand (T, 1)) .* (rand (T, 1) < 0.45);   % rain on 45% of days
%! E = 2 + 1.5 * sin (2 * pi * (0:T-1)' / 365);
%! forcing = struct ('time', (0:T-1)', 'values', [P E], 'interp', 'previous');
%! p_true = s.defaults(:);
%! p_true(strcmp (s.params, 'X1')) = 380;
%! p_true(strcmp (s.params, 'a')) = 0.5;
%! p_true(strcmp (s.params, 'muS')) = 0.12;
%! X = sluice.simulate (s, [], p_true, 0:T, forcing);
%! ix = @(name) find (strcmp (s.states, name));
%! gauge = forcing;
%! gauge.values(:, 1) = P .* exp (0.25 * randn (T, 1) - 0.25^2 / 2);
%! tq = (365 * 6 + 1:T)'; q = X(ix ('Q'), tq + 1)' .* exp (0.1 * randn (numel (tq), 1));
%! ty = 365 * (1:Y)'; lv = X(ix ('level'), ty + 1)' + 0.15 * randn (Y, 1);
%! tc = 365 * (2:2:Y)'; G = X(ix ('G'), tc + 1)' .* exp (0.05 * randn (numel (tc), 1));
%! [t, o] = sort ([tq; ty; tc]);
%! v = [repmat({'Q'}, numel (tq), 1); repmat({'level'}, Y, 1); repmat({'G'}, numel (tc), 1)];
%! val = [q; lv; G];
%! sg = [0.1 * ones(numel (tq), 1); 0.15 * ones(Y, 1); 0.05 * ones(numel (tc), 1)];
%! fam = [repmat({'lognormal'}, numel (tq), 1); repmat({'gaussian'}, Y, 1); ...
%!        repmat({'lognormal'}, numel (tc), 1)];
%! obs = struct ('time', t, 'variable', {v(o)}, 'value', val(o), 'sigma', sg(o), ...
%!               'family', {fam(o)});
%! pr = sluice.prior ('X1', 'lognormal', [log(320) 0.3], 'a', 'lognormal', [log(0.4) 0.3], ...
%!                    'muS', 'lognormal', [log(0.215) 0.5]);
%! noise = struct ('kind', {{'multiplicative', 'none'}}, 'sd', [0.25 0], 'ar1', [0 0]);
%! sn = zeros (numel (s.states), 1); sn([ix('D'), ix('H')]) = 0.002;
%! args = {'t0', 0, 'forcing', gauge, 'forcing_noise', noise, 'state_noise', sn, ...
%!         'param_move', 'random_walk', 'param_step', 0.003, 'members', 200, 'seed', 2031, ...
%!         'progress', false};
%! [id, msg, r] = run_quiet (s, pr, obs, args{:});
%! assert (id, 'sluice:filter:miscalibrated');
%! assert (~isempty (strfind (msg, '''G''')));
%! assert (~isempty (strfind (msg, '''coupling'' ''weak''')));
%! i = strcmp (r.param_names, 'muS');
%! assert (~(r.params.quantiles(i, 1, end) < 0.12 && 0.12 < r.params.quantiles(i, end, end)));
%! % the daily flows' own PITs stay calibrated (about 10% outside)
%! u = r.pit(strcmp (obs.variable, 'Q'));
%! assert (abs (mean (u < 0.05 | u > 0.95) - 0.1) < 0.02);
%! % weakly coupled, the same record: calibrated, no warning
%! [id, ~, r] = run_quiet (s, pr, obs, args{:}, 'coupling', 'weak');
%! assert (id, '');
%! assert (r.params.quantiles(i, 1, end) < 0.12 && 0.12 < r.params.quantiles(i, end, end));
