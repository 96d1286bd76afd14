"""Zones and the date line in the plan and the paper: the nautical zone of a longitude by one stated rule, a DR
run back only when said (and not too far), a zone kept that is not the DR's, the date line announced before the
twilight it changes, the paper's dates as the ship's, and every round's name its own."""

from __future__ import annotations

import numpy as np
import pytest

from navred.reckoning import DATE_LINE_ZONE_H, zone_description_h


@pytest.mark.parametrize(("lon_deg", "zd"), [
    (0.0, 0.0), (7.49, 0.0), (-7.49, 0.0), (7.5, -1.0), (-7.5, 1.0),  # common practice: 7° 30′ the first boundary
    (22.5, -2.0), (37.5, -3.0), (-37.5, 3.0), (52.5, -4.0),  # common practice: farther from Greenwich, every one
    (172.5, -12.0), (-172.5, 12.0), (179.99, -12.0), (-179.99, 12.0),
    (180.0, -12.0), (-180.0, -12.0),  # the 180° meridian: ZD −12 (the rule stated in docs/plan.md)
    (190.0, 11.0),  # 0–360°: 190° is 170° W, zone +11 (common practice)
])
def test_zone_rule_boundaries_one_side(lon_deg, zd):
    assert float(zone_description_h(lon_deg)) == zd


def test_zone_rule_no_negative_zero():
    # common practice: Greenwich's zone is 0; a −0 prints as '-0.0' in a table
    zones = zone_description_h(np.array([-0.0, -0.4, -7.0, 0.3]))
    assert not np.any(np.signbit(zones))
    assert DATE_LINE_ZONE_H == -12.0
    assert "-0" not in repr(zones.tolist())
