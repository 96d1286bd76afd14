"""docs/sea-routine.md shows real commands and their real output: each ```console block's command is run on the
sample it names (sample_sights/day_at_sea.csv, invented by scripts/make_day_at_sea.py) and every output line the
page shows must be a line navred prints ('...' stands for lines left out). The noon it shows is checked against
the ship's true track (the sample's truth, sailed outside navred; geographiclib for the distance)."""

from __future__ import annotations

import re
import shlex
from pathlib import Path

import pandas as pd
import pytest
from geographiclib.geodesic import Geodesic
from typer.testing import CliRunner

from navred.cli import app

PAGE = Path(__file__).resolve().parent.parent / "docs" / "sea-routine.md"


def _blocks():
    text = PAGE.read_text(encoding="utf-8")
    return [block.strip("\n").splitlines() for block in re.findall(r"```console\n(.*?)```", text, re.S)]


@pytest.mark.parametrize("block", _blocks(), ids=lambda b: b[0][:60])
def test_every_output_line_on_the_page_is_what_navred_prints(block):
    command = block[0]
    assert command.startswith("$ navred ")
    result = CliRunner().invoke(app, shlex.split(command)[2:])
    assert result.exit_code == 0, result.output
    printed = [line.rstrip() for line in result.stdout.splitlines()]
    for line in block[1:]:
        if line.strip() in ("", "..."):
            continue
        assert line.rstrip() in printed, f"{command}: not printed: {line!r}"


def test_the_days_noon_lies_at_the_true_position():
    from navred.jobs.voyage import process_log

    truth = pd.read_csv("sample_sights/day_at_sea_truth.csv")
    truth["utc"] = pd.to_datetime(truth.utc)
    noon = process_log("sample_sights/day_at_sea.csv", plan=False).days_work().noons.iloc[0]
    true = truth[truth.utc == pd.Timestamp(noon["noon_utc"] + "Z")].iloc[0]
    miles = Geodesic.WGS84.Inverse(true.lat, true.lon, noon["lat_deg"], noon["lon_deg"])["s12"] / 1852.0
    assert miles < 0.2  # the page says 0.08 nm
    assert round(miles, 2) == 0.08
