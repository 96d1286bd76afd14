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
import itertools
from collections.abc import Callable
from dataclasses import dataclass, field, replace

import numpy as np
from numpy.typing import ArrayLike

from .angles import format_angle, wrap_180, wrap_360, wrap_axial
from .constants import ARCMIN_PER_DEG, NS_PER_HOUR
from .errors import NavredError, failed_elements
from .reckoning import DRTrack, velocity_kn
from .sailings import rhumb_inverse
from .stats import chi_square_2_quantile, chi_square_quantile, f_2_quantile, student_t_quantile
from .status import FixKind, RunFrom
from .timescales import utc_jd_to_datetime64, utc_julian_date
from .triangle import computed_altitude_azimuth, destination, distance_bearing

#: Assumed standard error of one sight when a fix has no redundancy (two sights), arcminutes:
#: a good sight at sea is good to about 1′ (common practice).
A_PRIORI_SIGMA_ARCMIN = 1.0
#: The DR's own error over a run (common practice; set with dr_error_kn / dr_error_fraction):
#: an unknown current and leeway of this many knots, and this fraction of the distance run for
#: the log and the steering. The run from each sight to the fix time is displaced by one unknown
#: amount, isotropic, of standard deviation DR_ERROR_KN·hours + DR_ERROR_FRACTION·miles run.
DR_ERROR_KN = 0.3
DR_ERROR_FRACTION = 0.02
#: The blunder test: the chance that a fix of sights with no blunder has one flagged, whatever the number
#: of sights (the largest externally studentized residual against Student's t at BLUNDER_ALPHA / n, two-sided:
#: Bonferroni's correction for testing every sight).
BLUNDER_ALPHA = 0.05
#: A sight is flagged only when its line also lies this far from the fix of the others (arcminutes): a
#: smaller miss is within a good sight's own error, whatever the test says of sights that agree too well
#: (common practice).
BLUNDER_MIN_ARCMIN = 1.0
#: A flagged sight whose line lies this far from the fix of the others (arcminutes) is a gross error beyond
#: doubt (a misnamed body, a slip of degrees or of minutes, a wrong time): no sextant error, refraction
#: anomaly or abnormal dip comes near a third of a degree (common practice). It is left out of the fix.
GROSS_ARCMIN = 20.0
#: The check on a round's scatter: a hand-held marine sextant at sea gives about 0.5-1′, 2′ in a seaway
#: (common practice); a σ beyond this at 99.9 % (chi-square) is not a sextant's.
SEXTANT_SIGMA_LIMIT_ARCMIN = 2.0
SCATTER_CONFIDENCE = 0.999
#: Sights spanning more than this (minutes) with no course, no speed and one DR: the ship is taken as
#: stopped, and the fix says so.
STOPPED_SPAN_MIN = 10.0
#: A DR whose age the log does not give (a DR written on each sight) is taken to be this old (hours) when
#: the fix is compared with it.
UNKNOWN_DR_AGE_H = 24.0
#: The fix is further from its DR than this many times the DR's own error (DR_ERROR_KN per hour of the DR's
#: age and DR_ERROR_FRACTION of the miles run since), plus the fix's 95 % semi-major axis and a mile:
#: the time, the DR or a body name is wrong (a fix-level warning).
DR_DISAGREEMENT_SIGMAS = 4.0
#: A group of more sights than this (a whole day's sights given one fix group, say) is not searched sight by
#: sight for a gross error, and its σ is the residuals' sum of squares less the run's expected share rather
#: than the restricted likelihood (both cost the cube of the sights).
MAX_SIGHTS_SEARCHED = 60
#: Lines of position that cross at less than this make a line (or a latitude), not a fix.
LINE_ONLY_DEG = 15.0
WEAK_CROSSING_DEG = 30.0
#: Lines whose azimuths all lie within this of north or south are a latitude (sights on the meridian).
MERIDIAN_AZIMUTH_DEG = 10.0
#: A running fix whose track would come this close to a pole (degrees) is refused: a rhumb line is not
#: defined through the pole (courses there are steered on a grid).
POLAR_RUN_LIMIT_DEG = 0.1
CONVERGED_NM = 0.01
MAX_ITERATIONS = 25
CONFIDENCE = 0.95
#: What every 95 % ellipse of navred covers, and what it cannot.
ELLIPSE_COVERS = ("covers the sights' random error and the DR's error over the run; it cannot cover an error "
                  "common to every sight (the clock: 1 s of time is 0.25′ of longitude; a wrong height of eye or "
                  "index error; abnormal dip), nor a misnamed body")
_NAT = np.datetime64("NaT")
_EMPTY = np.zeros(0)
_EMPTY.flags.writeable = False  # a placeholder for per-sight arrays not yet filled in (never written to)


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


def step_on_sphere(lat_deg: ArrayLike, lon_deg: ArrayLike, north_nm: ArrayLike, east_nm: ArrayLike
                   ) -> tuple[np.ndarray, np.ndarray]:
    """Position moved along the great circle of a displacement (nautical miles north and east), exact at any
    latitude, the poles included.

    In three dimensions: the unit vector p of the position, the local north N = ∂p/∂φ and east
    E = ∂p/∂λ / cos φ of its meridian (at a pole N and E still stand, along the meridian λ + 180° and
    across it, the frame in which the spherical formula gives Zn there), and p cos d + u sin d for the
    unit direction u of the displacement and its length d (one arcminute of great circle per nautical
    mile; common practice). The latitude is taken by atan2, not arcsin, so it keeps its precision
    next to a pole.

    >>> lat, lon = step_on_sphere(89.5, 0.0, 60.0, 0.0)  # a degree north from 89° 30′ N on 0°: across the pole
    >>> round(float(lat), 9), abs(round(float(lon), 9))
    (89.5, 180.0)
    """
    phi = np.radians(np.asarray(lat_deg, dtype=float))
    lam = np.radians(np.asarray(lon_deg, dtype=float))
    north = np.asarray(north_nm, dtype=float)
    east = np.asarray(east_nm, dtype=float)
    sin_phi, cos_phi, sin_lam, cos_lam = np.sin(phi), np.cos(phi), np.sin(lam), np.cos(lam)
    p = np.stack(np.broadcast_arrays(cos_phi * cos_lam, cos_phi * sin_lam, sin_phi), axis=-1)
    n_axis = np.stack(np.broadcast_arrays(-sin_phi * cos_lam, -sin_phi * sin_lam, cos_phi), axis=-1)
    e_axis = np.stack(np.broadcast_arrays(-sin_lam, cos_lam, np.zeros_like(lam)), axis=-1)
    size = np.hypot(north, east)
    d = np.radians(size / ARCMIN_PER_DEG)
    with np.errstate(invalid="ignore", divide="ignore"):
        u = (north[..., None] * n_axis + east[..., None] * e_axis) / size[..., None]
    u = np.where((size > 0)[..., None], u, 0.0)
    q = p * np.cos(d)[..., None] + u * np.sin(d)[..., None]
    lat = np.degrees(np.arctan2(q[..., 2], np.hypot(q[..., 0], q[..., 1])))
    lon = np.where(size > 0, np.degrees(np.arctan2(q[..., 1], q[..., 0])), np.asarray(lon_deg, dtype=float))
    return lat, wrap_180(lon)


def sight_track(dt_hours: ArrayLike, north_kn: ArrayLike, east_kn: ArrayLike) -> DRTrack:
    """The DR track of a batch of fixes (:class:`navred.reckoning.DRTrack`): arrays (fixes, sights) of each
    sight's time from the fix (hours) and the velocity over the ground in force after it. Its knots are the
    sights, then the fix time (a last knot, which keeps the velocity in force); between two of them the vessel
    sails the rhumb line of the velocity in force after the earlier one (before the first sight, the first
    sight's)."""
    dt = np.asarray(dt_hours, dtype=float)
    north, east = np.broadcast_to(np.asarray(north_kn, dtype=float), dt.shape), \
        np.broadcast_to(np.asarray(east_kn, dtype=float), dt.shape)
    return _sight_track_ns(np.rint(dt * NS_PER_HOUR).astype(np.int64), north, east)


def _sight_track_ns(offset_ns: np.ndarray, north_kn: np.ndarray, east_kn: np.ndarray) -> DRTrack:
    """:func:`sight_track` from the sights' offsets from the fix time in int64 nanoseconds (exact)."""
    last = offset_ns.shape[:-1] + (1,)
    return DRTrack(np.concatenate([offset_ns, np.zeros(last, dtype=np.int64)], axis=-1),
                   np.concatenate([north_kn, np.full(last, np.nan)], axis=-1),
                   np.concatenate([east_kn, np.full(last, np.nan)], axis=-1))


def _fix_knot(track: DRTrack) -> np.ndarray:
    """The knot of each fix time in a :func:`sight_track` (its last)."""
    return np.full(track.knot_ns.shape[:-1], track.knot_ns.shape[-1] - 1)


def at_sights(track: DRTrack, lat_deg: ArrayLike, lon_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Each sight's position (fixes, sights) of a :func:`sight_track` when the vessel is at (lat, lon) (fixes,) at
    the fix time: the track sailed back (or on) from the fix."""
    lat, lon = track.through(lat_deg, lon_deg, _fix_knot(track))
    return lat[..., :-1], lon[..., :-1]


def _run_to_fix_nm(track: DRTrack) -> np.ndarray:
    """Miles run between each sight of a :func:`sight_track` and the fix time (fixes, sights)."""
    return track.run_nm(_fix_knot(track))[..., :-1]


def _sight_hours(track: DRTrack) -> np.ndarray:
    """Each sight's time from the fix (hours) of a :func:`sight_track`."""
    return track.knot_ns[..., :-1] / NS_PER_HOUR


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
                track: DRTrack | None = None, report: ArrayLike | None = None) -> CoreFixes:
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
    :func:`sight_track` of these times and velocities when the caller has it already. ``report``: the
    sights whose residual and azimuth at the solution are returned (default: those used); a sight
    left out of the solution can still be shown against it.

    Each step is taken on the sphere in three dimensions: the position moves along the great circle
    of the step's direction in the local frame of the meridian it stands on (north and east; at a pole
    the frame of its meridian still holds), so a fix is exact up to the pole, from a DR on any side.
    """
    gha = np.atleast_2d(np.asarray(gha_deg, dtype=float))
    shape = gha.shape
    dec = np.broadcast_to(np.asarray(dec_deg, dtype=float), shape)
    ho = np.broadcast_to(np.asarray(ho_deg, dtype=float), shape)
    use = np.ones(shape, dtype=bool) if mask is None else np.broadcast_to(np.asarray(mask, dtype=bool), shape)
    finite = np.isfinite(gha) & np.isfinite(dec) & np.isfinite(ho)
    use = use & finite
    shown = use if report is None else np.broadcast_to(np.asarray(report, dtype=bool), shape) & finite
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
    safe_gha = np.where(finite, gha, 0.0)
    safe_dec = np.where(finite, dec, 0.0)
    safe_ho = np.where(finite, ho, 0.0)

    known_track = sight_track(dt, given_n, given_e) if track is None else track

    def linearised(rows=None):
        """Hc, Zn and the Jacobian (F, S, k) of the fixes ``rows`` (all when None) at their estimates."""
        pick = slice(None) if rows is None else rows
        if solve_motion:
            moving_track = sight_track(dt[pick], np.broadcast_to(vn[pick, None], dt[pick].shape),
                                 np.broadcast_to(ve[pick, None], dt[pick].shape))
        else:
            moving_track = known_track if rows is None else known_track.take(rows)  # legs worked out once
        sight_lat, sight_lon = at_sights(moving_track, lat[pick], lon[pick])
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
        lat[active], lon[active] = step_on_sphere(lat[active], lon[active], step[:, 0], step[:, 1])
        if solve_motion:
            vn[active], ve[active] = vn[active] + step[:, 2], ve[active] + step[:, 3]
        iterations_each[active] += ~parallel
        settled = ~parallel & (size < CONVERGED_NM)
        converged[active[settled]] = True
        active = active[~settled & ~parallel]
        if active.size == 0:
            break
    hc, zn, jac = linearised()
    residual = np.where(shown, (safe_ho - hc) * ARCMIN_PER_DEG, np.nan)
    normal = np.einsum("fs,fsi,fsj->fij", w, jac, jac)
    covariance = np.linalg.inv(np.where(singular[:, None, None], identity, normal))
    covariance[singular] = np.nan
    return CoreFixes(lat, lon, vn if solve_motion else np.full(shape[0], np.nan),
                     ve if solve_motion else np.full(shape[0], np.nan), residual,
                     np.where(shown, zn, np.nan), covariance, jac, n_used, converged, iterations,
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
    return major, minor, wrap_axial(orientation)


def azimuth_spread_deg(zn_deg: ArrayLike) -> float:
    """The widest angle at which the lines of position cross (azimuths taken modulo 180°)."""
    zn = np.asarray(zn_deg, dtype=float)
    directions = np.sort(wrap_axial(zn[np.isfinite(zn)]))
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


@dataclass
class FixResult:
    """A fix (or a line, or a latitude), how good it is, and which sight was bad. One residual and flag per input row.

    ``kind`` is a :class:`~navred.status.FixKind` (``"fix"``, ``"line of position"`` or ``"latitude"``): when the lines cross at less
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
    #: the quantile the ellipse is scaled by: 'F(2, ν)' for a σ estimated from ν redundant sights (ν an
    #: effective number when the DR's known error over the run is part of the ellipse), 'chi-square(2)' for
    #: a σ assumed (two sights), 't(ν)' for a line's band
    quantile: str = ""
    kind: FixKind = FixKind.FIX
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
    #: the check fix: this one recomputed without the sights flagged as possible blunders (kept in it)
    without_outliers: FixResult | None = field(default=None, repr=False)
    #: per input row: a sight whose line is a gross error beyond doubt, left out of this fix (see all_sights)
    left_out: np.ndarray = field(default_factory=lambda: _EMPTY)
    #: per input row: a flagged sight of this fix that is a gross error beyond doubt (GROSS_ARCMIN off)
    gross: np.ndarray = field(default_factory=lambda: _EMPTY)
    #: the fix from every sight, when a gross error was left out of this one
    all_sights: FixResult | None = field(default=None, repr=False)
    #: the names of the sights left out ('row 9', as the labels given)
    left_out_names: list[str] = field(default_factory=list)
    #: sights beyond the unknowns (n − k): how many check the others
    redundant: int = 0
    #: what the ellipse's size means for this count of sights, in words (few redundant sights)
    ellipse_note: str = ""
    #: what the blunder test can find with these sights, in words
    blunder_note: str = ""
    #: about the smallest blunder (arcminutes) the test finds in half the fixes, from this fix's scatter
    #: (NaN when the sights are too few to single one out)
    detectable_blunder_arcmin: float = float("nan")
    #: how the run between the sights was found: 'course and speed', 'course, speed and current', 'the
    #: rows' own DRs', or 'none' (sights taken together, or a ship taken as stopped)
    run_from: RunFrom = RunFrom.NONE
    #: the fix's distance from the DR at the fix time (nm)
    dr_distance_nm: float = float("nan")
    #: the sights scatter beyond any hand-held sextant (SEXTANT_SIGMA_LIMIT_ARCMIN, at SCATTER_CONFIDENCE)
    scatter_impossible: bool = False
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
        return self.kind == FixKind.FIX

    @property
    def residual_nm(self) -> np.ndarray:
        """Residuals in nautical miles (one arcminute of altitude is one nautical mile)."""
        return self.residual_arcmin.copy()

    def ellipse_text(self) -> str:
        """The 95 % ellipse's full size as a navigator reads it, and its semi-axes: '10.9 × 2.8 nm, semi-axes
        5.4 × 1.4 nm' (for a line or a latitude, the band's width: '2.8 nm wide, ±1.4 nm')."""
        if not self.is_fix:
            return f"{2 * self.ellipse_semi_minor_nm:.1f} nm wide, ±{self.ellipse_semi_minor_nm:.1f} nm"
        a, b = self.ellipse_semi_major_nm, self.ellipse_semi_minor_nm
        return f"{2 * a:.1f} × {2 * b:.1f} nm, semi-axes {a:.1f} × {b:.1f} nm"

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


@dataclass(frozen=True)
class _Sights:
    """The sights of a batch of fixes, one element per input row, read once."""

    gha: np.ndarray
    dec: np.ndarray
    ho: np.ndarray
    utc: np.ndarray  # datetime64[ns]
    dr_lat: np.ndarray
    dr_lon: np.ndarray
    course: np.ndarray  # NaN: not given
    speed: np.ndarray
    set_deg: np.ndarray  # the current in force after each sight (0 drift: none)
    drift_kn: np.ndarray
    dr_age_h: np.ndarray  # the age of each sight's DR (NaN: not known)
    names: np.ndarray
    solve_motion: bool
    dr_error_kn: float
    dr_error_fraction: float


def fixes_from_sights(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, utc: ArrayLike,
                      dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike, group: ArrayLike, *,
                      usable: ArrayLike | None = None, course_deg: ArrayLike | None = None,
                      speed_kn: ArrayLike | None = None, at_utc: object | None = None,
                      chart_lat: ArrayLike | None = None, chart_lon: ArrayLike | None = None,
                      solve_motion: bool = False, set_deg: ArrayLike | None = None, drift_kn: ArrayLike | None = None,
                      labels: ArrayLike | None = None, dr_error_kn: float = DR_ERROR_KN,
                      dr_error_fraction: float = DR_ERROR_FRACTION, refit: bool = True,
                      dr_age_hours: ArrayLike | None = None) -> GroupFixes:
    """Fix many groups of sights at once: one least-squares solve for every group, padded.

    The arrays are one element per sight (1-D), as for :func:`fix_from_sights`; ``group``
    numbers each sight's group 0, 1, ... (a negative number leaves the sight out). ``at_utc``
    is one fix time for all, one per group, or None (each group's last sight); ``chart_lat``
    and ``chart_lon`` one chart or GNSS position per group (NaN where there is none); ``set_deg``
    and ``drift_kn`` one current for all or the current in force after each sight; ``dr_age_hours``
    the age of each sight's DR (hours since the known position it was carried from; NaN or None:
    not known). Each group's arrays in its result follow its sights in input order. Every group
    gets the same result it would get alone (tests/test_fix.py checks it).

    With ``refit`` (the default), a sight whose line is a gross error beyond doubt is left out of
    its group's fix (the fix from every sight is kept as ``all_sights``), and the sights flagged as
    possible blunders are left out of a check fix (``without_outliers``).
    """
    gha, dec, ho = (np.atleast_1d(np.asarray(v, dtype=float)) for v in (gha_deg, dec_deg, ho_deg))
    n_rows = gha.size

    def per_row(values, fill=np.nan):
        if values is None:
            return np.full(n_rows, fill)
        return np.array(np.broadcast_to(np.asarray(values, dtype=float), (n_rows,)), dtype=float)

    drift = per_row(drift_kn, 0.0) if set_deg is not None else np.zeros(n_rows)
    sights = _Sights(
        gha, dec, ho, np.array(np.broadcast_to(_utc64(utc), (n_rows,))), per_row(dr_lat_deg), per_row(dr_lon_deg),
        per_row(course_deg), per_row(speed_kn), np.nan_to_num(per_row(set_deg, 0.0)), np.nan_to_num(drift),
        per_row(dr_age_hours),
        np.arange(1, n_rows + 1).astype(str) if labels is None else np.asarray(labels).astype(str),
        solve_motion, dr_error_kn, dr_error_fraction)
    group = np.array(np.broadcast_to(np.asarray(group, dtype=np.intp), (n_rows,)))
    n_groups = int(group.max()) + 1 if n_rows and group.max() >= 0 else 0
    ok = (group >= 0) & np.isfinite(gha) & np.isfinite(dec) & np.isfinite(ho) & ~np.isnat(sights.utc)
    if usable is not None:
        ok &= np.broadcast_to(np.asarray(usable, dtype=bool), (n_rows,))
    nothing = np.zeros(n_rows, dtype=bool)
    results, problems = _fix_batch(sights, group, n_groups, ok, nothing, _fix_times(at_utc, n_groups))
    if refit:
        _leave_out_gross(sights, group, n_groups, ok, results)
        _check_fixes(sights, group, n_groups, ok, results)
    # --- the chart or GNSS cross-check ------------------------------------------------------------
    if chart_lat is not None and chart_lon is not None:
        _cross_check_all(results, np.broadcast_to(np.asarray(chart_lat, dtype=float), (n_groups,)),
                         np.broadcast_to(np.asarray(chart_lon, dtype=float), (n_groups,)))
    return GroupFixes(results, problems)


def _cross_check_all(results: list[FixResult | None], chart_lat: np.ndarray, chart_lon: np.ndarray) -> None:
    """:meth:`FixResult.cross_check` of every result that has a chart position, at once."""
    chosen = [g for g, r in enumerate(results) if r is not None and np.isfinite(chart_lat[g])
              and np.isfinite(chart_lon[g])]
    if not chosen:
        return
    picked = [results[g] for g in chosen]
    lat = np.array([r.lat_deg for r in picked])
    lon = np.array([r.lon_deg for r in picked])
    distance, bearing = distance_bearing(lat, lon, chart_lat[chosen], chart_lon[chosen])
    b = np.radians(bearing)
    offset = distance[:, None] * np.stack([np.cos(b), np.sin(b)], axis=1)
    is_fix = np.array([r.is_fix for r in picked])
    cov = np.stack([r.covariance_nm2 if r.is_fix else np.eye(2) for r in picked])
    scale = np.array([r.confidence_scale for r in picked])
    inside_fix = np.einsum("fi,fi->f", offset, np.linalg.solve(cov, offset[..., None])[..., 0]) <= scale**2
    toward = np.array([r.line_toward_deg if r.line_toward_deg is not None else 0.0 for r in picked])
    across = distance * np.cos(np.radians(bearing - toward))
    inside_line = np.abs(across) <= np.array([r.ellipse_semi_minor_nm for r in picked])
    inside = np.where(is_fix, inside_fix, inside_line)
    for j, result in enumerate(picked):
        result.chart_distance_nm, result.chart_bearing_deg = float(distance[j]), float(bearing[j])
        result.chart_inside_ellipse = bool(inside[j])


def _subset(group: np.ndarray, chosen: list[int], n_groups: int) -> np.ndarray:
    """Group numbers for a batch of only the ``chosen`` groups (renumbered 0, 1, ...; others −1)."""
    renumber = np.full(n_groups, -1, dtype=np.intp)
    renumber[chosen] = np.arange(len(chosen))
    return np.where(group >= 0, renumber[np.maximum(group, 0)], -1)


def _leave_out_gross(sights: _Sights, group, n_groups, ok, results) -> None:
    """Each group's gross errors beyond doubt left out of its fix, a round at a time (a second one can hide
    behind the first); the fix from every sight kept beside it, and a loud warning naming each row."""
    left_out = np.zeros(group.size, dtype=bool)
    first = list(results)
    bounds = np.concatenate([[0], np.cumsum(np.bincount(group[group >= 0], minlength=n_groups))])
    by_group = np.argsort(np.where(group >= 0, group, n_groups), kind="stable")
    for _ in range(3):
        chosen, rows, wild = [], [], []
        for g, result in enumerate(results):
            if result is None:
                continue
            if result.gross.any():
                chosen.append(g)
                rows.append(by_group[bounds[g]:bounds[g + 1]][result.gross])
            elif result.scatter_impossible and result.redundant >= 2 and result.n_sights <= MAX_SIGHTS_SEARCHED:
                wild.append(g)
        for g, found in _gross_by_leaving_out(sights, group, ok, left_out, wild, results).items():
            chosen.append(g)
            rows.append(np.array(found))
        if not chosen:
            break
        left_out[np.concatenate(rows)] = True
        times = np.array([results[g].utc for g in chosen], dtype="datetime64[ns]")
        again, _ = _fix_batch(sights, _subset(group, chosen, n_groups), len(chosen), ok, left_out, times)
        for j, g in enumerate(chosen):
            if again[j] is not None:
                results[g] = again[j]
    for g, result in enumerate(results):
        if result is None or first[g] is result or not result.left_out.any():
            continue
        every = first[g]
        result.all_sights = every
        names = sights.names[by_group[bounds[g]:bounds[g + 1]][result.left_out]]
        result.left_out_names = [str(name) for name in names]
        misses = np.abs(result.residual_arcmin[result.left_out])
        miles = float(distance_bearing(result.lat_deg, result.lon_deg, every.lat_deg, every.lon_deg)[0])
        lines = ", ".join(f"{name} ({miss:.0f}′ off)" for name, miss in zip(names, misses.tolist()))
        result.warnings.insert(0, (
            f"LEFT OUT of this {result.kind}: {lines}: {'their lines lie' if len(names) > 1 else 'its line lies'} "
            f"far beyond any sextant error from the others (a misnamed body, a slip of degrees or minutes, a "
            f"wrong time?); the {every.kind} from every sight is {miles:.1f} nm away, at "
            f"{format_angle(every.lat_deg, 'lat')} {format_angle(every.lon_deg, 'lon')}"))
        if miles > 1.0:
            result.warnings.insert(1, f"this {result.kind} and the one from every sight differ by {miles:.1f} nm: "
                                      "plot this one, and find out what is wrong with the sight left out")


def _gross_by_leaving_out(sights: _Sights, group, ok, left_out, wild: list[int], results) -> dict[int, list[int]]:
    """For fixes whose sights scatter beyond any sextant: each sight left out in turn (then, where that finds
    nothing and six or more sights remain, each pair), every such fix of the others solved at once (from the DR,
    not from the all-sights fix a gross error has dragged off). The sights whose leaving out makes the
    others agree, each of whose lines then lies more than GROSS_ARCMIN and beyond the blunder test's limit
    from their fix, are the gross errors: their rows, per group."""
    found: dict[int, list[int]] = {}
    for size in (1, 2):
        todo = [g for g in wild if g not in found]
        copies_rows, copies_group, copies_left, owner, dropped = [], [], [], [], []
        for g in todo:
            members = np.flatnonzero((group == g) & ok)
            free = members[~left_out[members]]
            if free.size - size < 2 + size:  # the others keep a check of their own: 3 for one out, 4 for two
                continue
            for chosen in itertools.combinations(free.tolist(), size):
                copies_rows.append(members)
                copies_group.append(np.full(members.size, len(owner)))
                copies_left.append(left_out[members] | np.isin(members, chosen))
                owner.append(g)
                dropped.append(list(chosen))
        if not owner:
            continue
        rows = np.concatenate(copies_rows)
        sub = replace(sights, gha=sights.gha[rows], dec=sights.dec[rows], ho=sights.ho[rows], utc=sights.utc[rows],
                      dr_lat=sights.dr_lat[rows], dr_lon=sights.dr_lon[rows], course=sights.course[rows],
                      speed=sights.speed[rows], set_deg=sights.set_deg[rows], drift_kn=sights.drift_kn[rows],
                      dr_age_h=sights.dr_age_h[rows], names=sights.names[rows])
        times = np.array([results[g].utc for g in owner], dtype="datetime64[ns]")
        trials, _ = _fix_batch(sub, np.concatenate(copies_group), len(owner), np.ones(rows.size, dtype=bool),
                               np.concatenate(copies_left), times)
        best: dict[int, tuple[float, list[int], np.ndarray, int]] = {}
        for c, (g, chosen) in enumerate(zip(owner, dropped)):
            trial = trials[c]
            if trial is None or trial.redundant < 1 or trial.scatter_impossible:
                continue
            misses = np.array([float(trial.residual_arcmin[np.flatnonzero(copies_rows[c] == row)[0]])
                               for row in chosen])
            if g not in best or trial.sigma_arcmin < best[g][0]:
                best[g] = (trial.sigma_arcmin, chosen, misses, trial.redundant)
        for g, (sigma, chosen, misses, d) in best.items():
            n = d + 2 + size  # the sights of the fix of the others (two unknowns) and those left out
            limit = float(student_t_quantile(1.0 - BLUNDER_ALPHA / (2.0 * n), d)) * sigma
            if np.all(np.abs(misses) > max(GROSS_ARCMIN, limit)):
                found[g] = chosen
    return found


def _check_fixes(sights: _Sights, group, n_groups, ok, results) -> None:
    """For each fix with sights flagged as possible blunders (kept in it): the check fix without them, and a
    warning of how far it moves."""
    bounds = np.concatenate([[0], np.cumsum(np.bincount(group[group >= 0], minlength=n_groups))])
    by_group = np.argsort(np.where(group >= 0, group, n_groups), kind="stable")
    left_out = np.zeros(group.size, dtype=bool)
    chosen = []
    for g, result in enumerate(results):
        if result is None:
            continue
        rows = by_group[bounds[g]:bounds[g + 1]]
        doubtful = result.outlier & ~_or_empty(result.left_out, rows.size)
        if doubtful.any() and int(result.used.sum()) - int(doubtful.sum()) >= 2:
            chosen.append(g)
            left_out[rows[doubtful | _or_empty(result.left_out, rows.size)]] = True
    if not chosen:
        return
    times = np.array([results[g].utc for g in chosen], dtype="datetime64[ns]")
    checks, _ = _fix_batch(sights, _subset(group, chosen, n_groups), len(chosen), ok, left_out, times)
    for j, g in enumerate(chosen):
        result, check = results[g], checks[j]
        if check is None:
            continue
        rows = by_group[bounds[g]:bounds[g + 1]]
        doubtful = result.outlier & ~_or_empty(result.left_out, rows.size)
        names = sights.names[rows[doubtful]]
        count = len(names)
        miles = float(distance_bearing(result.lat_deg, result.lon_deg, check.lat_deg, check.lon_deg)[0])
        result.warnings.append(
            f"{', '.join(names)} look{'' if count > 1 else 's'} like {'blunders' if count > 1 else 'a blunder'} "
            f"(the blunder test, at {BLUNDER_ALPHA * 100:.0f} % false alarms for the whole fix); without "
            f"{'them' if count > 1 else 'it'} the {result.kind} moves {miles:.1f} nm (the check fix)"
            + (": more than a mile, so look at the sight before plotting either" if miles > 1.0 else ""))
        result.without_outliers = check


def _or_empty(values: np.ndarray, size: int) -> np.ndarray:
    return values if values.size == size else np.zeros(size, dtype=bool)


def _fix_batch(sights: _Sights, group: np.ndarray, n_groups: int, ok: np.ndarray, left_out: np.ndarray,
               fix_time_given: np.ndarray) -> tuple[list[FixResult | None], list[str]]:
    """One solve of every group (no check fixes): the sights ``ok`` are shown, those not ``left_out`` used."""
    results: list[FixResult | None] = [None] * n_groups
    problems = [""] * n_groups
    if n_groups == 0:
        return results, problems
    s = sights
    n_rows = s.gha.size
    weighted = ok & ~left_out
    by_group = np.argsort(np.where(group >= 0, group, n_groups), kind="stable")
    sizes = np.bincount(group[group >= 0], minlength=n_groups)
    count_ok = np.bincount(group[ok & (group >= 0)], minlength=n_groups)
    count_used = np.bincount(group[weighted & (group >= 0)], minlength=n_groups)
    for g in np.flatnonzero(count_used < 2):
        problems[g] = (f"a fix needs two or more reduced sights; {int(count_used[g])} of {int(sizes[g])} "
                       "are usable")
    work = np.flatnonzero(count_used >= 2)
    if work.size == 0:
        return results, problems

    # --- the padded layout: (groups at work, the most sights of any) -----------------------------
    ok_rows = by_group[ok[by_group] & (group[by_group] >= 0)]
    ok_rows = ok_rows[np.isin(group[ok_rows], work)]
    w_of_group = np.full(n_groups, -1, dtype=np.intp)
    w_of_group[work] = np.arange(work.size)
    w = w_of_group[group[ok_rows]]
    start = np.concatenate([[0], np.cumsum(count_ok[work])[:-1]])
    column = np.arange(ok_rows.size) - start[w]
    width = int(count_ok[work].max())
    present = np.zeros((work.size, width), dtype=bool)
    present[w, column] = True
    use = np.zeros((work.size, width), dtype=bool)
    use[w, column] = weighted[ok_rows]
    times = np.full((work.size, width), np.iinfo(np.int64).min, dtype=np.int64)
    times[w, column] = np.where(weighted[ok_rows], s.utc[ok_rows].astype(np.int64), np.iinfo(np.int64).min)
    # each group's last used sight by time (the later row among equal times)
    last = width - 1 - np.argmax(times[:, ::-1] == times.max(axis=1, keepdims=True), axis=1)
    index = np.empty((work.size, width), dtype=np.intp)
    index[:] = np.zeros((work.size, 1), dtype=np.intp)
    index[w, column] = ok_rows
    last_row = index[np.arange(work.size), last]
    # padding repeats each group's last sight: a zero-length leg at its time, no weight
    index = np.where(present, index, last_row[:, None])
    fix_time = fix_time_given[work]
    fix_time = np.where(np.isnat(fix_time), s.utc[last_row], fix_time)
    offset_ns = (s.utc[index] - fix_time[:, None]).astype("timedelta64[ns]").astype(np.int64)
    hours = offset_ns / NS_PER_HOUR
    vn, ve, run_from = _run_velocities(s, index, present, hours)
    track = _sight_track_ns(offset_ns, vn, ve)
    g_gha, g_dec, g_ho = s.gha[index], s.dec[index], s.ho[index]
    # the DR at the fix time: the last sight's DR carried on along the track to the fix time
    dr_lat, dr_lon = track.through(s.dr_lat[last_row], s.dr_lon[last_row], last)
    lat0, lon0 = dr_lat[:, -1], dr_lon[:, -1]
    n_used = use.sum(axis=1)
    # a running fix carried along rhumb lines through (or next to) a pole is refused
    run_nm = np.where(present, _run_to_fix_nm(track), 0.0).max(axis=1)
    polar = (run_nm > 0) & (np.abs(lat0) + run_nm / ARCMIN_PER_DEG > 90.0 - POLAR_RUN_LIMIT_DEG)

    # --- what each group is: a fix, a fix with its motion, or a line -----------------------------
    _, zn0 = computed_altitude_azimuth(lat0[:, None], lon0[:, None], g_gha, g_dec)
    spread0 = azimuth_spread_many(zn0, use)
    motion = np.zeros(work.size, dtype=bool)
    motion_problem = np.full(work.size, "", dtype=object)
    if s.solve_motion:
        span_h = np.where(use, hours, -np.inf).max(axis=1) - np.where(use, hours, np.inf).min(axis=1)
        motion_problem = np.where(
            n_used < 5, [f"{n} sights (at least 5 are needed for position, course, speed and a check)"
                         for n in n_used],
            np.where(span_h < 1.0, [f"the sights span {s_ * 60:.0f} minutes (at least an hour is needed)"
                                    for s_ in span_h],
                     np.where(spread0 < WEAK_CROSSING_DEG, "the azimuths are too alike", ""))).astype(object)
        motion = (motion_problem == "") & ~polar
    line = (spread0 < LINE_ONLY_DEG) & ~motion & ~polar
    parts = {}
    for k, chosen in ((2, ~line & ~motion & ~polar), (4, motion)):
        if chosen.any():
            rows = np.flatnonzero(chosen)
            velocity0 = (np.where(use[rows], vn[rows], 0.0).sum(1) / n_used[rows],
                         np.where(use[rows], ve[rows], 0.0).sum(1) / n_used[rows])
            parts[k] = (rows, _solve_part(k, rows, g_gha, g_dec, g_ho, use, present, track, lat0, lon0, velocity0,
                                          s.dr_error_kn, s.dr_error_fraction))
    if line.any():
        rows = np.flatnonzero(line)
        parts["line"] = (rows, _line_part(rows, g_gha, g_dec, g_ho, use, present, track, lat0, lon0, spread0,
                                          s.dr_error_kn, s.dr_error_fraction))

    # --- each line of position for the plotting sheet, from the DR carried to its sight ---------
    sight_lat, sight_lon = at_sights(track, lat0, lon0)
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
    gross = np.zeros((work.size, width), dtype=bool)
    for rows, part in parts.values():
        residual[rows], outlier[rows], gross[rows] = part.residual_arcmin, part.outlier, part.gross
    sight_index = index[present]

    def in_group_order(values, fill=np.nan, dtype=float):
        out = np.full(n_rows, fill, dtype=dtype)
        out[sight_index] = values[present]
        return out[by_group]

    columns = {name: in_group_order(values) for name, values in (
        ("residual_arcmin", residual), ("lop_intercept_nm", intercept), ("lop_zn_deg", zn),
        ("lop_foot_lat_deg", foot_lat), ("lop_foot_lon_deg", foot_lon), ("lop_tangent_deg", tangent))}
    shown_out = present & ~use
    columns["outlier"] = in_group_order(outlier | shown_out, False, bool)
    columns["used"] = in_group_order(use, False, bool)
    columns["left_out"] = in_group_order(shown_out, False, bool)
    columns["gross"] = in_group_order(gross, False, bool)
    bounds = np.concatenate([[0], np.cumsum(sizes)]).tolist()
    lat0_list, lon0_list, work_list = lat0.tolist(), lon0.tolist(), work.tolist()
    span_min = ((np.where(use, hours, -np.inf).max(axis=1) - np.where(use, hours, np.inf).min(axis=1)) * 60).tolist()
    age_h = _dr_age_at_fix(s, last_row, fix_time)
    speed_kn = np.hypot(vn[np.arange(work.size), last], ve[np.arange(work.size), last])
    for wi in np.flatnonzero(polar).tolist():
        problems[work_list[wi]] = (
            f"a running fix this near the pole ({format_angle(lat0_list[wi], 'lat')}, the run {run_nm[wi]:.0f} nm) "
            "is not carried along rhumb lines, which are not defined through the pole (courses there are "
            "steered on a grid): fix from sights taken together, or give a DR for each sight and no course")
    done: list[tuple[int, FixResult]] = []
    for key, (rows, part) in parts.items():
        for j, wi in enumerate(rows.tolist()):
            g = work_list[wi]
            result = part.result(j)
            if result is None:
                problems[g] = PARALLEL_LINES
                continue
            if key != "line" and s.solve_motion and motion_problem[wi]:
                result.warnings.insert(0, f"course and speed made good cannot be solved: {motion_problem[wi]}; "
                                          "the known run is used")
            a, b = bounds[g], bounds[g + 1]
            for name, values in columns.items():
                setattr(result, name, values[a:b])
            result.utc = fix_time[wi]
            result.dr_lat_deg, result.dr_lon_deg = lat0_list[wi], lon0_list[wi]
            result.run_from = run_from[wi] if key != 4 else RunFrom.SOLVED
            if result.kind == FixKind.LATITUDE and n_used[wi] >= 3:
                used_here = use[wi]
                _noon_curve(result, hours[wi][used_here], g_ho[wi][used_here], g_dec[wi][used_here])
            results[g] = result
            done.append((wi, result))
    if done:
        chosen = np.array([wi for wi, _ in done])
        _sense_checks([r for _, r in done], [run_from[wi] for wi in chosen.tolist()], np.asarray(span_min)[chosen],
                      age_h[chosen], speed_kn[chosen], np.isfinite(s.dr_age_h[last_row[chosen]]))
    return results, problems


def _dr_age_at_fix(s: _Sights, last_row: np.ndarray, fix_time: np.ndarray) -> np.ndarray:
    """The age (hours) of each group's DR at the fix time: its last sight's DR's age and the time since (a
    DR of unknown age is taken as UNKNOWN_DR_AGE_H old)."""
    since = np.abs((fix_time - s.utc[last_row]).astype("timedelta64[ns]").astype(np.int64) / NS_PER_HOUR)
    age = s.dr_age_h[last_row]
    return np.where(np.isfinite(age), np.abs(age) + since, UNKNOWN_DR_AGE_H)


def _sense_checks(results: list[FixResult], run_from: list[RunFrom], span_min: np.ndarray, age_h: np.ndarray,
                  speed_kn: np.ndarray, age_known: np.ndarray) -> None:
    """The fix-level warnings that look past the arithmetic, for a batch of results at once: a ship taken
    as stopped, a fix far from its DR, a scatter no sextant gives."""
    lat = np.array([r.lat_deg for r in results])
    lon = np.array([r.lon_deg for r in results])
    distance = distance_bearing(np.array([r.dr_lat_deg for r in results]), np.array([r.dr_lon_deg for r in results]),
                                lat, lon)[0]
    is_fix = np.array([r.is_fix for r in results])
    offset = np.array([abs(r.line_offset_nm) if r.line_offset_nm is not None else np.nan for r in results])
    distance = np.where(is_fix, distance, offset)
    size = np.array([r.ellipse_semi_major_nm if r.is_fix else r.ellipse_semi_minor_nm for r in results])
    dr_sigma = DR_ERROR_KN * age_h + DR_ERROR_FRACTION * speed_kn * age_h
    # the fix's own uncertainty widens the allowance, but no more than the DR's does: a fix as uncertain as
    # that has its own warning
    allowed = (DR_DISAGREEMENT_SIGMAS * dr_sigma
               + np.minimum(np.where(np.isfinite(size), size, 0.0), DR_DISAGREEMENT_SIGMAS * dr_sigma) + 1.0)
    dof = np.array([r.redundant for r in results])
    sigma = np.array([r.sigma_arcmin for r in results])
    limit = np.full(dof.size, np.inf)
    if (dof >= 1).any():
        limit[dof >= 1] = SEXTANT_SIGMA_LIMIT_ARCMIN * np.sqrt(chi_square_quantile(SCATTER_CONFIDENCE, dof[dof >= 1])
                                                               / dof[dof >= 1])
    wild = is_fix & (sigma > limit)
    far = distance > allowed
    stopped = (np.array(run_from, dtype=object) == RunFrom.NONE) & (span_min > STOPPED_SPAN_MIN)
    for j, result in enumerate(results):
        result.dr_distance_nm = float(distance[j])
        result.scatter_impossible = bool(wild[j])
    for j in np.flatnonzero(stopped).tolist():
        results[j].warnings.append(
            f"the sights span {span_min[j]:.0f} minutes but the log gives no course or speed and one DR for them "
            "all: the ship is taken as stopped; if she was under way, give the course and speed (or each "
            "sight's own DR) and fix again")
    for j in np.flatnonzero(far).tolist():
        result = results[j]
        age = (f"a DR {age_h[j]:.1f} h old" if age_known[j] else
               f"a DR of unknown age, taken as {UNKNOWN_DR_AGE_H:.0f} h old")
        result.warnings.append(
            f"the {result.kind} is {distance[j]:.0f} nm from the DR, far more than the DR could be out (about "
            f"{allowed[j]:.0f} nm for {age} at {speed_kn[j]:.1f} kn): check the time (the zone description and "
            "its sign, the date, the watch error), the DR and the body names before using either")
    for j in np.flatnonzero(wild).tolist():
        result = results[j]
        result.warnings.append(
            f"the sights scatter by σ {result.sigma_arcmin:.1f}′ about the {result.kind}, beyond any hand-held "
            f"sextant (a good sight is within about 1′, {SEXTANT_SIGMA_LIMIT_ARCMIN:.0f}′ in a seaway): most "
            "likely the altitudes are written wrongly (degrees and minutes written as a decimal, 29.216 for "
            "29° 21.6′), or a time or a body's name is wrong"
            + ("; or the run between the sights (course, speed, current)" if run_from[j] != RunFrom.NONE
               else ""))


PARALLEL_LINES = "the lines of position are parallel (all azimuths alike or opposite): no fix"


def fix_from_sights(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, utc: ArrayLike,
                    dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike, *, usable: ArrayLike | None = None,
                    course_deg: ArrayLike | None = None, speed_kn: ArrayLike | None = None,
                    at_utc: object | None = None, chart_lat: float | None = None, chart_lon: float | None = None,
                    solve_motion: bool = False, set_deg: ArrayLike | None = None,
                    drift_kn: ArrayLike | None = None, labels: ArrayLike | None = None,
                    dr_error_kn: float = DR_ERROR_KN, dr_error_fraction: float = DR_ERROR_FRACTION,
                    dr_age_hours: ArrayLike | None = None) -> FixResult:
    """The least-squares fix from reduced sights, one element per sight (1-D arrays).

    ``gha_deg``, ``dec_deg`` and ``ho_deg`` of each sight, its ``utc`` (datetime64, taken as
    UTC, or any instant form) and the DR at its time; ``usable`` (default: every sight with
    finite values) picks the sights to fix from, the others get NaN residuals. Sights at
    different times make a running fix at ``at_utc`` (default: the last sight's time), along
    the DR track of ``course_deg`` and ``speed_kn`` (per sight: in force from each sight until
    the next; NaN as 0), plus a current ``set_deg``/``drift_kn`` (one, or per sight: in force
    after it); with no course and no speed for any sight, the run between the sights is taken
    from their own DRs where they differ (else the ship is taken as stopped, and a fix spanning
    more than :data:`STOPPED_SPAN_MIN` minutes says so). The run's own error, ``dr_error_kn`` per
    hour and ``dr_error_fraction`` of the miles run, enters the ellipse. ``dr_age_hours``: how old
    each sight's DR is, for the check of the fix against it (default: not known, taken as a day).
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
        dr_error_fraction=dr_error_fraction, dr_age_hours=dr_age_hours)
    if batch.results[0] is None:
        raise NavredError(batch.problems[0])
    return batch.results[0]


def azimuth_spread_many(zn_deg: np.ndarray, use: np.ndarray) -> np.ndarray:
    """:func:`azimuth_spread_deg` of each row of (groups, sights) azimuths, using the sights ``use`` marks."""
    directions = np.sort(np.where(use, wrap_axial(zn_deg), np.inf), axis=1)
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


def _run_velocities(s: _Sights, index: np.ndarray, present: np.ndarray, hours: np.ndarray):
    """Velocity over the ground (north, east knots) in force after each sight of the padded layout (the
    course and speed through the water and the current in force, or, where a group gives no course or
    speed, the run between its rows' own DRs), and how each group's run was found."""
    course, speed = s.course[index], s.speed[index]
    given = (np.isfinite(course) | np.isfinite(speed)) & present
    vn, ve = velocity_kn(np.nan_to_num(course), np.nan_to_num(speed))
    cn, ce = velocity_kn(s.set_deg[index], s.drift_kn[index])
    vn, ve = vn + cn, ve + ce
    moving = given.any(axis=1)
    with_current = ((s.drift_kn[index] != 0) & present).any(axis=1)
    apart = np.zeros(len(index), dtype=bool)
    if not moving.all():
        lat, lon = s.dr_lat[index], s.dr_lon[index]
        miles, _ = distance_bearing(lat[:, :1], lon[:, :1], lat, lon)
        with np.errstate(invalid="ignore"):
            apart = (np.where(present, miles, 0.0) > CONVERGED_NM).any(axis=1) & ~moving
        if apart.any():
            rows = np.flatnonzero(apart)
            vn[rows], ve[rows] = _dr_run(lat[rows], lon[rows], hours[rows], present[rows])
    run_from = np.where(apart, RunFrom.OWN_DRS,
                        np.where(moving, np.where(with_current, RunFrom.COURSE_SPEED_AND_CURRENT, RunFrom.COURSE_AND_SPEED),
                                 np.where(with_current, RunFrom.CURRENT, RunFrom.NONE)))
    return vn, ve, [RunFrom(word) for word in run_from.tolist()]


def _dr_run(lat: np.ndarray, lon: np.ndarray, hours: np.ndarray, present: np.ndarray):
    """The velocity after each sight (north, east knots) that carries the ship from its DR to the next
    sight's DR along the rhumb line, sights in time order; the last keeps the leg before it."""
    width = hours.shape[1]
    order = np.argsort(np.where(present, hours, np.inf), axis=1, kind="stable")
    t, la, lo = (np.take_along_axis(v, order, axis=1) for v in (hours, lat, lon))
    count = present.sum(axis=1)
    miles, course = rhumb_inverse(la[:, :-1], lo[:, :-1], la[:, 1:], lo[:, 1:])
    dt = np.diff(t, axis=1)
    valid = (np.arange(width - 1)[None, :] < (count - 1)[:, None]) & (dt > 0) & np.isfinite(miles)
    speed = np.where(valid, np.nan_to_num(miles) / np.where(valid, dt, 1.0), 0.0)
    north, east = velocity_kn(np.where(valid, course, 0.0), speed)
    out = []
    rows = np.arange(len(order))
    last = np.maximum(count - 1, 0)
    for leg in (north, east):
        full = np.concatenate([leg, np.zeros((len(order), 1))], axis=1)
        full[rows, last] = np.where(count >= 2, full[rows, np.maximum(last - 1, 0)], 0.0)
        full = np.where(np.arange(width)[None, :] > last[:, None], full[rows, last][:, None], full)
        back = np.empty_like(full)
        np.put_along_axis(back, order, full, axis=1)
        out.append(back)
    return out[0], out[1]


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
    """The groups of a batch solved one way: their residuals, blunder flags and gross errors (groups,
    sights), and the FixResult of group j (its per-sight arrays are filled in by the caller)."""

    residual_arcmin: np.ndarray
    outlier: np.ndarray
    gross: np.ndarray
    result: Callable[[int], FixResult | None]


def _plural(count: int) -> str:
    return "s" if count != 1 else ""


def sight_variance(residual: np.ndarray, projector: np.ndarray, run_cov: np.ndarray, dof: np.ndarray
                   ) -> tuple[np.ndarray, np.ndarray]:
    """The sights' variance σ̂² (arcmin²) of each group of a batch, and its Fisher information, when the
    residuals also carry the DR's known error over the run.

    The residuals r = M e (M the residual projector, rank ν) of errors e with covariance σ²I + C: in the
    eigenvectors of M C M within the residual space, the components z_j are independent with variances
    σ² + λ_j. σ̂² maximises their (restricted) likelihood, Σ (z_j² − (σ² + λ_j))/(σ² + λ_j)² = 0, σ² ≥ 0
    (H. D. Patterson and R. Thompson, "Recovery of inter-block information when block sizes are unequal",
    Biometrika 58(3), 1971; from memory): a component the run's error swamps says little of σ and weighs
    little. With no run (C = 0) it is Σr²/ν exactly. The information Σ 1/(2(σ̂² + λ_j)²) gives its variance.
    Arrays (groups, sights), (groups, sights, sights).
    """
    r = np.nan_to_num(residual)
    nu = np.maximum(np.asarray(dof, dtype=float), 0.0)
    plain = ~run_cov.any(axis=(1, 2))
    sigma2 = np.where(nu > 0, np.sum(r**2, axis=1) / np.maximum(nu, 1.0), 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        information = np.where(sigma2 > 0, nu / (2.0 * sigma2**2), np.inf)
    large = np.sum(np.any(run_cov != 0, axis=2), axis=1) > MAX_SIGHTS_SEARCHED
    if large.any():  # the moment estimate, E[r'r] = σ²ν + tr MC, and its information as if C were nil
        trace_mc = np.einsum("fij,fji->f", projector[large], run_cov[large])
        sigma2[large] = np.maximum(np.sum(r[large] ** 2, axis=1) - trace_mc, 0.0) / np.maximum(nu[large], 1.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            information[large] = np.where(sigma2[large] > 0, nu[large] / (2.0 * sigma2[large] ** 2), np.inf)
    rows = np.flatnonzero(~plain & (nu > 0) & ~large)
    if rows.size:
        m, c = projector[rows], run_cov[rows]
        outside = np.trace(c, axis1=1, axis2=2)[:, None, None] * 1e6 + 1.0  # the directions M removes, set apart
        lam, vec = np.linalg.eigh(m @ c @ m + outside * (np.eye(m.shape[1])[None] - m))
        inside = lam < outside[:, :, 0] / 2.0
        lam = np.where(inside, np.maximum(lam, 0.0), 0.0)
        z2 = np.where(inside, np.einsum("fsj,fs->fj", vec, r[rows]) ** 2, 0.0)

        def slope(v):  # the likelihood's slope at σ² = v (decreasing in v)
            with np.errstate(divide="ignore", invalid="ignore"):
                terms = (z2 - (v[:, None] + lam)) / (v[:, None] + lam) ** 2
            return np.where(inside, np.nan_to_num(terms, nan=0.0, posinf=1e300), 0.0).sum(axis=1)

        lo = np.zeros(rows.size)
        hi = np.max(z2, axis=1) + 1e-12
        found = np.zeros(rows.size)
        positive = slope(np.full(rows.size, 1e-300)) > 0
        for _ in range(80):
            mid = (lo + hi) / 2.0
            up = slope(mid) > 0
            lo, hi = np.where(up, mid, lo), np.where(up, hi, mid)
        found = np.where(positive, (lo + hi) / 2.0, 0.0)
        sigma2[rows] = found
        with np.errstate(divide="ignore", invalid="ignore"):
            information[rows] = np.where(inside, 0.5 / (found[:, None] + lam) ** 2, 0.0).sum(axis=1)
    return sigma2, information


def effective_dof(dof: ArrayLike, sigma2: ArrayLike, trace_p: ArrayLike, trace_k: ArrayLike,
                  information: ArrayLike) -> np.ndarray:
    """The degrees of freedom of a position variance σ̂²·P + K whose sight part is estimated (with the
    given Fisher information of σ̂²) and whose DR part K is known: Satterthwaite's approximation,
    ν_eff = 2 V² / Var V̂ with V = σ̂² tr P + tr K and Var V̂ = tr(P)² / information (F. E. Satterthwaite,
    "An approximate distribution of estimates of variance components", Biometrics Bulletin 2(6), 1946;
    from memory). With no DR error this is ν exactly, and the ellipse is the exact F(2, ν) one.
    """
    nu = np.asarray(dof, dtype=float)
    s2 = np.asarray(sigma2, dtype=float)
    trace_p = np.asarray(trace_p, dtype=float)
    trace_k = np.asarray(trace_k, dtype=float)
    information = np.asarray(information, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        out = 2.0 * (s2 * trace_p + trace_k) ** 2 * information / trace_p**2
    plain = trace_k <= 0
    return np.where(plain, nu, np.where(np.isfinite(out), np.maximum(out, 1.0), np.inf))


def _blunder_test(residual, leverage, use, dof, sigma):
    """The blunder test of every sight of a batch of groups (groups, sights): flags, gross errors, and the
    smallest blunder the test finds about half the time (per group).

    Each sight's externally studentized residual t_i = r_i / (s_(i) √(1 − h_ii)), with s_(i) the scatter of
    the others (so that a blunder cannot hide by inflating it) and h_ii its leverage, is Student's t with
    ν − 1 degrees of freedom when the sights have Gaussian errors (D. A. Belsley, E. Kuh and R. E. Welsch,
    Regression Diagnostics, 1980; from memory). The largest of the n is judged against t(ν − 1) at
    1 − α/(2n), two-sided (Bonferroni's correction): a clean fix has a sight flagged in at most α of
    fixes, whatever n. A sight is flagged only if its line also lies BLUNDER_MIN_ARCMIN from the fix of
    the others (r_i / (1 − h_ii)), and is gross beyond doubt beyond GROSS_ARCMIN. Three sights for two
    unknowns (ν = 1) cannot single one out: their residuals are one misfit seen from each.
    """
    r = np.where(use, residual, 0.0)
    miss = np.clip(1.0 - leverage, 1e-12, 1.0)
    n = use.sum(axis=1)
    total = np.sum(r**2, axis=1, keepdims=True)
    testable = dof >= 2
    with np.errstate(invalid="ignore", divide="ignore"):
        deleted = np.maximum((total - r**2 / miss) / (dof[:, None] - 1.0), 0.0)
        t = np.abs(r) / (np.sqrt(deleted) * np.sqrt(miss))
    t = np.where(np.abs(r) > 0, np.nan_to_num(t, nan=np.inf, posinf=np.inf), 0.0)
    critical = np.where(testable, student_t_quantile(1.0 - BLUNDER_ALPHA / (2.0 * np.maximum(n, 1)),
                                                     np.where(testable, dof - 1.0, 1.0)), np.inf)
    off = np.abs(r) / miss  # the line's distance from the fix of the others
    outlier = use & testable[:, None] & (t > critical[:, None]) & (off > BLUNDER_MIN_ARCMIN)
    gross = outlier & (off > GROSS_ARCMIN)
    detectable = np.full(len(r), np.nan)
    if testable.any():
        per_sight = critical[testable, None] * np.asarray(sigma)[testable, None] / np.sqrt(miss[testable])
        detectable[testable] = np.nanmedian(np.where(use[testable], per_sight, np.nan), axis=1)
    return outlier, gross, np.maximum(detectable, BLUNDER_MIN_ARCMIN)


@functools.lru_cache(maxsize=256)
def _scale_ratio(d: int) -> tuple[float, float]:
    """The ellipse's scale with ν redundant sights and with one more, each over the known-σ scale."""
    known = float(np.sqrt(chi_square_2_quantile(CONFIDENCE)))
    return (float(np.sqrt(2.0 * f_2_quantile(CONFIDENCE, d))) / known,
            float(np.sqrt(2.0 * f_2_quantile(CONFIDENCE, d + 1))) / known)


def _blunder_note(n: int, d: int, detectable: float, k: int) -> str:
    """What the blunder test can do with these sights, in words."""
    if d <= 0:
        return f"{n} sights for {k} unknowns: no check on a blunder at all"
    if d == 1:
        return (f"{n} sights for {k} unknowns cannot single out a bad sight: each residual is the same misfit "
                "seen from one sight; take another sight to check them")
    return (f"{n} sights can find a blunder of about {detectable:.0f}′ or more (about half the time at that size, "
            f"from the sights' own scatter)")


def _ellipse_note(n: int, k: int, d: int) -> str:
    """What the ellipse's size means with few redundant sights, in words a navigator reads."""
    if d <= 0:
        return (f"{n} sights for {k} unknowns leave none to judge the sights by: the ellipse rests on an assumed "
                f"{A_PRIORI_SIGMA_ARCMIN}′ per sight")
    if d > 3:
        return ""
    ratio, next_ratio = _scale_ratio(d)
    return (f"{n} sights for {k} unknowns leave {d} redundant sight{_plural(d)} to judge the sights' error by, so "
            f"that error is known only roughly and the ellipse allows for it being larger than it looks: the "
            f"sights' share of it is {ratio:.1f} times the size a known error would give; one more sight would "
            f"make that {next_ratio:.1f} times")


def _quantile_name(nu: float, d: int) -> str:
    if not np.isfinite(nu) or nu > 1000.0:  # F(2, ν) is then chi-square(2)/2 to 0.3 %
        return "chi-square(2)"
    return f"F(2, {d})" if abs(nu - d) < 0.05 else f"F(2, {nu:.1f})"


def _solve_part(k, rows, gha, dec, ho, use, present, track, lat0, lon0, velocity0, dr_error_kn, dr_error_fraction):
    """Fix the groups ``rows`` with k unknowns (2: position; 4: position, course and speed made
    good) in one solve; returns a function giving group j's FixResult (per-sight arrays padded).

    σ is estimated from the residuals with no floor (Σr²/ν; with a run, the restricted likelihood that
    weighs out the DR error's share, :func:`sight_variance`); the position's covariance is
    A(σ²I + C)Aᵀ and the 95 % ellipse is scaled by √(2 F(2, ν)), exact for Gaussian sight errors when
    there is no run, ν an effective number (:func:`effective_dof`) when the DR's error over the run is
    part of it.
    """
    motion = k == 4
    u = use[rows]
    sub_track = track.take(rows)
    core = solve_fixes(gha[rows], dec[rows], ho[rows], lat0[rows], lon0[rows], dt_hours=_sight_hours(sub_track),
                       velocity_north_kn=sub_track.north_kn[..., :-1], velocity_east_kn=sub_track.east_kn[..., :-1],
                       mask=u,
                       report=present[rows], solve_motion=motion, velocity0_kn=velocity0, mark_singular=True,
                       track=sub_track)
    n = u.sum(axis=1)
    dof = n - k
    residual = np.where(u, core.residual_arcmin, 0.0)
    unit, jac = core.covariance_nm2, core.jacobian
    width = u.shape[1]
    if motion:  # no known run: the motion itself was solved
        run_cov = np.zeros((rows.size, width, width))
    else:
        run_cov = run_error_covariance(np.where(u, core.zn_deg, 0.0), _sight_hours(sub_track),
                                       _run_to_fix_nm(sub_track), dr_error_kn, dr_error_fraction)
        run_cov = run_cov * u[:, :, None] * u[:, None, :]
    gain = unit @ np.swapaxes(jac, 1, 2)  # x = gain @ residual: the least-squares estimator
    projector = np.eye(width)[None] * u[:, :, None] - jac @ gain  # M = I − H on the used sights
    sigma2, information = sight_variance(residual, projector, run_cov, dof)
    sigma_hat = np.sqrt(sigma2)
    sigma = np.where(dof >= 1, sigma_hat, A_PRIORI_SIGMA_ARCMIN)
    identity = np.eye(width)[None] * u[:, :, None]
    known = gain @ run_cov @ np.swapaxes(gain, 1, 2)
    covariance = sigma[:, None, None] ** 2 * (gain @ identity @ np.swapaxes(gain, 1, 2)) + known
    position_cov = covariance[:, :2, :2]
    nu = effective_dof(dof, sigma2, np.trace(unit[:, :2, :2], axis1=1, axis2=2),
                       np.trace(known[:, :2, :2], axis1=1, axis2=2), information)
    nu = np.where(dof >= 1, nu, np.inf)
    scale = np.sqrt(2.0 * f_2_quantile(CONFIDENCE, nu))
    major, minor, orientation = error_ellipse(position_cov, scale)
    spread = azimuth_spread_many(core.zn_deg, u)
    leverage = np.einsum("fsi,fij,fsj->fs", jac, unit, jac)
    outlier, gross, detectable = _blunder_test(residual, leverage, u, dof, sigma)
    speed_sigma = np.sqrt(np.trace(covariance[:, 2:, 2:], axis1=1, axis2=2)) if motion else np.zeros(rows.size)

    # plain Python numbers for the per-group results (a numpy scalar costs more to handle)
    lat, lon = core.lat_deg.tolist(), core.lon_deg.tolist()
    numbers = [a.tolist() for a in (sigma, sigma_hat, major, minor, orientation, scale, spread, speed_sigma,
                                    nu, detectable)]
    sigma_l, sigma_hat_l, major_l, minor_l, orientation_l, scale_l, spread_l, speed_sigma_l, nu_l, detect_l = numbers
    dof_l, n_l, steps_l = dof.tolist(), n.tolist(), core.iterations_each.tolist()
    converged_l, singular_l = core.converged.tolist(), core.singular.tolist()
    run_included = run_cov.any(axis=(1, 2)).tolist()

    def result(j: int) -> FixResult | None:
        if singular_l[j]:
            return None
        warnings_: list[str] = []
        d = dof_l[j]
        if d >= 1:
            source = f"from the residuals, {d} redundant sight{_plural(d)}"
            if run_included[j]:
                source += ", the DR's error over the run taken out"
        else:
            source = f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight, no redundancy"
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
            confidence_scale=scale_l[j], sigma_source=source, iterations=steps_l[j],
            quantile=_quantile_name(nu_l[j], d), spread_deg=spread_l[j], dr_error_included=run_included[j],
            redundant=d, ellipse_note=_ellipse_note(n_l[j], k, d),
            blunder_note=_blunder_note(n_l[j], d, detect_l[j], k), detectable_blunder_arcmin=detect_l[j])
        if motion:
            vn, ve = float(core.velocity_north_kn[j]), float(core.velocity_east_kn[j])
            fix.course_made_good_deg = float(wrap_360(np.degrees(np.arctan2(ve, vn))))
            fix.speed_made_good_kn = float(np.hypot(vn, ve))
            if speed_sigma_l[j] > 2.0:
                warnings_.append(f"course and speed made good are poorly determined (±{speed_sigma_l[j]:.1f} kn)")
        return fix

    return _Part(core.residual_arcmin, outlier, gross, result)


def _line_part(rows, gha, dec, ho, use, present, track, lat0, lon0, spread0, dr_error_kn, dr_error_fraction):
    """Groups whose lines of position (nearly) coincide: one combined line each, worked from the DR.

    Each line, advanced to the fix time, lies a_j miles from the DR toward its azimuth Z_j; the
    combined line runs across the mean azimuth Z (the axial mean) and lies p miles from the DR,
    the least-squares p = Σ a_j c_j / Σ c_j² with c_j = cos(Z_j − Z). Its 95 % band is Student's t
    with n − 1 degrees of freedom (an effective number when the DR's error over the run is part of it).
    """
    u = use[rows]
    shown = present[rows]
    sub_track = track.take(rows)
    sight_lat, sight_lon = at_sights(sub_track, lat0[rows], lon0[rows])
    hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, gha[rows], dec[rows])
    intercept_all = (ho[rows] - hc) * ARCMIN_PER_DEG
    intercept = np.where(u, intercept_all, 0.0)
    doubled = np.radians(2.0 * zn)
    toward = np.degrees(np.arctan2(np.where(u, np.sin(doubled), 0.0).sum(1),
                                   np.where(u, np.cos(doubled), 0.0).sum(1))) / 2.0
    cosines_all = np.cos(np.radians(zn - toward[:, None]))
    cosines = np.where(u, cosines_all, 0.0)
    flip = np.sum(intercept * cosines, axis=1) < 0  # point the line's azimuth to the side it lies on
    toward = wrap_360(np.where(flip, toward + 180.0, toward))
    cosines = np.where(flip[:, None], -cosines, cosines)
    cosines_all = np.where(flip[:, None], -cosines_all, cosines_all)
    weight = np.sum(cosines**2, axis=1)
    offset = np.sum(intercept * cosines, axis=1) / weight
    residual = np.where(shown, intercept_all - offset[:, None] * cosines_all, np.nan)
    r = np.where(u, residual, 0.0)
    n = u.sum(axis=1)
    dof = n - 1
    run_cov = run_error_covariance(np.where(u, zn, 0.0), _sight_hours(sub_track), _run_to_fix_nm(sub_track),
                                   dr_error_kn, dr_error_fraction)
    run_cov = run_cov * u[:, :, None] * u[:, None, :]
    gain = cosines / weight[:, None]
    projector = np.eye(u.shape[1])[None] * u[:, :, None] - cosines[:, :, None] * gain[:, None, :]
    sigma2, information = sight_variance(r, projector, run_cov, dof)
    sigma_hat = np.sqrt(sigma2)
    sigma = np.where(dof >= 1, sigma_hat, A_PRIORI_SIGMA_ARCMIN)
    known = np.einsum("fi,fij,fj->f", gain, run_cov, gain)
    unit = np.sum(gain**2, axis=1)
    variance = sigma**2 * unit + known
    nu = np.where(dof >= 1, effective_dof(dof, sigma2, unit, known, information), np.inf)
    t = np.where(np.isfinite(nu), student_t_quantile(0.975, np.where(np.isfinite(nu), nu, 1.0)),
                 float(student_t_quantile(0.975, np.inf)))
    half_width = t * np.sqrt(variance)
    foot_lat, foot_lon = destination(lat0[rows], lon0[rows], toward, offset)
    near_meridian = np.minimum(np.abs(wrap_180(zn)), np.abs(wrap_180(zn - 180.0))) <= MERIDIAN_AZIMUTH_DEG
    meridian = np.all(near_meridian | ~u, axis=1)
    along = wrap_axial(toward + 90.0)
    outlier, gross, detectable = _blunder_test(r, cosines * gain, u, dof, sigma)
    run_included = run_cov.any(axis=(1, 2))

    def result(j: int) -> FixResult:
        d = int(dof[j])
        source = (f"from the residuals, {d} redundant sight{_plural(d)}" if d >= 1
                  else f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight")
        side = "toward" if offset[j] >= 0 else "away from"
        what = "a latitude (the sights are on the meridian)" if meridian[j] else "a line of position"
        message = (f"not a fix: the lines of position cross at {spread0[rows[j]]:.0f}° at most (below "
                   f"{LINE_ONLY_DEG:.0f}°), so the sights give {what}, {abs(offset[j]):.1f} nm {side} "
                   f"{toward[j]:03.0f}° from the DR, good to ±{half_width[j]:.1f} nm (95 %); the position along "
                   "it is the DR's")
        quantile = "normal" if not np.isfinite(nu[j]) else (f"t({d})" if abs(nu[j] - d) < 0.05 else f"t({nu[j]:.1f})")
        return FixResult(
            utc=np.datetime64("NaT"), lat_deg=float(foot_lat[j]), lon_deg=float(foot_lon[j]),
            sigma_arcmin=float(sigma[j]), ellipse_semi_major_nm=float("inf"),
            ellipse_semi_minor_nm=float(half_width[j]), ellipse_orientation_deg=float(along[j]),
            residual_arcmin=residual[j], outlier=outlier[j], warnings=[message], used=u[j], n_sights=int(n[j]),
            covariance_nm2=np.array([[variance[j], 0.0], [0.0, np.inf]]), confidence_scale=float(t[j]),
            sigma_source=source, iterations=0, quantile=quantile, kind=FixKind.LATITUDE if meridian[j] else FixKind.LINE,
            spread_deg=float(spread0[rows[j]]), line_bearing_deg=float(along[j]), line_offset_nm=float(offset[j]),
            line_toward_deg=float(toward[j]), dr_error_included=bool(run_included[j]), redundant=d,
            blunder_note=_blunder_note(int(n[j]), d, float(detectable[j]), 1),
            detectable_blunder_arcmin=float(detectable[j]))

    return _Part(residual, outlier, gross, result)


def _noon_curve(result: FixResult, hours, ho, dec) -> None:
    """For a latitude: the noon-curve latitude too, when the series straddles meridian passage."""
    zn = np.radians(result.lop_zn_deg[result.used])
    bearing = "S" if np.cos(zn).sum() < 0 else "N"  # where the body bears on the meridian
    latitude = latitude_from_noon_curve(hours, ho, np.mean(dec), bearing)
    if latitude is not None:
        result.noon_curve_latitude_deg = latitude


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


__all__ = ["fix_from_sights", "fixes_from_sights", "GroupFixes", "FixResult", "ChartCheck", "solve_fixes", "error_ellipse", "sight_track", "at_sights",
           "run_error_covariance", "azimuth_spread_deg", "latitude_by_meridian_altitude", "latitude_by_polaris",
           "ex_meridian_latitude", "latitude_from_noon_curve"]
