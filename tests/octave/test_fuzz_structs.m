% The structs a user may edit and pass back in (model specs, priors,
% results of the workflows, sweep tables, a twin's truth and network),
% changed one field at a time and passed to the public functions that
% take them (fuzz_structs.m): a fixed-seed sample of about 1000 calls.
% No call may crash Octave, and every error must carry an identifier
% starting with 'sluice:' (an error without one cannot be caught by id
% and usually means a field went unchecked).

%!test
%! [bad, ncalls, nerr] = fuzz_structs (17, 45);
%! if (~isempty (bad))
%!   printf ('%s\n', bad{:});
%! end
%! assert (numel (bad), 0);
%! % the sample is large enough to mean something, and most changes are refused
%! assert (ncalls > 900);
%! assert (nerr > ncalls / 2);
