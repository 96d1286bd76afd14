"""Speed of the training report.

Target (issue 7): a training report for a 60-day voyage with 20 observers and 20,000 sights
in under 10 seconds. The sights are synthetic (random stars and the Sun at random times
along a DR track, Ho made equal to Hc at the track plus each observer's personal error and
noise); the timing covers reducing them and marking every sight and fix against the track.

Run:  python benchmarks/bench_training.py
"""

from __future__ import annotations

import time
import warnings

import numpy as np
import pandas as pd

from navred import reduce_sights
from navred.io.track import ReferenceTrack
from navred.jobs.training import training_report
from navred.sailings import move_position
from navred.stars import known_bodies


def main(n: int = 20_000, observers: int = 20) -> None:
    warnings.simplefilter("ignore")
    rng = np.random.default_rng(60)
    start = pd.Timestamp("2026-11-01T00:00Z")
    track_times = pd.date_range(start, start + pd.Timedelta(days=60), freq="10min")
    hours = (track_times - start).total_seconds().to_numpy() / 3600
    lat, lon = move_position(30.0, -20.0, 6.0 * hours * np.cos(np.radians(250)), 6.0 * hours * np.sin(np.radians(250)))
    track = ReferenceTrack(track_times.tz_convert(None).to_numpy().astype("datetime64[ns]"), np.asarray(lat),
                           np.asarray(lon), "(synthetic)", pd.DataFrame(columns=["point", "field", "value", "reason"]))
    when = start + pd.to_timedelta(np.sort(rng.uniform(0, 60 * 86400, n)), unit="s")
    sight_hours = (when - start).total_seconds().to_numpy() / 3600
    s_lat, s_lon = move_position(30.0, -20.0, 6.0 * sight_hours * np.cos(np.radians(250)),
                                 6.0 * sight_hours * np.sin(np.radians(250)))
    bodies = np.array(known_bodies()[6:] + ["Sun"], dtype=object)
    sights = pd.DataFrame({"utc": when, "body": bodies[rng.integers(0, len(bodies), n)], "limb": "lower",
                           "hs": 40.0, "eye_height_m": 3.0, "dr_lat": s_lat, "dr_lon": s_lon,
                           "observer": [f"Cadet {k:02d}" for k in rng.integers(0, observers, n)]})
    started = time.perf_counter()
    reduced = reduce_sights(sights)
    report = training_report(reduced, track)
    elapsed = time.perf_counter() - started
    print(f"{n:,} sights, {observers} observers, 60 days: reduced and marked in {elapsed:.2f} s "
          f"({len(report.observers)} observer rows, {len(report.by_body)} by kind of body)")
    import tempfile
    from pathlib import Path

    from navred.io.logbook import read_sight_log

    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "log.csv"
        sights.assign(utc=sights.utc.dt.strftime("%Y-%m-%dT%H:%M:%SZ")).to_csv(path, index=False)
        started = time.perf_counter()
        read_sight_log(path)
        print(f"reading and checking the same log from CSV (read_sight_log): {time.perf_counter() - started:.2f} s")


if __name__ == "__main__":
    main()
