"""One solve of every group of a batch of sights: the groups laid out padded side by side (with groups of as many
sights: each is worked on arrays of the shape it has alone, and gets its result to the bit), each group's run
between its sights, the DR at its fix time, each judged a fix, a fix with its motion or a line, solved
(:mod:`navred.fixkinds`), its lines of position for the plotting sheet, and the sense checks."""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from .angles import format_angle, wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG, NS_PER_HOUR
from .fixkinds import WEAK_CROSSING_DEG, solve_fix_part, solve_line_part
from .fixresult import LINE_ONLY_DEG, PARALLEL_LINES, FixResult, run_words
from .fixstats import azimuth_spread_many
from .latitudes import latitude_from_noon_curve
from .leastsquares import CONVERGED_NM, at_sights, run_to_fix_nm, sight_track_ns
from .reckoning import DRTrack, velocity_kn
from .sailings import rhumb_inverse
from .sensechecks import UNKNOWN_DR_AGE_H, sense_checks
from .status import FixKind, RunFrom
from .triangle import computed_altitude_azimuth, destination, distance_bearing

#: A running fix whose track would come this close to a pole (degrees) is refused: a rhumb line is not
#: defined through the pole (courses there are steered on a grid).
POLAR_RUN_LIMIT_DEG = 0.1


@dataclass(frozen=True)
class SightRows:
    """The sights of a batch of fixes, one element per input row, read once."""

    gha: np.ndarray
    dec: np.ndarray
    ho: np.ndarray
    utc: np.ndarray  # datetime64[ns]
    dr_lat: np.ndarray
    dr_lon: np.ndarray
    course: np.ndarray  # NaN: not given
    speed: np.ndarray
    set_deg: np.ndarray  # the current in force after each sight (0 drift: none)
    drift_kn: np.ndarray
    dr_age_h: np.ndarray  # the age of each sight's DR (NaN: not known)
    names: np.ndarray
    solve_motion: bool
    dr_error_kn: float
    dr_error_fraction: float
    #: each sight's weight, (A_PRIORI_SIGMA_ARCMIN / its own σ)² (1: a sight as good as any)
    weight: np.ndarray | None = None
    #: each line's own stated σ (nautical miles) where it has one: a bearing or range of a charted object
    #: (:mod:`navred.landmarks`); NaN for a sight, whose σ the fix estimates (None: every row a sight)
    line_sigma: np.ndarray | None = None


def subset_groups(group: np.ndarray, chosen: list[int], n_groups: int) -> np.ndarray:
    """Group numbers for a batch of only the ``chosen`` groups (renumbered 0, 1, ...; others −1)."""
    renumber = np.full(n_groups, -1, dtype=np.intp)
    renumber[chosen] = np.arange(len(chosen))
    return np.where(group >= 0, renumber[np.maximum(group, 0)], -1)


#: the most cells of the sights × sights matrices one solve of groups of a size holds (about 32 MB a matrix)
BATCH_MATRIX_CELLS = 4_000_000


def fix_batch(sights: SightRows, group: np.ndarray, n_groups: int, ok: np.ndarray, left_out: np.ndarray,
              fix_time_given: np.ndarray) -> tuple[list[FixResult | None], list[str]]:
    """One solve of every group (no check fixes): the sights ``ok`` are shown, those not ``left_out`` used."""
    results: list[FixResult | None] = [None] * n_groups
    problems = [""] * n_groups
    if n_groups == 0:
        return results, problems
    weighted = ok & ~left_out
    sizes = np.bincount(group[group >= 0], minlength=n_groups)
    count_used = np.bincount(group[weighted & (group >= 0)], minlength=n_groups)
    for g in np.flatnonzero(count_used < 2):
        problems[g] = (f"a fix needs two or more reduced sights; {int(count_used[g])} of {int(sizes[g])} "
                       "are usable")
    work = np.flatnonzero(count_used >= 2)
    if work.size == 0:
        return results, problems
    # the groups are solved side by side only with groups of as many sights: each group's arrays then have the
    # very shape (but for the number of groups) they have when it is fixed alone, so that numpy's sums along the
    # sights (pairwise, in an order that depends on the row's length) and the matrices of the running fix's σ
    # (sights × sights) give it the same numbers to the last bit
    if work.size == 1:  # one group (a fix alone)
        _fix_alike(sights, group, n_groups, ok, weighted, work, fix_time_given, sizes, results, problems)
        return results, problems
    width = np.bincount(group[ok & (group >= 0)], minlength=n_groups)[work]
    for size in np.unique(width).tolist():
        alike = work[width == size]
        # a running fix's σ takes a sights × sights matrix a group: groups of many sights are solved a few at a
        # time, so that a log of large groups (one label on a whole day's sights) is fixed in bounded memory
        at_once = max(1, BATCH_MATRIX_CELLS // max(size * size, 1))
        for start in range(0, alike.size, at_once):
            _fix_alike(sights, group, n_groups, ok, weighted, alike[start:start + at_once], fix_time_given, sizes,
                       results, problems)
    return results, problems


def _fix_alike(sights: SightRows, group, n_groups, ok, weighted, work, fix_time_given, sizes, results, problems
               ) -> None:
    """:func:`fix_batch`'s solve of the groups ``work``, which hold as many sights each."""
    lay = _layout(sights, group, n_groups, ok, weighted, work, fix_time_given)
    motion, motion_problem, line, spread0 = _kinds(sights, lay)
    parts = _solve_kinds(sights, lay, motion, line, spread0)
    lines = _plotting_lines(lay)
    if lay.sigma is not None:
        _mark_lines_at_fix(lay, parts, lines)
    columns = _row_columns(lay, parts, lines, sights.gha.size, group, n_groups)
    for wi in np.flatnonzero(lay.polar).tolist():
        problems[int(work[wi])] = (
            f"a running fix this near the pole ({format_angle(float(lay.lat0[wi]), 'lat')}, the run "
            f"{lay.run_nm[wi]:.0f} nm) is not carried along rhumb lines, which are not defined through the pole "
            "(courses there are steered on a grid): fix from sights taken together, or give a DR for each sight "
            "and no course")
    done = _fill_results(sights, lay, parts, columns, motion_problem, sizes, results, problems)
    if done:
        _check_sense(sights, lay, done)


@dataclass(frozen=True)
class _Layout:
    """The groups at work laid out padded side by side (groups at work, the most sights of any), each padding
    column repeating its group's last sight (a zero-length leg at its time, no weight), with their DR tracks."""

    work: np.ndarray  # the group number of each row
    index: np.ndarray  # the input row of each cell
    present: np.ndarray  # a sight of the group (shown)
    use: np.ndarray  # a sight used in the fix
    last: np.ndarray  # each group's last used sight by time (its column; the later row among equal times)
    last_row: np.ndarray
    fix_time: np.ndarray  # datetime64[ns]
    hours: np.ndarray  # each sight's time from the fix
    vn: np.ndarray  # the velocity over the ground after each sight (knots)
    ve: np.ndarray
    run_from: list[RunFrom]
    track: DRTrack
    gha: np.ndarray
    dec: np.ndarray
    ho: np.ndarray
    lat0: np.ndarray  # the DR at the fix time
    lon0: np.ndarray
    n_used: np.ndarray
    run_nm: np.ndarray  # the longest run between a sight and the fix time
    polar: np.ndarray  # a running fix carried through (or next to) a pole: refused
    weight: np.ndarray  # each sight's weight (1: a sight as good as any)
    sigma: np.ndarray | None = None  # each cell's stated σ (nm; NaN: a sight), None when no row states one

    @functools.cached_property
    def at_dr(self) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Each sight's position, the DR at the fix time carried back (or on) to it, and the body's Hc and Zn
        there: what the kinds of the groups and the plotting sheet's lines both take, worked once."""
        sight_lat, sight_lon = at_sights(self.track, self.lat0, self.lon0)
        hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, self.gha, self.dec)
        return sight_lat, sight_lon, hc, zn


#: the time of a cell no sight fills (int64 nanoseconds): before any
_NEVER = int(np.iinfo(np.int64).min)


def _layout(s: SightRows, group, n_groups, ok, weighted, work, fix_time_given) -> _Layout:
    """The padded layout of the groups at work, each group's run between its sights, and its DR at the fix time
    (the last sight's DR carried on along the track)."""
    by_group = np.argsort(np.where(group >= 0, group, n_groups), kind="stable")
    count_ok = np.bincount(group[ok & (group >= 0)], minlength=n_groups)
    ok_rows = by_group[ok[by_group] & (group[by_group] >= 0)]
    w_of_group = np.full(n_groups, -1, dtype=np.intp)
    w_of_group[work] = np.arange(work.size)
    ok_rows = ok_rows[w_of_group[group[ok_rows]] >= 0]  # the rows of the groups at work
    w = w_of_group[group[ok_rows]]
    counts = count_ok[work]
    start = np.cumsum(counts) - counts  # each group's first place among the rows
    column = np.arange(ok_rows.size) - start[w]
    width = int(counts.max())
    present = np.zeros((work.size, width), dtype=bool)
    present[w, column] = True
    use = np.zeros((work.size, width), dtype=bool)
    use[w, column] = weighted[ok_rows]
    times = np.full((work.size, width), _NEVER, dtype=np.int64)
    times[w, column] = np.where(weighted[ok_rows], s.utc[ok_rows].astype(np.int64), _NEVER)
    last = width - 1 - np.argmax(times[:, ::-1] == times.max(axis=1, keepdims=True), axis=1)
    index = np.zeros((work.size, width), dtype=np.intp)
    index[w, column] = ok_rows
    last_row = index[np.arange(work.size), last]
    index = np.where(present, index, last_row[:, None])
    fix_time = fix_time_given[work]
    fix_time = np.where(np.isnat(fix_time), s.utc[last_row], fix_time)
    offset_ns = (s.utc[index] - fix_time[:, None]).astype("timedelta64[ns]").astype(np.int64)
    hours = offset_ns / NS_PER_HOUR
    vn, ve, run_from = _run_velocities(s, index, present, hours)
    track = sight_track_ns(offset_ns, vn, ve)
    dr_lat, dr_lon = track.through(s.dr_lat[last_row], s.dr_lon[last_row], last)
    lat0, lon0 = dr_lat[:, -1], dr_lon[:, -1]
    run_nm = np.where(present, run_to_fix_nm(track), 0.0).max(axis=1)
    polar = (run_nm > 0) & (np.abs(lat0) + run_nm / ARCMIN_PER_DEG > 90.0 - POLAR_RUN_LIMIT_DEG)
    weight = np.ones(index.shape) if s.weight is None else s.weight[index]
    sigma = None
    if s.line_sigma is not None and np.isfinite(s.line_sigma).any():
        sigma = np.where(present, s.line_sigma[index], np.nan)
    return _Layout(work, index, present, use, last, last_row, fix_time, hours, vn, ve, run_from, track,
                   s.gha[index], s.dec[index], s.ho[index], lat0, lon0, use.sum(axis=1), run_nm, polar, weight, sigma)


def _kinds(s: SightRows, lay: _Layout):
    """What each group is: a fix with its motion (asked for and supported), a line (the lines cross at less than
    LINE_ONLY_DEG), or a fix; why the motion cannot be solved where it was asked for; the widest crossing."""
    # each line's azimuth where it was observed: the DR carried back (or on) to each sight, as the solution
    # works it (at the DR of the fix time a noon Sun near the zenith hours before would have another azimuth)
    zn0 = lay.at_dr[3]
    spread0 = azimuth_spread_many(zn0, lay.use)
    size = lay.work.size
    motion = np.zeros(size, dtype=bool)
    motion_problem = np.full(size, "", dtype=object)
    if s.solve_motion:
        span_h = np.where(lay.use, lay.hours, -np.inf).max(axis=1) - np.where(lay.use, lay.hours, np.inf).min(axis=1)
        motion_problem = np.where(
            lay.n_used < 5, [f"{n} sights (at least 5 are needed for position, course, speed and a check)"
                             for n in lay.n_used],
            np.where(span_h < 1.0, [f"the sights span {s_ * 60:.0f} minutes (at least an hour is needed)"
                                    for s_ in span_h],
                     np.where(spread0 < WEAK_CROSSING_DEG, "the azimuths are too alike", ""))).astype(object)
        motion = (motion_problem == "") & ~lay.polar
    line = (spread0 < LINE_ONLY_DEG) & ~motion & ~lay.polar
    return motion, motion_problem, line, spread0


def _solve_kinds(s: SightRows, lay: _Layout, motion, line, spread0) -> dict:
    """Each kind of group solved at once: {2: fixes, 4: fixes with their motion, 'line': lines}, each (rows, Part).

    One rule makes a fix: a group solved as a fix whose position is none after all (its lines cross at less
    than LINE_ONLY_DEG where it lies, the iteration did not settle, or its ellipse is a line's:
    :func:`navred.fixkinds.not_a_fix`) is worked as a line of position (or a latitude) with the others, and
    says why."""
    parts = {}
    line = line.copy()
    shown = np.array(spread0, dtype=float)
    reason = np.full(line.size, "", dtype=object)
    for k, chosen in ((2, ~line & ~motion & ~lay.polar), (4, motion)):
        if chosen.any():
            rows = np.flatnonzero(chosen)
            velocity0 = (np.where(lay.use[rows], lay.vn[rows], 0.0).sum(1) / lay.n_used[rows],
                         np.where(lay.use[rows], lay.ve[rows], 0.0).sum(1) / lay.n_used[rows])
            # every group a fix of position: its first step starts from Hc and Zn at the DR, worked already
            start = lay.at_dr[2:] if k == 2 and rows.size == lay.work.size else None
            part = solve_fix_part(k, rows, lay.gha, lay.dec, lay.ho, lay.use, lay.present, lay.track,
                                  lay.lat0, lay.lon0, velocity0, s.dr_error_kn, s.dr_error_fraction, lay.weight,
                                  None if lay.sigma is None else lay.sigma[rows], start)
            demoted = part.not_fix != ""
            if demoted.any():
                line[rows[demoted]] = True
                shown[rows[demoted]] = part.spread_deg[demoted]
                reason[rows[demoted]] = part.not_fix[demoted]
                part, rows = part.take(np.flatnonzero(~demoted)), rows[~demoted]
            if rows.size:
                parts[k] = (rows, part)
    if line.any():
        rows = np.flatnonzero(line)
        parts["line"] = (rows, solve_line_part(rows, lay.gha, lay.dec, lay.ho, lay.use, lay.present, lay.track,
                                               lay.lat0, lay.lon0, shown, s.dr_error_kn, s.dr_error_fraction,
                                               lay.weight, reason))
    return parts


def _plotting_lines(lay: _Layout) -> dict[str, np.ndarray]:
    """Each line of position for the plotting sheet, from the DR carried to its sight: its intercept and Zn
    from the DR at the fix time, its foot, and its bearing there (tangent to the circle of equal altitude at
    the foot: across the azimuth, toward the body's geographical position, latitude Dec, longitude −GHA)."""
    hc, zn = lay.at_dr[2:]
    intercept = (lay.ho - hc) * ARCMIN_PER_DEG
    foot_lat, foot_lon = destination(lay.lat0[:, None], lay.lon0[:, None], zn, intercept)
    _, toward_gp = distance_bearing(foot_lat, foot_lon, lay.dec, wrap_180(-lay.gha))
    return {"lop_intercept_nm": intercept, "lop_zn_deg": zn, "lop_foot_lat_deg": foot_lat,
            "lop_foot_lon_deg": foot_lon, "lop_tangent_deg": wrap_360(toward_gp + 90.0)}


def _mark_lines_at_fix(lay: _Layout, parts: dict, lines: dict) -> None:
    """A mark's line on the plotting sheet drawn through the point of it nearest the fix, not the DR: a radar
    range is a circle of a few miles, whose tangent at the DR's foot would stand off the fix by a mile."""
    for key, (rows, part) in parts.items():
        if key == "line":
            continue
        for j, wi in enumerate(rows.tolist()):
            marks = np.isfinite(lay.sigma[wi]) & lay.present[wi]
            if not marks.any():
                continue
            result = part.result(j)
            if result is None:
                continue
            hc, zn = computed_altitude_azimuth(result.lat_deg, result.lon_deg, lay.gha[wi][marks], lay.dec[wi][marks])
            foot_lat, foot_lon = destination(result.lat_deg, result.lon_deg, zn, (lay.ho[wi][marks] - hc) * ARCMIN_PER_DEG)
            _, toward_gp = distance_bearing(foot_lat, foot_lon, lay.dec[wi][marks], wrap_180(-lay.gha[wi][marks]))
            lines["lop_foot_lat_deg"][wi, marks] = foot_lat
            lines["lop_foot_lon_deg"][wi, marks] = foot_lon
            lines["lop_tangent_deg"][wi, marks] = wrap_360(toward_gp + 90.0)


def _row_columns(lay: _Layout, parts: dict, lines: dict, n_rows: int, group, n_groups) -> dict[str, np.ndarray]:
    """Every per-sight array scattered to the input rows once, then put in group order, so that each group's
    arrays are slices (views) of one array."""
    shape = lay.present.shape
    residual = np.full(shape, np.nan)
    outlier = np.zeros(shape, dtype=bool)
    gross = np.zeros(shape, dtype=bool)
    clear = np.zeros(shape, dtype=bool)
    for rows, part in parts.values():
        residual[rows], outlier[rows], gross[rows], clear[rows] = (part.residual_arcmin, part.outlier, part.gross,
                                                                   part.clear)
    sight_index = lay.index[lay.present]
    by_group = np.argsort(np.where(group >= 0, group, n_groups), kind="stable")
    # every input row a sight of the layout, in group order already (one group's fix): no scattering
    direct = sight_index.size == n_rows and np.array_equal(sight_index, by_group)

    def in_group_order(values, fill=np.nan, dtype=float):
        if direct:
            return np.asarray(values[lay.present], dtype=dtype)
        out = np.full(n_rows, fill, dtype=dtype)
        out[sight_index] = values[lay.present]
        return out[by_group]

    columns = {"residual_arcmin": in_group_order(residual)}
    columns.update({name: in_group_order(values) for name, values in lines.items()})
    shown_out = lay.present & ~lay.use
    columns["outlier"] = in_group_order(outlier | shown_out, False, bool)
    columns["used"] = in_group_order(lay.use, False, bool)
    columns["weight"] = in_group_order(lay.weight, 1.0)
    columns["left_out"] = in_group_order(shown_out, False, bool)
    columns["gross"] = in_group_order(gross, False, bool)
    columns["clear_blunder"] = in_group_order(clear, False, bool)
    return columns


def _fill_results(s: SightRows, lay: _Layout, parts: dict, columns: dict, motion_problem, sizes, results,
                  problems) -> list[tuple[int, FixResult]]:
    """Each group's FixResult completed (its per-sight arrays, fix time, DR, run, noon-curve latitude) and put
    in ``results``; the groups whose lines are parallel named in ``problems``. Returns (row, result) of each."""
    bounds = np.concatenate([[0], np.cumsum(sizes)]).tolist()
    lat0_list, lon0_list, work_list = lay.lat0.tolist(), lay.lon0.tolist(), lay.work.tolist()
    done: list[tuple[int, FixResult]] = []
    for key, (rows, part) in parts.items():
        for j, wi in enumerate(rows.tolist()):
            g = work_list[wi]
            result = part.result(j)
            if result is None:
                problems[g] = PARALLEL_LINES
                continue
            if key != "line" and s.solve_motion and motion_problem[wi]:
                result.warnings.insert(0, f"course and speed made good cannot be solved: {motion_problem[wi]}; "
                                          "the known run is used")
            a, b = bounds[g], bounds[g + 1]
            for name, values in columns.items():
                setattr(result, name, values[a:b])
            result.utc = lay.fix_time[wi]
            result.dr_lat_deg, result.dr_lon_deg = lat0_list[wi], lon0_list[wi]
            result.run_from = lay.run_from[wi] if key != 4 else RunFrom.SOLVED
            sights = lay.index[wi][lay.present[wi]]
            result.run_text = run_words(result.run_from, s.course[sights], s.speed[sights], s.set_deg[sights],
                                        s.drift_kn[sights])
            if result.kind == FixKind.LATITUDE and lay.n_used[wi] >= 3:
                used_here = lay.use[wi]
                _noon_curve(result, lay.hours[wi][used_here], lay.ho[wi][used_here], lay.dec[wi][used_here])
            results[g] = result
            done.append((wi, result))
    return done


def _check_sense(s: SightRows, lay: _Layout, done: list[tuple[int, FixResult]]) -> None:
    """The sense checks of the results at once (:func:`navred.sensechecks.sense_checks`)."""
    chosen = np.array([wi for wi, _ in done])
    span_min = (np.where(lay.use, lay.hours, -np.inf).max(axis=1) - np.where(lay.use, lay.hours, np.inf).min(axis=1)) * 60
    age_h = dr_age_at_fix(s, lay.last_row, lay.fix_time)
    rows = np.arange(lay.work.size)
    speed_kn = np.hypot(lay.vn[rows, lay.last], lay.ve[rows, lay.last])
    sense_checks([r for _, r in done], [lay.run_from[wi] for wi in chosen.tolist()], span_min[chosen], age_h[chosen],
                 speed_kn[chosen], np.isfinite(s.dr_age_h[lay.last_row[chosen]]))


def _run_velocities(s: SightRows, index: np.ndarray, present: np.ndarray, hours: np.ndarray):
    """Velocity over the ground (north, east knots) in force after each sight of the padded layout (the
    course and speed through the water and the current in force, or, where a group gives no course or
    speed, the run between its rows' own DRs), and how each group's run was found."""
    course, speed = s.course[index], s.speed[index]
    given = (np.isfinite(course) | np.isfinite(speed)) & present
    vn, ve = velocity_kn(_nil_for_nan(course), _nil_for_nan(speed))
    cn, ce = velocity_kn(s.set_deg[index], s.drift_kn[index])
    vn, ve = vn + cn, ve + ce
    moving = given.any(axis=1)
    with_current = ((s.drift_kn[index] != 0) & present).any(axis=1)
    apart = np.zeros(len(index), dtype=bool)
    if not moving.all():
        lat, lon = s.dr_lat[index], s.dr_lon[index]
        one_dr = ~present | ((lat == lat[:, :1]) & (lon == lon[:, :1]))  # one DR written on every sight: nil apart
        if not one_dr.all():
            miles, _ = distance_bearing(lat[:, :1], lon[:, :1], lat, lon)
            with np.errstate(invalid="ignore"):
                apart = (np.where(present, miles, 0.0) > CONVERGED_NM).any(axis=1) & ~moving
        if apart.any():
            rows = np.flatnonzero(apart)
            vn[rows], ve[rows] = _dr_run(lat[rows], lon[rows], hours[rows], present[rows])
    run_from = [RunFrom.OWN_DRS if a else (RunFrom.COURSE_SPEED_AND_CURRENT if c else RunFrom.COURSE_AND_SPEED) if m
                else RunFrom.CURRENT if c else RunFrom.NONE
                for a, m, c in zip(apart.tolist(), moving.tolist(), with_current.tolist())]
    return vn, ve, run_from


_LARGEST = float(np.finfo(float).max)


def _nil_for_nan(values: np.ndarray) -> np.ndarray:
    """``np.nan_to_num(values)`` (NaN 0, an infinity the largest float of its sign), in a few calls."""
    return np.where(np.isnan(values), 0.0, np.minimum(np.maximum(values, -_LARGEST), _LARGEST))


def _dr_run(lat: np.ndarray, lon: np.ndarray, hours: np.ndarray, present: np.ndarray):
    """The velocity after each sight (north, east knots) that carries the ship from its DR to the next
    sight's DR along the rhumb line, sights in time order; the last keeps the leg before it."""
    width = hours.shape[1]
    order = np.argsort(np.where(present, hours, np.inf), axis=1, kind="stable")
    t, la, lo = (np.take_along_axis(v, order, axis=1) for v in (hours, lat, lon))
    count = present.sum(axis=1)
    miles, course = rhumb_inverse(la[:, :-1], lo[:, :-1], la[:, 1:], lo[:, 1:])
    dt = np.diff(t, axis=1)
    valid = (np.arange(width - 1)[None, :] < (count - 1)[:, None]) & (dt > 0) & np.isfinite(miles)
    speed = np.where(valid, np.nan_to_num(miles) / np.where(valid, dt, 1.0), 0.0)
    north, east = velocity_kn(np.where(valid, course, 0.0), speed)
    out = []
    rows = np.arange(len(order))
    last = np.maximum(count - 1, 0)
    for leg in (north, east):
        full = np.concatenate([leg, np.zeros((len(order), 1))], axis=1)
        full[rows, last] = np.where(count >= 2, full[rows, np.maximum(last - 1, 0)], 0.0)
        full = np.where(np.arange(width)[None, :] > last[:, None], full[rows, last][:, None], full)
        back = np.empty_like(full)
        np.put_along_axis(back, order, full, axis=1)
        out.append(back)
    return out[0], out[1]


def _noon_curve(result: FixResult, hours, ho, dec) -> None:
    """For a latitude: the noon-curve latitude too, when the series straddles meridian passage."""
    zn = np.radians(result.lop_zn_deg[result.used])
    bearing = "S" if np.cos(zn).sum() < 0 else "N"  # where the body bears on the meridian
    latitude = latitude_from_noon_curve(hours, ho, np.mean(dec), bearing)
    if latitude is not None:
        result.noon_curve_latitude_deg = latitude


def dr_age_at_fix(s: SightRows, last_row: np.ndarray, fix_time: np.ndarray) -> np.ndarray:
    """The age (hours) of each group's DR at the fix time: its last sight's DR's age and the time since (a
    DR of unknown age is taken as UNKNOWN_DR_AGE_H old)."""
    since = np.abs((fix_time - s.utc[last_row]).astype("timedelta64[ns]").astype(np.int64) / NS_PER_HOUR)
    age = s.dr_age_h[last_row]
    return np.where(np.isfinite(age), np.abs(age) + since, UNKNOWN_DR_AGE_H)


__all__ = ["POLAR_RUN_LIMIT_DEG", "SightRows", "subset_groups", "fix_batch", "dr_age_at_fix"]
