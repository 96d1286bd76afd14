"""Speed of the least-squares fix.

Targets (issue 4): a fix from 10 sights in under 2 ms; a batch of 10,000 independent fixes
(a fleet's logbook archive) in under 5 seconds on one core. Issue 13: 10,000 fix groups
through the workbook's path (navred.jobs.voyage.fix_groups: the chart rule, one padded solve, the
statistics, blunder refits and the result of every group) in under 1 s. Issue 26: the same 10,000
groups through the public batched fix (navred.fix_positions) in under 1 s, and one group through
navred.fix_position in under 2 ms; and groups of 2 to 12 sights in one table (each size solved apart, so that
each group gets what it gets alone). Prints each as a median of several runs. The
sights are synthetic and exact (Ho computed at a random true position, the DR 10-30 nm away,
one sight in 20 given a 6′ blunder in the groups' table); the one fix is timed also with a sextant's
scatter on the altitudes and over a run (the σ of a round over a run is a root sought step by step, and
sights with no scatter at all once took four times the steps).

Run:  python benchmarks/bench_fix.py
"""

from __future__ import annotations

import statistics
import time
import warnings

import numpy as np
import pandas as pd
from timing import load_average

from navred.jobs.frames import fix_position, fix_positions
from navred.jobs.voyage import fix_groups
from navred.leastsquares import solve_fixes
from navred.sailings import move_position
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


def one_fix(reduced: pd.DataFrame, what: str, repeats: int = 200) -> None:
    """Print the median wall and processor time of one fix_position call on ``reduced`` (5 rounds)."""
    fix_position(reduced)
    rounds, cpu = [], []
    for _ in range(5):
        start, start_cpu = time.perf_counter(), time.process_time()
        for _ in range(repeats):
            fix_position(reduced)
        rounds.append((time.perf_counter() - start) / repeats)
        cpu.append((time.process_time() - start_cpu) / repeats)
    print(f"{what}: median {statistics.median(rounds) * 1000:.2f} ms (min {min(rounds) * 1000:.2f}, 5 rounds of "
          f"{repeats}; target 2 ms); processor time median {statistics.median(cpu) * 1000:.2f} ms (min "
          f"{min(cpu) * 1000:.2f}); {load_average()}")


def main() -> None:
    warnings.simplefilter("ignore")
    rng = np.random.default_rng(4)
    gha, dec, ho, dr_lat, dr_lon = synthetic(1, 10, rng)
    reduced = pd.DataFrame({"gha_deg": gha[0], "dec_deg": dec[0], "ho_deg": ho[0],
                            "sight_utc": pd.Timestamp("2025-06-01T20:00Z") + pd.to_timedelta(np.arange(10), unit="min"),
                            "dr_lat_deg": dr_lat[0], "dr_lon_deg": dr_lon[0], "status": "ok"})
    one_fix(reduced, "one fix from 10 sights (fix_position, with its statistics)")
    # the same sights as a navigator's: a sextant's scatter (σ 0.5′, seeded), then over a run at 12 kn as well
    noisy = reduced.assign(ho_deg=reduced["ho_deg"] + np.random.default_rng(9).normal(0, 0.5 / 60, 10))
    one_fix(noisy, "the same, the altitudes with 0.5′ of scatter")
    one_fix(noisy.assign(course_deg=45.0, speed_kn=12.0), "the same, over a 9-minute run at 12 kn")

    gha, dec, ho, dr_lat, dr_lon = synthetic(10_000, 10, rng)
    start = time.perf_counter()
    batch = solve_fixes(gha, dec, ho, dr_lat, dr_lon)
    elapsed = time.perf_counter() - start
    print(f"10,000 independent fixes of 10 sights (solve_fixes, vectorised): {elapsed:.2f} s, "
          f"{batch.iterations} iterations, all converged: {bool(batch.converged.all())}")

    groups, per_group = 10_000, 4
    gha, dec, ho, dr_lat, dr_lon = synthetic(groups, per_group, rng)
    ho = ho + np.where(rng.uniform(size=ho.shape) < 0.05, 0.1, 0.0)  # a 6′ blunder in one sight of 20
    start_time = pd.Timestamp("2025-06-01T20:00Z")
    table = pd.DataFrame({
        "gha_deg": gha.ravel(), "dec_deg": dec.ravel(), "ho_deg": ho.ravel(), "status": "ok",
        "sight_utc": start_time + pd.to_timedelta(np.tile(np.arange(per_group), groups) * 60
                                                  + np.repeat(np.arange(groups), per_group) * 7200, unit="s"),
        "dr_lat_deg": np.repeat(dr_lat, per_group), "dr_lon_deg": np.repeat(dr_lon, per_group),
        "course_deg": 90.0, "speed_kn": 10.0, "chart_lat_deg": np.nan, "chart_lon_deg": np.nan,
        "fix_group": np.repeat([f"g{k}" for k in range(groups)], per_group), "row": np.arange(groups * per_group) + 2})
    fix_groups(table.iloc[:40])
    times = []
    for _ in range(3):
        start = time.perf_counter()
        fixed = fix_groups(table)
        times.append(time.perf_counter() - start)
    print(f"{groups:,} fix groups of {per_group} sights through the workbook's path (fix_groups): median "
          f"{statistics.median(times):.2f} s, {sum(g.fix is not None for g in fixed):,} fixes, "
          f"{sum(g.fix is not None and g.fix.without_outliers is not None for g in fixed):,} refitted without a blunder")
    fix_positions(table.iloc[:40])
    times, cpu = [], []
    for _ in range(3):
        start, start_cpu = time.perf_counter(), time.process_time()
        batched = fix_positions(table)
        times.append(time.perf_counter() - start)
        cpu.append(time.process_time() - start_cpu)
    print(f"the same {groups:,} groups through the public batched fix (navred.fix_positions): median "
          f"{statistics.median(times):.2f} s (min {min(times):.2f}; target 1 s), processor time median "
          f"{statistics.median(cpu):.2f} s, {len(batched.results):,} fixes; {load_average()}")
    mixed_sizes(rng)


def mixed_sizes(rng, groups: int = 10_000) -> None:
    """Print the processor time of fix_positions on groups of 2 to 12 sights in one table (with 0.5′ of scatter,
    a run at 10 kn in two groups of three): each size is solved apart, side by side with groups of its size."""
    sizes = rng.integers(2, 13, groups)
    g = np.repeat(np.arange(groups), sizes)
    within = np.arange(g.size) - np.repeat(np.cumsum(sizes) - sizes, sizes)
    gha, dec, ho, dr_lat, dr_lon = synthetic(groups, 12, rng)
    keep = within  # each group's first sights of its twelve
    table = pd.DataFrame({
        "gha_deg": gha[g, keep], "dec_deg": dec[g, keep],
        "ho_deg": ho[g, keep] + rng.normal(0, 0.5 / 60, g.size), "status": "ok",
        "sight_utc": pd.Timestamp("2025-06-01T20:00Z") + pd.to_timedelta(within * 60 + g * 7200, unit="s"),
        "dr_lat_deg": dr_lat[g], "dr_lon_deg": dr_lon[g],
        "course_deg": np.where(g % 3 == 0, np.nan, 90.0), "speed_kn": np.where(g % 3 == 0, np.nan, 10.0),
        "fix_group": np.array([f"g{k}" for k in range(groups)])[g], "row": np.arange(g.size) + 2})
    fix_positions(table.iloc[:100])
    cpu = []
    for _ in range(3):
        start_cpu = time.process_time()
        fix_positions(table)
        cpu.append(time.process_time() - start_cpu)
    print(f"{groups:,} groups of 2 to 12 sights in one table (navred.fix_positions): processor time median "
          f"{statistics.median(cpu):.2f} s (min {min(cpu):.2f}, 3 runs); {load_average()}")


if __name__ == "__main__":
    main()
