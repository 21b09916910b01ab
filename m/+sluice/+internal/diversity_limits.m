function L = diversity_limits ()
  % Internal: the thresholds of sluice.filter's warnings about its
  % parameter ensemble and its weights, in one place.
  %
  %   collapse_fraction, collapse_min - sluice:filter:paramcollapse when an
  %       estimated parameter (one whose prior has spread) ends the run with
  %       fewer distinct values than max (collapse_min, collapse_fraction * N)
  %       among the N members: its quantiles then come from a handful of
  %       values and its band says nothing (a 90% band needs at least a few
  %       values beyond each end);
  %   collapse_spread - ... or with a standard deviation (in its
  %       transformed space) below collapse_spread times the largest it had
  %       at the end of any cycle: nearly one value;
  %   bound_tail, bound_mass - sluice:filter:atbound when at least
  %       bound_mass of the final posterior weight lies in the prior's
  %       outermost bound_tail next to a finite bound (beyond the
  %       bound_tail or 1 - bound_tail quantile of the initial ensemble);
  %   lowess_ess, lowess_cycles - sluice:filter:lowess when the ESS after
  %       weighting is below lowess_ess in lowess_cycles or more consecutive
  %       cycles with observations (an ESS near 1: one member carries the
  %       weight);
  %   smooth_ancestors, smooth_fraction, smooth_share -
  %       sluice:filter:smoothcollapse when, at more than smooth_share of
  %       the times a fixed-lag smoother smoothed, the members descended
  %       from fewer than min (smooth_ancestors, smooth_fraction * N)
  %       distinct members of the time smoothed (res.smoothed.distinct).
  %       A 90% band's ends are the 5% and 95% quantiles: below 20 = 1 /
  %       0.05 distinct paths each tail holds less than one ancestor's
  %       path, and the band's ends lie on a few paths whatever N is; a
  %       small ensemble (N < 40) is held to half its members instead.
  %   calib_tail, calib_far_tail, calib_min, calib_factor, calib_alpha -
  %       sluice:filter:miscalibrated when, for an observed variable with
  %       at least calib_min observations whose forecast PIT was computed,
  %       k of its n PITs lie below tau or above 1 - tau, for tau =
  %       calib_tail (outside the central 90%) or calib_far_tail (outside
  %       the central 99.8%), with both k >= calib_factor * p0 * n and
  %       P(K >= k) < calib_alpha for K ~ Bin(n, p0). p0 is the share a
  %       calibrated forecast leaves outside at most: 2 tau, or 4 tau for
  %       a variable observed through a count or censored family (the
  %       bound for their mid-distribution PITs), plus 2/(N + 1) in the
  %       far band (a value beyond all N members). A run that fires it has
  %       at least twice the share outside that it may have, and by far
  %       more than chance makes (1e-4: one calibrated variable in ten
  %       thousand per band);
  % Values of our own choosing (common practice puts the resampling
  % trigger at N/2; these mark far worse states than that).
  L = struct ('collapse_fraction', 0.01, 'collapse_min', 2, 'collapse_spread', 1e-3, ...
              'bound_tail', 0.05, 'bound_mass', 0.5, ...
              'lowess_ess', 2, 'lowess_cycles', 10, ...
              'smooth_ancestors', 20, 'smooth_fraction', 0.5, 'smooth_share', 0.1, ...
              'calib_tail', 0.05, 'calib_far_tail', 0.001, ...
              'calib_min', 5, 'calib_factor', 2, 'calib_alpha', 1e-4);
end
