"""How bright each body looks: visual magnitudes for ranking bodies in a sight plan or for a compass bearing."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .almanac import phase_angle_deg, places, separation_deg
from .constants import AU_KM
from .stars import star_table
from .timescales import instants

#: V(1,0) and phase coefficients, J. Meeus, Astronomical Algorithms (2nd ed., 1998), ch. 41
#: (from memory). Saturn's rings are left out (up to about ±0.8 mag): these magnitudes only rank.
_PLANET_MAGNITUDE = {"Venus": (-4.40, 0.0009, 0.000239, -0.00000065), "Mars": (-1.52, 0.016, 0.0, 0.0),
                     "Jupiter": (-9.40, 0.005, 0.0, 0.0), "Saturn": (-8.88, 0.0, 0.0, 0.0)}


#: The Moon's magnitude by its phase angle α (degrees): −12.73 + 0.026 |α| + 4 × 10⁻⁹ α⁴, C. W. Allen,
#: Astrophysical Quantities (3rd ed., 1973), §66 (from memory): −12.7 full, about −10.1 at quarter, −8.9 at
#: a five-day crescent.
MOON_FULL_MAGNITUDE, MOON_PHASE_LINEAR, MOON_PHASE_QUARTIC = -12.73, 0.026, 4e-9


def moon_magnitude(phase_angle_deg_: ArrayLike) -> np.ndarray:
    """The Moon's visual magnitude by its phase angle (0° full, 180° new), Allen's formula."""
    alpha = np.abs(np.asarray(phase_angle_deg_, dtype=float))
    return MOON_FULL_MAGNITUDE + MOON_PHASE_LINEAR * alpha + MOON_PHASE_QUARTIC * alpha**4


SUN_MAGNITUDE = -26.7


#: A planet this bright or brighter can be found in daylight with a preset sextant (common practice;
#: from memory): Venus always, Jupiter and Mars near opposition.
DAYLIGHT_MAGNITUDE = -2.0


def magnitudes(bodies: ArrayLike, utc64: object) -> np.ndarray:
    """Visual magnitude of each (body, instant): stars from the catalogue (Hipparcos Hp),
    planets from their distances and phase angle, the Moon by its phase angle, the Sun as a fixed figure."""
    names = np.asarray(bodies, dtype=object)
    when = np.broadcast_to(np.asarray(utc64, dtype="datetime64[ns]"), names.shape)
    table = star_table()
    index = {name: i for i, name in enumerate(table.name)}
    out = np.array([table.magnitude[index[n]] if n in index else np.nan for n in names.ravel()]).reshape(names.shape)
    out = np.where(names == "Sun", SUN_MAGNITUDE, out)
    moon = names == "Moon"
    planet_names = np.array(list(_PLANET_MAGNITUDE), dtype=object)
    planet = np.isin(names, planet_names)
    lit = moon | planet
    if lit.any():
        # every Moon and planet row in one batch of instants, the Sun's place made once for them all
        batch = instants(when[lit])
        geo = places(names[lit], batch)
        sun = places("Sun", batch)
        phase = phase_angle_deg(geo, sun)
        values = np.empty(phase.shape)
        is_moon = moon[lit]
        values[is_moon] = moon_magnitude(phase[is_moon])
        if not is_moon.all():
            rows = ~is_moon
            v10, a1, a2, a3 = np.array([_PLANET_MAGNITUDE[n] for n in names[lit][rows]]).reshape(-1, 4).T
            delta_au = geo.distance_km[rows] / AU_KM
            earth_sun_au = sun.distance_km[rows] / AU_KM
            # heliocentric distance from the triangle Sun-Earth-planet (the elongation from the places)
            cos_e = np.cos(np.radians(separation_deg(geo.dec_deg[rows], geo.ra_hours[rows],
                                                     sun.dec_deg[rows], sun.ra_hours[rows])))
            r_au = np.sqrt(delta_au**2 + earth_sun_au**2 - 2 * delta_au * earth_sun_au * cos_e)
            i = phase[rows]
            values[rows] = v10 + 5 * np.log10(r_au * delta_au) + a1 * i + a2 * i**2 + a3 * i**3
        out[lit] = values
    return out
