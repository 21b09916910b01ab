#!/usr/bin/env bash
# run.sh - tests of the distributed runs (mpirun). Prints "mpi: N passed,
# N failed".
#
# Always: asking for MPI (option 'mpi', true) where the gateway
# sluice.kernel.mpi is not built raises sluice:<fn>:mpiunavailable naming
# the make command (tested on a copy of m/ without the gateway when it is
# built). With Open MPI's mpirun and the gateway (make MPI=1): each case
# of on_ranks.m (sweeps and MCMC chains) under mpirun with 2 and 4 ranks (--oversubscribe: the
# ranks may outnumber the cores). Every case must end within its time
# limit (never a hang) with the expected verdict on every rank. Without
# them those cases print SKIP and count neither way.
set -u
here=$(cd "$(dirname "$0")/../.." && pwd)
octave=${OCTAVE:-octave-cli}
passed=0; failed=0
ok()   { passed=$((passed + 1)); }
fail() { failed=$((failed + 1)); echo "FAIL $*"; }
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

# sluice:sweep:mpiunavailable without the gateway
mroot="$here/m"
if [ -e "$here/m/+sluice/+kernel/mpi.mex" ]; then
  mkdir -p "$tmp/nompi"
  cp -r "$here/m/+sluice" "$tmp/nompi/"
  rm -f "$tmp/nompi/+sluice/+kernel/mpi.mex"
  mroot="$tmp/nompi"
fi
out=$(cd "$tmp" && $octave --no-gui --quiet --no-history --norc --eval "
  warning('off', 'Octave:shadowed-function'); addpath('$mroot');
  try
    sluice.sweep (@(p) p.a, struct ('a', [1 2]), 'workers', 1, 'mpi', true);
    disp ('no error');
  catch err
    printf ('%s|%s\n', err.identifier, err.message);
  end
  t = sluice.sweep (@(p) p.a, struct ('a', [1 2]), 'workers', 1);
  printf ('auto %g %g\n', t.score);
  spec = sluice.model (@(t, X, P, U, dt) P(1, :) .* X, 'states', {'x'}, 'params', {'a'});
  pr = sluice.prior ('a', 'uniform', [-1 1], 'x', 'normal', [0 1]);
  obs = struct ('time', (1:3)', 'variable', {{'x'; 'x'; 'x'}}, 'value', [0.3; -0.2; 0.5], ...
                'sigma', ones (3, 1));
  try
    sluice.pmmh (spec, pr, obs, 'members', 10, 'chains', 2, 'iterations', 2, 'burnin', 0, ...
                 'mpi', true);
    disp ('no error');
  catch err
    printf ('%s|%s\n', err.identifier, err.message);
  end" 2>&1)
grep -q '^sluice:sweep:mpiunavailable|.*make MPI=1' <<<"$out" && ok \
  || fail "option mpi=true without the gateway: expected sluice:sweep:mpiunavailable naming make MPI=1, got: $out"
grep -q '^auto 1 2$' <<<"$out" && ok || fail "without the gateway the default sweep did not run as before: $out"
grep -q '^sluice:pmmh:mpiunavailable|.*make MPI=1' <<<"$out" && ok \
  || fail "pmmh, option mpi=true without the gateway: expected sluice:pmmh:mpiunavailable, got: $out"

# the gateway outside mpirun: MPI not started, every collective refused
if [ -e "$here/m/+sluice/+kernel/mpi.mex" ]; then
  out=$(cd "$tmp" && $octave --no-gui --quiet --no-history --norc --eval "
    warning('off', 'Octave:shadowed-function'); addpath('$here/m');
    printf ('initialized %d\n', sluice.kernel.mpi ('initialized'));
    for c = {'allreduce', 'bcast', 'gather', 'barrier', 'nonsense'}
      try
        sluice.kernel.mpi (c{1});
        printf ('%s no error\n', c{1});
      catch err
        printf ('%s %s\n', c{1}, err.identifier);
      end
    end" 2>&1)
  want=$'initialized 0\nallreduce sluice:mpi:notstarted\nbcast sluice:mpi:notstarted\ngather sluice:mpi:notstarted\nbarrier sluice:mpi:notstarted\nnonsense sluice:mpi:badarg'
  [ "$(grep -v '^warning' <<<"$out")" = "$want" ] && ok || fail "the gateway outside mpirun: got $out"
fi

if ! command -v mpirun >/dev/null; then
  echo "SKIP distributed cases: mpirun not found (Open MPI: make MPI=1)"
elif [ ! -e "$here/m/+sluice/+kernel/mpi.mex" ]; then
  echo "SKIP distributed cases: sluice.kernel.mpi not built (make MPI=1)"
else
  export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1
  # no network interface to probe for a job on one machine
  export OMPI_MCA_btl=self,vader OMPI_MCA_btl_vader_single_copy_mechanism=none
  for np in 2 4; do
    for kase in gateway equal idle resume mismatch pointfails badfile rankleft \
                chains chaincheckpoint chainfails chainmismatch \
                pfequal pfkalman pffails pfsplit pfmismatch; do
      d="$tmp/$kase-$np"; mkdir -p "$d"
      (cd "$d" && SLUICE_MPI_CASE=$kase SLUICE_MPI_DIR=$d timeout -k 20 180 \
         mpirun --oversubscribe -np $np $octave --no-gui --quiet --no-history --norc \
         "$here/tests/mpi/on_ranks.m") >"$d/log" 2>&1
      rc=$?
      # 124: ended by SIGTERM at 180 s; 137: mpirun ignored it and was
      # killed 20 s later (seen once: every rank had exited, mpirun hung)
      if [ $rc -eq 124 ] || [ $rc -eq 137 ]; then
        fail "mpi $kase, $np ranks: no end within 180 s (a hang)"; tail -n 20 "$d/log"; continue
      fi
      # every rank passes; in rankleft, rank 1 stops on its own error and
      # the job's status is a failure
      want=$np
      if [ $kase = rankleft ]; then want=$((np - 1)); fi
      npass=$(cat "$d"/rank* 2>/dev/null | grep -c "^RANK [0-9]*: PASS $kase")
      nfail=$(cat "$d"/rank* 2>/dev/null | grep -c "^RANK [0-9]*: FAIL")
      if [ "$npass" -eq $want ] && [ "$nfail" -eq 0 ]; then ok
      else fail "mpi $kase, $np ranks: $npass of $want ranks passed (exit $rc)"; cat "$d"/rank* 2>/dev/null; tail -n 20 "$d/log"; fi
      if [ $kase = rankleft ]; then
        [ $rc -ne 0 ] && ok || fail "mpi rankleft, $np ranks: the job's exit status was 0"
        grep -q 'rank 1 stops before the sweep' "$d/log" && ok \
          || fail "mpi rankleft, $np ranks: rank 1's own error is not in the output"
      elif [ $kase = equal ] || [ $kase = idle ] || [ $kase = resume ] || [ $kase = chains ] \
           || [ $kase = chaincheckpoint ] || [ $kase = pfequal ] || [ $kase = pfkalman ]; then
        [ $rc -eq 0 ] && ok || { fail "mpi $kase, $np ranks: exit $rc"; tail -n 20 "$d/log"; }
      fi
    done
  done
fi
echo "mpi: $passed passed, $failed failed"
[ $failed -eq 0 ]
