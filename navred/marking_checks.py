"""What an examiner sees beyond the arithmetic: the cadet's plotted fix against the fix from their own
lines, the things that should have been noticed, and what a slip costs in miles.

Core code (numpy). Limits (common practice): an intercept beyond 30 nm, or a fix more than 30 nm
from the DR, should make a navigator question the DR, the assumed position, the time or the body;
a star or a planet is shot between the Sun at −3°, when the first stars show (whatever the horizon),
and −12°, the end of nautical twilight (with the sea horizon), when "the horizon is indistinct" (the US
Naval Observatory's definition of nautical twilight); a body more than 1° below the horizon cannot
have been seen; an ex-meridian is worked no further from meridian passage, in minutes of time, than
the zenith distance in degrees; an amplitude is taken with the body's centre on the horizon.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG, LARGE_INTERCEPT_NM, SUN_BRIGHT_SKY_DEG, SUN_DARK_HORIZON_DEG
from .corrections import horizon_kind
from .marking_judge import LINES, WRONG, Judge, SightsToMark
from .marking_methods import Bearings, Latitudes, Lines, latitude_from_altitude_deg
from .marking_sight import Altitudes, Sky
from .triangle import computed_altitude_azimuth, destination

#: A position line further than this from the DR should have been questioned (nautical miles; the intercept
#: rule of navred.constants, common practice).
LONGEST_INTERCEPT_NM = LARGE_INTERCEPT_NM
#: A fix further than this from the DR should have been questioned (nautical miles; common practice).
FARTHEST_FIX_FROM_DR_NM = 30.0
#: Stars and planets are shot with the Sun between these altitudes (degrees; navred.constants, with the
#: reduction's own twilight check).
STARS_SHOW_SUN_DEG = SUN_BRIGHT_SKY_DEG
HORIZON_FADES_SUN_DEG = SUN_DARK_HORIZON_DEG
#: Below this (degrees, the centre's true altitude) a body cannot have been seen (common practice).
LOWEST_SEEN_DEG = -1.0
#: An amplitude is taken with the centre within these altitudes of the horizon (degrees; common practice).
AMPLITUDE_ALTITUDES_DEG = (-1.5, 2.0)
#: A meridian altitude whose latitude the time from meridian passage moves by more than this (′) should
#: have been worked as an ex-meridian.
MERIDIAN_SLACK_ARCMIN = 0.5
#: A plotted fix is right within this of the fix its lines give (nautical miles; the plotting sheet).
PLOT_TOLERANCE_NM = 1.0
#: Lines crossing at less than this (degrees) give no fix worth plotting.
SHALLOWEST_CUT_DEG = 15.0
#: A compass slip is costed as the distance off the track after this run (nautical miles).
COMPASS_RUN_NM = 100.0


#: A slip that turns a position line is costed over this stretch of the line either side of the DR
#: (nautical miles): where the cadet would cross it with the round's other lines.
PLOTTING_SPAN_NM = 10.0
#: A Zn this far or more from the body's true Zn is a line turned by the slip; less is within what Z taken
#: from the tables at whole degrees of Dec and LHA may give (degrees; common practice).
SMALLEST_TURN_DEG = 2.0
#: The methods whose lines join a round the cadet named, and those that join a round of sights taken close
#: together (a noon latitude or a compass check is worked on its own unless the cadet puts it in a round).
ROUND_METHODS = ("intercept", "meridian", "ex-meridian", "polaris")
TIMED_ROUND_METHODS = ("intercept", "polaris")


@dataclass(frozen=True)
class GroupFix:
    """One round of a cadet's workings: the fix the cadet's own lines give (their own position lines,
    each moved by the run between its DR and the last sight's, crossed on the plotting sheet by least
    squares) and the fix the cadet plotted. A round is what the cadet named as one (a fix group), or sights
    taken close together from which the cadet plotted a fix; only the workings that give a position line
    belong to it."""

    group: str
    rows: tuple[int, ...]  # the sights of the round (indices)
    lines: int  # position lines and latitudes among them
    lat_deg: float  # the fix from the cadet's lines (NaN: none)
    lon_deg: float
    plotted_lat_deg: float  # the fix the cadet plotted (NaN: not given)
    plotted_lon_deg: float
    apart_nm: float  # the plotted fix from the fix of the lines
    from_dr_nm: float  # the fix of the lines from the DR
    note: str  # why there is no fix, if there is none
    named: bool = True  # the cadet named the round (False: sights taken close together, a fix plotted)
    charged: int = -1  # the sight that answers for the round (its plotted fix, else its last line)


def _plane(lat, lon, lat0, lon0):
    """Nautical miles east and north of (lat0, lon0) on the plotting sheet (a Mercator sheet's scale at lat0)."""
    east = wrap_180(np.asarray(lon, dtype=float) - lon0) * ARCMIN_PER_DEG * np.cos(np.radians(lat0))
    north = (np.asarray(lat, dtype=float) - lat0) * ARCMIN_PER_DEG
    return east, north


def _cross(normals: np.ndarray, offsets: np.ndarray):
    """The least-squares crossing (east, north) of lines normal · x = offset, or None when they cut too fine."""
    if len(normals) < 2:
        return None
    angles = np.degrees(np.arctan2(normals[:, 0], normals[:, 1]))
    spread = np.abs(wrap_180(2.0 * (angles[:, None] - angles[None, :])) / 2.0).max()
    if spread < SHALLOWEST_CUT_DEG:
        return None
    solution, *_ = np.linalg.lstsq(normals, offsets, rcond=None)
    return solution


def _offsets(origin, f_lat, f_lon):
    """Each line's offset along its normal on the sheet about the origin, after the run from its DR."""
    lat0, lon0, normals, run_e, run_n = origin
    e, nn = _plane(f_lat, f_lon, lat0, lon0)
    return normals[:, 0] * (e + run_e) + normals[:, 1] * (nn + run_n)


def _position(origin, solution):
    """A point of the sheet (east, north nm) as latitude and longitude."""
    lat0, lon0 = origin[0], origin[1]
    lat = lat0 + solution[1] / ARCMIN_PER_DEG
    return lat, float(wrap_180(lon0 + solution[0] / ARCMIN_PER_DEG / np.cos(np.radians(lat0))))


def fix_lines(j: Judge, sights: SightsToMark, lines: Lines, times_s: np.ndarray, method: np.ndarray) -> list[GroupFix]:
    """Judge the cadet's plotted fix (the fix lines) against the fix of their own lines, round by round (see
    :class:`GroupFix` for what a round is)."""
    n = j.n
    groups = np.full(n, "", dtype=object) if sights.fix_group is None else np.asarray(sights.fix_group, dtype=object)
    named_by_cadet = np.ones(n, dtype=bool) if sights.fix_group_given is None else \
        np.asarray(sights.fix_group_given, dtype=bool)
    body = np.asarray(sights.body, dtype=object)
    lat_dr = np.asarray(sights.dr_lat_deg, dtype=float)
    lon_dr = np.asarray(sights.dr_lon_deg, dtype=float)
    usable = np.isfinite(lines.lat_deg) & np.isfinite(lines.lon_deg) & np.isfinite(lines.zn_deg) & \
        np.isfinite(lines.intercept_nm)
    feet_lat, feet_lon = destination(np.nan_to_num(lines.lat_deg), np.nan_to_num(lines.lon_deg),
                                     np.nan_to_num(lines.zn_deg), np.nan_to_num(lines.intercept_nm))
    plotted_lat = np.asarray(j.given.get("fix_lat_worked", np.full(n, np.nan)), dtype=float) / ARCMIN_PER_DEG
    plotted_lon = np.asarray(j.given.get("fix_lon_worked", np.full(n, np.nan)), dtype=float) / ARCMIN_PER_DEG
    gives_fix = np.isfinite(plotted_lat) | np.isfinite(plotted_lon)
    expected_lat, expected_lon = np.full(n, np.nan), np.full(n, np.nan)
    alternatives: list[tuple[str, np.ndarray, float, float]] = []
    out = []
    for name in dict.fromkeys(groups[groups != ""].tolist()):
        members = groups == name
        named = bool(named_by_cadet[members].any())
        rows = np.flatnonzero(members & np.isin(method, ROUND_METHODS if named else TIMED_ROUND_METHODS))
        # the fix plotted may be written on any working of the round (on its last sight, as the book asks)
        plotted = np.flatnonzero(members & gives_fix)
        plotted = plotted[np.argsort(times_s[plotted], kind="stable")]
        if len(rows) == 0 or not (named or np.isin(plotted, rows).any()):
            continue  # no line, or sights taken together that the cadet did not plot as a fix
        last = rows[np.argmax(times_s[rows])]
        lat0, lon0 = float(lat_dr[last]), float(lon_dr[last])
        used = rows[usable[rows]]
        normals = np.stack([np.sin(np.radians(lines.zn_deg[used])), np.cos(np.radians(lines.zn_deg[used]))], axis=1)
        run_e, run_n = _plane(lat_dr[last], lon_dr[last], lat_dr[used], lon_dr[used])  # the run from each DR

        origin = (lat0, lon0, normals, run_e, run_n)
        solution = _cross(normals, _offsets(origin, feet_lat[used], feet_lon[used]))
        note = ("" if solution is not None else "no position line: no fix" if len(used) == 0
                else "a single line of position: no fix" if len(used) == 1
                else f"the lines cut at under {SHALLOWEST_CUT_DEG:.0f}°: no fix")
        fix_lat, fix_lon = _position(origin, solution) if solution is not None else (np.nan, np.nan)
        p_lat = float(plotted_lat[plotted[-1]]) if len(plotted) else np.nan
        p_lon = float(plotted_lon[plotted[-1]]) if len(plotted) else np.nan
        apart = float(np.hypot(*_plane(p_lat, p_lon, fix_lat, fix_lon))) if solution is not None else np.nan
        from_dr = float(np.hypot(*_plane(fix_lat, fix_lon, lat0, lon0))) if solution is not None else np.nan
        if solution is not None:
            expected_lat[plotted], expected_lon[plotted] = fix_lat, fix_lon
            # what the classic slips of the plot would have given: one intercept laid off the wrong way, or
            # one line laid off from the DR instead of its assumed position
            for k, i in enumerate(used.tolist()):
                slips = []
                if abs(lines.intercept_nm[i]) >= 0.5:
                    slips.append(("plotted away", *destination(lines.lat_deg[i], lines.lon_deg[i], lines.zn_deg[i],
                                                               -lines.intercept_nm[i])))
                if not lines.from_dr[i]:
                    slips.append(("plotted from dr", *destination(lat_dr[i], lon_dr[i], lines.zn_deg[i],
                                                                  lines.intercept_nm[i])))
                for key, f_lat, f_lon in slips:
                    moved_lat, moved_lon = feet_lat[used].copy(), feet_lon[used].copy()
                    moved_lat[k], moved_lon[k] = f_lat, f_lon
                    other = _cross(normals, _offsets(origin, moved_lat, moved_lon))
                    if other is not None:
                        alternatives.append((key, plotted, *_position(origin, other), f"your {body[i]} line"))
        charged = int(plotted[-1]) if len(plotted) else int(last)
        out.append(GroupFix(str(name), tuple(rows.tolist()), int(len(used)), fix_lat, fix_lon, p_lat, p_lon, apart,
                            from_dr, note, named, charged))
    cos_lat = np.cos(np.radians(np.where(np.isfinite(expected_lat), expected_lat, 0.0)))
    j.judge("fix_lat_worked", expected_lat * ARCMIN_PER_DEG)
    j.judge("fix_lon_worked", expected_lon * ARCMIN_PER_DEG, tolerance=PLOT_TOLERANCE_NM / cos_lat, angle=True)
    for key, rows_, alt_lat, alt_lon, which in alternatives:
        mask = np.zeros(n, dtype=bool)
        mask[rows_] = True
        fits = mask & (np.hypot(*_plane(plotted_lat, plotted_lon, alt_lat, alt_lon)) <= PLOT_TOLERANCE_NM)
        j.name_cause("fix_lat_worked", fits, key, which)
        j.name_cause("fix_lon_worked", fits, key, which)
    return out


def _named(body: str) -> str:
    """A body as a sentence names it: "the Sun", "the Moon", "Spica"."""
    return f"the {body}" if body in ("Sun", "Moon") else body


def _sun_at(altitude_deg: float) -> str:
    """Where the Sun stood, in words: "the Sun 70° above the horizon", "the Sun 2° below the horizon"."""
    whole = int(round(altitude_deg))
    if whole == 0:
        return "the Sun on the horizon"
    return f"the Sun {abs(whole)}° {'above' if whole > 0 else 'below'} the horizon"


def _joined(notes: np.ndarray, mask: np.ndarray, texts) -> None:
    texts = np.broadcast_to(np.asarray(texts, dtype=object), notes.shape)
    for i in np.flatnonzero(mask).tolist():
        notes[i] = texts[i] if not notes[i] else f"{notes[i]}; {texts[i]}"


def sense_checks(sights: SightsToMark, kind: np.ndarray, method: np.ndarray, sky: Sky, lines: Lines,
                 latitudes: Latitudes, fixes: list[GroupFix]) -> np.ndarray:
    """What an examiner would have wanted noticed in each working although its arithmetic follows: one text
    per sight ("" when nothing), the reasons joined by "; " (limits in the module's notes)."""
    n = len(kind)
    notes = np.full(n, "", dtype=object)
    lat_dr = np.asarray(sights.dr_lat_deg, dtype=float)
    lon_dr = np.asarray(sights.dr_lon_deg, dtype=float)
    body = np.asarray(sights.body, dtype=object)
    h_body, _ = computed_altitude_azimuth(lat_dr, lon_dr, sky.true_gha, sky.true_dec)
    # the Moon's parallax lowers it by up to a degree as seen from the surface
    h_body = h_body - np.where(kind == "moon", np.nan_to_num(sky.hp_arcmin) * np.cos(np.radians(h_body)), 0.0) \
        / ARCMIN_PER_DEG
    h_sun, _ = computed_altitude_azimuth(lat_dr, lon_dr, sky.sun_gha, sky.sun_dec)
    below = h_body < LOWEST_SEEN_DEG
    _joined(notes, below, [f"{_named(b)} stood {abs(h):.1f}° below the horizon at that time and DR: it cannot have been "
                           "seen; the time, the DR or the body should have been questioned"
                           for b, h in zip(body.tolist(), h_body.tolist())])
    sea = np.isin(horizon_kind(np.where(np.asarray(sights.horizon, dtype=object) == "", "sea", sights.horizon)),
                  ["sea", "back"])
    starlike = ((kind == "star") | (kind == "planet")) & ~below
    what = np.where(kind == "star", "a star", "a planet")
    daylight = starlike & (h_sun > STARS_SHOW_SUN_DEG)
    twilight = (f"stars and planets are shot in twilight, with the Sun between {abs(STARS_SHOW_SUN_DEG):.0f}° and "
                f"{abs(HORIZON_FADES_SUN_DEG):.0f}° below the horizon")
    _joined(notes, daylight, [f"{w} with {_sun_at(s)}: {twilight}; the time or the body should have been questioned"
                              for w, s in zip(what.tolist(), h_sun.tolist())])
    dark = ((kind == "star") | (kind == "planet")) & ~below & sea & (h_sun < HORIZON_FADES_SUN_DEG)
    _joined(notes, dark, [f"{w} with {_sun_at(s)}, after nautical twilight: the sea horizon cannot be seen then; "
                          "the time or the body should have been questioned"
                          for w, s in zip(what.tolist(), h_sun.tolist())])
    # how far each position line (or latitude) lies from the DR: an intercept from an assumed position
    # stands off the DR by the AP's offset as well, so the line itself is measured
    usable = np.isfinite(lines.intercept_nm) & np.isfinite(lines.zn_deg) & np.isfinite(lines.lat_deg)
    foot_lat, foot_lon = destination(np.nan_to_num(lines.lat_deg), np.nan_to_num(lines.lon_deg),
                                     np.nan_to_num(lines.zn_deg), np.nan_to_num(lines.intercept_nm))
    east, north = _plane(foot_lat, foot_lon, lat_dr, lon_dr)
    off_dr = np.where(usable, east * np.sin(np.radians(np.nan_to_num(lines.zn_deg))) +
                      north * np.cos(np.radians(np.nan_to_num(lines.zn_deg))), 0.0)
    far = usable & (np.abs(off_dr) > LONGEST_INTERCEPT_NM)
    latitude = np.isfinite(latitudes.lat_deg)
    _joined(notes, far & ~latitude, [
        f"your position line lies {abs(d):,.1f} nm from the DR (intercept {abs(x):,.1f} nm): beyond "
        f"{LONGEST_INTERCEPT_NM:.0f} nm the DR, the assumed position, the time or the body should have been "
        "questioned" for d, x in zip(off_dr.tolist(), np.nan_to_num(lines.intercept_nm).tolist())])
    _joined(notes, far & latitude, [
        f"your latitude lies {abs(d):,.1f} nm from the DR's: beyond {LONGEST_INTERCEPT_NM:.0f} nm the DR, the time "
        "or the body should have been questioned" for d in off_dr.tolist()])
    t, zenith = latitudes.t_minutes, latitudes.zenith_deg
    too_far = (method == "ex-meridian") & (np.nan_to_num(t) > zenith)
    _joined(notes, too_far, [f"taken {m:.0f} min from meridian passage, more minutes than the zenith distance "
                             f"({z:.0f}°) allows: too far for an ex-meridian; work it by the intercept method"
                             for m, z in zip(np.nan_to_num(t).tolist(), zenith.tolist())])
    slack = latitudes.a_arcsec * np.nan_to_num(t) ** 2 / 60.0
    off_meridian = (method == "meridian") & (np.nan_to_num(slack) > MERIDIAN_SLACK_ARCMIN)
    _joined(notes, off_meridian, [f"taken {m:.0f} min from meridian passage: the meridian altitude method puts the "
                                  f"latitude {s:.1f}′ out; work it as an ex-meridian"
                                  for m, s in zip(np.nan_to_num(t).tolist(), np.nan_to_num(slack).tolist())])
    high = (method == "amplitude") & ~below & ((h_body < AMPLITUDE_ALTITUDES_DEG[0]) |
                                               (h_body > AMPLITUDE_ALTITUDES_DEG[1]))
    _joined(notes, high, [f"{_named(b)} stood {h:.1f}° high: an amplitude is taken with the body's centre on the horizon; "
                          "work it by azimuth" for b, h in zip(body.tolist(), h_body.tolist())])
    for fix in fixes:
        if fix.from_dr_nm == fix.from_dr_nm and fix.from_dr_nm > FARTHEST_FIX_FROM_DR_NM:
            charged = np.zeros(n, dtype=bool)
            charged[fix.charged if fix.charged >= 0 else fix.rows[-1]] = True
            _joined(notes, charged, f"the lines of this round cross {fix.from_dr_nm:,.0f} nm from the DR: a fix so "
                                    f"far from the DR should have been questioned")
    return notes


def slip_costs(sights: SightsToMark, method: np.ndarray, sky: Sky, altitudes: Altitudes, lines: Lines,
               latitudes: Latitudes, bearings: Bearings, wrong: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """What each wrong working's slip does to what the cadet would plot or steer: (nautical miles, degrees).

    The intercept method: the cadet's position line (from their position, Zn and intercept) against
    navred's (exact Ho and Hc at the DR and the log's UTC), on the plotting sheet about the DR: the
    farthest the cadet's line stands from the right one over :data:`PLOTTING_SPAN_NM` either side of the
    right line's point nearest the DR (+ toward the body), and the angle it is turned by (degrees: the cadet's
    Zn against the body's true Zn from the cadet's own position; NaN under :data:`SMALLEST_TURN_DEG`). A
    latitude: the cadet's against the latitude where navred's exact circle of position crosses the DR's
    meridian. A compass check: how far off a course steered by the cadet's compass error or deviation is
    (the larger slip of the two, degrees), and the miles it puts the ship off her track in a run of
    :data:`COMPASS_RUN_NM`. NaN where all is right."""
    n = len(method)
    lat_dr = np.asarray(sights.dr_lat_deg, dtype=float)
    lon_dr = np.asarray(sights.dr_lon_deg, dtype=float)
    cost_nm, cost_deg = np.full(n, np.nan), np.full(n, np.nan)
    hc_right, zn_right = computed_altitude_azimuth(lat_dr, lon_dr, sky.true_gha, sky.true_dec)
    intercept = (method == "intercept") & wrong & np.isfinite(lines.intercept_nm) & np.isfinite(lines.zn_deg)
    if intercept.any():
        right_lat, right_lon = destination(lat_dr, lon_dr, zn_right, (altitudes.ho_exact_deg - hc_right) *
                                           ARCMIN_PER_DEG)
        cadet_lat, cadet_lon = destination(np.nan_to_num(lines.lat_deg), np.nan_to_num(lines.lon_deg),
                                           np.nan_to_num(lines.zn_deg), np.nan_to_num(lines.intercept_nm))
        right_e, right_n = _plane(right_lat, right_lon, lat_dr, lon_dr)
        cadet_e, cadet_n = _plane(cadet_lat, cadet_lon, lat_dr, lon_dr)
        zr, zc = np.radians(zn_right), np.radians(np.nan_to_num(lines.zn_deg))
        facing = np.where(np.cos(zc - zr) < 0.0, -1.0, 1.0)  # the cadet's normal turned more than 90°
        farthest = np.zeros(n)
        for along in (-PLOTTING_SPAN_NM, 0.0, PLOTTING_SPAN_NM):  # the distance is linear along the line
            e = right_e + along * np.cos(zr)
            nn = right_n - along * np.sin(zr)
            off = ((cadet_e - e) * np.sin(zc) + (cadet_n - nn) * np.cos(zc)) * facing
            farthest = np.where(np.abs(off) > np.abs(farthest), off, farthest)
        cost_nm = np.where(intercept, farthest, cost_nm)
        # the turn the slip gave the line: the cadet's Zn against the body's true Zn from their own position
        # (an AP's Zn differs from the DR's by right)
        _, zn_theirs = computed_altitude_azimuth(np.where(intercept, lines.lat_deg, 0.0),
                                                 np.where(intercept, lines.lon_deg, 0.0), sky.true_gha, sky.true_dec)
        turn = wrap_180(np.nan_to_num(lines.zn_deg) - zn_theirs)
        cost_deg = np.where(intercept & (np.abs(turn) >= SMALLEST_TURN_DEG), turn, cost_deg)
    latitude = np.isin(method, ["meridian", "ex-meridian", "polaris"]) & wrong & np.isfinite(latitudes.lat_deg)
    if latitude.any():
        right = latitude_from_altitude_deg(altitudes.ho_exact_deg, sky.true_gha + lon_dr, sky.true_dec, lat_dr)
        cost_nm = np.where(latitude, (latitudes.lat_deg - right) * ARCMIN_PER_DEG, cost_nm)
    compass = np.isin(method, ["amplitude", "azimuth"]) & wrong & np.isfinite(bearings.error_deg)
    if compass.any():
        bearing = np.asarray(sights.compass_bearing_deg, dtype=float)
        variation = np.full(n, np.nan) if sights.variation_deg is None else np.asarray(sights.variation_deg,
                                                                                         dtype=float)
        with np.errstate(invalid="ignore"):
            amplitude = np.degrees(np.arcsin(np.sin(np.radians(sky.true_dec)) / np.cos(np.radians(lat_dr))))
        rising = wrap_360(sky.true_gha + lon_dr) > 180.0
        zn = np.where(method == "amplitude", np.where(rising, 90.0 - amplitude, 270.0 + amplitude), zn_right)
        right_error = wrap_180(zn - bearing)
        error_slip = wrap_180(bearings.error_deg - right_error)
        deviation_slip = wrap_180(bearings.deviation_deg - (right_error - variation))
        # a course is steered by the compass error, or by the deviation the cadet would enter on the card
        slip = np.where(np.isfinite(deviation_slip) & (np.abs(np.nan_to_num(deviation_slip)) > np.abs(error_slip)),
                        deviation_slip, error_slip)
        cost_deg = np.where(compass, slip, cost_deg)
        cost_nm = np.where(compass, COMPASS_RUN_NM * np.sin(np.radians(np.minimum(np.abs(slip), 90.0))), cost_nm)
    return cost_nm, cost_deg


def any_wrong(verdict: np.ndarray) -> np.ndarray:
    """Sights with a wrong line."""
    return (verdict == WRONG).any(axis=1) if verdict.size else np.zeros(len(verdict), dtype=bool)


__all__ = ["GroupFix", "fix_lines", "sense_checks", "slip_costs", "any_wrong", "LONGEST_INTERCEPT_NM",
           "FARTHEST_FIX_FROM_DR_NM", "STARS_SHOW_SUN_DEG", "HORIZON_FADES_SUN_DEG", "LOWEST_SEEN_DEG",
           "AMPLITUDE_ALTITUDES_DEG", "MERIDIAN_SLACK_ARCMIN", "PLOT_TOLERANCE_NM", "SHALLOWEST_CUT_DEG",
           "COMPASS_RUN_NM", "PLOTTING_SPAN_NM", "SMALLEST_TURN_DEG", "ROUND_METHODS", "TIMED_ROUND_METHODS", "LINES"]
