function res = coupling_results (res, r, c, model)
  % Internal: the record of a weakly coupled run (c from
  % sluice.internal.coupling_settings; nothing for a strong one):
  % res.coupling with the components' names and, for the particle
  % filter, each component's ESS (n_comp x T, NaN where it had no
  % observation) and log-evidence (its increments and their sum). The
  % run's own res.ess is then the smallest component ESS of each cycle
  % (the number of members where no component had an observation) and
  % res.log_evidence the sum of the components' log-evidences: the
  % evidence of the weakly coupled approximation, in which each
  % component's observations are explained by that component alone.
  if (~isfield (c, 'comp'))
    return;
  end
  cp = struct ('mode', 'weak', 'components', {model.components});
  if (isfield (r, 'comp_ess') && strcmp (res.method, 'pf'))
    cp.ess = r.comp_ess;
    cp.log_evidence_steps = r.comp_logz;
    cp.log_evidence = sum (r.comp_logz, 2)';
    e = min (r.comp_ess, [], 1);   % min ignores NaN
    none = all (isnan (r.comp_ess), 1);
    e(none) = r.ess(none);
    res.ess = e;
    % a component with observations that some member explained was resampled
    res.resampled = res.resampled | any (r.comp_ess > 0, 1);
    res.log_evidence_steps = sum (r.comp_logz, 1);
    res.log_evidence = sum (res.log_evidence_steps);
  end
  if (isfield (r, 'comp_smooth_distinct') && isfield (res, 'smoothed'))
    % the fixed-lag smoother, component by component: the distinct
    % members of each smoothed time that each component's rows descend
    % from at its own lag (res.smoothed.distinct: the fewest of them)
    cp.smoothed_distinct = r.comp_smooth_distinct;
  end
  res.coupling = cp;
end
