function r = run_engine (model, c, failed)
  % Internal: run the compiled cycle for the settings c (built by
  % sluice.internal.model_config): the shared gateway sluice.kernel.pf_run,
  % or for a user's compiled model the gateway that sluice.build_model
  % made for it (model.engine). The gateway raises its errors as
  % sluice:<c.caller>:<reason> itself; here only Octave's prefix of the
  % gateway's name comes off the message.
  %
  % run_engine (model, c, err) raises err, caught from a call of the
  % shared gateway through sluice.internal.interruptible ('-run', ...)
  % that the caller made itself, as a failure of that run here is raised.
  fn = c.caller;
  if (nargin > 2)
    raise_failed (failed, c, fn);
  end
  if (strcmp (model.kind, 'user') || ...
      (strcmp (model.kind, 'composed') && isfield (model, 'engine') && ~isempty (model.engine)))
    if (~isfield (model, 'engine') || exist (model.engine, 'file') ~= 3)
      error (['sluice:' fn ':badmodel'], ...
             'the compiled gateway of model ''%s'' is not on the path; run sluice.build_model again', ...
             model.name);
    end
    gateway = model.engine;
  else
    gateway = 'sluice.kernel.pf_run';
  end
  persistent is_octave
  if (isempty (is_octave))
    is_octave = sluice.internal.compat ('is_octave');
  end
  try
    if (is_octave)
      % a Ctrl-C that escapes the gateway is still the run's error
      r = sluice.internal.interruptible ('-run', gateway, c);
    else
      r = feval (gateway, c);
    end
  catch err
    raise_failed (err, c, fn);
  end
end

function raise_failed (err, c, fn)
    % the gateway's name is an internal detail: drop Octave's prefix
    msg = regexprep (err.message, '^(pf_run|[A-Za-z]\w*_run): ', '');
    id = err.identifier;
    if (strcmp (id, 'sluice:kernel:interrupted'))
      id = ['sluice:' fn ':interrupted'];
      msg = 'the run was interrupted (Ctrl-C); no result is returned';
    end
    if (isfield (c, 'checkpoint') && ~isempty (c.checkpoint) && ...
        numel (id) > 12 && strcmp (id(end-11:end), ':interrupted') && exist (c.checkpoint, 'file'))
      % what a checkpointed run keeps, and how to go on
      msg = sprintf (['%s. The checkpoint %s keeps the run up to its last write ', ...
                      '(every %d cycles): the same call resumes from there'], ...
                     regexprep (msg, '[.;]? *no result is returned$', ''), c.checkpoint, ...
                     c.checkpoint_every);
    end
    sluice.internal.raise_again (id, ['sluice:' fn ':failed'], msg);
end
