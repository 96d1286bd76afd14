"""The navigational star table and star apparent places.

The table (57 selected stars plus Polaris, from Hipparcos 2) ships in
``navred/data/navigational_stars.csv``; see ``navred/data/README.md`` for its
provenance. Names match case-insensitively, ignoring spaces, hyphens and
apostrophes, with the common alternative spellings listed below.
"""

from __future__ import annotations

import csv
import difflib
import functools
import importlib.resources
import re
from dataclasses import dataclass

import erfa
import numpy as np
from numpy.typing import ArrayLike

from .constants import DAYS_PER_JULIAN_YEAR, JD_HIPPARCOS_EPOCH
from .errors import BodyNameError


@dataclass(frozen=True)
class StarTable:
    """Columns of the star table as arrays, in list order (Polaris last)."""

    number: np.ndarray
    name: np.ndarray
    hip: np.ndarray
    ra_deg: np.ndarray
    dec_deg: np.ndarray
    parallax_mas: np.ndarray
    pm_ra_cosdec_mas_per_year: np.ndarray
    pm_dec_mas_per_year: np.ndarray
    magnitude: np.ndarray

    def __len__(self) -> int:
        return len(self.name)


@functools.lru_cache(maxsize=1)
def star_table() -> StarTable:
    """The bundled navigational star table."""
    text = (importlib.resources.files("navred") / "data" / "navigational_stars.csv").read_text()
    rows = list(csv.DictReader(line for line in text.splitlines() if not line.startswith("#")))

    def column(key, kind=float):
        return np.array([kind(r[key]) for r in rows])

    return StarTable(column("number", int), np.array([r["name"] for r in rows], dtype=object),
                     column("hip", int), column("ra_deg"), column("dec_deg"),
                     column("parallax_mas"), column("pm_ra_cosdec_mas_per_year"),
                     column("pm_dec_mas_per_year"), column("hp_mag"))


# Alternative spellings met in almanacs, star charts and old logbooks (common practice).
_ALIASES = {
    "alnair": "Alnair", "alnai r": "Alnair", "alnaír": "Alnair", "alnaiir": "Alnair",
    "rigilkent": "Rigil Kentaurus", "rigilkentaurus": "Rigil Kentaurus",
    "alphacentauri": "Rigil Kentaurus", "rigelkentaurus": "Rigil Kentaurus",
    "toliman": "Rigil Kentaurus",
    "kausaust": "Kaus Australis", "kausaustralis": "Kaus Australis",
    "suhail": "Suhail", "alsuhail": "Suhail", "gienahcorvi": "Gienah", "gienah": "Gienah",
    "zubenelgenubi": "Zubenelgenubi", "zubenelgenubi2": "Zubenelgenubi",
    "zubenelgenubialpha": "Zubenelgenubi",
    "elnath": "Elnath", "alnath": "Elnath", "alnilam": "Alnilam",
    "menkent": "Menkent", "hadar": "Hadar", "agena": "Hadar", "betahcentauri": "Hadar",
    "betelgeuse": "Betelgeuse", "betelgeux": "Betelgeuse", "betelgeuze": "Betelgeuse",
    "alphecca": "Alphecca", "gemma": "Alphecca", "alphekka": "Alphecca",
    "rasalhague": "Rasalhague", "rasalague": "Rasalhague",
    "eltanin": "Eltanin", "etamin": "Eltanin", "mirfak": "Mirfak", "mirphak": "Mirfak",
    "northstar": "Polaris", "polestar": "Polaris", "alkaid": "Alkaid", "benetnasch": "Alkaid",
    "benetnash": "Alkaid", "dubhe": "Dubhe", "achernar": "Achernar", "acrux": "Acrux",
    "gacrux": "Gacrux", "fomalhaut": "Fomalhaut", "fomalhault": "Fomalhaut",
    "procyon": "Procyon", "alpheratz": "Alpheratz", "sirrah": "Alpheratz",
    "miaplacidus": "Miaplacidus", "avior": "Avior", "canopus": "Canopus",
}
SOLAR_SYSTEM = {"sun": "Sun", "moon": "Moon", "venus": "Venus", "mars": "Mars",
                "jupiter": "Jupiter", "saturn": "Saturn"}


#: the planets that are not navigational (the almanac gives no place for them): named as such when written
OTHER_PLANETS = {"mercury": "Mercury", "uranus": "Uranus", "neptune": "Neptune", "pluto": "Pluto (a dwarf planet)"}
#: how alike a name must be spelt to a body's to be suggested (difflib's ratio: 'Sirus' and 'Sirius' 0.91,
#: 'Sattern' and 'Saturn' 0.77; 'Mercury' and 'Arcturus', alike in letters only, 0.53)
NEAR_SPELLING = 0.75


def _key(name: str) -> str:
    return re.sub(r"[\s\-_'’`.]", "", name.strip().lower())


@functools.lru_cache(maxsize=1)
def _lookup() -> dict[str, str]:
    table = {_key(n): n for n in star_table().name}
    table.update(_ALIASES)
    table.update(SOLAR_SYSTEM)
    return table


def known_bodies() -> list[str]:
    """Every body name navred knows: the Sun, Moon and four planets, then the stars."""
    return list(SOLAR_SYSTEM.values()) + list(star_table().name)


def canonical_body_name(name: str) -> str:
    """The catalogue name of a body written any common way; raises with the closest names.

    >>> canonical_body_name("rigil kent")
    'Rigil Kentaurus'
    >>> canonical_body_name("SUN")
    'Sun'
    """
    if not isinstance(name, str) or not name.strip():
        raise BodyNameError(f"body name {name!r} is empty or not text; known bodies: "
                            f"{', '.join(known_bodies()[:8])}, ... (see navred bodies)")
    name = str(name)  # (a numpy string too: a message shows the name as written, never numpy's repr)
    found = _lookup().get(_key(name))
    if found is not None:
        return found
    if _key(name) in ("aries", "firstpointofaries"):
        raise BodyNameError(f"{name!r} is the first point of Aries, not a body with a place of its own: its GHA is "
                            "GHA Aries (gha_aries_deg of every place; navred almanac Aries prints it)")
    other = OTHER_PLANETS.get(_key(name))
    if other is not None:
        raise BodyNameError(f"unknown body {name!r}: {other} is not one of the navigational planets (Venus, Mars, "
                            "Jupiter, Saturn), the four the nautical almanac tabulates and navred reduces; navred "
                            "takes the Sun, the Moon, those four planets and the navigational stars (navred bodies)")
    # near spellings only (a name that merely shares letters, 'Mercury' and 'Arcturus', is no suggestion)
    close = difflib.get_close_matches(_key(name), list(_lookup()), n=3, cutoff=NEAR_SPELLING)
    names = list(dict.fromkeys(_lookup()[c] for c in close))
    hint = f"closest: {', '.join(names)}" if names else "no name navred knows is spelt like it; see 'navred bodies'"
    raise BodyNameError(f"unknown body {name!r}; {hint}")


def star_index(name: str) -> int:
    """Row of a star in :func:`star_table` (raises for an unknown or non-star name)."""
    canonical = canonical_body_name(name)
    names = list(star_table().name)
    if canonical not in names:
        raise BodyNameError(f"{canonical} is not a star of the navigational list")
    return names.index(canonical)


def star_catalogue_directions(index: ArrayLike, tt1: ArrayLike, tt2: ArrayLike, earth_position_au: ArrayLike) -> np.ndarray:
    """Astrometric (catalogue-to-date) unit vectors of stars as seen from the Earth, shape (3, ...).

    Space motion from the catalogue epoch J1991.25 and annual parallax through
    ERFA ``pmpx`` (IAU SOFA); ``earth_position_au`` is the Earth's barycentric
    position in au, shape (3, ...).
    """
    table = star_table()
    index = np.asarray(index, dtype=int)
    ra = np.radians(table.ra_deg[index])
    dec = np.radians(table.dec_deg[index])
    mas = np.radians(1.0 / 3.6e6)
    pm_ra = table.pm_ra_cosdec_mas_per_year[index] * mas / np.cos(dec)  # ERFA wants dRA/dt
    pm_dec = table.pm_dec_mas_per_year[index] * mas
    parallax_arcsec = table.parallax_mas[index] / 1000.0
    years = ((np.asarray(tt1) - JD_HIPPARCOS_EPOCH) + tt2) / DAYS_PER_JULIAN_YEAR
    pob = np.moveaxis(np.asarray(earth_position_au), 0, -1)
    directions = erfa.pmpx(ra, dec, pm_ra, pm_dec, parallax_arcsec, 0.0, years, pob)
    return np.moveaxis(directions, -1, 0)
