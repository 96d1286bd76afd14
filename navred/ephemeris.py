"""Barycentric positions and velocities from the JPL DE421 ephemeris (via jplephem).

The only file reader in the core. The file is the ``de421.bsp`` carried by the
installed ``skyfield-data`` package (JPL Interoffice Memorandum 343R-08-003,
Folkner et al. 2008); it covers 1899-07-29 to 2053-10-09. Positions are in km,
velocities in km/day, in the ICRF, as functions of TDB.
"""

from __future__ import annotations

import functools
import importlib.resources

import numpy as np
from jplephem.spk import SPK
from numpy.typing import ArrayLike

from .errors import BodyNameError

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
SOLAR_SYSTEM_BODIES = ("Sun", "Moon", "Venus", "Mars", "Jupiter", "Saturn")


def ephemeris_path() -> str:
    """Path of the DE421 file inside the installed skyfield-data package."""
    return str(importlib.resources.files("skyfield_data") / "data" / "de421.bsp")


@functools.lru_cache(maxsize=1)
def _kernel() -> SPK:
    return SPK.open(ephemeris_path())


#: Instants per block when a segment is evaluated: jplephem gathers a (3, coefficients, n)
#: block of Chebyshev coefficients, 300 MB for a million instants of the Earth-Moon
#: barycentre, so large batches are evaluated in blocks of this size (not per instant).
BLOCK = 65536


def _evaluate(centre: int, target: int, tdb1, tdb2, velocity: bool):
    """Position (and velocity) of one segment, shape (3, n), in blocks of :data:`BLOCK`."""
    segment = _kernel()[centre, target]
    t1, t2 = np.broadcast_arrays(np.asarray(tdb1, dtype=float), np.asarray(tdb2, dtype=float))
    shape = t1.shape
    t1, t2 = t1.ravel(), t2.ravel()
    if t1.size <= BLOCK:
        out = segment.compute_and_differentiate(t1, t2) if velocity else (segment.compute(t1, t2),)
    else:
        parts = [segment.compute_and_differentiate(t1[i:i + BLOCK], t2[i:i + BLOCK]) if velocity
                 else (segment.compute(t1[i:i + BLOCK], t2[i:i + BLOCK]),)
                 for i in range(0, t1.size, BLOCK)]
        out = tuple(np.concatenate([p[k] for p in parts], axis=-1) for k in range(len(parts[0])))
    return tuple(np.asarray(o).reshape((3,) + shape) for o in out)


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
    instants; the Earth-Moon barycentre and the Earth segments are shared.
    """

    def __init__(self, tdb1, tdb2=0.0):
        self.tdb1 = np.asarray(tdb1, dtype=float)
        self.tdb2 = np.asarray(tdb2, dtype=float)
        self._states: dict[tuple[int, int], tuple[np.ndarray, np.ndarray]] = {}
        self._positions: dict[tuple[int, int], np.ndarray] = {}

    def segment(self, centre: int, target: int) -> tuple[np.ndarray, np.ndarray]:
        key = (centre, target)
        if key not in self._states:
            self._states[key] = _evaluate(centre, target, self.tdb1, self.tdb2, velocity=True)
        return self._states[key]

    def segment_position(self, centre: int, target: int) -> np.ndarray:
        key = (centre, target)
        if key in self._states:
            return self._states[key][0]
        if key not in self._positions:
            self._positions[key] = _evaluate(centre, target, self.tdb1, self.tdb2, velocity=False)[0]
        return self._positions[key]

    def barycentric_position(self, body: str) -> np.ndarray:
        """Barycentric position (km), shape (3, ...), without the cost of the velocity."""
        return sum(self.segment_position(c, t) for c, t in _chain(body))

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


def barycentric_position(body: str, tdb1: ArrayLike, tdb2: ArrayLike = 0.0) -> np.ndarray:
    """Barycentric position (km) of a body, shape (3, ...)."""
    return sum(_evaluate(c, t, tdb1, tdb2, velocity=False)[0] for c, t in _chain(body))
