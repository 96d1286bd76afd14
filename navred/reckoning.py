"""Dead reckoning between fixes: the DR track, estimated positions, set and drift, noon and the day's run.

The DR is entered once, as a departure or a fix, and carried through each change of course and
speed along the rhumb line on the WGS 84 ellipsoid (:mod:`navred.sailings`). Every known position
(the departure, each fix) restarts it. A current (set and drift) may be in force with the course
and speed; over the ground the ship then makes good the sum of the two velocities, steered as one
rhumb line for the leg (common practice: the current triangle).

The track is kept as *knots*: every instant at which the course, the speed or the current changes
or a known position is given. Between knots the velocity over the ground is constant, so the
position at a knot is the previous knot's carried along one rhumb line, and every knot of a
track, through every restart, is one segmented cumulative sum (no loop over legs, positions or
fixes). A position at any instant is its knot's carried on for the rest of the time.

Core code: numpy only; instants are int64 nanoseconds of UTC (datetime64[ns] viewed as int64).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_180, wrap_360
from .constants import METRES_PER_NM, NS_PER_HOUR
from .errors import NavredError
from .sailings import (
    RhumbLegs,
    latitude_from_meridian_arc_deg,
    longitude_change_rad,
    meridian_arc_m,
    rhumb_destination,
    rhumb_inverse,
    rhumb_track_through,
)
from .stats import normal_quantile
from .triangle import destination

#: The meridian arc from the equator to a pole (m): a rhumb line that would run farther north or south ends at
#: the pole (it spirals into it), so a DR carried beyond it has no position and is refused, never clamped.
POLE_ARC_M = float(meridian_arc_m(90.0))
#: What a DR carried past a pole is told (with where it was carried from).
PAST_POLE = ("the DR would be carried past the pole (a rhumb line ends there): give the DR, or a fix or known "
             "position nearer this sight")
#: Two-sided 95 % point of the normal distribution (set and drift intervals).
NORMAL_975 = float(normal_quantile(0.975))


class ReckoningError(NavredError):
    """A DR that cannot be kept: no known position before an instant, or a bad leg."""


def velocity_kn(course_deg: ArrayLike, speed_kn: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """North and east components (knots) of a course and speed."""
    c = np.radians(np.asarray(course_deg, dtype=float))
    s = np.asarray(speed_kn, dtype=float)
    return s * np.cos(c), s * np.sin(c)


def leeway_track_deg(heading_deg: ArrayLike, leeway_deg: ArrayLike) -> np.ndarray:
    """The course through the water (degrees true) of a ship heading ``heading_deg`` and set to leeward by
    ``leeway_deg`` (+ to starboard, − to port: away from the side the wind blows on; common practice).

    >>> float(leeway_track_deg(231.0, -5.0))
    226.0
    """
    return wrap_360(np.asarray(heading_deg, dtype=float) + np.asarray(leeway_deg, dtype=float))


def course_speed(north_kn: ArrayLike, east_kn: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Course (degrees true) and speed (knots) of a velocity's north and east components."""
    n, e = np.asarray(north_kn, dtype=float), np.asarray(east_kn, dtype=float)
    return wrap_360(np.degrees(np.arctan2(e, n))), np.hypot(n, e)


@dataclass(frozen=True, eq=False)
class DRTrack:
    """A DR track, the one representation of the ship's run for the fix, the plan and the day's work.

    ``knot_ns`` (int64 ns UTC): the knots, every instant at which the velocity over the ground changes
    or a position is known; ``north_kn``/``east_kn``: the velocity over the ground from each knot to the
    next (the last runs on without end). A velocity of NaN keeps the one in force before it (before any,
    the first given after it). Knots need not be in time order; a track may be a batch, its knots
    along the last axis (a running fix's sights and its fix time, for every fix of a batch at once).

    Positions come two ways:

    - from the track's own known positions (``known_ns``, ``known_lat``, ``known_lon``, each at a knot:
      the departure, each fix), each restarting the DR: :meth:`positions` at any instants, for a single
      track (:func:`dr_track` builds one from a log's changes, :func:`steady_track` one of a single course
      and speed). Before its first known position a track has no DR, unless ``carry_back`` (a plan's track,
      carried back along its first velocity). ``known_label`` and ``known_cov_nm2`` name each known
      position and give its covariance (north-east nm², zero for a position entered); ``through_water``
      is the same DR without any current, against which the current is found;
    - through a position given at one knot, for a batch: :meth:`through` (the running fix carries its
      trial position back to each sight), :meth:`run_nm`.
    """

    knot_ns: np.ndarray
    north_kn: np.ndarray
    east_kn: np.ndarray
    known_ns: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=np.int64))
    known_lat: np.ndarray = field(default_factory=lambda: np.zeros(0))
    known_lon: np.ndarray = field(default_factory=lambda: np.zeros(0))
    known_label: tuple[str, ...] = ()
    known_cov_nm2: np.ndarray | None = None
    carry_back: bool = False
    through_water: DRTrack | None = None

    # --- positions from the track's own known positions (a single track) -------------------------------

    @functools.cached_property
    def _anchored(self) -> dict[str, np.ndarray]:
        """The position at every knot, carried from the known positions (see :func:`_carried_from_known`)."""
        return _carried_from_known(self.knot_ns, self.north_kn, self.east_kn, self.known_ns, self.known_lat,
                                   self.known_lon)

    @property
    def restart(self) -> np.ndarray:
        """True at each knot where a known position restarts the DR."""
        return self._anchored["restart"]

    @property
    def origin(self) -> np.ndarray:
        """The knot of the known position each knot is carried from (-1 before the first)."""
        return self._anchored["origin"]

    def positions(self, utc_ns: ArrayLike, *, before_restart: bool = False) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The DR (latitude, longitude, degrees) at the instants, and the knot of the known position it was
        carried from (-1 where there is none yet: NaN positions). ``before_restart``: at the very instant of a
        known position, give the DR carried up to it rather than the position itself (to compare a fix
        with the DR it restarts). A DR that would be carried past a pole has no position: NaN with its origin
        (see :meth:`past_pole`)."""
        a = self._anchored
        when = np.asarray(utc_ns, dtype=np.int64)
        k = np.searchsorted(self.knot_ns, when, side="right") - 1
        valid = (k >= 0) | self.carry_back
        kk = np.maximum(k, 0)
        at_knot = (k >= 0) & (self.knot_ns[kk] == when)
        use_arrival = at_knot & before_restart & a["restart"][kk]
        hours = np.where(valid, (when - self.knot_ns[kk]) / NS_PER_HOUR, 0.0)
        course, speed = course_speed(self.north_kn[kk], self.east_kn[kk])
        lat, lon = rhumb_destination(a["depart_lat"][kk], a["depart_lon"][kk], course, speed * hours)
        with np.errstate(invalid="ignore"):
            past_pole = np.abs(meridian_arc_m(np.nan_to_num(a["depart_lat"][kk]))
                               + self.north_kn[kk] * hours * METRES_PER_NM) > POLE_ARC_M
        lat = np.where(past_pole, np.nan, lat)
        lon = np.where(past_pole, np.nan, lon)
        lat = np.where(use_arrival, a["arrive_lat"][kk], lat)
        lon = np.where(use_arrival, a["arrive_lon"][kk], lon)
        origin = np.where(use_arrival, a["origin"][np.maximum(kk - 1, 0)], a["origin"][kk])
        origin = np.where(valid & (kk - use_arrival >= 0), origin, -1)
        lat = np.where(origin >= 0, lat, np.nan)
        lon = np.where(origin >= 0, lon, np.nan)
        return lat, lon, origin

    def position(self, utc: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
        """The DR (latitude, longitude, degrees) at instants given as datetime64 (the planner's form)."""
        lat, lon, _ = self.positions(np.asarray(utc, dtype="datetime64[ns]").astype(np.int64))
        return lat, lon

    def past_pole(self, utc_ns: ArrayLike, **kwargs) -> np.ndarray:
        """Where the DR at the instants would be carried past a pole (it has a known position to come from, but
        no position): the rhumb line it sails ends at the pole."""
        lat, _, origin = self.positions(utc_ns, **kwargs)
        return (origin >= 0) & ~np.isfinite(lat)

    def known_index(self, knot: int) -> int:
        """The known position (its index) that restarts the track at a knot."""
        return int(np.searchsorted(self.known_ns, self.knot_ns[int(knot)]))

    # --- positions through one given at a knot (a batch) --------------------------------------------------

    @functools.cached_property
    def _legs(self):
        """The legs between consecutive knots in time order (worked out once): the order of the knots, the
        northing, course and length of each leg."""
        order = np.argsort(self.knot_ns, axis=-1, kind="stable")
        times = _along(self.knot_ns, order)
        given = np.isfinite(self.north_kn) & np.isfinite(self.east_kn)
        valid = _along(given, order)
        north = _fill_forward(_along(np.where(given, self.north_kn, 0.0), order), valid)
        east = _fill_forward(_along(np.where(given, self.east_kn, 0.0), order), valid)
        hours = np.diff(times, axis=-1) / NS_PER_HOUR
        leg_north, leg_east = north[..., :-1] * hours, east[..., :-1] * hours
        return order, leg_north, np.degrees(np.arctan2(leg_east, leg_north)), np.hypot(leg_north, leg_east)

    @functools.cached_property
    def _still(self) -> np.ndarray:
        """Each track of no run at all (worked out once)."""
        return ~self._legs[3].any(axis=-1)

    @functools.cached_property
    def _back(self) -> np.ndarray:
        """Where each knot stands in time order: undoes the legs' ordering."""
        return np.argsort(self._legs[0], axis=-1, kind="stable")

    @functools.cached_property
    def _rhumb(self) -> RhumbLegs:
        """The legs' rhumb lines, what depends on the legs alone worked once (a fix sails them from each step)."""
        _, north, course, distance = self._legs
        return RhumbLegs(north, course, distance)

    @functools.cached_property
    def _in_time_order(self) -> bool:
        """Whether every track's knots are in time order already (worked out once)."""
        return bool((self._legs[0] == np.arange(self.knot_ns.shape[-1])).all())

    def through(self, lat_deg: ArrayLike, lon_deg: ArrayLike, at: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
        """The position at every knot (..., K), in the knots' own order, when the ship is at (lat, lon) (...,) at
        knot ``at`` (...,): the track of rhumb lines on the WGS 84 ellipsoid sailed on and back from there."""
        at = np.asarray(at, dtype=np.intp)
        lat, lon = np.asarray(lat_deg, dtype=float), np.asarray(lon_deg, dtype=float)
        if lat.shape != at.shape or lon.shape != at.shape:
            lat, lon = np.broadcast_to(lat, at.shape), np.broadcast_to(lon, at.shape)
        still = self._still
        if still.all():  # no run (knots at one instant, or no velocity): every knot is where the ship is
            lat_all, lon_all = np.empty(self.knot_ns.shape), np.empty(self.knot_ns.shape)
            lat_all[...], lon_all[...] = lat[..., None], lon[..., None]
            return lat_all, lon_all
        if self._in_time_order:  # the knots in time order already (a fix's sights): no reordering
            lat_all, lon_all = self._rhumb.through(lat, lon, at)
        elif at.ndim == 1:  # a batch of tracks (rows, knots): plain indexing, the same elements
            rows = np.arange(at.size)
            lat_all, lon_all = self._rhumb.through(lat, lon, self._back[rows, at])
            lat_all, lon_all = lat_all[rows[:, None], self._back], lon_all[rows[:, None], self._back]
        else:
            at_time = np.take_along_axis(self._back, at[..., None], axis=-1)[..., 0]
            lat_all, lon_all = self._rhumb.through(lat, lon, at_time)
            lat_all = np.take_along_axis(lat_all, self._back, axis=-1)
            lon_all = np.take_along_axis(lon_all, self._back, axis=-1)
        if still.any():  # a track of no run among others that run: where the ship is, as it is when alone
            lat_all = np.where(still[..., None], lat[..., None], lat_all)
            lon_all = np.where(still[..., None], lon[..., None], lon_all)
        return lat_all, lon_all

    def run_nm(self, at: ArrayLike) -> np.ndarray:
        """Miles run along the track between each knot and knot ``at`` (..., K), in the knots' own order."""
        _, _, _, distance = self._legs
        at_time = _along(self._back, np.asarray(at, dtype=np.intp)[..., None])
        run = np.concatenate([np.zeros(distance.shape[:-1] + (1,)), np.cumsum(distance, axis=-1)], axis=-1)
        from_at = np.abs(run - _along(run, at_time))
        return _along(from_at, self._back)

    @functools.cached_property
    def run_to_last_nm(self) -> np.ndarray:
        """Miles run between each knot and the last (..., K): a batch of sight tracks' run to each fix (worked once;
        read only)."""
        run = self.run_nm(np.full(self.knot_ns.shape[:-1], self.knot_ns.shape[-1] - 1))
        run.flags.writeable = False
        return run

    def velocity_at(self, utc_ns: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
        """The velocity over the ground (north, east knots) in force at the instants: the last knot's at or before
        each (before the first knot, the first knot's). A single track."""
        k = np.clip(np.searchsorted(self.knot_ns, np.asarray(utc_ns, dtype=np.int64), side="right") - 1, 0,
                    self.knot_ns.size - 1)
        return self.north_kn[k], self.east_kn[k]

    def carried(self, lat_deg: ArrayLike, lon_deg: ArrayLike, from_ns: ArrayLike, to_ns: ArrayLike
                ) -> tuple[np.ndarray, np.ndarray]:
        """Positions (lat, lon degrees) at ``from_ns`` carried to ``to_ns`` along this track's velocities, through
        every change of course, speed and current between the two instants, forward or backward (a fix run up to
        noon, or back to it): each leg a rhumb line on the WGS 84 ellipsoid (:func:`rhumb_track_through`). The
        track's known positions play no part. Broadcasts over the positions and instants."""
        lat, lon, start, end = np.broadcast_arrays(np.asarray(lat_deg, dtype=float), np.asarray(lon_deg, dtype=float),
                                                   np.asarray(from_ns, dtype=np.int64), np.asarray(to_ns, dtype=np.int64))
        shape = lat.shape
        lat, lon, start, end = (a.reshape(-1) for a in (lat, lon, start, end))
        low, high = np.minimum(start, end), np.maximum(start, end)
        inside = (self.knot_ns[None, :] > low[:, None]) & (self.knot_ns[None, :] < high[:, None])
        width = int(inside.sum(axis=1).max()) if inside.size else 0
        # each pair's knots in time order: its two ends and the track's knots between them, padded with its end
        between = np.where(inside, self.knot_ns[None, :], np.iinfo(np.int64).max)
        between = np.sort(between, axis=1)[:, :width]
        between = np.where(between == np.iinfo(np.int64).max, high[:, None], between)
        knots = np.concatenate([low[:, None], between, high[:, None]], axis=1)
        north, east = self.velocity_at(knots)
        hours = np.diff(knots, axis=1) / NS_PER_HOUR
        leg_north, leg_east = north[:, :-1] * hours, east[:, :-1] * hours
        at = np.where(start <= end, 0, knots.shape[1] - 1)
        lats, lons = rhumb_track_through(lat, lon, at, leg_north, np.degrees(np.arctan2(leg_east, leg_north)),
                                         np.hypot(leg_north, leg_east))
        other = np.where(start <= end, knots.shape[1] - 1, 0)
        rows = np.arange(lat.size)
        return lats[rows, other].reshape(shape), lons[rows, other].reshape(shape)

    def take(self, rows: np.ndarray) -> DRTrack:
        """The tracks of some rows of a batch, keeping what has been worked out already."""
        if rows.size == self.knot_ns.shape[0] and np.array_equal(rows, np.arange(rows.size)):
            return self
        part = DRTrack(self.knot_ns[rows], self.north_kn[rows], self.east_kn[rows])
        for name in ("_legs", "_back", "_still", "run_to_last_nm"):
            if name in self.__dict__:
                value = self.__dict__[name]
                part.__dict__[name] = tuple(v[rows] for v in value) if isinstance(value, tuple) else value[rows]
        return part


def _along(values: np.ndarray, index: np.ndarray) -> np.ndarray:
    """``np.take_along_axis(values, index, axis=-1)``, by plain indexing for a batch (rows, knots) or one track (the
    same elements, without its cost on a small fix's arrays)."""
    if values.ndim == 2 and index.ndim == 2:
        return values[np.arange(values.shape[0])[:, None], index]
    if values.ndim == 1 and index.ndim == 1:
        return values[index]
    return np.take_along_axis(values, index, axis=-1)


def _fill_forward(values: np.ndarray, valid: np.ndarray) -> np.ndarray:
    """Along the last axis, each invalid element takes the last valid one before it (or, if none, the first after)."""
    n = values.shape[-1]
    if n >= 2 and valid[..., :-1].all() and not valid[..., -1].any():  # a sight track's: only its last knot open
        return np.concatenate([values[..., :-1], values[..., -2:-1]], axis=-1)
    index = np.where(valid, np.arange(n), -1)
    before = np.maximum.accumulate(index, axis=-1)
    after = np.flip(np.minimum.accumulate(np.flip(np.where(valid, np.arange(n), n), axis=-1), axis=-1), axis=-1)
    chosen = np.where(before >= 0, before, np.minimum(after, n - 1))
    return _along(values, chosen)


def steady_track(lat_deg: float, lon_deg: float, start: object, course_deg: float = 0.0,
                 speed_kn: float = 0.0) -> DRTrack:
    """The DR of a ship at (lat, lon) at ``start`` (datetime64) on one course and speed (both may be zero),
    carried back along the same rhumb line before the start: a plan's track."""
    start_ns = np.array([np.datetime64(start, "ns").astype(np.int64)])
    north, east = velocity_kn(course_deg, speed_kn)
    return DRTrack(start_ns, np.array([float(north)]), np.array([float(east)]), start_ns,
                   np.array([float(lat_deg)]), np.array([float(lon_deg)]), carry_back=True)


def dr_track(change_ns: ArrayLike, course_deg: ArrayLike, speed_kn: ArrayLike, known_ns: ArrayLike,
             known_lat: ArrayLike, known_lon: ArrayLike, *, set_deg: ArrayLike = 0.0,
             drift_kn: ArrayLike = 0.0, known_label: tuple[str, ...] = (), known_cov_nm2: ArrayLike | None = None,
             through_water: DRTrack | None = None) -> DRTrack:
    """Build a DR track from changes of course and speed (and current) and known positions.

    ``change_ns`` (int64 ns UTC), ``course_deg``, ``speed_kn``: each change is in force from its instant until
    the next (a NaN course or speed keeps the one before; before the first change the ship lies stopped);
    ``set_deg``/``drift_kn``: a current from that instant on (NaN keeps the one before; 0 drift ends it). ``known_ns``,
    ``known_lat``, ``known_lon``: the departure and each fix, each restarting the DR, with their
    ``known_label`` and ``known_cov_nm2`` if wanted (kept in time order with them). Changes and known
    positions at one instant act together (the known position holds at that instant). ``through_water``:
    the same DR without its currents, to keep beside it.
    """
    change = np.atleast_1d(np.asarray(change_ns, dtype=np.int64))
    course, speed, set_, drift = np.broadcast_arrays(*(np.atleast_1d(np.asarray(v, dtype=float)) for v in
                                                       (course_deg, speed_kn, set_deg, drift_kn)))
    course, speed, set_, drift = (np.broadcast_to(v, change.shape) for v in (course, speed, set_, drift))
    known = np.atleast_1d(np.asarray(known_ns, dtype=np.int64))
    k_lat = np.broadcast_to(np.atleast_1d(np.asarray(known_lat, dtype=float)), known.shape)
    k_lon = np.broadcast_to(np.atleast_1d(np.asarray(known_lon, dtype=float)), known.shape)
    bad = ~np.isfinite(k_lat) | ~np.isfinite(k_lon) | (np.abs(k_lat) > 90.0)
    if bad.any():
        raise ReckoningError(f"a known position must have a latitude within ±90° and a longitude; "
                             f"refused: {', '.join(str(i) for i in np.flatnonzero(bad)[:5])}")
    if np.any(speed[np.isfinite(speed)] < 0) or np.any(drift[np.isfinite(drift)] < 0):
        raise ReckoningError("a speed or a drift is negative: give the course it is made on instead")
    knots = np.unique(np.concatenate([change, known]))
    # the velocity through the water in force at each knot: the last change at or before it (NaN keeps the one
    # before, so carry each column's last finite value forward)
    order = np.argsort(change, kind="stable")
    c_sorted, s_sorted = course[order], speed[order]
    set_sorted, drift_sorted = set_[order], drift[order]
    at = np.searchsorted(change[order], knots, side="right") - 1

    def carried(values):
        index = np.where(np.isfinite(values), np.arange(values.size), -1)
        index = np.maximum.accumulate(index) if index.size else index
        last = np.where(at >= 0, index[np.maximum(at, 0)] if index.size else -1, -1)
        return np.where(last >= 0, values[np.maximum(last, 0)] if values.size else 0.0, 0.0)

    c_knot, s_knot = carried(c_sorted), carried(s_sorted)
    current_set, current_drift = carried(set_sorted), carried(drift_sorted)
    wn, we = velocity_kn(c_knot, s_knot)
    cn, ce = velocity_kn(current_set, current_drift)
    vn, ve = wn + cn, we + ce
    in_time = np.argsort(known, kind="stable")
    labels = tuple(known_label[i] for i in in_time.tolist()) if len(known_label) else ()
    covariances = None if known_cov_nm2 is None else np.asarray(known_cov_nm2, dtype=float)[in_time]
    return DRTrack(knots, vn, ve, known[in_time], np.array(k_lat[in_time]), np.array(k_lon[in_time]), labels,
                   covariances, through_water=through_water)


def _carried_from_known(knots: np.ndarray, vn: np.ndarray, ve: np.ndarray, known: np.ndarray, k_lat: np.ndarray,
                        k_lon: np.ndarray) -> dict[str, np.ndarray]:
    """The position at every knot of a track (knots in time order), carried from its known positions:
    ``depart_lat``/``depart_lon``, the position at each knot after a restart there; ``arrive_lat``/
    ``arrive_lon``, the position at each knot carried from the knot before (NaN at the first knot of the
    track); ``origin``, the knot of the known position each knot is carried from (-1 before the first);
    ``restart``, True where a known position restarts the DR. Every knot of a track, through every restart,
    is one segmented cumulative sum (no loop over legs or positions)."""
    n = knots.size
    # known positions at the knots (the last given at an instant holds)
    slot = np.searchsorted(knots, known)
    restart = np.zeros(n, dtype=bool)
    restart[slot] = True
    r_lat, r_lon = np.full(n, np.nan), np.full(n, np.nan)
    r_lat[slot], r_lon[slot] = k_lat, k_lon
    origin = np.maximum.accumulate(np.where(restart, np.arange(n), -1))
    # the rhumb line of each interval: the northing (meridian arc) adds within a segment; the longitude
    # change of each interval follows from its end latitudes
    hours = np.diff(knots) / NS_PER_HOUR
    north_m = vn[:-1] * hours * METRES_PER_NM
    run = np.concatenate([[0.0], np.cumsum(north_m)])
    has = origin >= 0
    o = np.maximum(origin, 0)
    arc = np.where(has, meridian_arc_m(np.where(has, r_lat[o], 0.0)) + run - run[o], np.nan)
    # a rhumb line ends at the pole: a knot carried past it, and every knot carried on from that one before the
    # next restart, has no position (NaN), never a latitude clamped short of the pole
    over = has & ~restart & (np.abs(np.nan_to_num(arc)) > POLE_ARC_M)
    lost = np.zeros(n, dtype=bool)
    if over.any():
        first_over = np.where(over, np.arange(n), n)
        segment_first = np.full(n, n)
        for k in np.unique(o[has]).tolist():
            members = has & (o == k)
            segment_first[members] = first_over[members].min()
        lost = has & ~restart & (np.arange(n) >= segment_first)
    lat = np.where(restart, r_lat, latitude_from_meridian_arc_deg(np.nan_to_num(arc)))
    lat = np.where(has & ~lost, lat, np.nan)
    # the latitude each interval arrives at, carried (before a restart replaces it)
    arrive_lat = np.full(n, np.nan)
    arc_prev_segment = np.where(has[:-1], meridian_arc_m(np.where(has[:-1], r_lat[o[:-1]], 0.0)) + run[1:]
                                - run[o[:-1]], np.nan)
    arrive_lat[1:] = np.where(has[:-1] & ~lost[:-1] & (np.abs(np.nan_to_num(arc_prev_segment)) <= POLE_ARC_M),
                              latitude_from_meridian_arc_deg(np.nan_to_num(arc_prev_segment)), np.nan)
    course_g, speed_g = course_speed(vn[:-1], ve[:-1])
    with np.errstate(invalid="ignore"):
        dlon = np.degrees(longitude_change_rad(lat[:-1], arrive_lat[1:], np.radians(course_g),
                                                speed_g * hours * METRES_PER_NM))
    dlon = np.where(has[:-1], np.nan_to_num(dlon), 0.0)
    turned = np.concatenate([[0.0], np.cumsum(dlon)])
    lon = np.where(restart, r_lon, wrap_180(np.where(has, r_lon[o], 0.0) + turned - turned[o]))
    lon = np.where(has & np.isfinite(lat), lon, np.nan)
    arrive_lon = np.full(n, np.nan)
    arrive_lon[1:] = np.where(has[:-1], wrap_180(r_lon[o[:-1]] + turned[1:] - turned[o[:-1]]), np.nan)
    arrive_lon = np.where(np.isfinite(arrive_lat), arrive_lon, np.nan)
    return {"depart_lat": lat, "depart_lon": lon, "arrive_lat": arrive_lat, "arrive_lon": arrive_lon,
            "origin": origin, "restart": restart}




def estimated_position(dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike, intercept_nm: ArrayLike,
                       zn_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """The estimated position from one line of position: the foot of the perpendicular from the DR to the
    line, the intercept (worked from the DR; + toward) along Zn (common practice)."""
    return destination(dr_lat_deg, dr_lon_deg, zn_deg, intercept_nm)


@dataclass(frozen=True)
class SetDrift:
    """The current found between a fix and the DR carried to it, with its uncertainty (one per fix)."""

    set_deg: np.ndarray
    drift_kn: np.ndarray
    #: standard deviations: of the drift (knots), and of the set (degrees; NaN where the drift does not
    #: stand clear of zero, so that the set is not determined)
    drift_sigma_kn: np.ndarray
    set_sigma_deg: np.ndarray
    hours: np.ndarray
    #: the displacement DR -> fix (nautical miles north and east), and its covariance (nm², north-east)
    north_nm: np.ndarray
    east_nm: np.ndarray
    covariance_nm2: np.ndarray

    @property
    def drift_95_kn(self) -> np.ndarray:
        return NORMAL_975 * self.drift_sigma_kn

    @property
    def set_95_deg(self) -> np.ndarray:
        return NORMAL_975 * self.set_sigma_deg


def set_and_drift(dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike, fix_lat_deg: ArrayLike, fix_lon_deg: ArrayLike,
                  hours: ArrayLike, fix_covariance_nm2: ArrayLike, previous_covariance_nm2: ArrayLike,
                  run_nm: ArrayLike, *, dr_error_kn: float = 0.3, dr_error_fraction: float = 0.02) -> SetDrift:
    """Set (degrees true, the way the current runs) and drift (knots) from a fix and the DR carried to it from
    the previous fix over ``hours``: the displacement DR -> fix divided by the time.

    Its uncertainty comes from the two fixes' covariances (nm², north-east, 1 σ), which add (the errors of
    two fixes are independent), and the DR's own error over the run (isotropic, σ = ``dr_error_kn`` × hours +
    ``dr_error_fraction`` × ``run_nm``; the values navred's running fix uses, common practice). The drift's σ is
    the covariance along the displacement, the set's across it over the distance (first order).
    """
    d_lat, d_lon, f_lat, f_lon, h, run = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (
        dr_lat_deg, dr_lon_deg, fix_lat_deg, fix_lon_deg, hours, run_nm)))
    if np.any(h <= 0):
        raise ReckoningError("set and drift need a run of time between the fixes: a fix at the same instant as "
                             "the one before gives none")
    distance, course = rhumb_inverse(d_lat, d_lon, f_lat, f_lon)
    north, east = velocity_kn(course, distance)
    dr_sigma = dr_error_kn * h + dr_error_fraction * run
    cov = (np.asarray(fix_covariance_nm2, dtype=float) + np.asarray(previous_covariance_nm2, dtype=float)
           + (dr_sigma**2)[..., None, None] * np.eye(2))
    along = np.stack([np.cos(np.radians(course)), np.sin(np.radians(course))], axis=-1)
    across = np.stack([-np.sin(np.radians(course)), np.cos(np.radians(course))], axis=-1)
    var_along = np.einsum("...i,...ij,...j->...", along, cov, along)
    var_across = np.einsum("...i,...ij,...j->...", across, cov, across)
    drift_sigma = np.sqrt(var_along) / h
    with np.errstate(divide="ignore", invalid="ignore"):
        set_sigma = np.degrees(np.sqrt(var_across) / distance)
    determined = distance > NORMAL_975 * np.sqrt(var_along)
    return SetDrift(course, distance / h, drift_sigma, np.where(determined, set_sigma, np.nan), h, north, east,
                    cov)


@dataclass(frozen=True)
class ShipsClocks:
    """The zone the ship's clocks keep, piecewise in time: ``zone_h[k]`` (ZD, hours, ZT + ZD = UTC) from
    ``change_ns[k]`` (int64 ns UTC) until the next change; before the first change, ``zone_h[0]``."""

    change_ns: np.ndarray
    zone_h: np.ndarray

    def zone_at(self, utc_ns: ArrayLike) -> np.ndarray:
        """The zone the clocks keep at each instant."""
        k = np.clip(np.searchsorted(self.change_ns, np.asarray(utc_ns, dtype=np.int64), side="right") - 1, 0,
                    self.zone_h.size - 1)
        return self.zone_h[k]

    def ship_time_ns(self, utc_ns: ArrayLike) -> np.ndarray:
        """The ship's clock at each instant (int64 ns on the calendar scale): UTC − ZD."""
        when = np.asarray(utc_ns, dtype=np.int64)
        return when - np.round(self.zone_at(when) * NS_PER_HOUR).astype(np.int64)


#: A ship's day is at least this long (hours): a noon closer than this to the one before is not a new ship's day
#: (clocks retarded over noon would show noon twice).
SHORTEST_SHIPS_DAY_H = 12.0


def ship_noons(clocks: ShipsClocks, start_ns: int, end_ns: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Every noon by the ship's clocks between two instants: (noon UTC int64 ns, the ship's date as int64 ns of its
    00:00, the zone kept), in time order, one per ship's day.

    A noon is an instant at which the clocks read 12:00: for each ship's date and each stretch of one zone, noon
    = the date's 12:00 + ZD, if that instant falls within the stretch. So a date the clocks skip (westbound across
    the date line, advanced 24 h) has no noon, and a date they repeat (eastbound, retarded 24 h) has two, a day
    apart, each its own ship's day; clocks changed by an hour give a day of 23 or 25 hours. A noon less than
    :data:`SHORTEST_SHIPS_DAY_H` after the one before (clocks retarded across noon) is not another ship's day.
    """
    day = NS_PER_HOUR * 24
    span = np.arange((int(start_ns) // day - 2) * day, (int(end_ns) // day + 3) * day, day, dtype=np.int64)
    bounds = np.concatenate([[np.iinfo(np.int64).min], clocks.change_ns[1:], [np.iinfo(np.int64).max]]) \
        if clocks.change_ns.size else np.array([np.iinfo(np.int64).min, np.iinfo(np.int64).max])
    zones = clocks.zone_h if clocks.change_ns.size else clocks.zone_h[:1]
    candidate = span[:, None] + 12 * NS_PER_HOUR + np.round(zones[None, :] * NS_PER_HOUR).astype(np.int64)
    inside = (candidate >= bounds[None, :-1]) & (candidate < bounds[None, 1:])
    inside &= (candidate >= start_ns) & (candidate <= end_ns)
    dates, stretch = np.nonzero(inside)
    noon = candidate[dates, stretch]
    order = np.argsort(noon, kind="stable")
    noon, dates, stretch = noon[order], dates[order], stretch[order]
    keep = np.ones(noon.size, dtype=bool)
    last = None
    for k in range(noon.size):  # a handful of noons a passage: drop the second noon of one ship's day
        if last is not None and noon[k] - last < SHORTEST_SHIPS_DAY_H * NS_PER_HOUR:
            keep[k] = False
        else:
            last = noon[k]
    return noon[keep], span[dates[keep]], zones[stretch[keep]] + 0.0


def clocks_at_midnights(track: DRTrack, start_ns: int, end_ns: int, first_zone_h: float) -> ShipsClocks:
    """The clocks of a ship that keeps the nautical zone of her DR, changed at each ship's midnight (common
    practice: the clocks are altered in the night watches): from ``first_zone_h`` at ``start_ns``, at each
    midnight by the ship's clocks the zone of the DR's longitude then (:func:`zone_description_h`). Across the
    date line the zone goes from +12 to −12 (a date skipped) or back (a date repeated)."""
    day = NS_PER_HOUR * 24
    dates = np.arange((int(start_ns) // day) * day, (int(end_ns) // day + 2) * day, day, dtype=np.int64)
    zone = np.full(dates.size, float(first_zone_h))
    for _ in range(4):  # each midnight's zone from the one before (a day changes it by an hour or so): it settles
        before = np.concatenate([[first_zone_h], zone[:-1]])
        midnight = dates + np.round(before * NS_PER_HOUR).astype(np.int64)
        _, lon, origin = track.positions(midnight)
        zone = np.where((origin >= 0) & np.isfinite(lon), zone_description_h(lon), before)
    before = np.concatenate([[first_zone_h], zone[:-1]])
    midnight = dates + np.round(before * NS_PER_HOUR).astype(np.int64)
    after = midnight > start_ns
    change = np.concatenate([[start_ns], midnight[after]])
    zones = np.concatenate([[first_zone_h], zone[after]])
    moved = np.concatenate([[True], zones[1:] != zones[:-1]])
    return ShipsClocks(change[moved].astype(np.int64), zones[moved] + 0.0)


def lines_crossed(lat_deg: float, lon_deg: float, foot_lat_deg: ArrayLike, foot_lon_deg: ArrayLike,
                  zn_deg: ArrayLike) -> tuple[float, float, float]:
    """The point where lines of position cross, by least squares on the plane tangent at (lat, lon) (a position
    near them, the DR): each line passes through its foot, square to its azimuth Zn. Returns (lat, lon, the
    smallest angle between the lines, degrees). Over the few tens of miles of a running fix the plane is good to a
    few hundredths of a mile (common practice: the plotting sheet)."""
    foot_lat = np.asarray(foot_lat_deg, dtype=float)
    foot_lon = np.asarray(foot_lon_deg, dtype=float)
    zn = np.radians(np.asarray(zn_deg, dtype=float))
    north = (foot_lat - lat_deg) * 60.0
    east = wrap_180(foot_lon - lon_deg) * 60.0 * np.cos(np.radians((foot_lat + lat_deg) / 2.0))
    normal = np.stack([np.cos(zn), np.sin(zn)], axis=-1)
    offset = normal[:, 0] * north + normal[:, 1] * east
    solution = np.linalg.lstsq(normal, offset, rcond=None)[0]
    axis = np.degrees(zn) % 180.0
    spread = np.abs((axis[:, None] - axis[None, :] + 90.0) % 180.0 - 90.0)
    lat = lat_deg + solution[0] / 60.0
    lon = float(wrap_180(lon_deg + solution[1] / 60.0 / np.cos(np.radians((lat + lat_deg) / 2.0))))
    return float(lat), lon, float(spread.max())


def ship_noon_ns(day_ns: ArrayLike, zone_description_h: ArrayLike) -> np.ndarray:
    """12:00 ship's time (zone time) on each date, as UTC int64 ns: noon + ZD (ZT + ZD = UTC).

    ``day_ns``: the date's 00:00 (int64 ns of the calendar date, as datetime64[D] gives it)."""
    return (np.asarray(day_ns, dtype=np.int64) + 12 * NS_PER_HOUR
            + np.round(np.asarray(zone_description_h, dtype=float) * NS_PER_HOUR).astype(np.int64))


def zone_description_h(lon_deg: ArrayLike) -> np.ndarray:
    """The nautical zone description of a longitude, hours (+ west), by one stated rule (common practice: the
    zones are centred on multiples of 15°, zone ZD spanning 7.5° either side of 15° × −ZD):

    - ZD = −sign(λ) × ⌊|λ| / 15° + ½⌋: a longitude exactly on a boundary (7.5°, 22.5° … 172.5°) belongs to the
      zone farther from Greenwich (7° 30′ E is −1, 7° 30′ W is +1), every boundary alike (round half to even,
      the rule before, put 22.5° E in −2, the farther zone, but 37.5° E in −2 too, the nearer);
    - the 180° meridian itself (written 180° E or 180° W, or −180°) is taken as ZD −12 (:data:`DATE_LINE_ZONE_H`):
      the line is one meridian and a position on it gets one zone; a ship keeping +12 there says so (--zone);
    - a longitude given 0–360° (190° = 170° W) is taken −180° to 180° first;
    - never −0: Greenwich's zone is 0."""
    lon = np.asarray(lon_deg, dtype=float)
    lon = np.where(lon > 180.0, lon - 360.0, lon)
    zd = -np.sign(lon) * np.floor(np.abs(lon) / 15.0 + 0.5)
    zd = np.where(np.abs(lon) == 180.0, DATE_LINE_ZONE_H, zd)
    return np.clip(zd, -12.0, 12.0) + 0.0  # + 0.0: no −0


#: The zone description taken on the 180° meridian itself (either sign of the longitude): the zone east of the
#: line, −12 (a stated choice; the ship's clocks may keep +12 there: navred plan --zone +12).
DATE_LINE_ZONE_H = -12.0


@dataclass(frozen=True)
class DaysRun:
    """The run between consecutive noons (one per day after the first)."""

    distance_nm: np.ndarray
    course_deg: np.ndarray
    speed_kn: np.ndarray
    hours: np.ndarray


def days_run(noon_ns: ArrayLike, lat_deg: ArrayLike, lon_deg: ArrayLike) -> DaysRun:
    """Distance, course and speed made good between consecutive noon positions (rhumb line on WGS 84);
    the hours between noons are 23 or 25 when the ship's clocks change zone."""
    when = np.asarray(noon_ns, dtype=np.int64)
    lat, lon = np.asarray(lat_deg, dtype=float), np.asarray(lon_deg, dtype=float)
    distance, course = rhumb_inverse(lat[:-1], lon[:-1], lat[1:], lon[1:])
    hours = np.diff(when) / NS_PER_HOUR
    with np.errstate(divide="ignore", invalid="ignore"):
        speed = np.where(hours > 0, distance / hours, np.nan)
    return DaysRun(distance, course, speed, hours)


__all__ = ["DRTrack", "dr_track", "steady_track", "estimated_position", "SetDrift", "set_and_drift", "ship_noon_ns",
           "zone_description_h", "DATE_LINE_ZONE_H", "DaysRun", "days_run", "velocity_kn", "course_speed", "ReckoningError",
           "leeway_track_deg", "ShipsClocks", "ship_noons", "clocks_at_midnights", "lines_crossed",
           "SHORTEST_SHIPS_DAY_H"]
