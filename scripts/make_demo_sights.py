"""Generate the invented demo sights in sample_sights/ from a stated true track.

INVENTED DATA. The sail-training ketch "Moth Orchid" and her passage do not exist. The
sextant altitudes are synthesized with skyfield (a test-only reference library, independent
of navred): the true topocentric altitude at the true position, the limb, refraction
(skyfield's refract), dip (1.76′ √h) and the index error as read, plus Gaussian noise of
0.3′ (seed fixed), so that navred's fixes land near the true positions stated in
sample_sights/README.md.

Run:  python scripts/make_demo_sights.py
"""

from __future__ import annotations

import importlib.resources
import math
from pathlib import Path

import numpy as np
import pandas as pd
from skyfield.api import Star, load, wgs84
from skyfield.earthlib import refract

from navred.stars import star_index, star_table

OUT = Path(__file__).resolve().parent.parent / "sample_sights"

# The true track: from 44° 30.0′ N, 012° 00.0′ W at 2026-03-20 06:00 UTC, 215° true at 6.5 knots.
START_LAT, START_LON = 44.5, -12.0
START = pd.Timestamp("2026-03-26T06:00:00Z")
COURSE_DEG, SPEED_KN = 215.0, 6.5
EYE_HEIGHT_M, INDEX_ERROR = 2.8, 1.4  # index error 1.4′ on the arc
DR_ERROR_NM, DR_ERROR_BEARING = 6.0, 120.0  # the DR drifts from the truth by this much


def position_at(when: pd.Timestamp, offset_nm=0.0, offset_bearing=0.0):
    """True position at ``when`` along the rhumb line (plus an offset for the DR), degrees."""
    hours = (when - START).total_seconds() / 3600.0
    run = SPEED_KN * hours
    lat = START_LAT + run * math.cos(math.radians(COURSE_DEG)) / 60
    lon = START_LON + run * math.sin(math.radians(COURSE_DEG)) / 60 / math.cos(math.radians((lat + START_LAT) / 2))
    lat += offset_nm * math.cos(math.radians(offset_bearing)) / 60
    lon += offset_nm * math.sin(math.radians(offset_bearing)) / 60 / math.cos(math.radians(lat))
    return lat, lon


def local_apparent_noon(ts, eph, guess: pd.Timestamp) -> str:
    """The Sun's meridian transit over the vessel's true position near ``guess`` (skyfield)."""
    from skyfield import almanac

    lat, lon = position_at(guess)
    start = ts.from_datetime((guess - pd.Timedelta(hours=2)).to_pydatetime())
    end = ts.from_datetime((guess + pd.Timedelta(hours=2)).to_pydatetime())
    times, kinds = almanac.find_discrete(start, end, almanac.meridian_transits(eph, eph["sun"], wgs84.latlon(lat, lon)))
    noon = pd.Timestamp(times[kinds == 1][0].utc_datetime()).round("s")
    return noon.strftime("%Y-%m-%dT%H:%M:%SZ")


def main() -> None:
    ts = load.timescale(builtin=True)
    eph = load(str(importlib.resources.files("skyfield_data") / "data" / "de421.bsp"))
    earth = eph["earth"]
    table = star_table()
    rng = np.random.default_rng(1852)
    sights = [  # (UTC, body, limb, fix group, observer)
        ("2026-03-26T09:10:00Z", "Sun", "lower", "sun-run-sun", "Watch officer"),
        ("noon", "Sun", "lower", "sun-run-sun", "Watch officer"),
        ("2026-03-26T15:40:00Z", "Sun", "lower", "sun-run-sun", "Watch officer"),
        ("2026-03-26T16:05:00Z", "Moon", "lower", "moon-planet", "Cadet A"),
        ("2026-03-26T19:36:00Z", "Jupiter", "", "moon-planet", "Cadet A"),
        ("2026-03-26T19:41:00Z", "Sirius", "", "evening-stars", "Cadet B"),
        ("2026-03-26T19:42:30Z", "Betelgeuse", "", "evening-stars", "Cadet B"),
        ("2026-03-26T19:44:00Z", "Procyon", "", "evening-stars", "Cadet B"),
        ("2026-03-26T19:45:30Z", "Aldebaran", "", "evening-stars", "Cadet B"),
        ("2026-03-26T19:47:00Z", "Regulus", "", "evening-stars", "Cadet B"),
        ("2026-03-26T19:48:30Z", "Dubhe", "", "evening-stars", "Cadet B"),
    ]
    rows, truth = [], []
    for utc, body, limb, group, observer in sights:
        if utc == "noon":
            utc = local_apparent_noon(ts, eph, pd.Timestamp("2026-03-26T13:00:00Z"))
        when = pd.Timestamp(utc)
        lat, lon = position_at(when)
        dr_lat, dr_lon = position_at(when, DR_ERROR_NM, DR_ERROR_BEARING)
        t = ts.from_datetime(when.to_pydatetime())
        if body in ("Sun", "Moon"):
            target = eph[body.lower()]
        elif body == "Jupiter":
            target = eph["jupiter barycenter"]
        else:
            i = star_index(body)
            target = Star(ra_hours=table.ra_deg[i] / 15, dec_degrees=table.dec_deg[i],
                          ra_mas_per_year=table.pm_ra_cosdec_mas_per_year[i],
                          dec_mas_per_year=table.pm_dec_mas_per_year[i],
                          parallax_mas=table.parallax_mas[i], epoch=ts.J(1991.25))
        alt, az, distance = (earth + wgs84.latlon(lat, lon)).at(t).observe(target).apparent().altaz()
        if not 10.0 < alt.degrees < 75.0:
            raise SystemExit(f"{body} at {utc} stands at {alt.degrees:.1f}°: choose another time")
        radius = {"Sun": 695700.0, "Moon": 1737.4}.get(body)
        sd = math.degrees(math.asin(radius / distance.km)) if radius else 0.0
        limb_alt = alt.degrees - sd if limb == "lower" else alt.degrees
        hs = refract(limb_alt, 10.0, 1010.0) + 1.76 * math.sqrt(EYE_HEIGHT_M) / 60 + INDEX_ERROR / 60
        hs += rng.normal(0.0, 0.3) / 60
        degrees = int(hs)
        minutes = (hs - degrees) * 60
        rows.append({
            "utc": utc, "body": body, "limb": limb, "hs": f"{degrees} {minutes:04.1f}",
            "index_error_arcmin": f"{INDEX_ERROR} on", "eye_height_m": EYE_HEIGHT_M, "horizon": "sea",
            "temperature_c": 10, "pressure_hpa": 1010,
            "dr_lat": f"{int(abs(dr_lat))} {abs(dr_lat) % 1 * 60:04.1f} {'N' if dr_lat >= 0 else 'S'}",
            "dr_lon": f"{int(abs(dr_lon)):03d} {abs(dr_lon) % 1 * 60:04.1f} {'E' if dr_lon >= 0 else 'W'}",
            "course_deg": COURSE_DEG, "speed_kn": SPEED_KN, "fix_group": group,
            "vessel": "Moth Orchid (invented)", "observer": observer, "voyage": "Demo passage (invented)",
        })
        truth.append({"utc": utc, "body": body, "true_lat_deg": round(lat, 5), "true_lon_deg": round(lon, 5),
                      "true_alt_deg": round(alt.degrees, 5), "true_zn_deg": round(az.degrees, 3)})
    frame = pd.DataFrame(rows)
    OUT.mkdir(exist_ok=True)
    frame.to_csv(OUT / "demo_sights.csv", index=False)
    frame.to_excel(OUT / "demo_sights.xlsx", index=False, sheet_name="sights")
    pd.DataFrame(truth).to_csv(OUT / "demo_truth.csv", index=False)
    print(f"wrote {len(frame)} invented sights to {OUT}")
    write_hand_kept_log(frame)
    write_sight_plan()


def write_hand_kept_log(frame: pd.DataFrame) -> None:
    """The same sights as a navigator keeps them by hand (docs/sight-log.md shows this file): the
    ship's date and the deck watch's reading in zone +1 (N), the watch 7 s slow, Hs and the DR in
    degrees and minutes, the height of eye in feet. The same instants and values: it reduces to
    the same Ho and fixes as demo_sights.csv."""
    utc = pd.to_datetime(frame.utc)
    watch = utc - pd.Timedelta(hours=1) - pd.Timedelta(seconds=7)  # ZT = UTC - ZD; a slow watch reads behind
    hand = pd.DataFrame({
        "Date": watch.dt.strftime("%Y-%m-%d"), "Watch time": watch.dt.strftime("%H:%M:%S"),
        "ZD": "+1 N", "Watch error": "7 s slow", "Body": frame.body, "Limb": frame.limb.replace("lower", "LL"),
        "Hs": [h.replace(" ", "° ") + "′" for h in frame.hs], "IE": f"{INDEX_ERROR} on",
        "Height of eye (ft)": round(EYE_HEIGHT_M / 0.3048, 4),
        "DR lat": [v.replace(" ", "° ", 1).replace(" N", "′ N").replace(" S", "′ S") for v in frame.dr_lat],
        "DR lon": [v.replace(" ", "° ", 1).replace(" W", "′ W").replace(" E", "′ E") for v in frame.dr_lon],
        "Course (°T)": frame.course_deg, "Speed (kn)": frame.speed_kn, "Fix group": frame.fix_group,
        "Observer": frame.observer, "Remarks": "",
    })
    hand.to_csv(OUT / "demo_sights_hand_kept.csv", index=False)
    print(f"wrote the hand-kept form of the same sights to {OUT}")


def write_sight_plan() -> None:
    """The passage's sight plan for its first two days, made by navred from the DR track
    (scripts/make_demo_sight_plan.py, which the tests run again to check the committed files)."""
    import sys

    sys.path.insert(0, str(Path(__file__).resolve().parent))
    from make_demo_sight_plan import write_demo_plan

    write_demo_plan(OUT)
    print(f"wrote the sight plan to {OUT}")


if __name__ == "__main__":
    main()
