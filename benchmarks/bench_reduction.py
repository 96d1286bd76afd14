"""Speed of sight reduction: the triangle alone, the whole pipeline, and a million text sights through the CLI.

Targets: the triangle (Hc, Zn) at over 5 million sights per second (issue 3; issue 13 with the work
in cache-sized blocks); the whole per-sight pipeline on 1,000,000 numeric sights under 1.5 GB
(issue 3); and (issue 13) 1,000,000 sights with their angles written as text, through
`navred reduce --csv`, in under 60 s and under 1 GB of peak memory (the whole process tree's: the
command shares the blocks among forked processes).

The million text sights are the invented fleet log of scripts/make_fleet_log.py copied fifty
times, each copy with its Hs and DR moved by a few tenths of a minute (so that almost every angle
text is new) and its fix groups renamed: invented data, made in a temporary folder, for timing.

Run:  python benchmarks/bench_reduction.py [FOLDER]
"""

from __future__ import annotations

import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

from navred import reduce_sights
from navred.angles import format_angle, parse_angle
from navred.stars import known_bodies
from navred.triangle import computed_altitude_azimuth

ROOT = Path(__file__).resolve().parent.parent


def tree_pss_mb(pid: int) -> float:
    """The proportional set size of a process and all its descendants, in MB (0 once it has ended)."""
    total_kb, stack = 0, [pid]
    while stack:
        current = stack.pop()
        try:
            with open(f"/proc/{current}/smaps_rollup") as rollup:
                total_kb += int(next(line for line in rollup if line.startswith("Pss:")).split()[1])
            for task in os.listdir(f"/proc/{current}/task"):
                with open(f"/proc/{current}/task/{task}/children") as children:
                    stack += [int(c) for c in children.read().split()]
        except (OSError, StopIteration, ValueError):
            continue
    return total_kb / 1024


def text_log(folder: Path, rows: int = 1_000_000) -> Path:
    """The million-sight text log (built once into ``folder``)."""
    path = folder / f"fleet_{rows}.csv"
    if path.exists():
        return path
    base_path = folder / "fleet_sights.csv"
    if not base_path.exists():
        subprocess.run([sys.executable, str(ROOT / "scripts" / "make_fleet_log.py"), str(base_path)], check=True)
    base = pd.read_csv(base_path, dtype=str, keep_default_na=False)
    hs = np.array([parse_angle(v, "angle") if v else np.nan for v in base.hs])
    lat = np.array([parse_angle(v, "lat") for v in base.dr_lat])
    lon = np.array([parse_angle(v, "lon") for v in base.dr_lon])
    rng = np.random.default_rng(1)

    def text(values, kind):
        return [t.replace("°", "").replace("′", "") for t in format_angle(values, kind)]

    copies = []
    for k in range(int(np.ceil(rows / len(base)))):
        copy = base.copy()
        copy["hs"] = text(hs + rng.normal(0, 0.05, len(copy)), "signed")
        copy["dr_lat"] = text(lat + rng.normal(0, 0.05, len(copy)), "lat")
        copy["dr_lon"] = text(lon + rng.normal(0, 0.05, len(copy)), "lon")
        copy["fix_group"] = copy.fix_group + f"-c{k}"
        # short names, as a log kept by one office writes them (the file stays under navred's 128 MiB bound)
        copy["vessel"] = copy.vessel.str.replace(" (invented)", "").str.replace("Vessel ", "V")
        copy["observer"] = copy.observer.str.replace(" (invented)", "").str.replace("Observer ", "O")
        copies.append(copy)
    pd.concat(copies).iloc[:rows].to_csv(path, index=False)
    return path


def main(folder: str | None = None) -> None:
    warnings.simplefilter("ignore")
    work = Path(folder or tempfile.mkdtemp(prefix="navred-bench-"))
    work.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(3)

    m = 5_000_000
    lat, lon = rng.uniform(-70, 70, m), rng.uniform(-180, 180, m)
    gha, dec = rng.uniform(0, 360, m), rng.uniform(-60, 60, m)
    timings = []
    for _ in range(5):
        start = time.perf_counter()
        computed_altitude_azimuth(lat, lon, gha, dec)
        timings.append(time.perf_counter() - start)
    print(f"triangle: {m:,} sights, best of 5 {m / min(timings) / 1e6:.1f}, median "
          f"{m / statistics.median(timings) / 1e6:.1f} million sights per second")
    del lat, lon, gha, dec

    n = 1_000_000
    bodies = np.array(known_bodies())
    seconds = rng.uniform(0, 365 * 86400, n)
    sights = pd.DataFrame({
        "utc": pd.Timestamp("2025-01-01", tz="UTC") + pd.to_timedelta(np.sort(seconds), unit="s"),
        "body": bodies[rng.integers(0, len(bodies), n)], "limb": "lower", "hs": rng.uniform(10, 80, n),
        "index_error_arcmin": rng.uniform(-2, 2, n), "eye_height_m": rng.uniform(2, 20, n),
        "dr_lat": rng.uniform(-60, 60, n), "dr_lon": rng.uniform(-180, 180, n)})
    start = time.perf_counter()
    reduced = reduce_sights(sights)
    elapsed = time.perf_counter() - start
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"pipeline (API, numeric columns): {n:,} sights in {elapsed:.1f} s, {(reduced.status != 'error').sum():,} "
          f"reduced; peak memory of this process so far {peak:,.0f} MB")
    del sights, reduced

    path = text_log(work)
    runs, peaks = [], []
    # the command in a fresh interpreter; it shares the blocks among forked processes, so its memory is the
    # proportional set size (shared pages counted once) of the whole process tree, sampled every 0.1 s (Linux)
    for _ in range(2):
        start = time.perf_counter()
        with open(work / "reduced.csv", "wb") as out:
            process = subprocess.Popen([sys.executable, "-m", "navred", "reduce", str(path), "--csv"], stdout=out,
                                       stderr=subprocess.DEVNULL)
            peak = 0.0
            while process.poll() is None:
                peak = max(peak, tree_pss_mb(process.pid))
                time.sleep(0.1)
        if process.returncode != 0:
            raise SystemExit(f"navred reduce --csv failed ({process.returncode})")
        runs.append(time.perf_counter() - start)
        peaks.append(peak)
    child_peak = max(peaks)
    lines = sum(1 for _ in open(work / "reduced.csv", "rb")) - 1
    print(f"navred reduce --csv, {lines:,} sights with text angles ({path.stat().st_size / 2**20:.0f} MiB): "
          f"{min(runs):.1f} s best, {statistics.median(runs):.1f} s median of {len(runs)}; peak memory "
          f"{child_peak:,.0f} MB")
    print(f"(files in {work})")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else None)
