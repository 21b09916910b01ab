#!/usr/bin/env bash
# run.sh - tests of tools/lint_matlab and tools/lint_core on the fixtures
# beside this file: every code line of bad.m / bad.c / core_alloc.c must be
# reported, no line of good.m / mexplatform.c / core_good.c may be; and
# lint_core --objects on two objects compiled here (one calling malloc,
# strdup and free, one only memcpy). Prints
# "lint: N passed, N failed".
set -u
here=$(cd "$(dirname "$0")" && pwd)
lint="$here/../../tools/lint_matlab"
lint_core="$here/../../tools/lint_core"
passed=0; failed=0
check() { # check FILE MUST(1 = every code line reported, 0 = none) [TOOL]
  local file=$1 must=$2 tool=${3:-$lint} out n line
  out=$(bash "$tool" "$file")
  n=0
  while IFS= read -r line || [ -n "$line" ]; do
    n=$((n + 1))
    if [ "$must" = 1 ]; then
      # blank lines and comments of the bad fixtures are not cases
      case "$line" in ''|'%'*|'/*'*|' *'*) continue ;; esac
      if grep -q "^$file:$n: " <<<"$out"; then
        passed=$((passed + 1))
      else
        failed=$((failed + 1)); echo "FAIL $file:$n: not reported: $line"
      fi
    else
      if grep -q "^$file:$n: " <<<"$out"; then
        failed=$((failed + 1)); echo "FAIL $file:$n: reported: $(grep "^$file:$n: " <<<"$out" | head -n 1)"
      else
        passed=$((passed + 1))
      fi
    fi
  done <"$file"
}
check "$here/bad.m" 1
check "$here/good.m" 0
check "$here/bad.c" 1
check "$here/mexplatform.c" 0
check "$here/core_alloc.c" 1 "$lint_core"
check "$here/core_good.c" 0 "$lint_core"
# the object form (nm -u): an object that calls malloc or strdup is
# reported once per name, one that only copies memory is not
tmp=$(mktemp -d)
printf '#include <stdlib.h>\n#include <string.h>\nvoid *f(const char *s);\nvoid *f(const char *s) { char *t = strdup(s); free(t); return malloc(4); }\n' >"$tmp/a.c"
printf '#include <string.h>\nvoid g(double *a, const double *b);\nvoid g(double *a, const double *b) { memcpy(a, b, 8 * sizeof *a); }\n' >"$tmp/g.c"
if cc -std=c11 -D_POSIX_C_SOURCE=200809L -c "$tmp/a.c" -o "$tmp/a.o" && cc -std=c11 -c "$tmp/g.c" -o "$tmp/g.o"; then
  out=$(bash "$lint_core" --objects "$tmp/a.o" "$tmp/g.o"); rc=$?
  for name in malloc strdup free; do
    if [ $rc -eq 1 ] && grep -q "^$tmp/a.o: references $name;" <<<"$out"; then
      passed=$((passed + 1))
    else
      failed=$((failed + 1)); echo "FAIL lint_core --objects: $name in a.o not reported (exit $rc): $out"
    fi
  done
  if grep -qF "$tmp/g.o" <<<"$out"; then
    failed=$((failed + 1)); echo "FAIL lint_core --objects: g.o reported: $out"
  else
    passed=$((passed + 1))
  fi
  if bash "$lint_core" --objects "$tmp/g.o" >/dev/null; then
    passed=$((passed + 1))
  else
    failed=$((failed + 1)); echo "FAIL lint_core --objects: g.o alone does not pass"
  fi
else
  failed=$((failed + 1)); echo "FAIL lint: the object fixtures do not compile"
fi
rm -rf "$tmp"
# the tree itself
if bash "$lint" >/dev/null; then
  passed=$((passed + 1))
else
  failed=$((failed + 1)); echo "FAIL tools/lint_matlab reports findings in m/ or mex/ (run make lint)"
fi
if bash "$lint_core" >/dev/null; then
  passed=$((passed + 1))
else
  failed=$((failed + 1)); echo "FAIL tools/lint_core reports an allocator call in src/ or include/ (run make lint)"
fi
echo "lint: $passed passed, $failed failed"
[ "$failed" -eq 0 ]
