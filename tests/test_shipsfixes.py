"""The ship's fixes and the exercises of a training log: only the ship's navigator's fixes keep the DR, the set and
drift and the noon; the cadets' exercises are fixed and compared with the ship, never restarting her DR.

The references: a passage sailed in scripts/make_passage.py's own code (fourth-order Runge-Kutta along the WGS 84
ellipsoid, with a current the log does not enter), sights from skyfield at the true positions (tests/conftest.py)
with each cadet's personal error and a seeded scatter, geographiclib for distances on the ellipsoid.
"""

from __future__ import annotations

import re
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from geographiclib.geodesic import Geodesic
from typer.testing import CliRunner

from navred.cli import app
from navred.jobs.shiptrack import SET_DRIFT_MIN_HOURS
from navred.jobs.voyage import process_log

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "scripts"))
import make_passage as passage  # noqa: E402  (sails the ship outside navred)

GEOD = Geodesic.WGS84
NM = 1852.0
START = pd.Timestamp("2026-10-05T01:00:00Z")
#: (personal error ′, scatter ′) of the watch; the navigator's sights carry no error at all, so that the ship's
#: positions are the truth to the fixes' own precision and any cadet's fix taken for the ship shows
WATCH = {"Mate Dunlin": (0.0, 0.0), "Cadet Ansel": (2.5, 0.6), "Cadet Birch": (-2.0, 0.8), "Cadet Corrie": (3.0, 0.5)}


@pytest.fixture(scope="module")
def training(ts, eph):
    """A day and a half at 7 kn on 230° with a current of 1.0 kn setting 060° (not entered in the log); each round
    (every 6 h, one of them at noon, 13:00 UTC in zone +1) taken by the navigator and then the three cadets, a
    minute apart, each with his own fix group."""
    from tests.conftest import skyfield_sight

    rng = np.random.default_rng(2211)
    until = START + pd.Timedelta(hours=36, minutes=10)
    track = passage.sail(START, 36.0, -10.0, [(START, 230.0, 7.0)], lambda t: (60.0, 1.0), until)
    rows = [{"utc": START.strftime("%Y-%m-%dT%H:%M:%SZ"), "entry": "departure", "dr_lat": 36.0, "dr_lon": -10.0,
             "course": 230.0, "speed": 7.0, "observer": ""}]
    for hours in (6, 12, 18, 24, 30, 36):
        when = START + pd.Timedelta(hours=hours)
        lat, lon = passage.position_at(track, when)
        stars = [s["body"] for s in passage.star_round(ts, eph, when, lat, lon)]
        for k, (observer, (personal, scatter)) in enumerate(WATCH.items()):
            at = when + pd.Timedelta(minutes=k)  # one observer a minute (the truth is sailed by the minute)
            t_lat, t_lon = passage.position_at(track, at)
            for star in stars:
                sight = skyfield_sight(ts, eph, star, at, t_lat, t_lon, eye_height_m=3.0)
                noise = (personal + (rng.normal(0.0, scatter) if scatter else 0.0)) / 60.0
                rows.append({"utc": at.strftime("%Y-%m-%dT%H:%M:%SZ"), "body": star,
                             "hs": sight["hs"] + noise, "eye_height_m": 3.0, "observer": observer,
                             "fix_group": f"{observer.split()[-1]} {hours:02d}",
                             "role": "ship" if observer.startswith("Mate") else "exercise"})
    return pd.DataFrame(rows), track


def _noon_truth(track, noons):
    return [passage.position_at(track, pd.Timestamp(u).tz_localize("UTC")) for u in noons["noon_utc"]]


@pytest.mark.parametrize("marked_by", ["role column", "--navigator"])
def test_the_dr_and_the_noons_follow_the_navigators_fixes_only(training, marked_by):
    """Marked by the log's role column or by naming the navigator: every known position after the departure is
    the navigator's fix, every noon lies within 0.2 nm of the truth, every set and drift is over a run of at least
    the stated hours (and found at the navigator's fixes: the current sailed, 1.0 kn setting 060°, within its
    95 % interval); the cadets' fixes are compared with the ship, each off by about his personal error."""
    log, track = training
    if marked_by == "--navigator":
        voyage = process_log(log.drop(columns=["role"]), plan=False, navigators=("mate  dunlin",))
    else:
        voyage = process_log(log, plan=False)
    days = voyage.days_work()
    track_dr = days.tracks[""]
    assert all(label.startswith("fix Dunlin") for label in track_dr.known_label[1:])
    assert len(track_dr.known_label) == 7
    assert any("kept by the fixes of Mate Dunlin" in note for note in days.notes)
    noons = days.noons
    assert len(noons) == 2 and noons["noon_from"].str.startswith("fix Dunlin").all()
    for (lat, lon), row in zip(_noon_truth(track, noons), noons.to_dict("records")):
        assert GEOD.Inverse(lat, lon, row["lat_deg"], row["lon_deg"])["s12"] / NM < 0.2
    sets = days.set_drift
    assert set(sets["fix_group"]) == {f"Dunlin {h:02d}" for h in (6, 12, 18, 24, 30, 36)}
    assert (sets["hours"] >= SET_DRIFT_MIN_HOURS).all()
    determined = sets[sets["drift_kn"].notna()]
    assert len(determined) >= 4
    assert (abs(determined["drift_kn"] - 1.0) <= determined["drift_95_kn"]).all()
    # the exercises: fixed and compared with the ship, never a known position of hers
    exercises = days.exercises
    assert set(exercises["observer"]) == {"Cadet Ansel", "Cadet Birch", "Cadet Corrie"} and len(exercises) == 18
    # each compared with the ship where she was (the navigator's fix a few minutes before, run on: the truth to
    # within the current's run over those minutes, 0.05 nm)
    for row in exercises.to_dict("records"):
        lat, lon = passage.position_at(track, pd.Timestamp(row["utc"]).tz_localize("UTC").round("min"))
        truth_off = GEOD.Inverse(lat, lon, row["lat_deg"], row["lon_deg"])["s12"] / NM
        assert row["off_nm"] == pytest.approx(truth_off, abs=0.1), row
    # each against the navigator's own fix of that round, carried on the minutes between along her DR
    assert exercises["ship_from"].str.match(r"the ship's fix Dunlin \d\d carried on [123] min along her DR").all()
    assert days.estimated.empty


def test_an_unmarked_training_log_combines_each_round_and_says_so(training):
    """The same log with no role and no navigator named: each round's four fixes are one ship's fix (their mean
    weighted by their ellipses), the output says so and how to mark the navigator; no set and drift over less
    than the stated run (the old way found 'drifts' of hundreds of knots between fixes seconds apart)."""
    log, track = training
    days = process_log(log.drop(columns=["role"]), plan=False).days_work()
    assert any("none marked as the ship's navigator" in n and "--navigator NAME" in n for n in days.notes)
    labels = days.tracks[""].known_label[1:]
    assert len(labels) == 6 and all("4 observers combined" in label for label in labels)
    assert (days.set_drift["hours"] >= SET_DRIFT_MIN_HOURS).all()
    assert len(days.set_drift) == 6
    # the round's mean carries the cadets' personal errors in part: still the right neighbourhood
    for (lat, lon), row in zip(_noon_truth(track, days.noons), days.noons.to_dict("records")):
        assert GEOD.Inverse(lat, lon, row["lat_deg"], row["lon_deg"])["s12"] / NM < 2.0


def test_a_navigator_who_is_not_in_the_log_is_refused_naming_the_observers(training, tmp_path):
    log, _ = training
    log.to_csv(tmp_path / "log.csv", index=False)
    result = CliRunner().invoke(app, ["days", str(tmp_path / "log.csv"), "--navigator", "Captain Nemo"])
    assert result.exit_code == 1
    assert "--navigator 'Captain Nemo' names no observer of the log; its observers: Cadet Ansel, Cadet Birch" \
        in result.output
    marked = CliRunner().invoke(app, ["days", str(tmp_path / "log.csv")])
    assert marked.exit_code == 0, marked.output
    assert "exercises against the ship's position" in marked.stdout and "Cadet Corrie:" in marked.stdout


def test_a_group_mixing_the_navigator_and_a_cadet_is_split_by_observer():
    """Trial finding: a fix group holding the navigator's sights and a cadet's (5′ low) was taken whole as the
    ship's, the cadet never named. Split by observer, the ship's noons are those of the navigator's sights
    alone (sample_sights/passage_log.csv, its sights invented from skyfield at the true track), by --navigator
    and by the role column alike, and a note names each group split."""
    log = pd.read_csv("sample_sights/passage_log.csv")
    sights = log.body.notna()
    alone = log.assign(observer=np.where(sights, "2/O Hale", ""))
    cadet = alone[sights].assign(observer="Cadet Pike", hs=alone[sights].hs - 5.0 / 60.0)
    mixed = pd.concat([alone, cadet], ignore_index=True)
    truth = process_log(alone, plan=False).days_work().noons
    voyage = process_log(mixed, plan=False, navigators=("2/O Hale",))
    noons = voyage.days_work().noons
    assert np.allclose(noons.lat_deg, truth.lat_deg, atol=1e-9) and np.allclose(noons.lon_deg, truth.lon_deg,
                                                                                atol=1e-9)
    assert any(n.startswith("fix group 14 0536 held the sights of 2/O Hale and of Cadet Pike: split by observer")
               for n in voyage.notes)
    assert "14 0536 (Cadet Pike)" in {g.name for g in voyage.groups}
    by_role = mixed.assign(role=np.where(mixed.observer == "Cadet Pike", "exercise",
                                         np.where(mixed.observer == "2/O Hale", "ship", "")))
    by_role_voyage = process_log(by_role, plan=False)
    noons = by_role_voyage.days_work().noons
    assert np.allclose(noons.lat_deg, truth.lat_deg, atol=1e-9)
    # one way in: the API's reduce_sights splits the group alike, and fix_positions gives the ship's fix from her
    # navigator's sights alone and the cadet's exercise apart, as the commands do
    from navred import fix_positions, reduce_sights

    api = fix_positions(reduce_sights(by_role))
    for name in ("14 0536", "14 0536 (Cadet Pike)"):
        mine, theirs = api[name], by_role_voyage.group(name).fix
        assert (mine.lat_deg, mine.lon_deg) == pytest.approx((theirs.lat_deg, theirs.lon_deg), abs=1e-6), name

    # and navred days counts the cadet's exercises in words ("6 fixes", never "6 fixs")
    import tempfile

    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "mixed.csv"
        mixed.to_csv(path, index=False)
        text = CliRunner().invoke(app, ["days", str(path), "--navigator", "2/O Hale"]).stdout
    assert "Cadet Pike: 6 fixes, 3 estimated positions" in text


@pytest.fixture(scope="module")
def training_day(ts, eph):
    """A training day sailed in the test's own code (make_passage.sail: RK4 on the WGS 84 ellipsoid): 6 kn on 250°
    from 38° N 010° W, a current of 1.2 kn setting 060° that the log does not enter; the navigator's star fix at
    the morning twilight, then at the Sun's meridian passage over the ship (skyfield) the navigator's Sun and the
    cadets' a minute later, and the cadets' own star fixes at the morning twilight. Every sight from skyfield at the
    true position; the navigator's without error, each cadet's with his personal error (′) alone."""
    from tests.conftest import skyfield_sight

    start = pd.Timestamp("2026-04-14T04:00:00Z")
    until = start + pd.Timedelta(hours=12)
    track = passage.sail(start, 38.0, -10.0, [(start, 250.0, 6.0)], lambda t: (60.0, 1.2), until)
    rounds = dict((kind, when) for when, kind in reversed(passage.sky_rounds(ts, eph, track, start, until)))
    cadets = {"Cadet Ansel": 3.0, "Cadet Birch": -2.0}
    rows = [{"utc": start.strftime("%Y-%m-%dT%H:%M:%SZ"), "entry": "departure", "dr_lat": 38.0, "dr_lon": -10.0,
             "course": 250.0, "speed": 6.0}]

    def sight(body, at, observer, error, group, limb=""):
        lat, lon = passage.position_at(track, at)
        hs = skyfield_sight(ts, eph, body, at, lat, lon, limb=limb, eye_height_m=3.0)["hs"] + error / 60.0
        rows.append({"utc": at.strftime("%Y-%m-%dT%H:%M:%SZ"), "body": body, "limb": limb, "hs": hs,
                     "eye_height_m": 3.0, "observer": observer, "fix_group": group,
                     "role": "ship" if observer.startswith("2/O") else "exercise"})

    dawn = rounds["stars"]
    t_lat, t_lon = passage.position_at(track, dawn)
    stars = [s["body"] for s in passage.star_round(ts, eph, dawn, t_lat, t_lon)]
    for k, (observer, error) in enumerate([("2/O Hale", 0.0), *cadets.items()]):
        for star in stars:
            sight(star, dawn + pd.Timedelta(minutes=k), observer, error, f"dawn {observer.split()[-1]}")
    noon = rounds["noon"]
    sight("Sun", noon, "2/O Hale", 0.0, "noon Hale", "lower")
    for k, (observer, error) in enumerate(cadets.items()):
        sight("Sun", noon + pd.Timedelta(minutes=k + 1), observer, error, f"noon {observer.split()[-1]}", "lower")
    return pd.DataFrame(rows), track, cadets, noon


def test_a_cadets_noon_is_marked_against_the_ships_own_noon_latitude_not_her_dr(training_day):
    """Trial finding: a cadet's noon Sun line was marked against the ship's DR run 7 h from her morning fix with
    no current allowed (4.6 nm out), not against the navigator's own meridian altitude at that time. Each cadet's
    noon position now stands off the ship's by his personal error (1′ of altitude: 1 nm along the Sun's bearing,
    here the meridian; # common practice) to 0.25 nm, against the navigator's estimated position of that noon carried
    the minute along her DR, and the output says so; the DR at that time is over 5 nm from the truth (the current
    the log leaves out), so marking against it would have been wrong by as much."""
    log, track, cadets, noon = training_day
    days = process_log(log, plan=False).days_work()
    table = days.exercises
    noons = table[table["fix_group"].str.startswith("noon")]
    assert set(noons["observer"]) == set(cadets) and (noons["kind"] == "estimated position").all()
    for row in noons.to_dict("records"):
        # the ship's EP named by what it rests on (a navigator's trial), its group after it
        assert re.match(r"the ship's EP from the Sun's meridian altitude \(row \d+\), 12:4\d UTC \(fix group noon Hale\)",
                        row["ship_from"]), row
        assert row["ship_from"].endswith(" carried on 1 min along her DR") or "2 min" in row["ship_from"], row
        # to 0.25 nm: each line's foot lies on the perpendicular from a DR ~5 nm out (the current left out), and
        # the Sun's bearing turns about 1° in the minutes between the lines (0.1 nm along them)
        assert row["off_nm"] == pytest.approx(abs(cadets[row["observer"]]), abs=0.25), row
        # high (a positive personal error) puts the cadet toward the Sun: south of the ship, in the northern spring
        assert (90.0 < row["bearing_deg"] < 270.0) == (cadets[row["observer"]] > 0), row
    # the ship's DR at noon, carried from her morning fix without the current, is far out: the old reference
    dr_lat, dr_lon, _ = days.tracks[""].positions(np.array([noon.value]))
    t_lat, t_lon = passage.position_at(track, noon)
    assert GEOD.Inverse(t_lat, t_lon, float(dr_lat[0]), float(dr_lon[0]))["s12"] / NM > 5.0
    # the dawn fixes against the navigator's own fix of that round
    dawn = table[table["fix_group"].str.startswith("dawn")]
    assert len(dawn) == 2 and dawn["ship_from"].str.startswith("the ship's fix dawn Hale carried on").all()


def test_the_days_text_says_what_the_exercises_are_marked_against(training_day, tmp_path):
    log, _, _, _ = training_day
    log.to_csv(tmp_path / "day.csv", index=False)
    result = CliRunner().invoke(app, ["days", str(tmp_path / "day.csv")])
    assert result.exit_code == 0, result.output
    assert ("each marked against the ship's best position at its time: her own fixes (2), her EPs from single "
            "lines (2)") in result.stdout


def test_navigator_is_taken_alike_by_every_command_that_keeps_the_dr(training, tmp_path):
    """Trial finding: `workbook` had no --navigator (only the role column) while `days` had. The training log
    without its role column, the navigator named by --navigator: `days`, `workbook`, `fix` and `reduce` take it
    alike (one way in, one answer): the workbook's Noon report holds the noons `days --csv` gives, `fix --csv`
    fixes the same groups as the day's work, and `reduce --csv` gives each sight the DR the day's work does."""
    import io

    import openpyxl

    log, _ = training
    path = tmp_path / "watch.csv"
    log.drop(columns=["role"]).to_csv(path, index=False)
    runner = CliRunner()
    days = runner.invoke(app, ["days", str(path), "--navigator", "Mate Dunlin", "--csv"])
    assert days.exit_code == 0, days.output
    noons = pd.read_csv(io.StringIO(days.stdout))
    book = tmp_path / "watch.xlsx"
    made = runner.invoke(app, ["workbook", str(path), "--navigator", "Mate Dunlin", "-o", str(book), "--pictures",
                               "none"])
    assert made.exit_code == 0, made.output
    cells = [str(c) for row in openpyxl.load_workbook(book)["Noon report"].iter_rows(values_only=True) for c in row
             if c is not None]
    assert all(p in cells for p in noons["noon_position"]) and len(noons) == 2
    assert all("fix Dunlin" in f for f in noons["noon_from"])
    unnamed = runner.invoke(app, ["workbook", str(path), "-o", str(tmp_path / "other.xlsx"), "--pictures", "none"])
    other = [str(c) for row in openpyxl.load_workbook(tmp_path / "other.xlsx")["Noon report"].iter_rows(
        values_only=True) for c in row if c is not None]
    assert unnamed.exit_code == 0 and any("4 observers combined" in c for c in other)
    fixed = runner.invoke(app, ["fix", str(path), "--navigator", "Mate Dunlin", "--csv"])
    assert fixed.exit_code == 0, fixed.output
    reduced = runner.invoke(app, ["reduce", str(path), "--navigator", "Mate Dunlin", "--csv"])
    assert reduced.exit_code == 0, reduced.output
    voyage = process_log(path, plan=False, navigators=("Mate Dunlin",))
    table = pd.read_csv(io.StringIO(reduced.stdout))
    assert np.allclose(table["dr_lat_deg"], voyage.reduced["dr_lat_deg"].astype(float), atol=1e-9)
    refused = runner.invoke(app, ["workbook", str(path), "--navigator", "Captain Nemo", "-o", str(tmp_path / "x.xlsx")])
    assert refused.exit_code == 1 and "names no observer of the log" in refused.output
