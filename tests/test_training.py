"""Training records against a synthesized voyage with invented observers, and the track readers."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from navred.io.track import ReferenceTrack, TrackError, positions_at, read_track
from navred.jobs.training import training_report
from navred.jobs.voyage import process_log

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "scripts"))
import make_training_voyage as voyage_maker  # noqa: E402  (the invented voyage, synthesized with skyfield)


@pytest.fixture(scope="module")
def training_files(ts, eph, tmp_path_factory):
    folder = tmp_path_factory.mktemp("training")
    sights, track = voyage_maker.frozen_voyage(ts, eph, days=5, seed=77)  # (frozen by the script: --freeze)
    sights.to_csv(folder / "sights.csv", index=False)
    voyage_maker.write_gpx(track, folder / "track.gpx")  # written by gpxpy, not navred
    voyage_maker.write_nmea(track, folder / "track.nmea")  # written by pynmea2, not navred
    track.assign(utc=track.utc.dt.strftime("%Y-%m-%dT%H:%M:%SZ")).to_csv(folder / "track.csv", index=False)
    return folder, sights, track


def test_personal_errors_are_recovered_within_their_stated_uncertainty(training_files):
    """Three invented observers with personal errors +1.5′, 0′ and −0.8′ (see
    scripts/make_training_voyage.py): each estimate lies within its own 95 % interval of the truth."""
    folder, sights, _ = training_files
    voyage = process_log(folder / "sights.csv")
    report = training_report(voyage.reduced, read_track(folder / "track.gpx"), voyage.groups)
    truth = {name: personal for name, (personal, _) in voyage_maker.OBSERVERS.items()}
    for row in report.observers.to_dict("records"):
        assert abs(row["personal_error_arcmin"] - truth[row["observer"]]) <= row["interval_95_arcmin"], row
        scatter_truth = voyage_maker.OBSERVERS[row["observer"]][1]
        assert row["scatter_arcmin"] == pytest.approx(scatter_truth, rel=0.35)
    # each sight's error is what was planted (the synthesizer's own record), blunders included
    # the row a spreadsheet shows: the header is row 1, the first sight row 2
    merged = report.sights.merge(sights.reset_index().assign(row=lambda f: f["index"] + 2)[["row", "true_error_arcmin"]],
                                 on="row")
    assert np.abs(merged.error_arcmin - merged.true_error_arcmin).max() < 0.05
    assert (report.sights.blunder == (np.abs(merged.true_error_arcmin) > 5)).all()
    assert set(report.by_body["body_kind"]) == {"Sun", "star"}
    assert len(report.fixes) > 0 and "reference_inside_95" in report.fixes.columns


def test_gpx_nmea_and_csv_tracks_read_back_to_the_same_track(training_files):
    folder, _, track = training_files
    truth = track.utc.dt.tz_convert(None).to_numpy().astype("datetime64[ns]")
    for name in ("track.gpx", "track.nmea", "track.csv"):
        read = read_track(folder / name)
        assert len(read) == len(track), name
        assert (read.utc.astype("datetime64[ns]") == truth).all(), name
        # NMEA keeps 0.0001′ of arc (0.0002 nm); GPX and CSV keep more
        assert np.abs(read.lat_deg - track.lat).max() < 1e-5, name
        assert np.abs(read.lon_deg - track.lon).max() < 1e-5, name


def test_sights_outside_the_track_are_refused_with_a_message(training_files):
    folder, _, track = training_files
    short = track.iloc[: len(track) // 2]
    short.assign(utc=short.utc.dt.strftime("%Y-%m-%dT%H:%M:%SZ")).to_csv(folder / "short.csv", index=False)
    voyage = process_log(folder / "sights.csv")
    report = training_report(voyage.reduced, read_track(folder / "short.csv"), voyage.groups)
    outside = report.sights[~report.sights.within_track]
    assert len(outside) > 0 and outside.note.str.contains("outside the reference track").all()
    assert outside.error_arcmin.isna().all()


def test_interpolation_across_the_date_line():
    track = ReferenceTrack(np.array(["2026-01-01T00:00", "2026-01-01T02:00"], dtype="datetime64[ns]"),
                           np.array([0.0, 0.0]), np.array([179.5, -179.5]), "(test)",
                           pd.DataFrame(columns=["point", "field", "value", "reason"]))
    lat, lon, inside = positions_at(track, np.array(["2026-01-01T01:00"], dtype="datetime64[ns]"))
    assert inside[0] and abs(abs(lon[0]) - 180.0) < 1e-9


@pytest.mark.parametrize("content, name, fragment", [
    ("$GPRMC,230000.00,A,3604.4995,N,00953.3687,W,7.0,230.0,041026,,*00\n", "bad.nmea", "checksum"),
    ("<gpx><trk></trk></gpx>", "empty.gpx", "no GPX track, route or way points"),
    ("when,where\n1,2\n", "odd.csv", "needs columns"),
])
def test_bad_tracks_are_refused_clearly(tmp_path, content, name, fragment):
    path = tmp_path / name
    path.write_text(content)
    with pytest.raises(TrackError, match=fragment):
        read_track(path)


def test_training_command_on_the_demo(tmp_path):
    from typer.testing import CliRunner

    from navred.cli import app

    # the first day of the invented voyage: small data, since every picture is drawn
    sights = pd.read_csv("sample_sights/training_sights.csv", dtype=str, keep_default_na=False)
    day = tmp_path / "day.csv"
    sights.iloc[:60].to_csv(day, index=False)
    result = CliRunner().invoke(app, ["training", str(day), "--track",
                                      "sample_sights/training_track.gpx", "-o", str(tmp_path / "t.xlsx"),
                                      "-o", str(tmp_path / "summary.pdf"), "-o", str(tmp_path / "t.csv")])
    assert result.exit_code == 0, result.output
    assert "Cadet Ansel" in result.output and "personal error" in result.output
    assert (tmp_path / "summary.pdf").read_bytes().startswith(b"%PDF")
    import openpyxl

    assert "Training" in openpyxl.load_workbook(tmp_path / "t.xlsx").sheetnames


def test_one_body_groups_are_marked_by_their_distance_off_the_line(training_files):
    """The invented voyage's noon series (four Sun sights a few minutes apart, scripts/make_training_voyage.py)
    are not fixes: each is marked by the reference track's distance off its line (or latitude), never as a fix
    with a long ellipse; star fixes stay fixes."""
    folder, _, _ = training_files
    voyage = process_log(folder / "sights.csv")
    report = training_report(voyage.reduced, read_track(folder / "track.gpx"), voyage.groups)
    lines = report.fixes[report.fixes.kind != "fix"]
    fixes = report.fixes[report.fixes.kind == "fix"]
    assert len(lines) > 0 and len(fixes) > 0
    assert lines.note.str.contains("not a fix").all()
    assert lines["ellipse_semi_major_95_nm"].isna().all()
    # a line's distance from the reference is the planted personal error and noise, a few miles at most
    assert (lines["distance_from_reference_nm"] < 5.0).all()
    for group in voyage.groups:
        if group.fix is not None and not group.fix.is_fix:
            sun_only = set(voyage.reduced.body_name.iloc[group.rows]) == {"Sun"}
            assert sun_only and group.fix.spread_deg < 15


def test_a_voyage_of_one_day_gives_no_trend_and_says_why(tmp_path):
    """A trend needs three good sights spread over more than a day: the first day's sights of the invented
    training voyage give none, and the console, the instructor's page and the sheet say why instead of 'nan'."""
    import shutil
    import subprocess

    from typer.testing import CliRunner

    from navred.cli import app

    log = pd.read_csv("sample_sights/training_sights.csv", dtype=str, keep_default_na=False)
    log[log.utc.str.startswith("2026-10-05")].to_csv(tmp_path / "day.csv", index=False)
    result = CliRunner().invoke(app, ["training", str(tmp_path / "day.csv"), "--track",
                                      "sample_sights/training_track.gpx", "-o", str(tmp_path / "t.pdf")])
    assert result.exit_code == 0, result.output
    assert "nan" not in result.stdout.lower()
    assert "trend/day none: sights within a day" in result.stdout
    reader = shutil.which("pdftotext")  # poppler's, where the machine has it
    text = subprocess.run([reader, str(tmp_path / "t.pdf"), "-"], capture_output=True, text=True).stdout if reader else ""
    assert "nan" not in text.lower()
    if text:
        assert "none (see below)" in text


def test_a_fix_that_cannot_be_trusted_is_never_marked_plainly_inside_its_ellipse():
    """Trial finding: a fix headed CANNOT BE TRUSTED was reported 'reference inside the 95 % ellipse: yes' with no
    word of it; an ellipse that means nothing cannot vouch for the fix (common practice)."""
    from typer.testing import CliRunner

    from navred.cli import app

    voyage = process_log("sample_sights/training_sights.csv", plan=False)
    report = training_report(voyage.reduced, read_track("sample_sights/training_track.gpx"), voyage.groups)
    untrusted = {g.name: g.fix.untrusted for g in voyage.groups if g.fix is not None and g.fix.untrusted}
    assert untrusted  # the invented voyage holds one (a cadet's round)
    rows = report.fixes.set_index("fix_group").loc[list(untrusted)]
    assert all(v.endswith("(but the fix cannot be trusted)") for v in rows.reference_inside_95)
    assert all(n == f"CANNOT BE TRUSTED: {untrusted[g]}" for g, n in rows.note.items())
    text = CliRunner().invoke(app, ["training", "sample_sights/training_sights.csv", "--track",
                                    "sample_sights/training_track.gpx"]).stdout
    for name in untrusted:
        line = next(line for line in text.splitlines() if line.startswith(f"fix {name}:"))
        assert "(but the fix cannot be trusted); CANNOT BE TRUSTED:" in line


def test_the_instructors_summary_never_prints_a_signed_zero():
    # trial finding: the one-page summary printed "-0.00"; the trade never writes a signed zero (common practice)
    from navred.figures.training import hundredths

    assert [hundredths(v, True) for v in (-0.001, 0.004, 0.0, -0.0, 1.234, -1.236)] == [
        "0.00", "0.00", "0.00", "0.00", "+1.23", "-1.24"]
    assert [hundredths(v, False) for v in (-0.004, 0.456)] == ["0.00", "0.46"]
