#!/usr/bin/env bash
# `make soak`: codedriftd under the highest ingest rate it sustains for SOAK_SECONDS (default
# 600) on four streams (tcp lines, tcp u16be frames, a unix socket, udp datagrams) with nine
# models, a reload every minute (POST /api/v1/reload and SIGHUP in turn, swapping the deployed
# tables), and a webhook that fails half the time. Prints a table of throughput, resident
# memory, evaluation latency and webhook deliveries over time, then the checks and a verdict;
# exits non-zero when a check fails.
#
#   bash tests/soak/run_soak.sh <build-dir>
#
# Environment: SOAK_SECONDS (run length, default 600), SOAK_SMOKE=1 (the short CTest smoke:
# a sample every 4 s, evaluations every second, reloads at 8 s and 14 s), SOAK_UDP_RATE
# (datagrams/s, default 20000), SOAK_DIR (where the capture and tables go, default
# <build-dir>/soak or <build-dir>/soak-smoke), SOAK_ARGS (more codedrift_soak options).
#
# The traffic is the orchard-probes scenario's last phase (probe firmware 3) in a loop. Table
# set a is trained on its first phase (so the models drift and alert), set b on the last phase
# with another seed (so they fit); each reload swaps the set.
set -euo pipefail

if [ $# -ne 1 ]; then
  echo "usage: run_soak.sh <build-dir>" >&2
  exit 2
fi
build=$(cd "$1" && pwd)
src=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
codedrift=$build/daemon/codedrift
soak=$build/tests/codedrift_soak
for binary in "$codedrift" "$build/daemon/codedriftd" "$soak"; do
  [ -x "$binary" ] || { echo "run_soak.sh: $binary is not built" >&2; exit 1; }
done

seconds=${SOAK_SECONDS:-600}
smoke=${SOAK_SMOKE:-0}
work=${SOAK_DIR:-$build/soak}
[ "$smoke" = 1 ] && work=${SOAK_DIR:-$build/soak-smoke}
scenario=$src/config/scenarios/orchard-probes.yaml
mkdir -p "$work/tables"

first=$("$codedrift" synth "$scenario" --list | sed -n 's/^phase 1 \([^:]*\):.*/\1/p')
last=$("$codedrift" synth "$scenario" --list | sed -n 's/^phase [0-9]* \([^:]*\):.*/\1/p' | tail -n 1)
"$codedrift" synth "$scenario" --phase "$first" --seed 1 --to "$work/old.log" >/dev/null
"$codedrift" synth "$scenario" --phase "$last" --seed 2 --to "$work/current.log" >/dev/null
"$codedrift" synth "$scenario" --phase "$last" --seed 3 --to "$work/traffic.log" >/dev/null
train() {  # set, capture
  local set=$1 capture=$2 tables=$work/tables
  "$codedrift" train --symbols bytes -o "$tables/bytes-$set.table" "$capture" >/dev/null
  "$codedrift" train --symbols bytes --block 2 -o "$tables/bytes2-$set.table" "$capture" >/dev/null
  "$codedrift" train --symbols tokens --delimiters ' =' --mask-digits --max-distinct 4096 \
    -o "$tables/tokens-$set.table" "$capture" >/dev/null
}
train a "$work/old.log"
train b "$work/current.log"
# The field model (first 12 bits of each datagram) is measured against a plain 12-bit code.
printf 'table: 1\nalphabet: field:12\nkind: fixed\nbits: 12\n' >"$work/tables/field12.table"
"$codedrift" check "$work/tables/field12.table" >/dev/null

args=(--seconds "$seconds" --udp-rate "${SOAK_UDP_RATE:-20000}")
if [ "$smoke" = 1 ]; then
  args+=(--sample-every 4 --first-reload 8 --reload-every 6 --evaluate-every 1s)
fi
# shellcheck disable=SC2206  # SOAK_ARGS is split into options on purpose
args+=(${SOAK_ARGS:-})

echo "soak: $(basename "$scenario"), traffic phase '$last' (table set a trained on '$first')"
echo "machine: $(nproc) cores, load average $(cut -d' ' -f1-3 /proc/loadavg) before the run"
echo "command: $soak $work/traffic.log $work/tables ${args[*]}"
exec "$soak" "$work/traffic.log" "$work/tables" "${args[@]}"
