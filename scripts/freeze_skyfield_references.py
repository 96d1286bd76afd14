"""Freeze skyfield's results for the test suite's syntheses into tests/data/skyfield_frozen.json.

The tests synthesize sextant sights and almanac events with skyfield (an independent
reference), which costs tens of milliseconds a call; the results do not change while skyfield,
its DE421 file and its built-in time scale do not. This runs the whole suite with recording on
(NAVRED_FREEZE_SKYFIELD=1, in one process): every synthesis is computed live and kept, and the file is written
at the end with the skyfield version. The tests then read the file; a synthesis not in it is
computed live, and tests/test_references.py recomputes a sample of the file live so that it
cannot drift unnoticed.

Run:  python scripts/freeze_skyfield_references.py   (needs the test extras)
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
FROZEN = ROOT / "tests" / "data" / "skyfield_frozen.json"


def main() -> None:
    environment = dict(os.environ, NAVRED_FREEZE_SKYFIELD="1")
    done = subprocess.run([sys.executable, "-m", "pytest", "-q", "-x", "-n", "0", str(ROOT / "tests")], cwd=ROOT,
                          env=environment)
    if done.returncode != 0:
        sys.exit("the suite failed while recording: the frozen file may be incomplete; fix the suite first")
    contents = json.loads(FROZEN.read_text(encoding="utf-8"))
    print(f"froze {len(contents['results']):,} skyfield results (skyfield {contents['skyfield']}) in {FROZEN}")


if __name__ == "__main__":
    main()
