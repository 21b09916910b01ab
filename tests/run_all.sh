#!/usr/bin/env bash
# run_all.sh BUILD OCTAVE - run the C unit tests in BUILD/tests (unless BUILD
# is "none") and the Octave tests (unless OCTAVE is "none"); print one
# closing line "total: N passed, N failed"; exit non-zero on any failure or
# when nothing ran. SL_TEST_RUNNER, when set, is a command put before each
# C unit test (make check-valgrind runs them under valgrind this way).
set -u
build=${1:-build}
octave=${2:-octave-cli}
here=$(cd "$(dirname "$0")/.." && pwd)
passed=0; failed=0; crashed=0
tally() { # reads "...: P passed, F failed" lines from a log
  local line p f
  line=$(grep -E '^[A-Za-z0-9_.-]+: [0-9]+ passed, [0-9]+ failed' "$1" | tail -n 1)
  if [ -z "$line" ]; then return 1; fi
  p=$(sed -E 's/.*: ([0-9]+) passed.*/\1/' <<<"$line")
  f=$(sed -E 's/.* ([0-9]+) failed.*/\1/' <<<"$line")
  passed=$((passed + p)); failed=$((failed + f))
}
log=$(mktemp)
if [ "$build" != none ]; then
  for t in "$build"/tests/test_*; do
    [ -x "$t" ] || continue
    ${SL_TEST_RUNNER:-} "$t" >"$log" 2>&1; rc=$?
    grep -E '^(FAIL|SKIP)' "$log" | head -n 40
    if ! tally "$log" || { [ $rc -ne 0 ] && ! grep -qE ' [1-9][0-9]* failed' "$log"; }; then
      echo "CRASH $(basename "$t") (exit $rc)"; tail -n 20 "$log"; crashed=$((crashed + 1))
    fi
    tail -n 1 "$log"
  done
fi
if [ "$octave" != none ]; then
  for s in lint build mpi; do   # the shell-level tests: the lint, the dependency step, mpirun runs
    bash "$here/tests/$s/run.sh" >"$log" 2>&1; rc=$?
    grep -E '^(FAIL|SKIP)' "$log" | head -n 40
    if ! tally "$log"; then echo "CRASH $s tests (exit $rc)"; crashed=$((crashed + 1)); fi
    tail -n 1 "$log"
  done
  (cd "$here" && $octave --no-gui --quiet --norc \
     --eval "warning('off', 'Octave:shadowed-function'); addpath('$here/m'); addpath('$here/tests/octave'); run_octave_tests('$here')") \
     >"$log" 2>&1; rc=$?
  grep -vE 'ignoring const execution_exception' "$log"
  if ! tally "$log" || { [ $rc -ne 0 ] && ! grep -qE ' [1-9][0-9]* failed' "$log"; }; then
    echo "CRASH octave tests (exit $rc)"; crashed=$((crashed + 1))
  fi
fi
rm -f "$log"
failed=$((failed + crashed))
echo "total: $passed passed, $failed failed"
[ "$failed" -eq 0 ] && [ "$passed" -gt 0 ]
