"""Fuzzing the log reader (hypothesis, seeded and bounded): every row of a mutated log is accepted or
rejected with a reason naming its row and column, a good row reads the same beside bad rows, and
nothing but a one-line refusal ever comes out of a file that is not a log."""

from __future__ import annotations

import csv
import functools
import io
import string

import numpy as np
import pandas as pd
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st

from navred.io.logbook import LogbookError, read_sight_log
from navred.io.readers import SEPARATORS

DEMO = "sample_sights/demo_sights.csv"
#: the seeded runs stop at the first failure they generate (shrinking big batches would take minutes)
_NO_SHRINK = (Phase.explicit, Phase.reuse, Phase.generate)


def seeded(examples: int):
    """The settings of every fuzzing test here: seeded, bounded, no deadline, no shrinking (a failure is
    reported as found), the suite's fixtures and large inputs allowed."""
    return settings(max_examples=examples, derandomize=True, deadline=None, database=None, phases=_NO_SHRINK,
                    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow,
                                           HealthCheck.data_too_large])

with open(DEMO, encoding="utf-8") as handle:
    BASE = list(csv.reader(handle))
HEADER, ROWS = BASE[0], BASE[1:]
CLEAN = read_sight_log(DEMO).sights.set_index("row")
CHECKED = ["sight_utc", "body_name", "hs_deg", "index_error_arcmin", "eye_height_m", "dr_lat_deg", "dr_lon_deg",
           "course_deg", "speed_kn", "fix_group"]

# what a hostile or a careless cell may hold: control characters, NUL, quotes and separators, look-alike
# signs, numbers that are not numbers, formulas, another script
_ALPHABET = st.characters(codec="utf-8", exclude_categories=("Cs",)) | st.sampled_from(
    list("\x00\x01\x07\x1b\x7f\t\r\n\"',;°′″−–NSEW.-+=@ 0123456789"))
_CELLS = st.text(alphabet=_ALPHABET, max_size=16) | st.sampled_from(
    ["", " ", "nan", "inf", "-inf", "1e309", "-0", "=1+1", "+3", "05/03/2026", "44 30", "013 03.7 S",
     "43 -14.1 N", "2026-02-30T10:00Z", "2026-03-26T19:41:00+25:00", "NaN", "TRUE", "x" * 40000])


def _cell_edit():
    return st.tuples(st.just("cell"), st.integers(0, len(ROWS) - 1), st.integers(0, len(HEADER) - 1), _CELLS)


# a cell's text drawn four times as often as each change of a row's shape. The shapes are 45 edits in all (a field
# dropped or added, a blank row, a copy, at one of eleven or twelve rows); the texts are the search (187 cells, any
# text). Counted on the seeded runs: 45 examples with the five kinds drawn alike (2,250 logs) edited 1,299 cells
# in 160 of the 187 places, each shape met 29 times or more (90 the median); these 30 (1,500 logs) edit 1,746 cells
# in 181 places with as many distinct texts (331 against 333), each shape still met 13 times or more (38)
_EDITS = st.one_of(
    _cell_edit(), _cell_edit(), _cell_edit(), _cell_edit(),  # four branches (hypothesis tells strategies apart by identity)
    st.tuples(st.just("drop_field"), st.integers(0, len(ROWS) - 1)),
    st.tuples(st.just("add_field"), st.integers(0, len(ROWS) - 1), _CELLS),
    st.tuples(st.just("blank_row"), st.integers(0, len(ROWS))),
    st.tuples(st.just("duplicate"), st.integers(0, len(ROWS) - 1)),
)
_LOG = st.lists(_EDITS, min_size=1, max_size=4)


def mutated(edits):
    """The mutated log's records, and for each original row its new spreadsheet row number (None when edited)."""
    rows = [list(r) for r in ROWS]
    touched = set()
    for edit in edits:
        kind, row = edit[0], edit[1]
        if kind == "cell":
            rows[row] = rows[row] + [""] * max(0, edit[2] + 1 - len(rows[row]))
            rows[row][edit[2]] = edit[3]
            touched.add(row)
        elif kind == "drop_field":
            rows[row] = rows[row][:-1]
            touched.add(row)
        elif kind == "add_field":
            rows[row] = rows[row] + [edit[2]]
            touched.add(row)
    records, where = [], {}
    blanks = {e[1] for e in edits if e[0] == "blank_row"}
    copies = {e[1] for e in edits if e[0] == "duplicate"}
    for k, row in enumerate(rows):
        if k in blanks:
            records.append([])
        where[k] = None if k in touched else len(records) + 2  # the header is row 1
        records.append(row)
        if k in copies:
            records.append(list(row))
    if len(rows) in blanks:
        records.append([])
    return records, where


def write(path, records, separator=",", encoding="utf-8"):
    out = io.StringIO()
    writer = csv.writer(out, delimiter=separator, lineterminator="\n")
    writer.writerow(HEADER)
    for record in records:
        writer.writerow(record)
    path.write_bytes(out.getvalue().encode(encoding, errors="replace"))


def accounted(log, files):
    """Every non-empty record of each file is a sight or a rejection with reasons, never both or neither."""
    taken = log.table[log.table.read_problem == ""].groupby("source").row.agg(set)
    refused = log.rejected.groupby("source").row.agg(set)
    for path, records, _ in files:
        source = str(path)
        data_rows = {k + 2 for k, r in enumerate(records) if any(c.strip() for c in r)}
        ok, bad = taken.get(source, set()), refused.get(source, set())
        assert ok | bad == data_rows, (source, sorted(data_rows - ok - bad), sorted(ok & bad))
        assert not ok & bad
    assert log.rejected.reason.map(lambda r: isinstance(r, str) and len(r) > 5).all()
    assert log.rejected.column.map(lambda c: isinstance(c, str) and len(c) > 0).all()


@seeded(30)
@given(st.lists(_LOG, min_size=50, max_size=50))
def test_mutated_logs_lose_no_row_and_good_rows_read_the_same(tmp_path_factory, plans):
    # 30 seeded examples of 50 mutated logs each, read together: 1,500 logs
    folder = tmp_path_factory.mktemp("fuzz")
    files = []
    for k, edits in enumerate(plans):
        records, where = mutated(edits)
        path = folder / f"log{k:02d}.csv"
        write(path, records)
        files.append((path, records, where))
    log = read_sight_log([path for path, _, _ in files])
    accounted(log, files)
    expected = []
    for path, _records, where in files:
        expected += [(str(path), row, original + 2, f"{path.name}: ") for original, row in where.items()
                     if row is not None]
    expected = pd.DataFrame(expected, columns=["source", "row", "clean_row", "prefix"])
    good = expected.merge(log.table, on=["source", "row"], how="left", validate="one_to_one")
    assert len(good) >= 50 * (len(ROWS) - 4)  # at most four rows of each log are touched
    clean = CLEAN.loc[good.clean_row]
    assert (good.read_problem == "").all(), good.loc[good.read_problem != "", ["source", "row", "read_problem"]]
    # several files: each fix-group label keeps its file; a label that a mutated vessel cell makes shared by two
    # named ships in one file is two groups, each row's label then prefixed by its ship
    plain = (good.prefix + clean.fix_group.to_numpy()).to_numpy()
    ship = (good.prefix + good.vessel + ": " + clean.fix_group.to_numpy()).to_numpy()
    got = good.fix_group.to_numpy()
    assert ((got == plain) | (got == ship)).all()
    for i in np.flatnonzero(got != plain):
        same_file = log.table[(log.table.source == good.source.iloc[i]) & (log.table.read_problem == "")]
        others = same_file[same_file.fix_group.str.endswith(": " + clean.fix_group.iloc[i])
                           & (same_file.vessel != good.vessel.iloc[i]) & (same_file.vessel != "")]
        assert len(others), (good.source.iloc[i], good.row.iloc[i])
    for column in CHECKED[:-1]:
        a, b = good[column].to_numpy(), clean[column].to_numpy()
        same = (a == b) | (pd.isna(a) & pd.isna(b))
        assert same.all(), (column, good.loc[~same, ["source", "row"]].head(), a[~same][:3], b[~same][:3])


@seeded(150)
@given(st.sampled_from(list(SEPARATORS)), st.sampled_from(["utf-8", "utf-8-sig", "utf-16", "cp1252"]),
       st.integers(0, 4000), st.binary(max_size=6), st.booleans())
def test_encodings_separators_truncation_and_stray_bytes(tmp_path_factory, separator, encoding, cut, stray, insert):
    """Whole-file mutations: any separator and encoding a spreadsheet writes, the file cut short at any byte,
    a few stray bytes dropped in: the reader either reads every row it sees or refuses the file in one line."""
    folder = tmp_path_factory.mktemp("whole")
    records = [list(r) for r in ROWS]
    if separator != ",":
        records = [[c.replace(".", ",") if c.replace(".", "", 1).replace(" ", "").replace(",", "").isdigit() else c
                    for c in r] for r in records]
    path = folder / "log.csv"
    write(path, records, separator, encoding)
    data = path.read_bytes()
    cut = min(cut, len(data))
    data = data[:max(cut, 1)] if cut else data
    if insert and stray:
        at = len(data) // 2
        data = data[:at] + stray + data[at:]
    path.write_bytes(data)
    try:
        log = read_sight_log(path)
    except LogbookError as exc:
        assert str(exc) and "\n" not in str(exc).strip()
        return
    assert len(log.table) == log.table.row.nunique()
    assert (log.table.read_problem != "").sum() == log.rejected.row.nunique()
    if not insert and cut == 0:
        assert len(log.sights) == len(ROWS), (separator, encoding, log.rejected.reason.tolist()[:2])
        assert np.allclose(log.sights.hs_deg, CLEAN.hs_deg.to_numpy())


# angle text as people write it, and its near misses: marks, letters at either end, signs, seconds,
# commas, stray spaces, look-alike characters
_ANGLE_PIECES = ["0", "5", "12", "44", "89", "90", "91", "179", "180", "359", "400", "03.1", "10.1", "59.9", "60.0",
                 "7.25", ".5", "1e3", "°", "º", "'", "′", "’", "\"", " ", "  ", "N", "S", "E", "W", "n", "w", "-", "+",
                 "−", ",", ".", "d", "m", "s", ":"]
_FORMS = ["{d} {m} {h}", "{d}° {m}′ {h}", "{d}°{m}'{h}", "{s}{d} {m}", "{s}{d}.{m}", "{h} {d} {m}", "{d} {m}{h}",
          " {d}  {m} {h} ", "{s}{d}° {m}′", "{d} {m}'.1 {h}"]


def test_bulk_angle_reading_never_reads_what_the_careful_parser_would_not():
    # issue 13: logs are read in bulk through navred.angles.parse_angles_fast, which must take only what the
    # careful one-by-one parser (parse_angle) reads, to the same value, and leave the rest to that parser.
    # 24,000 seeded texts: the usual forms with random parts, and random strings of their pieces.
    from navred.angles import parse_angle, parse_angles_fast
    from navred.errors import AngleInputError

    rng = np.random.default_rng(13)
    count = 12_000
    pieces = np.array(_ANGLE_PIECES, dtype=object)
    forms = np.array(_FORMS, dtype=object)[rng.integers(0, len(_FORMS), count)].tolist()
    degrees, minutes = (pieces[rng.integers(0, len(pieces), count)].tolist() for _ in range(2))
    letters = np.array(list("NSEWnsew ") + [""], dtype=object)[rng.integers(0, 10, count)].tolist()
    signs = np.array(["", "-", "+"], dtype=object)[rng.integers(0, 3, count)].tolist()
    texts = [f.format(d=d, m=m, h=h, s=g) for f, d, m, h, g in zip(forms, degrees, minutes, letters, signs)]
    lengths = rng.integers(1, 8, count)
    drawn = pieces[rng.integers(0, len(pieces), int(lengths.sum()))].tolist()
    starts = np.concatenate([[0], np.cumsum(lengths)]).tolist()
    texts += ["".join(drawn[a:b]) for a, b in zip(starts, starts[1:])]
    taken = 0
    for kind in ("lat", "lon", "angle", "signed", "dec"):
        values, done = parse_angles_fast(texts, kind)
        taken += int(done.sum())
        for text, value in zip(np.array(texts, dtype=object)[done], values[done]):
            try:
                careful = parse_angle(text, kind)
            except AngleInputError:
                raise AssertionError(f"{kind} {text!r} read in bulk as {value} but refused one by one") from None
            assert careful == value, (kind, text)
    assert taken > 5_000  # the bulk path was exercised


def test_plain_degrees_and_minutes_read_at_once_are_read_as_one_by_one():
    # issue 26: texts written plainly ("33 06.7 S", "067 58.9") are read by numpy's string functions, all at
    # once, and must give each text exactly what the careful one-by-one parser (parse_angle) gives, and take
    # nothing it refuses; 8,000 seeded texts of that form, half of them mutated by a character put in, taken
    # out or changed (a second space, a letter of the wrong kind, 60′ or more, a non-ASCII digit, a sign...)
    from navred.angles import parse_angle, parse_angles_fast
    from navred.errors import AngleInputError

    rng = np.random.default_rng(26)
    count = 8_000
    degrees = [f"{d:0{w}d}" for d, w in zip(rng.integers(0, 400, count).tolist(), rng.integers(1, 4, count).tolist())]
    minutes = [f"{m:0{4 + p}.{p}f}" if p else f"{int(m):02d}" for m, p in
               zip(rng.uniform(0, 61, count).tolist(), rng.integers(0, 4, count).tolist())]
    letters = np.array(list("NSEWnsewX") + [""], dtype=object)[rng.integers(0, 10, count)].tolist()
    texts = [f"{d} {m} {h}" if h else f"{d} {m}" for d, m, h in zip(degrees, minutes, letters)]
    pieces = list(" .-+,°′'0123456789NSEW\u0663\u00a0\t")
    for k in np.flatnonzero(rng.random(count) < 0.5).tolist():
        text, at = texts[k], int(rng.integers(0, len(texts[k]) + 1))
        piece = pieces[int(rng.integers(0, len(pieces)))]
        texts[k] = [text[:at] + piece + text[at:], text[:at] + text[at + 1:], text[:at] + piece + text[at + 1:]][
            int(rng.integers(0, 3))]
    taken = 0
    for kind in ("lat", "lon", "angle", "signed", "dec"):
        values, done = parse_angles_fast(texts, kind)
        taken += int(done.sum())
        for text, value, read in zip(texts, values.tolist(), done.tolist()):
            try:
                careful = parse_angle(text, kind)
            except AngleInputError:
                assert not read, f"{kind} {text!r} read at once as {value} but refused one by one"
                continue
            if read:
                assert careful == value, (kind, text, careful, value)
    assert taken > 3_000  # the plain form is taken at once


def test_the_common_forms_are_read_in_bulk():
    # the forms of the demo logs and the fleet benchmark are all taken by the bulk reader
    from navred.angles import parse_angles_fast

    _, done = parse_angles_fast(["44 10.1 N", "44° 10.1′ N", "47°12.4'N", "25.0517", "-12.5"], "lat")
    assert done.all()
    _, done = parse_angles_fast(["012 09.3 W", "005° 31.9′ e"], "lon")
    assert done.all()
    _, done = parse_angles_fast(["44 10.1", "012 09.3 E", "N 44 10.1", "44 10'.1 N", "44 10 30 N"], "lat")
    assert not done.any()  # no letter (refused), a letter of the wrong kind (refused), rarer forms: careful


# --- hand workings: the cadet's lines, mutated ------------------------------------------------------

def _class_rows():
    """The invented class's workings (sample_sights/class_workings.xlsx), every sheet, as text records."""
    from openpyxl import load_workbook

    book = load_workbook("sample_sights/class_workings.xlsx", read_only=True)
    rows = []
    for sheet in book.worksheets:
        values = [["" if v is None else str(v) for v in r] for r in sheet.iter_rows(values_only=True)]
        rows += [dict(zip(values[0], r)) for r in values[1:]]
    book.close()
    return rows


_WORKINGS = _class_rows()
_WORKED_COLUMNS = [c for c in _WORKINGS[0] if c.endswith("_worked") or c.startswith("ap_")]
_WORKING_EDITS = st.lists(st.tuples(st.integers(0, len(_WORKINGS) - 1), st.sampled_from(_WORKED_COLUMNS), _CELLS),
                          min_size=1, max_size=6)


@seeded(25)
@given(_WORKING_EDITS)
def test_mutated_workings_are_marked_row_for_row_and_every_bad_line_is_named(tmp_path_factory, edits):
    """Hostile or careless cells in the cadet's lines: every sight is still marked, each cell that cannot be
    read is listed with its row, line and reason, and the rows nobody touched (nor any line of their round,
    whose plotted fix is judged from all its lines) keep their verdicts."""
    from navred.jobs.workings import mark_workings

    folder = tmp_path_factory.mktemp("workings")
    rows = [dict(r) for r in _WORKINGS]
    touched = set()
    for i, column, cell in edits:
        rows[i][column] = cell
        touched.add(i)
    path = folder / "workings.csv"
    _write_workings(path, rows)
    report = mark_workings(path)
    assert len(report.rows) + report.workings.log.n_rejected_rows == len(rows)
    unreadable = report.workings.unreadable
    assert unreadable.reason.map(lambda r: isinstance(r, str) and len(r) > 5).all()
    assert set(unreadable.row) <= {i + 2 for i in touched}
    for item in unreadable.itertuples():  # an unreadable line is wrong, for its reason
        marked = report.lines[(report.lines.row == item.row) & (report.lines.line == item.line)]
        assert (marked.verdict == "wrong").all() and marked.cause.str.startswith("cannot be read").all()
    clean = _clean_marks().set_index("row")
    # a round's plotted fix is judged from every line of its fix group: a touched line touches its round too
    rounds = {rows[i].get("Fix group", "") for i in touched} - {""}
    near = {i for i, r in enumerate(rows) if r.get("Fix group", "") in rounds} | touched
    kept = report.rows[~report.rows.row.isin([i + 2 for i in near])].set_index("row")
    assert (kept.first_wrong_line == clean.loc[kept.index, "first_wrong_line"]).all()
    assert (kept.cause == clean.loc[kept.index, "cause"]).all()


@functools.cache
def _clean_marks():
    """The untouched class's marks, made once (when the test first needs them, not when the suite is collected)."""
    import tempfile
    from pathlib import Path

    from navred.jobs.workings import mark_workings

    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "workings.csv"
        _write_workings(path, _WORKINGS)
        return mark_workings(path).rows


def _write_workings(path, rows):
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(list(rows[0]))
    for row in rows:
        writer.writerow(list(row.values()))
    path.write_bytes(out.getvalue().encode("utf-8", errors="replace"))



# --- the rating log of time signals, mutated ---------------------------------------------------------

_SIGNALS = [{"timepiece": "Chrono A", "utc": f"2026-03-{20 + k:02d}T12:00:00Z", "reading": f"12:00:{3 + 0.5 * k:04.1f}",
             "zone_description": "0"} for k in range(8)]
_SIGNAL_EDITS = st.lists(st.tuples(st.integers(0, len(_SIGNALS) - 1), st.sampled_from(list(_SIGNALS[0])), _CELLS),
                         min_size=1, max_size=5)


@seeded(60)
@given(_SIGNAL_EDITS)
def test_mutated_rating_logs_keep_or_refuse_every_row_with_a_reason(tmp_path_factory, edits):
    """Hostile cells in a rating log: every comparison is read or refused by row and column with a reason (or the
    whole file refused in one line when nothing can be read), and untouched rows keep their errors."""
    from navred.io.timesignals import read_rating_log

    rows = [dict(r) for r in _SIGNALS]
    touched = set()
    for i, column, cell in edits:
        rows[i][column] = cell
        touched.add(i)
    path = tmp_path_factory.mktemp("signals") / "signals.csv"
    _write_workings(path, rows)
    try:
        ratings = read_rating_log(path)
    except LogbookError as exc:
        assert "\n" not in str(exc) and len(str(exc)) > 10
        return
    read = pd.concat([p.comparisons for p in ratings.timepieces.values()], ignore_index=True)
    rejected_rows = set(ratings.rejected.row)
    assert set(read.row) | rejected_rows == {i + 2 for i in range(len(rows))} - _blank_rows(rows)
    assert not set(read.row) & rejected_rows
    assert ratings.rejected.reason.map(lambda r: isinstance(r, str) and len(r) > 5).all()
    assert ratings.rejected.column.map(lambda c: isinstance(c, str) and len(c) > 0).all()
    clean = {i + 2: 3 + 0.5 * i for i in range(len(rows)) if i not in touched}
    kept = read[read.row.isin(clean)]
    assert np.allclose(kept.error_s, [clean[r] for r in kept.row])


def _blank_rows(rows) -> set[int]:
    """Rows left wholly blank by the edits: skipped by the reader as empty rows."""
    return {i + 2 for i, r in enumerate(rows) if all(not str(v).strip() for v in r.values())}


# --- issue 20: the API, the tracks, the deviation card, a workbook's cells and every command's options ---------

_VALUES = st.one_of(
    st.none(), st.booleans(), st.integers(-10**20, 10**20), st.floats(allow_nan=True, allow_infinity=True),
    st.text(alphabet=_ALPHABET, max_size=20), st.binary(max_size=10),
    st.lists(st.one_of(st.none(), st.integers(), st.text(max_size=5)), max_size=3),
    st.dictionaries(st.text(max_size=3), st.integers(), max_size=2),
    st.sampled_from(["sample_sights", "sample_sights/demo_sights.csv", "/no/such/file.csv", "/", "/dev/null",
                     "2026-02-30", "2026-03-26", "2026-03-26T19:41:00Z", "Sirius", "nan"]),
)
_FRAME_CELLS = st.one_of(_VALUES, _CELLS)


def _api_calls():
    import navred
    from navred.io.cards import read_deviation_card
    from navred.io.compassbook import read_compass_book
    from navred.io.timesignals import read_rating_log
    from navred.io.track import read_track
    from navred.jobs.compasswork import compass_book

    return {
        "read_sight_log": navred.read_sight_log, "process_log": lambda x: navred.process_log(x, plan=False),
        "reduce_sights": navred.reduce_sights, "mark_workings": navred.mark_workings, "read_track": read_track,
        "read_rating_log": read_rating_log, "read_deviation_card": read_deviation_card,
        "fix_position": navred.fix_position, "fix_positions": navred.fix_positions,
        "body_positions": lambda x: navred.body_positions(x, "2026-03-26T00:00Z"),
        "body_positions at": lambda x: navred.body_positions("Sun", x),
        "sun_events": lambda x: navred.sun_events(x, 44.0, -12.0),
        "sun_events at": lambda x: navred.sun_events("2026-03-26", x, -12.0),
        "read_compass_book": read_compass_book, "compass_book": compass_book,
    }


@seeded(120)
@given(st.sampled_from(sorted(_api_calls())), st.one_of(_VALUES, st.builds(
    lambda cells: pd.DataFrame({c: [cells[k % len(cells)]] for k, c in enumerate(HEADER[:8])}),
    st.lists(_FRAME_CELLS, min_size=1, max_size=8))))
def test_the_api_raises_only_navreds_own_errors(name, value):
    # issue 20: API callers got bare TypeError, ValueError and IndexError; they get navred's own errors, and none
    # of them the one for a failure navred did not foresee
    from navred.errors import NavredError, NavredInternalError

    try:
        _api_calls()[name](value)
    except NavredInternalError as exc:
        raise AssertionError(f"{name}({value!r:.80}): {exc}") from exc
    except NavredError as exc:
        assert str(exc) and len(str(exc)) < 2000


# the invented training track in each of its forms, and the points as read clean
_TRACKS = {kind: open(f"sample_sights/training_track.{kind}", encoding="utf-8").read().splitlines()
           for kind in ("gpx", "nmea", "csv")}


@functools.cache
def _clean_track(kind):
    """The clean track as read, read once per form (every example compares its points with it; nothing changes it)."""
    from navred.io.track import read_track

    return read_track(f"sample_sights/training_track.{kind}")


def _track_points(kind, lines):
    """The track points of a track's lines: GPX points by their place, NMEA and CSV by their line."""
    if kind == "gpx":
        return [i for i, line in enumerate(lines) if "<trkpt" in line]
    if kind == "nmea":
        return [i for i, line in enumerate(lines) if line.startswith("$")]
    return list(range(1, len(lines)))


_TRACK_EDITS = st.lists(st.tuples(st.integers(0, 10**6), st.sampled_from(["replace", "blank", "cut", "garble",
                                                                            "sign", "nan"]), _CELLS),
                        min_size=1, max_size=4)


@seeded(40)
@given(st.sampled_from(["gpx", "nmea", "csv"]), _TRACK_EDITS)
def test_mutated_tracks_keep_or_refuse_every_point_by_its_number(tmp_path_factory, kind, edits):
    """Hostile points in a reference track (GPX, NMEA, CSV): each point is used or refused by its number (a GPX
    point's place, an NMEA or CSV line) with a reason, blank lines shift no number, and every point nobody
    touched is read as it is in the clean track."""
    from navred.io.track import TrackError, read_track

    lines = list(_TRACKS[kind])
    places = _track_points(kind, lines)
    touched = set()
    for at, how, cell in edits:
        i = places[at % len(places)]
        line = lines[i]
        if how == "replace":
            line = cell
        elif how == "blank":
            line = ""
        elif how == "cut":
            line = line[: len(line) // 2]
        elif how == "garble":
            line = line.replace("3", cell[:3] or "x", 1)
        elif how == "sign":
            line = line.replace(",", ",-", 2) if kind != "gpx" else line.replace('lat="', 'lat="-', 1)
        else:
            line = line.replace("36", "nan", 1)
        lines[i] = line
        touched.add(i)
    lines.insert(len(lines) // 2, "")  # a blank line in the middle: numbers after it must not shift
    path = tmp_path_factory.mktemp("track") / f"track.{kind}"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8", errors="replace")
    try:
        track = read_track(path)
    except TrackError as exc:
        assert "\n" not in str(exc)
        return
    clean = _clean_track(kind)
    assert track.problems.reason.map(lambda r: isinstance(r, str) and len(r) > 5).all()
    # the clean track's points are all in the mutated track at their positions, but for those an edit touched:
    # at most two points an edit (an RMC and the GGA of its epoch), missing or moved
    known = dict(zip(track.utc.astype("datetime64[s]").tolist(), zip(track.lat_deg, track.lon_deg)))
    changed = 0
    for when, lat, lon in zip(clean.utc.astype("datetime64[s]").tolist(), clean.lat_deg, clean.lon_deg):
        if when not in known or abs(known[when][0] - lat) > 1e-9 or abs(known[when][1] - lon) > 1e-9:
            changed += 1
    assert changed <= 2 * len(touched), (changed, touched)


_CARD = ["utc,body,lat_deg,lon_deg,compass_heading_deg,compass_bearing_deg,true_bearing_deg,compass_error_deg,"
         "variation_deg,deviation_deg"] + [f"2026-03-2{k}T17:30:00Z,Sun,43.3,-13.1,215,262,{260 + k},-{k}.0,-4,{k}.5"
                                           for k in range(6)]


@seeded(40)
@given(st.lists(st.tuples(st.integers(1, len(_CARD) - 1), st.integers(0, 9), _CELLS), min_size=1, max_size=4))
def test_a_mutated_deviation_card_is_read_or_refused_in_one_line(tmp_path_factory, edits):
    from navred.io.cards import CardError, read_deviation_card

    rows = [line.split(",") for line in _CARD]
    for row, column, cell in edits:
        rows[row][column] = cell
    path = tmp_path_factory.mktemp("card") / "card.csv"
    with open(path, "w", newline="", encoding="utf-8", errors="replace") as handle:
        csv.writer(handle).writerows(rows)
    try:
        card = read_deviation_card(path)
    except CardError as exc:
        assert "\n" not in str(exc) and "card" in str(exc)
        return
    assert len(card) <= len(_CARD) - 1


# damaged cell XML: a cell of the demo workbook replaced by one of these (ECMA-376 cell types and their misuses)
_DAMAGED = st.sampled_from([
    '<c r="{ref}" t="n"><v>{text}</v></c>', '<c r="{ref}" t="s"><v>{number}</v></c>', '<c r="{ref}" t="b"><v>{text}</v></c>',
    '<c r="{ref}" t="d"><v>{text}</v></c>', '<c r="{ref}" t="e"><v>#REF!</v></c>', '<c r="{ref}" t="{text}"><v>1</v></c>',
    '<c r="Q{number}"><v>1</v></c>', '<c r="{ref}" s="{number}"><v>{number}</v></c>', '<c r="{ref}"><f>{text}</f></c>',
    '<c r="{ref}" t="inlineStr"><is><r><t>{text}</t></r><rPh><t>x</t></rPh></is></c>', '<c r="{ref}" t="str"><v/></c>',
])


def _demo_sheet():
    import zipfile

    from openpyxl import Workbook

    demo = pd.read_csv(DEMO, dtype=str, keep_default_na=False)
    book = Workbook()
    book.active.append(list(demo.columns))
    for row in demo.itertuples(index=False):
        book.active.append(list(row))
    buffer = io.BytesIO()
    book.save(buffer)
    with zipfile.ZipFile(buffer) as archive:
        return {item.filename: archive.read(item.filename) for item in archive.infolist()}


_SHEET_PARTS = _demo_sheet()


@seeded(40)
@given(st.lists(st.tuples(st.integers(2, 12), st.integers(0, len(HEADER) - 1), _DAMAGED,
                          st.text(alphabet=string.ascii_letters + string.digits + "<>&\"'.-+ ", max_size=12),
                          st.integers(-5, 10**6)), min_size=1, max_size=4))
def test_damaged_cells_of_a_workbook_reject_their_rows_alone(tmp_path_factory, edits):
    """A workbook's cells damaged at random (a wrong type, a missing shared string, a bad reference, a formula with
    no value, text that is not a number): every row is read or rejected by row and column, and the rows nobody
    touched read as the demo does."""
    import re
    import zipfile
    from xml.sax.saxutils import escape

    from navred.io.readers import column_letter

    sheet = _SHEET_PARTS["xl/worksheets/sheet1.xml"].decode()
    touched = set()
    for row, column, form, text, number in edits:
        ref = f"{column_letter(column)}{row}"
        cell = form.format(ref=ref, text=escape(text, {'"': "&quot;"}), number=number)
        sheet = re.sub(rf'<c r="{ref}"[^>]*?(?:/>|>.*?</c>)', lambda _, c=cell: c, sheet, count=1)
        touched.add(row)
    path = tmp_path_factory.mktemp("book") / "log.xlsx"
    with zipfile.ZipFile(path, "w") as archive:
        for name, data in _SHEET_PARTS.items():
            archive.writestr(name, sheet.encode() if name == "xl/worksheets/sheet1.xml" else data)
    try:
        log = read_sight_log(path)
    except LogbookError as exc:
        assert "\n" not in str(exc)
        return
    assert set(log.table.row) | set(log.rejected.row) >= set(range(2, 13)) - touched
    assert log.rejected.reason.map(lambda r: isinstance(r, str) and len(r) > 5).all()
    good = log.sights.set_index("row")
    for row in sorted(set(range(2, 13)) - touched):
        assert row in good.index, (row, log.rejected[log.rejected.row == row].reason.tolist())
        for column in ("sight_utc", "hs_deg", "dr_lat_deg", "dr_lon_deg", "body_name"):
            assert good.loc[row, column] == CLEAN.loc[row, column], (row, column)


# every command with a good set of options; one option at a time gets a hostile value
_ROOT = __import__("pathlib").Path.cwd()
_HOSTILE = st.sampled_from(
    ["", " ", "nan", "NaN N", "inf", "-inf", "1e309", "-1", "0", "999999", "=1+1", "\x00", "../../etc/passwd",
     "/dev/null", "/proc/version", "/", "x" * 300, "2026-02-30", "05/03/2026", "12:00", "--", "-o", "W", "91 N",
     "44 70 N", "30' 12° N", "30' W", "1,5", "0x10", "None", "true", "🙂", "out.csv", "out.xlsx", "plots",
     "sample_sights/demo_sights.csv", "sample_sights/training_track.csv", "Sirius", "sideways", "day-first"])


def _commands(folder):
    s = str(_ROOT / "sample_sights")
    return {
        "almanac": (["almanac", "Sun", "Vega"], {"--utc": "2026-03-20T18:42:10Z", "--dut1": "0.1"}),
        "reduce": (["reduce", f"{s}/demo_sights.csv"], {"--rates": f"{s}/passage_time_signals.csv",
                                                      "--dates": "day-first"}),
        "fix": (["fix", f"{s}/demo_sights.csv"], {"--group": "evening-stars", "--chart-lat": "43 16.5 N",
                                                 "--chart-lon": "013 11.4 W", "--utc": "2026-03-26T19:48:30Z"}),
        "workbook": (["workbook", f"{s}/demo_sights.csv", "--pictures", "none"],
                     {"-o": f"{folder}/v.xlsx", "--output": f"{folder}/f.gpx", "--plot-formats": "svg"}),
        "plan": (["plan"], {"--date": "2026-03-26", "--lat": "44 30 N", "--lon": "012 00 W", "--course": "215",
                            "--speed": "6.5", "--eye": "3 m", "--count": "3", "--utc": "2026-03-26T19:30:00Z"}),
        "compass": (["compass", "Sun"], {"--utc": "2026-03-26T17:30:00Z", "--lat": "43 20 N", "--lon": "013 10 W",
                                         "--compass-bearing": "262", "--variation": "4 W", "--heading": "215",
                                         "--card": f"{folder}/card.csv"}),
        "identify": (["identify"], {"--utc": "2026-03-26T19:45:00Z", "--lat": "43 17 N", "--lon": "013 11 W",
                                    "--alt": "30", "--az": "186", "--top": "3"}),
        "series": (["series", f"{s}/demo_sights.csv"], {"--threshold": "2"}),
        "training": (["training", f"{folder}/few.csv"], {"--track": f"{s}/training_track.csv",
                                                         "-o": f"{folder}/t.csv"}),
        "mark": (["mark", f"{folder}/cadet.csv"], {"-o": f"{folder}/m.xlsx"}),
        "days": (["days", f"{s}/passage_log.csv"], {"-o": f"{folder}/p.svg"}),
        "rate": (["rate", f"{s}/passage_time_signals.csv"], {"--dates": "day-first"}),
        "route": (["route", "40 30 N", "073 00 W", "49 57 N", "005 12 W"], {"--spacing": "600", "--limit": "50 N",
                                                                          "-o": f"{folder}/r.geojson"}),
        "lunar": (["lunar", "29 44.7"], {"--other": "Antares", "--utc": "2024-09-12T19:33:00Z", "--lat": "30 N",
                                         "--lon": "040 W", "--moon-limb": "far", "--index-error": "0.3 on",
                                         "--other-alt": "20 10"}),
        "paper": (["paper"], {"--from": "2026-03-26", "--to": "2026-03-26", "--lat": "44 30 N", "--lon": "012 00 W",
                              "--eye": "2.8 m", "-o": f"{folder}/paper.pdf"}),
        "azimuths": (["azimuths"], {"--date": "2026-03-26", "--lat": "43 16.6 N", "--lon": "013 11.4 W",
                                    "--every": "60", "--eye": "2.8 m", "--zone": "+1"}),
        "compass-book": (["compass-book", f"{s}/compass_book.csv"], {"-o": f"{folder}/book.csv"}),
        "bodies": (["bodies", "--csv"], {}),
    }


def test_the_options_fuzz_covers_every_registered_command(tmp_path):
    import typer.main

    from navred.cli import app

    assert set(_commands(tmp_path)) == set(typer.main.get_command(app).commands)


#: the cheaper commands are tried three times as often as those that write a workbook or mark a class
_WEIGHTED = [c for c in ("almanac", "reduce", "fix", "compass", "identify", "route", "lunar", "rate", "series", "days",
                         "azimuths", "compass-book", "bodies") for _ in range(3)] + ["workbook", "plan", "training", "mark", "paper"]


_SEEN: list = []


@functools.cache
def _option_logs() -> dict[str, str]:
    """The small logs the commands read (every tenth training sight; a cadet's first five workings), made once as
    CSV text and written into each example's own folder."""
    from openpyxl import load_workbook

    few = pd.read_csv("sample_sights/training_sights.csv", dtype=str).iloc[::10].to_csv(index=False)
    sheet = load_workbook("sample_sights/class_workings.xlsx", read_only=True).worksheets[0]
    cadet = pd.DataFrame([r for r in sheet.iter_rows(values_only=True)][1:6],
                         columns=next(sheet.iter_rows(values_only=True))).to_csv(index=False)
    return {"few.csv": few, "cadet.csv": cadet}


@seeded(55)
@given(st.sampled_from(_WEIGHTED), st.integers(0, 20), _HOSTILE)
def test_every_commands_options_give_a_result_or_one_line_never_a_traceback(tmp_path_factory, command, which, value):
    """A hostile value in any option (or argument) of any command: the command does its work (exit 0) or refuses
    in one line naming the problem (exit 1, or 2 for a usage error as the command-line library gives), never a
    traceback, never 'an unexpected failure', and never writes where it was not asked to."""
    import os

    from typer.testing import CliRunner

    from navred.cli import app

    folder = tmp_path_factory.mktemp("options")
    for name, text in _option_logs().items():
        (folder / name).write_text(text, encoding="utf-8")
    head, options = _commands(folder)[command]
    names = list(options)
    arguments = list(head)
    target = which % (len(names) + len(head) - 1 or 1)
    if target < len(names):
        options = {**options, names[target]: value}
    else:
        arguments[1 + (target - len(names)) % (len(head) - 1)] = value
    for name, option_value in options.items():
        arguments += [name, option_value]
    before = set(os.listdir(folder))
    cwd = os.getcwd()
    os.chdir(folder)  # a relative output name lands here, never in the repository
    try:
        result = CliRunner().invoke(app, arguments)
    finally:
        os.chdir(cwd)
    _SEEN.append((command, result.exit_code))
    assert result.exit_code in (0, 1, 2), (arguments, result.exit_code, result.output[-500:])
    assert "Traceback" not in result.output and "unexpected failure" not in result.output, (arguments, result.output)
    assert result.exception is None or isinstance(result.exception, SystemExit), (arguments, result.exception)
    if result.exit_code == 1:
        errors = [line for line in result.output.splitlines() if line.startswith("navred: error:")]
        assert len(errors) == 1, (arguments, result.output)
    if result.exit_code != 0:
        written = set(os.listdir(folder)) - before
        assert not {w for w in written if not w.startswith(".")} - {"v.xlsx", "book.csv"}, (arguments, written)


_PASSAGE = list(csv.reader(open("sample_sights/passage_log.csv", encoding="utf-8")))
_PASSAGE_EDITS = st.lists(st.tuples(st.integers(1, len(_PASSAGE) - 1), st.integers(0, len(_PASSAGE[0]) - 1),
                                    _CELLS | st.sampled_from(["Second Sea Swallow (invented)", "departure", "course",
                                                              "current", "position", "", "000", "90 N", "-0"])),
                          min_size=1, max_size=5)


@seeded(12)
@given(_PASSAGE_EDITS)
def test_mutated_passage_logs_keep_their_day_s_work_or_refuse_rows_by_name(tmp_path_factory, edits):
    """A passage log kept with entry rows, mutated (cells, a second vessel's name, an entry word where a sight
    was, a course to the pole): every row is a sight, an entry or a rejection with its reason, and the day's
    work is done or refused in navred's own words, never a crash (the two-vessel log once failed here)."""
    from navred.errors import NavredError, NavredInternalError
    from navred.jobs.voyage import process_log

    rows = [list(r) for r in _PASSAGE]
    for row, column, cell in edits:
        rows[row][column] = cell
    path = tmp_path_factory.mktemp("passage") / "passage.csv"
    with open(path, "w", newline="", encoding="utf-8", errors="replace") as handle:
        csv.writer(handle).writerows(rows)
    try:
        voyage = process_log(path, plan=False)
        voyage.days_work()
    except NavredInternalError:
        raise
    except NavredError as exc:
        assert "\n" not in str(exc)
        return
    log = voyage.log
    kept = set(log.table.row) | set(log.entries.row) | set(log.rejected.row)
    data = {k + 1 for k, r in enumerate(rows) if k and any(c.strip() for c in r)}
    assert data <= kept, sorted(data - kept)
    assert log.rejected.reason.map(lambda r: isinstance(r, str) and len(r) > 5).all()
