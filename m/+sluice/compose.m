% -*- texinfo -*-
% @deftypefn  {} {@var{spec} =} sluice.compose (@var{name1}, @var{spec1}, @var{name2}, @var{spec2}, @dots{})
% @deftypefnx {} {@var{spec} =} sluice.compose (@dots{}, 'link', @var{link}, 'time_scale', @var{scales})
% Join compiled models into one, each on its own clock and time step.
% The output of one component (a state) feeds another as its events or as
% one of its forcings; each component keeps its own time step, integrator
% and clock.
%
% Components come as name/spec pairs: @var{name} a valid Octave name
% (distinct, not @code{link} or @code{time_scale}), @var{spec} a compiled
% model from @code{sluice.model} (a built-in) or @code{sluice.build_model},
% with its own options (@code{dt}, @code{integrator}, @code{rtol},
% @code{atol}, @code{x0}, @code{defaults}, bounds). At most one component
% may be a model of @code{sluice.build_model} (its gateway runs the
% composition), used once or several times.
%
% @strong{Time.} The composed model counts time in the first component's
% unit. Option @code{'time_scale'}, a struct (component name: number),
% says how many composed units make one of a component's own (365 for a
% component counting years beside a first one counting days; default 1).
% A component runs on its own clock, @math{t_own = t / scale}, with its
% own step and integrator: it is integrated exactly as it would be alone.
% The composed step is the shortest component step in composed units;
% every component step must be a whole number of it. A component steps at
% the composed times that are whole multiples of its step (counted from
% time 0) and its states stay at its latest step's end in between. A
% component whose step is longer than the composed step cannot take the
% run's forcing (feed it through a link).
%
% @strong{Links} (option @code{'link'}, repeatable; a struct, a struct
% array or a cell of structs), fields:
% @table @code
% @item from
% @code{'component.state'}: the source, a state of a component.
% @item to
% @code{'component.name'}: an event of another component (its jump is
% applied at the end of each period, other event values 0) or one of its
% forcings (held from the end of each period on; 0 before the first).
% @item reduce
% how the source, sampled at the end of each of its steps, is reduced over
% a period: @code{'max'}, @code{'mean'}, @code{'sum'} or @code{'last'}
% (default).
% @item every
% the period in composed units (default: the target's step); a whole
% number of the source's and of the target's steps.
% @item rating
% optional @code{[a, b, x0]}: the value sent is the rating curve
% @math{a (x - x0)^b} for @math{x > x0}, else 0, which for an event link
% is no event. a, b and x0 become parameters of the composed model
% (@code{<link>_a}, @code{<link>_b}, @code{<link>_x0}; bounds a >= 0,
% b >= 0; the values given must have b > 0), so they can be estimated
% with the others.
% @item name
% the link's name (default @code{link1}, @code{link2}, @dots{}).
% @end table
%
% @strong{Names.} Every state and parameter is named
% @code{<component>_<name>} (GR4J's R of component @code{river} is
% @code{river_R}). After the components' states come each link's
% @code{<link>_acc} (the running reduction), @code{<link>_count} (samples
% in it; internal) and @code{<link>_value} (the latest value sent);
% after the components' parameters the links' rating parameters. The
% forcings are the components' forcings not fed by links, by their own
% names; components taking a forcing of the same name share its series.
% The composed model takes no given events.
%
% The spec records the components as @code{components},
% @code{state_component} and @code{param_component} (a link's states and
% parameters belong to its source's component), so @code{sluice.filter}'s
% @code{'coupling', 'weak'} works on it.
%
% Errors: @code{sluice:compose:notcompiled}, @code{duplicate},
% @code{badname}, @code{nosource}, @code{notarget}, @code{badtarget},
% @code{badstep}, @code{badperiod}, @code{badrating}, @code{badlink},
% @code{badscale}, @code{slowforcing}, @code{twousers},
% @code{nocomponents}, @code{badoption} (all as @code{sluice:compose:<reason>}).
%
% Example: a river counting days and a town counting years, the year's
% largest flow read through a rating curve as the town's flood:
% @example
% river = sluice.model ('gr4j');
% town = sluice.model ('flood', 'dt', 1);
% L = struct ('from', 'river.Q', 'to', 'town.W', 'reduce', 'max', ...
%             'every', 365, 'rating', [0.4, 0.6, 5]);
% m = sluice.compose ('river', river, 'town', town, 'link', L, ...
%                     'time_scale', struct ('town', 365));
% @end example
% @seealso{sluice.model, sluice.build_model, sluice.filter}
% @end deftypefn
function spec = compose (varargin)
  if (nargin < 2 || mod (nargin, 2) ~= 0)
    error ('sluice:compose:badoption', ...
           'give components and options as name/value pairs (got %d arguments)', nargin);
  end
  names = cell (1, 0);
  specs = cell (1, 0);
  links = cell (1, 0);
  scales = struct ();
  for k = 1:2:nargin
    key = varargin{k};
    val = varargin{k+1};
    if (~ischar (key) || ~isrow (key))
      error ('sluice:compose:badoption', 'argument %d must be a component name or an option', k);
    end
    switch (key)
      case 'link'
        links = [links, link_list(val)];
      case 'time_scale'
        if (~isstruct (val) || ~isscalar (val))
          error ('sluice:compose:badscale', ...
                 'time_scale must be a struct (component name: composed units per own unit)');
        end
        scales = val;
      otherwise
        if (~isvarname (key))
          error ('sluice:compose:badname', ...
                 '''%s'' is not a valid component name (letters, digits, _; a letter first)', key);
        end
        if (any (strcmp (key, names)))
          error ('sluice:compose:duplicate', 'component ''%s'' is given twice', key);
        end
        if (~isstruct (val) || ~isscalar (val) || ~isfield (val, 'kind') || ...
            ~any (strcmp (val.kind, {'builtin', 'user'})))
          what = sluice.internal.describe (val);
          if (isstruct (val) && isscalar (val) && isfield (val, 'kind') && ischar (val.kind))
            what = sprintf ('a model of kind ''%s''', val.kind);
          end
          error ('sluice:compose:notcompiled', ...
                 ['component ''%s'' must be a compiled model (sluice.model of a built-in ', ...
                  'or sluice.build_model), got %s'], key, what);
        end
        sluice.internal.check_model (val, sprintf ('component ''%s''', key), 'compose');
        names{end+1} = key;
        specs{end+1} = val;
    end
  end
  np = numel (names);
  if (np < 1)
    error ('sluice:compose:nocomponents', 'give at least one component (name, spec)');
  end
  % time: each component's scale and its step in composed units
  sc = ones (1, np);
  for f = fieldnames (scales)'
    at = find (strcmp (f{1}, names));
    if (isempty (at))
      error ('sluice:compose:badscale', 'time_scale names ''%s'', which is no component (%s)', ...
             f{1}, strjoin (names, ', '));
    end
    v = scales.(f{1});
    if (~isa (v, 'double') || ~isreal (v) || ~isscalar (v) || ~isfinite (v) || ~(v > 0))
      error ('sluice:compose:badscale', ...
             'time_scale of ''%s'' must be a finite number > 0', f{1});
    end
    if (at == 1 && v ~= 1)
      error ('sluice:compose:badscale', ...
             'the first component (''%s'') sets the composed time unit: its time_scale is 1', ...
             names{1});
    end
    sc(at) = v;
  end
  h = zeros (1, np);
  for i = 1:np
    h(i) = specs{i}.dt * sc(i);
  end
  D = min (h);
  for i = 1:np
    if (~is_whole (h(i) / D))
      error ('sluice:compose:badstep', ...
             ['component ''%s'' steps by %g composed time units (dt %g x time_scale %g), ', ...
              'which is not a whole number of the shortest component step %g'], ...
             names{i}, h(i), specs{i}.dt, sc(i), D);
    end
  end
  users = {};
  for i = 1:np
    if (strcmp (specs{i}.kind, 'user'))
      users{end+1} = specs{i}.engine;
    end
  end
  if (numel (unique (users)) > 1)
    error ('sluice:compose:twousers', ...
           ['at most one model of sluice.build_model may take part (each has its own ', ...
            'gateway); got %s'], strjoin (unique (users), ', '));
  end

  % the links
  nl = numel (links);
  L = zeros (8, nl);
  fed = cell (1, np);            % per component: link feeding each forcing
  for i = 1:np
    fed{i} = zeros (1, numel (specs{i}.forcings));
  end
  lnames = cell (1, nl);
  rating = cell (1, nl);
  reductions = {'max', 'mean', 'sum', 'last'};
  for l = 1:nl
    lk = links{l};
    lnames{l} = sprintf ('link%d', l);
    if (isfield (lk, 'name'))
      lnames{l} = lk.name;
      if (~ischar (lnames{l}) || ~isvarname (lnames{l}))
        error ('sluice:compose:badlink', 'link %d: name must be a valid name', l);
      end
    end
    if (~isfield (lk, 'from') || ~isfield (lk, 'to'))
      error ('sluice:compose:badlink', 'link %d needs the fields from and to', l);
    end
    [ci, si] = find_name (lk.from, names, specs, 'states', l, 'from', 'nosource');
    [ti, tname] = split_name (lk.to, names, l, 'to', 'notarget');
    ev = find (strcmp (tname, specs{ti}.events));
    fo = find (strcmp (tname, specs{ti}.forcings));
    if (isempty (ev) && isempty (fo))
      t = specs{ti};
      if (any (strcmp (tname, [t.states(:); t.params(:)])))
        error ('sluice:compose:badtarget', ...
               ['link %d: ''%s'' of ''%s'' is a state or parameter, neither an event nor a ', ...
                'forcing (events: %s; forcings: %s)'], l, tname, names{ti}, ...
               list_text (t.events), list_text (t.forcings));
      end
      error ('sluice:compose:notarget', ...
             'link %d: component ''%s'' has no event or forcing ''%s'' (events: %s; forcings: %s)', ...
             l, names{ti}, tname, list_text (t.events), list_text (t.forcings));
    end
    if (ti == ci)
      error ('sluice:compose:badtarget', 'link %d: a link joins two different components', l);
    end
    red = 'last';
    if (isfield (lk, 'reduce'))
      red = lk.reduce;
    end
    rk = find (strcmp (red, reductions));
    if (~ischar (red) || isempty (rk))
      error ('sluice:compose:badlink', 'link %d: reduce must be ''max'', ''mean'', ''sum'' or ''last''', l);
    end
    every = h(ti);
    if (isfield (lk, 'every') && ~isempty (lk.every))
      every = lk.every;
      if (~isa (every, 'double') || ~isreal (every) || ~isscalar (every) || ...
          ~isfinite (every) || ~(every > 0))
        error ('sluice:compose:badperiod', 'link %d: every must be a finite number > 0', l);
      end
    end
    if (~is_whole (every / h(ci)) || ~is_whole (every / h(ti)))
      error ('sluice:compose:badperiod', ...
             ['link %d: its period %g must be a whole number of the steps of its source ', ...
              '''%s'' (%g) and of its target ''%s'' (%g), in composed time units'], ...
             l, every, names{ci}, h(ci), names{ti}, h(ti));
    end
    rating{l} = [];
    if (isfield (lk, 'rating') && ~isempty (lk.rating))
      r = lk.rating;
      if (~isa (r, 'double') || ~isreal (r) || numel (r) ~= 3 || any (~isfinite (r(:))) || ...
          r(1) < 0 || ~(r(2) > 0))
        error ('sluice:compose:badrating', ...
               'link %d: rating must be [a, b, x0], finite, with a >= 0 and b > 0', l);
      end
      rating{l} = r(:);
    end
    if (isempty (ev))
      if (fed{ti}(fo) ~= 0)
        error ('sluice:compose:badtarget', 'links %d and %d both feed forcing ''%s'' of ''%s''', ...
               fed{ti}(fo), l, tname, names{ti});
      end
      fed{ti}(fo) = l;
      L(:, l) = [ci-1; si-1; ti-1; fo-1; 0; rk-1; every; ~isempty(rating{l})];
    else
      L(:, l) = [ci-1; si-1; ti-1; ev-1; 1; rk-1; every; ~isempty(rating{l})];
    end
  end
  if (numel (unique (lnames)) ~= nl)
    error ('sluice:compose:badlink', 'link names must differ');
  end

  % the run's forcings: those no link feeds, shared by name
  forcings = cell (1, 0);
  fmap = cell (1, np);
  for i = 1:np
    fmap{i} = zeros (1, numel (specs{i}.forcings));
    for f = 1:numel (specs{i}.forcings)
      if (fed{i}(f) > 0)
        fmap{i}(f) = -fed{i}(f);
        continue;
      end
      if (h(i) > D * (1 + 1e-9))
        error ('sluice:compose:slowforcing', ...
               ['component ''%s'' steps by %g composed time units, longer than the composed ', ...
                'step %g, so it cannot take the run''s forcing ''%s'' (it would see it at a ', ...
                'later time than its step''s start): feed it through a link or give it the ', ...
                'composed step'], names{i}, h(i), D, specs{i}.forcings{f});
      end
      at = find (strcmp (specs{i}.forcings{f}, forcings));
      if (isempty (at))
        forcings{end+1} = specs{i}.forcings{f};
        at = numel (forcings);
      end
      fmap{i}(f) = at - 1;
    end
  end

  % the spec
  states = {}; params = {}; x0 = []; defaults = []; lower = []; upper = [];
  internal = false (0, 1); scomp = []; pcomp = [];
  parts = struct ('kind', {{}}, 'name', {{}}, 'integrator', {{}}, 'forcing', {fmap}, ...
                  'n', zeros (np, 1), 'dt', zeros (np, 1), 'rtol', zeros (np, 1), ...
                  'atol', zeros (np, 1), 'scale', sc(:), 'links', L);
  for i = 1:np
    s = specs{i};
    n = numel (s.states);
    states = [states; strcat([names{i} '_'], s.states(:))];
    params = [params; strcat([names{i} '_'], s.params(:))];
    x0 = [x0; s.x0(:)];
    defaults = [defaults; s.defaults(:)];
    lower = [lower; s.lower(:)];
    upper = [upper; s.upper(:)];
    if (isfield (s, 'internal'))
      internal = [internal; logical(s.internal(:))];
    else
      internal = [internal; false(n, 1)];
    end
    scomp = [scomp; i * ones(n, 1)];
    pcomp = [pcomp; i * ones(numel (s.params), 1)];
    parts.kind{i} = s.kind;
    parts.name{i} = s.name;
    parts.integrator{i} = s.integrator;
    parts.n(i) = n;
    parts.dt(i) = s.dt;
    parts.rtol(i) = s.rtol;
    parts.atol(i) = s.atol;
  end
  for l = 1:nl
    src = L(1, l) + 1;
    states = [states; strcat([lnames{l} '_'], {'acc'; 'count'; 'value'})];
    x0 = [x0; 0; 0; 0];
    internal = [internal; false; true; false];
    scomp = [scomp; src; src; src];
  end
  for l = 1:nl
    if (~isempty (rating{l}))
      params = [params; strcat([lnames{l} '_'], {'a'; 'b'; 'x0'})];
      defaults = [defaults; rating{l}];
      lower = [lower; 0; 0; -Inf];
      upper = [upper; Inf; Inf; Inf];
      pcomp = [pcomp; repmat(L(1, l) + 1, 3, 1)];
    end
  end
  all_names = [states; params; forcings(:)];
  if (numel (unique (all_names)) ~= numel (all_names))
    error ('sluice:compose:badname', ...
           'the composed names clash (a forcing named like a qualified state?): rename a component');
  end
  first = specs{1};
  states = states(:)';
  params = params(:)';
  spec = struct ('kind', 'composed', 'name', strjoin (names, '+'), ...
                 'summary', sprintf ('composed of %s', strjoin (names, ', ')), ...
                 'states', {states}, 'params', {params}, 'forcings', {forcings}, ...
                 'events', {cell(1, 0)}, 'defaults', defaults, 'lower', lower, ...
                 'upper', upper, 'dt', D, 't0', first.t0, 'x0', x0, ...
                 'integrator', 'discrete', 'rtol', first.rtol, 'atol', first.atol, ...
                 'A', [], 'B', [], 'c', [], 'Q', [], 'L', [], 'fun', [], 'handle_kind', '', ...
                 'internal', internal, 'parts', parts);
  spec.components = names;
  spec.state_component = scomp;
  spec.param_component = pcomp;
  if (~isempty (users))
    spec.engine = users{1};
  end
end

function c = link_list (val)
  if (isstruct (val))
    c = num2cell (val(:)');
  elseif (iscell (val) && all (cellfun (@(x) isstruct (x) && isscalar (x), val(:)')))
    c = val(:)';
  else
    error ('sluice:compose:badlink', 'link must be a struct, a struct array or a cell of structs');
  end
end

function [ci, rest] = split_name (txt, names, l, field, reason)
  if (~ischar (txt) || ~isrow (txt) || ~any (txt == '.'))
    error (['sluice:compose:' reason], ...
           'link %d: %s must be ''component.name'' (components: %s)', l, field, strjoin (names, ', '));
  end
  dot = find (txt == '.', 1);
  ci = find (strcmp (txt(1:dot-1), names));
  rest = txt(dot+1:end);
  if (isempty (ci))
    error (['sluice:compose:' reason], 'link %d: %s names component ''%s''; the components are %s', ...
           l, field, txt(1:dot-1), strjoin (names, ', '));
  end
end

function [ci, si] = find_name (txt, names, specs, what, l, field, reason)
  [ci, nm] = split_name (txt, names, l, field, reason);
  si = find (strcmp (nm, specs{ci}.(what)));
  if (isempty (si))
    error (['sluice:compose:' reason], 'link %d: component ''%s'' has no state ''%s'' (its states: %s)', ...
           l, names{ci}, nm, list_text (specs{ci}.(what)));
  end
end

function t = list_text (c)
  if (isempty (c))
    t = 'none';
  else
    t = strjoin (c(:)', ', ');
  end
end

function tf = is_whole (r)
  % a whole number >= 1, to a relative slack of 1e-9 (as the core's check)
  tf = isfinite (r) && r >= 1 - 1e-9 && abs (r - round (r)) <= 1e-9 * (1 + r);
end

%!test
%! % two GR4J catchments side by side, no links: each is GR4J alone
%! g = sluice.model ('gr4j');
%! m = sluice.compose ('up', g, 'down', g);
%! assert (numel (m.states), 126);
%! assert (m.forcings, {'P', 'E'});
%! f = struct ('time', (0:20)', 'values', [5 + mod((0:20)', 3), 2 * ones(21, 1)]);
%! X = sluice.simulate (m, [], [], 0:20, f);
%! Xg = sluice.simulate (g, [], [], 0:20, f);
%! assert (isequal (X(1:63, :), Xg) && isequal (X(64:126, :), Xg));
%!test
%! % a link's period defaults to its target's step; names given
%! g = sluice.model ('gr4j');
%! m = sluice.compose ('a', g, 'b', g, 'link', struct ('from', 'a.Q', 'to', 'b.P', 'name', 'flow'));
%! assert (m.states(end-2:end), {'flow_acc', 'flow_count', 'flow_value'});
%! assert (m.parts.links(7), 1);
%!error id=sluice:compose:duplicate sluice.compose ('a', sluice.model ('gr4j'), 'a', sluice.model ('gr4j'))
%!error id=sluice:compose:notcompiled sluice.compose ('a', sluice.model (@(t, X, P, U, dt) X, 'n', 1))
%!error id=sluice:compose:nosource sluice.compose ('a', sluice.model ('gr4j'), 'b', sluice.model ('gr4j'), 'link', struct ('from', 'a.W', 'to', 'b.P'))
%!error id=sluice:compose:badperiod sluice.compose ('a', sluice.model ('gr4j'), 'b', sluice.model ('gr4j'), 'link', struct ('from', 'a.Q', 'to', 'b.P', 'every', 2.5))
