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
  %   calib_tail, calib_outside, calib_outside_counts, calib_min,
  %   calib_factor, calib_alpha - sluice:filter:miscalibrated when, for an
  %       observed variable with at least calib_min observations whose
  %       forecast PIT was computed, k of its n PITs lie below calib_tail
  %       or above 1 - calib_tail (outside the central 90%) with both
  %       k >= calib_factor * p0 * n and P(K >= k) < calib_alpha for
  %       K ~ Bin(n, p0): p0 = calib_outside = 2 calib_tail, the share a
  %       calibrated forecast leaves outside, or calib_outside_counts for
  %       a variable observed through a count or censored family (the
  %       bound for their mid-distribution PITs). A run that fires it has
  %       at least twice the share outside that it may have, and by far
  %       more than chance makes (1e-4: one calibrated variable in ten
  %       thousand);
  % Values of our own choosing (common practice puts the resampling
  % trigger at N/2; these mark far worse states than that).
  L = struct ('collapse_fraction', 0.01, 'collapse_min', 2, 'collapse_spread', 1e-3, ...
              'bound_tail', 0.05, 'bound_mass', 0.5, ...
              'lowess_ess', 2, 'lowess_cycles', 10, ...
              'smooth_ancestors', 20, 'smooth_fraction', 0.5, 'smooth_share', 0.1, ...
              'calib_tail', 0.05, 'calib_outside', 0.1, 'calib_outside_counts', 0.2, ...
              'calib_min', 5, 'calib_factor', 2, 'calib_alpha', 1e-4);
end
