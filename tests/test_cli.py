"""The command line, driven through typer's test runner: exit codes and what a user sees."""

from __future__ import annotations

import io

import pandas as pd
from typer.testing import CliRunner

from navred.cli import app

runner = CliRunner()


def test_almanac_prints_navigational_form():
    result = runner.invoke(app, ["almanac", "Sun", "Vega", "--utc", "2026-03-20T18:42:10Z"])
    assert result.exit_code == 0, result.output
    assert "GHA Aries" in result.output
    lines = [line for line in result.output.splitlines() if line.startswith(("Sun", "Vega"))]
    assert len(lines) == 2
    assert "°" in lines[0] and "′" in lines[0] and (" N" in lines[0] or " S" in lines[0])
    assert "IERS" in result.output  # where UT1 came from is shown


def test_almanac_csv_is_machine_readable():
    result = runner.invoke(app, ["almanac", "Moon", "--utc", "2026-03-20T18:42:10Z", "--csv", "--dut1", "0.1"])
    assert result.exit_code == 0, result.output
    frame = pd.read_csv(io.StringIO(result.output))
    assert {"gha_deg", "dec_deg", "hp_arcmin", "sd_arcmin"} <= set(frame.columns)
    assert frame.ut1_source[0] == "given by the caller"


def test_errors_are_one_line_and_exit_1():
    result = runner.invoke(app, ["almanac", "Sirus", "--utc", "2026-03-20T18:42:10Z"])
    assert result.exit_code == 1
    assert "closest: Sirius" in result.output
    assert "Traceback" not in result.output
    result = runner.invoke(app, ["almanac", "Sun", "--utc", "2026-03-20T18:42:10"])
    assert result.exit_code == 1
    assert "no time zone" in result.output


def test_warnings_are_printed_not_hidden():
    result = runner.invoke(app, ["almanac", "Sun", "--utc", "2045-03-20T18:42:10Z"])
    assert result.exit_code == 0
    assert "warning:" in result.output and "IERS table" in result.output


def test_bodies_lists_the_catalogue():
    result = runner.invoke(app, ["bodies"])
    assert result.exit_code == 0
    assert "Rigil Kentaurus" in result.output and "Jupiter" in result.output


def test_help_on_every_command_has_an_example():
    for command in ("almanac", "bodies"):
        result = runner.invoke(app, [command, "--help"])
        assert result.exit_code == 0
        assert "Example:" in result.output
