% sluice: ensemble data assimilation for flood-risk and water studies.
% Version 0.1.0. Call every function as sluice.<name>; help sluice.<name> for details.
%
% Assimilate a record of observations
%   model          - Describe a model: states, parameters, forcings, step, dynamics.
%   prior          - Prior distributions of parameters and of initial states.
%   filter         - Particle filter or ensemble Kalman filter over a whole record.
%
% Estimate parameters
%   filter         - Joint estimate of states and parameters (option param_move).
%   esmda          - Calibrate parameters on a whole record by ES-MDA.
%   pmmh           - Sample the parameter posterior by particle MCMC.
%   chain_summary  - R-hat, effective sample size and Monte Carlo error of MCMC draws.
%   evidence       - Log-evidence of a record under a model and prior.
%   drift_test     - Do parameters drift in time? Bayes factors of random walks.
%
% Reanalyse (smooth)
%   filter         - Fixed-lag smoothing during the run (option lag).
%   smooth         - States and parameters given all observations, after a run.
%
% Design an observing network with twin experiments
%   twin           - Observe a known truth, assimilate it, score the filter.
%   simulate       - One trajectory of a model (a truth to observe).
%
% Sweep configurations
%   sweep          - Run a function over a grid of options; one table of scores.
%
% Verify and score
%   scores         - RMSE, spread and coverage of a filter run against a truth.
%   crps           - Continuous ranked probability score of an ensemble.
%   rank_histogram - Where observations fall among the ensemble members.
%
% Read and write observation and forcing files
%   read_obs       - Read a long observation table from a CSV file.
%   write_obs      - Write a long observation table to a CSV file.
%   read_forcing   - Read forcing series (rain, evaporation ...) from a CSV file.
%   write_forcing  - Write forcing series to a CSV file.
%
% Report
%   report         - PNG figures, CSV tables and a summary of a run or sweep.
%
% Save and reopen a run
%   save_run       - Write a result and its settings to NetCDF (CF) or an Octave file.
%   load_run       - Read a saved run back into a result.
%
% Build your own model
%   model          - An Octave step function or right-hand side as a model.
%   build_model    - Compile a model written in one C file, as fast as a built-in.
%   compose        - Join compiled models into one, each on its own clock.
%   propagate      - Advance an ensemble from one time to another.
%   simulate       - Run one trajectory and return the states at given times.
%
% Low-level kernels
%   draw           - Draw an ensemble from a prior.
%   loglik         - Log-likelihood of observations for every member.
%   weights        - Normalise log-weights; effective sample size.
%   resample       - Ancestor indices from weights (four schemes).
%   enkf           - One ensemble Kalman analysis (ETKF, EnKF, EnSRF, EAKF, LETKF).
%   gaspari_cohn   - Compactly supported correlation for localisation.
%   kernel.*       - The compiled gateways and internal helpers under these.
%
% sluice informs flood-risk studies. It is not a flood warning system and
% not a method for the design of defences.
%
% See also sluice.filter, sluice.twin, sluice.report.
