"""The spreadsheet log (openpyxl): a workbook a master or instructor opens and reads unaided.

Sheets: About (provenance, the safety caution, what each sheet holds), Sights as read,
Working (every correction step of every sight), Fixes (with the plotting sheets), Rejected.
Headers carry their units and stay frozen; angles are in navigational form with the decimal
value beside them where a formula may need it. The file is written to a temporary file
and renamed over the target, so an interrupted run never leaves half a workbook.
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from ..angles import format_angle
from ..errors import NavredError
from ..fixstats import ELLIPSE_COVERS
from ..jobs.forking import can_fork, cores, forked_map
from ..status import SightStatus
from .output import atomic_write, atomic_write_many
from .xlsxtables import TableWriter, safe_text

if TYPE_CHECKING:
    from ..jobs.voyage import VoyageResult

SAFETY = ("SAFETY OF NAVIGATION: navred is an aid to navigation, not a sole means of navigation. "
          "Verify against the official nautical almanac and the publications of your flag state; "
          "keep a DR plot and cross-check every fix with every other means; low sights (below "
          "about 10°) and Moon sights carry larger errors; defer to local regulations, the "
          "ship's master and licensed practice.")

_HEADER_FILL = "1D3557"
_FLAG_FILL = "F4D6D9"


def _several(voyage) -> bool:
    return len(voyage.log.sources) > 1


def _row_columns(voyage, frame: pd.DataFrame) -> dict[str, object]:
    """The columns that name a row: its file (when several were read) and its row number in the log."""
    from pathlib import Path

    out: dict[str, object] = {}
    if _several(voyage):
        out["source file"] = [Path(s).name for s in frame["source"]]
    out["row in log"] = frame["row"].to_numpy()
    return out


def working_table(voyage) -> pd.DataFrame:
    """One row per reduced sight with every line of the working, units in the headers."""
    reduced = voyage.reduced
    residual = np.full(len(reduced), np.nan)
    flagged = np.zeros(len(reduced), dtype=bool)
    left_out = np.zeros(len(reduced), dtype=bool)
    for group in voyage.groups:
        if group.fix is not None:
            residual[group.rows] = group.fix.residual_arcmin
            flagged[group.rows] = group.fix.outlier
            if group.fix.left_out.size == len(group.rows):
                left_out[group.rows] = group.fix.left_out
    ok = reduced.status.to_numpy() != SightStatus.ERROR
    r = reduced[ok].reset_index(drop=True)
    residual, flagged, left_out = residual[ok], flagged[ok], left_out[ok]
    notes = [("; ".join(x for x in (("BLUNDER: a gross error, LEFT OUT of the fix" if g else
                                     "BLUNDER? flagged by the fix" if f else ""), m) if x))
             for f, g, m in zip(flagged, left_out, r.message.astype(str))]
    zone = r.zone_description_used_h.to_numpy(dtype=float)
    table = pd.DataFrame({
        **_row_columns(voyage, r),
        "fix group": r["fix_group"].astype(str),
        "body": r.body_name,
        "time as read": r.time_as_read,
        "watch error (s, fast +)": r.watch_error_applied_s,
        "zone date": r.zone_date_used,
        "zone time": r.zone_time_corrected,
        "ZD (h)": [f"{z:+.0f}" if np.isfinite(z) else "" for z in zone],
        "UTC": [_utc_cell(v) for v in r.sight_utc.dt.tz_convert(None).to_numpy()],
        "Greenwich date": r.greenwich_date,
        "Hs (° ′)": format_angle(r.hs_deg.to_numpy(dtype=float), "signed"),
        "Hs (deg)": r.hs_deg,
        "horizon": r.horizon,
        "index error (′, on +)": r.index_error_arcmin,
        "height of eye (m)": r.eye_height_m,
        "temperature (°C)": r.temperature_c,
        "pressure (hPa)": r.pressure_hpa,
        "IC (′)": r.ic_arcmin,
        "horizon (′)": r.horizon_arcmin,
        "dip (′)": r.dip_arcmin,
        "Ha (° ′)": format_angle(r.ha_deg.to_numpy(dtype=float), "signed"),
        "refraction (′)": r.refraction_arcmin,
        "SD (′)": r.sd_arcmin,
        "parallax (′)": r.parallax_arcmin,
        "phase (′)": r.phase_arcmin,
        "total correction (′)": (r.ho_deg - r.hs_deg) * 60.0,
        "Ho (° ′)": format_angle(r.ho_deg.to_numpy(dtype=float), "signed"),
        "Ho (deg)": r.ho_deg,
        "GHA (° ′)": format_angle(r.gha_deg.to_numpy(dtype=float), "angle"),
        "GHA (deg)": r.gha_deg,
        "Dec (° ′)": format_angle(r.dec_deg.to_numpy(dtype=float), "dec"),
        "Dec (deg)": r.dec_deg,
        "DR lat (° ′)": format_angle(r.dr_lat_deg.to_numpy(dtype=float), "lat"),
        "DR lon (° ′)": format_angle(r.dr_lon_deg.to_numpy(dtype=float), "lon"),
        "LHA (° ′)": format_angle(r.lha_deg.to_numpy(dtype=float), "angle"),
        "Hc (° ′)": format_angle(r.hc_deg.to_numpy(dtype=float), "signed"),
        "Hc (deg)": r.hc_deg,
        "Zn (deg)": r.zn_deg,
        "intercept (nm)": r.intercept_nm.abs(),
        "TOWARD/AWAY": r.intercept_direction,
        "residual at fix (′)": residual,
        "DUT1 (s)": r.dut1_s,
        "UT1 source": r.ut1_source,
        "flags": notes,
    })
    # a value given in other units (feet, °F, inHg, mmHg) is shown as given beside the value used
    for column, label, after in (("eye_height_as_given", "height of eye as given", "height of eye (m)"),
                                 ("temperature_as_given", "temperature as given", "temperature (°C)"),
                                 ("pressure_as_given", "pressure as given", "pressure (hPa)")):
        if (r[column] != "").any():
            table.insert(table.columns.get_loc(after), label, r[column].to_numpy())
    for column, label, after in (("waterline_distance_nm", "waterline (nm)", "IC (′)"),
                                 ("measured_dip_arcmin", "measured dip (′)", "IC (′)"),
                                 ("phase_angle_deg", "phase angle (deg)", "phase (′)")):
        if np.isfinite(r[column].to_numpy(dtype=float)).any():
            table.insert(table.columns.get_loc(after), label, r[column].to_numpy(dtype=float))
    rated = r.watch_error_from.astype(str).to_numpy()
    if ((rated != "") & (rated != "given")).any():
        table.insert(table.columns.get_loc("watch error (s, fast +)") + 1, "watch error from", rated)
    carried = r.dr_carried_from.astype(str).to_numpy()
    if (carried != "").any():
        table.insert(table.columns.get_loc("DR lon (° ′)") + 1, "DR", np.where(carried != "", carried, "as given"))
    motion = r["motion_carried_from"].astype(str).to_numpy() if "motion_carried_from" in r.columns else np.zeros(0)
    if (motion != "").any():
        where = table.columns.get_loc("speed (kn)") + 1 if "speed (kn)" in table.columns else len(table.columns)
        table.insert(where, "course and speed", np.where(motion != "", motion, "as given"))
    if not (r.time_given == "zone time").any() and not (r.watch_error_applied_s != 0).any():
        table = table.drop(columns=["watch error (s, fast +)", "zone date", "zone time", "ZD (h)"])
    # the log's own extra columns (a cadet's note, a sight number...) ride along at the end
    for column in voyage.log.extra_columns:
        if column in r.columns and column not in table:
            table[column] = r[column].astype(str).to_numpy()
    return table


def fixes_table(voyage) -> pd.DataFrame:
    from ..jobs.frames import row_labels

    labels = row_labels(voyage.reduced) if len(voyage.reduced) else np.zeros(0, dtype=str)
    rows = []
    # every position's text at once (one call per kind, not four per group)
    fixes = [g.fix for g in voyage.groups if g.fix is not None]
    checks = [g.fix.without_outliers for g in voyage.groups if g.fix is not None and g.fix.without_outliers]
    everies = [g.fix.all_sights for g in voyage.groups if g.fix is not None and g.fix.all_sights]
    charts = [g.chart for g in voyage.groups if g.fix is not None and g.chart]
    lat_text = iter(format_angle(np.array([f.lat_deg for f in fixes] + [c.lat_deg for c in checks]
                                          + [e.lat_deg for e in everies] + [c[0] for c in charts], dtype=float),
                                 "lat"))
    lon_text = iter(format_angle(np.array([f.lon_deg for f in fixes] + [c.lon_deg for c in checks]
                                          + [e.lon_deg for e in everies] + [c[1] for c in charts], dtype=float),
                                 "lon"))
    fix_texts = [(next(lat_text), next(lon_text)) for _ in fixes]
    check_texts = [f"{next(lat_text)} {next(lon_text)}" for _ in checks]
    every_texts = [f"{next(lat_text)} {next(lon_text)}" for _ in everies]
    chart_texts = [f"{next(lat_text)} {next(lon_text)}" for _ in charts]
    fix_texts, check_texts, every_texts, chart_texts = (iter(fix_texts), iter(check_texts), iter(every_texts),
                                                        iter(chart_texts))
    for group in voyage.groups:
        fix = group.fix
        if fix is None:
            rows.append({"fix group": group.name, "UTC": "", "note": f"no fix: {group.problem}"})
            continue
        left = fix.left_out if fix.left_out.size == len(group.rows) else np.zeros(len(group.rows), dtype=bool)
        outliers = ", ".join(labels[group.rows[i]] for i in np.flatnonzero(fix.outlier & ~left))
        rows.append({
            "fix group": group.name,
            "UTC": _utc_cell(fix.utc),
            "kind": fix.kind if fix.is_fix else f"{fix.kind} (not a fix)",
            "latitude (° ′)": (texts := next(fix_texts))[0],
            "longitude (° ′)": texts[1],
            "latitude (deg)": fix.lat_deg,
            "longitude (deg)": fix.lon_deg,
            "sights used": int(fix.used.sum()),
            "sight σ (′)": fix.sigma_arcmin,
            "σ from": fix.sigma_source,
            "standard error (nm)": fix.standard_error_nm,
            "95 % ellipse (full size)": fix.ellipse_text(),
            "95 % semi-major (nm)": fix.ellipse_semi_major_nm,
            "95 % semi-minor (nm)": fix.ellipse_semi_minor_nm,
            "major axis (deg true)": fix.ellipse_orientation_deg if fix.is_fix else None,
            "lines cross at (deg)": fix.spread_deg,
            "ellipse scaled by": f"{fix.quantile} quantile" + (", DR error over the run included"
                                                               if fix.dr_error_included else ""),
            "the ellipse's size": fix.ellipse_note,
            "run between the sights": fix.run_from,
            "blunder check": fix.blunder_note,
            "line bearing (deg true)": fix.line_bearing_deg,
            "line from DR (nm)": fix.line_offset_nm,
            "noon curve latitude (° ′)": (format_angle(fix.noon_curve_latitude_deg, "lat")
                                          if fix.noon_curve_latitude_deg is not None else ""),
            "left out (gross errors)": ", ".join(labels[group.rows[i]] for i in np.flatnonzero(left)),
            "fix from every sight (° ′)": next(every_texts) if fix.all_sights is not None else "",
            "flagged sights": outliers,
            "fix without flagged (° ′)": next(check_texts) if fix.without_outliers is not None else "",
            "from the DR (nm)": fix.dr_distance_nm,
            "chart position (° ′)": next(chart_texts) if group.chart else "",
            "chart distance (nm)": fix.chart_distance_nm,
            "chart bearing (deg true)": fix.chart_bearing_deg,
            "chart inside 95 % ellipse": ("" if fix.chart_inside_ellipse is None
                                          else "yes" if fix.chart_inside_ellipse else "NO"),
            "course made good (deg)": fix.course_made_good_deg,
            "speed made good (kn)": fix.speed_made_good_kn,
            "note": "; ".join(fix.warnings + ([group.chart_note] if group.chart_note else [])),
        })
    return pd.DataFrame(rows)


def rejected_table(voyage) -> pd.DataFrame:
    """Every problem of every row not reduced: the row, the column, the value and why."""
    from pathlib import Path

    rejected = voyage.rejected
    out = pd.DataFrame({"row in log": rejected["row"].to_numpy(), "column": rejected["column"].to_numpy(),
                        "value": rejected["value"].to_numpy(), "reason": rejected["reason"].to_numpy()})
    if _several(voyage):
        out.insert(0, "source file", [Path(s).name for s in rejected["source"]])
    return out


def _utc_cell(value):
    """An instant as a spreadsheet date-time cell (naive UTC, to the second as the sheet shows it)."""
    import datetime as dt

    stamp = np.datetime64(value, "us")
    return None if np.isnat(stamp) else stamp.astype(dt.datetime)


def _cell_value(value):
    """A value openpyxl can store: NaN and infinity as empty cells, numpy scalars as Python ones,
    instants with a zone as naive UTC, anything else that is not a plain value as its text."""
    import datetime as dt

    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, float) and not np.isfinite(value):
        return None
    if isinstance(value, dt.datetime) and value.tzinfo is not None:
        return value.astimezone(dt.timezone.utc).replace(tzinfo=None)
    if value is None or isinstance(value, (str, int, float, bool, dt.datetime, dt.date, dt.time)):
        return value
    return str(value)


def _add_figure(sheet, figure, anchor: str, width: int, height: int) -> None:
    """Embed a picture in a sheet as a PNG drawn at the size it is shown (``width`` by ``height``
    pixels), anchored at a cell: a :class:`navred.figures.drawing.Canvas` or a matplotlib figure."""
    from openpyxl.drawing.image import Image

    if hasattr(figure, "to_png"):
        png = io.BytesIO(figure.to_png(width))
    else:
        png = io.BytesIO()
        dpi = width / figure.get_figwidth()  # drawn at the resolution it is shown, not scaled down
        figure.savefig(png, format="png", dpi=dpi, facecolor=figure.get_facecolor(), pil_kwargs={"compress_level": 3})
        png.seek(0)
    image = Image(png)
    image.width, image.height = width, height
    sheet.add_image(image, anchor)


#: How a column displays its numbers, by the unit in its header: to 0.1′ for arcminutes, to 0.0001°
#: (0.006′) for decimal degrees, to 0.1° for a course or a set, while the cell keeps full precision.
_NUMBER_FORMATS = (("(′", "0.0"), ("course made good (deg)", "0.0"), ("set (deg)", "0.0"), ("±95 % (deg)", "0"),
                   ("(deg", "0.0000"), ("(nm)", "0.0"), ("(s", "0.000"), ("(m)", "0.00"),
                   ("(°c)", "0.0"), ("(hpa)", "0.0"), ("(kn)", "0.0"), ("(h)", "0"),
                   ("(%)", "0"))
DATE_TIME_FORMAT = "yyyy-mm-dd hh:mm:ss"


def _number_format(name: str) -> str | None:
    lower = str(name).lower()
    return next((form for unit, form in _NUMBER_FORMATS if unit in lower), None)


def style_header(cell) -> None:
    """A header cell in the workbook's own style (white on navy, wrapped)."""
    from openpyxl.styles import Alignment, Font, PatternFill

    cell.font = Font(bold=True, color="FFFFFF")
    cell.fill = PatternFill("solid", fgColor=_HEADER_FILL)
    cell.alignment = Alignment(wrap_text=True, vertical="center")


def header_row(sheet, row: int, names, *, height: float = 32) -> None:
    """Write a row of headers in the workbook's own style (white on navy, wrapped)."""
    for column, name in enumerate(names, start=1):
        cell = sheet.cell(row=row, column=column)
        write_text_safe(cell, str(name))  # an extra column of the log may be named like a formula
        style_header(cell)
    sheet.row_dimensions[row].height = height


def write_text_safe(cell, value) -> None:
    """Store a value; text is always stored as text, never as a formula (a log's '=…' stays words).

    A control character, which the format cannot hold, is shown as U+FFFD; text longer than a cell
    holds is cut with a note saying how long it was."""
    if isinstance(value, str):
        value = safe_text(value)
    cell.value = value
    if isinstance(value, str) and cell.data_type == "f":
        cell.data_type = "s"


def new_tables(book) -> TableWriter:
    """The writer of a workbook's tables (see :mod:`navred.io.xlsxtables`), in this workbook's style."""
    return TableWriter(book, style_header, _FLAG_FILL, DATE_TIME_FORMAT)


def write_table_sheet(tables: TableWriter, sheet, frame: pd.DataFrame, *, wide: dict[str, int] | None = None,
                 flag_column: str | None = None, first_row: int = 1):
    """A table as a sheet: styled headers, frozen, numbers shown to their unit's precision, text as text."""
    formats = [_number_format(name) for name in frame.columns]
    flagged = None
    if flag_column in frame.columns:
        flagged = frame[flag_column].astype(str).str.contains("BLUNDER", regex=False).to_numpy()
    tables.write(sheet, frame, first_row=first_row, number_formats=formats, flagged=flagged)
    if first_row == 1:
        sheet.freeze_panes = "A2"
    from openpyxl.utils import get_column_letter

    for index, name in enumerate(frame.columns, start=1):
        sample = [len(str(name)) * 0.6] + [len(str(v)) for v in frame[name].head(200)]
        width = (wide or {}).get(name) or min(max(sample) + 2, 60)
        if formats[index - 1]:
            width = min(width, 12)
        if first_row > 1:  # a table below another on the sheet: as wide as either needs
            width = max(width, sheet.column_dimensions[get_column_letter(index)].width or 0)
        sheet.column_dimensions[get_column_letter(index)].width = max(width, 8)


def front_sheet(book, title: str, heading: str):
    """The first sheet of a workbook: its heading and the safety caution, prominent at the top."""
    from openpyxl.styles import Alignment, Font

    sheet = book.active
    sheet.title = title
    sheet["A1"] = heading
    sheet["A1"].font = Font(bold=True, size=14)
    sheet["A3"] = SAFETY
    sheet["A3"].font = Font(bold=True, color="9B1D20")
    sheet["A3"].alignment = Alignment(wrap_text=True, vertical="top")
    sheet.merge_cells("A3:D3")
    sheet.row_dimensions[3].height = 75
    return sheet


#: The most rows a worksheet holds (Excel and the Office Open XML format), the header among them.
SHEET_ROW_LIMIT = 1_048_576


def check_fits(rows: int) -> None:
    """Refuse, before any work, a log too long for one sheet of the workbook (its rows and a header)."""
    if rows + 1 > SHEET_ROW_LIMIT:
        raise NavredError(f"the log has {rows:,} rows, more than a workbook sheet holds ({SHEET_ROW_LIMIT - 1:,} "
                          "rows and a header): split it into several logs and make a workbook of each, or use "
                          "navred reduce --csv")


#: the most pictures of one kind a workbook embeds (each is about 60 kB); the rest are counted on
#: the sheet and written as files when a folder is given
MAX_EMBEDDED_PICTURES = 100


@dataclass(frozen=True)
class Pictures:
    """Which pictures a workbook embeds: ``embed`` False leaves them all out; at most ``limit`` of
    each kind are embedded; ``folder``, when given, is where every plotting sheet is written as a
    file (the sheets say so)."""

    embed: bool = True
    limit: int = MAX_EMBEDDED_PICTURES
    folder: str | None = None

    def note(self, what: str, shown: int, total: int) -> str:
        """The line a sheet carries when not every picture of a kind is in it ('' when all are)."""
        if shown == total:
            return ""
        where = (f"every one is in {self.folder}" if self.folder and what == "plotting sheets" else
                 "write every plotting sheet as a file with navred workbook --plots FOLDER"
                 if what == "plotting sheets" else "the table above lists every one")
        if not self.embed:
            return f"Pictures left out of this workbook ({total:,} {what}); {where}."
        left = total - shown
        return f"The first {shown:,} of {total:,} {what} are pictured here; {left:,} {'is' if left == 1 else 'are'} not: {where}."


def write_workbook(voyage: VoyageResult, path: str | Path, *, plots: bool | Pictures = True) -> Path:
    """Write the spreadsheet log of a :class:`navred.jobs.voyage.VoyageResult` to ``path`` (.xlsx).

    ``plots`` True embeds the pictures (up to :data:`MAX_EMBEDDED_PICTURES` of each kind, the rest
    counted on their sheet), False leaves them out, or a :class:`Pictures` says exactly."""
    pictures = plots if isinstance(plots, Pictures) else Pictures(embed=bool(plots))
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Font

    book = Workbook()
    tables = new_tables(book)
    about = front_sheet(book, "About", "navred sight-reduction log")
    about["A5"] = "Summary"
    about["A5"].font = Font(bold=True)
    write_text_safe(about["B5"], voyage.summary())
    line = 7
    about.cell(row=line, column=1, value="Provenance").font = Font(bold=True)
    for key, value in voyage.provenance.items():
        line += 1
        write_text_safe(about.cell(row=line, column=1), key)
        write_text_safe(about.cell(row=line, column=2), _cell_value(value))  # file names come from the user
    notes = getattr(voyage, "notes", ())
    if notes:
        line += 2
        about.cell(row=line, column=1, value="Notes on the files").font = Font(bold=True)
        for note in notes:
            line += 1
            write_text_safe(about.cell(row=line, column=2), note)  # names of columns and files come from the user
    line += 2
    about.cell(row=line, column=1, value="Sheets").font = Font(bold=True)
    for name, meaning in (
        ("Sights as read", "every row of the log, exactly as it was read"),
        ("Working", "one row per reduced sight: every correction from Hs to Ho, GHA, Dec, LHA, Hc, Zn, "
                    "the intercept, the residual at the fix and any flag (angles as ° ′ with decimal degrees beside)"),
        ("Fixes", "one row per fix group: position, 95 % ellipse (its full size, then its semi-axes), sight error, "
                  "what the blunder check can find, sights left out as gross errors (with the fix from every "
                  "sight beside it), flagged sights, chart check; the plotting sheets below the table. The 95 % "
                  f"ellipse {ELLIPSE_COVERS}"),
        ("Rejected", "every row that could not be reduced, with the column, the value and why"),
        ("Row numbers", "a row is named everywhere by the row number a spreadsheet shows for it in the log "
                        "(the header is row 1), with its file when several logs were read"),
        ("Training", "present when the log was marked against the ship's reference track: each observer's "
                     "personal error with its 95 % interval, scatter, blunders and trend, by kind of body, every "
                     "fix and sight against the reference, and a picture per observer"),
        ("Series", "each series of sights of one body by one observer: the offset from the predicted altitude "
                   "curve, the scatter, the flagged sights and the best sight to carry into the fix, with a plot"),
        ("Sight plan", "the next twilight after the last fix: bodies to shoot with Hc to preset and Zn, the "
                       "recommended set and why, and a picture of the sky"),
        ("Timepieces", "present when a rating log of time signals was given: each timepiece's error and daily "
                       "rate by least squares with the rate's 95 % interval, a flag when the rate has changed, every "
                       "comparison with its residual"),
        ("Day's work", "present when the DR can be kept (a departure entry, or fixes and the sights' courses and "
                       "speeds): the noon positions and the day's run, the set and drift at each fix against the DR "
                       "carried through the water from the fix before (with its 95 % uncertainty), the estimated "
                       "positions from single lines, and a picture of the voyage"),
    ):
        line += 1
        about.cell(row=line, column=1, value=name)
        about.cell(row=line, column=2, value=meaning)
    about.column_dimensions["A"].width = 22
    about.column_dimensions["B"].width = 110
    for cell in about["A"][4:]:
        cell.alignment = Alignment(vertical="top")
    for cell in about["B"]:
        cell.alignment = Alignment(wrap_text=True, vertical="top")
        if cell.value and len(str(cell.value)) > 100:
            # spreadsheet programs do not grow a row for wrapped text they did not lay out themselves
            about.row_dimensions[cell.row].height = 15 * (len(str(cell.value)) // 100 + 1)

    write_table_sheet(tables, book.create_sheet("Sights as read"), voyage.raw)
    write_table_sheet(tables, book.create_sheet("Working"), working_table(voyage), flag_column="flags")
    fixes_sheet = book.create_sheet("Fixes")
    fixes = fixes_table(voyage)
    write_table_sheet(tables, fixes_sheet, fixes, wide={"note": 80, "σ from": 30})
    write_table_sheet(tables, book.create_sheet("Rejected"), rejected_table(voyage), wide={"reason": 90})
    if voyage.next_plan is not None:
        _write_plan_sheet(tables, book.create_sheet("Sight plan"), voyage.next_plan, pictures.embed)
    if voyage.training is not None:
        _write_training_sheet(tables, book.create_sheet("Training"), voyage.training, pictures)
    series = series_table(voyage)
    if len(series):
        _write_series_sheet(tables, book.create_sheet("Series"), voyage, series, pictures)
    days = voyage.days_work()
    if not days.empty:
        _write_days_sheet(tables, book.create_sheet("Day's work"), days, pictures)
    if getattr(voyage, "ratings", None) is not None:
        _write_timepieces_sheet(tables, book.create_sheet("Timepieces"), voyage)

    fixed = [group for group in voyage.groups if group.fix is not None]
    shown = fixed[:pictures.limit] if pictures.embed else []
    anchor_row = len(fixes) + 4
    note = pictures.note("plotting sheets", len(shown), len(fixed))
    if note:
        write_text_safe(fixes_sheet.cell(row=anchor_row - 1, column=1), note)
        anchor_row += 1
    for group in shown:
        _add_figure(fixes_sheet, plotting_figure(voyage, group), f"A{anchor_row}", 560, 560)
        anchor_row += 30
    fit_pages(book, tables)
    return atomic_write(path, tables.save, inputs=voyage.inputs)


#: A sheet wider than this many columns prints landscape.
LANDSCAPE_COLUMNS = 8
#: Sheets whose first row is not a table's header (a title, or a text above the tables): no row repeats.
NO_HEADER_ROW = ("About", "Training", "Lunar distance", "How to fill it in", "Lists")


def fit_pages(book, tables: TableWriter | None = None, *, made: str | None = None) -> None:
    """The print setup of every sheet: one page wide (as many tall as it takes), landscape when wider than
    :data:`LANDSCAPE_COLUMNS` columns, the header row repeated on every page of a table, and a footer with the
    safety caution, the day the file was made and the page number, so that no printed page shows bare positions."""
    import datetime as dt

    from .. import __version__
    from .cautions import CAUTION

    made = made or dt.date.today().isoformat()
    for sheet in book.worksheets:
        width = tables.width(sheet) if tables is not None else sheet.max_column
        sheet.page_setup.orientation = "landscape" if width > LANDSCAPE_COLUMNS else "portrait"
        sheet.print_title_rows = None if sheet.title in NO_HEADER_ROW else "1:1"
        sheet.sheet_properties.pageSetUpPr.fitToPage = True
        sheet.page_setup.fitToWidth = 1
        sheet.page_setup.fitToHeight = 0
        for footer in (sheet.oddFooter, sheet.evenFooter, sheet.firstFooter):
            footer.left.text = CAUTION
            footer.left.size = 7
            footer.right.text = f"navred {__version__}, made {made}; page &P of &N"
            footer.right.size = 7


def _write_timepieces_sheet(tables: TableWriter, sheet, voyage) -> None:
    """Each timepiece: its error and rate, the rate-change test, its comparisons with their residuals, and how
    many sights took their error from it."""
    from openpyxl.styles import Font

    ratings = voyage.ratings
    used = voyage.reduced["watch_error_from"].astype(str) if len(voyage.reduced) else pd.Series(dtype=str)
    line = 1
    for name, piece in ratings.timepieces.items():
        sheet.cell(row=line, column=1, value=f"Timepiece: {name or '(the one rated)'}").font = Font(bold=True)
        write_text_safe(sheet.cell(row=line + 1, column=1), piece.summary())
        count = int(used.str.startswith(f"{name or 'the timepiece'} rated").sum())
        sheet.cell(row=line + 2, column=1, value=f"{count} sight(s) of this log took their watch error from this rating")
        line += 4
        frame = piece.comparisons.assign(signal_utc=piece.comparisons.signal_utc.dt.strftime("%Y-%m-%d %H:%M:%S"))
        frame = frame.rename(columns={"signal_utc": "signal (UTC)", "zone_description_h": "zone (h)",
                                      "error_s": "error (s, fast +)", "residual_s": "residual (s)"})
        write_table_sheet(tables, sheet, frame, first_row=line)
        line += len(frame) + 3
    if len(ratings.rejected):
        sheet.cell(row=line, column=1, value="Comparisons not read").font = Font(bold=True)
        write_table_sheet(tables, sheet, ratings.rejected, first_row=line + 1, wide={"reason": 90})


def _write_days_sheet(tables: TableWriter, sheet, days, pictures: Pictures) -> None:
    """The day's work: noons and the day's run, set and drift, estimated positions, a voyage picture per vessel."""
    from openpyxl.styles import Font

    from ..figures.plotting import voyage_track_picture

    blocks = [("Noon positions (12:00 ship's time) and the day's run, noon to noon along the rhumb line",
               days.noons),
              ("Set and drift at each fix: the fix against the DR carried through the water from the known position "
               "before (the 95 % uncertainty includes the DR's own error, 0.3 kn and 2 % of the run)", days.set_drift),
              ("Estimated positions from a single line", days.estimated)]
    line = 1
    for title, frame in blocks:
        sheet.cell(row=line, column=1, value=title).font = Font(bold=True)
        line += 1
        if len(frame):
            write_table_sheet(tables, sheet, frame, first_row=line, wide={"noon from": 40, "from": 30, "note": 60})
            line += len(frame)
        else:
            sheet.cell(row=line + 1, column=1, value="none")
        line += 3
    if days.carry_current:
        sheet.cell(row=line, column=1, value="The set and drift found at each fix were carried on in the DR.")
        line += 2
    _pictures_below(sheet, line, pictures, "voyage pictures", list(days.tracks),
                    lambda vessel: voyage_track_picture(days, vessel), (900, 600), 32)


def _pictures_below(sheet, line: int, pictures: Pictures, what: str, names: list, draw, size: tuple[int, int],
                    rows_each: int) -> int:
    """Embed a picture of each name from ``line`` down, as many as ``pictures`` allows, saying how many are
    not; the next free line."""
    shown = names[:pictures.limit] if pictures.embed else []
    note = pictures.note(what, len(shown), len(names))
    if note:
        write_text_safe(sheet.cell(row=line, column=1), note)
        line += 2
    for name in shown:
        _add_figure(sheet, draw(name), f"A{line}", *size)
        line += rows_each
    return line


def _write_training_sheet(tables: TableWriter, sheet, report, pictures: Pictures) -> None:
    from openpyxl.styles import Font

    from ..jobs.training import observer_figure

    blocks = [("Observers (personal error = mean error of the sights within 5′; 95 % interval from Student's t)",
               report.observers),
              ("By kind of body", report.by_body), ("Fixes against the reference track", report.fixes),
              ("Every sight: error = Ho − Hc at the reference position",
               report.sights.assign(sight_utc=report.sights.sight_utc.dt.strftime("%Y-%m-%d %H:%M:%S")))]
    problems = getattr(report, "track_problems", None)
    if problems is not None and len(problems):
        where = "point" if str(getattr(report, "track_source", "")).lower().endswith(".gpx") else "line"
        refused = problems.rename(columns={"point": f"{where} of the track"})
        blocks.insert(3, (f"Points of the reference track refused ({len(problems)}; not used), by their {where} in "
                          f"{Path(report.track_source).name}", refused))
    line = 1
    for title, frame in blocks:
        sheet.cell(row=line, column=1, value=title).font = Font(bold=True)
        line += 1
        if len(frame):
            write_table_sheet(tables, sheet, frame, first_row=line)
            line += len(frame)
        line += 3
    for k in range(1, 16):
        sheet.column_dimensions[sheet.cell(row=1, column=k).column_letter].width = 16
    _pictures_below(sheet, line, pictures, "observer pictures", list(report.observers.observer),
                    lambda name: observer_figure(report, name), (640, 272), 15)


def series_table(voyage) -> pd.DataFrame:
    """One row per sight series of two or more sights, in the order the series first appear."""
    reduced = voyage.reduced
    if "series_size" not in reduced.columns:
        return pd.DataFrame()
    from ..jobs.frames import row_labels

    multi = reduced[reduced.series_size >= 2]
    if not len(multi):
        return pd.DataFrame()
    labels = pd.Series(row_labels(reduced), index=reduced.index)[multi.index]
    groups = multi.groupby("series", sort=False)
    names = list(groups.groups)
    flagged = labels[multi.series_flag.to_numpy(dtype=bool)].groupby(
        multi.series[multi.series_flag.to_numpy(dtype=bool)], sort=False).agg(", ".join)
    best = multi[multi.series_best.to_numpy(dtype=bool)].groupby("series", sort=False).head(1).set_index("series")
    best_label = labels[multi.series_best.to_numpy(dtype=bool)].groupby(
        multi.series[multi.series_best.to_numpy(dtype=bool)], sort=False).first()
    best = best.reindex(names)
    best_ho = best.series_best_ho_deg.to_numpy(dtype=float)
    observer = groups["observer"].first().reindex(names).fillna("").to_numpy() if "observer" in multi.columns \
        else np.full(len(names), "")
    return pd.DataFrame({
        "series": names, "body": groups.body_name.first().reindex(names).to_numpy(), "observer": observer,
        "sights": groups.size().reindex(names).to_numpy(),
        "offset from the curve (′)": groups.series_offset_arcmin.first().reindex(names).to_numpy(),
        "scatter (′)": groups.series_scatter_arcmin.median().reindex(names).to_numpy(),
        "flagged sights": flagged.reindex(names).fillna("").to_numpy(),
        "best sight": best_label.reindex(names).fillna("").to_numpy(),
        "best sight: UTC": best.sight_utc.dt.strftime("%Y-%m-%d %H:%M:%S").fillna("").to_numpy(),
        "best sight: Ho (° ′)": format_angle(best_ho, "signed"),
        "best sight: Ho (deg)": best_ho,
    })


def series_figure(voyage, name: str):
    """The small plot of one series: its sights against the predicted curve at the DR."""
    from ..almanac import places
    from ..figures.plotting import series_plot
    from ..triangle import computed_altitude_azimuth

    part = voyage.reduced[voyage.reduced.series == name].sort_values("sight_utc")
    times = part.sight_utc.dt.tz_convert(None).to_numpy().astype("datetime64[ns]")
    span = times[-1] - times[0]
    grid = times[0] - span // 10 + (np.arange(41) * ((span + span // 5) // 40 + 1))
    seconds = (times - times[0]).astype(np.int64).astype(float)
    at = (grid - times[0]).astype(np.int64).astype(float)
    lat = np.interp(at, seconds, part.dr_lat_deg.to_numpy(dtype=float))
    lon = np.interp(at, seconds, part.dr_lon_deg.to_numpy(dtype=float))
    p = places(part.body_name.iloc[0], grid)
    hc, _ = computed_altitude_azimuth(lat, lon, p.gha_deg, p.dec_deg)
    offset = part.series_offset_arcmin.iloc[0] / 60.0
    best = np.flatnonzero(part.series_best.to_numpy())
    return series_plot(times, part.ho_deg.to_numpy(dtype=float), part.series_flag.to_numpy(), grid, hc + offset,
                       int(best[0]) if best.size else None,
                       title=f"{name}: {part.body_name.iloc[0]}, {len(part)} sights")


def _write_series_sheet(tables: TableWriter, sheet, voyage, table: pd.DataFrame, pictures: Pictures) -> None:
    write_table_sheet(tables, sheet, table)
    row = len(table) + 3
    names = list(table.series)
    shown = names[:pictures.limit] if pictures.embed else []
    note = pictures.note("series pictures", len(shown), len(names))
    if note:
        write_text_safe(sheet.cell(row=row, column=1), note)
        row += 2
    for k, name in enumerate(shown):
        _add_figure(sheet, series_figure(voyage, name), f"{'A' if k % 2 == 0 else 'G'}{row + (k // 2) * 14}", 400, 256)


def plan_table(plan) -> pd.DataFrame:
    """A sight plan as a table: one row per body, in order of bearing."""
    order = np.argsort(plan.zn_deg)
    return pd.DataFrame({
        "body": plan.body[order],
        "Hc to preset (° ′)": [format_angle(v, "signed") for v in plan.hc_deg[order]],
        "Hc (deg)": plan.hc_deg[order],
        "Zn (deg true)": plan.zn_deg[order],
        "magnitude": plan.magnitude[order],
        "from the Moon (deg)": plan.moon_separation_deg[order],
        "recommended": np.where(plan.recommended[order], "yes", ""),
    })


def _write_plan_sheet(tables: TableWriter, sheet, plan, plots: bool) -> None:
    from openpyxl.styles import Font

    table = plan_table(plan)
    write_table_sheet(tables, sheet, table)
    line = len(table) + 3
    sheet.cell(row=line, column=1, value="When and where").font = Font(bold=True)
    sheet.cell(row=line, column=2, value=f"{str(plan.utc)[:19].replace('T', ' ')} UTC, DR "
               f"{format_angle(plan.lat_deg, 'lat')} {format_angle(plan.lon_deg, 'lon')} (midway between civil "
               "and nautical twilight)")
    sheet.cell(row=line + 1, column=1, value="How the set was chosen").font = Font(bold=True)
    sheet.cell(row=line + 1, column=2, value=plan.explanation)
    if plots:
        from ..figures.plotting import sky_picture

        _add_figure(sheet, sky_picture(plan, title="Sight plan: the next twilight"), f"A{line + 4}", 520, 555)


def _sight_labels(voyage) -> tuple[np.ndarray, np.ndarray]:
    """Each reduced sight's body and time (HH:MM) as a plotting sheet labels its line, made once a run."""
    if "sight labels" not in voyage.cache:
        reduced = voyage.reduced
        voyage.cache["sight labels"] = (reduced.body_name.astype(str).to_numpy(),
                                        reduced.sight_utc.dt.strftime("%H:%M").fillna("").to_numpy())
    return voyage.cache["sight labels"]


def plotting_figure(voyage, group):
    """The plotting sheet figure of one fix group."""
    from ..figures.plotting import plotting_sheet
    from ..jobs.frames import row_labels

    bodies, times = _sight_labels(voyage)
    if "row labels" not in voyage.cache:
        voyage.cache["row labels"] = row_labels(voyage.reduced)
    return plotting_sheet(group.fix, bodies[group.rows], times[group.rows], title=f"Plotting sheet: {group.name}",
                          chart=group.chart, rows=voyage.cache["row labels"][group.rows])


def plot_file_stems(names) -> list[str]:
    """A file-name stem for each fix group's plotting sheet: the name's letters and digits, made
    unique ('a b' and 'a-b' would both be 'a-b': the second becomes 'a-b-2')."""
    import re

    stems, seen = [], {}
    for name in names:
        stem = re.sub(r"[^A-Za-z0-9_.-]+", "-", str(name)).strip("-.") or "fix"
        count = seen.get(stem.lower(), 0) + 1
        seen[stem.lower()] = count
        stems.append(stem if count == 1 else f"{stem}-{count}")
    return stems


def write_plots(voyage: VoyageResult, folder: str | Path, formats: tuple[str, ...] = ("png", "svg"), *,
                groups=None, workers: int | None = None) -> list[Path]:
    """Every fix's plotting sheet (or those of ``groups``) as PNG and SVG files in ``folder``.

    Hundreds of sheets are drawn by ``workers`` processes at once (default: one per core this process
    may use, for :data:`PARALLEL_FROM` sheets or more, where the system can fork); each file is the
    same byte for byte whoever draws it."""
    from ..figures.plotting import canvas_bytes

    out = Path(folder)
    if out.exists() and not out.is_dir():
        raise NavredError(f"{out} is a file: give a folder for the plotting sheets")
    out.mkdir(parents=True, exist_ok=True)
    chosen = [g for g in (voyage.groups if groups is None else groups) if g.fix is not None]
    written: list[Path] = []
    if groups is None and not voyage.days_work().empty:
        from ..figures.plotting import voyage_track_picture

        days = voyage.days_work()
        pictures = {}
        for vessel, stem in zip(days.tracks, plot_file_stems(f"track-{v or 'vessel'}" for v in days.tracks)):
            picture = voyage_track_picture(days, vessel)
            for suffix in formats:
                pictures[f"{stem}.{suffix}"] = canvas_bytes(picture, suffix, png_width_px=1320)
        written += atomic_write_many(out, pictures, inputs=voyage.inputs)
    stems = plot_file_stems(g.name for g in chosen)
    batches = [(start, min(start + PLOTS_PER_WRITE, len(chosen))) for start in range(0, len(chosen), PLOTS_PER_WRITE)]
    _sight_labels(voyage)  # worked out once, before any drawer starts
    context = {"voyage": voyage, "chosen": chosen, "stems": stems, "formats": tuple(formats)}
    for files in forked_map(_draw_batch, batches, context=context, workers=drawers_for(len(chosen), workers)):
        written += atomic_write_many(out, files, inputs=voyage.inputs)
    return written


#: plotting sheets drawn and written together (their files are held in memory until written)
PLOTS_PER_WRITE = 250
#: from this many plotting sheets, several processes draw them
PARALLEL_FROM = 400


def _draw_batch(context: dict, batch: tuple[int, int]) -> dict[str, bytes]:
    """One batch of plotting sheets drawn (in this process or in a forked drawer)."""
    from ..figures.plotting import canvas_bytes

    voyage, chosen, stems, formats = (context[k] for k in ("voyage", "chosen", "stems", "formats"))
    files = {}
    for group, stem in zip(chosen[batch[0]:batch[1]], stems[batch[0]:batch[1]]):
        sheet = plotting_figure(voyage, group)
        for suffix in formats:
            files[f"plot-{stem}.{suffix}"] = canvas_bytes(sheet, suffix)
    return files


def drawers_for(n_sheets: int, workers: int | None) -> int:
    """How many processes draw: one below PARALLEL_FROM sheets (or where processes cannot be forked), else
    ``workers``, by default one per core."""
    if not can_fork():
        return 1
    if workers is None:
        return 1 if n_sheets < PARALLEL_FROM else cores()
    return max(1, int(workers))


def write_lunar_workbook(inputs: dict, result: dict, path) -> Path:
    """A small workbook of one lunar distance: the caution, the inputs and every result line."""
    from openpyxl import Workbook
    from openpyxl.styles import Font

    book = Workbook()
    sheet = front_sheet(book, "Lunar distance", "navred lunar distance")
    line = 5
    for title, block in (("Observation", inputs), ("Result", result)):
        sheet.cell(row=line, column=1, value=title).font = Font(bold=True)
        for key, value in block.items():
            line += 1
            write_text_safe(sheet.cell(row=line, column=1), str(key).replace("_", " "))
            write_text_safe(sheet.cell(row=line, column=2), _cell_value(value) if value is not None else "")
        line += 2
    sheet.column_dimensions["A"].width = 32
    sheet.column_dimensions["B"].width = 60
    fit_pages(book)
    return atomic_write(path, book.save)
