"""Planning: twilight, meridian passage, the sight plan, compass checks and identification,
against skyfield's almanac searches and published formulas."""

from __future__ import annotations

import itertools

import numpy as np
import pandas as pd
import pytest

from navred.compass import (
    amplitude_deg,
    compass_error_deg,
    deviation_deg,
    true_azimuth,
    visible_horizon_altitude_deg,
)
from navred.errors import NavredError
from navred.identify import identify
from navred.plan import body_meridian_passage, noon_sight, sun_events
from navred.reckoning import steady_track
from navred.sightplan import best_set, position_dop, sight_plans, twilight_plans
from tests.conftest import angle_diff_deg, frozen, rhumb_integrated, sky_target

PLACES = [(0.0, -30.0), (20.0, 150.0), (-35.0, 18.0), (45.0, -20.5), (55.0, 5.0), (60.0, -3.0), (-60.0, -65.0)]
DATES = ["2024-03-20", "2024-06-21", "2024-09-22", "2024-12-21"]
SUN_EVENTS = ("nautical_dawn", "civil_dawn", "sunrise", "sunset", "civil_dusk", "nautical_dusk")


def _window(ts, date, lon):
    start = (pd.Timestamp(date + "T00:00Z") - pd.Timedelta(hours=lon / 15.0)).round("s")
    return (ts.from_datetime(start.to_pydatetime()),
            ts.from_datetime((start + pd.Timedelta(hours=24)).to_pydatetime()))


def _minutes(a, b):
    return abs((pd.Timestamp(a) - pd.Timestamp(b).tz_localize(None)).total_seconds()) / 60.0


@pytest.mark.parametrize("lat, lon", PLACES)
def test_sun_events_against_skyfield(ts, eph, lat, lon):
    """Reference: skyfield almanac.dark_twilight_day with find_discrete (sunrise -0.8333°, civil -6°,
    nautical -12°) at a fixed position, every season: within 1 minute; events that do not happen
    (white nights, midnight sun, polar night) reported as None, not as wrong times."""
    from skyfield import almanac
    from skyfield.api import wgs84

    place = wgs84.latlon(lat, lon)
    for date in DATES:
        ours = sun_events(date, lat, lon)

        def search(date=date):
            t0, t1 = _window(ts, date, lon)
            times, states = almanac.find_discrete(t0, t1, almanac.dark_twilight_day(eph, place))
            previous = int(almanac.dark_twilight_day(eph, place)(t0))
            found = {}
            for t, state in zip(times, states):
                state = int(state)
                key = {(1, 2): "nautical_dawn", (2, 3): "civil_dawn", (3, 4): "sunrise",
                       (4, 3): "sunset", (3, 2): "civil_dusk", (2, 1): "nautical_dusk"}.get((previous, state))
                if key and key not in found:
                    found[key] = t.utc_datetime()
                previous = state
            # each event as POSIX seconds, NaN where it does not happen (the form the frozen file keeps)
            return [pd.Timestamp(found[k]).timestamp() if k in found else float("nan") for k in SUN_EVENTS]

        found = {k: pd.Timestamp(v, unit="s", tz="UTC")
                 for k, v in zip(SUN_EVENTS, frozen(f"sun events {lat} {lon} {date}", search)) if np.isfinite(v)}
        for key in SUN_EVENTS:
            if key in found:
                assert ours[key] is not None, (lat, date, key)
                assert _minutes(ours[key], found[key]) < 1.0, (lat, date, key)
            else:
                assert ours[key] is None, (lat, date, key, ours[key])


def test_polar_cases_are_reported_as_not_happening():
    # midnight sun at 78° N in June, polar night in December (common practice)
    june = sun_events("2024-06-21", 78.0, 15.0)
    assert june["sunrise"] is None and june["sunset"] is None and june["nautical_dusk"] is None
    december = sun_events("2024-12-21", 78.0, 15.0)
    assert december["sunrise"] is None and december["civil_dawn"] is None
    assert june["meridian_passage"] is not None  # the Sun still crosses the meridian


@pytest.mark.parametrize("lat, lon", PLACES[:5])
def test_meridian_passage_against_skyfield(ts, eph, lat, lon):
    # Reference: skyfield almanac.meridian_transits with find_discrete: within 20 seconds
    from skyfield import almanac
    from skyfield.api import wgs84

    for date in DATES:
        def search(date=date):
            t0, t1 = _window(ts, date, lon)
            times, kinds = almanac.find_discrete(t0, t1, almanac.meridian_transits(eph, eph["sun"],
                                                                                    wgs84.latlon(lat, lon)))
            return [pd.Timestamp(times[kinds == 1][0].utc_datetime()).timestamp()]

        transit = pd.Timestamp(frozen(f"sun transit {lat} {lon} {date}", search)[0], unit="s", tz="UTC")
        ours = sun_events(date, lat, lon)["meridian_passage"]
        assert _minutes(ours, transit) * 60 < 20.0


def test_moving_vessel_events_follow_the_track(ts, eph):
    # a vessel steaming east at 20 knots sees sunset later than a fixed observer at its start
    fixed = sun_events("2024-09-15", 45.0, -20.0)
    moving = sun_events("2024-09-15", 45.0, -20.0, course_deg=270.0, speed_kn=20.0)
    assert pd.Timestamp(moving["sunset"]) > pd.Timestamp(fixed["sunset"])
    # and the sunset time is skyfield's for the vessel's DR at that moment (within a minute)
    from skyfield import almanac
    from skyfield.api import wgs84

    # the DR given is for 00:00 zone time, the ship's clock: ZD +1 at 20° W (−round(λ/15°), common practice)
    track = steady_track(45.0, -20.0, np.datetime64("2024-09-15T00:00") + np.timedelta64(60, "m"), 270.0, 20.0)
    lat, lon = track.position(np.array([moving["sunset"]]))
    t0, t1 = _window(ts, "2024-09-15", float(lon[0]))
    times, states = almanac.find_discrete(t0, t1, almanac.sunrise_sunset(eph, wgs84.latlon(float(lat[0]), float(lon[0]))))
    sunset = [t for t, s in zip(times, states) if not s][0].utc_datetime()
    assert _minutes(moving["sunset"], sunset) < 1.0


@pytest.mark.parametrize("lon, zone_h, utc", [
    (177.0, None, "2026-12-09T12:00"),  # ZD −12 east of 172.5° E: 00:00 on the 10th is 12:00 UTC on the 9th
    (-177.0, None, "2026-12-10T12:00"),  # ZD +12 west of 172.5° W
    (183.0, None, "2026-12-10T12:00"),  # 183° E is 177° W
    (-20.0, None, "2026-12-10T01:00"),  # ZD +1 (local mean time would be 01:20)
    (7.4, None, "2026-12-10T00:00"),  # ZD 0 up to 7.5° E
    (177.0, -11.0, "2026-12-09T13:00"),  # the zone the ship keeps, given, not the longitude's
    (-20.0, 0.0, "2026-12-10T00:00"),
])
def test_the_dr_of_a_date_is_given_for_00_00_by_the_ships_clock(lon, zone_h, utc):
    """Trial finding: a DR "at 00:00 of the first date" was taken at 00:00 local mean time, 12 minutes from the
    ship's clock at 177° E (2.4′ of a 12-knot DR). It is 00:00 zone time: ZT + ZD = UTC with ZD the zone kept, else
    the nautical zone of the longitude, −round(λ/15°) (common practice)."""
    from navred.plan import zone_midnight

    assert zone_midnight("2026-12-10", lon, zone_h) == np.datetime64(utc, "ns")


def test_a_zone_description_out_of_range_is_refused_naming_it():
    from navred.plan import zone_midnight

    with pytest.raises(NavredError, match=r"zone description 13.0 is outside −12 to \+12 hours"):
        zone_midnight("2026-12-10", 0.0, 13.0)


def test_dip_makes_the_sun_rise_earlier_and_set_later():
    # a higher eye sees past the Sun's true horizon: earlier rising, later setting (common practice)
    sea = sun_events("2024-09-15", 45.0, -20.0)
    high = sun_events("2024-09-15", 45.0, -20.0, eye_height_m=30.0)
    assert pd.Timestamp(high["sunrise"]) < pd.Timestamp(sea["sunrise"])
    assert pd.Timestamp(high["sunset"]) > pd.Timestamp(sea["sunset"])


def test_noon_altitude_and_star_meridian_passage(ts, eph):
    # Reference: skyfield's altitude of the Sun at navred's meridian passage: 90° − |φ − δ|
    from skyfield.api import wgs84

    noon = noon_sight("2024-09-15", 45.0, -20.0)
    t = ts.from_datetime(pd.Timestamp(noon["utc"]).round("us").tz_localize("UTC").to_pydatetime())
    alt, az, _ = (eph["earth"] + wgs84.latlon(noon["lat_deg"], noon["lon_deg"])).at(t).observe(eph["sun"]).apparent().altaz()
    assert noon["hc_deg"] == pytest.approx(alt.degrees, abs=0.05)  # geocentric vs topocentric: 0.15′
    assert noon["bearing"] == "S" and abs(az.degrees - 180.0) < 0.1
    vega = body_meridian_passage("Vega", np.datetime64("2024-09-15T21:00"), steady_track(45.0, -20.0, np.datetime64("2024-09-15T00:00")))
    t = ts.from_datetime(pd.Timestamp(vega["utc"]).round("us").tz_localize("UTC").to_pydatetime())
    alt, az, _ = (eph["earth"] + wgs84.latlon(45.0, -20.0)).at(t).observe(sky_target(ts, eph, "Vega")).apparent().altaz()
    assert abs(angle_diff_deg(az.degrees, 0.0 if vega["bearing"] == "N" else 180.0)) < 0.05


def test_amplitude_against_the_formula_and_skyfield(ts, eph):
    # sin A = sin δ / cos φ (common practice), and skyfield's azimuth at the Sun's true rising
    from skyfield import almanac
    from skyfield.api import wgs84

    assert float(amplitude_deg(20.0, 50.0)) == pytest.approx(np.degrees(np.arcsin(np.sin(np.radians(20)) / np.cos(np.radians(50)))))
    for lat, date in ((45.0, "2024-06-21"), (-30.0, "2024-09-01"), (10.0, "2024-12-21")):
        place = wgs84.latlon(lat, 0.0)
        t0 = ts.from_datetime(pd.Timestamp(date + "T00:00Z").to_pydatetime())
        t1 = ts.from_datetime(pd.Timestamp(date + "T23:59Z").to_pydatetime())
        rise, _ = almanac.find_risings(eph["earth"] + place, eph["sun"], t0, t1, horizon_degrees=0.0)
        _, az, _ = (eph["earth"] + place).at(rise[0]).observe(eph["sun"]).apparent().altaz()
        # skyfield's apparent declination then (the amplitude's input, independent of navred's almanac)
        dec = eph["earth"].at(rise[0]).observe(eph["sun"]).apparent().radec(epoch="date")[1].degrees
        assert abs((90.0 - float(amplitude_deg(dec, lat))) - az.degrees) < 0.1
    # at the visible sea horizon the centre is 34.5′ below the true horizon at sea level
    assert float(visible_horizon_altitude_deg(0.0)) * 60 == pytest.approx(-34.5, abs=0.1)
    assert float(visible_horizon_altitude_deg(16.0)) < float(visible_horizon_altitude_deg(0.0))


def test_true_azimuth_against_skyfield(ts, eph):
    # Reference: skyfield topocentric azimuth: within 0.1°
    from skyfield.api import wgs84

    rng = np.random.default_rng(6)
    for name in ("Sun", "Vega", "Jupiter", "Moon", "Canopus"):
        for _ in range(4):
            lat, lon = rng.uniform(-55, 55), rng.uniform(-180, 180)
            when = (pd.Timestamp("2024-01-01T00:00Z") + pd.Timedelta(hours=rng.uniform(0, 8000))).round("s")
            t = ts.from_datetime(when.to_pydatetime())
            alt, az, _ = (eph["earth"] + wgs84.latlon(lat, lon)).at(t).observe(sky_target(ts, eph, name)).apparent().altaz()
            if alt.degrees < 2:
                continue
            zn, _ = true_azimuth(name, when, lat, lon)
            assert abs(angle_diff_deg(zn, az.degrees)) < 0.1


def test_compass_error_and_deviation():
    # compass least, error east; deviation = error - variation (common practice)
    assert float(compass_error_deg(95.0, 92.0)) == pytest.approx(3.0)
    assert float(compass_error_deg(2.0, 358.0)) == pytest.approx(4.0)
    assert float(deviation_deg(3.0, -4.0)) == pytest.approx(7.0)
    assert np.allclose(deviation_deg(compass_error_deg([95.0, 90.0], [92.0, 93.0]), 2.0), [1.0, -5.0])


def brute_force_least_dop(zn_deg, count):
    # independent of navred: each set's H = [cos Z, sin Z, 1], DOP = √(position part of inv(HᵀH))
    best = np.inf
    for combo in itertools.combinations(range(len(zn_deg)), count):
        z = np.radians(np.asarray(zn_deg)[list(combo)])
        h = np.column_stack([np.cos(z), np.sin(z), np.ones_like(z)])
        try:
            inv = np.linalg.inv(h.T @ h)
        except np.linalg.LinAlgError:
            continue
        best = min(best, float(np.sqrt(inv[0, 0] + inv[1, 1])))
    return best


@pytest.mark.parametrize("seed", range(5))
def test_recommended_set_has_the_least_dop_of_every_triple(seed):
    # a synthetic sky: 12 bodies of equal brightness at random azimuths
    zn = np.random.default_rng(seed).uniform(0, 360, 12)
    chosen, dop, least = best_set(zn[None], np.zeros((1, 12)), 3)
    assert dop[0] == pytest.approx(brute_force_least_dop(zn, 3), rel=1e-9)
    assert float(position_dop(zn[chosen[0]])) == pytest.approx(dop[0])


def test_brighter_bodies_are_preferred_among_near_equal_sets():
    zn = np.array([0.0, 120.0, 240.0, 1.0, 121.0, 241.0])
    mag = np.array([2.5, 2.5, 2.5, 0.0, 0.0, 0.0])
    chosen, dop, least = best_set(zn[None], mag[None], 3)
    assert sorted(chosen[0]) == [3, 4, 5]


def test_sight_plan_lists_bodies_within_limits_and_explains_the_choice():
    plan = sight_plans(np.datetime64("2024-09-15T19:30"), 45.0, -20.0, count=4)[0]
    assert np.all((plan.hc_deg >= 15) & (plan.hc_deg <= 70))
    assert plan.recommended.sum() == 4
    assert "dilution of precision" in plan.explanation
    moonlit = plan.moon_separation_deg[plan.recommended]
    assert np.all((moonlit >= 15) | (plan.body[plan.recommended] == "Moon"))
    with pytest.raises(NavredError, match="3, 4 or 5"):
        sight_plans(np.datetime64("2024-09-15T19:30"), 45.0, -20.0, count=6)


def test_identification_ranks_the_true_star_first(ts, eph):
    """200 random (star, place, instant) cases from skyfield's topocentric altitude and azimuth,
    with 1° of altitude and 3° of azimuth error: the true star ranks first in at least 95 %."""
    from skyfield.api import wgs84

    from navred.stars import star_table

    rng = np.random.default_rng(2024)
    names = list(star_table().name)
    hits = trials = 0
    while trials < 200:
        name = names[rng.integers(len(names))]
        lat, lon = rng.uniform(-60, 60), rng.uniform(-180, 180)
        when = (pd.Timestamp("2024-01-01T00:00Z") + pd.Timedelta(hours=rng.uniform(0, 8700))).round("s")

        def observed(name=name, lat=lat, lon=lon, when=when):
            t = ts.from_datetime(when.to_pydatetime())
            alt, az, _ = (eph["earth"] + wgs84.latlon(lat, lon)).at(t).observe(
                sky_target(ts, eph, name)).apparent().altaz()
            return [alt.degrees, az.degrees]

        alt_deg, az_deg = frozen(f"altaz {name} {lat!r} {lon!r} {when.isoformat()}", observed)
        if not 10.0 < alt_deg < 80.0:
            continue
        trials += 1
        ranked = identify(alt_deg + rng.normal(0, 1.0), az_deg + rng.normal(0, 3.0), when, lat, lon)
        hits += ranked["body"][0] == name
    assert hits / trials >= 0.95, hits


def test_a_passage_is_planned_morning_and_evening():
    events, plans = twilight_plans("2024-10-01", 10, 20.0, -30.0, course_deg=260.0, speed_kn=6.0)
    assert len(plans) == 20
    assert all(plan.recommended.sum() == 3 for plan in plans)
    times = [plan.utc for plan in plans]
    assert times == sorted(times)


def test_no_star_is_recommended_while_the_sun_is_up(ts, eph):
    """Reference: skyfield's topocentric altitude of the Sun. Over a year of random instants and places,
    whenever the Sun stands above the horizon no star is in the plan, recommended or listed; by day the
    recommended pair is the Sun and the Moon or a bright planet, their lines crossing at 30° or more."""
    from skyfield.api import wgs84

    from navred.sightplan import sight_plans
    from navred.stars import star_table

    rng = np.random.default_rng(365)
    n = 120
    when = np.datetime64("2026-01-01T00:00", "ns") + (rng.uniform(0, 365 * 86400, n) * 1e6).astype(int).astype("timedelta64[us]")
    lat, lon = rng.uniform(-60, 60, n), rng.uniform(-180, 180, n)
    plans = sight_plans(when, lat, lon)
    stars = set(star_table().name)
    t = ts.from_datetimes([pd.Timestamp(w, tz="UTC").to_pydatetime() for w in when])
    sun_alt = np.array([(eph["earth"] + wgs84.latlon(la, lo)).at(t[k]).observe(eph["sun"]).apparent().altaz()[0].degrees
                        for k, (la, lo) in enumerate(zip(lat, lon))])
    day = sun_alt > 0.05  # clear of the small difference between a geocentric and a topocentric Sun
    assert 30 < day.sum() < 90
    for plan, up in zip(plans, day):
        if up:
            assert not (set(plan.body) & stars), plan.body
            picked = set(plan.body[plan.recommended])
            assert picked == set() or (len(picked) == 2 and "Sun" in picked)
            if picked:
                zn = plan.zn_deg[plan.recommended]
                crossing = abs((zn[0] - zn[1] + 180) % 360 - 180)
                assert min(crossing, 180 - crossing) >= 30
    night = [p for p, up in zip(plans, day) if not up and sun_alt[plans.index(p)] < -0.05]
    assert any(set(p.body) & stars for p in night)


def test_daytime_fix_windows():
    # the invented demo passage (sample_sights/README.md): Sun with the Moon, Venus or Jupiter by day
    from navred.sightplan import daytime_fix_windows, sight_plans

    windows = daytime_fix_windows("2026-03-26", 2, 44.5, -12.0, course_deg=215, speed_kn=6.5)
    assert windows and {w.body for w in windows} <= {"Moon", "Venus", "Jupiter", "Mars"}
    # the track starts at 00:00 local mean time at 12° W (00:48 UTC, 15° of longitude an hour)
    start = np.datetime64("2026-03-26T00:48", "ns")
    for window in windows:
        assert window.start <= window.best <= window.end and window.crossing_deg >= 30
        assert 15 <= window.sun_hc_deg <= 70 and 15 <= window.body_hc_deg <= 70
        # the day plan at the DR then (sailed in the test on WGS 84 from the start) sees the pair too
        hours = (window.best - start) / np.timedelta64(1, "h")
        lat, lon = rhumb_integrated(44.5, -12.0, 215.0, 6.5 * hours)
        plan = sight_plans(np.array([window.best]), float(lat), float(lon))[0]
        assert "Sun" in plan.body and window.body in plan.body


def test_a_compass_check_refuses_a_body_below_the_horizon():
    from navred.compass import compass_check
    from navred.errors import NavredError

    with pytest.raises(NavredError, match="below the horizon"):
        compass_check("Sun", "2026-03-26T01:30:00Z", 43.3, -13.2)  # the middle of the night at 13° W
    zn, hc = compass_check("Sun", "2026-03-26T17:30:00Z", 43.3, -13.2)
    assert hc > 0 and 200 < zn < 300


def test_the_moons_magnitude_follows_its_phase(ts, eph):
    """Reference: the Moon's phase angle from skyfield (the angle at the Moon between the Sun and the Earth, DE421)
    put into Allen's formula, −12.73 + 0.026 |α| + 4e-9 α⁴ (Astrophysical Quantities, 3rd ed., §66; from memory):
    navred's magnitude within 0.05 at new, crescent, quarter, gibbous and full; a five-day crescent is about −9,
    not the −11 of a fixed figure, and the full Moon about −12.7."""
    from navred.magnitudes import magnitudes

    when = np.array(["2026-12-05T12:00", "2026-12-09T12:00", "2026-12-14T12:00", "2026-12-20T12:00",
                     "2026-12-24T12:00"], dtype="datetime64[ns]")

    def compute():
        t = ts.from_datetimes(pd.DatetimeIndex(when).tz_localize("UTC").to_pydatetime())
        moon = eph["moon"].at(t)
        return list(moon.observe(eph["sun"]).separation_from(moon.observe(eph["earth"])).degrees)

    alpha = np.asarray(frozen("moon-phase-angle|2026-12", compute))
    allen = -12.73 + 0.026 * alpha + 4e-9 * alpha**4
    ours = magnitudes(["Moon"] * when.size, when)
    assert np.abs(ours - allen).max() <= 0.05, (ours, allen)
    assert ours.min() < -12.4 and ours.max() > -9.0
