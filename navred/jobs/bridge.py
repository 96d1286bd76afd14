"""navred plan for the bridge: the sight plan a watch officer can use on deck, and what the printed paper shares.

Edge code. Along the DR track, for each local date: the twilights, sunrise, sunset and the Sun's
meridian passage in zone time and UTC to the minute, the noon Hs to preset; for each twilight the
bodies with the Hs to preset (Hc with every correction taken back off), the limb (the Moon's lit
limb), Hc, Zn and magnitude, the recommended set; the daytime fix windows. As console text, as two
CSV tables, and as printed pages (a page per twilight with the sky picture).
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..angles import format_angle
from ..constants import NS_PER_MINUTE
from ..plan import EVENT_KEYS, body_meridian_passage
from ..presets import SightPresets, preset_hs_deg, sight_presets
from ..reckoning import DRTrack, zone_description_h
from ..sightplan import DayWindow, SightPlan, daytime_fix_windows, sight_plans, twilight_plans
from ..timescales import utc_datetime64


def signed(value: float, decimals: int = 1) -> str:
    """A signed number as printed: the minus sign (−), no sign for a positive value, '' for NaN."""
    if value != value:
        return ""
    text = f"{abs(value):.{decimals}f}"
    return ("−" + text) if value < 0 and float(text) != 0.0 else text


def dm(angle_deg: float, kind: str = "angle") -> str:
    """An angle as printed in degrees and minutes (format_angle), '' for NaN."""
    return "" if angle_deg != angle_deg else str(format_angle(float(angle_deg), kind))


def to_minute(utc64) -> np.datetime64:
    """An instant rounded to the nearest whole minute."""
    ns = np.datetime64(utc64, "ns").astype(np.int64)
    return np.datetime64(int(round(ns / NS_PER_MINUTE)) * NS_PER_MINUTE, "ns")


def hm(utc64) -> str:
    """HH:MM of an instant rounded to the minute, '' for none."""
    if utc64 is None or np.isnat(np.datetime64(utc64, "ns")):
        return ""
    return str(to_minute(utc64))[11:16]


def utc_stamp(utc64, date) -> str:
    """'HH:MM UTC' of an instant printed under ``date`` (a heading's or a line's date, most often a zone date),
    with the UTC date added where it is another: '06:40 UTC 7 Dec'. The hourly GHA and Dec go by the UTC date,
    so a UTC time without its date under a zone date that is not its own sends a navigator to the wrong day's
    page; '' for none."""
    if utc64 is None or np.isnat(np.datetime64(utc64, "ns")):
        return ""
    other = utc_date_if_other(utc64, date)
    return f"{hm(utc64)} UTC" + (f" {short_date(other)}" if other is not None else "")


def utc_hm(utc64, date) -> str:
    """'HH:MM' of a UTC instant printed under ``date``, with its UTC date where it is another: '06:40 7 Dec'."""
    other = utc_date_if_other(utc64, date)
    return hm(utc64) + (f" {short_date(other)}" if other is not None else "")


def utc_date_if_other(utc64, date) -> np.datetime64 | None:
    """The UTC date of an instant (rounded to the minute, as printed) where it is not ``date``, else None."""
    on = to_minute(utc64).astype("datetime64[D]")
    return None if date is not None and on == np.datetime64(date, "D") else on


def short_date(day) -> str:
    """A date as '7 Dec' (the month in letters: never a day-first or month-first reading)."""
    value = dt.date.fromisoformat(str(np.datetime64(day, "D")))
    return f"{value.day} {MONTHS[value.month - 1]}"


MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")


def zone_time(utc64, zone_h: float) -> np.datetime64:
    """Zone time of a UTC instant: ZT = UTC − ZD."""
    return np.datetime64(utc64, "ns") - np.timedelta64(int(round(zone_h * 60)), "m")


def zone_text(zd: float) -> str:
    """A zone description as the trade writes it: +1, −3, 0."""
    return "0" if zd == 0 else (f"+{zd:.0f}" if zd > 0 else f"−{abs(zd):.0f}")


def long_date(day) -> str:
    value = dt.date.fromisoformat(str(np.datetime64(day, "D")))
    return value.strftime("%A %d %B %Y").replace(" 0", " ")


@dataclass(frozen=True)
class PlannedTwilight:
    """One planned round of sights: its label, the zone description kept, the twilight's nautical and civil
    instants (NaT for a plan at a given instant), the plan (at the planned time rounded to the minute) and
    the presets of its bodies."""

    label: str
    kind: str
    zone_h: float
    nautical: np.datetime64
    civil: np.datetime64
    plan: SightPlan
    presets: SightPresets
    local_date: np.datetime64 | None = None

    @property
    def zone_date(self) -> np.datetime64:
        """The date by the zone time of the planned instant (ZT = UTC − ZD)."""
        return zone_date(self.presets.utc, self.zone_h)


@dataclass(frozen=True)
class NoonSun:
    """Local apparent noon at the moving DR: UTC, the zone description, the DR then, the Sun's Dec, Hc, the
    Hs to preset (lower limb) and where to look (N or S)."""

    date: np.datetime64
    utc: np.datetime64
    zone_h: float
    lat_deg: float
    lon_deg: float
    dec_deg: float
    hc_deg: float
    hs_deg: float
    bearing: str

    @property
    def zone_date(self) -> np.datetime64:
        """The date by the zone time of the meridian passage (ZT = UTC − ZD); ``date`` is the ship's local day
        it falls in."""
        return zone_date(self.utc, self.zone_h)


@dataclass(frozen=True)
class DayEvents:
    """One row of the day's times: a zone date and zone description, and the events that fall in them (UTC
    instants, NaT when the event does not happen or falls in another row: after a change of zone, or across
    the date line, one local day's events fall in two rows)."""

    date: np.datetime64
    zone_h: float
    times: dict


def departure_words(first_date, lon_deg: float, zone_given: float | None) -> str:
    """The instant a DR given "at 00:00 of the first date" is for, as the ship's clock and as UTC (with its UTC
    date, always): '00:00 zone time (ZD −12) of 2026-12-10 = 12:00 UTC 9 Dec'. The zone is the one
    kept (--zone), else the nautical zone of the longitude (:func:`navred.plan.zone_midnight`)."""
    from ..plan import zone_midnight

    first = np.datetime64(str(first_date)[:10], "D")
    zd = zone_for(lon_deg, zone_given)
    utc = zone_midnight(first, lon_deg, zd)
    return f"00:00 zone time (ZD {zone_text(zd)}) of {first} = {utc_stamp(utc, None)}"


def zone_for(lon_deg: float, given: float | None) -> float:
    """The zone description kept: the one given, else the nautical zone of the longitude."""
    return (float(given) if given is not None else float(zone_description_h(lon_deg))) + 0.0  # no −0


def zone_date(utc64, zone_h: float) -> np.datetime64:
    """The date by zone time of a UTC instant (ZT = UTC − ZD)."""
    return zone_time(utc64, zone_h).astype("datetime64[D]")


def zone_at(utc64, track: DRTrack, given: float | None) -> np.ndarray:
    """The zone description of each instant: the one given (the ship's clocks), else the DR's nautical zone then."""
    when = np.atleast_1d(np.asarray(utc64, dtype="datetime64[ns]"))
    if given is not None:
        return np.full(when.shape, float(given))
    _, lon = track.position(when)
    return np.asarray(zone_description_h(lon), dtype=float)


def zone_rows(events: dict, track: DRTrack, given: float | None) -> list[DayEvents]:
    """The day's times by zone date: every event with the zone description of its own instant (the DR's zone
    then, or the one given) and its zone date; the events in time order, a row for each run of one zone date
    and zone description. Across the date line eastbound (ZD −12 to +12) the zone date goes back a day and a
    date is lived twice; westbound it goes forward a day and part of a date is never lived."""
    utc, keys = [], []
    for d in range(len(events["date"])):
        for key in EVENT_KEYS:
            if not np.isnat(events[key][d]):
                utc.append(np.datetime64(events[key][d], "ns"))
                keys.append(key)
    if not utc:
        return [DayEvents(np.datetime64(day, "D"), float(zone_at(day, track, given)[0]),
                          {key: np.datetime64("NaT", "ns") for key in EVENT_KEYS}) for day in events["date"]]
    order = np.argsort(np.array(utc, dtype="datetime64[ns]"), kind="stable")
    when = np.array(utc, dtype="datetime64[ns]")[order]
    zones = zone_at(when, track, given)
    rows: list[DayEvents] = []
    for k, i in enumerate(order):
        date, zd, key = zone_date(when[k], zones[k]), float(zones[k]), keys[i]
        row = rows[-1] if rows else None
        if row is None or row.date != date or row.zone_h != zd or not np.isnat(row.times[key]):
            row = DayEvents(date, zd, {name: np.datetime64("NaT", "ns") for name in EVENT_KEYS})
            rows.append(row)
        row.times[key] = when[k]
    return rows


@dataclass(frozen=True)
class ZoneChange:
    """The DR passes from one nautical zone to the next (to the minute): the UTC, the zone descriptions before
    and after, and the DR's longitude."""

    utc: np.datetime64
    zone_before_h: float
    zone_after_h: float
    lon_deg: float

    def text(self) -> str:
        jump = self.zone_after_h - self.zone_before_h
        line = (f"About {str(self.utc)[:16].replace('T', ' ')} UTC the DR ({dm(self.lon_deg, 'lon')}) passes from zone "
                f"{zone_text(self.zone_before_h)} to {zone_text(self.zone_after_h)}")
        if abs(jump) > 12:
            before = zone_date(self.utc - np.timedelta64(1, "m"), self.zone_before_h)
            after = zone_date(self.utc, self.zone_after_h)
            dates = f" (the ship's date {short_date(before)} becomes {short_date(after)})"
            line += (": the date line. Eastbound (−12 to +12) the zone date goes back a day" + dates + ": a date is "
                     "lived twice" if jump > 0 else ": the date line. Westbound (+12 to −12) the zone date goes "
                     "forward a day" + dates + ": a date is skipped")
            line += "; the times here keep the DR's zone at each event (give --zone to keep the ship's clocks)"
        return line + "."


def zone_changes(track: DRTrack, start, end, given: float | None) -> list[ZoneChange]:
    """Where the DR's nautical zone changes between ``start`` and ``end`` (none when the zone is given)."""
    if given is not None:
        return []
    start, end = np.datetime64(start, "ns"), np.datetime64(end, "ns")
    step = np.timedelta64(10 * NS_PER_MINUTE, "ns")
    grid = np.arange(start, end + step, step)
    zones = zone_at(grid, track, None)
    out = []
    for k in np.flatnonzero(np.diff(zones) != 0):
        fine = np.arange(grid[k], grid[k + 1] + np.timedelta64(NS_PER_MINUTE, "ns"), np.timedelta64(NS_PER_MINUTE, "ns"))
        z = zone_at(fine, track, None)
        j = int(np.flatnonzero(z != zones[k])[0])
        _, lon = track.position(fine[j:j + 1])
        out.append(ZoneChange(fine[j], float(zones[k]), float(z[j]), float(lon[0])))
    return out


def planned_rounds(events: dict, plans: list[SightPlan], track: DRTrack, *, eye_height_m: float,
                   index_error_arcmin: float, zone_given: float | None, count: int, min_alt_deg: float,
                   max_alt_deg: float, label: str | None = None) -> list[PlannedTwilight]:
    """Each plan again at its time rounded to the whole minute (a watch works to the minute), with its bodies'
    presets; a twilight is named by its own zone date (the zone of the DR then, or the one given) and belongs to
    the local day whose noon is nearest (``local_date``)."""
    rounds = []
    noon = events["meridian_passage"].astype(np.int64)
    for plan in plans:
        when = to_minute(plan.utc)
        lat, lon = (float(v[0]) for v in track.position(np.array([when])))
        again = sight_plans(np.array([when]), np.array([lat]), np.array([lon]), count=count, min_alt_deg=min_alt_deg,
                            max_alt_deg=max_alt_deg)[0]
        if again.body.size == 0:
            continue
        presets = sight_presets(again.body, when, lat, lon, eye_height_m=eye_height_m,
                                index_error_arcmin=index_error_arcmin)
        day = int(np.argmin(np.abs(noon - when.astype(np.int64))))
        zd = zone_for(lon, zone_given)
        if label is not None:
            kind, name, nautical, civil = "Sight plan", label, np.datetime64("NaT"), np.datetime64("NaT")
        else:
            morning = when < events["meridian_passage"][day]
            kind = "Morning twilight" if morning else "Evening twilight"
            name = f"{kind}, {long_date(zone_date(when, zd))}"
            nautical = events["nautical_dawn" if morning else "nautical_dusk"][day]
            civil = events["civil_dawn" if morning else "civil_dusk"][day]
        rounds.append(PlannedTwilight(name, kind, zd, nautical, civil, again, presets,
                                      np.datetime64(events["date"][day], "D")))
    return unique_names(rounds)


def unique_names(rounds: list[PlannedTwilight]) -> list[PlannedTwilight]:
    """Every round named once: over the date line eastbound a zone date is lived twice, and its two morning (or
    evening) twilights would share a name; each such name takes its zone ('Morning twilight, Thursday 10 December
    2026 (ZD −12)' and '… (ZD +12)'), and, were that not enough, its UTC."""
    from dataclasses import replace

    def renamed(items, extra):
        seen: dict[str, int] = {}
        for r in items:
            seen[r.label] = seen.get(r.label, 0) + 1
        return [replace(r, label=f"{r.label} ({extra(r)})") if seen[r.label] > 1 else r for r in items]

    rounds = renamed(rounds, lambda r: f"ZD {zone_text(r.zone_h)}")
    return renamed(rounds, lambda r: f"{hm(r.presets.utc)} UTC {short_date(to_minute(r.presets.utc))}")


def heading_date(round_: PlannedTwilight) -> np.datetime64:
    """The date a round is named by: its zone date (a plan made at a UTC instant too: the ship's date then, its
    UTC date printed beside the UTC time where it is another)."""
    return round_.zone_date


def twilight_times(round_: PlannedTwilight, zone_h: float) -> str:
    """A round's twilight in zone time, in the order they come: 'nautical twilight 04:39, civil 05:13' in the
    morning, 'civil twilight 18:42, nautical 19:16' in the evening."""
    nautical, civil = hm(zone_time(round_.nautical, zone_h)), hm(zone_time(round_.civil, zone_h))
    return (f"nautical twilight {nautical}, civil {civil}" if round_.nautical < round_.civil else
            f"civil twilight {civil}, nautical {nautical}")


def noon_suns(events: dict, track: DRTrack, *, eye_height_m: float, index_error_arcmin: float,
              zone_given: float | None) -> list[NoonSun]:
    """The Sun's meridian passage at the moving DR on each local date, and the lower limb's Hs to preset."""
    from ..almanac import places

    out = []
    for d in range(len(events["date"])):
        if np.isnat(events["meridian_passage"][d]):
            continue
        noon = body_meridian_passage("Sun", events["meridian_passage"][d], track)
        sun = places("Sun", np.array([noon["utc"]]))
        hs = preset_hs_deg(noon["hc_deg"], limb="lower", sd_arcmin=float(sun.sd_arcmin[0]),
                           hp_arcmin=float(sun.hp_arcmin[0]), eye_height_m=eye_height_m,
                           index_error_arcmin=index_error_arcmin, lat_deg=noon["lat_deg"],
                           zn_deg=0.0 if noon["bearing"] == "N" else 180.0)
        out.append(NoonSun(events["date"][d], noon["utc"], zone_for(noon["lon_deg"], zone_given), noon["lat_deg"],
                           noon["lon_deg"], noon["dec_deg"], noon["hc_deg"], float(hs), noon["bearing"]))
    return out


def provenance_line(dut1_s: np.ndarray, sources) -> str:
    """Where the numbers come from, for the heading of a printed page."""
    from .. import __version__
    from ..timescales import iers_table

    low, high = (signed(float(v), 2) for v in (np.min(dut1_s), np.max(dut1_s)))
    return (f"navred {__version__}: JPL DE421 (jplephem), IAU 2006/2000B precession-nutation and sidereal time "
            f"(ERFA), stars from Hipparcos 2; UT1−UTC {low if low == high else f'{low} to {high}'} s "
            f"({', '.join(sorted(set(map(str, sources))))}; IERS table measured to {iers_table().last_measured_date}). "
            "Times are UTC unless marked zone time.")


@dataclass(frozen=True)
class BridgePlan:
    """The plan of one or more days along the DR track, ready to print, show or save."""

    first_date: np.datetime64
    lat_deg: float
    lon_deg: float
    course_deg: float
    speed_kn: float
    eye_height_m: float
    index_error_arcmin: float
    zone_given: float | None
    days: tuple[DayEvents, ...]
    noons: tuple[NoonSun, ...]
    rounds: tuple[PlannedTwilight, ...]
    windows: tuple[DayWindow, ...]
    window_zones: tuple[float, ...] = ()
    changes: tuple[ZoneChange, ...] = ()
    notes: tuple[str, ...] = ()

    # --- the console ---------------------------------------------------------------------------

    def index_error_words(self) -> str:
        """The index error as the trade says it, on or off the arc (never a bare sign a reader may take for the
        correction): 'index error 2.0′ off the arc'."""
        ie = self.index_error_arcmin
        return f"index error {abs(ie):.1f}′" + (" on the arc" if ie > 0 else " off the arc" if ie < 0 else "")

    def start_words(self) -> str:
        """When the ship is at the position given, in zone time and UTC: '00:00 zone time (ZD −12) of
        2026-12-10 = 12:00 UTC 9 Dec'."""
        return departure_words(self.first_date, self.lon_deg, self.zone_given)

    def start_utc(self) -> np.datetime64:
        """The instant the DR is given for (00:00 zone time of the first date), UTC."""
        from ..plan import zone_midnight

        return np.datetime64(zone_midnight(self.first_date, self.lon_deg, self.zone_given), "ns")

    def date_line_between(self, start, end) -> list[ZoneChange]:
        """The date-line crossings of the DR after ``start`` and at or before ``end`` (UTC)."""
        start, end = np.datetime64(start, "ns"), np.datetime64(end, "ns")
        return [c for c in self.changes if abs(c.zone_after_h - c.zone_before_h) > 12 and start < c.utc <= end]

    def text_lines(self) -> list[str]:
        moving = (f", then {self.course_deg:05.1f}° at {self.speed_kn:.1f} kn" if self.speed_kn > 0 else
                  " (a fixed position)")
        lines = [f"Sight plan along the DR from {dm(self.lat_deg, 'lat')} {dm(self.lon_deg, 'lon')} at "
                 f"{self.start_words()}{moving}",
                 f"Height of eye {self.eye_height_m:g} m, {self.index_error_words()}"
                 + ": the Hs to preset is Hc with dip, refraction, SD, parallax and index error taken back off.",
                 "Times are zone time (ZT + ZD = UTC) with UTC in brackets, to the minute; a UTC time on another "
                 "date than the line it stands on carries its UTC date (take GHA and Dec for that date); '-': the "
                 "event does not happen that day."] + [f"Note: {note}." for note in self.notes] + [""]
        names = ("nautical dawn", "civil dawn", "sunrise", "noon", "sunset", "civil dusk", "nautical dusk")
        lines.extend(change.text() for change in self.changes)
        rows = []
        for day in self.days:
            cells = []
            for key in EVENT_KEYS:
                when = day.times[key]
                cells.append("-" if np.isnat(when) else f"{hm(zone_time(when, day.zone_h))} ({utc_hm(when, day.date)})")
            rows.append((day, cells))
        width = max([16] + [len(c) + 2 for _, cells in rows for c in cells])
        lines.append(f"{'date':<12}{'ZD':>4}" + "".join(f"{n:>{width}}" for n in names))
        for day, cells in rows:
            lines.append(f"{str(day.date):<12}{zone_text(day.zone_h):>4}" + "".join(f"{c:>{width}}" for c in cells))
        lines.append("")
        lines.append("Noon: the Sun on the meridian at the DR (lower limb)")
        for noon in self.noons:
            lines.append(f"  {noon.zone_date}  {hm(zone_time(noon.utc, noon.zone_h))} zone ({zone_text(noon.zone_h)}), "
                         f"{utc_stamp(noon.utc, noon.zone_date)}: bearing {noon.bearing}, Hs to preset {dm(noon.hs_deg, 'signed')} "
                         f"(Hc {dm(noon.hc_deg, 'signed')}, Dec {dm(noon.dec_deg, 'dec')}), DR "
                         f"{dm(noon.lat_deg, 'lat')} {dm(noon.lon_deg, 'lon')}")
        lines.append("")
        since = self.start_utc()
        for round_ in self.rounds:
            lines.extend(f"Before this round: {c.text()}" for c in self.date_line_between(since, round_.presets.utc))
            since = round_.presets.utc
            lines.extend(self._round_lines(round_))
            lines.append("")
        lines.append("Daytime fixes: the Sun with the Moon or a bright planet, their lines crossing at 30° or more")
        if not self.windows:
            lines.append("  none in these days")
        for k, window in enumerate(self.windows):
            zd = self.window_zones[k] if k < len(self.window_zones) else self._zone_on(window.best)
            on = zone_date(window.start, zd)
            span = (f"{hm(zone_time(window.start, zd))} to {hm(zone_time(window.end, zd))} zone ({zone_text(zd)}), "
                    f"{utc_stamp(window.start, on)} to {utc_stamp(window.end, on)}" if hm(window.start) != hm(window.end)
                    else f"only about {hm(zone_time(window.start, zd))} zone ({zone_text(zd)}), "
                    f"{utc_stamp(window.start, on)}")
            lines.append(f"  Sun and {window.body:<8} {on} {span}; best "
                         f"{hm(zone_time(window.best, zd))} zone: crossing {window.crossing_deg:.0f}°, Sun "
                         f"{window.sun_hc_deg:.0f}°, {window.body} {window.body_hc_deg:.0f}°")
        return lines

    def _zone_on(self, utc64) -> float:
        noon = np.array([n.utc for n in self.noons], dtype="datetime64[ns]")
        if noon.size == 0:
            return zone_for(self.lon_deg, self.zone_given)
        return self.noons[int(np.argmin(np.abs((noon - np.datetime64(utc64, "ns")).astype(np.int64))))].zone_h

    def _round_lines(self, round_: PlannedTwilight) -> list[str]:
        p = round_.presets
        zd = round_.zone_h
        head = (f"{round_.label}: {hm(zone_time(p.utc, zd))} zone ({zone_text(zd)}), "
                f"{utc_stamp(p.utc, heading_date(round_))}, from DR "
                f"{dm(p.lat_deg, 'lat')} {dm(p.lon_deg, 'lon')}")
        lines = [head]
        if not np.isnat(round_.nautical):
            lines.append(f"  {twilight_times(round_, zd)} zone")
        lines.append(f"  {'body':<16}{'Hs to preset':>13}  {'limb':<7}{'Hc':>12}{'Zn':>8}{'mag':>6}  {'from Moon':>9}")
        for k in self._order(round_):
            mark = "  <- recommended" if round_.plan.recommended[k] else ""
            lines.append(f"  {p.body[k]:<16}{dm(p.hs_deg[k], 'signed') or 'below':>13}  {self._limb(p, k):<7}"
                         f"{dm(p.hc_deg[k], 'signed'):>12}{format(p.zn_deg[k], '05.1f') + '°':>8}{round_.plan.magnitude[k]:6.1f}  "
                         f"{round_.plan.moon_separation_deg[k]:8.0f}°{mark}")
            if p.body[k] == "Moon" and p.horns_vertical[k]:
                lines.append("  " + " " * 16 + "the Moon's horns point up and down: neither limb is a clean edge")
        lines.append(f"  choice: {round_.plan.explanation}")
        return lines

    @staticmethod
    def _limb(p: SightPresets, k: int) -> str:
        return {"lower": "lower", "upper": "upper"}.get(str(p.limb[k]), "")

    @staticmethod
    def _order(round_: PlannedTwilight) -> np.ndarray:
        return np.argsort(round_.presets.zn_deg, kind="stable")

    # --- the tables -----------------------------------------------------------------------------

    def events_table(self):
        """One row per local date: each event in UTC and zone time to the minute, and the noon Sun."""
        import pandas as pd

        rows = []
        def noon_of(passage):  # the noon Sun worked from this row's meridian passage (found again at the DR)
            near = [n for n in self.noons if abs((n.utc - passage) / np.timedelta64(1, "m")) < 60]
            return near[0] if near else None

        for day in self.days:
            row = {"date": str(day.date), "zone_description_h": day.zone_h}
            for key in EVENT_KEYS:
                when = day.times[key]
                row[f"{key}_utc"] = "" if np.isnat(when) else str(to_minute(when))[:16].replace("T", " ")
                row[f"{key}_zone_time"] = "" if np.isnat(when) else hm(zone_time(when, day.zone_h))
            noon = None if np.isnat(day.times["meridian_passage"]) else noon_of(day.times["meridian_passage"])
            if noon is not None:
                row.update({"noon_lat_deg": noon.lat_deg, "noon_lon_deg": noon.lon_deg, "noon_dec_deg": noon.dec_deg,
                            "noon_hc_deg": noon.hc_deg, "noon_hs_preset_deg": noon.hs_deg,
                            "noon_bearing": noon.bearing})
            rows.append(row)
        return pd.DataFrame(rows)

    def plans_table(self):
        """One row per body of every round: the planned UTC and zone time, the presets, the recommended set."""
        import pandas as pd

        frames = []
        for round_ in self.rounds:
            p, plan = round_.presets, round_.plan
            order = self._order(round_)
            frames.append(pd.DataFrame({
                "round": round_.label, "utc": str(p.utc)[:16].replace("T", " "),
                "zone_time": hm(zone_time(p.utc, round_.zone_h)), "zone_description_h": round_.zone_h,
                "dr_lat_deg": p.lat_deg, "dr_lon_deg": p.lon_deg, "body": p.body[order],
                "hs_preset_deg": p.hs_deg[order], "limb": [self._limb(p, k) for k in order], "hc_deg": p.hc_deg[order],
                "zn_deg": p.zn_deg[order], "magnitude": plan.magnitude[order],
                "moon_separation_deg": plan.moon_separation_deg[order], "recommended": plan.recommended[order]}))
        return pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()

    # --- the printed pages ----------------------------------------------------------------------

    def document(self):
        """A page per round of sights: the times, the bodies with their Hs to preset, the sky picture, the day's
        noon; headed like every printed page (the dates, the provenance, the caution)."""
        from ..figures.plotting import sky_picture
        from ..io.cautions import CAUTION
        from ..io.printed import Document, Drawing, Page, Table, Text

        pages = []
        if not self.rounds:  # no twilight (white nights, midnight sun): the days' times and the daytime fixes
            rows = []
            for day in self.days:
                rows.append((str(day.date), zone_text(day.zone_h)) + tuple(
                    "-" if np.isnat(day.times[key]) else hm(zone_time(day.times[key], day.zone_h)) for key in EVENT_KEYS))
            blocks = [Text("No twilight dark enough for stars on these dates at this place: the days' times (zone "
                           "time) and the daytime fixes with the Sun.", "body"),
                      Table(("date", "ZD", "nautical dawn", "civil dawn", "sunrise", "noon", "sunset", "civil dusk",
                             "nautical dusk"), tuple(rows), font_size=7.6)]
            blocks += [Text(line.strip(), "body") for line in self.text_lines() if line.startswith("  Sun and ")
                       or line.startswith("  20")]
            pages.append(Page("Sight plan: no twilight", tuple(blocks)))
        for round_ in self.rounds:
            p, zd = round_.presets, round_.zone_h
            rows = []
            for k in self._order(round_):
                limb = self._limb(p, k) + (" (horns up/down)" if p.body[k] == "Moon" and p.horns_vertical[k] else "")
                rows.append((str(p.body[k]), "●" if round_.plan.recommended[k] else "", dm(p.hs_deg[k], "signed"),
                             limb, dm(p.hc_deg[k], "signed"), f"{p.zn_deg[k]:05.1f}",
                             signed(round_.plan.magnitude[k])))
            table = Table(("Body", "set", "Hs to preset", "limb", "Hc", "Zn °", "mag"), tuple(rows), font_size=7.8,
                          widths=(1.5, 0.4, 1.1, 1.2, 1.1, 0.6, 0.5), left_columns=2, width_fraction=0.85,
                          compact=True)
            blocks = [Text(f"{hm(zone_time(p.utc, zd))} zone time (ZD {zone_text(zd)}), {hm(p.utc)} UTC "
                           f"{str(p.utc)[:10]}, from DR {dm(p.lat_deg, 'lat')} {dm(p.lon_deg, 'lon')}", "subheading")]
            blocks += [Text(c.text(), "small") for c in self.changes
                       if abs(c.zone_after_h - c.zone_before_h) > 12]
            if not np.isnat(round_.nautical):
                times = twilight_times(round_, zd)
                blocks.append(Text(f"{times[0].upper()}{times[1:]} zone time. Height of eye {self.eye_height_m:g} "
                                   f"m, {self.index_error_words()}: set the Hs and "
                                   "look along the Zn. ● the recommended set of "
                                   f"{int(np.sum(round_.plan.recommended))} (--count; navred paper takes 4 unless "
                                   "told, so its set may differ).", "body"))
            blocks.append(table)
            figure = sky_picture(round_.plan, title=f"{round_.label}: {hm(zone_time(p.utc, zd))} zone, "
                                                    f"{utc_stamp(p.utc, heading_date(round_))}")
            blocks.append(Drawing(figure, 255.0 / figure.width))
            blocks.append(Text(f"Choice: {round_.plan.explanation}", "small"))
            # the noon of the round's own day: the nearest (a local date can come twice at the date line)
            noon = min(self.noons, key=lambda n: abs((n.utc - p.utc) / np.timedelta64(1, "m")), default=None)
            if noon is not None and abs((noon.utc - p.utc) / np.timedelta64(1, "h")) > 14:
                noon = None
            if noon is not None:
                blocks.append(Text(f"Noon that day: the Sun on the meridian at {hm(zone_time(noon.utc, noon.zone_h))} "
                                   f"zone ({zone_text(noon.zone_h)}, {noon.zone_date}; {utc_stamp(noon.utc, noon.zone_date)}), bearing {noon.bearing}, Hs to preset (lower limb) "
                                   f"{dm(noon.hs_deg, 'signed')}.", "body"))
            pages.append(Page(round_.label, tuple(blocks)))
        if pages:  # the first page says where the DR starts, and when, by the ship's clock and in UTC
            said = (Text(self.text_lines()[0] + ".", "small"),) + tuple(Text(f"Note: {n}.", "small") for n in self.notes)
            pages[0] = Page(pages[0].title, said + tuple(pages[0].blocks), pages[0].landscape)
        dates = sorted({d.date for d in self.days}) or [np.datetime64(self.rounds[0].presets.utc, "D")]
        valid = f"{dates[0]}" + (f" to {dates[-1]}" if len(dates) > 1 else "") + " (zone dates)"
        from ..timescales import instants

        when = [r.presets.utc for r in self.rounds] or [n.utc for n in self.noons] or [dates[0]]
        inst = instants(np.array(when, dtype="datetime64[ns]"))
        return Document("navred sight plan", valid, provenance_line(inst.dut1_s, inst.ut1_source), CAUTION,
                        tuple(pages))


#: The longest a plan at an instant (--utc) runs the DR back before the time it is given for, hours: a navigator
#: plans forward from a DR, and a DR carried back further than a day is a position she was not known to be at
#: (a wrong --date or --utc is likelier); a plan earlier than that is refused.
MAX_RUN_BACK_H = 24.0


def run_back_notes(first_date, lat_deg: float, lon_deg: float, course_deg: float, speed_kn: float,
                   zone_given: float | None, when) -> list[str]:
    """A plan at an instant before the DR's own time: the DR run back to it, said plainly ('DR run back 5.3 h
    from …'); refused beyond :data:`MAX_RUN_BACK_H`. Nothing for an instant at or after it, or a fixed position."""
    from ..errors import NavredError
    from ..plan import zone_midnight

    origin = zone_midnight(np.datetime64(str(first_date)[:10], "D"), lon_deg, zone_given)
    back_h = float((origin - np.datetime64(when, "ns")) / np.timedelta64(1, "h"))
    if back_h <= 0.0 or speed_kn <= 0.0:
        return []
    start = departure_words(first_date, lon_deg, zone_given)
    if back_h > MAX_RUN_BACK_H:
        raise NavredError(
            f"--utc {str(when)[:16].replace('T', ' ')} UTC is {back_h:.1f} h before the DR's time ({start}): the DR "
            f"would be run back {back_h:.1f} h, {back_h * speed_kn:.0f} nm back along {course_deg:05.1f}° at "
            f"{speed_kn:.1f} kn; a plan runs the DR back at most {MAX_RUN_BACK_H:g} h (a navigator plans forward): "
            "give the DR for a time at or before the plan (--date, --lat, --lon), or check --utc and --date")
    return [f"DR run back {back_h:.1f} h ({back_h * speed_kn:.1f} nm back along {course_deg:05.1f}° at {speed_kn:.1f} "
            f"kn) from {start} to the plan's {utc_stamp(when, None)}: the plan is before the DR's time; a position "
            "carried back is only as good as the course and speed were then"]


def zone_notes(lat_deg: float, lon_deg: float, zone_given: float | None) -> list[str]:
    """What the plan says about the zone at the DR given: a zone kept (--zone) that is not the DR's nautical
    zone (accepted: a ship may keep another zone), and the zone taken on the 180° meridian itself."""
    nautical = float(zone_description_h(lon_deg)) + 0.0
    at_line = abs(float(lon_deg)) == 180.0
    if zone_given is not None and float(zone_given) != nautical:
        return [f"Zone kept {zone_text(float(zone_given))} (--zone), not the nautical zone of the DR's longitude "
                f"{dm(float(lon_deg), 'lon')}, which is {zone_text(nautical)}"
                + (" (on the 180° meridian: −12 or +12; navred takes −12 unless told)" if at_line else "")
                + ": every zone time here is by the zone kept, as the ship's clocks are; check it is the one "
                "they keep"]
    if zone_given is None and at_line:
        return [f"The DR is on the 180° meridian: ZD {zone_text(nautical)} taken (navred's rule: the meridian "
                "itself in the zone east of the line); if the ship's clocks keep +12, give --zone +12"]
    return []


def bridge_plan(first_date: object, days: int, lat_deg: float, lon_deg: float, *, course_deg: float = 0.0,
                speed_kn: float = 0.0, eye_height_m: float = 0.0, index_error_arcmin: float = 0.0,
                zone_description_h: float | None = None, count: int = 3, min_alt_deg: float = 15.0,
                max_alt_deg: float = 70.0, at: object | None = None) -> BridgePlan:
    """The plan of ``days`` local dates from ``first_date`` along the DR track (from (``lat_deg``, ``lon_deg``)
    at 00:00 zone time of the first date, the ship's clock: ``zone_description_h``, else the longitude's zone;
    on ``course_deg`` at ``speed_kn``): every twilight, or the one instant ``at`` instead."""
    events, plans = twilight_plans(str(first_date), days, lat_deg, lon_deg, course_deg=course_deg, speed_kn=speed_kn,
                                   eye_height_m=eye_height_m, zone_h=zone_description_h, count=count,
                                   min_alt_deg=min_alt_deg, max_alt_deg=max_alt_deg)
    track = events["track"]
    label = None
    notes = list(zone_notes(lat_deg, lon_deg, zone_description_h))
    if at is not None:
        when = to_minute(utc_datetime64(at))
        notes += run_back_notes(first_date, lat_deg, lon_deg, course_deg, speed_kn, zone_description_h, when)
        lat, lon = track.position(np.array([when]))
        plans = sight_plans(np.array([when]), lat, lon, count=count, min_alt_deg=min_alt_deg, max_alt_deg=max_alt_deg)
        label = f"Sight plan, {zone_date(when, zone_for(float(lon[0]), zone_description_h))}"
    options = dict(eye_height_m=eye_height_m, index_error_arcmin=index_error_arcmin, zone_given=zone_description_h)
    rounds = planned_rounds(events, plans, track, count=count, min_alt_deg=min_alt_deg, max_alt_deg=max_alt_deg,
                            label=label, **options)
    noons = noon_suns(events, track, **options)
    day_events = zone_rows(events, track, zone_description_h)
    windows = daytime_fix_windows(str(first_date), days, lat_deg, lon_deg, course_deg=course_deg, speed_kn=speed_kn,
                                  min_alt_deg=min_alt_deg, max_alt_deg=max_alt_deg, zone_h=zone_description_h)
    window_zones = tuple(float(zone_at(w.best, track, zone_description_h)[0]) for w in windows)
    found = [np.datetime64(events[key][d], "ns") for key in EVENT_KEYS for d in range(len(events["date"]))
             if not np.isnat(events[key][d])]
    # from the DR's own time (a date line crossed before the first twilight is announced too) to the last event
    from ..plan import zone_midnight

    origin = np.datetime64(zone_midnight(np.datetime64(str(first_date)[:10], "D"), lon_deg, zone_description_h), "ns")
    found += [origin] + [np.datetime64(r.presets.utc, "ns") for r in rounds]
    changes = zone_changes(track, min(found), max(found), zone_description_h)
    if zone_description_h is not None:  # a zone kept: the DR's own crossing of the line changes no date here
        notes += [f"The DR crosses the date line about {str(c.utc)[:16].replace('T', ' ')} UTC ({dm(c.lon_deg, 'lon')}"
                  f"), but the zone kept ({zone_text(float(zone_description_h))}, --zone) stays: every date and zone "
                  "time here is by it, and the ship's date changes only when her clocks do"
                  for c in zone_changes(track, min(found), max(found), None)
                  if abs(c.zone_after_h - c.zone_before_h) > 12]
    return BridgePlan(np.datetime64(str(first_date)[:10], "D"), float(lat_deg), float(lon_deg), float(course_deg),
                      float(speed_kn), float(eye_height_m), float(index_error_arcmin), zone_description_h,
                      tuple(day_events), tuple(noons), tuple(rounds), tuple(windows), window_zones, tuple(changes),
                      tuple(notes))


def plans_csv_path(path: str | Path) -> Path:
    """Where :func:`write_plan_files` writes the plans table beside the day's times (the name with -plans)."""
    target = Path(path)
    return target.with_name(target.stem + "-plans" + target.suffix)


def write_plan_files(plan: BridgePlan, files: dict[str, str]) -> list[Path]:
    """The plan's files by suffix: .txt (the text shown), .pdf (a page per round, for the bridge), .csv (the
    day's times, and the plans beside it: :func:`plans_csv_path`), .png or .svg (the first round's sky). The
    files written, in that order."""
    from ..io.output import atomic_write, csv_text, write_text

    written = []
    if ".txt" in files:
        written.append(write_text(files[".txt"], "\n".join(plan.text_lines()) + "\n"))
    if ".pdf" in files:
        from ..io.printed import write_pdf

        written.append(write_pdf(plan.document(), files[".pdf"]))
    if ".csv" in files:
        events, table = csv_text(plan.events_table()), csv_text(plan.plans_table())
        written.append(write_text(files[".csv"], events))
        written.append(write_text(plans_csv_path(files[".csv"]), table))
    pictures = [files[s] for s in (".png", ".svg") if s in files]
    if pictures and plan.rounds:
        from ..figures.plotting import save_figure, sky_picture

        first = plan.rounds[0]
        for path in pictures:
            written.append(atomic_write(path, lambda p: save_figure(sky_picture(first.plan, title=first.label), p)))
    return written

__all__ = ["BridgePlan", "PlannedTwilight", "ZoneChange", "zone_rows", "zone_changes", "zone_at", "zone_date", "NoonSun", "DayEvents", "bridge_plan", "planned_rounds", "noon_suns",
           "provenance_line", "write_plan_files", "twilight_times", "plans_csv_path", "signed", "dm", "hm", "zone_time", "zone_text", "to_minute", "long_date", "zone_for", "departure_words", "MAX_RUN_BACK_H", "unique_names",
           "run_back_notes", "zone_notes"]
