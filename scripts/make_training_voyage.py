"""Generate the invented training voyage in sample_sights/: a log, and the reference track as GPX,
NMEA and CSV.

INVENTED DATA. The sail-training brigantine "Grey Shearwater" (she does not exist), her
watch of three invented cadets and a passage of 8 days from 36° 00′ N 010° 00′ W on 230° at
7 knots: star rounds in morning and evening twilight (timed by the Sun at the ship), Sun sights by day and
a noon series around the Sun's meridian passage at the ship. Each cadet's sights are synthesized with
skyfield at the true position (the reference track) with a personal error and scatter of their own:

    Cadet Ansel  +1.5′ personal error, 0.6′ scatter
    Cadet Birch   0.0′,                0.8′
    Cadet Corrie -0.8′,                0.5′

plus the occasional blunder (about one sight in thirty off by 6-10′). The GPX track is
written with gpxpy and the NMEA file with pynmea2 (general-purpose libraries, not navred).

Run:  python scripts/make_training_voyage.py   (needs the test extras and gpxpy, pynmea2)
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from tests.conftest import (  # noqa: E402  (the same independent synthesizer and sailings the tests use)
    offset_position,
    rhumb_integrated,
    skyfield_sight,
)

OUT = ROOT / "sample_sights"
OBSERVERS = {"Cadet Ansel": (1.5, 0.6), "Cadet Birch": (0.0, 0.8), "Cadet Corrie": (-0.8, 0.5)}
START = pd.Timestamp("2026-10-05T00:00:00Z")
LAT0, LON0, COURSE, SPEED = 36.0, -10.0, 230.0, 7.0
STARS_EVENING = ["Vega", "Altair", "Arcturus", "Deneb", "Fomalhaut", "Kochab"]
STARS_MORNING = ["Sirius", "Capella", "Procyon", "Aldebaran", "Regulus", "Dubhe"]


def true_position(when: pd.Timestamp):
    """The ship on the rhumb line she steers, sailed on WGS 84 outside navred (tests/conftest.py's RK4)."""
    hours = (when - START).total_seconds() / 3600.0
    return rhumb_integrated(LAT0, LON0, COURSE, SPEED * hours)


#: The star rounds are taken in twilight: the morning round begins with the Sun 8.5° below the horizon and
#: ends near 6°, the evening round begins with it 4° below (the sky dark enough for the stars, the sea
#: horizon still sharp; common practice).
MORNING_SUN_DEG, EVENING_SUN_DEG = -8.5, -4.0


def sun_altitude_deg(ts, eph, when: pd.Timestamp) -> float:
    """skyfield's altitude of the Sun's centre (no refraction) at the ship's true position."""
    from skyfield.api import wgs84

    lat, lon = (float(v) for v in true_position(when))
    t = ts.from_datetime(when.to_pydatetime())
    return float((eph["earth"] + wgs84.latlon(lat, lon)).at(t).observe(eph["sun"]).apparent().altaz()[0].degrees)


def sun_at(ts, eph, start: pd.Timestamp, end: pd.Timestamp, altitude_deg: float) -> pd.Timestamp:
    """The instant (to the second) between start and end when the Sun, rising or setting monotonically over
    the window, stands at ``altitude_deg`` at the ship: bisection on skyfield's altitude."""
    rising = sun_altitude_deg(ts, eph, end) > sun_altitude_deg(ts, eph, start)
    for _ in range(30):
        middle = start + (end - start) / 2
        above = sun_altitude_deg(ts, eph, middle) > altitude_deg
        if above == rising:
            end = middle
        else:
            start = middle
    return start.round("s")


def sun_hour_angle_h(ts, eph, when: pd.Timestamp) -> float:
    """skyfield's local hour angle of the Sun (hours, −12 to 12) at the ship's true position."""
    from skyfield.api import wgs84

    lat, lon = (float(v) for v in true_position(when))
    t = ts.from_datetime(when.to_pydatetime())
    hours = (eph["earth"] + wgs84.latlon(lat, lon)).at(t).observe(eph["sun"]).apparent().hadec()[0].hours
    return float((hours + 12.0) % 24.0 - 12.0)


def meridian_passage(ts, eph, start: pd.Timestamp, end: pd.Timestamp) -> pd.Timestamp:
    """The instant (to the second) between start and end when the Sun crosses the ship's meridian (its hour
    angle 0 at the ship as she sails): bisection on skyfield's hour angle."""
    for _ in range(30):
        middle = start + (end - start) / 2
        if sun_hour_angle_h(ts, eph, middle) < 0:
            start = middle
        else:
            end = middle
    return start.round("s")


def make_voyage(ts, eph, days: int = 8, seed: int = 1805):
    rng = np.random.default_rng(seed)
    rows = []
    for day in range(days):
        date = START + pd.Timedelta(days=day)
        morning = sun_at(ts, eph, date + pd.Timedelta(hours=5), date + pd.Timedelta(hours=8, minutes=30),
                         MORNING_SUN_DEG)
        evening = sun_at(ts, eph, date + pd.Timedelta(hours=17, minutes=30), date + pd.Timedelta(hours=21),
                         EVENING_SUN_DEG)
        # a noon series of four Sun sights two minutes apart, centred on the Sun's meridian passage at the ship
        noon = meridian_passage(ts, eph, date + pd.Timedelta(hours=11), date + pd.Timedelta(hours=15))
        plan = [(morning, STARS_MORNING, ""),
                (date + pd.Timedelta(hours=10), ["Sun"], "lower"),
                (noon - pd.Timedelta(minutes=3, seconds=25), ["Sun"] * 4, "lower"),
                (date + pd.Timedelta(hours=16), ["Sun"], "lower"),
                (evening, STARS_EVENING, "")]
        for when, bodies, limb in plan:
            dr_offset = rng.normal(0, 4, 2)  # the DR's error, the same for the watch's sights of that round
            for observer, (personal, scatter) in OBSERVERS.items():
                for k, body in enumerate(bodies):
                    at = (when + pd.Timedelta(minutes=2 * k, seconds=int(rng.integers(0, 50)))).round("s")
                    lat, lon = (float(v) for v in true_position(at))
                    error = personal + rng.normal(0.0, scatter)
                    if rng.random() < 1 / 30:
                        error += rng.choice([-1, 1]) * rng.uniform(6, 10)
                    sight = skyfield_sight(ts, eph, body, at, lat, lon, limb=limb, eye_height_m=3.5,
                                           index_error_arcmin=-0.6, noise_arcmin=error)
                    if not 12.0 < sight["true_alt_deg"] < 78.0:
                        continue
                    dr_lat, dr_lon = offset_position(lat, lon, *dr_offset)
                    rows.append({"utc": at.strftime("%Y-%m-%dT%H:%M:%SZ"), "body": body, "limb": limb,
                                 "hs": round(sight["hs"], 5), "index_error_arcmin": "0.6 off", "eye_height_m": 3.5,
                                 "dr_lat": round(float(dr_lat), 5), "dr_lon": round(float(dr_lon), 5),
                                 "course_deg": COURSE, "speed_kn": SPEED,
                                 "fix_group": f"{at:%Y-%m-%d}-{observer.split()[-1]}-"
                                              + ("noon" if len(bodies) == 4 and body == "Sun" else f"{when:%H%M}"),
                                 "vessel": "Grey Shearwater (invented)", "observer": observer,
                                 "voyage": "Training passage (invented)", "true_error_arcmin": round(error, 3)})
    return pd.DataFrame(rows), reference_track(days)


def reference_track(days: int) -> pd.DataFrame:
    """The ship's true track every 10 minutes over the voyage, from an hour before to an hour after."""
    track_times = pd.date_range(START - pd.Timedelta(hours=1), START + pd.Timedelta(days=days, hours=1), freq="10min")
    lat, lon = true_position_array(track_times)
    return pd.DataFrame({"utc": track_times, "lat": lat, "lon": lon})


#: the voyages the tests use, synthesized once by ``python scripts/make_training_voyage.py --freeze`` (skyfield
#: takes seconds a voyage) and read back by :func:`frozen_voyage`: (days, seed)
FROZEN_VOYAGES = ((5, 77), (3, 77))
FROZEN = ROOT / "tests" / "data"


def frozen_voyage_path(days: int, seed: int) -> Path:
    return FROZEN / f"training_voyage_{days}d_seed{seed}.csv"


def frozen_voyage(ts, eph, days: int, seed: int):
    """:func:`make_voyage`'s sights and track, the sights read from the file ``--freeze`` wrote (the very
    values, CSV keeping every float's digits) where there is one, synthesized where there is none."""
    path = frozen_voyage_path(days, seed)
    if not path.exists():
        return make_voyage(ts, eph, days=days, seed=seed)
    return pd.read_csv(path, keep_default_na=False, dtype={"limb": str}), reference_track(days)


def freeze(ts, eph) -> None:
    for days, seed in FROZEN_VOYAGES:
        sights, _ = make_voyage(ts, eph, days=days, seed=seed)
        sights.to_csv(frozen_voyage_path(days, seed), index=False)
        print(f"froze {len(sights)} sights of the {days}-day voyage (seed {seed}) in {frozen_voyage_path(days, seed)}")


def true_position_array(times: pd.DatetimeIndex):
    hours = (times - START).total_seconds().to_numpy() / 3600.0
    return rhumb_integrated(LAT0, LON0, COURSE, SPEED * hours)


def write_gpx(track: pd.DataFrame, path: Path) -> None:
    import gpxpy.gpx

    gpx = gpxpy.gpx.GPX()
    route = gpxpy.gpx.GPXTrack(name="Grey Shearwater reference track (invented)")
    segment = gpxpy.gpx.GPXTrackSegment()
    for row in track.itertuples():
        segment.points.append(gpxpy.gpx.GPXTrackPoint(row.lat, row.lon, time=row.utc.to_pydatetime()))
    route.segments.append(segment)
    gpx.tracks.append(route)
    path.write_text(gpx.to_xml(version="1.1"))


def write_nmea(track: pd.DataFrame, path: Path) -> None:
    import pynmea2

    lines = []
    for row in track.itertuples():
        lat, lon = abs(row.lat), abs(row.lon)
        lat_text = f"{int(lat):02d}{(lat % 1) * 60:07.4f}"
        lon_text = f"{int(lon):03d}{(lon % 1) * 60:07.4f}"
        hemis = ("N" if row.lat >= 0 else "S", "E" if row.lon >= 0 else "W")
        rmc = pynmea2.RMC("GP", "RMC", (row.utc.strftime("%H%M%S.00"), "A", lat_text, hemis[0], lon_text, hemis[1],
                                         f"{SPEED:.1f}", f"{COURSE:.1f}", row.utc.strftime("%d%m%y"), "", ""))
        gga = pynmea2.GGA("GP", "GGA", (row.utc.strftime("%H%M%S.00"), lat_text, hemis[0], lon_text, hemis[1],
                                         "1", "09", "0.9", "12.0", "M", "50.0", "M", "", ""))
        lines += [str(rmc), str(gga)]
    path.write_text("\n".join(lines) + "\n")


def main() -> None:
    from importlib.resources import files

    from skyfield.api import load

    ts = load.timescale(builtin=True)
    eph = load(str(files("skyfield_data") / "data" / "de421.bsp"))
    if "--freeze" in sys.argv[1:]:
        freeze(ts, eph)
        return
    sights, track = make_voyage(ts, eph)
    # every Hs with its five decimals (a float's text drops trailing zeros: 75.111 would read as 75° 11.1′ too)
    sights.assign(hs=sights.hs.map("{:.5f}".format)).to_csv(OUT / "training_sights.csv", index=False)
    write_gpx(track, OUT / "training_track.gpx")
    write_nmea(track, OUT / "training_track.nmea")
    track.assign(utc=track.utc.dt.strftime("%Y-%m-%dT%H:%M:%SZ")).to_csv(OUT / "training_track.csv", index=False)
    print(f"wrote {len(sights)} invented training sights and a {len(track)}-point reference track to {OUT}")


if __name__ == "__main__":
    main()
