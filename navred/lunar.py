"""Longitude by lunar distance: clearing the observed distance and finding UTC from it.

The navigator measures the distance between the Moon's limb and the Sun, a star or a
planet, and (if she can) the two altitudes. Clearing turns the observed distance into the
distance between the two bodies as seen from the Earth's centre, and the UTC is the instant
at which the almanac's geocentric distance equals it. With the UTC the chronometer's error
is known, and a time sight of either body gives the longitude.

The clearing here is rigorous, on the sphere, not by the old approximate tables:

1. The apparent (refracted, topocentric) distance of the centres is the observed distance
   corrected for index error and for the semi-diameters, the Moon's augmented for its
   nearness, each contracted by refraction along the line joining the bodies
   (SD·(1 − k cos² q), k = −dR/dh, q the angle between the vertical and that line).
2. From the apparent altitudes of the centres (observed, or computed at the DR for the
   approximate time) and the apparent distance, the difference of azimuth follows from the
   spherical triangle zenith-Moon-body. Refraction and parallax change altitudes, not
   azimuths, so that difference survives the clearing.
3. Each body's true topocentric direction (refraction removed) is turned into a geocentric
   one by adding the observer's radius vector on the WGS 84 ellipsoid (the Moon's distance
   from the almanac), which includes the oblateness exactly.
4. The cleared distance is the angle between the two geocentric directions.

A 0.1′ error in the distance is about 12 seconds of time, and so 3′ of longitude: the
result reports its own sensitivity.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .almanac import places, separation_deg
from .angles import wrap_180
from .constants import ARCMIN_PER_DEG, NS_PER_MINUTE, NS_PER_SECOND
from .corrections import (
    DEFAULT_PRESSURE_HPA,
    DEFAULT_TEMPERATURE_C,
    bennett_refraction_arcmin,
    observer_geometry,
    parallax_in_altitude_arcmin,
    topocentric_distance_ratio,
)
from .errors import NavredError, NavredWarning
from .events import NO_INSTANT, first_crossings
from .stars import canonical_body_name
from .timescales import utc_jd_to_datetime64, utc_julian_date
from .triangle import computed_altitude_azimuth


@dataclass
class LunarResult:
    """The cleared distance, the UTC it gives, and what follows from it."""

    utc: np.datetime64
    cleared_distance_deg: float
    apparent_distance_deg: float
    chronometer_error_s: float  # the given time minus the found UTC: positive when the chronometer is fast
    seconds_per_tenth_arcmin: float
    longitude_deg: float | None
    longitude_from: str
    moon_apparent_altitude_deg: float
    other_apparent_altitude_deg: float
    iterations: int


def _refraction_deg(apparent_deg, temperature_c, pressure_hpa):
    return bennett_refraction_arcmin(np.asarray(apparent_deg, dtype=float), temperature_c, pressure_hpa) / ARCMIN_PER_DEG


def _apparent_from_true(true_deg, temperature_c, pressure_hpa):
    """Apparent altitude whose refraction brings it down to the true altitude (fixed-point iteration)."""
    apparent = np.asarray(true_deg, dtype=float)
    for _ in range(6):
        apparent = true_deg + _refraction_deg(apparent, temperature_c, pressure_hpa)
    return apparent


def _unit(alt_deg, az_deg) -> np.ndarray:
    """Unit vectors (east, north, up) of altitudes and azimuths, shape (3, ...)."""
    h, z = np.radians(alt_deg), np.radians(az_deg)
    return np.stack(np.broadcast_arrays(np.cos(h) * np.sin(z), np.cos(h) * np.cos(z), np.sin(h)))


def _angle_deg(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """The angle (degrees) between vectors of shape (3, ...), by atan2 of the cross and dot products."""
    cross = np.cross(a, b, axis=0)
    return np.degrees(np.arctan2(np.linalg.norm(cross, axis=0), np.sum(a * b, axis=0)))


def _geocentric_distance_deg(moon, other) -> np.ndarray:
    """Angle between the almanac's geocentric apparent places (RA/Dec of date) of two bodies."""
    return separation_deg(moon.dec_deg, moon.ra_hours, other.dec_deg, other.ra_hours)


def clear_distance(apparent_distance_deg: ArrayLike, moon_apparent_deg: ArrayLike, other_apparent_deg: ArrayLike,
                   moon_zn_deg: ArrayLike, other_zn_deg: ArrayLike, moon_hp_arcmin: ArrayLike,
                   other_hp_arcmin: ArrayLike, lat_deg: ArrayLike, *, temperature_c: ArrayLike = DEFAULT_TEMPERATURE_C,
                   pressure_hpa: ArrayLike = DEFAULT_PRESSURE_HPA, strict: bool = True) -> float:
    """The geocentric distance (degrees) from the apparent distance and apparent altitudes of the centres.

    Azimuths are needed only for the side of the other body and for the oblateness term, so
    the azimuths computed at the DR for the approximate time serve.
    """
    cos_dz = _cos_azimuth_difference(apparent_distance_deg, moon_apparent_deg, other_apparent_deg)
    if np.any(np.abs(cos_dz) > 0.999):
        warnings.warn("the Moon and the other body stand nearly in one vertical: the distance then "
                      "depends on the altitudes alone, so clear it with both altitudes observed", NavredWarning,
                      stacklevel=3)
    if strict and np.any(np.abs(cos_dz) > 1.0 + 0.02):
        # beyond what rounding allows (about 0.1° of altitude with the bodies in line)
        raise NavredError("the distance and the two altitudes do not make a spherical triangle "
                          f"(cos ΔZ = {float(np.max(cos_dz)):.4f}): check the distance, the altitudes and the body")
    return float(_cleared_distance_deg(apparent_distance_deg, moon_apparent_deg, other_apparent_deg, moon_zn_deg,
                                       other_zn_deg, moon_hp_arcmin, other_hp_arcmin, lat_deg, temperature_c,
                                       pressure_hpa))


def _cos_azimuth_difference(apparent_distance_deg, moon_apparent_deg, other_apparent_deg) -> np.ndarray:
    """cos ΔZ of the triangle zenith-Moon-body from the apparent distance and the two apparent altitudes."""
    d = np.radians(apparent_distance_deg)
    a_m, a_o = np.radians(moon_apparent_deg), np.radians(other_apparent_deg)
    return (np.cos(d) - np.sin(a_m) * np.sin(a_o)) / (np.cos(a_m) * np.cos(a_o))


def _cleared_distance_deg(apparent_distance_deg, moon_apparent_deg, other_apparent_deg, moon_zn_deg, other_zn_deg,
                          moon_hp_arcmin, other_hp_arcmin, lat_deg, temperature_c, pressure_hpa) -> np.ndarray:
    """:func:`clear_distance` without its checks, for arrays (the trial instants of the search)."""
    cos_dz = _cos_azimuth_difference(apparent_distance_deg, moon_apparent_deg, other_apparent_deg)
    dz = np.degrees(np.arccos(np.clip(cos_dz, -1.0, 1.0)))
    side = np.where(wrap_180(np.asarray(other_zn_deg, dtype=float) - moon_zn_deg) >= 0, 1.0, -1.0)
    true_m = moon_apparent_deg - _refraction_deg(moon_apparent_deg, temperature_c, pressure_hpa)
    true_o = other_apparent_deg - _refraction_deg(other_apparent_deg, temperature_c, pressure_hpa)
    rho, tilt = observer_geometry(lat_deg)
    # the observer's radius vector in Earth radii, local east-north-up
    observer = rho * np.stack(np.broadcast_arrays(np.zeros_like(tilt), -np.sin(tilt), np.cos(tilt)))

    def geocentric(true_alt, zn, hp_arcmin):
        u = _unit(true_alt, zn)
        hp = np.asarray(hp_arcmin, dtype=float)
        near = hp > 0
        safe_hp = np.where(near, hp, 60.0)
        distance = 1.0 / np.sin(np.radians(safe_hp / ARCMIN_PER_DEG))
        topocentric = distance * topocentric_distance_ratio(true_alt, safe_hp, lat_deg, zn)
        here = observer.reshape(observer.shape + (1,) * (u.ndim - observer.ndim))
        return np.where(near, topocentric * u + here, u)

    moon_geo = geocentric(true_m, moon_zn_deg, moon_hp_arcmin)
    other_geo = geocentric(true_o, moon_zn_deg + side * dz, other_hp_arcmin)
    return _angle_deg(moon_geo, other_geo)


def _contraction(apparent_deg, temperature_c, pressure_hpa) -> np.ndarray:
    """k = −dR/dh at an apparent altitude: the vertical shrinking of a disc by refraction."""
    step = 0.05
    r1 = _refraction_deg(np.asarray(apparent_deg) - step, temperature_c, pressure_hpa)
    r2 = _refraction_deg(np.asarray(apparent_deg) + step, temperature_c, pressure_hpa)
    return (r1 - r2) / (2 * step)


def _position_angle_cos(h_self, h_other, distance) -> np.ndarray:
    """cos of the angle at a body between its vertical and the great circle to the other body."""
    h1, h2, d = np.radians(h_self), np.radians(h_other), np.radians(distance)
    return (np.sin(h2) - np.sin(h1) * np.cos(d)) / (np.cos(h1) * np.sin(d))


#: The UTC of a lunar distance is searched within this many hours either side of the chronometer's time, on a
#: grid of this many minutes (the Moon moves about half a degree an hour against the other body, so that a step
#: never holds two instants of one distance), by the one event search (:func:`navred.events.first_crossings`).
LUNAR_WINDOW_HOURS, LUNAR_STEP_MINUTES = 6, 20
_LIMB_SIGN = {"near": 1.0, "far": -1.0, "centre": 0.0}


@dataclass(frozen=True)
class _Observation:
    """What the navigator measured, and where: the clearing at any trial instant needs only this."""

    distance_deg: float
    other: str
    lat_deg: float
    lon_deg: float
    moon_limb: str
    other_limb: str
    index_error_arcmin: float
    moon_apparent_deg: float | None
    other_apparent_deg: float | None
    temperature_c: float
    pressure_hpa: float

    @property
    def altitudes_observed(self) -> bool:
        return self.moon_apparent_deg is not None and self.other_apparent_deg is not None


def _clearing(obs: _Observation, t_ns: np.ndarray) -> dict[str, np.ndarray]:
    """The clearing at trial instants (int64 ns, any shape): ``miss`` (cleared − almanac distance, degrees: its
    zero is the UTC), the cleared and apparent distances, the apparent altitudes of the centres, the azimuths
    and the horizontal parallaxes used."""
    when = np.asarray(t_ns, dtype=np.int64).reshape(-1).astype("datetime64[ns]")
    moon, body = places("Moon", when), places(obs.other, when)
    hc_m, zn_m = computed_altitude_azimuth(obs.lat_deg, obs.lon_deg, moon.gha_deg, moon.dec_deg)
    hc_o, zn_o = computed_altitude_azimuth(obs.lat_deg, obs.lon_deg, body.gha_deg, body.dec_deg)
    t, p = obs.temperature_c, obs.pressure_hpa
    if obs.altitudes_observed:
        a_m = np.full(when.shape, float(obs.moon_apparent_deg))
        a_o = np.full(when.shape, float(obs.other_apparent_deg))
    else:
        a_m = _apparent_from_true(_topocentric(hc_m, moon.hp_arcmin, obs.lat_deg, zn_m), t, p)
        a_o = _apparent_from_true(_topocentric(hc_o, body.hp_arcmin, obs.lat_deg, zn_o), t, p)
    # semi-diameters: the Moon's augmented, both contracted by refraction along the joining line
    rough = obs.distance_deg - obs.index_error_arcmin / ARCMIN_PER_DEG
    true_m = a_m - _refraction_deg(a_m, t, p)
    sd_m = moon.sd_arcmin / topocentric_distance_ratio(true_m, moon.hp_arcmin, obs.lat_deg, zn_m)
    sd_m = sd_m * (1.0 - _contraction(a_m, t, p) * _position_angle_cos(a_m, a_o, rough) ** 2)
    sd_o = body.sd_arcmin * np.where(body.sd_arcmin > 0,
                                     1.0 - _contraction(a_o, t, p) * _position_angle_cos(a_o, a_m, rough) ** 2, 1.0)
    apparent = obs.distance_deg + (-obs.index_error_arcmin + _LIMB_SIGN[obs.moon_limb] * sd_m
                                   + _LIMB_SIGN[obs.other_limb] * sd_o) / ARCMIN_PER_DEG
    # altitudes computed for a time still minutes out may not quite close the triangle with the observed
    # distance: the azimuth difference is then taken at its limit
    cleared = _cleared_distance_deg(apparent, a_m, a_o, zn_m, zn_o, moon.hp_arcmin, body.hp_arcmin, obs.lat_deg, t, p)
    values = {"miss": cleared - _geocentric_distance_deg(moon, body), "cleared": cleared, "apparent": apparent,
              "a_m": a_m, "a_o": a_o, "zn_m": zn_m, "zn_o": zn_o, "hp_m": moon.hp_arcmin, "hp_o": body.hp_arcmin}
    return {k: np.asarray(v, dtype=float).reshape(np.shape(t_ns)) for k, v in values.items()}


def lunar_distance(observed_distance_deg: float, other: str, utc_approx: object, lat_deg: float, lon_deg: float, *,
                   moon_limb: str = "near", other_limb: str = "centre", index_error_arcmin: float = 0.0,
                   moon_apparent_altitude_deg: float | None = None,
                   other_apparent_altitude_deg: float | None = None,
                   temperature_c: float = DEFAULT_TEMPERATURE_C, pressure_hpa: float = DEFAULT_PRESSURE_HPA) -> LunarResult:
    """UTC, chronometer error and longitude from a lunar distance.

    ``observed_distance_deg``: the sextant reading between the Moon's ``moon_limb`` ('near'
    or 'far' limb from the other body) and the other body's ``other_limb`` ('near', 'far' or
    'centre'; stars and planets are points), with its ``index_error_arcmin`` (on the arc
    positive). ``utc_approx``: the chronometer's time of the observation (any accepted instant
    form). The apparent altitudes of the two centres (corrected for index error, dip and
    semi-diameter, not for refraction or parallax) may be given; otherwise they are computed
    at the DR for the current estimate of UTC. The longitude is found by a time sight of the
    other body (or of the Moon) when its altitude was observed.
    """
    other = canonical_body_name(other)
    if other == "Moon":
        raise NavredError("a lunar distance is measured from the Moon to another body, not to itself")
    for name, limb in (("moon_limb", moon_limb), ("other_limb", other_limb)):
        if limb not in ("near", "far", "centre"):
            raise NavredError(f"{name} must be 'near', 'far' or 'centre', not {limb!r}")
    if not 0.0 < observed_distance_deg < 180.0:
        raise NavredError(f"observed distance {observed_distance_deg}° is outside 0-180°")
    given = utc_jd_to_datetime64(*utc_julian_date(utc_approx))[()]
    obs = _Observation(float(observed_distance_deg), other, float(lat_deg), float(lon_deg), moon_limb, other_limb,
                       float(index_error_arcmin), moon_apparent_altitude_deg, other_apparent_altitude_deg,
                       float(temperature_c), float(pressure_hpa))
    t, evaluations = _utc_of_distance(obs, given)
    at = {k: float(v[0]) for k, v in _clearing(obs, np.array([t.astype(np.int64)])).items()}
    a_m, a_o = at["a_m"], at["a_o"]
    if min(a_m, a_o) < 3.0:
        raise NavredError(f"the Moon ({a_m:.1f}°) or the other body ({a_o:.1f}°) is below 3°: refraction "
                          "there spoils a lunar distance")
    cleared = clear_distance(at["apparent"], a_m, a_o, at["zn_m"], at["zn_o"], at["hp_m"], at["hp_o"], lat_deg,
                             temperature_c=temperature_c, pressure_hpa=pressure_hpa, strict=obs.altitudes_observed)
    step = np.timedelta64(NS_PER_MINUTE, "ns")
    moon, body = places("Moon", np.array([t, t + step])), places(other, np.array([t, t + step]))
    distances = _geocentric_distance_deg(moon, body)
    rate = float(distances[1] - distances[0]) / 60.0  # degrees per second
    longitude, source = None, "no altitude observed"
    if obs.altitudes_observed:
        longitude = _time_sight_longitude(other, t, lat_deg, a_o, temperature_c, pressure_hpa, at["zn_o"])
        source = f"time sight of {other} at the cleared UTC and the DR latitude"
    return LunarResult(utc=t, cleared_distance_deg=cleared, apparent_distance_deg=at["apparent"],
                       chronometer_error_s=float((given - t).astype(np.int64)) / NS_PER_SECOND,
                       seconds_per_tenth_arcmin=abs((0.1 / ARCMIN_PER_DEG) / rate),
                       longitude_deg=longitude, longitude_from=source, moon_apparent_altitude_deg=a_m,
                       other_apparent_altitude_deg=a_o, iterations=evaluations)


def _utc_of_distance(obs: _Observation, given: np.datetime64) -> tuple[np.datetime64, int]:
    """The UTC at which the cleared distance equals the almanac's: of the zeros of their difference within
    :data:`LUNAR_WINDOW_HOURS` of the chronometer's time (the one event search), the nearest to it; and at how
    many trial instants the clearing was worked."""
    minutes = np.arange(-LUNAR_WINDOW_HOURS * 60, LUNAR_WINDOW_HOURS * 60 + 1, LUNAR_STEP_MINUTES)
    centre = given.astype("datetime64[ns]").astype(np.int64)
    grid = centre + minutes[None, :] * NS_PER_MINUTE
    evaluations = 0

    def miss(t_ns):
        nonlocal evaluations
        evaluations += int(np.size(t_ns))
        return _clearing(obs, t_ns)["miss"]

    # every step of the grid a window of its own, so that every crossing is found, not only the first: with
    # altitudes computed at the DR the clearing of an instant hours out (a body set) may cross zero too
    sampled = miss(grid)[0]
    steps = np.stack([grid[0, :-1], grid[0, 1:]], axis=1)
    rising, falling = first_crossings(miss, steps, 0.0, values=np.stack([sampled[:-1], sampled[1:]], axis=1))
    found = np.concatenate([rising, falling])
    found = found[found != NO_INSTANT]
    if found.size == 0:
        # no crossing: the distance never reaches this value nearby, or barely changes (conjunction, opposition)
        raise NavredError(f"no instant within {LUNAR_WINDOW_HOURS} hours of the time given has the Moon and "
                          f"{obs.other} at this distance: check the distance, the body, the limbs and the time; "
                          "if the distance is not changing (the bodies near conjunction or opposition), choose "
                          "another body for the lunar")
    return np.datetime64(int(found[np.argmin(np.abs(found - centre))]), "ns"), evaluations


def _topocentric(hc_deg, hp_arcmin, lat_deg, zn_deg):
    """Topocentric altitude of a centre whose geocentric altitude is Hc (parallax removed)."""
    h = np.asarray(hc_deg, dtype=float)
    for _ in range(4):
        h = hc_deg - parallax_in_altitude_arcmin(h, hp_arcmin, lat_deg, zn_deg) / ARCMIN_PER_DEG
    return h


def _time_sight_longitude(body, utc, lat_deg, apparent_deg, temperature_c, pressure_hpa, zn_deg) -> float:
    """Longitude from a body's altitude at a known UTC and latitude (the time sight)."""
    p = places(body, np.array([utc]))
    true = apparent_deg - _refraction_deg(apparent_deg, temperature_c, pressure_hpa)
    ho = true + float(parallax_in_altitude_arcmin(true, p.hp_arcmin[0], lat_deg, zn_deg)) / ARCMIN_PER_DEG
    phi, dec = np.radians(lat_deg), np.radians(p.dec_deg[0])
    cos_lha = (np.sin(np.radians(ho)) - np.sin(phi) * np.sin(dec)) / (np.cos(phi) * np.cos(dec))
    lha = np.degrees(np.arccos(np.clip(cos_lha, -1.0, 1.0)))
    lha = lha if zn_deg >= 180.0 else 360.0 - lha  # a body west of the meridian has LHA under 180°
    return float(wrap_180(lha - p.gha_deg[0]))
