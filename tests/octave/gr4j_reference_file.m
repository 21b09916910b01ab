function file = gr4j_reference_file ()
  % The GR4J reference case's CSV (outside the project: the tests run from
  % the repository root, and shared/ lies beside it; SLUICE_REFERENCE_DIR
  % overrides), or '' when it is not there. Its columns after the date:
  % P, E, Qobs m3/s, Qobs mm/d, Qsim mm/d.
  cands = {getenv('SLUICE_REFERENCE_DIR'), fullfile(pwd (), '..', 'shared', 'reference'), ...
           '/work/shared/reference'};
  file = '';
  for k = 1:numel (cands)
    f = fullfile (cands{k}, 'gr4j_reference_case.csv');
    if (~isempty (cands{k}) && exist (f, 'file'))
      file = f;
      return;
    end
  end
end
