function ev = evidence_run (model, prior, obs, args, fn)
  % Internal: the body of sluice.evidence (see its help) for the public
  % function fn: sluice.evidence itself, or a workflow built on it
  % (sluice.drift_test). Its errors, and those of the filter runs, are
  % raised as sluice:<fn>:<reason>. args are the options as
  % sluice.evidence takes them (a cell of name, value pairs or of one
  % struct).
  sluice.internal.check_model (model, 1, fn);
  if (~isempty (prior))
    sluice.internal.check_prior (prior, 2, fn);
  end
  args = sluice.internal.option_pairs (args);
  if (numel (args) == 1)
    error (['sluice:' fn ':badoption'], ...
           'argument 4 (opts): expected a scalar struct or name, value pairs, got %s', ...
           sluice.internal.describe (args{1}));
  end
  if (mod (numel (args), 2) ~= 0)
    error (['sluice:' fn ':badoption'], 'options must be a struct or name, value pairs');
  end
  R = 10;
  seed = [];
  % the evidence of the model as stated: parameters drawn once from the
  % prior and kept (a move would change the model whose evidence it is)
  fopts = struct ('progress', false, 'param_move', 'fixed');
  for k = 1:2:numel (args)
    name = args{k};
    if (~ischar (name) || ~isrow (name))
      error (['sluice:' fn ':badoption'], 'option %d: expected a name', (k + 1) / 2);
    end
    switch (name)
      case 'repeats'
        R = whole (args{k + 1}, 'repeats', 2, 1e6, fn);
      case 'seed'
        seed = whole (args{k + 1}, 'seed', 0, 2^53, fn);
      case 'method'
        if (~(ischar (args{k + 1}) && strcmp (args{k + 1}, 'pf')))
          error (['sluice:' fn ':badoption'], ...
                 'the log-evidence comes from the particle filter: method must be ''pf''');
        end
      otherwise
        if (~isvarname (name))
          error (['sluice:' fn ':badoption'], 'unknown option ''%s''', name);
        end
        fopts.(name) = args{k + 1};
    end
  end
  % a checkpoint: one file per run, <checkpoint>.seed<s> (the runs differ
  % in their seed; one file for all would clash), so the same call
  % resumes every run; that needs the seeds of the call, given
  ck = '';
  if (isfield (fopts, 'checkpoint'))
    ck = fopts.checkpoint;
    if (~ischar (ck) || (~isempty (ck) && ~isrow (ck)))
      error (['sluice:' fn ':badoption'], 'checkpoint must be a file name (text), or '''' for none');
    end
    if (~isempty (ck) && isempty (seed))
      error (['sluice:' fn ':badoption'], ...
             ['a run with a checkpoint needs a ''seed'': the same call resumes its runs ', ...
              'only with the same seeds']);
    end
  end
  if (isempty (seed))
    seed = floor (rand () * 2^32);
  end
  if (seed + R - 1 > 2^53)
    error (['sluice:' fn ':badoption'], ...
           'seed + repeats - 1 must not exceed 2^53 (the runs use seed, seed + 1, ...)');
  end

  seeds = seed + (0:R-1);
  values = zeros (1, R);
  members = NaN;
  for r = 1:R
    fopts.seed = seeds(r);
    if (~isempty (ck))
      fopts.checkpoint = sprintf ('%s.seed%d', ck, seeds(r));
    end
    % the filter's errors come out as fn's (sluice:<fn>:*); one raised
    % without an identifier gets sluice:<fn>:failed
    try
      res = sluice.internal.filter_run (model, prior, obs, {fopts}, fn);
    catch err
      sluice.internal.raise_again (err.identifier, ['sluice:' fn ':failed'], err.message);
    end
    values(r) = res.log_evidence;
    members = res.members;
  end

  ev = struct ();
  ev.log_evidence = mean (values);
  ev.se = std (values) / sqrt (R);
  ev.log_mean_exp = log_mean_exp (values);
  ev.values = values;
  ev.seeds = seeds;
  ev.seed = seed;
  ev.repeats = R;
  ev.members = members;
  ev.degenerate = sum (values == -Inf);
  if (ev.degenerate > 0)
    ev.log_evidence = -Inf;
    ev.se = NaN;
  end
end

function v = log_mean_exp (x)
  % log (mean (exp (x))) without overflow or underflow: the largest term
  % is factored out
  mx = max (x);
  if (~isfinite (mx))
    v = mx;
    return;
  end
  v = mx + log (mean (exp (x - mx)));
end

function v = whole (v, what, lo, hi, fn)
  if (~isa (v, 'double') || ~isreal (v) || issparse (v) || ~isscalar (v) || ~isfinite (v) || ...
      v ~= fix (v) || v < lo || v > hi)
    error (['sluice:' fn ':badoption'], '%s must be a whole number from %g to %g', what, lo, hi);
  end
end
