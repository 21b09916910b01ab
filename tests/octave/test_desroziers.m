% Innovation consistency (Desroziers et al. 2005): for a filter that weighs
% forecast and observations correctly, E[d_oa d_ob] = R and
% E[d_ob d_ob] = HBH' + R, with d_ob = y - H x_forecast and d_oa = y - H x_a.
% A linear-Gaussian twin with known R; the forecast variance B of the exact
% Kalman filter's steady state (textbook Riccati iteration, written here).

%!test
%! randn ('state', 1);
%! T = 1500; a = 0.9; q = 0.1; R = 0.25;
%! x = zeros (1, T); xp = 0;
%! for k = 1:T
%!   xp = a * xp + sqrt (q) * randn ();
%!   x(k) = xp;
%! end
%! y = x + sqrt (R) * randn (1, T);
%! Pf = q;
%! for k = 1:200
%!   Pa = Pf * R / (Pf + R);
%!   Pf = a^2 * Pa + q;
%! end
%! spec = sluice.model ('linear', 'A', a, 'Q', q, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', (1:T)', 'variable', {repmat({'x'}, T, 1)}, 'value', y', ...
%!               'sigma', sqrt (R) * ones (T, 1));
%! for m = {'pf', 'etkf'}
%!   r = sluice.filter (spec, pr, obs, 'members', 1000, 'seed', 3, 't0', 0, ...
%!                      'method', m{1}, 'progress', false);
%!   dob = y - r.forecast.mean;
%!   doa = y - r.states.mean;
%!   c = doa(51:end) .* dob(51:end);    % after a short spin-up
%!   % the innovations of a correct filter are white: standard errors from
%!   % the sample; 4 of them
%!   assert (abs (mean (c) - R) < 4 * std (c) / sqrt (numel (c)));
%!   d2 = dob(51:end) .^ 2;
%!   assert (abs (mean (d2) - (Pf + R)) < 4 * std (d2) / sqrt (numel (d2)));
%! end
