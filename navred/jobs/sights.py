"""The per-sight pipeline: parsed sights in, one reduced row per sight out.

Edge code (it takes and returns pandas DataFrames); the arithmetic is the core's:
:mod:`navred.almanac`, :mod:`navred.corrections` and :mod:`navred.triangle`. The sights
come from :func:`navred.read_sight_log`, the one reader, so nothing is parsed here. Every
row comes back, in order, with a ``status`` (``ok``, ``warning`` or ``error``), a
``message`` and, for an error, the ``error_column`` that caused it; a row with a problem
never stops the others.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..almanac import places
from ..angles import wrap_360
from ..constants import LARGE_INTERCEPT_NM, SUN_BRIGHT_SKY_DEG, SUN_DARK_HORIZON_DEG
from ..corrections import correct_altitudes, planet_phases
from ..errors import api_boundary
from ..io.logbook import (
    SIGHT_COLUMNS,
    LogSource,
    SightLog,
    frame_blocks,
    frame_texts,
    read_frame_block,
    read_sight_log,
    whole_log_columns,
)
from ..io.logcells import chosen_texts, texts_of
from ..landmarks import bearing_body, line_sigma_nm, range_body
from ..status import SightStatus
from ..timescales import UT1_BEFORE, UT1_BEYOND, instants_from_utc_jd
from ..triangle import (
    HIGH_ALTITUDE_DEG,
    computed_altitude_azimuth,
    distance_bearing,
    intercept_direction,
    intercept_nm,
)
from ..vocabulary import (  # the columns reduce_sights adds, in order
    DR_CONTEXT_COLUMNS,
    RESULT_COLUMNS,
)
from .frames import short_row_list
from .zoneslips import zone_sign_suspects

#: A mark farther than this from the DR is not one a bearing is taken of (nautical miles; common practice: a
#: light's range in clear weather is some 20-30 nm).
MARK_FAR_NM = 40.0

# A star or planet on the sea horizon is taken in twilight (SUN_BRIGHT_SKY_DEG to SUN_DARK_HORIZON_DEG, in
# navred.constants with their sources); the navigation manuals give the best star time as the Sun between
# about 3° and 9° below the horizon. LARGE_INTERCEPT_NM: a larger intercept usually means a blunder or a poor DR.
#: The horizons that are the sea's own (a star needs it lit and the sky dark).
SEA_HORIZONS = ("sea", "back")



class _Notes:
    """Per-row error and warning messages, and the column each error belongs to."""

    def __init__(self, n: int):
        self.error = texts_of(n, "")
        self.warning = texts_of(n, "")
        self.column = texts_of(n, "")

    @staticmethod
    def _add(target, rows, text, separator="; "):
        """``text`` (one, or one per row) joined to each row's notes; each distinct joined text is made once and
        shared by its rows (a long log would otherwise hold a copy of its commonest warning per row)."""
        rows = np.asarray(rows)
        rows = np.flatnonzero(rows) if rows.dtype == bool else rows.astype(int)
        if not rows.size:
            return
        current = target[rows]
        texts = texts_of(rows.size, text) if isinstance(text, str) else np.asarray(text, dtype=object)
        empty = current == ""
        target[rows[empty]] = texts[empty]
        if empty.all():
            return
        first, firsts = pd.factorize(current[~empty])
        second, seconds = pd.factorize(texts[~empty])
        pairs, distinct = pd.factorize(first.astype(np.int64) * max(len(seconds), 1) + second)
        joined = np.array([f"{firsts[k // max(len(seconds), 1)]}{separator}{seconds[k % max(len(seconds), 1)]}"
                           for k in distinct.tolist()], dtype=object)
        target[rows[~empty]] = joined[pairs]

    def fail(self, rows, text, column):
        self._add(self.error, rows, text)
        self._add(self.column, rows, column, ", ")

    def warn(self, rows, text):
        self._add(self.warning, rows, text)

    @property
    def ok(self):
        return self.error == ""


#: Rows reduced at a time: a large log is worked in blocks of this many sights (each block
#: vectorised) so that memory stays bounded; the rows are independent, so the result is the same.
BLOCK_ROWS = 200_000


def parsed_sights(sights: SightLog | LogSource) -> pd.DataFrame:
    """The parsed table of every row: from a :class:`SightLog`, a parsed table, or a raw table read now."""
    if isinstance(sights, SightLog):
        return sights.table
    if isinstance(sights, pd.DataFrame) and _is_parsed(sights):
        return sights
    return read_sight_log(sights).table


@api_boundary
def reduce_sights(sights: SightLog | LogSource) -> pd.DataFrame:
    """Reduce sights to Ho, Hc, Zn and intercept, one row per sight in order.

    ``sights`` is what :func:`navred.read_sight_log` returns (a :class:`SightLog`, or its
    ``table`` or ``sights``); a raw table (a DataFrame with sight-log columns) is read with
    :func:`navred.read_sight_log` first, so the same rules apply. Rows the reader refused
    come back with status ``error`` and its reasons. The added columns are
    :data:`RESULT_COLUMNS`.
    """
    if isinstance(sights, pd.DataFrame) and not _is_parsed(sights):
        spans = frame_blocks(sights, FRAME_BLOCK_ROWS)
        if spans is not None:
            return _reduce_frame_in_blocks(sights, spans)
    log = sights if isinstance(sights, SightLog) else None
    if log is None and not (isinstance(sights, pd.DataFrame) and _is_parsed(sights)):
        log = read_sight_log(sights)
    if log is not None:  # a fix group mixing the ship's sights and an exercise's is split, as the commands split it
        from .shipsfixes import split_mixed_groups

        log = split_mixed_groups(log)
    table = (log.table if log is not None else parsed_sights(sights)).reset_index(drop=True)
    added = pd.concat([_reduce_block(table.iloc[i:i + BLOCK_ROWS].reset_index(drop=True))
                       for i in range(0, max(len(table), 1), BLOCK_ROWS)], ignore_index=True)
    carried = table.drop(columns=[c for c in (*RESULT_COLUMNS, *DR_CONTEXT_COLUMNS) if c in table.columns])
    out = pd.concat([carried, added], axis=1)
    for column, values in zip(DR_CONTEXT_COLUMNS, _dr_context(log, out)):
        out[column] = values
    return out


def _dr_context(log: SightLog | None, reduced: pd.DataFrame) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Each sight's DR's age (hours) from the log's known positions and the current in force at it (set, drift)
    from the log's current entries, as :func:`navred.process_log` takes them before any fix
    (:func:`navred.jobs.drcontext.dr_context`); an age NaN and no current where the log does not say (a table
    already parsed, whose entry rows are not at hand)."""
    if log is None or not len(reduced):
        return np.full(len(reduced), np.nan), np.zeros(len(reduced)), np.zeros(len(reduced))
    from .drcontext import (
        dr_context,  # the DR's track is the day's work's, which reads the reduced table
    )

    context = dr_context(log, reduced, [])
    return context["age_h"], context["set_deg"], context["drift_kn"]


#: rows of a long DataFrame log read and reduced at a time (:func:`navred.io.logbook.frame_blocks`)
FRAME_BLOCK_ROWS = 12_500


def _is_parsed(frame: pd.DataFrame) -> bool:
    return {"sight_utc", "utc_jd1", "hs_deg", "read_problem"} <= set(frame.columns)


def _reduce_frame_in_blocks(frame: pd.DataFrame, spans: list[tuple[int, int]]) -> pd.DataFrame:
    """A long DataFrame log read and reduced a block of rows at a time (the blocks shared among forked
    processes, one per core), each block's columns written into the whole table's: the table one reading of
    the whole frame gives (tested), in a fraction of the memory.

    The whole table's memory is its columns, each made once and written a block at a time: no block is joined
    to another, no column copied at the end. Before the processes are forked, the frame's columns of text are
    coded (:func:`navred.io.logbook.frame_texts`, so that no process copies the frame's objects) and a few rows
    are reduced here, so that what the almanac builds on first use is built once and shared with them; after
    the table is made, the memory the blocks and the fix groups took in passing is handed back. Measured on a
    million rows: the whole process tree's peak 1.10 GB, where joining the blocks' tables took 1.6 GB."""
    from .forking import cores, forked_map, give_back_memory

    context = (frame, frame_texts(frame))
    _reduced_frame_block(context, (0, min(WARM_ROWS, len(frame))))
    whole = WholeTable(len(frame))
    for (start, stop), block in zip(spans, forked_map(_reduced_frame_block, spans, context=context,
                                                      workers=cores())):
        whole.put(start, stop, block)
        del block
    columns = whole.finished()
    whole_log_columns(columns)
    table = pd.DataFrame(columns, copy=False)
    del columns
    give_back_memory()  # what the blocks and the fix groups took in passing
    return table


#: rows reduced before the processes are forked (what the almanac builds on first use then shared by them)
WARM_ROWS = 200


class WholeTable:
    """The columns of a table of ``n`` rows, each made once when the first block brings it and filled a block
    at a time. A column of numbers starts as zeros that the system lends lazily (a page is taken only when
    written), and a block whose values are all zero (to the bit: -0.0 is written) is not written into it: a
    column of zeros (no current, no watch error) costs nothing. Instants are kept as UTC and given their zone
    back at the end."""

    def __init__(self, n: int):
        self.n = n
        self.columns: dict[str, np.ndarray] = {}
        self.zones: dict[str, object] = {}

    def put(self, start: int, stop: int, block: dict[str, tuple[np.ndarray, object]]) -> None:
        """Rows ``start`` to ``stop`` of each column: (its values, or its one value for every row; the zone of a
        column of instants, or None)."""
        for name, (values, zone) in block.items():
            if zone is not None:
                self.zones[name] = zone
            column = self.columns.get(name)
            if column is None:
                kind = values.dtype.kind
                column = self.columns[name] = np.zeros(self.n, dtype=values.dtype) if kind in "fiubmM" \
                    else np.empty(self.n, dtype=object)
            elif values.dtype != column.dtype:  # (a column whose type a block changes: widened)
                wider = np.result_type(column.dtype, values.dtype) if values.dtype.kind in "fiub" and \
                    column.dtype.kind in "fiub" else np.dtype(object)
                column = self.columns[name] = column.astype(wider)
            if column.dtype.kind in "fiub" and not values.view(np.uint8).any():
                continue  # all zero bits: the column holds them already
            column[start:stop] = values

    def finished(self) -> dict:
        """The columns, the instants given their zone back (a table made of them copies nothing)."""
        columns = self.columns
        for name, zone in self.zones.items():
            columns[name] = pd.Series(columns[name]).dt.tz_localize("UTC").dt.tz_convert(zone)
        return columns


def _one_if_same(values: np.ndarray) -> np.ndarray:
    """A block's column as it is sent back: its one value (an array of one, which fills the block's rows) where
    every row holds the same (numbers to the bit, texts equal), the column otherwise. Most of a reduced log's
    columns are so (no temperature, no chart position, "sea"...): a tenth of what is pickled and read back."""
    if values.size > 1:
        if values.dtype.kind in "fiubmM":
            rows = values.view(np.uint8).reshape(values.size, -1)
            if (rows == rows[:1]).all():
                return values[:1].copy()
        elif isinstance(values[0], str) and values[-1] == values[0] and (values == values[0]).all():
            return values[:1].copy()
    return values


def _reduced_frame_block(context: tuple[pd.DataFrame, dict], span: tuple[int, int]) -> dict:
    """Rows ``span`` of a long DataFrame log read and reduced (in this process or a forked one), each column as
    (its values, the zone of a column of instants, None otherwise): what a forked process sends back."""
    frame, texts = context
    reduced = reduce_sights(read_frame_block(frame, *span, texts=texts))
    out = {}
    for name in reduced.columns:
        values = reduced[name]
        zone = None
        if isinstance(values.dtype, pd.DatetimeTZDtype):
            zone, values = values.dtype.tz, values.dt.tz_convert("UTC").dt.tz_localize(None)
        values = values.to_numpy()
        out[name] = (_one_if_same(np.ascontiguousarray(values if values.dtype.kind in "fiubmMO"
                                                       else values.astype(object))), zone)
    return out


def _instants_of_rows(frame: pd.DataFrame, rows: np.ndarray):
    """The time scales of the sights ``rows`` of a block; a warning about some of them (after the IERS table, the
    leap-second table's expiry) names them by their rows of the log (:class:`navred.errors.RowsWarning`), so that
    a run says it once for the whole log, never by their places in a block."""
    import warnings

    from ..errors import InstantsWarning, RowsWarning

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        inst = instants_from_utc_jd(frame["utc_jd1"].to_numpy(dtype=float)[rows],
                                    frame["utc_jd2"].to_numpy(dtype=float)[rows],
                                    frame["dut1_given_s"].to_numpy(dtype=float)[rows])
    named = [c for c in ("row", "source") if c in frame.columns]
    for item in caught:
        message = item.message
        if isinstance(message, InstantsWarning) and "row" in named:
            picked = frame.iloc[rows[np.asarray(message.positions, dtype=np.intp)]][named].reset_index(drop=True)
            warnings.warn(RowsWarning(f"{short_row_list(picked)}: {message.about}", message.about, picked),
                          stacklevel=2)
        else:
            warnings.warn_explicit(message, item.category, item.filename, item.lineno)
    return inst


def _reduce_block(frame: pd.DataFrame) -> pd.DataFrame:
    """The added columns for one block of parsed sights (index 0..n-1)."""
    n = len(frame)
    notes = _Notes(n)
    problem = frame["read_problem"].to_numpy(dtype=object) if n else np.zeros(0, dtype=object)
    refused = problem != ""
    notes.fail(refused, problem[refused], frame["read_problem_column"].to_numpy(dtype=object)[refused])
    bodies = frame["body_name"].to_numpy(dtype=object)
    limb = frame["limb"].to_numpy(dtype=object)
    has_disc = np.isin(bodies, ["Sun", "Moon"])
    no_limb = limb == ""
    notes.warn(has_disc & no_limb & notes.ok, "limb not given: lower limb assumed")
    notes.warn(~has_disc & np.isin(limb, ["lower", "upper"]) & notes.ok,
               "limb ignored: only the Sun and Moon show a disc")
    limb = np.where(has_disc & no_limb, "lower", np.where(has_disc, limb, "centre"))
    if "watch_error_warning" in frame.columns:  # a rated timepiece's error extrapolated or across a change
        timed = frame["watch_error_warning"].fillna("").astype(str).to_numpy(dtype=object)
        warned = np.flatnonzero((timed != "") & notes.ok)
        notes.warn(warned, timed[warned])
    horizon = frame["horizon"].to_numpy(dtype=object)
    notes.warn(has_disc & (horizon == "bubble") & np.isin(frame["limb"].to_numpy(dtype=object), ["lower", "upper"])
               & notes.ok, "limb ignored: a bubble horizon is on the body's centre")
    hs = frame["hs_deg"].to_numpy(dtype=float)
    lat, lon = frame["dr_lat_deg"].to_numpy(dtype=float), frame["dr_lon_deg"].to_numpy(dtype=float)

    result = {c: np.full(n, np.nan) for c in RESULT_COLUMNS}
    for c in ("ut1_source", "intercept_direction", "status", "message", "error_column"):
        result[c] = texts_of(n, "")
    mark = (frame["mark"].fillna("").astype(str).to_numpy(dtype=object) != "") if "mark" in frame.columns \
        else np.zeros(n, dtype=bool)
    if mark.any():
        _reduce_marks(frame, notes, mark, lat, lon, result)
    rows = np.flatnonzero(notes.ok & ~mark)
    if rows.size:
        inst = _instants_of_rows(frame, rows)
        almanac = places(bodies[rows], inst)
        hc, zn = computed_altitude_azimuth(lat[rows], lon[rows], almanac.gha_deg, almanac.dec_deg)
        ie = frame["index_error_arcmin"].to_numpy(dtype=float)[rows]
        eye = np.nan_to_num(frame["eye_height_m"].to_numpy(dtype=float)[rows])
        phase_angle, phase = planet_phases(bodies[rows], inst, lat[rows], lon[rows], hc, zn)
        corrections = correct_altitudes(
            hs[rows], index_error_arcmin=ie, eye_height_m=eye, horizon=horizon[rows],
            temperature_c=frame["temperature_c"].to_numpy(dtype=float)[rows],
            pressure_hpa=frame["pressure_hpa"].to_numpy(dtype=float)[rows], limb=limb[rows],
            sd_arcmin=np.where(has_disc[rows], almanac.sd_arcmin, 0.0), hp_arcmin=almanac.hp_arcmin,
            augment_sd=bodies[rows] == "Moon", lat_deg=lat[rows], zn_deg=zn,
            waterline_nm=frame["waterline_distance_nm"].to_numpy(dtype=float)[rows],
            measured_dip_arcmin=frame["measured_dip_arcmin"].to_numpy(dtype=float)[rows], phase_arcmin=phase)
        values = {
            "dut1_s": almanac.instants.dut1_s, "gha_aries_deg": almanac.gha_aries_deg,
            "sha_deg": almanac.sha_deg, "gha_deg": almanac.gha_deg, "dec_deg": almanac.dec_deg,
            "hp_arcmin": almanac.hp_arcmin, "almanac_sd_arcmin": almanac.sd_arcmin,
            "lha_deg": wrap_360(almanac.gha_deg + lon[rows]), "ic_arcmin": corrections.ic_arcmin,
            "horizon_arcmin": corrections.horizon_arcmin, "dip_arcmin": corrections.dip_arcmin,
            "ha_deg": corrections.ha_deg, "refraction_arcmin": corrections.refraction_arcmin,
            "sd_arcmin": corrections.sd_arcmin, "parallax_arcmin": corrections.parallax_arcmin,
            "phase_angle_deg": phase_angle, "phase_arcmin": corrections.phase_arcmin, "ho_deg": corrections.ho_deg,
            "hc_deg": hc, "zn_deg": zn,
        }
        for column, value in values.items():
            result[column][rows] = value
        result["ut1_source"][rows] = almanac.instants.ut1_source
        del almanac, values
        failed, cautioned = corrections.error != "", corrections.warning != ""
        notes.fail(rows[failed], corrections.error[failed], corrections.error_column[failed])
        notes.warn(rows[cautioned], corrections.warning[cautioned])
        notes.warn(np.isin(result["ut1_source"], [UT1_BEYOND]),
                   "DUT1 beyond the IERS table: GHA may be off by up to 0.225′; give DUT1 from a time signal")
        notes.warn(np.isin(result["ut1_source"], [UT1_BEFORE]), "DUT1 taken as 0 (before the IERS table)")
        high = np.zeros(n, dtype=bool)
        high[rows] = hc > HIGH_ALTITUDE_DEG
        below = np.zeros(n, dtype=bool)
        below[rows] = hc < 0.0
        notes.warn(below, "the body is below the horizon at the DR (Hc under 0°): check body, time and DR")
        far = np.zeros(n, dtype=bool)
        far[rows] = np.abs(intercept_nm(corrections.ho_deg, hc)) > LARGE_INTERCEPT_NM
        notes.warn(far & ~below, f"intercept over {LARGE_INTERCEPT_NM:.0f} nm: check body, time, Hs and DR")
        suspect, why = zone_sign_suspects(frame, far | below, ho_deg=result["ho_deg"], hc_deg=result["hc_deg"],
                                          sd_arcmin=result["sd_arcmin"], limb=limb)
        notes.warn(suspect, why)
        notes.warn(high, "high sight (Hc above 85°): the straight line of position is a poor "
                         "approximation; fix it on the sphere")
        doubt = np.zeros(n, dtype=bool)  # the rows whose DR's N/S or E/W a likely cause puts in doubt
        doubt[suspect] = [("likely cause" in w and ("'s DR latitude" in w or "'s DR longitude" in w
                                                     or "the DR's longitude written" in w)) for w in why]
        _twilight_check(notes, rows, bodies, horizon, inst, lat, lon, doubt)
    bad = ~notes.ok
    result["ho_deg"] = np.where(bad, np.nan, result["ho_deg"])
    result["intercept_nm"] = np.where(bad, np.nan, intercept_nm(result["ho_deg"], result["hc_deg"]))
    result["intercept_direction"] = intercept_direction(result["intercept_nm"])
    result["status"] = chosen_texts(np.where(bad, 2, np.where(notes.warning != "", 1, 0)),
                                    [SightStatus.OK.value, SightStatus.WARNING.value, SightStatus.ERROR.value])
    result["message"] = np.where(bad, notes.error, notes.warning).astype(object)
    result["error_column"] = notes.column
    return pd.DataFrame({column: result.pop(column) for column in RESULT_COLUMNS})


def _reduce_marks(frame: pd.DataFrame, notes: _Notes, mark: np.ndarray, lat: np.ndarray, lon: np.ndarray,
                  result: dict) -> None:
    """The rows that are a bearing or a radar range of a charted object: each turned into a body of its own
    (:mod:`navred.landmarks`), its Ho, Hc from the DR, Zn and intercept, and its σ across the line."""
    rows = np.flatnonzero(mark & notes.ok)
    if not rows.size:
        return
    mark_lat = frame["mark_lat_deg"].to_numpy(dtype=float)[rows]
    mark_lon = frame["mark_lon_deg"].to_numpy(dtype=float)[rows]
    bearing = frame["bearing_deg"].to_numpy(dtype=float)[rows]
    ranged = frame["range_nm"].to_numpy(dtype=float)[rows]
    is_range = np.isfinite(ranged)
    near_lat, near_lon = lat[rows], lon[rows]
    gha_b, dec_b, ho_b = bearing_body(mark_lat, mark_lon, np.nan_to_num(bearing), near_lat, near_lon)
    gha_r, dec_r, ho_r = range_body(mark_lat, mark_lon, np.nan_to_num(ranged), near_lat, near_lon)
    gha = np.where(is_range, gha_r, gha_b)
    dec = np.where(is_range, dec_r, dec_b)
    ho = np.where(is_range, ho_r, ho_b)
    hc, zn = computed_altitude_azimuth(near_lat, near_lon, gha, dec)
    distance, _ = distance_bearing(near_lat, near_lon, mark_lat, mark_lon)
    sigma = np.where(is_range, frame["range_sigma_nm"].to_numpy(dtype=float)[rows],
                     frame["bearing_sigma_deg"].to_numpy(dtype=float)[rows])
    kind = np.where(is_range, "range", "bearing").astype(object)
    line_sigma = line_sigma_nm(kind, sigma, ranged, np.where(is_range, ranged, distance))
    for column, value in (("gha_deg", gha), ("dec_deg", dec), ("ho_deg", ho), ("hc_deg", hc), ("zn_deg", zn),
                          ("lha_deg", wrap_360(gha + near_lon)), ("line_sigma_nm", line_sigma)):
        result[column][rows] = value
    far = distance > MARK_FAR_NM
    notes.warn(rows[far & ~is_range], f"the DR is over {MARK_FAR_NM:.0f} nm from the mark: a visual bearing of "
                                      "it is unlikely; check the mark's position and the DR")
    notes.warn(rows[~np.isfinite(sigma)], np.where(is_range[~np.isfinite(sigma)],
                                                   "range σ not given: 1 % of the range assumed",
                                                   "bearing σ not given: 1° assumed"))


def _twilight_check(notes: _Notes, rows: np.ndarray, bodies: np.ndarray, horizon: np.ndarray, inst, lat: np.ndarray,
                    lon: np.ndarray, doubt: np.ndarray | None = None) -> None:
    """A star or planet on the sea horizon with the Sun too high for it to be seen, or too low for the horizon
    to be: the Sun's altitude at the DR at the sight (SUN_BRIGHT_SKY_DEG, SUN_DARK_HORIZON_DEG). ``doubt``: the
    rows (of the whole batch) whose DR's hemisphere is in doubt, whose note says the Sun was worked there."""
    point_like = ~np.isin(bodies[rows], ["Sun", "Moon"]) & np.isin(horizon[rows], SEA_HORIZONS)
    if not point_like.any():
        return
    chosen = rows[point_like]
    # the Sun at every instant of the batch: the batch's Earth, Sun and frame are the ones the sights' own places
    # were computed with (kept on it), where a batch of the chosen instants would compute them again
    sun = places("Sun", inst)
    altitude, _ = computed_altitude_azimuth(lat[chosen], lon[chosen], sun.gha_deg[point_like],
                                            sun.dec_deg[point_like])
    planet = np.isin(bodies[chosen], ["Venus", "Mars", "Jupiter", "Saturn"])
    bright = altitude > SUN_BRIGHT_SKY_DEG
    dark = altitude < SUN_DARK_HORIZON_DEG
    if not (bright | dark).any():
        return
    # each warned row's text made from its whole degrees (the few distinct texts each made once)
    degrees = np.rint(altitude).astype(int)
    kinds = np.where(bright, np.where(planet, 1, 2), 0)
    keys = pd.Series(degrees * 8 + (altitude >= 0) * 4 + kinds)  # (what each text depends on)
    warned = np.flatnonzero(bright | dark)
    codes, distinct = pd.factorize(keys.iloc[warned])
    first = warned[np.unique(codes, return_index=True)[1]]
    texts = np.array([_twilight_text(float(altitude[k]), bool(bright[k]), bool(planet[k])) for k in first.tolist()],
                     dtype=object)
    said = texts[codes]
    if doubt is not None and doubt[chosen[warned]].any():
        said = np.where(doubt[chosen[warned]], said + " (worked at the DR as logged, whose hemisphere the likely "
                        "cause above puts in doubt: correct the DR first)", said)
    notes.warn(chosen[warned], said)


def _twilight_text(altitude: float, bright: bool, planet: bool) -> str:
    """The warning of a star or planet sight with the Sun at ``altitude`` (degrees) at the DR."""
    where = (f"the Sun is {altitude:.0f}° up at the DR" if altitude >= 0
             else f"the Sun is {-altitude:.0f}° below the horizon at the DR")
    if bright:
        return (f"{where}: a {'planet' if planet else 'star'} on the sea horizon is taken in twilight, with "
                f"the Sun {-SUN_BRIGHT_SKY_DEG:.0f}° to {-SUN_DARK_HORIZON_DEG:.0f}° below the horizon"
                + (" (Venus and Jupiter can be seen in daylight through the telescope, if you knew where to "
                   "look)" if planet else " (no star is seen against a brighter sky)")
                + ": check the body, the time (zone, date) and the DR")
    return (f"{where}: past the end of nautical twilight (the Sun {-SUN_DARK_HORIZON_DEG:.0f}° below) the sea "
            "horizon cannot be made out, so a sea-horizon sight is doubtful: check the time (zone, date) and "
            "the horizon (an artificial or bubble horizon needs no sea)")


__all__ = ["reduce_sights", "parsed_sights", "RESULT_COLUMNS", "SIGHT_COLUMNS"]
