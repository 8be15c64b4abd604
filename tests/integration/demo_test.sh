#!/usr/bin/env bash
# `make demo` as CI runs it (CI=true, no terminal): it must finish on its own with exit 0, the
# drift alert must have fired (daemon log and the view's last JSON snapshot), a proposal must be
# written and `codedrift check` must accept it, and the output must carry no screen control
# codes. Ports are ephemeral so the test never collides with a running demo or daemon.
#
#   bash tests/integration/demo_test.sh <build-dir>
set -euo pipefail

if [ $# -ne 1 ]; then
  echo "usage: demo_test.sh <build-dir>" >&2
  exit 2
fi
build=$(cd "$1" && pwd)
src=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
run_dir=$work/demo
out=$work/demo.out
failures=0
fail() {
  echo "FAIL: $*"
  failures=$((failures + 1))
}

status=0
CI=true DEMO_DIR=$run_dir DEMO_PORTS=ephemeral \
  timeout 240 bash "$src/config/demo.sh" "$build" </dev/null >"$out" 2>&1 || status=$?
if [ "$status" -ne 0 ]; then
  fail "make demo exited with status $status"
  cat "$out"
  [ -f "$run_dir/codedriftd.log" ] && tail -n 30 "$run_dir/codedriftd.log"
  exit 1
fi

# The alert, as the daemon logged it and as the view saw it in the JSON API.
grep -Eq 'orchard/(bytes|tokens): drifting -> stale: retrained code would save' \
  "$run_dir/codedriftd.log" || fail "the daemon's log has no drifting -> stale alert"
grep -Eq '^orchard/(bytes|tokens) +stale .* yes$' "$out" ||
  fail "the demo's final table shows no stale model with a proposal"
grep -q 'The alert fired' "$out" || fail "the demo did not report the alert"

# Every proposal the daemon wrote validates; at least one was written.
mapfile -t proposals < <(find "$run_dir/state/proposals" -name '*.table' 2>/dev/null | sort)
[ ${#proposals[@]} -gt 0 ] || fail "no proposal file under $run_dir/state/proposals"
for proposal in "${proposals[@]}"; do
  "$build/daemon/codedrift" check "$proposal" >/dev/null ||
    fail "codedrift check rejects $proposal"
done
grep -q "proposal written to $run_dir/state/proposals/" "$run_dir/codedriftd.log" ||
  fail "the daemon's log does not name the proposal it wrote"

# Non-interactive output: no escape sequences; the daemon stopped cleanly.
if grep -q $'\x1b' "$out"; then fail "the non-interactive output contains escape codes"; fi
grep -q 'codedriftd stopped' "$out" || fail "the demo did not report the daemon's clean stop"
grep -q ' info stopped$' "$run_dir/codedriftd.log" || fail "codedriftd did not log its stop"

if [ "$failures" -ne 0 ]; then
  echo "--- demo output"
  cat "$out"
  exit 1
fi
echo "demo: alert fired, ${#proposals[@]} proposal(s) validated"
