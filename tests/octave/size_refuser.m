classdef size_refuser
  % Test helper: a value that raises an error when its size is asked --
  % what an observation operator returning it makes happen outside the
  % operator's own code, in the check of its result.
  methods
    function varargout = size (obj, varargin)
      error ('test:nosize', 'this value refuses to tell its size');
    end
  end
end
