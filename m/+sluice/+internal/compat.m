% -*- texinfo -*-
% @deftypefn  {} {@var{tf} =} sluice.internal.compat ('is_octave')
% @deftypefnx {} {} sluice.internal.compat ('usage', @var{fn})
% @deftypefnx {} {} sluice.internal.compat ('flush')
% @deftypefnx {} {@var{n} =} sluice.internal.compat ('nproc')
% @deftypefnx {} {@var{id} =} sluice.internal.compat ('pid')
% @deftypefnx {} {[@var{err}, @var{msg}] =} sluice.internal.compat ('rename', @var{from}, @var{to})
% @deftypefnx {} {[@var{err}, @var{msg}] =} sluice.internal.compat ('delete_file', @var{file})
% @deftypefnx {} {[@var{err}, @var{msg}] =} sluice.internal.compat ('symlink', @var{target}, @var{link})
% @deftypefnx {} {@var{p} =} sluice.internal.compat ('absolute_path', @var{p})
% @deftypefnx {} {@var{p} =} sluice.internal.compat ('canonical_path', @var{p})
% @deftypefnx {} {@var{files} =} sluice.internal.compat ('glob', @var{pattern})
% @deftypefnx {} {} sluice.internal.compat ('save_binary', @var{file}, @var{name}, @var{value})
% @deftypefnx {} {@var{s} =} sluice.internal.compat ('load_binary', @var{file})
% @deftypefnx {} {@var{nc} =} sluice.internal.compat ('netcdf', @var{fn})
% @deftypefnx {} {@var{d} =} sluice.internal.compat ('utc_now')
% @deftypefnx {} {@var{tf} =} sluice.internal.compat ('has_parallel')
% @deftypefnx {} {@var{out} =} sluice.internal.compat ('parallel_map', @var{nworkers}, @var{fun}, @var{inputs})
% @deftypefnx {} {@var{out} =} sluice.internal.compat ('parallel_map', @var{nworkers}, @var{fun}, @var{inputs}, @var{on_error})
% @deftypefnx {} {[@var{out}, @var{failure}] =} sluice.internal.compat ('parallel_map', @dots{})
% @deftypefnx {} {@var{list} =} sluice.internal.compat ('graphics_toolkits')
% @deftypefnx {} {@var{h} =} sluice.internal.compat ('hidden_figure', @var{toolkit})
% The one place where sluice calls functions that only Octave has; every
% operation has a MATLAB branch where MATLAB has a counterpart.
%
% @table @code
% @item is_octave
% true when running in Octave.
% @item usage
% raise the error @code{sluice:@var{fn}:usage} for a wrong number of
% arguments to @code{sluice.@var{fn}}; the message begins "Invalid call to"
% and lists the calling forms of that function's help text.
% @item flush
% flush the standard output (progress lines).
% @item nproc
% the number of processors available.
% @item pid
% the id of this process (for unique temporary names).
% @item rename, delete_file, symlink
% file operations; @var{err} is 0 on success, otherwise non-zero with a
% message in @var{msg}. Called without outputs, a failure is the error
% @code{sluice:compat:fileop}.
% @item absolute_path
% @var{p} made absolute against the current folder (no file need exist).
% @item canonical_path
% the absolute path of an existing file with links resolved; empty when
% the file does not exist.
% @item glob
% the files matching a wildcard pattern, as a column cell array.
% @item save_binary, load_binary
% write the variable @var{name} with the value @var{value} to @var{file}
% in the platform's own binary format, and read such a file back as a
% struct.
% @item netcdf
% the low-level NetCDF functions as a struct of function handles
% (@code{@var{nc}.create}, @code{@var{nc}.defVar}, @dots{}): Octave's
% netcdf package (loaded when needed; Debian's @code{octave-netcdf}), or
% MATLAB's @code{netcdf} namespace. Without the package, the error
% @code{sluice:@var{fn}:nonetcdf}.
% @item utc_now
% the current time (UTC) as a datenum.
% @item has_parallel
% true when @code{parallel_map} can use worker processes (Octave's
% parallel package, or MATLAB's parallel pool); loads the package.
% @item parallel_map
% @code{@var{out}@{k@} = @var{fun} (@var{inputs}@{k@})} in @var{nworkers}
% worker processes. When @var{fun} fails and @var{on_error} is given,
% @code{@var{on_error} (@var{err}, @var{inputs}@{k@}, @dots{})} gives
% @var{out}@{k@}; @var{err} has fields @code{message}, @code{identifier}
% and @code{index}. When a worker process dies (killed, out of memory) or
% the parallel machinery fails, the other workers are stopped (none is
% left behind) and, with a second output, @var{failure} is a struct with
% @code{message} (the machinery's message), @code{index} (the items whose
% worker died; when none can be named, the items that were running),
% @code{died} (true when a dead worker was found) and @code{how} (such as
% "killed by signal 9"); @var{out} is then empty. Without a second output
% such a failure is the error @code{sluice:compat:workerfailed}. With no
% failure, @var{failure} is empty.
% @item graphics_toolkits
% the graphics toolkits available (empty in MATLAB, which has one).
% @item hidden_figure
% a new invisible figure drawn by @var{toolkit} (@code{'native'}: the
% default one).
% @item help_text
% @code{[text, sentence] = compat ('help_text', file)}: the help of an .m
% file as plain text (texinfo rendered as Octave's help renders it) and
% its first sentence; both empty when the file has no usable help, and
% always empty in MATLAB, which keeps no such index.
% @item save_help_index
% @code{compat ('save_help_index', file, cache)}: write the 3-row cell
% @var{cache} (names, help texts, first sentences) as the text file that
% Octave's @code{lookfor} reads for a folder on the path (MATLAB: nothing).
% @end table
%
% Errors: @code{sluice:compat:badop} (an unknown operation),
% @code{sluice:compat:badarg} (missing or wrong arguments),
% @code{sluice:compat:fileop} (a failed file operation without outputs),
% @code{sluice:compat:workerfailed} (a worker process of
% @code{parallel_map} died, asked for without the failure output).
% @end deftypefn

function varargout = compat (op, varargin)
  if (nargin < 1 || ~ischar (op) || ~isrow (op))
    error ('sluice:compat:badop', 'argument 1 (op): expected the name of an operation');
  end
  oct = exist ('OCTAVE_VERSION', 'builtin') > 0;
  switch (op)
    case 'is_octave'
      varargout{1} = oct;
    case 'usage'
      need (varargin, 1, op);
      raise_usage (varargin{1});
    case 'flush'
      if (oct)
        fflush (stdout);
      end
    case 'nproc'
      if (oct)
        varargout{1} = nproc ();
      else
        varargout{1} = maxNumCompThreads ();
      end
    case 'pid'
      if (oct)
        varargout{1} = getpid ();
      else
        varargout{1} = feature ('getpid');
      end
    case 'rename'
      need (varargin, 2, op);
      if (oct)
        [err, msg] = rename (varargin{1}, varargin{2});
      else
        [ok, msg] = movefile (varargin{1}, varargin{2}, 'f');
        err = double (~ok);
      end
      varargout = file_result (nargout, err, msg, op, varargin{1});
    case 'delete_file'
      need (varargin, 1, op);
      if (oct)
        [err, msg] = unlink (varargin{1});
      else
        [err, msg] = matlab_delete (varargin{1});
      end
      varargout = file_result (nargout, err, msg, op, varargin{1});
    case 'symlink'
      need (varargin, 2, op);
      if (oct)
        [err, msg] = symlink (varargin{1}, varargin{2});
      elseif (isunix ())
        [err, msg] = system (sprintf ('ln -s ''%s'' ''%s''', varargin{1}, varargin{2}));
      else
        err = 1;
        msg = 'symbolic links are not made on this platform';
      end
      varargout = file_result (nargout, err, msg, op, varargin{2});
    case 'absolute_path'
      need (varargin, 1, op);
      if (oct)
        varargout{1} = make_absolute_filename (varargin{1});
      else
        varargout{1} = matlab_absolute (varargin{1});
      end
    case 'canonical_path'
      need (varargin, 1, op);
      if (oct)
        varargout{1} = canonicalize_file_name (varargin{1});
      else
        [ok, a] = fileattrib (varargin{1});
        if (ok)
          varargout{1} = a.Name;
        else
          varargout{1} = '';
        end
      end
    case 'glob'
      need (varargin, 1, op);
      if (oct)
        varargout{1} = glob (varargin{1});
      else
        d = dir (varargin{1});
        folder = fileparts (varargin{1});
        varargout{1} = cell (numel (d), 1);
        for k = 1:numel (d)
          varargout{1}{k} = fullfile (folder, d(k).name);
        end
      end
    case 'save_binary'
      need (varargin, 3, op);
      if (~ischar (varargin{2}) || ~isvarname (varargin{2}))
        error ('sluice:compat:badarg', 'save_binary: expected a variable name, got %s', class (varargin{2}));
      end
      s = struct ();
      s.(varargin{2}) = varargin{3};
      if (oct)
        save ('-binary', varargin{1}, '-struct', 's');
      else
        save (varargin{1}, '-mat', '-struct', 's');
      end
    case 'load_binary'
      need (varargin, 1, op);
      if (oct)
        varargout{1} = load (varargin{1});
      else
        varargout{1} = load (varargin{1}, '-mat');
      end
    case 'netcdf'
      need (varargin, 1, op);
      varargout{1} = netcdf_api (oct, varargin{1});
    case 'utc_now'
      if (oct)
        varargout{1} = datenum (1970, 1, 1) + time () / 86400;
      else
        varargout{1} = datenum (datetime ('now', 'TimeZone', 'UTC'));
      end
    case 'has_parallel'
      varargout{1} = have_parallel (oct);
    case 'parallel_map'
      need (varargin, 3, op);
      on_error = [];
      if (numel (varargin) > 3)
        on_error = varargin{4};
      end
      [varargout{1}, failure] = parallel_map (oct, varargin{1}, varargin{2}, varargin{3}, on_error);
      if (nargout > 1)
        varargout{2} = failure;
      elseif (~isempty (failure))
        error ('sluice:compat:workerfailed', 'a worker process failed: %s', failure.message);
      end
    case 'graphics_toolkits'
      if (oct)
        varargout{1} = available_graphics_toolkits ();
      else
        varargout{1} = {};
      end
    case 'hidden_figure'
      need (varargin, 1, op);
      tk = varargin{1};
      if (oct && ~strcmp (tk, 'native'))
        varargout{1} = figure ('visible', 'off', '__graphics_toolkit__', tk);
      else
        varargout{1} = figure ('visible', 'off');
      end
    case 'help_text'
      need (varargin, 1, op);
      varargout = {'', ''};
      if (oct)
        [varargout{1}, varargout{2}] = octave_help_text (varargin{1});
      end
    case 'save_help_index'
      need (varargin, 2, op);
      if (oct)
        cache = varargin{2};
        save_header_format_string (['# doc-cache created by sluice, Octave ', OCTAVE_VERSION()], ...
                                   'local');
        save ('-text', varargin{1}, 'cache');
      end
    otherwise
      error ('sluice:compat:badop', 'unknown operation ''%s''', op);
  end
end

function [text, sentence] = octave_help_text (f)
  text = '';
  sentence = '';
  [raw, format] = get_help_text (f);
  switch (lower (format))
    case 'plain text'
      text = raw;
      status = 0;
    case 'texinfo'
      [text, status] = __makeinfo__ (raw, 'plain text');
    otherwise
      status = 1;
  end
  if (status ~= 0 || isempty (strtrim (text)))
    text = '';
    return;
  end
  sentence = get_first_help_sentence (f);
end

function api = netcdf_api (oct, fn)
  % the NetCDF calls sluice.save_run and sluice.load_run make
  names = {'create', 'open', 'close', 'getConstant', 'defDim', 'defVar', 'defGrp', ...
           'putVar', 'getVar', 'putAtt', 'getAtt', 'inqNcid', 'inqVarID', 'inqAttID'};
  prefix = 'netcdf.';
  if (oct)
    prefix = 'netcdf_';
    why = '';
    if (exist ('netcdf_create') == 0)
      % the package's PKG_ADD leaves two variables in the base workspace:
      % those that were not there before are removed again
      stray = {'doc_file', 'pkg_dir'};
      had = cellfun (@(v) evalin ('base', sprintf ('exist (''%s'', ''var'')', v)), stray);
      try
        pkg ('load', 'netcdf');
      catch err
        why = [' (' err.message ')'];
      end
      for k = find (~had)
        evalin ('base', sprintf ('clear (''%s'');', stray{k}));
      end
    end
    if (exist ('netcdf_create') == 0)
      error (['sluice:' fn ':nonetcdf'], ...
             ['NetCDF files need Octave''s netcdf package, which could not be loaded%s; ', ...
              'install it (Debian: apt-get install octave-netcdf; make deps does) ', ...
              'or save to a .mat file'], why);
    end
  end
  api = struct ();
  for k = 1:numel (names)
    api.(names{k}) = str2func ([prefix names{k}]);
  end
end

function need (args, n, op)
  if (numel (args) < n)
    error ('sluice:compat:badarg', '%s: expected %d argument(s) after the operation, got %d', ...
           op, n, numel (args));
  end
end

function out = file_result (nout, err, msg, op, file)
  if (nout == 0)
    if (err ~= 0)
      error ('sluice:compat:fileop', '%s %s failed: %s', op, file, msg);
    end
    out = {};
  else
    out = {err, msg};
  end
end

function [err, msg] = matlab_delete (file)
  err = 0;
  msg = '';
  try
    delete (file);
  catch e
    err = 1;
    msg = e.message;
  end
end

function p = matlab_absolute (p)
  if (~(strncmp (p, '/', 1) || strncmp (p, '\', 1) || ...
        (numel (p) > 1 && p(2) == ':')))
    p = fullfile (pwd (), p);
  end
  parts = strsplit (p, filesep ());
  keep = {};
  for k = 1:numel (parts)
    if (strcmp (parts{k}, '.') || (isempty (parts{k}) && k > 1))
      continue;
    elseif (strcmp (parts{k}, '..'))
      if (numel (keep) > 1)
        keep(end) = [];
      end
    else
      keep{end + 1} = parts{k};
    end
  end
  p = strjoin (keep, filesep ());
  if (isempty (p))
    p = filesep ();
  end
end

function raise_usage (fn)
  if (~ischar (fn) || ~isrow (fn) || isempty (fn))
    error ('sluice:compat:badarg', 'usage: expected the name of the calling function');
  end
  forms = usage_forms (fn);
  if (isempty (forms))
    msg = sprintf ('Invalid call to sluice.%s; see help sluice.%s', fn, fn);
  else
    msg = sprintf ('Invalid call to sluice.%s.  Correct usage is:\n\n%s', fn, ...
                   sprintf (' -- %s\n', forms{:}));
  end
  error (['sluice:' fn ':usage'], '%s', msg);
end

function forms = usage_forms (fn)
  % the calling forms (@deftypefn lines) of the help text of sluice.<fn>
  forms = {};
  here = fileparts (mfilename ('fullpath'));   % .../+sluice/+internal
  file = fullfile (fileparts (here), [fn '.m']);
  fid = fopen (file, 'r');
  if (fid < 0)
    return;
  end
  while (true)
    s = fgetl (fid);
    if (~ischar (s))
      break;
    end
    tok = regexp (s, '^\s*%\s*@deftypefnx?\s*\{[^}]*\}\s*(.*)$', 'tokens', 'once');
    if (~isempty (tok))
      t = regexprep (tok{1}, '@dots\{\}', '...');
      t = regexprep (t, '@(var|code)\{([^}]*)\}', '$2');
      t = strtrim (regexprep (t, '[{}]', ''));
      forms{end + 1} = t;
    end
  end
  fclose (fid);
end

function tf = have_parallel (oct)
  tf = false;
  try
    if (oct)
      pkg ('load', 'parallel');
      tf = exist ('parcellfun') > 0;
    else
      tf = exist ('parpool') > 0;
    end
  catch
    tf = false;
  end
end

function [out, failure] = parallel_map (oct, nw, fun, inputs, on_error)
  failure = [];
  if (oct)
    pkg ('load', 'parallel');
    opts = {'UniformOutput', false, 'VerboseLevel', 0};
    if (~isempty (on_error))
      opts = [opts, {'ErrorHandler', on_error}];
    end
    % each worker marks the item it runs (sluice.internal.worker_call)
    mark = tempname ();
    mkdir (mark);
    index = num2cell (1:numel (inputs));
    index = reshape (index, size (inputs));
    try
      out = parcellfun (nw, @(x, k) sluice.internal.worker_call (fun, x, mark, k), ...
                        inputs, index, opts{:});
    catch err
      out = {};
      try
        failure = worker_failure (err, mark);
      catch
        failure = struct ('message', err.message, 'index', zeros (1, 0), ...
                          'died', false, 'how', '');
      end
      % stop the workers still running and collect the dead one: the
      % next call starts afresh and no process is left behind
      try
        parcellfun_set_nproc (0);
      catch
        % nothing more can be done about them here
      end
    end
    old = confirm_recursive_rmdir (false);
    rmdir (mark, 's');
    confirm_recursive_rmdir (old);
  else
    out = cell (size (inputs));
    try
      parfor (k = 1:numel (inputs), nw)
        try
          out{k} = fun (inputs{k});
        catch e
          if (isempty (on_error))
            rethrow (e);
          end
          out{k} = on_error (struct ('message', e.message, 'identifier', e.identifier, ...
                                     'index', k), inputs{k});
        end
      end
    catch err
      out = {};
      failure = struct ('message', err.message, 'index', zeros (1, 0), ...
                        'died', false, 'how', '');
    end
  end
end

function f = worker_failure (err, mark)
  % the items still marked as running, and which of their workers died
  f = struct ('message', err.message, 'index', zeros (1, 0), 'died', false, 'how', '');
  d = dir (fullfile (mark, '*'));
  running = zeros (1, 0);
  pids = zeros (1, 0);
  for i = 1:numel (d)
    k = str2double (d(i).name);
    if (d(i).isdir || isnan (k))
      continue;
    end
    % a worker that finishes meanwhile removes its mark
    try
      pid = str2double (fileread (fullfile (mark, d(i).name)));
    catch
      continue;
    end
    running(end + 1) = k;
    pids(end + 1) = pid;
  end
  % a worker is a child of this process: one that has ended is collected
  % here (its exit status tells how it ended), one still running answers
  % 0. The parent can see a worker's pipe close a moment before the
  % worker has ended, so it looks again for up to a second.
  dead = zeros (1, 0);
  for attempt = 1:50
    for i = 1:numel (pids)
      if (isnan (pids(i)) || pids(i) <= 0 || any (dead == running(i)))
        continue;
      end
      [got, status] = waitpid (pids(i), WNOHANG ());
      if (got == pids(i))
        dead(end + 1) = running(i);
        if (WIFSIGNALED (status))
          f.how = sprintf ('killed by signal %d', WTERMSIG (status));
        elseif (WIFEXITED (status))
          f.how = sprintf ('ended with exit status %d', WEXITSTATUS (status));
        end
      end
    end
    if (~isempty (dead) || isempty (pids))
      break;
    end
    pause (0.02);
  end
  if (~isempty (dead))
    f.index = sort (dead);
    f.died = true;
  else
    f.index = sort (running);
  end
end

%!assert (sluice.internal.compat ('is_octave'), true)
%!assert (sluice.internal.compat ('nproc') >= 1)
%!assert (sluice.internal.compat ('pid'), getpid ())
%!test
%! % against Octave's clock: the same instant, here in UTC
%! d = sluice.internal.compat ('utc_now') - datenum (1970, 1, 1);
%! assert (abs (d * 86400 - time ()) < 5);
%!test
%! nc = sluice.internal.compat ('netcdf', 'x');
%! assert (func2str (nc.create), 'netcdf_create');
%! assert (nc.getConstant ('NC_GLOBAL'), netcdf_getConstant ('NC_GLOBAL'));
%!test
%! sluice.internal.compat ('flush');
%!test
%! old = pwd ();
%! d = tempname ();
%! mkdir (d);
%! unwind_protect
%!   cd (d);
%!   assert (sluice.internal.compat ('absolute_path', 'a/./b/../c.txt'), ...
%!           fullfile (canonicalize_file_name (d), 'a', 'c.txt'));
%!   assert (sluice.internal.compat ('canonical_path', 'missing.txt'), '');
%! unwind_protect_cleanup
%!   cd (old);
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (d, 's');
%! end_unwind_protect
%!test
%! d = tempname ();
%! mkdir (d);
%! unwind_protect
%!   a = fullfile (d, 'a.bin');
%!   b = fullfile (d, 'b.bin');
%!   sluice.internal.compat ('save_binary', a, 'thing', struct ('x', {1, 'two'}));
%!   assert (sluice.internal.compat ('glob', fullfile (d, '*.bin')), {a});
%!   [err, msg] = sluice.internal.compat ('rename', a, b);
%!   assert (err, 0);
%!   assert (msg, '');
%!   s = sluice.internal.compat ('load_binary', b);
%!   assert (fieldnames (s), {'thing'});
%!   assert (s.thing, struct ('x', {1, 'two'}));
%!   assert (isempty (sluice.internal.compat ('glob', fullfile (d, '*.txt'))));
%!   sluice.internal.compat ('symlink', d, fullfile (d, 'link'));
%!   assert (sluice.internal.compat ('canonical_path', fullfile (d, 'link')), ...
%!           canonicalize_file_name (d));
%!   sluice.internal.compat ('delete_file', fullfile (d, 'link'));
%!   sluice.internal.compat ('delete_file', b);
%!   assert (isempty (sluice.internal.compat ('glob', fullfile (d, '*'))));
%!   [err, msg] = sluice.internal.compat ('delete_file', b);
%!   assert (err ~= 0);
%!   assert (~isempty (msg));
%! unwind_protect_cleanup
%!   confirm_recursive_rmdir (false, 'local');
%!   rmdir (d, 's');
%! end_unwind_protect
%!error id=sluice:compat:fileop sluice.internal.compat ('rename', tempname (), tempname ())
%!error id=sluice:compat:fileop sluice.internal.compat ('delete_file', tempname ())
%!error <Invalid call to sluice.weights.  Correct usage is:.*w = sluice.weights \(logw\)> sluice.internal.compat ('usage', 'weights')
%!error id=sluice:weights:usage sluice.internal.compat ('usage', 'weights')
%!error <Invalid call to sluice.nosuch; see help> sluice.internal.compat ('usage', 'nosuch')
%!error id=sluice:compat:badarg sluice.internal.compat ('usage')
%!error id=sluice:compat:badarg sluice.internal.compat ('usage', 3)
%!error id=sluice:compat:badarg sluice.internal.compat ('rename', 'a')
%!error id=sluice:compat:badarg sluice.internal.compat ('save_binary', 'f', '1x', 2)
%!error id=sluice:compat:badop sluice.internal.compat ('no_such_operation')
%!error id=sluice:compat:badop sluice.internal.compat (3)
%!error id=sluice:compat:badop sluice.internal.compat ()
%!test
%! out = sluice.internal.compat ('parallel_map', 2, @(x) 2 * x, {1, 2, 3});
%! assert (out, {2, 4, 6});
%!test
%! if (sluice.internal.compat ('has_parallel'))
%!   h = @(e, varargin) ['handled: ' e.message];
%!   out = sluice.internal.compat ('parallel_map', 2, @(x) error ('my:id', 'bad %d', x), {1, 2}, h);
%!   assert (iscellstr (out) && numel (out) == 2);
%!   assert (strncmp (out, 'handled: ', 9));
%! end
%!assert (iscellstr (sluice.internal.compat ('graphics_toolkits')))
