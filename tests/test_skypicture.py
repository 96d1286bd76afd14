"""The sky picture of a sight plan (navred.figures.plotting.sky_picture), read back from its SVG with the
plotting sheet's own checks (tests/test_plotsheet.py: every text's box from the canvas's font metrics, the
separating axis theorem): no name over another name, a body, a ring or a line to the centre, even where two
planets stand together."""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET

import numpy as np
import pytest

from navred.figures.plotting import sky_picture
from navred.sightplan import sight_plans
from tests.test_plotsheet import SVG, overlap, points_of, strokes, texts_apart


def check_sky(svg: str, plan) -> None:
    root = ET.fromstring(svg)
    texts = list(root.iter(f"{SVG}text"))
    boxes = texts_apart(texts)
    names = [(e, box) for e, box in boxes if e.get("class") == "body label"]
    # every candidate is named once, on the picture or in the note under it
    note = " ".join(e.text for e in texts if e.get("class") == "caution")
    listed = re.search(r"No room on the picture for: (.+?)\.", note)
    listed = listed.group(1).split(", ") if listed else []
    assert sorted([e.text for e, _ in names] + listed) == sorted(map(str, plan.body))
    marks = [points_of(e) for e in root if e.get("class") in ("body", "ring")]
    lines = strokes(root, ("line to the centre", "leader"))
    for e, box in names:
        assert not any(overlap(box, mark) for mark in marks), f"{e.text!r} lies over a body"
        assert not any(overlap(box, stroke, slack=0.0) for _, stroke, _ in lines), f"{e.text!r} lies over a line"


@pytest.mark.parametrize("when, lat, lon", [("2026-03-26T05:56", 44.05, -12.44),  # the demo's morning
                                            ("2020-12-21T19:40", 10.0, -20.0)])
def test_the_sky_pictures_names_stand_apart(ts, eph, when, lat, lon):
    """Reference: skyfield's Jupiter and Saturn on 2020-12-21 19:40 UTC from 10° N, 20° W (the great
    conjunction) are a tenth of a degree apart: their dots coincide on the picture, their names do not."""
    plan = sight_plans(np.datetime64(when), lat, lon, count=3, min_alt_deg=5.0)[0]
    svg = sky_picture(plan, title="a sight plan").to_svg()
    check_sky(svg, plan)
    if when.startswith("2020"):
        from skyfield.api import wgs84

        place = (eph["earth"] + wgs84.latlon(lat, lon)).at(ts.utc(2020, 12, 21, 19, 40))
        jupiter, saturn = (place.observe(eph[n]).apparent() for n in ("jupiter barycenter", "saturn barycenter"))
        assert jupiter.separation_from(saturn).degrees < 0.2
        body = list(map(str, plan.body))
        assert {"Jupiter", "Saturn"} <= set(body)
        k, j = body.index("Jupiter"), body.index("Saturn")
        assert abs(plan.zn_deg[k] - plan.zn_deg[j]) < 0.2 and abs(plan.hc_deg[k] - plan.hc_deg[j]) < 0.2
        root = ET.fromstring(svg)
        shown = {e.text for e in root.iter(f"{SVG}text") if e.get("class") == "body label"}
        assert {"Jupiter", "Saturn"} <= shown  # both named on the picture, apart


def test_a_crowded_sky_names_every_body_apart_or_lists_it():
    """Invented: sixteen bodies a degree apart in one corner of the sky: each named apart (by a leader where it
    has to) or, with no room left, listed under the picture."""
    from navred.sightplan import SightPlan

    n = 16
    plan = SightPlan(np.datetime64("2026-03-26T05:56"), 44.0, -12.0, np.array([f"Body {k}" for k in range(n)]),
                     40.0 + np.arange(n) % 5 * 1.0, 100.0 + np.arange(n) // 5 * 1.0, np.full(n, 1.0),
                     np.full(n, 90.0), np.arange(n) < 3, 1.2, "invented")
    svg = sky_picture(plan).to_svg()
    check_sky(svg, plan)  # every body named once, on the picture or listed, no name over another or a mark
    assert svg.count('class="body label"') >= 3


def test_the_committed_demo_sky_keeps_its_names_apart():
    """sample_sights/demo_sky.svg (scripts/make_demo_sight_plan.py): no text over another."""
    root = ET.parse("sample_sights/demo_sky.svg").getroot()
    texts = list(root.iter(f"{SVG}text"))
    assert len([e for e in texts if e.get("class") == "body label"]) >= 10
    texts_apart(texts)


def _discs(root) -> list[tuple[str, float, float, float, bool]]:
    """Each filled or stroked circle of the picture in drawing order: (class, x, y, radius, filled)."""
    out = []
    for e in root:
        if e.get("class") in ("body", "body halo", "ring"):
            xy = np.array(points_of(e))
            centre = xy.mean(axis=0)
            out.append((e.get("class"), float(centre[0]), float(centre[1]),
                        float(np.hypot(*(xy - centre).T).max()), e.get("fill", "none") != "none"))
    return out


def test_a_star_beside_the_moon_keeps_its_dot_in_sight(ts, eph):
    """Trial finding: Spica 2° from the Moon (2026-12-04 16:27 UTC, 20° 09.7′ N 160° 52.2′ W: its morning
    plan) had its dot hidden under the Moon's dot and ring, its name floating beside nothing. Reference: skyfield
    puts them within 3° of each other then. The rings are drawn under every dot and the dots from the biggest to
    the smallest, so no dot is wholly covered by anything drawn after it, and Spica's dot lies over the Moon's."""
    from skyfield.api import Star, wgs84

    lat, lon = 20.0 + 9.7 / 60.0, -(160.0 + 52.2 / 60.0)
    plan = sight_plans(np.datetime64("2026-12-04T16:27"), lat, lon, count=4)[0]
    body = list(map(str, plan.body))
    assert {"Spica", "Moon"} <= set(body)
    place = (eph["earth"] + wgs84.latlon(lat, lon)).at(ts.utc(2026, 12, 4, 16, 27))
    spica = Star(ra_hours=(13, 25, 11.579), dec_degrees=(-11, 9, 40.75))  # Hipparcos (J2000), from memory
    assert place.observe(eph["moon"]).apparent().separation_from(place.observe(spica).apparent()).degrees < 3.0
    svg = sky_picture(plan, title="the trial's morning").to_svg()
    check_sky(svg, plan)
    discs = _discs(ET.fromstring(svg))
    kinds = [d[0] for d in discs]
    assert max(k for k, c in enumerate(kinds) if c == "ring") < min(k for k, c in enumerate(kinds) if c == "body")
    dots = [d for d in discs if d[0] == "body"]
    assert all(a[3] >= b[3] - 1e-6 for a, b in zip(dots, dots[1:]))  # biggest first
    for k, (_, x, y, r, _) in enumerate(discs):
        if discs[k][0] != "body":
            continue
        later = [d for d in discs[k + 1:] if d[4]]  # filled shapes drawn over it
        assert not any(np.hypot(x - lx, y - ly) + r <= lr + 1e-6 for _, lx, ly, lr, _ in later), (x, y)
    # Spica's dot is drawn over the Moon's, with a halo of the sky's colour round it
    disk = np.array(points_of(next(e for e in ET.fromstring(svg) if e.get("class") == "disk"))).mean(axis=0)
    centre = {name: _sky_centre(plan, name, disk) for name in ("Spica", "Moon")}
    order = [min(range(len(dots)), key=lambda j: np.hypot(dots[j][1] - centre[n][0], dots[j][2] - centre[n][1]))
             for n in ("Moon", "Spica")]
    assert order[0] < order[1]
    assert np.hypot(centre["Spica"][0] - centre["Moon"][0], centre["Spica"][1] - centre["Moon"][1]) < 8.0
    # Spica's name is beside its dot or joined to it by a leader (it stood 26 pt off with none: nobody's name)
    root = ET.fromstring(svg)
    label = next(box for e, box in texts_apart(list(root.iter(f"{SVG}text"))) if e.text == "Spica")
    corners = np.array(label, dtype=float).reshape(-1, 2)
    near = np.hypot(*(np.clip(centre["Spica"], corners.min(axis=0), corners.max(axis=0)) - centre["Spica"]))
    leaders = [np.array(points_of(e)) for e in root if e.get("class") == "leader"]
    def to_label(p):
        return np.hypot(*(np.clip(p, corners.min(axis=0), corners.max(axis=0)) - p))

    assert near < 14.0 or any(np.hypot(*(p[0] - centre["Spica"])) < 10.0 and to_label(p[-1]) < 2.0
                              for p in leaders), near
    # and no name's box runs over the rim (the trial: Zubenelgenubi's did)
    for e, box in texts_apart(list(root.iter(f"{SVG}text"))):
        if e.get("class") == "body label":
            d = np.hypot(*(np.array(box, dtype=float).reshape(-1, 2) - disk).T)
            assert (d < 215.0).all() or (d > 215.0).all(), e.text


def _sky_centre(plan, name, disk):
    """Where the picture puts a body: the zenith at the disk's centre, the horizon at its rim (215 pt), altitude
    linear inward, Zn clockwise from north at the top (the picture's own rule, written out here)."""
    k = list(map(str, plan.body)).index(name)
    r = (90.0 - plan.hc_deg[k]) / 90.0 * 215.0
    x, y = disk[0] + r * np.sin(np.radians(plan.zn_deg[k])), disk[1] - r * np.cos(np.radians(plan.zn_deg[k]))
    return float(np.atleast_1d(x)[0]), float(np.atleast_1d(y)[0])
