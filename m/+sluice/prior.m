% -*- texinfo -*-
% @deftypefn  {} {@var{pr} =} sluice.prior (@var{name}, @var{dist}, @var{args})
% @deftypefnx {} {@var{pr} =} sluice.prior (@var{name}, @var{dist}, @var{args}, 'bounds', [@var{lo} @var{hi}])
% @deftypefnx {} {@var{pr} =} sluice.prior (@var{name}, @var{dist}, @var{args}, @var{name2}, @var{dist2}, @var{args2}, @dots{})
% Prior distributions of model parameters (or of initial states).
%
% Each parameter is given as a triple: its @var{name} (a valid variable
% name, unique within the prior), the name of its distribution @var{dist}
% and the distribution's arguments @var{args} (a real double vector):
%
% @table @code
% @item uniform
% @code{[lo hi]}, lo < hi, both finite.
% @item normal
% @code{[mean sd]}, sd > 0.
% @item lognormal
% @code{[meanlog sdlog]}: the mean and standard deviation of the
% logarithm of the parameter, sdlog > 0.
% @item truncnormal
% @code{[mean sd lo hi]}: a normal distribution truncated to
% [@var{lo}, @var{hi}], lo < hi; @var{lo} may be @code{-Inf} and @var{hi}
% @code{Inf}.
% @item fixed
% @code{[value]}: every member gets @var{value}.
% @end table
%
% The result @var{pr} is a 1-by-p struct array with fields @code{name},
% @code{dist}, @code{args} (a row vector), @code{lower} and @code{upper}.
% @code{lower} and @code{upper} are the bounds of the parameter, which
% decide the space it is estimated in (log for a parameter bounded on one
% side, logit for one bounded on both). By default they are the support
% of its distribution: [lo hi] for uniform and truncnormal, [0 Inf] for
% lognormal, [-Inf Inf] for normal, [value value] for fixed. A triple may
% be followed by the option name @code{bounds} and a value [lo hi], which
% set the bounds of the parameter just named; they must contain the
% support of its distribution (a parameter cannot itself be named
% @code{bounds}).
%
% Priors built separately can be joined with @code{[pr1, pr2]};
% @code{sluice.draw} then checks that the names are unique.
%
% Example:
% @example
% @group
% pr = sluice.prior ('K', 'lognormal', [log(2.5) 0.4], ...
%                    'alpha', 'uniform', [0.1 0.9], 'bounds', [0 1], ...
%                    'mu', 'truncnormal', [0.2 0.1 0 Inf], ...
%                    'dt', 'fixed', 1);
% [P, names] = sluice.draw (pr, 500, 42);   % 4 x 500
% @end group
% @end example
%
% Errors: @code{sluice:prior:badname} (not a valid variable name, or
% repeated), @code{sluice:prior:baddist} (unknown distribution),
% @code{sluice:prior:badargs} (arguments of the wrong class or number,
% non-finite, sd <= 0, lo >= hi), @code{sluice:prior:badbounds}.
% @seealso{sluice.draw}
% @end deftypefn

function pr = prior (varargin)
  % the core's distributions (sluice.kernel.core_names), asked once
  persistent core
  if (isempty (core))
    core = sluice.kernel.core_names ();
  end
  if (nargin < 3)
    sluice.internal.compat ('usage', mfilename ());
  end
  dists = core.distributions;
  forms = core.distribution_forms;
  counts = core.distribution_args;
  % the entries, gathered in cells (a wide model has thousands); a name
  % given twice is found by sorting, and reported where the loop would
  % have met it: before any later entry's error
  names = cell (1, nargin);
  at = zeros (1, nargin);
  ds = names;
  as = names;
  ls = names;
  us = names;
  n = 0;
  k = 1;
  try
  while (k <= nargin)
    name = varargin{k};
    if (~(ischar (name) && isrow (name) && isvarname (name)))
      if (ischar (name) && isrow (name))
        got = ['''' name ''''];
      else
        got = sluice.internal.describe (name);
      end
      error ('sluice:prior:badname', ...
             'argument %d (name): expected a valid variable name, got %s', ...
             k, got);
    end
    if (strcmpi (name, 'bounds'))
      error ('sluice:prior:badname', ...
             'argument %d (name): ''%s'' is the name of an option, not of a parameter; the bounds option follows the arguments of its parameter', ...
             k, name);
    end
    n = n + 1;
    names{n} = name;
    at(n) = k;
    if (k + 2 > nargin)
      error ('sluice:prior:badargs', ...
             'parameter ''%s'': expected a distribution name and its arguments after the name', ...
             name);
    end

    dist = varargin{k + 1};
    id = [];
    if (ischar (dist) && isrow (dist))
      id = find (strcmpi (dist, dists));
    end
    if (isempty (id))
      if (ischar (dist))
        got = ['''' dist(:)' ''''];
      else
        got = sluice.internal.describe (dist);
      end
      error ('sluice:prior:baddist', ...
             'argument %d (distribution of ''%s''): expected one of %s, got %s', ...
             k + 1, name, strjoin (dists, ', '), got);
    end

    args = varargin{k + 2};
    if (~(isa (args, 'double') && isreal (args) && ~issparse (args) ...
          && isvector (args) && numel (args) == counts(id)))
      error ('sluice:prior:badargs', ...
             'argument %d (arguments of ''%s''): a %s prior takes a real double vector %s, got %s', ...
             k + 2, name, dists{id}, forms{id}, sluice.internal.describe (args));
    end
    args = args(:)';
    [lower, upper] = check_args (id - 1, args, name, k + 2);

    k = k + 3;
    if (k <= nargin && is_bounds_key (varargin{k}))
      if (k + 1 > nargin)
        error ('sluice:prior:badbounds', ...
               'argument %d (bounds of ''%s''): the bounds option needs a value [lo hi]', ...
               k, name);
      end
      [lower, upper] = check_bounds (varargin{k + 1}, lower, upper, name, k + 1);
      k = k + 2;
      if (k <= nargin && is_bounds_key (varargin{k}))
        error ('sluice:prior:badbounds', ...
               'argument %d: the bounds of ''%s'' are given twice', k, name);
      end
    end

    ds{n} = dists{id};
    as{n} = args;
    ls{n} = lower;
    us{n} = upper;
  end
  catch err
    named_twice (names(1:n), at);
    rethrow (err);
  end
  named_twice (names(1:n), at);
  pr = struct ('name', names(1:n), 'dist', ds(1:n), 'args', as(1:n), 'lower', ls(1:n), ...
               'upper', us(1:n));
end

% The error for the first name that repeats an earlier one (names{r} at
% argument at(r)), if any.
function named_twice (names, at)
  r = sluice.internal.first_repeat (names);
  if (r > 0)
    error ('sluice:prior:badname', ...
           'argument %d (name): parameter ''%s'' is named twice', at(r), names{r});
  end
end

function tf = is_bounds_key (x)
  tf = ischar (x) && isrow (x) && strcmpi (x, 'bounds');
end

function [lower, upper] = check_args (id, args, name, pos)
  % the core's verdict on the numbers (sl_prior_fault) and the support:
  % a, b, lo, hi as the core holds an entry, unused ones at rest values
  v = [0 0 -Inf Inf];
  v(1:numel (args)) = args;
  [reason, what, lower, upper] = sluice.kernel.prior_eval ('check', id, ...
                                                           v(1), v(2), v(3), v(4));
  what = what{1};
  if (~isempty (reason{1}))
    error ('sluice:prior:badargs', '%s: %s, got %s', ...
           sprintf ('argument %d (arguments of ''%s'')', pos, name), what, ...
           mat2str (args));
  end
end

function [lower, upper] = check_bounds (b, lo, hi, name, pos)
  where = sprintf ('argument %d (bounds of ''%s'')', pos, name);
  if (~(isa (b, 'double') && isreal (b) && ~issparse (b) && isvector (b) ...
        && numel (b) == 2))
    error ('sluice:prior:badbounds', '%s: expected a real double vector [lo hi], got %s', ...
           where, sluice.internal.describe (b));
  end
  if (any (isnan (b)) || ~(b(1) <= b(2)))
    error ('sluice:prior:badbounds', '%s: expected lo <= hi without NaN, got %s', ...
           where, mat2str (b(:)'));
  end
  if (~(b(1) <= lo && b(2) >= hi))
    error ('sluice:prior:badbounds', ...
           '%s: [%g %g] must contain the support [%g %g] of the distribution', ...
           where, b(1), b(2), lo, hi);
  end
  lower = b(1);
  upper = b(2);
end


%!test
%! pr = sluice.prior ('K', 'lognormal', [log(2.5) 0.4], ...
%!                    'alpha', 'uniform', [0.1 0.9], 'bounds', [0 1], ...
%!                    'mu', 'truncnormal', [0.2; 0.1; 0; Inf], ...
%!                    'theta', 'normal', [-1.37 2.385], ...
%!                    'dt', 'fixed', 1.25);
%! assert (size (pr), [1 5]);
%! assert (fieldnames (pr), {'name'; 'dist'; 'args'; 'lower'; 'upper'});
%! assert ({pr.name}, {'K', 'alpha', 'mu', 'theta', 'dt'});
%! assert ({pr.dist}, {'lognormal', 'uniform', 'truncnormal', 'normal', 'fixed'});
%! assert (pr(3).args, [0.2 0.1 0 Inf]);
%! assert ([pr.lower], [0 0 0 -Inf 1.25]);
%! assert ([pr.upper], [Inf 1 Inf Inf 1.25]);

%!test
%! % default bounds are the support; distribution names are case-blind
%! pr = sluice.prior ('a', 'Uniform', [-1.37 2.385]);
%! assert (pr.dist, 'uniform');
%! assert ([pr.lower pr.upper], [-1.37 2.385]);
%! pr = sluice.prior ('b', 'truncnormal', [1 2 -Inf 3.5]);
%! assert ([pr.lower pr.upper], [-Inf 3.5]);

%!test
%! % bounds may widen the support, including to the whole line
%! pr = sluice.prior ('a', 'uniform', [0.2 0.4], 'Bounds', [-Inf Inf], ...
%!                    'b', 'fixed', 3, 'bounds', [0 10], ...
%!                    'c', 'lognormal', [0 1], 'bounds', [0 Inf]);
%! assert ([pr.lower], [-Inf 0 0]);
%! assert ([pr.upper], [Inf 10 Inf]);

%!test
%! % priors built separately join by concatenation
%! p1 = sluice.prior ('a', 'normal', [0 1]);
%! p2 = sluice.prior ('b', 'uniform', [0 1], 'c', 'fixed', 2);
%! pr = [p1, p2];
%! assert (size (pr), [1 3]);
%! assert ({pr.name}, {'a', 'b', 'c'});

%!error <Invalid call> sluice.prior ()
%!error <Invalid call> sluice.prior ('a', 'normal')
%!error id=sluice:prior:badname sluice.prior (1, 'normal', [0 1])
%!error id=sluice:prior:badname sluice.prior ({'a'}, 'normal', [0 1])
%!error id=sluice:prior:badname sluice.prior ('1a', 'normal', [0 1])
%!error id=sluice:prior:badname sluice.prior ('a b', 'normal', [0 1])
%!error id=sluice:prior:badname sluice.prior ('', 'normal', [0 1])
%!error id=sluice:prior:badname sluice.prior (['ab'; 'cd'], 'normal', [0 1])
%!error id=sluice:prior:badname sluice.prior ('end', 'normal', [0 1])
%!error id=sluice:prior:badname sluice.prior ('bounds', 'normal', [0 1])
%!error id=sluice:prior:badname sluice.prior ('a', 'normal', [0 1], 'a', 'uniform', [0 1])
%!error <argument 4 \(name\): parameter 'a' is named twice> sluice.prior ('a', 'normal', [0 1], 'a', 'uniform', [0 1], 'b', 'nosuch', 1)
%!error <argument 5 \(distribution of 'b'\)> sluice.prior ('a', 'normal', [0 1], 'b', 'nosuch', 1, 'a', 'uniform', [0 1])
%!error <argument 9 \(name\): parameter 'b' is named twice> sluice.prior ('a', 'uniform', [-1 1], 'bounds', [-1 1], 'b', 'normal', [0 1], 'b', 'normal', [0 2])
%!test
%! % thousands of names (a wide model): in order, each once
%! n = 3000;
%! args = cell (1, 3 * n);
%! for i = 1:n
%!   args(3 * i - 2:3 * i) = {sprintf('x%d', i), 'normal', [i 1]};
%! end
%! pr = sluice.prior (args{:});
%! assert (size (pr), [1 n]);
%! assert ({pr([1 n]).name}, {'x1', sprintf('x%d', n)});
%! assert (pr(17).args, [17 1]);
%! args{3 * n - 2} = 'x5';
%! msg = '';
%! try
%!   sluice.prior (args{:});
%! catch err
%!   msg = err.message;
%! end
%! assert (msg, sprintf ('argument %d (name): parameter ''x5'' is named twice', 3 * n - 2));
%!error id=sluice:prior:badname sluice.prior ('a', 'normal', [0 1], 5, 'uniform', [0 1])
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', [0 1], 'b')
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', [0 1], 'b', 'normal')
%!error id=sluice:prior:baddist sluice.prior ('a', 'gamma', [1 1])
%!error id=sluice:prior:baddist sluice.prior ('a', '', [1 1])
%!error id=sluice:prior:baddist sluice.prior ('a', {'normal'}, [0 1])
%!error id=sluice:prior:baddist sluice.prior ('a', 1, [0 1])
%!error id=sluice:prior:baddist sluice.prior ('a', ['normal'; 'normal'], [0 1])
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', [0 1 2])
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', 1)
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', [])
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', [0 1; 2 3])
%!error id=sluice:prior:badargs sluice.prior ('a', 'truncnormal', [0 1 2])
%!error id=sluice:prior:badargs sluice.prior ('a', 'fixed', [1 2])
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', single ([0 1]))
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', int32 ([0 1]))
%!error id=sluice:prior:badargs sluice.prior ('a', 'uniform', logical ([0 1]))
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', [0 1] + 1i)
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', sparse ([0 1]))
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', {0, 1})
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', struct ('m', 0, 's', 1))
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', '01')
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', [NaN 1])
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', [0 Inf])
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', [0 0])
%!error id=sluice:prior:badargs sluice.prior ('a', 'normal', [0 -1])
%!error id=sluice:prior:badargs sluice.prior ('a', 'lognormal', [0 0])
%!error id=sluice:prior:badargs sluice.prior ('a', 'lognormal', [-Inf 1])
%!error id=sluice:prior:badargs sluice.prior ('a', 'uniform', [1 1])
%!error id=sluice:prior:badargs sluice.prior ('a', 'uniform', [2 1])
%!error id=sluice:prior:badargs sluice.prior ('a', 'uniform', [0 Inf])
%!error id=sluice:prior:badargs sluice.prior ('a', 'truncnormal', [0 1 2 2])
%!error id=sluice:prior:badargs sluice.prior ('a', 'truncnormal', [0 1 3 2])
%!error id=sluice:prior:badargs sluice.prior ('a', 'truncnormal', [0 1 NaN 2])
%!error id=sluice:prior:badargs sluice.prior ('a', 'truncnormal', [0 1 Inf Inf])
%!error id=sluice:prior:badargs sluice.prior ('a', 'truncnormal', [0 0 0 1])
%!error id=sluice:prior:badargs sluice.prior ('a', 'truncnormal', [Inf 1 0 1])
%!error id=sluice:prior:badargs sluice.prior ('a', 'fixed', NaN)
%!error id=sluice:prior:badargs sluice.prior ('a', 'fixed', Inf)
%!error id=sluice:prior:badbounds sluice.prior ('a', 'normal', [0 1], 'bounds')
%!error id=sluice:prior:badbounds sluice.prior ('a', 'normal', [0 1], 'bounds', [0 Inf])
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', [0.5 2])
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', [-1 0.5])
%!error id=sluice:prior:badbounds sluice.prior ('a', 'lognormal', [0 1], 'bounds', [0.1 Inf])
%!error id=sluice:prior:badbounds sluice.prior ('a', 'fixed', 2, 'bounds', [3 4])
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', [2 -1])
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', [NaN 1])
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', [0 1 2])
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', 1)
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', single ([0 1]))
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', int32 ([0 1]))
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', logical ([0 1]))
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', [0 1] + 1i)
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', sparse ([0 1]))
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', {0, 1})
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', struct ('lo', 0))
%!error id=sluice:prior:badbounds sluice.prior ('a', 'uniform', [0 1], 'bounds', [0 1], 'bounds', [0 1])
