"""Speed of sight reduction: the triangle alone, a DataFrame of numbers through the API, and text logs
through `navred reduce --csv`, each against its target (issue 26), as ratios and medians measured in one run.

Targets: the triangle (Hc, Zn) at over 5 million sights per second; a DataFrame of 1,000,000 numeric sights
through `navred.reduce_sights` in under 10 s and 1.2 GB (the whole process tree: the blocks are shared
among forked processes); `navred reduce --csv` on 200,000 text sights within 2 times of pandas reading the
same file as text and writing it back; 1,000,000 text sights in under 15 s and 1 GB for the whole process
tree on 2 cores (the parent looks at the file a piece at a time and never holds it whole).

The text sights are the invented fleet log of scripts/make_fleet_log.py copied fifty times, each copy with
its Hs and DR moved by a few tenths of a minute (so that almost every angle text is new) and its fix groups
renamed; the numeric sights are random: invented data, made in a temporary folder, for timing only.

Run:  python benchmarks/bench_reduction.py [FOLDER] [RUNS] [numeric]
      (FOLDER '-' for a temporary one; 'numeric' runs the triangle and the DataFrame only)
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
from timing import PYTHON, load_average, paired, run

from navred.angles import format_angle, parse_angle
from navred.triangle import computed_altitude_azimuth

ROOT = Path(__file__).resolve().parent.parent


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


NUMERIC = """
import resource, sys, time, warnings
import numpy as np, pandas as pd
warnings.simplefilter("ignore")
from navred import reduce_sights
from navred.stars import known_bodies
n = int(sys.argv[1])
rng = np.random.default_rng(3)
bodies = np.array(known_bodies())
seconds = rng.uniform(0, 365 * 86400, n)
sights = pd.DataFrame({
    "utc": pd.Timestamp("2025-01-01", tz="UTC") + pd.to_timedelta(np.sort(seconds), unit="s"),
    "body": bodies[rng.integers(0, len(bodies), n)], "limb": "lower", "hs": rng.uniform(10, 80, n),
    "index_error_arcmin": rng.uniform(-2, 2, n), "eye_height_m": rng.uniform(2, 20, n),
    "dr_lat": rng.uniform(-60, 60, n), "dr_lon": rng.uniform(-180, 180, n)})
start, own = time.perf_counter(), time.process_time()
reduced = reduce_sights(sights)
wall, own = time.perf_counter() - start, time.process_time() - own
workers = resource.getrusage(resource.RUSAGE_CHILDREN)
print(f"{wall:.3f} {own:.3f} {workers.ru_utime + workers.ru_stime:.3f} {(reduced.status != 'error').sum()}")
"""
PANDAS_TEXT = "import sys, pandas as pd; pd.read_csv(sys.argv[1], dtype=str, keep_default_na=False).to_csv(sys.argv[2], index=False)"


def numeric(work: Path, runs: int) -> None:
    """A DataFrame of a million numbers through the API, in a process of its own (its tree's memory and
    processor time: the blocks are shared among forked processes), ``runs`` times."""
    script = work / "numeric.py"
    script.write_text(NUMERIC)
    calls, parents, workers, wholes, peaks, cpus, loads = [], [], [], [], [], [], []
    for _ in range(runs):
        out = work / "numeric.out"
        with open(out, "wb") as sink:
            measured = run([PYTHON, str(script), "1000000"], stdout=sink)
        call, parent, children, _ = (float(v) for v in out.read_text().split())
        calls.append(call)
        parents.append(parent)
        workers.append(children)
        wholes.append(measured.seconds)
        peaks.append(measured.tree_peak_mb)
        cpus.append(measured.cpu_seconds)
        loads.append(os.getloadavg()[0])
    median = statistics.median
    print(f"API, a DataFrame of 1,000,000 numeric sights (navred.reduce_sights), {runs} runs: the call {median(calls):.1f} s "
          f"wall (min {min(calls):.1f}, max {max(calls):.1f}; target 10 s); its processor time {median(parents):.1f} s "
          f"in the first process and {median(workers):.1f} s in the forked ones (medians); the whole command "
          f"{median(wholes):.1f} s wall and {median(cpus):.1f} s of processor time (the frame made, the imports "
          f"included); the whole process tree's peak median {median(peaks):,.0f} MB, max {max(peaks):,.0f} MB (the "
          f"frame made in it included; target 1,200 MB); load average over the runs {min(loads):.1f}-{max(loads):.1f} "
          f"(1 min); {load_average()}")


def main(folder: str | None = None, runs: int = 3, parts: str = "all") -> None:
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

    numeric(work, runs)
    if parts == "numeric":
        return

    # 200,000 text sights against pandas reading the same text and writing it back, in turn
    path = text_log(work)
    short = work / "fleet_200000.csv"
    if not short.exists():
        pd.read_csv(path, dtype=str, keep_default_na=False, nrows=200_000).to_csv(short, index=False)
    pair = paired([PYTHON, "-m", "navred", "reduce", str(short), "--csv"],
                  [PYTHON, "-c", PANDAS_TEXT, str(short), str(work / "pandas.csv")], runs,
                  a_stdout=str(work / "reduced_200000.csv"))
    print(pair.line("navred reduce --csv, 200,000 text sights", "pandas reading and writing the same text")
          + f" (target 2); {load_average()}")

    # a million text sights: time and the whole process tree's memory
    measured = [run([PYTHON, "-m", "navred", "reduce", str(path), "--csv"], stdout=open(work / "reduced.csv", "wb"))
                for _ in range(max(2, runs - 1))]
    lines = sum(1 for _ in open(work / "reduced.csv", "rb")) - 1
    print(f"navred reduce --csv, {lines:,} sights with text angles ({path.stat().st_size / 2**20:.0f} MiB): "
          f"median {statistics.median(m.seconds for m in measured):.1f} s (min {min(m.seconds for m in measured):.1f}; "
          f"target 15 s); processor time median {statistics.median(m.cpu_seconds for m in measured):.1f} s (every "
          f"process of the tree); whole process tree's peak {max(m.tree_peak_mb for m in measured):,.0f} MB (target "
          f"1,000 MB); {load_average()}")
    print(f"(files in {work})")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 and sys.argv[1] != "-" else None,
         int(sys.argv[2]) if len(sys.argv) > 2 else 3, sys.argv[3] if len(sys.argv) > 3 else "all")
