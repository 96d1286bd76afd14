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


def _chain(body: str):
    chain = _CHAINS.get(body.lower())
    if chain is None:
        raise BodyNameError(f"no ephemeris segment for {body!r}; known: {', '.join(sorted(_CHAINS))}")
    return chain


def barycentric_state(body: str, tdb1, tdb2=0.0) -> tuple[np.ndarray, np.ndarray]:
    """Barycentric position (km) and velocity (km/day) of a body, shape (3, ...) each.

    ``body`` is a lower-case key of the chain table (``earth``, ``moon``, ``sun``,
    ``venus``, ``mars``, ``jupiter``, ``saturn``); ``tdb1 + tdb2`` is a two-part
    TDB Julian date, scalar or array.
    """
    chain = _chain(body)
    kernel = _kernel()
    t1 = np.asarray(tdb1, dtype=float)
    t2 = np.asarray(tdb2, dtype=float)
    position = np.zeros((3,) + np.broadcast(t1, t2).shape)
    velocity = np.zeros_like(position)
    for centre, target in chain:
        p, v = kernel[centre, target].compute_and_differentiate(t1, t2)
        position = position + p
        velocity = velocity + v
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
            self._states[key] = _kernel()[centre, target].compute_and_differentiate(self.tdb1, self.tdb2)
        return self._states[key]

    def segment_position(self, centre: int, target: int) -> np.ndarray:
        key = (centre, target)
        if key in self._states:
            return self._states[key][0]
        if key not in self._positions:
            self._positions[key] = _kernel()[centre, target].compute(self.tdb1, self.tdb2)
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

    def geocentric(self, body: str) -> tuple[np.ndarray, np.ndarray]:
        """Geocentric position (km) and velocity (km/day) at the same instants (no light time).

        For the Moon the Earth-Moon barycentre cancels and is not evaluated.
        """
        if body.lower() == "moon":
            moon_p, moon_v = self.segment(3, 301)
            earth_p, earth_v = self.segment(3, 399)
            return moon_p - earth_p, moon_v - earth_v
        body_p, body_v = self.barycentric(body)
        earth_p, earth_v = self.barycentric("earth")
        return body_p - earth_p, body_v - earth_v


def barycentric_position(body: str, tdb1, tdb2=0.0) -> np.ndarray:
    """Barycentric position (km) of a body, shape (3, ...)."""
    kernel = _kernel()
    t1 = np.asarray(tdb1, dtype=float)
    t2 = np.asarray(tdb2, dtype=float)
    position = np.zeros((3,) + np.broadcast(t1, t2).shape)
    for centre, target in _chain(body):
        position = position + kernel[centre, target].compute(t1, t2)
    return position
