function raise_again (id, fallback, msg)
  % Internal: raise msg under the identifier id, or under fallback when id
  % is empty. Octave 7.3's error (id, '%s', msg) raises nothing at all
  % when id is empty or msg is empty, so an error caught from a call and
  % raised again through it could pass unnoticed; this never lets it.
  if (isempty (id))
    id = fallback;
  end
  if (isempty (msg))
    msg = 'failed without a message';
  end
  error (id, '%s', msg);
end

%!error <plain> sluice.internal.raise_again ('', 'sluice:x:failed', 'plain')
%!error id=sluice:x:failed sluice.internal.raise_again ('', 'sluice:x:failed', 'plain')
%!error id=sluice:x:own sluice.internal.raise_again ('sluice:x:own', 'sluice:x:failed', 'plain')
%!error id=sluice:x:failed sluice.internal.raise_again ('', 'sluice:x:failed', '')
%!error <without a message> sluice.internal.raise_again ('sluice:x:own', 'sluice:x:failed', '')
