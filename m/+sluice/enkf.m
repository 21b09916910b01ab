% -*- texinfo -*-
% @deftypefn  {} {@var{Xa} =} sluice.enkf (@var{Xf}, @var{HXf}, @var{y}, @var{R})
% @deftypefnx {} {[@var{Xa}, @var{info}] =} sluice.enkf (@var{Xf}, @var{HXf}, @var{y}, @var{R}, @var{opts})
% One ensemble Kalman analysis: update a forecast ensemble with observations.
% @var{Xf} is the n x N forecast ensemble
% (one column per member; parameters of a joint estimate are extra rows,
% in the space where they should be updated), @var{HXf} the m x N
% predicted observations of those members (any observation operator,
% linear or not), @var{y} the m observations and @var{R} their error
% covariance: m x m symmetric positive definite, or a vector of the m
% error variances. Returns the n x N analysis ensemble.
%
% Options (a struct or name/value pairs): @code{method} (@code{'etkf'}
% (default; symmetric square root, Hunt et al. 2007; with m x m matrices
% when there are fewer observations than members, else N x N), @code{'enkf'}
% (stochastic with perturbed observations, Burgers et al. 1998),
% @code{'ensrf'} (serial, Whitaker & Hamill 2002), @code{'eakf'} (serial,
% Anderson 2001), @code{'letkf'} (local, Hunt et al. 2007)),
% @code{inflation} (multiplicative, of the prior perturbations, >= 1),
% @code{rtpp}, @code{rtps} (relaxation coefficients in [0, 1]),
% @code{seed} and @code{cycle} (the perturbed observations of
% @code{'enkf'}), @code{threads}, and @code{localization}: a struct with
% @code{geometry} (@code{'line'}, @code{'ring'} with @code{period},
% @code{'plane'}, @code{'sphere'} with @code{sphere_radius}),
% @code{state_pos} (n x dim; NaN rows are not localised),
% @code{obs_pos} (m x dim), @code{radius} (Gaspari-Cohn half-width, scalar
% or m values) and @code{param_factor}. The serial methods and the LETKF
% need a diagonal R. @code{etkf_form} chooses the matrices of the ETKF:
% @code{'auto'} (default: m x m when m < N, else N x N),
% @code{'ensemble'} (N x N) or @code{'observation'} (m x m); the forms
% agree to rounding.
%
% @var{info} has @code{floored} (eigenvalues raised to the floor of an
% ill-conditioned problem), @code{local_skipped} (LETKF rows with no
% observation in reach) and @code{innovation} (d' (HBH' + R)^-1 d).
% @seealso{sluice.filter, sluice.gaspari_cohn}
% @end deftypefn
function [Xa, info] = enkf (Xf, HXf, y, R, varargin)
  if (nargin < 4)
    sluice.internal.compat ('usage', mfilename ());
  end
  opts = struct ('method', 'etkf', 'inflation', 1, 'rtpp', 0, 'rtps', 0, ...
                 'seed', 0, 'cycle', 0, 'threads', 0, 'localization', [], ...
                 'eig_floor', 0, 'etkf_form', 'auto');
  opts = sluice.internal.name_value (opts, varargin, 'enkf');
  form = [];
  if (ischar (opts.etkf_form))
    form = find (strcmp (opts.etkf_form, {'auto', 'ensemble', 'observation'})) - 1;
  end
  if (isempty (form))
    error ('sluice:enkf:badoption', ...
           'etkf_form must be ''auto'', ''ensemble'' or ''observation''');
  end
  if (~ischar (opts.method))
    error ('sluice:enkf:badmethod', 'method must be a name');
  end
  c = struct ('method', opts.method, 'inflation', num (opts.inflation, 'inflation'), ...
              'rtpp', num (opts.rtpp, 'rtpp'), 'rtps', num (opts.rtps, 'rtps'), ...
              'seed', num (opts.seed, 'seed'), 'cycle', num (opts.cycle, 'cycle'), ...
              'threads', num (opts.threads, 'threads'), ...
              'eig_floor', num (opts.eig_floor, 'eig_floor'), 'etkf_form', form);
  L = opts.localization;
  if (~isempty (L))
    if (~isstruct (L) || ~isscalar (L) || ~isfield (L, 'state_pos') || ...
        ~isfield (L, 'obs_pos') || ~isfield (L, 'radius'))
      error ('sluice:enkf:badlocalization', ...
             'localization needs fields state_pos, obs_pos and radius');
    end
    c.geometry = 'line';
    if (isfield (L, 'geometry')), c.geometry = L.geometry; end
    c.period_or_radius = 0;
    if (isfield (L, 'period')), c.period_or_radius = L.period; end
    if (isfield (L, 'sphere_radius')), c.period_or_radius = L.sphere_radius; end
    if (strcmp (c.geometry, 'sphere') && c.period_or_radius == 0)
      c.period_or_radius = 6371;
    end
    c.state_pos = L.state_pos;
    c.obs_pos = L.obs_pos;
    r = L.radius;
    if (isscalar (r))
      r = repmat (r, size (HXf, 1), 1);
    end
    c.obs_c = r;
    c.param_factor = 1;
    if (isfield (L, 'param_factor')), c.param_factor = L.param_factor; end
  end
  [Xa, fl, sk, dof] = sluice.kernel.enkf (Xf, HXf, y, R, c);
  info = struct ('floored', fl, 'local_skipped', sk, 'innovation', dof);
end

function v = num (v, what)
  if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v))
    error ('sluice:enkf:badoption', '%s must be a finite real scalar', what);
  end
end

%!shared X, H, y, R
%! X = [0.3 -1.2 0.8 1.9 -0.4 0.1 -0.9 1.1 0.6 -0.2;
%!      1.4 0.2 -0.7 0.5 0.9 -1.1 0.3 -0.5 1.2 0.0;
%!      -0.6 0.8 0.4 -1.3 0.2 1.0 -0.1 0.7 -0.8 0.5];
%! H = [1 0 0; 0 0 1];
%! y = [0.3; -0.4];
%! R = [0.5; 0.2];

%!test
%! % with a linear operator the ETKF's analysis mean and covariance are the
%! % Kalman update of the ensemble mean and covariance (Kalman gain
%! % K = P H' (H P H' + R)^-1, P the N-1 sample covariance; exact for the
%! % square-root filters, Tippett et al. 2003)
%! Xa = sluice.enkf (X, H * X, y, R);
%! P = cov (X');
%! K = P * H' / (H * P * H' + diag (R));
%! assert (size (Xa), size (X));
%! assert (mean (Xa, 2), mean (X, 2) + K * (y - H * mean (X, 2)), 1e-12);
%! assert (cov (Xa'), (eye (3) - K * H) * P, 1e-12);

%!test
%! % a full R gives the same as its diagonal when it is diagonal; the serial
%! % EnSRF reaches the same Kalman mean
%! a = sluice.enkf (X, H * X, y, R);
%! b = sluice.enkf (X, H * X, y, diag (R));
%! assert (b, a, 1e-12);
%! [c, info] = sluice.enkf (X, H * X, y, R, 'method', 'ensrf');
%! assert (mean (c, 2), mean (a, 2), 1e-12);
%! assert (isstruct (info));

%!test
%! % the ETKF's two forms are the same analysis (the N x N and m x m
%! % eigenproblems share their eigenvectors through the SVD of S: Golub &
%! % Van Loan, Matrix Computations, sec. 2.4), so every choice agrees with
%! % the Kalman update above to rounding, for m < N and m > N alike
%! P = cov (X');
%! K = P * H' / (H * P * H' + diag (R));
%! for f = {'auto', 'ensemble', 'observation'}
%!   Xa = sluice.enkf (X, H * X, y, R, 'etkf_form', f{1});
%!   assert (mean (Xa, 2), mean (X, 2) + K * (y - H * mean (X, 2)), 1e-12);
%!   assert (cov (Xa'), (eye (3) - K * H) * P, 1e-12);
%! end
%! G = [H; 1 1 0; 0 1 1; 1 0 -1; 2 1 0; 0 0 1; 1 1 1; 0 2 1; 1 0 0; 3 1 1; 0 1 0];
%! r = 0.2 + (1:12)' / 10;
%! a = sluice.enkf (X, G * X, (1:12)' / 7, r, 'etkf_form', 'ensemble');
%! b = sluice.enkf (X, G * X, (1:12)' / 7, r, 'etkf_form', 'observation');
%! assert (b, a, 1e-12);

%!error <Invalid call> sluice.enkf (X, H * X, y)
%!error id=sluice:enkf:badoption sluice.enkf (X, H * X, y, R, 'etkf_form', 'both')
%!error id=sluice:enkf:badoption sluice.enkf (X, H * X, y, R, 'etkf_form', 2)
%!error id=sluice:enkf:badmethod sluice.enkf (X, H * X, y, R, 'method', 7)
%!error id=sluice:enkf:badmethod sluice.enkf (X, H * X, y, R, 'method', 'bogus')
%!error id=sluice:enkf:badoption sluice.enkf (X, H * X, y, R, 'inflation', NaN)
%!error id=sluice:enkf:badsize sluice.enkf (X, H * X, [y; 1], R)
%!error id=sluice:enkf:notpd sluice.enkf (X, H * X, y, [0.5; -0.5])
