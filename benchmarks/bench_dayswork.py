"""Speed of the sea routine (issue 15): a 60-day voyage with 4 fixes a day, its DR track, set and drift,
noon summaries and sailings, in under 2 s.

The voyage is synthetic (made here with navred's own almanac, for timing only): a departure entry,
a change of course every 20 hours, four rounds of four star sights a day with no DR (the reader
carries every one from the track), a current of 1 kn. Timed: reading the log and carrying its DRs,
reducing and fixing every round, carrying the DRs again from each fix and fixing again (process_log),
the day's work (set and drift at 240 fixes, 60 noons and days' runs, the DR track points), and a
route plan with waypoints. Prints the median of five runs, and each part of one run.

Run:  python benchmarks/bench_dayswork.py
"""

from __future__ import annotations

import time

import numpy as np
import pandas as pd

from navred.almanac import places
from navred.jobs.routes import plan_route
from navred.jobs.voyage import process_log
from navred.reckoning import dr_track
from navred.stars import known_bodies
from navred.timescales import instants
from navred.triangle import computed_altitude_azimuth

DAYS = 60
ROUNDS_PER_DAY = 4


def voyage_log() -> pd.DataFrame:
    start = pd.Timestamp("2026-01-05T06:00:00Z")
    changes = [start + pd.Timedelta(hours=20 * k) for k in range(DAYS * 24 // 20)]
    rng = np.random.default_rng(1)
    courses = rng.uniform(200, 280, len(changes))
    speeds = rng.uniform(5, 8, len(changes))
    ns = np.array([c.value for c in changes], dtype=np.int64)
    truth = dr_track(ns, courses, speeds, [start.value], [40.0], [-10.0], set_deg=np.full(len(changes), 45.0),
                     drift_kn=np.full(len(changes), 1.0))
    rows = [{"utc": start.isoformat().replace("+00:00", "Z"), "entry": "departure", "dr_lat": 40.0, "dr_lon": -10.0,
             "course": courses[0], "speed": speeds[0]}]
    rows += [{"utc": c.isoformat().replace("+00:00", "Z"), "entry": "course", "course": a, "speed": s}
             for c, a, s in zip(changes[1:], courses[1:], speeds[1:])]
    stars = [b for b in known_bodies() if b not in ("Sun", "Moon", "Venus", "Mars", "Jupiter", "Saturn")]
    times = start + pd.to_timedelta(np.arange(1, DAYS * ROUNDS_PER_DAY + 1) * 24 / ROUNDS_PER_DAY, unit="h")
    when = times.tz_convert(None).to_numpy().astype("datetime64[ns]")
    lat, lon, _ = truth.positions(when.astype(np.int64))
    names = np.repeat(np.array(stars, dtype=object)[None, :], when.size, axis=0)
    at = instants(np.repeat(when, len(stars)))
    place = places(names.ravel(), at)
    hc, zn = computed_altitude_azimuth(np.repeat(lat, len(stars)), np.repeat(lon, len(stars)), place.gha_deg,
                                       place.dec_deg)
    hc, zn = hc.reshape(when.size, -1), zn.reshape(when.size, -1)
    for k, stamp in enumerate(times):
        up = np.flatnonzero((hc[k] > 20) & (hc[k] < 70))
        chosen = up[np.argsort(zn[k, up])][:: max(1, len(up) // 4)][:4]
        for j in chosen:  # Hs ≈ Hc + dip + refraction: the timing, not the truth, matters here
            rows.append({"utc": stamp.isoformat().replace("+00:00", "Z"), "body": stars[j],
                         "hs": hc[k, j] + (1.76 * np.sqrt(3.0) + 1.0 / np.tan(np.radians(hc[k, j]))) / 60.0,
                         "eye_height_m": 3.0, "fix_group": f"round {k}"})
    return pd.DataFrame(rows)


def run(log: pd.DataFrame) -> dict:
    parts = {}
    t0 = time.perf_counter()
    voyage = process_log(log, plan=False)
    parts["read, carry the DRs, reduce, fix, carry again from each fix, fix again"] = time.perf_counter() - t0
    t1 = time.perf_counter()
    days = voyage.days_work()
    parts["the day's work (set and drift, noons and days' runs, the DR track)"] = time.perf_counter() - t1
    t2 = time.perf_counter()
    plan_route(40.0, -10.0, 18.0, -63.0, spacing_nm=100.0, limit_lat_deg=None)
    parts["a route with waypoints"] = time.perf_counter() - t2
    parts["total"] = time.perf_counter() - t0
    parts["_counts"] = (voyage.n_fixes, len(days.set_drift), len(days.noons))
    return parts


def main() -> None:
    log = voyage_log()
    run(log)  # warm the caches (the ephemeris file, the IERS table) once, as a running program has them
    runs = [run(log) for _ in range(5)]
    fixes, sets, noons = runs[0]["_counts"]
    print(f"{DAYS}-day voyage: {len(log)} rows, {fixes} fixes, {sets} set-and-drift, {noons} noons")
    for key in runs[0]:
        if key != "_counts":
            print(f"  {key}: median {np.median([r[key] for r in runs]):.3f} s")


if __name__ == "__main__":
    main()
