#!/usr/bin/env bash
# Installs the Debian packages named as arguments that are not installed yet (apt-get, as root
# or through sudo); does nothing when all are there. Shared by .ci/deps.sh and
# tests/fuzz/deps.sh, which only say which packages they need.
#
#   bash .ci/install_missing.sh PACKAGE...
set -euo pipefail
missing=()
for p in "$@"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
[ ${#missing[@]} -eq 0 ] && exit 0
echo "installing: ${missing[*]}"
sudo=""
[ "$(id -u)" -eq 0 ] || sudo="sudo"
$sudo apt-get update -q
DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -q --no-install-recommends "${missing[@]}"
