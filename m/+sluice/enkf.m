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
% @code{'enkf'}), @code{threads} (for the LETKF's local analyses; 0, the
% default: the cores when the analysis is large enough to gain from them,
% else one), and @code{localization}: a struct with
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
  % the options are decoded and checked by the gateway: an analysis is
  % often called once a cycle inside the user's own loop
  [Xa, fl, sk, dof] = sluice.kernel.enkf (Xf, HXf, y, R, varargin{:});
  if (nargout > 1)
    info = struct ('floored', fl, 'local_skipped', sk, 'innovation', dof);
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
