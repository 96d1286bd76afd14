"""Fuzzing the log reader (hypothesis, seeded and bounded): every row of a mutated log is accepted or
rejected with a reason naming its row and column, a good row reads the same beside bad rows, and
nothing but a one-line refusal ever comes out of a file that is not a log."""

from __future__ import annotations

import csv
import io

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
_EDITS = st.one_of(
    st.tuples(st.just("cell"), st.integers(0, len(ROWS) - 1), st.integers(0, len(HEADER) - 1), _CELLS),
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


@seeded(45)
@given(st.lists(_LOG, min_size=50, max_size=50))
def test_mutated_logs_lose_no_row_and_good_rows_read_the_same(tmp_path_factory, plans):
    # 45 seeded examples of 50 mutated logs each, read together: 2,250 logs
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
    # several files: each fix-group label keeps its file
    assert (good.fix_group.to_numpy() == (good.prefix + clean.fix_group.to_numpy()).to_numpy()).all()
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
    clean = CLEAN_MARKS.set_index("row")
    # a round's plotted fix is judged from every line of its fix group: a touched line touches its round too
    rounds = {rows[i].get("Fix group", "") for i in touched} - {""}
    near = {i for i, r in enumerate(rows) if r.get("Fix group", "") in rounds} | touched
    kept = report.rows[~report.rows.row.isin([i + 2 for i in near])].set_index("row")
    assert (kept.first_wrong_line == clean.loc[kept.index, "first_wrong_line"]).all()
    assert (kept.cause == clean.loc[kept.index, "cause"]).all()


def _clean_marks():
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


CLEAN_MARKS = _clean_marks()


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
