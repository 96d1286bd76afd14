"""Before the sight: what each body will read and how fast it changes, and what to set on the sextant.

Core code (numpy, and navred's own almanac, corrections and triangle).

- :func:`sight_presets`: for bodies at a planned instant and position, the Hc and Zn, their
  change per minute and Hc's bend, centred on it (from the altitudes ten minutes before, at and ten
  minutes after it: for a fixed position, the Earth's turning and the body's own motion), how many
  minutes either side of it the prediction stays within 0.5′, the limb to observe (the Sun's lower limb, the Moon's lit limb) and the Hs to preset: Hc with every correction
  taken back off (:func:`preset_hs_deg`).
- :func:`moon_lit_limb`: which limb of the Moon the Sun lights, upper or lower.

A sight taken m minutes after the planned time (m negative before it) is reduced from the planned position
by two multiplications: Hc = Hc(planned) + m × (rate + m × bend), the line plotted from the planned position (the
assumed position) and moved for the ship's run like any line of a running fix.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .almanac import places
from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG, NS_PER_SECOND
from .corrections import (
    DEFAULT_PRESSURE_HPA,
    DEFAULT_TEMPERATURE_C,
    correct_altitudes,
    planet_phases,
    sun_bearing_from_up_deg,
)
from .handtables import printed_deg
from .timescales import utc_datetime64
from .triangle import computed_altitude_azimuth

#: The straight-line prediction of Hc is trusted while it stays within this of the truth (arcminutes).
RATE_TOLERANCE_ARCMIN = 0.5
#: The rate is the mean change per minute from this many minutes before the planned time to as many after.
RATE_MINUTES = 10
#: The rate is not offered for more than this many minutes either side of the planned time.
LONGEST_MINUTES = 30
_STEP_S = 30
#: Within this many degrees of horizontal the Moon's horns point up and down: neither limb is a clean edge.
HORNS_VERTICAL_DEG = 20.0


def moon_lit_limb(moon_alt_deg: ArrayLike, moon_az_deg: ArrayLike, sun_alt_deg: ArrayLike,
                  sun_az_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The Moon's limb the Sun lights: ('upper' or 'lower', the Sun's direction from straight up in
    degrees, True where the horns point nearly up and down).

    The lit half of the limb is the half facing the Sun on the sky (whatever the phase, the limb on
    the Sun's side is lit), so the upper limb is lit when the Sun's direction from the Moon is within
    90° of straight up (:func:`navred.corrections.sun_bearing_from_up_deg`). Within
    :data:`HORNS_VERTICAL_DEG` of 90° the top and bottom of the disc are the horns (common practice:
    observe another body then, or the limb only with care).
    """
    bearing = sun_bearing_from_up_deg(moon_alt_deg, moon_az_deg, sun_alt_deg, sun_az_deg)
    from_up = np.abs(wrap_180(bearing))
    limb = np.where(from_up < 90.0, "upper", "lower")
    return limb, bearing, np.abs(from_up - 90.0) < HORNS_VERTICAL_DEG


def preset_hs_deg(hc_deg: ArrayLike, *, limb: ArrayLike = "centre", sd_arcmin: ArrayLike = 0.0,
                  hp_arcmin: ArrayLike = 0.0, augment_sd: ArrayLike = False, eye_height_m: ArrayLike = 0.0,
                  index_error_arcmin: ArrayLike = 0.0, temperature_c: ArrayLike = DEFAULT_TEMPERATURE_C,
                  pressure_hpa: ArrayLike = DEFAULT_PRESSURE_HPA, lat_deg: ArrayLike = 0.0,
                  zn_deg: ArrayLike = 0.0, phase_arcmin: ArrayLike = 0.0) -> np.ndarray:
    """The sextant reading Hs (degrees) that would give the observed altitude ``hc_deg``: the corrections
    of :func:`navred.corrections.correct_altitudes` (sea horizon) taken back off.

    Solved by iteration, Hs ← Hs + (Hc − Ho(Hs)): the chain's slope is within 0.3 % of 1 above
    the horizon, so five passes bring it below 0.001′. NaN where no reading gives that altitude
    (a body below the visible horizon).
    """
    hc = np.asarray(hc_deg, dtype=float)
    options = dict(index_error_arcmin=index_error_arcmin, eye_height_m=eye_height_m, temperature_c=temperature_c,
                   pressure_hpa=pressure_hpa, limb=limb, sd_arcmin=sd_arcmin, hp_arcmin=hp_arcmin,
                   augment_sd=augment_sd, lat_deg=lat_deg, zn_deg=zn_deg, phase_arcmin=phase_arcmin)
    hs = np.clip(hc, 0.0, 90.0)
    for _ in range(6):
        ho = correct_altitudes(hs, **options).ho_deg
        hs = np.clip(hs + np.where(np.isfinite(ho), hc - ho, 0.0), 0.0, 90.0)
    ho = correct_altitudes(hs, **options).ho_deg
    return np.where(np.isfinite(ho) & (np.abs(ho - hc) < 0.01 / ARCMIN_PER_DEG), hs, np.nan)


@dataclass(frozen=True)
class SightPresets:
    """Bodies at one planned instant and position. Hc (to 0.1′) and Zn (to 0.1°) as printed, their
    change per minute (Hc to 0.01′, Zn to 0.01°) as printed, the bend of Hc (′ per minute², to 0.001′: half
    its second derivative, so that Hc + m × (rate + m × bend) follows the curve), ``good_minutes`` either side of the planned
    time (before it and after it) within which Hc + m × (rate + m × bend) stays within
    :data:`RATE_TOLERANCE_ARCMIN` of the truth (0: do not use the rate, work the sight by the formulas), the ``limb`` to observe, the Hs to preset (degrees, unrounded), and for the Moon the
    Sun's direction from straight up (``lit_bearing_deg``) and whether the horns point up and down."""

    utc: np.datetime64
    lat_deg: float
    lon_deg: float
    body: np.ndarray
    hc_deg: np.ndarray
    zn_deg: np.ndarray
    hc_rate_arcmin_per_min: np.ndarray
    zn_rate_deg_per_min: np.ndarray
    good_minutes: np.ndarray
    limb: np.ndarray
    hs_deg: np.ndarray
    lit_bearing_deg: np.ndarray
    horns_vertical: np.ndarray
    hc_bend_arcmin_per_min2: np.ndarray

    def hc_at_deg(self, minutes: ArrayLike) -> np.ndarray:
        """Hc (degrees) of every body ``minutes`` after the planned time (negative: before it), worked as the page
        says from the printed numbers: Hc + m × (rate + m × bend). Broadcasts ``minutes`` against the bodies."""
        m = np.asarray(minutes, dtype=float)
        return self.hc_deg + m * (self.hc_rate_arcmin_per_min + m * self.hc_bend_arcmin_per_min2) / ARCMIN_PER_DEG


def sight_presets(bodies: ArrayLike, utc: object, lat_deg: float, lon_deg: float, *, eye_height_m: float = 0.0,
                  index_error_arcmin: float = 0.0, temperature_c: float = DEFAULT_TEMPERATURE_C,
                  pressure_hpa: float = DEFAULT_PRESSURE_HPA) -> SightPresets:
    """Hc, Zn, their rates, the limb and the Hs to preset for ``bodies`` at the instant ``utc`` from a
    fixed position (the planned DR).

    The rates are centred on the planned time: the chord from :data:`RATE_MINUTES` minutes before it
    to as many after (a round is taken either side of it), the tangent at the planned time but for the
    curve's third-order term. A straight line alone leaves half the second derivative × m² (3′ ten minutes
    off for a star at mid altitude: the Earth's turning bends every altitude curve), so the bend is printed
    too, from the same three altitudes: Hc + m × (rate + m × bend) is right at m = −10, 0 and +10 and
    holds for an early sight and a late one alike; ``good_minutes`` is how many whole minutes either way (the lesser
    of before and after) it stays within :data:`RATE_TOLERANCE_ARCMIN`, found on a half-minute grid
    (short for a body near the meridian, whose altitude turns over; 0: do not use the rate).
    Vectorised over the bodies and the grid.
    """
    names = np.atleast_1d(np.asarray(bodies, dtype=object))
    when = utc_datetime64(utc)
    steps = np.arange(-LONGEST_MINUTES * 60, LONGEST_MINUTES * 60 + 1, _STEP_S)
    grid = when + (steps * NS_PER_SECOND).astype("timedelta64[ns]")
    n, m = names.size, steps.size
    p = places(np.repeat(names, m), np.tile(grid, n))
    hc, zn = computed_altitude_azimuth(lat_deg, lon_deg, p.gha_deg, p.dec_deg)
    hc, zn = hc.reshape(n, m), zn.reshape(n, m)
    centre = LONGEST_MINUTES * 60 // _STEP_S
    span = RATE_MINUTES * 60 // _STEP_S
    before, later = centre - span, centre + span
    hc_rate = (hc[:, later] - hc[:, before]) / (2 * RATE_MINUTES) * ARCMIN_PER_DEG
    bend = (hc[:, later] + hc[:, before] - 2.0 * hc[:, centre]) / (2 * RATE_MINUTES ** 2) * ARCMIN_PER_DEG
    zn_rate = wrap_180(zn[:, later] - zn[:, before]) / (2 * RATE_MINUTES)
    hc_printed, zn_printed = printed_deg(hc[:, centre]), wrap_360(np.round(zn[:, centre], 1))
    rate_printed, bend_printed = np.round(hc_rate, 2), np.round(bend, 3)
    minutes = steps / 60.0
    predicted = hc_printed[:, None] + minutes[None, :] * (rate_printed[:, None] + minutes[None, :]
                                                          * bend_printed[:, None]) / ARCMIN_PER_DEG
    off = np.abs(hc - predicted) * ARCMIN_PER_DEG > RATE_TOLERANCE_ARCMIN
    # the span: the whole minutes either side of the planned time with every half minute up to them within
    # tolerance, the lesser of before and after
    first_bad = np.where(off, np.abs(minutes)[None, :], np.inf).min(axis=1)
    good = np.where(np.isinf(first_bad), LONGEST_MINUTES, np.maximum(np.ceil(first_bad) - 1.0, 0.0)).astype(int)
    # the limb and the preset at the planned time
    at = p.instants.ravel()[np.arange(n) * m + centre]
    mid = places(names, at)
    limb = np.full(n, "centre", dtype=object)
    limb[names == "Sun"] = "lower"
    bearing = np.full(n, np.nan)
    horns = np.zeros(n, dtype=bool)
    moon = names == "Moon"
    sun = places("Sun", at)
    sun_hc, sun_zn = computed_altitude_azimuth(lat_deg, lon_deg, sun.gha_deg, sun.dec_deg)
    if moon.any():
        lit, bearing_moon, vertical = moon_lit_limb(hc[moon, centre], zn[moon, centre], sun_hc[moon], sun_zn[moon])
        limb[moon], bearing[moon], horns[moon] = lit, bearing_moon, vertical
    _, phase = planet_phases(names, at, lat_deg, lon_deg, hc[:, centre], zn[:, centre])
    hs = preset_hs_deg(hc[:, centre], limb=limb, sd_arcmin=mid.sd_arcmin, hp_arcmin=mid.hp_arcmin, augment_sd=moon,
                       eye_height_m=eye_height_m, index_error_arcmin=index_error_arcmin, temperature_c=temperature_c,
                       pressure_hpa=pressure_hpa, lat_deg=lat_deg, zn_deg=zn[:, centre], phase_arcmin=phase)
    return SightPresets(when, float(lat_deg), float(lon_deg), names, hc_printed, zn_printed, rate_printed,
                        np.round(zn_rate, 2), good, limb, hs, bearing, horns, bend_printed)


__all__ = ["RATE_TOLERANCE_ARCMIN", "RATE_MINUTES", "LONGEST_MINUTES", "HORNS_VERTICAL_DEG", "moon_lit_limb", "preset_hs_deg",
           "SightPresets", "sight_presets"]
