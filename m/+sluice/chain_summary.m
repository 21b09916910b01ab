% -*- texinfo -*-
% @deftypefn  {} {@var{s} =} sluice.chain_summary (@var{samples})
% @deftypefnx {} {@var{s} =} sluice.chain_summary (@var{samples}, @var{name}, @var{value}, @dots{})
% Summaries and convergence diagnostics of Markov chain Monte Carlo draws.
%
% @var{samples} is an iterations x p x chains array (real double or
% single, finite, at least 4 iterations): column @var{k} of page @var{c}
% holds chain @var{c}'s draws of quantity @var{k}. A single chain is an
% iterations x p matrix.
%
% For each quantity the result @var{s} has, pooled over all chains:
% @code{mean}, @code{sd} (p x 1), @code{quantiles} (p x nq, Octave's
% @code{quantile} at @code{quantile_levels}), and the diagnostics
% @table @code
% @item rhat
% the split potential scale reduction factor (Gelman et al., Bayesian Data
% Analysis, 3rd ed., 2013, section 11.4). Each chain is cut into its first
% and last floor(n/2) iterations (the middle draw of an odd n is left
% out), giving m = 2 x chains sequences of length n'. With B the
% between-sequence and W the mean within-sequence variance,
% var+ = (n' - 1)/n' W + B/n' and rhat = sqrt (var+ / W). Values near 1
% say the sequences agree; above 1.1 they have not mixed (a chain that
% drifts also shows, as its two halves differ).
% @item ess
% the effective sample size by the estimator of the same book's section
% 11.5, on the split sequences: the autocorrelation at lag t is
% rho_t = 1 - V_t / (2 var+), with V_t the mean squared difference of
% draws t apart within the sequences, and
% ess = m n' / (1 + 2 (rho_1 + ... + rho_T)), T the first odd lag with
% rho_(T+1) + rho_(T+2) < 0 (the sum of autocorrelations is cut where
% adjacent pairs turn negative, as in Geyer's initial positive sequence).
% Sums of squared differences are formed with the FFT.
% @item ess_bulk
% the bulk effective sample size (Vehtari, Gelman, Simpson, Carpenter &
% Buerkner 2021, Bayesian Analysis 16, 667-718): the same estimator on
% rank-normalised draws. The pooled draws of all chains are ranked
% (ties get their average rank r), replaced by the normal quantiles
% z = Phi^-1 ((r - 3/8) / (S + 1/4)), S the number of draws, and split
% as above. It does not change under a monotone transform of the
% quantity and stays meaningful for heavy tails.
% @item mcse
% the Monte Carlo standard error of the mean, sd / sqrt (ess).
% @end table
% A quantity whose draws are all equal has @code{rhat}, @code{ess} and
% @code{ess_bulk} NaN. The fields @code{names} (p x 1 cellstr), @code{iterations},
% @code{chains} and @code{draws} (iterations x chains) describe the input.
%
% Options (name, value pairs or one struct): @code{names} (a cellstr of p
% names; default @code{theta1}, @code{theta2}, @dots{}), @code{quantiles}
% (levels in [0, 1], default [0.025 0.25 0.5 0.75 0.975]).
%
% Errors: @code{sluice:chain_summary:badsamples} (wrong class, complex,
% sparse, more than 3 dimensions, empty, NaN or Inf),
% @code{sluice:chain_summary:tooshort} (fewer than 4 iterations),
% @code{sluice:chain_summary:badoption}.
%
% This function was called @code{sluice.mcmc_summary}; that name still
% works for one release, with a warning.
% @seealso{sluice.pmmh}
% @end deftypefn
function s = chain_summary (samples, varargin)
  if (nargin < 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (~(isa (samples, 'double') || isa (samples, 'single')) || ~isreal (samples) || ...
      issparse (samples) || ndims (samples) > 3 || isempty (samples))
    error ('sluice:chain_summary:badsamples', ...
           'argument 1 (samples): expected a non-empty real double iterations x p x chains array, got %s', ...
           sluice.internal.describe (samples));
  end
  if (any (~isfinite (samples(:))))
    error ('sluice:chain_summary:badsamples', ...
           'argument 1 (samples): %d draw(s) are NaN or Inf', sum (~isfinite (samples(:))));
  end
  samples = double (samples);
  [n, p, m] = size (samples);
  if (n < 4)
    error ('sluice:chain_summary:tooshort', ...
           'argument 1 (samples): at least 4 iterations are needed (split chains of 2), got %d', n);
  end
  opts = parse_options (varargin, p);

  pooled = reshape (permute (samples, [1 3 2]), n * m, p);
  s = struct ();
  s.names = opts.names;
  s.mean = mean (pooled, 1)';
  s.sd = std (pooled, 0, 1)';
  s.quantile_levels = opts.quantiles;
  if (isempty (opts.quantiles))
    s.quantiles = zeros (p, 0);
  else
    % levels as a column: with one quantity (pooled a column) Octave's
    % quantile would otherwise return them as a row
    s.quantiles = reshape (quantile (pooled, opts.quantiles(:), 1), numel (opts.quantiles), p)';
  end
  s.rhat = nan (p, 1);
  s.ess = nan (p, 1);
  s.ess_bulk = nan (p, 1);
  h = floor (n / 2);
  for k = 1:p
    x = reshape (samples(:, k, :), n, m);
    seqs = [x(1:h, :), x(n-h+1:n, :)];           % h x 2m split sequences
    [s.rhat(k), s.ess(k)] = split_diagnostics (seqs);
    if (~isnan (s.rhat(k)))
      zr = reshape (rank_normal (x(:)), n, m);
      [~, s.ess_bulk(k)] = split_diagnostics ([zr(1:h, :), zr(n-h+1:n, :)]);
    end
  end
  s.mcse = s.sd ./ sqrt (s.ess);
  s.iterations = n;
  s.chains = m;
  s.draws = n * m;
end

function [rhat, ess] = split_diagnostics (x)
  % x: n x m, one split sequence per column (BDA3 sections 11.4 and 11.5)
  [n, m] = size (x);
  mu = mean (x, 1);
  B = n * var (mu, 0);                          % between sequences
  W = mean (var (x, 0, 1));                     % within sequences
  vplus = (n - 1) / n * W + B / n;
  rhat = sqrt (vplus / W);
  if (~(vplus > 0))
    rhat = NaN;
    ess = NaN;
    return;
  end
  % V_t for t = 1 .. n-1: mean over sequences of the squared differences
  % of draws t apart. With the centred columns c,
  %   sum_{i=t+1}^{n} (c_i - c_{i-t})^2 = S(t+1..n) + S(1..n-t) - 2 A_t,
  % S the sums of squares, A_t = sum_i c_i c_{i+t} from the FFT.
  c = x - mu;
  L = 2 ^ nextpow2 (2 * n);
  F = fft (c, L, 1);
  A = real (ifft (F .* conj (F), [], 1));
  A = A(2:n, :);                                % lags 1 .. n-1
  cs = cumsum (c .^ 2, 1);
  t = (1:n-1)';
  D = (cs(n, :) - cs(t, :)) + cs(n - t, :) - 2 * A;
  V = sum (D, 2) ./ (m * (n - t));
  rho = 1 - V / (2 * vplus);
  % T: the first odd lag with rho(T+1) + rho(T+2) < 0
  T = numel (rho);
  for j = 1:2:numel (rho) - 2
    if (rho(j + 1) + rho(j + 2) < 0)
      T = j;
      break;
    end
  end
  ess = m * n / (1 + 2 * sum (rho(1:T)));
end

function z = rank_normal (v)
  % average ranks (ties share theirs), then the normal quantile of
  % (r - 3/8) / (S + 1/4): Phi^-1 (u) = -sqrt (2) erfcinv (2 u)
  [~, ~, g] = unique (v);
  cnt = accumarray (g(:), 1);
  top = cumsum (cnt);
  r = top(g) - (cnt(g) - 1) / 2;
  S = numel (v);
  z = -sqrt (2) * erfcinv (2 * (r - 3/8) / (S + 1/4));
end

function opts = parse_options (args, p)
  opts = struct ('names', {{}}, 'quantiles', [0.025 0.25 0.5 0.75 0.975]);
  opts = sluice.internal.name_value (opts, args, 'chain_summary');
  if (isempty (opts.names))
    opts.names = arrayfun (@(k) sprintf ('theta%d', k), (1:p)', 'UniformOutput', false);
  elseif (~iscellstr (opts.names) || numel (opts.names) ~= p)
    error ('sluice:chain_summary:badoption', ...
           'names must be a cellstr of %d names (one per column of samples)', p);
  end
  opts.names = opts.names(:);
  q = opts.quantiles;
  if (~isa (q, 'double') || ~isreal (q) || issparse (q) || (~isempty (q) && ~isvector (q)) || ...
      any (~(q(:) >= 0 & q(:) <= 1)))
    error ('sluice:chain_summary:badoption', 'quantiles must be a vector of levels in [0, 1]');
  end
  opts.quantiles = q(:)';
end

%!test
%! % pooled moments and quantiles are those of all draws together
%! randn ('state', 3);
%! x = randn (50, 2, 3) + [1 -2];
%! s = sluice.chain_summary (x, 'names', {'a', 'b'}, 'quantiles', [0.1 0.5]);
%! y = reshape (permute (x, [1 3 2]), 150, 2);
%! assert (s.mean, mean (y)', 1e-14);
%! assert (s.sd, std (y)', 1e-14);
%! assert (s.quantiles, quantile (y, [0.1 0.5])', 1e-14);
%! assert (s.names, {'a'; 'b'});
%! assert ([s.iterations s.chains s.draws], [50 3 150]);
%! assert (s.mcse, s.sd ./ sqrt (s.ess), 1e-14);
%! % one quantity: still p x nq (1 x nq), against Octave's quantile
%! s1 = sluice.chain_summary (x(:, 2, :), 'quantiles', [0.1 0.5 0.9]);
%! assert (size (s1.quantiles), [1 3]);
%! assert (s1.quantiles, quantile (y(:, 2), [0.1; 0.5; 0.9])', 1e-14);

%!test
%! % split R-hat and the ESS against the formulas of Gelman et al., BDA3
%! % sections 11.4-11.5, written out here term by term with loops (no FFT)
%! randn ('state', 11);
%! x = cumsum (randn (41, 1, 3), 1) * 0.3 + randn (41, 1, 3);
%! s = sluice.chain_summary (x);
%! h = 20;                                   % n = 41: the middle draw is left out
%! seq = [];
%! for c = 1:3
%!   seq = [seq, x(1:h, 1, c), x(22:41, 1, c)];
%! end
%! m = 6; n = h;
%! mj = mean (seq); mall = mean (mj);
%! B = n / (m - 1) * sum ((mj - mall) .^ 2);
%! W = 0;
%! for j = 1:m
%!   W = W + sum ((seq(:, j) - mj(j)) .^ 2) / (n - 1) / m;
%! end
%! vp = (n - 1) / n * W + B / n;
%! assert (s.rhat, sqrt (vp / W), 1e-12);
%! rho = zeros (n - 1, 1);
%! for t = 1:n-1
%!   V = 0;
%!   for j = 1:m
%!     for i = t+1:n
%!       V = V + (seq(i, j) - seq(i - t, j)) ^ 2;
%!     end
%!   end
%!   rho(t) = 1 - V / (m * (n - t)) / (2 * vp);
%! end
%! T = n - 1;
%! for j = 1:2:n-3
%!   if (rho(j + 1) + rho(j + 2) < 0)
%!     T = j; break;
%!   end
%! end
%! assert (s.ess, m * n / (1 + 2 * sum (rho(1:T))), 1e-9);

%!test
%! % independent normal draws: R-hat near 1 and ESS near the number of
%! % draws. For independent sequences R-hat^2 - 1 is about
%! % (chi2_(m-1)/(m-1) - 1)/n' (BDA3 11.4), standard deviation ~ 0.001
%! % here, so 0.01 is a wide bound. Each lag autocorrelation has standard
%! % error about 1/sqrt(draws) = 0.011 (Bartlett's formula, from memory);
%! % over repeated runs of 2000 draws the ratio ESS/draws had sd 0.09
%! % (measured here), ~0.045 at 8000 draws: 15% is over 3 sd.
%! randn ('state', 42);
%! x = randn (2000, 3, 4);
%! s = sluice.chain_summary (x);
%! assert (all (abs (s.rhat - 1) < 0.01));
%! assert (all (abs (s.ess / 8000 - 1) < 0.15));

%!test
%! % AR(1) chains x_t = phi x_(t-1) + e_t, started in the stationary law:
%! % autocorrelations phi^t sum to the integrated autocorrelation time
%! % (1 + phi)/(1 - phi) (Geyer 1992, Statistical Science 7, 473-483), so
%! % ESS = draws (1 - phi)/(1 + phi). The estimate of that time has relative
%! % standard error about sqrt (2 (2M + 1) / draws) for a window of M lags
%! % (Sokal's formula, from memory): ~3% here for M ~ 40; tolerance 15%.
%! randn ('state', 5);
%! n = 20000; m = 4;
%! for phi = [0.5 0.8]
%!   e = randn (n, 1, m);
%!   x0 = randn (1, 1, m) / sqrt (1 - phi ^ 2);
%!   x = zeros (n, 1, m);
%!   for c = 1:m
%!     x(:, 1, c) = filter (1, [1 -phi], e(:, 1, c), phi * x0(c));
%!   end
%!   s = sluice.chain_summary (x);
%!   expect = n * m * (1 - phi) / (1 + phi);
%!   assert (abs (s.ess / expect - 1) < 0.15);
%!   assert (abs (s.rhat - 1) < 0.02);
%! end

%!test
%! % chains centred apart: one of 4 chains shifted by 2 sd. Its two split
%! % halves have mean 2, the other six 0: B/n' ~ 6/7 and W ~ 1, so
%! % R-hat ~ sqrt (1 + 6/7) = 1.36 (BDA3 11.4), well above 1.1
%! randn ('state', 8);
%! x = randn (500, 1, 4);
%! x(:, 1, 4) = x(:, 1, 4) + 2;
%! s = sluice.chain_summary (x);
%! assert (s.rhat > 1.25);
%! % two chains far apart
%! y = cat (3, randn (500, 1), 5 + randn (500, 1));
%! s = sluice.chain_summary (y);
%! assert (s.rhat > 2);

%!test
%! % a single chain that drifts: its two halves differ, split R-hat sees it
%! randn ('state', 9);
%! x = linspace (0, 3, 400)' + 0.5 * randn (400, 1);
%! s = sluice.chain_summary (x);
%! assert (s.rhat > 1.1);
%! assert (s.chains, 1);

%!test
%! % constant draws: no variance, R-hat and ESS are NaN; single precision
%! % is accepted; no quantiles when none are asked for
%! s = sluice.chain_summary ([ones(10, 1), (1:10)'], 'quantiles', []);
%! assert (isnan (s.rhat(1)) && isnan (s.ess(1)));
%! assert (isfinite (s.rhat(2)));
%! assert (size (s.quantiles), [2 0]);
%! s = sluice.chain_summary (single (randn (20, 2)));
%! assert (class (s.mean), 'double');

%!test
%! % bulk ESS (Vehtari et al. 2021, Bayesian Analysis 16, 667-718): the
%! % rank normalisation written out here (ranks by sorting, ties averaged,
%! % norminv of (r - 3/8)/(S + 1/4) from Octave's statistics package), then
%! % the split ESS of this file's own estimator
%! pkg load statistics
%! randn ('state', 21);
%! x = cumsum (randn (60, 1, 3), 1) * 0.2 + randn (60, 1, 3);
%! x(5, 1, 2) = x(7, 1, 1);                       % one tie
%! s = sluice.chain_summary (x);
%! v = x(:); S = numel (v);
%! [~, o] = sort (v); r0 = zeros (S, 1); r0(o) = 1:S; r = r0;
%! for j = 1:S
%!   t = v == v(j); r(j) = mean (r0(t));
%! end
%! z = reshape (norminv ((r - 3/8) / (S + 1/4)), 60, 1, 3);
%! sz = sluice.chain_summary (z);
%! assert (s.ess_bulk, sz.ess, 1e-9);
%! % a monotone transform leaves it unchanged
%! se = sluice.chain_summary (exp (x));
%! assert (se.ess_bulk, s.ess_bulk, 1e-9);
%! % independent normal draws: close to the plain ESS (15%, as above)
%! randn ('state', 42);
%! s = sluice.chain_summary (randn (2000, 2, 4));
%! assert (all (abs (s.ess_bulk / 8000 - 1) < 0.15));

%!error <Invalid call> sluice.chain_summary ()
%!error id=sluice:chain_summary:badsamples sluice.chain_summary ([])
%!error id=sluice:chain_summary:badsamples sluice.chain_summary (int32 (ones (10, 1)))
%!error id=sluice:chain_summary:badsamples sluice.chain_summary (true (10, 1))
%!error id=sluice:chain_summary:badsamples sluice.chain_summary (ones (10, 1) + 1i)
%!error id=sluice:chain_summary:badsamples sluice.chain_summary (sparse (ones (10, 1)))
%!error id=sluice:chain_summary:badsamples sluice.chain_summary ({1, 2, 3, 4})
%!error id=sluice:chain_summary:badsamples sluice.chain_summary (struct ('x', 1))
%!error id=sluice:chain_summary:badsamples sluice.chain_summary (ones (10, 1, 2, 2))
%!error id=sluice:chain_summary:badsamples sluice.chain_summary ([1; 2; NaN; 4; 5])
%!error id=sluice:chain_summary:badsamples sluice.chain_summary ([1; 2; Inf; 4; 5])
%!error id=sluice:chain_summary:tooshort sluice.chain_summary ([1; 2; 3])
%!error id=sluice:chain_summary:badoption sluice.chain_summary (randn (10, 2), 'names', {'a'})
%!error id=sluice:chain_summary:badoption sluice.chain_summary (randn (10, 2), 'names', 'ab')
%!error id=sluice:chain_summary:badoption sluice.chain_summary (randn (10, 2), 'quantiles', 1.5)
%!error id=sluice:chain_summary:badoption sluice.chain_summary (randn (10, 2), 'quantiles', {0.5})
%!error id=sluice:chain_summary:badoption sluice.chain_summary (randn (10, 2), 'level', 0.5)
%!error id=sluice:chain_summary:badoption sluice.chain_summary (randn (10, 2), 'names')
