% -*- texinfo -*-
% @deftypefn  {} {@var{a} =} sluice.resample (@var{w})
% @deftypefnx {} {@var{a} =} sluice.resample (@var{w}, @var{scheme})
% @deftypefnx {} {@var{a} =} sluice.resample (@var{w}, @var{scheme}, @var{name}, @var{value}, @dots{})
% Draw ancestor indices from importance weights.
%
% @var{w} is a real double vector of N weights: finite, non-negative, with
% a positive sum (they need not be normalised). The result @var{a} is a
% 1-by-M row of member indices (1-based, doubles): the new ensemble is
% @code{X(:, a)}. Member @var{i} appears about M w_i / sum(w) times;
% under every scheme the expected number of copies is exactly that
% (the schemes are unbiased), and a member of weight zero is never chosen.
%
% @var{scheme} (default @code{'systematic'}, case ignored):
% @table @code
% @item systematic
% one uniform u and positions (k - 1 + u) / M, k = 1..M (Kitagawa 1996).
% Each member gets floor(M w_i) or ceil(M w_i) copies (w normalised); the
% least resampling noise of the four and the fastest. @var{a} is sorted.
% @item stratified
% one uniform per stratum: positions (k - 1 + u_k) / M. @var{a} is sorted.
% @item residual
% floor(M w_i) copies of member @var{i} first, in order, then the
% remaining draws multinomial on the residual weights M w_i - floor(M w_i),
% sorted.
% @item multinomial
% M independent draws from the weights, returned sorted.
% @end table
%
% Options (name, value pairs):
% @table @code
% @item count
% M, the number of ancestors (default N), a whole number from 1 to
% 4294967294.
% @item seed
% a whole number from 0 to 2^53. The same seed and cycle give the same
% ancestors on every run and machine. Without a seed, one is taken from
% Octave's own generator (@code{floor (rand () * 2^32)}), so repeated calls
% differ as @code{rand} does and @code{rand ('state', @dots{})} makes them
% repeatable.
% @item cycle
% a whole number from 0 to 2^32 - 1 (default 0): the assimilation cycle.
% With one seed for a whole run, each cycle draws its own independent
% uniforms.
% @end table
%
% Example:
% @example
% @group
% [w, ess] = sluice.weights (loglik);
% if (ess < numel (w) / 2)
%   a = sluice.resample (w, 'systematic', 'seed', 7, 'cycle', t);
%   X = X(:, a);
% end
% @end group
% @end example
%
% Errors: @code{sluice:resample:badclass} (@var{w} not a real full double:
% single, integer, logical, complex, sparse, cell, struct),
% @code{sluice:resample:badsize} (a matrix), @code{sluice:resample:empty},
% @code{sluice:resample:badweight} (NaN, Inf or negative; the message
% names the member), @code{sluice:resample:zeroweights} (all zero),
% @code{sluice:resample:badscheme}, @code{sluice:resample:badoption}
% (unknown option name, or a name without a value),
% @code{sluice:resample:badcount}, @code{sluice:resample:badseed},
% @code{sluice:resample:badcycle}, @code{sluice:resample:nomemory}.
% @seealso{sluice.weights}
% @end deftypefn

function a = resample (w, varargin)
  % the core's names (sluice.kernel.core_names), asked once
  persistent core
  if (isempty (core))
    core = sluice.kernel.core_names ();
  end
  if (nargin < 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  opt_names = {'count', 'seed', 'cycle'};
  scheme = 'systematic';
  args = varargin;
  if (numel (args) >= 1 && ~(ischar (args{1}) && isrow (args{1}) && any (strcmpi (args{1}, opt_names))))
    scheme = args{1};
    args = args(2:end);
    if (~(ischar (scheme) && (isrow (scheme) || isempty (scheme))))
      error ('sluice:resample:badscheme', ...
             'argument 2 (scheme): expected a scheme name (systematic, stratified, residual or multinomial), got %s', ...
             sluice.internal.describe (scheme));
    end
    scheme = lower (scheme);
    if (~any (strcmp (scheme, core.resamplers)))
      error ('sluice:resample:badscheme', ...
             'argument 2 (scheme): unknown resampling scheme ''%s''; expected systematic, stratified, residual or multinomial', ...
             scheme);
    end
  end
  if (mod (numel (args), 2) ~= 0)
    error ('sluice:resample:badoption', ...
           'options must come in name, value pairs; option ''%s'' has no value', ...
           name_of (args{end}));
  end

  count = [];
  seed = [];
  cycle = 0;
  for k = 1:2:numel (args)
    name = args{k};
    value = args{k + 1};
    if (~(ischar (name) && isrow (name)))
      error ('sluice:resample:badoption', ...
             'option names must be strings (count, seed, cycle), got %s', sluice.internal.describe (name));
    end
    switch (lower (name))
      case 'count'
        if (~whole (value, 1, 4294967294))
          error ('sluice:resample:badcount', ...
                 'option ''count'': expected a whole number from 1 to 4294967294 (a real double scalar), got %s', ...
                 sluice.internal.describe (value, 'value'));
        end
        count = value;
      case 'seed'
        if (~whole (value, 0, flintmax ()))
          error ('sluice:resample:badseed', ...
                 'option ''seed'': expected a whole number from 0 to 2^53 (a real double scalar), got %s', ...
                 sluice.internal.describe (value, 'value'));
        end
        seed = value;
      case 'cycle'
        if (~whole (value, 0, 4294967295))
          error ('sluice:resample:badcycle', ...
                 'option ''cycle'': expected a whole number from 0 to 2^32 - 1 (a real double scalar), got %s', ...
                 sluice.internal.describe (value, 'value'));
        end
        cycle = value;
      otherwise
        error ('sluice:resample:badoption', ...
               'unknown option ''%s''; the options are count, seed and cycle', name);
    end
  end

  if (isa (w, 'double'))
    % a range (such as 1:N) reaches a MEX gateway of Octave 7.3 in a form
    % whose typed data access aborts Octave; double () turns it into an
    % ordinary matrix (and returns any other double array as it is)
    w = double (w);
  end
  if (isempty (count))
    count = numel (w);   % an empty or non-vector w is reported by the kernel
  end
  if (isempty (seed))
    seed = floor (rand () * 2^32);
  end
  a = sluice.kernel.resample (w, scheme, count, seed, cycle);
end

function ok = whole (v, lo, hi)
  ok = isa (v, 'double') && isreal (v) && ~issparse (v) && isscalar (v) ...
       && isfinite (v) && v == fix (v) && v >= lo && v <= hi;
end

function s = name_of (x)
  if (ischar (x) && isrow (x))
    s = x;
  else
    s = sluice.internal.describe (x);
  end
end



% Reference facts: Kitagawa (1996); Douc, Cappe & Moulines (2005):
% systematic, stratified, residual and multinomial resampling are unbiased
% (E[N_i] = M w_i); systematic gives floor(M w_i) or ceil(M w_i) copies;
% weights (0.1, 0.2, 0.3, 0.4) with M = 10 give (1, 2, 3, 4) copies under
% systematic and residual resampling.

%!function n = copies (a, N)
%!  n = accumarray (a(:), 1, [N 1])';
%!endfunction

%!test
%! w = [0.1 0.2 0.3 0.4];
%! for s = 1:50
%!   a = sluice.resample (w, 'systematic', 'count', 10, 'seed', s);
%!   assert (copies (a, 4), [1 2 3 4]);
%!   assert (a, [1 2 2 3 3 3 4 4 4 4]);
%!   a = sluice.resample (w, 'residual', 'count', 10, 'seed', s, 'cycle', s);
%!   assert (copies (a, 4), [1 2 3 4]);
%! end

%!test
%! % output: 1-by-M double row of indices in 1..N; sorted except residual
%! w = [0.3; 0.05; 0.2; 0.45];                 % a column is accepted
%! for sc = {'systematic', 'stratified', 'residual', 'multinomial'}
%!   a = sluice.resample (w, sc{1}, 'count', 13, 'seed', 3);
%!   assert (class (a), 'double');
%!   assert (size (a), [1 13]);
%!   assert (all (a >= 1 & a <= 4 & a == fix (a)));
%!   if (~strcmp (sc{1}, 'residual'))
%!     assert (issorted (a));
%!   end
%! end

%!test
%! % systematic: floor or ceil of M w_i copies, for random weights and M
%! rand ('state', 11);
%! for t = 1:200
%!   N = randi (40);
%!   M = randi (90);
%!   w = rand (1, N) .^ 3;
%!   a = sluice.resample (w, 'systematic', 'count', M, 'seed', t);
%!   x = M * w / sum (w);
%!   n = copies (a, N);
%!   assert (all (n >= floor (x) & n <= ceil (x)));
%! end

%!test
%! % weights of zero are never chosen
%! w = [0 1 0 0 2 0 3 0];
%! for sc = {'systematic', 'stratified', 'residual', 'multinomial'}
%!   for s = 1:20
%!     a = sluice.resample (w, sc{1}, 'count', 50, 'seed', s);
%!     assert (~any (w(a) == 0));
%!   end
%! end

%!test
%! % unbiased: the copies of member i in M multinomial draws are
%! % Binomial(M, w_i); two-sided p-values from the statistics package's
%! % binocdf, each test at 1e-6/4 (Bonferroni over the 4 members)
%! pkg load statistics
%! w = [0.05 0.15 0.3 0.5];
%! M = 20000;
%! a = sluice.resample (w, 'multinomial', 'count', M, 'seed', 99);
%! n = copies (a, 4);
%! p = 2 * min (binocdf (n, M, w), 1 - binocdf (n - 1, M, w));
%! assert (all (p > 1e-6 / 4));

%!test
%! % unbiased: the mean copies over many cycles approach M w_i for every
%! % scheme; 4 schemes x 4 members, each z-score within the two-sided
%! % 1e-6/16 normal quantile (Bonferroni; norminv from the statistics
%! % package), variance bounded by the multinomial one M w (1 - w)
%! pkg load statistics
%! w = [0.05 0.15 0.3 0.5];
%! M = 7;
%! R = 4000;
%! zc = norminv (1 - 1e-6 / 32);
%! for sc = {'systematic', 'stratified', 'residual', 'multinomial'}
%!   tot = zeros (1, 4);
%!   for c = 1:R
%!     tot = tot + copies (sluice.resample (w, sc{1}, 'count', M, 'seed', 5, 'cycle', c), 4);
%!   end
%!   z = (tot / R - M * w) ./ sqrt (M * w .* (1 - w) / R);
%!   assert (all (abs (z) < zc), sprintf ('%s: z = %s', sc{1}, mat2str (z, 3)));
%! end

%!test
%! % reproducible: same seed and cycle -> same ancestors; another cycle
%! % or seed -> different ones
%! rand ('state', 1);
%! w = rand (1, 1000);
%! for sc = {'systematic', 'stratified', 'residual', 'multinomial'}
%!   a = sluice.resample (w, sc{1}, 'seed', 2^53, 'cycle', 4);
%!   assert (sluice.resample (w, sc{1}, 'seed', 2^53, 'cycle', 4), a);
%!   assert (~isequal (sluice.resample (w, sc{1}, 'seed', 2^53, 'cycle', 5), a));
%!   assert (~isequal (sluice.resample (w, sc{1}, 'seed', 0, 'cycle', 4), a));
%! end

%!test
%! % without a seed: one draw of rand () supplies it
%! w = 1:100;
%! rand ('state', 42);
%! a1 = sluice.resample (w, 'multinomial');
%! x1 = rand ();
%! rand ('state', 42);
%! s = floor (rand () * 2^32);
%! a2 = sluice.resample (w, 'multinomial', 'seed', s);
%! x2 = rand ();
%! assert (a1, a2);
%! assert (x1, x2);
%! assert (~isequal (sluice.resample (w, 'multinomial'), a1));

%!test
%! % defaults, case of the scheme name, options without a scheme
%! w = [1 2 3 4];
%! assert (numel (sluice.resample (w)), 4);
%! assert (sluice.resample (w, 'SYSTEMATIC', 'seed', 1), ...
%!         sluice.resample (w, 'seed', 1));
%! assert (sluice.resample (w, 'Count', 3, 'SEED', 8), ...
%!         sluice.resample (w, 'systematic', 'count', 3, 'seed', 8, 'cycle', 0));
%! assert (sluice.resample (5, 'count', 3), [1 1 1]);
%! assert (sluice.resample (0:3, 'count', 6, 'seed', 1), [2 3 3 4 4 4]);

%!error <Invalid call> sluice.resample ()
%!error id=sluice:resample:badclass sluice.resample (single ([1 2]))
%!error id=sluice:resample:badclass sluice.resample (int32 ([1 2]))
%!error id=sluice:resample:badclass sluice.resample (true (1, 2))
%!error id=sluice:resample:badclass sluice.resample ([1 2i])
%!error id=sluice:resample:badclass sluice.resample (sparse ([1 2]))
%!error id=sluice:resample:badclass sluice.resample ({1, 2})
%!error id=sluice:resample:badclass sluice.resample (struct ('w', [1 2]))
%!error id=sluice:resample:badsize sluice.resample (ones (2, 3))
%!error id=sluice:resample:badsize sluice.resample (ones (2, 3), 'systematic', 'count', 4)
%!error id=sluice:resample:empty sluice.resample ([])
%!error id=sluice:resample:empty sluice.resample (zeros (0, 1), 'residual', 'count', 3)
%!error id=sluice:resample:badweight sluice.resample ([1 NaN 2])
%!error <weight 2 of 3 is NaN> sluice.resample ([1 NaN 2])
%!error id=sluice:resample:badweight sluice.resample ([1 Inf 2])
%!error id=sluice:resample:badweight sluice.resample ([1 -0.5 2])
%!error <weight 2 of 3 is negative> sluice.resample ([1 -0.5 2])
%!error id=sluice:resample:zeroweights sluice.resample ([0 0 0])
%!error id=sluice:resample:zeroweights sluice.resample ([0 0 0], 'multinomial')
%!error id=sluice:resample:badscheme sluice.resample ([1 2], 'bogus')
%!error id=sluice:resample:badscheme sluice.resample ([1 2], 5)
%!error id=sluice:resample:badscheme sluice.resample ([1 2], {'systematic'})
%!error id=sluice:resample:badscheme sluice.resample ([1 2], '')
%!error id=sluice:resample:badoption sluice.resample ([1 2], 'systematic', 'bogus', 1)
%!error id=sluice:resample:badoption sluice.resample ([1 2], 'systematic', 'count')
%!error id=sluice:resample:badoption sluice.resample ([1 2], 'count')
%!error id=sluice:resample:badoption sluice.resample ([1 2], 'systematic', 3, 4)
%!error id=sluice:resample:badcount sluice.resample ([1 2], 'count', 0)
%!error id=sluice:resample:badcount sluice.resample ([1 2], 'count', -1)
%!error id=sluice:resample:badcount sluice.resample ([1 2], 'count', 2.5)
%!error id=sluice:resample:badcount sluice.resample ([1 2], 'count', Inf)
%!error id=sluice:resample:badcount sluice.resample ([1 2], 'count', 2^32)
%!error id=sluice:resample:badcount sluice.resample ([1 2], 'count', int32 (3))
%!error id=sluice:resample:badcount sluice.resample ([1 2], 'count', [2 3])
%!error id=sluice:resample:badseed sluice.resample ([1 2], 'seed', -1)
%!error id=sluice:resample:badseed sluice.resample ([1 2], 'seed', 1.5)
%!error id=sluice:resample:badseed sluice.resample ([1 2], 'seed', 2^53 + 2)
%!error id=sluice:resample:badseed sluice.resample ([1 2], 'seed', NaN)
%!error id=sluice:resample:badseed sluice.resample ([1 2], 'seed', '7')
%!error id=sluice:resample:badcycle sluice.resample ([1 2], 'cycle', -1)
%!error id=sluice:resample:badcycle sluice.resample ([1 2], 'cycle', 2^32)
%!error id=sluice:resample:badcycle sluice.resample ([1 2], 'cycle', true)
%!error id=sluice:resample:badscheme sluice.resample ([1 2], cat (3, 'count', 'count'), 3)
