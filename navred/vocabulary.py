"""The sight vocabulary: one table of the words a sight log uses, for the reader, the reduction and the docs.

Every column a sight log may have is listed once here with its spellings, its unit (and
the other units it may be written in), its accepted range and its default; so are the
words of the trade that fill some columns (limbs, horizons). The log reader matches
headers and words against this table, the reduction takes its defaults from it, and
``docs/sight-log.md`` describes it. A new spelling is one edit here.

Pure data and small pure functions: no I/O, no pandas.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

# --- Units -------------------------------------------------------------------
#: Linear conversions to the unit navred works in: value_used = value_given * factor + offset.
#: 1 ft = 0.3048 m exactly (international foot, 1959); °C = (°F − 32) × 5/9;
#: 1 inHg = 33.8639 hPa and 1 mmHg = 1.33322 hPa at 0 °C (NIST SP 811, from memory).
UNIT_CONVERSIONS: dict[str, tuple[float, float]] = {
    "m": (1.0, 0.0), "ft": (0.3048, 0.0),
    "c": (1.0, 0.0), "f": (5.0 / 9.0, -32.0 * 5.0 / 9.0),
    "hpa": (1.0, 0.0), "inhg": (33.8639, 0.0), "mmhg": (1.33322, 0.0),
    "deg": (1.0, 0.0), "kn": (1.0, 0.0), "s": (1.0, 0.0), "arcmin": (1.0, 0.0), "nm": (1.0, 0.0),
    "s_fast": (1.0, 0.0), "s_slow": (-1.0, 0.0),  # a watch error under a header that states its sign
    "arcmin_on": (1.0, 0.0), "arcmin_off": (-1.0, 0.0),  # an index error under a header that states its sign
}
#: How each unit may be written in a header, normalised (lower case, no spaces or dots).
UNIT_SPELLINGS: dict[str, str] = {
    "m": "m", "metre": "m", "metres": "m", "meter": "m", "meters": "m",
    "ft": "ft", "feet": "ft", "foot": "ft",
    "c": "c", "°c": "c", "degc": "c", "celsius": "c", "ºc": "c",
    "f": "f", "°f": "f", "degf": "f", "fahrenheit": "f", "ºf": "f",
    "hpa": "hpa", "mb": "hpa", "mbar": "hpa", "millibar": "hpa", "millibars": "hpa",
    "inhg": "inhg", "in_hg": "inhg", "inches": "inhg", "inchesofmercury": "inhg",
    "mmhg": "mmhg", "mm_hg": "mmhg", "torr": "mmhg",
    "deg": "deg", "°": "deg", "º": "deg", "degrees": "deg", "degree": "deg", "decimaldegrees": "deg",
    "decimaldeg": "deg", "°′": "deg", "°'": "deg",
    "dm": "deg", "°t": "deg", "t": "deg", "true": "deg", "degt": "deg",
    "kn": "kn", "kt": "kn", "kts": "kn", "knots": "kn", "knot": "kn",
    "s": "s", "sec": "s", "secs": "s", "seconds": "s",
    "arcmin": "arcmin", "′": "arcmin", "'": "arcmin", "min": "arcmin", "minutes": "arcmin",
    "nm": "nm", "nmi": "nm", "nautical_miles": "nm", "miles": "nm",
}
#: How a header states the sign convention of its watch errors (the words in its brackets, spaces dropped,
#: lower case): 'fast' when + means the watch is fast (an error, subtracted), 'slow' when + means it is slow
#: (a correction, added). Without one, a signed watch error has two readings and is refused.
WATCH_SIGN_WORDS = {"fast+": "fast", "+fast": "fast", "fast=+": "fast", "+=fast": "fast", "fastpositive": "fast",
                    "slow-": "fast", "-slow": "fast", "slow=-": "fast", "slownegative": "fast",
                    "slow+": "slow", "+slow": "slow", "slow=+": "slow", "+=slow": "slow", "slowpositive": "slow",
                    "fast-": "slow", "-fast": "slow", "fast=-": "slow", "fastnegative": "slow"}

#: How a header states the sign convention of its index errors (the words in its brackets, spaces dropped, lower
#: case): 'on' when + means on the arc (subtracted), 'off' when + means off the arc (added). Without one, a bare
#: index error has two readings (textbooks write both: common practice) and is refused; the programmatic name
#: index_error_arcmin is itself the statement (ON the arc positive).
INDEX_SIGN_WORDS = {"on+": "on", "+on": "on", "on=+": "on", "+=on": "on", "onpositive": "on",
                    "off-": "on", "-off": "on", "off=-": "on", "offnegative": "on",
                    "off+": "off", "+off": "off", "off=+": "off", "+=off": "off", "offpositive": "off",
                    "on-": "off", "-on": "off", "on=-": "off", "onnegative": "off"}


UNIT_NAMES = {"m": "metres", "ft": "feet", "c": "°C", "f": "°F", "hpa": "hPa", "inhg": "inHg",
              "mmhg": "mmHg", "deg": "degrees", "kn": "knots", "s": "seconds", "arcmin": "arcminutes",
              "nm": "nautical miles", "s_fast": "seconds, fast +", "s_slow": "seconds, slow +",
              "arcmin_on": "arcminutes, on the arc +", "arcmin_off": "arcminutes, off the arc +"}


@dataclass(frozen=True)
class Column:
    """One sight-log column: its key, the headers that name it, its unit and its range."""

    key: str
    spellings: tuple[str, ...]
    kind: str
    meaning: str
    #: units it may be given in (the first is the unit navred works in); () for no unit
    units: tuple[str, ...] = ()
    #: the unit taken when the header names none; None: the header must name one
    default_unit: str | None = None
    low: float | None = None
    high: float | None = None
    default: object = None
    required: bool = False
    #: spelling with its unit built in ('eye_height_m' -> ('eye_height', 'm')), added automatically
    extra: dict = field(default_factory=dict)


COLUMNS: tuple[Column, ...] = (
    Column("utc", ("utc", "gmt", "utc_time", "time_utc", "date_time_utc", "sight_utc"), "utc",
           "the instant of the sight: ISO 8601 with Z or an offset, or a spreadsheet date-time cell (taken as UTC)"),
    Column("date", ("date", "zone_date", "ships_date", "local_date"), "date",
           "the ship's date of the sight, for zone time: ISO 8601 (2026-03-26) or a date cell"),
    Column("zone_time", ("zone_time", "zt", "watch_time", "watch_reading"), "time",
           "the time read on the watch, which keeps the zone time of zone_description (hh:mm:ss)"),
    Column("zone_description", ("zone_description", "zd", "zone"), "zone",
           "the zone the watch keeps: a whole signed hour, ZT + ZD = UTC (+3, -10, +1 N, 0, Z)"),
    Column("watch_error", ("watch_error", "chronometer_error", "deck_watch_error", "dwe"),
           "watch_error", "the watch's error: '12 fast', '3 s slow', '1 m 05 s fast'; a number or a signed one only under a "
           "header that states the sign, 'watch error (fast +)' or '(slow +)'; otherwise refused (fast or slow?)",
           units=("s", "s_fast", "s_slow"), default_unit="s", low=-3600.0, high=3600.0, default=0.0),
    Column("timepiece", ("timepiece", "chronometer", "chronometer_name", "watch_name"), "text",
           "the timepiece read for zone_time; with a rating log (--rates) and no watch_error, its error is "
           "predicted from its time signals"),
    Column("body", ("body", "body_name", "celestial_body"), "body",
           "Sun, Moon, Venus, Mars, Jupiter, Saturn or a navigational star (navred bodies)", required=True),
    Column("limb", ("limb",), "limb", "lower, upper or centre (LL, UL); Sun and Moon only"),
    Column("hs", ("hs", "sextant_altitude", "sextant_alt", "sextant_reading"), "altitude",
           "the sextant reading: decimal degrees or DD MM.m (0-90°; to 180° for an artificial horizon or a "
           "back sight)", units=("deg",), default_unit="deg", low=0.0, high=180.0, required=True),
    Column("index_error", ("index_error", "ie"), "index_error",
           "index error as read: '1.4 on', '0.8 off'; a number or a signed one only under a header that states "
           "the sign, 'IE (on +)' or 'IE (off +)', or named index_error_arcmin (ON the arc positive); otherwise "
           "refused (on or off?)",
           units=("arcmin", "arcmin_on", "arcmin_off"), default_unit="arcmin", low=-30.0, high=30.0, default=0.0),
    Column("eye_height", ("eye_height", "height_of_eye", "hoe", "eye"), "number",
           "height of eye above the sea, in metres or feet (the header names which)",
           units=("m", "ft"), low=0.0, high=1000.0),
    Column("horizon", ("horizon",), "horizon",
           "sea (the default), artificial (reflecting: the reading is twice the altitude), bubble, back (a back "
           "sight) or waterline (dip short of the horizon)", default="sea"),
    Column("waterline_distance", ("waterline_distance", "waterline", "distance_to_waterline", "shore_distance",
                                  "dip_short_distance"), "number",
           "for a waterline horizon: the distance to the waterline below the body, nautical miles",
           units=("nm",), default_unit="nm", low=0.0, high=50.0),
    Column("measured_dip", ("measured_dip", "dip_measured", "dip_meter"), "number",
           "a dip meter's measurement, used instead of the dip formula (arcminutes)",
           units=("arcmin",), default_unit="arcmin", low=0.0, high=60.0),
    Column("temperature", ("temperature", "temp", "air_temperature"), "number",
           "air temperature, for refraction, in °C or °F (the header names which)",
           units=("c", "f"), low=-50.0, high=60.0, default=10.0),
    Column("pressure", ("pressure", "air_pressure", "barometer", "baro"), "number",
           "air pressure, for refraction, in hPa (mb), inHg or mmHg (the header names which)",
           units=("hpa", "inhg", "mmhg"), low=850.0, high=1100.0, default=1010.0),
    Column("sigma", ("sigma", "sight_sigma", "standard_error", "std_error"), "number",
           "the sight's own standard error (arcminutes), weighting it in the fix by 1/σ² against the others: a "
           "low sight, the Moon, a doubtful horizon (2′, say); blank: a sight as good as any (1′, its weight "
           "relative; the fix still judges the whole round's error by its scatter)",
           units=("arcmin",), default_unit="arcmin", low=0.1, high=30.0),
    Column("dr_lat", ("dr_lat", "dr_latitude", "lat_dr", "latitude_dr"), "lat",
           "DR latitude at the sight: 43 14.1 N, or a signed decimal (north positive, ISO 6709); blank: carried "
           "from the log's departure or last known position (an entry row); on a departure or position entry: "
           "the position"),
    Column("dr_lon", ("dr_lon", "dr_long", "dr_longitude", "lon_dr", "long_dr", "longitude_dr"), "lon",
           "DR longitude at the sight: 013 03.7 W, or a signed decimal (east positive, ISO 6709); blank: carried "
           "as the latitude"),
    Column("course", ("course", "course_steered", "course_true"), "number",
           "course (degrees true) steered through the water, in force from this sight until the next",
           units=("deg",), default_unit="deg", low=0.0, high=360.0),
    Column("speed", ("speed", "speed_through_water", "log_speed"), "number",
           "speed through the water (knots) in force from this sight until the next (a speed made good over "
           "the ground is not one: see MADE_GOOD_HEADERS)", units=("kn",), default_unit="kn",
           low=0.0, high=60.0),
    Column("entry", ("entry", "event", "log_entry"), "entry",
           "a row that is not a sight but an entry of the ship's progress: departure or position (a known "
           "position in dr_lat/dr_lon, restarting the DR), course (a new course and/or speed), current (a set and "
           "drift to carry in the DR)"),
    Column("set", ("set", "current_set", "set_of_current"), "number",
           "the set of a current (degrees true, the way it runs), on a current entry", units=("deg",),
           default_unit="deg", low=0.0, high=360.0),
    Column("drift", ("drift", "current_drift", "rate_of_current"), "number",
           "the drift of a current (knots), on a current entry (0 ends it)", units=("kn",), default_unit="kn",
           low=0.0, high=15.0),
    Column("compass_course", ("compass_course", "course_compass", "course_by_compass", "compass_heading",
                              "heading_compass"), "number",
           "on a course entry: the course steered by the magnetic compass (degrees compass), made true through its "
           "deviation (the row's, or the deviation card's with --card) and the variation", units=("deg",),
           default_unit="deg", low=0.0, high=360.0),
    Column("deviation", ("deviation", "compass_deviation", "dev"), "east_west",
           "on a course entry: the compass's deviation on that heading, east or west ('3 E', '2.5 W', or signed "
           "east +); blank: from the deviation card (--card)", units=("deg",), default_unit="deg", low=-30.0,
           high=30.0),
    Column("variation", ("variation", "magnetic_variation", "var", "declination_magnetic"), "east_west",
           "on a course entry: the magnetic variation, east or west ('12 W', '4.5 E', or signed east +)",
           units=("deg",), default_unit="deg", low=-180.0, high=180.0),
    Column("leeway", ("leeway", "leeway_angle"), "leeway",
           "on a course entry: the leeway, degrees, and the side the ship is set to ('5 port', '4 stbd'), or "
           "degrees alone with the wind's side (wind_side)", units=("deg",), default_unit="deg", low=0.0,
           high=45.0),
    Column("wind_side", ("wind_side", "wind_on", "tack", "wind_on_side"), "side",
           "the side the wind blows on (port or starboard): the leeway is to the other side"),
    Column("log_reading", ("log_reading", "log_nm", "patent_log", "log_distance", "log_miles"), "number",
           "on an entry row: the ship's log (distance run through the water, nautical miles, as the log reads); the "
           "speed between two readings is their difference over the time", units=("nm",), default_unit="nm",
           low=0.0, high=10_000_000.0),
    Column("clocks", ("clocks", "clock_change", "clocks_to", "new_zone", "new_zone_description", "ship_zone"),
           "clocks",
           "on a clocks entry: the zone the ship's clocks keep from this instant ('+3', '-12 M'), or the change "
           "('advance 1 h', 'retard 1 h')"),
    Column("role", ("role", "sight_role", "keeps_dr"), "role",
           "whose sight: ship (the ship's navigator: its fixes keep the DR and the noon) or exercise (a training "
           "sight: reduced, fixed and compared with the ship's position, never restarting the DR)"),
    Column("fix_group", ("fix_group", "fix_id"), "text",
           "sights fixed together; blank: one observer's sights within two hours of each other"),
    Column("chart_lat", ("chart_lat", "chart_latitude", "gnss_lat", "gps_lat", "gnss_latitude", "gps_latitude"),
           "lat", "a chart or GNSS latitude at this sight, to cross-check the fix"),
    Column("chart_lon", ("chart_lon", "chart_long", "chart_longitude", "gnss_lon", "gps_lon", "gnss_longitude",
                         "gps_longitude"), "lon", "a chart or GNSS longitude at this sight, to cross-check the fix"),
    Column("mark", ("mark", "charted_object", "landmark", "mark_name"), "text",
           "a charted object (a light, a headland, a beacon) observed at landfall: the row is a bearing or a "
           "radar range of it, not a sight (body and hs blank); its position in mark_lat/mark_lon"),
    Column("mark_lat", ("mark_lat", "mark_latitude", "landmark_lat"), "lat",
           "the charted latitude of the mark"),
    Column("mark_lon", ("mark_lon", "mark_long", "mark_longitude", "landmark_lon"), "lon",
           "the charted longitude of the mark"),
    Column("bearing", ("bearing", "true_bearing", "bearing_true", "visual_bearing"), "number",
           "on a mark row: the true bearing of the mark from the ship (degrees true; a compass bearing made true "
           "first)", units=("deg",), default_unit="deg", low=0.0, high=360.0),
    Column("range", ("range", "radar_range", "range_nm", "distance_off"), "number",
           "on a mark row: the radar range of the mark (nautical miles)", units=("nm",), default_unit="nm",
           low=0.0, high=60.0),
    Column("bearing_sigma", ("bearing_sigma", "bearing_sd", "bearing_error"), "number",
           "on a mark row: the bearing's standard error (degrees); blank: 1°", units=("deg",), default_unit="deg",
           low=0.01, high=20.0),
    Column("range_sigma", ("range_sigma", "range_sd", "range_error"), "number",
           "on a mark row: the range's standard error (nautical miles); blank: 1 % of the range, at least 0.02 nm",
           units=("nm",), default_unit="nm", low=0.001, high=5.0),
    Column("dut1", ("dut1", "ut1_utc", "ut1_minus_utc"), "number",
           "UT1 − UTC from a radio time signal (seconds); blank: the IERS table",
           units=("s",), default_unit="s", low=-0.9, high=0.9),
    Column("vessel", ("vessel", "ship", "vessel_name"), "text", "the vessel (separates automatic fix groups)"),
    Column("observer", ("observer", "navigator", "cadet", "observer_name"), "name",
           "who took the sight (case and spacing do not matter)"),
    Column("voyage", ("voyage", "passage"), "text", "the voyage or passage"),
    Column("series", ("series", "series_id"), "text", "sights of one body taken as one series"),
)
COLUMN = {c.key: c for c in COLUMNS}

#: Headers too ambiguous to guess: each names its possible readings.
AMBIGUOUS_HEADERS = {
    "time": ("UTC or the ship's zone time? the two are hours apart: head it 'Zone time' (the ship's clock, read "
             "with the date and the zone description, ZD) or 'UTC' (each cell the whole instant, 2026-12-04T22:15Z)"),
    "lat": "a DR latitude (dr_lat) or a chart/GNSS latitude (chart_lat)?",
    "latitude": "a DR latitude (dr_lat) or a chart/GNSS latitude (chart_lat)?",
    "lon": "a DR longitude (dr_lon) or a chart/GNSS longitude (chart_lon)?",
    "long": "a DR longitude (dr_lon) or a chart/GNSS longitude (chart_lon)?",
    "longitude": "a DR longitude (dr_lon) or a chart/GNSS longitude (chart_lon)?",
    "error": "the watch error (watch_error) or the index error (index_error)?",
}

#: Headers navred itself adds to the logs it writes (the 'Sights as read' sheet): bookkeeping, not data.
BOOKKEEPING_HEADERS = ("row_in_log", "source_file")

#: Columns that ``reduce_sights`` adds: a table that has them is navred's own output, read back.
OUTPUT_SUFFIX = "(as read)"

#: The columns the reduction (``navred.reduce_sights``) adds to the parsed sights, in order (documented in
#: docs/sight-log.md); the reader knows them so that a log of reduced rows read back is read as one.
RESULT_COLUMNS = (
    "dut1_s", "ut1_source", "gha_aries_deg", "sha_deg", "gha_deg", "dec_deg", "hp_arcmin", "almanac_sd_arcmin",
    "lha_deg", "ic_arcmin", "horizon_arcmin", "dip_arcmin", "ha_deg", "refraction_arcmin", "sd_arcmin",
    "parallax_arcmin", "phase_angle_deg", "phase_arcmin", "line_sigma_nm", "ho_deg", "hc_deg", "zn_deg", "intercept_nm",
    "intercept_direction", "status", "message", "error_column",
)

#: The column of a reduced table that holds each sight's DR's age (hours; NaN: the log does not date it), added by
#: ``navred.reduce_sights`` and ``navred.process_log``: the fix takes it for its check against the DR whichever
#: way it is called (``navred.fix_positions`` as the commands).
DR_AGE_COLUMN = "dr_age_h"
#: The columns of a reduced table that hold the current in force at each sight as the log's DR keeps it (its current
#: entries; set in degrees true, drift in knots; 0 kn where none), added beside :data:`DR_AGE_COLUMN`: the fix
#: advances the lines of a running fix through it whichever way it is called.
CURRENT_SET_COLUMN, CURRENT_DRIFT_COLUMN = "current_set_deg", "current_drift_kn"
#: What the fix takes from the DR kept along the log, per reduced row (see above).
DR_CONTEXT_COLUMNS = (DR_AGE_COLUMN, CURRENT_SET_COLUMN, CURRENT_DRIFT_COLUMN)

# --- Words of the trade ----------------------------------------------------------
LIMBS = {"lower": "lower", "ll": "lower", "l": "lower", "lower_limb": "lower",
         "upper": "upper", "ul": "upper", "u": "upper", "upper_limb": "upper",
         "centre": "centre", "center": "centre", "c": "centre", "": ""}
#: The horizons navred reduces, and the words that name them. sea: the visible sea horizon;
#: artificial: a reflecting horizon (mercury, water, glass), read as twice the altitude; bubble: a
#: bubble or other built-in horizon, on the body's centre; back: a back sight, measured over the
#: zenith from the sea horizon behind; waterline: a waterline nearer than the sea horizon (a shore,
#: a ship), its distance given.
HORIZONS = {"sea": "sea", "natural": "sea", "visible": "sea", "": "sea", "nan": "sea",
            "artificial": "artificial", "mercury": "artificial", "reflecting": "artificial", "art": "artificial",
            "water": "artificial", "glass": "artificial",
            "bubble": "bubble", "built_in": "bubble", "builtin": "bubble",
            "back": "back", "back_sight": "back", "backsight": "back",
            "waterline": "waterline", "short": "waterline", "shore": "waterline", "dip_short": "waterline",
            "short_of_horizon": "waterline"}

#: Words that say there was no horizon: refused with what to write instead (a sight needs a horizon of some kind).
NO_HORIZON = ("none", "no", "no_horizon", "n_a", "na", "without", "nil")

#: The entries of the ship's progress a log may hold beside its sights, and the words that name them.
ENTRIES = {"departure": "departure", "depart": "departure", "departed": "departure", "start": "departure",
           "position": "position", "known_position": "position", "fix": "position", "landfall": "position",
           "course": "course", "alter_course": "course", "course_change": "course", "a_c": "course",
           "speed": "course", "current": "current", "set_and_drift": "current",
           "clocks": "clocks", "clock": "clocks", "clocks_changed": "clocks", "zone_change": "clocks",
           "date_line": "clocks", "log": "log", "log_reading": "log", "destination": "destination",
           "bound_for": "destination"}

#: Whose sight a row is (the role column): the ship's navigator's, or a training exercise's.
ROLES = {"ship": "ship", "ships": "ship", "navigator": "ship", "ships_navigator": "ship", "officer": "ship",
         "exercise": "exercise", "training": "exercise", "practice": "exercise", "cadet": "exercise"}

#: The side of the ship (the wind's, or the way the leeway sets her).
SIDES = {"port": "port", "p": "port", "larboard": "port", "starboard": "starboard", "stbd": "starboard",
         "stb": "starboard", "sb": "starboard"}

#: Nautical time-zone letters and their zone descriptions (ZT + ZD = UTC): A-M (no J) are the
#: zones east of Greenwich, −1 to −12; N-Y those west, +1 to +12; Z is zero (common practice).
ZONE_LETTERS = {**{letter: -(i + 1) for i, letter in enumerate("ABCDEFGHIKLM")},
                **{letter: i + 1 for i, letter in enumerate("NOPQRSTUVWXY")}, "Z": 0}


def normalise_header(text: object) -> str:
    """A header as navred compares it: lower case, spaces, hyphens and dots as single underscores.

    >>> normalise_header("  Height of eye ")
    'height_of_eye'
    >>> normalise_header("Ship's Date")
    'ships_date'
    """
    words = str(text).strip().lower().replace("’", "").replace("'", "")
    return re.sub(r"[\s\-./_]+", "_", words).strip("_")


_UNIT_IN_BRACKETS = re.compile(r"^(?P<name>.*?)\s*[(\[](?P<unit>[^)\]]*)[)\]]\s*$")


@dataclass(frozen=True)
class HeaderMatch:
    """What a header names: a column of the vocabulary and its unit, or why it is refused."""

    header: str
    key: str | None
    unit: str | None
    problem: str = ""


def _spellings() -> dict[str, str]:
    table = {}
    for column in COLUMNS:
        for spelling in column.spellings:
            table[spelling] = column.key
    return table


_SPELLINGS = _spellings()


def match_header(header: object) -> HeaderMatch:
    """Which column a header names, and in which unit: ``eye height (ft)``, ``Eye_Height_M``, ``HoE [m]``.

    A header that names no column of the vocabulary has key None (the column is carried
    through as it is); a header too ambiguous to read, or with a unit its column does not
    take, has a problem.

    >>> match_header("Eye height (ft)").key, match_header("Eye height (ft)").unit
    ('eye_height', 'ft')
    >>> match_header("temperature_c").unit
    'c'
    """
    text = str(header).strip()
    unit_text = None
    found = _UNIT_IN_BRACKETS.match(text)
    if found and found.group("name"):
        text, unit_text = found.group("name"), found.group("unit")
    name = normalise_header(text)
    key = _SPELLINGS.get(name)
    if key is None and "_" in name:
        # a unit written into the name: eye_height_m, temperature_f, speed_kn
        stem, _, last = name.rpartition("_")
        if _SPELLINGS.get(stem) and UNIT_SPELLINGS.get(last) in COLUMN[_SPELLINGS[stem]].units:
            key, unit_text = _SPELLINGS[stem], last
    if key is None and "_" in name:
        # a latitude or longitude named in decimal degrees: dr_lat_deg, chart_lon_degrees
        stem, _, last = name.rpartition("_")
        if _SPELLINGS.get(stem) and COLUMN[_SPELLINGS[stem]].kind in ("lat", "lon") and last in ("deg", "degrees"):
            key = _SPELLINGS[stem]
    if key is None:
        if name in AMBIGUOUS_HEADERS and unit_text is None:
            return HeaderMatch(str(header), None, None, f"header {str(header)!r} is ambiguous: "
                               f"{AMBIGUOUS_HEADERS[name]}")
        return HeaderMatch(str(header), None, None)
    column = COLUMN[key]
    if key == "watch_error" and unit_text is not None:
        return _watch_error_header(str(header), unit_text)
    if key == "index_error" and name == "index_error_arcmin":
        return HeaderMatch(str(header), key, "arcmin_on")  # the API's name: ON the arc positive, documented
    if key == "index_error" and unit_text is not None:
        return _index_error_header(str(header), unit_text)
    if unit_text is not None and column.units:
        unit = UNIT_SPELLINGS.get(re.sub(r"[\s.]+", "", unit_text.lower()))
        if unit not in column.units:
            accepted = ", ".join(UNIT_NAMES[u] for u in column.units)
            return HeaderMatch(str(header), key, None, f"header {str(header)!r}: unit {unit_text!r} is not one "
                               f"navred takes for {key.replace('_', ' ')}; accepted: {accepted}")
        return HeaderMatch(str(header), key, unit)
    if column.units and column.default_unit is None:
        accepted = " or ".join(f"'{key.replace('_', ' ')} ({u})'" for u in column.units)
        return HeaderMatch(str(header), key, None, f"header {str(header)!r} gives no unit and "
                           f"{key.replace('_', ' ')} may be in {' or '.join(UNIT_NAMES[u] for u in column.units)}: "
                           f"name it {accepted}")
    return HeaderMatch(str(header), key, column.default_unit)


#: the units in a header that declare its angles decimal degrees ('Hs (deg)', 'hs_deg', 'DR lat (decimal degrees)')
DECIMAL_DEGREE_UNITS = frozenset({"deg", "degrees", "degree", "°", "º", "decimaldegrees", "decimaldeg"})


def declares_decimal_degrees(header: object) -> bool:
    """Whether a header states that its column's angles are decimal degrees: a unit in brackets ('Hs (deg)',
    'DR lat [°]') or at the end of its name ('hs_deg', 'dr_lat_degrees'). Under such a header '35.30' is 35.30°;
    under any other an angle written with two decimals that could be minutes is refused (docs/sight-log.md).

    >>> declares_decimal_degrees("Hs (deg)"), declares_decimal_degrees("hs_deg"), declares_decimal_degrees("Hs")
    (True, True, False)
    >>> declares_decimal_degrees("Hs (°′)")
    False
    """
    text = str(header).strip()
    found = _UNIT_IN_BRACKETS.match(text)
    if found and found.group("name"):
        return re.sub(r"[\s._-]+", "", found.group("unit").lower()) in DECIMAL_DEGREE_UNITS
    name = normalise_header(text)
    return "_" in name and name.rpartition("_")[2] in ("deg", "degrees")


def _watch_error_header(header: str, unit_text: str) -> HeaderMatch:
    """A watch error's header with brackets: the unit (seconds) and the sign convention it states, if any
    ('watch error (fast +)' -> 's_fast'; '(slow +)' -> 's_slow'; '(s)' -> 's', no convention)."""
    return _signed_header(header, unit_text, "watch_error", "s", WATCH_SIGN_WORDS, (
        "is neither seconds nor a sign convention navred reads; accepted: 'watch error (s)', or with the sign "
        "stated, 'watch error (fast +)' (+ a fast watch, subtracted) or 'watch error (slow +)' (+ a slow watch, "
        "added)"))


def _index_error_header(header: str, unit_text: str) -> HeaderMatch:
    """An index error's header with brackets: the unit (arcminutes) and the sign convention it states, if any
    ('IE (on +)' -> 'arcmin_on'; '(off +)' -> 'arcmin_off'; "(′)" -> 'arcmin', no convention)."""
    return _signed_header(header, unit_text, "index_error", "arcmin", INDEX_SIGN_WORDS, (
        "is neither arcminutes nor a sign convention navred reads; accepted: 'IE (′)', or with the sign stated, "
        "'IE (on +)' (+ on the arc, subtracted) or 'IE (off +)' (+ off the arc, added)"))


def _signed_header(header: str, unit_text: str, key: str, unit: str, sign_words: dict[str, str],
                   refusal: str) -> HeaderMatch:
    """A header whose brackets give the unit and may state the sign convention of a quantity written both ways
    (the watch error, the index error): the unit, or the unit with the convention ('s_fast', 'arcmin_on')."""
    words = [w for w in re.split(r"[,;]", re.sub(r"\s+", "", unit_text.lower().replace("−", "-"))) if w]
    sign = None
    for word in words:
        if word in sign_words and sign is None:
            sign = sign_words[word]
        elif UNIT_SPELLINGS.get(word) == unit:
            continue
        else:
            return HeaderMatch(header, key, None, f"header {header!r}: {unit_text!r} {refusal}")
    return HeaderMatch(header, key, unit if sign is None else f"{unit}_{sign}")


#: Headers that look like a correction navred applies, or a quantity it reads, yet are none of its
#: spellings: read by no rule, such a column would be left out without a word and its default used
#: (0′ of index error, 10 °C, 1010 hPa), or read with the wrong sign (an index correction is minus the
#: index error). Each is refused with the column navred reads it from. (pattern on the normalised header
#: with any unit dropped, the column, what navred expects there)
LOOKALIKE_HEADERS: tuple[tuple[str, str, str], ...] = (
    (r"i_?c|i_?e|ie_\w*|ic_\w*|idx\w*|index\w*|\w*_index|ind_?err\w*|\w*index_?(?:err|corr?)\w*", "the index error",
     "index_error (arcminutes with their side: '1.4 on', '0.8 off'; signed numbers under 'IE (on +)' or "
     "'IE (off +)', or in a column named index_error_arcmin, ON the arc positive; an index correction is the index "
     "error with its sign changed)"),
    (r"\w*temp\w*|\w*therm\w*|t_?air|air_?t|oat", "the air temperature",
     "temperature (C) or temperature (F), for refraction"),
    (r"\w*press\w*|\w*baro\w*|qnh|qfe|mb|mbar|hpa|millibars?", "the air pressure",
     "pressure (hPa), pressure (inHg) or pressure (mmHg), for refraction"),
    (r"\w*height\w*|\w*hgt\w*|\w*eye\w*|h_?e|hoe_?\w*", "the height of eye",
     "eye_height (m) or eye_height (ft), for the dip"),
    (r"dip|dip_\w*|\w*_dip", "a dip", "measured_dip (a dip meter's reading in arcminutes; without one navred "
                                    "works out the dip from eye_height)"),
    (r"\w*watch_?err\w*|\w*chrono\w*_?err\w*|\w*clock_?err\w*|w_?e|c_?e", "the watch error",
     "watch_error ('12 fast', '3 s slow', or seconds with a sign)"),
    (r"dut\w*|ut1\w*", "DUT1", "dut1 (UT1 − UTC in seconds, from a radio time signal)"),
)
#: Headers of a motion made good over the ground (a satellite receiver's COG and SOG, a day's run): the DR's
#: course and speed are through the water, and the current is entered apart, so a made-good quantity read as
#: one would count the current twice. No spelling maps one onto the other: each is refused with what to give.
MADE_GOOD_HEADERS = re.compile(r"\w*made_?good\w*|[cs]_?m_?g|[cs]_?o_?g|\w*over_?(?:the_?)?ground\w*|"
                               r"ground_?(?:speed|course|track)\w*|gnss_?(?:speed|course)\w*|"
                               r"gps_?(?:speed|course)\w*")
MADE_GOOD_REFUSAL = ("column {header!r} looks like a course or speed made good over the ground; navred's course and "
                     "speed are through the water (the current goes on an entry row: entry current, set, drift), so "
                     "it does not read one as the other: give course (steered, true) and speed (through the water), "
                     "or rename the column")
#: What a refusal of a column adds once: how to keep a column of one's own that looks like one navred reads.
OWN_COLUMN_HINT = ("a column of your own that navred should not read keeps its text when its name begins with "
                   "'note' or 'remark'")
#: A header that begins with one of these is the navigator's own column: kept as text, never refused.
OWN_COLUMN_PREFIXES = ("note", "remark", "comment", "own_")
_UNIT_TAIL = re.compile(r"_(?:m|ft|c|f|hpa|mb|mbar|inhg|mmhg|deg|degrees|kn|kt|kts|s|sec|arcmin|min|nm|t)$")


def unknown_header_refusal(header: object, accepted: dict[str, str] | None = None) -> str:
    """Why a header that names no column is refused ('' when it is kept as the navigator's own text).

    A header that looks like a correction or a quantity navred reads (:data:`LOOKALIKE_HEADERS`) is
    refused with the column navred expects; one within a letter or two of a spelling (a misspelling,
    ``obsever``) is refused with that spelling. ``accepted`` maps other spellings to their column
    names (another table's vocabulary, such as the rating log's); by default the sight log's.

    >>> unknown_header_refusal("remarks")
    ''
    >>> unknown_header_refusal("IC").split(" (")[0]
    "column 'IC' looks like the index error, which navred reads only from a column named index_error"
    >>> unknown_header_refusal("obsever").split(" rename")[0]
    "column 'obsever' is not a column navred reads: is it 'observer'?"
    """
    import difflib

    text = str(header).strip()
    found = _UNIT_IN_BRACKETS.match(text)
    if found and found.group("name"):
        text = found.group("name")
    name = normalise_header(text)
    if not name or name.startswith(OWN_COLUMN_PREFIXES):
        return ""
    stem = _UNIT_TAIL.sub("", name)
    own = ""
    if accepted is None and (MADE_GOOD_HEADERS.fullmatch(stem) or MADE_GOOD_HEADERS.fullmatch(name)):
        return MADE_GOOD_REFUSAL.format(header=str(header))
    if accepted is None:
        for pattern, what, expected in LOOKALIKE_HEADERS:
            if re.fullmatch(pattern, stem) or re.fullmatch(pattern, name):
                return (f"column {str(header)!r} looks like {what}, which navred reads only from a column named "
                        f"{expected}: rename it{own}")
        accepted = _SPELLINGS
    if len(stem) >= 4:
        near = difflib.get_close_matches(stem, list(accepted), n=1, cutoff=0.85)
        if near:
            column = accepted[near[0]]
            also = f" (the column {column})" if column != near[0] else ""
            return (f"column {str(header)!r} is not a column navred reads: is it {near[0]!r}{also}? rename it"
                    f"{own}")
    return ""


def convert_to_working_unit(value: float, unit: str | None) -> float:
    """A number given in ``unit`` converted to the unit navred works in."""
    if unit is None:
        return value
    factor, offset = UNIT_CONVERSIONS[unit]
    return value * factor + offset


__all__ = ["INDEX_SIGN_WORDS", "COLUMNS", "COLUMN", "Column", "HeaderMatch", "match_header", "normalise_header", "LIMBS", "ENTRIES",
           "ROLES", "SIDES",
           "NO_HORIZON",
           "LOOKALIKE_HEADERS", "MADE_GOOD_HEADERS", "MADE_GOOD_REFUSAL", "OWN_COLUMN_PREFIXES", "OWN_COLUMN_HINT",
           "unknown_header_refusal",
           "HORIZONS", "ZONE_LETTERS", "UNIT_CONVERSIONS", "convert_to_working_unit"]
