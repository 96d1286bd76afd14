"""For the watch's compass: the day's azimuth table and amplitudes along the DR, and the compass error book.

Edge code: the core (:mod:`navred.compass`, :mod:`navred.plan`) gives the numbers; this sets them as
console text, tables (pandas) and printed pages (:mod:`navred.io.printed`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..compass import (
    Amplitudes,
    DeviationCurve,
    amplitudes,
    azimuth_table,
    compass_error_deg,
    deviation_card,
    deviation_coefficients,
    deviation_deg,
    gyro_error_deg,
    true_azimuth,
    twilight_bearing_bodies,
)
from ..constants import NS_PER_MINUTE
from ..errors import NavredError
from ..plan import voyage_events
from .bridge import (
    departure_words,
    dm,
    hm,
    provenance_line,
    signed,
    to_minute,
    zone_at,
    zone_date,
    zone_text,
    zone_time,
)

#: A deviation larger than this (degrees) is flagged: a compass in use is adjusted to well within it, so a wrong
#: time, position, body or heading is likelier  # common practice
LARGE_DEVIATION_DEG = 10.0


def _east_west(value: float) -> str:
    return "" if value != value else f"{abs(value):.1f}° {'E' if value >= 0 else 'W'}"


def _high_low(value: float) -> str:
    return "" if value != value else f"{abs(value):.1f}° {'high' if value >= 0 else 'low'}"


@dataclass(frozen=True)
class WatchAzimuths:
    """The days' azimuth tables and amplitudes: ``sun`` (one row per instant: utc, zone time, Zn, Hc),
    ``twilight`` (the bright body chosen for each twilight, its Zn and Hc at the same interval),
    ``risings`` (sunrise and sunset, and the amplitude's instant, true amplitude and bearing)."""

    sun: pd.DataFrame
    twilight: pd.DataFrame
    risings: pd.DataFrame
    step_minutes: float
    #: the local dates the tables hold ('2026-03-26 to 2026-03-28 (local dates)'), for the printed pages
    valid_for: str = ""
    #: where and when the DR starts, by the ship's clock and in UTC ('Along the DR from 17° 00.0′ S 177° 00.0′ E at
    #: 00:00 zone time (ZD −12) of 2026-12-10 = 12:00 UTC 9 Dec, then 090.0° at 12.0 kn')
    start: str = ""

    def text_lines(self) -> list[str]:
        lines = ([self.start, ""] if self.start else []) + ["Sunrise and sunset along the DR: the true amplitude when the Sun's centre is on the celestial "
                 "horizon (its lower limb about half a diameter above the visible horizon)"]
        for r in self.risings.to_dict("records"):
            lines.append(f"  {r['date']} {r['event']:<7} visible {r['visible_zone_time']} zone "
                         f"({zone_text(r['zone_description_h'])}; {r['visible_utc'][11:]} "
                         f"UTC); centre on the horizon {r['amplitude_zone_time']} zone ({r['amplitude_utc'][11:]} UTC): "
                         f"amplitude {r['amplitude']}, true bearing {r['zn']}")
        lines.append("")
        lines.append(f"The Sun's true azimuth every {self.step_minutes:g} minutes (zone time, UTC in brackets)")
        lines.append(f"  {'zone date':<11} {'zone':>5} {'ZD':>3} {'(UTC)':>7} {'Zn':>6} {'Hc':>7}")
        for r in self.sun.to_dict("records"):
            lines.append(f"  {r['zone_date']:<11} {r['zone_time']:>5} {zone_text(r['zone_description_h']):>3} "
                         f"({r['utc'][11:]}) {r['zn_deg']:05.1f}° {r['hc_deg']:6.1f}°")
        if len(self.twilight):
            lines.append("")
            lines.append("At twilight: a bright body low enough for a compass bearing (3° to 25°)")
            for r in self.twilight.to_dict("records"):
                lines.append(f"  {r['zone_date']:<11} {r['zone_time']:>5} {zone_text(r['zone_description_h']):>3} "
                             f"({r['utc'][11:]}) {r['body']:<10} {r['zn_deg']:05.1f}° {r['hc_deg']:6.1f}°")
        return lines

    def document(self, valid: str | None = None):
        from ..io.cautions import CAUTION
        from ..io.printed import Document, Page, Table, Text
        from ..timescales import instants

        rises = Table(("Zone date", "ZD", "Event", "visible (zone)", "centre on horizon (zone)", "centre (UTC)",
                       "amplitude", "true Zn"),
                      tuple((r["date"], zone_text(r["zone_description_h"]), r["event"], r["visible_zone_time"],
                             r["amplitude_zone_time"], r["amplitude_utc"][11:], r["amplitude"], r["zn"])
                            for r in self.risings.to_dict("records")),
                      title="Sunrise and sunset: the true amplitude", font_size=7.6,
                      widths=(0.9, 0.4, 0.6, 0.9, 1.4, 0.6, 0.9, 0.7))
        sun = Table(("Zone date", "zone time", "ZD", "UTC", "Sun Zn", "Hc"),
                    tuple((r["zone_date"], r["zone_time"], zone_text(r["zone_description_h"]), r["utc"][11:],
                           f"{r['zn_deg']:05.1f}", dm(r["hc_deg"], "signed"))
                          for r in self.sun.to_dict("records")),
                    title=f"The Sun's true azimuth every {self.step_minutes:g} minutes", font_size=7.6, compact=True,
                    width_fraction=0.6, shade_every=3)
        blocks = [Text("Compare each bearing with the row at its time, interpolating between rows: the difference is "
                       "the compass error (gyro: high when it reads more than true; magnetic: east when it reads "
                       "less). Log each with the ship's heading: navred compass-book works them out.", "small"),
                  rises, sun]
        if self.start:  # where and when the DR starts, first
            blocks.insert(0, Text(self.start + ".", "small"))
        if len(self.twilight):
            blocks.append(Table(("Zone date", "zone time", "ZD", "UTC", "body", "Zn", "Hc"),
                                tuple((r["zone_date"], r["zone_time"], zone_text(r["zone_description_h"]),
                                       r["utc"][11:], r["body"], f"{r['zn_deg']:05.1f}",
                                       dm(r["hc_deg"], "signed")) for r in self.twilight.to_dict("records")),
                                title="At twilight: a bright body low enough for a compass bearing", font_size=7.6,
                                compact=True, width_fraction=0.7))
        utc = pd.to_datetime(self.sun.utc).to_numpy(dtype="datetime64[ns]")
        inst = instants(utc[:1] if utc.size else np.array([np.datetime64("2000-01-01", "ns")]))
        return Document("navred azimuths for the compass", valid or self.valid_for, provenance_line(inst.dut1_s, inst.ut1_source),
                        CAUTION, (Page("Azimuths and amplitudes along the DR", tuple(blocks)),))


def watch_azimuths(first_date: object, days: int, lat_deg: float, lon_deg: float, *, course_deg: float = 0.0,
                   speed_kn: float = 0.0, step_minutes: float = 10.0, eye_height_m: float = 0.0,
                   zone_description_h: float | None = None) -> WatchAzimuths:
    """The Sun's azimuth from sunrise to sunset every ``step_minutes`` along the DR, the amplitudes, and a bright body
    at each twilight (from nautical to civil twilight) at the same interval."""
    events = voyage_events(str(first_date), days, lat_deg, lon_deg, eye_height_m=eye_height_m, course_deg=course_deg,
                           speed_kn=speed_kn, zone_h=zone_description_h)
    track = events["track"]
    sun_rows, twilight_rows, rise_rows = [], [], []
    found: Amplitudes = amplitudes(events)
    step = np.timedelta64(int(round(step_minutes * NS_PER_MINUTE)), "ns")
    for d in range(len(events["date"])):
        def zone(when):  # each instant's own zone: the DR's then (or the one given)
            return float(zone_at(when, track, zone_description_h)[0])

        for event, visible, when, amplitude, zn in (
                ("sunrise", events["sunrise"][d], found.rising_utc[d], found.rising_amplitude_deg[d],
                 found.rising_zn_deg[d]),
                ("sunset", events["sunset"][d], found.setting_utc[d], found.setting_amplitude_deg[d],
                 found.setting_zn_deg[d])):
            if np.isnat(when):
                continue
            zd = zone(when)
            rise_rows.append({"date": str(zone_date(when, zd)), "event": event, "zone_description_h": zd,
                              "visible_utc": str(to_minute(visible))[:16].replace("T", " ")
                              if not np.isnat(visible) else "",
                              "visible_zone_time": hm(zone_time(visible, zd)) if not np.isnat(visible) else "",
                              "amplitude_utc": str(to_minute(when))[:16].replace("T", " "),
                              "amplitude_zone_time": hm(zone_time(when, zd)),
                              "amplitude_deg": amplitude, "zn_deg": zn,
                              "amplitude": f"{'E' if event == 'sunrise' else 'W'} {abs(amplitude):.1f}° "
                                           f"{'N' if amplitude >= 0 else 'S'}", "zn": f"{zn:05.1f}°"})
        start, end = events["sunrise"][d], events["sunset"][d]
        if np.isnat(start) or np.isnat(end):
            continue
        first = _ceil(start, step)
        times, zn, hc = azimuth_table(["Sun"], track, first, end, step_minutes)
        for t, z, h in zip(times, zn[0], hc[0]):
            zd = zone(t)
            sun_rows.append({"utc": str(np.datetime64(t, "m")).replace("T", " "), "zone_date": str(zone_date(t, zd)),
                             "zone_time": hm(zone_time(t, zd)), "zone_description_h": zd, "zn_deg": float(z),
                             "hc_deg": float(h)})
        for begin, finish in ((events["nautical_dawn"][d], events["civil_dawn"][d]),
                              (events["civil_dusk"][d], events["nautical_dusk"][d])):
            if np.isnat(begin) or np.isnat(finish):
                continue
            middle = begin + (finish - begin) // 2
            body, _, _ = twilight_bearing_bodies(np.array([middle]), track)
            if not body[0]:
                continue
            times, zn, hc = azimuth_table([body[0]], track, _ceil(begin, step), finish, step_minutes)
            for t, z, h in zip(times, zn[0], hc[0]):
                zd = zone(t)
                twilight_rows.append({"utc": str(np.datetime64(t, "m")).replace("T", " "), "zone_date": str(zone_date(t, zd)),
                                      "zone_time": hm(zone_time(t, zd)), "zone_description_h": zd, "body": body[0],
                                      "zn_deg": float(z), "hc_deg": float(h)})
    first = str(np.datetime64(str(first_date), "D"))
    last = str(np.datetime64(first) + np.timedelta64(days - 1, "D"))
    valid = first + (f" to {last}" if days > 1 else "") + " (local dates)"
    moving = f", then {float(course_deg):05.1f}° at {float(speed_kn):.1f} kn" if speed_kn > 0 else " (a fixed position)"
    start = (f"Along the DR from {dm(float(lat_deg), 'lat')} {dm(float(lon_deg), 'lon')} at "
             f"{departure_words(first, float(lon_deg), zone_description_h)}{moving}")
    return WatchAzimuths(pd.DataFrame(sun_rows), pd.DataFrame(twilight_rows), pd.DataFrame(rise_rows),
                         float(step_minutes), valid, start)


def _ceil(when, step) -> np.datetime64:
    """The first instant on the grid of ``step`` (from midnight UTC) at or after ``when``."""
    ns, size = np.datetime64(when, "ns").astype(np.int64), int(step.astype(np.int64))
    return np.datetime64(int(-(-int(ns) // size) * size), "ns")


# --- The compass error book ---------------------------------------------------------------------

@dataclass(frozen=True)
class CompassBook:
    """Every bearing worked out (``observations``), those set aside (``rejected``), the deviation curve of the
    magnetic compass (None without magnetic observations) and its card (``card``: heading, deviation)."""

    observations: pd.DataFrame
    rejected: pd.DataFrame
    curve: DeviationCurve | None
    card: pd.DataFrame
    sources: tuple[str, ...]

    #: the columns of :meth:`table`, every bearing worked out (the --csv table)
    #: the book's table holds the deviation card's columns (:data:`navred.io.cards.CARD_COLUMNS`) under their names,
    #: the book's own beside them: its CSV is a deviation card `navred days --card` and `navred compass --card` read
    TABLE_COLUMNS = ("row", "source", "utc", "body", "compass", "lat_deg", "lon_deg", "compass_heading_deg",
                     "compass_bearing_deg", "true_bearing_deg", "altitude_deg", "gyro_error_deg", "compass_error_deg",
                     "variation_deg", "deviation_deg", "remarks")

    def table(self) -> pd.DataFrame:
        """Every bearing worked out, one row each (the columns :attr:`TABLE_COLUMNS` the book has): a deviation
        card too (its gyro rows give no deviation, the card's curve is fitted to the magnetic rows alone)."""
        table = self.observations.rename(columns={"heading_deg": "compass_heading_deg",
                                                  "bearing_deg": "compass_bearing_deg"})
        return table[[c for c in self.TABLE_COLUMNS if c in table]]

    def text_lines(self) -> list[str]:
        lines = [f"{'row':>4}  {'UTC':<21}{'body':<11}{'compass':<9}{'read':>7}{'true':>8}  error"]
        for r in self.observations.to_dict("records"):
            if r["compass"] == "gyro":
                error = f"gyro {r['gyro_error']}"
            else:
                error = (f"compass error {r['compass_error']}, variation {_east_west(r['variation_deg'])}: deviation "
                         f"{r['deviation']} on {r['heading_deg']:05.1f}° by compass")
            lines.append(f"{r['row']:>4}  {r['utc']:<21}{r['body']:<11}{r['compass']:<9}{r['bearing_deg']:6.1f}°"
                         f"{r['true_bearing_deg']:7.1f}°  {error}")
        for r in self.rejected.to_dict("records"):
            lines.append(f"not worked: row {r['row']} of {r['source']}: {r['column']}: {r['reason']}")
        gyro = self.observations[self.observations.compass == "gyro"] if len(self.observations) else self.observations
        if len(gyro):
            mean = float(np.mean(gyro.gyro_error_deg))
            lines.append(f"gyro: mean error {_high_low(mean)} over {len(gyro)} bearing{'s' if len(gyro) > 1 else ''} "
                         f"(spread {float(np.std(gyro.gyro_error_deg)):.1f}°)")
        lines += [f"WARNING: {text}" for text in self.warnings()]
        if self.curve is not None:
            c = self.curve
            lines.append(f"deviation curve: A {signed(c.a_deg, 2)}°, B {signed(c.b_deg, 2)}°, C {signed(c.c_deg, 2)}°, "
                         f"D {signed(c.d_deg, 2)}°, E {signed(c.e_deg, 2)}° (east +); the observations sit "
                         f"{c.rms_deg:.1f}° RMS off it" + (f"; not determined by these headings, set to 0: "
                                                           f"{', '.join(c.unfitted)}" if c.unfitted else ""))
            lines.append("deviation card (by compass heading): " + ", ".join(
                f"{h:03.0f}° {d}" for h, d in zip(self.card.compass_heading_deg, self.card.deviation)))
        return lines

    def warnings(self) -> list[str]:
        """What the book shows that should not be trusted: a deviation larger than a compass in use shows (a wrong
        time, position, body or heading is likelier), a card from headings too few to fix the curve."""
        out = []
        if len(self.observations) and "deviation_deg" in self.observations:
            large = self.observations[np.abs(self.observations.deviation_deg.to_numpy(dtype=float)) > LARGE_DEVIATION_DEG]
            for r in large.to_dict("records"):
                out.append(f"row {r['row']}: deviation {r['deviation']} on {r['heading_deg']:05.1f}°, more than "
                           f"{LARGE_DEVIATION_DEG:g}°: check its time, position, body and heading before trusting it")
        if self.curve is not None and self.curve.unfitted:
            out.append(f"NOT A CARD TO STEER BY: the headings observed cannot fix {', '.join(self.curve.unfitted)} "
                       "(set to 0); swing her through eight headings or more round the compass")
        return out

    def document(self):
        from ..io.cautions import CAUTION
        from ..io.printed import Document, Page, Table, Text
        from ..timescales import instants

        rows = []
        for r in self.observations.to_dict("records"):
            rows.append((str(r["row"]), r["utc"], r["body"], r["compass"], f"{r['bearing_deg']:05.1f}",
                         f"{r['true_bearing_deg']:05.1f}", r["gyro_error"] if r["compass"] == "gyro" else
                         r["compass_error"], "" if r["heading_deg"] != r["heading_deg"] else f"{r['heading_deg']:05.1f}",
                         _east_west(r["variation_deg"]), r["deviation"]))
        blocks = [Text("Each bearing against the body's true azimuth at its time from the DR. Gyro: high when it reads "
                       "more than true (subtract the error). Magnetic: compass error east when the compass reads less "
                       "than true; deviation = compass error − variation, by the ship's compass heading.", "small"),
                  Table(("row", "UTC", "body", "compass", "read °", "true °", "error", "heading °", "variation",
                         "deviation"), tuple(rows), font_size=7.2, left_columns=4,
                        widths=(0.4, 1.3, 0.9, 0.7, 0.55, 0.55, 0.9, 0.65, 0.7, 0.7))]
        for text in self.warnings():
            blocks.append(Text(f"WARNING: {text}.", "subheading"))
        if self.curve is not None:
            c = self.curve
            blocks.append(Text(f"Deviation curve A + B sin h + C cos h + D sin 2h + E cos 2h: A {signed(c.a_deg, 2)}°, "
                               f"B {signed(c.b_deg, 2)}°, C {signed(c.c_deg, 2)}°, D {signed(c.d_deg, 2)}°, E "
                               f"{signed(c.e_deg, 2)}° (east +); the observations sit {c.rms_deg:.1f}° RMS off it."
                               + (f" Not determined by these headings: {', '.join(c.unfitted)}." if c.unfitted
                                  else ""), "body"))
            blocks.append(Table(("compass heading", "deviation"),
                                tuple((f"{h:03.0f}°", d) for h, d in zip(self.card.compass_heading_deg,
                                                                         self.card.deviation)),
                                title="Deviation card", font_size=7.6, compact=True, width_fraction=0.35))
        times = pd.to_datetime(self.observations.utc).to_numpy(dtype="datetime64[ns]") if len(self.observations) \
            else np.array([np.datetime64("2000-01-01", "ns")])
        inst = instants(times[:1])
        dates = sorted({t[:10] for t in self.observations.utc}) if len(self.observations) else ["-"]
        valid = dates[0] + (f" to {dates[-1]}" if len(dates) > 1 else "")
        return Document("navred compass error book", valid, provenance_line(inst.dut1_s, inst.ut1_source), CAUTION,
                        (Page("Compass error book and deviation card", tuple(blocks)),))


def compass_book(source, *, dates: str | None = None) -> CompassBook:
    """The compass error book read (:func:`navred.io.compassbook.read_compass_book`) and worked out."""
    from ..io.compassbook import read_compass_book

    book = read_compass_book(source, dates=dates)
    table = book.table.copy()
    rejected = [book.rejected]
    if len(table):
        when = table.utc.to_numpy(dtype="datetime64[ns]")
        true = np.empty(len(table))
        altitude = np.empty(len(table))
        for body, part in table.groupby("body").groups.items():
            rows = np.asarray([table.index.get_loc(i) for i in part])
            zn, hc = true_azimuth(body, when[rows], table.lat_deg.to_numpy()[rows], table.lon_deg.to_numpy()[rows])
            true[rows], altitude[rows] = zn, hc
        below = altitude < -1.0
        if below.any():
            rejected.append(pd.DataFrame({"row": table.row[below], "source": table.source[below], "column": "body",
                                          "reason": [f"{b} is {abs(h):.1f}° below the horizon then: not a bearing of it; "
                                                     "check the time (UTC), the DR and the body"
                                                     for b, h in zip(table.body[below], altitude[below])]}))
            table, true, altitude = table[~below].reset_index(drop=True), true[~below], altitude[~below]
        table["utc"] = [str(np.datetime64(t, "s")).replace("T", " ") for t in table.utc.to_numpy(dtype="datetime64[ns]")]
        table["true_bearing_deg"] = true
        table["altitude_deg"] = altitude
        gyro = (table.compass == "gyro").to_numpy()
        table["gyro_error_deg"] = np.where(gyro, gyro_error_deg(table.bearing_deg, true), np.nan)
        table["compass_error_deg"] = np.where(~gyro, compass_error_deg(true, table.bearing_deg), np.nan)
        table["deviation_deg"] = np.where(~gyro, deviation_deg(table.compass_error_deg, table.variation_deg), np.nan)
        table["gyro_error"] = [_high_low(v) for v in table.gyro_error_deg]
        table["compass_error"] = [_east_west(v) for v in table.compass_error_deg]
        table["deviation"] = [_east_west(v) for v in table.deviation_deg]
    if not len(table):
        raise NavredError("no bearing in the book could be worked: " + "; ".join(
            f"row {r.row}: {r.column}: {r.reason}" for r in pd.concat(rejected).head(3).itertuples()))
    magnetic = table[table.compass == "magnetic"]
    names = sorted(set(magnetic.compass_written))
    if len(names) > 1:
        rows = "; ".join(f"{name}: rows {', '.join(str(r) for r in magnetic.row[magnetic.compass_written == name])}"
                         for name in names)
        raise NavredError(f"the book holds magnetic compass bearings written as {len(names)} compasses "
                          f"({', '.join(names)}): each compass has its own deviation, so one card would fit neither; "
                          f"give each compass a book of its own ({rows})")
    curve, card = None, pd.DataFrame(columns=["compass_heading_deg", "deviation_deg", "deviation"])
    if len(magnetic):
        curve = deviation_coefficients(magnetic.heading_deg, magnetic.deviation_deg)
        headings, values = deviation_card(curve)
        card = pd.DataFrame({"compass_heading_deg": headings, "deviation_deg": values,
                             "deviation": [_east_west(v) for v in values]})
        table.loc[magnetic.index, "residual_deg"] = curve.residual_deg
    return CompassBook(table, pd.concat(rejected, ignore_index=True), curve, card, book.sources)


# --- One bearing checked ------------------------------------------------------------------------

@dataclass(frozen=True)
class BearingCheck:
    """A body's true azimuth at an instant from the DR, its amplitudes (at the true and at the visible horizon),
    and, with a compass bearing, the compass error and the deviation against the variation."""

    body: str
    utc: str
    lat_deg: float
    lon_deg: float
    zn_deg: float
    hc_deg: float
    #: (horizon, amplitude in degrees, north +; NaN where the body does not rise or set there)
    amplitudes: tuple[tuple[str, float], ...]
    compass_bearing_deg: float | None = None
    variation_deg: float = 0.0
    heading_deg: float | None = None
    compass_error_deg: float | None = None
    deviation_deg: float | None = None

    @property
    def card_row(self) -> dict:
        """The check as a row of the deviation card (:data:`navred.io.cards.CARD_COLUMNS`)."""
        return {"utc": self.utc, "body": self.body, "lat_deg": self.lat_deg, "lon_deg": self.lon_deg,
                "compass_heading_deg": self.heading_deg, "compass_bearing_deg": self.compass_bearing_deg,
                "true_bearing_deg": round(self.zn_deg, 2),
                "compass_error_deg": None if self.compass_error_deg is None else round(self.compass_error_deg, 2),
                "variation_deg": self.variation_deg,
                "deviation_deg": None if self.deviation_deg is None else round(self.deviation_deg, 2)}

    def table(self) -> pd.DataFrame:
        """The check as one row (the --csv table): the card's columns and the two amplitudes."""
        row = self.card_row | {"hc_deg": self.hc_deg}
        for horizon, value in self.amplitudes:
            row[f"amplitude_{horizon.replace(' ', '_')}_deg"] = value
        return pd.DataFrame([row])


def bearing_check(body: str, utc: str, lat_deg: float, lon_deg: float, *, compass_bearing_deg: float | None = None,
                  variation_deg: float = 0.0, heading_deg: float | None = None,
                  eye_height_m: float = 0.0) -> BearingCheck:
    """A compass check on one body (see :class:`BearingCheck`); the amplitude at the visible horizon is for a
    height of eye of ``eye_height_m``."""
    from ..almanac import places
    from ..compass import amplitude_deg, compass_check, visible_horizon_altitude_deg
    from ..stars import canonical_body_name

    name = canonical_body_name(body)
    zn, hc = compass_check(name, utc, lat_deg, lon_deg)
    dec = float(np.ravel(places(name, utc).dec_deg)[0])
    amplitudes = tuple((horizon, float(amplitude_deg(dec, lat_deg, altitude))) for horizon, altitude in (
        ("true horizon", 0.0), ("visible horizon", float(visible_horizon_altitude_deg(eye_height_m)))))
    if compass_bearing_deg is None:
        return BearingCheck(name, utc, lat_deg, lon_deg, float(zn), float(hc), amplitudes,
                            variation_deg=variation_deg, heading_deg=heading_deg)
    error = float(compass_error_deg(zn, compass_bearing_deg))
    return BearingCheck(name, utc, lat_deg, lon_deg, float(zn), float(hc), amplitudes, compass_bearing_deg,
                        variation_deg, heading_deg, error, float(deviation_deg(error, variation_deg)))


__all__ = ["WatchAzimuths", "watch_azimuths", "CompassBook", "compass_book", "BearingCheck", "bearing_check",
           "zone_text"]
