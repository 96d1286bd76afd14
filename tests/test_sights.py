"""The per-sight pipeline: sextant altitudes synthesized with skyfield reduce back to the truth."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from navred import reduce_sights
from navred.jobs.sights import RESULT_COLUMNS
from navred.stars import star_table
from tests.conftest import angle_diff_deg, skyfield_sight

SOLAR = ["Sun", "Moon", "Venus", "Mars", "Jupiter", "Saturn"]


def synthesize(ts, eph, n, seed):
    """Random sights whose Hs are made by skyfield (independent of navred) at known true positions.

    See tests.conftest.skyfield_sight: skyfield's topocentric altitude of the centre, the limb
    from skyfield's distance, skyfield's refract(), dip 1.76′ √h, index error as read.
    """
    rng = np.random.default_rng(seed)
    names = SOLAR * 20 + list(star_table().name) * 4
    rows = []
    while len(rows) < n:
        name = names[rng.integers(len(names))]
        when = pd.Timestamp(ts.tt_jd(rng.uniform(2451545.0, 2461000.0)).utc_datetime()).round("ms")
        sight = skyfield_sight(
            ts, eph, name, when, rng.uniform(-65, 65), rng.uniform(-180, 180),
            limb=str(rng.choice(["lower", "upper"])) if name in ("Sun", "Moon") else "",
            eye_height_m=rng.uniform(1.5, 25.0), index_error_arcmin=rng.uniform(-3, 3),
            temperature_c=rng.uniform(-5, 30), pressure_hpa=rng.uniform(990, 1030))
        if 8.0 < sight["true_alt_deg"] < 84.0:  # 2000-2025: measured UT1 in both tables
            rows.append(sight)
    return pd.DataFrame(rows)


def test_sights_from_skyfield_reduce_to_zero_intercept_at_the_true_position(ts, eph):
    """Reference: skyfield topocentric altitude and azimuth, 320 random cases (stars, Sun, planets, Moon).

    Reduced from the true position, Ho must equal Hc (intercept within 0.1′) and Zn skyfield's
    azimuth within 0.1°.
    """
    sights = synthesize(ts, eph, 320, seed=11)
    reduced = reduce_sights(sights)
    assert (reduced.status != "error").all(), reduced.message[reduced.status == "error"].tolist()
    assert set(sights.body) >= set(SOLAR)
    assert np.abs(reduced.intercept_nm).max() < 0.1
    assert np.abs(angle_diff_deg(reduced.zn_deg, sights.true_az_deg)).max() < 0.1
    # the topocentric altitude of the centre in the working (Ha + R + SD + phase, each signed) is skyfield's own
    topocentric = reduced.ha_deg + (reduced.refraction_arcmin + reduced.sd_arcmin + reduced.phase_arcmin) / 60
    assert np.abs(topocentric - sights.true_alt_deg).max() * 60 < 0.1
    moon = reduced.body_name == "Moon"
    assert moon.sum() > 10  # the Moon's parallax and augmentation are exercised


def test_every_row_comes_back_in_order_with_status_and_message():
    sights = pd.DataFrame({
        "UTC": ["2026-03-20T18:42:10Z", "2026-03-20T18:42:10", "2026-03-20T18:45:00Z", "2026-03-20T18:46:00Z"],
        "Body": ["Vega", "Vega", "Sirus", "Arcturus"],
        "hs": ["12 30.0", "12 30.0", "20", "95"],
        "eye_height_m": [3.0, 3.0, 3.0, 3.0],
        "dr_lat": ["47 12.4 N"] * 4, "dr_lon": ["005 31.9 W"] * 4,
        "remark": ["A", "B", "C", "D"],
    })
    reduced = reduce_sights(sights)
    assert list(reduced.remark) == ["A", "B", "C", "D"]  # unknown columns carried through, in order
    assert list(reduced.status[2:]) == ["error", "error"]
    assert reduced.status[0] == "warning" and "below the horizon" in reduced.message[0]
    # the UTC column's name says UTC: an instant there without a zone is taken as UTC, as a date-time cell is
    assert reduced.sight_utc[1] == reduced.sight_utc[0] and reduced.status[1] == "warning"
    assert "closest: Sirius" in reduced.message[2]
    assert "outside 0-90°" in reduced.message[3]
    assert set(RESULT_COLUMNS) <= set(reduced.columns)
    assert np.isfinite(reduced.ho_deg[0]) and np.isnan(reduced.ho_deg[2])
    assert reduced.intercept_direction[0] in ("TOWARD", "AWAY")


def test_missing_columns_and_values_are_explained():
    sights = pd.DataFrame({"utc": ["2026-03-20T18:42:10Z"] * 2, "body": ["Vega", "Sun"],
                           "hs": [12.5, 30.0], "dr_lat": [47.2, 47.2]})
    reduced = reduce_sights(sights)
    assert (reduced.status == "error").all()
    assert "required column dr_lon is missing" in reduced.message[0]
    assert "height of eye is needed" in reduced.message[0]


def test_defaults_and_warnings():
    sights = pd.DataFrame({"utc": ["2026-06-21T12:00:00Z", "2026-06-21T19:30:00Z"], "body": ["Sun", "Vega"],
                           "limb": ["", "LL"], "hs": [66.0, 40.0], "eye_height_m": [3.0, 3.0],
                           "horizon": ["sea", "artificial"], "dr_lat": [0.0, 47.0], "dr_lon": [0.0, -5.0]})
    reduced = reduce_sights(sights)
    assert "lower limb assumed" in reduced.message[0]
    assert "limb ignored" in reduced.message[1]
    assert reduced.dip_arcmin[1] == 0.0  # artificial horizon: no dip
    assert reduced.refraction_arcmin[0] == pytest.approx(
        -1.0 / np.tan(np.radians(reduced.ha_deg[0] + 7.31 / (reduced.ha_deg[0] + 4.4))))  # Bennett (1982), subtracted


def test_high_sight_is_flagged():
    # the Sun at the zenith of the subsolar point: Hc near 90°
    from navred.jobs.frames import body_positions

    sun = body_positions("Sun", "2026-06-21T12:00:00Z").iloc[0]
    lon = -sun.gha_deg if sun.gha_deg < 180 else 360 - sun.gha_deg
    sights = pd.DataFrame({"utc": ["2026-06-21T12:00:00Z"], "body": ["Sun"], "limb": ["LL"],
                           "hs": [88.0], "eye_height_m": [3.0], "dr_lat": [sun.dec_deg + 1.5], "dr_lon": [lon]})
    reduced = reduce_sights(sights)
    assert "high sight" in reduced.message[0]


def test_blocks_give_the_same_result_as_one_pass(monkeypatch):
    from navred.jobs import sights as module

    frame = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    whole = reduce_sights(frame)
    monkeypatch.setattr(module, "BLOCK_ROWS", 3)
    blocked = reduce_sights(frame)
    pd.testing.assert_frame_equal(whole, blocked)


def test_empty_log_gives_an_empty_result():
    reduced = reduce_sights(pd.DataFrame({"utc": [], "body": [], "hs": [], "dr_lat": [], "dr_lon": []}))
    assert len(reduced) == 0 and "ho_deg" in reduced.columns


def test_demo_sights_reduce_near_the_stated_truth():
    # sample_sights/ is invented data made by scripts/make_demo_sights.py with skyfield; reduced
    # from the stated true positions, every intercept stays within the 0.3′ noise (4 sigma = 1.2′)
    frame = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    truth = pd.read_csv("sample_sights/demo_truth.csv")
    frame["dr_lat"], frame["dr_lon"] = truth.true_lat_deg, truth.true_lon_deg
    reduced = reduce_sights(frame)
    assert (reduced.status == "ok").all()
    assert np.abs(reduced.intercept_nm).max() < 1.2


def test_dut1_from_the_log_where_given_and_from_the_table_elsewhere():
    sights = pd.DataFrame({"utc": ["2026-03-26T19:41:00Z"] * 2, "body": ["Sirius"] * 2, "hs": [30.0, 30.0],
                           "eye_height_m": [2.8, 2.8], "dr_lat": [43.2, 43.2], "dr_lon": [-13.1, -13.1],
                           "dut1_s": ["-0.3", ""]})
    reduced = reduce_sights(sights)
    assert list(reduced.ut1_source) == ["given by the caller", "IERS measured"]
    assert reduced.dut1_s[0] == -0.3
    # 0.355 s of UT1 is about 0.09′ of GHA (15″ per second of time; common practice)
    difference = (reduced.gha_deg[0] - reduced.gha_deg[1]) * 60
    expected = (reduced.dut1_s[0] - reduced.dut1_s[1]) * 15.0 / 60 * 1.0027379
    assert difference == pytest.approx(expected, abs=0.001)


def test_star_sights_on_the_sea_horizon_are_checked_against_the_suns_altitude(ts, eph):
    """A star on the sea horizon is taken in twilight: the Sun between about 3° and 12° below the horizon
    (common practice: the sky dark enough for the stars from about −3°; past −12°, the end of nautical
    twilight by the almanac's definition, the horizon cannot be made out). Reference: skyfield's altitudes
    of the star and of the Sun at 45° 15′ N 20° 30′ W on 15 September 2024: Dubhe with the Sun 46° up and
    Vega with it 38° below are warned; Dubhe with it 5° below is not; a bubble horizon needs no sea."""
    from skyfield.api import wgs84

    place = eph["earth"] + wgs84.latlon(45.25, -20.5)
    rows, sun = [], []
    for body, when in (("Dubhe", "2024-09-15T14:00:00Z"), ("Vega", "2024-09-15T23:40:00Z"),
                       ("Dubhe", "2024-09-15T19:57:00Z")):
        rows.append(skyfield_sight(ts, eph, body, when, 45.25, -20.5))
        t = ts.from_datetime(pd.Timestamp(when).to_pydatetime())
        sun.append(place.at(t).observe(eph["sun"]).apparent().altaz()[0].degrees)
    assert sun[0] > 40 and sun[1] < -30 and -6 < sun[2] < -4
    frame = pd.DataFrame(rows)
    reduced = reduce_sights(frame)
    assert "Sun is 46° up" in reduced.message[0] and "taken in twilight" in reduced.message[0]
    assert "Sun is 38° below the horizon" in reduced.message[1] and "nautical twilight" in reduced.message[1]
    assert "Sun" not in reduced.message[2] and reduced.status[2] == "ok"
    bubble = reduce_sights(frame.assign(horizon="bubble", hs=[r["true_alt_deg"] + 0.0 for r in rows]))
    assert not bubble.message.str.contains("Sun").any()


def numeric_frame(n: int, seed: int = 5, **extra) -> pd.DataFrame:
    """Invented numeric sights (random bodies, instants, Hs and DRs, for arithmetic only): numbers and
    instants as a notebook holds them, with some rows a reader refuses (Hs out of range, a blank eye)."""
    rng = np.random.default_rng(seed)
    bodies = np.array(["Sun", "Moon", "Venus", "Jupiter", "Vega", "Sirius", "Canopus", "Arcturus"])
    seconds = np.sort(rng.integers(0, 200 * 86400, n))
    frame = pd.DataFrame({
        "utc": pd.Timestamp("2025-01-01", tz="UTC") + pd.to_timedelta(seconds, unit="s"),
        "body": bodies[rng.integers(0, len(bodies), n)], "limb": "lower", "hs": rng.uniform(10, 80, n),
        "index_error_arcmin": rng.uniform(-2, 2, n), "eye_height_m": rng.uniform(2, 20, n),
        "dr_lat": rng.uniform(-60, 60, n), "dr_lon": rng.uniform(-180, 180, n), **extra})
    frame.loc[frame.index[::97], "hs"] = 95.0
    frame.loc[frame.index[5::101], "eye_height_m"] = np.nan
    return frame


@pytest.mark.parametrize("extra", [{}, {"observer": ["Ann", "ann", " ANN ", "Bo"] * 100, "vessel": "Kestrel"},
                                   {"fix_group": [f"g{k // 4}" for k in range(400)], "course_deg": 90.0,
                                    "speed_kn": 12.0},
                                   # texts with missing cells, a column mixing texts and numbers, and longitudes
                                   # of zero (blocks of +0.0 only, blocks with -0.0) among others
                                   {"observer": ["Ann", None, " ANN ", np.nan] * 100,
                                    "vessel": ["Kestrel", 7, None, "Tern"] * 100,
                                    "dr_lon": [0.0] * 74 + [-0.0, 0.0] * 63 + [12.5] * 200}])
def test_a_long_numeric_frame_read_in_blocks_is_the_frame_read_whole(monkeypatch, extra):
    """A DataFrame of numbers longer than a block is read and reduced a block of rows at a time (shared among
    processes): the table is the one reading the whole frame gives, automatic fix groups, observers' spellings
    and row numbers made across the blocks."""
    import warnings

    import navred.jobs.forking as forking
    import navred.jobs.sights as sights

    frame = numeric_frame(400, **extra)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        whole = reduce_sights(frame)
        monkeypatch.setattr(sights, "FRAME_BLOCK_ROWS", 37)
        assert sights.frame_blocks(frame, 37) is not None
        blocks = reduce_sights(frame)
        monkeypatch.setattr(forking, "cores", lambda: 1)  # the blocks worked by this process alone
        alone = reduce_sights(frame)
    pd.testing.assert_frame_equal(blocks, whole)
    pd.testing.assert_frame_equal(alone, whole)
    assert (blocks.status == "error").sum() >= 8 and blocks.row.tolist() == list(range(1, 401))
    for column in ("dr_lon_deg", "lha_deg", "current_set_deg"):  # a zero's sign is kept (-0.0 is written)
        assert (np.signbit(blocks[column]) == np.signbit(whole[column])).all(), column


def test_an_empty_numeric_frame_reduces_to_an_empty_table_as_its_text_does():
    """A notebook's filter that kept no sight (a frame of no rows, its instants a column of datetimes) reduces to
    an empty table with the columns the same frame of texts gives, not a fault."""
    frame = numeric_frame(3).iloc[:0]
    numbers, text = reduce_sights(frame), reduce_sights(frame.astype({"utc": str}))
    assert len(numbers) == len(text) == 0 and list(numbers.columns) == list(text.columns)


def test_a_whole_table_is_its_blocks_written_in_place():
    """The whole table of a long frame's blocks (each column made once, zeros lent by the system and blocks of
    zeros not written): each value is the block's own, a zero's sign too, whatever order the blocks come in;
    a column a block widens is widened; instants get their zone back."""
    from navred.jobs.sights import WholeTable

    whole = WholeTable(9)
    stamps = pd.Series(pd.to_datetime(["2026-01-01 12:00"] * 2)).to_numpy()
    whole.put(4, 6, {"x": (np.array([0.0, 0.0]), None), "n": (np.array([1, 2]), None),
                     "t": (np.array(["a", "b"], dtype=object), None), "utc": (stamps, "UTC")})
    whole.put(0, 2, {"x": (np.array([-0.0, 0.0]), None), "n": (np.array([0, 0]), None),
                     "t": (np.array(["c", "c"], dtype=object), None), "utc": (stamps, "UTC")})
    whole.put(2, 4, {"x": (np.array([1.5, 0.0]), None), "n": (np.array([0.5, 0.0]), None),
                     "t": (np.array(["", "d"], dtype=object), None), "utc": (stamps, "UTC")})
    whole.put(6, 9, {"x": (np.array([-0.0]), None), "n": (np.array([7.0]), None),  # one value for every row
                     "t": (np.array(["e"], dtype=object), None), "utc": (stamps[:1], "UTC")})
    columns = whole.finished()
    assert columns["x"].tolist() == [0.0, 0.0, 1.5, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0] and np.signbit(
        columns["x"]).tolist() == [True, False, False, False, False, False, True, True, True]
    assert columns["n"].tolist() == [0.0, 0.0, 0.5, 0.0, 1.0, 2.0, 7.0, 7.0, 7.0] and columns["n"].dtype == float
    assert columns["t"].tolist() == ["c", "c", "", "d", "a", "b", "e", "e", "e"]
    assert str(columns["utc"].dt.tz) == "UTC" and (columns["utc"] == pd.Timestamp("2026-01-01 12:00Z")).all()


def test_a_numeric_frame_gives_what_its_text_gives(tmp_path):
    """The numbers of a DataFrame reduced as they are (no text made of them) give the very results of the same
    table written as a CSV log and read as text: every added column, and every parsed number."""
    import warnings

    frame = numeric_frame(300)
    path = tmp_path / "numbers.csv"
    frame.assign(utc=frame.utc.dt.strftime("%Y-%m-%dT%H:%M:%SZ")).to_csv(path, index=False)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        numbers, text = reduce_sights(frame), reduce_sights(str(path))
    for column in [*RESULT_COLUMNS, "hs_deg", "dr_lat_deg", "dr_lon_deg", "eye_height_m", "index_error_arcmin",
                                    "utc_jd1", "utc_jd2", "sight_utc", "fix_group"]:
        pd.testing.assert_series_equal(numbers[column], text[column], check_dtype=False, obj=column)
