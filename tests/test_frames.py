"""The DataFrame fronts of the core (navred.jobs.frames): the fix of many groups at once against one group at a
time, field by field."""

from __future__ import annotations

import dataclasses
import warnings

import numpy as np
import pandas as pd
import pytest

import navred
from navred.errors import NavredError
from navred.jobs.frames import GroupedFixes, fix_position, fix_positions
from navred.sailings import move_position
from navred.triangle import computed_altitude_azimuth


def same(a, b, path="fix"):
    """Two results equal in every field (NaN equal to NaN), naming the first that differs."""
    if dataclasses.is_dataclass(a):
        assert type(a) is type(b), path
        for f in dataclasses.fields(a):
            same(getattr(a, f.name), getattr(b, f.name), f"{path}.{f.name}")
    elif isinstance(a, np.ndarray) or isinstance(b, np.ndarray):
        a, b = np.asarray(a), np.asarray(b)
        assert a.shape == b.shape and a.dtype == b.dtype, path
        assert np.array_equal(a, b, equal_nan=a.dtype.kind in "fc"), path
    elif isinstance(a, float) and isinstance(b, float) and np.isnan(a) and np.isnan(b):
        return
    else:
        assert a == b, path


def groups_table(groups: int = 60, per_group: int = 4, seed: int = 11) -> pd.DataFrame:
    """Invented exact sights (Ho computed at a random true position, the DR 10-30 nm off), a 6′ blunder in
    some, a group of one sight and a group of parallel lines among them: the fixes' every kind and problem."""
    rng = np.random.default_rng(seed)
    lat, lon = rng.uniform(-60, 60, groups), rng.uniform(-180, 180, groups)
    gha = np.mod(rng.uniform(-70, 70, (groups, per_group)) - lon[:, None], 360.0)
    dec = np.clip(lat[:, None] + rng.uniform(-60, 60, (groups, per_group)), -60, 60)
    gha[1] = gha[1, 0]  # one group's bodies on one hour circle at one declination: parallel lines
    dec[1] = dec[1, 0]
    ho, _ = computed_altitude_azimuth(lat[:, None], lon[:, None], gha, dec)
    ho = ho + np.where(rng.uniform(size=ho.shape) < 0.08, 0.1, 0.0) + rng.normal(0, 0.3 / 60, ho.shape)
    dr_lat, dr_lon = move_position(lat, lon, rng.uniform(-20, 20, groups), rng.uniform(-20, 20, groups))
    start = pd.Timestamp("2025-06-01T20:00Z")
    table = pd.DataFrame({
        "gha_deg": gha.ravel(), "dec_deg": dec.ravel(), "ho_deg": ho.ravel(), "status": "ok",
        "sight_utc": start + pd.to_timedelta(np.tile(np.arange(per_group), groups) * 240
                                             + np.repeat(np.arange(groups), per_group) * 7200, unit="s"),
        "dr_lat_deg": np.repeat(dr_lat, per_group), "dr_lon_deg": np.repeat(dr_lon, per_group),
        "course_deg": 90.0, "speed_kn": 10.0,
        "fix_group": np.repeat([f"g{k}" for k in range(groups)], per_group),
        "row": np.arange(groups * per_group) + 2})
    table.loc[table.index[8:11], "status"] = "error"  # group g2 keeps one sight
    return table


def test_every_group_fixed_at_once_is_what_it_is_alone():
    table = groups_table()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", navred.NavredWarning)
        fixes = fix_positions(table)
        assert isinstance(fixes, GroupedFixes) and len(fixes) == 60 and list(fixes)[:3] == ["g0", "g1", "g2"]
        assert fixes.get("g2") is None and "two or more" in fixes.problems["g2"]
        with pytest.raises(NavredError, match="g2"):
            fixes["g2"]
        assert sum(f.without_outliers is not None or f.all_sights is not None for f in fixes.results.values()) > 0
        for name in fixes:
            if name in fixes.problems:
                with pytest.raises(NavredError):
                    fix_position(table, group=name)
                continue
            same(fixes[name], fix_position(table, group=name), name)


@pytest.mark.parametrize("per_group", range(2, 13))
def test_one_groups_quick_root_gives_the_fix_the_arrays_give(per_group, monkeypatch):
    # issue 26: one group's σ over a run (the restricted likelihood's root) is worked in plain floats; the fix must
    # be, field by field, the fix whose root goes through the arrays as a batch's does (the reference: numpy's own
    # arithmetic, navred.fixstats.likelihood_root's array path). Per size of group (2 to 12 sights), seeded, with
    # and without a course and speed, with a current, sights with no noise at all, 6′ blunders and gross errors
    import navred.fixstats

    table = groups_table(groups=12, per_group=per_group, seed=100 + per_group)
    rng = np.random.default_rng(per_group)
    n = len(table)
    table["ho_deg"] = table["ho_deg"] + np.where(rng.random(n) < 0.05, 1.0, 0.0)  # a gross error in some
    exact = table["fix_group"].isin(["g3", "g4"]).to_numpy()
    table.loc[exact, "ho_deg"] = table.loc[exact, "ho_deg"].round(12)
    plain = table.assign(course_deg=np.nan, speed_kn=np.nan)
    plain["dr_lat_deg"] += np.where(table["fix_group"].isin(["g5", "g6"]), np.arange(n) * 0.01, 0.0)  # own DRs
    current = table.assign(current_set_deg=135.0, current_drift_kn=np.where(rng.random(n) < 0.5, 1.5, 0.0))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", navred.NavredWarning)
        for frame in (table, plain, current):
            every = fix_positions(frame)
            names = [name for name in every if name not in every.problems]  # (parallel lines, one sight: none)
            assert len(names) >= 6, every.problems  # most of the twelve groups are fixed and compared
            quick = [fix_position(frame, group=name) for name in names]
            with monkeypatch.context() as patch:
                patch.setattr(navred.fixstats, "_PLAIN_WIDTH", 0)  # every root through the arrays
                arrays = [fix_position(frame, group=name) for name in names]
            for name, a, b in zip(names, quick, arrays):
                same(a, b, f"{per_group} sights, {name}")


def varied_table(seed: int, groups: int = 16) -> pd.DataFrame:
    """Invented sights of ``groups`` fix groups of 2 to 12 sights each, all sizes in one table (so each group is
    laid out beside groups of other sizes): sights with scatter, sights with none at all, 6′ blunders, gross
    errors of a degree, a course and speed in some groups, none in others (the ship stopped, or its own DRs
    apart), a current after some sights, a σ of its own on some sights (weights), rounds spread over an hour
    (for the course and speed made good) or over a few minutes, a group left with one sight and one of parallel
    lines. Ho is Hc at a random true position (the reference: navred's own triangle, itself checked against
    skyfield in tests/test_triangle.py); the DR 5 to 25 nm off (common practice)."""
    rng = np.random.default_rng(seed)
    sizes = rng.integers(2, 13, groups)
    g = np.repeat(np.arange(groups), sizes)
    n = g.size
    within = np.arange(n) - np.repeat(np.cumsum(sizes) - sizes, sizes)
    lat, lon = rng.uniform(-65, 65, groups), rng.uniform(-180, 180, groups)
    gha = np.mod(rng.uniform(-75, 75, n) - lon[g], 360.0)
    dec = np.clip(lat[g] + rng.uniform(-60, 60, n), -60, 60)
    parallel = g == 1  # one group's bodies on one hour circle at one declination
    gha[parallel], dec[parallel] = gha[parallel][0], dec[parallel][0]
    ho, _ = computed_altitude_azimuth(lat[g], lon[g], gha, dec)
    exact = np.isin(g, [3, 4])  # no scatter at all
    noise = rng.normal(0, rng.uniform(0.1, 1.0) / 60, n)
    blunder = np.where(rng.random(n) < 0.07, 0.1, 0.0) + np.where(rng.random(n) < 0.03, 1.0, 0.0)
    ho = ho + np.where(exact, 0.0, noise + blunder)
    north, east = rng.uniform(-25, 25, groups), rng.uniform(-25, 25, groups)
    dr_lat, dr_lon = move_position(lat, lon, north, east)
    spacing = np.where(g % 2 == 0, 420, 100)  # rounds of over an hour in half the groups, minutes in the others
    start = pd.Timestamp("2025-06-01T20:00Z")
    table = pd.DataFrame({
        "gha_deg": gha, "dec_deg": dec, "ho_deg": ho, "status": "ok",
        "sight_utc": start + pd.to_timedelta(within * spacing + g * 7200, unit="s"),
        "dr_lat_deg": dr_lat[g], "dr_lon_deg": dr_lon[g],
        "course_deg": np.where(g % 3 == 0, np.nan, rng.uniform(0, 360, groups)[g]),
        "speed_kn": np.where(g % 3 == 0, np.nan, rng.uniform(0, 16, groups)[g]),
        "fix_group": [f"g{k}" for k in g], "row": np.arange(n) + 2})
    own = g == 6  # no course or speed, each sight's DR its own (the run between them)
    table.loc[own, "dr_lat_deg"] += within[own] * 0.01
    table.loc[own, ["course_deg", "speed_kn"]] = np.nan
    if seed % 2:
        table["current_set_deg"] = rng.uniform(0, 360)
        table["current_drift_kn"] = np.where(rng.random(n) < 0.5, rng.uniform(0.2, 2.5), 0.0)
    if seed % 3 == 1:
        table["sigma_arcmin"] = np.where(rng.random(n) < 0.4, rng.uniform(0.3, 2.0, n), np.nan)
    first_of_2 = np.flatnonzero(g == 2)
    table.loc[table.index[first_of_2[1:]], "status"] = "error"  # group g2 keeps one sight
    return table


@pytest.mark.parametrize("seed", range(12))
def test_groups_of_every_size_fixed_at_once_are_what_they_are_alone(seed):
    # issue 26: the batched fix is the single fix, field by field and to the last bit, whatever sizes of group
    # are laid out side by side (each group's arrays are padded to the widest in a batch: numpy's sums along
    # the sights and the running fix's sights × sights matrices would differ in the last digit), whether or not
    # the others run between their sights or start their latitudes elsewhere, with and without the course and
    # speed made good solved. The reference is the fix of the group alone (navred.fix_position)
    table = varied_table(seed)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", navred.NavredWarning)
        for motion in (False, True):
            every = fix_positions(table, solve_motion=motion)
            assert "g2" in every.problems  # one sight
            assert every.get("g1") is None or not every["g1"].is_fix  # parallel lines: a line of position at most
            for name in every.results:
                same(every[name], fix_position(table, group=name, solve_motion=motion), f"seed {seed} {name}")
        if seed == 0:  # the table's every kind met: running fixes, a current, check fixes, fixes with motion
            kinds = {r.run_from for r in every.results.values()}
            assert len(kinds) >= 3, kinds


def test_groups_solved_a_few_at_a_time_are_what_they_are_all_together(monkeypatch):
    # groups of many sights are solved a few at a time (each running fix's σ takes a sights × sights matrix:
    # navred.fixbatch.BATCH_MATRIX_CELLS bounds them); with the bound made tiny every group of the varied tables
    # is solved one or two at a time, and each fix is, field by field, the fix of the whole table at once
    import navred.fixbatch as fixbatch

    for seed in (0, 1, 4):
        table = varied_table(seed)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", navred.NavredWarning)
            together = fix_positions(table)
            monkeypatch.setattr(fixbatch, "BATCH_MATRIX_CELLS", 50)
            few = fix_positions(table)
            monkeypatch.undo()
        assert set(few.results) == set(together.results) and few.problems == together.problems
        for name in together.results:
            same(few[name], together[name], f"seed {seed} {name}")


def test_a_latitude_from_its_meridian_arc_is_worked_for_itself_whatever_is_beside_it():
    # the pieces a batch of running fixes shares: a latitude started near its own known latitude (a run under
    # 300 nm) is the same number whether or not a longer run (started by the footpoint series) is worked in the
    # same array; all agree with the meridian arc they came from (navred.sailings.meridian_arc_m, the series of
    # Snyder's Map Projections: A Working Manual, eq. 3-21, citation from memory) to a millimetre
    from navred.sailings import latitude_from_meridian_arc_deg, meridian_arc_m

    rng = np.random.default_rng(26)
    lat = rng.uniform(-80, 80, 400)
    arc = meridian_arc_m(lat)
    target = arc + rng.uniform(-500_000, 500_000, 400)  # up to 270 nm: each started near its own latitude
    target[0] = arc[0] - 1_000_000.0  # 540 nm: too far, started by the series
    together = latitude_from_meridian_arc_deg(target, (lat, arc))
    near = latitude_from_meridian_arc_deg(target[1:], (lat[1:], arc[1:]))
    assert np.array_equal(together[1:], near)
    assert together[0] == latitude_from_meridian_arc_deg(target[:1], (lat[:1], arc[:1]))[0]
    np.testing.assert_allclose(meridian_arc_m(together), target, atol=1e-3)


def test_a_track_of_no_run_beside_tracks_that_run_is_where_the_ship_is():
    # a batch of sight tracks (navred.reckoning.DRTrack.through): a track with no run gives the position as given
    # (not the position sent round the meridian arc and back), as it does alone, and one that runs what it gives
    # alone
    from navred.leastsquares import sight_track

    rng = np.random.default_rng(27)
    n = 300
    hours = np.broadcast_to([-0.5, -0.25, 0.0], (n, 3))
    runs = np.arange(n) % 2 == 1
    north = np.where(runs, rng.uniform(-12, 12, n), 0.0)[:, None] * np.ones(3)
    east = np.where(runs, rng.uniform(-12, 12, n), 0.0)[:, None] * np.ones(3)
    lat, lon = rng.uniform(-70, 70, n), rng.uniform(-180, 180, n)
    at = np.full(n, 3)
    both = sight_track(hours, north, east).through(lat, lon, at)
    assert (both[0][~runs] == lat[~runs, None]).all() and (both[1][~runs] == lon[~runs, None]).all()
    for k in range(0, n, 7):
        one = sight_track(hours[k:k + 1], north[k:k + 1], east[k:k + 1]).through(lat[k:k + 1], lon[k:k + 1], at[:1])
        assert np.array_equal(one[0][0], both[0][k]) and np.array_equal(one[1][0], both[1][k]), k
    assert (both[0][runs, 0] != lat[runs]).all()  # the others run


def test_a_fix_time_and_a_chart_position_per_group_and_the_groups_chosen():
    table = groups_table(groups=6)
    when = {"g3": "2025-06-01T23:00Z"}
    chart = {"g4": (10.0, -20.0)}
    fixes = fix_positions(table, at_utc=when, chart=chart, groups=["g4", "g3"])
    assert list(fixes) == ["g4", "g3"]
    same(fixes["g3"], fix_position(table, group="g3", at_utc="2025-06-01T23:00Z"))
    same(fixes["g4"], fix_position(table, group="g4", chart_lat=10.0, chart_lon=-20.0))
    frame = fixes.table()
    assert list(frame.fix_group) == ["g4", "g3"] and frame.lat_deg.notna().all()
    with pytest.raises(NavredError, match="no fix group 'g9'"):
        fix_positions(table, groups=["g9"])


@pytest.mark.parametrize("log", ["sample_sights/demo_sights.csv", "tests/data/training_voyage_5d_seed77.csv"])
def test_the_demo_logs_groups_at_once_as_one_at_a_time(log):
    # the demo and the training voyage frozen in tests/data (invented, built by scripts/make_training_voyage.py):
    # every group of the log fixed at once is, field by field, the group fixed alone
    reduced = navred.reduce_sights(navred.read_sight_log(log))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", navred.NavredWarning)
        fixes = fix_positions(reduced)
        assert len(fixes.results) >= 2
        for name in fixes.results:
            same(fixes[name], fix_position(reduced, group=name), name)


def test_the_table_of_many_fixes_has_the_columns_and_positions_of_fix_csv():
    # one vocabulary: the API's table of fixes is laid out as `navred fix --csv` (it named n_sights and problem)
    import io

    from typer.testing import CliRunner

    from navred.cli import app

    reduced = navred.reduce_sights(navred.read_sight_log("sample_sights/demo_sights.csv"))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", navred.NavredWarning)
        table = fix_positions(reduced).table()
    printed = pd.read_csv(io.StringIO(CliRunner().invoke(app, ["fix", "sample_sights/demo_sights.csv", "--csv"]).stdout))
    assert list(table.columns) == list(printed.columns)
    assert table.fix_group.tolist() == printed.fix_group.tolist() and table.sights.tolist() == printed.sights.tolist()
    np.testing.assert_allclose(table.lat_deg, printed.lat_deg, atol=1e-6)
    np.testing.assert_allclose(table.lon_deg, printed.lon_deg, atol=1e-6)
    assert table.utc.dt.tz is not None
