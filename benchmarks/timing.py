"""What the benchmarks share: whole commands timed in turn against a reference command (the ratio taken pair
by pair, so that a shared machine's drift cancels), and the peak memory of a whole process tree.

Not a test: the scripts print figures (docs/speed.md lists them)."""

from __future__ import annotations

import os
import resource
import statistics
import subprocess
import sys
import time
from dataclasses import dataclass

PYTHON = sys.executable


def tree_pss_mb(pid: int) -> float:
    """The proportional set size of a process and all its descendants, in MB (0 once it has ended): pages
    shared by forked processes are counted once among them (Linux)."""
    total_kb, stack = 0, [pid]
    while stack:
        current = stack.pop()
        try:
            with open(f"/proc/{current}/smaps_rollup") as rollup:
                total_kb += int(next(line for line in rollup if line.startswith("Pss:")).split()[1])
            for task in os.listdir(f"/proc/{current}/task"):
                with open(f"/proc/{current}/task/{task}/children") as children:
                    stack += [int(c) for c in children.read().split()]
        except (OSError, StopIteration, ValueError):
            continue
    return total_kb / 1024


@dataclass
class Run:
    seconds: float
    tree_peak_mb: float
    #: user + system seconds of the command and every process it waited for (the processor time it took, which
    #: a shared machine's load does not inflate as it does the wall time)
    cpu_seconds: float = float("nan")


def run(command: list[str], *, stdout=None, sample_s: float = 0.05) -> Run:
    """One run of a command: its wall time, its processor time and the peak of its process tree's PSS, sampled."""
    start = time.perf_counter()
    process = subprocess.Popen(command, stdout=stdout or subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    peak = 0.0
    while True:
        pid, status, usage = os.wait4(process.pid, os.WNOHANG)
        if pid:
            break
        peak = max(peak, tree_pss_mb(process.pid))
        time.sleep(sample_s)
    seconds = time.perf_counter() - start
    process.returncode = os.waitstatus_to_exitcode(status)
    if process.returncode != 0:
        raise SystemExit(f"{' '.join(command)} failed ({process.returncode})")
    return Run(seconds, peak, usage.ru_utime + usage.ru_stime)


def load_average() -> str:
    """The machine's load over the last minute and five minutes (2 cores: above 2, others wait)."""
    one, five, _ = os.getloadavg()
    return f"load average {one:.1f} (1 min), {five:.1f} (5 min) on {os.cpu_count()} cores"


def largest_child_mb(command: list[str]) -> float:
    """The largest resident size (MB) any child process of this one has reached, after running ``command``
    (the figure grows monotonically: run the largest case last)."""
    subprocess.run(command, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024


@dataclass
class Paired:
    a: list[float]
    b: list[float]

    @property
    def ratios(self) -> list[float]:
        return [x / y for x, y in zip(self.a, self.b)]

    def line(self, what: str, reference: str) -> str:
        ratios = self.ratios
        return (f"{what}: median {statistics.median(self.a):.2f} s; {reference}: median "
                f"{statistics.median(self.b):.2f} s; ratio median {statistics.median(ratios):.2f} "
                f"(min {min(ratios):.2f}, max {max(ratios):.2f}, {len(ratios)} pairs)")


def paired(a: list[str], b: list[str], runs: int = 5, *, a_stdout: str | None = None) -> Paired:
    """``a`` and ``b`` run in turn, ``runs`` times each after one warm-up of each; their wall times."""
    def once(command, out):
        start = time.perf_counter()
        with open(out, "wb") if out else open(os.devnull, "wb") as sink:
            subprocess.run(command, check=True, stdout=sink, stderr=subprocess.DEVNULL)
        return time.perf_counter() - start

    once(a, a_stdout)
    once(b, None)
    times_a, times_b = [], []
    for _ in range(runs):
        times_a.append(once(a, a_stdout))
        times_b.append(once(b, None))
    return Paired(times_a, times_b)
