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

# From /proc alone (a minimal Debian has no ps). procs: "pid state ppid
# session" of every process, one a line; running: alive, not a zombie.
procs() {
  local f l
  for f in /proc/[0-9]*/stat; do
    { read -r l < "$f"; } 2>/dev/null || continue
    f=${f#/proc/}; l=${l##*) }
    set -- $l
    echo "${f%/stat} $1 $2 $4"
  done
}
running() { local l; { read -r l < "/proc/$1/stat"; } 2>/dev/null && l=${l##*) } && [ "${l%% *}" != Z ]; }
session_pids() { procs | awk -v s="$1" '$4 == s { print $1 }'; }
child_states() { procs | awk -v p="$1" '$3 == p { print $2 }'; }
describe_session() {
  local p
  echo "=== run.sh: the job's processes (session $1):"
  command -v ps >/dev/null && ps -s "$1" -o pid,ppid,pgid,stat,etime,wchan:24,args 2>&1 | cut -c 1-160
  for p in $(session_pids "$1"); do
    echo "--- $p: $(tr '\0' ' ' < "/proc/$p/cmdline" 2>/dev/null | cut -c 1-100)"
    grep -E '^(State|Threads|SigPnd|ShdPnd|SigBlk|SigIgn|SigCgt):' "/proc/$p/status" 2>/dev/null
    [ -r "/proc/$p/stack" ] && head -n 12 "/proc/$p/stack" 2>/dev/null
  done
  if command -v gdb >/dev/null; then
    echo "--- the threads of $1 ($(tr '\0' ' ' < "/proc/$1/cmdline" 2>/dev/null | cut -c 1-40)):"
    timeout -k 5 30 gdb -p "$1" -batch -ex 'thread apply all bt' 2>&1 | grep -E '^(Thread|#)' | head -n 60
  fi
}
kill_session() {
  local sig p k any
  for sig in TERM KILL; do
    for p in $(session_pids "$1"); do
      kill -s $sig "$p" 2>/dev/null
      [ $sig = TERM ] && kill -s CONT "$p" 2>/dev/null   # a stopped process too
    done
    for k in 1 2 3 4 5 6 7 8 9 10; do
      any=
      for p in $(session_pids "$1"); do running "$p" && any=1; done
      [ -z "$any" ] && return 0
      sleep 0.5
    done
  done
}
# keep_log LOG NAME: a copy of LOG that outlives this script (make check
# shows only the FAIL lines); prints its path
keep_log() {
  local k
  k=$(mktemp "${TMPDIR:-/tmp}/sluice-mpi-$2-XXXXXX") && cp "$1" "$k" && echo "$k"
}
# run_job LOG SECONDS CMD...: CMD in a session of its own (mpirun gives
# each rank a process group of its own, so only the session holds them
# all), output to LOG; its exit status. If it outlives SECONDS (124), or
# its children have all exited but stay uncollected 20 s (125: mpirun
# stuck; seen once in CI, every rank a zombie and mpirun deaf to
# SIGTERM), what its processes were doing goes to LOG and every process
# of the session is killed: never an orphan, never a wait past the limit.
run_job() {
  local log=$1 secs=$2 pid start stuck= kids verdict=
  shift 2
  (exec setsid "$@") >"$log" 2>&1 </dev/null &
  pid=$!; start=$SECONDS
  while running "$pid"; do
    if [ $((SECONDS - start)) -ge "$secs" ]; then verdict=124; break; fi
    kids=$(child_states "$pid")
    if [ -n "$kids" ] && ! grep -qv '^Z' <<<"$kids"; then
      stuck=${stuck:-$SECONDS}
      if [ $((SECONDS - stuck)) -ge "${SLUICE_MPI_STUCK:-20}" ]; then verdict=125; break; fi
    else
      stuck=
    fi
    sleep 0.2
  done
  if [ -n "$verdict" ]; then
    describe_session "$pid" >>"$log" 2>&1
    kill_session "$pid"
    { wait "$pid"; } 2>/dev/null
    return "$verdict"
  fi
  wait "$pid"
}

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
  # Time limits (seconds): a job's own (mpirun --timeout, which reports
  # the job's state), this script's after it (for an mpirun that hangs
  # itself: then this script reports what the processes were doing and
  # kills them all), and the whole of the distributed cases.
  limit=${SLUICE_MPI_LIMIT:-180}
  budget=${SLUICE_MPI_BUDGET:-900}
  # the watch itself: a launcher whose child has exited but which never
  # collects it (stopped), and one past its time; each is reported and
  # its whole session killed (a grandchild in a process group of its own,
  # as mpirun's ranks are)
  rc=0; SLUICE_MPI_STUCK=1 run_job "$tmp/stuck.log" 30 bash -c \
    '(set -m; sleep 300 & echo $! > '"$tmp"'/grandchild); sleep 0.3 & kill -STOP $$' || rc=$?
  g=$(cat "$tmp/grandchild" 2>/dev/null)
  [ $rc -eq 125 ] && grep -q 'State:.*stopped' "$tmp/stuck.log" && ok \
    || fail "the watch: a stuck launcher gave exit $rc (expected 125): $(head -c 600 "$tmp/stuck.log")"
  rc=0; run_job "$tmp/late.log" 1 bash -c '(set -m; sleep 300 & echo $! > '"$tmp"'/grandchild2); sleep 300' || rc=$?
  [ $rc -eq 124 ] && ok || fail "the watch: a job past its time gave exit $rc (expected 124)"
  sleep 0.5
  for p in "$g" "$(cat "$tmp/grandchild2" 2>/dev/null)"; do
    [ -n "$p" ] && ! running "$p" && ok || fail "the watch: process ${p:-?} outlived its job"
  done
  mpistart=$SECONDS
  for np in 2 4; do
    for kase in gateway equal idle resume mismatch pointfails badfile rankleft \
                chains chaincheckpoint chainfails chainmismatch \
                pfequal pfkalman pffails pfsplit pfmismatch kalmanrows; do
      if [ $((SECONDS - mpistart)) -ge "$budget" ]; then
        fail "mpi $kase, $np ranks: not run, the distributed cases' $budget s are spent"; continue
      fi
      d="$tmp/$kase-$np"; mkdir -p "$d"
      (cd "$d" && export SLUICE_MPI_CASE=$kase SLUICE_MPI_DIR=$d \
         && run_job "$d/log" $((limit + 30)) \
         mpirun --oversubscribe --timeout "$limit" --report-state-on-timeout -np $np \
         $octave --no-gui --quiet --no-history --norc "$here/tests/mpi/on_ranks.m")
      rc=$?
      if [ $rc -eq 124 ] || [ $rc -eq 125 ] || grep -q 'time limit for job execution has been reached' "$d/log"; then
        case $rc in
          124) why="mpirun itself did not end within $((limit + 30)) s" ;;
          125) why="every rank had exited but mpirun did not collect them" ;;
          *)   why="no end within $limit s (mpirun --timeout)" ;;
        esac
        fail "mpi $kase, $np ranks: a hang: $why; killed; its output and processes: $(keep_log "$d/log" "$kase-$np")"
        tail -n 80 "$d/log"; continue
      fi
      # every rank passes; in rankleft, rank 1 stops on its own error and
      # the job's status is a failure
      want=$np
      if [ $kase = rankleft ]; then want=$((np - 1)); fi
      npass=$(cat "$d"/rank* 2>/dev/null | grep -c "^RANK [0-9]*: PASS $kase")
      nfail=$(cat "$d"/rank* 2>/dev/null | grep -c "^RANK [0-9]*: FAIL")
      if [ "$npass" -eq $want ] && [ "$nfail" -eq 0 ]; then ok
      else fail "mpi $kase, $np ranks: $npass of $want ranks passed (exit $rc)"; cat "$d"/rank* 2>/dev/null; tail -n 20 "$d/log"; fi
      # mpirun's own errors (its messages garbled, a crash): never expected
      if grep -q -E 'ORTE_ERROR_LOG|Segmentation fault|Process received signal' "$d/log"; then
        fail "mpi $kase, $np ranks: mpirun or a rank reported an internal error: $(keep_log "$d/log" "$kase-$np")"
        tail -n 30 "$d/log"
      else ok; fi
      if [ $kase = rankleft ]; then
        [ $rc -ne 0 ] && ok || fail "mpi rankleft, $np ranks: the job's exit status was 0"
        grep -q 'rank 1 stops before the sweep' "$d/log" && ok \
          || fail "mpi rankleft, $np ranks: rank 1's own error is not in the output"
      elif [ $kase = equal ] || [ $kase = idle ] || [ $kase = resume ] || [ $kase = chains ] \
           || [ $kase = chaincheckpoint ] || [ $kase = pfequal ] || [ $kase = pfkalman ] \
           || [ $kase = kalmanrows ]; then
        [ $rc -eq 0 ] && ok || { fail "mpi $kase, $np ranks: exit $rc"; tail -n 20 "$d/log"; }
      fi
    done
  done
fi
echo "mpi: $passed passed, $failed failed"
[ $failed -eq 0 ]
