"""Work shared among forked processes (navred.jobs.forking): the results and the warnings are those one process
gives, in order, whatever happens to the processes; and navred reduce --csv, which shares a long log's
blocks among the cores, writes the very text it writes alone."""

from __future__ import annotations

import importlib
import os
import warnings

import pytest
from typer.testing import CliRunner

import navred.jobs.forking as forking
from navred.cli import app
from navred.errors import NavredWarning
from navred.jobs.forking import forked_map

#: the reduction job that shares a long log's blocks among the cores
reducing = importlib.import_module("navred.jobs.reducing")

runner = CliRunner()
PARENT = os.getpid()


def scaled(context: int, item: int) -> int:
    """A piece of work that warns, as a reduction past the time tables does."""
    warnings.warn(f"piece {item} done in process {'the first' if os.getpid() == PARENT else 'a forked one'}",
                  NavredWarning, stacklevel=1)
    return context * item


def dies_when_forked(context: int, item: int) -> int:
    if os.getpid() != PARENT:
        os._exit(1)  # the process dies without a word
    return context * item



def reduced_in_blocks_and_whole(path, monkeypatch):
    """`navred reduce PATH --csv` in blocks of 60 rows over two cores, then read whole: (in blocks, whole)."""
    monkeypatch.setattr(reducing, "REDUCE_BLOCK_ROWS", 60)
    monkeypatch.setattr(forking, "cores", lambda: 2)
    shared = runner.invoke(app, ["reduce", str(path), "--csv"])
    monkeypatch.setattr(reducing, "REDUCE_BLOCK_ROWS", 100_000)
    return shared, runner.invoke(app, ["reduce", str(path), "--csv"])

def test_results_come_in_order_with_every_warning():
    with pytest.warns(NavredWarning) as caught:
        results = list(forked_map(scaled, range(12), context=3, workers=2))
    assert results == [3 * k for k in range(12)]
    texts = sorted(str(w.message) for w in caught)
    assert len(texts) == 12 and all(f"piece {k} done" in " ".join(texts) for k in range(12))
    if forking.can_fork():
        assert any("a forked one" in t for t in texts)  # the work was shared, and its warnings came back


def test_a_process_that_dies_leaves_its_work_to_the_first():
    assert list(forked_map(dies_when_forked, range(6), context=2, workers=2)) == [0, 2, 4, 6, 8, 10]


def test_reduce_csv_shared_among_processes_writes_what_one_process_writes(monkeypatch):
    """The training voyage (invented, 405 sights, every row naming its fix group) in blocks of 60 rows: shared
    among two processes, worked by one, and read whole, the CSV is the same text."""
    log = "sample_sights/training_sights.csv"
    monkeypatch.setattr(reducing, "REDUCE_BLOCK_ROWS", 60)
    monkeypatch.setattr(forking, "cores", lambda: 2)
    shared = runner.invoke(app, ["reduce", log, "--csv"])
    monkeypatch.setattr(forking, "cores", lambda: 1)
    alone = runner.invoke(app, ["reduce", log, "--csv"])
    monkeypatch.setattr(reducing, "REDUCE_BLOCK_ROWS", 100_000)
    whole = runner.invoke(app, ["reduce", log, "--csv"])
    assert shared.exit_code == alone.exit_code == whole.exit_code == 0
    assert shared.stdout == alone.stdout == whole.stdout
    assert len(shared.stdout.splitlines()) == 406


WORKER_SCRIPT = """
import os, sys, time
from navred.jobs.forking import forked_map

def slow(folder, item):
    open(os.path.join(folder, str(os.getpid())), "w").close()
    time.sleep(20)
    return item

print(list(forked_map(slow, range(4), context=sys.argv[1], workers=2)))
"""


@pytest.mark.skipif(not forking.can_fork(), reason="the system cannot fork: no process is forked")
def test_a_run_stopped_by_a_signal_leaves_no_worker_behind(tmp_path):
    # a navigator's trial: a workbook run stopped while drawing left its two drawers running, 0.3-0.9 GB each
    import signal
    import subprocess
    import sys
    import time

    script = tmp_path / "work.py"
    script.write_text(WORKER_SCRIPT)
    folder = tmp_path / "pids"
    folder.mkdir()
    parent = subprocess.Popen([sys.executable, str(script), str(folder)], stdout=subprocess.DEVNULL)

    def alive(pid: int) -> bool:
        try:
            with open(f"/proc/{pid}/status") as status:
                return not any(line.startswith("State:") and "Z" in line.split()[1] for line in status)
        except OSError:
            return False

    workers: list[int] = []
    try:
        deadline = time.monotonic() + 60
        while len(workers) < 2 and time.monotonic() < deadline:
            workers = [int(p.name) for p in folder.iterdir()]
            time.sleep(0.05)
        assert len(workers) == 2
        parent.send_signal(signal.SIGTERM)
        parent.wait(timeout=30)
        deadline = time.monotonic() + 10
        while any(alive(pid) for pid in workers) and time.monotonic() < deadline:
            time.sleep(0.1)
        assert not any(alive(pid) for pid in workers)
    finally:
        for pid in workers + [parent.pid]:  # (only the processes this test started)
            if alive(pid):
                os.kill(pid, signal.SIGKILL)


def read_the_ephemeris_far_along(context: None, item: int) -> int:
    """A piece that reads the ephemeris file at a place the first process never does."""
    from navred import ephemeris

    ephemeris._kernel().daf.read_array(1000 + item, 1003 + item)
    return item


@pytest.mark.skipif(not forking.can_fork(), reason="the system cannot fork")
def test_a_forked_process_reads_the_ephemeris_through_a_file_of_its_own():
    """A forked process that inherited the open ephemeris would share its read position with the first process
    (and with its sibling): jplephem reads a segment's trailer by a seek and a read, so two processes loading
    segments at once would read each other's bytes. Each forked process opens the file anew: the first
    process's read position is left where it was."""
    from navred import ephemeris

    descriptor = ephemeris._kernel().daf.file.fileno()
    before = os.lseek(descriptor, 0, os.SEEK_CUR)
    assert list(forked_map(read_the_ephemeris_far_along, [0, 1], context=None, workers=2)) == [0, 1]
    assert os.lseek(descriptor, 0, os.SEEK_CUR) == before


def _planted(tmp_path, bad_rows: dict[int, str]):
    """The training voyage (invented) with Hs spoilt at the given log rows (the header is row 1)."""
    lines = open("sample_sights/training_sights.csv", encoding="utf-8").read().splitlines()
    for row, hs in bad_rows.items():
        cells = lines[row - 1].split(",")
        cells[3] = hs
        lines[row - 1] = ",".join(cells)
    path = tmp_path / "planted.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return str(path)


def test_reduce_csv_counts_its_refusals_on_stderr_in_blocks_as_whole(tmp_path, monkeypatch):
    """A long log's refusals are never hidden behind the CSV: after it, on stderr, the sights read, reduced,
    warned about and not reduced, and each refusal by kind with its rows; in blocks of 60 rows shared among two
    processes the same lines as the log read whole. Rows planted: 37 unreadable Hs (one kind, in five blocks) and
    one Hs of 72 minutes (another kind); past 30 the first three of each kind are shown, the rest counted."""
    unreadable = [5, *range(70, 101), 130, 190, 250, 251, 400]
    path = _planted(tmp_path, {**{row: "4x.5" for row in unreadable}, 300: "42 72.0"})
    shared, whole = reduced_in_blocks_and_whole(path, monkeypatch)
    table = runner.invoke(app, ["reduce", path])
    # some rows refused, others reduced: exit 0, as navred reduce without --csv and navred fix
    assert shared.exit_code == whole.exit_code == table.exit_code == 0
    assert runner.invoke(app, ["fix", path]).exit_code == 0
    assert shared.stdout == whole.stdout
    assert shared.stderr == whole.stderr
    lines = [line for line in shared.stderr.splitlines() if not line.startswith(("CAUTION", "note: planted.csv"))]
    # the first three of the unreadable kind in full, the rest counted with their rows; the other kind shown
    assert [line.split(" (")[0] for line in lines[0:3]] == ["not reduced: row 5", "not reduced: row 70",
                                                            "not reduced: row 71"]
    assert "'4x.5'" in lines[0]
    assert lines[3] == "  and 34 more like it (rows 72-100, 130, 190, 250-251, 400)"
    assert lines[4].startswith("not reduced: row 300 (") and "'42 72.0'" in lines[4]
    assert "every row's status and message is in the CSV" in lines[5]
    # the count last (before the caution), where a terminal leaves it in sight, then one line per kind
    assert lines[6] == "405 sights read: 367 reduced (0 with a warning), 38 not reduced"
    assert lines[7].startswith("by kind")
    assert lines[8].startswith("  37 sights not reduced: hs: cannot read '…' as an angle")
    assert lines[8].endswith("(rows 5, 70-100, 130, 190, 250-251, 400)")
    assert lines[9].startswith("  1 sight not reduced: ") and lines[9].endswith("(row 300)")
    assert len(lines) == 10
    assert shared.stderr.splitlines()[-1].startswith("CAUTION")
    # the text form says the same count
    assert "367 sights reduced (0 with a warning), 38 not reduced" in table.stdout


def test_reduce_csv_with_every_row_refused_says_so_and_exits_1(tmp_path, monkeypatch):
    """Every row refused: the count and the refusals, then exit 1 as navred reduce and navred fix do."""
    path = _planted(tmp_path, {row: "4x.5" for row in range(2, 407)})
    monkeypatch.setattr(reducing, "REDUCE_BLOCK_ROWS", 60)
    monkeypatch.setattr(forking, "cores", lambda: 2)
    shared = runner.invoke(app, ["reduce", path, "--csv"])
    assert shared.exit_code == runner.invoke(app, ["reduce", path]).exit_code == \
        runner.invoke(app, ["fix", path]).exit_code == 1
    assert "405 sights read: 0 reduced (0 with a warning), 405 not reduced" in shared.stderr
    assert "and 402 more like it (rows 5-406)" in shared.stderr
    assert "nothing could be reduced: every one of the 405 rows was rejected" in shared.stderr


def _spoilt(tmp_path, row: int, column: int, text: str):
    """The training voyage (invented) with one cell of a log row (the header is row 1) replaced."""
    lines = open("sample_sights/training_sights.csv", encoding="utf-8").read().splitlines()
    cells = lines[row - 1].split(",")
    cells[column] = text
    lines[row - 1] = ",".join(cells)
    path = tmp_path / f"spoilt_{row}_{column}.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return str(path)


def test_the_first_blocks_are_handed_out_before_the_look_at_the_file_ends(tmp_path, monkeypatch):
    """A long plain log looked at a few kilobytes at a time: its first two blocks are handed out while the rest
    of the file is still to be looked at, then the others; the blocks, their bounds and digests are those the
    look at the whole file gives first (plain_csv_blocks), and each reads as the same table."""
    from navred.io import readers
    from navred.io.logbook import sight_log_blocks, sight_log_blocks_found

    log = "sample_sights/training_sights.csv"
    monkeypatch.setattr(readers, "SCAN_BYTES", 4096)
    found = sight_log_blocks_found(log, block_rows=60, early=2)
    parts = iter(found.parts)
    first = [next(parts), next(parts)]
    assert [p.k for p in first] == [0, 1]
    assert found.plan.plain.parts == ()  # the file not yet looked at whole
    every = first + list(parts)
    whole = sight_log_blocks(log, block_rows=60)
    assert [p.k for p in every] == list(range(7)) == list(range(len(whole)))
    assert [(p.start, p.stop, p.count, p.digest) for p in every] == \
        [(p.start, p.stop, p.count, p.digest) for p in whole.plain.parts]
    assert found.plan.plain.offsets.tolist() == whole.plain.offsets.tolist()
    for part in every:
        early, late = found.plan.read_part(part).table, whole.read(part.k).table
        assert early.equals(late)


@pytest.mark.parametrize("row, column, text, why", [
    (300, 10, "", "a blank fix group in the fifth block: automatic groups need the whole log"),
    (350, 6, "", "a blank DR latitude in the sixth block: refused by its row, as the whole log refuses it"),
    (380, 12, '"Cadet Ansel"', "a quoted cell in the seventh block: not a plain file, read whole"),
    (250, 12, "Cadet Ansel,x", "a line with a field too many in the fifth block: read whole"),
])
def test_reduce_csv_begun_in_blocks_gives_the_whole_logs_text_when_a_late_block_says_otherwise(
        tmp_path, monkeypatch, row, column, text, why):
    """The first blocks are worked while the file is looked at; when a later block turns out to need the log
    read whole (or looked at closer), what was made of them is dropped: the CSV and the lines on stderr are those
    of the log read whole."""
    path = _spoilt(tmp_path, row, column, text)
    shared, whole = reduced_in_blocks_and_whole(path, monkeypatch)
    assert shared.exit_code == whole.exit_code, why
    assert shared.stdout == whole.stdout, why
    assert shared.stderr == whole.stderr, why
    assert len(shared.stdout.splitlines()) == 406, why


def test_reduce_csv_of_a_log_of_exactly_one_block_is_read_whole(tmp_path, monkeypatch):
    """A log of exactly one block's lines (60): its one block found at once, then the end of the file: read
    whole, the same text."""
    lines = open("sample_sights/training_sights.csv", encoding="utf-8").read().splitlines()[:61]
    path = tmp_path / "sixty.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    shared, whole = reduced_in_blocks_and_whole(str(path), monkeypatch)
    assert shared.exit_code == whole.exit_code == 0
    assert shared.stdout == whole.stdout and len(shared.stdout.splitlines()) == 61


def test_reduce_csv_begun_in_blocks_notes_a_repeated_header_in_a_late_block_as_the_whole_log_does(tmp_path,
                                                                                                monkeypatch):
    """A row that repeats the header in the sixth block (row 330: two logs joined): skipped with its note, the CSV
    and stderr of the blocks begun while the file is looked at those of the log read whole."""
    lines = open("sample_sights/training_sights.csv", encoding="utf-8").read().splitlines()
    lines[329] = lines[0]
    path = tmp_path / "joined.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    shared, whole = reduced_in_blocks_and_whole(str(path), monkeypatch)
    assert shared.exit_code == whole.exit_code == 0
    assert shared.stdout == whole.stdout and len(shared.stdout.splitlines()) == 405
    assert shared.stderr == whole.stderr and "row 330 repeats the header" in shared.stderr


def test_reduce_csv_names_the_rows_past_the_iers_table_once_in_blocks_as_whole(tmp_path, monkeypatch):
    """Finding 8 (navigator's trial, # common practice): a log that runs past the end of the IERS table and the
    leap-second table's expiry is warned of once for the whole run, by the log's rows (the header is row 1), never
    by a block's places ('Values 4158, 4159 ...'), and the same lines whether read in blocks or whole; the count
    comes last, before the caution, followed by one line per kind; no line is longer than 200 characters."""
    lines = open("sample_sights/training_sights.csv", encoding="utf-8").read().splitlines()[:151]
    # rows 100-151 moved on five years (past any table installed; the almanac, DE421, runs to 2050)
    lines[99:] = [line.replace("2026-", "2031-", 1) for line in lines[99:]]
    path = tmp_path / "late.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    shared, whole = reduced_in_blocks_and_whole(str(path), monkeypatch)
    assert shared.exit_code == whole.exit_code == 0
    assert shared.stderr == whole.stderr
    err = shared.stderr.splitlines()
    assert "Values" not in shared.stderr and max(map(len, err)) <= 200
    iers = [line for line in err if line.startswith("warning:") and "the end of the IERS table" in line]
    leap = [line for line in err if line.startswith("warning:") and "leap-second" in line]
    assert iers == [line for line in iers if line.startswith("warning: 52 sights, rows 100-151: instants after ")]
    assert len(iers) == 1 and len(leap) == 1 and leap[0].startswith("warning: 52 sights, rows 100-151: ")
    count = next(i for i, line in enumerate(err) if line.startswith("150 sights read: 150 reduced"))
    assert err[count + 1].startswith("by kind") and err[-1].startswith("CAUTION")
    closing = err[count + 2:-1]
    assert all(line.startswith("  ") for line in closing)
    assert any(line.startswith("  52 sights warned of: instants after ") and line.endswith("(rows 100-151)")
               for line in closing)
