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
    SECONDS_PER_DAY,
    SPEED_OF_LIGHT_AU_DAY,
    SPEED_OF_LIGHT_KM_S,
    SUN_RADIUS_KM,
    VENUS_RADIUS_KM,
)
from .ephemeris import SegmentCache
from .errors import AngleInputError, BodyNameError, NavredError, failed_elements
from .stars import canonical_body_name, star_catalogue_directions, star_table
from .timescales import Instants, instants


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
    """What every body at a batch of instants shares: the Earth, the Sun, the rotation matrices.

    Arrays are (N, 3) vectors or (N,) scalars over the flat batch, computed once.
    """

    earth_km: np.ndarray  # barycentric position of the geocentre
    earth_velocity_km_day: np.ndarray
    sun_km: np.ndarray  # barycentric position of the Sun
    sun_velocity_km_day: np.ndarray
    earth_au: np.ndarray
    sun_earth_au: np.ndarray  # heliocentric position of the geocentre
    sun_earth_distance_au: np.ndarray
    sun_earth_unit: np.ndarray
    velocity_c: np.ndarray  # the Earth's barycentric velocity in units of c (aberration)
    inverse_lorentz: np.ndarray  # sqrt(1 − v²/c²)
    rbpn: np.ndarray  # (N, 3, 3) GCRS -> true equator and equinox of date
    gast_rad: np.ndarray
    segments: SegmentCache


def _norm(vectors: np.ndarray) -> np.ndarray:
    """Lengths of (N, 3) vectors (a third of the time of numpy's general norm)."""
    return np.sqrt(np.einsum("ni,ni->n", vectors, vectors))


def _frame(inst: Instants) -> _Frame:
    """The shared per-instant work for a flat batch of instants, kept on the batch for its next use.

    A caller that asks for several bodies at the same instants (a sight plan, a lunar
    distance, the phase of a planet) passes the same :class:`Instants` and pays for the time
    scales, the Earth, the Sun and the frame once.
    """
    cached = inst.shared.get("frame")
    if cached is not None:
        return cached
    segments = SegmentCache(inst.tdb1.ravel(), inst.tdb2.ravel())
    earth_p, earth_v = (a.T for a in segments.barycentric("earth"))
    sun_p, sun_v = (a.T for a in segments.barycentric("sun"))
    tt1, tt2 = inst.tt1.ravel(), inst.tt2.ravel()
    rbpn, gast = bias_precession_nutation(tt1, tt2, inst.ut11.ravel(), inst.ut12.ravel())
    sun_earth = (earth_p - sun_p) / AU_KM
    distance = _norm(sun_earth)
    velocity_c = earth_v / AU_KM / SPEED_OF_LIGHT_AU_DAY
    frame = _Frame(earth_p, earth_v, sun_p, sun_v, earth_p / AU_KM, sun_earth, distance,
                   sun_earth / distance[:, None], velocity_c,
                   np.sqrt(1.0 - np.einsum("ni,ni->n", velocity_c, velocity_c)), rbpn, gast, segments)
    inst.shared["frame"] = frame
    return frame


#: Spacing of the nutation grid in days. Four-point (cubic) Lagrange interpolation of
#: IAU 2000B at this spacing stays within 0.001″ of the direct evaluation: the error
#: of a term of amplitude A and period P is about (3/128) A (2 pi h / P)^4, largest for
#: the 13.66-day term (0.23″) at 0.0003″; tests/test_almanac.py measures it.
NUTATION_GRID_DAYS = 1.0
#: Spacing of the grid of the equation of the equinoxes' complementary terms: they are 2.6 mas
#: of 18.6-year period and terms below 12 µas (IERS Conventions 2010, table 5.2e), so cubic
#: interpolation at 8 days is within 1 µas of the direct evaluation.
COMPLEMENTARY_GRID_DAYS = 8.0


def _gridded(days: np.ndarray, step: float, series) -> np.ndarray:
    """``series`` (a function of TT days since J2000, returning (nodes, ...)) interpolated at ``days``
    by four-point Lagrange polynomials through nodes at whole multiples of ``step`` days.

    The nodes around an instant are the same whatever else is in the batch, so an instant's
    value never depends on its neighbours in a log. Every node in the span is evaluated when
    that is cheaper than finding the ones needed (a dense batch), else only the needed ones.
    """
    u = days / step
    base = np.floor(u)
    p = u - base
    low, high = base.min() - 1.0, base.max() + 2.0
    if high - low + 1.0 <= 4.0 * days.size:
        nodes = np.arange(low, high + 1.0)
        at = (base - low).astype(np.intp)
    else:
        nodes = np.unique(np.concatenate([base - 1.0, base, base + 1.0, base + 2.0]))
        at = np.searchsorted(nodes, base)  # the four nodes of an instant are consecutive here
    values = series(nodes * step)
    weights = (-p * (p - 1) * (p - 2) / 6, (p + 1) * (p - 1) * (p - 2) / 2,
               -(p + 1) * p * (p - 2) / 2, (p + 1) * p * (p - 1) / 6)
    extra = (slice(None),) + (None,) * (np.ndim(values) - 1)
    return sum(w[extra] * values[at + k - 1] for k, w in enumerate(weights))


def nutation_rad(tt1: ArrayLike, tt2: ArrayLike, grid: bool = True) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """IAU 2000B nutation (dpsi, deps) and the equation of the equinoxes' complementary terms, radians.

    The series are evaluated at whole TT days (every :data:`COMPLEMENTARY_GRID_DAYS` for the
    complementary terms) and interpolated with four-point Lagrange polynomials; the grid is
    fixed, so a result does not depend on the other instants of the batch. ``grid=False``
    evaluates the series at every instant (ERFA ``nut00b``, ``eect00``); both agree within
    0.001″ (tests/test_almanac.py).
    """
    tt1 = np.asarray(tt1, dtype=float)
    tt2 = np.asarray(tt2, dtype=float)
    if not grid:
        dpsi, deps = erfa.nut00b(tt1, tt2)
        return dpsi, deps, erfa.eect00(tt1, tt2)
    shape = np.broadcast(tt1, tt2).shape
    days = np.ravel((tt1 - JD_J2000) + tt2)
    if days.size == 0:
        return days.copy(), days.copy(), days.copy()
    both = _gridded(days, NUTATION_GRID_DAYS, lambda at: np.stack(erfa.nut00b(JD_J2000, at), axis=-1))
    eect = _gridded(days, COMPLEMENTARY_GRID_DAYS, lambda at: erfa.eect00(JD_J2000, at))
    return both[:, 0].reshape(shape), both[:, 1].reshape(shape), eect.reshape(shape)


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
    apparent = erfa.ab(direction, frame.velocity_c[rows], frame.sun_earth_distance_au[rows],
                       frame.inverse_lorentz[rows])
    matrix = frame.rbpn[rows]
    return (matrix[:, :, 0] * apparent[:, 0:1] + matrix[:, :, 1] * apparent[:, 1:2]
            + matrix[:, :, 2] * apparent[:, 2:3])


def _geocentric_state(name: str, frame: _Frame, rows):
    """Geocentric position (km) and the body's barycentric velocity (km/day) at the instants ``rows``."""
    if name == "Sun":
        return frame.sun_km[rows] - frame.earth_km[rows], frame.sun_velocity_km_day[rows]
    position, velocity = frame.segments.geocentric(name, rows)
    return position.T, velocity.T + frame.earth_velocity_km_day[rows]


#: A light-time pass that moves no body by more than this (1 mm) changes no place by more than
#: 1e-12 rad at the Moon's distance: the iteration stops there.
LIGHT_TIME_CONVERGED_KM = 1e-6


def _solar_system_places(name: str, frame: _Frame, rows):
    """(unit vectors of date (n, 3), distance_km (n,)) for one body at the instants ``rows``
    (an index array, or ``slice(None)`` for the whole batch).

    Light time: the body's position at t - tau is its position at t moved back
    along its barycentric velocity, iterated until a pass moves no body by more than
    :data:`LIGHT_TIME_CONVERGED_KM` (two passes after the first, in practice). The
    neglected acceleration term is below 0.005″ for every body (largest for Venus near
    superior conjunction: 0.5 a tau^2 is about 4 km at 260 million km).
    """
    vector_t, velocity = _geocentric_state(name, frame, rows)
    speed = _norm(velocity)
    distance = _norm(vector_t)
    light_time_days = distance / SPEED_OF_LIGHT_KM_S / SECONDS_PER_DAY
    vector = vector_t
    for _ in range(6):
        vector = vector_t - velocity * light_time_days[:, None]
        distance = _norm(vector)
        previous, light_time_days = light_time_days, distance / SPEED_OF_LIGHT_KM_S / SECONDS_PER_DAY
        if distance.size == 0 or np.max(np.abs(light_time_days - previous) * speed) < LIGHT_TIME_CONVERGED_KM:
            break
    direction = vector / distance[:, None]
    if name != "Sun":
        # light deflection by the Sun (ERFA ld with the Sun's unit mass)
        sun_body = vector + (frame.earth_km[rows] - frame.sun_km[rows])
        q = sun_body / _norm(sun_body)[:, None]
        direction = erfa.ld(1.0, direction, q, frame.sun_earth_unit[rows], frame.sun_earth_distance_au[rows], 1e-6)
    return _aberrate_and_rotate(direction, frame, rows), distance


def _star_places(star_rows: np.ndarray, inst: Instants, frame: _Frame, rows):
    tt1, tt2 = inst.tt1.ravel()[rows], inst.tt2.ravel()[rows]
    direction = star_catalogue_directions(star_rows, tt1, tt2, frame.earth_au[rows].T).T
    direction = erfa.ldsun(direction, frame.sun_earth_unit[rows], frame.sun_earth_distance_au[rows])
    return _aberrate_and_rotate(direction, frame, rows)


def _body_codes(body, shape) -> tuple[list[str], np.ndarray]:
    """The distinct catalogue names in ``body`` and each element's index into them, shape ``shape``.

    Each distinct spelling is looked up once.
    """
    names = np.asarray(body, dtype=object)
    if names.ndim == 0:
        return [canonical_body_name(names.item())], np.zeros(shape, dtype=np.intp)
    spellings, inverse = np.unique(names.astype(str), return_inverse=True)
    canonical: list[str] = []
    bad = np.zeros(len(spellings), dtype=bool)
    first = ""
    for k, spelling in enumerate(spellings.tolist()):  # plain str: a message never shows numpy's repr
        try:
            canonical.append(canonical_body_name(str(spelling)))
        except BodyNameError as exc:
            canonical.append("")
            bad[k] = True
            first = first or str(exc)
    if bad.any():
        where = failed_elements(bad[inverse].reshape(names.shape))
        raise BodyNameError(first if where == "the value" else f"unknown bodies ({where}); the first: {first}")
    distinct = list(dict.fromkeys(canonical))
    to_distinct = np.array([distinct.index(c) for c in canonical], dtype=np.intp)
    return distinct, np.broadcast_to(to_distinct[inverse].reshape(names.shape), shape)


def places(body: str | ArrayLike, utc: object, dut1_s: ArrayLike | None = None) -> Places:
    """Apparent geocentric places of ``body`` (name or names) at ``utc`` (instant or instants).

    Sequences of equal length pair element-wise and a scalar broadcasts. ``utc`` may be an
    :class:`navred.timescales.Instants` made once with :func:`navred.timescales.instants`:
    every call with the same batch then shares its time scales, Earth, Sun and frame. See
    :func:`navred.jobs.frames.body_positions` for the columns; this is the array form the rest of
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
    distinct, codes = _body_codes(body, shape)
    codes = codes.ravel()
    names = np.asarray(distinct, dtype=object)[codes]
    if inst.shape != shape:
        inst = inst.broadcast_to(shape)
    flat = inst.ravel()
    n = codes.size
    frame = _frame(flat)
    vectors = np.zeros((n, 3))
    distance = np.full(n, np.nan)
    radius_km = np.zeros(n)
    star_numbers = {name: i for i, name in enumerate(star_table().name)}
    star_row_of_code = np.array([star_numbers.get(name, -1) for name in distinct], dtype=np.intp)
    is_star = star_row_of_code[codes] >= 0
    if is_star.any():
        rows = np.flatnonzero(is_star) if not is_star.all() else slice(None)
        vectors[rows] = _star_places(star_row_of_code[codes[rows]], flat, frame, rows)
    for code, name in enumerate(distinct):
        if star_row_of_code[code] >= 0:
            continue
        rows = np.flatnonzero(codes == code) if len(distinct) > 1 else slice(None)
        vectors[rows], distance[rows] = _solar_system_places(name, frame, rows)
        radius_km[rows] = _RADIUS_KM.get(name, 0.0)
    ra, dec = erfa.c2s(vectors)
    with np.errstate(invalid="ignore"):
        hp = np.where(is_star, 0.0, np.degrees(np.arcsin(EARTH_EQUATORIAL_RADIUS_KM / distance)))
        sd = np.where(radius_km > 0, np.degrees(np.arcsin(radius_km / distance)), 0.0)
    return Places(
        body=names.reshape(shape), instants=inst,
        gha_aries_deg=np.degrees(frame.gast_rad).reshape(shape),
        ra_hours=(np.degrees(erfa.anp(ra)) / DEG_PER_HOUR).reshape(shape),
        dec_deg=np.degrees(dec).reshape(shape),
        distance_km=distance.reshape(shape),
        hp_arcmin=(hp * ARCMIN_PER_DEG).reshape(shape),
        sd_arcmin=(sd * ARCMIN_PER_DEG).reshape(shape),
    )


#: Radii for the semi-diameter (constants.py gives each its source); other bodies get SD 0.
_RADIUS_KM = {"Sun": SUN_RADIUS_KM, "Moon": MOON_RADIUS_KM, "Venus": VENUS_RADIUS_KM, "Mars": MARS_RADIUS_KM}


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


def separation_deg(dec1_deg: ArrayLike, ra1_hours: ArrayLike, dec2_deg: ArrayLike, ra2_hours: ArrayLike) -> np.ndarray:
    """The angle between two places on the sky (degrees), from their declinations and right ascensions: the
    angle between their unit vectors, by the arctangent of the cross and dot products (exact at any angle,
    small ones included).

    >>> round(float(separation_deg(0.0, 0.0, 0.0, 6.0)), 9)  # six hours of RA on the equator: 90°
    90.0
    """
    def unit(dec_deg, ra_hours):
        ra = np.radians(np.asarray(ra_hours, dtype=float) * DEG_PER_HOUR)
        dec = np.radians(np.asarray(dec_deg, dtype=float))
        return np.stack(np.broadcast_arrays(np.cos(dec) * np.cos(ra), np.cos(dec) * np.sin(ra), np.sin(dec)), axis=-1)

    a, b = np.broadcast_arrays(unit(dec1_deg, ra1_hours), unit(dec2_deg, ra2_hours))
    return np.degrees(np.arctan2(np.linalg.norm(np.cross(a, b), axis=-1), np.sum(a * b, axis=-1)))


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
