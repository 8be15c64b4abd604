#!/usr/bin/env bash
# `make demo`: trains the deployed code tables on the first phase of a traffic scenario, starts
# codedriftd on config/demo.yaml (loopback only), plays the whole scenario into it at
# accelerated time and shows the models live until the drift alert fires and a proposal is
# written; then prints where to look and stops the daemon (KEEP=1 keeps it serving).
#
#   bash config/demo.sh <build-dir>
#
# Environment: KEEP=1 (keep serving after the alert until Ctrl-C), CI=true or no terminal
# (plain line output, no screen control codes), DEMO_DIR (run directory, default
# <build-dir>/demo; emptied first), DEMO_SPEED (simulated seconds per real second, default
# 3000), DEMO_TIMEOUT (seconds to wait for the alert, default 150), DEMO_PORTS=ephemeral (let
# the system pick the ports instead of 7070/7071).
set -euo pipefail

if [ $# -ne 1 ]; then
  echo "usage: demo.sh <build-dir>" >&2
  exit 2
fi
build=$(cd "$1" && pwd)
src=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
codedrift=$build/daemon/codedrift
codedriftd=$build/daemon/codedriftd
for binary in "$codedrift" "$codedriftd"; do
  [ -x "$binary" ] || { echo "demo: $binary is not built (run make build)" >&2; exit 1; }
done
command -v python3 >/dev/null || { echo "demo: python3 is missing (run make deps)" >&2; exit 1; }

run_dir=${DEMO_DIR:-$build/demo}
speed=${DEMO_SPEED:-3000}
timeout_s=${DEMO_TIMEOUT:-150}
scenario=$src/config/scenarios/orchard-probes.yaml
live=0
if [ -t 1 ] && [ "${CI:-}" != "true" ]; then live=1; fi

daemon_pid=""
sender_pid=""
stop_process() {  # pid: SIGTERM, then wait for it (it is our child)
  local pid=$1
  [ -n "$pid" ] || return 0
  kill -0 "$pid" 2>/dev/null || return 0
  kill -TERM "$pid" 2>/dev/null || true
  wait "$pid" 2>/dev/null || true
}
cleanup() {
  stop_process "$sender_pid"
  stop_process "$daemon_pid"
}
trap cleanup EXIT
trap 'exit 130' INT TERM

rm -rf "$run_dir"
mkdir -p "$run_dir/tables"
cd "$run_dir"

# 1. The deployed tables: trained on the scenario's first phase, as an operator would train on
#    a capture of the traffic the link carried when its code was built.
first_phase=$("$codedrift" synth "$scenario" --list | sed -n 's/^phase 1 \([^:]*\):.*/\1/p')
echo "== 1/4 training the deployed code tables on phase '$first_phase' of $(basename "$scenario")"
"$codedrift" synth "$scenario" --phase "$first_phase" --seed 1 --to baseline.log
"$codedrift" train --symbols bytes -o tables/orchard-bytes.table baseline.log
"$codedrift" train --symbols tokens --delimiters ' =' --mask-digits --max-distinct 4096 \
  -o tables/orchard-tokens.table baseline.log

# 2. The daemon, on a copy of config/demo.yaml whose relative paths resolve here.
port_in_use() { (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }
cp "$src/config/demo.yaml" demo.yaml
if [ "${DEMO_PORTS:-}" = "ephemeral" ] || port_in_use 7070 || port_in_use 7071; then
  [ "${DEMO_PORTS:-}" = "ephemeral" ] || echo "   port 7070 or 7071 is taken: using free ports instead"
  sed -i -e 's/127\.0\.0\.1:7070/127.0.0.1:0/' -e 's/127\.0\.0\.1:7071/127.0.0.1:0/' demo.yaml
fi
echo "== 2/4 starting codedriftd --config $run_dir/demo.yaml"
"$codedriftd" --config demo.yaml --ready-file ready.json >codedriftd.log 2>&1 &
daemon_pid=$!
for _ in $(seq 100); do  # up to 10 s
  [ -s ready.json ] && break
  kill -0 "$daemon_pid" 2>/dev/null || break
  sleep 0.1
done
if [ ! -s ready.json ]; then
  echo "demo: codedriftd did not start; its log:" >&2
  cat codedriftd.log >&2
  exit 1
fi
read -r http_port stream_port < <(python3 -c '
import json; r = json.load(open("ready.json")); print(r["http_port"], r["streams"]["orchard"])')
http=127.0.0.1:$http_port

# 3. The traffic: the whole scenario (another seed than the training capture), sped up.
echo "== 3/4 playing $(basename "$scenario") at ${speed}x into tcp://127.0.0.1:$stream_port"
"$codedrift" synth "$scenario" --seed 2 --speed "$speed" --to "tcp://127.0.0.1:$stream_port" \
  >synth.log 2>&1 &
sender_pid=$!

# 4. The live view, until the alert has fired and the proposal is written.
echo "== 4/4 watching http://$http/api/v1/models until a model goes stale"
view_args=(--http "$http" --timeout "$timeout_s" --sender-pid "$sender_pid"
           --codedrift "$codedrift" --scenario "$scenario" --speed "$speed")
[ "$live" = 1 ] && view_args+=(--live)
if ! python3 "$src/config/demo_view.py" "${view_args[@]}"; then
  echo "demo: no alert; the daemon's log ($run_dir/codedriftd.log) ends with:" >&2
  tail -n 20 codedriftd.log >&2
  exit 1
fi
stop_process "$sender_pid"
sender_pid=""

echo
echo "The alert fired. From the daemon's log ($run_dir/codedriftd.log):"
grep -E ' -> stale: |proposal written' codedriftd.log | sed 's/^/  /'

# The proposal, measured on fresh traffic of the new regime next to the deployed table.
proposal=$(find state/proposals -name '*.table' -path '*/orchard/bytes/*' | sort | tail -n 1)
[ -n "$proposal" ] || proposal=$(find state/proposals -name '*.table' | sort | tail -n 1)
last_phase=$("$codedrift" synth "$scenario" --list | sed -n 's/^phase [0-9]* \([^:]*\):.*/\1/p' |
             tail -n 1)
"$codedrift" synth "$scenario" --phase "$last_phase" --seed 3 --to fresh.log >/dev/null
"$codedrift" check "$run_dir/$proposal" >/dev/null
model_dir=$(dirname "$proposal")
deployed=tables/orchard-$(basename "$model_dir").table
mean_of() {
  "$codedrift" inspect --json --deflate-budget 0 --table "$1" "${@:2}" fresh.log |
    python3 -c 'import json, sys; print("%.3f" % json.load(sys.stdin)["deployed_mean_bits"])'
}
symbol_flags=()
[ "$(basename "$model_dir")" = tokens ] &&
  symbol_flags=(--symbols tokens --delimiters ' =' --mask-digits --max-distinct 4096)
deployed_bits=$(mean_of "$deployed" "${symbol_flags[@]}")
proposal_bits=$(mean_of "$proposal" "${symbol_flags[@]}")
echo
echo "On fresh '$last_phase' traffic (seed 3), $(basename "$model_dir") symbols:" \
     "deployed table $deployed_bits bits/symbol, proposal $proposal_bits bits/symbol."
echo
echo "Where to look:"
echo "  status page    http://$http/"
echo "  metrics        curl -s http://$http/metrics | grep '^codedrift_saving'"
echo "  JSON API       curl -s http://$http/api/v1/models"
echo "  proposal       $run_dir/$proposal"
echo "                 (also GET http://$http/api/v1/models/orchard/$(basename "$model_dir")/proposal)"
echo "  inspect it     $codedrift check $run_dir/$proposal"
flags_text=""
[ ${#symbol_flags[@]} -eq 0 ] || flags_text=$(printf ' %q' "${symbol_flags[@]}")
echo "                 $codedrift inspect --table $run_dir/$proposal$flags_text $run_dir/fresh.log"
echo "  daemon log     $run_dir/codedriftd.log"
echo
echo "codedrift only proposes: deploy a table on encoder and decoder together, keep the old"
echo "decoder until every sender has switched (README.md, 'Deploying a proposal')."

if [ "${KEEP:-}" = "1" ]; then
  echo
  echo "KEEP=1: codedriftd (pid $daemon_pid) keeps serving on http://$http/ until Ctrl-C."
  trap 'stop_process "$daemon_pid"; daemon_pid=""; exit 0' INT TERM
  wait "$daemon_pid" || true
  daemon_pid=""
  exit 0
fi
kill -TERM "$daemon_pid"
status=0
wait "$daemon_pid" || status=$?
daemon_pid=""
if [ "$status" -ne 0 ]; then
  echo "demo: codedriftd exited with status $status" >&2
  exit 1
fi
echo
echo "codedriftd stopped (the status page and API above are gone with it; make demo KEEP=1 keeps"
echo "them up). Everything the demo wrote is in $run_dir."
