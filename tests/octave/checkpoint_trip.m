function Y = checkpoint_trip (t, X, P)
  % Test helper (tests/octave/test_checkpoint.m): an observation operator
  % (the first state) that raises an error at the cycle time held by the
  % global SLUICE_TRIP_AT (none when it is empty), as a run stopped there
  % would end: its checkpoint keeps the cycles before.
  global SLUICE_TRIP_AT
  if (~isempty (SLUICE_TRIP_AT) && t == SLUICE_TRIP_AT)
    error ('trip:stop', 'stopped on purpose at t = %g', t);
  end
  Y = X(1, :);
end
