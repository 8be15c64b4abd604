#!/usr/bin/env bash
# `make bench`: throughput of the offline paths against baselines measured in the same run
# (DESIGN.md section 7 sets goals as ratios, because absolute figures swing with the machine).
#
#   bash tests/bench/run_bench.sh <build-dir>
#
# Environment: BENCH_MIB (capture size, default 256), BENCH_RUNS (runs per timing, median
# reported, default 5), BENCH_DIR (where the capture is kept between runs, default
# <build-dir>/bench-data).
set -euo pipefail

if [ $# -ne 1 ]; then
  echo "usage: run_bench.sh <build-dir>" >&2
  exit 2
fi
build=$(cd "$1" && pwd)
here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
mib=${BENCH_MIB:-256}
runs=${BENCH_RUNS:-5}
data_dir=${BENCH_DIR:-$build/bench-data}
seed=20240501
codedrift=$build/daemon/codedrift
[ -x "$codedrift" ] || { echo "run_bench.sh: $codedrift is not built" >&2; exit 1; }

mkdir -p "$data_dir"
capture=$data_dir/telemetry-${mib}mib-seed${seed}.log
if [ ! -s "$capture" ]; then
  echo "generating a ${mib} MiB synthetic telemetry capture (seed $seed) ..."
  python3 "$here/gen_telemetry.py" "$capture.tmp" "$mib" "$seed"
  mv "$capture.tmp" "$capture"
fi
bytes=$(stat -c %s "$capture")
# Page-cache the capture so every tool reads from memory, not disk.
cat "$capture" >/dev/null
cat "$capture" >/dev/null

# median_seconds CMD...: runs CMD $runs times (output discarded) and prints the median wall time.
median_seconds() {
  local times=()
  local TIMEFORMAT=%3R
  for ((i = 0; i < runs; i++)); do
    times+=("$({ time "$@" >/dev/null 2>&1; } 2>&1)")
  done
  printf '%s\n' "${times[@]}" | sort -n | awk '{ v[NR] = $1 } END { print v[int((NR + 1) / 2)] }'
}

baseline_s=""
report() {  # name seconds
  local name=$1 seconds=$2
  awk -v n="$name" -v s="$seconds" -v b="$bytes" -v base="${baseline_s:-$seconds}" 'BEGIN {
    if (s <= 0) s = 0.001
    printf "  %-46s %8.3f s  %8.0f MB/s  %6.2fx wc -l\n", n, s, b / s / 1e6, base / s
  }'
}

echo
echo "offline throughput on a page-cached $((bytes >> 20)) MiB capture (median of $runs runs)"
baseline_s=$(median_seconds wc -l "$capture")
report "wc -l (baseline)" "$baseline_s"
report "cat > /dev/null" "$(median_seconds cat "$capture")"
report "inspect --symbols bytes --deflate-budget 0" \
  "$(median_seconds "$codedrift" inspect --symbols bytes --deflate-budget 0 "$capture")"
report "inspect --symbols bytes (32 MiB deflate sample)" \
  "$(median_seconds "$codedrift" inspect --symbols bytes "$capture")"
report "inspect --symbols tokens" \
  "$(median_seconds "$codedrift" inspect --symbols tokens "$capture")"
report "inspect --symbols tokens --mask-digits" \
  "$(median_seconds "$codedrift" inspect --symbols tokens --mask-digits "$capture")"
echo "  goals (DESIGN.md section 7): inspect bytes >= 0.5x wc -l; tokens >= 150 MB/s offline"

# ---------------------------------------------------------------------------------------------
# HOOKS: daemon ingest benchmarks go here (owned by the daemon engineer).
# Available: $build, $codedrift, $capture (page-cached), $bytes, $runs, median_seconds CMD...,
# and report NAME SECONDS (prints MB/s over $bytes and the ratio to the wc -l baseline; set
# baseline_s to another baseline, e.g. a recv-and-discard receiver, before calling it).
# Example shape: start codedriftd on loopback, time `codedrift replay "$capture" --to tcp://...`
# against a plain receiver, stop the daemon.
# ---------------------------------------------------------------------------------------------

bench_bin=$(find "$build" -name codedrift_bench -type f -perm -u+x 2>/dev/null | head -n 1)
if [ -n "$bench_bin" ]; then
  echo
  echo "Google Benchmark: $bench_bin"
  "$bench_bin" --benchmark_min_time=0.2
else
  echo
  echo "codedrift_bench is not built; skipping the micro-benchmarks"
fi
