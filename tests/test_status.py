"""The status enums: one table of codes and meanings, and the very words written in navred's tables."""

from __future__ import annotations

import numpy as np
import pandas as pd

from navred.status import (
    FIX_KIND_TABLE,
    RUN_FROM_TABLE,
    SIGHT_STATUS_TABLE,
    FixKind,
    RunFrom,
    SightStatus,
    usable,
)


def test_every_member_has_a_code_and_a_meaning():
    for enum, table in ((SightStatus, SIGHT_STATUS_TABLE), (FixKind, FIX_KIND_TABLE), (RunFrom, RUN_FROM_TABLE)):
        assert set(table) == set(enum)
        for member in enum:
            assert isinstance(member.code, int) and member.meaning
    # as ERFA's status codes: 0 good, + a warning, − an error
    assert (SightStatus.OK.code, SightStatus.WARNING.code, SightStatus.ERROR.code) == (0, 1, -1)


def test_members_are_the_words_written_and_compare_in_arrays_and_tables():
    assert f"{FixKind.LINE}" == str(FixKind.LINE) == "line of position"
    words = np.array(["ok", "error", "warning"], dtype=object)
    assert (words != SightStatus.ERROR).tolist() == [True, False, True]
    assert usable(pd.Series(words)).tolist() == [True, False, True]
    assert pd.DataFrame({"kind": [FixKind.LATITUDE]}).to_csv(index=False).splitlines() == ["kind", "latitude"]


def test_the_reduction_writes_the_members_words(tmp_path):
    from navred import reduce_sights

    log = pd.DataFrame({"utc": ["2026-03-26T19:45:00Z", "2026-03-26T19:47:00Z"], "body": ["Vega", "Vega"],
                        "hs": ["40 10.0", "95 0.0"], "dr_lat": ["43 14.1 N"] * 2, "dr_lon": ["013 03.7 W"] * 2,
                        "eye_height_m": [3.0, 3.0]})
    reduced = reduce_sights(log)
    assert set(reduced["status"]) <= {member.value for member in SightStatus}
    assert (reduced["status"] == SightStatus.ERROR).tolist() == [False, True]
