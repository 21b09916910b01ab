#!/usr/bin/env bash
# deps.sh LISTFILE - make sure the Debian packages listed in LISTFILE (one a
# line, # comments) are installed. As root, installs the missing ones with
# apt-get; otherwise prints the one command that would, and fails.
set -u
list=${1:?usage: deps.sh LISTFILE}
mapfile -t pkgs < <(sed -e 's/#.*//' -e 's/[[:space:]]//g' "$list" | grep -v '^$')
missing=()
for p in "${pkgs[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
[ ${#missing[@]} -eq 0 ] && exit 0
cmd="apt-get install -y --no-install-recommends ${missing[*]}"
echo "sluice: missing Debian packages: ${missing[*]}"
if [ "$(id -u)" -eq 0 ] && command -v apt-get >/dev/null; then
  export DEBIAN_FRONTEND=noninteractive
  # another install running (a second make, the system's own updates) is
  # waited for, up to 15 minutes, not taken as a failure: install waits on
  # dpkg's lock by itself; update does not, so it is tried again while the
  # lock of the package lists is held
  update() {
    local i out
    for i in $(seq 90); do
      out=$(apt-get update -qq 2>&1) && return 0
      case $out in *"Could not get lock"*) sleep "${SLUICE_APT_WAIT:-10}" ;; *) echo "$out" >&2; return 1 ;; esac
    done
    echo "$out" >&2; return 1
  }
  { update && apt-get -o DPkg::Lock::Timeout=900 install -y -qq \
      --no-install-recommends "${missing[@]}"; } || {
    echo "sluice: apt-get failed; the command was: $cmd" >&2; exit 1; }
  echo "sluice: installed ${missing[*]}"
else
  echo "sluice: install them first, as root:" >&2
  echo "  $cmd" >&2
  exit 1
fi
