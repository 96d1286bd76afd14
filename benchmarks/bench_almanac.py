"""Time navred's almanac against skyfield on the same 100,000 (body, instant) pairs.

Target (issue 2): navred at least 10 times faster than skyfield for the Sun and
the Moon while agreeing within 0.01′. Two sets of instants are timed: a year of
a fleet's sights (instants clustered within one year) and instants spread at
random over 1973-2049. Each timing is the best of three runs; both libraries
start from UTC instants and end with GHA and Dec.

Run:  python benchmarks/bench_almanac.py [N]
"""

from __future__ import annotations

import importlib.resources
import sys
import time
import warnings

import numpy as np
from skyfield.api import Star, load

from navred.almanac import places
from navred.stars import star_table


def best_of(function, repeats=3):
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        result = function()
        times.append(time.perf_counter() - start)
    return min(times), result


def main(n: int = 100_000) -> None:
    warnings.simplefilter("ignore")
    ts = load.timescale(builtin=True)
    eph = load(str(importlib.resources.files("skyfield_data") / "data" / "de421.bsp"))
    earth = eph["earth"]
    table = star_table()
    rng = np.random.default_rng(2026)
    i = list(table.name).index("Sirius")  # skyfield pairs one star with many instants
    sirius = Star(ra_hours=table.ra_deg[i] / 15.0, dec_degrees=table.dec_deg[i],
                  ra_mas_per_year=table.pm_ra_cosdec_mas_per_year[i],
                  dec_mas_per_year=table.pm_dec_mas_per_year[i],
                  parallax_mas=table.parallax_mas[i], epoch=ts.J(1991.25))
    spans = {
        "one year (2025)": np.sort(rng.uniform(0, 365, n)) + 2460676.5,
        "1973-2049 spread": rng.uniform(2441683.5, 2469000.5, n),
    }
    print(f"{n:,} (body, instant) pairs per row; best of 3; seconds")
    print(f"{'instants':<18} {'body':<6} {'skyfield':>9} {'navred':>8} {'ratio':>6} {'max diff′':>10}")
    for label, jd_utc in spans.items():
        whole_days = np.floor(jd_utc - 2451544.5)
        seconds = (jd_utc - 2451544.5 - whole_days) * 86400.0

        def sky_time(whole_days=whole_days, seconds=seconds):
            return ts.utc(2000, 1, 1 + whole_days.astype(int), 0, 0, seconds)

        utc64 = (np.datetime64("2000-01-01", "ns") + whole_days.astype("timedelta64[D]")
                 + (seconds * 1e9).astype("timedelta64[ns]"))
        dut1 = sky_time().dut1
        for body, target, names in (("Sun", eph["sun"], "Sun"), ("Moon", eph["moon"], "Moon"),
                                    ("Sirius", sirius, "Sirius")):
            def with_skyfield(target=target, sky_time=sky_time):
                tt = sky_time()
                ra, dec, _ = earth.at(tt).observe(target).apparent().radec(epoch="date")
                return (tt.gast - ra.hours) * 15.0, dec.degrees

            def with_navred(names=names, utc64=utc64, dut1=dut1):
                p = places(names, utc64, dut1_s=dut1)
                return p.gha_deg, p.dec_deg

            sky_s, (sky_gha, sky_dec) = best_of(with_skyfield)
            nav_s, (nav_gha, nav_dec) = best_of(with_navred)
            diff = max(np.max(np.abs(((nav_gha - sky_gha + 180) % 360 - 180) * np.cos(np.radians(sky_dec)))),
                       np.max(np.abs(nav_dec - sky_dec))) * 60
            print(f"{label:<18} {body:<6} {sky_s:9.3f} {nav_s:8.3f} {sky_s / nav_s:6.1f} {diff:10.6f}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 100_000)
