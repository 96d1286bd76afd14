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
    check_sky(sky_picture(plan).to_svg(), plan)


def test_the_committed_demo_sky_keeps_its_names_apart():
    """sample_sights/demo_sky.svg (scripts/make_demo_sight_plan.py): no text over another."""
    root = ET.parse("sample_sights/demo_sky.svg").getroot()
    texts = list(root.iter(f"{SVG}text"))
    assert len([e for e in texts if e.get("class") == "body label"]) >= 10
    texts_apart(texts)
