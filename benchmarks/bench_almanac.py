"""Time navred's almanac against skyfield, each side from scratch, on the same random instants.

Target (issue 13): on 50,000 random instants over 2020-2030, navred at least 30 times faster
than skyfield for the Sun, the Moon and a star, each side computing its instants from scratch
(a fresh skyfield Time for every body, a fresh navred call from datetime64), measured side by
side in one run. Both start from UTC and end with GHA and Dec. The two sides are timed in
turn, ROUNDS times; the figures printed are medians, and the ratio is the median of the
pairwise ratios (the machine is shared, so single timings mean little).

navred's call is timed with its own IERS table; its agreement with skyfield is checked in a
separate, untimed call given skyfield's DUT1 (skyfield's built-in UT1 table drifts from the
IERS table after mid-2026, docs/almanac.md).

Also printed: the same instants for the Sun, the Moon, four planets and 58 stars through one
reusable batch of instants (navred.timescales.instants), which shares the time scales, the
Earth, the Sun and the frame across the 64 calls.

Also printed (issue 26): `navred almanac` for five bodies at one instant, the whole command, against
`python -c "import numpy"`, in turn (target: within 2 times; no pandas imported).

Run:  python benchmarks/bench_almanac.py [N] [ROUNDS]
"""

from __future__ import annotations

import importlib.resources
import statistics
import subprocess
import sys
import time
import warnings

import numpy as np
from skyfield.api import Star, load
from timing import PYTHON, paired

from navred.almanac import places
from navred.stars import known_bodies, star_table
from navred.timescales import instants


def timed(function):
    start = time.perf_counter()
    result = function()
    return time.perf_counter() - start, result


def main(n: int = 50_000, rounds: int = 5) -> None:
    warnings.simplefilter("ignore")
    ts = load.timescale(builtin=True)
    eph = load(str(importlib.resources.files("skyfield_data") / "data" / "de421.bsp"))
    earth = eph["earth"]
    table = star_table()
    i = list(table.name).index("Sirius")
    sirius = Star(ra_hours=table.ra_deg[i] / 15.0, dec_degrees=table.dec_deg[i],
                  ra_mas_per_year=table.pm_ra_cosdec_mas_per_year[i],
                  dec_mas_per_year=table.pm_dec_mas_per_year[i],
                  parallax_mas=table.parallax_mas[i], epoch=ts.J(1991.25))
    rng = np.random.default_rng(2026)
    seconds = rng.uniform(0.0, (np.datetime64("2030-01-01") - np.datetime64("2020-01-01")).astype(int) * 86400.0, n)
    utc64 = np.datetime64("2020-01-01", "ns") + np.round(seconds * 1e9).astype("timedelta64[ns]")
    whole = np.floor(seconds / 86400.0)

    def sky_time():  # a fresh skyfield Time from calendar components
        return ts.utc(2020, 1, 1 + whole.astype(int), 0, 0, seconds - whole * 86400.0)

    dut1 = sky_time().dut1
    places("Sun", utc64[:10])  # load the tables and the ephemeris once, outside the timings
    print(f"{n:,} random instants over 2020-2030; {rounds} rounds, the two sides in turn; medians in seconds")
    print(f"{'body':<8} {'skyfield':>9} {'navred':>8} {'µs/instant':>10} {'ratio':>7} {'max diff′':>10}")
    for body, target in (("Sun", eph["sun"]), ("Moon", eph["moon"]), ("Sirius", sirius)):
        def with_skyfield(target=target):
            t = sky_time()
            ra, dec, _ = earth.at(t).observe(target).apparent().radec(epoch="date")
            return (t.gast - ra.hours) * 15.0, dec.degrees

        def with_navred(body=body):
            p = places(body, utc64)
            return p.gha_deg, p.dec_deg

        sky, nav, ratio = [], [], []
        for _ in range(rounds):
            s, (sky_gha, sky_dec) = timed(with_skyfield)
            v, _ = timed(with_navred)
            sky.append(s)
            nav.append(v)
            ratio.append(s / v)
        check = places(body, utc64, dut1_s=dut1)
        diff = max(np.max(np.abs(((check.gha_deg - sky_gha + 180) % 360 - 180) * np.cos(np.radians(sky_dec)))),
                   np.max(np.abs(check.dec_deg - sky_dec))) * 60
        nav_s = statistics.median(nav)
        print(f"{body:<8} {statistics.median(sky):9.3f} {nav_s:8.3f} {nav_s / n * 1e6:10.2f} "
              f"{statistics.median(ratio):6.1f}x {diff:10.6f}")

    bodies = known_bodies()
    separate, _ = timed(lambda: [places(b, utc64) for b in bodies])
    shared, _ = timed(lambda: [places(b, batch) for batch in [instants(utc64)] for b in bodies])
    print(f"{len(bodies)} bodies at the same instants: {separate:.2f} s as separate calls, "
          f"{shared:.2f} s through one reusable batch of instants ({separate / shared:.1f}x)")

    # the command for one instant, the whole process, against python importing numpy alone, in turn
    command = [PYTHON, "-m", "navred", "almanac", "Sun", "Moon", "Venus", "Vega", "Aries", "--utc",
               "2026-03-20T18:42:10Z"]
    loaded = subprocess.run([PYTHON, "-c", "import runpy, sys; sys.argv = ['navred'] + sys.argv[1:]; "
                             "runpy.run_module('navred', run_name='__main__'); print('pandas' in sys.modules, "
                             "file=sys.stderr)", *command[3:]], capture_output=True, text=True, check=True)
    pair = paired(command, [PYTHON, "-c", "import numpy"], max(rounds, 7))
    print(pair.line("navred almanac, five bodies at one instant", "python -c 'import numpy'")
          + f" (target 2); pandas imported: {loaded.stderr.strip().splitlines()[-1]}")


if __name__ == "__main__":
    main(*(int(a) for a in sys.argv[1:3]))
