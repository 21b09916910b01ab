% -*- texinfo -*-
% @deftypefn  {} {@var{s} =} sluice.mcmc_summary (@var{samples}, @dots{})
% Old name of sluice.chain_summary, kept for one release.
%
% @code{sluice.mcmc_summary} was renamed @code{sluice.chain_summary}; this
% name stays for one release. It warns once per session (identifier
% @code{sluice:mcmc_summary:deprecated}; silence it with
% @code{warning ('off', 'sluice:mcmc_summary:deprecated')}) and calls
% @code{sluice.chain_summary} with the same arguments. Its errors keep
% their old identifiers @code{sluice:mcmc_summary:<reason>}.
% @seealso{sluice.chain_summary}
% @end deftypefn
function s = mcmc_summary (varargin)
  persistent warned
  if (isempty (warned))
    warned = true;
    warning ('sluice:mcmc_summary:deprecated', ...
             'sluice.mcmc_summary is now sluice.chain_summary; the old name goes in the next release');
  end
  try
    s = sluice.chain_summary (varargin{:});
  catch err
    id = strrep (err.identifier, 'sluice:chain_summary:', 'sluice:mcmc_summary:');
    sluice.internal.raise_again (id, 'sluice:mcmc_summary:failed', err.message);
  end
end

%!test
%! % the old name gives the new function's result, warns at most once per
%! % session (the first call may have come from another test) and never
%! % again
%! randn ('state', 5);
%! x = randn (40, 2, 2);
%! w = warning ('off', 'sluice:mcmc_summary:deprecated');
%! a = sluice.mcmc_summary (x, 'names', {'a', 'b'});
%! warning (w);
%! lastwarn ('');
%! b = sluice.mcmc_summary (x, 'names', {'a', 'b'});
%! [~, id] = lastwarn ();
%! assert (isempty (id));
%! assert (isequal (a, b));
%! assert (isequal (a, sluice.chain_summary (x, 'names', {'a', 'b'})));

%!test
%! % a fresh session warns once with the identifier
%! cmd = sprintf (['addpath (''%s''); x = randn (20, 1); ', ...
%!                 'lastwarn (''''); sluice.mcmc_summary (x); [~, a] = lastwarn (); ', ...
%!                 'lastwarn (''''); sluice.mcmc_summary (x); [~, b] = lastwarn (); ', ...
%!                 'printf (''<%%s|%%s>'', a, b);'], ...
%!                fileparts (fileparts (which ('sluice.chain_summary'))));
%! [st, out] = system (sprintf ('%s --no-gui --quiet --no-history --norc --eval "%s" 2>&1', ...
%!                              fullfile (OCTAVE_HOME (), 'bin', 'octave-cli'), cmd));
%! assert (st, 0);
%! assert (~isempty (strfind (out, '<sluice:mcmc_summary:deprecated|>')));

%!error id=sluice:mcmc_summary:tooshort
%! w = warning ('off', 'sluice:mcmc_summary:deprecated');
%! unwind_protect
%!   sluice.mcmc_summary (ones (3, 1));
%! unwind_protect_cleanup
%!   warning (w);
%! end_unwind_protect
%!error id=sluice:mcmc_summary:badsamples
%! w = warning ('off', 'sluice:mcmc_summary:deprecated');
%! unwind_protect
%!   sluice.mcmc_summary ({1});
%! unwind_protect_cleanup
%!   warning (w);
%! end_unwind_protect
