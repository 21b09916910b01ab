function p = find_program (name)
  % Internal: the full path of the executable NAME (a bare name looked up
  % on the PATH of the environment, or a path of its own), or '' when
  % there is none.
  p = '';
  if (~ischar (name) || isempty (name))
    return;
  end
  if (any (name == '/') || any (name == filesep ()))
    if (exist (name, 'file') == 2)
      p = name;
    end
    return;
  end
  dirs = strsplit (getenv ('PATH'), pathsep ());
  for k = 1:numel (dirs)
    if (isempty (dirs{k}))
      continue;
    end
    f = fullfile (dirs{k}, name);
    [st, err] = stat (f);
    if (err == 0 && ~S_ISDIR (st.mode) && any (st.modestr([4 7 10]) == 'x'))
      p = f;
      return;
    end
  end
end
