"""Time the workbook, stage by stage, on an invented fleet's 20,000-sight log; and end to end.

Targets (issue 13): `navred workbook` on a 20,000-sight log (about 4,700 fix groups) with the
plotting sheets written as files, under 20 s end to end; the invented training voyage's
workbook with its pictures, under 10 s. The fleet's plotting sheets are written as SVG (about
a millisecond each); a PNG costs some tens of milliseconds (the time is printed), so thousands
of PNG sheets take minutes whatever the rest does.

The fleet log is invented (scripts/make_fleet_log.py: fourteen vessels, two observers each,
55 days, angles written as text) and is built once into the folder given (default: a
temporary folder), then reused. Each stage below is one step of what `navred workbook` does;
the end-to-end figures run the command itself in a fresh process, three times, and print the
median.

Memory (issue 26): the largest process of `navred workbook` (pictures embedded, as by default) for 10,000,
20,000 and 40,000 sights (the fleet log, and its first half, and two copies of it with their groups
renamed): target under 300 MB at 20,000 sights and growing under 10 KB a sight. The sheets' rows are
made a few thousand at a time and written to a temporary file, then streamed into the workbook.

Run:  python benchmarks/bench_workbook.py [FOLDER]
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import tempfile
import time
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def timed(label: str, function, width: int = 44):
    start = time.perf_counter()
    result = function()
    print(f"  {label:<{width}} {time.perf_counter() - start:6.2f} s")
    return result


def end_to_end(arguments: list[str], runs: int = 3) -> float:
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        subprocess.run([sys.executable, "-m", "navred", *arguments], check=True, capture_output=True)
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def main(folder: str | None = None) -> None:
    warnings.simplefilter("ignore")
    work = Path(folder or tempfile.mkdtemp(prefix="navred-bench-"))
    work.mkdir(parents=True, exist_ok=True)
    log_path = work / "fleet_sights.csv"
    if not log_path.exists():
        subprocess.run([sys.executable, str(ROOT / "scripts" / "make_fleet_log.py"), str(log_path)], check=True)

    from navred.io.logbook import read_sight_log
    from navred.io.workbook import Pictures
    from navred.jobs.frames import series_columns
    from navred.jobs.plotfiles import write_plots
    from navred.jobs.sights import reduce_sights
    from navred.jobs.voyage import VoyageResult, _next_twilight_plan, _rejected, fix_groups
    from navred.jobs.voyagebook import write_workbook

    print(f"the workbook of {log_path} by stage:")
    log = timed("read and check the log", lambda: read_sight_log(log_path))
    reduced = timed("reduce every sight", lambda: reduce_sights(log.table))
    rejected = _rejected(log, reduced)
    series = timed("check the series", lambda: series_columns(reduced))
    for column, values in series.items():
        reduced[column] = values
    groups = timed("fix every group", lambda: fix_groups(reduced))
    events, plan = timed("plan the next twilight", lambda: _next_twilight_plan(groups, reduced))
    voyage = VoyageResult(str(log_path), log, reduced, rejected, tuple(groups), {"run": "benchmark"}, plan, events)
    print(f"  ({len(reduced):,} sights, {sum(g.fix is not None for g in groups):,} fixes of {len(groups):,} groups)")
    timed("write the workbook (pictures as files)",
          lambda: write_workbook(voyage, work / "fleet.xlsx", plots=Pictures(embed=False, folder=str(work / "plots"))))
    timed("draw every plotting sheet as an SVG file", lambda: write_plots(voyage, work / "plots", ("svg",)))
    sample = [g for g in groups if g.fix is not None][:100]
    start = time.perf_counter()
    write_plots(voyage, work / "plots-png", ("png",), groups=sample)
    print(f"  (a plotting sheet as PNG takes {(time.perf_counter() - start) / len(sample) * 1000:.0f} ms: "
          f"{len(sample)} drawn)")

    print("the largest process of navred workbook (pictures embedded), by the log's sights:")
    import pandas as pd
    from timing import PYTHON, largest_child_mb

    base = pd.read_csv(log_path, dtype=str, keep_default_na=False)
    logs = {10_000: base.iloc[:10_000], 20_000: base,
            40_000: pd.concat([base, base.assign(fix_group=base.fix_group + "-copy")], ignore_index=True)}
    sizes = {}
    for count, frame in logs.items():  # (smallest first: the figure is the largest any child has reached)
        path = work / f"fleet_{count}.csv"
        frame.to_csv(path, index=False)
        sizes[count] = largest_child_mb([PYTHON, "-m", "navred", "workbook", str(path), "-o",
                                         str(work / f"fleet_{count}.xlsx")])
        print(f"  {count:>6,} sights: {sizes[count]:6.0f} MB")
    print(f"  growth from 10,000 to 40,000 sights: {(sizes[40_000] - sizes[10_000]) * 1024 / 30_000:.1f} KB a sight "
          "(target 10 KB; 300 MB at 20,000)")

    print("end to end (median of 3 runs of the command):")
    fleet = end_to_end(["workbook", str(log_path), "-o", str(work / "fleet-e2e.xlsx"), "--pictures", "files",
                        "--plots", str(work / "plots-e2e"), "--plot-formats", "svg"])
    print(f"  navred workbook, 20,000-sight fleet log, plotting sheets as SVG files  {fleet:6.2f} s")
    training = end_to_end(["workbook", str(ROOT / "sample_sights" / "training_sights.csv"), "-o",
                           str(work / "training.xlsx")])
    print(f"  navred workbook, the invented training voyage, pictures embedded       {training:6.2f} s")
    print(f"(files in {work})")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else None)
