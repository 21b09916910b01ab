#!/usr/bin/env bash
# selftest.sh DIR - make check-alloc's check of its own driver: DIR/tests
# holds test_bad (tests/alloc/bad_test.c linked with the shim), which
# handles its 2nd and 3rd failed allocations badly. tests/alloc/run.sh must
# find exactly those, both in fresh processes and in forked children: a
# leak at k = 2, a signal at k = 3, k = 1 good.
set -u
here=$(cd "$(dirname "$0")" && pwd)
out=$(SL_ALLOC_JOBS=1 SL_ALLOC_MAXK=3000 SL_ALLOC_SKIP= SL_ALLOC_FORK=1 bash "$here/run.sh" "$1" 2>&1); rc=$?
ok=1
grep -q '^test_bad: K=3, fresh processes: runs 3, stopped 0, passed 1, bad 2' <<<"$out" || ok=0
grep -q '^FAIL test_bad: SL_FAIL_ALLOC=2 (once): leak_of_1_blocks' <<<"$out" || ok=0
grep -q '^FAIL test_bad: SL_FAIL_ALLOC=3 (once): signal_11' <<<"$out" || ok=0
grep -q '^test_bad: every k in forked children: stopped 0, passed 1, bad 2' <<<"$out" || ok=0
grep -q '^FAIL test_bad: failalloc: each: allocation 2: leak' <<<"$out" || ok=0
grep -q '^FAIL test_bad: failalloc: each: allocation 3: signal 11' <<<"$out" || ok=0
grep -q '^alloc: 2 passed, 4 failed' <<<"$out" || ok=0
[ $rc -ne 0 ] || ok=0
if [ $ok = 1 ]; then
  echo "check-alloc: the driver finds the leak and the crash of tests/alloc/bad_test.c"
else
  echo "FAIL check-alloc self-test: the driver missed what tests/alloc/bad_test.c does wrong (exit $rc):"
  echo "$out"
  exit 1
fi
