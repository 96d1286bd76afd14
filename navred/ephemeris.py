"""Barycentric positions and velocities from the JPL DE421 ephemeris (via jplephem).

The only file reader in the core. The file is the ``de421.bsp`` carried by the
installed ``skyfield-data`` package (JPL Interoffice Memorandum 343R-08-003,
Folkner et al. 2008); it covers 1899-07-29 to 2053-10-09. Positions are in km,
velocities in km/day, in the ICRF, as functions of TDB.
"""

from __future__ import annotations

import functools
import importlib.resources
import os

import numpy as np
from jplephem.spk import SPK
from numpy.typing import ArrayLike

from .constants import JD_J2000, SECONDS_PER_DAY
from .errors import BodyNameError, NavredError, failed_elements

EPHEMERIS_NAME = "JPL DE421"

#: NAIF codes of the bodies navred reads, each as a chain of (centre, target) segments
#: from the solar-system barycentre (0).
_CHAINS = {
    "earth": ((0, 3), (3, 399)),
    "moon": ((0, 3), (3, 301)),
    "sun": ((0, 10),),
    "venus": ((0, 2), (2, 299)),
    "mars": ((0, 4), (4, 499)),
    "jupiter": ((0, 5),),  # DE421 has the barycentre only (the planet is within 0.001″ of it at Earth)
    "saturn": ((0, 6),),  # ditto
}


def ephemeris_path() -> str:
    """Path of the DE421 file inside the installed skyfield-data package."""
    return str(importlib.resources.files("skyfield_data") / "data" / "de421.bsp")


@functools.lru_cache(maxsize=1)
def _kernel() -> SPK:
    return SPK.open(ephemeris_path())


# A forked process opens the file anew: the file it would inherit shares its read position with the process
# that opened it, and jplephem reads a segment's trailer by a seek and a read (its lock is one process's), so
# two processes loading segments at once would read each other's bytes (seen: a segment's shape read from
# another's place, in the blocks of a long DataFrame reduced by forked processes). The segments already loaded
# are arrays of their own and are kept.
if hasattr(os, "register_at_fork"):
    os.register_at_fork(after_in_child=_kernel.cache_clear)


class _Segment:
    """One SPK type-2 segment's Chebyshev coefficients, one contiguous row per record.

    The file stores each record as [mid, radius, x0..x(K-1), y0.., z0..]; the rows are kept in
    that order, so the coefficients of an instant's record are 3K numbers side by side in
    memory. Gathering them per instant costs a quarter of a gather along the record axis of a
    coefficient-major array (issue 13's measurement); the polynomial sums are then one
    ``einsum`` over the gathered block.
    """

    def __init__(self, centre: int, target: int):
        segment = _kernel()[centre, target]
        if segment.data_type != 2:
            raise NavredError(f"ephemeris segment {centre}->{target} is of SPK type {segment.data_type}; "
                              "navred reads type 2 (Chebyshev position) only")
        init_s, interval_s, record_size, records = segment.daf.read_array(segment.end_i - 3, segment.end_i)
        self.records, record_size = int(records), int(record_size)
        self.order = (record_size - 2) // 3
        raw = segment.daf.map_array(segment.start_i, segment.end_i - 4).reshape(self.records, record_size)
        self.coefficients = np.ascontiguousarray(raw[:, 2:])  # (records, 3K): the x, y, z blocks
        self.init_s, self.interval_s = float(init_s), float(interval_s)
        self.name = f"{centre}->{target}"

    def state(self, tdb1: np.ndarray, tdb2: np.ndarray, velocity: bool) -> tuple[np.ndarray, np.ndarray | None]:
        """Position (km) and, if asked, velocity (km/day), shape (3, n) each, at TDB dates (n,)."""
        seconds = ((tdb1 - JD_J2000) * SECONDS_PER_DAY - self.init_s) + tdb2 * SECONDS_PER_DAY
        record = np.floor(seconds / self.interval_s)
        outside = ~((record >= 0) & (record <= self.records))
        if outside.any():
            raise NavredError(f"instants outside the {EPHEMERIS_NAME} segment {self.name}: "
                              f"{failed_elements(outside)}")
        record = np.minimum(record, self.records - 1)  # the very end of the last record
        s = 2.0 * (seconds - record * self.interval_s) / self.interval_s - 1.0
        k, n = self.order, s.size
        # Chebyshev polynomials T_j(s) by T_j+1 = 2s T_j - T_j-1, and their derivatives by
        # T'_j+1 = 2 T_j + 2s T'_j - T'_j-1 (Press et al., Numerical Recipes, 3rd ed., 5.8-5.9)
        two_s = 2.0 * s
        t = np.empty((k, n))
        t[0], t[1] = 1.0, s
        for j in range(2, k):
            np.multiply(two_s, t[j - 1], out=t[j])
            t[j] -= t[j - 2]
        block = np.take(self.coefficients, record.astype(np.intp), axis=0).reshape(n, 3, k)
        # one sum per polynomial family: an einsum with a single output pair runs at memory speed
        position = np.einsum("nck,kn->cn", block, t)
        if not velocity:
            return position, None
        d = np.empty((k, n))
        d[0], d[1] = 0.0, 1.0
        for j in range(2, k):
            d[j] = 2.0 * t[j - 1] + two_s * d[j - 1] - d[j - 2]
        rate = np.einsum("nck,kn->cn", block, d)
        return position, rate * (2.0 * SECONDS_PER_DAY / self.interval_s)


@functools.cache
def _segment(centre: int, target: int) -> _Segment:
    return _Segment(centre, target)


#: Instants per block when a segment is evaluated: the gathered coefficients take 3K numbers
#: an instant (about 300 MB for a million instants of the Moon), so large batches are
#: evaluated in blocks of this size.
BLOCK = 65536


def _evaluate(centre: int, target: int, tdb1, tdb2, velocity: bool):
    """Position (and velocity) of one segment, shape (3, ...), in blocks of :data:`BLOCK`."""
    t1, t2 = np.broadcast_arrays(np.asarray(tdb1, dtype=float), np.asarray(tdb2, dtype=float))
    shape = t1.shape
    t1, t2 = t1.ravel(), t2.ravel()
    segment = _segment(centre, target)
    parts = [segment.state(t1[i:i + BLOCK], t2[i:i + BLOCK], velocity) for i in range(0, max(t1.size, 1), BLOCK)]
    position = np.concatenate([p[0] for p in parts], axis=-1).reshape((3,) + shape)
    if not velocity:
        return (position,)
    return position, np.concatenate([p[1] for p in parts], axis=-1).reshape((3,) + shape)


def _chain(body: str):
    chain = _CHAINS.get(body.lower())
    if chain is None:
        raise BodyNameError(f"no ephemeris segment for {body!r}; known: {', '.join(sorted(_CHAINS))}")
    return chain


def barycentric_state(body: str, tdb1: ArrayLike, tdb2: ArrayLike = 0.0) -> tuple[np.ndarray, np.ndarray]:
    """Barycentric position (km) and velocity (km/day) of a body, shape (3, ...) each.

    ``body`` is a lower-case key of the chain table (``earth``, ``moon``, ``sun``,
    ``venus``, ``mars``, ``jupiter``, ``saturn``); ``tdb1 + tdb2`` is a two-part
    TDB Julian date, scalar or array.
    """
    position = velocity = 0.0
    for centre, target in _chain(body):
        p, v = _evaluate(centre, target, tdb1, tdb2, velocity=True)
        position, velocity = position + p, velocity + v
    return position, velocity


class SegmentCache:
    """Segment states at one batch of TDB instants, each segment evaluated at most once.

    The almanac asks for the Earth, the Sun and several bodies at the same
    instants; the Earth-Moon barycentre and the Earth segments are shared. Every
    segment is evaluated with its velocity (it costs a third more than the
    position alone, and the light time of any body needs it).
    """

    def __init__(self, tdb1, tdb2=0.0):
        self.tdb1 = np.asarray(tdb1, dtype=float)
        self.tdb2 = np.asarray(tdb2, dtype=float)
        self._states: dict[tuple[int, int], tuple[np.ndarray, np.ndarray]] = {}

    def segment(self, centre: int, target: int) -> tuple[np.ndarray, np.ndarray]:
        key = (centre, target)
        if key not in self._states:
            self._states[key] = _evaluate(centre, target, self.tdb1, self.tdb2, velocity=True)
        return self._states[key]

    def barycentric(self, body: str) -> tuple[np.ndarray, np.ndarray]:
        """Barycentric position (km) and velocity (km/day), shape (3, ...) each."""
        position = velocity = 0.0
        for centre, target in _chain(body):
            p, v = self.segment(centre, target)
            position, velocity = position + p, velocity + v
        return position, velocity

    def geocentric(self, body: str, rows: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Geocentric position (km) and velocity (km/day) at the instants ``rows`` (no light time).

        The body's own segments are evaluated at those instants only; the Earth's come from
        the cache. For the Moon the Earth-Moon barycentre cancels and is not evaluated.
        """
        t1 = np.broadcast_to(self.tdb1, np.broadcast(self.tdb1, self.tdb2).shape)[rows]
        t2 = np.broadcast_to(self.tdb2, np.broadcast(self.tdb1, self.tdb2).shape)[rows]
        if body.lower() == "moon":
            moon_p, moon_v = _evaluate(3, 301, t1, t2, velocity=True)
            earth_p, earth_v = self.segment(3, 399)
            return moon_p - earth_p[:, rows], moon_v - earth_v[:, rows]
        body_p, body_v = barycentric_state(body, t1, t2)
        earth_p, earth_v = self.barycentric("earth")
        return body_p - earth_p[:, rows], body_v - earth_v[:, rows]
