#!/usr/bin/env python3
"""The live view of `make demo`: polls codedriftd's JSON API until the alert has fired.

Shows each model's state, window entropy, deployed and retrained mean length, the estimated
saving (with its lower confidence bound) and records/s, plus the scenario phase being played
(estimated from the elapsed time and the sender's speed). With --live it redraws one screen; without
it prints plain lines (no control codes), which is what CI and pipes get.

Exit status: 0 once every model with a table is stale and has a proposal (or the sender has
finished and at least one has), 1 on timeout or when the daemon stops answering.
"""
import argparse
import json
import os
import re
import subprocess
import sys
import time
import urllib.error
import urllib.request


def parse_args():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--http", required=True, help="HOST:PORT of the daemon's HTTP server")
    parser.add_argument("--timeout", type=float, default=150, help="give up after this many s")
    parser.add_argument("--sender-pid", type=int, default=0, help="PID of `codedrift synth`")
    parser.add_argument("--codedrift", default="", help="the CLI, to list the scenario phases")
    parser.add_argument("--scenario", default="", help="scenario file the sender plays")
    parser.add_argument("--speed", type=float, default=0, help="the sender's --speed")
    parser.add_argument("--live", action="store_true", help="redraw one screen (a terminal)")
    return parser.parse_args()


def fetch_models(http):
    with urllib.request.urlopen(f"http://{http}/api/v1/models", timeout=5) as reply:
        return json.load(reply)["models"]


def process_alive(pid):
    if pid <= 0:
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    # A finished child of the calling shell stays a zombie until reaped: not alive.
    try:
        with open(f"/proc/{pid}/stat") as stat:
            return stat.read().split(")")[-1].split()[0] != "Z"
    except OSError:
        return False


def scenario_phases(codedrift, scenario):
    """[(name, simulated start seconds)] from `codedrift synth --list`."""
    if not codedrift or not scenario:
        return []
    listing = subprocess.run([codedrift, "synth", scenario, "--list"], capture_output=True,
                             text=True, check=False).stdout
    phases, start = [], 0.0
    for match in re.finditer(r"^phase \d+ (\S+): (\d+) records? at ([0-9.e+-]+)/s", listing,
                             re.MULTILINE):
        phases.append((match.group(1), start))
        start += int(match.group(2)) / float(match.group(3))
    return phases


def current_phase(phases, simulated_seconds):
    name = ""
    for phase, start in phases:
        if simulated_seconds >= start:
            name = phase
    return name


def number(value, fmt):
    return fmt.format(value) if isinstance(value, (int, float)) else "-"


def row(model):
    saving = "-"
    if isinstance(model.get("saving_ratio"), (int, float)):
        saving = f"{100 * model['saving_ratio']:5.1f}%"
        if isinstance(model.get("saving_lower_ratio"), (int, float)):
            saving += f" (>{100 * model['saving_lower_ratio']:.1f}%)"
    return [
        f"{model['stream']}/{model['model']}",
        model["state"],
        number(model.get("window_symbols"), "{:,}"),
        number(model.get("entropy_bits"), "{:.3f}"),
        number(model.get("deployed_mean_bits"), "{:.3f}"),
        number(model.get("retrained_mean_bits"), "{:.3f}"),
        saving,
        number(model.get("records_per_second"), "{:,.0f}"),
        "yes" if model.get("proposal") else "-",
    ]


HEADER = ["model", "state", "window", "entropy", "deployed", "retrained", "saving (lower)",
          "records/s", "proposal"]


def table(models):
    rows = [HEADER] + [row(m) for m in models]
    widths = [max(len(r[i]) for r in rows) for i in range(len(HEADER))]
    lines = ["  ".join(cell.ljust(w) for cell, w in zip(r, widths)).rstrip() for r in rows]
    lines.insert(1, "  ".join("-" * w for w in widths))
    return lines


def plain_line(elapsed, phase, models):
    parts = []
    for m in models:
        saving = m.get("saving_ratio")
        parts.append(f"{m['model']} {m['state']} H={number(m.get('entropy_bits'), '{:.2f}')} "
                     f"dep={number(m.get('deployed_mean_bits'), '{:.2f}')} "
                     f"new={number(m.get('retrained_mean_bits'), '{:.2f}')} "
                     f"saving={number(100 * saving if isinstance(saving, (int, float)) else None, '{:.1f}')}%")
    rate = number(models[0].get("records_per_second"), "{:.0f}") if models else "-"
    return f"[{elapsed:5.1f}s] {phase or '-':<17} {rate:>5} records/s | " + " | ".join(parts)


def done(models, sender_finished):
    tabled = [m for m in models if m.get("table")]
    alerted = [m for m in tabled if m["state"] == "stale" and m.get("proposal")]
    if tabled and len(alerted) == len(tabled):
        return True
    return sender_finished and bool(alerted)


def main():
    args = parse_args()
    phases = scenario_phases(args.codedrift, args.scenario)
    start = time.monotonic()
    deadline = start + args.timeout
    last_states, events, last_plain = {}, [], -10.0
    sender_finished_at = None
    while True:
        now = time.monotonic()
        elapsed = now - start
        try:
            models = fetch_models(args.http)
        except (urllib.error.URLError, OSError, ValueError) as error:
            print(f"demo: the daemon stopped answering on {args.http}: {error}", file=sys.stderr)
            return 1
        for m in models:
            key = f"{m['stream']}/{m['model']}"
            if last_states.get(key, "fit") != m["state"]:
                events.append(f"[{elapsed:5.1f}s] {key}: {last_states.get(key, 'fit')} -> "
                              f"{m['state']}: {m.get('reason', '')}")
                if not args.live:
                    print(events[-1], flush=True)
            last_states[key] = m["state"]
        phase = current_phase(phases, elapsed * args.speed)
        if args.live:
            screen = ["codedrift demo: orchard-probes scenario played at "
                      f"{args.speed:g}x into codedriftd on {args.http}",
                      f"elapsed {elapsed:5.1f} s   scenario phase (estimated): {phase or '-'}",
                      ""] + table(models) + ["", "state changes:"] + \
                     (events[-8:] or ["  (none yet)"]) + ["", "Ctrl-C stops the demo."]
            sys.stdout.write("\x1b[H\x1b[2J" + "\n".join(screen) + "\n")
            sys.stdout.flush()
        elif elapsed - last_plain >= 2.0:
            print(plain_line(elapsed, phase, models), flush=True)
            last_plain = elapsed
        sender_finished = args.sender_pid > 0 and not process_alive(args.sender_pid)
        if sender_finished and sender_finished_at is None:
            sender_finished_at = now
        if done(models, sender_finished):
            if not args.live:
                print(plain_line(elapsed, phase, models), flush=True)
                print("\n".join(table(models)), flush=True)
            return 0
        # Traffic over and no alert within a few evaluations more: it is not coming.
        if sender_finished_at is not None and now - sender_finished_at > 15:
            print("demo: the scenario finished and no model went stale", file=sys.stderr)
            return 1
        if now > deadline:
            print(f"demo: no alert within {args.timeout:g} s", file=sys.stderr)
            return 1
        time.sleep(1.0 if args.live else 0.5)


if __name__ == "__main__":
    try:
        sys.exit(main())
    except KeyboardInterrupt:
        sys.exit(130)
