"""GHA Aries, SHA, GHA, Dec, HP and SD of any navigational body for any UTC instant.

The apparent geocentric place referred to the true equator and equinox of date,
computed from first principles:

- solar-system bodies: JPL DE421 barycentric positions, light time iterated to
  convergence (three passes reach well below 1 mm for the Moon);
- stars: Hipparcos 2 catalogue place, space motion and annual parallax (ERFA
  ``pmpx``) and light deflection by the Sun (ERFA ``ldsun``);
- annual aberration, relativistic (ERFA ``ab``), from the Earth's barycentric velocity;
- frame bias and precession (IAU 2006, ERFA ``pfw06``) and nutation (IAU 2000B), the
  matrix built by ``fw2m``; IAU 2000B is within 1 mas of the full IAU 2000A model over
  1900-2100 (ERFA's documentation; navred's own measurement is in docs/almanac.md);
- GHA Aries = Greenwich apparent sidereal time = GMST (IAU 2006, ``gmst06``) plus the
  equation of the equinoxes from the same nutation.

Every function takes scalars or arrays and broadcasts; there is no Python loop
over instants (only over the distinct solar-system bodies in a request).
"""

from __future__ import annotations

from dataclasses import dataclass

import erfa
import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_360
from .constants import (
    ARCMIN_PER_DEG,
    AU_KM,
    DEG_PER_HOUR,
    EARTH_EQUATORIAL_RADIUS_KM,
    JD_J2000,
    MARS_RADIUS_KM,
    MOON_RADIUS_KM,
    SPEED_OF_LIGHT_AU_DAY,
    SPEED_OF_LIGHT_KM_S,
    SUN_RADIUS_KM,
    VENUS_RADIUS_KM,
)
from .ephemeris import SegmentCache
from .errors import AngleInputError, BodyNameError, NavredError, failed_elements
from .stars import SOLAR_SYSTEM, canonical_body_name, star_catalogue_directions, star_table
from .timescales import Instants, instants

_SECONDS_PER_DAY = 86400.0


@dataclass(frozen=True)
class Places:
    """Apparent geocentric places, one element per (body, instant) pair."""

    body: np.ndarray
    instants: Instants
    gha_aries_deg: np.ndarray
    ra_hours: np.ndarray
    dec_deg: np.ndarray
    distance_km: np.ndarray
    hp_arcmin: np.ndarray
    sd_arcmin: np.ndarray

    @property
    def sha_deg(self) -> np.ndarray:
        return np.asarray(wrap_360(360.0 - self.ra_hours * DEG_PER_HOUR))

    @property
    def gha_deg(self) -> np.ndarray:
        return np.asarray(wrap_360(self.gha_aries_deg + self.sha_deg))


@dataclass(frozen=True)
class _Frame:
    """What every body at a batch of instants shares: the Earth, the Sun, the rotation matrices."""

    earth_km: np.ndarray  # (N, 3) barycentric position of the geocentre
    earth_velocity_km_day: np.ndarray  # (N, 3)
    sun_km: np.ndarray  # (N, 3) barycentric position of the Sun
    rbpn: np.ndarray  # (N, 3, 3) GCRS -> true equator and equinox of date
    gast_rad: np.ndarray  # (N,)
    segments: SegmentCache

    @property
    def earth_au(self) -> np.ndarray:
        return self.earth_km / AU_KM

    @property
    def sun_earth_au(self) -> np.ndarray:
        return (self.earth_km - self.sun_km) / AU_KM


def _frame(inst: Instants) -> _Frame:
    segments = SegmentCache(inst.tdb1.ravel(), inst.tdb2.ravel())
    earth_p, earth_v = segments.barycentric("earth")
    sun_p = segments.barycentric_position("sun")
    tt1, tt2 = inst.tt1.ravel(), inst.tt2.ravel()
    rbpn, gast = bias_precession_nutation(tt1, tt2, inst.ut11.ravel(), inst.ut12.ravel())
    return _Frame(earth_p.T, earth_v.T, sun_p.T, rbpn, gast, segments)


#: Spacing of the nutation grid in days. Four-point (cubic) Lagrange interpolation of
#: IAU 2000B at this spacing stays within 0.001″ of the direct evaluation: the error
#: of a term of amplitude A and period P is about (3/128) A (2 pi h / P)^4, largest for
#: the 13.66-day term (0.23″) at 0.0003″; tests/test_almanac.py measures it.
NUTATION_GRID_DAYS = 1.0


def _lagrange4(x, grid_start, step, values):
    """Four-point Lagrange interpolation of equally spaced ``values`` at ``x``."""
    u = (x - grid_start) / step
    i = np.clip(np.floor(u).astype(int), 1, len(values) - 3)
    p = u - i
    y0, y1, y2, y3 = values[i - 1], values[i], values[i + 1], values[i + 2]
    return (-p * (p - 1) * (p - 2) / 6 * y0 + (p + 1) * (p - 1) * (p - 2) / 2 * y1
            - (p + 1) * p * (p - 2) / 2 * y2 + (p + 1) * p * (p - 1) / 6 * y3)


def nutation_rad(tt1: ArrayLike, tt2: ArrayLike, grid: bool | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """IAU 2000B nutation (dpsi, deps) and the equation of the equinoxes' complementary terms, radians.

    When a batch has more instants than the days it spans (a voyage, a fleet's
    year of sights), the series are evaluated once a day over the span and
    interpolated with four-point Lagrange polynomials; otherwise they are
    evaluated directly (``grid`` forces either path). Both agree within 0.001″.
    """
    tt1 = np.asarray(tt1, dtype=float)
    tt2 = np.asarray(tt2, dtype=float)
    days = (tt1 - JD_J2000) + tt2
    if days.size == 0:
        return days.copy(), days.copy(), days.copy()
    first = np.floor(days.min() / NUTATION_GRID_DAYS) - 1
    nodes = int(np.ceil(days.max() / NUTATION_GRID_DAYS) - first) + 3
    if grid is None:
        grid = nodes * 2 < days.size
    if not grid:
        dpsi, deps = erfa.nut00b(tt1, tt2)
        return dpsi, deps, erfa.eect00(tt1, tt2)
    at = (first + np.arange(nodes)) * NUTATION_GRID_DAYS
    gpsi, geps = erfa.nut00b(JD_J2000, at)
    gect = erfa.eect00(JD_J2000, at)
    start = first * NUTATION_GRID_DAYS
    return tuple(_lagrange4(days, start, NUTATION_GRID_DAYS, v) for v in (gpsi, geps, gect))


def bias_precession_nutation(tt1: ArrayLike, tt2: ArrayLike, ut11: ArrayLike, ut12: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """GCRS -> true equator and equinox of date matrices (N, 3, 3) and GAST (radians).

    IAU 2006 precession as Fukushima-Williams angles (ERFA ``pfw06``) with the IAU 2000B
    nutation added to ψ and ε (``fw2m``), the construction of ERFA's ``pnm06a`` with the
    abridged nutation; GAST = GMST (IAU 2006, ``gmst06``) + Δψ cos εA + the complementary
    terms (``eect00``).
    """
    dpsi, deps, eect = nutation_rad(tt1, tt2)
    gamb, phib, psib, epsa = erfa.pfw06(tt1, tt2)
    rbpn = erfa.fw2m(gamb, phib, psib + dpsi, epsa + deps)
    gast = erfa.anp(erfa.gmst06(ut11, ut12, tt1, tt2) + dpsi * np.cos(epsa) + eect)
    return rbpn, gast


def _aberrate_and_rotate(direction: np.ndarray, frame: _Frame, rows) -> np.ndarray:
    """Apply annual aberration and bias-precession-nutation to unit vectors (N, 3)."""
    v = frame.earth_velocity_km_day[rows] / AU_KM / SPEED_OF_LIGHT_AU_DAY
    s = np.linalg.norm(frame.sun_earth_au[rows], axis=-1)
    bm1 = np.sqrt(1.0 - np.sum(v * v, axis=-1))
    apparent = erfa.ab(direction, v, s, bm1)
    return np.einsum("nij,nj->ni", frame.rbpn[rows], apparent)


def _geocentric_state(name: str, frame: _Frame, rows):
    """Geocentric position (km) and the body's barycentric velocity (km/day) at the instants ``rows``."""
    if name == "Sun":
        return frame.sun_km[rows] - frame.earth_km[rows], frame.segments.barycentric("sun")[1].T[rows]
    position, velocity = frame.segments.geocentric(name, rows)
    return position.T, velocity.T + frame.earth_velocity_km_day[rows]


def _solar_system_places(name: str, frame: _Frame, rows):
    """(unit vectors of date (n, 3), distance_km (n,)) for one body at the instants ``rows``.

    Light time: the body's position at t - tau is its position at t moved back
    along its barycentric velocity; iterated three times. The neglected
    acceleration term is below 0.005″ for every body (largest for Venus near
    superior conjunction: 0.5 a tau^2 is about 4 km at 260 million km).
    """
    vector_t, velocity = _geocentric_state(name, frame, rows)
    light_time_days = np.zeros(len(rows))
    for _ in range(3):
        vector = vector_t - velocity * light_time_days[:, None]
        distance = np.linalg.norm(vector, axis=-1)
        light_time_days = distance / SPEED_OF_LIGHT_KM_S / _SECONDS_PER_DAY
    direction = vector / distance[:, None]
    if name != "Sun":
        # light deflection by the Sun (ERFA ld with the Sun's unit mass)
        body_km = vector + frame.earth_km[rows]
        sun_body = body_km - frame.sun_km[rows]
        q = sun_body / np.linalg.norm(sun_body, axis=-1)[:, None]
        sun_earth = frame.sun_earth_au[rows]
        em = np.linalg.norm(sun_earth, axis=-1)
        direction = erfa.ld(1.0, direction, q, sun_earth / em[:, None], em, 1e-6)
    return _aberrate_and_rotate(direction, frame, rows), distance


def _star_places(star_rows: np.ndarray, inst: Instants, frame: _Frame, rows):
    tt1, tt2 = inst.tt1.ravel()[rows], inst.tt2.ravel()[rows]
    direction = star_catalogue_directions(star_rows, tt1, tt2, frame.earth_au[rows].T).T
    em = np.linalg.norm(frame.sun_earth_au[rows], axis=-1)
    e = frame.sun_earth_au[rows] / em[:, None]
    direction = erfa.ldsun(direction, e, em)
    return _aberrate_and_rotate(direction, frame, rows)


def _body_array(body, shape) -> np.ndarray:
    """Catalogue names broadcast to ``shape``; each distinct spelling is looked up once."""
    names = np.asarray(body, dtype=object)
    if names.ndim == 0:
        return np.broadcast_to(np.array(canonical_body_name(names.item()), dtype=object), shape)
    spellings, inverse = np.unique(names.astype(str), return_inverse=True)
    canonical = np.empty(len(spellings), dtype=object)
    bad = np.zeros(len(spellings), dtype=bool)
    first = ""
    for k, spelling in enumerate(spellings):
        try:
            canonical[k] = canonical_body_name(spelling)
        except BodyNameError as exc:
            bad[k] = True
            first = first or str(exc)
    if bad.any():
        raise BodyNameError(f"unknown bodies in {failed_elements(bad[inverse].reshape(names.shape))}; first: {first}")
    return np.broadcast_to(canonical[inverse].reshape(names.shape), shape)


def places(body: str | ArrayLike, utc: object, dut1_s: ArrayLike | None = None) -> Places:
    """Apparent geocentric places of ``body`` (name or names) at ``utc`` (instant or instants).

    Sequences of equal length pair element-wise and a scalar broadcasts. See
    :func:`body_positions` for the columns; this is the array form the rest of
    the core uses.
    """
    inst = instants(utc, dut1_s)
    body_shape = np.shape(np.asarray(body, dtype=object))
    try:
        shape = np.broadcast_shapes(body_shape, inst.shape)
    except ValueError:
        raise NavredError(
            f"{body_shape[0] if body_shape else 1} bodies and {inst.shape[0] if inst.shape else 1} "
            "instants: give one of each, one body for many instants, or equal numbers to pair") from None
    names = _body_array(body, shape).ravel()
    if inst.shape != shape:
        inst = inst.broadcast_to(shape)
    flat = inst.ravel()
    n = names.size
    frame = _frame(flat)
    vectors = np.zeros((n, 3))
    distance = np.full(n, np.nan)
    is_star = ~np.isin(names, list(SOLAR_SYSTEM.values()))
    if is_star.any():
        star_names = list(star_table().name)
        lookup = {name: i for i, name in enumerate(star_names)}
        rows = np.flatnonzero(is_star)
        star_rows = np.array([lookup[name] for name in names[rows]])
        vectors[rows] = _star_places(star_rows, flat, frame, rows)
    for name in SOLAR_SYSTEM.values():
        rows = np.flatnonzero(names == name)
        if rows.size:
            vectors[rows], distance[rows] = _solar_system_places(name, frame, rows)
    ra, dec = erfa.c2s(vectors)
    with np.errstate(invalid="ignore"):
        hp = np.where(is_star, 0.0, np.degrees(np.arcsin(EARTH_EQUATORIAL_RADIUS_KM / distance)))
    radius = np.select([names == "Sun", names == "Moon", names == "Venus", names == "Mars"],
                       [SUN_RADIUS_KM, MOON_RADIUS_KM, VENUS_RADIUS_KM, MARS_RADIUS_KM], 0.0)
    with np.errstate(invalid="ignore"):
        sd = np.where(radius > 0, np.degrees(np.arcsin(radius / distance)), 0.0)
    return Places(
        body=names.reshape(shape), instants=inst,
        gha_aries_deg=np.degrees(frame.gast_rad).reshape(shape),
        ra_hours=(np.degrees(erfa.anp(ra)) / DEG_PER_HOUR).reshape(shape),
        dec_deg=np.degrees(dec).reshape(shape),
        distance_km=distance.reshape(shape),
        hp_arcmin=(hp * ARCMIN_PER_DEG).reshape(shape),
        sd_arcmin=(sd * ARCMIN_PER_DEG).reshape(shape),
    )


def phase_angle_deg(body: Places, sun: Places) -> np.ndarray:
    """The phase angle (degrees) of a planet: the angle at the planet between the Sun and the Earth.

    From the apparent geocentric places and distances of the planet and the Sun at the same
    instants (0° when the planet is full, 180° when new).
    """
    def vector(places_):
        ra = np.radians(np.asarray(places_.ra_hours) * DEG_PER_HOUR)
        dec = np.radians(np.asarray(places_.dec_deg))
        return np.asarray(places_.distance_km)[..., None] * np.stack(
            [np.cos(dec) * np.cos(ra), np.cos(dec) * np.sin(ra), np.sin(dec)], axis=-1)

    planet, sun_ = vector(body), vector(sun)
    to_earth, to_sun = -planet, sun_ - planet
    cosine = np.sum(to_earth * to_sun, axis=-1) / (np.linalg.norm(to_earth, axis=-1) * np.linalg.norm(to_sun, axis=-1))
    return np.degrees(np.arccos(np.clip(cosine, -1.0, 1.0)))


def gha_aries_deg(utc: object, dut1_s: ArrayLike | None = None) -> np.ndarray:
    """Greenwich hour angle of the first point of Aries (GAST) in degrees [0, 360).

    >>> round(float(gha_aries_deg("2000-01-01T12:00:00Z", dut1_s=0.3554)), 3)
    280.459
    """
    inst = instants(utc, dut1_s)
    _, gast = bias_precession_nutation(inst.tt1, inst.tt2, inst.ut11, inst.ut12)
    return np.degrees(gast)


def lha_deg(gha_deg: ArrayLike, lon_deg: ArrayLike) -> np.ndarray:
    """Local hour angle in degrees [0, 360): GHA plus east longitude (west negative).

    >>> float(lha_deg(350.0, 20.0)), float(lha_deg(10.0, -20.0))
    (10.0, 350.0)
    """
    gha = np.asarray(gha_deg, dtype=float)
    lon = np.asarray(lon_deg, dtype=float)
    bad = ~np.isfinite(gha) | ~np.isfinite(lon)
    if bad.any():
        raise AngleInputError(f"GHA and longitude must be finite numbers; refused: {failed_elements(bad)}")
    return np.asarray(wrap_360(gha + lon))
