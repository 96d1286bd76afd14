"""Speed of the least-squares fix.

Targets (issue 4): a fix from 10 sights in under 2 ms; a batch of 10,000 independent fixes
(a fleet's logbook archive) in under 5 seconds on one core. Prints both. The sights are
synthetic and exact (Ho computed at a random true position, the DR 10-30 nm away): the
timing is of the solver, which iterates the same way on real sights.

Run:  python benchmarks/bench_fix.py
"""

from __future__ import annotations

import time

import numpy as np
import pandas as pd

from navred.fix import move_position, solve_fixes
from navred.frames import fix_position
from navred.triangle import computed_altitude_azimuth


def synthetic(fixes: int, sights: int, rng):
    lat = rng.uniform(-60, 60, fixes)
    lon = rng.uniform(-180, 180, fixes)
    gha = rng.uniform(0, 360, (fixes, sights))
    dec = rng.uniform(-50, 50, (fixes, sights))
    # keep bodies above the horizon: place each GP within 70° of the observer
    lha = rng.uniform(-70, 70, (fixes, sights))
    gha = np.mod(lha - lon[:, None], 360.0)
    dec = np.clip(lat[:, None] + rng.uniform(-60, 60, (fixes, sights)), -60, 60)
    ho, _ = computed_altitude_azimuth(lat[:, None], lon[:, None], gha, dec)
    dr_lat, dr_lon = move_position(lat, lon, rng.uniform(-20, 20, fixes), rng.uniform(-20, 20, fixes))
    return gha, dec, ho, dr_lat, dr_lon


def main() -> None:
    rng = np.random.default_rng(4)
    gha, dec, ho, dr_lat, dr_lon = synthetic(1, 10, rng)
    reduced = pd.DataFrame({"gha_deg": gha[0], "dec_deg": dec[0], "ho_deg": ho[0],
                            "sight_utc": pd.Timestamp("2025-06-01T20:00Z") + pd.to_timedelta(np.arange(10), unit="min"),
                            "dr_lat_deg": dr_lat[0], "dr_lon_deg": dr_lon[0], "status": "ok"})
    fix_position(reduced)
    repeats = 200
    start = time.perf_counter()
    for _ in range(repeats):
        fix_position(reduced)
    one = (time.perf_counter() - start) / repeats
    print(f"one fix from 10 sights (fix_position, with its statistics): {one * 1000:.2f} ms")

    gha, dec, ho, dr_lat, dr_lon = synthetic(10_000, 10, rng)
    start = time.perf_counter()
    batch = solve_fixes(gha, dec, ho, dr_lat, dr_lon)
    elapsed = time.perf_counter() - start
    print(f"10,000 independent fixes of 10 sights (solve_fixes, vectorised): {elapsed:.2f} s, "
          f"{batch.iterations} iterations, all converged: {bool(batch.converged.all())}")


if __name__ == "__main__":
    main()
