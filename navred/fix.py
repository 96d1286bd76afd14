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

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG
from .errors import NavredError, failed_elements
from .sailings import rhumb_destination, rhumb_track
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

    def _legs(self):
        """The legs between consecutive times (sights and the fix), in time order."""
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
        order, fix_at, north, course, distance = self._legs()
        lat_fix = np.broadcast_to(np.asarray(lat_deg, dtype=float), fix_at.shape)
        lon_fix = np.broadcast_to(np.asarray(lon_deg, dtype=float), fix_at.shape)
        # back from the fix to the earliest time over the legs before it (reversed: a rhumb line
        # sailed the other way is the same line), then forward over every leg
        before = np.arange(north.shape[-1]) < fix_at[..., None]
        lat_b, lon_b = rhumb_track(lat_fix, lon_fix, np.flip(np.where(before, -north, 0.0), -1),
                                   np.flip(np.where(before, wrap_360(course + 180.0), 0.0), -1),
                                   np.flip(np.where(before, distance, 0.0), -1))
        start_lat, start_lon = lat_b[..., -1], lon_b[..., -1]
        lat_all, lon_all = rhumb_track(start_lat, start_lon, north, course, distance)
        lat_all = np.concatenate([start_lat[..., None], lat_all], axis=-1)
        lon_all = np.concatenate([start_lon[..., None], lon_all], axis=-1)
        back = np.argsort(order, axis=-1, kind="stable")
        return (np.take_along_axis(lat_all, back, axis=-1)[..., :-1],
                np.take_along_axis(lon_all, back, axis=-1)[..., :-1])

    def run_distance_nm(self) -> np.ndarray:
        """Miles run along the track between each sight and the fix time (F, S)."""
        order, fix_at, _, _, distance = self._legs()
        run = np.concatenate([np.zeros(distance.shape[:-1] + (1,)), np.cumsum(distance, axis=-1)], axis=-1)
        from_fix = np.abs(run - np.take_along_axis(run, fix_at[..., None], axis=-1))
        back = np.argsort(order, axis=-1, kind="stable")
        return np.take_along_axis(from_fix, back, axis=-1)[..., :-1]


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
    iterations: int


def solve_fixes(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, lat0_deg: ArrayLike, lon0_deg: ArrayLike,
                *, dt_hours: ArrayLike = 0.0, velocity_north_kn: ArrayLike = 0.0, velocity_east_kn: ArrayLike = 0.0,
                weights: ArrayLike = 1.0, mask: ArrayLike | None = None, solve_motion: bool = False,
                velocity0_kn: ArrayLike = (0.0, 0.0)) -> CoreFixes:
    """Solve many independent fixes at once by Gauss-Newton on the sphere.

    Arrays of shape (fixes, sights): ``gha_deg``, ``dec_deg``, ``ho_deg`` of each sight,
    ``dt_hours`` the sight's time minus the fix time, ``velocity_north_kn`` and
    ``velocity_east_kn`` the velocity over the ground in force after each sight (the DR
    track, sailed as rhumb lines), ``weights`` (1/σ² relative) and ``mask`` (True for sights
    to use). ``lat0_deg``, ``lon0_deg`` (fixes,) start the iteration (the DR at the fix time).
    With ``solve_motion`` a constant velocity made good (north, east knots) is solved as
    well, starting from ``velocity0_kn``; the known velocities are then not used.
    """
    gha = np.atleast_2d(np.asarray(gha_deg, dtype=float))
    shape = gha.shape
    dec = np.broadcast_to(np.asarray(dec_deg, dtype=float), shape)
    ho = np.broadcast_to(np.asarray(ho_deg, dtype=float), shape)
    use = np.ones(shape, dtype=bool) if mask is None else np.broadcast_to(np.asarray(mask, dtype=bool), shape)
    use = use & np.isfinite(gha) & np.isfinite(dec) & np.isfinite(ho)
    w = np.where(use, np.broadcast_to(np.asarray(weights, dtype=float), shape), 0.0)
    dt = np.where(use, np.broadcast_to(np.asarray(dt_hours, dtype=float), shape), 0.0)
    given_n = np.where(use, np.broadcast_to(np.asarray(velocity_north_kn, dtype=float), shape), 0.0)
    given_e = np.where(use, np.broadcast_to(np.asarray(velocity_east_kn, dtype=float), shape), 0.0)
    lat = np.array(np.broadcast_to(np.asarray(lat0_deg, dtype=float), shape[:1]), dtype=float)
    lon = np.array(np.broadcast_to(np.asarray(lon0_deg, dtype=float), shape[:1]), dtype=float)
    k = 4 if solve_motion else 2
    vn = np.full(shape[0], float(velocity0_kn[0]))
    ve = np.full(shape[0], float(velocity0_kn[1]))
    n_used = use.sum(axis=1)
    if np.any(n_used < 2):
        raise NavredError(f"a fix needs two or more usable sights; too few in {failed_elements(n_used < 2)}")
    converged = np.zeros(shape[0], dtype=bool)
    safe_gha = np.where(use, gha, 0.0)
    safe_dec = np.where(use, dec, 0.0)
    safe_ho = np.where(use, ho, 0.0)

    def sight_positions():
        if solve_motion:
            track = Track(dt, np.broadcast_to(vn[:, None], shape), np.broadcast_to(ve[:, None], shape))
        else:
            track = Track(dt, given_n, given_e)
        return track.positions(lat, lon)

    def linearised():
        sight_lat, sight_lon = sight_positions()
        hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, safe_gha, safe_dec)
        z = np.radians(zn)
        columns = [np.cos(z), np.sin(z)] + ([np.cos(z) * dt, np.sin(z) * dt] if solve_motion else [])
        return hc, zn, np.stack(columns, axis=-1) * use[..., None]  # (F, S, k)

    iterations = 0
    for _ in range(MAX_ITERATIONS):
        iterations += 1
        hc, zn, jac = linearised()
        residual_nm = (safe_ho - hc) * ARCMIN_PER_DEG
        normal = np.einsum("fs,fsi,fsj->fij", w, jac, jac)
        rhs = np.einsum("fs,fsi,fs->fi", w, jac, residual_nm)
        determinant = np.linalg.det(normal)
        singular = ~(np.abs(determinant) > 1e-12 * np.max(np.abs(normal), axis=(1, 2)) ** k)
        if singular.any():
            raise NavredError(
                f"the lines of position are parallel (all azimuths alike or opposite): no fix "
                f"in {failed_elements(singular)}")
        step = np.linalg.solve(normal, rhs[..., None])[..., 0]
        size = np.hypot(step[:, 0], step[:, 1])
        lat, lon = rhumb_destination(lat, lon, np.degrees(np.arctan2(step[:, 1], step[:, 0])), size)
        if solve_motion:
            vn, ve = vn + step[:, 2], ve + step[:, 3]
        converged = size < CONVERGED_NM
        if converged.all():
            break
    hc, zn, jac = linearised()
    residual = np.where(use, (safe_ho - hc) * ARCMIN_PER_DEG, np.nan)
    normal = np.einsum("fs,fsi,fsj->fij", w, jac, jac)
    return CoreFixes(lat, lon, vn if solve_motion else np.full(shape[0], np.nan),
                     ve if solve_motion else np.full(shape[0], np.nan), residual,
                     np.where(use, zn, np.nan), np.linalg.inv(normal), jac, n_used, converged, iterations)


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
    lop_intercept_nm: np.ndarray = field(default_factory=lambda: np.zeros(0))
    lop_zn_deg: np.ndarray = field(default_factory=lambda: np.zeros(0))
    #: each line's foot (the intercept along Zn from that DR) and the true bearing of the line there:
    #: tangent to the circle of equal altitude at the foot
    lop_foot_lat_deg: np.ndarray = field(default_factory=lambda: np.zeros(0))
    lop_foot_lon_deg: np.ndarray = field(default_factory=lambda: np.zeros(0))
    lop_tangent_deg: np.ndarray = field(default_factory=lambda: np.zeros(0))

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


def _times_hours(utc64, at_utc):
    """Sight times as hours from the fix time (UTC differences: a leap second inside the run,
    0.003 nm at 10 knots, is neglected)."""
    fix64 = _utc64(np.atleast_1d(at_utc) if not isinstance(at_utc, np.datetime64) else np.array([at_utc]))
    hours = (utc64 - fix64[0]).astype("timedelta64[ns]").astype(np.int64) / 3.6e12
    return hours, fix64[0]


def fix_from_sights(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, utc: ArrayLike,
                    dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike, *, usable: ArrayLike | None = None,
                    course_deg: ArrayLike | None = None, speed_kn: ArrayLike | None = None,
                    at_utc: object | None = None, chart_lat: float | None = None, chart_lon: float | None = None,
                    solve_motion: bool = False, set_deg: float | None = None, drift_kn: float | None = None,
                    labels: ArrayLike | None = None, dr_error_kn: float = DR_ERROR_KN,
                    dr_error_fraction: float = DR_ERROR_FRACTION,
                    _refit_without_outliers: bool = True) -> FixResult:
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
    ``labels`` name the sights in messages (default: 1, 2, ...).
    """
    gha, dec, ho = (np.atleast_1d(np.asarray(v, dtype=float)) for v in (gha_deg, dec_deg, ho_deg))
    n_rows = gha.size
    ok = np.ones(n_rows, dtype=bool) if usable is None else np.broadcast_to(np.asarray(usable, dtype=bool),
                                                                               (n_rows,)).copy()
    ok &= np.isfinite(gha) & np.isfinite(dec) & np.isfinite(ho)
    if ok.sum() < 2:
        raise NavredError(f"a fix needs two or more reduced sights; {int(ok.sum())} of {n_rows} are usable")
    names = np.arange(1, n_rows + 1).astype(str) if labels is None else np.asarray(labels).astype(str)
    rows = np.flatnonzero(ok)
    all_utc64 = np.broadcast_to(_utc64(utc), (n_rows,))
    utc64 = all_utc64[rows]
    order = np.argsort(utc64, kind="stable")
    at = utc64[order[-1]] if at_utc is None else at_utc
    hours, fix_time = _times_hours(utc64, at)
    vn, ve = _velocities(rows, n_rows, course_deg, speed_kn, set_deg, drift_kn)
    track = Track(hours[None], vn[None], ve[None])
    dr_lat = np.broadcast_to(np.asarray(dr_lat_deg, dtype=float), (n_rows,))[rows]
    dr_lon = np.broadcast_to(np.asarray(dr_lon_deg, dtype=float), (n_rows,))[rows]
    last = order[-1]
    # the DR at the fix time: the last sight's DR carried on along the track to the fix time
    lat0, lon0 = _carry(track, last, dr_lat[last], dr_lon[last])
    result = _fix_from_arrays(gha[rows], dec[rows], ho[rows], track, lat0, lon0, solve_motion,
                              (float(vn.mean()), float(ve.mean())), dr_error_kn, dr_error_fraction)
    result = _expand(result, rows, n_rows, fix_time)
    # the lines of position for a plotting sheet: each sight reduced from the DR carried to its
    # time, so that moving the line along the run brings it to the DR at the fix time
    sight_lat, sight_lon = track.positions(np.array([lat0]), np.array([lon0]))
    hc, zn = computed_altitude_azimuth(sight_lat[0], sight_lon[0], gha[rows], dec[rows])
    result.dr_lat_deg, result.dr_lon_deg = float(lat0), float(lon0)
    result.lop_intercept_nm = np.full(n_rows, np.nan)
    result.lop_zn_deg = np.full(n_rows, np.nan)
    result.lop_intercept_nm[rows] = (ho[rows] - hc) * ARCMIN_PER_DEG
    result.lop_zn_deg[rows] = zn
    foot_lat, foot_lon = destination(lat0, lon0, zn, result.lop_intercept_nm[rows])
    # the line is tangent to the circle of equal altitude at the foot: across the azimuth there,
    # toward the body's geographical position (latitude Dec, longitude −GHA)
    _, toward_gp = distance_bearing(foot_lat, foot_lon, dec[rows], wrap_180(-gha[rows]))
    result.lop_foot_lat_deg, result.lop_foot_lon_deg, result.lop_tangent_deg = (
        np.full(n_rows, np.nan), np.full(n_rows, np.nan), np.full(n_rows, np.nan))
    result.lop_foot_lat_deg[rows], result.lop_foot_lon_deg[rows] = foot_lat, foot_lon
    result.lop_tangent_deg[rows] = wrap_360(toward_gp + 90.0)
    if not result.is_fix:
        _as_line(result, rows, dec[rows], hours, ho[rows], gha[rows])
    if _refit_without_outliers and result.outlier.any() and result.used.sum() - result.outlier.sum() >= 2:
        keep = ok & ~result.outlier
        # one refit only: the check fix does not hunt for further blunders in its turn
        sub = fix_from_sights(gha, dec, ho, np.asarray(all_utc64), dr_lat_deg, dr_lon_deg, usable=keep,
                              course_deg=course_deg, speed_kn=speed_kn, at_utc=at, solve_motion=solve_motion,
                              set_deg=set_deg, drift_kn=drift_kn, labels=names, dr_error_kn=dr_error_kn,
                              dr_error_fraction=dr_error_fraction, _refit_without_outliers=False)
        count = int(result.outlier.sum())
        moved, _ = distance_bearing(result.lat_deg, result.lon_deg, sub.lat_deg, sub.lon_deg)
        result.warnings.append(
            f"sight{'s' if count > 1 else ''} {', '.join(names[result.outlier])} look{'' if count > 1 else 's'} like "
            f"{'blunders' if count > 1 else 'a blunder'}; without {'them' if count > 1 else 'it'} the "
            f"{result.kind} moves {float(moved):.1f} nm (see without_outliers)")
        result.without_outliers = sub
    if chart_lat is not None and chart_lon is not None:
        check = result.cross_check(chart_lat, chart_lon)
        result.chart_distance_nm, result.chart_bearing_deg = check.distance_nm, check.bearing_deg
        result.chart_inside_ellipse = check.inside_ellipse
    return result


def _carry(track: Track, sight: int, lat: float, lon: float) -> tuple[float, float]:
    """A sight's DR carried along the track to the fix time."""
    # positions() gives the sights from the fix; run it from a trial fix and shift by the sight's offset
    lat_s, lon_s = track.positions(np.array([lat]), np.array([lon]))
    north, east = lat - lat_s[0, sight], wrap_180(lon - lon_s[0, sight])
    fix_lat, fix_lon = lat + north, wrap_180(lon + east)
    for _ in range(3):  # the track's shape varies slowly with latitude: a few corrections settle it
        lat_s, lon_s = track.positions(np.array([fix_lat]), np.array([fix_lon]))
        fix_lat, fix_lon = fix_lat + (lat - lat_s[0, sight]), wrap_180(fix_lon + wrap_180(lon - lon_s[0, sight]))
    return float(fix_lat), float(fix_lon)


def _velocities(rows, n_rows, course_deg, speed_kn, set_deg, drift_kn):
    """Velocity over the ground (north, east knots) in force after each sight (NaN course or speed as 0)."""
    def per_sight(values):
        if values is None:
            return np.zeros(rows.size)
        return np.nan_to_num(np.broadcast_to(np.asarray(values, dtype=float), (n_rows,))[rows])

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
    moves that line: cov_ij = s_i s_j cos(Zn_i − Zn_j).
    """
    zn = np.radians(np.asarray(zn_deg, dtype=float))
    s = dr_error_kn * np.abs(np.asarray(dt_hours, dtype=float)) + dr_error_fraction * np.asarray(run_nm, dtype=float)
    return np.outer(s, s) * np.cos(zn[:, None] - zn[None, :])


def _fix_from_arrays(gha, dec, ho, track, lat0, lon0, solve_motion, velocity0, dr_error_kn,
                     dr_error_fraction) -> FixResult:
    warnings_: list[str] = []
    n = gha.size
    motion = solve_motion
    hours = track.dt_hours[0]
    if solve_motion:
        problem = _motion_unsupported(gha, dec, ho, hours, lat0, lon0)
        if problem:
            warnings_.append(f"course and speed made good cannot be solved: {problem}; the known run is used")
            motion = False
    spread = azimuth_spread_deg(computed_altitude_azimuth(lat0, lon0, gha, dec)[1])
    if spread < LINE_ONLY_DEG and not motion:
        # parallel lines: no fix to iterate to; the combined line is worked from the DR (see _as_line)
        return _line_result(gha, dec, ho, track, lat0, lon0, spread, dr_error_kn, dr_error_fraction)
    core = solve_fixes(gha[None], dec[None], ho[None], lat0, lon0, dt_hours=track.dt_hours,
                       velocity_north_kn=track.north_kn, velocity_east_kn=track.east_kn, solve_motion=motion,
                       velocity0_kn=velocity0)
    k = 4 if motion else 2
    residual = core.residual_arcmin[0]
    dof = n - k
    unit = core.covariance_nm2[0]
    jac = core.jacobian[0]
    # the DR's error over each run, unless the motion itself was solved (then there is no known run)
    run_cov = np.zeros((n, n)) if motion else run_error_covariance(core.zn_deg[0], hours, track.run_distance_nm()[0],
                                                                   dr_error_kn, dr_error_fraction)
    gain = unit @ jac.T  # x = gain @ residual: the least-squares estimator
    hat = jac @ gain
    if dof >= 1:
        # the sight error, once the part of the residuals the run's error accounts for is taken out
        # (an unbiased estimate: E[r'(I − H)r] = σ²·dof + trace((I − H)·C_run))
        leftover = float(np.nansum(residual**2)) - float(np.trace((np.eye(n) - hat) @ run_cov))
        sigma_hat = float(np.sqrt(max(leftover, 0.0) / dof))
        if sigma_hat >= SIGMA_FLOOR_ARCMIN:
            sigma, quantile = sigma_hat, f"F(2, {dof})"
            scale = float(np.sqrt(2.0 * f_2_quantile(CONFIDENCE, dof)))
            source = f"from the residuals, {dof} redundant sight{'s' if dof > 1 else ''}"
        else:
            sigma, quantile = SIGMA_FLOOR_ARCMIN, "chi-square(2)"
            scale = float(np.sqrt(chi_square_2_quantile(CONFIDENCE)))
            source = (f"held at the floor of {SIGMA_FLOOR_ARCMIN}′ (the residuals give {sigma_hat:.2f}′ from "
                      f"{dof} redundant sight{'s' if dof > 1 else ''})")
    else:
        sigma, quantile = A_PRIORI_SIGMA_ARCMIN, "chi-square(2)"
        scale = float(np.sqrt(chi_square_2_quantile(CONFIDENCE)))
        source = f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight, no redundancy"
        warnings_.append(f"{n} sights and {k} unknowns: no redundancy, so the ellipse rests on an assumed "
                         f"{A_PRIORI_SIGMA_ARCMIN}′ per sight and there is no check on a blunder")
    covariance = gain @ (sigma**2 * np.eye(n) + run_cov) @ gain.T
    position_cov = covariance[:2, :2]
    major, minor, orientation = error_ellipse(position_cov, scale)
    spread = azimuth_spread_deg(core.zn_deg[0])
    if spread < WEAK_CROSSING_DEG:
        warnings_.append(f"weak fix: the lines of position cross at {spread:.0f}° at most "
                         f"(azimuths alike or opposite); below {WEAK_CROSSING_DEG:.0f}° the fix is poorly defined")
    outlier = _outliers(residual, jac, unit, dof)
    if not core.converged[0]:
        warnings_.append(f"the iteration did not settle to {CONVERGED_NM} nm in {MAX_ITERATIONS} steps")
    result = FixResult(
        utc=np.datetime64("NaT"), lat_deg=float(core.lat_deg[0]), lon_deg=float(core.lon_deg[0]),
        sigma_arcmin=sigma, ellipse_semi_major_nm=float(major), ellipse_semi_minor_nm=float(minor),
        ellipse_orientation_deg=float(orientation), residual_arcmin=residual, outlier=outlier,
        warnings=warnings_, used=np.ones(n, dtype=bool), n_sights=n, covariance_nm2=position_cov,
        confidence_scale=scale, sigma_source=source, iterations=core.iterations, quantile=quantile,
        spread_deg=spread, dr_error_included=bool(run_cov.any()))
    if motion:
        vn, ve = float(core.velocity_north_kn[0]), float(core.velocity_east_kn[0])
        result.course_made_good_deg = float(wrap_360(np.degrees(np.arctan2(ve, vn))))
        result.speed_made_good_kn = float(np.hypot(vn, ve))
        speed_sigma = float(np.sqrt(np.trace(covariance[2:, 2:])))
        if speed_sigma > 2.0:
            warnings_.append(f"course and speed made good are poorly determined (±{speed_sigma:.1f} kn)")
    return result


def _line_result(gha, dec, ho, track, lat0, lon0, spread, dr_error_kn, dr_error_fraction) -> FixResult:
    """Sights whose lines of position (nearly) coincide: one combined line, worked from the DR.

    Each line, advanced to the fix time, lies a_j miles from the DR toward its azimuth Z_j; the
    combined line runs across the mean azimuth Z (the axial mean) and lies p miles from the DR,
    the least-squares p = Σ a_j c_j / Σ c_j² with c_j = cos(Z_j − Z).
    """
    n = gha.size
    sight_lat, sight_lon = track.positions(np.array([lat0]), np.array([lon0]))
    hc, zn = computed_altitude_azimuth(sight_lat[0], sight_lon[0], gha, dec)
    intercept = (ho - hc) * ARCMIN_PER_DEG
    doubled = np.radians(2.0 * zn)
    toward = float(np.degrees(np.arctan2(np.sin(doubled).sum(), np.cos(doubled).sum())) / 2.0)
    cosines = np.cos(np.radians(zn - toward))
    if np.sum(intercept * cosines) < 0:
        toward, cosines = toward + 180.0, -cosines  # point the line's azimuth to the side it lies on
    toward = float(wrap_360(toward))
    weight = float(np.sum(cosines**2))
    offset = float(np.sum(intercept * cosines) / weight)
    residual = intercept - offset * cosines
    dof = n - 1
    run_cov = run_error_covariance(zn, track.dt_hours[0], track.run_distance_nm()[0], dr_error_kn, dr_error_fraction)
    gain = cosines / weight
    if dof >= 1:
        leftover = float(np.sum(residual**2)) - float(np.trace(run_cov) - gain @ run_cov @ cosines)
        sigma_hat = float(np.sqrt(max(leftover, 0.0) / dof))
    else:
        sigma_hat = 0.0
    if dof >= 1 and sigma_hat >= SIGMA_FLOOR_ARCMIN:
        sigma, source, quantile = sigma_hat, f"from the residuals, {dof} redundant sight{'s' if dof > 1 else ''}", \
            "normal"
    elif dof >= 1:
        sigma, source, quantile = SIGMA_FLOOR_ARCMIN, f"held at the floor of {SIGMA_FLOOR_ARCMIN}′", "normal"
    else:
        sigma, source, quantile = A_PRIORI_SIGMA_ARCMIN, f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight", "normal"
    variance = float(gain @ (sigma**2 * np.eye(n) + run_cov) @ gain)
    half_width = NORMAL_975 * np.sqrt(variance)
    foot_lat, foot_lon = destination(lat0, lon0, toward, offset)
    meridian = bool(np.all(np.minimum(np.abs(wrap_180(zn)), np.abs(wrap_180(zn - 180.0))) <= MERIDIAN_AZIMUTH_DEG))
    kind = LATITUDE if meridian else LINE
    along = float(wrap_360(toward + 90.0) % 180.0)
    side = "toward" if offset >= 0 else "away from"
    what = "a latitude (the sights are on the meridian)" if meridian else "a line of position"
    warnings_ = [f"not a fix: the lines of position cross at {spread:.0f}° at most (below {LINE_ONLY_DEG:.0f}°), "
                 f"so the sights give {what}, {abs(offset):.1f} nm {side} {toward:03.0f}° from the DR, good to "
                 f"±{half_width:.1f} nm (95 %); the position along it is the DR's"]
    outlier = np.abs(residual) > max(OUTLIER_SIGMAS * sigma, OUTLIER_ARCMIN_FEW_SIGHTS) if dof >= 2 \
        else np.zeros(n, dtype=bool)
    covariance = np.array([[variance, 0.0], [0.0, np.inf]])  # across, along
    return FixResult(
        utc=np.datetime64("NaT"), lat_deg=float(foot_lat), lon_deg=float(foot_lon), sigma_arcmin=sigma,
        ellipse_semi_major_nm=float("inf"), ellipse_semi_minor_nm=float(half_width),
        ellipse_orientation_deg=along, residual_arcmin=residual, outlier=outlier, warnings=warnings_,
        used=np.ones(n, dtype=bool), n_sights=n, covariance_nm2=covariance, confidence_scale=NORMAL_975,
        sigma_source=source, iterations=0, quantile=quantile, kind=kind, spread_deg=spread,
        line_bearing_deg=along, line_offset_nm=offset, line_toward_deg=toward,
        dr_error_included=bool(run_cov.any()))


def _as_line(result: FixResult, rows, dec, hours, ho, gha) -> None:
    """For a latitude: the noon-curve latitude too, when the series straddles meridian passage."""
    if result.kind != LATITUDE or rows.size < 3:
        return
    zn = np.radians(result.lop_zn_deg[rows])
    bearing = "S" if np.cos(zn).sum() < 0 else "N"  # where the body bears on the meridian
    latitude = latitude_from_noon_curve(hours, ho, np.mean(dec), bearing)
    if latitude is not None:
        result.noon_curve_latitude_deg = latitude


def _motion_unsupported(gha, dec, ho, hours, lat0, lon0) -> str:
    if gha.size < 5:
        return f"{gha.size} sights (at least 5 are needed for position, course, speed and a check)"
    span = float(hours.max() - hours.min())
    if span < 1.0:
        return f"the sights span {span * 60:.0f} minutes (at least an hour is needed)"
    _, zn = computed_altitude_azimuth(lat0, lon0, gha, dec)
    if azimuth_spread_deg(np.asarray(zn)) < WEAK_CROSSING_DEG:
        return "the azimuths are too alike"
    return ""


def _outliers(residual, jacobian, covariance, dof):
    """Flag blunders: externally studentized residual over 3, or over 5′ with too few sights.

    The leverage of each sight comes from the normal equations, and each sight is judged
    against the scatter of the others (the deleted residual), so one blunder cannot hide
    by inflating the standard error.
    """
    if dof < 2:
        return np.abs(residual) > OUTLIER_ARCMIN_FEW_SIGHTS
    leverage = np.clip(np.einsum("si,ij,sj->s", jacobian, covariance, jacobian), 0.0, 0.999)
    total = np.sum(residual**2)
    deleted_var = (total - residual**2 / (1.0 - leverage)) / (dof - 1)
    deleted_sigma = np.sqrt(np.maximum(deleted_var, SIGMA_FLOOR_ARCMIN**2))
    studentized = residual / (deleted_sigma * np.sqrt(1.0 - leverage))
    return np.abs(studentized) > OUTLIER_SIGMAS


def _expand(result: FixResult, rows, n_rows, fix_time) -> FixResult:
    """Put per-sight arrays back in input-row order (NaN / False for rows not used)."""
    residual = np.full(n_rows, np.nan)
    outlier = np.zeros(n_rows, dtype=bool)
    used = np.zeros(n_rows, dtype=bool)
    residual[rows] = result.residual_arcmin
    outlier[rows] = result.outlier
    used[rows] = True
    result.residual_arcmin, result.outlier, result.used = residual, outlier, used
    result.utc = fix_time
    return result


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


__all__ = ["fix_from_sights", "FixResult", "ChartCheck", "solve_fixes", "error_ellipse", "Track",
           "run_error_covariance", "azimuth_spread_deg", "latitude_by_meridian_altitude", "latitude_by_polaris",
           "ex_meridian_latitude", "latitude_from_noon_curve", "FIX", "LINE", "LATITUDE"]
