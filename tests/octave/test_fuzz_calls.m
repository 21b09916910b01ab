% Every public function and every gateway, called with its arguments
% changed one at a time from small valid seed calls (fuzz_calls.m): a
% fixed-seed sample of about 1600 calls (about 20 s). No call may crash Octave, and
% every error must carry an identifier starting with 'sluice:'. A new
% function (a new m/+sluice/*.m or gateway) needs seed calls in
% fuzz_calls.m's seed_calls. SLUICE_FUZZ_CALLS=N runs about N calls in all
% instead (random values fill what the palette does not reach).

%!test
%! budget = 40;
%! n = str2double (getenv ('SLUICE_FUZZ_CALLS'));
%! [~, ~, ~, ~, names] = fuzz_calls (23, 0, {'none'});
%! if (isfinite (n) && n > 0)
%!   budget = ceil (n / numel (names));
%! end
%! t0 = tic ();
%! [bad, ncalls, nerr, tally, names, missing] = fuzz_calls (23, budget);
%! printf ('fuzz_calls: %d calls, %d errors, %d without a sluice: identifier, %.0f s\n', ...
%!         ncalls, nerr, numel (bad), toc (t0));
%! if (~isempty (missing))
%!   error ('fuzz_calls: no seed calls for %s: add them to seed_calls in tests/octave/fuzz_calls.m', ...
%!          strjoin (missing, ', '));
%! end
%! if (~isempty (bad))
%!   printf ('%s\n', bad{:});
%! end
%! assert (numel (bad), 0);
%! % every function was called, and most changes are refused
%! assert (all (tally > 0));
%! assert (ncalls >= min (budget, 25) * numel (names));
%! assert (nerr > ncalls / 2);
