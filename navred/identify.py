"""Identifying an unknown body from a rough altitude and azimuth: the catalogue ranked by how well it matches."""

from __future__ import annotations

import numpy as np

from .almanac import places
from .angles import wrap_180
from .magnitudes import magnitudes
from .stars import known_bodies
from .timescales import utc_datetime64
from .triangle import computed_altitude_azimuth


def identify(altitude_deg: float, azimuth_deg: float, utc: object, lat_deg: float, lon_deg: float, *,
             altitude_sigma_deg: float = 1.0, azimuth_sigma_deg: float = 3.0) -> dict:
    """Catalogue bodies ranked by how well they match an observed altitude and azimuth.

    The score is √((ΔH/σH)² + (ΔZ/σZ)²) with the expected errors of a rough observation
    (1° in altitude from a sextant read roughly, 3° in azimuth from a hand bearing
    compass); the lowest score ranks first. Returns arrays ``body``, ``magnitude`` (its visual magnitude
    then: the brighter the smaller, Venus about −4, Spica 1.0; how bright it looked tells two close
    candidates apart), ``hc_deg``, ``zn_deg``, ``altitude_difference_deg``, ``azimuth_difference_deg`` and
    ``score``, best first.
    """
    names = np.array(known_bodies(), dtype=object)
    when = np.full(names.size, utc_datetime64(utc))
    p = places(names, when)
    hc, zn = computed_altitude_azimuth(lat_deg, lon_deg, p.gha_deg, p.dec_deg)
    d_alt = altitude_deg - hc
    d_az = wrap_180(azimuth_deg - zn)
    score = np.hypot(d_alt / altitude_sigma_deg, d_az / azimuth_sigma_deg)
    order = np.argsort(score, kind="stable")
    return {"body": names[order], "magnitude": magnitudes(names, when)[order], "hc_deg": hc[order], "zn_deg": zn[order],
            "altitude_difference_deg": d_alt[order], "azimuth_difference_deg": d_az[order],
            "score": score[order]}
