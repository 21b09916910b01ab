function [nsteps, h] = step_grid (t0, t1, dt)
  % the compiled run's grid: equal steps that land exactly on t1
  nsteps = ceil ((t1 - t0) / dt - 1e-9);
  h = (t1 - t0) / nsteps;
end
