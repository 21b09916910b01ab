#!/usr/bin/env bash
# deps.sh - make sure the Debian packages the build needs are installed.
# Installs them with apt-get when run as root; otherwise prints the command.
set -u
pkgs=("$@")
missing=()
for p in "${pkgs[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if [ ${#missing[@]} -eq 0 ]; then
  exit 0
fi
echo "sluice: missing Debian packages: ${missing[*]}"
if [ "$(id -u)" -eq 0 ] && command -v apt-get >/dev/null; then
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq && apt-get install -y -qq --no-install-recommends "${missing[@]}" || {
    echo "sluice: apt-get install failed" >&2; exit 1; }
  echo "sluice: installed ${missing[*]}"
else
  echo "sluice: run as root:  apt-get install -y ${missing[*]}" >&2
  exit 1
fi
