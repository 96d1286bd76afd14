"""The navigational star table and name matching."""

from __future__ import annotations

import numpy as np
import pytest

from navred.errors import BodyNameError
from navred.stars import canonical_body_name, known_bodies, star_index, star_table


def test_table_has_the_57_selected_stars_plus_polaris():
    table = star_table()
    assert len(table) == 58
    assert sorted(table.number[table.number > 0]) == list(range(1, 58))
    assert "Polaris" in set(table.name)
    assert np.all(table.magnitude < 3.2)  # every selected star is bright (common practice)


def test_catalogue_places_agree_with_pyephem_star_catalogue():
    # Reference: PyEphem's own star catalogue (independent data, J2000 places): each navred
    # Hipparcos row, moved to J2000 by its proper motion, lies within 1′ of PyEphem's star of that
    # name. This checks the Hipparcos numbers recalled from memory in scripts/make_star_table.py.
    import ephem

    table = star_table()
    for i, name in enumerate(table.name):
        star = ephem.star({"Gienah": "Gienah Corvi"}.get(name, name))
        star.compute("2000/1/1 12:00", epoch="2000")
        years = 8.75
        dec = table.dec_deg[i] + table.pm_dec_mas_per_year[i] * years / 3.6e6
        ra = table.ra_deg[i] + table.pm_ra_cosdec_mas_per_year[i] * years / 3.6e6 / np.cos(np.radians(dec))
        separation_arcmin = np.degrees(np.arccos(np.clip(
            np.sin(np.radians(dec)) * np.sin(star.a_dec)
            + np.cos(np.radians(dec)) * np.cos(star.a_dec) * np.cos(np.radians(ra) - star.a_ra), -1, 1))) * 60
        assert separation_arcmin < 1.0, name


@pytest.mark.parametrize("written, name", [
    ("sirius", "Sirius"), ("RIGIL KENT", "Rigil Kentaurus"), ("Al Na'ir", "Alnair"),
    ("kaus aust.", "Kaus Australis"), ("Gienah Corvi", "Gienah"), ("moon", "Moon"),
    ("Alpha Centauri", "Rigil Kentaurus"), ("Zuben'elgenubi", "Zubenelgenubi"),
])
def test_names_match_common_spellings(written, name):
    assert canonical_body_name(written) == name


def test_unknown_name_lists_the_closest():
    with pytest.raises(BodyNameError, match="closest: Betelgeuse"):
        canonical_body_name("Betelguese")
    with pytest.raises(BodyNameError, match="empty"):
        canonical_body_name("  ")
    with pytest.raises(BodyNameError, match="not a star"):
        star_index("Venus")


def test_known_bodies_lists_sun_moon_planets_and_stars():
    bodies = known_bodies()
    assert bodies[:6] == ["Sun", "Moon", "Venus", "Mars", "Jupiter", "Saturn"]
    assert len(bodies) == 64
