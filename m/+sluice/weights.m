% -*- texinfo -*-
% @deftypefn  {} {@var{w} =} sluice.weights (@var{logw})
% @deftypefnx {} {[@var{w}, @var{ess}, @var{logz}] =} sluice.weights (@var{logw})
% @deftypefnx {} {[@var{w}, @var{ess}, @var{logz}, @var{info}] =} sluice.weights (@var{logw})
% Normalise importance weights given as log-weights.
%
% @var{logw} is a real double vector of log-weights, one per member (for
% example the log-likelihoods of the members given an observation). A
% member with @code{-Inf} has weight zero. The normalisation works in the
% log domain (the largest log-weight is taken out before exponentiating),
% so log-weights of -1e5 and lower do not underflow to all-zero weights.
%
% Outputs:
% @table @var
% @item w
% the normalised weights @code{exp (logw - log (sum (exp (logw))))}, the
% same shape as @var{logw}; they sum to one.
% @item ess
% the effective sample size @code{1 / sum (w.^2)}, between 1 (one member
% holds all the weight) and N (equal weights). Resampling when it falls
% below N/2 is common practice.
% @item logz
% @code{log (mean (exp (logw)))}: when the members were equally weighted
% before this step and @var{logw} are their log-likelihoods, the increment
% of the log-evidence (log marginal likelihood) over this step.
% @item info
% a struct with fields @code{entropy} (@code{-sum (w .* log (w))}, with
% 0 log 0 = 0; log N for equal weights), @code{n_zero} (members whose
% log-weight is @code{-Inf}) and @code{log_sum}
% (@code{log (sum (exp (logw)))}).
% @end table
%
% Example:
% @example
% @group
% ll = -0.5 * ((y - Hx) / sigma).^2;      % 1-by-N log-likelihoods
% [w, ess, logz] = sluice.weights (ll);
% if (ess < numel (w) / 2)
%   a = sluice.resample (w);
% end
% @end group
% @end example
%
% Errors: @code{sluice:weights:badclass} (not a real full double: single,
% integer, logical, complex, sparse, cell, struct),
% @code{sluice:weights:badsize} (a matrix), @code{sluice:weights:empty},
% @code{sluice:weights:badlogw} (a NaN or @code{+Inf} log-weight; the
% message names the member), @code{sluice:weights:degenerate} (every
% log-weight is @code{-Inf}: no member has positive weight).
% @seealso{sluice.resample}
% @end deftypefn

function [w, ess, logz, info] = weights (logw)
  if (nargin ~= 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (isa (logw, 'double'))
    % a range (such as 1:N) reaches a MEX gateway of Octave 7.3 in a form
    % whose typed data access aborts Octave; double () turns it into an
    % ordinary matrix (and returns any other double array as it is)
    logw = double (logw);
  end
  [w, ess, logz, entropy, n_zero, log_sum] = sluice.kernel.weights (logw);
  if (nargout > 3)
    info = struct ('entropy', entropy, 'n_zero', n_zero, 'log_sum', log_sum);
  end
end

% Reference values are the definitions evaluated directly:
% w = exp(l) / sum(exp(l)), ESS = 1 / sum(w.^2) (Kong, Liu & Wong 1994),
% entropy = -sum(w log w), logz = log(mean(exp(l))).

%!test
%! p = [0.1 0.2 0.3 0.4];
%! [w, ess, logz, info] = sluice.weights (log (p));
%! assert (w, p, 1e-15);
%! assert (ess, 1 / sum (p.^2), 1e-13);
%! assert (logz, log (0.25), 1e-14);
%! assert (info.entropy, -sum (p .* log (p)), 1e-14);
%! assert (info.n_zero, 0);
%! assert (info.log_sum, 0, 1e-15);

%!test
%! % equal weights: ESS = N, entropy = log N
%! N = 500;
%! [w, ess, logz, info] = sluice.weights (2.385 * ones (1, N));
%! assert (w, ones (1, N) / N, 1e-17);
%! assert (ess, N, 1e-10);
%! assert (info.entropy, log (N), 1e-12);
%! assert (logz, 2.385, 1e-14);

%!test
%! % against the direct formula on irregular log-weights
%! l = 3 * sin (0.7 * (0:199) + 0.3);
%! r = exp (l) / sum (exp (l));
%! [w, ess, logz, info] = sluice.weights (l);
%! assert (w, r, 1e-15);
%! assert (ess, 1 / sum (r.^2), 1e-10);
%! assert (logz, log (mean (exp (l))), 1e-13);
%! assert (info.entropy, -sum (r .* log (r)), 1e-12);
%! assert (info.log_sum, log (sum (exp (l))), 1e-13);

%!test
%! % log-weights around -1e5 (exp underflows): same weights as the
%! % offsets, logz shifted by -1e5 (log-sum-exp identity)
%! o = 3 * cos (1.1 * (0:99));
%! l = o - 1e5;
%! o = l + 1e5;                  % the offsets actually stored
%! [w, ess, logz] = sluice.weights (l);
%! assert (all (isfinite (w)) && all (w > 0));
%! assert (w, exp (o) / sum (exp (o)), 1e-14);
%! assert (logz, -1e5 + log (mean (exp (o))), 1e-10);
%! assert (ess, 1 / sum ((exp (o) / sum (exp (o))).^2), 1e-9);

%!test
%! % -Inf: weight zero, counted; shape kept (column in, column out)
%! [w, ess, logz, info] = sluice.weights ([-Inf; 0; -Inf; log(3)]);
%! assert (size (w), [4 1]);
%! assert (w, [0; 0.25; 0; 0.75], 1e-15);
%! assert (info.n_zero, 2);
%! assert (ess, 1 / (0.25^2 + 0.75^2), 1e-13);
%! assert (info.entropy, -(0.25 * log (0.25) + 0.75 * log (0.75)), 1e-14);
%! assert (logz, log (mean ([0 1 0 3])), 1e-15);

%!test
%! % one member holding everything
%! [w, ess, logz, info] = sluice.weights ([-3e5 -1e5 -2e5]);
%! assert (w, [0 1 0]);
%! assert (ess, 1);
%! assert (info.entropy, 0);
%! assert (info.n_zero, 0);

%!test
%! w = sluice.weights (7);
%! assert (w, 1);

%!test
%! % ranges are accepted
%! w = sluice.weights (1:3);
%! assert (w, exp (1:3) / sum (exp (1:3)), 1e-15);
%! w = sluice.weights ((0:-1:-2)');
%! assert (w, exp ([0; -1; -2]) / sum (exp ([0; -1; -2])), 1e-15);

%!error <Invalid call> sluice.weights ()
%!error <called with too many inputs> sluice.weights (1, 2)
%!error id=sluice:weights:badclass sluice.weights (single ([0 1]))
%!error id=sluice:weights:badclass sluice.weights (int32 ([0 1]))
%!error id=sluice:weights:badclass sluice.weights (true (1, 2))
%!error id=sluice:weights:badclass sluice.weights ([0 1i])
%!error id=sluice:weights:badclass sluice.weights (sparse ([0 1]))
%!error id=sluice:weights:badclass sluice.weights ({0, 1})
%!error id=sluice:weights:badclass sluice.weights (struct ('a', 1))
%!error id=sluice:weights:badclass sluice.weights ('ab')
%!error id=sluice:weights:badsize sluice.weights (zeros (2, 3))
%!error id=sluice:weights:badsize sluice.weights (zeros (1, 2, 2))
%!error id=sluice:weights:empty sluice.weights ([])
%!error id=sluice:weights:empty sluice.weights (zeros (1, 0))
%!error <log-weight 2 of 3 is NaN> sluice.weights ([0 NaN 1])
%!error id=sluice:weights:badlogw sluice.weights ([0 NaN 1])
%!error id=sluice:weights:badlogw sluice.weights ([0 1 Inf])
%!error <3 of 3 is \+Inf> sluice.weights ([0 1 Inf])
%!error id=sluice:weights:degenerate sluice.weights ([-Inf -Inf])
