% -*- texinfo -*-
% @deftypefn  {} {@var{ev} =} sluice.evidence (@var{model}, @var{prior}, @var{obs})
% @deftypefnx {} {@var{ev} =} sluice.evidence (@var{model}, @var{prior}, @var{obs}, @var{opts})
% @deftypefnx {} {@var{ev} =} sluice.evidence (@dots{}, @var{name}, @var{value}, @dots{})
% Estimate the log-evidence of a record under a model and its prior.
% The log marginal likelihood of @var{obs} under @var{model} and
% @var{prior}, with its Monte Carlo error, comes from repeated
% particle-filter runs.
%
% The particle filter's estimate of the likelihood, @code{exp
% (res.log_evidence)} of @code{sluice.filter}, is unbiased but noisy.
% @code{sluice.evidence} runs the filter @code{repeats} times with the
% seeds @code{seed}, @code{seed + 1}, @dots{} and summarises the R
% log-evidence estimates: their mean, its standard error
% @code{std / sqrt (R)}, and the log of the mean of the likelihood
% estimates, @code{log (mean (exp (values)))}, computed without overflow:
% the log of an unbiased estimate of the likelihood, at or above the mean
% of the logs (Jensen's inequality), which is biased low by about half
% the variance of one run's estimate.
%
% Options (a struct or name/value pairs): @code{repeats} (R, a whole
% number >= 2, default 10), @code{seed} (the first run's seed, a whole
% number; default drawn from Octave's @code{rand}; the same seed gives
% the same result) and any option of @code{sluice.filter}
% (@code{members}, @code{t0}, @code{forcing}, @code{param_move},
% @code{param_step}, @code{resample}, @dots{}), passed on to every run.
% The method must be the particle filter (@code{'pf'}, the default); the
% progress line is off unless asked for; @code{param_move} is
% @code{'fixed'} unless asked for (the evidence of the model as stated,
% with parameters drawn once from the prior). With @code{checkpoint}, a
% file name @var{f} (and a @code{seed}), each run keeps its own
% checkpoint, @var{f}@code{.seed}@var{s} for the run with seed @var{s}
% (one file for all would clash: the runs differ in their seed): the same
% call made again resumes the run that was stopped and reads the finished
% ones back. The files stay until deleted.
%
% The result @var{ev} has @code{log_evidence} (the mean of the R
% estimates), @code{se} (its standard error), @code{log_mean_exp},
% @code{values} (1 x R, the estimates), @code{seeds} (1 x R),
% @code{seed}, @code{repeats}, @code{members} and @code{degenerate} (the
% number of runs whose estimate is -Inf: no member explained some
% observation; then @code{log_evidence} is -Inf and @code{se} NaN).
%
% Errors: @code{sluice:evidence:badoption} (repeats, seed, method, a
% checkpoint without a seed), and
% the errors of @code{sluice.filter} under @code{sluice:evidence:}
% (@code{badmodel}, @code{badprior}, @code{badobs}, @dots{}).
%
% Example:
% @example
% @group
% spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', @{'x'@});
% pr = sluice.prior ('x', 'normal', [0 1]);
% obs = struct ('time', [1; 2; 3], 'variable', @{@{'x'; 'x'; 'x'@}@}, ...
%               'value', [1; 2; 0], 'sigma', [1; 1; 1]);
% ev = sluice.evidence (spec, pr, obs, 'members', 2000, 't0', 0, 'seed', 1);
% printf ('%.3f +- %.3f\n', ev.log_evidence, ev.se);
% @end group
% @end example
% @seealso{sluice.filter, sluice.drift_test}
% @end deftypefn
function ev = evidence (model, prior, obs, varargin)
  if (nargin < 3)
    sluice.internal.compat ('usage', mfilename ());
  end
  ev = sluice.internal.evidence_run (model, prior, obs, varargin, 'evidence');
end

%!shared spec, pr, obs
%! spec = sluice.model ('linear', 'A', 1, 'Q', 1, 'states', {'x'});
%! pr = sluice.prior ('x', 'normal', [0 1]);
%! obs = struct ('time', [1; 2; 3], 'variable', {{'x'; 'x'; 'x'}}, ...
%!               'value', [1; 2; 0], 'sigma', [1; 1; 1]);

%!test
%! % the summaries are those of the runs of sluice.filter with seeds
%! % seed, seed + 1, ...
%! ev = sluice.evidence (spec, pr, obs, 'members', 200, 't0', 0, 'seed', 5, 'repeats', 3);
%! v = zeros (1, 3);
%! for r = 1:3
%!   res = sluice.filter (spec, pr, obs, 'members', 200, 't0', 0, 'seed', 4 + r, ...
%!                        'progress', false);
%!   v(r) = res.log_evidence;
%! end
%! assert (ev.values, v);
%! assert (ev.seeds, [5 6 7]);
%! assert (ev.log_evidence, mean (v), 1e-14);
%! assert (ev.se, std (v) / sqrt (3), 1e-14);
%! assert (ev.log_mean_exp, log (mean (exp (v))), 1e-12);
%! assert (ev.log_mean_exp >= ev.log_evidence);
%! assert (ev.repeats, 3);
%! assert (ev.members, 200);
%! assert (ev.degenerate, 0);

%!test
%! % deterministic for a seed; options may come as a struct; the default
%! % seed is drawn and returned
%! a = sluice.evidence (spec, pr, obs, struct ('members', 100, 't0', 0, 'seed', 2, 'repeats', 2));
%! b = sluice.evidence (spec, pr, obs, 'members', 100, 't0', 0, 'seed', 2, 'repeats', 2);
%! assert (isequal (a, b));
%! c = sluice.evidence (spec, pr, obs, 'members', 100, 't0', 0, 'repeats', 2);
%! d = sluice.evidence (spec, pr, obs, 'members', 100, 't0', 0, 'repeats', 2, 'seed', c.seed);
%! assert (isequal (c, d));
%! assert (numel (a.values), 2);

%!test
%! % the log of the mean of very small likelihoods does not underflow
%! far = obs; far.value = [1; 2; 40];
%! warning ('off', 'sluice:filter:degenerate', 'local');
%! ev = sluice.evidence (spec, pr, far, 'members', 200, 't0', 0, 'seed', 1, 'repeats', 3);
%! assert (all (isfinite (ev.values)) && all (ev.values < -300));
%! assert (ev.log_mean_exp, max (ev.values) + log (mean (exp (ev.values - max (ev.values)))), 1e-9);
%! assert (isfinite (ev.log_mean_exp));

%!error <Invalid call> sluice.evidence ()
%!error <Invalid call> sluice.evidence (spec, pr)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'repeats', 1)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'repeats', 2.5)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'repeats', [])
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'repeats', int32 (3))
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'repeats', NaN)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'seed', -1)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'seed', 1.5)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'seed', {1})
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'seed', 2^53)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'method', 'etkf')
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'method', 1)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'members')
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 5)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 5, 6)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'not a name', 6)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'bogus', 6, 'seed', 1)
%!error id=sluice:evidence:badoption sluice.evidence (spec, pr, obs, 'members', 0, 'seed', 1)
%!error id=sluice:evidence:badmodel sluice.evidence (5, pr, obs, 'seed', 1)
%!error id=sluice:evidence:badprior sluice.evidence (spec, sluice.prior ('y', 'normal', [0 1]), obs, 'seed', 1)
%!error id=sluice:evidence:badobs sluice.evidence (spec, pr, rmfield (obs, 'sigma'), 'seed', 1)
