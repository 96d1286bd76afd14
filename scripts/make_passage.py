"""A passage sailed outside navred, with a current, and its log kept the way navred keeps a DR.

The ship is sailed in this script's own code: through the water on the courses and speeds of the
plan, plus a current, integrated step by step along the ellipsoid (dφ/dt = v_N / ρ(φ), dλ/dt = v_E /
(ν(φ) cos φ), ρ and ν the WGS 84 radii of curvature in the meridian and the prime vertical,
Bowditch / Snyder's formulas; fourth-order Runge-Kutta, 60 s steps). At each round of sights the true
position gives star sights from skyfield (tests/conftest.py), all at one instant: for the tests of the DR
every few hours whatever the daylight (the sky is the sky) and without noise, for the invented sample as a
navigator takes them (stars at morning and evening twilight, the Sun at noon) with a sextant's scatter. The log holds what a navigator would write: the departure,
each alteration of course and speed (entry rows), and the sights with no DR: navred carries the DR.

Used by tests/test_dayswork.py (the set and drift, the day's run), and by ``main()`` for the invented
demo passage in sample_sights/ (INVENTED DATA: the ketch "Moth Orchid" does not exist).
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from tests.conftest import skyfield_sight  # noqa: E402  (skyfield, independent of navred)

OUT = ROOT / "sample_sights"
A_M = 6378137.0
F = 1 / 298.257223563
E2 = F * (2 - F)
STARS = ("Sirius", "Capella", "Procyon", "Aldebaran", "Regulus", "Dubhe", "Vega", "Altair", "Arcturus", "Deneb",
         "Fomalhaut", "Spica", "Antares", "Kochab", "Betelgeuse", "Pollux", "Achernar", "Canopus", "Rigel", "Hamal",
         "Alpheratz", "Mirfak", "Markab", "Enif", "Alkaid", "Denebola", "Rasalhague", "Nunki", "Diphda", "Menkar",
         "Alphard", "Kaus Australis", "Schedar", "Eltanin", "Alioth", "Elnath", "Bellatrix", "Gienah", "Zubenelgenubi",
         "Sabik", "Shaula", "Peacock", "Alnilam", "Acrux", "Hadar", "Rigil Kentaurus")
STEP_S = 60.0


def radii(phi):
    """ρ and ν (metres) at latitude φ (radians), WGS 84."""
    w = 1 - E2 * np.sin(phi) ** 2
    return A_M * (1 - E2) / w**1.5, A_M / np.sqrt(w)


def velocity(course_deg, speed_kn):
    c = np.radians(course_deg)
    return speed_kn * np.cos(c), speed_kn * np.sin(c)


def sail(start, lat, lon, plan, current, until):
    """The true track: positions every STEP_S seconds from ``start`` to ``until`` (Timestamps).

    ``plan``: [(Timestamp, course, speed)] through the water; ``current(t_hours) -> (set_deg, drift_kn)``."""
    changes = sorted(plan)
    times = pd.date_range(start, until, freq=f"{int(STEP_S)}s")
    hours = (times - start).total_seconds().to_numpy() / 3600.0
    phi, lam = np.radians(lat), np.radians(lon)
    out = np.zeros((len(times), 2))
    out[0] = phi, lam

    def rate(t_h, p):
        when = start + pd.Timedelta(hours=t_h)
        course, speed = next(((c, s) for t, c, s in reversed(changes) if t <= when), (0.0, 0.0))
        n, e = velocity(course, speed)
        cs, cd = current(t_h)
        cn, ce = velocity(cs, cd)
        rho, nu = radii(p)
        ms = 1852.0 / 3600.0
        return (n + cn) * ms / rho, (e + ce) * ms / (nu * np.cos(p))

    dt = STEP_S
    for k in range(1, len(times)):
        t = hours[k - 1]
        # a change of plan falls on a whole step: each step uses one leg
        k1 = rate(t, phi)
        k2 = rate(t + dt / 7200, phi + dt / 2 * k1[0])
        k3 = rate(t + dt / 7200, phi + dt / 2 * k2[0])
        k4 = rate(t + dt / 3600 * 0.999999, phi + dt * k3[0])
        phi += dt / 6 * (k1[0] + 2 * k2[0] + 2 * k3[0] + k4[0])
        lam += dt / 6 * (k1[1] + 2 * k2[1] + 2 * k3[1] + k4[1])
        out[k] = phi, lam
    return pd.DataFrame({"utc": times, "lat": np.degrees(out[:, 0]),
                         "lon": (np.degrees(out[:, 1]) + 180.0) % 360.0 - 180.0})


def position_at(track: pd.DataFrame, when: pd.Timestamp):
    stamps = track.utc.dt.tz_convert(None).to_numpy()
    row = track.iloc[int(np.searchsorted(stamps, when.tz_convert(None).to_datetime64()))]
    assert row.utc == when, "sights fall on the track's whole minutes"
    return float(row.lat), float(row.lon)


def star_round(ts, eph, when, lat, lon, count=4):
    """``count`` stars 20-70° high, spread in azimuth, seen from the true position (skyfield, no noise)."""
    chosen = []
    for star in STARS:
        sight = skyfield_sight(ts, eph, star, when, lat, lon, eye_height_m=3.0)
        if 20.0 <= sight["true_alt_deg"] <= 70.0 and all(
                abs((sight["true_az_deg"] - other["true_az_deg"] + 180) % 360 - 180) > 360 / (count + 2)
                for other in chosen):
            chosen.append(sight)
        if len(chosen) == count:
            break
    return chosen


def make_passage(ts, eph, *, current, days=3, start=pd.Timestamp("2026-04-14T06:00:00Z"),
                 lat=38.0, lon=-20.0, plan=None, rounds_per_day=4, vessel="Moth Orchid (invented)",
                 sky_times: bool = False, noise_arcmin: float = 0.0, seed: int = 1852):
    """(the log as a DataFrame, the true track, the fix times). ``current(t_hours) -> (set, drift)``.

    Rounds of four stars every 24/``rounds_per_day`` hours from ``start`` (the daylight ignored: the sky is
    the sky, for the tests of the DR), or, with ``sky_times``, as a navigator takes them: four stars at
    morning and at evening nautical twilight (the Sun 7° below the horizon at the ship) and the Sun at
    its meridian passage over the ship (skyfield's sky at the true track, :func:`sky_rounds`). Each Hs has
    Gaussian noise of ``noise_arcmin`` (seeded; none for the tests of the DR)."""
    rng = np.random.default_rng(seed)
    if plan is None:
        plan = [(start, 250.0, 6.0), (start + pd.Timedelta(hours=20), 235.0, 6.5),
                (start + pd.Timedelta(hours=47), 260.0, 5.5)]
    until = start + pd.Timedelta(days=days)
    track = sail(start, lat, lon, plan, current, until)
    rows = [{"utc": start.strftime("%Y-%m-%dT%H:%M:%SZ"), "entry": "departure", "dr_lat": lat, "dr_lon": lon,
             "course": plan[0][1], "speed": plan[0][2], "vessel": vessel}]
    for when, course, speed in plan[1:]:
        rows.append({"utc": when.strftime("%Y-%m-%dT%H:%M:%SZ"), "entry": "course", "course": course,
                     "speed": speed, "vessel": vessel})
    fix_times = []
    if sky_times:
        rounds = sky_rounds(ts, eph, track, start, until)
    else:
        step = pd.Timedelta(hours=24 / rounds_per_day)
        rounds = []
        when = start + step
        while when <= until:
            rounds.append((when, "stars"))
            when += step
    for when, kind in rounds:
        true_lat, true_lon = position_at(track, when)
        if kind == "noon":
            sight = skyfield_sight(ts, eph, "Sun", when, true_lat, true_lon, limb="lower", eye_height_m=3.0,
                                   noise_arcmin=rng.normal(0.0, noise_arcmin) if noise_arcmin else 0.0)
            rows.append({"utc": when.strftime("%Y-%m-%dT%H:%M:%SZ"), "body": "Sun", "limb": "lower",
                         "hs": round(sight["hs"], 6), "eye_height_m": 3.0, "fix_group": f"{when:%d} noon",
                         "vessel": vessel})
            continue
        for sight in star_round(ts, eph, when, true_lat, true_lon):
            noise = rng.normal(0.0, noise_arcmin) / 60.0 if noise_arcmin else 0.0
            rows.append({"utc": when.strftime("%Y-%m-%dT%H:%M:%SZ"), "body": sight["body"],
                         "hs": round(sight["hs"] + noise, 6), "eye_height_m": 3.0, "fix_group": f"{when:%d %H%M}",
                         "vessel": vessel})
        fix_times.append(when)
    return pd.DataFrame(rows), track, fix_times


#: The Sun's altitude (degrees) at which the sample's star rounds are taken: mid nautical twilight, when
#: the brightest stars and the sea horizon are both seen (common practice).
TWILIGHT_SUN_DEG = -7.0


def sky_rounds(ts, eph, track: pd.DataFrame, start: pd.Timestamp, until: pd.Timestamp) -> list:
    """(instant, 'stars' or 'noon') of each round as a navigator takes them along the true track: the stars
    when the Sun stands at :data:`TWILIGHT_SUN_DEG` at the ship, morning and evening, and the Sun at its
    meridian passage over the ship (its hour angle 0), each on the track's whole minute (skyfield)."""
    from skyfield.api import wgs84

    times = track.utc.iloc[::5].reset_index(drop=True)  # every five minutes
    t = ts.from_datetimes(list(times.dt.to_pydatetime()))
    lat, lon = track.lat.iloc[::5].to_numpy(), track.lon.iloc[::5].to_numpy()
    place = eph["earth"] + wgs84.latlon(lat, lon)
    # each instant seen from the ship's own position then (elementwise: one position per instant)
    sun = place.at(t).observe(eph["sun"]).apparent()
    altitude = sun.altaz()[0].degrees
    hour_angle = sun.hadec()[0].hours
    rounds = []
    for k in range(1, len(times)):
        a0, a1 = altitude[k - 1] - TWILIGHT_SUN_DEG, altitude[k] - TWILIGHT_SUN_DEG
        if a0 * a1 <= 0 and a0 != a1:
            rounds.append((times[k - 1] + (times[k] - times[k - 1]) * (a0 / (a0 - a1)), "stars"))
        h0, h1 = ((hour_angle[k - 1] + 12) % 24) - 12, ((hour_angle[k] + 12) % 24) - 12
        if h0 < 0 <= h1:
            rounds.append((times[k - 1] + (times[k] - times[k - 1]) * (-h0 / (h1 - h0)), "noon"))
    return [(when.round("min"), kind) for when, kind in rounds if start < when.round("min") <= until]


def mean_current(current, t0_h, t1_h, samples=721):
    """The current averaged as a vector over [t0, t1] hours: (set, drift)."""
    t = np.linspace(t0_h, t1_h, samples)
    sets, drifts = zip(*(current(x) for x in t))
    n, e = velocity(np.array(sets), np.array(drifts))
    return float(np.degrees(np.arctan2(e.mean(), n.mean())) % 360.0), float(np.hypot(n.mean(), e.mean()))


def steady(t_h):
    return 60.0, 1.2


def turning(t_h):
    """A current that turns: 1.2 knots, its set veering 4° an hour from 020°."""
    return (20.0 + 4.0 * t_h) % 360.0, 1.2


#: The demo's chronometer: keeps UTC, 2.0 s fast at noon on 10 April 2026 and gaining 0.45 s a day (invented).
CHRONOMETER_EPOCH = pd.Timestamp("2026-04-10T12:00:00Z")
CHRONOMETER_ERROR_S, CHRONOMETER_RATE_S_PER_DAY = 2.0, 0.45


def chronometer_error_s(when: pd.Timestamp) -> float:
    return CHRONOMETER_ERROR_S + CHRONOMETER_RATE_S_PER_DAY * (when - CHRONOMETER_EPOCH).total_seconds() / 86400


def main() -> None:
    from importlib.resources import files

    from skyfield.api import load

    ts = load.timescale(builtin=True)
    eph = load(str(files("skyfield_data") / "data" / "de421.bsp"))
    start = pd.Timestamp("2026-04-14T00:00:00Z")  # stars at morning and evening twilight, the Sun at noon
    # the sextant's noise 0.5′ (seeded), as a careful observer's scatter (common practice)
    log, track, _ = make_passage(ts, eph, current=steady, start=start, lat=38.0, lon=-10.0, sky_times=True,
                                 noise_arcmin=0.5, seed=1852)
    log["remarks"] = "INVENTED demo"
    log.to_csv(OUT / "passage_log.csv", index=False)
    track.iloc[::10].assign(utc=track.utc.iloc[::10].dt.strftime("%Y-%m-%dT%H:%M:%SZ")).to_csv(
        OUT / "passage_truth.csv", index=False)
    # the same log timed by the chronometer, and its time signals (a week of them, 0.05 s of reading noise)
    rng = np.random.default_rng(1805)
    signals = []
    for k in range(7):
        when = CHRONOMETER_EPOCH + pd.Timedelta(days=k)
        reading = when + pd.Timedelta(seconds=chronometer_error_s(when) + rng.normal(0, 0.05))
        signals.append({"timepiece": "Chrono A", "utc": when.strftime("%Y-%m-%dT%H:%M:%SZ"),
                        "reading": reading.strftime("%H:%M:%S.%f")[:-5], "remarks": "INVENTED demo"})
    pd.DataFrame(signals).to_csv(OUT / "passage_time_signals.csv", index=False)
    utc = pd.to_datetime(log.utc)
    reading = utc + pd.to_timedelta([chronometer_error_s(t) for t in utc], unit="s")
    kept = log.drop(columns=["utc"])
    kept.insert(0, "timepiece", "Chrono A")
    kept.insert(0, "zone_description", "0")
    kept.insert(0, "zone_time", reading.dt.strftime("%H:%M:%S.%f").str[:-5])
    kept.insert(0, "date", reading.dt.strftime("%Y-%m-%d"))
    kept.to_csv(OUT / "passage_log_chronometer.csv", index=False)
    print(f"wrote passage_log.csv, passage_log_chronometer.csv, passage_time_signals.csv and passage_truth.csv "
          f"to {OUT}")


if __name__ == "__main__":
    main()
