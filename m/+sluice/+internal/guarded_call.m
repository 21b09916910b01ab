function [out, msg, id] = guarded_call (fun, varargin)
  % Internal: call a user's function for the compiled cycle and hand its
  % error back as values, so that the C core can unwind before the error
  % is raised again with the user's own message and identifier.
  msg = '';
  id = '';
  try
    out = fun (varargin{:});
  catch err
    out = [];
    msg = err.message;
    id = err.identifier;
  end
end
