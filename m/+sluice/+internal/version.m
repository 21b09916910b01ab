function v = version ()
  % Internal: the version of sluice, from the package's DESCRIPTION file
  % (beside m/ in the source tree, in packinfo/ of an installed package);
  % 'unknown' when neither is found.
  here = fileparts (mfilename ('fullpath'));   % .../+sluice/+internal
  top = fileparts (fileparts (here));          % m/, or the installed package
  files = {fullfile(fileparts (top), 'DESCRIPTION'), fullfile(top, 'packinfo', 'DESCRIPTION')};
  v = 'unknown';
  for k = 1:numel (files)
    fid = fopen (files{k}, 'r');
    if (fid < 0)
      continue;
    end
    text = fread (fid, [1 Inf], '*char');
    fclose (fid);
    tok = regexp (text, '(?m)^Version:\s*(\S+)', 'tokens', 'once');
    if (~isempty (tok))
      v = tok{1};
      return;
    end
  end
end

%!test
%! % the help's own version line (Contents.m) states the same version
%! txt = fileread (fullfile (fileparts (fileparts (which ('sluice.internal.version'))), 'Contents.m'));
%! tok = regexp (txt, 'Version (\d+\.\d+\.\d+)', 'tokens', 'once');
%! assert (sluice.internal.version (), tok{1});
