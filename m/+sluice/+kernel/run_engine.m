function r = run_engine (model, c)
  % Internal: run the compiled cycle for a configuration c: the shared
  % gateway sluice.kernel.pf_run, or for a user's compiled model the
  % gateway that sluice.build_model made for it (model.engine).
  if (strcmp (model.kind, 'user'))
    if (~isfield (model, 'engine') || exist (model.engine, 'file') ~= 3)
      error ('sluice:filter:badmodel', ...
             'the compiled gateway of model ''%s'' is not on the path; run sluice.build_model again', ...
             model.name);
    end
    r = feval (model.engine, c);
  else
    r = sluice.kernel.pf_run (c);
  end
end
