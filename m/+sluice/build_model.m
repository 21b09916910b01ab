% -*- texinfo -*-
% @deftypefn  {} {@var{spec} =} sluice.build_model (@var{cfile})
% @deftypefnx {} {@var{spec} =} sluice.build_model (@var{cfile}, @var{name}, @var{value}, @dots{})
% @deftypefnx {} {[@var{spec}, @var{rebuilt}] =} sluice.build_model (@dots{})
% Compile a model written in one C file and return its spec. It is used
% with @code{sluice.filter}, @code{sluice.simulate} and
% @code{sluice.propagate} exactly like a built-in model, at the same speed.
%
% The file includes @code{"sluice/model.h"} and defines
% @example
% const sl_model_def *sluice_user_model (void);
% @end example
% returning a pointer to its static definition: names of the states,
% parameters, forcings and events, default initial state and parameters,
% parameter bounds, time step, default integrator and the functions of
% the dynamics (a right-hand side @code{rhs}, a step map @code{map}, or
% both; a @code{jump} for models with events), and optionally
% @code{state_internal}, one flag per state for the model's own
% bookkeeping that reports leave out. See the README and
% @file{demos/user_model/reservoir.c} for the whole contract.
%
% Two gateways are compiled against the project's library
% (@file{build/libsluice.a}, made by @command{make}): @file{NAME_run.mex},
% the assimilation cycle with the model linked in, and
% @file{NAME_info.mex}, which describes the definition. Before they are
% built the definition is checked and its functions are called once, in
% a separate process (the file linked with the model checker
% @file{build/model_check.o}, also made by @command{make}), at the
% default parameters: a definition with
% missing names, no dynamics or an unknown integrator, or functions that
% crash, is reported as an error and never loaded into Octave. The
% gateways are rebuilt only when the C file (or the library, or the
% gateway sources) is newer than they are, or when they were built from
% another C file (a note @file{.NAME_source} beside them says which).
%
% Options (any other name/value pair is passed to @code{sluice.model},
% for example @code{'n'}, @code{'integrator'}, @code{'dt'}, @code{'x0'},
% @code{'defaults'}, @code{'rtol'}):
% @table @code
% @item outdir
% folder for the two MEX files (default: the C file's folder; created if
% needed). It is added to the path.
% @item name
% base name of the MEX files (default: the file's name without
% @file{.c}); a valid Octave name of at most 58 characters.
% @item force
% true to compile even when the MEX files are up to date (default false).
% @end table
%
% @var{rebuilt} is true when the gateways were compiled by this call.
% Compiler warnings about the C file are shown as a warning
% (@code{sluice:build_model:warnings}). Errors: @code{nofile},
% @code{badclass}, @code{badname}, @code{badoption}, @code{badoutdir},
% @code{notbuilt} (the library or the model checker is missing or older
% than its sources: run @command{make}), @code{compilefailed} (the compiler's message follows),
% @code{noentry} (the file defines no @code{sluice_user_model}),
% @code{baddef} (the definition is incomplete or its functions crash),
% @code{loadfailed} (the MEX files do not load), @code{shadowed} (another
% function of the same name comes first on the path, for example a file
% in the current folder), all under @code{sluice:build_model:}.
%
% Example:
% @example
% spec = sluice.build_model ('reservoir.c');
% X = sluice.simulate (spec, [], [], 0:30, struct ('time', t, 'values', rain));
% @end example
% @seealso{sluice.model, sluice.filter, sluice.simulate}
% @end deftypefn
function [spec, rebuilt] = build_model (cfile, varargin)
  if (nargin < 1)
    sluice.internal.compat ('usage', mfilename ());
  end
  if (~ischar (cfile) || isempty (cfile) || ~isrow (cfile))
    error ('sluice:build_model:badclass', ...
           'argument 1 (cfile): expected the name of a C file, got %s', describe (cfile));
  end
  [opts, model_args] = parse_options (varargin);

  cfile = sluice.internal.compat ('absolute_path', cfile);
  if (~exist (cfile, 'file') || exist (cfile, 'dir'))
    error ('sluice:build_model:nofile', 'no C file ''%s''', cfile);
  end
  [cdir, base, ext] = fileparts (cfile);
  if (any (ismember (cfile, ['"$`\\' char(10) char(13)])))
    error ('sluice:build_model:nofile', ...
           'the path ''%s'' contains a character the compiler driver cannot pass on (" $ ` \\ or a line break)', ...
           cfile);
  end
  if (~strcmp (ext, '.c'))
    error ('sluice:build_model:nofile', ...
           '''%s'' is not a C source file (expected a name ending in .c)', cfile);
  end
  name = opts.name;
  if (isempty (name))
    name = base;
    if (~valid_name (name))
      error ('sluice:build_model:badname', ...
             ['''%s'' (from the file name) is not a valid Octave name of at most 58 ', ...
              'characters: rename the file or give ''name'', for example ''%s'''], ...
             name, suggest_name (name));
    end
  end

  % in a clone the project's tree holds the library and the sources; an
  % installed package carries them in the folder sdk beside +sluice
  here = fileparts (fileparts (mfilename ('fullpath')));
  root = fullfile (here, 'sdk');
  if (~exist (fullfile (root, 'include', 'sluice'), 'dir'))
    root = fileparts (here);
  end
  lib = fullfile (root, 'build', 'libsluice.a');
  if (~exist (lib, 'file'))
    error ('sluice:build_model:notbuilt', ...
           'the library %s is missing: run make in %s first', lib, root);
  end
  sources = fullfile (root, 'mex', {'pf_run.c', 'model_info.c', 'mexutil.c', 'mexrun.c', 'mexplatform.c'});
  for k = 1:numel (sources)
    if (~exist (sources{k}, 'file'))
      error ('sluice:build_model:notbuilt', 'the gateway source %s is missing', sources{k});
    end
  end

  outdir = opts.outdir;
  if (isempty (outdir))
    outdir = cdir;
  end
  outdir = sluice.internal.compat ('absolute_path', outdir);
  if (~exist (outdir, 'dir'))
    [ok, msg] = mkdir (outdir);
    if (~ok)
      error ('sluice:build_model:badoutdir', 'cannot create the folder %s: %s', outdir, msg);
    end
  end

  run_fn = [name '_run'];
  info_fn = [name '_info'];
  targets = {fullfile(outdir, [run_fn '.' mexext()]), fullfile(outdir, [info_fn '.' mexext()])};
  % the one C++ helper of the gateways, compiled by make (Octave's C++
  % headers take seconds to read)
  callobj = fullfile (root, 'build', 'mex', 'mexcall.o');
  deps = [{cfile, lib, callobj}, sources, list_files(fullfile (root, 'mex'), '*.h'), ...
          list_files(fullfile (root, 'include', 'sluice'), '*.h')];
  % a note beside the MEX files says which C file they were built from,
  % so that another file built under the same name is never taken for it
  note = fullfile (outdir, ['.' name '_source']);
  rebuilt = opts.force || ~strcmp (strtrim (read_text (note)), cfile) || ...
            out_of_date (targets, deps);

  % forget gateways of this name loaded before, so the files on disk are
  % the ones used from now on
  clear ('-f', run_fn, info_fn);
  if (rebuilt)
    checker = fullfile (root, 'build', 'model_check.o');
    check_library (root, lib, checker, callobj);
    compile (cfile, cdir, root, lib, checker, outdir, targets);
    fid = fopen (note, 'w');
    if (fid >= 0)
      fprintf (fid, '%s\n', cfile);
      fclose (fid);
    end
  end
  addpath (outdir);
  if (rebuilt)
    rehash ();
  end
  try
    for k = 1:2
      [~, fn] = fileparts (targets{k});
      found = which (fn);   % loads the MEX file
      if (isempty (found) || ~strcmp (sluice.internal.compat ('canonical_path', found), ...
                                      sluice.internal.compat ('canonical_path', targets{k})))
        error ('sluice:build_model:shadowed', ...
               'the MEX file %s is shadowed by %s on the path', targets{k}, found);
      end
    end
    info = feval (info_fn, '');
  catch err
    if (strcmp (err.identifier, 'sluice:build_model:shadowed'))
      rethrow (err);
    end
    error ('sluice:build_model:loadfailed', ...
           ['the gateways of %s do not load: %s\nThe library %s may be incomplete or ', ...
            'older than its sources: run make, then sluice.build_model (..., ''force'', true).'], ...
           cfile, err.message, lib);
  end
  info = check_info (info, cfile);
  info.engine = run_fn;
  spec = sluice.model (info, model_args{:});
end

function [opts, rest] = parse_options (args)
  opts = struct ('outdir', '', 'name', '', 'force', false);
  rest = {};
  if (mod (numel (args), 2) ~= 0)
    error ('sluice:build_model:badoption', 'options must come in name, value pairs');
  end
  for k = 1:2:numel (args)
    key = args{k};
    val = args{k + 1};
    if (~ischar (key) || ~isrow (key))
      error ('sluice:build_model:badoption', 'option %d: expected a name, got %s', ...
             (k + 1) / 2, describe (key));
    end
    switch (lower (key))
      case 'outdir'
        if (~ischar (val) || isempty (val) || ~isrow (val))
          error ('sluice:build_model:badoption', ...
                 '''outdir'' must be the name of a folder, got %s', describe (val));
        end
        opts.outdir = val;
      case 'name'
        if (~ischar (val) || size (val, 1) > 1 || ~valid_name (val))
          error ('sluice:build_model:badname', ...
                 '''name'' must be a valid Octave name of at most 58 characters, got %s', ...
                 describe (val));
        end
        opts.name = val;
      case 'force'
        if (~(islogical (val) || (isnumeric (val) && isreal (val))) || ~isscalar (val) || ...
            isnan (double (val)))
          error ('sluice:build_model:badoption', '''force'' must be true or false, got %s', ...
                 describe (val));
        end
        opts.force = logical (val);
      otherwise
        rest = [rest, {key, val}];
    end
  end
end

function ok = valid_name (s)
  % NAME_info must fit in an Octave name (63 characters)
  ok = ischar (s) && isvarname (s) && numel (s) <= namelengthmax () - 5;
end

function s = suggest_name (s)
  s = regexprep (s, '[^A-Za-z0-9_]', '_');
  if (isempty (s) || ~isletter (s(1)))
    s = ['model_' s];
  end
  s = s(1:min (end, namelengthmax () - 5));
end

function s = describe (v)
  if (ischar (v) && size (v, 1) <= 1)
    s = [ v ];
  else
    dims = arrayfun (@(d) sprintf ('%d', d), size (v), 'UniformOutput', false);
    s = [strjoin(dims, 'x') ' ' class(v)];
  end
end

function c = list_files (folder, pattern)
  d = dir (fullfile (folder, pattern));
  c = cellfun (@(f) fullfile (folder, f), {d.name}, 'UniformOutput', false);
end

function check_library (root, lib, checker, callobj)
  % gateways compiled against headers newer than the library would not
  % match it (and could crash Octave): the library must be rebuilt first.
  % The same holds for the model checker (made from tools/model_check.c)
  % that the user's file is linked with, and for the gateways' compiled
  % helper (mex/mexcall.cc).
  if (~exist (checker, 'file'))
    error ('sluice:build_model:notbuilt', ...
           'the model checker %s is missing: run make in %s first', checker, root);
  end
  if (~exist (callobj, 'file'))
    error ('sluice:build_model:notbuilt', ...
           'the gateways'' helper %s is missing: run make in %s first', callobj, root);
  end
  headers = list_files (fullfile (root, 'include', 'sluice'), '*.h');
  src = [headers, ...
         list_files(fullfile (root, 'src'), '*.c'), list_files(fullfile (root, 'src'), '*.h'), ...
         list_files(fullfile (root, 'src', 'models'), '*.c'), ...
         list_files(fullfile (root, 'src', 'models'), '*.h')];
  older_than (lib, src, 'the library', root);
  older_than (checker, [headers, list_files(fullfile (root, 'tools'), 'model_check.c')], ...
              'the model checker', root);
  older_than (callobj, [list_files(fullfile (root, 'mex'), 'mexcall.cc'), ...
                        list_files(fullfile (root, 'mex'), 'mexcall.h')], 'the gateways'' helper', root);
end

function older_than (built, sources, what, root)
  st = stat (built);
  for k = 1:numel (sources)
    [s, err] = stat (sources{k});
    if (err == 0 && s.mtime > st.mtime)
      error ('sluice:build_model:notbuilt', ...
             '%s %s is older than %s: run make in %s first', what, built, sources{k}, root);
    end
  end
end

function stale = out_of_date (targets, deps)
  % stale when a target is missing or a source is newer than the oldest
  % target. File times to the nanosecond where GNU stat gives them; with
  % whole seconds only, a source of the same second counts as newer, so
  % an edit is never missed.
  [tt, exact] = file_times (targets);
  if (any (isnan (tt)))
    stale = true;
    return;
  end
  td = file_times (deps);
  if (exact)
    stale = any (td > min (tt));
  else
    stale = any (td >= min (tt));
  end
end

function [t, exact] = file_times (files)
  % modification times (seconds since 1970; NaN: no such file)
  t = nan (1, numel (files));
  have = cellfun (@(f) exist (f, 'file') > 0, files);
  exact = false;
  if (any (have))
    args = strjoin (cellfun (@shell_quote, files(have), 'UniformOutput', false), ' ');
    [status, out] = system (['stat -c %.9Y ' args ' 2> /dev/null']);
    v = str2double (strsplit (strtrim (out), char (10)));
    if (status == 0 && numel (v) == sum (have) && all (isfinite (v)))
      t(have) = v;
      exact = true;
      return;
    end
  end
  for k = find (have)
    [st, err] = stat (files{k});
    if (err == 0)
      t(k) = st.mtime;
    end
  end
end

function compile (cfile, cdir, root, lib, checker, outdir, targets)
  mk = mkoctfile_path ();
  inc = ['-I' shell_quote(fullfile (root, 'include')) ' -I' shell_quote(fullfile (root, 'mex'))];
  libs = ['-lgsl ' config_value(mk, 'LAPACK_LIBS') ' ' config_value(mk, 'BLAS_LIBS') ' -lm'];
  [~, base] = fileparts (cfile);
  % the build happens in a private folder inside outdir; the finished MEX
  % files are renamed into place (an atomic replacement, also of files
  % another Octave session has loaded)
  tmp = tempname (outdir, ['.' base '_build_']);
  [ok, msg] = mkdir (tmp);
  if (~ok)
    error ('sluice:build_model:badoutdir', 'cannot write in the folder %s: %s', outdir, msg);
  end
  cleanup = onCleanup (@() remove_folder (tmp));

  % 1. the user's file alone: its own compiler messages
  uobj = fullfile (tmp, 'model.o');
  cmd = sprintf ('%s --mex -c -o %s %s -I%s %s -Wall -O2 -fopenmp', shell_quote (mk), ...
                 shell_quote (uobj), inc, shell_quote (cdir), shell_quote (cfile));
  [status, out] = system ([cmd ' 2>&1']);
  out = strtrim (out);
  if (status ~= 0)
    error ('sluice:build_model:compilefailed', '%s does not compile:\n%s', cfile, out);
  end
  if (~isempty (out))
    state = warning ('off', 'backtrace');
    warning ('sluice:build_model:warnings', 'the compiler warned about %s:\n%s', cfile, out);
    warning (state);
  end

  % 2. check the definition in a separate program (the checker make
  % built, linked with the user's file), so that a definition that cannot
  % be read, or functions that crash, never reach Octave
  check_definition (mk, cfile, uobj, tmp, checker, lib, libs);

  % 3. the two gateways, compiled side by side. mkoctfile does not quote
  % the paths of its link step, so it runs inside the build folder with
  % relative names only; "root" there points at the project
  [err, ~] = sluice.internal.compat ('symlink', root, fullfile (tmp, 'root'));
  if (err == 0)
    top = 'root';
  else
    top = root;
  end
  rel = @(varargin) shell_quote (strjoin (varargin, '/'));
  names = {'run', 'info'};
  gw = {'pf_run.c', 'model_info.c'};
  part = cell (1, 2);
  for k = 1:2
    line = sprintf (['cd %s && %s --mex -o %s -DSLUICE_USER_MODEL -DMX_HAS_INTERLEAVED_COMPLEX=1 ', ...
                     '-I%s -I%s %s model.o %s %s %s %s %s %s -O2 -fopenmp'], ...
                    shell_quote (tmp), shell_quote (mk), [names{k} '.' mexext()], ...
                    rel (top, 'include'), rel (top, 'mex'), rel (top, 'mex', gw{k}), ...
                    rel (top, 'mex', 'mexutil.c'), rel (top, 'mex', 'mexrun.c'), rel (top, 'mex', 'mexplatform.c'), ...
                    rel (top, 'build', 'mex', 'mexcall.o'), ...
                    rel (top, 'build', 'libsluice.a'), libs);
    part{k} = sprintf ('(%s > %s 2>&1; echo $? > %s) &', line, ...
                       shell_quote (fullfile (tmp, [names{k} '.log'])), ...
                       shell_quote (fullfile (tmp, [names{k} '.rc'])));
  end
  system ([part{1} ' ' part{2} ' wait']);
  for k = 1:2
    rc = str2double (read_text (fullfile (tmp, [names{k} '.rc'])));
    if (rc ~= 0)
      error ('sluice:build_model:compilefailed', ...
             'the gateway %s for %s did not build:\n%s', targets{k}, cfile, ...
             strtrim (read_text (fullfile (tmp, [names{k} '.log']))));
    end
  end
  for k = 1:2
    [status, msg] = sluice.internal.compat ('rename', fullfile (tmp, [names{k} '.' mexext()]), targets{k});
    if (status ~= 0)
      error ('sluice:build_model:badoutdir', 'cannot write %s: %s', targets{k}, msg);
    end
  end
end

function check_definition (mk, cfile, uobj, tmp, checker, lib, libs)
  % the checker's exit status: 0 usable, 2 problems listed ("problem: "
  % lines), anything else a crash after a "calling <function>" line
  exe = fullfile (tmp, 'check');
  cc = config_value (mk, 'CC');
  cmd = sprintf ('%s %s %s %s -o %s -fopenmp %s', cc, shell_quote (checker), ...
                 shell_quote (uobj), shell_quote (lib), shell_quote (exe), libs);
  [status, out] = system ([cmd ' 2>&1']);
  if (status ~= 0)
    if (~isempty (strfind (out, 'undefined reference to `sluice_user_model''')))
      error ('sluice:build_model:noentry', ...
             ['%s defines no function sluice_user_model. Add (not static):\n', ...
              '  const sl_model_def *sluice_user_model(void) { return &my_model; }\n', ...
              'where my_model is the file''s static const sl_model_def.'], cfile);
    end
    error ('sluice:build_model:compilefailed', '%s does not link:\n%s', cfile, strtrim (out));
  end
  [status, out] = system ([timeout_prefix() shell_quote(exe) ' 2>&1']);
  lines = strsplit (strtrim (out), char (10));
  if (status == 2)
    bad = lines(strncmp (lines, 'problem: ', 9));
    bad = regexprep (bad, '^problem: ', '  ');
    error ('sluice:build_model:baddef', 'the model definition in %s is not usable:\n%s', ...
           cfile, strjoin (bad, char (10)));
  elseif (status ~= 0)
    calls = lines(strncmp (lines, 'calling ', 8));
    if (isempty (calls))
      where = 'while its definition was read (sluice_user_model)';
    else
      last = calls{end};
      where = ['when ' last(9:end) ' was called once at the default parameters'];
    end
    if (status == 124)
      what = 'did not return within 20 s';
    else
      what = sprintf ('crashed (exit status %d)', status);
    end
    error ('sluice:build_model:baddef', 'the model in %s %s %s', cfile, what, where);
  end
end

function p = timeout_prefix ()
  % a model function that never returns must not hang the build
  [status, ~] = system ('command -v timeout > /dev/null 2>&1');
  if (status == 0)
    p = 'timeout 20 ';
  else
    p = '';
  end
end

function info = check_info (info, cfile)
  lists = {'states', 'params', 'forcings', 'events'};
  for k = 1:numel (lists)
    c = info.(lists{k});
    for j = 1:numel (c)
      if (~isvarname (c{j}))
        error ('sluice:build_model:baddef', ...
               'the model in %s: ''%s'' (one of its %s) is not a valid Octave name', ...
               cfile, c{j}, lists{k});
      end
    end
  end
  if (isempty (info.states) && info.n_state > 0)
    % a fixed size without names: x1, x2, ...
    info.states = arrayfun (@(k) sprintf ('x%d', k), 1:info.n_state, 'UniformOutput', false);
  end
  if (isempty (info.integrator))
    if (info.has_rhs)
      info.integrator = 'rk4';
    else
      info.integrator = 'discrete';
    end
  end
end

function mk = mkoctfile_path ()
  % the mkoctfile of the running Octave
  bin = fullfile (matlabroot (), 'bin');
  cand = {fullfile(bin, ['mkoctfile-' version()]), fullfile(bin, 'mkoctfile')};
  mk = 'mkoctfile';
  for k = 1:numel (cand)
    if (exist (cand{k}, 'file'))
      mk = cand{k};
      return;
    end
  end
end

function v = config_value (mk, var)
  [status, v] = system ([shell_quote(mk) ' -p ' var]);
  v = strtrim (v);
  if (status ~= 0 || isempty (v))
    error ('sluice:build_model:compilefailed', 'mkoctfile -p %s failed: %s', var, v);
  end
end

function s = shell_quote (s)
  s = ['''' strrep(s, '''', '''\''''') ''''];
end

function txt = read_text (file)
  txt = '';
  if (exist (file, 'file'))
    txt = fileread (file);
  end
end

function remove_folder (d)
  % the build folder holds files and one symbolic link, no folders
  if (exist (d, 'dir'))
    f = dir (d);
    for k = 1:numel (f)
      if (~any (strcmp (f(k).name, {'.', '..'})))
        sluice.internal.compat ('delete_file', fullfile (d, f(k).name));
      end
    end
    rmdir (d);
  end
end

%!error id=sluice:build_model:badclass sluice.build_model (3)
%!error id=sluice:build_model:badclass sluice.build_model ({'a.c'})
%!error id=sluice:build_model:badclass sluice.build_model ('')
%!error id=sluice:build_model:nofile sluice.build_model ('/nonexistent/folder/model.c')
%!error id=sluice:build_model:nofile sluice.build_model (tempdir ())
%!error id=sluice:build_model:badoption sluice.build_model ('/nonexistent/m.c', 'outdir')
%!error id=sluice:build_model:badoption sluice.build_model ('/nonexistent/m.c', 3, 4)
%!error id=sluice:build_model:badoption sluice.build_model ('/nonexistent/m.c', 'outdir', 3)
%!error id=sluice:build_model:badoption sluice.build_model ('/nonexistent/m.c', 'force', 'yes')
%!error id=sluice:build_model:badoption sluice.build_model ('/nonexistent/m.c', 'force', [true true])
%!error id=sluice:build_model:badname sluice.build_model ('/nonexistent/m.c', 'name', '2x')
%!error id=sluice:build_model:badname sluice.build_model ('/nonexistent/m.c', 'name', repmat ('a', 1, 60))
%!error id=sluice:build_model:badclass sluice.build_model (cat (3, 'a.c', 'b.c'))
%!error <nonexistent> sluice.build_model ('/nonexistent/folder/model.c')
%!test
%! % a file that is not C, and a file name that is no Octave name
%! d = tempname (); mkdir (d);
%! f1 = fullfile (d, 'model.txt'); f2 = fullfile (d, 'two-words.c');
%! fclose (fopen (f1, 'w')); fclose (fopen (f2, 'w'));
%! try
%!   sluice.build_model (f1);
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:build_model:nofile');
%! end
%! try
%!   sluice.build_model (f2);
%!   error ('no error');
%! catch err
%!   assert (err.identifier, 'sluice:build_model:badname');
%!   assert (~isempty (strfind (err.message, 'two_words')));
%! end
%! delete (f1); delete (f2); rmdir (d);
%!test
%! % the checker is the object make compiled from tools/model_check.c:
%! % build/model_check.o in the tree, sdk/build/model_check.o in an
%! % installed package; this file holds no C source of it
%! here = fileparts (fileparts (which ('sluice.build_model')));
%! root = fullfile (here, 'sdk');
%! if (~exist (fullfile (root, 'include', 'sluice'), 'dir'))
%!   root = fileparts (here);
%! end
%! obj = fullfile (root, 'build', 'model_check.o');
%! assert (exist (obj, 'file') > 0);
%! assert (~isempty (strfind (fileread (obj), 'unknown integrator')));
%! assert (isempty (strfind (fileread (which ('sluice.build_model')), ['int ', 'main'])));
%! src = fullfile (root, 'tools', 'model_check.c');
%! if (exist (src, 'file'))
%!   assert (~isempty (strfind (fileread (src), '"problem: the time step dt must be finite and > 0, got %g\n"')));
%! end
%!test
%! % a definition the checker refuses: every problem named, no MEX file
%! % left behind
%! d = tempname (); mkdir (d);
%! f = fullfile (d, 'odd_steps.c');
%! fid = fopen (f, 'w');
%! fprintf (fid, '%s\n', '#include "sluice/model.h"', ...
%!          'static const char *const states[] = {"h"};', ...
%!          'static void rhs(const sl_model_def *def, size_t n, double t, const double *x,', ...
%!          '                const double *p, const double *u, double *dxdt)', ...
%!          '{ (void)def; (void)n; (void)t; (void)p; (void)u; dxdt[0] = -x[0]; }', ...
%!          'static const sl_model_def odd = { .name = "odd_steps", .n_state = 1,', ...
%!          '    .n_event = 1, .state_names = states, .dt = -0.5, .integrator = "leapfrog",', ...
%!          '    .rhs = rhs };', ...
%!          'const sl_model_def *sluice_user_model(void) { return &odd; }');
%! fclose (fid);
%! try
%!   sluice.build_model (f);
%!   id = '';
%! catch err
%!   id = err.identifier;
%!   msg = err.message;
%! end
%! left = dir (fullfile (d, ['odd_steps_*.' mexext()]));
%! old = confirm_recursive_rmdir (false);
%! rmdir (d, 's');
%! confirm_recursive_rmdir (old);
%! assert (id, 'sluice:build_model:baddef');
%! assert (~isempty (strfind (msg, 'the time step dt must be finite and > 0, got -0.5')));
%! assert (~isempty (strfind (msg, 'unknown integrator "leapfrog" (euler, rk4, dopri5 or discrete)')));
%! assert (~isempty (strfind (msg, 'n_event is 1 but no event map (jump) is given')));
%! assert (~isempty (strfind (msg, 'event_names is NULL but 1 name(s) are declared')));
%! assert (isempty (left));
