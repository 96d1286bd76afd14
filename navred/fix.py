"""Position fixing: the least-squares fix, running fixes, the error ellipse, outliers, checks.

The fix is the position that minimises the weighted sum of squared altitude residuals
Ho − Hc, found by Gauss-Newton iteration on the sphere from the DR: at each step Hc and Zn
are recomputed from the full spherical formula at the current estimate, the residuals are
projected on the azimuths (∂Hc/∂north = cos Zn, ∂Hc/∂east = sin Zn, one arcminute per
nautical mile) and the position is moved until the step is below 0.01 nautical mile.
This is the published least-squares method for celestial fixes (G. H. Kaplan,
"Determining the position and motion of a vessel from celestial observations",
Navigation 42(4), 1995; citation recalled from memory). Because Hc is exact at every
step it stays right for high sights and for a DR far from the truth.

Sights taken at different times are referred to one fix time by the vessel's run: each
sight's position is the fix position moved back (or on) along the run between its time
and the fix time, so the lines of position are advanced or retired as circles. The run
is built from the course and speed in force after each sight, plus any current.

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
from .timescales import utc_jd_to_datetime64, utc_julian_date
from .triangle import computed_altitude_azimuth, distance_bearing

#: Assumed standard error of one sight when a fix has no redundancy (two sights), arcminutes:
#: a good sight at sea is good to about 1′ (common practice).
A_PRIORI_SIGMA_ARCMIN = 1.0
#: No fix is credited with sights better than this, arcminutes (common practice: 0.2′ is about
#: the best a marine sextant gives at sea).
SIGMA_FLOOR_ARCMIN = 0.2
OUTLIER_SIGMAS = 3.0
OUTLIER_ARCMIN_FEW_SIGHTS = 5.0
WEAK_CROSSING_DEG = 30.0
CONVERGED_NM = 0.01
MAX_ITERATIONS = 25
CONFIDENCE = 0.95


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
    """Position moved by a displacement in nautical miles north and east (mid-latitude sailing)."""
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


@dataclass
class CoreFixes:
    """The solution of a batch of fixes; arrays have shape (fixes,) or (fixes, sights)."""

    lat_deg: np.ndarray
    lon_deg: np.ndarray
    velocity_north_kn: np.ndarray
    velocity_east_kn: np.ndarray
    residual_arcmin: np.ndarray
    zn_deg: np.ndarray
    covariance_nm2: np.ndarray  # (fixes, k, k) from the normal equations, unit weight
    jacobian: np.ndarray  # (fixes, sights, k) at the solution
    n_sights: np.ndarray
    converged: np.ndarray
    iterations: int


def solve_fixes(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, lat0_deg: ArrayLike, lon0_deg: ArrayLike, *, run_north_nm: ArrayLike = 0.0, run_east_nm: ArrayLike = 0.0,
                dt_hours: ArrayLike = 0.0, weights: ArrayLike = 1.0, mask: ArrayLike | None = None, solve_motion: ArrayLike = False,
                velocity0_kn: ArrayLike = (0.0, 0.0)) -> CoreFixes:
    """Solve many independent fixes at once by Gauss-Newton on the sphere.

    Arrays of shape (fixes, sights): ``gha_deg``, ``dec_deg``, ``ho_deg`` of each sight,
    ``run_north_nm``/``run_east_nm`` the vessel's run from each sight's time to the fix
    time (known course and speed), ``dt_hours`` the sight's time minus the fix time,
    ``weights`` (1/σ² relative) and ``mask`` (True for sights to use). ``lat0_deg``,
    ``lon0_deg`` (fixes,) start the iteration (the DR at the fix time). With
    ``solve_motion`` the velocity made good (north, east knots) is solved as well, starting
    from ``velocity0_kn``; the known run is then ignored.
    """
    gha = np.atleast_2d(np.asarray(gha_deg, dtype=float))
    shape = gha.shape
    dec = np.broadcast_to(np.asarray(dec_deg, dtype=float), shape)
    ho = np.broadcast_to(np.asarray(ho_deg, dtype=float), shape)
    use = np.ones(shape, dtype=bool) if mask is None else np.broadcast_to(np.asarray(mask, dtype=bool), shape)
    use = use & np.isfinite(gha) & np.isfinite(dec) & np.isfinite(ho)
    w = np.where(use, np.broadcast_to(np.asarray(weights, dtype=float), shape), 0.0)
    run_n = np.broadcast_to(np.asarray(run_north_nm, dtype=float), shape)
    run_e = np.broadcast_to(np.asarray(run_east_nm, dtype=float), shape)
    dt = np.broadcast_to(np.asarray(dt_hours, dtype=float), shape)
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
    iterations = 0
    for _ in range(MAX_ITERATIONS):
        iterations += 1
        north = vn[:, None] * dt if solve_motion else -run_n
        east = ve[:, None] * dt if solve_motion else -run_e
        sight_lat, sight_lon = move_position(lat[:, None], lon[:, None], north, east)
        hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, safe_gha, safe_dec)
        residual_nm = (safe_ho - hc) * ARCMIN_PER_DEG
        z = np.radians(zn)
        columns = [np.cos(z), np.sin(z)]
        if solve_motion:
            columns += [np.cos(z) * dt, np.sin(z) * dt]
        jac = np.stack(columns, axis=-1) * use[..., None]  # (F, S, k)
        normal = np.einsum("fs,fsi,fsj->fij", w, jac, jac)
        rhs = np.einsum("fs,fsi,fs->fi", w, jac, residual_nm)
        determinant = np.linalg.det(normal)
        singular = ~(np.abs(determinant) > 1e-12 * np.max(np.abs(normal), axis=(1, 2)) ** k)
        if singular.any():
            raise NavredError(
                f"the lines of position are parallel (all azimuths alike or opposite): no fix "
                f"in {failed_elements(singular)}")
        step = np.linalg.solve(normal, rhs[..., None])[..., 0]
        lat, lon = move_position(lat, lon, step[:, 0], step[:, 1])
        if solve_motion:
            vn, ve = vn + step[:, 2], ve + step[:, 3]
        size = np.hypot(step[:, 0], step[:, 1])
        converged = size < CONVERGED_NM
        if converged.all():
            break
    north = vn[:, None] * dt if solve_motion else -run_n
    east = ve[:, None] * dt if solve_motion else -run_e
    sight_lat, sight_lon = move_position(lat[:, None], lon[:, None], north, east)
    hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, safe_gha, safe_dec)
    residual = np.where(use, (safe_ho - hc) * ARCMIN_PER_DEG, np.nan)
    z = np.radians(zn)
    columns = [np.cos(z), np.sin(z)] + ([np.cos(z) * dt, np.sin(z) * dt] if solve_motion else [])
    jac = np.stack(columns, axis=-1) * use[..., None]
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


def _azimuth_spread_deg(zn_deg: np.ndarray) -> float:
    """The widest angle between the lines of position (azimuths taken modulo 180°)."""
    directions = np.sort(np.mod(zn_deg[np.isfinite(zn_deg)], 180.0))
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
    """A fix, how good it is, and which sight was bad. One residual and flag per input row."""

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

    @property
    def residual_nm(self) -> np.ndarray:
        """Residuals in nautical miles (one arcminute of altitude is one nautical mile)."""
        return self.residual_arcmin.copy()

    @property
    def standard_error_nm(self) -> float:
        """Root of the trace of the position covariance: the fix's standard error, nm."""
        return float(np.sqrt(np.trace(self.covariance_nm2)))

    def cross_check(self, lat_deg: float, lon_deg: float) -> ChartCheck:
        """Distance and bearing from the fix to a chart or GNSS position, and whether it is inside the ellipse."""
        distance, bearing = distance_bearing(self.lat_deg, self.lon_deg, lat_deg, lon_deg)
        b = np.radians(float(bearing))
        offset = float(distance) * np.array([np.cos(b), np.sin(b)])
        inside = float(offset @ np.linalg.solve(self.covariance_nm2, offset)) <= self.confidence_scale**2
        return ChartCheck(float(lat_deg), float(lon_deg), float(distance), float(bearing), bool(inside))


def _utc64(values) -> np.ndarray:
    """UTC instants as datetime64[ns] (numpy datetime64 is UTC; other forms through the time scales)."""
    if isinstance(values, np.ndarray) and np.issubdtype(values.dtype, np.datetime64):
        return values.astype("datetime64[ns]")
    return utc_jd_to_datetime64(*utc_julian_date(values))


def _times_hours(utc64, at_utc):
    """Sight times as hours from the fix time.

    Differences of UTC instants: a leap second inside the run (1 s, 0.003 nm at 10 knots) is
    neglected.
    """
    fix64 = _utc64(np.atleast_1d(at_utc) if not isinstance(at_utc, np.datetime64) else np.array([at_utc]))
    hours = (utc64 - fix64[0]).astype("timedelta64[ns]").astype(np.int64) / 3.6e12
    return hours, fix64[0]


def fix_from_sights(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, utc: ArrayLike,
                    dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike, *, usable: ArrayLike | None = None,
                    course_deg: ArrayLike | None = None, speed_kn: ArrayLike | None = None,
                    at_utc: object | None = None, chart_lat: float | None = None, chart_lon: float | None = None,
                    solve_motion: bool = False, set_deg: float | None = None, drift_kn: float | None = None,
                    labels: ArrayLike | None = None, _refit_without_outliers: bool = True) -> FixResult:
    """The least-squares fix from reduced sights, one element per sight (1-D arrays).

    ``gha_deg``, ``dec_deg`` and ``ho_deg`` of each sight, its ``utc`` (datetime64, taken as
    UTC, or any instant form) and the DR at its time; ``usable`` (default: every sight with
    finite values) picks the sights to fix from, the others get NaN residuals. Sights at
    different times make a running fix at ``at_utc`` (default: the last sight's time), using
    ``course_deg`` and ``speed_kn`` (per sight: course and speed in force from each sight until
    the next; NaN as 0), plus a current ``set_deg``/``drift_kn``. With ``solve_motion`` the
    course and speed made good are solved as well when the sights support it. A chart or GNSS
    position (``chart_lat``/``chart_lon``) is cross-checked. ``labels`` name the sights in
    messages (default: 1, 2, ...).
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
    run_n, run_e = _runs(vn, ve, order, hours)
    dr_lat = np.broadcast_to(np.asarray(dr_lat_deg, dtype=float), (n_rows,))[rows]
    dr_lon = np.broadcast_to(np.asarray(dr_lon_deg, dtype=float), (n_rows,))[rows]
    last = order[-1]
    # the DR at the fix time: the last sight's DR carried on by its run to the fix time
    lat0, lon0 = move_position(dr_lat[last], dr_lon[last], run_n[last], run_e[last])
    result = _fix_from_arrays(gha[rows], dec[rows], ho[rows], hours, run_n, run_e, lat0, lon0, solve_motion,
                              (float(vn.mean()), float(ve.mean())))
    result = _expand(result, rows, n_rows, fix_time)
    # the lines of position for a plotting sheet: each sight reduced from the DR carried to its
    # time, so that moving the line by the run brings it to the DR at the fix time
    sight_lat, sight_lon = move_position(lat0, lon0, -run_n, -run_e)
    hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, gha[rows], dec[rows])
    result.dr_lat_deg, result.dr_lon_deg = float(lat0), float(lon0)
    result.lop_intercept_nm = np.full(n_rows, np.nan)
    result.lop_zn_deg = np.full(n_rows, np.nan)
    result.lop_intercept_nm[rows] = (ho[rows] - hc) * ARCMIN_PER_DEG
    result.lop_zn_deg[rows] = zn
    if _refit_without_outliers and result.outlier.any() and result.used.sum() - result.outlier.sum() >= 2:
        keep = ok & ~result.outlier
        # one refit only: the check fix does not hunt for further blunders in its turn
        sub = fix_from_sights(gha, dec, ho, np.asarray(all_utc64), dr_lat_deg, dr_lon_deg, usable=keep, course_deg=course_deg, speed_kn=speed_kn,
                              at_utc=at, solve_motion=solve_motion, set_deg=set_deg, drift_kn=drift_kn,
                              labels=names, _refit_without_outliers=False)
        flagged = ", ".join(names[result.outlier])
        moved, _ = distance_bearing(result.lat_deg, result.lon_deg, sub.lat_deg, sub.lon_deg)
        result.warnings.append(f"sight{'s' if result.outlier.sum() > 1 else ''} {flagged} look"
                               f"{'' if result.outlier.sum() > 1 else 's'} like "
                               f"{'blunders' if result.outlier.sum() > 1 else 'a blunder'}; without "
                               f"{'them' if result.outlier.sum() > 1 else 'it'} the fix moves "
                               f"{float(moved):.1f} nm (see without_outliers)")
        result.without_outliers = sub
    if chart_lat is not None and chart_lon is not None:
        check = result.cross_check(chart_lat, chart_lon)
        result.chart_distance_nm, result.chart_bearing_deg = check.distance_nm, check.bearing_deg
        result.chart_inside_ellipse = check.inside_ellipse
    return result


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


def _runs(vn, ve, order, hours):
    """The vessel's run (north, east nm) from each sight's time to the fix time.

    Legs between consecutive sights (in time order) are run at the velocity in force
    after the earlier sight; the last leg runs from the last sight to the fix time.
    """
    t = hours[order]
    leg = np.diff(np.append(t, 0.0))
    tail_n = np.cumsum((vn[order] * leg)[::-1])[::-1]
    tail_e = np.cumsum((ve[order] * leg)[::-1])[::-1]
    run_n, run_e = np.empty(hours.size), np.empty(hours.size)
    run_n[order], run_e[order] = tail_n, tail_e
    return run_n, run_e


def _fix_from_arrays(gha, dec, ho, hours, run_n, run_e, lat0, lon0, solve_motion, velocity0) -> FixResult:
    warnings_: list[str] = []
    n = gha.size
    motion = solve_motion
    if solve_motion:
        problem = _motion_unsupported(gha, dec, ho, hours, lat0, lon0)
        if problem:
            warnings_.append(f"course and speed made good cannot be solved: {problem}; the known run is used")
            motion = False
    core = solve_fixes(gha[None], dec[None], ho[None], lat0, lon0, run_north_nm=run_n[None],
                       run_east_nm=run_e[None], dt_hours=hours[None], solve_motion=motion, velocity0_kn=velocity0)
    k = 4 if motion else 2
    residual = core.residual_arcmin[0]
    dof = n - k
    covariance = core.covariance_nm2[0]
    if dof >= 1:
        sigma_hat = float(np.sqrt(np.nansum(residual**2) / dof))
        sigma = max(sigma_hat, SIGMA_FLOOR_ARCMIN)
        scale = float(np.sqrt(2.0 * f_2_quantile(CONFIDENCE, dof)))
        source = f"from the residuals, {dof} redundant sight{'s' if dof > 1 else ''}"
        if sigma_hat < SIGMA_FLOOR_ARCMIN:
            source += f", held at the floor of {SIGMA_FLOOR_ARCMIN}′"
    else:
        sigma = A_PRIORI_SIGMA_ARCMIN
        scale = float(np.sqrt(chi_square_2_quantile(CONFIDENCE)))
        source = f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight, no redundancy"
        warnings_.append(f"{n} sights and {k} unknowns: no redundancy, so the ellipse rests on an assumed "
                         f"{A_PRIORI_SIGMA_ARCMIN}′ per sight and there is no check on a blunder")
    position_cov = covariance[:2, :2] * sigma**2
    major, minor, orientation = error_ellipse(position_cov, scale)
    spread = _azimuth_spread_deg(core.zn_deg[0])
    if spread < WEAK_CROSSING_DEG:
        warnings_.append(f"weak fix: the lines of position cross at {spread:.0f}° at most "
                         f"(azimuths alike or opposite); below {WEAK_CROSSING_DEG:.0f}° the fix is poorly defined")
    outlier = _outliers(residual, core.jacobian[0], covariance, dof)
    if not core.converged[0]:
        warnings_.append(f"the iteration did not settle to {CONVERGED_NM} nm in {MAX_ITERATIONS} steps")
    result = FixResult(
        utc=np.datetime64("NaT"), lat_deg=float(core.lat_deg[0]), lon_deg=float(core.lon_deg[0]),
        sigma_arcmin=sigma, ellipse_semi_major_nm=float(major), ellipse_semi_minor_nm=float(minor),
        ellipse_orientation_deg=float(orientation), residual_arcmin=residual, outlier=outlier,
        warnings=warnings_, used=np.ones(n, dtype=bool), n_sights=n, covariance_nm2=position_cov,
        confidence_scale=scale, sigma_source=source, iterations=core.iterations)
    if motion:
        vn, ve = float(core.velocity_north_kn[0]), float(core.velocity_east_kn[0])
        result.course_made_good_deg = float(wrap_360(np.degrees(np.arctan2(ve, vn))))
        result.speed_made_good_kn = float(np.hypot(vn, ve))
        speed_sigma = float(np.sqrt(np.trace(covariance[2:, 2:]) * sigma**2))
        if speed_sigma > 2.0:
            warnings_.append(f"course and speed made good are poorly determined (±{speed_sigma:.1f} kn)")
    return result


def _motion_unsupported(gha, dec, ho, hours, lat0, lon0) -> str:
    if gha.size < 5:
        return f"{gha.size} sights (at least 5 are needed for position, course, speed and a check)"
    span = float(hours.max() - hours.min())
    if span < 1.0:
        return f"the sights span {span * 60:.0f} minutes (at least an hour is needed)"
    _, zn = computed_altitude_azimuth(lat0, lon0, gha, dec)
    if _azimuth_spread_deg(np.asarray(zn)) < WEAK_CROSSING_DEG:
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
    latitude = Ho + (90° − |Dec|), toward the same pole as the declination. (Every navigation
    manual; common practice.) Vectorised; ``body_bearing`` is 'N' or 'S'.

    >>> float(latitude_by_meridian_altitude(50.0, 10.0, "S"))
    50.0
    """
    ho = np.asarray(ho_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    bearing = np.char.upper(np.char.strip(np.asarray(body_bearing, dtype=str)))
    if not np.all(np.isin(bearing, ["N", "S"])):
        raise NavredError("body_bearing must be 'N' (body north of you) or 'S' (south)")
    zenith = 90.0 - ho
    upper = np.where(bearing == "S", dec + zenith, dec - zenith)
    lower = np.sign(dec) * (ho + 90.0 - np.abs(dec))
    latitude = np.where(lower_transit, lower, upper)
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


__all__ = ["fix_from_sights", "FixResult", "ChartCheck", "solve_fixes", "error_ellipse",
           "latitude_by_meridian_altitude", "latitude_by_polaris"]
