"""Write sample_sights/day_at_sea.csv: one ship's day of sights as a master keeps it (INVENTED demo data), for
docs/sea-routine.md: the departure and the ship's clocks (ZD +2), morning stars at nautical twilight, a Sun line
in the forenoon, the Sun at its meridian passage, a change of course in the afternoon, evening stars, and the
destination for the noon report.

The ship is sailed outside navred (scripts/make_passage.py: fourth-order Runge-Kutta on the WGS 84 ellipsoid,
with a current of 0.8 kn setting 200° the log does not enter); each sight is skyfield's at the true position with
0.4′ of seeded sextant noise; every round is taken when the sky allows it (the stars with the Sun 7° below the
horizon at the ship, the noon Sun at its meridian passage there).

Run: python scripts/make_day_at_sea.py (needs the test extras: skyfield, skyfield-data).
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
import make_passage as passage  # noqa: E402

OUT = Path(__file__).resolve().parent.parent / "sample_sights"
VESSEL = "Moth Orchid (invented)"
START = pd.Timestamp("2026-06-20T04:00:00Z")
DEPARTURE = (39.5, -28.0)
PLAN = [(START, 250.0, 11.0), (pd.Timestamp("2026-06-20T17:30:00Z"), 235.0, 11.0)]
DESTINATION = (36.95, -37.5)  # invented: a position four days on


def current(t_h):
    return 200.0, 0.8


def main() -> None:
    from importlib.resources import files

    from skyfield.api import load

    from tests.conftest import skyfield_sight

    ts = load.timescale(builtin=True)
    eph = load(str(files("skyfield_data") / "data" / "de421.bsp"))
    rng = np.random.default_rng(620)
    until = START + pd.Timedelta(hours=20)
    track = passage.sail(START, *DEPARTURE, PLAN, current, until)
    stamp = "%Y-%m-%dT%H:%M:%SZ"
    rows = [{"utc": START.strftime(stamp), "entry": "departure", "dr_lat": DEPARTURE[0], "dr_lon": DEPARTURE[1],
             "course": PLAN[0][1], "speed": PLAN[0][2]},
            {"utc": START.strftime(stamp), "entry": "clocks", "clocks": "+2"},
            {"utc": START.strftime(stamp), "entry": "destination", "dr_lat": DESTINATION[0],
             "dr_lon": DESTINATION[1]},
            {"utc": PLAN[1][0].strftime(stamp), "entry": "course", "course": PLAN[1][1], "speed": PLAN[1][2]}]
    rounds = passage.sky_rounds(ts, eph, track, START, until)
    noon = next(when for when, kind in rounds if kind == "noon")
    rounds.append((noon - pd.Timedelta(hours=3, minutes=10), "forenoon"))
    names = {"stars": None, "noon": "noon Sun", "forenoon": "forenoon Sun"}
    for when, kind in sorted(rounds):
        lat, lon = passage.position_at(track, when)
        if kind == "stars":
            group = "morning stars" if when.hour < 12 else "evening stars"
            for k, star in enumerate(s["body"] for s in passage.star_round(ts, eph, when, lat, lon)):
                at = when + pd.Timedelta(minutes=2 * k)  # a star every two minutes, each at its own position
                t_lat, t_lon = passage.position_at(track, at)
                sight = skyfield_sight(ts, eph, star, at, t_lat, t_lon, eye_height_m=9.0)
                rows.append({"utc": at.strftime(stamp), "body": star,
                             "hs": round(sight["hs"] + rng.normal(0.0, 0.4) / 60.0, 5), "eye_height_m": 9.0,
                             "fix_group": group})
        else:
            sight = skyfield_sight(ts, eph, "Sun", when, lat, lon, limb="lower", eye_height_m=9.0)
            rows.append({"utc": when.strftime(stamp), "body": "Sun", "limb": "lower",
                         "hs": round(sight["hs"] + rng.normal(0.0, 0.4) / 60.0, 5), "eye_height_m": 9.0,
                         "fix_group": names[kind]})
    log = pd.DataFrame(rows)
    log["vessel"] = VESSEL
    log["remarks"] = "INVENTED demo"
    log.to_csv(OUT / "day_at_sea.csv", index=False)
    truth = track.iloc[::10]
    truth.assign(utc=truth.utc.dt.strftime(stamp)).to_csv(OUT / "day_at_sea_truth.csv", index=False)
    print(f"wrote day_at_sea.csv and day_at_sea_truth.csv to {OUT}")


if __name__ == "__main__":
    main()
