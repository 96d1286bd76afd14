"""The per-sight pipeline: a table of raw sights in, one reduced row per sight out.

Edge code (it takes and returns pandas DataFrames); the arithmetic is the core's:
:mod:`navred.almanac`, :mod:`navred.corrections` and :mod:`navred.triangle`. Every
input row comes back, in input order, with a ``status`` (``ok``, ``warning`` or
``error``) and a ``message``; a row with a problem never stops the others.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .almanac import places
from .angles import parse_angle
from .corrections import correct_altitudes, parse_index_error_arcmin
from .errors import NavredError
from .stars import canonical_body_name
from .timescales import INSTANT_FIELDS, UT1_BEFORE, UT1_BEYOND, utc_julian_date
from .triangle import (
    HIGH_ALTITUDE_DEG,
    computed_altitude_azimuth,
    intercept_direction,
    intercept_nm,
)

LARGE_INTERCEPT_NM = 30.0  # a larger intercept usually means a blunder or a poor DR (common practice)
REQUIRED = ("utc", "body", "hs", "dr_lat", "dr_lon")
DEFAULTS = {"limb": "", "index_error_arcmin": 0.0, "eye_height_m": np.nan, "horizon": "sea",
            "temperature_c": 10.0, "pressure_hpa": 1010.0, "dut1_s": np.nan}

#: The columns reduce_sights adds, in order (documented in docs/sight-log.md).
RESULT_COLUMNS = [
    "sight_utc", "body_name", "dut1_s", "ut1_source", "gha_aries_deg", "sha_deg", "gha_deg", "dec_deg",
    "hp_arcmin", "almanac_sd_arcmin", "dr_lat_deg", "dr_lon_deg", "lha_deg", "hs_deg", "ic_arcmin",
    "dip_arcmin", "ha_deg", "refraction_arcmin", "sd_arcmin", "parallax_arcmin", "ho_deg", "hc_deg",
    "zn_deg", "intercept_nm", "intercept_direction", "status", "message",
]


class _Notes:
    """Per-row error and warning messages."""

    def __init__(self, n: int):
        self.error = np.full(n, "", dtype=object)
        self.warning = np.full(n, "", dtype=object)

    @staticmethod
    def _add(target, selection, text):
        """Append text (one string, or one per selected row) to the rows a mask or an index array picks."""
        selection = np.asarray(selection)
        rows = np.flatnonzero(selection) if selection.dtype == bool else selection.astype(int)
        if rows.size:
            current = target[rows]
            text = np.asarray(text, dtype=object) if not isinstance(text, str) else text
            target[rows] = np.where(current == "", text, current + "; " + text)

    def fail(self, selection, text):
        self._add(self.error, selection, text)

    def warn(self, selection, text):
        self._add(self.warning, selection, text)

    @property
    def ok(self):
        return self.error == ""


def _blank(values: pd.Series) -> np.ndarray:
    """Rows with no value: NaN, None or only spaces."""
    missing = values.isna().to_numpy()
    if values.dtype.kind in "fiumM" or isinstance(values.dtype, pd.DatetimeTZDtype):
        return missing
    text = values.to_numpy(dtype=object)
    return missing | np.array([isinstance(v, str) and not v.strip() for v in text], dtype=bool)


def _filled(values: pd.Series, default) -> pd.Series:
    """The column with blank cells replaced by the default."""
    return values.where(~pd.Series(_blank(values), index=values.index), default)


def _parse_column(values: pd.Series, parser, name: str, notes: _Notes) -> np.ndarray:
    """Parse a column element by element (a fast path for numbers); failures noted per row."""
    if pd.api.types.is_numeric_dtype(values.dtype) and not pd.api.types.is_bool_dtype(values.dtype):
        numbers = values.to_numpy(dtype=float)
        try:
            return np.asarray(parser(numbers), dtype=float)
        except NavredError:
            pass  # fall through to find the rows
    out = np.full(len(values), np.nan)
    blank = _blank(values)
    notes.fail(blank, f"{name} is missing")
    rows, texts = [], []
    for i, value in enumerate(values.to_numpy(dtype=object)):
        if blank[i]:
            continue
        try:
            out[i] = parser(value)
        except NavredError as exc:
            rows.append(i)
            texts.append(f"{name}: {exc}")
    notes.fail(rows, texts)
    return out


def _utc_column(values: pd.Series, notes: _Notes) -> np.ndarray:
    """Row mask of readable instants; reasons noted for the others."""
    good = np.ones(len(values), dtype=bool)
    blank = _blank(values) if values.dtype == object else values.isna().to_numpy()
    notes.fail(blank, "utc is missing")
    good &= ~blank
    try:
        utc_julian_date(values[good] if pd.api.types.is_datetime64_any_dtype(values.dtype)
                        else values[good].to_numpy(dtype=object))
        return good
    except NavredError:
        pass
    for i in np.flatnonzero(good):
        try:
            utc_julian_date(values.iloc[i])
        except NavredError as exc:
            good[i] = False
            notes.fail([i], [f"utc: {exc}"])
    return good


def _body_column(values: pd.Series, notes: _Notes) -> np.ndarray:
    """Catalogue names of the bodies, each distinct spelling looked up once."""
    codes, spellings = pd.factorize(values.fillna("").astype(str), sort=False)
    names = np.full(len(spellings), "", dtype=object)
    for k, spelling in enumerate(spellings):
        try:
            names[k] = canonical_body_name(spelling)
        except NavredError as exc:
            notes.fail(codes == k, str(exc))
    return names[codes] if len(spellings) else np.full(len(values), "", dtype=object)


def _places_with_dut1(bodies, utc_values, dut1):
    """Almanac places, with DUT1 from the log where a row gives it and from the IERS table elsewhere."""
    given = ~np.isnan(dut1)
    if given.all():
        return places(bodies, utc_values, dut1_s=dut1)
    if not given.any():
        return places(bodies, utc_values)
    table = places(bodies, utc_values)
    from_log = places(bodies[given], utc_values[given], dut1_s=dut1[given])
    merged = {}
    for name in ("gha_aries_deg", "ra_hours", "dec_deg", "distance_km", "hp_arcmin", "sd_arcmin"):
        column = np.array(getattr(table, name), dtype=float)
        column[given] = getattr(from_log, name)
        merged[name] = column
    inst = table.instants
    parts = {}
    for name in INSTANT_FIELDS:
        column = np.array(getattr(inst, name))
        column[given] = getattr(from_log.instants, name)
        parts[name] = column
    return type(table)(body=table.body, instants=type(inst)(**parts), **merged)


def _normalised_words(values: pd.Series, default: str, synonyms: dict | None = None) -> np.ndarray:
    """Lower-case, stripped words of a text column, each distinct spelling handled once."""
    codes, spellings = pd.factorize(values, sort=False)
    words = np.array([(synonyms or {}).get(w, w) for w in (str(v).strip().lower() for v in spellings)]
                     + [default], dtype=object)
    words[words == "nan"] = default
    return words[codes]  # code -1 (missing) picks the default at the end


def _normalised(sights: pd.DataFrame) -> pd.DataFrame:
    """The same data with lower-case column names (no copy of the values)."""
    return sights.set_axis([str(c).strip().lower() for c in sights.columns], axis=1)


#: Rows reduced at a time: a large log is worked in blocks of this many sights (each block
#: vectorised) so that memory stays bounded; the rows are independent, so the result is the same.
BLOCK_ROWS = 200_000


def reduce_sights(sights: pd.DataFrame) -> pd.DataFrame:
    """Reduce raw sights to Ho, Hc, Zn and intercept, one row per sight in input order.

    Columns (case-insensitive): ``utc``, ``body``, ``hs``, ``dr_lat``, ``dr_lon`` are required;
    ``limb`` (lower/upper/centre, LL/UL), ``index_error_arcmin`` (on the arc positive, or
    '2.1 on'/'1.5 off'), ``eye_height_m`` (required for a sea horizon), ``horizon``
    (sea/artificial), ``temperature_c`` and ``pressure_hpa`` (10 °C and 1010 hPa by default)
    are optional. Angles may be decimal degrees or navigational text (``47 12.4 N``).
    Unknown columns are carried through. The added columns are :data:`RESULT_COLUMNS`; an
    input column of the same name (such as the log's own ``dut1_s``) is kept as
    ``"<name> (as read)"``.
    """
    frame = _normalised(sights).reset_index(drop=True)
    added = pd.concat([_reduce_block(frame.iloc[i:i + BLOCK_ROWS].reset_index(drop=True))
                       for i in range(0, max(len(frame), 1), BLOCK_ROWS)], ignore_index=True)
    carried = sights.reset_index(drop=True)
    # an input column named like a result column (a log's own dut1_s, status...) is kept, renamed
    clash = {c: f"{c} (as read)" for c in carried.columns if str(c).strip().lower() in RESULT_COLUMNS}
    return pd.concat([carried.rename(columns=clash), added], axis=1)


def _reduce_block(frame: pd.DataFrame) -> pd.DataFrame:
    """The added columns for one block of sights (lower-case column names, index 0..n-1)."""
    n = len(frame)
    notes = _Notes(n)
    missing = [c for c in REQUIRED if c not in frame.columns]
    for column in missing:
        notes.fail(np.ones(n, dtype=bool), f"required column {column!r} is missing")
    get = {column: frame[column] if column in frame.columns else
           pd.Series(default, index=frame.index, dtype=object if isinstance(default, str) else float)
           for column, default in DEFAULTS.items()}
    good_time = _utc_column(frame["utc"], notes) if "utc" in frame.columns else np.zeros(n, dtype=bool)
    bodies = _body_column(frame["body"], notes) if "body" in frame.columns else np.full(n, "", dtype=object)
    hs = (_parse_column(frame["hs"], lambda v: parse_angle(v, "angle"), "hs", notes)
          if "hs" in frame.columns else np.full(n, np.nan))
    lat = (_parse_column(frame["dr_lat"], lambda v: parse_angle(v, "lat"), "dr_lat", notes)
           if "dr_lat" in frame.columns else np.full(n, np.nan))
    lon = (_parse_column(frame["dr_lon"], lambda v: parse_angle(v, "lon"), "dr_lon", notes)
           if "dr_lon" in frame.columns else np.full(n, np.nan))
    ie = _parse_column(_filled(get["index_error_arcmin"], 0.0), parse_index_error_arcmin,
                       "index_error_arcmin", notes)
    weather = {}
    for column, default in (("temperature_c", 10.0), ("pressure_hpa", 1010.0), ("eye_height_m", np.nan)):
        series = get[column]
        filled = series if column == "eye_height_m" else _filled(series, default)
        weather[column] = pd.to_numeric(filled, errors="coerce").to_numpy(dtype=float)
        unreadable = np.isnan(weather[column]) & ~_blank(series)
        notes.fail(unreadable, f"{column} is not a number")
    dut1 = pd.to_numeric(get["dut1_s"], errors="coerce").to_numpy(dtype=float)
    notes.fail(np.isnan(dut1) & ~_blank(get["dut1_s"]), "dut1_s is not a number of seconds")
    notes.fail(np.abs(np.nan_to_num(dut1)) > 0.9, "dut1_s is outside ±0.9 s (UT1 − UTC never exceeds it)")
    horizon = _normalised_words(get["horizon"], "sea")
    artificial = np.isin(horizon, ["artificial", "bubble", "mercury"])
    notes.fail(~np.isin(horizon, ["artificial", "bubble", "mercury", "sea", "natural", "", "nan"]),
               "horizon must be 'sea' or 'artificial'")
    notes.fail(_blank(get["eye_height_m"]) & ~artificial,
               "eye_height_m is missing (needed for the dip of a sea horizon)")
    limb = _normalised_words(get["limb"], "", {"ll": "lower", "l": "lower", "ul": "upper", "u": "upper",
                                                "center": "centre", "c": "centre"})
    notes.fail(~np.isin(limb, ["lower", "upper", "centre", "", "nan"]), "limb must be lower, upper or centre (LL/UL)")
    has_disc = np.isin(bodies, ["Sun", "Moon"])
    no_limb = np.isin(limb, ["", "nan"])
    notes.warn(has_disc & no_limb & notes.ok, "limb not given: lower limb assumed")
    limb = np.where(has_disc & no_limb, "lower", limb)
    notes.warn(~has_disc & np.isin(limb, ["lower", "upper"]) & notes.ok,
               "limb ignored: only the Sun and Moon show a disc")
    limb = np.where(~has_disc | ~np.isin(limb, ["lower", "upper", "centre"]), "centre", limb)
    notes.fail(~np.isnan(hs) & ((hs < 0) | (hs > 90)), "Hs is outside 0-90°")

    result = {c: np.full(n, np.nan) for c in RESULT_COLUMNS}
    for c in ("body_name", "ut1_source", "intercept_direction", "status", "message"):
        result[c] = np.full(n, "", dtype=object)
    result["sight_utc"] = pd.Series(pd.NaT, index=range(n), dtype="datetime64[ns, UTC]")
    result["body_name"] = bodies
    result["dr_lat_deg"], result["dr_lon_deg"], result["hs_deg"] = lat, lon, hs
    rows = np.flatnonzero(notes.ok & good_time)
    if rows.size:
        utc_values = frame["utc"].iloc[rows]
        if isinstance(utc_values.dtype, pd.DatetimeTZDtype):
            utc_values = utc_values.dt.tz_convert("UTC").dt.tz_localize(None).to_numpy()
        else:
            utc_values = utc_values.to_numpy(dtype=object)
        almanac = _places_with_dut1(bodies[rows], utc_values, dut1[rows])
        hc, zn = computed_altitude_azimuth(lat[rows], lon[rows], almanac.gha_deg, almanac.dec_deg)
        corrections = correct_altitudes(
            hs[rows], index_error_arcmin=ie[rows], eye_height_m=np.nan_to_num(weather["eye_height_m"][rows]),
            horizon=np.where(artificial[rows], "artificial", "sea"), temperature_c=weather["temperature_c"][rows],
            pressure_hpa=weather["pressure_hpa"][rows], limb=limb[rows], sd_arcmin=almanac.sd_arcmin,
            hp_arcmin=almanac.hp_arcmin, augment_sd=bodies[rows] == "Moon", lat_deg=lat[rows], zn_deg=zn)
        result["sight_utc"].iloc[rows] = pd.to_datetime(almanac.instants.utc_datetime64()).tz_localize("UTC")
        values = {
            "dut1_s": almanac.instants.dut1_s, "gha_aries_deg": almanac.gha_aries_deg,
            "sha_deg": almanac.sha_deg, "gha_deg": almanac.gha_deg, "dec_deg": almanac.dec_deg,
            "hp_arcmin": almanac.hp_arcmin, "almanac_sd_arcmin": almanac.sd_arcmin,
            "lha_deg": np.mod(almanac.gha_deg + lon[rows], 360.0), "ic_arcmin": corrections.ic_arcmin,
            "dip_arcmin": corrections.dip_arcmin, "ha_deg": corrections.ha_deg,
            "refraction_arcmin": corrections.refraction_arcmin, "sd_arcmin": corrections.sd_arcmin,
            "parallax_arcmin": corrections.parallax_arcmin, "ho_deg": corrections.ho_deg,
            "hc_deg": hc, "zn_deg": zn,
        }
        for column, value in values.items():
            result[column][rows] = value
        result["ut1_source"][rows] = almanac.instants.ut1_source
        del almanac, values
        failed, cautioned = corrections.error != "", corrections.warning != ""
        notes.fail(rows[failed], corrections.error[failed])
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
        notes.warn(high, "high sight (Hc above 85°): the straight line of position is a poor "
                         "approximation; fix it on the sphere")
    intercept = intercept_nm(result["ho_deg"], result["hc_deg"])
    bad = ~notes.ok
    for column in ("ho_deg", "intercept_nm"):
        result[column] = np.where(bad, np.nan, result[column] if column != "intercept_nm" else intercept)
    result["intercept_direction"] = intercept_direction(result["intercept_nm"])
    result["status"] = np.where(bad, "error", np.where(notes.warning != "", "warning", "ok")).astype(object)
    result["message"] = np.where(bad, notes.error, notes.warning).astype(object)
    return pd.DataFrame({column: result.pop(column) for column in RESULT_COLUMNS})


__all__ = ["reduce_sights", "RESULT_COLUMNS"]
