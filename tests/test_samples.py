"""Every invented sample in sample_sights/ makes sense under one sky: each sight's time against the Sun.

The Sun's (and the Moon's) altitude and hour angle at each sight's UTC and DR come from skyfield
(DE421, apparent places; an independent reference); the sights' times and DRs are read by navred's
one reader (the passage's DR as navred carries it from its entries). The limits: stars and planets are
shot in nautical twilight, with the Sun between −3°, when the first stars show, and −12°, the end of
nautical twilight, when the horizon becomes indistinct (the US Naval Observatory's definition of
nautical twilight; the −3° common practice); the Sun and the Moon are above the horizon (an amplitude at
rising or setting with its centre on it); a Sun sight taken within an hour of the Sun's meridian passage
is a noon sight and is taken within 15 minutes of it (common practice: the noon series is worked around
the meridian passage). navred's own sense checks (the twilight warnings of its reduction) stay silent on
every sample too.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

#: Every sample log and class in sample_sights/ (the chronometer's copy of the passage is the same sights,
#: tests/test_timepieces.py checks it against passage_log.csv).
SAMPLES = ("demo_sights.csv", "demo_sights.xlsx", "demo_sights_hand_kept.csv", "passage_log.csv",
           "training_sights.csv", "class_workings.xlsx", "day_at_sea.csv")


def _sights(name: str) -> pd.DataFrame:
    """Each sight of a sample: body, UTC and DR as navred reads them."""
    from navred import read_sight_log
    from navred.io.workings import read_workings

    path = f"sample_sights/{name}"
    log = read_workings(path).log if name.startswith("class") else read_sight_log(path)
    table = log.table[log.table.read_problem == ""] if "read_problem" in log.table else log.table
    assert log.n_rejected_rows == 0, log.rejected
    return table[["body_name", "sight_utc", "dr_lat_deg", "dr_lon_deg"]].reset_index(drop=True)


def _sky(ts, eph, sights: pd.DataFrame, target) -> tuple[np.ndarray, np.ndarray]:
    """skyfield's altitude (degrees) and hour angle (hours, −12 to 12) of a body at each sight's UTC and DR."""
    from skyfield.api import wgs84

    t = ts.from_datetimes(list(sights.sight_utc.dt.to_pydatetime()))
    place = eph["earth"] + wgs84.latlon(sights.dr_lat_deg.to_numpy(), sights.dr_lon_deg.to_numpy())
    seen = place.at(t).observe(target).apparent()
    return seen.altaz()[0].degrees, (seen.hadec()[0].hours + 12.0) % 24.0 - 12.0


@pytest.mark.parametrize("name", SAMPLES)
def test_every_samples_sights_fit_the_sky(ts, eph, name):
    """Stars and planets in nautical twilight, the Sun and the Moon up, noon sights at meridian passage."""
    sights = _sights(name)
    assert len(sights) > 0
    sun_alt, sun_hour_angle = _sky(ts, eph, sights, eph["sun"])
    moon_alt, _ = _sky(ts, eph, sights, eph["moon"])
    body = sights.body_name.to_numpy()
    starlike = ~np.isin(body, ["Sun", "Moon"])
    bad = starlike & ((sun_alt > -3.0) | (sun_alt < -12.0))
    assert not bad.any(), sights[bad].assign(sun_deg=sun_alt[bad]).to_string()
    sun = body == "Sun"
    assert (sun_alt[sun] > -1.0).all(), sights[sun & (sun_alt <= -1.0)]
    moon = body == "Moon"
    assert (moon_alt[moon] > 0.0).all()
    near_noon = sun & (np.abs(sun_hour_angle) < 1.0)
    at_noon = np.abs(sun_hour_angle[near_noon]) <= 0.25
    assert at_noon.all(), sights[near_noon][~at_noon].assign(minutes=sun_hour_angle[near_noon][~at_noon] * 60)


@pytest.mark.parametrize("name", [s for s in SAMPLES if not s.startswith("class")])
def test_navreds_own_twilight_check_is_silent_on_every_sample_log(name):
    """No star or planet on the sea horizon in daylight or past nautical twilight by navred's reduction's own
    warnings (tests/test_sights.py checks that they fire)."""
    from navred.jobs.sights import reduce_sights

    reduced = reduce_sights(f"sample_sights/{name}")
    assert not reduced.message.str.contains("twilight").any(), reduced.message[reduced.message.str.contains(
        "twilight")]
