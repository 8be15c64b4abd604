#!/usr/bin/env bash
# Installs the Debian 12 packages the build, tests and demo need, only when missing.
set -euo pipefail
packages=(cmake g++ make libboost-dev prometheus-cpp-dev libyaml-cpp-dev zlib1g-dev
          nlohmann-json3-dev libcli11-dev libspdlog-dev libfmt-dev libgtest-dev libgmock-dev libbenchmark-dev curl
          prometheus chromium python3 iproute2 procps systemd)
exec bash "$(dirname "${BASH_SOURCE[0]}")/install_missing.sh" "${packages[@]}"
