"""The hand working from an assumed position (navred.handworking), and the workbook's Working by hand sheet,
against a hand working done in this test from skyfield's sky.

Reference: skyfield (the same DE421 file, its own reduction): GHA = 15 × (GAST − RA) and Dec of date at the
whole hour, the next hour and the sight's instant, the same UT1 on both sides. The test then works each sight
as a sight book sets it out (common practice; the navigation manuals): the whole hour's GHA and Dec rounded
to 0.1′ as printed, the increment at the body's base rate, v and d from the hourly differences read for the
middle of the minute, the assumed position (the whole degree of latitude nearest the DR, the longitude that
makes LHA whole), the tables' Hc, d and Z by the cosine and azimuth formulas at the whole degrees, Hc by the d
correction, Zn from Z by the rule of the hemisphere and LHA. Every line must agree within the tables'
rounding (a tenth either way where two roundings meet).
"""

from __future__ import annotations

import math

import numpy as np
import openpyxl
import pandas as pd
import pytest

from navred.handworking import hand_working
from navred.jobs.voyage import process_log
from navred.jobs.voyagebook import write_workbook
from tests.conftest import ARCMIN, angle_diff_deg, sky_target, skyfield_sight

#: base rates of the increment tables, degrees an hour (common practice; from memory): Sun and planets 15°,
#: the Moon 14° 19.0′, Aries 15° 02.46′
BASE = {"Sun": 15.0, "Moon": 14.0 + 19.0 / 60.0, "Venus": 15.0, "Jupiter": 15.0, "star": 15.0 + 2.46 / 60.0}
SIGHTS = [  # body, UTC, the ship's position: both hemispheres, both sides of Greenwich, the body east and west
    ("Sun", "2024-06-21T09:17:41Z", 50.4, -4.3),
    ("Sun", "2024-12-05T02:44:10Z", -33.7, 151.6),
    ("Moon", "2024-06-16T20:12:30Z", 38.2, -28.9),
    ("Venus", "2024-02-10T05:31:05Z", 12.6, -61.2),
    ("Jupiter", "2024-11-20T03:08:50Z", -15.3, 72.4),
    ("Vega", "2024-09-15T19:05:20Z", 45.25, -20.5),
    ("Canopus", "2024-03-01T19:20:00Z", -31.9, 115.8),
    ("Arcturus", "2024-05-10T21:56:34Z", 46.6, -27.8),
]


def tenth(arcmin):
    return np.round(np.asarray(arcmin, dtype=float) * 10.0) / 10.0


def sky_at(ts, eph, name, when):
    """skyfield's GHA (of the body and of Aries) and Dec, degrees, and DUT1, at an instant."""
    t = ts.from_datetime(when.to_pydatetime())
    ra, dec, _ = eph["earth"].at(t).observe(sky_target(ts, eph, name)).apparent().radec(epoch="date")
    return (t.gast - ra.hours) * 15.0 % 360.0, t.gast * 15.0 % 360.0, dec.degrees, ra.hours * 15.0, t.dut1


def reference_working(ts, eph, name, when, lat, lon):
    """The sight worked by hand from skyfield's sky (this test's own arithmetic)."""
    star = name not in BASE
    hour = when.floor("h")
    minutes = (when - hour).total_seconds() / 60.0
    gha0, aries0, dec0, _, dut1 = sky_at(ts, eph, name, hour)
    gha1, aries1, dec1, _, _ = sky_at(ts, eph, name, hour + pd.Timedelta(hours=1))
    _, _, dec_t, ra_t, _ = sky_at(ts, eph, name, when)
    base = BASE["star" if star else name]
    hour_gha = tenth((aries0 if star else gha0) * 60.0)
    increment = tenth(base * minutes)
    middle = (math.floor(minutes) + 0.5) / 60.0
    v = np.nan if star or name == "Sun" else tenth(angle_diff_deg(gha1 - gha0, base) * 60.0)
    v_corr = tenth(v * middle)
    sha = tenth((360.0 - ra_t) * 60.0) if star else np.nan
    gha = ((hour_gha + increment + np.nan_to_num(v_corr) + np.nan_to_num(sha)) / 60.0) % 360.0
    d = np.nan if star else tenth((dec1 - dec0) * 60.0)
    dec = tenth(dec_t * 60.0) / 60.0 if star else (tenth(dec0 * 60.0) + tenth(d * middle)) / 60.0
    ap_lat = round(lat)
    lha = round((gha + lon) % 360.0) % 360
    ap_lon = (lha - gha + 180.0) % 360.0 - 180.0
    whole = math.copysign(math.floor(abs(dec)), dec)

    def altitude_z(dec_deg):
        # the cosine formula and the azimuth angle Z from the elevated pole (Bowditch, sight reduction)
        la, de, h = map(math.radians, (ap_lat, dec_deg, lha))
        hc = math.asin(math.sin(la) * math.sin(de) + math.cos(la) * math.cos(de) * math.cos(h))
        z = math.degrees(math.atan2(math.sin(h), math.cos(la) * math.tan(de) - math.sin(la) * math.cos(h)))
        z = abs(z)  # the angle at the zenith, 0-180°, from north
        return math.degrees(hc), (z if ap_lat >= 0 else 180.0 - z)

    hc0, z0 = altitude_z(whole)
    hc1, z1 = altitude_z(whole + (1.0 if dec >= 0 else -1.0))
    dec_minutes = abs(dec - whole) * 60.0
    tab_d = tenth((hc1 - hc0) * 60.0)
    hc = (tenth(hc0 * 60.0) + tenth(tab_d * dec_minutes / 60.0)) / 60.0
    z = round(round(z0, 1) + (round(z1, 1) - round(z0, 1)) * dec_minutes / 60.0, 1)
    east = lha > 180  # the body east of the meridian
    zn = (z if east else 360.0 - z) if ap_lat >= 0 else (180.0 - z if east else 180.0 + z)
    return {"gha_hour_deg": hour_gha / 60.0, "increment_arcmin": increment, "v_arcmin": v,
            "v_correction_arcmin": v_corr, "sha_deg": sha / 60.0, "gha_deg": gha, "dec_deg": dec,
            "d_arcmin": d, "ap_lat_deg": ap_lat, "ap_lon_deg": ap_lon, "lha_deg": lha, "tab_dec_deg": whole,
            "tab_hc_deg": tenth(hc0 * 60.0) / 60.0, "tab_d_arcmin": tab_d, "tab_z_deg": round(z0, 1),
            "hc_deg": hc, "z_deg": z, "zn_deg": zn % 360.0, "dut1": dut1}


#: how far each line may stand from the test's: a tenth where the two almanacs round either side of a
#: printed tenth, its sum for a sum of such lines (arcminutes, or degrees for Z and Zn)
TOLERANCE = {"gha_hour_deg": 0.1, "increment_arcmin": 1e-9, "v_arcmin": 0.1, "v_correction_arcmin": 0.1,
             "sha_deg": 0.1, "gha_deg": 0.2, "dec_deg": 0.2, "d_arcmin": 0.1, "tab_hc_deg": 0.1,
             "tab_d_arcmin": 0.1, "tab_z_deg": 0.1, "hc_deg": 0.3, "z_deg": 0.1, "zn_deg": 0.1}


@pytest.mark.parametrize("name, utc, lat, lon", SIGHTS)
def test_the_hand_working_is_the_one_done_from_skyfields_sky(ts, eph, name, utc, lat, lon):
    when = pd.Timestamp(utc)
    ref = reference_working(ts, eph, name, when, lat, lon)
    ours = hand_working(np.array([when.tz_convert(None).to_datetime64()], dtype="datetime64[ns]"), [name], [40.0],
                        [lat], [lon], dut1_s=[ref["dut1"]])
    for key, tolerance in TOLERANCE.items():
        got, want = float(getattr(ours, key)[0]), float(ref[key])
        if np.isnan(want):
            assert np.isnan(got), key
            continue
        degrees = key.endswith("_deg") and key not in ("tab_z_deg", "z_deg", "zn_deg")
        difference = angle_diff_deg(got, want) * (60.0 if degrees else 1.0)
        assert abs(difference) <= tolerance + 1e-9, f"{name} {key}: {got} against {want}"
    for key in ("ap_lat_deg", "lha_deg", "tab_dec_deg"):  # whole degrees, the same unless GHA sits on a half
        assert float(getattr(ours, key)[0]) == pytest.approx(ref[key]), key
    assert float(ours.ap_lon_deg[0]) == pytest.approx(ref["ap_lon_deg"], abs=0.2 * ARCMIN)
    assert abs(float(ours.ap_lon_deg[0]) - lon) <= 0.5 + 1e-9 and abs(float(ours.ap_lat_deg[0]) - lat) <= 0.5
    # the intercept from the AP: Ho (to 0.1′) less Hc
    assert float(ours.intercept_nm[0]) == pytest.approx((40.0 - float(ours.hc_deg[0])) * 60.0, abs=0.051)


def test_the_working_by_hand_sheet_is_the_same_reduction(ts, eph, tmp_path):
    """Reference: skyfield's sights (Sun, Moon, three stars) from a ship stopped at 38° 12′ N, 028° 54′ W,
    the DR 3 nm off. The sheet's lines are the skyfield hand working's, its Ho the Working sheet's, and its Ha
    plus the main correction make Ho."""
    when = pd.Timestamp("2024-06-16T20:12:30Z")
    bodies = [("Moon", ""), ("Vega", ""), ("Arcturus", ""), ("Antares", ""), ("Sun", "lower")]
    rows = []
    for k, (name, limb) in enumerate(bodies):
        at = when + pd.Timedelta(minutes=3 * k) if name != "Sun" else pd.Timestamp("2024-06-17T09:40:00Z")
        rows.append(skyfield_sight(ts, eph, name, at, 38.2, -28.9, limb=limb))
    frame = pd.DataFrame(rows).drop(columns=["true_alt_deg", "true_az_deg"])
    frame["dr_lat"], frame["dr_lon"], frame["fix_group"] = 38.25, -28.95, "round"
    voyage = process_log(frame, plan=False)
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "v.xlsx", plots=False))
    assert book.sheetnames.index("Working by hand") == book.sheetnames.index("Working") + 1
    values = list(book["Working by hand"].values)
    hand = pd.DataFrame(values[1:], columns=values[0])
    working = pd.DataFrame(list(book["Working"].values)[1:], columns=list(book["Working"].values)[0])
    assert list(hand["body"]) == [b for b, _ in bodies]
    assert list(hand.columns[3:8]) == ["UTC", "GHA at the whole hour (Aries for a star) (° ′)", "GHA increment (° ′)",
                                       "v (′)", "v correction (′)"]
    # the same reduction: Ho as the sight book adds it up (Ha and the main correction as written) is the Working
    # sheet's within the rounding of its lines (common practice)
    for ours, theirs in zip(hand["Ho (° ′)"], working["Ho (° ′)"]):
        assert abs(dm(ours) - dm(theirs)) <= 0.1 + 1e-9
    for row, (name, _) in zip(hand.to_dict("records"), bodies):
        ref = reference_working(ts, eph, name, pd.Timestamp(row["UTC"], tz="UTC"), 38.25, -28.95)
        assert abs(dm(row["GHA (° ′)"]) - ref["gha_deg"] * 60.0) <= 0.2 + 1e-9, name
        assert abs(dm(row["Dec (° ′)"]) - ref["dec_deg"] * 60.0) <= 0.2 + 1e-9, name
        assert abs(dm(row["tabulated Hc (° ′)"]) - ref["tab_hc_deg"] * 60.0) <= 0.1 + 1e-9, name
        assert abs(dm(row["Hc (° ′)"]) - ref["hc_deg"] * 60.0) <= 0.3 + 1e-9, name
        assert abs(angle_diff_deg(float(row["Zn (deg true)"]), ref["zn_deg"])) <= 0.1 + 1e-9, name
        assert abs(dm(row["Ha (° ′)"]) + float(row["main correction (′)"]) - dm(row["Ho (° ′)"])) <= 1e-9, name
        star = name in ("Vega", "Arcturus", "Antares")
        kind = "star" if star else name if name in ("Sun", "Moon") else "planet"
        # a line the almanac has no entry for says so and for which body (common practice: the almanac prints no v
        # for the Sun or a star, an SHA for stars only, no d or HP for a star)
        assert (row["v (′)"] == f"none: {kind}") == (star or name == "Sun")
        assert (row["SHA (° ′)"] == f"none: {kind}") == (not star)
        assert (row["HP (′)"] == "none: star") == star and (row["d (′, Dec growing north +)"] == "none: star") == star
        assert row["TOWARD/AWAY"] in ("TOWARD", "AWAY")
    for column in hand.columns:  # a blank says why
        assert all(v is not None and v != "" for v in hand[column]), column


def dm(text: str) -> float:
    """'41° 24.8′ N' (or a signed altitude) as arcminutes, south and west negative."""
    sign = -1.0 if text.strip().startswith("-") or text.strip()[-1:] in ("S", "W") else 1.0
    degrees, minutes = text.strip("-NSEW ").replace("′", "").split("°")
    return sign * (abs(float(degrees)) * 60.0 + float(minutes))


def test_the_working_by_hand_sheet_of_the_demo_is_rounded_as_a_sight_book(tmp_path):
    """Finding 11 of the navigator's trial: the demo's Working by hand sheet printed the dip as -2.945043293399946
    and the main correction as 14.724398214041372. Every figure is now written to 0.1′ (or 0.1° for Z and Zn), as
    the sheet's own headings say, and the lines add up as a sight book's do (common practice): Ha = Hs + IC + dip
    and Ho = Ha + main correction, to the tenth. The dip is the Nautical Almanac's dip table, D = 1.76′ √h (h in
    metres: the demo's 2.8 m gives 2.9′)."""
    voyage = process_log("sample_sights/demo_sights.csv")
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "demo.xlsx", plots=False))
    values = list(book["Working by hand"].values)
    hand = pd.DataFrame(values[1:], columns=values[0])
    assert len(hand) >= 5
    for column in hand.columns:
        numbers = [v for v in hand[column] if isinstance(v, float)]
        # a tenth and nothing more, never minus nought
        assert all(abs(v * 10 - round(v * 10)) < 1e-6 for v in numbers), (column, numbers)
        assert all(math.copysign(1.0, v) > 0 for v in numbers if v == 0), column
    assert set(hand["dip (′)"]) == {-round(1.76 * math.sqrt(2.8), 1)}  # Nautical Almanac dip table: 1.76′ √h
    assert set(hand["IC (′)"]) == {-1.4}  # the log's '1.4 on': on the arc, subtracted (common practice)
    for row in hand.to_dict("records"):
        ha = dm(row["Hs (° ′)"]) + row["IC (′)"] + row["dip (′)"]
        assert abs(dm(row["Ha (° ′)"]) - ha) < 1e-9, row["row in log"]
        assert abs(dm(row["Ho (° ′)"]) - (ha + row["main correction (′)"])) < 1e-9, row["row in log"]
