% -*- texinfo -*-
% @deftypefn {} {@var{w} =} sluice.gaspari_cohn (@var{d}, @var{c})
% The Gaspari & Cohn (1999) compactly supported correlation function.
% It is evaluated (their eq. 4.10) at distances @var{d} for half-width @var{c} > 0 (a
% scalar or one per distance): with z = |d|/c,
% @math{-z^5/4 + z^4/2 + 5z^3/8 - 5z^2/3 + 1} for z <= 1,
% @math{z^5/12 - z^4/2 + 5z^3/8 + 5z^2/3 - 5z + 4 - 2/(3z)} for 1 < z < 2,
% and 0 beyond. It is the localisation weight of the ensemble Kalman
% methods of @code{sluice.filter} and @code{sluice.enkf}.
% @seealso{sluice.enkf, sluice.filter}
% @end deftypefn
function w = gaspari_cohn (d, c)
  if (nargin ~= 2)
    sluice.internal.compat ('usage', mfilename ());
  end
  w = sluice.kernel.gaspari_cohn (d, c);
end

%!assert (sluice.gaspari_cohn (0, 1), 1)
%!assert (sluice.gaspari_cohn (2.5, 2.5), 5/24, 1e-15)       % C(1) = 5/24
%!assert (sluice.gaspari_cohn (0.6, 1.2), 263/384, 1e-15)    % C(1/2) = 263/384
%!assert (sluice.gaspari_cohn ([-3 3], 1.5), [0 0])
%!assert (sluice.gaspari_cohn (-0.7, 1), sluice.gaspari_cohn (0.7, 1))
%!test
%! % continuous at z = 1 and z = 2 (Gaspari & Cohn 1999)
%! e = 1e-9;
%! assert (sluice.gaspari_cohn (1 - e, 1), sluice.gaspari_cohn (1 + e, 1), 1e-8);
%! assert (sluice.gaspari_cohn (2 - e, 1), 0, 1e-8);
%!error id=sluice:gaspari_cohn:badradius sluice.gaspari_cohn (1, 0)
%!error id=sluice:gaspari_cohn:badsize sluice.gaspari_cohn ([1 2 3], [1 2])
%!error id=sluice:gaspari_cohn:badclass sluice.gaspari_cohn (single (1), 1)
%!error id=sluice:gaspari_cohn:nonfinite sluice.gaspari_cohn (NaN, 1)
