"""The commands that read sight logs: reduce, fix, workbook, days, series, training, mark, rate.

Each parses its options, makes one library call (navred.jobs) and hands the result to a formatter
(:mod:`.format`) or a writer. Heavy libraries are imported inside the commands, so that ``navred --help``
starts quickly.
"""

from __future__ import annotations

import sys

import typer

from ..errors import NavredError
from .common import (
    CSV_HELP,
    DATES_HELP,
    RATES_HELP,
    SIGHTS_HELP,
    CsvFileOfOld,
    angle_option,
    check_folder,
    command,
    echo_csv,
    echo_lines,
    input_files,
    instant_option,
    number,
    old_outputs,
    output_files,
    outputs_help,
    print_notes,
    ratings,
    renamed,
    reported,
    source,
)

#: where a run that reduced nothing has said each row's reason
ABOVE = "each row's reason is above"

SIGHTS = typer.Argument(..., metavar="SIGHTS...", help=SIGHTS_HELP)


def nothing_reduced_said(voyage) -> None:
    """When no sight of a log was reduced, on stderr before the one error line: the count and each refusal by kind
    with its rows, as ``reduce --csv`` closes (:func:`navred.cli.format.reduced_count_lines`), so that every
    command says why rather than sending the navigator to another."""
    from ..jobs.reducing import ReducedCount
    from .format import reduced_count_lines

    if len(voyage.reduced) and not voyage.n_reduced:
        echo_lines(reduced_count_lines(ReducedCount.of(voyage.reduced, voyage.log.empty_rows)), err=True)


def _rates():
    return typer.Option(None, "--rates", help=RATES_HELP)


def _dates():
    return typer.Option(None, "--dates", help=DATES_HELP)


def _navigators():
    return typer.Option(None, "--navigator", help="An observer whose sights are the ship's (repeat for more): their "
                        "fixes keep the DR and the noon; every other observer's are exercises, fixed and compared "
                        "with the ship's position. Without it, a log's role column decides, else each round of "
                        "several observers' fixes is combined.")


def _route():
    return typer.Option(None, "--route", help="A route file (the CSV navred route writes): the noon report's distance "
                        "to go and ETA along its waypoints.")


def _card():
    return typer.Option(None, "--card", help="The deviation card (navred compass --card): the deviation of a compass "
                        "course entered without one.")


@command("reduce")
def reduce_command(
    ctx: typer.Context,
    sights_files: list[str] = SIGHTS,
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="every column of every sight, reduced or not,")),
    rates: str | None = _rates(),
    dates: str | None = _dates(),
    navigator: list[str] = _navigators(),
) -> None:
    """Reduce every sight: Ho, Hc, Zn and the intercept TOWARD or AWAY, with any warning.

    Each row is named by its row number in the log (the header is row 1), with its file when
    several logs are read; a row that cannot be reduced says why. With --csv a long plain log is
    reduced block by block on every core.

    Example:  navred reduce sample_sights/demo_sights.csv
    """
    from ..jobs.reducing import ReducedCount, reduce_log, reduce_log_csv, require_reduced

    with reported(ctx):
        if csv:
            done = reduce_log_csv(source(sights_files), dates=dates, rates=ratings(rates, dates),
                                  navigators=tuple(navigator or ()))
            print_notes(done)
            count = ReducedCount()
            sys.stdout.flush()
            for text, block_count in done.blocks():  # UTF-8 bytes, as made
                sys.stdout.buffer.write(text)
                count = count + block_count
            sys.stdout.buffer.flush()
            from .common import said_warnings
            from .format import reduced_closing_lines, reduced_detail_lines

            # after the CSV, on stderr: what a later block's reader noted (a row repeating the header, skipped),
            # each refusal and warning by kind, the warnings of the whole run (once, by rows), and last what was
            # read, reduced and refused, with one line per kind
            echo_lines((f"note: {n}" for n in count.notes if n not in done.notes), err=True)
            echo_lines(reduced_detail_lines(count), err=True)
            echo_lines(reduced_closing_lines(count, said_warnings()), err=True)
            require_reduced(count.rows, count.reduced, f"{ABOVE}, and in the CSV (status, message)")
            return
        from .format import reduce_lines

        done = reduce_log(source(sights_files), dates=dates, rates=ratings(rates, dates),
                          navigators=tuple(navigator or ()))
        print_notes(done)
        echo_lines(reduce_lines(done))
        require_reduced(len(done.reduced), done.n_reduced, ABOVE)


@command("fix")
def fix_command(
    ctx: typer.Context,
    sights_files: list[str] = SIGHTS,
    utc: str | None = typer.Option(None, "--utc", "-t", help="Fix time (ISO 8601 with a zone); default: the last sight each group's fix uses (a sight left out sets no time)."),
    chart_lat: str | None = typer.Option(None, "--chart-lat", help="Chart or GNSS latitude to cross-check, e.g. '43 16.5 N'."),
    chart_lon: str | None = typer.Option(None, "--chart-lon", help="Chart or GNSS longitude to cross-check, e.g. '013 11.4 W'."),
    group: str | None = typer.Option(None, "--group", help="Fix only this fix group."),
    solve_motion: bool = typer.Option(False, "--solve-motion", help="Also solve course and speed made good, when the sights allow."),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="one line per fix group (decimal degrees)")),
    rates: str | None = _rates(),
    dates: str | None = _dates(),
    navigator: list[str] = _navigators(),
    at: str | None = typer.Option(None, "--at", hidden=True),
) -> None:
    """Least-squares fix of every fix group: position, 95 % ellipse, residuals and flags.

    Sights are fixed together by their fix_group column; where it is blank, one observer's
    sights less than two hours apart make a group. Sights at different times make a running
    fix with the course and speed columns. Every sight is named by its row in the log.

    Example:  navred fix sample_sights/demo_sights.csv --group evening-stars --chart-lat "43 16.5 N" --chart-lon "013 11.4 W"
    """
    from ..jobs.fixing import fix_log
    from ..jobs.reducing import require_reduced

    with reported(ctx):
        utc = instant_option(renamed(utc, at, "--utc", "--at"))
        lat = angle_option(chart_lat, "lat", "--chart-lat") if chart_lat is not None else None
        lon = angle_option(chart_lon, "lon", "--chart-lon") if chart_lon is not None else None
        if (lat is None) != (lon is None):
            raise NavredError("give both --chart-lat and --chart-lon, or neither")
        report = fix_log(source(sights_files), dates=dates, rates=ratings(rates, dates), at_utc=utc, group=group,
                         chart=None if lat is None else (lat, lon), solve_motion=solve_motion,
                         navigators=tuple(navigator or ()))
        print_notes(report.voyage, err=True)
        nothing_reduced_said(report.voyage)
        require_reduced(len(report.voyage.reduced), report.voyage.n_reduced, ABOVE)
        from .format import fix_report_lines, fixes_csv

        if csv:
            echo_csv(fixes_csv(report))
            # the rows not reduced, on stderr (the text lists them): a fix from fewer sights than logged says so
            if report.voyage.n_reduced < len(report.voyage.reduced):
                from .format import WARNINGS_SHOWN, labels_of, sight_refusal_lines

                reduced = report.voyage.reduced
                echo_lines(sight_refusal_lines(reduced, labels_of(reduced), shown=WARNINGS_SHOWN), err=True, fold=True)
        else:
            echo_lines(fix_report_lines(report))
        if not report.n_fixes:
            raise NavredError("no group had two usable sights: nothing to fix")


WORKBOOK_FILES = {".xlsx": "the workbook; default: the first log with .navred.xlsx",
                  ".gpx": "the fixes, DRs and the DR track as GPX 1.1", ".geojson": "fixes, ellipses, lines of "
                  "position and the DR track as GeoJSON", ".json": "the same GeoJSON"}


@command("workbook")
def workbook_command(
    ctx: typer.Context,
    sights_files: list[str] = SIGHTS,
    output: list[str] = typer.Option(None, "--output", "-o", help=outputs_help(WORKBOOK_FILES)),
    plots: str | None = typer.Option(None, "--plots", help="Also write each fix's plotting sheet as files (PNG and SVG) into this folder."),
    pictures: str = typer.Option("embed", "--pictures", help="embed: pictures in the workbook (the first 100 of each kind); files: plotting sheets only as files (in --plots, or a folder beside the workbook); none: no pictures."),
    plot_formats: str = typer.Option("png,svg", "--plot-formats", help="The plotting-sheet files to write: png, svg or png,svg."),
    strict: bool = typer.Option(False, "--strict", help="Exit 1 if any row was rejected."),
    solve_motion: bool = typer.Option(False, "--solve-motion", help="Also solve course and speed made good where the sights allow."),
    carry_current: bool = typer.Option(False, "--carry-current", help="Carry the set and drift found at each fix on in the DR until the next fix."),
    rates: str | None = _rates(),
    dates: str | None = _dates(),
    navigator: list[str] = _navigators(),
    route: str | None = _route(),
    card: str | None = _card(),
    gpx: str | None = typer.Option(None, "--gpx", hidden=True),
    geojson: str | None = typer.Option(None, "--geojson", hidden=True),
) -> None:
    """The whole job: read and check the logs, reduce every sight, fix every group, write the workbook.

    Every row of the logs ends up in the workbook: reduced (Working sheet) or rejected with
    the reason (Rejected sheet), named by its row number in its log. Exits 1 only when
    nothing could be reduced, or with --strict when anything was rejected.

    Example:  navred workbook sample_sights/demo_sights.csv -o demo_voyage.xlsx --plots plots
    """
    from ..io.output import check_output
    from ..io.workbook import Pictures, check_fits
    from ..jobs.voyagebook import default_workbook_path

    with reported(ctx):
        if pictures not in ("embed", "files", "none"):
            raise NavredError(f"--pictures {pictures!r}: give embed, files or none")
        formats = tuple(dict.fromkeys(f.strip().lower() for f in plot_formats.split(",") if f.strip()))
        if not formats or set(formats) - {"png", "svg"}:
            raise NavredError(f"--plot-formats {plot_formats!r}: give png, svg or png,svg")
        inputs = input_files(sights_files, rates, route, card)
        # every output refused now, before the work, not after it
        files = output_files(old_outputs(output, gpx=gpx, geojson=geojson), WORKBOOK_FILES, inputs,
                             alike={".json": ".geojson"})
        files.setdefault(".xlsx", str(default_workbook_path(sights_files[0])))
        check_output(files[".xlsx"], inputs, suffixes=(".xlsx",), what="--output")
        if pictures == "files" and not plots:
            plots = files[".xlsx"].removesuffix(".xlsx") + "-plots"
        if plots:
            check_folder(plots, inputs, "--plots")
        voyage = _processed(sights_files, files, dates, rates, solve_motion, carry_current, check_fits,
                            navigators=tuple(navigator or ()), route=route, card=card)
        _write_voyage_files(voyage, files, Pictures(embed=pictures == "embed", folder=plots), plots, formats)
        if not len(voyage.reduced) and len(voyage.log.entries):
            typer.echo(f"note: the log holds no sights, only {len(voyage.log.entries)} entry rows: the workbook holds "
                       "the DR they keep (Day's work, Noon report), and no fix", err=True)
        elif voyage.n_reduced == 0:
            raise NavredError(f"nothing could be reduced: the Rejected sheet of {files['.xlsx']} gives every row's reason")
        if strict and voyage.n_rejected_rows:
            typer.echo(f"--strict: {voyage.n_rejected_rows} row(s) rejected", err=True)
            raise typer.Exit(code=1)


def _processed(sights_files, files, dates, rates, solve_motion, carry_current, check_fits, *, navigators=(),
               route=None, card=None):
    """The workbook's voyage: the logs read (their rows checked against a sheet's bound before the work), every
    sight reduced with a progress bar on stderr, every group fixed; ``navigators``, ``route``, ``card`` as
    navred days takes them. A log of entry rows alone (a DR kept without sights) is a voyage too."""
    from ..io.cards import deviation_curve
    from ..io.logbook import read_sight_log
    from ..io.output import check_output
    from ..io.waypoints import read_route
    from ..jobs.reducing import require_reduced
    from ..jobs.voyage import process_log

    rated = ratings(rates, dates)
    waypoints = read_route(route) if route else None
    deviation = deviation_curve(card) if card else None
    log = read_sight_log(source(sights_files), dates=dates, rates=rated, deviation=deviation)
    print_notes(rated, log)
    check_fits(len(log.table))
    if not len(log.table) and not len(log.entries):
        require_reduced(0, 0)
    for path in files.values():
        check_output(path, log.sources)  # a folder's logs, now that they are known
    progress = _StderrBar("reducing sights")
    try:
        return process_log(log, solve_motion=solve_motion, progress=progress, carry_current=carry_current,
                           rates=rated, navigators=navigators, route=waypoints, deviation=deviation)
    finally:  # the bar's line ended even on a failure, so that the error starts a line of its own
        progress.close()


class _StderrBar:
    """A progress callback ``(done, total)`` showing a bar on stderr from its first call; ``close_when_done``:
    closed once ``done`` reaches ``total`` (else by :meth:`close`)."""

    def __init__(self, label: str, *, close_when_done: bool = False) -> None:
        self.label, self.close_when_done, self.bar = label, close_when_done, None

    def __call__(self, done: int, total: int) -> None:
        if self.bar is None:
            self.bar = typer.progressbar(length=total, label=self.label, file=sys.stderr)
            self.bar.__enter__()
        self.bar.update(done - self.bar.pos)
        if self.close_when_done and done >= total:
            self.close()

    def close(self) -> None:
        if self.bar is not None:
            self.bar.__exit__(None, None, None)
            self.bar = None


def _announced_plots(voyage, plots: str, formats):
    """For a run that will write many picture files: a line on stderr saying how many and about how long, and a
    progress bar (the callback :func:`navred.jobs.plotfiles.write_plots` reports to); None for a short run."""
    from ..jobs.plotfiles import plot_plan
    from .format import plot_plan_line

    plan = plot_plan(voyage, formats)
    if not plan.announced:
        return None
    typer.echo(plot_plan_line(plan, plots), err=True)
    return _StderrBar("drawing plotting sheets", close_when_done=True)


def _write_voyage_files(voyage, files: dict[str, str], chosen, plots: str | None, formats) -> None:
    from ..jobs.chartfiles import write_voyage_geojson, write_voyage_gpx
    from ..jobs.plotfiles import write_plots
    from ..jobs.voyagebook import write_workbook
    from .format import (
        WARNINGS_SHOWN,
        group_warning_lines,
        labels_of,
        no_fix_lines,
        sight_warning_lines,
    )

    typer.echo(f"wrote {write_workbook(voyage, files['.xlsx'], plots=chosen)}")
    note = chosen.note("plotting sheets", min(voyage.n_fixes, chosen.limit) if chosen.embed else 0, voyage.n_fixes)
    if note:
        typer.echo(f"note: {note}", err=True)
    if plots:
        bar = _announced_plots(voyage, plots, formats)
        try:
            written = write_plots(voyage, plots, formats, progress=bar)
        finally:  # the bar's line ended even on a failure
            if bar is not None:
                bar.close()
        typer.echo(f"wrote {len(written)} picture files (plotting sheets and the voyage track) to {plots}")
    if ".gpx" in files:
        typer.echo(f"wrote {write_voyage_gpx(voyage, files['.gpx'])}")
    if ".geojson" in files:
        typer.echo(f"wrote {write_voyage_geojson(voyage, files['.geojson'])}")
    # a long log's warnings counted by kind, the first few of each shown: the workbook keeps every one
    echo_lines(no_fix_lines(voyage.groups, shown=WARNINGS_SHOWN))
    echo_lines(group_warning_lines(voyage.groups, shown=WARNINGS_SHOWN), err=True)
    echo_lines(sight_warning_lines(voyage.reduced, labels_of(voyage.reduced), shown=WARNINGS_SHOWN), err=True)
    counted = _counted_note(voyage)
    if counted:
        typer.echo(counted, err=True)
    typer.echo(voyage.summary())


def _counted_note(voyage) -> str:
    """Where the warnings were counted rather than each printed, how many there are and where all of them are."""
    from .format import WARNINGS_SHOWN, group_warning_lines, labels_of, sight_warning_lines

    every = (len(group_warning_lines(voyage.groups))
             + len(sight_warning_lines(voyage.reduced, labels_of(voyage.reduced))))
    shown = (len(group_warning_lines(voyage.groups, shown=WARNINGS_SHOWN))
             + len(sight_warning_lines(voyage.reduced, labels_of(voyage.reduced), shown=WARNINGS_SHOWN)))
    if every <= shown:
        return ""
    return (f"note: {every:,} warnings in all, the first {WARNINGS_SHOWN} of each kind shown above: every one is in "
            "the workbook (each sight's in the Working sheet's flags, each fix's in the Fixes sheet's note)")


DAYS_FILES = {".png": "the voyage's picture (DR legs, fixes, set and drift, noons)", ".svg": "the same picture",
              ".csv": "the noon report table (a row a noon)", ".txt": "every noon report as the master sends it"}


@command("days")
def days_command(
    ctx: typer.Context,
    sights_files: list[str] = typer.Argument(..., metavar="LOG...", help=SIGHTS_HELP + " Entry rows (entry: departure, position, course, current) keep the DR."),
    carry_current: bool = typer.Option(False, "--carry-current", help="Carry the set and drift found at each fix on in the DR until the next fix."),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="the noon positions and the day's run")),
    output: list[str] = typer.Option(None, "--output", "-o", help=outputs_help(DAYS_FILES)),
    rates: str | None = _rates(),
    dates: str | None = _dates(),
    navigator: list[str] = _navigators(),
    route: str | None = _route(),
    card: str | None = _card(),
    picture: str | None = typer.Option(None, "--picture", hidden=True),
) -> None:
    """The day's work: the noon report and the day's run, the set and drift at each fix, the estimated positions.

    The DR is kept from the departure through every course and speed and restarted at each of the ship's fixes;
    noon is 12:00 by the ship's clocks (clocks entries), one a ship's day.

    Example:  navred days sample_sights/passage_log.csv -o passage.png
    """
    from ..io.output import write_text
    from ..jobs.daily import days_log
    from ..jobs.plotfiles import write_track_picture
    from ..jobs.reducing import require_reduced
    from .format import (
        NO_DAYS_WORK,
        WARNINGS_SHOWN,
        days_csv,
        days_lines,
        group_warning_lines,
        labels_of,
        noon_reports_text,
        rejected_lines,
        sight_warning_lines,
    )

    with reported(ctx):
        files = output_files(old_outputs(output, picture=picture), DAYS_FILES,
                             input_files(sights_files, rates, route, card))
        if ".png" in files and ".svg" in files:
            raise NavredError("give one picture file, .png or .svg")
        report = days_log(source(sights_files), dates=dates, rates=ratings(rates, dates), carry_current=carry_current,
                          navigators=tuple(navigator or ()), route=route, card=card)
        voyage, days = report.voyage, report.days
        print_notes(voyage)
        if csv:
            echo_csv(days_csv(report))
            echo_lines(group_warning_lines(voyage.groups, shown=WARNINGS_SHOWN), err=True, fold=True)
        else:
            echo_lines(days_lines(report))
            echo_lines(group_warning_lines(voyage.groups, shown=WARNINGS_SHOWN), err=True)
            echo_lines(sight_warning_lines(voyage.reduced, labels_of(voyage.reduced), shown=WARNINGS_SHOWN),
                       err=True)
            if voyage.n_rejected_rows:  # each with its reason: a rejected entry row changes the day's work
                echo_lines(rejected_lines(voyage.rejected), err=True)
        if report.nothing_reduced or (days.empty and not len(voyage.reduced)):
            if csv:  # (the text names each rejected row above)
                nothing_reduced_said(voyage)
            require_reduced(len(voyage.reduced), voyage.n_reduced, ABOVE)
        if days.empty:
            raise NavredError(NO_DAYS_WORK)
        if ".csv" in files:
            typer.echo(f"wrote {write_text(files['.csv'], days_csv(report), inputs=voyage.inputs)}", err=csv)
        if ".txt" in files:
            typer.echo(f"wrote {write_text(files['.txt'], noon_reports_text(days), inputs=voyage.inputs)}", err=csv)
        for suffix in (".png", ".svg"):
            if suffix in files:
                written, vessels = write_track_picture(days, files[suffix], inputs=voyage.inputs)
                typer.echo(f"wrote {written}" + (f" (the first of {vessels} vessels)" if vessels > 1 else ""), err=csv)


@command("series")
def series_command(
    ctx: typer.Context,
    sights_files: list[str] = SIGHTS,
    threshold: float = typer.Option(2.0, "--threshold", help="Flag a sight this far off the curve (arcminutes)."),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="every sight with its series columns")),
    rates: str | None = _rates(),
    dates: str | None = _dates(),
) -> None:
    """Check each series of sights of one body against the altitude curve; flag the bad ones.

    A series is the series column of the log, or one observer's sights of a body less than
    five minutes apart. Only the offset from the predicted curve is fitted; a sight more
    than --threshold off it, or three times the scatter of the others, is flagged (and kept).

    Example:  navred series sample_sights/training_sights.csv
    """
    from ..jobs.reducing import require_reduced
    from ..jobs.seriescheck import check_series_log
    from .format import series_csv, series_lines

    with reported(ctx):
        number(threshold, "--threshold", 0.1, 60.0)
        report = check_series_log(source(sights_files), dates=dates, rates=ratings(rates, dates),
                                  threshold_arcmin=threshold)
        print_notes(report.voyage)
        nothing_reduced_said(report.voyage)
        require_reduced(len(report.sights), report.voyage.n_reduced, ABOVE)
        if csv:
            echo_csv(series_csv(report))
        else:
            echo_lines(series_lines(report))


TRAINING_FILES = {".xlsx": "the workbook, with a Training sheet", ".pdf": "one printable page across observers",
                  ".png": "the same page as a picture", ".svg": "the same page as a picture",
                  ".csv": "the per-sight errors, and NAME-observers.csv the per-observer figures beside it"}


@command("training", cls=CsvFileOfOld)
def training_command(
    ctx: typer.Context,
    sights_files: list[str] = typer.Argument(..., metavar="SIGHTS...", help="Sight logs with an observer column: CSV or .xlsx files, or a folder of them."),
    track: str = typer.Option(..., "--track", help="The ship's reference track: GPX 1.1, NMEA 0183 (RMC/GGA) or CSV (utc, lat, lon)."),
    output: list[str] = typer.Option(None, "--output", "-o", help=outputs_help(TRAINING_FILES)),
    plots: str | None = typer.Option(None, "--plots", help="Folder for one picture per observer (PNG)."),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="every sight's error against the reference")),
    rates: str | None = _rates(),
    dates: str | None = _dates(),
    summary: str | None = typer.Option(None, "--summary", hidden=True),
    csv_file: str | None = typer.Option(None, "--csv-file", hidden=True),
) -> None:
    """Each observer's errors against the ship's satellite track: personal error, scatter, blunders, trend.

    Give one log, several, or a folder of cadets' logs: every sight keeps its file and row.

    Example:  navred training sample_sights/training_sights.csv --track sample_sights/training_track.gpx -o summary.pdf
    """
    from pathlib import Path

    from ..io.output import check_output
    from ..io.workbook import check_fits
    from ..jobs.reducing import require_reduced
    from ..jobs.training import (
        observers_csv_path,
        train_log,
        write_observer_pictures,
        write_training_csv,
        write_training_summary,
    )
    from ..jobs.voyagebook import write_workbook
    from .format import group_warning_lines, training_lines

    with reported(ctx):
        protected = input_files(sights_files, track, rates)
        if csv_file and Path(csv_file).exists():
            raise NavredError(f"--csv {csv_file}: --csv is a flag now (the table on stdout), and {csv_file} exists: to "
                              f"read it as a log, put it before --csv; to write the tables to it, give -o {csv_file}")
        files = output_files(old_outputs(output, summary=summary, csv=csv_file), TRAINING_FILES, protected)
        if len({".pdf", ".png", ".svg"} & set(files)) > 1:
            raise NavredError("give one summary page: .pdf, .png or .svg")
        if ".csv" in files:
            output_files([str(observers_csv_path(files[".csv"]))], {".csv": ""}, protected)
        if plots:
            check_folder(plots, protected, "--plots")

        def check(log) -> None:
            for path in files.values():
                check_output(path, [*log.sources, track])  # a folder's logs, now that they are known
            print_notes(log)
            if ".xlsx" in files:
                check_fits(len(log.table))

        run = train_log(source(sights_files), track, dates=dates, rates=ratings(rates, dates), check_rows=check)
        nothing_reduced_said(run.voyage)
        require_reduced(len(run.voyage.reduced), run.voyage.n_reduced, ABOVE)
        if csv:
            from .format import training_csv

            echo_csv(training_csv(run.report))
        else:
            echo_lines(training_lines(run, track))
        echo_lines(group_warning_lines(run.voyage.groups), err=True)
        said = {"err": csv}
        if ".xlsx" in files:
            typer.echo(f"wrote {write_workbook(run.voyage, files['.xlsx'], training=run.report)}", **said)
        for suffix in (".pdf", ".png", ".svg"):
            if suffix in files:
                typer.echo(f"wrote {write_training_summary(run.report, files[suffix], inputs=run.inputs)}", **said)
        if plots:
            count = write_observer_pictures(run.report, plots, inputs=run.inputs)
            typer.echo(f"wrote {count} observer pictures to {plots}", **said)
        if ".csv" in files:
            target, others = write_training_csv(run.report, files[".csv"], inputs=run.inputs)
            typer.echo(f"wrote {target} and {others}", **said)


MARK_FILES = {".xlsx": "the marking workbook: the class, the mistakes, the fixes, each cadet's progress and a "
                       "marking sheet per cadet", ".pdf": "each cadet's sight book, printed: progress, fixes and "
                       "every working with its marks", ".csv": "one row per working (the table --csv prints)"}


@command("mark")
def mark_command(
    ctx: typer.Context,
    workings: list[str] = typer.Argument(None, metavar="WORKINGS...", help="Hand workings: CSV or .xlsx files, a folder of them, a workbook with a sheet per cadet, or filled sight-book pages (see docs/marking.md)."),
    output: list[str] = typer.Option(None, "--output", "-o", help=outputs_help(MARK_FILES)),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="one row per working: row, verdict, first_wrong_line (empty when all is right), cause, noticed, and more")),
    track: str | None = typer.Option(None, "--track", help="The ship's reference track (GPX, NMEA or CSV, as for navred training): each cadet's personal error against it."),
    exam: bool = typer.Option(False, "--exam", help="Exam mode: leave out navred's fix and any reference position."),
    template: str | None = typer.Option(None, "--template", help="Write an empty sight book to this file and stop: .xlsx a page per method to fill in, .pdf the same pages printed blank."),
    rates: str | None = _rates(),
    dates: str | None = _dates(),
    pdf: str | None = typer.Option(None, "--pdf", hidden=True),
) -> None:
    """Mark hand reductions by every method taught: each line recomputed from the cadet's own earlier lines, the first wrong line named with its probable cause.

    What should have been noticed is said too, and what a slip costs in miles.

    Example:  navred mark sample_sights/class_workings.xlsx -o marking.xlsx -o sight_books.pdf
    """
    from ..io.output import check_output, write_text
    from ..jobs.reducing import require_reduced

    with reported(ctx):
        if template:
            from ..jobs.workings import write_template

            check_output(template, input_files(workings), suffixes=(".xlsx", ".pdf"), what="--template")
            typer.echo(f"wrote {write_template(template)}")
            return
        if not workings:
            raise NavredError("give the workings to mark (files, a folder, a workbook with a sheet per cadet, or "
                              "filled sight-book pages), or --template FILE for an empty sight book")
        from ..jobs.workings import mark_workings, write_marking_pdf, write_marking_workbook
        from .format import mark_csv, mark_lines

        files = output_files(old_outputs(output, pdf=pdf), MARK_FILES, input_files(workings, track, rates))
        report = mark_workings(source(workings), dates=dates, exam=exam, track=track, rates=ratings(rates, dates))
        print_notes(report.workings.log)
        if not len(report.rows) and not len(report.workings.log.table):
            require_reduced(0, 0)
        written = []  # the files first: a target that cannot be written stops the run before the long list
        if ".xlsx" in files:
            written.append(write_marking_workbook(report, files[".xlsx"]))
        if ".pdf" in files:
            written.append(write_marking_pdf(report, files[".pdf"]))
        if ".csv" in files:
            written.append(write_text(files[".csv"], mark_csv(report), inputs=report.workings.log.sources))
        if csv:
            echo_csv(mark_csv(report))
        else:
            echo_lines(mark_lines(report))
        for path in written:
            typer.echo(f"wrote {path}", err=csv)
        if not len(report.rows):
            raise NavredError("no working could be marked: every row was rejected"
                              + (" (the reasons are above)" if not csv else " (navred mark without --csv gives "
                                                                             "the reasons)"))


@command("rate")
def rate_command(
    ctx: typer.Context,
    rating_logs: list[str] = typer.Argument(..., metavar="RATING_LOG...", help="Time-signal comparisons: CSV or .xlsx with utc (the signal), reading (the timepiece at it), and timepiece and zone_description where needed."),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="every comparison with its error and residual")),
    dates: str | None = _dates(),
) -> None:
    """Each timepiece's error and daily rate from time signals, by least squares, with the rate's 95 % interval, and a flag when the rate has changed.

    Example:  navred rate sample_sights/passage_time_signals.csv
    """
    from ..io.output import csv_text
    from .format import rate_lines

    with reported(ctx):
        rated = ratings(source(rating_logs), dates)
        print_notes(rated)
        if csv:
            echo_csv(csv_text(rated.comparisons_table()))
        else:
            echo_lines(rate_lines(rated))
