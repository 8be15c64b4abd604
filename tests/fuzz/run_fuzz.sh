#!/usr/bin/env bash
# Runs each libFuzzer target of BUILD_DIR for SECONDS, one after another (the machine has two
# cores shared with everything else). New inputs go to BUILD_DIR/fuzz-corpus/<target> (seeded
# from tests/fuzz/corpus and tests/fuzz/regressions, which stay untouched); crashers, leaks and
# timeouts land in BUILD_DIR/fuzz-artifacts/<target>/. Exits non-zero when any target failed.
# Usage: run_fuzz.sh BUILD_DIR SECONDS [TARGET...]
set -uo pipefail
build=$(cd "$1" && pwd)
seconds=$2
shift 2
here=$(cd "$(dirname "$0")" && pwd)
targets=("$@")
[ ${#targets[@]} -gt 0 ] || targets=(daemon_config code_table line_framer length_prefix_framer
                                     field_symbolizer http_route token_lines)
failed=()
for t in "${targets[@]}"; do
  corpus="$build/fuzz-corpus/$t"
  artifacts="$build/fuzz-artifacts/$t"
  mkdir -p "$corpus" "$artifacts"
  dict=()
  [ -f "$here/dict/$t.dict" ] && dict=(-dict="$here/dict/$t.dict")
  echo "== fuzzing $t for ${seconds}s"
  # -timeout: one input taking 10 s is a hang; -rss_limit_mb: a parser must not balloon.
  if ! "$build/tests/fuzz/${t}_fuzz" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 \
      -print_final_stats=1 -artifact_prefix="$artifacts/" "${dict[@]}" \
      "$corpus" "$here/corpus/$t" "$here/regressions/$t" 2>"$build/fuzz-$t.log"; then
    failed+=("$t")
    echo "   FAILED: see $build/fuzz-$t.log and $artifacts/ (add the input to" \
         "tests/fuzz/regressions/$t/ once fixed)"
  fi
  grep -E '^stat::(number_of_executed_units|new_units_added)|^#[0-9]+.*DONE' "$build/fuzz-$t.log" |
    sed 's/^/   /'
done
if [ ${#failed[@]} -gt 0 ]; then
  echo "fuzz targets that failed: ${failed[*]}"
  exit 1
fi
echo "all fuzz targets ran ${seconds}s without a finding"
