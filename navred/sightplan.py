"""The sight plan: which bodies to shoot at each twilight from the DR (the set with the least position
dilution of precision, the brightest among near-equal sets), the Sun with a daylight body by day, and the
windows of a daytime fix over the coming days. Vectorised over instants and bodies."""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .almanac import places, separation_deg
from .angles import wrap_180
from .constants import (
    MINUTES_PER_DAY,
    NS_PER_MINUTE,
)
from .errors import NavredError
from .magnitudes import DAYLIGHT_MAGNITUDE, magnitudes
from .plan import check_position, local_midnight, track_events, voyage_events, zone_midnight
from .reckoning import DRTrack, steady_track
from .stars import SOLAR_SYSTEM, known_bodies
from .triangle import computed_altitude_azimuth

#: Two lines of position crossing at less than this make a weak fix (common practice).
DAY_CROSSING_DEG = 30.0


def position_dop(zn_deg: ArrayLike) -> np.ndarray:
    """Position dilution of precision of sets of sights from their azimuths, shape (..., k) -> (...).

    Each sight's line: [cos Zn, sin Zn, 1], the third unknown a common altitude error (the
    observer's personal error and any refraction anomaly), so that bodies spread round the
    whole horizon score best (common practice). DOP = √(trace of the position part of
    (HᵀH)⁻¹); infinite for a set that cannot be solved.
    """
    z = np.radians(np.asarray(zn_deg, dtype=float))
    h = np.stack([np.cos(z), np.sin(z), np.ones_like(z)], axis=-1)
    normal = np.einsum("...ki,...kj->...ij", h, h)
    det = np.linalg.det(normal)
    ok = det > 1e-9
    inverse = np.linalg.inv(np.where(ok[..., None, None], normal, np.eye(3)))
    dop = np.sqrt(np.maximum(inverse[..., 0, 0] + inverse[..., 1, 1], 0.0))
    return np.where(ok, dop, np.inf)


def best_set(zn_deg: ArrayLike, magnitude: ArrayLike, count: int, valid: ArrayLike | None = None, tolerance: float = 0.05) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Indices of the recommended set of ``count`` bodies, its DOP and the least DOP found.

    Every set of ``count`` among the candidates is scored by :func:`position_dop`; of the sets
    within ``tolerance`` (5 %) of the least DOP the brightest (least summed magnitude) is
    chosen. ``zn_deg``, ``magnitude``, ``valid`` have shape (plans, candidates); the search is
    vectorised over plans.
    """
    zn = np.atleast_2d(np.asarray(zn_deg, dtype=float))
    mag = np.atleast_2d(np.asarray(magnitude, dtype=float))
    valid = np.ones_like(zn, dtype=bool) if valid is None else np.atleast_2d(valid)
    m = zn.shape[1]
    if m < count:
        raise NavredError(f"{m} candidate bodies: a set of {count} needs at least {count}")
    combos = np.array(list(itertools.combinations(range(m), count)), dtype=int)
    dop = position_dop(zn[:, combos])  # (plans, combos)
    usable = valid[:, combos].all(axis=-1)
    dop = np.where(usable, dop, np.inf)
    least = dop.min(axis=1)
    near = dop <= least[:, None] * (1.0 + tolerance)
    brightness = np.where(near, mag[:, combos].sum(axis=-1), np.inf)
    score = np.where(near, brightness + dop * 1e-6, np.inf)
    choice = np.argmin(score, axis=1)
    plans = np.arange(zn.shape[0])
    return combos[choice], dop[plans, choice], least


@dataclass
class SightPlan:
    """The bodies to shoot at one instant from the DR, and the recommended set."""

    utc: np.datetime64
    lat_deg: float
    lon_deg: float
    body: np.ndarray
    hc_deg: np.ndarray
    zn_deg: np.ndarray
    magnitude: np.ndarray
    moon_separation_deg: np.ndarray
    recommended: np.ndarray  # bool per candidate
    dop: float
    explanation: str


def sight_plans(utc64: object, lat_deg: ArrayLike, lon_deg: ArrayLike, *, min_alt_deg: float = 15.0, max_alt_deg: float = 70.0,
                count: int = 3, moon_clear_deg: float = 15.0, max_candidates: int | None = None) -> list[SightPlan]:
    """A sight plan at each instant (vectorised over instants and bodies).

    Candidates: every navigational star, planet and the Moon with Hc within the limits;
    bodies within ``moon_clear_deg`` of the Moon are left out of the recommended set (its
    glare spoils the horizon and the star). The ``max_candidates`` brightest candidates
    (default 18 for sets of 3 or 4, 15 for sets of 5: 816, 3,060 and 3,003 sets) are
    searched exhaustively for the set of ``count`` (3, 4 or 5) with the least position DOP,
    preferring the brightest among near-equal sets (see :func:`best_set`).
    """
    if count not in (3, 4, 5):
        raise NavredError(f"a recommended set has 3, 4 or 5 bodies, not {count}")
    if max_candidates is None:
        max_candidates = 15 if count == 5 else 18
    if not 0.0 <= min_alt_deg < max_alt_deg <= 90.0:
        raise NavredError(f"altitude limits {min_alt_deg}-{max_alt_deg}° must satisfy 0 ≤ min < max ≤ 90")
    when = np.atleast_1d(np.asarray(utc64, dtype="datetime64[ns]"))
    lat = np.broadcast_to(np.asarray(lat_deg, dtype=float), when.shape)
    lon = np.broadcast_to(np.asarray(lon_deg, dtype=float), when.shape)
    sky = _sky(when, lat, lon)
    names, hc, zn, mag = sky["names"], sky["hc"], sky["zn"], sky["mag"]
    # by day (the Sun's centre above the horizon) no star is shown: only the Sun, the Moon and the
    # planets bright enough to find in daylight with a preset sextant
    day = hc[:, sky["sun"]] > 0.0
    daylight = np.isin(names, ["Sun", "Moon"]) | ((mag <= DAYLIGHT_MAGNITUDE) & np.isin(names, list(SOLAR_SYSTEM.values())))
    shown = np.where(day[:, None], daylight, names[None, :] != "Sun")
    in_limits = (hc >= min_alt_deg) & (hc <= max_alt_deg) & shown
    moon_up = hc[:, [sky["moon"]]] > -1.0
    clear = (sky["moon_sep"] >= moon_clear_deg) | ~moon_up
    clear[:, sky["moon"]] = True
    clear &= ~day[:, None]  # the twilight set is chosen at twilight; by day the pair is chosen below
    # candidate slots: the brightest bodies within the limits and clear of the Moon
    order = np.argsort(np.where(in_limits & clear, mag, np.inf), axis=1, kind="stable")[:, :max_candidates]
    slots_valid = np.take_along_axis(in_limits & clear, order, axis=1)
    if slots_valid.sum(axis=1).max() >= count:
        chosen, dop, least = best_set(np.take_along_axis(zn, order, axis=1),
                                      np.take_along_axis(mag, order, axis=1), count, slots_valid)
    else:
        chosen = dop = least = None
    partner, crossing = day_pairs(hc, zn, in_limits & day[:, None], names)
    limits = f"between {min_alt_deg:g}° and {max_alt_deg:g}°"
    plans = []
    for k in range(when.size):
        visible = np.flatnonzero(in_limits[k])
        if day[k]:
            recommended = np.isin(visible, [sky["sun"], partner[k]]) if partner[k] >= 0 else \
                np.zeros(visible.size, dtype=bool)
            explanation, set_dop = _day_explanation(names, partner[k], crossing[k], limits), float("inf")
        elif chosen is not None and np.isfinite(dop[k]):
            picked = order[k, chosen[k]]
            recommended = np.isin(visible, picked)
            explanation = (f"{', '.join(names[picked])}: position dilution of precision {dop[k]:.2f}; "
                           f"every set of {count} of the {int(slots_valid[k].sum())} brightest bodies {limits}"
                           f"{f' and at least {moon_clear_deg:g}° from the Moon' if moon_up[k, 0] else ''} was "
                           f"scored; the least DOP was {least[k]:.2f} and among sets within 5 % of it the "
                           "brightest was taken (DOP counts a common altitude error, so bodies spread round "
                           "the horizon win)")
            set_dop = float(dop[k])
        else:
            recommended = np.zeros(visible.size, dtype=bool)
            explanation = f"fewer than {count} bodies {limits} clear of the Moon: no set recommended"
            set_dop = float(dop[k]) if chosen is not None else float("inf")
        plans.append(SightPlan(when[k], float(lat[k]), float(lon[k]), names[visible], hc[k, visible],
                               zn[k, visible], mag[k, visible], sky["moon_sep"][k, visible], recommended, set_dop,
                               explanation))
    return plans


def _sky(when: np.ndarray, lat: np.ndarray, lon: np.ndarray) -> dict:
    """Every body of the catalogue at each instant from its DR: (plans, bodies) arrays of Hc, Zn, magnitude and
    distance from the Moon, with the bodies' names and the columns of the Sun and the Moon."""
    names = np.array(known_bodies(), dtype=object)
    n_plans, n_bodies = when.size, names.size
    grid_names = np.broadcast_to(names[None, :], (n_plans, n_bodies))
    grid_when = np.broadcast_to(when[:, None], (n_plans, n_bodies))
    p = places(grid_names.ravel(), grid_when.ravel())
    hc, zn = computed_altitude_azimuth(np.repeat(lat, n_bodies), np.repeat(lon, n_bodies), p.gha_deg, p.dec_deg)
    dec, ra = p.dec_deg.reshape(n_plans, n_bodies), p.ra_hours.reshape(n_plans, n_bodies)
    moon = int(np.flatnonzero(names == "Moon")[0])
    moon_sep = separation_deg(dec, ra, dec[:, [moon]], ra[:, [moon]])
    moon_sep[:, moon] = 0.0
    return {"names": names, "hc": hc.reshape(n_plans, n_bodies), "zn": zn.reshape(n_plans, n_bodies),
            "mag": magnitudes(grid_names.ravel(), grid_when.ravel()).reshape(n_plans, n_bodies),
            "moon_sep": moon_sep, "sun": int(np.flatnonzero(names == "Sun")[0]), "moon": moon}


def _day_explanation(names: np.ndarray, partner: int, crossing: float, limits: str) -> str:
    """Why a plan by day recommends the Sun and one body, or the Sun alone."""
    if partner >= 0:
        return (f"by day: the Sun and {names[partner]}, whose lines cross at {crossing:.0f}° (the best crossing of "
                f"the Sun with the Moon or a planet bright enough to see in daylight, magnitude "
                f"{DAYLIGHT_MAGNITUDE:g} or brighter); no star is shown while the Sun is up")
    return (f"by day, and no body stands with the Sun {limits} with their lines crossing at {DAY_CROSSING_DEG:g}° or "
            "more: a Sun line alone (see the daytime fix windows); no star is shown while the Sun is up")


def day_pairs(hc_deg: np.ndarray, zn_deg: np.ndarray, valid: np.ndarray, names: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """For each plan (row), the body that crosses the Sun's line best, and the crossing angle (degrees).

    The crossing angle of two lines of position is the difference of their azimuths folded into
    0-90°; a pair is useful from :data:`DAY_CROSSING_DEG` (common practice: below 30° the fix is
    weak). Returns the column of the partner (−1 for none) and the angle.
    """
    sun = int(np.flatnonzero(names == "Sun")[0])
    difference = np.abs(wrap_180(zn_deg - zn_deg[:, [sun]]))
    crossing = np.minimum(difference, 180.0 - difference)
    ok = valid & valid[:, [sun]] & (names[None, :] != "Sun") & (crossing >= DAY_CROSSING_DEG)
    score = np.where(ok, crossing, -1.0)
    best = np.argmax(score, axis=1)
    found = score[np.arange(score.shape[0]), best] >= 0
    return np.where(found, best, -1), np.where(found, crossing[np.arange(score.shape[0]), best], np.nan)


@dataclass
class DayWindow:
    """A stretch of daylight when the Sun and one other body give a fix."""

    body: str
    start: np.datetime64
    end: np.datetime64
    best: np.datetime64
    crossing_deg: float  # at the best time
    sun_hc_deg: float
    body_hc_deg: float


def daytime_fix_windows(first_date: object, days: int, lat_deg: float, lon_deg: float, *, course_deg: float = 0.0,
                        speed_kn: float = 0.0, min_alt_deg: float = 15.0, max_alt_deg: float = 70.0,
                        min_crossing_deg: float | None = None, step_minutes: float = 10.0,
                        zone_h: float | None = None) -> list[DayWindow]:
    """When, over the coming days, the Sun and the Moon, Venus or a bright planet make a daytime fix.

    Along the DR track (at (``lat_deg``, ``lon_deg``) at 00:00 zone time of ``first_date``, the zone ``zone_h``
    given or the longitude's: :func:`navred.plan.zone_midnight`), every ``step_minutes`` from 00:00 local mean
    time on ``first_date``: the Sun
    and the body both between the altitude limits and their lines crossing at
    ``min_crossing_deg`` (default :data:`DAY_CROSSING_DEG`) or more. Jupiter and Mars count only
    when at magnitude :data:`DAYLIGHT_MAGNITUDE` or brighter. Vectorised over the time grid.
    """
    limit = DAY_CROSSING_DEG if min_crossing_deg is None else min_crossing_deg
    check_position(lat_deg, lon_deg)
    start = local_midnight(first_date, lon_deg)
    step = np.timedelta64(int(step_minutes * NS_PER_MINUTE), "ns")
    grid = start + np.arange(int(days * MINUTES_PER_DAY / step_minutes) + 1) * step
    track = steady_track(lat_deg, lon_deg, zone_midnight(first_date, lon_deg, zone_h), course_deg, speed_kn)
    lat, lon = track.position(grid)
    bodies = ["Moon", "Venus", "Jupiter", "Mars"]
    names = np.array(["Sun"] + bodies, dtype=object)
    grid_names = np.broadcast_to(names[None, :], (grid.size, names.size))
    grid_when = np.broadcast_to(grid[:, None], grid_names.shape)
    p = places(grid_names.ravel(), grid_when.ravel())
    hc, zn = computed_altitude_azimuth(np.repeat(lat, names.size), np.repeat(lon, names.size), p.gha_deg, p.dec_deg)
    hc, zn = hc.reshape(grid_names.shape), zn.reshape(grid_names.shape)
    mag = magnitudes(grid_names.ravel(), grid_when.ravel()).reshape(grid_names.shape)
    bright = np.isin(names, ["Sun", "Moon", "Venus"])[None, :] | (mag <= DAYLIGHT_MAGNITUDE)
    up = (hc >= min_alt_deg) & (hc <= max_alt_deg) & bright
    difference = np.abs(wrap_180(zn - zn[:, [0]]))
    crossing = np.minimum(difference, 180.0 - difference)
    good = up & up[:, [0]] & (crossing >= limit)
    windows = []
    for column, body in enumerate(bodies, start=1):
        mask = good[:, column].astype(int)
        edges = np.diff(np.concatenate([[0], mask, [0]]))
        for first, after in zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)):
            part = slice(first, after)
            best = first + int(np.argmax(crossing[part, column]))
            windows.append(DayWindow(body, grid[first], grid[after - 1], grid[best], float(crossing[best, column]),
                                     float(hc[best, 0]), float(hc[best, column])))
    return sorted(windows, key=lambda w: w.start)


def twilight_plans(first_date: object, days: int, lat_deg: float, lon_deg: float, *, course_deg: float = 0.0,
                   speed_kn: float = 0.0, eye_height_m: float = 0.0, zone_h: float | None = None,
                   **plan_options) -> tuple[dict, list[SightPlan]]:
    """Twilight times and a sight plan for every morning and evening of a passage on one course and speed.

    Star sights are planned midway between civil and nautical twilight, when stars and
    horizon are both in view (common practice). Returns the events (see
    :func:`voyage_events`) and the plans, morning then evening for each day, skipping
    twilights that do not happen. The ship is at (``lat_deg``, ``lon_deg``) at 00:00 zone time of the first
    date (the zone ``zone_h`` given, else the longitude's: :func:`navred.plan.zone_midnight`).
    """
    events = voyage_events(first_date, days, lat_deg, lon_deg, eye_height_m=eye_height_m,
                           course_deg=course_deg, speed_kn=speed_kn, zone_h=zone_h)
    return events, plans_at_twilights(events, **plan_options)


def track_twilight_plans(track: DRTrack, start: object, days: int, *, eye_height_m: float = 0.0,
                         **plan_options) -> tuple[dict, list[SightPlan]]:
    """:func:`twilight_plans` along any DR track (a route's legs, a log's day's work), the days searched from
    ``start``, 00:00 local mean time of the first date (see :func:`navred.plan.track_events`)."""
    events = track_events(track, start, days, eye_height_m=eye_height_m)
    return events, plans_at_twilights(events, **plan_options)


def plans_at_twilights(events: dict, **plan_options) -> list[SightPlan]:
    """A sight plan midway between civil and nautical twilight of every morning and evening of the events, from
    the DR then; twilights that do not happen are skipped."""
    times = []
    for dawn, dusk in ((events["nautical_dawn"], events["civil_dawn"]), (events["civil_dusk"], events["nautical_dusk"])):
        ok = ~np.isnat(dawn) & ~np.isnat(dusk)
        middle = np.where(ok, dawn + (dusk - dawn) // 2, np.datetime64("NaT"))
        times.append(middle)
    when = np.stack(times, axis=1).ravel()
    when = when[~np.isnat(when)]
    if when.size == 0:
        return []
    lat, lon = events["track"].position(when)
    return sight_plans(when, lat, lon, **plan_options)
