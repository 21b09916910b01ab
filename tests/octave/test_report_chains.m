% sluice.report on a result of sluice.pmmh: the MCMC page (trace and
% density charts, pairs, chains.csv, summary.txt) and its refusals of an
% edited result.
% References: chains.csv must hold the numbers of sluice.chain_summary
% (itself tested against Gelman et al., Bayesian Data Analysis, 3rd ed.
% 2013, sections 11.4-11.5); one R-hat is recomputed here from the
% split-R-hat formula as restated by Vehtari, Gelman, Simpson, Carpenter
% & Buerkner 2021 (Bayesian Analysis 16, 667-718, section 2, from memory
% of the section): chains cut in halves, W the mean within-sequence
% variance, B/n' the variance of the sequence means, var+ = (n'-1)/n' W +
% B/n', R-hat = sqrt (var+ / W) (this is the split R-hat before the rank
% normalisation that paper adds). Prior densities against Octave's
% statistics package (normpdf, lognpdf, unifpdf).

%!shared r0, r1, pr, spec, obs
%! % a(x_k) = a x_(k-1) + noise, observed with noise; a uniform on [-1, 1]
%! spec = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, 'params', {'a'});
%! pr = sluice.prior ('a', 'uniform', [-1 1], 'x', 'normal', [0 1]);
%! obs = struct ('time', (1:8)', 'variable', {repmat({'x'}, 8, 1)}, ...
%!               'value', [0.9; 1.1; 0.6; 0.2; -0.1; 0.3; 0.7; 0.5], 'sigma', 0.5 * ones (8, 1));
%! fo = struct ('t0', 0, 'state_noise', 0.5);
%! % converged: R-hat 1.009 and bulk ESS 194 against limits 1.05 and 100
%! % (measured here)
%! w = warning ('off', 'sluice:pmmh:lowess');
%! r0 = sluice.pmmh (spec, pr, obs, 'members', 25, 'chains', 3, 'iterations', 300, ...
%!                   'burnin', 60, 'seed', 5, 'parallel', false, 'min_ess', 100, 'filter', fo);
%! % not converged: three chains started far apart, a fixed and tiny
%! % proposal, 20 iterations: each stays near its start
%! warning ('off', 'sluice:pmmh:notconverged');
%! r1 = sluice.pmmh (spec, pr, obs, 'members', 25, 'chains', 3, 'iterations', 20, ...
%!                   'burnin', 0, 'seed', 1, 'parallel', false, 'adapt', false, ...
%!                   'proposal', 1e-6, 'start', [-0.9 0.9 0], 'filter', fo);
%! warning (w);

%!function T = read_table (f)
%!  % chains.csv: a header, then one row per parameter (name, unit, numbers)
%!  lines = strsplit (strtrim (fileread (f)), "\n");
%!  T.head = strsplit (lines{1}, ',');
%!  T.name = {};
%!  T.unit = {};
%!  T.num = [];
%!  for k = 2:numel (lines)
%!    c = strsplit (lines{k}, ',', 'CollapseDelimiters', false);
%!    T.name{end+1} = c{1};
%!    T.unit{end+1} = c{2};
%!    T.num(end+1, :) = str2double (c(3:end));
%!  end
%!endfunction

%!function remove_dir (d)
%!  confirm_recursive_rmdir (false, 'local');
%!  if (exist (d, 'dir'))
%!    rmdir (d, 's');
%!  end
%!endfunction

%!test
%! % the page of a converged run: its files, the table, the verdict
%! assert (r0.converged);
%! d = tempname ();
%! unwind_protect
%!   files = sluice.report (r0, 'outdir', d, 'units', struct ('a', '1/day'), ...
%!                          'title', 'Vell at Lowmarsh (invented)');
%!   want = {'trace_a.png', 'density_a.png', 'chains.csv', 'summary.txt'};
%!   assert (files, fullfile (d, want(:)));
%!   for k = 1:numel (files)
%!     assert (exist (files{k}, 'file'), 2);
%!   end
%!   % a PNG starts with the bytes 137 'PNG' (PNG specification, section 5.2)
%!   for f = {'trace_a.png', 'density_a.png'}
%!     fid = fopen (fullfile (d, f{1}), 'r');
%!     sig = fread (fid, 4)';
%!     fclose (fid);
%!     assert (sig, [137 80 78 71]);
%!   end
%!   % one parameter: no pairs chart
%!   assert (~exist (fullfile (d, 'pairs.png'), 'file'));
%!
%!   T = read_table (fullfile (d, 'chains.csv'));
%!   assert (T.head, {'parameter', 'unit', 'mean', 'sd', 'q2_5', 'q25', 'q50', 'q75', ...
%!                    'q97_5', 'rhat', 'ess', 'ess_bulk', 'mcse'});
%!   assert (T.name, {'a'});
%!   assert (T.unit, {'1/day'});
%!   % the numbers of sluice.chain_summary, as the result holds them and as
%!   % a fresh call on the draws gives them (10 significant digits written)
%!   s = r0.summary;
%!   want = [s.mean, s.sd, s.quantiles, s.rhat, s.ess, s.ess_bulk, s.mcse];
%!   assert (T.num, want, -1e-9);
%!   s2 = sluice.chain_summary (r0.samples, 'names', r0.names);
%!   assert (T.num, [s2.mean, s2.sd, s2.quantiles, s2.rhat, s2.ess, s2.ess_bulk, s2.mcse], -1e-9);
%!
%!   % split R-hat by the formula (Vehtari et al. 2021, section 2; header)
%!   X = reshape (r0.samples(:, 1, :), 300, 3);
%!   h = 150;
%!   seq = [X(1:h, :), X(h+1:end, :)];         % 2 x 3 sequences of n' = 150
%!   W = mean (var (seq));
%!   B = h * var (mean (seq));
%!   vplus = (h - 1) / h * W + B / h;
%!   assert (T.num(strcmp (T.head(3:end), 'rhat')), sqrt (vplus / W), -1e-9);
%!
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'Vell at Lowmarsh (invented)')));
%!   assert (~isempty (strfind (txt, 'Convergence: CONVERGED')));
%!   assert (isempty (strfind (txt, 'NOT CONVERGED')));
%!   assert (~isempty (strfind (txt, 'split R-hat at most 1.05 and bulk ESS at least 100')));
%!   assert (~isempty (regexp (txt, sprintf ('a +%.4f +%.1f +ok', s.rhat, s.ess_bulk), 'once')));
%!   % each chain's acceptance rate, after and during the burn-in
%!   for c = 1:3
%!     assert (~isempty (strfind (txt, sprintf ('chain %-3d %.3f  (%.3f)', c, ...
%!                               r0.acceptance(c), r0.acceptance_burnin(c)))));
%!   end
%!   % the result carries its prior: its density is drawn
%!   assert (~isempty (strfind (txt, 'the prior density (red)')));
%!   assert (~isempty (strfind (txt, 'not a flood warning')));
%! unwind_protect_cleanup
%!   remove_dir (d);
%! end_unwind_protect

%!test
%! % the page of chains that have not met: the verdict and the numbers
%! s = r1.summary;
%! assert (s.rhat > 10);
%! d = tempname ();
%! unwind_protect
%!   sluice.report (r1, 'outdir', d);
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'Convergence: NOT CONVERGED')));
%!   assert (~isempty (strfind (txt, 'split R-hat at most 1.05 and bulk ESS at least 400')));
%!   assert (~isempty (strfind (txt, 'R-hat above 1.05; bulk ESS below 400')));
%!   assert (~isempty (strfind (txt, 'thinning:            none')));
%!   T = read_table (fullfile (d, 'chains.csv'));
%!   assert (T.num(strcmp (T.head(3:end), 'rhat')), s.rhat, -1e-9);
%!   % the verdict follows the numbers, not the flag: an edited flag is named
%!   r = r1;
%!   r.converged = true;
%!   r.outside = [0 2 0];
%!   sluice.report (r, 'outdir', d);
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'NOT CONVERGED')));
%!   assert (~isempty (strfind (txt, 'field converged says true')));
%!   % a chain's rejected-unrun proposals are named beside its rate
%!   assert (~isempty (strfind (txt, sprintf ('chain 2   %.3f; 2 proposals outside', ...
%!                                            r1.acceptance(2)))));
%! unwind_protect_cleanup
%!   remove_dir (d);
%! end_unwind_protect

%!test
%! % two parameters, thinning, the prior as an option: the pairs chart,
%! % the iterations kept, and the prior's other entries ignored
%! d = tempname ();
%! unwind_protect
%!   sp2 = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, ...
%!                       'params', {'a', 'g'});
%!   pr2 = sluice.prior ('a', 'uniform', [-1 1], 'x', 'normal', [0 1], ...
%!                       'g', 'lognormal', [0 0.5]);
%!   w = warning ('off', 'all');
%!   r = sluice.pmmh (sp2, pr2, obs, 'members', 20, 'chains', 2, 'iterations', 40, ...
%!                    'burnin', 10, 'thin', 2, 'seed', 2, 'parallel', false, ...
%!                    'filter', struct ('t0', 0, 'state_noise', 0.5));
%!   warning (w);
%!   assert (size (r.samples), [20 2 2]);
%!   files = sluice.report (r, 'outdir', d, 'variables', {'g', 'a'});
%!   assert (any (strcmp (files, fullfile (d, 'pairs.png'))));
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'every 2-th iteration kept')));
%!   assert (~isempty (strfind (txt, '2, 20 kept iteration(s) each (40 draws)')));
%!   % a result without its prior: no density unless the option gives it
%!   r.prior = [];
%!   sluice.report (r, 'outdir', d, 'variables', 'g');
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (isempty (strfind (txt, 'prior density')));
%!   assert (isempty (strfind (txt, 'pairs.png')));
%!   files = sluice.report (r, 'outdir', d, 'prior', pr2, 'variables', 'g');
%!   assert (files, fullfile (d, {'trace_g.png'; 'density_g.png'; 'chains.csv'; 'summary.txt'}));
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'the prior density (red)')));
%!   % a prior that names none of the parameters draws none
%!   sluice.report (r, 'outdir', d, 'prior', sluice.prior ('b', 'normal', [0 1]));
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (isempty (strfind (txt, 'prior density')));
%! unwind_protect_cleanup
%!   remove_dir (d);
%! end_unwind_protect

%!test
%! % fewer than 4 kept iterations: no R-hat, and the page says so
%! d = tempname ();
%! unwind_protect
%!   w = warning ('off', 'all');
%!   r = sluice.pmmh (spec, pr, obs, 'members', 20, 'chains', 2, 'iterations', 3, ...
%!                    'burnin', 0, 'seed', 1, 'parallel', false, ...
%!                    'filter', struct ('t0', 0, 'state_noise', 0.5));
%!   warning (w);
%!   assert (isempty (r.summary));
%!   sluice.report (r, 'outdir', d);
%!   txt = fileread (fullfile (d, 'summary.txt'));
%!   assert (~isempty (strfind (txt, 'NOT CONVERGED')));
%!   assert (~isempty (strfind (txt, 'only 3 kept iteration(s) per chain')));
%!   T = read_table (fullfile (d, 'chains.csv'));
%!   assert (all (isnan (T.num(:))));
%! unwind_protect_cleanup
%!   remove_dir (d);
%! end_unwind_protect

%!test
%! % the prior log-densities the density charts draw, from the C core,
%! % against Octave's statistics package
%! pkg load statistics
%! q = sluice.prior ('a', 'normal', [-1.37 2.385], 'b', 'lognormal', [0.3 0.7], ...
%!                   'c', 'uniform', [0.5 4]);
%! [ids, a, b, lo, hi] = sluice.internal.check_prior (q, 1, 'report');
%! x = [-3.1 0.2 1.9 5.5; 0.4 1.3 2.2 -1; 0.6 0.5 3.99 4.2];
%! L = sluice.kernel.prior_eval ('logpdf', ids, a, b, lo, hi, x);
%! assert (L(1, :), log (normpdf (x(1, :), -1.37, 2.385)), -1e-13);
%! assert (L(2, 1:3), log (lognpdf (x(2, 1:3), 0.3, 0.7)), -1e-13);
%! assert (L(3, 1:3), log (unifpdf (x(3, 1:3), 0.5, 4)), -1e-13);
%! assert (L(2, 4), -Inf);
%! assert (L(3, 4), -Inf);
%! assert (sluice.kernel.prior_eval ('logpdf', ids, a, b, lo, hi, zeros (3, 0)), zeros (3, 0));

% (the errors of sluice.kernel.prior_eval: tests/octave/test_prior_eval.m)

% the summary of sluice.chain_summary alone holds no draws
%!error <holds no draws> sluice.report (r0.summary, 'outdir', tempname ())
%!error id=sluice:report:badresult sluice.report (r0.summary, 'outdir', tempname ())
% an edited result: each field refused by name, before anything is written
%!error <field 'names'> r = r0; r.samples = r.samples(:, [1 1], :); sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badchains r = r0; r.samples = r.samples(:, :); sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badchains r = r0; r.samples(3, 1, 2) = NaN; sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badchains r = r0; r.samples = single (r.samples); sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badchains r = r0; r.samples = {r.samples}; sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badchains r = r0; r.names = 'a'; sluice.report (r, 'outdir', tempname ())
%!error <field 'names'> r = r0; r = rmfield (r, 'names'); sluice.report (r, 'outdir', tempname ())
%!error <field 'acceptance'> r = r0; r.acceptance = r.acceptance(1:2); sluice.report (r, 'outdir', tempname ())
%!error <field 'acceptance'> r = r0; r.acceptance(1) = 1.5; sluice.report (r, 'outdir', tempname ())
%!error <field 'outside'> r = r0; r.outside = -1 * ones (1, 3); sluice.report (r, 'outdir', tempname ())
%!error <field 'chains'> r = r0; r.chains = 4; sluice.report (r, 'outdir', tempname ())
%!error <field 'converged'> r = r0; r.converged = 'yes'; sluice.report (r, 'outdir', tempname ())
%!error <field 'max_rhat'> r = r0; r.max_rhat = 1; sluice.report (r, 'outdir', tempname ())
%!error <field 'burnin'> r = r0; r.burnin = -1; sluice.report (r, 'outdir', tempname ())
%!error <field 'thin'> r = r0; r.thin = 0.5; sluice.report (r, 'outdir', tempname ())
%!error <field 'summary' is empty> r = r0; r.summary = []; sluice.report (r, 'outdir', tempname ())
%!error <describes other chains> r = r0; r.samples = r.samples(1:200, :, :); sluice.report (r, 'outdir', tempname ())
%!error <summary.rhat> r = r0; r.summary.rhat = [1; 1]; sluice.report (r, 'outdir', tempname ())
%!error <summary.quantiles> r = r0; r.summary.quantiles = r.summary.quantiles'; sluice.report (r, 'outdir', tempname ())
%!error <summary.names> r = r0; r.summary.names = {'b'}; sluice.report (r, 'outdir', tempname ())
%!error <field 'prior'> r = r0; r.prior = sluice.prior ('b', 'normal', [0 1]); sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badprior r = r0; r.prior.args = [1 0]; sluice.report (r, 'outdir', tempname ())
%!error id=sluice:report:badprior sluice.report (r0, 'outdir', tempname (), 'prior', struct ('name', 'a'))
%!error id=sluice:report:badoption sluice.report (r0, 'outdir', tempname (), 'variables', {'b'})
%!error id=sluice:report:badoutdir sluice.report (r0, 'outdir', 7)

%!test
%! % the opening check of a sluice.pmmh result (sluice.internal.result_fields)
%! try
%!   sluice.report (rmfield (r0, 'thin'), 'outdir', tempname ());
%!   msg = 'no error';
%! catch e
%!   msg = [e.identifier ' | ' e.message];
%! end
%! assert (msg, 'sluice:report:badchains | argument 1 (res): the field ''thin'' of a sluice.pmmh result is missing');
