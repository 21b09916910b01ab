% Bit-identical results across refactorings of the core: the MD5 digests
% of fixed runs (tests/octave/identical_runs.m: the particle filter with
% and without parameter moves, SMC2, the weighted ensemble Kalman filter,
% the ETKF in both forms, the LETKF and the serial and stochastic filters
% with localisation, the fixed-lag smoothers, the genealogy and backward
% simulation, single analyses; particle marginal Metropolis-Hastings and
% ES-MDA) against the digests recorded before the workspace layouts and
% the localisation checks were shared (pmmh and esmda: recorded when
% their transforms and prior densities moved into the core; they run
% LAPACK's Cholesky and BLAS products, so they sit with the BLAS group;
% letkf: recorded again when a point that sees fewer observations than
% members got the observation-space analysis, equal to the old one to
% 1e-12 relative in tests/c/test_letkf.c but not in its last bits).
% Nothing here compares with an outside reference: these pin this
% platform's numbers.
% The digests hold for the platform they were recorded on (x86-64 Linux,
% Octave 7.3.0, Debian's OpenBLAS 0.3.21 with the kernel it picks on the
% machine, here "Cooperlake"): the particle-filter and smoother runs use
% no BLAS but do use the C library's exp/log, so they are held to the
% same platform; the ensemble Kalman runs also depend on how many threads
% OpenBLAS splits a product over (OPENBLAS_NUM_THREADS, GOTO_NUM_THREADS,
% OMP_NUM_THREADS, else the processors: 2 when recorded). Elsewhere the
% checks print a SKIP line saying what differs. A change that alters the
% numbers on purpose records the new digests (identical_runs (name)) here.

%!function why = other_platform (group)
%!  % '' when this machine is the one the digests were recorded on, else
%!  % what differs
%!  why = '';
%!  here = {computer(), version(), version('-blas')};
%!  rec = {'x86_64-pc-linux-gnu', '7.3.0', ...
%!         'OpenBLAS (config: OpenBLAS 0.3.21 NO_LAPACKE DYNAMIC_ARCH NO_AFFINITY Cooperlake MAX_THREADS=64)'};
%!  what = {'platform', 'Octave', 'BLAS'};
%!  for k = 1:3
%!    if (~strcmp (here{k}, rec{k}))
%!      why = sprintf ('%s is "%s", recorded with "%s"', what{k}, here{k}, rec{k});
%!      return;
%!    end
%!  end
%!  if (strcmp (group, 'blas'))
%!    nt = NaN;
%!    for v = {'OPENBLAS_NUM_THREADS', 'GOTO_NUM_THREADS', 'OMP_NUM_THREADS'}
%!      e = getenv (v{1});
%!      if (~isempty (e))
%!        nt = str2double (e);
%!        break;
%!      end
%!    end
%!    if (isnan (nt))
%!      nt = nproc ();
%!    end
%!    if (nt ~= 2)
%!      why = sprintf ('OpenBLAS runs %g threads, recorded with 2', nt);
%!    end
%!  end
%!endfunction

%!function check_digests (group, cases)
%!  why = other_platform (group);
%!  if (~isempty (why))
%!    printf ('SKIP test_identical_runs (%s runs): %s\n', group, why);
%!    return;
%!  end
%!  bad = {};
%!  for k = 1:size (cases, 1)
%!    h = identical_runs (cases{k, 1});
%!    if (~strcmp (h, cases{k, 2}))
%!      bad{end + 1} = sprintf ('%s: %s, recorded %s', cases{k, 1}, h, cases{k, 2});
%!    end
%!  end
%!  assert (isempty (bad), 'digests changed: %s', strjoin (bad, '; '));
%!endfunction

%!shared plain, blas
%! % the runs that call no BLAS
%! plain = {
%!    'pf', 'c14317320e784e454dea54e4bcddf008';
%!    'pf_lag', 'c8caeb9ab213138f8bccbe23faafe0e7';
%!    'resample_move', '10820a570e730494a60dbe6b321ebfca';
%!    'liu_west', '73c50e43c3ada9cd47deb5ea115c8870';
%!    'smc2', 'e3a3b69cccd8ffdef2e5a7e059ab109f';
%!    'wenkf', '71cfb897215a5d5828bff24b53e4455a';
%!    'smooth_genealogy', '7b5df3d2afbff38c54902b8ba9b8a9cb';
%!    'smooth_ffbsi', '578556f39d0f0acc3409c9dba53a278b'};
%! % the runs through the ensemble Kalman analyses (BLAS and LAPACK)
%! blas = {
%!    'etkf_ensemble', '2ff04babc45a43ac1b3ae50e3639e21f';
%!    'etkf_observation', '1328bd99cd55b28b8448dbb6195f49cf';
%!    'letkf', '001e7c49a5a7a9c37514f2f30040cd34';
%!    'enkf', '9b0e151bc618d89e4e618566b7ac9739';
%!    'ensrf', '6a0da1382fb3e7a2427e5fc1adf37be8';
%!    'eakf', '51916be87930f73abc30adf3d8b8b59b';
%!    'etkf_lag', '5bec35a4c7b1f920f441026bef02cf65';
%!    'analysis', '9165f8f6e8e3b715d36beaa2d7598c09';
%!    'pmmh', 'c67b782ae6492ed719002df442f26bdf';
%!    'esmda', 'c28fd3ad38428c977e6844436b9b2393'};

%!test
%! check_digests ('plain', plain);

%!test
%! check_digests ('blas', blas);

%!test
%! % every case of identical_runs has a recorded digest above
%! [~, names] = identical_runs ();
%! assert (sort ([plain(:, 1); blas(:, 1)]), sort (names(:)));
