"""The frozen skyfield results (tests/data/skyfield_frozen.json) are still what skyfield computes.

The suite reads skyfield's syntheses from that file (scripts/freeze_skyfield_references.py writes it);
this test recomputes a seeded sample of them live with skyfield, so that the file cannot drift from the
reference unnoticed (a new skyfield version, a changed synthesis).
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from tests.conftest import FROZEN_PATH, centre_of_light_offset_arcmin, sky_target


def test_a_sample_of_the_frozen_results_is_recomputed_live(ts, eph):
    from skyfield.api import wgs84

    frozen = json.loads(FROZEN_PATH.read_text(encoding="utf-8"))
    results = frozen["results"]
    keys = sorted(k for k in results if k.startswith("topocentric|"))
    assert len(keys) > 1000
    rng = np.random.default_rng(5)
    sample = [keys[i] for i in rng.choice(len(keys), 12, replace=False)]
    sample += [k for k in keys if k.split("|")[1] in ("Venus", "Mars")][:2]  # the centre of light too
    for key in sample:
        _, name, ns, lat, lon = key.split("|")
        t = ts.from_datetime(pd.Timestamp(int(ns), tz="UTC").to_pydatetime())
        topo = (eph["earth"] + wgs84.latlon(float(lat), float(lon))).at(t).observe(sky_target(ts, eph, name))
        alt, az, distance = topo.apparent().altaz()
        light = centre_of_light_offset_arcmin(eph, name, t, float(lat), float(lon)) if name in ("Venus", "Mars") \
            else 0.0
        live = [alt.degrees, az.degrees, distance.km, t.dut1, light]
        assert results[key] == pytest.approx(live, rel=1e-12, abs=1e-12), key
