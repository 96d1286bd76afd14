"""Shared fixtures and tolerances, in navigation units.

The reference libraries (skyfield, PyEphem) are used offline: skyfield reads
the DE421 file shipped by skyfield-data and its own built-in UT1 and
leap-second tables (load.timescale(builtin=True)); nothing is downloaded.
"""

from __future__ import annotations

import importlib.resources
import json
import math
import os
import socket
import warnings
from pathlib import Path

import numpy as np
import pytest
from hypothesis import settings

# Every property-based test is seeded (the same examples every run, as a suite must be) and has no deadline
# (a shared, busy machine must not turn a slow example into a failure); nothing is kept between runs.
settings.register_profile("navred", derandomize=True, deadline=None, database=None)
settings.load_profile("navred")

#: skyfield's results for the test's syntheses, frozen by scripts/freeze_skyfield_references.py (which names
#: the skyfield version in the file); a result not in the file is computed live. tests/test_references.py
#: recomputes a sample live, so that the file cannot drift unnoticed.
FROZEN_PATH = Path(__file__).resolve().parent / "data" / "skyfield_frozen.json"
_RECORDING = os.environ.get("NAVRED_FREEZE_SKYFIELD") == "1"
_FROZEN = (json.loads(FROZEN_PATH.read_text(encoding="utf-8"))["results"]
           if FROZEN_PATH.exists() and not _RECORDING else {})
_RECORDED: dict[str, list[float]] = {}
#: the results computed live this run (not in the file: a new or changed synthesis), counted so that the run says
#: the file wants refreezing (each costs tens of milliseconds every run until it is frozen)
_LIVE: set[str] = set()
_LIVE_KEY = "navred_skyfield_live"
_WORKERS_LIVE: list[int] = []


def frozen(key: str, compute):
    """skyfield's result for ``key`` from the frozen file, or computed now by ``compute()`` (a list of floats)."""
    if key in _FROZEN:
        return _FROZEN[key]
    _LIVE.add(key)
    value = [float(v) for v in compute()]
    if _RECORDING:
        _RECORDED[key] = value
    return value


def is_frozen(key: str) -> bool:
    """Whether skyfield's result for ``key`` is in the frozen file (a synthesis may then skip computing it)."""
    return key in _FROZEN


def pytest_sessionfinish(session, exitstatus):
    if hasattr(session.config, "workeroutput"):  # a pytest-xdist worker: its count goes to the controller
        session.config.workeroutput[_LIVE_KEY] = len(_LIVE)
    if _RECORDING and _RECORDED:
        import skyfield

        FROZEN_PATH.parent.mkdir(parents=True, exist_ok=True)
        FROZEN_PATH.write_text(json.dumps({
            "about": "skyfield results of the test suite's syntheses, made by scripts/freeze_skyfield_references.py",
            "skyfield": skyfield.__version__, "ephemeris": "de421.bsp from skyfield-data",
            "timescale": "load.timescale(builtin=True)",
            "results": dict(sorted(_RECORDED.items()))}, indent=0) + "\n", encoding="utf-8")


@pytest.hookimpl(optionalhook=True)
def pytest_testnodedown(node, error):
    _WORKERS_LIVE.append(getattr(node, "workeroutput", {}).get(_LIVE_KEY, 0))


def pytest_terminal_summary(terminalreporter):
    live = sum(_WORKERS_LIVE) + len(_LIVE)
    if live and not _RECORDING:
        terminalreporter.write_line(
            f"{live:,} skyfield results were computed live, not read from {FROZEN_PATH.name} (a new or changed "
            "synthesis; slower every run until frozen): python scripts/freeze_skyfield_references.py", yellow=True)


ARCMIN = 1.0 / 60.0  # one arcminute in degrees
ARCSEC = 1.0 / 3600.0
NM = 1.0  # one nautical mile (= one arcminute of great circle)


@pytest.fixture(scope="session")
def ts():
    from skyfield.api import load

    return load.timescale(builtin=True)


@pytest.fixture(scope="session")
def eph():
    from skyfield.api import load

    return load(str(importlib.resources.files("skyfield_data") / "data" / "de421.bsp"))


@pytest.fixture(scope="session")
def sky_bodies(eph):
    """skyfield targets for the solar-system bodies navred knows (same DE421 segments)."""
    return {"Sun": eph["sun"], "Moon": eph["moon"], "Venus": eph["venus"], "Mars": eph["mars"],
            "Jupiter": eph["jupiter barycenter"], "Saturn": eph["saturn barycenter"]}


def sky_star(ts, name):
    """A skyfield Star built from navred's Hipparcos 2 row (same catalogue values, independent code)."""
    from skyfield.api import Star

    from navred.stars import star_index, star_table

    table = star_table()
    i = star_index(name)
    return Star(ra_hours=table.ra_deg[i] / 15.0, dec_degrees=table.dec_deg[i],
                ra_mas_per_year=table.pm_ra_cosdec_mas_per_year[i],
                dec_mas_per_year=table.pm_dec_mas_per_year[i],
                parallax_mas=table.parallax_mas[i], epoch=ts.J(1991.25))


def angle_diff_deg(a, b):
    """Signed difference a - b wrapped into [-180, 180) degrees."""
    return (np.asarray(a) - np.asarray(b) + 180.0) % 360.0 - 180.0


def utc_of(t):
    """numpy datetime64[ns] UTC instants of a skyfield Time (no leap-second instants)."""
    parts = t.utc
    base = np.datetime64("1970-01-01", "ns")
    days = (np.array([np.datetime64(f"{int(y):04d}-{int(m):02d}-{int(d):02d}", "D")
                      for y, m, d in zip(np.atleast_1d(parts[0]), np.atleast_1d(parts[1]),
                                         np.atleast_1d(parts[2]))]) - np.datetime64("1970-01-01", "D"))
    seconds = (np.atleast_1d(parts[3]) * 3600 + np.atleast_1d(parts[4]) * 60 + np.atleast_1d(parts[5]))
    return base + days.astype("timedelta64[D]") + (np.round(seconds * 1e9)).astype("timedelta64[ns]")


@pytest.fixture
def no_network(monkeypatch):
    """Make every attempt to open a socket fail loudly."""
    import ssl  # noqa: F401  (the standard library's modules that subclass socket.socket, imported first:
    import urllib.request  # noqa: F401  their import is no connection, and cannot subclass the stand-in)

    def refuse(*args, **kwargs):
        raise AssertionError("navred tried to open a network connection")

    monkeypatch.setattr(socket, "socket", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)
    monkeypatch.setattr(socket, "getaddrinfo", refuse)
    yield


@pytest.fixture
def quiet_navred_warnings():
    """For checks whose instants are past the IERS table on purpose (skyfield extrapolates UT1)."""
    from navred.errors import NavredWarning

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", NavredWarning)
        yield


WGS84_A_M, WGS84_F = 6378137.0, 1 / 298.257223563  # the WGS 84 ellipsoid (NIMA TR8350.2)


def rhumb_integrated(lat_deg, lon_deg, course_deg, distance_nm, steps=None):
    """The rhumb line sailed by integrating dφ/ds = cos C / ρ(φ), dλ/ds = sin C / (ν(φ) cos φ) with
    Runge-Kutta steps on the WGS 84 ellipsoid (ρ, ν the radii of curvature in the meridian and the
    prime vertical; common geodesy): the truth of a track steered on one course. The tests' own code,
    independent of navred.sailings and navred.reckoning. ``steps`` defaults to four a mile (RK4's error
    is then far below a millimetre)."""
    e2 = WGS84_F * (2 - WGS84_F)
    c = np.radians(course_deg)
    if steps is None:
        steps = int(min(max(16, np.ceil(np.max(np.abs(distance_nm)) * 4)), 4000))
    h = np.asarray(distance_nm, dtype=float) * 1852.0 / steps

    def derivative(phi):
        w = 1 - e2 * np.sin(phi) ** 2
        rho = WGS84_A_M * (1 - e2) / w**1.5
        nu = WGS84_A_M / np.sqrt(w)
        return np.cos(c) / rho, np.sin(c) / (nu * np.cos(phi))

    phi, lam = np.radians(lat_deg), np.radians(lon_deg)
    if all(np.ndim(v) == 0 for v in (lat_deg, lon_deg, course_deg, distance_nm)):
        return _rhumb_integrated_scalar(float(phi), float(lam), float(c), float(h), steps, e2)
    for _ in range(steps):
        k1 = derivative(phi)
        k2 = derivative(phi + h / 2 * k1[0])
        k3 = derivative(phi + h / 2 * k2[0])
        k4 = derivative(phi + h * k3[0])
        phi = phi + h / 6 * (k1[0] + 2 * k2[0] + 2 * k3[0] + k4[0])
        lam = lam + h / 6 * (k1[1] + 2 * k2[1] + 2 * k3[1] + k4[1])
    return np.degrees(phi), (np.degrees(lam) + 180.0) % 360.0 - 180.0


def _rhumb_integrated_scalar(phi, lam, c, h, steps, e2):
    """rhumb_integrated's very steps for one track, in Python floats (numpy's per-call overhead on scalars made
    the tests' DRs take seconds); the same formulas and step count, the same result to rounding."""
    cos_c, sin_c = math.cos(c), math.sin(c)
    b = WGS84_A_M * (1 - e2)

    def derivative(phi):
        sin_phi = math.sin(phi)
        w = 1 - e2 * sin_phi * sin_phi
        return cos_c * w**1.5 / b, sin_c * math.sqrt(w) / (WGS84_A_M * math.cos(phi))

    for _ in range(steps):
        k1 = derivative(phi)
        k2 = derivative(phi + h / 2 * k1[0])
        k3 = derivative(phi + h / 2 * k2[0])
        k4 = derivative(phi + h * k3[0])
        phi = phi + h / 6 * (k1[0] + 2 * k2[0] + 2 * k3[0] + k4[0])
        lam = lam + h / 6 * (k1[1] + 2 * k2[1] + 2 * k3[1] + k4[1])
    return np.float64(math.degrees(phi)), (np.float64(math.degrees(lam)) + 180.0) % 360.0 - 180.0


def offset_position(lat_deg, lon_deg, north_nm, east_nm):
    """The position ``north_nm`` and ``east_nm`` away from (lat, lon) along the great circle of that direction,
    one nautical mile per arcminute (common practice), by the spherical direct formula of the navigation manuals:
    a DR set off the truth, a chart position off a fix. The tests' own code, independent of navred."""
    d = np.radians(np.hypot(north_nm, east_nm) / 60.0)
    b = np.arctan2(east_nm, north_nm)
    phi, lam = np.radians(lat_deg), np.radians(lon_deg)
    phi2 = np.arcsin(np.sin(phi) * np.cos(d) + np.cos(phi) * np.sin(d) * np.cos(b))
    lam2 = lam + np.arctan2(np.sin(b) * np.sin(d) * np.cos(phi), np.cos(d) - np.sin(phi) * np.sin(phi2))
    return float(np.degrees(phi2)), float((np.degrees(lam2) + 180.0) % 360.0 - 180.0)


def sky_target(ts, eph, name):
    """skyfield target for any navred body name."""
    solar = {"Sun": "sun", "Moon": "moon", "Venus": "venus", "Mars": "mars",
             "Jupiter": "jupiter barycenter", "Saturn": "saturn barycenter"}
    return eph[solar[name]] if name in solar else sky_star(ts, name)


def skyfield_sight(ts, eph, name, utc, lat_deg, lon_deg, *, limb="", eye_height_m=3.0,
                   index_error_arcmin=0.0, temperature_c=10.0, pressure_hpa=1010.0, noise_arcmin=0.0,
                   horizon="sea", waterline_nm=float("nan")):
    """One sextant altitude made by skyfield, independent of navred, at a true position.

    The true topocentric airless altitude and azimuth of the body's centre (skyfield), the
    limb from skyfield's topocentric distance and the body's radius (for Venus and Mars the
    centre of light, :func:`centre_of_light_offset_arcmin`), refraction by skyfield's own
    refract(), the reading of the chosen horizon (:func:`horizon_reading_deg`), the index error
    as read, and optional noise. Returns a dict of sight-log columns plus true_alt_deg and
    true_az_deg.
    """
    from skyfield.api import wgs84
    from skyfield.earthlib import refract

    when = pd_timestamp(utc).round("us")

    def topocentric():
        t = ts.from_datetime(when.to_pydatetime())
        topo = (eph["earth"] + wgs84.latlon(lat_deg, lon_deg)).at(t).observe(sky_target(ts, eph, name)).apparent()
        alt, az, distance = topo.altaz()
        light = centre_of_light_offset_arcmin(eph, name, t, lat_deg, lon_deg) if name in ("Venus", "Mars") else 0.0
        return alt.degrees, az.degrees, distance.km, t.dut1, light

    alt_deg, az_deg, distance_km, dut1_s, light_arcmin = frozen(
        f"topocentric|{name}|{when.value}|{float(lat_deg)!r}|{float(lon_deg)!r}", topocentric)
    radius = {"Sun": 695700.0, "Moon": 1737.4}.get(name)
    sd_deg = float(np.degrees(np.arcsin(radius / distance_km))) if radius else 0.0
    # the observer brings the centre of light of Venus and Mars to the horizon, not the centre of the disc
    limb_alt = alt_deg + {"upper": sd_deg, "lower": -sd_deg}.get(limb, 0.0) + light_arcmin / 60.0
    apparent = float(refract(limb_alt, temperature_c, pressure_hpa))
    reading = horizon_reading_deg(apparent, horizon, eye_height_m, waterline_nm)
    hs = reading + (index_error_arcmin + noise_arcmin) / 60.0
    return {"utc": when, "body": name, "limb": limb, "hs": hs, "index_error_arcmin": index_error_arcmin,
            "eye_height_m": eye_height_m, "temperature_c": temperature_c, "pressure_hpa": pressure_hpa,
            "horizon": horizon, "waterline_distance_nm": waterline_nm,
            "dr_lat": lat_deg, "dr_lon": lon_deg, "dut1_s": float(dut1_s),
            "true_alt_deg": float(alt_deg), "true_az_deg": float(az_deg)}


def horizon_reading_deg(apparent_deg, horizon="sea", eye_height_m=3.0, waterline_nm=float("nan")):
    """The sextant reading (without index error) of a body at an apparent altitude, for each horizon.

    sea: the altitude plus the dip 1.76′ √h (the almanac's dip-table coefficient, from memory);
    artificial: the angle between the body and its reflection, twice the altitude; bubble: the
    altitude; back: over the zenith to the sea horizon behind, 180° − h + dip; waterline: the
    altitude plus the dip of the waterline, tan Ds = h/(1852 d) + d/8268 (Bowditch's table of dip
    short of the horizon, from memory). The geometry of each is in the navigation manuals (common
    practice).
    """
    dip = 1.76 * np.sqrt(eye_height_m) / 60.0
    if horizon == "artificial":
        return 2.0 * apparent_deg
    if horizon == "bubble":
        return apparent_deg
    if horizon == "back":
        return 180.0 - apparent_deg + dip
    if horizon == "waterline":
        return apparent_deg + np.degrees(np.arctan(eye_height_m / (1852.0 * waterline_nm) + waterline_nm / 8268.0))
    return apparent_deg + dip


def centre_of_light_offset_arcmin(eph, name, t, lat_deg, lon_deg, grid=301):
    """How far (arcminutes, up positive) a planet's centre of light stands above its centre, independently.

    From skyfield's topocentric geometry of the planet and the Sun: the visible disc sampled on a
    grid, each point lit where its surface normal faces the Sun, uniform brightness; the vertical
    offset of the lit points' centroid times the apparent radius. No navred code.
    """
    from skyfield.api import wgs84

    observer = (eph["earth"] + wgs84.latlon(lat_deg, lon_deg)).at(t)
    radius_km = {"Venus": 6051.8, "Mars": 3389.5}[name]  # IAU mean radii (from memory)

    def enu(target):
        alt, az, distance = observer.observe(eph[target]).apparent().altaz()
        h, z = alt.radians, az.radians
        return distance.km * np.array([np.cos(h) * np.sin(z), np.cos(h) * np.cos(z), np.sin(h)])

    planet = enu({"Venus": "venus", "Mars": "mars"}[name])
    sun = enu("sun")
    toward = planet / np.linalg.norm(planet)
    up = np.array([0.0, 0.0, 1.0]) - toward[2] * toward
    up /= np.linalg.norm(up)
    right = np.cross(toward, up)
    to_sun = (sun - planet) / np.linalg.norm(sun - planet)
    x, y = np.meshgrid(np.linspace(-1, 1, grid), np.linspace(-1, 1, grid))
    inside = x**2 + y**2 <= 1.0
    depth = np.sqrt(np.clip(1.0 - x**2 - y**2, 0.0, None))
    normal = x[..., None] * right + y[..., None] * up - depth[..., None] * toward
    lit = inside & (normal @ to_sun > 0)
    if not lit.any():
        return 0.0
    angular_radius_arcmin = np.degrees(np.arcsin(radius_km / np.linalg.norm(planet))) * 60.0
    return float(y[lit].mean() * angular_radius_arcmin)


def pd_timestamp(utc):
    import pandas as pd

    stamp = pd.Timestamp(utc)
    return stamp.tz_localize("UTC") if stamp.tzinfo is None else stamp.tz_convert("UTC")
