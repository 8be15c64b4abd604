#!/usr/bin/env bash
# Installs the Debian 12 packages the build, tests and demo need, only when missing.
set -euo pipefail
packages=(cmake g++ make libboost-dev prometheus-cpp-dev libyaml-cpp-dev zlib1g-dev
          nlohmann-json3-dev libcli11-dev libspdlog-dev libfmt-dev libgtest-dev libgmock-dev libbenchmark-dev curl
          prometheus chromium python3 iproute2 procps systemd)
missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
[ ${#missing[@]} -eq 0 ] && exit 0
echo "installing: ${missing[*]}"
sudo=""
[ "$(id -u)" -eq 0 ] || sudo="sudo"
$sudo apt-get update -q
DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -q --no-install-recommends "${missing[@]}"
