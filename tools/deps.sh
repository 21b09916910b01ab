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
  { apt-get update -qq && apt-get install -y -qq --no-install-recommends "${missing[@]}"; } || {
    echo "sluice: apt-get failed; the command was: $cmd" >&2; exit 1; }
  echo "sluice: installed ${missing[*]}"
else
  echo "sluice: install them first, as root:" >&2
  echo "  $cmd" >&2
  exit 1
fi
