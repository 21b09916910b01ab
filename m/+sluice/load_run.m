% -*- texinfo -*-
% @deftypefn {} {@var{res} =} sluice.load_run (@var{file})
% Read a run saved by @code{sluice.save_run} back into a result.
%
% The format is recognised from the file's first bytes, whatever its
% name: NetCDF (written for a name ending in @code{.nc}) or Octave's
% binary format. @var{res} is the result that was saved, a filter result
% or a twin, with every field, number and name as it was (the NetCDF
% file stores each number in its own type, doubles as NC_DOUBLE, so they
% come back to the bit), and one more field, @code{saved}:
% @table @code
% @item file
% the file read.
% @item format
% @code{'netcdf'} or @code{'octave'}.
% @item sluice_version
% the version of sluice that wrote the file.
% @item written
% when it was written (UTC).
% @item rerunnable
% false when the settings held function handles (an operator's
% @code{fun}): NetCDF stores them as text, so @code{res.options} has
% their text instead, and the settings cannot be passed back to
% @code{sluice.filter} as they are. True otherwise.
% @item note
% which settings came back as text, or empty.
% @end table
%
% Errors: @code{sluice:load_run:badfile} (not a file name),
% @code{sluice:load_run:nofile} (no such file),
% @code{sluice:load_run:notsluice} (a file of another kind, or a NetCDF
% or Octave file not written by @code{sluice.save_run}),
% @code{sluice:load_run:newer} (written by a newer sluice in a format
% this one does not know), @code{sluice:load_run:unreadable} (a damaged
% file), @code{sluice:load_run:badresult} (what it holds is not a
% result), @code{sluice:load_run:nonetcdf} (a NetCDF file, and Octave's
% netcdf package is missing).
% @seealso{sluice.save_run, sluice.report}
% @end deftypefn
function res = load_run (file)
  if (nargin ~= 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (~(ischar (file) && isrow (file)))
    error ('sluice:load_run:badfile', 'argument 1 (file): expected a file name, got %s', ...
           sluice.internal.describe (file));
  end
  fid = -1;
  if (~isfolder (file))
    fid = fopen (file, 'r');
  end
  if (fid < 0)
    error ('sluice:load_run:nofile', '%s: no such file', file);
  end
  magic = fread (fid, [1 10], '*char');
  fclose (fid);
  if (strncmp (magic, [char(137) 'HDF'], 4) || strncmp (magic, 'CDF', 3))
    [res, info] = read_netcdf (file);
  elseif (strncmp (magic, 'Octave-1-', 9))
    [res, info] = read_octave (file);
  else
    error ('sluice:load_run:notsluice', ...
           '%s: not a run saved by sluice.save_run (neither NetCDF nor Octave''s binary format)', ...
           file);
  end
  where = sprintf ('%s', file);
  if (strcmp (info.kind, 'twin'))
    if (~(isstruct (res) && isscalar (res) && isfield (res, 'filter')))
      error ('sluice:load_run:badresult', '%s: the saved twin has no filter run', file);
    end
    sluice.internal.check_result (res.filter, [where ' (filter)'], 'load_run');
  else
    sluice.internal.check_result (res, where, 'load_run');
  end
  res.saved = struct ('file', file, 'format', info.format, ...
                      'sluice_version', info.version, 'written', info.written, ...
                      'rerunnable', isempty (info.handles), 'note', '');
  if (~isempty (info.handles))
    res.saved.note = sprintf (['function handles of the settings were stored as their ', ...
                               'text: %s; rebuild them (str2func) before running again'], ...
                              strjoin (info.handles, ', '));
  end
end

function [res, info] = read_octave (file)
  try
    s = sluice.internal.compat ('load_binary', file);
  catch err
    error ('sluice:load_run:unreadable', '%s: cannot be read: %s', file, err.message);
  end
  if (~(isfield (s, 'sluice_run') && isstruct (s.sluice_run) && isscalar (s.sluice_run) && ...
        all (isfield (s.sluice_run, {'format', 'format_version', 'kind', 'result'})) && ...
        isequal (s.sluice_run.format, 'sluice.save_run')))
    error ('sluice:load_run:notsluice', '%s: an Octave file not written by sluice.save_run', ...
           file);
  end
  run = s.sluice_run;
  check_version (run.format_version, file);
  res = run.result;
  info = struct ('format', 'octave', 'kind', run.kind, 'version', field_text (run, 'sluice_version'), ...
                 'written', field_text (run, 'saved'), 'handles', {{}});
end

function s = field_text (r, f)
  s = '';
  if (isfield (r, f) && ischar (r.(f)))
    s = r.(f);
  end
end

function check_version (v, file)
  if (~(isnumeric (v) && isscalar (v)))
    error ('sluice:load_run:notsluice', '%s: the format version is missing', file);
  end
  if (v > 1)
    error ('sluice:load_run:newer', ...
           '%s: written in format %g by a newer sluice; this one reads format 1', file, v);
  end
end

function [res, info] = read_netcdf (file)
  nc = sluice.internal.compat ('netcdf', 'load_run');
  try
    ncid = nc.open (file, 'NC_NOWRITE');
  catch err
    error ('sluice:load_run:unreadable', '%s: cannot be read as NetCDF: %s', file, err.message);
  end
  try
    G = nc.getConstant ('NC_GLOBAL');
    if (~isequal (attribute (nc, ncid, G, 'sluice_format'), 'sluice.save_run'))
      error ('sluice:load_run:notsluice', '%s: a NetCDF file not written by sluice.save_run', ...
             file);
    end
    check_version (attribute (nc, ncid, G, 'sluice_format_version'), file);
    info = struct ('format', 'netcdf', 'kind', attribute (nc, ncid, G, 'sluice_kind'), ...
                   'version', regexprep (attribute (nc, ncid, G, 'source'), '^sluice ', ''), ...
                   'written', regexprep (attribute (nc, ncid, G, 'history'), '\s.*$', ''), ...
                   'handles', {{}});
    gid = ncid;
    if (strcmp (info.kind, 'twin'))
      gid = nc.inqNcid (ncid, 'twin');
    end
    [res, info.handles] = read_group (nc, ncid, gid);
  catch err
    nc.close (ncid);
    if (strncmp (err.identifier, 'sluice:', 7))
      rethrow (err);
    end
    error ('sluice:load_run:unreadable', '%s: cannot be read as a saved run: %s', ...
           file, err.message);
  end
  nc.close (ncid);
end

function v = attribute (nc, gid, varid, name)
  % an attribute, or empty when it is missing
  try
    v = nc.getAtt (gid, varid, name);
  catch
    v = [];
  end
end

function [v, handles] = read_group (nc, root, gid)
  % the value the group's layout describes: one entry per struct, cell
  % and leaf, parents before their children
  E = jsondecode (nc.getAtt (gid, nc.getConstant ('NC_GLOBAL'), 'sluice_layout'));
  if (isstruct (E))
    E = num2cell (E);
  end
  v = [];
  handles = {};
  for k = 1:numel (E)
    e = E{k};
    path = as_cell (e.path);
    sz = e.size(:)';
    switch (e.kind)
      case 'struct'
        f = as_cell (e.value);
        x = reshape (cell2struct (cell ([numel(f), prod(sz), 1]), f, 1), sz);
      case 'cell'
        x = cell (sz);
      case 'text'
        x = reshape (char (e.value), sz);
      case 'chars'
        rows = as_cell (e.value);
        x = reshape (char (rows{:}), sz);
      case 'empty'
        if (strcmp (e.class, 'logical'))
          x = false (sz);
        else
          x = zeros (sz, e.class);
        end
      case 'handle'
        x = e.value;
        handles{end+1} = strjoin (path, '.');
      case 'var'
        names = as_cell (e.var);
        parts = cell (numel (names), 1);
        for i = 1:numel (names)
          p = nc.getVar (gid, nc.inqVarID (gid, names{i}));
          parts{i} = p(:)';
        end
        x = restore (reshape (vertcat (parts{:}), sz), e.class);
      case 'att'
        at = as_cell (e.var);
        x = restore (reshape (nc.getAtt (gid, nc.inqVarID (gid, at{1}), at{2}), sz), e.class);
      case 'names'
        names = as_cell (e.var);
        chars = nc.getVar (gid, nc.inqVarID (gid, names{1}));
        x = cell (1, size (chars, 2));
        for i = 1:numel (x)
          s = chars(:, i)';
          last = find (s ~= char (0), 1, 'last');
          x{i} = '';
          if (~isempty (last))
            x{i} = s(1:last);
          end
        end
        x = reshape (x, sz);
      case 'group'
        g = root;
        if (~strcmp (e.value, '/'))
          g = nc.inqNcid (root, e.value);
        end
        [x, more] = read_group (nc, root, g);
        handles = [handles, more];
      otherwise
        error ('sluice:load_run:unreadable', 'an entry of the layout has the unknown kind ''%s''', ...
               e.kind);
    end
    v = assign (v, path, x);
  end
end

function x = restore (x, cls)
  if (strcmp (cls, 'logical'))
    x = logical (x);
  else
    x = cast (x, cls);
  end
end

function c = as_cell (x)
  % jsondecode gives a list of strings as a cell, one string as a char
  % and an empty list as []
  if (iscell (x))
    c = x(:)';
  elseif (ischar (x))
    c = {x};
  else
    c = {};
  end
end

function v = assign (v, path, x)
  if (isempty (path))
    v = x;
    return;
  end
  subs = struct ('type', cell (1, numel (path)), 'subs', []);
  for k = 1:numel (path)
    seg = path{k};
    tok = regexp (seg, '^([({])(\d+)[)}]$', 'tokens', 'once');
    if (isempty (tok))
      subs(k).type = '.';
      subs(k).subs = seg;
    elseif (strcmp (tok{1}, '('))
      subs(k).type = '()';
      subs(k).subs = {str2double(tok{2})};
    else
      subs(k).type = '{}';
      subs(k).subs = {str2double(tok{2})};
    end
  end
  v = subsasgn (v, subs, x);
end

%!test
%! f = [tempname() '.nc'];
%! fid = fopen (f, 'w');
%! fprintf (fid, 'time,level\n1,2.5\n');
%! fclose (fid);
%! unwind_protect
%!   try
%!     sluice.load_run (f);
%!     error ('no error');
%!   catch err
%!     assert (err.identifier, 'sluice:load_run:notsluice');
%!   end
%! unwind_protect_cleanup
%!   delete (f);
%! end_unwind_protect
%!error id=sluice:load_run:usage sluice.load_run ()
%!error id=sluice:load_run:badfile sluice.load_run (3)
%!error id=sluice:load_run:nofile sluice.load_run (fullfile (tempname (), 'run.nc'))
