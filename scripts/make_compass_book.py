"""Generate the invented compass error book in sample_sights/compass_book.csv.

INVENTED DATA. The ketch "Moth Orchid" (sample_sights/README.md) swings ship at anchor in an invented
roadstead at 43° 20.0′ N, 008° 25.0′ W on the morning of 2026-03-25, before her passage: she steadies on
eight headings by her steering compass, 45° apart, ten minutes each, and on each one the Sun's bearing is
taken by the steering compass and by the gyro repeater. The Sun's true bearing is skyfield's (a test-only
reference, independent of navred); the readings carry a planted error:

- gyro: 1.0° high, with 0.2° of reading noise;
- steering compass: the variation 4.0° W and a deviation of A 0.5°, B 3.0°, C −2.0°, D 1.0°, E 0.3° (east +) on
  the compass heading, with 0.3° of reading noise.

navred compass-book recovers them (tests/test_compass.py).

Run:  python scripts/make_compass_book.py   (needs the test extras)
"""

from __future__ import annotations

import importlib.resources
import math
from pathlib import Path

import numpy as np
import pandas as pd
from skyfield.api import load, wgs84

OUT = Path(__file__).resolve().parent.parent / "sample_sights" / "compass_book.csv"
LAT, LON = 43 + 20.0 / 60, -(8 + 25.0 / 60)
START = pd.Timestamp("2026-03-25T09:00:00Z")
GYRO_HIGH_DEG = 1.0
VARIATION_DEG = -4.0  # 4° W
COEFFICIENTS_DEG = {"A": 0.5, "B": 3.0, "C": -2.0, "D": 1.0, "E": 0.3}


def deviation_on(heading_deg: float) -> float:
    h = math.radians(heading_deg)
    c = COEFFICIENTS_DEG
    return c["A"] + c["B"] * math.sin(h) + c["C"] * math.cos(h) + c["D"] * math.sin(2 * h) + c["E"] * math.cos(2 * h)


def main() -> None:
    ts = load.timescale(builtin=True)
    eph = load(str(importlib.resources.files("skyfield_data") / "data" / "de421.bsp"))
    place = eph["earth"] + wgs84.latlon(LAT, LON)
    rng = np.random.default_rng(1853)
    rows = []
    for k, heading in enumerate(range(0, 360, 45)):
        when = START + pd.Timedelta(minutes=10 * k)
        later = when + pd.Timedelta(seconds=30)  # the gyro's bearing half a minute after the compass's
        true, true_later = (place.at(ts.from_datetime(t.to_pydatetime())).observe(eph["sun"]).apparent().altaz()[1].degrees
                            for t in (when, later))
        # true = compass + deviation + variation (east +): the compass reads true − deviation − variation
        compass = (true - deviation_on(heading) - VARIATION_DEG + rng.normal(0.0, 0.3)) % 360.0
        gyro = (true_later + GYRO_HIGH_DEG + rng.normal(0.0, 0.2)) % 360.0
        stamp = when.strftime("%Y-%m-%dT%H:%M:%SZ")
        common = {"utc": stamp, "body": "Sun", "lat": "43 20.0 N", "lon": "008 25.0 W"}
        rows.append({**common, "compass": "steering", "bearing": f"{compass:.1f}", "heading": f"{heading:.0f}",
                     "variation": "4.0 W", "remarks": f"swinging ship, heading {heading:03d} by steering compass"})
        rows.append({**common, "utc": later.strftime("%Y-%m-%dT%H:%M:%SZ"),
                     "compass": "gyro", "bearing": f"{gyro:.1f}", "heading": "", "variation": "",
                     "remarks": "gyro repeater, same round"})
    pd.DataFrame(rows, columns=["utc", "body", "compass", "bearing", "heading", "variation", "lat", "lon",
                                "remarks"]).to_csv(OUT, index=False)
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
