"""navred paper: the printed backup of a passage, for the day the computer fails.

Edge code: it takes the core's numbers (:mod:`navred.handtables`, :mod:`navred.presets`,
:mod:`navred.plan`) and sets them as pages (:mod:`navred.io.printed`): every table's cells are
the texts printed, and the same texts go to the CSV files. The pages, in order:

1. the passage and how to use the paper (the rule of interpolation, the time, what each page is);
2. for each UTC date, the hourly GHA and Dec of Aries, the Sun, the Moon (with HP and its hourly
   changes) and the four planets, with a worked interpolation from that page;
3. the stars' SHA and Dec, in blocks of three days;
4. the altitude corrections (dip, refraction and its factor, the Sun's SD, the Moon's parallax and
   SD, Venus's and Mars's parallax and phase);
5. for each zone date (the ship's date), the twilight sights planned along the DR (Hc, Zn, their change per
   minute, how long that holds, the Hs to preset, the limb) and the noon Sun;
6. the noon Sun for every day; the Polaris latitude table; the calculator's formulas with a
   worked sight;
7. blank forms: the hand working, a plotting sheet for each degree of latitude of the passage, a
   page of the DR log.
"""

from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass
from os import PathLike
from typing import TYPE_CHECKING

import numpy as np

from ..angles import wrap_360
from ..constants import ARCMIN_PER_DEG, NS_PER_HOUR
from ..errors import NavredError, api_boundary
from ..handtables import (
    MAX_DAYS,
    POLARIS_BLOCK_DAYS,
    HourlyTable,
    StarBlock,
    daily_figures,
    daily_places,
    dip_rows,
    hourly_table,
    interpolate_printed,
    moon_augmentation_grid,
    moon_parallax_grid,
    moon_sd_rows,
    polaris_table,
    refraction_factor_grid,
    refraction_rows,
    star_blocks,
)
from ..io.cautions import CAUTION
from ..io.printed import Document, Drawing, Page, Side, Table, Text
from ..sightplan import track_twilight_plans
from .bridge import (
    NoonSun,
    PlannedTwilight,
    dm,
    hm,
    long_date,
    noon_suns,
    planned_rounds,
    provenance_line,
    signed,
    to_minute,
    utc_stamp,
    zone_text,
)
from .passagedr import PassageDR, departure_dr, log_passage_dr, route_passage_dr

if TYPE_CHECKING:
    from ..io.logbook import LogSource, SightLog
    from ..io.timesignals import Ratings
    from ..io.waypoints import Waypoints
    from ..timescales import Instant

#: A date of the passage: '2026-03-26', a datetime.date or a numpy datetime64 (its UTC date).
DateGiven = str | _dt.date | np.datetime64

PLANETS = ("Venus", "Mars", "Jupiter", "Saturn")
#: The most days a paper is made for at once: its hourly pages may need a UTC date either side (far east or west).
PASSAGE_MAX_DAYS = MAX_DAYS - 2


@dataclass(frozen=True)
class PassagePaper:
    """The printed backup: the document, and the numbers it was set from (``dr`` the DR it was planned along)."""

    document: Document
    hourly: HourlyTable
    stars: tuple[StarBlock, ...]
    twilights: tuple[PlannedTwilight, ...]
    noons: tuple[NoonSun, ...]
    first_date: np.datetime64
    days: int
    dr: PassageDR | None = None


@api_boundary
def passage_paper(first_date: DateGiven, last_date: DateGiven, lat_deg: float | None = None,
                  lon_deg: float | None = None, *, course_deg: float | None = None, speed_kn: float | None = None,
                  route: str | PathLike[str] | Waypoints | None = None, depart: Instant | None = None,
                  log: LogSource | SightLog | None = None, vessel: str | None = None, dates: str | None = None,
                  rates: Ratings | None = None,
                  carry_current: bool = False, eye_height_m: float = 0.0, index_error_arcmin: float = 0.0,
                  zone_description_h: float | None = None, count: int = 4, min_alt_deg: float = 15.0,
                  max_alt_deg: float = 70.0) -> PassagePaper:
    """The paper for a passage from ``first_date`` to ``last_date`` (inclusive), planned along one of three DRs
    (:mod:`navred.jobs.passagedr`):

    - a departure: (``lat_deg``, ``lon_deg``) at 00:00 zone time of the first date (the ship's clock:
      ``zone_description_h``, else the nautical zone of ``lon_deg``; the cover states it in UTC too) (or lying there until
      ``depart``, ISO 8601 with a zone), then ``course_deg`` at
      ``speed_kn`` (both left out, or 0, for a fixed position);
    - ``route``: the waypoints of a route file (`navred route`'s CSV or GPX, or a list of waypoints written by
      hand) sailed at ``speed_kn``, leaving the first at ``depart`` (default 00:00 zone time of the first date);
    - ``log``: a sight log with entry rows (anything :func:`navred.read_sight_log` takes, read with ``dates`` and
      ``rates``), its DR as the day's work keeps it (its one vessel's, or ``vessel``'s; ``carry_current``
      carries the set and drift found at each fix).

    ``zone_description_h`` is the zone the ship keeps (ZT + ZD = UTC); without it each twilight and noon takes
    the zone of the DR's longitude then. The height of eye and index error give the Hs to preset."""
    first = _date(first_date, "first date")
    last = _date(last_date, "last date")
    days = int((last - first).astype(int)) + 1
    if days < 1:
        raise NavredError(f"the passage ends ({last}) before it begins ({first})")
    if days > PASSAGE_MAX_DAYS:
        raise NavredError(f"{days} days: the paper covers at most {PASSAGE_MAX_DAYS} days at once; print the passage "
                          "in parts")
    dr = _passage_dr(first, days, lat_deg, lon_deg, course_deg, speed_kn, route, depart, log, vessel, dates, rates,
                     carry_current, zone_description_h)
    zone_from_log = zone_description_h is None and dr.zone_h is not None
    if zone_from_log:
        zone_description_h = dr.zone_h  # the zone the log keeps: its clocks are the ship's
    # the dates are the ship's: over the date line eastbound a date is lived twice (a solar day more to reach the
    # last date), westbound one is skipped (the solar days reach past it: cut at the last date)
    solar_days = days + date_lines_eastbound(dr.track, dr.start, days, zone_description_h)
    events, plans = track_twilight_plans(dr.track, dr.start, solar_days, eye_height_m=eye_height_m, count=count,
                                         min_alt_deg=min_alt_deg, max_alt_deg=max_alt_deg)
    track = events["track"]
    options = dict(eye_height_m=eye_height_m, index_error_arcmin=index_error_arcmin, zone_given=zone_description_h)
    twilights = planned_rounds(events, plans, track, count=count, min_alt_deg=min_alt_deg, max_alt_deg=max_alt_deg,
                               **options)
    noons = noon_suns(events, track, **options)
    twilights, noons = until_last_date(twilights, noons, last)
    # the hourly pages cover every UTC date a planned sight or noon falls on: east of about 80° E the first
    # morning twilight comes on the UTC date before the first, far west the last evening's on the date after
    times = [t.presets.utc for t in twilights] + [n.utc for n in noons]
    table_first = min([first] + [t.astype("datetime64[D]") for t in times])
    table_days = int((max([last] + [t.astype("datetime64[D]") for t in times]) - table_first).astype(int)) + 1
    hourly = hourly_table(table_first, table_days)
    stars = star_blocks(table_first, table_days)
    document = _document(first, days, hourly, stars, twilights, noons, dr, eye_height_m, index_error_arcmin,
                         zone_description_h, events, table_first, table_days)
    return PassagePaper(document, hourly, tuple(stars), tuple(twilights), tuple(noons), first, days, dr)


def date_lines_eastbound(track, start, days: int, zone_given: float | None) -> int:
    """How many times the DR crosses the date line eastbound (its nautical zone −12 to +12) in the solar days
    from ``start`` and one more: each lives a ship's date twice, so the paper needs a solar day more to reach its
    last date. None with a zone kept (the ship's clocks do not jump)."""
    if zone_given is not None:
        return 0
    from ..reckoning import zone_description_h

    hours = np.datetime64(start, "ns") + np.arange(0, (days + 1) * 24 + 1) * np.timedelta64(NS_PER_HOUR, "ns")
    _, lon = track.position(hours)
    zones = zone_description_h(np.asarray(lon, dtype=float))
    return int(np.sum(np.diff(zones[np.isfinite(zones)]) > 12.0))


def until_last_date(twilights, noons, last) -> tuple[list, list]:
    """The rounds and noons in time order up to the first whose zone date is past ``last`` (the ship's last date:
    westbound over the date line a date is skipped and the solar days reach past it; a date lived twice
    eastbound keeps both its days)."""
    items = sorted([(np.datetime64(t.presets.utc, "ns"), t) for t in twilights]
                   + [(np.datetime64(n.utc, "ns"), n) for n in noons], key=lambda item: item[0])
    past = [when for when, item in items if item.zone_date > np.datetime64(last, "D")]
    end = past[0] if past else None
    keep = [item for when, item in items if end is None or when < end]
    return ([t for t in keep if isinstance(t, PlannedTwilight)], [n for n in keep if not isinstance(n, PlannedTwilight)])


def _passage_dr(first, days, lat_deg, lon_deg, course_deg, speed_kn, route, depart, log, vessel, dates, rates,
                carry_current, zone_h=None) -> PassageDR:
    """The one DR the paper is planned along; two given at once are refused (which would be meant?)."""
    given = [name for name, value in (("a position (--lat, --lon)", lat_deg is not None or lon_deg is not None),
                                      ("a route (--route)", route is not None), ("a log (--log)", log is not None))
             if value]
    if len(given) != 1:
        raise NavredError(("the paper is planned along one DR; given " + " and ".join(given) + ": give one") if given
                          else "give the DR to plan along: a position (--lat, --lon) with --course and --speed, a "
                               "route (--route) with --speed, or a log with entry rows (--log)")
    if depart is not None and route is None and log is not None:
        raise NavredError("--depart is the time she leaves a route's first waypoint or a departure position: a log "
                          "gives its own departure")
    if vessel is not None and log is None:
        raise NavredError("--vessel names the vessel of a log: give it with --log")
    if route is not None:
        if course_deg is not None:
            raise NavredError("a route gives the course of each leg: leave out --course (or plan along a position "
                              "with --lat, --lon and --course instead)")
        if speed_kn is None:
            raise NavredError("a route is sailed at a speed: give --speed (knots through the water)")
        return route_passage_dr(first, route, speed_kn, depart, days=days, zone_h=zone_h)
    if log is not None:
        if course_deg is not None or speed_kn is not None:
            raise NavredError("a log gives the courses and speeds of its DR: leave out --course and --speed")
        return log_passage_dr(first, days, log, vessel=vessel, dates=dates, rates=rates, carry_current=carry_current)
    if lat_deg is None or lon_deg is None:
        raise NavredError("a position needs both --lat and --lon")
    if (course_deg is None) != (speed_kn is None):
        raise NavredError(f"{'--course' if speed_kn is None else '--speed'} without "
                          f"{'--speed' if speed_kn is None else '--course'}: a departure's DR needs both (leave both "
                          "out for a fixed position, at anchor or hove to)")
    if depart is not None and not speed_kn:
        raise NavredError("--depart is the time she leaves the position given on her course and speed: give --course "
                          "and --speed (a fixed position does not depart)")
    return departure_dr(first, lat_deg, lon_deg, 0.0 if course_deg is None else course_deg,
                        0.0 if speed_kn is None else speed_kn, depart=depart, days=days, zone_h=zone_h)


def _date(value: object, what: str) -> np.datetime64:
    from ..timework import parse_date

    try:
        year, month, day = parse_date(value, declarable=False)
    except NavredError as exc:
        raise NavredError(f"{what}: {exc}") from None
    return np.datetime64(f"{year:04d}-{month:02d}-{day:02d}", "D")


def _provenance(hourly: HourlyTable) -> str:
    return provenance_line(hourly.dut1_s, hourly.ut1_source)


def _document(first, days, hourly, stars, twilights, noons, dr: PassageDR, eye_height_m, index_error_arcmin,
              zone_given, events, table_first, table_days) -> Document:
    last = first + np.timedelta64(days - 1, "D")
    polaris = polaris_in_reach(dr.track, table_first, table_days)
    pages = [_cover(first, last, days, dr, eye_height_m, index_error_arcmin, zone_given, table_first, table_days,
                    polaris)]
    if dr.table:
        pages.append(_dr_page(dr))
    pages += [_hourly_page(hourly, table_first + np.timedelta64(d, "D"), d) for d in range(table_days)]
    pages += _star_pages(stars, polaris)
    pages += _correction_pages(table_first, table_days)
    pages += _sight_pages(twilights, noons, events, hourly)
    pages.append(_noon_page(noons, hourly))
    if polaris:
        pages += _polaris_pages(table_first, table_days)
    pages.append(_formulas_page(twilights, hourly, stars, eye_height_m, index_error_arcmin))
    pages += _blank_forms(dr.track, first, days, polaris)
    table_last = table_first + np.timedelta64(table_days - 1, "D")
    valid = f"{table_first} to {table_last} (UTC dates)" if table_days > 1 else f"{table_first} (UTC date)"
    return Document("navred passage paper", valid, _provenance(hourly), CAUTION, tuple(pages))


# --- The cover ---------------------------------------------------------------------------------

#: The latitude from which the Polaris page and its working form are printed: Polaris (Dec about 89.4° N) stands
#: at about the latitude, so it is below the horizon south of about 0.6° S; 5° S keeps a margin for a DR out by
#: a few degrees and for a ship whose passage runs on north of the paper's dates.
POLARIS_FROM_LAT_DEG = -5.0


def polaris_in_reach(track, table_first, table_days) -> bool:
    """Whether the DR comes as far north as POLARIS_FROM_LAT_DEG at any hour of the paper's UTC dates."""
    hours = np.arange(0, table_days * 24 + 1)
    lats, _ = track.position(table_first.astype("datetime64[ns]") + hours * np.timedelta64(NS_PER_HOUR, "ns"))
    lats = np.asarray(lats, dtype=float)
    if np.all(np.isnan(lats)):
        return True  # no DR to judge by: print them
    return bool(np.nanmax(lats) >= POLARIS_FROM_LAT_DEG)


def polaris_left_out_note() -> str:
    """The one line that says why a paper has no Polaris page or form."""
    return (f"No Polaris page or Polaris form: the DR stays south of {abs(POLARIS_FROM_LAT_DEG):g}° S all passage, "
            "and Polaris, at about the latitude's altitude, is below the horizon there (they are printed from "
            f"{abs(POLARIS_FROM_LAT_DEG):g}° S northward).")


def _cover(first, last, days, dr: PassageDR, eye_height_m, index_error_arcmin, zone_given, table_first, table_days,
           polaris: bool = True):
    kept = " (the zone the log keeps, by its latest row in zone time; --zone to choose another)" if (
        dr.kind == "log" and dr.zone_h is not None and zone_given == dr.zone_h) else ""
    zone = (f"zone description {zone_text(zone_given)} throughout{kept}" if zone_given is not None else
            "the zone of the DR's longitude at each twilight and noon (ZT + ZD = UTC)")
    where = dr.summary + (" Its changes are listed on the next page." if dr.table else "")
    blocks = (
        Text(f"From {first} to {last}: {days} day{'s' if days > 1 else ''}. {where} Height of eye {eye_height_m:g} m, "
             f"index error {signed(index_error_arcmin)}′ (on the arc positive). Zone time: {zone}."
             + ("" if (table_first, table_days) == (first, days) else
                f" The hourly pages run over the UTC dates {table_first} to "
                f"{table_first + np.timedelta64(table_days - 1, 'D')}: every planned sight and noon of the zone "
                "dates falls on one of them.")),
        *((Text("WARNING: check the DR before using these pages", "subheading"),
           *(Text(f"{message[0].upper()}{message[1:]}.") for message in dr.warnings)) if dr.warnings else ()),
        Text("What this is", "subheading"),
        Text("A backup for the day the computer fails: with these pages, a pencil and a calculator a navigator "
             "reduces sights without navred. Print it before sailing and keep it dry with the sight book. It is "
             "checked against an independent ephemeris, but it is no official almanac: where you have one, use it "
             "and compare."),
        Text("How to read the hourly pages", "subheading"),
        Text("Each UTC date has a page of GHA and Dec at every whole hour, from 00 to 24 (the next day's 00). For "
             "a sight at hh:mm:ss UTC take the row of hour hh and the row below it, and work out the fraction of "
             "the hour f = (mm + ss/60) / 60. Then  value = value at hh + f × (value at hh+1 − value at hh).  For "
             "a GHA, if the later value is the smaller add 360° to it before subtracting. For a Dec count north "
             "as plus and south as minus. The Moon's changes (ΔGHA, ΔDec) are printed beside it, already "
             "subtracted. A star's GHA is the GHA of Aries so found plus the star's SHA. Each hourly page "
             "works one example through."),
        Text("The pages", "subheading"),
        Text("In this order, each headed by its title (look them up by title: a long table runs onto a second "
             "sheet): this page" + (" and the DR it is planned along" if dr.table else "") + " · Hourly GHA and "
             "Dec, a page per UTC date · The stars: SHA and Dec · Altitude corrections: dip and refraction · "
             "Altitude corrections: the Moon, the Sun and the planets · Sights for each day: the twilight stars "
             "planned along the DR with Hc, Zn and their change per minute, the Hs to preset, and the noon Sun · "
             "The noon Sun for every day · " + ("Latitude by Polaris · " if polaris else "") + "The calculator's "
             "formulas, with a sight worked through · blank forms: Hand working (one per way of working), Plotting "
             "sheets for the passage's latitudes, a DR log page."),
        *(() if polaris else (Text(polaris_left_out_note()),)),
        Text("Time", "subheading"),
        Text("Every table is for UTC. Keep the chronometer's error and rate by time signals; a second of time is "
             "15″ of GHA, a quarter of a mile of longitude. Zone times on the sight pages are for convenience "
             "only: work the sight in UTC."),
        Text("Accuracy", "subheading"),
        Text("Printed values are rounded to 0.1′. Interpolated as above they agree with an independent "
             "ephemeris within 0.1′ for the Sun, Aries, the planets and the stars, and 0.3′ for the Moon. The "
             "precomputed Hc and Zn are for the DR position printed with them; the change per minute and the "
             "bend are centred on the planned time (from the altitudes ten minutes before, at and after it), "
             "and the page says for how many minutes either way they hold within 0.5′."),
    )
    return Page("Passage paper: the backup for hand reduction", blocks)


def _dr_page(dr: PassageDR) -> Page:
    columns, csv_columns, rows = dr.table
    title = "The route as planned" if dr.kind == "route" else "The DR as the log keeps it"
    note = ("Each waypoint, the time she leaves or reaches it at the speed given, the rhumb line to the next and "
            "its length, and the miles run. The DR of every page follows these legs." if dr.kind == "route" else
            "Each change of the DR from the one in force when the paper begins: a known position or fix (the DR "
            "restarts there) or a change of course, speed or current; the course and speed are those made good "
            "over the ground (the current included) from then on. The DR of every page follows it.")
    table = Table(columns, rows, name="route" if dr.kind == "route" else "dr-changes", csv_columns=csv_columns,
                  widths=(1.0, 2.3, 1.5, 1.2, 0.8, 0.8) if dr.kind == "route" else (1.2, 2.4, 2.3, 0.8, 0.8),
                  left_columns=2, font_size=7.4, wrap_columns=(1,) if dr.kind == "log" else ())
    return Page(title, (Text(note, "small"), table))


# --- The hourly pages ----------------------------------------------------------------------------

def _hourly_rows(hourly: HourlyTable, d: int) -> tuple[list[tuple[str, ...]], dict]:
    rows = []
    part = hourly.day(d)
    values = {body: (hourly.gha_deg[hourly.column(body), part], hourly.dec_deg[hourly.column(body), part])
              for body in hourly.bodies}
    moon_gha, moon_dec = values["Moon"]
    moon_hp = hourly.hp_arcmin[hourly.column("Moon"), part]
    for k in range(25):
        last = k == 24
        d_gha = "" if last else dm(float(wrap_360(moon_gha[k + 1] - moon_gha[k])), "signed")
        # the Moon's change of Dec with its sign both ways (north +): in south declination a bare 1.2 would read
        # as the Dec growing
        d_dec = "" if last else signed((moon_dec[k + 1] - moon_dec[k]) * ARCMIN_PER_DEG)
        d_dec = "+" + d_dec if d_dec and d_dec[0] != "−" and float(d_dec) != 0.0 else d_dec
        row = [f"{k:02d}", dm(values["Aries"][0][k]), dm(values["Sun"][0][k]), dm(values["Sun"][1][k], "dec"),
               dm(moon_gha[k]), d_gha, dm(moon_dec[k], "dec"), d_dec, f"{moon_hp[k]:.1f}"]
        for planet in PLANETS:
            row += [dm(values[planet][0][k]), dm(values[planet][1][k], "dec")]
        rows.append(tuple(row))
    return rows, values


def _hourly_page(hourly: HourlyTable, date, d: int) -> Page:
    rows, values = _hourly_rows(hourly, d)
    columns = ("h", "GHA", "GHA", "Dec", "GHA", "ΔGHA", "Dec", "ΔDec ′", "HP ′") + ("GHA", "Dec") * 4
    csv_columns = ("hour_utc", "aries_gha", "sun_gha", "sun_dec", "moon_gha", "moon_gha_change", "moon_dec",
                   "moon_dec_change_arcmin", "moon_hp_arcmin")
    for planet in PLANETS:
        csv_columns += (f"{planet.lower()}_gha", f"{planet.lower()}_dec")
    spans = (("Aries", 1, 1), ("Sun", 2, 2), ("Moon", 4, 5)) + tuple(
        (planet, 9 + 2 * k, 2) for k, planet in enumerate(PLANETS))
    widths = (0.45, 1, 1, 1.05, 1, 0.9, 1.05, 0.62, 0.5) + (1, 1.05) * 4
    table = Table(columns, tuple(rows), name=f"hourly-{date}", csv_columns=csv_columns, widths=widths, spans=spans,
                  font_size=7.2, shade_every=3)
    # a worked interpolation from this page: the Sun and the Moon at 14:37:20 (hour 14, f = 37⅓ / 60)
    hour, minutes, seconds = 14, 37, 20
    f = (minutes + seconds / 60.0) / 60.0
    sun_gha, sun_dec = values["Sun"]
    moon_gha, moon_dec = values["Moon"]
    example_sun = interpolate_printed(sun_gha[hour], sun_gha[hour + 1], f, gha=True)
    example_dec = interpolate_printed(sun_dec[hour], sun_dec[hour + 1], f)
    example_moon = interpolate_printed(moon_gha[hour], moon_gha[hour + 1], f, gha=True)
    step_sun = float(wrap_360(sun_gha[hour + 1] - sun_gha[hour]))
    step_moon = float(wrap_360(moon_gha[hour + 1] - moon_gha[hour]))
    worked = (
        f"Worked: at {hour:02d}:{minutes:02d}:{seconds:02d} UTC, f = ({minutes} + {seconds}/60) / 60 = {f:.4f}.  "
        f"Sun GHA = {dm(sun_gha[hour])} + {f:.4f} × {dm(step_sun, 'signed')} = {dm(sun_gha[hour])} + "
        f"{dm(f * step_sun, 'signed')} = {dm(float(example_sun))};  Sun Dec = {dm(sun_dec[hour], 'dec')} + {f:.4f} × "
        f"({signed((sun_dec[hour + 1] - sun_dec[hour]) * ARCMIN_PER_DEG)}′) = {dm(float(example_dec), 'dec')}.  "
        f"Moon GHA = {dm(moon_gha[hour])} + {f:.4f} × {dm(step_moon, 'signed')} = {dm(float(example_moon))}.")
    return Page(f"Hourly GHA and Dec, {long_date(date)} (UTC)", (
        table,
        Text("value = value at the hour + f × (next hour's value − value at the hour), f = (minutes + seconds/60)/60; "
             "GHA: add 360° to the next value if it is the smaller; Dec: north +, south −. Star: GHA = GHA Aries + "
             "SHA. Sun's SD and the planets' corrections: the corrections pages; the Moon's SD is 0.2725 × HP.",
             "small"),
        Text(worked, "small"),
    ), landscape=True)


# --- Stars -------------------------------------------------------------------------------------

_STARS_PER_PAGE = 4


def _block_label(block: StarBlock) -> str:
    first, last = str(block.first), str(block.last)
    return first[5:] if first == last else f"{first[5:]} to {last[5:]}"


def _star_pages(stars, polaris: bool = True) -> list[Page]:
    pages = []
    for start in range(0, len(stars), _STARS_PER_PAGE):
        blocks = stars[start:start + _STARS_PER_PAGE]
        columns = ("No.", "Star", "Mag") + ("SHA", "Dec") * len(blocks)
        csv_columns = ("number", "star", "magnitude")
        for block in blocks:
            stem = str(block.first).replace("-", "_")
            csv_columns += (f"sha_from_{stem}", f"dec_from_{stem}")
        spans = tuple((f"dates {_block_label(b)}", 3 + 2 * k, 2) for k, b in enumerate(blocks))
        rows = []
        base = blocks[0]
        for i in range(base.names.size):
            row = [str(base.numbers[i]) if base.numbers[i] else "", str(base.names[i]), signed(base.magnitude[i])]
            for block in blocks:
                row += [dm(block.sha_deg[i]), dm(block.dec_deg[i], "dec")]
            rows.append(tuple(row))
        name = f"stars-{blocks[0].first}"
        widths = (0.45, 1.4, 0.5) + (1.0, 1.05) * len(blocks)
        table = Table(columns, tuple(rows), name=name, csv_columns=csv_columns, widths=widths, spans=spans,
                      font_size=7.4, left_columns=2, shade_every=3, compact=True,
                      width_fraction=min(1.0, (2.35 + 2.05 * len(blocks)) / (2.35 + 2.05 * _STARS_PER_PAGE)))
        pages.append(Page("The stars: SHA and Dec", (
            Text("Each pair of columns serves the UTC dates above it (the places at the middle of those dates; "
                 "within them they change by 0.02′ at most, except Polaris). A star's GHA = GHA Aries (hourly pages) "
                 "+ SHA, less 360° if over. " + (
                     "Polaris's SHA moves about 0.4′ a day: for its GHA take its daily SHA from its page; for its "
                     "latitude use the Polaris table." if polaris else
                     "Polaris is below the horizon all this passage (no Polaris page).") + " Magnitudes: Hipparcos "
                 "Hp.", "small"),
            table)))
    return pages


# --- Corrections -------------------------------------------------------------------------------

def _correction_pages(first, days) -> list[Page]:
    heights_m, dip_m, heights_ft, dip_ft = dip_rows()
    dip_m_table = Table(("eye m", "dip ′"), tuple((f"{h:g}", f"{v:.1f}") for h, v in zip(heights_m, dip_m)),
                        name="dip-metres", csv_columns=("eye_height_m", "dip_arcmin"), title="Dip (subtract)",
                        font_size=7.2, compact=True)
    dip_ft_table = Table(("eye ft", "dip ′"), tuple((f"{h:g}", f"{v:.1f}") for h, v in zip(heights_ft, dip_ft)),
                         name="dip-feet", csv_columns=("eye_height_ft", "dip_arcmin"), title="Dip by feet (subtract)",
                         font_size=7.2, compact=True)
    altitudes, refraction = refraction_rows()
    refraction_table = Table(("Ha °", "R ′"), tuple((f"{h:g}", f"{r:.1f}") for h, r in zip(altitudes, refraction)),
                             name="refraction", csv_columns=("apparent_altitude_deg", "refraction_arcmin"),
                             title="Refraction at 10 °C, 1010 hPa (subtract)", font_size=7.2, compact=True)
    temperatures, pressures, factor = refraction_factor_grid()
    factor_table = Table(("°C \\ hPa",) + tuple(f"{p:.0f}" for p in pressures),
                         tuple((f"{t:g}".replace("-", "−"),) + tuple(f"{v:.2f}" for v in factor[i])
                               for i, t in enumerate(temperatures)),
                         name="refraction-factor", csv_columns=("temperature_c",) + tuple(
                             f"factor_at_{p:.0f}_hpa" for p in pressures),
                         title="Refraction factor for the air: R = R(table) × factor", font_size=7.2, compact=True)
    page1 = Page("Altitude corrections: dip and refraction", (
        Text("Ha = Hs + IC − dip (IC = −index error; on the arc, subtract). Ho = Ha − R × factor + SD (lower limb "
             "+, upper −) + parallax (Moon, Venus, Mars) + phase (Venus, Mars). Interpolate between rows. Dip = "
             "1.76′ √(metres) = 0.97′ √(feet); refraction by Bennett's formula; below 5° refraction is uncertain "
             "by several minutes: avoid such sights.", "small"),
        Side((dip_m_table, dip_ft_table, refraction_table), (1, 1, 1.2)),
        factor_table,
    ))
    heights, hps, parallax = moon_parallax_grid()
    parallax_table = Table(("h °",) + tuple(f"{hp:.1f}" for hp in hps),
                           tuple((f"{h:g}",) + tuple(f"{v:.1f}" for v in parallax[i]) for i, h in enumerate(heights)),
                           name="moon-parallax", csv_columns=("altitude_deg",) + tuple(
                               f"parallax_arcmin_at_hp_{hp:.1f}".replace(".", "_") for hp in hps),
                           title="The Moon's parallax in altitude (add), by its altitude after refraction and HP",
                           font_size=6.8)
    sd_hp, sd = moon_sd_rows()
    sd_table = Table(("HP ′",) + tuple(f"{hp:.1f}" for hp in sd_hp), (("SD ′",) + tuple(f"{v:.1f}" for v in sd),),
                     name="moon-semi-diameter", csv_columns=("quantity",) + tuple(
                         f"hp_{hp:.1f}".replace(".", "_") for hp in sd_hp),
                     title="The Moon's semi-diameter by HP (SD = 0.2725 × HP)", font_size=6.8)
    aug_h, aug_hp, augmentation = moon_augmentation_grid()
    aug_table = Table(("h °",) + tuple(f"HP {hp:g}" for hp in aug_hp),
                      tuple((f"{h:g}",) + tuple(f"{v:.1f}" for v in augmentation[i]) for i, h in enumerate(aug_h)),
                      name="moon-augmentation", csv_columns=("altitude_deg",) + tuple(
                          f"growth_arcmin_at_hp_{hp:g}".replace(".", "_") for hp in aug_hp),
                      title="Growth of the Moon's SD with its altitude (add to the SD)", font_size=6.8)
    figures = daily_figures(first, days)
    day_rows = []
    for k, date in enumerate(figures.dates):
        day_rows.append((str(date), f"{figures.sun_sd_arcmin[k]:.1f}") + tuple(
            value for planet in ("Venus", "Mars") for value in (
                f"{figures.planet_hp_arcmin[planet][k]:.1f}", f"{figures.planet_phase_angle_deg[planet][k]:.0f}",
                f"{figures.planet_offset_arcmin[planet][k]:.1f}")))
    daily_table = Table(("date (0h UTC)", "Sun SD ′", "HP ′", "phase °", "offset ′", "HP ′", "phase °", "offset ′"),
                        tuple(day_rows), name="sun-and-planets-by-date",
                        csv_columns=("date", "sun_sd_arcmin", "venus_hp_arcmin", "venus_phase_angle_deg",
                                     "venus_offset_arcmin", "mars_hp_arcmin", "mars_phase_angle_deg",
                                     "mars_offset_arcmin"),
                        spans=(("Venus", 2, 3), ("Mars", 5, 3)), title="The Sun's SD; Venus and Mars", font_size=7.2,
                        width_fraction=0.8)
    page2 = Page("Altitude corrections: the Moon, the Sun and the planets", (
        Text("Moon: find h = Ha − R (its centre's altitude after refraction; for a limb add or take off the SD "
             "first), then parallax from the table by h and HP (the HP from the hourly page), and the SD = "
             "0.2725 × HP plus the growth below. The table is for a round Earth: the flattening adds up to "
             "0.2′, HP × 0.0034 sin 2φ sin h cos Zn (Moon to the north +) less HP × 0.0034 sin² φ cos h.",
             "small"),
        parallax_table, Side((sd_table,), (1,)), aug_table,
        Text("Venus and Mars: parallax = HP × cos Ha (add). Phase: their light is centred toward the Sun by the "
             "offset; when the Sun lies below the planet (at twilight, the planet high over the Sun's side of "
             "the sky) the centre of light is low, so add the offset × cos θ, θ the angle at the planet between "
             "straight down and the direction of the Sun (the sight pages give it worked out for each planned "
             "planet). The Sun's SD: add for the lower limb, subtract for the upper; its parallax is 0.15′ × cos Ha "
             "(add).", "small"),
        daily_table,
    ))
    return [page1, page2]


# --- The sights of each day --------------------------------------------------------------------

def _twilight_table(twilight: PlannedTwilight, name: str) -> Table:
    p = twilight.presets
    order = np.argsort(p.zn_deg, kind="stable")
    rows = []
    for i in order:
        good = int(p.good_minutes[i])
        limb = {"lower": "lower", "upper": "upper", "centre": ""}[str(p.limb[i])]
        if p.body[i] == "Moon" and p.horns_vertical[i]:
            limb += " (horns up and down)"
        rows.append((str(p.body[i]), "●" if twilight.plan.recommended[i] else "", dm(p.hs_deg[i], "signed"), limb,
                     dm(p.hc_deg[i], "signed"), f"{p.zn_deg[i]:05.1f}", signed(p.hc_rate_arcmin_per_min[i], 2),
                     signed(p.hc_bend_arcmin_per_min2[i], 3), signed(p.zn_rate_deg_per_min[i], 2),
                     f"±{good}" if good > 0 else "do not use: formulas",
                     signed(twilight.plan.magnitude[i])))
    return Table(("Body", "set", "Hs to preset", "limb", "Hc", "Zn °", "Hc ′/min", "bend ′/min²", "Zn °/min",
                  "holds min", "mag"),
                 tuple(rows), name=name,
                 csv_columns=("body", "recommended", "hs_preset", "limb", "hc", "zn_deg", "hc_change_arcmin_per_min",
                              "hc_bend_arcmin_per_min2", "zn_change_deg_per_min", "rate_holds_minutes", "magnitude"),
                 widths=(1.25, 0.3, 0.95, 0.85, 0.95, 0.55, 0.65, 0.7, 0.65, 0.85, 0.45), font_size=7.0, left_columns=2,
                 compact=True)


def sight_days(twilights, noons) -> list[dict]:
    """The rounds and noons of a passage by days, the one rule the plan keeps: each event by the zone date of
    its own instant in its own zone (ZT = UTC − ZD: :func:`navred.jobs.bridge.zone_date`). In time order, a new
    day when the zone date changes or the zone jumps across the date line (12 h or more): over the date line
    eastbound the zone date goes back and a date is lived twice (two days of one date); westbound it goes
    forward and part of a date is never lived. Each day: its ``date``, the ``zone_h`` of its first event,
    ``again`` (a date lived before), its ``twilights`` and ``noon`` (None where its noon fell on the other
    side of the line)."""
    events = sorted([(np.datetime64(t.presets.utc, "ns"), t.zone_date, t.zone_h, t) for t in twilights]
                    + [(np.datetime64(n.utc, "ns"), n.zone_date, n.zone_h, n) for n in noons], key=lambda e: e[0])
    days: list[dict] = []
    for _, date, zone_h, item in events:
        day = days[-1] if days else None
        if day is None or day["date"] != date or abs(zone_h - day["last_zone_h"]) >= 12.0:
            day = {"date": date, "zone_h": zone_h, "again": any(d["date"] == date for d in days), "twilights": [],
                   "noon": None}
            days.append(day)
        day["last_zone_h"] = zone_h
        if isinstance(item, PlannedTwilight):
            day["twilights"].append(item)
        else:
            day["noon"] = item
    return days


def _sight_pages(twilights, noons, events, hourly) -> list[Page]:
    pages = []
    days = sight_days(twilights, noons)
    for n, day in enumerate(days):
        noon = day["noon"]
        blocks = []
        held = {twilight.kind for twilight in day["twilights"]}
        across = [days[m] for m in (n - 1, n + 1) if 0 <= m < len(days) and abs(
            days[m]["zone_h"] - day["zone_h"]) >= 12.0]  # the days on the other side of the date line, beside it
        crossed = bool(across)
        after = n > 0 and abs(days[n - 1]["last_zone_h"] - day["zone_h"]) >= 12.0
        # on a page the date line touches (its zone date lived twice, or skipped, beside it) every UTC time
        # carries its UTC date: a time alone there is read on the wrong date as easily as on the right one
        stamped = None if (crossed or after or day["again"]) else day["date"]
        if "Morning twilight" not in held and (noon is not None or crossed):
            blocks.append(_no_round("morning", events, noon, _other_side("Morning twilight", across)))
        for twilight in day["twilights"]:
            p = twilight.presets
            zd = twilight.zone_h
            zone_time = p.utc - np.timedelta64(int(zd * 60), "m")
            kind = twilight.label.split(" ", 1)[0]
            under = stamped
            blocks.append(Text(f"{kind} twilight: planned {hm(zone_time)} zone time ({zone_text(zd)}), "
                               f"{utc_stamp(p.utc, under)}, from DR {dm(p.lat_deg, 'lat')} {dm(p.lon_deg, 'lon')}",
                               "subheading"))
            blocks.append(Text(_which_hourly_page(p.utc, day["date"]), "body"))
            times = (f"Nautical twilight {utc_stamp(twilight.nautical, under)}, civil "
                     f"{utc_stamp(twilight.civil, under)}" if twilight.nautical < twilight.civil else
                     f"Civil twilight {utc_stamp(twilight.civil, under)}, nautical "
                     f"{utc_stamp(twilight.nautical, under)}")
            blocks.append(Text(f"{times}. For a "
                               f"sight m minutes after {utc_stamp(p.utc, under)} (m negative before it): Hc = Hc + m × "
                               "(Hc ′/min + m × bend), Zn = Zn + m × (Zn °/min), within 0.5′ for as many minutes "
                               "before or after as 'holds' says (±20: 20 minutes either way; further off, or 'do not "
                               "use', work it by the formulas page). Plot every line from the DR above "
                               "and move it for the ship's run. Hs to preset: Hc with dip, refraction, SD, "
                               "parallax and index error taken back off. ● the recommended set of "
                               f"{int(np.sum(twilight.plan.recommended))} (--count; navred plan takes 3 unless told, "
                               "so its set may differ).", "small"))
            stamp = str(p.utc.astype("datetime64[m]")).replace(":", "").replace("T", "-")
            blocks.append(_twilight_table(twilight, f"sights-{stamp}"))
        if "Evening twilight" not in held and (noon is not None or crossed):
            blocks.append(_no_round("evening", events, noon, _other_side("Evening twilight", across)))
        if noon is not None:
            zone_noon = noon.utc - np.timedelta64(int(noon.zone_h * 60), "m")
            blocks.append(Text(f"Noon: the Sun on the meridian at {hm(zone_noon)} zone time "
                               f"({zone_text(noon.zone_h)}), {utc_stamp(noon.utc, stamped)}", "subheading"))
            blocks.append(Text(_which_hourly_page(noon.utc, day["date"]), "body"))
            blocks.append(Text(f"DR then {dm(noon.lat_deg, 'lat')} {dm(noon.lon_deg, 'lon')}; Sun's Dec "
                               f"{dm(noon.dec_deg, 'dec')}; Hc {dm(noon.hc_deg, 'signed')}, bearing {noon.bearing}; Hs "
                               f"to preset (lower limb) {dm(noon.hs_deg, 'signed')}. Start a few minutes early, follow "
                               "it up and take the highest reading; latitude = Dec ± (90° − Ho) (The noon Sun page).",
                               "body"))
        elif crossed:
            other = [d for d in across if d["noon"] is not None]
            where = f"on the page of {long_date(other[0]['date'])}" if other else "not on this side"
            blocks.append(Text(f"Noon: {where}, across the date line (each event on the page of its own zone date).",
                               "subheading"))
        note = (" (the date again: over the date line)" if day["again"] else
                f" (over the date line: the date goes {'back' if day['date'] < days[n - 1]['date'] else 'forward'} "
                "a day)" if after else "")
        pages.append(Page(f"Sights for {long_date(day['date'])}{note}", tuple(blocks)))
    return pages


def _which_hourly_page(utc64, under) -> str:
    """Which hourly page a round or noon is worked from: the page of its UTC date, said plainly where that is
    not the date of the page it is printed on (over the date line, or far from Greenwich, the zone date and the
    UTC date differ: the wrong page is a day's change in GHA and Dec)."""
    on = to_minute(utc64).astype("datetime64[D]")
    if on == np.datetime64(under, "D"):
        return f"GHA and Dec: the hourly page of {long_date(on)} (UTC date, the same as this page's)."
    return (f"GHA and Dec: the hourly page of {long_date(on)}: the UTC date, NOT the date of this page "
            f"({long_date(under)}, the zone date).")


def _other_side(kind: str, across: list[dict]) -> str | None:
    """On a day the date line cuts, where a round missing from it is: the page across the line that holds it
    ('' where neither does); None on a day the line does not cut."""
    if not across:
        return None
    holding = [d for d in across if any(t.kind == kind for t in d["twilights"])]
    return f"on the page of {long_date(holding[0]['date'])}" if holding else ""


def _no_round(when: str, events: dict, noon, across: str | None = None) -> Text:
    """Why a day's page has no morning (or evening) round: the twilight that does not happen at the DR, or, on
    a day the date line cuts, where it is (``across``: the page across the line that holds it, '' for none)."""
    if across is not None:
        where = across or "not on this side of the line"
        return Text(f"The {when} twilight round: {where}, across the date line (each event on the page of its "
                    "own zone date).", "subheading")
    day = int(np.flatnonzero(events["date"] == noon.date)[0])
    side = "dawn" if when == "morning" else "dusk"
    nautical, civil = events[f"nautical_{side}"][day], events[f"civil_{side}"][day]
    rise = events["sunrise" if when == "morning" else "sunset"][day]
    if np.isnat(rise) and noon.hc_deg > 0:
        why = "the Sun does not set at the DR"
    elif np.isnat(civil) and not np.isnat(rise):
        why = "the Sun does not go 6° below the horizon at the DR (no civil twilight)"
    elif np.isnat(nautical) and not np.isnat(civil):
        why = ("the Sun does not go 12° below the horizon at the DR (no nautical twilight): near the darkest of the "
               "night the horizon and the brightest stars may both be seen; plan such sights with navred plan "
               "--utc before sailing, or work them by the formulas page")
    elif np.isnat(civil) and not np.isnat(nautical):
        why = ("the Sun does not come up to 6° below the horizon at the DR (no civil twilight): the horizon is lit "
               "only dimly, near noon")
    elif np.isnat(civil):
        why = "the Sun stays more than 12° below the horizon at the DR all day (no twilight)"
    else:
        why = "no navigational body stands between the planned altitudes then"
    return Text(f"No {when} twilight round: {why}.", "subheading")


def _noon_page(noons, hourly) -> Page:
    rows = []
    for noon in noons:
        zone_noon = noon.utc - np.timedelta64(int(noon.zone_h * 60), "m")
        utc_date = to_minute(noon.utc).astype("datetime64[D]")
        rows.append((str(noon.zone_date), hm(zone_noon), f"ZD {zone_text(noon.zone_h)}", hm(noon.utc),
                     str(utc_date), dm(noon.lat_deg, "lat"),
                     dm(noon.lon_deg, "lon"), dm(noon.dec_deg, "dec"), dm(noon.hc_deg, "signed"),
                     dm(noon.hs_deg, "signed"), noon.bearing))
    table = Table(("Zone date", "zone time", "ZD", "UTC", "UTC date", "DR lat", "DR lon", "Sun Dec", "Hc",
                   "Hs preset LL", "look"),
                  tuple(rows), name="noon-sun",
                  csv_columns=("date", "zone_time", "zone_description", "utc", "utc_date", "dr_lat", "dr_lon",
                               "sun_dec", "hc", "hs_preset_lower_limb", "bearing"),
                  widths=(1.0, 0.65, 0.6, 0.5, 1.05, 1.0, 1.1, 1.0, 0.9, 0.9, 0.4), font_size=7.2)
    return Page("The noon Sun: local apparent noon along the DR", (
        Text("The time of the Sun's meridian passage at the DR then (it moves with the ship: about 4 minutes "
             "of time for each degree of longitude made good). Latitude from the noon altitude: with the Sun to "
             "the south, latitude = Dec + (90° − Ho) (north +, south −); with it to the north, latitude = Dec − "
             "(90° − Ho). Take the Dec for the UTC of the sight from the hourly page of its UTC date (the UTC date "
             "column: over the date line, or far from Greenwich, it is not always the zone date).", "small"),
        table))


def _polaris_pages(first, days) -> list[Page]:
    from ..handtables import POLARIS_ALTITUDES_DEG

    pages = []
    dates, sha, dec = daily_places("Polaris", first, days)
    daily = Table(("date (0h UTC)", "SHA", "Dec"), tuple((str(d), dm(s), dm(x, "dec")) for d, s, x in
                                                          zip(dates, sha, dec)),
                  name="polaris-daily", csv_columns=("date", "sha", "dec"), title="Polaris each day", font_size=7.2,
                  width_fraction=0.6)
    for start in range(0, days, POLARIS_BLOCK_DAYS):
        end = min(start + POLARIS_BLOCK_DAYS, days)
        epoch = first.astype("datetime64[ns]") + np.timedelta64((start + end) * 12 * NS_PER_HOUR, "ns")
        table = polaris_table(epoch)
        rows = []
        for tens in range(36):
            rows.append((f"{10 * tens}",) + tuple(signed(table.first_arcmin[10 * tens + u]) for u in range(10)))
        first_table = Table(("LHA ♈",) + tuple(f"+{u}°" for u in range(10)), tuple(rows),
                            name=f"polaris-first-{first + np.timedelta64(start, 'D')}",
                            csv_columns=("lha_aries_tens_deg",) + tuple(f"first_arcmin_plus_{u}_deg" for u in range(10)),
                            title="First term (′) by LHA Aries: row the tens of degrees, column the units",
                            font_size=6.9, shade_every=3, width_fraction=0.78)
        second = Table(("LHA ♈",) + tuple(f"Ho {h:g}°" for h in POLARIS_ALTITUDES_DEG),
                       tuple((f"{lha:g} or {lha + 180:g}",) + tuple(f"{v:.1f}" for v in table.second_arcmin[j])
                             for j, lha in enumerate(table.second_lha_deg)),
                       name=f"polaris-second-{first + np.timedelta64(start, 'D')}",
                       csv_columns=("lha_aries_deg",) + tuple(f"second_arcmin_at_ho_{h:g}" for h in POLARIS_ALTITUDES_DEG),
                       title="Second term (′, add) by LHA Aries and Ho", font_size=6.9, width_fraction=0.78)
        valid = (f"{first + np.timedelta64(start, 'D')} to {first + np.timedelta64(end - 1, 'D')}")
        blocks = [Text(f"For the UTC dates {valid}. Latitude = Ho + first term + second term. LHA Aries = GHA Aries "
                       "(hourly page) + longitude (east +, west −). Interpolate between the columns of the first "
                       f"term (whole degrees) and between the rows and columns of the second. Made for Polaris at "
                       f"{str(epoch)[:16].replace('T', ' ')} UTC: SHA {dm(table.sha_deg)}, Dec {dm(table.dec_deg, 'dec')}.",
                       "small"), first_table, second]
        if start == 0:
            blocks.append(daily)
        pages.append(Page("Latitude by Polaris", tuple(blocks)))
    return pages


# --- The calculator's formulas -------------------------------------------------------------------

def _formulas_page(twilights, hourly, stars, eye_height_m, index_error_arcmin) -> Page:
    blocks = [
        Text("LHA = GHA + longitude (east +, west −), less 360° if over, plus 360° if below 0. With latitude φ "
             "(north +) and Dec δ (north +):",
             "small"),
        Text("sin Hc = sin φ sin δ + cos φ cos δ cos LHA", "mono"),
        Text("cos Z = (sin δ − sin φ sin Hc) / (cos φ cos Hc);   Zn = Z when LHA is over 180°, Zn = 360° − Z when "
             "under", "mono"),
        Text("intercept = Ho − Hc in minutes = miles, toward Zn when positive, away when negative", "mono"),
        Text("Set the calculator to degrees; enter an angle as degrees + minutes/60. Plot the line at right angles "
             "to Zn through the point the intercept reaches from the DR (the position you used).", "small"),
    ]
    example = _worked_sight(twilights, hourly, stars, eye_height_m, index_error_arcmin)
    if example:
        blocks.append(Text("A sight worked through with these pages only", "subheading"))
        blocks.extend(Text(line, "mono") for line in example)
    return Page("The calculator's formulas, with a worked example", tuple(blocks))


def _worked_sight(twilights, hourly, stars, eye_height_m, index_error_arcmin) -> list[str]:
    """A star of the first twilight, taken four minutes after the planned time with the preset reading, worked
    from the printed tables: the lines a navigator writes."""
    from ..corrections import dip_angle_arcmin, refraction_angle_arcmin

    for twilight in twilights:
        p = twilight.presets
        choices = [i for i in range(p.body.size) if twilight.plan.recommended[i] and p.body[i] not in
                   ("Sun", "Moon", "Venus", "Mars", "Jupiter", "Saturn", "Polaris")]
        if choices:
            break
    else:
        return []
    i = choices[0]
    star = str(p.body[i])
    late_s = 5 * 60 + 43  # taken 5 min 43 s after the planned time, reading 2.3′ above what the page predicts
    when = p.utc + np.timedelta64(late_s, "s")
    hs = float(p.hs_deg[i]) + (float(p.hc_at_deg(late_s / 60.0)[i] - p.hc_deg[i]) * ARCMIN_PER_DEG + 2.3) / ARCMIN_PER_DEG
    hs = round(hs * 600) / 600
    date = when.astype("datetime64[D]")
    block = next(b for b in stars if b.first <= date <= b.last)
    k = int(np.flatnonzero(block.names == star)[0])
    sha, dec = float(block.sha_deg[k]), float(block.dec_deg[k])
    offset = (when - hourly.hours[0]).astype(np.int64)
    row = int(offset // NS_PER_HOUR)
    f = (offset - row * NS_PER_HOUR) / NS_PER_HOUR
    aries = hourly.gha_deg[hourly.column("Aries")]
    # GHA Aries as the navigator works it: the printed hour, f to four places times the printed hour's change
    step = round(float(wrap_360(aries[row + 1] - aries[row])) * 600.0) / 600.0
    gha_aries = round(float(wrap_360(aries[row] + round(f, 4) * step)) * 600.0) / 600.0
    dip = round(float(dip_angle_arcmin(eye_height_m)), 1)
    ha = hs + (-index_error_arcmin - dip) / ARCMIN_PER_DEG
    refraction = round(float(refraction_angle_arcmin(ha)), 1)
    ho = ha - refraction / ARCMIN_PER_DEG
    gha = float(wrap_360(gha_aries + sha))
    lat, lon = round(p.lat_deg * 600.0) / 600.0, round(p.lon_deg * 600.0) / 600.0  # the DR as printed, to 0.1′
    lha = float(wrap_360(gha + lon))
    phi, delta, t = math.radians(lat), math.radians(dec), math.radians(lha)
    sin_hc = math.sin(phi) * math.sin(delta) + math.cos(phi) * math.cos(delta) * math.cos(t)
    hc = math.degrees(math.asin(sin_hc))
    cos_z = (math.sin(delta) - math.sin(phi) * sin_hc) / (math.cos(phi) * math.cos(math.radians(hc)))
    z = math.degrees(math.acos(max(-1.0, min(1.0, cos_z))))
    zn = z if lha > 180.0 else 360.0 - z
    intercept = (ho - hc) * ARCMIN_PER_DEG
    stamp = str(when.astype("datetime64[s]")).replace("T", " ")
    # the sight page's check, worked from its printed (rounded) Hc and rate as a navigator would
    page_hc, page_rate = round(float(p.hc_deg[i]) * 600.0) / 600.0, round(float(p.hc_rate_arcmin_per_min[i]), 2)
    page_bend, m = round(float(p.hc_bend_arcmin_per_min2[i]), 3), round(late_s / 60, 2)
    return [
        f"{star}, {stamp} UTC, Hs {dm(hs, 'signed')}, index error {abs(index_error_arcmin):.1f}′"
        f"{' on the arc' if index_error_arcmin > 0 else ' off the arc' if index_error_arcmin < 0 else ''}, eye "
        f"{eye_height_m:g} m, DR {dm(lat, 'lat')} {dm(lon, 'lon')}",
        f"IC {signed(-index_error_arcmin)}′  dip −{dip:.1f}′  Ha {dm(ha, 'signed')}  R −{refraction:.1f}′ (10 °C, "
        f"1010 hPa)  Ho {dm(ho, 'signed')}",
        f"f = {f:.4f}; GHA ♈ {dm(aries[row])} + {f:.4f} × {dm(step)} = {dm(gha_aries)}",
        f"SHA {dm(sha)}  GHA {dm(gha)}  longitude {dm(lon, 'lon')}  LHA {dm(lha)}  Dec {dm(dec, 'dec')}",
        f"sin Hc = sin({lat:.4f}) sin({dec:.4f}) + cos({lat:.4f}) cos({dec:.4f}) cos({lha:.4f}) = {sin_hc:.5f}",
        f"Hc {dm(hc, 'signed')};  cos Z = {signed(cos_z, 5)}, Z {z:.1f}°, Zn {zn:05.1f}°",
        f"intercept {abs(intercept):.1f} nm {'toward' if intercept >= 0 else 'away'}  (check by the sight page: Hc "
        f"{dm(page_hc, 'signed')} + {m:.2f} × ({signed(page_rate, 2)}′ + {m:.2f} × {signed(page_bend, 3)}′) = "
        f"{dm(page_hc + round(m * (page_rate + m * page_bend), 1) / ARCMIN_PER_DEG, 'signed')})",
    ]


# --- Blank forms -----------------------------------------------------------------------------------

#: How this paper gives a line of the sight book, where an almanac and tables would give it otherwise: each a
#: sentence of the note above a blank form, said when one of its lines is on the form (and, where given, only on
#: those pages).
WITH_THIS_PAPER = (
    (("gha_hour_worked", "dec_hour_worked"), "GHA and Dec at the whole hour: the hourly page", ()),
    (("sha_worked",), "a star's GHA at the whole hour is Aries's; its SHA and Dec: the stars page", ()),
    (("polaris_corr_worked",), "GHA Aries at the whole hour: the hourly page", ()),
    (("increment_worked", "d_corr_worked"), "the increment and the d correction: f × (next hour − this hour), f = "
                                            "(minutes + seconds/60) / 60", ()),
    (("v_corr_worked",), "the v correction: 0 (the increment is the whole change)", ()),
    (("dip_worked", "refraction_worked"), "dip and refraction (× the air's factor): the corrections pages", ()),
    (("sd_worked",), "SD: the Sun's by date (Altitude corrections: the Moon, the Sun and the planets)", ("Sun", "Noon")),
    (("sd_worked",), "SD: 0.2725 × HP (HP from the hourly page) and its growth with altitude (Altitude corrections: the Moon, the Sun and the planets)",
     ("Moon",)),
    (("parallax_worked",), "parallax: 0.15′ × cos Ha", ("Sun", "Noon")),
    (("parallax_worked",), "parallax: the table by h and HP (Altitude corrections: the Moon, the Sun and the planets)", ("Moon",)),
    (("parallax_worked",), "parallax: Venus and Mars HP × cos Ha, HP by date (Altitude corrections: the Moon, the Sun and the planets); Jupiter and "
                           "Saturn none", ("Planets",)),
    (("additional_worked",), "the phase of Venus and Mars: by date, with its rule (Altitude corrections: the Moon, the Sun and the planets)", ()),
    (("main_worked", "hp_corr_worked", "upper_limb_worked"), "the main (first) correction, the HP correction and "
                                                             "the upper limb's −30′ are an almanac's tables: leave "
                                                             "them blank and write the parts", ()),
    (("tab_hc_worked",), "work from the DR by calculator (the formulas page): the DR is the position, LHA = GHA + "
                         "longitude; leave the tables' lines blank", ()),
    (("polaris_corr_worked",), "the Polaris correction: first term + second term of the Polaris page (no 1° to "
                               "take off)", ()),
    (("reduction_worked",), "ex-meridian: the reduction = a × t², t the minutes of time from meridian passage, a "
                            "= 1.9635″ cos L cos d / sin(L ∼ d)", ()),
    (("zenith_distance_worked",), "latitude = Dec ± (90° − Ho) as The noon Sun page says", ()),
    (("amplitude_worked",), "amplitude: sin A = sin Dec / cos latitude, the bearing taken with the Sun's centre "
                            "on the celestial horizon (its lower limb about half a diameter above the sea "
                            "horizon); azimuth: Zn by the formulas page; compass error = true − compass bearing "
                            "(compass least, error east); deviation = compass error − variation", ()),
)


def _form_note(title: str) -> str:
    """The note above a blank form: whose lines these are, and how this paper gives the ones an almanac would."""
    from ..io.markingbook import block_lines
    from ..io.sightbook import PAGES

    keys = {line.key for line in block_lines(PAGES[title])}
    said = [words for wanted, words, pages in WITH_THIS_PAPER if keys & set(wanted) and (not pages or title in pages)]
    return (f"The lines of the sight book's {title} page (navred mark --template), three workings side by side, so "
            "that a working can be typed into the sight book and marked. With this paper: " + "; ".join(said) + ".")


def _blank_forms(track, first, days, polaris: bool = True) -> list[Page]:
    from ..figures.paperforms import blank_plotting_sheet, plotting_bands
    from ..io.markingpages import blank_form_page
    from ..io.sightbook import PAGES

    pages = [blank_form_page(title, _form_note(title)) for title in PAGES if polaris or title != "Polaris"]
    hours = np.arange(0, days * 24 + 1, 6)
    start = first.astype("datetime64[ns]")
    lats, _ = track.position(start + hours * np.timedelta64(NS_PER_HOUR, "ns"))
    for band in plotting_bands(lats)[:6]:
        pages.append(Page("", (Drawing(blank_plotting_sheet(band)),)))
    log = Table(("Date", "Zone time", "ZD", "Log nm", "Course °T", "Speed kn", "Run nm", "DR lat", "DR lon",
                 "Set, drift", "Remarks, sights"), tuple(("",) * 11 for _ in range(20)),
                widths=(0.8, 0.7, 0.4, 0.65, 0.7, 0.65, 0.6, 1.1, 1.2, 0.8, 2.0), font_size=7.4, row_height=19.5)
    pages.append(Page("DR log", (Text("Each alteration, each fix and each change of speed on a line; the run "
                                      "= speed × time.", "small"), log), landscape=True))
    return pages


__all__ = ["sight_days", "PassagePaper", "passage_paper", "WITH_THIS_PAPER", "POLARIS_FROM_LAT_DEG", "polaris_in_reach"]
