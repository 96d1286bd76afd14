"""Speed of voyage planning.

Target (issue 6): twilight times and sight plans for every morning and evening of a 60-day
passage along a DR track in under 2 seconds. The invented passage: from 20° N 025° W on
250° at 6 knots (a trade-wind crossing, 8,640 nautical miles).

Run:  python benchmarks/bench_plan.py
"""

from __future__ import annotations

import time

from navred.sightplan import twilight_plans


def main() -> None:
    twilight_plans("2026-11-20", 2, 20.0, -25.0, course_deg=250.0, speed_kn=6.0)  # load the tables once
    for count in (3, 4, 5):
        start = time.perf_counter()
        events, plans = twilight_plans("2026-11-20", 60, 20.0, -25.0, course_deg=250.0, speed_kn=6.0, count=count)
        elapsed = time.perf_counter() - start
        print(f"60-day passage, sets of {count}: {len(plans)} twilight plans and {len(events['sunrise'])} days of "
              f"twilight times in {elapsed:.2f} s")


if __name__ == "__main__":
    main()
