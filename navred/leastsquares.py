"""The least-squares fix on the sphere: many independent fixes solved at once by Gauss-Newton.

The fix is the position that minimises the sum of squared altitude residuals Ho − Hc, found
by Gauss-Newton iteration on the sphere from the DR: at each step Hc and Zn are recomputed
from the full spherical formula at the current estimate, the residuals are projected on the
azimuths (∂Hc/∂north = cos Zn, ∂Hc/∂east = sin Zn, one arcminute per nautical mile) and the
position is moved until the step is below 0.01 nautical mile. This is the published
least-squares method for celestial fixes (G. H. Kaplan, "Determining the position and motion
of a vessel from celestial observations", Navigation 42(4), 1995; citation recalled from
memory). Because Hc is exact at every step it stays right for high sights and for a DR far
from the truth.

Sights taken at different times are referred to one fix time by the vessel's run: each sight's
position is the fix position carried back (or on) along its DR track (:func:`sight_track`, a
:class:`navred.reckoning.DRTrack`), leg by leg, each leg the rhumb line steered at the course and
speed in force after the sight that begins it (plus any current), on the WGS 84 ellipsoid.

The solver works on arrays of shape (fixes, sights), so a fleet's archive of independent fixes
is solved at once (no Python loop over fixes or sights).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_180
from .constants import ARCMIN_PER_DEG, NS_PER_HOUR
from .errors import NavredError, failed_elements
from .reckoning import DRTrack
from .triangle import computed_altitude_azimuth

CONVERGED_NM = 0.01


MAX_ITERATIONS = 25


def broadcast(values: ArrayLike, shape: tuple[int, ...], dtype=float) -> np.ndarray:
    """``np.broadcast_to(np.asarray(values, dtype), shape)`` (read only), without its cost when the values have that
    shape already (a small fix's arrays mostly do)."""
    values = np.asarray(values, dtype=dtype)
    return values if values.shape == shape else np.broadcast_to(values, shape)


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
    size = np.hypot(north, east)
    d = np.radians(size / ARCMIN_PER_DEG)
    cos_d, sin_d = np.cos(d), np.sin(d)
    moving = size > 0
    # p, the north axis N, the east axis E and the unit direction u = (north N + east E)/size, component by
    # component (x, y, z), and q = p cos d + u sin d
    minus_sin_phi = -sin_phi
    with np.errstate(invalid="ignore", divide="ignore"):
        ux = np.where(moving, (north * (minus_sin_phi * cos_lam) + east * -sin_lam) / size, 0.0)
        uy = np.where(moving, (north * (minus_sin_phi * sin_lam) + east * cos_lam) / size, 0.0)
        uz = np.where(moving, (north * cos_phi + east * 0.0) / size, 0.0)
    qx = cos_phi * cos_lam * cos_d + ux * sin_d
    qy = cos_phi * sin_lam * cos_d + uy * sin_d
    qz = sin_phi * cos_d + uz * sin_d
    lat = np.degrees(np.arctan2(qz, np.hypot(qx, qy)))
    lon = np.where(moving, np.degrees(np.arctan2(qy, qx)), np.asarray(lon_deg, dtype=float))
    return lat, wrap_180(lon)


def sight_track(dt_hours: ArrayLike, north_kn: ArrayLike, east_kn: ArrayLike) -> DRTrack:
    """The DR track of a batch of fixes (:class:`navred.reckoning.DRTrack`): arrays (fixes, sights) of each
    sight's time from the fix (hours) and the velocity over the ground in force after it. Its knots are the
    sights, then the fix time (a last knot, which keeps the velocity in force); between two of them the vessel
    sails the rhumb line of the velocity in force after the earlier one (before the first sight, the first
    sight's)."""
    dt = np.asarray(dt_hours, dtype=float)
    north, east = broadcast(north_kn, dt.shape), broadcast(east_kn, dt.shape)
    return sight_track_ns(np.rint(dt * NS_PER_HOUR).astype(np.int64), north, east)


def sight_track_ns(offset_ns: np.ndarray, north_kn: np.ndarray, east_kn: np.ndarray) -> DRTrack:
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


def run_to_fix_nm(track: DRTrack) -> np.ndarray:
    """Miles run between each sight of a :func:`sight_track` and the fix time (fixes, sights)."""
    return track.run_to_last_nm[..., :-1]


def sight_hours(track: DRTrack) -> np.ndarray:
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
                track: DRTrack | None = None, report: ArrayLike | None = None,
                start: tuple[np.ndarray, np.ndarray] | None = None) -> CoreFixes:
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

    ``start``: Hc and Zn (fixes, sights) at the starting positions along ``track``, when the caller has worked
    them already (the first step takes them rather than working the triangle again; the same numbers).
    """
    batch = _read_batch(gha_deg, dec_deg, ho_deg, lat0_deg, lon0_deg, dt_hours, velocity_north_kn, velocity_east_kn,
                        weights, mask, solve_motion, velocity0_kn, track, report)
    batch.start = None if solve_motion else start
    converged, singular, iterations_each, iterations = _iterate(batch, mark_singular)
    hc, zn, jac = batch.linearised()
    residual = np.where(batch.shown, (batch.ho - hc) * ARCMIN_PER_DEG, np.nan)
    normal = np.einsum("fs,fsi,fsj->fij", batch.w, jac, jac)
    covariance = np.linalg.inv(np.where(singular[:, None, None], np.eye(batch.k), normal))
    covariance[singular] = np.nan
    fixes = batch.lat.size
    return CoreFixes(batch.lat, batch.lon, batch.vn if solve_motion else np.full(fixes, np.nan),
                     batch.ve if solve_motion else np.full(fixes, np.nan), residual,
                     np.where(batch.shown, zn, np.nan), covariance, jac, batch.use.sum(axis=1), converged, iterations,
                     iterations_each, singular)


@dataclass
class _Batch:
    """The inputs of :func:`solve_fixes` read once (NaN sights set to 0 and unused), and the estimates it moves:
    the position (and with ``solve_motion`` the velocity made good) of each fix."""

    gha: np.ndarray
    dec: np.ndarray
    ho: np.ndarray
    use: np.ndarray
    shown: np.ndarray
    w: np.ndarray
    dt: np.ndarray
    track: DRTrack
    solve_motion: bool
    lat: np.ndarray
    lon: np.ndarray
    vn: np.ndarray
    ve: np.ndarray
    #: Hc and Zn at the starting positions, for the first step only (then None)
    start: tuple[np.ndarray, np.ndarray] | None = None

    @property
    def k(self) -> int:
        """The unknowns: position, or position and velocity."""
        return 4 if self.solve_motion else 2

    def linearised(self, rows=None):
        """Hc, Zn and the Jacobian (F, S, k) of the fixes ``rows`` (all when None) at their estimates."""
        pick = slice(None) if rows is None else rows
        dt = self.dt[pick]
        if self.solve_motion:
            track = sight_track(dt, np.broadcast_to(self.vn[pick, None], dt.shape),
                                np.broadcast_to(self.ve[pick, None], dt.shape))
        else:
            track = self.track if rows is None else self.track.take(rows)  # legs worked out once
        if rows is None and self.start is not None:  # at the start, worked by the caller
            (hc, zn), self.start = self.start, None
        else:
            sight_lat, sight_lon = at_sights(track, self.lat[pick], self.lon[pick])
            hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, self.gha[pick], self.dec[pick])
        z = np.radians(zn)
        cos_z, sin_z = np.cos(z), np.sin(z)
        columns = [cos_z, sin_z] + ([cos_z * dt, sin_z * dt] if self.solve_motion else [])
        jac = np.empty(z.shape + (len(columns),))  # (F, S, k), the unused sights' rows nil
        use = self.use[pick]
        for j, column in enumerate(columns):
            np.multiply(column, use, out=jac[..., j])
        return hc, zn, jac


def _read_batch(gha_deg, dec_deg, ho_deg, lat0_deg, lon0_deg, dt_hours, velocity_north_kn, velocity_east_kn,
                weights, mask, solve_motion, velocity0_kn, track, report) -> _Batch:
    """:func:`solve_fixes`'s inputs broadcast to (fixes, sights) and checked."""
    gha = np.atleast_2d(np.asarray(gha_deg, dtype=float))
    shape = gha.shape
    dec = broadcast(dec_deg, shape)
    ho = broadcast(ho_deg, shape)
    use = np.ones(shape, dtype=bool) if mask is None else broadcast(mask, shape, bool)
    finite = np.isfinite(gha) & np.isfinite(dec) & np.isfinite(ho)
    use = use & finite
    shown = use if report is None else broadcast(report, shape, bool) & finite
    n_used = use.sum(axis=1)
    if np.any(n_used < 2):
        raise NavredError(f"a fix needs two or more usable sights; too few in {failed_elements(n_used < 2)}")
    # a sight left out takes the time and velocity of its fix's earliest sight: it then adds only a
    # leg of no length to the track, wherever the fix time lies
    dt_all = broadcast(dt_hours, shape)
    earliest = (np.arange(shape[0]), np.argmin(np.where(use, dt_all, np.inf), axis=1))

    def as_earliest(values):
        values = broadcast(values, shape)
        return np.where(use, values, values[earliest][:, None])

    dt, given_n, given_e = (as_earliest(v) for v in (dt_hours, velocity_north_kn, velocity_east_kn))

    def per_fix(values):
        return np.array(broadcast(values, shape[:1]), dtype=float)

    return _Batch(np.where(finite, gha, 0.0), np.where(finite, dec, 0.0), np.where(finite, ho, 0.0), use, shown,
                  np.where(use, broadcast(weights, shape), 0.0), dt,
                  sight_track(dt, given_n, given_e) if track is None else track, solve_motion,
                  per_fix(lat0_deg), per_fix(lon0_deg), per_fix(velocity0_kn[0]), per_fix(velocity0_kn[1]))


def _iterate(batch: _Batch, mark_singular: bool):
    """Gauss-Newton steps until each fix settles (a step below CONVERGED_NM) or MAX_ITERATIONS: only the fixes
    still moving are worked again, so each fix of a batch gets the steps it would get alone. Returns
    (converged, singular, the steps of each fix, the steps of the batch)."""
    fixes = batch.lat.size
    converged = np.zeros(fixes, dtype=bool)
    singular = np.zeros(fixes, dtype=bool)
    iterations_each = np.zeros(fixes, dtype=int)
    identity = np.eye(batch.k)
    active = np.arange(fixes)
    iterations = 0
    for _ in range(MAX_ITERATIONS):
        iterations += 1
        # while every fix is still moving (a fix alone, until it settles), its arrays are taken whole
        every = active.size == fixes
        pick = slice(None) if every else active
        hc, _, jac = batch.linearised(None if every else active)
        weight = batch.w[pick]
        residual_nm = (batch.ho[pick] - hc) * ARCMIN_PER_DEG
        normal = np.einsum("fs,fsi,fsj->fij", weight, jac, jac)
        rhs = np.einsum("fs,fsi,fs->fi", weight, jac, residual_nm)
        determinant = np.linalg.det(normal)
        parallel = ~(np.abs(determinant) > 1e-12 * np.max(np.abs(normal), axis=(1, 2)) ** batch.k)
        any_parallel = bool(parallel.any())
        if any_parallel:
            singular[active[parallel]] = True
            if not mark_singular:
                raise NavredError(
                    f"the lines of position are parallel (all azimuths alike or opposite): no fix "
                    f"in {failed_elements(singular)}")
            # a fix that has settled (or is singular) takes no further step
            step = np.linalg.solve(np.where(parallel[:, None, None], identity, normal), rhs[..., None])[..., 0]
            step = np.where(parallel[:, None], 0.0, step)
        else:
            step = np.linalg.solve(normal, rhs[..., None])[..., 0]
        size = np.hypot(step[:, 0], step[:, 1])
        batch.lat[pick], batch.lon[pick] = step_on_sphere(batch.lat[pick], batch.lon[pick], step[:, 0], step[:, 1])
        if batch.solve_motion:
            batch.vn[pick], batch.ve[pick] = batch.vn[pick] + step[:, 2], batch.ve[pick] + step[:, 3]
        iterations_each[pick] += ~parallel
        settled = ~parallel & (size < CONVERGED_NM)
        converged[active[settled]] = True
        active = active[~settled & ~parallel]
        if active.size == 0:
            break
    return converged, singular, iterations_each, iterations

__all__ = ["CONVERGED_NM", "MAX_ITERATIONS", "broadcast", "step_on_sphere", "sight_track", "sight_track_ns", "at_sights",
           "run_to_fix_nm", "sight_hours", "CoreFixes", "solve_fixes"]
