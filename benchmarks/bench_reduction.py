"""Speed of sight reduction: the triangle alone, and the whole per-sight pipeline.

Targets (issue 3): the triangle (Hc, Zn) at over 5 million sights per second on one core;
the whole pipeline (almanac, corrections, triangle, intercept) on 1,000,000 synthetic
sights under 1.5 GB of peak memory. Prints both. Synthetic sights: random stars, Sun and
Moon over one year, random DR positions, numeric columns and timezone-aware UTC (as a
logbook reader hands them over).

Run:  python benchmarks/bench_reduction.py [N]
"""

from __future__ import annotations

import resource
import sys
import time
import warnings

import numpy as np
import pandas as pd

from navred import reduce_sights
from navred.stars import known_bodies
from navred.triangle import computed_altitude_azimuth


def main(n: int = 1_000_000) -> None:
    warnings.simplefilter("ignore")
    rng = np.random.default_rng(3)
    # the pipeline first, so that the peak memory printed is its own
    bodies = np.array(known_bodies())
    seconds = rng.uniform(0, 365 * 86400, n)
    sights = pd.DataFrame({
        "utc": pd.Timestamp("2025-01-01", tz="UTC") + pd.to_timedelta(np.sort(seconds), unit="s"),
        "body": bodies[rng.integers(0, len(bodies), n)],
        "limb": "lower",
        "hs": rng.uniform(10, 80, n),
        "index_error_arcmin": rng.uniform(-2, 2, n),
        "eye_height_m": rng.uniform(2, 20, n),
        "dr_lat": rng.uniform(-60, 60, n),
        "dr_lon": rng.uniform(-180, 180, n),
    })
    before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    start = time.perf_counter()
    reduced = reduce_sights(sights)
    elapsed = time.perf_counter() - start
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"pipeline: {n:,} sights in {elapsed:.1f} s = {n / elapsed:,.0f} sights per second; "
          f"{(reduced.status != 'error').sum():,} reduced")
    print(f"peak memory of the process: {peak:,.0f} MB (before the pipeline: {before:,.0f} MB)")
    del sights, reduced


    m = 5_000_000
    lat, lon = rng.uniform(-70, 70, m), rng.uniform(-180, 180, m)
    gha, dec = rng.uniform(0, 360, m), rng.uniform(-60, 60, m)
    timings = []
    for _ in range(5):
        start = time.perf_counter()
        computed_altitude_azimuth(lat, lon, gha, dec)
        timings.append(time.perf_counter() - start)
    elapsed = min(timings)
    print(f"triangle (best of 5): {m:,} sights in {elapsed:.2f} s = {m / elapsed / 1e6:.1f} million sights per second")
    del lat, lon, gha, dec


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000)
