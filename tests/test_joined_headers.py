"""Two logs joined one under the other, the second's header in another column order or with other columns: never
read by the first header (the rows after it would get the wrong columns: the trial saw a 45-kn speed and an index
error's sign flipped). The log is refused, naming the row, both orders and what to do, by every way a log is read:
reduce, reduce --csv whole and in blocks (with the blocks begun while the file is looked at), fix, workbook,
days, series, training, and the Python API (a file, a workbook, a DataFrame). A row only partly a header is
refused as a row. The logs are written by hand (as the trial's were) or are the invented training voyage."""

from __future__ import annotations

import pandas as pd
import pytest
from typer.testing import CliRunner

from navred.cli import app
from navred.errors import NavredError
from navred.io.cautions import CAUTION
from navred.io.logbook import read_sight_log, read_sight_log_blocks
from navred.jobs import forking, reducing

runner = CliRunner()

HEADER = ("Date,Watch time,ZD,Watch error,Body,Limb,Hs,IE,Height of eye (m),DR lat,DR lon,Course (°T),Speed (kn),"
          "Fix group,Observer")
ROWS = [
    "2026-12-04,12:15 pm,+10h,0 s,Sun,LL,81° 51.4′,1.2 off,3.0,17° 30.0′ S,149° 30.0′ W,45,5,noon,2/O",
    "2026-12-04,4:40 pm,+10h,0 s,Sun,LL,21° 45.0′,1.2 off,3.0,17° 30.0′ S,149° 30.0′ W,45,5,pm sun,2/O",
    "2026-12-04,7:05 pm,+10h,0 s,Canopus,,10° 46.9′,1.2 off,3.0,17° 30.0′ S,149° 30.0′ W,45,5,stars,2/O",
]
#: the second export's order: speed before course, the index error last
ORDER = [0, 1, 2, 3, 4, 5, 6, 8, 9, 10, 12, 11, 13, 14, 7]


def reordered(line: str) -> str:
    cells = line.split(",")
    return ",".join(cells[k] for k in ORDER)


@pytest.fixture
def joined(tmp_path):
    path = tmp_path / "joined.csv"
    path.write_text("\n".join([HEADER, *ROWS, reordered(HEADER), *map(reordered, ROWS)]) + "\n", encoding="utf-8")
    return path


def _refusal_named(text: str, row: int = 5) -> None:
    assert f"row {row} is another header row, not this log's" in text
    assert "The log's header: Date, Watch time, ZD" in text and f"; row {row}: Date, Watch time, ZD" in text
    assert "Split the file at row" in text and "put every row's cells in the first header's order" in text


def test_the_api_refuses_a_log_joined_to_one_in_another_order(joined):
    with pytest.raises(NavredError) as caught:
        read_sight_log(joined)
    _refusal_named(str(caught.value))
    # the columns that differ are named with both headers' names
    assert "H 'IE' / 'Height of eye (m)'" in str(caught.value)
    assert "K 'DR lon' / 'Speed (kn)'" in str(caught.value) and "and 1 more)" in str(caught.value)


def test_a_dataframe_and_a_workbook_are_refused_alike(joined, tmp_path):
    frame = pd.read_csv(joined, dtype=str, keep_default_na=False)
    with pytest.raises(NavredError) as caught:
        read_sight_log(frame)
    assert "the table: row 4 is another header row" in str(caught.value)  # a DataFrame's rows from 1
    book = tmp_path / "joined.xlsx"
    frame.to_excel(book, index=False)
    with pytest.raises(NavredError) as caught:
        read_sight_log(book)
    _refusal_named(str(caught.value))


def test_a_second_header_with_other_columns_is_refused(tmp_path):
    other = "UTC,Body,Limb,Hs,IE,Eye height (m),DR lat,DR lon,Course,Speed,Fix group,Observer,Notes,Vessel,Voyage"
    path = tmp_path / "other.csv"
    path.write_text("\n".join([HEADER, *ROWS, other]) + "\n", encoding="utf-8")
    with pytest.raises(NavredError, match="row 5 is another header row"):
        read_sight_log(path)


@pytest.mark.parametrize("arguments", [["reduce"], ["reduce", "--csv"], ["fix"], ["series"], ["days"],
                                       ["workbook", "-o", "{out}/joined.xlsx"]],
                         ids=["reduce", "reduce-csv", "fix", "series", "days", "workbook"])
def test_every_command_refuses_it_with_the_caution(joined, tmp_path, arguments):
    arguments = [a.replace("{out}", str(tmp_path)) for a in arguments]
    result = runner.invoke(app, [arguments[0], str(joined), *arguments[1:]])
    assert result.exit_code == 1, result.output
    _refusal_named(result.stderr)
    assert result.stderr.splitlines()[-1] == CAUTION and result.stdout == ""
    assert not (tmp_path / "joined.xlsx").exists()


def _long_joined(tmp_path, row: int) -> str:
    """The training voyage (invented, 405 sights) with the header again at ``row``, its columns speed and course
    swapped, and the rows after it written in that order."""
    lines = open("sample_sights/training_sights.csv", encoding="utf-8").read().splitlines()
    swap = list(range(len(lines[0].split(","))))
    swap[8], swap[9] = 9, 8

    def order(line):
        cells = line.split(",")
        return ",".join(cells[k] for k in swap)

    lines = lines[:row - 1] + [order(lines[0])] + [order(x) for x in lines[row - 1:]]
    path = tmp_path / "long_joined.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return str(path)


def test_a_long_log_in_blocks_is_refused_before_any_block_is_written(tmp_path, monkeypatch):
    """In blocks of 60 rows shared among two processes, the first blocks begun while the file is looked at: the
    header at row 300 (block 5) refuses the log before a line of CSV is written, as the log read whole does."""
    path = _long_joined(tmp_path, 300)
    monkeypatch.setattr(reducing, "REDUCE_BLOCK_ROWS", 60)
    monkeypatch.setattr(forking, "cores", lambda: 2)
    shared = runner.invoke(app, ["reduce", path, "--csv"])
    monkeypatch.setattr(forking, "cores", lambda: 1)
    alone = runner.invoke(app, ["reduce", path, "--csv"])
    for result in (shared, alone):
        assert result.exit_code == 1 and result.stdout == ""
        assert "row 300 is another header row" in result.stderr
        assert "they differ in columns I 'course_deg' / 'speed_kn', J 'speed_kn' / 'course_deg'" in result.stderr
        assert result.stderr.splitlines()[-1] == CAUTION
    with pytest.raises(NavredError, match="row 300 is another header row"):
        list(read_sight_log_blocks(path, block_rows=60))


def test_training_refuses_it(tmp_path):
    path = _long_joined(tmp_path, 100)
    result = runner.invoke(app, ["training", path, "--track", "sample_sights/training_track.gpx",
                                 "-o", str(tmp_path / "summary.pdf")])
    assert result.exit_code == 1 and "row 100 is another header row" in result.stderr
    assert result.stderr.splitlines()[-1] == CAUTION


def test_a_row_only_partly_a_header_is_refused_as_a_row_not_read_as_a_sight(tmp_path):
    """Names in their own columns with sight cells beside them (a header pasted over part of a row): refused."""
    cells = ROWS[1].split(",")
    cells[4], cells[5], cells[6] = "Body", "Limb", "Hs"
    path = tmp_path / "part.csv"
    path.write_text("\n".join([HEADER, ROWS[0], ",".join(c if k >= 4 and k <= 6 else "" for k, c in
                                                            enumerate(cells)), ROWS[2]]) + "\n", encoding="utf-8")
    log = read_sight_log(path)
    assert list(log.rejected.row) == [3]
    assert "row 3 repeats the header row ('Body', 'Limb', 'Hs') in part" in \
        log.table.loc[log.table.row == 3, "read_problem"].iloc[0]


def test_an_identical_repeat_is_still_skipped_and_a_log_of_sights_still_read(tmp_path):
    path = tmp_path / "same.csv"
    path.write_text("\n".join([HEADER, *ROWS, HEADER.upper(), *ROWS]) + "\n", encoding="utf-8")
    log = read_sight_log(path)
    assert log.rejected.empty and len(log.table) == 6
