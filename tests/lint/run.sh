#!/usr/bin/env bash
# run.sh - tests of tools/lint_matlab on the fixtures beside this file:
# every code line of bad.m / bad.c must be reported, no line of good.m /
# mexplatform.c may be. Prints "lint: N passed, N failed".
set -u
here=$(cd "$(dirname "$0")" && pwd)
lint="$here/../../tools/lint_matlab"
passed=0; failed=0
check() { # check FILE MUST(1 = every code line reported, 0 = none)
  local file=$1 must=$2 out n line
  out=$(bash "$lint" "$file")
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
# the tree itself
if bash "$lint" >/dev/null; then
  passed=$((passed + 1))
else
  failed=$((failed + 1)); echo "FAIL tools/lint_matlab reports findings in m/ or mex/ (run make lint)"
fi
echo "lint: $passed passed, $failed failed"
[ "$failed" -eq 0 ]
