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
