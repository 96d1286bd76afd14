"""The run between the sights of a ship stopped (speed 0) is said, "stopped (0 kn)", in every output
(the console, ``navred fix --csv``, the workbook's Fixes sheet); it was printed empty ("course and speed")."""

from __future__ import annotations

import io

import numpy as np
import pandas as pd
from typer.testing import CliRunner

from navred.cli import app
from navred.fixresult import run_words
from navred.jobs.voyage import process_log
from navred.jobs.voyagetables import fixes_table
from navred.status import RunFrom

runner = CliRunner()


def test_the_run_words_say_stopped_and_each_change():
    # common practice: the words a navigator writes for a run, a speed of 0 being "stopped"
    nan = float("nan")
    assert run_words(RunFrom.COURSE_AND_SPEED, np.array([215.0] * 3), np.zeros(3), np.zeros(3),
                     np.zeros(3)) == "course and speed, stopped (0 kn)"
    assert run_words(RunFrom.COURSE_AND_SPEED, np.array([215.0, 215.0, 215.0]), np.array([6.5, 0.0, 0.0]),
                     np.zeros(3), np.zeros(3)) == "course and speed, 215° at 6.5 kn, then stopped (0 kn)"
    assert run_words(RunFrom.COURSE_AND_SPEED, np.array([nan, nan]), np.array([nan, 0.0]), np.zeros(2),
                     np.zeros(2)) == "course and speed, stopped (no speed given: 0 kn), then stopped (0 kn)"
    assert (run_words(RunFrom.COURSE_SPEED_AND_CURRENT, np.array([40.0, 40.0]), np.array([0.0, 0.0]),
                      np.array([160.0, 160.0]), np.array([1.5, 1.5]))
            == "course, speed and current, stopped (0 kn); current 160° 1.5 kn")
    assert run_words(RunFrom.NONE, np.zeros(2), np.zeros(2), np.zeros(2), np.zeros(2)) == ""
    assert run_words(RunFrom.OWN_DRS, np.zeros(2), np.zeros(2), np.zeros(2), np.zeros(2)) == "the rows' own DRs"


def _stopped_log(tmp_path):
    """The demo's Sun-run-Sun rows (sample_sights/, invented) written as a ship stopped: speed 0 kn."""
    frame = pd.read_csv("sample_sights/demo_sights.csv", dtype=str).iloc[:3].copy()
    frame["speed_kn"] = "0"
    path = tmp_path / "stopped.csv"
    frame.to_csv(path, index=False)
    return path


def test_a_stopped_ship_is_said_stopped_on_the_console_in_the_csv_and_in_the_workbook(tmp_path):
    log = _stopped_log(tmp_path)
    shown = runner.invoke(app, ["fix", str(log)])
    assert shown.exit_code == 0, shown.output
    runs = [line for line in shown.output.splitlines() if "run between the sights:" in line]
    assert runs == ["  run between the sights: course and speed, stopped (0 kn)"], runs
    table = runner.invoke(app, ["fix", str(log), "--csv"])
    assert table.exit_code == 0, table.output
    fixes = pd.read_csv(io.StringIO(table.stdout))
    assert fixes["run"].tolist() == ["course and speed, stopped (0 kn)"]
    # the workbook's Fixes sheet is this table (navred.jobs.voyagetables.fixes_table; the whole workbook, plotting
    # sheets and all, takes seconds to write)
    sheet = fixes_table(process_log(str(log), plan=False))
    assert sheet["run between the sights"].tolist() == ["course and speed, stopped (0 kn)"]


def test_a_ship_under_way_keeps_her_course_and_speed_in_the_words(tmp_path):
    # the demo's own run (sample_sights/README.md: 215° true at 6.5 knots)
    shown = runner.invoke(app, ["fix", "sample_sights/demo_sights.csv"])
    assert shown.exit_code == 0, shown.output
    assert "  run between the sights: course and speed, 215° at 6.5 kn" in shown.output.splitlines()
