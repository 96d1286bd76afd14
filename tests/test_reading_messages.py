"""What a navigator reads when a log is read: a failed run still ends with the caution and says each row's reason
(by kind, with its rows, whatever the command), stdout's last line ended before stderr speaks, a repeated header
row skipped with a note, a misspelled body shown as written, a refusal given in short as the same reasons as an
earlier row, a zone description written as a named UTC offset read with a note, and a 'Time' header beside a ZD
column refused naming both readings. The logs are written by hand, as the trial's were."""

from __future__ import annotations

import subprocess
import sys

import pytest
from typer.testing import CliRunner

from navred.angles import parse_angle
from navred.cli import app
from navred.errors import NavredError
from navred.io.cautions import CAUTION
from navred.io.logbook import read_sight_log, read_sight_log_blocks
from navred.timework import parse_zone_description

runner = CliRunner()

HEADER = ("Date,Watch time,ZD,Watch error,Body,Limb,Hs,IE,Height of eye (m),DR lat,DR lon,Course (°T),Speed (kn),"
          "Fix group,Observer")
# a Sun and three stars off Tahiti (the trial's pm log): ZD +10, IE written '1.2 off'
ROWS = [
    "2026-12-04,12:15 pm,+10h,0 s,Sun,LL,81° 51.4′,1.2 off,3.0,17° 30.0′ S,149° 30.0′ W,0,0,noon,2/O",
    "2026-12-04,4:40 pm,+10h,0 s,Sun,LL,21° 45.0′,1.2 off,3.0,17° 30.0′ S,149° 30.0′ W,0,0,pm sun,2/O",
    "2026-12-04,7:05 pm,+10h,0 s,Canopus,,10° 46.9′,1.2 off,3.0,17° 30.0′ S,149° 30.0′ W,0,0,stars,2/O",
    "2026-12-04,7:06 pm,+10h,0 s,Achernar,,46° 40.5′,1.2 off,3.0,17° 30.0′ S,149° 30.0′ W,0,0,stars,2/O",
    "2026-12-04,7:07 pm,+10h,0 s,Fomalhaut,,70° 47.2′,1.2 off,3.0,17° 30.0′ S,149° 30.0′ W,0,0,stars,2/O",
]


def unsigned(row: str) -> str:
    """The row with the IE signed but not said on or off, and the DR longitude signed with no letter: both refused
    (two readings each)."""
    return row.replace("1.2 off", "-1.2").replace("149° 30.0′ W", "-149° 30.0′")


def log_file(tmp_path, lines, name="log.csv"):
    path = tmp_path / name
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


@pytest.fixture
def refused_log(tmp_path):
    """Every sight refused, for two reasons each (the trial's pm_log.csv)."""
    return log_file(tmp_path, [HEADER] + [unsigned(r) for r in ROWS], "refused.csv")


# --- 1. a failed run: the caution, and each row's reasons --------------------------------------------------------

@pytest.mark.parametrize("arguments", [["reduce"], ["reduce", "--csv"], ["fix"], ["fix", "--csv"], ["series"]],
                         ids=["reduce", "reduce-csv", "fix", "fix-csv", "series"])
def test_a_run_that_read_a_log_and_reduced_nothing_ends_with_the_caution(refused_log, arguments):
    result = runner.invoke(app, [arguments[0], str(refused_log), *arguments[1:]])
    assert result.exit_code == 1
    lines = result.stderr.splitlines()
    assert result.stderr.count(CAUTION) == 1 and lines[-1] == CAUTION, result.stderr
    assert lines[-2].startswith("navred: error: nothing could be reduced: every one of the 5 rows was rejected; "
                                "each row's reason is above")
    assert CAUTION not in result.stdout and "navred reduce names" not in result.output


@pytest.mark.parametrize("command", ["fix", "reduce --csv", "series"])
def test_every_command_says_each_refused_row_by_kind_as_reduce_csv_does(refused_log, command):
    """One summary (cli.format.reduced_count_lines) for every command: the count, then each row with its body and
    every reason; fix no longer sends the navigator to another command."""
    words = command.split()
    stderr = runner.invoke(app, [words[0], str(refused_log), *words[1:]]).stderr
    assert "5 sights read: 0 reduced (0 with a warning), 5 not reduced" in stderr
    # a line longer than 200 characters goes on, indented, on the next (cli.common.folded): no line is cut short
    assert max(map(len, stderr.splitlines())) <= 200
    whole = stderr.replace("\n    ", " ")
    for row, body in zip(range(2, 7), ("Sun", "Sun", "Canopus", "Achernar", "Fomalhaut")):
        line = next(x for x in whole.splitlines() if x.startswith(f"not reduced: row {row} ("))
        assert line.startswith(f"not reduced: row {row} ({body}): IE: index error -1.2 has no on or off")
        assert "; DR lon: cannot read '-149° 30.0′' as a longitude" in line


def test_an_option_refused_before_any_log_is_named_is_its_line_then_the_caution(refused_log):
    result = runner.invoke(app, ["reduce", str(refused_log), "--dates", "sideways"])
    assert result.exit_code == 1 and result.stderr.splitlines() == [
        "navred: error: --dates 'sideways' is not one of day-first, month-first", CAUTION]


# --- 2. stdout's last line ended before stderr speaks: both streams to one file (2>&1) ----------------------------

#: The three runs in one process (its start is most of a second), each with both of its streams, the real file
#: descriptors 1 and 2, sent to one file as `2>&1` sends them, and navred's own entry point called as the
#: console script calls it; stdout is a pipe there, so buffered as a command's stdout is. What navred left in
#: stdout's buffer unwritten when it wrote to stderr is written only at the end of its run, after stderr's lines,
#: as a process's exit would write it.
_BOTH_STREAMS = """
import json, os, sys, tempfile
from navred.cli import main
texts = []
for arguments in json.loads(sys.argv[1]):
    with tempfile.TemporaryFile() as both:
        sys.stdout.flush()
        sys.stderr.flush()
        saved = os.dup(1), os.dup(2)
        os.dup2(both.fileno(), 1)
        os.dup2(both.fileno(), 2)
        sys.argv = ["navred", *arguments]
        try:
            main()
        except SystemExit:
            pass
        finally:
            sys.stdout.flush()
            sys.stderr.flush()
            os.dup2(saved[0], 1)
            os.dup2(saved[1], 2)
        both.seek(0)
        texts.append(both.read().decode("utf-8"))
sys.stdout.write(json.dumps(texts))
"""


def test_both_streams_in_one_never_run_a_line_on(tmp_path):
    import json
    import os

    mixed = log_file(tmp_path, [HEADER, ROWS[0], unsigned(ROWS[1]), ROWS[2], ROWS[3], unsigned(ROWS[4])], "m.csv")
    refused = log_file(tmp_path, [HEADER] + [unsigned(r) for r in ROWS], "r.csv")
    cases = ((["reduce", str(mixed), "--csv"], "not reduced: row 3 (Sun)"), (["fix", str(mixed), "--csv"], CAUTION),
             (["reduce", str(refused)], "navred: error:"))
    # stdout buffered as a command's is, whatever this run's environment asks (PYTHONUNBUFFERED would hide a
    # missing flush)
    quiet = {k: v for k, v in os.environ.items() if k != "PYTHONUNBUFFERED"}
    done = subprocess.run([sys.executable, "-c", _BOTH_STREAMS, json.dumps([a for a, _ in cases])], env=quiet,
                          stdout=subprocess.PIPE, text=True, encoding="utf-8", check=True, timeout=240)
    texts = json.loads(done.stdout)
    assert len(texts) == len(cases)
    for (arguments, first_stderr), text in zip(cases, texts):
        assert text.endswith("\n")
        lines = text.splitlines()
        # every stderr line starts its own line, once, after the last line of stdout
        for mark in ("navred: error:", "CAUTION:", "not reduced: row", "warning:", "note:"):
            assert all(line.startswith(mark) for line in lines if mark in line and not line.startswith(
                ("  ", "row ", "source,", "label,"))), (arguments, mark, text)
        assert sum(line == CAUTION for line in lines) == 1 and lines[-1] == CAUTION, (arguments, text)
        assert any(line.startswith(first_stderr) for line in lines), arguments


# --- 3. a repeated header skipped with a note; a body shown as written ------------------------------------------

def test_a_header_repeated_whole_is_skipped_with_a_note_and_not_counted(tmp_path):
    path = log_file(tmp_path, [HEADER, *ROWS[:3], HEADER, *ROWS[3:]], "pm_log2.csv")
    log = read_sight_log(path)
    assert log.rejected.empty and list(log.table.row) == [2, 3, 4, 6, 7]  # rows keep their numbers in the file
    assert "pm_log2.csv: row 5 repeats the header: skipped (not a sight; the rows after it are read by the same " \
           "columns)" in log.notes
    result = runner.invoke(app, ["reduce", str(path)])
    assert result.exit_code == 0
    assert "5 sights reduced (0 with a warning), 0 not reduced" in result.stdout and "?" not in result.stdout
    assert "note: pm_log2.csv: row 5 repeats the header: skipped" in result.stderr
    csv_run = runner.invoke(app, ["reduce", str(path), "--csv"])
    assert "5 sights read: 5 reduced" in csv_run.stderr and "(row)" not in csv_run.output


def test_a_header_repeated_in_a_later_block_is_noted_by_that_block(tmp_path):
    """A long log is read block by block (reduce --csv): the block that holds the repeat says so."""
    path = log_file(tmp_path, [HEADER, *ROWS, *ROWS, HEADER, *ROWS])
    blocks = list(read_sight_log_blocks(path, block_rows=4))
    assert len(blocks) > 2
    noted = [k for k, block in enumerate(blocks) if any("row 12 repeats the header: skipped" in n
                                                         for n in block.notes)]
    assert noted and noted[0] > 0
    assert sum(len(b.table) for b in blocks) == 15 and all(b.rejected.empty for b in blocks)


def test_a_header_repeated_in_part_is_refused_without_a_bare_row_prefix(tmp_path):
    """Some header cells blank: the rows after it may have been written to other columns, so it is refused."""
    part = ",".join(h if k < 5 else "" for k, h in enumerate(HEADER.split(",")))
    log = read_sight_log(log_file(tmp_path, [HEADER, ROWS[0], part, ROWS[1]]))
    assert list(log.rejected.row) == [3]
    message = log.table.loc[log.table.row == 3, "read_problem"].iloc[0]
    assert message.startswith("row 3 repeats the header row ('Date', 'Watch time', 'ZD', ...) in part")
    assert "(row)" not in message


def test_a_misspelled_body_is_shown_as_written(tmp_path):
    path = log_file(tmp_path, [HEADER, ROWS[0], ROWS[0].replace(",Sun,", ",Sunn,")])
    out = runner.invoke(app, ["reduce", str(path)]).stdout
    line = next(x for x in out.splitlines() if x.lstrip().startswith("3 "))
    assert line.split()[1] == "Sunn" and "unknown body 'Sunn'" in line and "?" not in line
    stderr = runner.invoke(app, ["reduce", str(path), "--csv"]).stderr
    assert "not reduced: row 3 (Sunn): Body: unknown body 'Sunn'" in stderr


# --- 4. the shorthand of a repeated refusal ----------------------------------------------------------------------

def test_a_refusal_given_in_short_names_all_its_reasons(refused_log):
    out = runner.invoke(app, ["reduce", str(refused_log)]).stdout
    short = [x for x in out.splitlines() if "not reduced:" in x and "index error" not in x]
    assert len(short) == 2  # rows 5 and 6: rows 2-4 in full
    assert all(x.endswith("not reduced: the same 2 reasons as row 2 (IE, DR lon)") for x in short), short
    assert "as row 2 ('" not in out
    assert "5 rows not reduced for the reasons given in full at row 2 (rows 2-6)" in out


def test_a_refusal_of_the_same_kind_with_other_values_quotes_its_own(tmp_path):
    rows = [unsigned(r).replace(",-1.2,", ",1.2 off,") for r in ROWS]
    rows[4] = rows[4].replace("-149° 30.0′", "-150° 00.0′")
    out = runner.invoke(app, ["reduce", str(log_file(tmp_path, [HEADER] + rows))]).stdout
    assert "the same reason as row 2 (DR lon)" in out
    assert "the same kind of reason as row 2 (DR lon); this row's own value: '-150° 00.0′'" in out


# --- 5. a zone description written as a named UTC offset; one rule for a signed latitude -------------------------

@pytest.mark.parametrize(("written", "zd"), [("UTC-10", 10), ("GMT-10", 10), ("UTC−3", 3), ("utc+5", -5),
                                             ("UTC +05:00", -5), ("UTC-10:00", 10), ("UTC+0", 0)])
def test_a_named_utc_offset_is_read_with_the_opposite_sign(written, zd):
    # ZT + ZD = UTC: a clock at UTC−10 is 10 h behind UTC, zone description +10  # common practice (zone time)
    assert parse_zone_description(written) == zd


@pytest.mark.parametrize(("written", "words"), [
    ("UTC+5:30", "not a whole hour"), ("UTC+13", "outside -12 to"), ("+10:30", "written like a UTC offset"),
    ("-10:00", "written like a UTC offset"), ("10", "has no sign"), ("UTC10", "written like a UTC offset")])
def test_an_offset_without_one_reading_stays_refused(written, words):
    with pytest.raises(NavredError, match=words):
        parse_zone_description(written)


def test_a_log_with_a_utc_offset_zone_gives_the_same_instant_and_a_note(tmp_path):
    path = log_file(tmp_path, [HEADER, ROWS[0], ROWS[0].replace("+10h", "UTC-10"), ROWS[0].replace("+10h", "GMT-10")])
    log = read_sight_log(path)
    assert log.rejected.empty and len(set(log.table.sight_utc)) == 1
    assert str(log.table.sight_utc.iloc[0])[:19] == "2026-12-04 22:15:00"  # 12:15 pm + 10 h
    assert ("zone description 'UTC-10' (row 3) is a UTC offset: read as zone description +10 (a clock 10 h behind "
            "UTC, ZT + 10 h = UTC); a zone description has the offset's opposite sign") in log.notes
    assert any("'GMT-10' (row 4)" in note for note in log.notes)


def test_a_signed_latitude_has_one_rule_in_decimal_and_in_degrees_and_minutes():
    # south negative, as ISO 6709 signs a latitude: '-17 30' is 17° 30′ S, as '-17.5' is
    assert parse_angle("-17 30", "lat") == parse_angle("-17.5", "lat") == parse_angle("17 30 S", "lat") == -17.5
    with pytest.raises(NavredError, match="no hemisphere letter"):
        parse_angle("-149 30", "lon")  # a longitude's sign has two conventions in logs: still refused


# --- 6. a 'Time' header beside a ZD column ---------------------------------------------------------------------

def test_a_time_header_beside_a_zd_column_names_both_readings_and_the_headers_that_settle_it(tmp_path):
    path = log_file(tmp_path, [HEADER.replace("Watch time", "Time"), ROWS[0]])
    result = runner.invoke(app, ["reduce", str(path)])
    assert result.exit_code == 1
    assert ("header 'Time' is ambiguous: UTC, or the ship's zone time read with the zone description column ('ZD') "
            "beside it?") in result.stderr
    assert "head it 'Zone time'" in result.stderr and "or 'UTC' (each cell the whole instant" in result.stderr
    assert result.stderr.splitlines()[-1] == CAUTION
    renamed = log_file(tmp_path, [HEADER.replace("Watch time", "Zone time"), ROWS[0]], "zt.csv")
    assert read_sight_log(renamed).rejected.empty


def test_a_paper_from_a_log_that_cannot_be_used_ends_with_the_caution(refused_log, tmp_path):
    """Not only the commands of sights: navred paper reading a log (here one that keeps no DR) ends the same way."""
    result = runner.invoke(app, ["paper", "--from", "2026-12-04", "--to", "2026-12-05", "--log", str(refused_log),
                                 "--eye", "3 m", "-o", str(tmp_path / "p.pdf")])
    assert result.exit_code == 1
    lines = result.stderr.splitlines()
    assert lines[-2].startswith("navred: error: ") and lines[-1] == CAUTION


def test_fix_csv_names_the_rows_it_could_not_reduce_on_stderr(tmp_path):
    mixed = log_file(tmp_path, [HEADER, ROWS[0], unsigned(ROWS[1]), *ROWS[2:]])
    result = runner.invoke(app, ["fix", str(mixed), "--csv"])
    assert result.exit_code == 0 and "not reduced" not in result.stdout
    assert "not reduced: row 3 (Sun): IE: index error -1.2 has no on or off" in result.stderr


def test_a_zone_option_written_as_a_named_utc_offset_is_read_with_a_note():
    result = runner.invoke(app, ["plan", "--date", "2026-12-04", "--lat", "17 30 S", "--lon", "149 30 W",
                                 "--zone", "UTC-10", "--eye", "3 m"])
    assert result.exit_code == 0, result.output
    assert "note: --zone 'UTC-10' is a UTC offset: read as zone description +10" in result.stderr
    assert "zone (+10)" in result.stdout
