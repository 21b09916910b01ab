% The in-file tests of sluice.internal.help_cache (the runner only visits
% m/+sluice/*.m and tests/octave/test_*.m): lookfor finds the pack's
% functions through the doc-cache it writes.

%!test
%! [n, nmax] = test (which ('sluice.internal.help_cache'), 'quiet', stdout);
%! assert (nmax >= 6);
%! assert (n, nmax);

%!test
%! % lookfor prints the first sentence of every public function: it must be
%! % a whole sentence within Octave's 80 characters (a longer one is cut
%! % and ends in "...")
%! src = fileparts (which ('sluice.filter'));
%! d = dir (fullfile (src, '*.m'));
%! bad = {};
%! for k = 1:numel (d)
%!   s = get_first_help_sentence (fullfile (src, d(k).name));
%!   if (numel (s) < 12 || s(end) ~= '.' || (numel (s) >= 3 && strcmp (s(end-2:end), '...')))
%!     bad{end+1} = sprintf ('%s: "%s"', d(k).name, s);
%!   end
%! end
%! assert (bad, {});
