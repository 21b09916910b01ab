% -*- texinfo -*-
% @deftypefn  {} {@var{spec} =} sluice.model ('linear', @var{name}, @var{value}, @dots{})
% @deftypefnx {} {@var{spec} =} sluice.model (@var{builtin}, @var{name}, @var{value}, @dots{})
% @deftypefnx {} {@var{spec} =} sluice.model (@var{fun}, @var{name}, @var{value}, @dots{})
% Describe a model: its states, parameters, forcings, time step and dynamics.
% The spec is what @code{sluice.filter} and the other workflows run.
%
% @strong{Built-in linear-Gaussian model} (@code{'linear'}):
% @math{x_k = A x_{k-1} + B u_k + c + q_k}, @math{q_k ~ N(0, Q)}, one step
% per @code{dt}. Options: @code{'A'} (n x n, required), @code{'Q'} (n x n
% symmetric positive semi-definite, default zeros), @code{'B'} (n x q,
% needed with forcings), @code{'c'} (n x 1, default zeros).
%
% @strong{An Octave function} @var{fun}: a step map
% @code{X = fun (t, X, P, U, dt)} advancing every member at once, where
% @var{X} is n x N (one column per member), @var{P} p x N parameters in
% natural units, @var{U} q x N each member's forcing values at @var{t}.
% It must return the n x N states at @code{t + dt}; a non-finite column
% marks a member that blew up (it is given zero weight and reported).
%
% @strong{Built-in compiled models} (@code{sluice.model (name, @dots{})};
% @code{sluice.kernel.model_info ()} lists them, @code{sluice.kernel.model_info (name)}
% gives names, defaults and bounds):
%
% @table @code
% @item 'lorenz63'
% Lorenz (1963): dx = sigma (y - x), dy = x (rho - z) - y, dz = x y - beta z;
% states x, y, z; parameters sigma = 10, rho = 28, beta = 8/3; RK4, dt 0.01.
% @item 'lorenz96'
% Lorenz (1996): dx_i/dt = (x_@{i+1@} - x_@{i-2@}) x_@{i-1@} - x_i + F,
% cyclic; any n >= 4 (option @code{'n'}); parameter F = 8; RK4, dt 0.01.
% @item 'flood'
% the human-flood model of socio-hydrology (Di Baldassarre et al. 2013, in
% the form of Viglione et al. 2014; equations read from a secondary
% source). States G (settlement size), D (distance from the river), H
% (levee height), M (collective memory), F and R (damage fraction and
% levee raising of the latest flood; 0 before any). Between floods
% dG/dt = rhoE (1 - D) G, dD/dt = (M - D/lambdaP) sigmaP/sqrt(G),
% dH/dt = -kappaT H, dM/dt = -muS M. At a flood of high-water level W
% (the event series @code{W}, option @code{'events'} of the runs):
% F = 1 - exp(-(W + xiH H)/(alphaH D)) if W + xiH H > H, else 0; a levee
% raising R* = epsT (W + xiH H - H) is made when it is worth it
% (F G > gammaE R* sqrt(G)) and affordable (G - F G > gammaE R* sqrt(G));
% G -> G - F G - gammaE R sqrt(G), H -> H + R, M -> M + S with S = alphaS F
% if the levee was raised, else F. Parameters (defaults): xiH 0.5,
% alphaH 10, rhoE 1, gammaE 0.005 (Inf: no levees ever), lambdaP 1,
% sigmaP 0.1, epsT 1.1, kappaT 0.1, alphaS 0.5 (in [0, 1]), muS 0.215;
% all >= 0. Initial state G 0.01, D 1, H = M = 0. Dimensionless units.
% Adaptive Dormand-Prince 5(4) by default (dt 0.1 between outputs): a
% settlement reduced to a tiny G makes D stiff.
% @item 'gr4j'
% the GR4J daily rainfall-runoff model (Perrin, Michel & Andreassian 2003,
% equations as in the authors' reference spreadsheet): parameters X1
% (production store capacity, mm), X2 (groundwater exchange, mm/d), X3
% (routing store capacity, mm), X4 (unit hydrograph time base, d, up to
% 20); forcings P (rain) and E (potential evapotranspiration), mm/d;
% states S and R (stores, mm), the unit-hydrograph queues uh1_1..uh1_20 and
% uh2_1..uh2_40, and Q, the flow of the latest day (mm/d). A discrete
% daily map (dt 1). The queues are internal states (@code{internal} of
% the spec): assimilated like the others, but not drawn by
% @code{sluice.report} unless asked for.
% @item 'river_town'
% a river and the town beside it as one coupled model: the GR4J model
% above makes the river's daily flow, and each year's largest flow,
% through a rating curve, is the flood the human-flood model above meets.
% Time is in days; a discrete daily map (dt 1) with forcings P and E
% (mm/d) as for GR4J. Each day: GR4J advances one day; Qmax, the largest
% daily flow Q of the current year so far (mm/d), becomes max (Qmax, Q);
% the town advances over the same day with the flood model's own
% right-hand side and integrator (Dormand-Prince 5(4), rtol 1e-6, atol
% 1e-9), its four rates per year (rhoE, sigmaP, kappaT, muS) divided by
% @code{year_length}, so the town runs in days exactly as the flood model
% would with those rates; the day counter @code{day} grows by one. When
% @code{day} reaches @code{year_length} the year ends with that day: its
% high-water level is level = a (Qmax - Q0)^b if Qmax > Q0, else 0
% (h = 0: no flood, the town is left alone), a level > 0 is a flood of
% W = level (the flood model's jump, at the end of the day), and Qmax and
% @code{day} start again from 0. Years thus end every @code{year_length}
% days from the start of the run (an x0 with day > 0 starts mid-year).
% Given events W (the runs' option @code{'events'}) are floods too, applied
% at the end of the day that holds them. States (72): GR4J's 63 (S, R, the
% queues, Q), the town's G, D, H, M, F and R_levee (the flood model's R,
% renamed: GR4J has an R), Qmax, level (the latest year end's high-water
% level, 0 before the first) and day. Internal: GR4J's queues and day.
% Parameters (18): X1..X4 and the flood model's ten, with their defaults
% and bounds, then the rating curve a (>= 0, default 0.4; 0: the river
% never floods the town, and the two parts run as the two models alone),
% b (in [0.1, 3], default 0.6), Q0 (mm/d, >= 0, default 5) and year_length
% (days, a whole number >= 1, default 365; a setting, not an unknown: the
% spec's bounds of year_length both equal it, so runs refuse another value
% and a prior cannot move it). The level is in the flood
% model's units of W, a in those units per (mm/d)^b. Options:
% @code{'rating'}, [a b Q0], and @code{'year_length'}, days, set those
% defaults. A year whose largest flow stays at or below Q0 is no flood
% (level 0): the river stayed below the bank, by design, not an error.
% A curve outside its bounds (a < 0, b outside [0.1, 3], Q0 < 0, or
% NaN) is refused wherever it enters: @code{'rating'} with
% @code{sluice:model:badrating}, parameter values with
% @code{sluice:<function>:badparams}, a prior whose support reaches
% beyond the bounds (a normal prior of b, say) with
% @code{sluice:<function>:badprior}.
% @end table
%
% Options of compiled models and right-hand sides: @code{'integrator'}
% (@code{'euler'}, @code{'rk4'}, @code{'dopri5'} (adaptive, tolerances
% @code{'rtol'}, @code{'atol'}) or @code{'discrete'}), @code{'dt'}.
% A function @var{fun} given with @code{'kind', 'rhs'} is a right-hand
% side @code{dX = fun (t, X, P, U)} integrated by the chosen integrator
% (default RK4) over the whole ensemble at once.
%
% @code{'components'}, @code{@{name, names, name, names, @dots{}@}}:
% the model is made of components (a river and a town, say), each named
% and given the names of its states and parameters; every state and
% parameter belongs to exactly one. They are kept as @code{components},
% @code{state_component} and @code{param_component} of the spec and let
% @code{sluice.filter} couple the components weakly (its option
% @code{'coupling'}). @code{'river_town'} has them: @code{river} (GR4J's
% states and parameters, Qmax, level, day and the rating curve a, b, Q0,
% year_length: what the river's flow makes) and @code{town} (the flood
% model's states and parameters).
%
% Common options: @code{'states'} (cellstr of state names, default
% x1, x2, @dots{}), @code{'params'} (cellstr of parameter names),
% @code{'forcings'} (cellstr of forcing names), @code{'defaults'} (values
% of the parameters used when the prior does not name them), @code{'dt'}
% (time step, default 1), @code{'t0'} (start time, default 0), @code{'x0'}
% (initial state, n x 1, default zeros), @code{'n'} (number of states of a
% function model when no names are given).
%
% Example:
% @example
% spec = sluice.model ('linear', 'A', 0.9, 'Q', 0.5, 'states', @{'level'@});
% @end example
% @seealso{sluice.filter, sluice.prior}
% @end deftypefn
function spec = model (kind, varargin)
  % the core's names (sluice.kernel.core_names), asked once
  persistent core
  if (isempty (core))
    core = sluice.kernel.core_names ();
  end
  if (nargin < 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  spec = struct ('kind', '', 'name', '', 'summary', '', 'states', {{}}, ...
                 'params', {{}}, 'forcings', {{}}, 'events', {{}}, ...
                 'defaults', zeros (0, 1), 'lower', zeros (0, 1), ...
                 'upper', zeros (0, 1), 'dt', 1, 't0', 0, 'x0', [], ...
                 'integrator', '', 'rtol', 1e-6, 'atol', 1e-9, ...
                 'A', [], 'B', [], 'c', [], 'Q', [], 'L', [], 'fun', [], ...
                 'handle_kind', '', 'internal', false (0, 1));
  info = [];
  if (ischar (kind) && strcmp (kind, 'linear'))
    spec.kind = 'linear';
    spec.name = 'linear';
    spec.integrator = 'discrete';
  elseif (isa (kind, 'function_handle'))
    spec.kind = 'handle';
    spec.name = func2str (kind);
    spec.fun = kind;
    spec.handle_kind = 'step';
  elseif ((ischar (kind) && isrow (kind) && any (strcmp (kind, sluice.kernel.model_info ()))) || ...
          (isstruct (kind) && isscalar (kind) && isfield (kind, 'engine')))
    if (ischar (kind))
      info = sluice.kernel.model_info (kind);
      spec.kind = 'builtin';
    else
      % a user's compiled model, as sluice.build_model describes it
      info = kind;
      spec.kind = 'user';
      spec.engine = info.engine;
    end
    spec.name = info.name;
    spec.summary = info.summary;
    spec.states = info.states;
    spec.params = info.params;
    spec.forcings = info.forcings;
    spec.events = info.events;
    spec.defaults = info.defaults;
    spec.lower = info.lower;
    spec.upper = info.upper;
    spec.dt = info.dt;
    spec.integrator = info.integrator;
    if (info.n_state > 0)
      spec.x0 = info.x0;
    end
    if (isfield (info, 'internal') && numel (info.internal) == numel (info.states))
      spec.internal = logical (info.internal(:));
    end
  elseif (ischar (kind))
    error ('sluice:model:badmodel', ...
           'unknown model ''%s''; expected ''linear'', %s or a function handle', ...
           kind, strjoin (strcat ('''', sluice.kernel.model_info (), ''''), ', '));
  else
    error ('sluice:model:badmodel', ...
           'argument 1 (model): expected ''linear'' or a function handle, got %s', ...
           class (kind));
  end
  if (mod (numel (varargin), 2) ~= 0)
    error ('sluice:model:badoption', 'options must come in name, value pairs');
  end
  nstate = [];
  comps = [];
  for k = 1:2:numel (varargin)
    name = varargin{k};
    val = varargin{k + 1};
    if (~ischar (name) || ~isrow (name))
      error ('sluice:model:badoption', 'option %d: expected a name', (k + 1) / 2);
    end
    switch (lower (name))
      case {'states', 'params', 'forcings'}
        spec.(lower (name)) = names_arg (val, name);
      case 'defaults'
        spec.defaults = real_arg (val, name, false);
        spec.defaults = spec.defaults(:);
      case 'dt'
        spec.dt = real_arg (val, name, true);
        if (~isscalar (spec.dt) || spec.dt <= 0)
          error ('sluice:model:badstep', 'dt must be a positive scalar');
        end
      case 't0'
        spec.t0 = real_arg (val, name, true);
        if (~isscalar (spec.t0))
          error ('sluice:model:badoption', 't0 must be a scalar');
        end
      case 'x0'
        spec.x0 = real_arg (val, name, false);
        spec.x0 = spec.x0(:);
      case {'a', 'b', 'c', 'q'}
        if (~strcmp (spec.kind, 'linear'))
          error ('sluice:model:badoption', ...
                 'option ''%s'' belongs to the linear model', name);
        end
        spec.(upper_if_matrix (name)) = real_arg (val, name, false);
      case 'n'
        nstate = real_arg (val, name, true);
        if (~isscalar (nstate) || nstate < 1 || nstate ~= fix (nstate))
          error ('sluice:model:badoption', 'n must be a positive whole number');
        end
        % a spec holds about 400 bytes per state (its name, initial state
        % and bounds; measured here with Octave 7.3 at n = 1e6)
        sluice.internal.ensure_memory (400 * nstate, 'model', ...
                                     sprintf ('a model of %d states', nstate));
      case 'integrator'
        if (~ischar (val) || ~any (strcmp (val, core.integrators)))
          error ('sluice:model:badintegrator', ...
                 'integrator must be ''euler'', ''rk4'', ''dopri5'' or ''discrete''');
        end
        spec.integrator = val;
      case {'rtol', 'atol'}
        v = real_arg (val, name, true);
        if (v < 0)
          error ('sluice:model:badtolerance', '%s must be >= 0', name);
        end
        spec.(lower (name)) = v;
      case {'rating', 'year_length'}
        spec = coupled_option (spec, lower (name), val);
      case 'components'
        comps = val;
      case 'kind'
        if (~strcmp (spec.kind, 'handle') || ~ischar (val) || ...
            ~any (strcmp (val, {'step', 'rhs'})))
          error ('sluice:model:badoption', ...
                 '''kind'' applies to a function model: ''step'' or ''rhs''');
        end
        spec.handle_kind = val;
      otherwise
        error ('sluice:model:badoption', 'unknown option ''%s''', name);
    end
  end
  if (strcmp (spec.kind, 'linear'))
    spec = check_linear (spec);
  elseif (any (strcmp (spec.kind, {'builtin', 'user'})))
    spec = check_builtin (spec, info, nstate);
    nstate = [];
  elseif (isempty (spec.states))
    if (isempty (nstate))
      if (isempty (spec.x0))
        error ('sluice:model:nostates', ...
               'name the states (''states'') or give their number (''n'')');
      end
      nstate = numel (spec.x0);
    end
    spec.states = default_names (nstate);
  end
  n = numel (spec.states);
  if (~isempty (nstate) && nstate ~= n)
    error ('sluice:model:badsize', 'n = %d but %d state names given', nstate, n);
  end
  if (isempty (spec.x0))
    spec.x0 = zeros (n, 1);
  elseif (numel (spec.x0) ~= n)
    error ('sluice:model:badsize', 'x0 has %d values for %d states', ...
           numel (spec.x0), n);
  end
  if (strcmp (spec.kind, 'handle'))
    if (strcmp (spec.handle_kind, 'rhs'))
      if (isempty (spec.integrator))
        spec.integrator = 'rk4';
      elseif (strcmp (spec.integrator, 'discrete'))
        error ('sluice:model:badintegrator', ...
               'a right-hand side needs euler, rk4 or dopri5, not discrete');
      end
    elseif (isempty (spec.integrator))
      spec.integrator = 'discrete';
    elseif (~strcmp (spec.integrator, 'discrete'))
      error ('sluice:model:badintegrator', ...
             'a step map (''kind'', ''step'') is advanced as it is; use ''kind'', ''rhs'' to integrate');
    end
  end
  if (isempty (spec.defaults))
    spec.defaults = nan (numel (spec.params), 1);
  elseif (numel (spec.defaults) ~= numel (spec.params))
    error ('sluice:model:badsize', '%d defaults for %d parameters', ...
           numel (spec.defaults), numel (spec.params));
  end
  if (isempty (spec.lower))
    spec.lower = -Inf (numel (spec.params), 1);
    spec.upper = Inf (numel (spec.params), 1);
  end
  if (strcmp (spec.kind, 'builtin') && strcmp (spec.name, 'river_town'))
    % the year length is a setting of the spec, not an unknown: its bounds
    % close on it, so a run refuses other values and a prior cannot move it
    iy = strcmp (spec.params, 'year_length');
    check_year (spec.defaults(iy), spec.dt);
    spec.lower(iy) = spec.defaults(iy);
    spec.upper(iy) = spec.defaults(iy);
  end
  bad = find (spec.defaults < spec.lower | spec.defaults > spec.upper, 1);
  if (~isempty (bad))
    error ('sluice:model:badparams', ...
           'parameter ''%s'': %g lies outside its bounds [%g, %g]', spec.params{bad}, ...
           spec.defaults(bad), spec.lower(bad), spec.upper(bad));
  end
  all_names = [spec.states(:); spec.params(:); spec.forcings(:); spec.events(:)];
  if (numel (unique (all_names)) ~= numel (all_names))
    error ('sluice:model:badname', ...
           'state, parameter and forcing names must all differ');
  end
  % states that are the model's own bookkeeping (not drawn by default)
  if (~isfield (spec, 'internal') || numel (spec.internal) ~= n)
    spec.internal = false (n, 1);
  end
  if (isempty (comps) && strcmp (spec.kind, 'builtin') && strcmp (spec.name, 'river_town'))
    % the river: GR4J's states and parameters and what the river's flow
    % makes (the year's largest flow, the high-water level, the rating
    % curve and the calendar); the town: the flood model's
    town = {'G', 'D', 'H', 'M', 'F', 'R_levee', 'xiH', 'alphaH', 'rhoE', 'gammaE', ...
            'lambdaP', 'sigmaP', 'epsT', 'kappaT', 'alphaS', 'muS'};
    all_names = [spec.states(:); spec.params(:)]';
    comps = {'river', setdiff(all_names, town, 'stable'), 'town', town};
  end
  if (~isempty (comps))
    spec = components_arg (spec, comps);
  end
end

% The components of a coupled model: {name, member names, name, member
% names, ...}, every state and parameter in exactly one; kept as
% spec.components (their names) and spec.state_component and
% spec.param_component (1-based indices into them).
function spec = components_arg (spec, c)
  if (~iscell (c) || isempty (c) || mod (numel (c), 2) ~= 0)
    error ('sluice:model:badcomponents', ...
           ['components must be a cell {name, {state and parameter names}, name, ...}, ', ...
            'got %s'], class (c));
  end
  names = c(1:2:end);
  if (~iscellstr (names) || ~all (cellfun (@isvarname, names)) || ...
      numel (unique (names)) ~= numel (names))
    error ('sluice:model:badcomponents', 'component names must be distinct valid names');
  end
  all_names = [spec.states(:); spec.params(:)];
  idx = zeros (numel (all_names), 1);
  for k = 1:numel (names)
    members = c{2 * k};
    if (ischar (members))
      members = {members};
    end
    if (~iscellstr (members))
      error ('sluice:model:badcomponents', ...
             'component ''%s'': expected a cellstr of state and parameter names', names{k});
    end
    [found, where] = ismember (members, all_names);
    if (~all (found))
      error ('sluice:model:badcomponents', ...
             'component ''%s'': ''%s'' is no state or parameter of the model', names{k}, ...
             members{find (~found, 1)});
    end
    if (any (idx(where) > 0))
      error ('sluice:model:badcomponents', '''%s'' belongs to two components', ...
             all_names{where(find (idx(where) > 0, 1))});
    end
    idx(where) = k;
  end
  if (any (idx == 0))
    error ('sluice:model:badcomponents', '''%s'' belongs to no component', ...
           all_names{find (idx == 0, 1)});
  end
  n = numel (spec.states);
  spec.components = names(:)';
  spec.state_component = idx(1:n);
  spec.param_component = idx(n+1:end);
end

function spec = check_builtin (spec, info, nstate)
  if (info.n_state == 0)
    if (isempty (nstate))
      error ('sluice:model:badsize', 'model ''%s'' needs the number of states: ''n''', ...
             spec.name);
    end
    if (nstate < info.n_min)
      error ('sluice:model:badsize', 'model ''%s'' needs n >= %d, got %d', spec.name, ...
             info.n_min, nstate);
    end
    spec.states = default_names (nstate);
    if (isempty (spec.x0))
      spec.x0 = zeros (nstate, 1);
    end
  elseif (~isempty (nstate) && nstate ~= info.n_state)
    error ('sluice:model:badsize', 'model ''%s'' has %d states, not %d', spec.name, ...
           info.n_state, nstate);
  end
  if (strcmp (spec.integrator, 'discrete') && info.has_map && ~info.has_rhs && ...
      spec.dt ~= info.dt)
    error ('sluice:model:badstep', 'model ''%s'' is a map that steps by dt = %g, not %g', ...
           spec.name, info.dt, spec.dt);
  end
  if (strcmp (spec.integrator, 'discrete') && ~info.has_map)
    error ('sluice:model:badintegrator', 'model ''%s'' is continuous: use euler, rk4 or dopri5', ...
           spec.name);
  end
  if (~strcmp (spec.integrator, 'discrete') && ~info.has_rhs)
    error ('sluice:model:badintegrator', 'model ''%s'' is a discrete map: use ''discrete''', ...
           spec.name);
  end
end

% The options of the coupled model river_town: the rating curve [a b Q0]
% and the length of its years (days), as defaults of those parameters.
function spec = coupled_option (spec, name, val)
  if (~strcmp (spec.kind, 'builtin') || ~strcmp (spec.name, 'river_town'))
    error ('sluice:model:badoption', ...
           'option ''%s'' belongs to the model ''river_town''', name);
  end
  if (strcmp (name, 'year_length'))
    v = real_arg (val, name, true);
    check_year (v, spec.dt);
    spec.defaults(strcmp (spec.params, 'year_length')) = v;
    return;
  end
  v = real_arg (val, name, false);
  if (numel (v) ~= 3)
    error ('sluice:model:badrating', ...
           'rating must be [a b Q0] (3 values), got %d values', numel (v));
  end
  names = {'a', 'b', 'Q0'};
  for k = 1:3
    i = strcmp (spec.params, names{k});
    if (v(k) < spec.lower(i) || v(k) > spec.upper(i))
      error ('sluice:model:badrating', ...
             'rating curve: %s = %g lies outside [%g, %g]', names{k}, v(k), ...
             spec.lower(i), spec.upper(i));
    end
    spec.defaults(i) = v(k);
  end
end

% A year of the coupled model must be a whole number (>= 1) of its daily
% steps: a year ends at the end of a day.
function check_year (L, dt)
  if (~(L >= 1) || L ~= fix (L) || ~isfinite (L))
    error ('sluice:model:badyear', ...
           'year_length must be a whole number >= 1 of days (steps of %g), got %g', dt, L);
  end
end

function s = upper_if_matrix (name)
  if (strcmpi (name, 'c'))
    s = 'c';
  else
    s = upper (name);
  end
end

function c = names_arg (val, what)
  if (ischar (val))
    val = {val};
  end
  if (~iscellstr (val))
    error ('sluice:model:badname', '''%s'' must be a cell array of names', what);
  end
  c = val(:)';
  for k = 1:numel (c)
    if (~isvarname (c{k}))
      error ('sluice:model:badname', '''%s'': ''%s'' is not a valid name', ...
             what, c{k});
    end
  end
  if (numel (unique (c)) ~= numel (c))
    error ('sluice:model:badname', '''%s'': names must be unique', what);
  end
end

function v = real_arg (val, what, scalar)
  if (~isnumeric (val) || ~isreal (val) || issparse (val) || ~isa (val, 'double'))
    error ('sluice:model:badclass', '''%s'' must be a real double array, got %s', ...
           what, class (val));
  end
  if (any (~isfinite (val(:))))
    error ('sluice:model:nonfinite', '''%s'' must be finite', what);
  end
  if (scalar && ~isscalar (val))
    error ('sluice:model:badsize', '''%s'' must be a scalar', what);
  end
  v = val;
end

function names = default_names (n)
  names = arrayfun (@(k) sprintf ('x%d', k), 1:n, 'UniformOutput', false);
end

function spec = check_linear (spec)
  A = spec.A;
  if (isempty (A))
    error ('sluice:model:badmodel', 'the linear model needs a matrix ''A''');
  end
  n = size (A, 1);
  if (size (A, 2) ~= n || ndims (A) ~= 2)
    error ('sluice:model:badsize', 'A must be square, got %dx%d', size (A, 1), size (A, 2));
  end
  if (isempty (spec.states))
    spec.states = default_names (n);
  elseif (numel (spec.states) ~= n)
    error ('sluice:model:badsize', '%d state names for a %dx%d matrix A', ...
           numel (spec.states), n, n);
  end
  if (~isempty (spec.params))
    error ('sluice:model:badoption', 'the linear model has no parameters');
  end
  Q = spec.Q;
  if (isempty (Q))
    spec.L = [];
  else
    if (isscalar (Q) && n > 1)
      Q = Q * eye (n);
    end
    if (~isequal (size (Q), [n n]))
      error ('sluice:model:badsize', 'Q must be %dx%d', n, n);
    end
    if (norm (Q - Q', 1) > 1e-12 * max (1, norm (Q, 1)))
      error ('sluice:model:notsymmetric', 'Q must be symmetric');
    end
    [V, D] = eig ((Q + Q') / 2);
    d = diag (D);
    if (any (d < -1e-12 * max (1, max (abs (d)))))
      error ('sluice:model:notpsd', 'Q must be positive semi-definite');
    end
    [R, fail] = chol ((Q + Q') / 2);
    if (fail == 0)
      spec.L = R';
    else
      % semi-definite: a square-root factor from the eigen-decomposition,
      % made lower-triangular by a QR step
      S = V * diag (sqrt (max (d, 0)));
      [~, Rq] = qr (S');
      spec.L = Rq';
    end
    spec.Q = Q;
  end
  q = numel (spec.forcings);
  if (q > 0)
    if (~isequal (size (spec.B), [n q]))
      error ('sluice:model:badsize', 'B must be %dx%d for %d forcings', n, q, q);
    end
  elseif (~isempty (spec.B))
    error ('sluice:model:badsize', 'B given but the model names no forcings');
  end
  if (~isempty (spec.c) && numel (spec.c) ~= n)
    error ('sluice:model:badsize', 'c must have %d entries', n);
  end
  spec.c = spec.c(:);
end

%!test
%! s = sluice.model ('linear', 'A', [1 0.1; 0 1], 'Q', 0.2, 'states', {'h', 'v'});
%! assert (s.kind, 'linear');
%! assert (s.states, {'h', 'v'});
%! assert (s.L * s.L', 0.2 * eye (2), 1e-14);
%! assert (s.x0, [0; 0]);
%!test
%! % a semi-definite noise covariance still gets a factor with L*L' = Q
%! Q = [1 1; 1 1];
%! s = sluice.model ('linear', 'A', eye (2), 'Q', Q);
%! assert (s.L * s.L', Q, 1e-12);
%! assert (triu (s.L, 1), zeros (2), 1e-14);
%!test
%! f = @(t, X, P, U, dt) X + dt * P(1, :);
%! s = sluice.model (f, 'states', {'s'}, 'params', {'k'}, 'defaults', 0.3);
%! assert (s.kind, 'handle');
%! assert (s.params, {'k'});
%! assert (s.defaults, 0.3);
%!test
%! s = sluice.model (@(t, X, P, U, dt) X, 'n', 3);
%! assert (s.states, {'x1', 'x2', 'x3'});
%!test
%! s = sluice.model ('lorenz63');
%! assert (s.kind, 'builtin');
%! assert (s.states, {'x', 'y', 'z'});
%! assert (s.params, {'sigma', 'rho', 'beta'});
%! assert (s.defaults, [10; 28; 8/3], 1e-15);
%! assert (s.integrator, 'rk4');
%!test
%! s = sluice.model ('lorenz96', 'n', 40, 'integrator', 'dopri5', 'rtol', 1e-8);
%! assert (numel (s.states), 40);
%! assert (s.states{40}, 'x40');
%! assert (s.defaults, 8);
%! assert (s.integrator, 'dopri5');
%! assert (s.rtol, 1e-8);
%!test
%! s = sluice.model (@(t, X, P, U) -X, 'n', 2, 'kind', 'rhs');
%! assert (s.integrator, 'rk4');
%!test
%! s = sluice.model ('linear', 'A', [0.9 0.1; 0.2 0.8], 'states', {'x', 'y'}, ...
%!                   'components', {'a', {'x'}, 'b', 'y'});
%! assert (s.components, {'a', 'b'});
%! assert (s.state_component, [1; 2]);
%!test
%! s = sluice.model ('river_town');
%! assert (s.components, {'river', 'town'});
%! assert (s.state_component(strcmp (s.states, 'G')), 2);
%! assert (s.state_component(strcmp (s.states, 'Qmax')), 1);
%! assert (s.param_component(strcmp (s.params, 'X1')), 1);
%! assert (s.param_component(strcmp (s.params, 'muS')), 2);
%! assert (sum (s.state_component == 1), 66);
%!error id=sluice:model:badcomponents sluice.model ('linear', 'A', eye (2), 'components', {'a', {'x1'}})
%!error id=sluice:model:badcomponents sluice.model ('linear', 'A', eye (2), 'components', {'a', {'x1', 'x2'}, 'b', {'x2'}})
%!error id=sluice:model:badcomponents sluice.model ('linear', 'A', eye (2), 'components', {'a', {'x1', 'z'}})
%!error id=sluice:model:badcomponents sluice.model ('linear', 'A', eye (2), 'components', {'a', {'x1'}, 'a', {'x2'}})
%!error id=sluice:model:badcomponents sluice.model ('linear', 'A', eye (2), 'components', 'a')
%!error id=sluice:model:badcomponents sluice.model ('linear', 'A', eye (2), 'components', {'a', 3, 'b', {'x2'}})
%!error id=sluice:model:badstep sluice.model ('gr4j', 'dt', 2)
%!error id=sluice:model:badstep sluice.model ('river_town', 'dt', 2)
%!error id=sluice:model:badrating sluice.model ('river_town', 'rating', [-0.1 0.6 5])
%!error id=sluice:model:badrating sluice.model ('river_town', 'rating', [0.4 0 5])
%!error id=sluice:model:badrating sluice.model ('river_town', 'rating', [0.4 3.5 5])
%!error id=sluice:model:badrating sluice.model ('river_town', 'rating', [0.4 0.6 -1])
%!error id=sluice:model:badrating sluice.model ('river_town', 'rating', [0.4 0.6])
%!error id=sluice:model:nonfinite sluice.model ('river_town', 'rating', [0.4 NaN 5])
%!error id=sluice:model:badyear sluice.model ('river_town', 'year_length', 365.25)
%!error id=sluice:model:badyear sluice.model ('river_town', 'year_length', 0)
%!error id=sluice:model:badsize sluice.model ('river_town', 'year_length', [365 366])
%!error id=sluice:model:badyear sluice.model ('river_town', 'defaults', [320.1 2.42 69.6 1.39 0.5 10 1 0.005 1 0.1 1.1 0.1 0.5 0.215 0.4 0.6 5 365.5])
%!error id=sluice:model:badparams sluice.model ('river_town', 'defaults', [320.1 2.42 69.6 1.39 0.5 10 1 0.005 1 0.1 1.1 0.1 0.5 0.215 -1 0.6 5 365])
%!error id=sluice:model:badoption sluice.model ('gr4j', 'rating', [0.4 0.6 5])
%!error id=sluice:model:badoption sluice.model ('flood', 'year_length', 365)
%!error id=sluice:model:badsize sluice.model ('lorenz96')
%!error id=sluice:model:badsize sluice.model ('lorenz96', 'n', 3)
%!error id=sluice:model:nomemory sluice.model ('lorenz96', 'n', 1e13)
%!error id=sluice:model:nomemory sluice.model (@(t, X, P, U, dt) X, 'n', 1e13)
%!error id=sluice:model:badsize sluice.model ('lorenz63', 'n', 4)
%!error id=sluice:model:badintegrator sluice.model ('lorenz63', 'integrator', 'discrete')
%!error id=sluice:model:badintegrator sluice.model ('lorenz63', 'integrator', 'leapfrog')
%!error id=sluice:model:badintegrator sluice.model (@(t, X, P, U) X, 'n', 1, 'kind', 'rhs', 'integrator', 'discrete')
%!error id=sluice:model:badintegrator sluice.model (@(t, X, P, U, dt) X, 'n', 1, 'integrator', 'rk4')
%!error id=sluice:model:badtolerance sluice.model ('lorenz63', 'rtol', -1)
%!error id=sluice:model:badoption sluice.model ('lorenz63', 'kind', 'rhs')
%!error id=sluice:model:badparams sluice.model ('lorenz63', 'defaults', [10 -28 1])
%!error id=sluice:model:badmodel sluice.model ('nosuch')
%!error id=sluice:model:badmodel sluice.model (3)
%!error id=sluice:model:badmodel sluice.model ('linear')
%!error id=sluice:model:badsize sluice.model ('linear', 'A', ones (2, 3))
%!error id=sluice:model:badclass sluice.model ('linear', 'A', single (1))
%!error id=sluice:model:badclass sluice.model ('linear', 'A', int32 (1))
%!error id=sluice:model:badclass sluice.model ('linear', 'A', true)
%!error id=sluice:model:badclass sluice.model ('linear', 'A', 1i)
%!error id=sluice:model:badclass sluice.model ('linear', 'A', sparse (1))
%!error id=sluice:model:badclass sluice.model ('linear', 'A', {1})
%!error id=sluice:model:badclass sluice.model ('linear', 'A', struct ())
%!error id=sluice:model:nonfinite sluice.model ('linear', 'A', NaN)
%!error id=sluice:model:notsymmetric sluice.model ('linear', 'A', eye (2), 'Q', [1 2; 0 1])
%!error id=sluice:model:notpsd sluice.model ('linear', 'A', 1, 'Q', -1)
%!error id=sluice:model:badsize sluice.model ('linear', 'A', 1, 'forcings', {'u'})
%!error id=sluice:model:badoption sluice.model ('linear', 'A', 1, 'bogus', 2)
%!error id=sluice:model:badoption sluice.model ('linear', 'A', 1, 'dt')
%!error id=sluice:model:badstep sluice.model ('linear', 'A', 1, 'dt', 0)
%!error id=sluice:model:badname sluice.model ('linear', 'A', 1, 'states', {'1x'})
%!error id=sluice:model:badname sluice.model (@(t, X, P, U, dt) X, 'states', {'a', 'a'})
%!error id=sluice:model:badname sluice.model (@(t, X, P, U, dt) X, 'states', {'a'}, 'params', {'a'})
%!error id=sluice:model:nostates sluice.model (@(t, X, P, U, dt) X)
%!error id=sluice:model:badoption sluice.model ('linear', cat (3, 'A', 'A'), 0.9)
%!error id=sluice:model:badmodel sluice.model (cat (3, 'flood', 'flood'))
%!error id=sluice:model:badsize sluice.model (@(t, X, P, U, dt) X, 'params', {'k'}, 'defaults', [1 2], 'n', 1)
