"""The voyage's workbook (openpyxl): a workbook a master or instructor opens and reads unaided.

Sheets: About (provenance, the safety caution, what each sheet holds), Sights as read, Working (every
correction step of every sight), Fixes (with the plotting sheets), Rejected, and where the run has them
the next Sight plan, Training, Series, Day's work and Timepieces. Headers carry their units and stay
frozen; angles are in navigational form with the decimal value beside them where a formula may need it.
The file is written to a temporary file and renamed over the target, so an interrupted run never leaves
half a workbook. The workbook's style and the mechanics are :mod:`navred.io.workbook`'s.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from ..angles import format_angle
from ..figures.series import series_figure
from ..fixstats import ELLIPSE_COVERS
from ..io.labels import labelled
from ..io.output import atomic_write
from ..io.workbook import (
    Pictures,
    add_figure,
    cell_value,
    fit_pages,
    front_sheet,
    new_tables,
    pictures_below,
    utc_cell,
    write_table_sheet,
    write_text_safe,
)
from ..io.xlsxtables import TableWriter
from .plotfiles import plotting_figure
from .voyagetables import (
    fixes_table,
    hand_working_table,
    plan_table,
    rejected_table,
    series_table,
    with_reasons,
    working_table,
)

#: What each sheet holds, on the About sheet.
SHEETS = (
    ("Sights as read", "every row of the log, exactly as it was read"),
    ("Working", "one row per reduced sight: every correction from Hs to Ho, GHA, Dec, LHA, Hc, Zn, "
                "the intercept, the residual at the fix and any flag (angles as ° ′ with decimal degrees beside; "
                "a temperature, pressure or index error the log left blank is shown as assumed, '10 °C "
                "assumed'; a blank says why)"),
    ("Working by hand", "the Working sheet's sights worked again in the order and rounding of a hand working from "
                        "an assumed position, as a sight book sets it out: GHA at the whole hour (of Aries for a "
                        "star), increment, v and its correction, SHA, Dec at the whole hour, d and its correction, "
                        "HP; Hs, IC, dip, Ha, the main correction, Ho; the assumed position, LHA, the tables' "
                        "Hc, d and Z, the d correction of Hc, Hc, Z and Zn, and the intercept from the assumed "
                        "position (a cadet checks a page against it line by line)"),
    ("Fixes", "one row per fix group: whether it is trusted to plot ('NO' with the kind of reason: the note's "
              "first warning says why), position, 95 % ellipse (its full size, then its semi-axes), sight error, "
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
    ("Sight plan", "the next twilight after the last fix: bodies to shoot with the Hs to preset (Hc with dip, "
                   "refraction, SD, parallax and the index error of the last sight taken back off, as navred plan "
                   "prints it), the limb, Hc and Zn, the "
                   "recommended set and why, and a picture of the sky"),
    ("Timepieces", "present when a rating log of time signals was given: each timepiece's error and daily "
                   "rate by least squares with the rate's 95 % interval, a flag when the rate has changed, every "
                   "comparison with its residual"),
    ("Day's work", "present when the DR can be kept (a departure entry, or the ship's fixes): whose fixes keep "
                   "the DR and how the ship's clocks were kept, the noon positions and the day's run, the set and "
                   "drift at each of the ship's fixes against the DR carried through the water from the fix before "
                   "(with its 95 % uncertainty, or why it is not determined), the estimated positions from single "
                   "lines, the latitudes by meridian altitude, ex-meridian and Polaris, the exercises against the "
                   "ship's position, the DR's entries with their working (compass course made true, leeway, log "
                   "readings, clocks), and a picture of the voyage"),
    ("Noon report", "present with the day's work: one row a noon, as the master sends it: the noon position and "
                    "how it was found, course and distance made good, average speed, distance through the water, "
                    "the day's current, the distance to go and ETA, the clock changes"),
)


def default_workbook_path(first_log: str | Path) -> Path:
    """Where the workbook goes when no file is named: beside the first log, as NAME.navred.xlsx (a folder's
    logs: logs.navred.xlsx in the folder)."""
    first = Path(first_log)
    return first / "logs.navred.xlsx" if first.is_dir() else first.with_suffix(".navred.xlsx")


def write_workbook(voyage, path: str | Path, *, plots: bool | Pictures = True, training=None) -> Path:
    """Write the spreadsheet log of a :class:`navred.jobs.voyage.VoyageResult` to ``path`` (.xlsx).

    ``plots`` True embeds the pictures (up to :data:`navred.io.workbook.MAX_EMBEDDED_PICTURES` of each kind,
    the rest counted on their sheet), False leaves them out, or a :class:`Pictures` says exactly.
    ``training``: a :class:`navred.jobs.training.TrainingReport` for the Training sheet."""
    pictures = plots if isinstance(plots, Pictures) else Pictures(embed=bool(plots))
    from openpyxl import Workbook

    book = Workbook()
    tables = new_tables(book)
    _write_about_sheet(book, voyage)
    write_table_sheet(tables, book.create_sheet("Sights as read"), voyage.raw)
    write_table_sheet(tables, book.create_sheet("Working"), working_table(voyage), flag_column="flags")
    write_table_sheet(tables, book.create_sheet("Working by hand"), hand_working_table(voyage))
    fixes_sheet = book.create_sheet("Fixes")
    fixes = fixes_table(voyage)
    write_table_sheet(tables, fixes_sheet, fixes, wide={"note": 80, "σ from": 30})
    write_table_sheet(tables, book.create_sheet("Rejected"), rejected_table(voyage), wide={"reason": 90})
    if voyage.next_plan is not None:
        _write_plan_sheet(tables, book.create_sheet("Sight plan"), voyage, pictures)
    if training is not None:
        _write_training_sheet(tables, book.create_sheet("Training"), training, pictures)
    series = series_table(voyage)
    if len(series):
        _write_series_sheet(tables, book.create_sheet("Series"), voyage, series, pictures)
    days = voyage.days_work()
    if not days.empty:
        _write_days_sheet(tables, book.create_sheet("Day's work"), days, pictures)
        _write_noon_report_sheet(tables, book.create_sheet("Noon report"), days)
    if voyage.ratings is not None:
        _write_timepieces_sheet(tables, book.create_sheet("Timepieces"), voyage)
    _plotting_sheets_below(fixes_sheet, voyage, len(fixes) + 4, pictures)
    fit_pages(book, tables)
    inputs = voyage.inputs + ((training.track_source,) if training is not None and training.track_source else ())
    return atomic_write(path, tables.save, inputs=inputs)


def _write_about_sheet(book, voyage) -> None:
    """The first sheet: the caution, the summary, the provenance, the notes on the files, what each sheet holds."""
    from openpyxl.styles import Alignment, Font

    about = front_sheet(book, "About", "navred sight-reduction log")
    about["A5"] = "Summary"
    about["A5"].font = Font(bold=True)
    write_text_safe(about["B5"], voyage.summary())
    line = 7
    about.cell(row=line, column=1, value="Provenance").font = Font(bold=True)
    for key, value in voyage.provenance.items():
        line += 1
        write_text_safe(about.cell(row=line, column=1), key)
        write_text_safe(about.cell(row=line, column=2), cell_value(value))  # file names come from the user
    if voyage.notes:
        line += 2
        about.cell(row=line, column=1, value="Notes on the files").font = Font(bold=True)
        for note in voyage.notes:
            line += 1
            write_text_safe(about.cell(row=line, column=2), note)  # names of columns and files come from the user
    line += 2
    about.cell(row=line, column=1, value="Sheets").font = Font(bold=True)
    for name, meaning in SHEETS:
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


def _plotting_sheets_below(fixes_sheet, voyage, anchor_row: int, pictures: Pictures) -> None:
    """The plotting sheets of the fixes below the Fixes table, as many as ``pictures`` allows."""
    # in the order of the Fixes table above them: by the fixes' times
    fixed = sorted((group for group in voyage.groups if group.fix is not None), key=lambda group: group.fix.utc)
    shown = fixed[:pictures.limit] if pictures.embed else []
    note = pictures.note("plotting sheets", len(shown), len(fixed))
    if note:
        write_text_safe(fixes_sheet.cell(row=anchor_row - 1, column=1), note)
        anchor_row += 1
    for group in shown:
        figure = plotting_figure(voyage, group)
        height = round(560 * figure.height / figure.width)  # the sheet's notes make some taller than others
        add_figure(fixes_sheet, figure, f"A{anchor_row}", 560, height)
        anchor_row += height // 20 + 2


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
        sheet.cell(row=line + 2, column=1, value=f"{count} sight{'' if count == 1 else 's'} of this log took their watch error from this rating")
        line += 4
        frame = piece.comparisons.assign(signal_utc=piece.comparisons.signal_utc.dt.strftime("%Y-%m-%d %H:%M:%S"))
        write_table_sheet(tables, sheet, labelled(frame), first_row=line)
        line += len(frame) + 3
    if len(ratings.rejected):
        sheet.cell(row=line, column=1, value="Comparisons not read").font = Font(bold=True)
        write_table_sheet(tables, sheet, ratings.rejected, first_row=line + 1, wide={"reason": 90})


#: Why a cell of the Day's work is blank, by block (noons, set and drift, estimated positions) and column: a blank
#: cell always says why (the first noon has no run; a drift within its uncertainty leaves the set undetermined).
_FIRST_NOON = "first noon: no run"
_NOT_FOUND = "not found: see note"
_NO_CURRENT_IN_DR = "none in the DR"
DAYS_BLANK = (
    {"noon position": "no position at noon (see noon from)", "run (nm)": _FIRST_NOON,
     "course made good (deg)": _FIRST_NOON, "speed made good (kn)": _FIRST_NOON,
     "through the water (nm)": _FIRST_NOON, "hours": _FIRST_NOON, "noon position check": "none",
     "day's run check": "none", "noon ±95 % circle (nm)": "not known (no position)"},
    {"set (deg)": _NOT_FOUND, "set ±95 % (deg)": _NOT_FOUND, "drift (kn)": _NOT_FOUND, "drift ±95 % (kn)": _NOT_FOUND,
     "note": "none", "current in the DR": "none", "DR's current set (deg)": _NO_CURRENT_IN_DR,
     "DR's current drift (kn)": _NO_CURRENT_IN_DR, "unaccounted set (deg)": _NO_CURRENT_IN_DR,
     "unaccounted drift (kn)": _NO_CURRENT_IN_DR},
    {"note": "none", "check": "none", "along the line ±95 % (nm)": "not known: no DR carried to it"},
    {"ex-meridian limit (min)": "none: meridian or Polaris", "flag": "none",
     "latitude moved by 10′ of DR longitude (′)": "none: meridian or Polaris",
     "resting on the DR longitude": "no: meridian or Polaris",
     "fix group": "none",
     "role": "not given"},
    {},
    {column: "not entered" for column in ("course (deg)", "speed (kn)", "set (deg)", "drift (kn)",
                                                "course: the working", "speed: the working", "clocks")},
)


def _nil_sets(table: pd.DataFrame) -> pd.DataFrame:
    """The set and drift table with the unaccounted set of a nil unaccounted drift (under 0.05 kn, where the DR
    carried a current) saying so: a drift that rounds to 0.0 kn has no set."""
    from ..constants import NIL_DRIFT_KN
    from .shiptrack import NIL_SET

    if not len(table):
        return table
    nil = (table["current_in_dr"].astype(str) != "") & (table["unaccounted_drift_kn"] < NIL_DRIFT_KN)
    if not nil.any():
        return table
    out = table.copy()
    out["unaccounted_set_deg"] = out["unaccounted_set_deg"].astype(object).where(~nil, NIL_SET)
    return out


def _write_days_sheet(tables: TableWriter, sheet, days, pictures: Pictures) -> None:
    """The day's work: noons and the day's run, set and drift, estimated positions, a voyage picture per vessel."""
    from openpyxl.styles import Font

    from ..figures.plotting import voyage_track_picture

    noon_columns = ["vessel", "date", "zone", "noon_utc", "noon_position", "noon_95_nm", "noon_check", "noon_from",
                    "run_nm", "course_made_good_deg", "speed_made_good_kn", "through_water_nm", "hours", "run_check",
                    "fixes_that_day", "noon_uncertainty", "lat_deg", "lon_deg"]
    blocks = [("Noon positions (12:00 by the ship's clocks) and the day's run, noon to noon along the rhumb line",
               days.noons[noon_columns] if len(days.noons) else days.noons),
              ("Set and drift at each of the ship's fixes, the current experienced: the fix against the DR carried "
               "through the water from the known position before (the 95 % uncertainty includes the DR's own error, "
               "0.3 kn and 2 % of the run); where the DR kept carried a current, that current and the unaccounted "
               "rest (the gap from the DR kept to the fix), whose sum is the current experienced; "
               "found only over 2 h or more, to ±1.5 kn or better, and never beyond 8 kn", _nil_sets(days.set_drift)),
              ("Estimated positions from a single line of the ship's", days.estimated),
              ("Latitudes by meridian altitude, ex-meridian (within its limit) and Polaris; an ex-meridian latitude "
               "that cannot be trusted is flagged, with the reason, and not used", days.latitudes),
              ("Exercises against the ship's position (they never restart her DR)", days.exercises),
              ("The DR's entries and their working (a compass course made true, a leeway, a speed from the log, the "
               "clocks)", days.entries)]
    line = 1
    sheet.cell(row=line, column=1, value="What the day's work rests on").font = Font(bold=True)
    for note in days.notes:
        line += 1
        write_text_safe(sheet.cell(row=line, column=1), note)
    line += 3
    for k, (title, frame) in enumerate(blocks):
        reasons = DAYS_BLANK[k] if k < len(DAYS_BLANK) else {}
        sheet.cell(row=line, column=1, value=title).font = Font(bold=True)
        line += 1
        if len(frame):
            write_table_sheet(tables, sheet, with_reasons(labelled(frame), reasons, ()), first_row=line,
                              wide={"noon from": 40, "from": 30, "note": 60, "flag": 60})
            line += len(frame)
        else:
            sheet.cell(row=line + 1, column=1, value="none")
        line += 3
    if days.carry_current:
        sheet.cell(row=line, column=1, value="The set and drift found at each fix were carried on in the DR.")
        line += 2
    pictures_below(sheet, line, pictures, "voyage pictures", list(days.tracks),
                    lambda vessel: voyage_track_picture(days, vessel), (900, 600), 32)


def _write_noon_report_sheet(tables: TableWriter, sheet, days) -> None:
    """The noon report, one row a noon: as the master sends it."""
    from openpyxl.styles import Font

    sheet.cell(row=1, column=1, value="Noon report: one row a noon (12:00 by the ship's clocks), as the master sends "
                                      "it").font = Font(bold=True)
    if not len(days.noons):
        notes = [n for n in days.notes if "Noon positions: none" in n] or ["Noon positions: none"]
        for k, note in enumerate(notes):
            write_text_safe(sheet.cell(row=3 + k, column=1), note)
        return
    columns = ["vessel", "date", "zone", "noon_utc", "noon_position", "noon_95_nm", "noon_check", "noon_from",
               "course_made_good_deg", "run_nm", "hours", "speed_made_good_kn", "run_check", "through_water_nm", "current_set_deg", "current_set_95_deg",
               "current_drift_kn", "current_95_kn", "current_note", "to", "to_go_nm", "eta_ship_time", "eta_basis", "eta_utc", "clock_changes",
               "lat_deg", "lon_deg"]
    write_table_sheet(tables, sheet, labelled(days.noons[columns]), first_row=3,
                      wide={"noon from": 50, "current from": 40, "clock changes since the last noon": 50,
                            "steering for": 30})


def _write_training_sheet(tables: TableWriter, sheet, report, pictures: Pictures) -> None:
    from openpyxl.styles import Font

    from ..figures.training import observer_figure

    blocks = [("Observers (personal error = mean error of the sights within 5′; 95 % interval from Student's t)",
               report.observers),
              ("By kind of body", report.by_body), ("Fixes against the reference track", report.fixes),
              ("Every sight: error = Ho − Hc at the reference position",
               report.sights.assign(sight_utc=[utc_cell(v) for v in
                                               report.sights.sight_utc.dt.tz_convert(None).to_numpy()]))]
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
            write_table_sheet(tables, sheet, labelled(frame), first_row=line)
            line += len(frame)
        line += 3
    for k in range(1, 16):
        sheet.column_dimensions[sheet.cell(row=1, column=k).column_letter].width = 16
    pictures_below(sheet, line, pictures, "observer pictures", list(report.observers.observer),
                    lambda name: observer_figure(report, name), (640, 272), 15)


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
        add_figure(sheet, series_figure(voyage.reduced, name), f"{'A' if k % 2 == 0 else 'G'}{row + (k // 2) * 14}", 400, 256)


def _preset_words(sextant) -> str:
    """How the plan's Hs to preset was worked: the height of eye and index error it takes back off."""
    if sextant is None:
        return "no Hs to preset"
    if sextant.presets is None:
        return (f"no Hs to preset: the last sight was taken from a {sextant.horizon} horizon, and a preset for the "
                "sea horizon would mislead (set the sextant by Hc)")
    ie = sextant.index_error_arcmin
    side = "on the arc" if ie > 0 else "off the arc" if ie < 0 else ""
    return (f"the Hs to preset is Hc with refraction, SD, parallax, dip for a height of eye of "
            f"{sextant.eye_height_m:g} m and an index error of {abs(ie):.1f}′{' ' + side if side else ''} (the last "
            "sight's) taken back off, as navred plan works it")


def _start_words(sextant, named: bool) -> str:
    """Which position the plan is carried on from: the latest fix, or the DR at its time (and why the fix was not
    used: it cannot be trusted)."""
    if sextant is None or sextant.start is None:
        return f"the position {'its' if named else 'the'} latest sights gave"
    return sextant.start.words


def _write_plan_sheet(tables: TableWriter, sheet, voyage, pictures: Pictures) -> None:
    """The next twilight's plan: of the one vessel (named when the log names it), or of each vessel the log
    names, one after another (a vessel column), each from its own latest fix."""
    from openpyxl.styles import Font

    plans = list(voyage.vessel_plans) or [("", voyage.next_plan)]
    several = len(plans) > 1
    sextants = [voyage.plan_presets.get(name) for name, _ in plans]
    tables_of = [plan_table(plan, s.presets if s is not None else None) for (_, plan), s in zip(plans, sextants)]
    table = pd.concat([t.assign(vessel=name)[["vessel", *t.columns]] if several else t
                       for (name, _), t in zip(plans, tables_of)], ignore_index=True)
    # when and where first: a plan is read for its time and place before its bodies
    line = 1
    for (name, plan), sextant in zip(plans, sextants):
        whose = f"{name}: " if name else ""
        sheet.cell(row=line, column=1, value="When and where").font = Font(bold=True)
        write_text_safe(sheet.cell(row=line, column=2), (
            f"{whose}{str(plan.utc)[:16].replace('T', ' ')} UTC, DR {format_angle(plan.lat_deg, 'lat')} "
            f"{format_angle(plan.lon_deg, 'lon')} (midway between civil and nautical twilight, to the minute), "
            f"carried on by {'its' if name else 'the'} last course and speed from "
            f"{_start_words(sextant, bool(name))}; {_preset_words(sextant)}"))
        sheet.cell(row=line + 1, column=1, value="How the set was chosen").font = Font(bold=True)
        write_text_safe(sheet.cell(row=line + 1, column=2), f"{whose}{plan.explanation}")
        line += 2
    write_table_sheet(tables, sheet, table, first_row=line + 1)
    sheet.freeze_panes = f"A{line + 2}"
    line += len(table) + 2
    if pictures.embed:
        from ..figures.plotting import sky_picture

        by_name = dict(plans)
        pictures_below(sheet, line + 2, pictures, "sight plans", list(by_name),
                       lambda name: sky_picture(by_name[name], title=f"Sight plan{': ' + name if name else ''}: "
                                                                     "the next twilight"), (520, 555), 30)

