function Y = checkpoint_trip (t, X, P)
  % Test helper (tests/octave/test_checkpoint.m): an observation operator
  % (the first state) that raises an error at the cycle time held by the
  % global SLUICE_TRIP_AT (none when it is empty), as a run stopped there
  % would end: its checkpoint keeps the cycles before.
  % The identifier is SLUICE_TRIP_ID's when it is set (as a Ctrl-C's).
  global SLUICE_TRIP_AT SLUICE_TRIP_ID
  if (~isempty (SLUICE_TRIP_AT) && t == SLUICE_TRIP_AT)
    id = 'trip:stop';
    if (~isempty (SLUICE_TRIP_ID))
      id = SLUICE_TRIP_ID;
    end
    error (id, 'stopped on purpose at t = %g', t);
  end
  Y = X(1, :);
end
