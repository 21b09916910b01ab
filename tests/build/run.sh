#!/usr/bin/env bash
# run.sh - tests of the dependency step (tools/deps.sh and the Makefile's
# use of it): on a machine without a package and without root, every
# target prints the one apt-get command that installs it and fails before
# anything compiles. Prints "build: N passed, N failed". The
# not-root cases run as the user nobody when this runs as root, and are
# skipped (counted as passed only when they ran) otherwise.
set -u
here=$(cd "$(dirname "$0")/../.." && pwd)
passed=0; failed=0
ok()   { passed=$((passed + 1)); }
fail() { failed=$((failed + 1)); echo "FAIL $*"; }
tmp=$(mktemp -d); chmod 755 "$tmp"
trap 'rm -rf "$tmp"' EXIT
printf '# a comment\nbash   # the shell is always there\n\n' > "$tmp/present"
printf 'bash\nsluice-no-such-package-a\n  sluice-no-such-package-b  # missing\n' > "$tmp/missing"
chmod 644 "$tmp/present" "$tmp/missing"

# every package present: silent success
out=$(bash "$here/tools/deps.sh" "$tmp/present" 2>&1); rc=$?
[ $rc -eq 0 ] && [ -z "$out" ] && ok || fail "deps.sh with everything installed: exit $rc, output '$out'"

as_nobody() {
  if [ "$(id -u)" -eq 0 ]; then setpriv --reuid=65534 --regid=65534 --clear-groups "$@"
  else "$@"; fi
}
if [ "$(id -u)" -eq 0 ] && ! command -v setpriv >/dev/null; then
  echo "SKIP not-root cases: setpriv missing"
elif ! as_nobody test -r "$here/Makefile" 2>/dev/null; then
  echo "SKIP not-root cases: the user nobody cannot read $here"
else
  # a missing package without root: the one command, exit non-zero
  out=$(as_nobody bash "$here/tools/deps.sh" "$tmp/missing" 2>&1); rc=$?
  [ $rc -ne 0 ] && ok || fail "deps.sh without root and with missing packages exited 0"
  grep -qx '  apt-get install -y --no-install-recommends sluice-no-such-package-a sluice-no-such-package-b' <<<"$out" \
    && ok || fail "deps.sh did not print the one apt-get command: $out"
  [ "$(grep -c 'apt-get install' <<<"$out")" -eq 1 ] && ok || fail "more than one apt-get command: $out"

  # make, any building target, as not root: stops at the dependency step
  for target in all check demo pkg; do
    mkdir -p "$tmp/b-$target"; chown 65534 "$tmp/b-$target" 2>/dev/null
    out=$(cd "$here" && as_nobody make --no-print-directory BUILD="$tmp/b-$target" \
            DEPLIST="$tmp/missing" "$target" 2>&1); rc=$?
    [ $rc -ne 0 ] && ok || fail "make $target without root and packages exited 0"
    grep -q 'apt-get install -y --no-install-recommends sluice-no-such-package-a' <<<"$out" \
      && ok || fail "make $target did not print the apt-get command: $out"
    if grep -qE '(^| )(cc|gcc|mkoctfile|octave-cli|ar|tar|ln) ' <<<"$out" \
       || [ -n "$(find "$tmp/b-$target" -name '*.o' -o -name '*.a' | head -n 1)" ]; then
      fail "make $target compiled or ran something before the dependency step: $out"
    else ok; fi
  done
fi
# as root, another apt running: deps.sh waits for it instead of failing
# (a stand-in apt-get on PATH that reports the lock held twice)
if [ "$(id -u)" -eq 0 ]; then
  mkdir -p "$tmp/bin"
  cat > "$tmp/bin/apt-get" <<'FAKE'
#!/usr/bin/env bash
log=${FAKE_APT_LOG:?}
echo "$*" >> "$log"
case " $* " in
  *" update "*)
    n=$(grep -c update "$log")
    if [ "$n" -le "${FAKE_APT_BUSY:-0}" ]; then
      echo "E: Could not get lock /var/lib/apt/lists/lock. It is held by process 1 (apt-get)" >&2; exit 100
    fi
    [ -n "${FAKE_APT_BROKEN:-}" ] && { echo "E: The repository is broken" >&2; exit 100; }
    exit 0 ;;
esac
exit 0
FAKE
  chmod 755 "$tmp/bin/apt-get"
  : > "$tmp/apt.log"
  out=$(PATH="$tmp/bin:$PATH" FAKE_APT_LOG="$tmp/apt.log" FAKE_APT_BUSY=2 SLUICE_APT_WAIT=0 \
          bash "$here/tools/deps.sh" "$tmp/missing" 2>&1); rc=$?
  [ $rc -eq 0 ] && ok || fail "deps.sh gave up while another apt held the lock: $out"
  [ "$(grep -c update "$tmp/apt.log")" -eq 3 ] && ok || fail "deps.sh did not retry update: $(cat "$tmp/apt.log")"
  grep -q 'DPkg::Lock::Timeout=.*install.*sluice-no-such-package-b' "$tmp/apt.log" \
    && ok || fail "deps.sh install does not wait for dpkg's lock: $(cat "$tmp/apt.log")"
  : > "$tmp/apt.log"
  out=$(PATH="$tmp/bin:$PATH" FAKE_APT_LOG="$tmp/apt.log" FAKE_APT_BROKEN=1 SLUICE_APT_WAIT=0 \
          bash "$here/tools/deps.sh" "$tmp/missing" 2>&1); rc=$?
  [ $rc -ne 0 ] && [ "$(wc -l < "$tmp/apt.log")" -eq 1 ] && grep -q 'repository is broken' <<<"$out" \
    && ok || fail "deps.sh retried or hid a failure that is not a lock: exit $rc, $(cat "$tmp/apt.log")"
fi
echo "build: $passed passed, $failed failed"
[ $failed -eq 0 ]
