function file = help_cache (folder, mode)
  % Internal: write FOLDER/doc-cache, the help index that Octave's lookfor
  % reads for a directory on the load path, and return its name. It covers
  % the functions of the package FOLDER/+sluice (as sluice.<name>) and the
  % .m functions at the top of FOLDER: for each the name, the help as plain
  % text (texinfo turned into text as Octave's help does) and the first
  % sentence of the help, which lookfor searches and prints. Without this
  % file lookfor does not see the functions of a package at all.
  % Raises sluice:help_cache:baddir and sluice:help_cache:cantwrite.
  %
  % help_cache (FOLDER, 'install') instead puts the index built with the
  % installed package, FOLDER/sdk/help-index, in place as FOLDER/doc-cache
  % when that is not already it, and says nothing if the folder is not
  % writable (the package's PKG_ADD calls it on every load).
  if (nargin == 2 && ischar (mode) && strcmp (mode, 'install'))
    file = fullfile (folder, 'doc-cache');
    index = fullfile (folder, 'sdk', 'help-index');
    a = dir (index);
    b = dir (file);
    if (numel (a) == 1 && (numel (b) ~= 1 || b.bytes ~= a.bytes))
      try
        copyfile (index, file, 'f');
      catch
        % a read-only installation keeps pkg's own index
      end
    end
    return;
  end
  if (nargin ~= 1 || ~ischar (folder) || isempty (folder) || ~isrow (folder))
    error ('sluice:help_cache:baddir', 'expected the name of a directory (a string)');
  end
  if (exist (folder, 'dir') ~= 7)
    error ('sluice:help_cache:baddir', 'no directory %s', folder);
  end
  files = {};
  names = {};
  d = dir (fullfile (folder, '+sluice', '*.m'));
  for k = 1:numel (d)
    files{end + 1} = fullfile (folder, '+sluice', d(k).name);
    names{end + 1} = ['sluice.', d(k).name(1:end - 2)];
  end
  d = dir (fullfile (folder, '*.m'));
  for k = 1:numel (d)
    files{end + 1} = fullfile (folder, d(k).name);
    names{end + 1} = d(k).name(1:end - 2);
  end
  % reading the help of a file named like a built-in (sluice.filter's
  % filter.m) is no cause for a warning here
  old = warning ('off', 'Octave:shadowed-function');
  restore = onCleanup (@() warning (old));
  cache = cell (3, 0);
  for k = 1:numel (files)
    if (strncmp (names{k}, '__', 2) || strncmp (names{k}, 'sluice.__', 9))
      continue;   % internal by Octave's convention, as in Octave's own cache
    end
    [text, sentence] = help_of (files{k});
    if (isempty (text))
      continue;
    end
    cache(:, end + 1) = {names{k}; text; sentence};
  end
  file = fullfile (folder, 'doc-cache');
  try
    sluice.internal.compat ('save_help_index', file, cache);
  catch err
    error ('sluice:help_cache:cantwrite', 'cannot write %s: %s', file, err.message);
  end
end

function [text, sentence] = help_of (f)
  % the help of the file f as plain text, and its first sentence ('' when
  % the file has no usable help)
  [text, sentence] = sluice.internal.compat ('help_text', f);
end

%!shared folder
%! folder = tempname ();
%! mkdir (folder);
%! mkdir (fullfile (folder, '+sluice'));
%! fid = fopen (fullfile (folder, '+sluice', 'zq_levee_gauge.m'), 'w');
%! fprintf (fid, ['%% -*- texinfo -*-\n', ...
%!                '%% @deftypefn {} {@var{y} =} sluice.zq_levee_gauge (@var{x})\n', ...
%!                '%% Estimate the crest of a quixotic levee from a gauge. More text.\n', ...
%!                '%% @end deftypefn\n', ...
%!                'function y = zq_levee_gauge (x)\n  y = x;\nend\n']);
%! fclose (fid);
%! fid = fopen (fullfile (folder, 'zq_top_helper.m'), 'w');
%! fprintf (fid, ['function zq_top_helper ()\n', ...
%!                '  %% Count the zanzibarish sandbags of a plain helper.\n', ...
%!                'end\n']);
%! fclose (fid);
%! fid = fopen (fullfile (folder, '+sluice', 'zq_bare.m'), 'w');
%! fprintf (fid, 'function zq_bare ()\nend\n');
%! fclose (fid);

%!test
%! f = sluice.internal.help_cache (folder);
%! assert (f, fullfile (folder, 'doc-cache'));
%! s = load (f);
%! % three rows: name, plain-text help, first sentence (the layout Octave's
%! % doc_cache_create writes and lookfor reads)
%! assert (rows (s.cache), 3);
%! assert (sort (s.cache(1, :)), {'sluice.zq_levee_gauge', 'zq_top_helper'});
%! k = find (strcmp (s.cache(1, :), 'sluice.zq_levee_gauge'));
%! assert (s.cache{3, k}, 'Estimate the crest of a quixotic levee from a gauge.');
%! assert (isempty (strfind (s.cache{2, k}, '@deftypefn')));
%! assert (~isempty (strfind (s.cache{2, k}, 'More text.')));

%!test
%! % lookfor finds the package function and the top-level one by a word of
%! % their first sentences, once the directory is on the path
%! sluice.internal.help_cache (folder);
%! addpath (folder);
%! unwind_protect
%!   [fn, txt] = lookfor ('quixotic');
%!   assert (fn, {'sluice.zq_levee_gauge'});
%!   assert (txt, {'Estimate the crest of a quixotic levee from a gauge.'});
%!   fn = lookfor ('zanzibarish');
%!   assert (fn, {'zq_top_helper'});
%! unwind_protect_cleanup
%!   rmpath (folder);
%! end_unwind_protect

%!test
%! % two of the pack's own files, texinfo help and all
%! src = fileparts (which ('sluice.filter'));
%! out = tempname ();
%! mkdir (out);
%! mkdir (fullfile (out, '+sluice'));
%! copyfile (fullfile (src, 'filter.m'), fullfile (out, '+sluice'));
%! copyfile (fullfile (src, 'weights.m'), fullfile (out, '+sluice'));
%! unwind_protect
%!   s = load (sluice.internal.help_cache (out));
%!   assert (s.cache(1, :), {'sluice.filter', 'sluice.weights'});
%!   assert (s.cache{3, 2}, get_first_help_sentence (fullfile (src, 'weights.m')));
%!   assert (isempty (strfind (s.cache{2, 1}, '@table')));
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (out, 's');
%! end_unwind_protect

%!error id=sluice:help_cache:baddir sluice.internal.help_cache ()
%!error id=sluice:help_cache:baddir sluice.internal.help_cache (7)
%!error id=sluice:help_cache:baddir sluice.internal.help_cache (tempname ())

%!test
%! confirm_recursive_rmdir (false, 'local');
%! rmdir (folder, 's');

%!test
%! % the installed package's form: the index built with the package takes
%! % the place of the one pkg install wrote, once
%! d = tempname ();
%! mkdir (d);
%! mkdir (fullfile (d, 'sdk'));
%! fid = fopen (fullfile (d, 'sdk', 'help-index'), 'w');
%! fprintf (fid, 'index built with the package\n');
%! fclose (fid);
%! fid = fopen (fullfile (d, 'doc-cache'), 'w');
%! fprintf (fid, 'pkg''s own\n');
%! fclose (fid);
%! sluice.internal.help_cache (d, 'install');
%! assert (fileread (fullfile (d, 'doc-cache')), sprintf ('index built with the package\n'));
%! confirm_recursive_rmdir (false, 'local');
%! rmdir (d, 's');
