"""Sights that are not plain sea-horizon sights, synthesized with skyfield, and the phase of Venus and Mars."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from navred import reduce_sights
from tests.conftest import centre_of_light_offset_arcmin, skyfield_sight

CASES = [  # (body, limb, instant, true lat, true lon): the body well up at each
    ("Sun", "lower", "2024-06-10T14:00:00Z", 38.0, -30.0),
    ("Sun", "upper", "2024-11-02T11:30:00Z", -33.5, 18.0),
    ("Moon", "lower", "2024-09-15T21:00:00Z", 45.25, -20.5),
    ("Moon", "upper", "2024-09-15T23:30:00Z", 45.25, -20.5),
    ("Vega", "", "2024-09-15T19:05:00Z", 45.25, -20.5),
    ("Antares", "", "2024-09-15T19:05:00Z", 45.25, -20.5),
    ("Arcturus", "", "2024-09-15T19:10:00Z", 45.25, -20.5),
]


@pytest.mark.parametrize("horizon, extra", [
    ("artificial", {}),  # reading = 2 × apparent altitude (common practice)
    ("bubble", {}),  # the apparent altitude of the centre, no dip
    ("back", {}),  # 180° − apparent altitude + dip of the horizon behind
    ("waterline", {"waterline_nm": 0.8}),  # dip short of the horizon, Bowditch's table formula
    ("sea", {}),
])
def test_every_horizon_reduces_to_the_truth(ts, eph, horizon, extra):
    """Reference: skyfield's topocentric altitude at the true position, the reading each horizon gives
    (tests.conftest.horizon_reading_deg). Reduced from the truth, every intercept is within 0.1′."""
    rows = []
    for body, limb, when, lat, lon in CASES:
        sight = skyfield_sight(ts, eph, body, pd.Timestamp(when), lat, lon, limb=limb, eye_height_m=6.0,
                               index_error_arcmin=-1.3, horizon=horizon, **extra)
        if horizon == "bubble":
            sight["limb"] = "" if body not in ("Sun", "Moon") else sight["limb"]
        rows.append(sight)
    frame = pd.DataFrame(rows)
    if horizon == "bubble":
        # a bubble horizon is on the body's centre: synthesize the centre (no limb) and reduce it as such
        frame = pd.DataFrame([skyfield_sight(ts, eph, body, pd.Timestamp(when), lat, lon, eye_height_m=6.0,
                                             index_error_arcmin=-1.3, horizon="bubble")
                              for body, _, when, lat, lon in CASES]).assign(limb="")
    if horizon != "waterline":
        frame = frame.drop(columns=["waterline_distance_nm"])
    reduced = reduce_sights(frame)
    assert (reduced.status != "error").all(), reduced.message[reduced.status == "error"].tolist()
    assert np.abs(reduced.intercept_nm).max() < 0.1, reduced[["body_name", "intercept_nm"]]
    if horizon in ("artificial", "back"):
        assert (frame.hs > 90).any() or horizon == "artificial"  # readings beyond 90° are taken
    # the working adds up: Hs + every signed correction = Ho
    total = reduced[["ic_arcmin", "horizon_arcmin", "dip_arcmin", "refraction_arcmin", "sd_arcmin",
                     "parallax_arcmin", "phase_arcmin"]].sum(axis=1)
    assert np.allclose(reduced.hs_deg + total / 60, reduced.ho_deg, atol=1e-12)


def test_a_measured_dip_replaces_the_formula(ts, eph):
    # a dip meter reads 4.8′ where the formula would give 1.76′ √6 = 4.3′ (abnormal terrestrial refraction)
    sight = skyfield_sight(ts, eph, "Vega", pd.Timestamp("2024-09-15T19:05:00Z"), 45.25, -20.5, eye_height_m=6.0)
    sight["hs"] += (4.8 - 1.76 * np.sqrt(6.0)) / 60
    measured = reduce_sights(pd.DataFrame([sight]).assign(measured_dip=4.8))
    formula = reduce_sights(pd.DataFrame([sight]))
    assert abs(measured.intercept_nm[0]) < 0.05 and measured.dip_arcmin[0] == -4.8
    # with the formula's smaller dip, Ho comes out high by the difference: an intercept TOWARD
    assert abs(formula.intercept_nm[0] - (4.8 - 1.76 * np.sqrt(6.0))) < 0.05


def test_horizon_refusals_name_their_column():
    base = {"utc": "2024-09-15T19:05:00Z", "body": "Vega", "hs": "50 00.0", "eye_height_m": 3.0,
            "dr_lat": "45 15 N", "dr_lon": "020 30 W"}
    rows = [dict(base, hs="120"),  # over 90° on a sea horizon
            dict(base, horizon="waterline"),  # no waterline distance
            dict(base, horizon="waterline", waterline_distance="9.0"),  # beyond the visible horizon (3.6 nm)
            dict(base, horizon="artificial", measured_dip="4.0"),  # a dip meter with an artificial horizon
            dict(base, horizon="back", hs="60")]  # a back sight reads over 90°
    reduced = reduce_sights(pd.DataFrame(rows))
    assert (reduced.status == "error").all()
    assert "outside 0-90° for a sea horizon" in reduced.message[0] and reduced.error_column[0] == "hs"
    assert "waterline_distance" in reduced.error_column[1]
    assert "beyond the visible sea horizon" in reduced.message[2]
    assert "measured dip applies to a sea horizon" in reduced.message[3]
    assert "outside -1° to 90°" in reduced.message[4]


@pytest.mark.parametrize("body", ["Venus", "Mars"])
def test_phase_correction_against_the_centre_of_light_from_the_ephemeris(ts, eph, body):
    """Reference: the centroid of the lit part of the disc, integrated on a grid from skyfield's
    topocentric geometry of the planet and the Sun (tests.conftest.centre_of_light_offset_arcmin).
    navred's phase correction must undo it within 0.02′, by day and by night, over 2024-2026."""
    rng = np.random.default_rng(3 if body == "Venus" else 4)
    rows, offsets = [], []
    while len(rows) < 24:
        when = (pd.Timestamp("2024-01-01T00:00Z") + pd.Timedelta(hours=float(rng.uniform(0, 3 * 8766)))).round("us")
        lat, lon = float(rng.uniform(-50, 50)), float(rng.uniform(-180, 180))
        sight = skyfield_sight(ts, eph, body, when, lat, lon)
        if not 10 < sight["true_alt_deg"] < 80:
            continue
        rows.append(sight)
        offsets.append(centre_of_light_offset_arcmin(eph, body, ts.from_datetime(when.to_pydatetime()), lat, lon))
    reduced = reduce_sights(pd.DataFrame(rows))
    offsets = np.array(offsets)
    assert np.abs(reduced.phase_arcmin + offsets).max() < 0.02
    # the correction matters: up to 0.4′ for Venus; Mars, smaller and never far from full, a few hundredths
    assert np.abs(offsets).max() > (0.05 if body == "Venus" else 0.002)
    assert np.abs(reduced.intercept_nm).max() < 0.1
