#!/usr/bin/env python3
"""Replay a fleet's traces on Dask and merge their accuracy figures.

One task per device: the device's trace files in time order (sorted by name), each read by the
simulator's reader and stepped in chunks through one estimator (chunks on one estimator give
one pass bit for bit); between files the core's full-state snapshot is carried (a fresh
estimator per file resumes exactly, so the device's files give the rows of one pass over all of
them), and the last file's state record (the slow state a controller keeps across power
cycles) is reported. Each task
returns its rows' error figures as mergeable, serialised `clampwise.ErrorStats` (counts, sums,
maxima and the simulator's DDSketch-scheme quantile sketches); the client merges them into fleet
figures — counts, maxima and P95/P99 exactly those of one pass over all rows, bias and RMS up to
the order of additions — and writes `fleet-summary.json` and `fleet-summary.csv`.

Layout: FLEET_DIR/DEVICE/*.csv (or .mf4/.parquet), one folder per device; a trace directly in
FLEET_DIR is a device of its own. `--demo N` first writes an invented fleet of N devices with
`clampwise.synth`.

    python fleet_replay.py --config sim/configs/demo-hoist-brake.toml --fleet fleet/ --out out/ --workers 2
    python fleet_replay.py ... --scheduler tcp://scheduler:8786

CAUTION: every torque is an estimate, not a certified safety function.
"""

from __future__ import annotations

import argparse
import csv
import json
import os
import pathlib
import sys
import time

import numpy as np

import clampwise as cw

TRACE_SUFFIXES = (".csv", ".mf4", ".parquet")


def devices_of(fleet: pathlib.Path) -> dict[str, list[str]]:
    """Device name → its trace files in time (name) order."""
    out: dict[str, list[str]] = {}
    for p in sorted(fleet.iterdir()):
        if p.is_dir():
            files = sorted(str(f) for f in p.iterdir() if f.suffix in TRACE_SUFFIXES)
            if files:
                out[p.name] = files
        elif p.suffix in TRACE_SUFFIXES:
            out[p.stem] = [str(p)]
    return out


def replay_device(config: str, device: str, files: list[str], chunk_rows: int,
                  gate_states: tuple[str, ...], floor_nm: float) -> dict:
    """One device, in time order: its error figures (serialised) and its counts."""
    start = time.perf_counter()
    stats = cw.ErrorStats(floor_nm)
    states: dict[str, int] = {}
    snapshot, record = None, None
    rows = 0
    for sequence, path in enumerate(files):
        samples = cw.read_trace(config, path)
        est = cw.Estimator(config, snapshot)
        for a in range(0, len(samples), chunk_rows):
            out = est.step_batch(samples.iloc[a:a + chunk_rows])
            torque, ref, state = out["torque_Nm"], out["torque_ref_Nm"], out["state"]
            gated = np.isin(state, gate_states) & ~np.isnan(torque) & ~np.isnan(ref)
            stats.add(np.ascontiguousarray((torque - ref)[gated]), np.ascontiguousarray(ref[gated]))
            names, counts = np.unique(state, return_counts=True)
            for n, c in zip(names, counts):
                states[str(n)] = states.get(str(n), 0) + int(c)
            rows += len(torque)
        snapshot = est.save()
        record = est.save_record(sequence=sequence)
    seconds = time.perf_counter() - start
    return {
        "device": device,
        "files": files,
        "rows": rows,
        "states": states,
        "seconds": seconds,
        "rows_per_s": rows / seconds if seconds > 0 else 0.0,
        "stats": stats.to_bytes(),
        "state_record_hex": record.hex() if record is not None else None,
    }


def make_demo_fleet(config: str, fleet: pathlib.Path, devices: int, rows: int) -> None:
    """An invented fleet: each device its own seed, lining (true μ scale) and faults."""
    for d in range(devices):
        folder = fleet / f"device-{d:03d}"
        folder.mkdir(parents=True, exist_ok=True)
        for day in range(2):
            cw.synth(config, folder / f"day-{day}.csv", scenario="hoist", rows=rows,
                     seed=1000 * d + day, mu_scale=0.9 + 0.02 * (d % 10))


FIELDS = ("n", "bias_nm", "rms_nm", "max_abs_nm", "p95_nm", "p99_nm")
REL_FIELDS = ("n", "bias_pct", "rms_pct", "max_abs_pct", "p95_pct", "p99_pct")


def csv_row(name: str, rows: int, report: dict | None) -> list:
    if report is None:
        return [name, rows] + [""] * (len(FIELDS) + len(REL_FIELDS))
    rel = report.get("relative") or {}
    return [name, rows] + [report[f] for f in FIELDS] + [rel.get(f, "") for f in REL_FIELDS]


def write_summary(out: pathlib.Path, summary: dict) -> None:
    out.mkdir(parents=True, exist_ok=True)
    (out / "fleet-summary.json").write_text(json.dumps(summary, indent=2) + "\n", encoding="utf-8")
    with open(out / "fleet-summary.csv", "w", newline="", encoding="utf-8") as f:
        w = csv.writer(f)
        w.writerow(["device", "rows", *FIELDS, *("relative_" + r for r in REL_FIELDS)])
        for d in summary["devices"]:
            w.writerow(csv_row(d["device"], d["rows"], d["report"]))
        w.writerow(csv_row("fleet", summary["rows"], summary["fleet"]))


def run(args: argparse.Namespace) -> dict:
    from dask.distributed import Client, LocalCluster

    config = os.path.abspath(args.config)
    fleet = pathlib.Path(args.fleet)
    if args.demo:
        make_demo_fleet(config, fleet, args.demo, args.demo_rows)
    devices = devices_of(fleet)
    if not devices:
        raise SystemExit(f"no trace files under {fleet}")
    cluster = None
    if args.scheduler:
        client = Client(args.scheduler)
    else:
        cluster = LocalCluster(n_workers=args.workers, threads_per_worker=1, processes=True,
                               dashboard_address=None)
        client = Client(cluster)
    try:
        workers = len(client.scheduler_info()["workers"])
        start = time.perf_counter()
        futures = [
            client.submit(replay_device, config, name, files, args.chunk_rows,
                          tuple(args.gate_states), args.relative_floor_nm, key=f"device-{name}",
                          pure=False)
            for name, files in devices.items()
        ]
        results = client.gather(futures)
        wall = time.perf_counter() - start
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    merged = cw.ErrorStats(args.relative_floor_nm)
    per_device = []
    for r in results:
        stats = cw.ErrorStats.from_bytes(r.pop("stats"))
        merged.merge(stats)
        r["report"] = stats.report()
        per_device.append(r)
    rows = sum(r["rows"] for r in per_device)
    busy = sum(r["seconds"] for r in per_device)
    summary = {
        "config": config,
        "devices": per_device,
        "rows": rows,
        "gate_states": list(args.gate_states),
        "relative_floor_nm": args.relative_floor_nm,
        "fleet": merged.report(),
        "fleet_stats_hex": merged.to_bytes().hex(),
        "quantile_method": "the simulator's log-bucketed sketch (DDSketch scheme), relative "
                           f"accuracy {cw.QuantileSketch.RELATIVE_ACCURACY * 100} %, merged exactly",
        "workers": workers,
        "wall_s": wall,
        "rows_per_s": rows / wall if wall > 0 else 0.0,
        "rows_per_s_per_worker_busy": rows / busy if busy > 0 else 0.0,
        "caution": cw.CAUTION,
    }
    write_summary(pathlib.Path(args.out), summary)
    return summary


def parse(argv: list[str]) -> argparse.Namespace:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--config", required=True, help="device config (TOML) of the fleet")
    p.add_argument("--fleet", required=True, help="folder of device folders of traces")
    p.add_argument("--out", required=True, help="folder for fleet-summary.json and .csv")
    p.add_argument("--scheduler", help="address of a running Dask scheduler (else a LocalCluster)")
    p.add_argument("--workers", type=int, default=2, help="LocalCluster workers (default 2)")
    p.add_argument("--chunk-rows", type=int, default=50_000, help="rows per step_batch")
    p.add_argument("--gate-states", nargs="+", default=["slipping"],
                   help="states whose errors count (as compare --gate-states)")
    p.add_argument("--relative-floor-nm", type=float, default=10.0)
    p.add_argument("--demo", type=int, default=0, metavar="N",
                   help="first write an invented fleet of N devices into --fleet")
    p.add_argument("--demo-rows", type=int, default=60_000, help="rows per demo trace file")
    a = p.parse_args(argv)
    if a.chunk_rows < 1 or a.workers < 1:
        p.error("--chunk-rows and --workers must be at least 1")
    return a


def main(argv: list[str] | None = None) -> int:
    s = run(parse(sys.argv[1:] if argv is None else argv))
    f = s["fleet"] or {}
    print(f"{len(s['devices'])} devices, {s['rows']} rows on {s['workers']} workers in "
          f"{s['wall_s']:.2f} s ({s['rows_per_s']:.0f} rows/s; "
          f"{s['rows_per_s_per_worker_busy']:.0f} rows/s per busy worker)")
    if f:
        print(f"fleet ({', '.join(s['gate_states'])}): n {f['n']}, bias {f['bias_nm']:.3f} N·m, "
              f"RMS {f['rms_nm']:.3f} N·m, P95 {f['p95_nm']:.3f} N·m, P99 {f['p99_nm']:.3f} N·m")
    print(cw.CAUTION)
    return 0


if __name__ == "__main__":
    sys.exit(main())
