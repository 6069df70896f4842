#!/usr/bin/env python3
"""The peer of `clampwise replay` for the throughput benchmark: the bare physics of the same
trace, vectorised with numpy and pandas, as a test engineer would write it in an afternoon.

CSV in, CSV out, like the replay: the trace read with pandas, each gauge's counts to newtons
through the config's calibration line, the median of the valid gauges, the slip speed, the
bedded effective radius (Ro + Ri) / 2 of an annulus or sector pad (uniform wear), μ by bilinear
interpolation in the config's table over the measured temperature and |slip|, and
T = faces · μ · F · r_e with the sign of the slip. None of the estimator's diagnostics,
uncertainty, thermal or wear state: it does less than the replay on purpose.

Usage: numpy_replay.py CONFIG.toml TRACE.csv OUT.csv
"""

import sys
import time
import tomllib

import numpy as np
import pandas as pd


def bilinear(xs, ys, table, x, y):
    """Bilinear interpolation in table[i][j] over (xs[i], ys[j]), clamped at the edges."""
    xs = np.asarray(xs, dtype=float)
    ys = np.asarray(ys, dtype=float)
    t = np.asarray(table, dtype=float)
    x = np.clip(x, xs[0], xs[-1])
    y = np.clip(y, ys[0], ys[-1])
    i = np.clip(np.searchsorted(xs, x, side="right") - 1, 0, len(xs) - 2)
    j = np.clip(np.searchsorted(ys, y, side="right") - 1, 0, len(ys) - 2)
    fx = (x - xs[i]) / (xs[i + 1] - xs[i])
    fy = (y - ys[j]) / (ys[j + 1] - ys[j])
    top = t[i, j] * (1 - fy) + t[i, j + 1] * fy
    bottom = t[i + 1, j] * (1 - fy) + t[i + 1, j + 1] * fy
    return top * (1 - fx) + bottom * fx


def main(config_path, trace_path, out_path):
    t0 = time.perf_counter()
    with open(config_path, "rb") as f:
        cfg = tomllib.load(f)
    df = pd.read_csv(trace_path, comment="#")
    t1 = time.perf_counter()
    forces = []
    for k, s in enumerate(cfg["sensor"], start=1):
        f_n = (df[f"force_{k}_counts"].to_numpy(float) - s["offset_counts"]) * s["gain_n_per_count"]
        valid = df[f"force_{k}_valid"].to_numpy() != 0
        forces.append(np.where(valid, f_n, np.nan))
    force = np.nanmedian(np.vstack(forces), axis=0)
    slip = df["omega_in_rad_s"].to_numpy(float) - df["omega_out_rad_s"].to_numpy(float)
    c = cfg["contact"]
    r_e = 0.5 * (c["inner_radius_m"] + c["outer_radius_m"])
    m = cfg["friction"]["mu"]
    mu = bilinear(m["temperature_c"], m["slip_speed_rad_s"], m["values"],
                  df["temp_C"].to_numpy(float), np.abs(slip))
    torque = c.get("faces", 1) * mu * force * r_e * np.sign(slip)
    out = pd.DataFrame({
        "t_s": df["t_s"],
        "torque_Nm": torque,
        "mu": mu,
        "radius_m": r_e,
        "clamp_force_N": force,
        "slip_speed_rad_s": slip,
    })
    t2 = time.perf_counter()
    out.to_csv(out_path, index=False)
    t3 = time.perf_counter()
    print(f"read {t1 - t0:.3f} s, physics {t2 - t1:.3f} s, write {t3 - t2:.3f} s", file=sys.stderr)


if __name__ == "__main__":
    if len(sys.argv) != 4:
        sys.exit(__doc__)
    main(*sys.argv[1:])
