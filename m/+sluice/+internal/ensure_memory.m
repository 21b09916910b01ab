function ensure_memory (need, fn, what)
  % Internal: refuse work that needs `need` bytes when the machine has
  % less available, before anything large is made:
  % sluice:<fn>:nomemory, "<what> needs about ... GB".
  avail = Inf;
  try
    [~, sys] = memory ();
    avail = sys.PhysicalMemory.Available;
  catch
    % memory () is not available on every platform: rely on allocation errors
  end
  if (need > avail)
    error (['sluice:' fn ':nomemory'], '%s needs about %.3g GB; %.3g GB are available', ...
           what, need / 1e9, avail / 1e9);
  end
end
