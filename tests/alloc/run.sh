#!/usr/bin/env bash
# run.sh BUILD - the allocation-failure runs of make check-alloc.
#
# For each C unit test in BUILD/tests (linked with tests/alloc/failalloc.c):
# one clean run gives K, the number of allocations the shim sees (it must
# pass and leave no block allocated). Then two ways of failing each
# allocation k = 1..K in turn:
#  - every test, every k, in one run with SL_FAIL_ALLOC=each: the shim
#    forks at each allocation and the child fails it (see failalloc.c);
#    tests run SL_ALLOC_JOBS at a time;
#  - for the tests with K <= SL_ALLOC_MAXK outside SL_ALLOC_SKIP, also a
#    fresh process for every k with SL_FAIL_ALLOC=k (only the k-th fails):
#    the plain form, which needs no fork, and shows the forked children
#    judge the same. When such a run went on allocating after its failure
#    (the shim's "L after it" is not 0), the same k is run again with
#    every later allocation failing too (SL_FAIL_ALLOC_MODE=after);
#    otherwise that run would be the same run.
# A run is good when it passes, or stops at the failed allocation through
# the harness (tests/c/check.h: "SKIP ...: allocation failed", exit 77)
# with no check failed; a signal, another exit status, a FAIL line or a
# leak (the shim's exit 98) is bad.
#
# Environment:
#   SL_ALLOC_MAXK=n    fresh processes only for tests with K <= n (3000)
#   SL_ALLOC_SKIP="test_a test_b"   and not for these (the slow ones)
#   SL_ALLOC_ALL=1     fresh processes for every test (hours)
#   SL_ALLOC_FORK=0    no forked runs
#   SL_ALLOC_ONLY=s    only the tests whose name contains s
#   SL_ALLOC_JOBS=n    runs at once (default 2)
# Prints lines per test, every bad run, and last "alloc: N passed, N
# failed" counting runs (children and processes); exits non-zero on any
# bad run or when nothing ran.
set -u
build=${1:-build-alloc}
maxk=${SL_ALLOC_MAXK:-3000}
skip=" ${SL_ALLOC_SKIP:-} "
all=${SL_ALLOC_ALL:-0}
only=${SL_ALLOC_ONLY:-}
jobs=${SL_ALLOC_JOBS:-2}
fork=${SL_ALLOC_FORK:-1}
export OMP_NUM_THREADS=${OMP_NUM_THREADS:-1}

# one_run TEST K MODE: prints "k mode verdict later" (verdict: stop, pass,
# or bad:<why>)
one_run() {
  local t=$1 k=$2 mode=$3 out rc line later verdict
  out=$(SL_FAIL_ALLOC=$k SL_FAIL_ALLOC_MODE=$mode "$t" 2>&1); rc=$?
  line=$(grep -E '^failalloc: [0-9]+ allocations' <<<"$out" | tail -n 1)
  later=$(sed -nE 's/.*failed \(first at [0-9]+\), ([0-9]+) after it.*/\1/p' <<<"$line")
  if [ $rc -ge 128 ]; then
    verdict="bad:signal_$((rc - 128))"
  elif [ $rc -eq 98 ] || grep -q '^failalloc: LEAK' <<<"$out"; then
    verdict="bad:leak_of_$(sed -nE 's/.* ([0-9]+) live blocks.*/\1/p' <<<"$line")_blocks"
  elif [ -z "$line" ]; then
    verdict="bad:no_report_exit_$rc"
  elif grep -q '^FAIL' <<<"$out"; then
    verdict="bad:check_failed($(grep -m1 '^FAIL' <<<"$out" | tr ' ' '_'))"
  elif [ -z "$later" ]; then
    verdict="bad:allocation_${k}_never_reached"
  elif [ $rc -eq 77 ] && grep -q '^SKIP .*allocation failed' <<<"$out"; then
    verdict=stop
  elif [ $rc -eq 0 ]; then
    verdict=pass
  else
    verdict="bad:exit_$rc"
  fi
  echo "$k $mode $verdict ${later:-0}"
}
export -f one_run

# each_run TEST K: every k in forked children; prints "name stopped passed
# bad seconds" and then the shim's lines about bad children
each_run() {
  local t=$1 K=$2 out rc line t0=$SECONDS
  out=$(SL_FAIL_ALLOC=each "$t" 2>&1 >/dev/null); rc=$?
  line=$(grep -E '^failalloc: each: [0-9]+ children' <<<"$out" | tail -n 1)
  if [ -z "$line" ]; then
    echo "$(basename "$t") 0 0 1 $((SECONDS - t0))"
    echo "failalloc: each: no report (exit $rc)"
    return
  fi
  read -r kids stopped passed bad < <(sed -nE 's/.*: ([0-9]+) children, ([0-9]+) stopped, ([0-9]+) passed, ([0-9]+) bad.*/\1 \2 \3 \4/p' <<<"$line")
  if [ "$kids" -ne "$K" ]; then
    bad=$((bad + 1)); out="$out"$'\n'"failalloc: each: $kids children, K = $K"
  fi
  if [ $rc -ne 0 ] && [ "$bad" -eq 0 ]; then
    bad=1; out="$out"$'\n'"failalloc: each: the parent ended with exit $rc"
  fi
  echo "$(basename "$t") $stopped $passed $bad $((SECONDS - t0))"
  grep -E '^failalloc: each: (allocation|no report|the parent|[0-9]+ children, K)' <<<"$out" | head -n 20
}
export -f each_run

passed=0; failed=0; ran=0; start=$SECONDS
forklist=()
for t in "$build"/tests/test_*; do
  [ -x "$t" ] && [ -f "$t" ] || continue
  name=$(basename "$t")
  [ -z "$only" ] || [[ "$name" == *"$only"* ]] || continue
  t0=$SECONDS
  out=$("$t" 2>&1); rc=$?
  line=$(grep -E '^failalloc: [0-9]+ allocations' <<<"$out" | tail -n 1)
  K=$(sed -nE 's/^failalloc: ([0-9]+) allocations.*/\1/p' <<<"$line")
  if [ $rc -ne 0 ] || [ -z "$K" ]; then
    echo "FAIL $name: the clean run fails (exit $rc)"; tail -n 5 <<<"$out"
    failed=$((failed + 1)); continue
  fi
  if [ "$K" -eq 0 ]; then
    echo "$name: K=0, nothing to fail"; continue
  fi
  [ "$fork" = 0 ] || forklist+=("$t $K")
  if [ "$all" != 1 ] && { [ "$K" -gt "$maxk" ] || [[ "$skip" == *" $name "* ]]; }; then
    why="K above $maxk"; [[ "$skip" == *" $name "* ]] && why="in the skip list"
    echo "$name: K=$K, no fresh processes ($why; SL_ALLOC_ALL=1 runs them)"; continue
  fi
  ran=$((ran + 1))
  res=$(seq 1 "$K" | xargs -P "$jobs" -I{} bash -c 'one_run "$0" {} once' "$t")
  again=$(awk '$4 > 0 && $3 !~ /^bad/ { print $1 }' <<<"$res")
  if [ -n "$again" ]; then
    res="$res"$'\n'"$(xargs -P "$jobs" -I{} bash -c 'one_run "$0" {} after' "$t" <<<"$again")"
  fi
  runs=$(grep -c . <<<"$res")
  nstop=$(awk '$3 == "stop"' <<<"$res" | grep -c .)
  npass=$(awk '$3 == "pass"' <<<"$res" | grep -c .)
  nbad=$(awk '$3 ~ /^bad/' <<<"$res" | grep -c .)
  awk '$3 ~ /^bad/ { printf "FAIL %s: SL_FAIL_ALLOC=%s (%s): %s\n", t, $1, $2, substr($3, 5) }' t="$name" <<<"$res" |
    sort -t= -k2 -n | head -n 20
  echo "$name: K=$K, fresh processes: runs $runs, stopped $nstop, passed $npass, bad $nbad, $((SECONDS - t0)) s"
  passed=$((passed + nstop + npass)); failed=$((failed + nbad))
done
if [ ${#forklist[@]} -gt 0 ]; then
  res=$(printf '%s\n' "${forklist[@]}" | xargs -P "$jobs" -L 1 bash -c 'each_run "$0" "$1" | sed "s|^failalloc|$(basename "$0"): failalloc|"')
  while read -r name stopped npass nbad secs; do
    case "$name" in *:) continue ;; esac
    echo "$name: every k in forked children: stopped $stopped, passed $npass, bad $nbad, $secs s"
    grep -F "$name: failalloc" <<<"$res" | sed 's/^/FAIL /'
    passed=$((passed + stopped + npass)); failed=$((failed + nbad)); ran=$((ran + 1))
  done < <(grep -v ': failalloc' <<<"$res" | sort)
fi
echo "check-alloc took $((SECONDS - start)) s"
echo "alloc: $passed passed, $failed failed"
[ "$failed" -eq 0 ] && [ "$passed" -gt 0 ]
