"""Position fixing: the least-squares fix, running fixes, the error ellipse, outliers, checks.

The fix is the position that minimises the sum of squared altitude residuals Ho − Hc, found
by Gauss-Newton iteration on the sphere from the DR: at each step Hc and Zn are recomputed
from the full spherical formula at the current estimate, the residuals are projected on the
azimuths (∂Hc/∂north = cos Zn, ∂Hc/∂east = sin Zn, one arcminute per nautical mile) and the
position is moved until the step is below 0.01 nautical mile. This is the published
least-squares method for celestial fixes (G. H. Kaplan, "Determining the position and motion
of a vessel from celestial observations", Navigation 42(4), 1995; citation recalled from
memory). Because Hc is exact at every step it stays right for high sights and for a DR far
from the truth.

Sights taken at different times are referred to one fix time by the vessel's run: each
sight's position is the fix position carried back (or on) along the DR track, leg by leg,
each leg the rhumb line steered at the course and speed in force after the sight that begins
it (plus any current), on the WGS 84 ellipsoid (:mod:`navred.sailings`). The run is not exact:
its error (a documented rate per hour and per mile run) enters the ellipse.

A group whose lines cross at less than :data:`LINE_ONLY_DEG` is not a fix: it is reported as
a line of position (or a latitude, for sights on the meridian), with its distance from the DR.

The core solver works on arrays of shape (fixes, sights), so a fleet's archive of
independent fixes is solved at once (no Python loop over fixes or sights).
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG
from .errors import NavredError, failed_elements
from .sailings import rhumb_destination, rhumb_track_through
from .timescales import utc_jd_to_datetime64, utc_julian_date
from .triangle import computed_altitude_azimuth, destination, distance_bearing

#: Assumed standard error of one sight when a fix has no redundancy (two sights), arcminutes:
#: a good sight at sea is good to about 1′ (common practice).
A_PRIORI_SIGMA_ARCMIN = 1.0
#: No fix is credited with sights better than this, arcminutes (common practice: 0.2′ is about
#: the best a marine sextant gives at sea).
SIGMA_FLOOR_ARCMIN = 0.2
#: The DR's own error over a run (common practice; set with dr_error_kn / dr_error_fraction):
#: an unknown current and leeway of this many knots, and this fraction of the distance run for
#: the log and the steering. The run from each sight to the fix time is displaced by one unknown
#: amount, isotropic, of standard deviation DR_ERROR_KN·hours + DR_ERROR_FRACTION·miles run.
DR_ERROR_KN = 0.3
DR_ERROR_FRACTION = 0.02
OUTLIER_SIGMAS = 3.0
OUTLIER_ARCMIN_FEW_SIGHTS = 5.0
#: Lines of position that cross at less than this make a line (or a latitude), not a fix.
LINE_ONLY_DEG = 15.0
WEAK_CROSSING_DEG = 30.0
#: Lines whose azimuths all lie within this of north or south are a latitude (sights on the meridian).
MERIDIAN_AZIMUTH_DEG = 10.0
CONVERGED_NM = 0.01
MAX_ITERATIONS = 25
CONFIDENCE = 0.95
#: the 95 % point of the normal distribution (a line's half-width), Abramowitz & Stegun table 26.1
NORMAL_975 = 1.959964
_NAT = np.datetime64("NaT")
_EMPTY = np.zeros(0)
_EMPTY.flags.writeable = False  # a placeholder for per-sight arrays not yet filled in (never written to)


def chi_square_2_quantile(p: float) -> float:
    """Quantile of the chi-square distribution with 2 degrees of freedom: −2 ln(1 − p)."""
    return -2.0 * np.log(1.0 - p)


def f_2_quantile(p: float, dof: ArrayLike) -> np.ndarray:
    """Quantile of the F distribution with (2, dof) degrees of freedom, closed form.

    For two numerator degrees of freedom the CDF is 1 − (1 + 2x/ν)^(−ν/2), so
    x_p = (ν/2)((1 − p)^(−2/ν) − 1) (a standard identity of the F distribution).
    """
    dof = np.asarray(dof, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return dof / 2.0 * ((1.0 - p) ** (-2.0 / dof) - 1.0)


def t_quantile_975(dof: ArrayLike) -> np.ndarray:
    """Student's t 97.5 % point (two-sided 95 %): exact for 1 and 2 degrees of freedom (tan(0.475π) and
    2/√(2·0.975·0.025)·0.475), else the Cornish-Fisher expansion (Abramowitz & Stegun 26.7.5; from memory),
    within 0.01 of the tables from 3 degrees of freedom."""
    z = 1.959964
    v = np.asarray(dof, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = (z + (z**3 + z) / (4 * v) + (5 * z**5 + 16 * z**3 + 3 * z) / (96 * v**2)
             + (3 * z**7 + 19 * z**5 + 17 * z**3 - 15 * z) / (384 * v**3))
    t = np.where(v == 1, np.tan(0.475 * np.pi), t)
    t = np.where(v == 2, 0.95 / np.sqrt(2 * 0.975 * 0.025), t)
    return np.where(v >= 1, t, np.nan)


def move_position(lat_deg: ArrayLike, lon_deg: ArrayLike, north_nm: ArrayLike, east_nm: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Position moved by a small displacement in nautical miles north and east (mid-latitude sailing).

    For offsets of a few miles (a DR set off the truth, a step of the iteration); a run of the
    vessel is sailed on the rhumb line (:func:`navred.sailings.rhumb_destination`).
    """
    lat = np.asarray(lat_deg, dtype=float) + np.asarray(north_nm, dtype=float) / ARCMIN_PER_DEG
    lat = np.clip(lat, -89.999999, 89.999999)
    mid = np.radians((lat + np.asarray(lat_deg, dtype=float)) / 2.0)
    lon = np.asarray(lon_deg, dtype=float) + np.asarray(east_nm, dtype=float) / ARCMIN_PER_DEG / np.cos(mid)
    return lat, wrap_180(lon)


def velocity_kn(course_deg: ArrayLike, speed_kn: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """(north, east) components in knots of a course and speed."""
    c = np.radians(np.asarray(course_deg, dtype=float))
    s = np.asarray(speed_kn, dtype=float)
    return s * np.cos(c), s * np.sin(c)


def _fill_forward(values: np.ndarray, valid: np.ndarray) -> np.ndarray:
    """Along the last axis, each invalid element takes the last valid one before it (or, if none, the first after)."""
    n = values.shape[-1]
    index = np.where(valid, np.arange(n), -1)
    before = np.maximum.accumulate(index, axis=-1)
    after = np.flip(np.minimum.accumulate(np.flip(np.where(valid, np.arange(n), n), axis=-1), axis=-1), axis=-1)
    chosen = np.where(before >= 0, before, np.minimum(after, n - 1))
    return np.take_along_axis(values, chosen, axis=-1)


@dataclass(frozen=True)
class Track:
    """The DR track of a batch of fixes: each sight's time from the fix and the velocity after it.

    Arrays of shape (fixes, sights). The track runs through every sight time and the fix time;
    between two of them the vessel sails the rhumb line of the velocity in force after the earlier
    sight (before the first sight, the first sight's).
    """

    dt_hours: np.ndarray  # sight time minus fix time
    north_kn: np.ndarray  # velocity over the ground in force after each sight
    east_kn: np.ndarray

    @functools.cached_property
    def _legs(self):
        """The legs between consecutive times (sights and the fix), in time order (worked out once)."""
        shape = self.dt_hours.shape
        zero = np.zeros(shape[:-1] + (1,))
        times = np.concatenate([self.dt_hours, zero], axis=-1)  # the fix is the last column
        order = np.argsort(times, axis=-1, kind="stable")
        ordered = np.take_along_axis(times, order, axis=-1)
        is_sight = order < shape[-1]
        north = _fill_forward(np.take_along_axis(np.concatenate([self.north_kn, zero], -1), order, -1), is_sight)
        east = _fill_forward(np.take_along_axis(np.concatenate([self.east_kn, zero], -1), order, -1), is_sight)
        hours = np.diff(ordered, axis=-1)
        leg_north, leg_east = north[..., :-1] * hours, east[..., :-1] * hours
        return order, np.argmax(~is_sight, axis=-1), leg_north, np.degrees(np.arctan2(leg_east, leg_north)), \
            np.hypot(leg_north, leg_east)

    def positions(self, lat_deg: ArrayLike, lon_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
        """Each sight's position (F, S) when the vessel is at (lat, lon) (F,) at the fix time: the
        track of rhumb lines on the WGS 84 ellipsoid, sailed back (or on) from the fix."""
        order, fix_at, north, course, distance = self._legs
        lat_fix = np.broadcast_to(np.asarray(lat_deg, dtype=float), fix_at.shape)
        lon_fix = np.broadcast_to(np.asarray(lon_deg, dtype=float), fix_at.shape)
        if not distance.any():  # no run (sights taken together, or no course and speed): no track to sail
            shape = self.dt_hours.shape
            return (np.array(np.broadcast_to(lat_fix[..., None], shape)),
                    np.array(np.broadcast_to(lon_fix[..., None], shape)))
        # sailed on and back from the fix along every leg at once
        lat_all, lon_all = rhumb_track_through(lat_fix, lon_fix, fix_at, north, course, distance)
        back = self._back
        return (np.take_along_axis(lat_all, back, axis=-1)[..., :-1],
                np.take_along_axis(lon_all, back, axis=-1)[..., :-1])

    def take(self, rows: np.ndarray) -> Track:
        """The track of some of the fixes, keeping what has been worked out already."""
        if rows.size == self.dt_hours.shape[0] and np.array_equal(rows, np.arange(rows.size)):
            return self
        part = Track(self.dt_hours[rows], self.north_kn[rows], self.east_kn[rows])
        for name in ("_legs", "_back"):
            if name in self.__dict__:
                value = self.__dict__[name]
                part.__dict__[name] = tuple(v[rows] for v in value) if isinstance(value, tuple) else value[rows]
        return part

    @functools.cached_property
    def _back(self) -> np.ndarray:
        """Where each sight (then the fix) stands in time order: undoes the legs' ordering."""
        return np.argsort(self._legs[0], axis=-1, kind="stable")

    def run_distance_nm(self) -> np.ndarray:
        """Miles run along the track between each sight and the fix time (F, S)."""
        order, fix_at, _, _, distance = self._legs
        run = np.concatenate([np.zeros(distance.shape[:-1] + (1,)), np.cumsum(distance, axis=-1)], axis=-1)
        from_fix = np.abs(run - np.take_along_axis(run, fix_at[..., None], axis=-1))
        return np.take_along_axis(from_fix, self._back, axis=-1)[..., :-1]


@dataclass
class CoreFixes:
    """The solution of a batch of fixes; arrays have shape (fixes,) or (fixes, sights)."""

    lat_deg: np.ndarray
    lon_deg: np.ndarray
    velocity_north_kn: np.ndarray
    velocity_east_kn: np.ndarray
    residual_arcmin: np.ndarray
    zn_deg: np.ndarray
    covariance_nm2: np.ndarray  # (fixes, k, k): the inverse normal matrix, unit weight
    jacobian: np.ndarray  # (fixes, sights, k) at the solution
    n_sights: np.ndarray
    converged: np.ndarray
    iterations: int  # steps taken by the batch
    iterations_each: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=int))  # steps of each fix
    singular: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=bool))  # parallel lines, no fix


def solve_fixes(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, lat0_deg: ArrayLike, lon0_deg: ArrayLike,
                *, dt_hours: ArrayLike = 0.0, velocity_north_kn: ArrayLike = 0.0, velocity_east_kn: ArrayLike = 0.0,
                weights: ArrayLike = 1.0, mask: ArrayLike | None = None, solve_motion: bool = False,
                velocity0_kn: ArrayLike = (0.0, 0.0), mark_singular: bool = False,
                track: Track | None = None) -> CoreFixes:
    """Solve many independent fixes at once by Gauss-Newton on the sphere.

    Arrays of shape (fixes, sights): ``gha_deg``, ``dec_deg``, ``ho_deg`` of each sight,
    ``dt_hours`` the sight's time minus the fix time, ``velocity_north_kn`` and
    ``velocity_east_kn`` the velocity over the ground in force after each sight (the DR
    track, sailed as rhumb lines), ``weights`` (1/σ² relative) and ``mask`` (True for sights
    to use). ``lat0_deg``, ``lon0_deg`` (fixes,) start the iteration (the DR at the fix time).
    With ``solve_motion`` a constant velocity made good (north, east knots) is solved as
    well, starting from ``velocity0_kn`` (one pair, or a pair of arrays (fixes,)); the known
    velocities are then not used. Fixes whose lines are parallel raise, or with
    ``mark_singular`` are marked in ``singular`` and left at their start. ``track``: the
    :class:`Track` of these times and velocities when the caller has it already.
    """
    gha = np.atleast_2d(np.asarray(gha_deg, dtype=float))
    shape = gha.shape
    dec = np.broadcast_to(np.asarray(dec_deg, dtype=float), shape)
    ho = np.broadcast_to(np.asarray(ho_deg, dtype=float), shape)
    use = np.ones(shape, dtype=bool) if mask is None else np.broadcast_to(np.asarray(mask, dtype=bool), shape)
    use = use & np.isfinite(gha) & np.isfinite(dec) & np.isfinite(ho)
    w = np.where(use, np.broadcast_to(np.asarray(weights, dtype=float), shape), 0.0)
    # a sight left out takes the time and velocity of its fix's earliest sight: it then adds only a
    # leg of no length to the track, wherever the fix time lies
    dt_all = np.broadcast_to(np.asarray(dt_hours, dtype=float), shape)
    earliest = (np.arange(shape[0]), np.argmin(np.where(use, dt_all, np.inf), axis=1))

    def as_earliest(values):
        values = np.broadcast_to(np.asarray(values, dtype=float), shape)
        return np.where(use, values, values[earliest][:, None])

    dt, given_n, given_e = (as_earliest(v) for v in (dt_hours, velocity_north_kn, velocity_east_kn))
    lat = np.array(np.broadcast_to(np.asarray(lat0_deg, dtype=float), shape[:1]), dtype=float)
    lon = np.array(np.broadcast_to(np.asarray(lon0_deg, dtype=float), shape[:1]), dtype=float)
    k = 4 if solve_motion else 2
    vn = np.array(np.broadcast_to(np.asarray(velocity0_kn[0], dtype=float), shape[:1]))
    ve = np.array(np.broadcast_to(np.asarray(velocity0_kn[1], dtype=float), shape[:1]))
    n_used = use.sum(axis=1)
    if np.any(n_used < 2):
        raise NavredError(f"a fix needs two or more usable sights; too few in {failed_elements(n_used < 2)}")
    converged = np.zeros(shape[0], dtype=bool)
    singular = np.zeros(shape[0], dtype=bool)
    iterations_each = np.zeros(shape[0], dtype=int)
    safe_gha = np.where(use, gha, 0.0)
    safe_dec = np.where(use, dec, 0.0)
    safe_ho = np.where(use, ho, 0.0)

    known_track = Track(dt, given_n, given_e) if track is None else track

    def linearised(rows=None):
        """Hc, Zn and the Jacobian (F, S, k) of the fixes ``rows`` (all when None) at their estimates."""
        pick = slice(None) if rows is None else rows
        if solve_motion:
            moving_track = Track(dt[pick], np.broadcast_to(vn[pick, None], dt[pick].shape),
                                 np.broadcast_to(ve[pick, None], dt[pick].shape))
        else:
            moving_track = known_track if rows is None else known_track.take(rows)  # legs worked out once
        sight_lat, sight_lon = moving_track.positions(lat[pick], lon[pick])
        hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, safe_gha[pick], safe_dec[pick])
        z = np.radians(zn)
        columns = [np.cos(z), np.sin(z)] + ([np.cos(z) * dt[pick], np.sin(z) * dt[pick]] if solve_motion else [])
        return hc, zn, np.stack(columns, axis=-1) * use[pick][..., None]  # (F, S, k)

    iterations = 0
    identity = np.eye(k)
    active = np.arange(shape[0])  # the fixes still moving: only they are worked again
    for _ in range(MAX_ITERATIONS):
        iterations += 1
        hc, zn, jac = linearised(active)
        weight = w[active]
        residual_nm = (safe_ho[active] - hc) * ARCMIN_PER_DEG
        normal = np.einsum("fs,fsi,fsj->fij", weight, jac, jac)
        rhs = np.einsum("fs,fsi,fs->fi", weight, jac, residual_nm)
        determinant = np.linalg.det(normal)
        parallel = ~(np.abs(determinant) > 1e-12 * np.max(np.abs(normal), axis=(1, 2)) ** k)
        singular[active[parallel]] = True
        if parallel.any() and not mark_singular:
            raise NavredError(
                f"the lines of position are parallel (all azimuths alike or opposite): no fix "
                f"in {failed_elements(singular)}")
        # a fix that has settled (or is singular) takes no further step: each fix of a batch gets
        # the steps it would get alone
        step = np.linalg.solve(np.where(parallel[:, None, None], identity, normal), rhs[..., None])[..., 0]
        step = np.where(parallel[:, None], 0.0, step)
        size = np.hypot(step[:, 0], step[:, 1])
        lat[active], lon[active] = rhumb_destination(lat[active], lon[active],
                                                     np.degrees(np.arctan2(step[:, 1], step[:, 0])), size)
        if solve_motion:
            vn[active], ve[active] = vn[active] + step[:, 2], ve[active] + step[:, 3]
        iterations_each[active] += ~parallel
        settled = ~parallel & (size < CONVERGED_NM)
        converged[active[settled]] = True
        active = active[~settled & ~parallel]
        if active.size == 0:
            break
    hc, zn, jac = linearised()
    residual = np.where(use, (safe_ho - hc) * ARCMIN_PER_DEG, np.nan)
    normal = np.einsum("fs,fsi,fsj->fij", w, jac, jac)
    covariance = np.linalg.inv(np.where(singular[:, None, None], identity, normal))
    covariance[singular] = np.nan
    return CoreFixes(lat, lon, vn if solve_motion else np.full(shape[0], np.nan),
                     ve if solve_motion else np.full(shape[0], np.nan), residual,
                     np.where(use, zn, np.nan), covariance, jac, n_used, converged, iterations,
                     iterations_each, singular)


def error_ellipse(covariance_nm2: ArrayLike, scale: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Semi-major and semi-minor axes (nm) and true bearing of the major axis (0-180°).

    ``covariance_nm2`` (..., 2, 2) in (north, east); ``scale`` multiplies the standard
    deviations (the confidence factor).
    """
    c = np.asarray(covariance_nm2, dtype=float)
    nn, ee, ne = c[..., 0, 0], c[..., 1, 1], c[..., 0, 1]
    mean = (nn + ee) / 2.0
    radius = np.sqrt(((nn - ee) / 2.0) ** 2 + ne**2)
    major = scale * np.sqrt(np.maximum(mean + radius, 0.0))
    minor = scale * np.sqrt(np.maximum(mean - radius, 0.0))
    orientation = np.degrees(0.5 * np.arctan2(2.0 * ne, nn - ee))  # from north toward east
    return major, minor, np.mod(orientation, 180.0)


def azimuth_spread_deg(zn_deg: ArrayLike) -> float:
    """The widest angle at which the lines of position cross (azimuths taken modulo 180°)."""
    zn = np.asarray(zn_deg, dtype=float)
    directions = np.sort(np.mod(zn[np.isfinite(zn)], 180.0))
    if directions.size < 2:
        return 0.0
    gaps = np.diff(np.concatenate([directions, directions[:1] + 180.0]))
    return float(180.0 - gaps.max())


@dataclass
class ChartCheck:
    """A chart or satellite position compared with the celestial fix."""

    lat_deg: float
    lon_deg: float
    distance_nm: float
    bearing_deg: float
    inside_ellipse: bool


FIX, LINE, LATITUDE = "fix", "line of position", "latitude"


@dataclass
class FixResult:
    """A fix (or a line, or a latitude), how good it is, and which sight was bad. One residual and flag per input row.

    ``kind`` is ``"fix"``, ``"line of position"`` or ``"latitude"``: when the lines cross at less
    than :data:`LINE_ONLY_DEG` there is no fix, and ``lat_deg``/``lon_deg`` are the foot of the
    combined line nearest the DR, which runs at ``line_bearing_deg``; the ellipse is then a band
    of half-width ``ellipse_semi_minor_nm`` along the line (its semi-major axis is infinite).
    """

    utc: np.datetime64
    lat_deg: float
    lon_deg: float
    sigma_arcmin: float
    ellipse_semi_major_nm: float
    ellipse_semi_minor_nm: float
    ellipse_orientation_deg: float
    residual_arcmin: np.ndarray
    outlier: np.ndarray
    warnings: list[str]
    used: np.ndarray
    n_sights: int
    covariance_nm2: np.ndarray
    confidence_scale: float
    sigma_source: str
    iterations: int
    #: the quantile the ellipse is scaled by: 'F(2, ν)' for a σ estimated from ν redundant sights,
    #: 'chi-square(2)' for a σ assumed or held at its floor
    quantile: str = ""
    kind: str = FIX
    spread_deg: float = float("nan")
    line_bearing_deg: float | None = None
    #: the line's distance from the DR at the fix time, toward line_toward_deg (a line or latitude)
    line_offset_nm: float | None = None
    line_toward_deg: float | None = None
    #: the latitude from the noon curve (a parabola fitted to a series around meridian passage)
    noon_curve_latitude_deg: float | None = None
    dr_error_included: bool = False
    course_made_good_deg: float | None = None
    speed_made_good_kn: float | None = None
    without_outliers: FixResult | None = field(default=None, repr=False)
    chart_distance_nm: float | None = None
    chart_bearing_deg: float | None = None
    chart_inside_ellipse: bool | None = None
    #: the DR at the fix time, and each sight's line of position advanced (or retired) to the
    #: fix time, as an intercept and azimuth from that DR (input-row order, NaN if unused)
    dr_lat_deg: float = float("nan")
    dr_lon_deg: float = float("nan")
    lop_intercept_nm: np.ndarray = field(default_factory=lambda: _EMPTY)
    lop_zn_deg: np.ndarray = field(default_factory=lambda: _EMPTY)
    #: each line's foot (the intercept along Zn from that DR) and the true bearing of the line there:
    #: tangent to the circle of equal altitude at the foot
    lop_foot_lat_deg: np.ndarray = field(default_factory=lambda: _EMPTY)
    lop_foot_lon_deg: np.ndarray = field(default_factory=lambda: _EMPTY)
    lop_tangent_deg: np.ndarray = field(default_factory=lambda: _EMPTY)

    @property
    def is_fix(self) -> bool:
        return self.kind == FIX

    @property
    def residual_nm(self) -> np.ndarray:
        """Residuals in nautical miles (one arcminute of altitude is one nautical mile)."""
        return self.residual_arcmin.copy()

    @property
    def standard_error_nm(self) -> float:
        """Root of the trace of the position covariance: the fix's standard error, nm."""
        return float(np.sqrt(np.trace(self.covariance_nm2)))

    def cross_check(self, lat_deg: float, lon_deg: float) -> ChartCheck:
        """Distance and bearing from the fix to a chart or GNSS position, and whether it lies inside
        the 95 % ellipse (for a line of position: within its 95 % band)."""
        distance, bearing = distance_bearing(self.lat_deg, self.lon_deg, lat_deg, lon_deg)
        if not self.is_fix:
            across = self.distance_off_line_nm(lat_deg, lon_deg)
            return ChartCheck(float(lat_deg), float(lon_deg), float(distance), float(bearing),
                              bool(abs(across) <= self.ellipse_semi_minor_nm))
        b = np.radians(float(bearing))
        offset = float(distance) * np.array([np.cos(b), np.sin(b)])
        inside = float(offset @ np.linalg.solve(self.covariance_nm2, offset)) <= self.confidence_scale**2
        return ChartCheck(float(lat_deg), float(lon_deg), float(distance), float(bearing), bool(inside))

    def distance_off_line_nm(self, lat_deg: float, lon_deg: float) -> float:
        """For a line of position or a latitude: how far a position lies off the line (positive
        on the side the line's azimuth points to)."""
        distance, bearing = distance_bearing(self.lat_deg, self.lon_deg, lat_deg, lon_deg)
        toward = self.line_toward_deg if self.line_toward_deg is not None else 0.0
        return float(distance * np.cos(np.radians(float(bearing) - toward)))


def _utc64(values) -> np.ndarray:
    """UTC instants as datetime64[ns] (numpy datetime64 is UTC; other forms through the time scales)."""
    if isinstance(values, np.ndarray) and np.issubdtype(values.dtype, np.datetime64):
        return values.astype("datetime64[ns]")
    return utc_jd_to_datetime64(*utc_julian_date(values))


def _fix_times(at_utc, groups: int) -> np.ndarray:
    """The fix time of each group as datetime64[ns] (NaT: the group's last sight), from None, one
    instant for every group, or one per group."""
    if at_utc is None:
        return np.full(groups, np.datetime64("NaT"), dtype="datetime64[ns]")
    if isinstance(at_utc, np.datetime64):
        at_utc = np.array([at_utc])
    values = np.atleast_1d(at_utc if isinstance(at_utc, np.ndarray) else np.asarray(at_utc, dtype=object))
    if np.issubdtype(values.dtype, np.datetime64):
        times = values.astype("datetime64[ns]")
    else:
        given = np.array([v is not None and not (isinstance(v, float) and np.isnan(v)) for v in values])
        times = np.full(values.shape, np.datetime64("NaT"), dtype="datetime64[ns]")
        if given.any():
            times[given] = _utc64(values[given])
    return np.broadcast_to(times, (groups,)).copy()


@dataclass
class GroupFixes:
    """One fix (or line, or latitude) per group, or the reason there is none."""

    results: list[FixResult | None]
    problems: list[str]


def fixes_from_sights(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, utc: ArrayLike,
                      dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike, group: ArrayLike, *,
                      usable: ArrayLike | None = None, course_deg: ArrayLike | None = None,
                      speed_kn: ArrayLike | None = None, at_utc: object | None = None,
                      chart_lat: ArrayLike | None = None, chart_lon: ArrayLike | None = None,
                      solve_motion: bool = False, set_deg: float | None = None, drift_kn: float | None = None,
                      labels: ArrayLike | None = None, dr_error_kn: float = DR_ERROR_KN,
                      dr_error_fraction: float = DR_ERROR_FRACTION, refit: bool = True) -> GroupFixes:
    """Fix many groups of sights at once: one least-squares solve for every group, padded.

    The arrays are one element per sight (1-D), as for :func:`fix_from_sights`; ``group``
    numbers each sight's group 0, 1, ... (a negative number leaves the sight out). ``at_utc``
    is one fix time for all, one per group, or None (each group's last sight); ``chart_lat``
    and ``chart_lon`` one chart or GNSS position per group (NaN where there is none). Each
    group's arrays in its result follow its sights in input order. Every group gets the same
    result it would get alone (tests/test_fix.py checks it).
    """
    gha, dec, ho = (np.atleast_1d(np.asarray(v, dtype=float)) for v in (gha_deg, dec_deg, ho_deg))
    n_rows = gha.size
    group = np.broadcast_to(np.asarray(group, dtype=np.intp), (n_rows,))
    n_groups = int(group.max()) + 1 if n_rows and group.max() >= 0 else 0
    names = np.arange(1, n_rows + 1).astype(str) if labels is None else np.asarray(labels).astype(str)
    all_utc = np.broadcast_to(_utc64(utc), (n_rows,))
    ok = (group >= 0) & np.isfinite(gha) & np.isfinite(dec) & np.isfinite(ho) & ~np.isnat(all_utc)
    if usable is not None:
        ok &= np.broadcast_to(np.asarray(usable, dtype=bool), (n_rows,))
    results: list[FixResult | None] = [None] * n_groups
    problems = [""] * n_groups
    if n_groups == 0:
        return GroupFixes(results, problems)
    by_group = np.argsort(np.where(group >= 0, group, n_groups), kind="stable")
    sizes = np.bincount(group[group >= 0], minlength=n_groups)
    count_ok = np.bincount(group[ok], minlength=n_groups)
    for g in np.flatnonzero(count_ok < 2):
        problems[g] = (f"a fix needs two or more reduced sights; {int(count_ok[g])} of {int(sizes[g])} "
                       "are usable")
    work = np.flatnonzero(count_ok >= 2)
    if work.size == 0:
        return GroupFixes(results, problems)

    # --- the padded layout: (groups at work, the most usable sights of any) ---------------------
    ok_rows = by_group[ok[by_group]]
    ok_rows = ok_rows[np.isin(group[ok_rows], work)]
    w_of_group = np.full(n_groups, -1, dtype=np.intp)
    w_of_group[work] = np.arange(work.size)
    w = w_of_group[group[ok_rows]]
    start = np.concatenate([[0], np.cumsum(count_ok[work])[:-1]])
    column = np.arange(ok_rows.size) - start[w]
    width = int(count_ok[work].max())
    use = np.zeros((work.size, width), dtype=bool)
    use[w, column] = True
    times = np.full((work.size, width), np.iinfo(np.int64).min, dtype=np.int64)
    times[w, column] = all_utc[ok_rows].astype(np.int64)
    # each group's last sight by time (the later row among equal times)
    last = width - 1 - np.argmax(times[:, ::-1] == times.max(axis=1, keepdims=True), axis=1)
    index = np.empty((work.size, width), dtype=np.intp)
    index[:] = np.zeros((work.size, 1), dtype=np.intp)
    index[w, column] = ok_rows
    last_row = index[np.arange(work.size), last]
    # padding repeats each group's last sight: a zero-length leg at its time, no weight
    index = np.where(use, index, last_row[:, None])
    fix_time = _fix_times(at_utc, n_groups)[work]
    fix_time = np.where(np.isnat(fix_time), all_utc[last_row], fix_time)
    hours = (all_utc[index] - fix_time[:, None]).astype("timedelta64[ns]").astype(np.int64) / 3.6e12
    vn, ve = _velocities(index, course_deg, speed_kn, set_deg, drift_kn, n_rows)
    track = Track(hours, vn, ve)
    g_gha, g_dec, g_ho = gha[index], dec[index], ho[index]
    dr_lat = np.broadcast_to(np.asarray(dr_lat_deg, dtype=float), (n_rows,))
    dr_lon = np.broadcast_to(np.asarray(dr_lon_deg, dtype=float), (n_rows,))
    # the DR at the fix time: the last sight's DR carried on along the track to the fix time
    lat0, lon0 = _carry(track, last, dr_lat[last_row], dr_lon[last_row])
    n_used = use.sum(axis=1)

    # --- what each group is: a fix, a fix with its motion, or a line -----------------------------
    _, zn0 = computed_altitude_azimuth(lat0[:, None], lon0[:, None], g_gha, g_dec)
    spread0 = azimuth_spread_many(zn0, use)
    motion = np.zeros(work.size, dtype=bool)
    motion_problem = np.full(work.size, "", dtype=object)
    if solve_motion:
        span_h = np.where(use, hours, -np.inf).max(axis=1) - np.where(use, hours, np.inf).min(axis=1)
        motion_problem = np.where(
            n_used < 5, [f"{n} sights (at least 5 are needed for position, course, speed and a check)"
                         for n in n_used],
            np.where(span_h < 1.0, [f"the sights span {s * 60:.0f} minutes (at least an hour is needed)"
                                    for s in span_h],
                     np.where(spread0 < WEAK_CROSSING_DEG, "the azimuths are too alike", ""))).astype(object)
        motion = motion_problem == ""
    line = (spread0 < LINE_ONLY_DEG) & ~motion
    parts = {}
    for k, chosen in ((2, ~line & ~motion), (4, motion)):
        if chosen.any():
            rows = np.flatnonzero(chosen)
            velocity0 = (np.where(use[rows], vn[rows], 0.0).sum(1) / n_used[rows],
                         np.where(use[rows], ve[rows], 0.0).sum(1) / n_used[rows])
            parts[k] = (rows, _solve_part(k, rows, g_gha, g_dec, g_ho, use, track, lat0, lon0, velocity0,
                                          dr_error_kn, dr_error_fraction))
    if line.any():
        rows = np.flatnonzero(line)
        parts["line"] = (rows, _line_part(rows, g_gha, g_dec, g_ho, use, track, lat0, lon0, spread0,
                                          dr_error_kn, dr_error_fraction))

    # --- each line of position for the plotting sheet, from the DR carried to its sight ---------
    sight_lat, sight_lon = track.positions(lat0, lon0)
    hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, g_gha, g_dec)
    intercept = (g_ho - hc) * ARCMIN_PER_DEG
    foot_lat, foot_lon = destination(lat0[:, None], lon0[:, None], zn, intercept)
    # the line is tangent to the circle of equal altitude at the foot: across the azimuth there,
    # toward the body's geographical position (latitude Dec, longitude −GHA)
    _, toward_gp = distance_bearing(foot_lat, foot_lon, g_dec, wrap_180(-g_gha))
    tangent = wrap_360(toward_gp + 90.0)

    # --- the results, group by group, in input-row order ----------------------------------------
    # every per-sight array is scattered to the input rows once, then put in group order, so that
    # each group's arrays are slices (views) of one array
    residual = np.full((work.size, width), np.nan)
    outlier = np.zeros((work.size, width), dtype=bool)
    for rows, part in parts.values():
        residual[rows], outlier[rows] = part.residual_arcmin, part.outlier
    sights = index[use]

    def in_group_order(values, fill=np.nan, dtype=float):
        out = np.full(n_rows, fill, dtype=dtype)
        out[sights] = values[use]
        return out[by_group]

    columns = {name: in_group_order(values) for name, values in (
        ("residual_arcmin", residual), ("lop_intercept_nm", intercept), ("lop_zn_deg", zn),
        ("lop_foot_lat_deg", foot_lat), ("lop_foot_lon_deg", foot_lon), ("lop_tangent_deg", tangent))}
    columns["outlier"] = in_group_order(outlier, False, bool)
    columns["used"] = in_group_order(use, False, bool)
    bounds = np.concatenate([[0], np.cumsum(sizes)]).tolist()
    lat0_list, lon0_list, work_list = lat0.tolist(), lon0.tolist(), work.tolist()
    for key, (rows, part) in parts.items():
        for j, wi in enumerate(rows.tolist()):
            g = work_list[wi]
            result = part.result(j)
            if result is None:
                problems[g] = PARALLEL_LINES
                continue
            if key != "line" and solve_motion and motion_problem[wi]:
                result.warnings.insert(0, f"course and speed made good cannot be solved: {motion_problem[wi]}; "
                                          "the known run is used")
            a, b = bounds[g], bounds[g + 1]
            for name, values in columns.items():
                setattr(result, name, values[a:b])
            result.utc = fix_time[wi]
            result.dr_lat_deg, result.dr_lon_deg = lat0_list[wi], lon0_list[wi]
            if result.kind == LATITUDE and n_used[wi] >= 3:
                used_here = use[wi]
                _noon_curve(result, hours[wi][used_here], g_ho[wi][used_here], g_dec[wi][used_here])
            results[g] = result

    # --- the check fix without the blunders, all such groups in one more batch ------------------
    if refit:
        flagged = outlier.sum(axis=1)
        again = [g for g, w_ in zip(work_list, range(work.size)) if flagged[w_] and results[g] is not None
                 and n_used[w_] - flagged[w_] >= 2]
        if again:
            keep = ok.copy()
            keep[index[outlier]] = False
            chosen = np.isin(group, again)
            renumber = np.full(n_groups, -1, dtype=np.intp)
            renumber[again] = np.arange(len(again))
            sub = fixes_from_sights(
                gha, dec, ho, all_utc, dr_lat, dr_lon, np.where(chosen, renumber[group], -1), usable=keep,
                course_deg=course_deg, speed_kn=speed_kn, at_utc=np.array([results[g].utc for g in again]),
                solve_motion=solve_motion, set_deg=set_deg, drift_kn=drift_kn, labels=names,
                dr_error_kn=dr_error_kn, dr_error_fraction=dr_error_fraction, refit=False)
            solved = [j for j, check in enumerate(sub.results) if check is not None]
            first = [results[again[j]] for j in solved]
            second = [sub.results[j] for j in solved]
            moved, _ = distance_bearing(np.array([r.lat_deg for r in first]), np.array([r.lon_deg for r in first]),
                                        np.array([c.lat_deg for c in second]), np.array([c.lon_deg for c in second]))
            for j, result, check, miles in zip(solved, first, second, np.atleast_1d(moved).tolist()):
                count = int(result.outlier.sum())
                g = again[j]
                labels_ = names[by_group[bounds[g]:bounds[g + 1]][result.outlier]]
                result.warnings.append(
                    f"sight{'s' if count > 1 else ''} {', '.join(labels_)} "
                    f"look{'' if count > 1 else 's'} like {'blunders' if count > 1 else 'a blunder'}; without "
                    f"{'them' if count > 1 else 'it'} the {result.kind} moves {miles:.1f} nm "
                    "(see without_outliers)")
                result.without_outliers = check

    # --- the chart or GNSS cross-check ------------------------------------------------------------
    if chart_lat is not None and chart_lon is not None:
        c_lat = np.broadcast_to(np.asarray(chart_lat, dtype=float), (n_groups,))
        c_lon = np.broadcast_to(np.asarray(chart_lon, dtype=float), (n_groups,))
        for g in work:
            if results[g] is not None and np.isfinite(c_lat[g]) and np.isfinite(c_lon[g]):
                check = results[g].cross_check(c_lat[g], c_lon[g])
                results[g].chart_distance_nm, results[g].chart_bearing_deg = check.distance_nm, check.bearing_deg
                results[g].chart_inside_ellipse = check.inside_ellipse
    return GroupFixes(results, problems)


PARALLEL_LINES = "the lines of position are parallel (all azimuths alike or opposite): no fix"


def fix_from_sights(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, utc: ArrayLike,
                    dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike, *, usable: ArrayLike | None = None,
                    course_deg: ArrayLike | None = None, speed_kn: ArrayLike | None = None,
                    at_utc: object | None = None, chart_lat: float | None = None, chart_lon: float | None = None,
                    solve_motion: bool = False, set_deg: float | None = None, drift_kn: float | None = None,
                    labels: ArrayLike | None = None, dr_error_kn: float = DR_ERROR_KN,
                    dr_error_fraction: float = DR_ERROR_FRACTION) -> FixResult:
    """The least-squares fix from reduced sights, one element per sight (1-D arrays).

    ``gha_deg``, ``dec_deg`` and ``ho_deg`` of each sight, its ``utc`` (datetime64, taken as
    UTC, or any instant form) and the DR at its time; ``usable`` (default: every sight with
    finite values) picks the sights to fix from, the others get NaN residuals. Sights at
    different times make a running fix at ``at_utc`` (default: the last sight's time), along
    the DR track of ``course_deg`` and ``speed_kn`` (per sight: in force from each sight until
    the next; NaN as 0), plus a current ``set_deg``/``drift_kn``; the run's own error,
    ``dr_error_kn`` per hour and ``dr_error_fraction`` of the miles run, enters the ellipse.
    With ``solve_motion`` the course and speed made good are solved as well when the sights
    support it. A chart or GNSS position (``chart_lat``/``chart_lon``) is cross-checked.
    ``labels`` name the sights in messages (default: 1, 2, ...). One group of
    :func:`fixes_from_sights`.
    """
    n_rows = np.atleast_1d(np.asarray(gha_deg, dtype=float)).size
    batch = fixes_from_sights(
        gha_deg, dec_deg, ho_deg, utc, dr_lat_deg, dr_lon_deg, np.zeros(n_rows, dtype=np.intp), usable=usable,
        course_deg=course_deg, speed_kn=speed_kn, at_utc=at_utc,
        chart_lat=np.nan if chart_lat is None else chart_lat, chart_lon=np.nan if chart_lon is None else chart_lon,
        solve_motion=solve_motion, set_deg=set_deg, drift_kn=drift_kn, labels=labels, dr_error_kn=dr_error_kn,
        dr_error_fraction=dr_error_fraction)
    if batch.results[0] is None:
        raise NavredError(batch.problems[0])
    return batch.results[0]


def azimuth_spread_many(zn_deg: np.ndarray, use: np.ndarray) -> np.ndarray:
    """:func:`azimuth_spread_deg` of each row of (groups, sights) azimuths, using the sights ``use`` marks."""
    directions = np.sort(np.where(use, np.mod(zn_deg, 180.0), np.inf), axis=1)
    count = use.sum(axis=1)
    first = directions[:, :1] + 180.0
    padded = np.concatenate([directions, np.full_like(first, np.inf)], axis=1)
    # the wrap-around gap closes the circle after the last used direction
    padded[np.arange(len(count)), count] = first[:, 0]
    with np.errstate(invalid="ignore"):
        gaps = np.diff(padded, axis=1)  # inf − inf beyond the used directions, masked next
    valid = np.arange(gaps.shape[1])[None, :] < count[:, None]
    widest = np.where(valid, gaps, -np.inf).max(axis=1)
    return np.where(count >= 2, 180.0 - widest, 0.0)


def _carry(track: Track, sight: np.ndarray, lat: np.ndarray, lon: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Each group's DR at one of its sights (``sight``, a column) carried along its track to the fix time."""
    pick = (np.arange(sight.size), sight)
    if not np.any(track.dt_hours[pick]):  # the fix is at that sight's time: nothing to carry
        return np.asarray(lat, dtype=float), np.asarray(lon, dtype=float)
    # positions() gives the sights from the fix; run it from a trial fix and shift by the sight's offset
    lat_s, lon_s = track.positions(lat, lon)
    fix_lat, fix_lon = lat + (lat - lat_s[pick]), wrap_180(lon + wrap_180(lon - lon_s[pick]))
    for _ in range(3):  # the track's shape varies slowly with latitude: a few corrections settle it
        lat_s, lon_s = track.positions(fix_lat, fix_lon)
        north, east = lat - lat_s[pick], wrap_180(lon - lon_s[pick])
        fix_lat, fix_lon = fix_lat + north, wrap_180(fix_lon + east)
        if np.max(np.abs(north), initial=0.0) + np.max(np.abs(east), initial=0.0) < 1e-10:  # 0.01 mm
            break
    fix_lat = np.clip(fix_lat, -90.0, 90.0)  # a DR at the pole is carried no further than the pole
    return np.asarray(fix_lat, dtype=float), np.asarray(fix_lon, dtype=float)


def _velocities(index, course_deg, speed_kn, set_deg, drift_kn, n_rows):
    """Velocity over the ground (north, east knots) in force after each sight (NaN course or speed as 0)."""
    def per_sight(values):
        if values is None:
            return np.zeros(index.shape)
        return np.nan_to_num(np.broadcast_to(np.asarray(values, dtype=float), (n_rows,))[index])

    vn, ve = velocity_kn(per_sight(course_deg), per_sight(speed_kn))
    if set_deg is not None and drift_kn is not None:
        cn, ce = velocity_kn(set_deg, drift_kn)
        vn, ve = vn + cn, ve + ce
    return vn, ve


def run_error_covariance(zn_deg: ArrayLike, dt_hours: ArrayLike, run_nm: ArrayLike, dr_error_kn: float = DR_ERROR_KN,
                         dr_error_fraction: float = DR_ERROR_FRACTION) -> np.ndarray:
    """Covariance (nm², sights × sights) that the DR's error over each run adds to the altitude residuals.

    Each sight's position is carried from its time to the fix time; the carrying is wrong by one
    unknown displacement, isotropic, of standard deviation s = dr_error_kn·|hours| +
    dr_error_fraction·miles run (common practice). Its component along each sight's azimuth
    moves that line: cov_ij = s_i s_j cos(Zn_i − Zn_j). Arrays (..., sights) give (..., sights, sights).
    """
    zn = np.radians(np.asarray(zn_deg, dtype=float))
    s = dr_error_kn * np.abs(np.asarray(dt_hours, dtype=float)) + dr_error_fraction * np.asarray(run_nm, dtype=float)
    return s[..., :, None] * s[..., None, :] * np.cos(zn[..., :, None] - zn[..., None, :])


@dataclass(frozen=True)
class _Part:
    """The groups of a batch solved one way: their residuals and blunder flags (groups, sights),
    and the FixResult of group j (its per-sight arrays are filled in by the caller)."""

    residual_arcmin: np.ndarray
    outlier: np.ndarray
    result: Callable[[int], FixResult | None]


def _sigma_choice(dof, leftover):
    """σ per group: estimated from the residuals, held at the floor, or assumed (no redundancy);
    with the quantile that scales the ellipse and the text that says where σ came from."""
    with np.errstate(invalid="ignore", divide="ignore"):
        sigma_hat = np.sqrt(np.maximum(leftover, 0.0) / np.maximum(dof, 1))
    estimated = (dof >= 1) & (sigma_hat >= SIGMA_FLOOR_ARCMIN)
    sigma = np.where(dof >= 1, np.where(estimated, sigma_hat, SIGMA_FLOOR_ARCMIN), A_PRIORI_SIGMA_ARCMIN)
    return sigma_hat, estimated, sigma


def _plural(count: int) -> str:
    return "s" if count > 1 else ""


def _solve_part(k, rows, gha, dec, ho, use, track, lat0, lon0, velocity0, dr_error_kn, dr_error_fraction):
    """Fix the groups ``rows`` with k unknowns (2: position; 4: position, course and speed made
    good) in one solve; returns a function giving group j's FixResult (per-sight arrays padded)."""
    motion = k == 4
    u = use[rows]
    sub_track = track.take(rows)
    core = solve_fixes(gha[rows], dec[rows], ho[rows], lat0[rows], lon0[rows], dt_hours=sub_track.dt_hours,
                       velocity_north_kn=sub_track.north_kn, velocity_east_kn=sub_track.east_kn, mask=u,
                       solve_motion=motion, velocity0_kn=velocity0, mark_singular=True, track=sub_track)
    n = u.sum(axis=1)
    dof = n - k
    residual = np.where(u, core.residual_arcmin, 0.0)
    unit, jac = core.covariance_nm2, core.jacobian
    width = u.shape[1]
    if motion:  # no known run: the motion itself was solved
        run_cov = np.zeros((rows.size, width, width))
    else:
        spread_s = np.where(u, 1.0, 0.0)
        run_cov = run_error_covariance(np.where(u, core.zn_deg, 0.0), sub_track.dt_hours,
                                       sub_track.run_distance_nm(), dr_error_kn, dr_error_fraction)
        run_cov = run_cov * spread_s[:, :, None] * spread_s[:, None, :]
    gain = unit @ np.swapaxes(jac, 1, 2)  # x = gain @ residual: the least-squares estimator
    hat = jac @ gain
    # the sight error, once the part of the residuals the run's error accounts for is taken out
    # (an unbiased estimate: E[r'(I − H)r] = σ²·dof + trace((I − H)·C_run))
    leftover = np.sum(residual**2, axis=1) - (np.trace(run_cov, axis1=1, axis2=2)
                                              - np.einsum("fij,fji->f", hat, run_cov))
    sigma_hat, estimated, sigma = _sigma_choice(dof, leftover)
    scale = np.where(estimated, np.sqrt(2.0 * f_2_quantile(CONFIDENCE, np.maximum(dof, 1))),
                     np.sqrt(chi_square_2_quantile(CONFIDENCE)))
    identity = np.eye(width)[None] * u[:, :, None]
    covariance = gain @ (sigma[:, None, None] ** 2 * identity + run_cov) @ np.swapaxes(gain, 1, 2)
    position_cov = covariance[:, :2, :2]
    major, minor, orientation = error_ellipse(position_cov, scale)
    spread = azimuth_spread_many(core.zn_deg, u)
    outlier = _outliers_many(np.where(u, core.residual_arcmin, 0.0), jac, unit, dof) & u
    speed_sigma = np.sqrt(np.trace(covariance[:, 2:, 2:], axis1=1, axis2=2)) if motion else np.zeros(rows.size)

    # plain Python numbers for the per-group results (a numpy scalar costs more to handle)
    lat, lon = core.lat_deg.tolist(), core.lon_deg.tolist()
    numbers = [a.tolist() for a in (sigma, sigma_hat, major, minor, orientation, scale, spread, speed_sigma)]
    sigma_l, sigma_hat_l, major_l, minor_l, orientation_l, scale_l, spread_l, speed_sigma_l = numbers
    dof_l, n_l, steps_l = dof.tolist(), n.tolist(), core.iterations_each.tolist()
    estimated_l, converged_l, singular_l = estimated.tolist(), core.converged.tolist(), core.singular.tolist()
    run_included = run_cov.any(axis=(1, 2)).tolist()

    def result(j: int) -> FixResult | None:
        if singular_l[j]:
            return None
        warnings_: list[str] = []
        d = dof_l[j]
        if d >= 1 and estimated_l[j]:
            quantile, source = f"F(2, {d})", f"from the residuals, {d} redundant sight{_plural(d)}"
        elif d >= 1:
            quantile = "chi-square(2)"
            source = (f"held at the floor of {SIGMA_FLOOR_ARCMIN}′ (the residuals give {sigma_hat_l[j]:.2f}′ "
                      f"from {d} redundant sight{_plural(d)})")
        else:
            quantile, source = "chi-square(2)", f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight, no redundancy"
            warnings_.append(f"{n_l[j]} sights and {k} unknowns: no redundancy, so the ellipse rests on an "
                             f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight and there is no check on a blunder")
        if spread_l[j] < WEAK_CROSSING_DEG:
            warnings_.append(f"weak fix: the lines of position cross at {spread_l[j]:.0f}° at most (azimuths "
                             f"alike or opposite); below {WEAK_CROSSING_DEG:.0f}° the fix is poorly defined")
        if not converged_l[j]:
            warnings_.append(f"the iteration did not settle to {CONVERGED_NM} nm in {MAX_ITERATIONS} steps")
        fix = FixResult(
            utc=_NAT, lat_deg=lat[j], lon_deg=lon[j], sigma_arcmin=sigma_l[j], ellipse_semi_major_nm=major_l[j],
            ellipse_semi_minor_nm=minor_l[j], ellipse_orientation_deg=orientation_l[j], residual_arcmin=_EMPTY,
            outlier=_EMPTY, warnings=warnings_, used=_EMPTY, n_sights=n_l[j], covariance_nm2=position_cov[j],
            confidence_scale=scale_l[j], sigma_source=source, iterations=steps_l[j], quantile=quantile,
            spread_deg=spread_l[j], dr_error_included=run_included[j])
        if motion:
            vn, ve = float(core.velocity_north_kn[j]), float(core.velocity_east_kn[j])
            fix.course_made_good_deg = float(wrap_360(np.degrees(np.arctan2(ve, vn))))
            fix.speed_made_good_kn = float(np.hypot(vn, ve))
            if speed_sigma_l[j] > 2.0:
                warnings_.append(f"course and speed made good are poorly determined (±{speed_sigma_l[j]:.1f} kn)")
        return fix

    return _Part(core.residual_arcmin, outlier, result)


def _line_part(rows, gha, dec, ho, use, track, lat0, lon0, spread0, dr_error_kn, dr_error_fraction):
    """Groups whose lines of position (nearly) coincide: one combined line each, worked from the DR.

    Each line, advanced to the fix time, lies a_j miles from the DR toward its azimuth Z_j; the
    combined line runs across the mean azimuth Z (the axial mean) and lies p miles from the DR,
    the least-squares p = Σ a_j c_j / Σ c_j² with c_j = cos(Z_j − Z).
    """
    u = use[rows]
    sub_track = track.take(rows)
    sight_lat, sight_lon = sub_track.positions(lat0[rows], lon0[rows])
    hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, gha[rows], dec[rows])
    intercept = np.where(u, (ho[rows] - hc) * ARCMIN_PER_DEG, 0.0)
    doubled = np.radians(2.0 * zn)
    toward = np.degrees(np.arctan2(np.where(u, np.sin(doubled), 0.0).sum(1),
                                   np.where(u, np.cos(doubled), 0.0).sum(1))) / 2.0
    cosines = np.where(u, np.cos(np.radians(zn - toward[:, None])), 0.0)
    flip = np.sum(intercept * cosines, axis=1) < 0  # point the line's azimuth to the side it lies on
    toward = wrap_360(np.where(flip, toward + 180.0, toward))
    cosines = np.where(flip[:, None], -cosines, cosines)
    weight = np.sum(cosines**2, axis=1)
    offset = np.sum(intercept * cosines, axis=1) / weight
    residual = np.where(u, intercept - offset[:, None] * cosines, np.nan)
    n = u.sum(axis=1)
    dof = n - 1
    run_cov = run_error_covariance(np.where(u, zn, 0.0), sub_track.dt_hours, sub_track.run_distance_nm(),
                                   dr_error_kn, dr_error_fraction)
    run_cov = run_cov * u[:, :, None] * u[:, None, :]
    gain = cosines / weight[:, None]
    leftover = np.nansum(residual**2, axis=1) - (np.trace(run_cov, axis1=1, axis2=2)
                                                 - np.einsum("fi,fij,fj->f", gain, run_cov, cosines))
    sigma_hat, estimated, sigma = _sigma_choice(dof, np.where(dof >= 1, leftover, 0.0))
    variance = sigma**2 * np.sum(gain**2, axis=1) + np.einsum("fi,fij,fj->f", gain, run_cov, gain)
    half_width = NORMAL_975 * np.sqrt(variance)
    foot_lat, foot_lon = destination(lat0[rows], lon0[rows], toward, offset)
    near_meridian = np.minimum(np.abs(wrap_180(zn)), np.abs(wrap_180(zn - 180.0))) <= MERIDIAN_AZIMUTH_DEG
    meridian = np.all(near_meridian | ~u, axis=1)
    along = np.mod(wrap_360(toward + 90.0), 180.0)
    limit = np.maximum(OUTLIER_SIGMAS * sigma, OUTLIER_ARCMIN_FEW_SIGHTS)
    outlier = (np.abs(np.nan_to_num(residual)) > limit[:, None]) & (dof >= 2)[:, None] & u
    run_included = run_cov.any(axis=(1, 2))

    def result(j: int) -> FixResult:
        d = int(dof[j])
        if d >= 1 and estimated[j]:
            source = f"from the residuals, {d} redundant sight{_plural(d)}"
        elif d >= 1:
            source = f"held at the floor of {SIGMA_FLOOR_ARCMIN}′"
        else:
            source = f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight"
        side = "toward" if offset[j] >= 0 else "away from"
        what = "a latitude (the sights are on the meridian)" if meridian[j] else "a line of position"
        message = (f"not a fix: the lines of position cross at {spread0[rows[j]]:.0f}° at most (below "
                   f"{LINE_ONLY_DEG:.0f}°), so the sights give {what}, {abs(offset[j]):.1f} nm {side} "
                   f"{toward[j]:03.0f}° from the DR, good to ±{half_width[j]:.1f} nm (95 %); the position along "
                   "it is the DR's")
        return FixResult(
            utc=np.datetime64("NaT"), lat_deg=float(foot_lat[j]), lon_deg=float(foot_lon[j]),
            sigma_arcmin=float(sigma[j]), ellipse_semi_major_nm=float("inf"),
            ellipse_semi_minor_nm=float(half_width[j]), ellipse_orientation_deg=float(along[j]),
            residual_arcmin=residual[j], outlier=outlier[j], warnings=[message], used=u[j], n_sights=int(n[j]),
            covariance_nm2=np.array([[variance[j], 0.0], [0.0, np.inf]]), confidence_scale=NORMAL_975,
            sigma_source=source, iterations=0, quantile="normal", kind=LATITUDE if meridian[j] else LINE,
            spread_deg=float(spread0[rows[j]]), line_bearing_deg=float(along[j]), line_offset_nm=float(offset[j]),
            line_toward_deg=float(toward[j]), dr_error_included=bool(run_included[j]))

    return _Part(residual, outlier, result)


def _noon_curve(result: FixResult, hours, ho, dec) -> None:
    """For a latitude: the noon-curve latitude too, when the series straddles meridian passage."""
    zn = np.radians(result.lop_zn_deg[result.used])
    bearing = "S" if np.cos(zn).sum() < 0 else "N"  # where the body bears on the meridian
    latitude = latitude_from_noon_curve(hours, ho, np.mean(dec), bearing)
    if latitude is not None:
        result.noon_curve_latitude_deg = latitude


def _outliers_many(residual, jacobian, covariance, dof):
    """Flag blunders: externally studentized residual over 3, or over 5′ with too few sights.

    The leverage of each sight comes from the normal equations, and each sight is judged
    against the scatter of the others (the deleted residual), so one blunder cannot hide
    by inflating the standard error. Arrays (groups, sights), padding with zero residuals.
    """
    leverage = np.clip(np.einsum("fsi,fij,fsj->fs", jacobian, covariance, jacobian), 0.0, 0.999)
    total = np.sum(residual**2, axis=1, keepdims=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        deleted_var = (total - residual**2 / (1.0 - leverage)) / (dof[:, None] - 1)
    deleted_sigma = np.sqrt(np.maximum(np.nan_to_num(deleted_var), SIGMA_FLOOR_ARCMIN**2))
    studentized = residual / (deleted_sigma * np.sqrt(1.0 - leverage))
    return np.where((dof >= 2)[:, None], np.abs(studentized) > OUTLIER_SIGMAS,
                    np.abs(residual) > OUTLIER_ARCMIN_FEW_SIGHTS)


def latitude_by_meridian_altitude(ho_deg: ArrayLike, dec_deg: ArrayLike, body_bearing: ArrayLike = "S", lower_transit: ArrayLike = False) -> np.ndarray:
    """Latitude (degrees) from a body's observed altitude on the meridian (the noon sight).

    Upper transit: latitude = Dec + (90° − Ho) when the body bears south of the observer,
    Dec − (90° − Ho) when it bears north. Lower transit (a circumpolar body below the pole):
    latitude = Ho + (90° − |Dec|), toward the same pole as the declination; a body of
    declination 0 has no lower transit above the horizon, and is refused. (Every navigation
    manual; common practice.) Vectorised; ``body_bearing`` is 'N' or 'S'.

    >>> float(latitude_by_meridian_altitude(50.0, 10.0, "S"))
    50.0
    """
    ho = np.asarray(ho_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    lower = np.asarray(lower_transit, dtype=bool)
    bearing = np.char.upper(np.char.strip(np.asarray(body_bearing, dtype=str)))
    if not np.all(np.isin(bearing, ["N", "S"])):
        raise NavredError("body_bearing must be 'N' (body north of you) or 'S' (south)")
    no_pole = lower & (np.abs(dec) == 0.0)
    if no_pole.any():
        raise NavredError(f"a lower transit needs a declination north or south of the equator (a body of "
                          f"declination 0 crosses the lower meridian below the horizon): {failed_elements(no_pole)}")
    zenith = 90.0 - ho
    upper = np.where(bearing == "S", dec + zenith, dec - zenith)
    lower_latitude = np.sign(dec) * (ho + 90.0 - np.abs(dec))
    latitude = np.where(lower, lower_latitude, upper)
    bad = np.abs(latitude) > 90.0
    if bad.any():
        raise NavredError(f"no latitude fits Ho and Dec as given (check the bearing N/S): {failed_elements(bad)}")
    return latitude


def latitude_by_polaris(ho_deg: ArrayLike, gha_deg: ArrayLike, dec_deg: ArrayLike, lon_deg: ArrayLike) -> np.ndarray:
    """Latitude (degrees) from the observed altitude of Polaris, solved exactly.

    No table: the latitude at which the computed altitude of Polaris (from its exact GHA and
    Dec at the sight and the DR longitude) equals Ho, by Newton's method on the spherical
    formula (∂Hc/∂φ = cos Zn). The DR longitude matters little: Polaris bears within about
    1.5° of north, so a 30′ error in longitude moves the latitude by at most about 0.8′ cos φ.
    """
    ho = np.asarray(ho_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    polar_distance = 90.0 - dec
    lha = np.radians(np.asarray(gha_deg, dtype=float) + np.asarray(lon_deg, dtype=float))
    lat = ho - polar_distance * np.cos(lha)  # the first-order start (the old Q correction)
    for _ in range(8):
        hc, zn = computed_altitude_azimuth(np.clip(lat, -89.9, 89.9), lon_deg, gha_deg, dec_deg)
        slope = np.cos(np.radians(zn))
        lat = lat + (ho - hc) / np.where(np.abs(slope) > 0.2, slope, 1.0)
    hc, _ = computed_altitude_azimuth(np.clip(lat, -89.9, 89.9), lon_deg, gha_deg, dec_deg)
    if np.any(np.abs(hc - ho) > 1e-6):
        raise NavredError("no latitude reproduces the Polaris altitude: check Ho, the time and the body")
    return lat


#: The ex-meridian reduction holds within as many minutes of time from meridian passage as the
#: meridian zenith distance has degrees (common practice; from memory).
def ex_meridian_limit_minutes(zenith_distance_deg: ArrayLike) -> np.ndarray:
    """The longest time (minutes) from meridian passage at which an ex-meridian sight is reduced."""
    return np.abs(np.asarray(zenith_distance_deg, dtype=float))


def ex_meridian_latitude(ho_deg: ArrayLike, dec_deg: ArrayLike, lha_deg: ArrayLike, dr_lat_deg: ArrayLike,
                         body_bearing: ArrayLike = "S") -> np.ndarray:
    """Latitude (degrees) from a sight a few minutes from meridian passage, reduced to the meridian.

    The reduction to the meridian: the altitude rises by a·t² between the sight and meridian
    passage, a = 1.9635″ cos φ cos δ / sin z per minute of time squared, t the minutes of time
    from meridian passage (the LHA, or 360° − LHA, at 15° an hour) and z the meridian zenith
    distance, from the DR latitude φ (the ex-meridian tables of the navigation manuals; from
    memory). Refused beyond its limit (:func:`ex_meridian_limit_minutes`): there the sight is
    reduced as any other line of position.
    """
    ho = np.asarray(ho_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    lat = np.asarray(dr_lat_deg, dtype=float)
    t_minutes = np.abs(wrap_180(np.asarray(lha_deg, dtype=float))) * 4.0
    zenith = np.abs(lat - dec)
    beyond = t_minutes > ex_meridian_limit_minutes(zenith)
    if beyond.any():
        raise NavredError(f"the sight is {float(np.max(t_minutes[beyond])):.1f} minutes from meridian passage, beyond "
                          f"the ex-meridian limit of as many minutes as the zenith distance has degrees "
                          f"({float(np.min(zenith[beyond])):.1f}): {failed_elements(beyond)}; reduce it as a line "
                          "of position")
    factor_arcsec = 1.9635 * np.cos(np.radians(lat)) * np.cos(np.radians(dec)) / np.sin(np.radians(zenith))
    meridian_altitude = ho + factor_arcsec * t_minutes**2 / 3600.0
    return latitude_by_meridian_altitude(meridian_altitude, dec, body_bearing)


def latitude_from_noon_curve(hours: ArrayLike, ho_deg: ArrayLike, dec_deg: float, body_bearing: str = "S",
                             ) -> float | None:
    """Latitude from a series of sights around meridian passage: the maximum of the noon curve.

    A parabola Ho = a + b·t + c·t² fitted by least squares to the series gives the maximum
    altitude (not the highest single sight); the latitude follows as for a meridian altitude
    (the noon curve of the navigation manuals, common practice). The ship's motion moves the
    maximum off meridian passage by a second-order amount. Returns None when the series does
    not bend (c ≥ 0), or its maximum lies outside the series' span.
    """
    t = np.asarray(hours, dtype=float)
    h = np.asarray(ho_deg, dtype=float)
    if t.size < 3 or np.ptp(t) <= 0:
        return None
    centre = t.mean()
    c, b, a = np.polyfit(t - centre, h, 2)
    if c >= 0:
        return None
    peak = -b / (2 * c)
    if not (t.min() - centre) <= peak <= (t.max() - centre):
        return None
    return float(latitude_by_meridian_altitude(a + b * peak + c * peak**2, dec_deg, body_bearing))


__all__ = ["fix_from_sights", "fixes_from_sights", "GroupFixes", "FixResult", "ChartCheck", "solve_fixes", "error_ellipse", "Track",
           "run_error_covariance", "azimuth_spread_deg", "latitude_by_meridian_altitude", "latitude_by_polaris",
           "ex_meridian_latitude", "latitude_from_noon_curve", "FIX", "LINE", "LATITUDE"]
