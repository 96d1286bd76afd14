"""Generate an invented fleet's sight log of about 20,000 sights for the workbook benchmark.

INVENTED DATA, for timing only: fourteen vessels that do not exist, two observers each, 55
days at sea from random places on random courses at 6-15 knots. Each observer-day holds a
morning round of five stars, a noon series of three Sun sights and an evening round of five
stars: three fix groups, so the log has about 4,600 groups. Angles are written as a navigator
writes them ("44 10.1 N", "25 03.1", "1.4 on"), so the reader parses text as it would in a
real log.

The sights are made with navred's own almanac and corrections run backwards (Ho from the
computed altitude at the vessel's true position plus noise, Hs found so that navred's
corrections give that Ho). That is fine for a speed test and is why these data are not used
as a reference in any test.

Run:  python scripts/make_fleet_log.py OUT.csv [SIGHTS]
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from navred.almanac import places  # noqa: E402
from navred.angles import format_angle  # noqa: E402
from navred.corrections import correct_altitudes  # noqa: E402
from navred.stars import star_table  # noqa: E402
from navred.triangle import computed_altitude_azimuth  # noqa: E402
from tests.conftest import rhumb_integrated  # noqa: E402  (the rhumb line sailed outside navred)

START = pd.Timestamp("2026-01-10T00:00:00Z")
VESSELS, OBSERVERS, EYE_HEIGHT_M, INDEX_ERROR_ARCMIN = 14, 2, 6.0, 1.4
LEG_HOURS = 96.0  # each vessel turns back every four days, so that the fleet stays in middle latitudes


def _sailed(lat0, lon0, course, speed, hours):
    """A vessel's position after ``hours``, sailing back and forth on the rhumb line ``course`` (sailed on WGS 84
    outside navred: tests/conftest.py's RK4)."""
    phase = np.mod(hours, 2 * LEG_HOURS)
    run = speed * np.where(phase < LEG_HOURS, phase, 2 * LEG_HOURS - phase)
    return rhumb_integrated(lat0, lon0, course, run, steps=64)  # 64 RK4 steps: metres over 1,440 nm


def _text(values: np.ndarray, kind: str) -> list[str]:
    # navred's navigational form without the degree and minute marks, as a log is typed
    return [v.replace("°", "").replace("′", "") for v in format_angle(values, kind)]


def fleet_log(sights: int = 20_000, seed: int = 2027) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    days = int(np.ceil(sights / (VESSELS * OBSERVERS * 13)))
    stars = star_table()
    bright = np.argsort(stars.magnitude)[:30]  # the thirty brightest stars of the list
    rows = []
    for vessel in range(VESSELS):
        lat0, lon0 = rng.uniform(-35, 35), rng.uniform(-170, 170)
        course, speed = rng.uniform(0, 360), rng.uniform(6, 15)
        name = f"Vessel {vessel + 1:02d} (invented)"
        for day in range(days):
            # local times of the rounds from the longitude of the morning's position (4 minutes a degree)
            hours0 = day * 24.0
            lat_d, lon_d = (float(v) for v in _sailed(lat0, lon0, course, speed, hours0))
            local = -lon_d / 15.0
            for observer in range(OBSERVERS):
                for label, hour, bodies in (("am", 5.8, None), ("noon", 12.0, "Sun"), ("pm", 18.6, None)):
                    base = START + pd.Timedelta(hours=hours0 + hour + local + observer * 0.05)
                    count = 3 if bodies == "Sun" else 5
                    times = base + pd.to_timedelta(np.arange(count) * 150 + rng.integers(0, 40, count), unit="s")
                    elapsed = (times - START).total_seconds().to_numpy() / 3600.0
                    lat, lon = _sailed(lat0, lon0, course, speed, elapsed)
                    utc = times.tz_convert(None).to_numpy().astype("datetime64[ns]")
                    if bodies == "Sun":
                        chosen = np.array(["Sun"] * count, dtype=object)
                    else:
                        candidates = stars.name[bright]
                        p = places(np.repeat(candidates, 1), np.full(len(candidates), utc[0]))
                        hc, zn = computed_altitude_azimuth(lat[0], lon[0], p.gha_deg, p.dec_deg)
                        fit = np.flatnonzero((hc > 15) & (hc < 75))
                        if fit.size < count:
                            continue
                        # spread in azimuth: the candidates sorted by Zn, every k-th one
                        ordered = fit[np.argsort(zn[fit])]
                        chosen = candidates[ordered[np.linspace(0, ordered.size - 1, count).astype(int)]]
                    rows.append(pd.DataFrame({
                        "utc": utc, "body": chosen, "true_lat": lat, "true_lon": lon,
                        "fix_group": f"v{vessel + 1:02d}-o{observer + 1}-d{day + 1:02d}-{label}",
                        "vessel": name, "observer": f"Observer {vessel + 1:02d}{'AB'[observer]} (invented)",
                        "course_deg": round((course + (180.0 if np.mod(elapsed[0], 2 * LEG_HOURS) >= LEG_HOURS
                                                       else 0.0)) % 360.0, 1),
                        "speed_kn": round(speed, 1)}))
    log = pd.concat(rows, ignore_index=True).iloc[:sights]
    utc = log.utc.to_numpy().astype("datetime64[ns]")
    p = places(log.body.to_numpy(dtype=object), utc)
    hc, zn = computed_altitude_azimuth(log.true_lat.to_numpy(), log.true_lon.to_numpy(), p.gha_deg, p.dec_deg)
    ho = hc + rng.normal(0.0, 0.5, len(log)) / 60.0
    limb = np.where(log.body == "Sun", "lower", "")
    hs = ho.copy()
    for _ in range(4):  # navred's corrections backwards: Hs such that the chain gives Ho
        corrected = correct_altitudes(hs, index_error_arcmin=INDEX_ERROR_ARCMIN, eye_height_m=EYE_HEIGHT_M,
                                      limb=np.where(limb == "", "centre", limb), sd_arcmin=p.sd_arcmin,
                                      hp_arcmin=p.hp_arcmin, lat_deg=log.true_lat.to_numpy(), zn_deg=zn)
        hs = hs + (ho - corrected.ho_deg)
    north, east = rng.normal(0, 5, len(log)), rng.normal(0, 5, len(log))
    dr_lat, dr_lon = rhumb_integrated(log.true_lat.to_numpy(), log.true_lon.to_numpy(),
                                      np.degrees(np.arctan2(east, north)), np.hypot(north, east), steps=16)
    return pd.DataFrame({
        "utc": pd.DatetimeIndex(utc).strftime("%Y-%m-%dT%H:%M:%SZ"), "body": log.body, "limb": limb,
        "hs": _text(hs, "signed"), "index_error_arcmin": f"{INDEX_ERROR_ARCMIN} on",
        "eye_height_m": EYE_HEIGHT_M, "dr_lat": _text(dr_lat, "lat"),
        "dr_lon": _text(dr_lon, "lon"), "course_deg": log.course_deg, "speed_kn": log.speed_kn,
        "fix_group": log.fix_group, "vessel": log.vessel, "observer": log.observer})


def main() -> None:
    out = Path(sys.argv[1])
    sights = int(sys.argv[2]) if len(sys.argv) > 2 else 20_000
    log = fleet_log(sights)
    log.to_csv(out, index=False)
    print(f"wrote {len(log):,} invented sights in {log.fix_group.nunique():,} fix groups to {out}")


if __name__ == "__main__":
    main()
