% sluice.build_model: a user's model in one C file, compiled and used like a
% built-in model. The fixture tests/octave/fixtures/cascade.c is two linear
% reservoirs in series, dx1/dt = u - a x1, dx2/dt = a x1 - b x2. References:
% the analytic solution of a linear ODE with constant coefficients and
% constant input, x(t) = e^{At} x0 + A^{-1} (e^{At} - I) g (variation of
% constants), evaluated with Octave's matrix exponential expm; and the same
% model written as an Octave right-hand side, run by the same integrator
% with the same seed. Everything is built into a temporary folder that the
% last block removes.

%!shared tmp, fixtures, spec, forcing, a, b, u, x0, closed_form
%! root = fileparts (fileparts (fileparts (which ('sluice.build_model'))));
%! fixtures = fullfile (root, 'tests', 'octave', 'fixtures');
%! tmp = tempname ();
%! mkdir (tmp);
%! copyfile (fullfile (fixtures, '*.c'), tmp);
%! spec = [];
%! a = 0.7; b = 0.3; u = 1.3; x0 = [2; 0.5];
%! forcing = struct ('time', [0; 10], 'values', [u; u]);
%! closed_form = @(A, g, x0, t) expm (A * t) * x0 + A \ ((expm (A * t) - eye (rows (A))) * g);

%!test
%! % build (the MEX files go next to the C file), then one trajectory
%! % against the closed form; RK4 with dt = 0.01 and rates <= 0.7 has a
%! % global error far below 1e-9 over 5 time units
%! [spec, rebuilt] = sluice.build_model (fullfile (tmp, 'cascade.c'));
%! assert (rebuilt);
%! assert (exist (fullfile (tmp, ['cascade_run.' mexext()]), 'file') > 0);
%! assert (exist (fullfile (tmp, ['cascade_info.' mexext()]), 'file') > 0);
%! assert (spec.kind, 'user');
%! assert (spec.engine, 'cascade_run');
%! assert (spec.name, 'cascade');
%! assert (spec.states, {'x1', 'x2'});
%! assert (spec.params, {'a', 'b'});
%! assert (spec.forcings, {'u'});
%! assert (spec.defaults, [0.7; 0.3]);
%! assert (spec.lower, [0; 0]);
%! assert (spec.upper, [Inf; Inf]);
%! assert (spec.x0, [2; 0.5]);
%! assert (spec.dt, 0.01);
%! assert (spec.integrator, 'rk4');
%! t = [0 0.5 1 2 5];
%! X = sluice.simulate (spec, x0, [a; b], t, forcing);
%! A = [-a 0; a -b];
%! ref = zeros (2, numel (t));
%! for k = 1:numel (t)
%!   ref(:, k) = closed_form (A, [u; 0], x0, t(k));
%! end
%! assert (X, ref, 1e-9);
%! % propagate: an ensemble with each member's own parameters
%! P = [0.4 0.7 1.1; 0.3 0.9 0.2];
%! X1 = sluice.propagate (spec, repmat (x0, 1, 3), P, 0, 2, forcing);
%! for j = 1:3
%!   Aj = [-P(1, j) 0; P(1, j) -P(2, j)];
%!   assert (X1(:, j), closed_form (Aj, [u; 0], x0, 2), 1e-9);
%! end

%!test
%! % up to date: no compilation; sluice.model options pass through
%! [s2, rebuilt] = sluice.build_model (fullfile (tmp, 'cascade.c'), 'integrator', 'dopri5', ...
%!                                     'rtol', 1e-11, 'atol', 1e-13, 'dt', 0.5);
%! assert (~rebuilt);
%! assert (s2.integrator, 'dopri5');
%! assert (s2.dt, 0.5);
%! X = sluice.simulate (s2, [1; 3], [1.2; 0.4], [0 3], forcing);
%! assert (X(:, 2), closed_form ([-1.2 0; 1.2 -0.4], [u; 0], [1; 3], 3), 1e-8);

%!test
%! % a C file newer than the MEX files is compiled again
%! run_mex = fullfile (tmp, ['cascade_run.' mexext()]);
%! info_mex = fullfile (tmp, ['cascade_info.' mexext()]);
%! system (sprintf ('touch -d 2001-01-01 ''%s'' ''%s''', run_mex, info_mex));
%! [~, rebuilt] = sluice.build_model (fullfile (tmp, 'cascade.c'));
%! assert (rebuilt);
%! s = stat (run_mex);
%! assert (s.mtime > 1e9 + 3e8);
%! [~, rebuilt] = sluice.build_model (fullfile (tmp, 'cascade.c'));
%! assert (~rebuilt);

%!test
%! % 'force' compiles even when up to date; 'outdir' and 'name' choose
%! % where the MEX files go and what they are called
%! out = fullfile (tmp, 'elsewhere');
%! [s, rebuilt] = sluice.build_model (fullfile (tmp, 'cascade.c'), 'outdir', out, ...
%!                                    'name', 'two_tanks', 'force', true);
%! assert (rebuilt);
%! assert (s.engine, 'two_tanks_run');
%! assert (exist (fullfile (out, ['two_tanks_run.' mexext()]), 'file') > 0);
%! assert (numel (dir (fullfile (out, '.*_build_*'))), 0);
%! X = sluice.simulate (s, x0, [a; b], [0 1], forcing);
%! assert (X(:, 2), closed_form ([-a 0; a -b], [u; 0], x0, 1), 1e-9);

%!test
%! % the compiled model against the same model as an Octave right-hand
%! % side: same integrator (rk4, dt 0.01), same prior draws, forcing noise,
%! % parameter random walk and resampling streams (seed 77), so the two
%! % runs differ only by rounding
%! obs_t = (0.5:0.5:5)';
%! truth = sluice.simulate (spec, x0, [a; b], [0; obs_t]', forcing);
%! noise = [0.31 -0.12 0.05 -0.4 0.22 0.17 -0.08 0.36 -0.27 0.11]';
%! obs = struct ('time', obs_t, 'variable', {repmat({'x2'}, 10, 1)}, ...
%!               'value', truth(2, 2:end)' + 0.2 * noise, 'sigma', 0.2 * ones (10, 1));
%! prior = sluice.prior ('x1', 'uniform', [0 4], 'a', 'lognormal', [log(0.6) 0.4], ...
%!                       'b', 'lognormal', [log(0.4) 0.4]);
%! tf = (0:0.25:6)';
%! opts = {'members', 300, 'seed', 77, 't0', 0, 'progress', false, ...
%!         'forcing', struct('time', tf, 'values', u + 0.3 * sin(tf)), ...
%!         'forcing_noise', struct('kind', 'multiplicative', 'sd', 0.2, 'ar1', 0.5), ...
%!         'param_move', 'random_walk', 'param_step', 0.05};
%! r1 = sluice.filter (spec, prior, obs, opts{:});
%! f = @(t, X, P, U) [-P(1, :) .* X(1, :) + U(1, :); P(1, :) .* X(1, :) - P(2, :) .* X(2, :)];
%! octave_model = sluice.model (f, 'kind', 'rhs', 'integrator', 'rk4', 'dt', 0.01, ...
%!                              'states', {'x1', 'x2'}, 'params', {'a', 'b'}, ...
%!                              'forcings', {'u'}, 'defaults', [0.7; 0.3], 'x0', [2; 0.5]);
%! r2 = sluice.filter (octave_model, prior, obs, opts{:});
%! assert (any (r1.resampled));
%! assert (r1.states.mean, r2.states.mean, 1e-10);
%! assert (r1.states.quantiles, r2.states.quantiles, 1e-10);
%! assert (r1.params.mean, r2.params.mean, 1e-10);
%! assert (r1.ess, r2.ess, 1e-8);
%! assert (r1.log_evidence, r2.log_evidence, 1e-10);
%! assert (r1.model_steps, r2.model_steps);

%!test
%! % two user models loaded at once each run their own code (the same
%! % entry point name lives in both MEX files); compiler warnings about
%! % the user's file are passed on
%! src = fileread (fullfile (tmp, 'cascade.c'));
%! src = strrep (src, 'dxdt[0] = -p[0] * x[0] + u[0];', 'dxdt[0] = -2.0 * p[0] * x[0] + u[0];');
%! src = strrep (src, 'dxdt[1] = p[0] * x[0] - p[1] * x[1];', 'dxdt[1] = 2.0 * p[0] * x[0] - p[1] * x[1];');
%! src = strrep (src, 'dX[j] = -P[j] * X[j] + U[j];', 'dX[j] = -2.0 * P[j] * X[j] + U[j];');
%! src = strrep (src, 'dX[count + j] = P[j] * X[j]', 'dX[count + j] = 2.0 * P[j] * X[j]');
%! src = strrep (src, 'static const double x0[]', sprintf ('static const double never_used = 1.0;\nstatic const double x0[]'));
%! fid = fopen (fullfile (tmp, 'cascade_fast.c'), 'w'); fputs (fid, src); fclose (fid);
%! lastwarn ('');
%! log = evalc ('fast = sluice.build_model (fullfile (tmp, ''cascade_fast.c''));');
%! [msg, id] = lastwarn ();
%! assert (id, 'sluice:build_model:warnings');
%! assert (~isempty (strfind (msg, 'never_used')));
%! Xf = sluice.simulate (fast, x0, [a; b], [0 1], forcing);
%! Xs = sluice.simulate (spec, x0, [a; b], [0 1], forcing);
%! assert (Xf(:, 2), closed_form ([-2*a 0; 2*a -b], [u; 0], x0, 1), 1e-9);
%! assert (Xs(:, 2), closed_form ([-a 0; a -b], [u; 0], x0, 1), 1e-9);

%!test
%! % another C file built under a name already in use is compiled, even
%! % when it is older than the MEX files there
%! out = fullfile (tmp, 'elsewhere');
%! system (sprintf ('touch -d 2001-01-01 ''%s''', fullfile (tmp, 'cascade_fast.c')));
%! state = warning ('off', 'sluice:build_model:warnings');
%! [s, rebuilt] = sluice.build_model (fullfile (tmp, 'cascade_fast.c'), 'outdir', out, ...
%!                                    'name', 'two_tanks');
%! warning (state);
%! assert (rebuilt);
%! X = sluice.simulate (s, x0, [a; b], [0 1], forcing);
%! assert (X(:, 2), closed_form ([-2*a 0; 2*a -b], [u; 0], x0, 1), 1e-9);

%!test
%! % MEX files that do not load (here: overwritten by junk)
%! copyfile (fullfile (tmp, 'cascade.c'), fullfile (tmp, 'junk.c'));
%! sluice.build_model (fullfile (tmp, 'junk.c'));
%! clear -f junk_run junk_info
%! for f = {'junk_run', 'junk_info'}
%!   fid = fopen (fullfile (tmp, [f{1} '.' mexext()]), 'w'); fputs (fid, 'not a MEX file'); fclose (fid);
%! end
%! try
%!   sluice.build_model (fullfile (tmp, 'junk.c'));
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:build_model:loadfailed');
%! end

%!test
%! % a function of the same name in the current folder shadows the MEX file
%! % (the path is kept as it was: a relative entry such as 'm' would not
%! % survive the change of folder)
%! here = pwd ();
%! saved = path ();
%! addpath (fileparts (fileparts (which ('sluice.build_model'))));
%! d = fullfile (tmp, 'shadow');
%! mkdir (d);
%! fid = fopen (fullfile (d, 'cascade_info.m'), 'w');
%! fputs (fid, sprintf ('function r = cascade_info (varargin)\n  r = [];\nend\n'));
%! fclose (fid);
%! state = warning ('off', 'all');
%! cd (d);
%! try
%!   sluice.build_model (fullfile (tmp, 'cascade.c'));
%!   id = '';
%! catch err
%!   id = err.identifier;
%! end
%! cd (here);
%! path (saved);
%! warning (state);
%! clear -f cascade_info
%! assert (id, 'sluice:build_model:shadowed');

%!error id=sluice:build_model:badoutdir sluice.build_model (fullfile (tmp, 'cascade.c'), 'outdir', fullfile (tmp, 'cascade.c', 'sub'))

%!test
%! % a file that does not compile: the compiler's own message
%! try
%!   sluice.build_model (fullfile (tmp, 'syntax_error.c'));
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:build_model:compilefailed');
%!   assert (~isempty (strfind (err.message, 'kappa_undeclared')));
%!   assert (~isempty (strfind (err.message, 'syntax_error.c:15')));
%! end
%! assert (~exist (fullfile (tmp, ['syntax_error_run.' mexext()]), 'file'));

%!test
%! % a file without the entry point sluice_user_model
%! try
%!   sluice.build_model (fullfile (tmp, 'no_entry.c'));
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:build_model:noentry');
%!   assert (~isempty (strfind (err.message, 'sluice_user_model')));
%! end

%!test
%! % a definition that compiles but cannot be used: every problem named
%! try
%!   sluice.build_model (fullfile (tmp, 'bad_definition.c'));
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:build_model:baddef');
%!   assert (~isempty (strfind (err.message, 'param_names')));
%!   assert (~isempty (strfind (err.message, 'neither a right-hand side')));
%!   assert (~isempty (strfind (err.message, 'block right-hand side (rhs_block) is given without')));
%!   assert (~isempty (strfind (err.message, 'leapfrog')));
%! end

%!test
%! % a right-hand side that crashes is caught before Octave loads it
%! try
%!   sluice.build_model (fullfile (tmp, 'crashing.c'));
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:build_model:baddef');
%!   assert (~isempty (strfind (err.message, 'crashed')));
%!   assert (~isempty (strfind (err.message, 'right-hand side (rhs)')));
%! end
%! assert (~exist (fullfile (tmp, ['crashing_run.' mexext()]), 'file'));
%! assert (numel (dir (fullfile (tmp, '.*_build_*'))), 0);

%!test
%! % a block right-hand side that disagrees with rhs is refused, naming
%! % the state and member where they part
%! try
%!   sluice.build_model (fullfile (tmp, 'bad_block.c'));
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:build_model:baddef');
%!   assert (~isempty (strfind (err.message, 'block right-hand side (rhs_block) gives')));
%!   assert (~isempty (strfind (err.message, 'agree to the last bit')));
%! end
%! assert (~exist (fullfile (tmp, ['bad_block_run.' mexext()]), 'file'));

%!test
%! % a step map given the members' constants that disagrees with the step
%! % map (decay_constants.c with its constant made 2^-40 too large) is
%! % refused, naming the state and member where they part
%! src = fileread (fullfile (tmp, 'decay_constants.c'));
%! src = strrep (src, 'c[0] = exp(-p[0]);', 'c[0] = exp(-p[0]) * (1.0 + 0x1p-40);');
%! src = strrep (src, '"decay_constants"', '"bad_constants"');
%! fid = fopen (fullfile (tmp, 'bad_constants.c'), 'w'); fputs (fid, src); fclose (fid);
%! try
%!   sluice.build_model (fullfile (tmp, 'bad_constants.c'));
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:build_model:baddef');
%!   assert (~isempty (strfind (err.message, 'given the constants (map_const_block) gives')));
%!   assert (~isempty (strfind (err.message, 'agree to the last bit')));
%! end
%! assert (~exist (fullfile (tmp, ['bad_constants_run.' mexext()]), 'file'));

%!test
%! % a model with member constants (decay_constants.c: x <- exp(-k) x + u,
%! % exp(-k) made once for a run of steps): twelve steps in one call, on
%! % one and two threads, give the bits of twelve calls of one step, and
%! % the closed form x_n = a^n x0 + u (1 - a^n) / (1 - a) of the linear
%! % recursion (a geometric series), a = exp(-k), to rounding
%! dc = sluice.build_model (fullfile (tmp, 'decay_constants.c'));
%! N = 150;
%! k = 0.05 + 0.01 * (0:N-1);
%! X0 = 1 + 0.02 * (0:N-1);
%! fo = struct ('time', [0; 20], 'values', [1.3; 1.3]);
%! Xs = X0;
%! for d = 1:12
%!   Xs = sluice.propagate (dc, Xs, k, d - 1, d, fo, 'threads', 1);
%! end
%! X1 = sluice.propagate (dc, X0, k, 0, 12, fo, 'threads', 1);
%! X2 = sluice.propagate (dc, X0, k, 0, 12, fo, 'threads', 2);
%! assert (isequal (X1, Xs) && isequal (X2, Xs));
%! a = exp (-k);
%! assert (X1, a .^ 12 .* X0 + 1.3 * (1 - a .^ 12) ./ (1 - a), 1e-12);

%!test
%! % the block right-hand side (cascade.c has one; RK4 uses it) gives the
%! % bits of the member right-hand side, run through Octave's own
%! % function model with the same integrator
%! s1 = sluice.build_model (fullfile (tmp, 'cascade.c'));
%! X1 = sluice.propagate (s1, repmat ([2; 0.5], 1, 5), [0.4 0.7 1.1 0.2 0.9; 0.3 0.9 0.2 0.5 0.1], 0, 3, forcing);
%! f = @(t, X, P, U) [-P(1, :) .* X(1, :) + U(1, :); P(1, :) .* X(1, :) - P(2, :) .* X(2, :)];
%! s2 = sluice.model (f, 'kind', 'rhs', 'integrator', 'rk4', 'dt', 0.01, ...
%!                    'states', {'x1', 'x2'}, 'params', {'a', 'b'}, ...
%!                    'forcings', {'u'}, 'defaults', [0.7; 0.3], 'x0', [2; 0.5]);
%! X2 = sluice.propagate (s2, repmat ([2; 0.5], 1, 5), [0.4 0.7 1.1 0.2 0.9; 0.3 0.9 0.2 0.5 0.1], 0, 3, forcing);
%! assert (isequal (X1, X2));

%!error id=sluice:build_model:nofile sluice.build_model (fullfile (tmp, 'missing.c'))

%!test
%! % the model checker is the object make builds from tools/model_check.c:
%! % it is newer than that source, and a copy of sluice.build_model in a
%! % folder with an sdk (the layout of an installed package) refuses to
%! % build without it, or with one older than the headers beside it; the
%! % same for the gateways' compiled helper (mex/mexcall.cc)
%! root = fileparts (fileparts (fileparts (which ('sluice.build_model'))));
%! obj = fullfile (root, 'build', 'model_check.o');
%! helper = fullfile (root, 'build', 'mex', 'mexcall.o');
%! s_obj = stat (obj);
%! s_src = stat (fullfile (root, 'tools', 'model_check.c'));
%! assert (s_obj.mtime >= s_src.mtime);
%! s_obj = stat (helper);
%! s_src = stat (fullfile (root, 'mex', 'mexcall.cc'));
%! assert (s_obj.mtime >= s_src.mtime);
%! top = fullfile (tmp, 'pkgcopy');
%! sdk = fullfile (top, 'sdk');
%! mkdir (fullfile (top, '+sluice'));
%! mkdir (fullfile (sdk, 'build', 'mex'));
%! copyfile (which ('sluice.build_model'), fullfile (top, '+sluice'));
%! copyfile (fullfile (root, 'include'), fullfile (sdk, 'include'));
%! copyfile (fullfile (root, 'mex'), fullfile (sdk, 'mex'));
%! copyfile (fullfile (root, 'build', 'libsluice.a'), fullfile (sdk, 'build'));
%! copyfile (helper, fullfile (sdk, 'build', 'mex'));
%! saved = path ();
%! addpath (top);
%! msg = cell (1, 4);
%! for k = 1:4
%!   if (k == 2)
%!     % a checker older than the headers
%!     copyfile (obj, fullfile (sdk, 'build'));
%!     system (sprintf ('touch -d 2001-01-01 ''%s''', fullfile (sdk, 'build', 'model_check.o')));
%!   elseif (k == 3)
%!     % the checker in place, the helper missing
%!     copyfile (obj, fullfile (sdk, 'build'));
%!     delete (fullfile (sdk, 'build', 'mex', 'mexcall.o'));
%!   elseif (k == 4)
%!     copyfile (helper, fullfile (sdk, 'build', 'mex'));
%!   end
%!   try
%!     sluice.build_model (fullfile (tmp, 'bad_definition.c'), 'outdir', fullfile (top, 'out'));
%!     msg{k} = 'no error';
%!   catch err
%!     msg{k} = [err.identifier ' ' err.message];
%!   end
%! end
%! where = which ('sluice.build_model');
%! path (saved);
%! assert (where, fullfile (top, '+sluice', 'build_model.m'));
%! head = ['sluice:build_model:notbuilt the model checker ' fullfile(sdk, 'build', 'model_check.o')];
%! assert (strncmp (msg{1}, [head ' is missing'], numel (head) + 11));
%! assert (strncmp (msg{2}, [head ' is older than ' fullfile(sdk, 'include', 'sluice')], ...
%!                  numel (head) + 15 + numel (fullfile (sdk, 'include', 'sluice'))));
%! head = ['sluice:build_model:notbuilt the gateways'' helper ' fullfile(sdk, 'build', 'mex', 'mexcall.o')];
%! assert (strncmp (msg{3}, [head ' is missing'], numel (head) + 11));
%! % with the checker and the helper in place it runs: the definition's problems
%! assert (strncmp (msg{4}, 'sluice:build_model:baddef ', 26));
%! assert (~isempty (strfind (msg{4}, 'leapfrog')));

%!test
%! % remove the temporary folder
%! clear -f cascade_run cascade_info cascade_fast_run cascade_fast_info two_tanks_run two_tanks_info junk_run junk_info
%! rmpath (fullfile (tmp, 'elsewhere'));
%! rmpath (tmp);
%! old = confirm_recursive_rmdir (false);
%! rmdir (tmp, 's');
%! confirm_recursive_rmdir (old);
%! assert (~exist (tmp, 'dir'));
