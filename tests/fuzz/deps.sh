#!/usr/bin/env bash
# Installs what `make fuzz` needs beyond .ci/deps.sh: clang 14 with libFuzzer and the
# sanitizer runtimes (Debian 12), only when missing.
set -euo pipefail
packages=(clang libclang-rt-14-dev)
exec bash "$(dirname "${BASH_SOURCE[0]}")/../../.ci/install_missing.sh" "${packages[@]}"
