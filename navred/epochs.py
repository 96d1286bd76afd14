"""Mean catalogue places between epochs: J2000.0, B1950.0 (FK4), Julian epochs and mean of date.

For a navigator holding a position from an old catalogue or star chart. All
conversions pass through the ICRS:

- J2000.0 mean equator and equinox <-> ICRS: the IAU 2006 frame bias;
- mean equator and equinox of a date or Julian epoch <-> ICRS: IAU 2006
  bias-precession (ERFA ``bp06``; Capitaine et al. 2003, Hilton et al. 2006);
- B1950.0 (FK4) <-> J2000.0 (FK5): ERFA ``fk45z``/``fk54z`` (Standish 1982, the
  Explanatory Supplement 1992 §3.59), for a position with no proper motion known.

A mean place has no nutation and no aberration: it is not the apparent place
the almanac gives (see :mod:`navred.almanac`).
"""

from __future__ import annotations

import re
import warnings

import erfa
import numpy as np
from numpy.typing import ArrayLike

from .constants import DEG_PER_HOUR
from .errors import NavredError, NavredWarning
from .timescales import instants

_JULIAN = re.compile(r"^\s*J\s*(\d{4}(?:\.\d+)?)\s*$", re.IGNORECASE)


def _bias_precession(epoch: str, utc) -> np.ndarray:
    """Matrix ICRS -> mean equator and equinox of the epoch, shape (..., 3, 3)."""
    text = epoch.strip().lower()
    if text in ("date", "of date", "mean of date"):
        if utc is None:
            raise NavredError("epoch 'date' needs the instant: pass utc=...")
        with warnings.catch_warnings():
            # a stale leap-second or UT1 table moves TT by a second at most, and a mean place
            # by 0.00002″: nothing a navigator needs to hear about here
            warnings.simplefilter("ignore", NavredWarning)
            inst = instants(utc, dut1_s=0.0)
        tt1, tt2 = inst.tt1, inst.tt2
    else:
        match = _JULIAN.match(epoch)
        if not match:
            raise NavredError(
                f"unknown epoch {epoch!r}; accepted: 'J2000', 'B1950', a Julian epoch such as "
                "'J2025.5', or 'date' (mean equator and equinox of the instant utc=...)")
        tt1, tt2 = erfa.epj2jd(float(match.group(1)))
    _rb, _rp, rbp = erfa.bp06(tt1, tt2)
    return rbp


def _is_b1950(epoch: str) -> bool:
    return epoch.strip().upper().replace(" ", "") in ("B1950", "B1950.0", "FK4")


def _to_icrs_vector(ra_rad, dec_rad, epoch: str, utc) -> np.ndarray:
    if _is_b1950(epoch):
        ra_rad, dec_rad = erfa.fk45z(ra_rad, dec_rad, 1950.0)
        epoch = "J2000"
    matrix = _bias_precession(epoch, utc)
    vector = erfa.s2c(ra_rad, dec_rad)
    return np.einsum("...ji,...j->...i", matrix, vector)  # transpose: mean -> ICRS


def _from_icrs_vector(vector, epoch: str, utc):
    if _is_b1950(epoch):
        ra, dec = _from_icrs_vector(vector, "J2000", utc)
        r1950, d1950, _dr, _dd = erfa.fk54z(ra, dec, 1950.0)
        return r1950, d1950
    matrix = _bias_precession(epoch, utc)
    ra, dec = erfa.c2s(np.einsum("...ij,...j->...i", matrix, vector))
    return erfa.anp(ra), dec


def mean_place(ra_hours: ArrayLike, dec_deg: ArrayLike, from_epoch: str = "J2000", to_epoch: str = "date", utc: object | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Mean right ascension (hours) and declination (degrees) referred to another epoch.

    ``from_epoch`` and ``to_epoch`` are ``'J2000'``, ``'B1950'`` (FK4), a Julian
    epoch such as ``'J2025.5'``, or ``'date'`` (the mean equator and equinox of
    ``utc``). Arrays broadcast.

    >>> ra, dec = mean_place(0.0, 0.0, "J2000", "J2001")
    >>> round(float(ra) * 3600, 2)  # seconds of RA gained in a year, m = 3.075 s (from memory)
    3.07
    """
    ra = np.radians(np.asarray(ra_hours, dtype=float) * DEG_PER_HOUR)
    dec = np.radians(np.asarray(dec_deg, dtype=float))
    if not (np.all(np.isfinite(ra)) and np.all(np.isfinite(dec))):
        raise NavredError("mean_place: RA and Dec must be finite numbers")
    if np.any(np.abs(dec) > np.pi / 2):
        raise NavredError("mean_place: Dec must lie within -90 to 90 degrees")
    vector = _to_icrs_vector(ra, dec, from_epoch, utc)
    ra_out, dec_out = _from_icrs_vector(vector, to_epoch, utc)
    return np.degrees(ra_out) / DEG_PER_HOUR, np.degrees(dec_out)
