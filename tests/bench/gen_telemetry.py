#!/usr/bin/env python3
"""Writes a seeded synthetic telemetry log for benchmarks.

Scenario (our own): weather and soil stations on a hill-country radio backhaul report one
line per reading. Sites, sensors and firmware builds are skewed the way real fleets are (a few
busy stations, many quiet ones); values wander slowly per station; now and then a station
emits a fault or a reboot notice. Same seed and size, same bytes.

usage: gen_telemetry.py OUT SIZE_MIB [SEED]
"""

import random
import sys

SENSORS = [
    ("soil_moisture", "pct", 10.0, 45.0),
    ("air_temp", "degC", -5.0, 35.0),
    ("leaf_wetness", "min", 0.0, 60.0),
    ("wind_speed", "m_s", 0.0, 22.0),
    ("rain_gauge", "mm", 0.0, 12.0),
    ("battery", "V", 3.3, 4.2),
]
STATUSES = ["ok"] * 40 + ["ok_low_batt"] * 3 + ["retry"] * 2 + ["sensor_fault"]
FIRMWARE = ["fw=2.4.1"] * 12 + ["fw=2.4.2"] * 5 + ["fw=2.5.0-rc1"]


def main():
    if len(sys.argv) < 3:
        sys.exit("usage: gen_telemetry.py OUT SIZE_MIB [SEED]")
    out_path = sys.argv[1]
    target = int(sys.argv[2]) * 1024 * 1024
    rng = random.Random(int(sys.argv[3]) if len(sys.argv) > 3 else 20240501)

    sites = ["ridge-%02d" % i for i in range(24)] + ["valley-%03d" % i for i in range(180)]
    # Zipf-like site weights: a few chatty stations.
    weights = [1.0 / (rank + 1) for rank in range(len(sites))]
    level = {site: rng.random() for site in sites}
    seq = {site: rng.randrange(1, 500000) for site in sites}
    clock_ms = 1714564800000  # 2024-05-01T12:00:00Z

    written = 0
    batch = []
    batch_bytes = 0
    with open(out_path, "wb") as out:
        while written < target:
            site_batch = rng.choices(sites, weights=weights, k=4096)
            for site in site_batch:
                clock_ms += rng.randrange(1, 40)
                seq[site] += 1
                sensor, unit, lo, hi = SENSORS[seq[site] % len(SENSORS)]
                level[site] = min(1.0, max(0.0, level[site] + rng.gauss(0.0, 0.02)))
                value = lo + (hi - lo) * level[site]
                secs, ms = divmod(clock_ms, 1000)
                minute, sec = divmod(secs % 3600, 60)
                hour = (secs // 3600) % 24
                line = "2024-05-01T%02d:%02d:%02d.%03dZ site=%s sensor=%s seq=%d value=%.2f unit=%s rssi=%d status=%s" % (
                    hour, minute, sec, ms, site, sensor, seq[site], value, unit,
                    -60 - rng.randrange(0, 45), rng.choice(STATUSES))
                if rng.random() < 0.002:
                    line += " event=reboot " + rng.choice(FIRMWARE)
                data = (line + "\n").encode()
                batch.append(data)
                batch_bytes += len(data)
            if batch_bytes >= 1 << 20:
                chunk = b"".join(batch)
                out.write(chunk[: target - written])
                written += min(len(chunk), target - written)
                batch, batch_bytes = [], 0
        # Nothing left over: the loop stops exactly at `target` bytes.


if __name__ == "__main__":
    main()
