"""Regenerate the demo's sight plan in sample_sights/ from the demo passage's DR track.

INVENTED DATA: the track of the invented ketch "Moth Orchid" (sample_sights/README.md). The plan is
made by navred itself (`navred plan`), so the committed files are exactly what navred prints:
tests/test_bridge.py makes them again and compares, so that they cannot drift from the program.

Run:  python scripts/make_demo_sight_plan.py
"""

from __future__ import annotations

from pathlib import Path

OUT = Path(__file__).resolve().parent.parent / "sample_sights"

# The demo passage (scripts/make_demo_sights.py states the same): from 44° 30.0′ N, 012° 00.0′ W on 2026-03-26,
# 215° true at 6.5 knots, height of eye 2.8 m, index error 1.4′ on the arc, keeping zone +1.
ARGUMENTS = ["plan", "--date", "2026-03-26", "--lat", "44 30.0 N", "--lon", "012 00.0 W", "--course", "215",
             "--speed", "6.5", "--days", "2", "--eye", "2.8 m", "--index-error", "1.4 on", "--zone", "+1",
             "--count", "4"]
FILES = ("demo_sight_plan.txt", "demo_sight_plan.csv", "demo_sight_plan-plans.csv", "demo_sky.svg")


def write_demo_plan(folder: Path = OUT) -> list[Path]:
    """The plan's text, its two CSV tables and the first twilight's sky, written into ``folder``."""
    from typer.testing import CliRunner

    from navred.cli import app

    folder = Path(folder)
    result = CliRunner().invoke(app, [*ARGUMENTS, "-o", str(folder / "demo_sight_plan.txt"), "--csv",
                                      str(folder / "demo_sight_plan.csv"), "-o", str(folder / "demo_sky.svg")])
    if result.exit_code:
        raise SystemExit(result.output)
    return [folder / name for name in FILES]


if __name__ == "__main__":
    for path in write_demo_plan():
        print(f"wrote {path}")
