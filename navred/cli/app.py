"""The navred command line (typer): the only module that prints.

Every command catches navred's own errors, prints one clear line and exits 1;
warnings from the core are printed, never hidden.
"""

from __future__ import annotations

import contextlib
import sys
import warnings

import typer

from .. import __version__
from ..errors import NavredError, NavredInternalError, NavredWarning
from ..status import FixKind, RunFrom, SightStatus

app = typer.Typer(
    name="navred",
    help=("Celestial-navigation sight reduction from first principles. An aid to navigation, "
          "not a sole means: check against the official almanac and keep a DR plot."),
    no_args_is_help=True,
    add_completion=False,
    rich_markup_mode=None,
    pretty_exceptions_enable=False,
)


@contextlib.contextmanager
def _reported(ctx=None):
    """Turn navred errors into one line and exit 1; print every warning. Anything unforeseen is one
    line too (no traceback reaches a user; NAVRED_DEBUG=1 shows it)."""
    import os

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", NavredWarning)
        try:
            _refuse_empty_values(ctx)
            yield
        except NavredError as exc:
            if os.environ.get("NAVRED_DEBUG") and isinstance(exc, NavredInternalError):
                raise
            _print_warnings(caught)
            typer.echo(f"navred: error: {exc}", err=True)
            raise typer.Exit(code=1) from None
        except (typer.Exit, typer.Abort, SystemExit):
            raise
        except KeyboardInterrupt:
            typer.echo("navred: interrupted (no file was left half written)", err=True)
            raise typer.Exit(code=130) from None
        except MemoryError:
            typer.echo("navred: error: out of memory: the input is too large for this machine; split it", err=True)
            raise typer.Exit(code=1) from None
        except BrokenPipeError:  # the reader of the output (head, a pager) closed it: stop, without a traceback
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
            typer.echo("navred: the output was cut short: its reader closed the pipe; nothing after it was done",
                       err=True)
            raise typer.Exit(code=1) from None
        except OSError as exc:
            _print_warnings(caught)
            typer.echo(f"navred: error: {exc.strerror or exc}{f': {exc.filename}' if exc.filename else ''}", err=True)
            raise typer.Exit(code=1) from None
        except Exception as exc:  # a failure navred did not foresee: one line, and how to report it
            if os.environ.get("NAVRED_DEBUG"):
                raise
            _print_warnings(caught)
            typer.echo(f"navred: error: an unexpected failure ({type(exc).__name__}: {exc}); this is a fault in "
                       "navred: please report it with the command and the input (NAVRED_DEBUG=1 shows the detail)",
                       err=True)
            raise typer.Exit(code=1) from None
    _print_warnings(caught)
    _caution()


def _refuse_empty_values(context) -> None:
    """An option or argument given as an empty string (``-o ''``, ``--rates ''``) is refused by name: it is a
    slip (an unset shell variable), never a choice, and must not pass for an option not given."""
    if context is None:
        return
    for parameter in context.command.params:
        value = context.params.get(parameter.name)
        values = value if isinstance(value, (list, tuple)) else [value]
        if any(isinstance(v, str) and not v.strip() for v in values):
            name = "/".join(o for o in parameter.opts if o.startswith("--")) or (parameter.opts[0] if parameter.opts
                                                                                  else parameter.name)
            if not parameter.opts or not parameter.opts[0].startswith("-"):
                name = (parameter.metavar or parameter.name).upper().rstrip(".")
            raise NavredError(f"{name}: an empty value was given; give a value, or leave the option out")


def _print_notes(*sources, err: bool = True) -> None:
    """The notes a reader made about its files as a whole (the columns it does not read, a file read as
    Windows-1252, a column repeated), one line each."""
    seen = set()
    for source in sources:
        for note in getattr(source, "notes", None) or ():
            if note not in seen:
                seen.add(note)
                typer.echo(f"note: {note}", err=err)


def _input_files(*groups) -> list[str]:
    """Every file a run reads from these paths (a folder's logs included), to be refused as an output."""
    from pathlib import Path

    files = []
    for group in groups:
        for item in ([group] if isinstance(group, str) else list(group or [])):
            if not item:
                continue
            path = Path(item)
            files.append(str(path))
            if path.is_dir():
                files.extend(str(p) for p in path.iterdir() if p.is_file())
    return files


def _check_folder(folder: str, inputs, name: str) -> None:
    """A folder to write pictures into, checked before the work: not a file, not an input, writable."""
    from pathlib import Path

    from ..io.output import check_output

    path = Path(folder)
    if path.exists() and not path.is_dir():
        raise NavredError(f"{name} {folder}: that is a file; give a folder")
    if any(Path(i).resolve() == path.resolve() for i in inputs):
        raise NavredError(f"{name} {folder}: that is one of the inputs of this run; give another folder")
    check_output(path / "picture.png", inputs, what=name)


def _csv_safe(frame):
    from ..io.output import csv_safe

    return csv_safe(frame)


def _column_number(value: float | None, name: str, key: str):
    """A number for one of the sight log's quantities (course, speed, height of eye...), checked against the
    range the log's column takes (``navred.vocabulary.COLUMNS``, the one table of ranges)."""
    from ..vocabulary import COLUMN

    return _number(value, name, COLUMN[key].low, COLUMN[key].high)


def _number(value: float | None, name: str, low: float, high: float, why: str = ""):
    """A number given on the command line, refused with one line when not finite or out of range (``why``: what
    the range is, for the message)."""
    import math

    if value is None:
        return None
    if not math.isfinite(value):
        raise NavredError(f"{name} {value!r} is not a number; give a value from {low:g} to {high:g}")
    if not low <= value <= high:
        raise NavredError(f"{name} {value!r} is outside {low:g} to {high:g}" + (f" ({why})" if why else ""))
    return value


def _print_warnings(caught) -> None:
    seen = set()
    for item in caught:
        if issubclass(item.category, NavredWarning) and str(item.message) not in seen:
            seen.add(str(item.message))
            typer.echo(f"warning: {item.message}", err=True)


def _version(value: bool) -> None:
    if value:
        typer.echo(f"navred {__version__}")
        raise typer.Exit()


@app.callback()
def _main(version: bool = typer.Option(False, "--version", callback=_version, is_eager=True,
                                       help="Print the version and exit.")) -> None:
    """navred: reduce sextant sights, fix the position, keep an auditable log."""


@app.command("almanac")
def almanac_command(
    ctx: typer.Context,
    bodies: list[str] = typer.Argument(..., help="Body names: Sun, Moon, Venus, Mars, Jupiter, Saturn or a navigational star."),
    utc: str = typer.Option(..., "--utc", "-t", help="Instant, ISO 8601 with a zone, e.g. 2026-03-20T18:42:10Z."),
    dut1: float | None = typer.Option(None, "--dut1", help="UT1 - UTC in seconds (from a radio time signal); default: the IERS table."),
    csv: bool = typer.Option(False, "--csv", help="Machine-readable CSV with decimal degrees instead of the table."),
) -> None:
    """GHA, Dec, SHA, HP and SD of bodies at one instant, in navigational form.

    Example:  navred almanac Sun Moon Vega --utc 2026-03-20T18:42:10Z
    """
    from ..almanac import places
    from ..angles import format_angle

    with _reported(ctx):
        from ..vocabulary import COLUMN

        _number(dut1, "--dut1", COLUMN["dut1"].low, COLUMN["dut1"].high,  # as the log's dut1 column
                "seconds: UT1 − UTC is kept within 0.9 s by leap seconds, and the log's dut1 column is held to it")
        result = places(list(bodies), _single_instant(utc), dut1_s=dut1)
        instant = result.instants.utc_datetime64()[0]
        stamp = str(instant.astype("datetime64[ms]"))
        dut1_s, source = float(result.instants.dut1_s[0]), str(result.instants.ut1_source[0])
        columns = {"gha_aries_deg": result.gha_aries_deg, "ra_hours": result.ra_hours, "sha_deg": result.sha_deg,
                   "gha_deg": result.gha_deg, "dec_deg": result.dec_deg, "hp_arcmin": result.hp_arcmin,
                   "sd_arcmin": result.sd_arcmin, "distance_km": result.distance_km}
        if csv:
            # body names are the catalogue's own (never formula-like); numbers to 1e-7
            typer.echo(",".join(["body", "utc", *columns, "dut1_s", "ut1_source"]))
            for k, body in enumerate(result.body.tolist()):
                numbers = ["" if v != v else f"{v:.7f}" for v in (float(c[k]) for c in columns.values())]
                typer.echo(",".join([body, f"{stamp}000Z", *numbers, f"{dut1_s:.7f}", source]))
            return
        typer.echo(f"UTC {stamp[:19].replace('T', ' ')}   DUT1 {dut1_s:+.3f} s ({source})")
        typer.echo(f"GHA Aries {format_angle(float(result.gha_aries_deg[0]))}")
        typer.echo("")
        typer.echo(f"{'body':<16}{'GHA':>13}{'Dec':>14}{'SHA':>13}{'HP':>8}{'SD':>8}")
        for k, body in enumerate(result.body.tolist()):
            hp_value, sd_value = float(result.hp_arcmin[k]), float(result.sd_arcmin[k])
            hp = f"{hp_value:.1f}′" if hp_value else "-"
            sd = f"{sd_value:.1f}′" if sd_value else "-"
            typer.echo(f"{body:<16}{format_angle(float(result.gha_deg[k])):>13}"
                       f"{format_angle(float(result.dec_deg[k]), 'dec'):>14}{format_angle(float(result.sha_deg[k])):>13}"
                       f"{hp:>8}{sd:>8}")


def _single_instant(utc: str):
    """One instant for many bodies (a list of one, so that the bodies pair with it)."""
    import numpy as np

    from ..timescales import instants

    return instants(np.array([utc], dtype=object)) if isinstance(utc, str) else utc


_SIGHTS_HELP = "Sight logs: CSV or .xlsx files, or folders of them (see docs/sight-log.md)."
_DATES_HELP = ("The order of numeric dates that are not ISO 8601 (05/03/2026), for the whole log: "
               "day-first or month-first. Without it such a date is refused.")


def _source(paths: list[str]):
    """One file as itself, several as a list: what read_sight_log takes."""
    return paths[0] if len(paths) == 1 else list(paths)


_RATES_HELP = ("A rating log of time signals (utc, reading, timepiece): a sight kept in zone time with no watch_error "
               "takes its timepiece's predicted error (docs/timepieces.md).")


def _ratings(rates, dates: str | None = None):
    """The rating log given with --rates, read and fitted with the log's date order (None without one)."""
    if not rates:
        return None
    from ..io.timesignals import read_rating_log

    return read_rating_log(rates, dates=dates)


def _reduced(log):
    """The log's sights reduced; a DR carried along the log's track is carried from the last fix before the
    sight, as every command that fixes carries it (navred.jobs.voyage.process_log), so that the intercepts agree."""
    from ..jobs.sights import reduce_sights

    if len(log.table) and (log.table["dr_carried_from"] != "").any():
        from ..jobs.voyage import process_log

        return process_log(log, plan=False).reduced
    return reduce_sights(log)


#: rows of a long log reduced together by navred reduce --csv (each core holds one block's working)
REDUCE_BLOCK_ROWS = 25_000


def _reduced_block_csv(plan, k: int) -> tuple[str, int, int]:
    """Block ``k`` of a long log read, reduced and written as CSV (the header with the first), with the number
    of its rows and of its sights reduced."""
    from ..io.output import csv_text

    reduced = _reduced(plan.read(k))
    return csv_text(reduced, header=k == 0), len(reduced), int((reduced.status != SightStatus.ERROR).sum())


def _nothing_reduced(rows: int, reduced: int, where: str = "navred reduce names each row and why") -> None:
    """Exit 1 with one line when a run reduced no sight: a log with no sight rows, or none readable."""
    if rows == 0:
        raise NavredError("nothing could be reduced: the log holds no sights, only a header (and perhaps empty rows)")
    if reduced == 0:
        raise NavredError(f"nothing could be reduced: {'the one row was' if rows == 1 else f'every one of the {rows} rows was'} "
                          f"rejected; {where}")


def _count_reduced(reduced) -> int:
    return int((reduced["status"] != SightStatus.ERROR).sum()) if len(reduced) else 0


def _labels(reduced):
    from ..jobs.frames import row_labels

    return row_labels(reduced)


@app.command("reduce")
def reduce_command(
    ctx: typer.Context,
    sights_files: list[str] = typer.Argument(..., metavar="SIGHTS...", help=_SIGHTS_HELP),
    csv: bool = typer.Option(False, "--csv", help="Print every column of every sight (reduced or not) as CSV."),
    rates: str | None = typer.Option(None, "--rates", help=_RATES_HELP),
    dates: str | None = typer.Option(None, "--dates", help=_DATES_HELP),
) -> None:
    """Reduce every sight: Ho, Hc, Zn and the intercept TOWARD or AWAY, with any warning.

    Each row is named by its row number in the log (the header is row 1), with its file when
    several logs are read; a row that cannot be reduced says why.

    Example:  navred reduce sample_sights/demo_sights.csv
    """
    from ..angles import format_angle
    from ..io.logbook import read_sight_log

    with _reported(ctx):
        if csv:
            # block by block, the blocks shared among the cores: a fleet's archive of a million sights never sits
            # in memory whole
            from ..io.logbook import sight_log_blocks
            from ..io.output import csv_text
            from ..jobs.forking import cores, forked_map

            ratings = _ratings(rates, dates)
            source = _source(sights_files)
            plan = sight_log_blocks(source, dates=dates, rates=ratings, block_rows=REDUCE_BLOCK_ROWS)
            rows = done = 0
            if plan is None:
                log = read_sight_log(source, dates=dates, rates=ratings)
                _print_notes(ratings, log)
                reduced = _reduced(log)
                sys.stdout.write(csv_text(reduced))
                rows, done = len(reduced), int((reduced.status != SightStatus.ERROR).sum())
            else:
                _print_notes(ratings, plan)
                for text, block_rows, block_done in forked_map(_reduced_block_csv, range(len(plan)), context=plan,
                                                               workers=cores()):
                    sys.stdout.write(text)
                    rows, done = rows + block_rows, done + block_done
            sys.stdout.flush()
            _nothing_reduced(rows, done, "the CSV names each row and why (status, message)")
            return
        ratings = _ratings(rates, dates)
        log = read_sight_log(_source(sights_files), dates=dates, rates=ratings)
        _print_notes(ratings, log)
        reduced = _reduced(log)
        labels = [label.removeprefix("row ") for label in _labels(reduced)]
        width = max([len(x) for x in labels] + [3])
        typer.echo(f"{'row':>{width}}  {'body':<15}{'UTC':<21}{'Ho':>12}{'Hc':>12}{'Zn':>8}  {'intercept':<18}note")
        for label, row in zip(labels, reduced.itertuples()):
            when = f"{row.sight_utc:%Y-%m-%d %H:%M:%S}" if str(row.sight_utc) != "NaT" else ""
            if row.status == SightStatus.ERROR:
                typer.echo(f"{label:>{width}}  {str(row.body_name or '?'):<15}{when:<21}{'not reduced:':>12} "
                           f"{row.message}")
                continue
            intercept = f"{abs(row.intercept_nm):5.1f} nm {row.intercept_direction}"
            carried = getattr(row, "motion_carried_from", "")
            note = "; ".join(t for t in (row.message, carried) if t)
            typer.echo(f"{label:>{width}}  {row.body_name:<15}{when:<21}{format_angle(row.ho_deg, 'signed'):>12}"
                       f"{format_angle(row.hc_deg, 'signed'):>12}{row.zn_deg:7.1f}°  {intercept:<18}{note}")
        counts = reduced.status.value_counts()
        empty = f", {log.empty_rows} empty row{'s' if log.empty_rows > 1 else ''} skipped" if log.empty_rows else ""
        typer.echo(f"{int(counts.get('ok', 0) + counts.get('warning', 0))} sights reduced "
                   f"({int(counts.get('warning', 0))} with a warning), {int(counts.get('error', 0))} not reduced{empty}")
        _nothing_reduced(len(reduced), len(reduced) - int(counts.get("error", 0)), "each row's reason is above")


def _print_fix(group, reduced, labels) -> None:
    import numpy as np

    from ..angles import format_angle, wrap_360

    fix = group.fix
    when = str(fix.utc)[:19].replace("T", " ")
    left_out = fix.left_out if fix.left_out.size == len(group.rows) else np.zeros(len(group.rows), dtype=bool)
    if fix.is_fix:
        dropped = (f", {int(left_out.sum())} left out (see below)" if left_out.any() else "")
        typer.echo(f'Fix "{group.name}": {int(fix.used.sum())} sights{dropped}, at {when} UTC')
        typer.echo(f"  position       {format_angle(fix.lat_deg, 'lat')}  {format_angle(fix.lon_deg, 'lon')}")
        typer.echo(f"  95 % ellipse   {fix.ellipse_text()}, major "
                   f"axis {fix.ellipse_orientation_deg:03.0f}°/{float(wrap_360(fix.ellipse_orientation_deg + 180)):03.0f}° "
                   f"(scaled by the {fix.quantile} quantile"
                   + ("; the DR's error over the run included)" if fix.dr_error_included else ")"))
        if fix.ellipse_note:
            typer.echo(f"                 {fix.ellipse_note}")
    else:
        typer.echo(f'No fix in "{group.name}": {int(fix.used.sum())} sights whose lines cross at {fix.spread_deg:.0f}° '
                   f"give a {fix.kind}, at {when} UTC")
        if fix.kind == FixKind.LATITUDE:
            typer.echo(f"  latitude       {format_angle(fix.lat_deg, 'lat')}, 95 % band {fix.ellipse_text()}"
                       + (f"; noon curve {format_angle(fix.noon_curve_latitude_deg, 'lat')}"
                          if fix.noon_curve_latitude_deg is not None else ""))
        else:
            typer.echo(f"  line           through {format_angle(fix.lat_deg, 'lat')}  {format_angle(fix.lon_deg, 'lon')}, "
                       f"bearing {fix.line_bearing_deg:03.0f}°/{float(wrap_360(fix.line_bearing_deg + 180)):03.0f}°, "
                       f"95 % band {fix.ellipse_text()}")
        typer.echo(f"  from the DR    {abs(fix.line_offset_nm):.1f} nm {'toward' if fix.line_offset_nm >= 0 else 'away from'} "
                   f"{fix.line_toward_deg:03.0f}°")
    typer.echo(f"  sight error    {fix.sigma_arcmin:.2f}′ ({fix.sigma_source})"
               + (f"; fix standard error {fix.standard_error_nm:.2f} nm" if fix.is_fix else ""))
    if fix.course_made_good_deg is not None:
        typer.echo(f"  made good      {fix.course_made_good_deg:05.1f}° at {fix.speed_made_good_kn:.1f} kn")
    if fix.run_from != RunFrom.NONE:
        typer.echo(f"  run between the sights: {fix.run_from}")
    typer.echo(f"  blunder check  {fix.blunder_note}")
    width = max([len(labels[r]) for r in group.rows] + [5])
    typer.echo(f"  {'sight':<{width}}  {'body':<16}{'residual':>10}  flag")
    for k, row in enumerate(group.rows):
        residual = fix.residual_arcmin[k]
        flag = "BLUNDER? left out of the check fix" if fix.outlier[k] else ""
        if left_out[k]:
            flag = "LEFT OUT of this fix: a gross error (its line from this fix)"
        if reduced.status.iloc[row] == SightStatus.ERROR:
            flag = "not reduced"
        carried = reduced["motion_carried_from"].iloc[row] if "motion_carried_from" in reduced.columns else ""
        flag = "; ".join(t for t in (flag, carried) if t)
        text = f"{residual:+.1f}′" if residual == residual else "-"
        typer.echo(f"  {labels[row]:<{width}}  {str(reduced.body_name.iloc[row]):<16}{text:>10}  {flag}")
    if fix.all_sights is not None:
        other = fix.all_sights
        typer.echo(f"  from every sight (not to plot): {format_angle(other.lat_deg, 'lat')}  "
                   f"{format_angle(other.lon_deg, 'lon')}, 95 % ellipse {other.ellipse_text()}")
    if fix.without_outliers is not None:
        other = fix.without_outliers
        typer.echo(f"  without the flagged sights (the check fix): {format_angle(other.lat_deg, 'lat')}  "
                   f"{format_angle(other.lon_deg, 'lon')}, 95 % ellipse {other.ellipse_text()}")
    if fix.chart_distance_nm is not None and fix.is_fix:
        where = "inside" if fix.chart_inside_ellipse else "OUTSIDE"
        typer.echo(f"  chart position {fix.chart_distance_nm:.1f} nm from the fix, bearing "
                   f"{fix.chart_bearing_deg:03.0f}°: {where} the 95 % ellipse ({group.chart_note})")
    elif fix.chart_distance_nm is not None:
        off = abs(fix.distance_off_line_nm(*group.chart))
        typer.echo(f"  chart position {off:.1f} nm off the {fix.kind}: {'within' if fix.chart_inside_ellipse else 'OUTSIDE'} "
                   f"its 95 % band ({group.chart_note})")
    for text in fix.warnings:
        typer.echo(f"  warning: {text}")
    _print_sight_warnings(reduced, labels, group.rows, indent="  ")


def _print_sight_warnings(reduced, labels, rows=None, *, indent: str = "", err: bool = False) -> None:
    """Each sight's own warning (a long intercept, a low altitude...), named by its row: a command that shows
    a fix or a position built on the sight shows its warnings too."""
    if not len(reduced):
        return
    rows = range(len(reduced)) if rows is None else rows
    status = reduced["status"].to_numpy()
    messages = reduced["message"].to_numpy(dtype=object)
    bodies = reduced["body_name"].to_numpy(dtype=object)
    for row in rows:
        if status[row] == SightStatus.WARNING and messages[row]:
            typer.echo(f"{indent}warning: {labels[row]} ({bodies[row]}): {messages[row]}", err=err)


def _print_latitude_checks(reduced, labels) -> None:
    """Latitude by meridian altitude (sights within 0.25° of LHA 0) and by Polaris, as checks."""
    import numpy as np

    from ..angles import format_angle
    from ..latitudes import latitude_by_meridian_altitude, latitude_by_polaris

    usable = reduced.status.to_numpy() != SightStatus.ERROR
    lha = reduced.lha_deg.to_numpy()
    on_meridian = usable & ((lha < 0.25) | (lha > 359.75)) & (reduced.body_name.to_numpy() != "Polaris")
    polaris = usable & (reduced.body_name.to_numpy() == "Polaris")
    if not (on_meridian.any() or polaris.any()):
        return
    typer.echo("Latitude checks")
    for row in np.flatnonzero(on_meridian):
        bearing = "S" if 90.0 < reduced.zn_deg[row] < 270.0 else "N"
        latitude = latitude_by_meridian_altitude(reduced.ho_deg[row], reduced.dec_deg[row], bearing)
        typer.echo(f"  {labels[row]:<8} {reduced.body_name[row]:<10} on the meridian: latitude "
                   f"{format_angle(float(latitude), 'lat')} (DR {format_angle(reduced.dr_lat_deg[row], 'lat')})")
    for row in np.flatnonzero(polaris):
        latitude = latitude_by_polaris(reduced.ho_deg[row], reduced.gha_deg[row], reduced.dec_deg[row],
                                       reduced.dr_lon_deg[row])
        typer.echo(f"  {labels[row]:<8} Polaris: latitude {format_angle(float(latitude), 'lat')} "
                   f"(DR {format_angle(reduced.dr_lat_deg[row], 'lat')})")
    typer.echo("")


def _fixes_csv(voyage) -> str:
    """One line per fix group, decimal degrees, for a program to read."""
    import numpy as np
    import pandas as pd

    labels = _labels(voyage.reduced)
    rows = []
    for group in voyage.groups:
        fix = group.fix
        if fix is None:
            rows.append({"fix_group": group.name, "note": f"no fix: {group.problem}"})
            continue
        left = fix.left_out if fix.left_out.size == len(group.rows) else np.zeros(len(group.rows), dtype=bool)
        every = fix.all_sights
        rows.append({"fix_group": group.name, "utc": str(fix.utc)[:23] + "Z", "kind": fix.kind,
                     "lat_deg": fix.lat_deg, "lon_deg": fix.lon_deg, "sights": int(fix.used.sum()),
                     "sigma_arcmin": fix.sigma_arcmin, "quantile": fix.quantile,
                     "ellipse_length_nm": 2 * fix.ellipse_semi_major_nm, "ellipse_width_nm": 2 * fix.ellipse_semi_minor_nm,
                     "ellipse_semi_major_nm": fix.ellipse_semi_major_nm,
                     "ellipse_semi_minor_nm": fix.ellipse_semi_minor_nm,
                     "ellipse_orientation_deg": fix.ellipse_orientation_deg,
                     "flagged": " ".join(labels[group.rows[i]] for i in range(len(group.rows)) if fix.outlier[i]),
                     "left_out": " ".join(labels[group.rows[i]] for i in range(len(group.rows)) if left[i]),
                     "all_sights_lat_deg": every.lat_deg if every is not None else None,
                     "all_sights_lon_deg": every.lon_deg if every is not None else None,
                     "dr_distance_nm": fix.dr_distance_nm,
                     "chart_distance_nm": fix.chart_distance_nm, "chart_inside_ellipse": fix.chart_inside_ellipse,
                     "note": "; ".join(fix.warnings)})
    return _csv_safe(pd.DataFrame(rows)).to_csv(index=False, float_format="%.7f")


@app.command("fix")
def fix_command(
    ctx: typer.Context,
    sights_files: list[str] = typer.Argument(..., metavar="SIGHTS...", help=_SIGHTS_HELP),
    at: str | None = typer.Option(None, "--at", help="Fix time (ISO 8601 with a zone); default: the last sight of each group."),
    chart_lat: str | None = typer.Option(None, "--chart-lat", help="Chart or GNSS latitude to cross-check, e.g. '43 16.5 N'."),
    chart_lon: str | None = typer.Option(None, "--chart-lon", help="Chart or GNSS longitude to cross-check, e.g. '013 11.4 W'."),
    group: str | None = typer.Option(None, "--group", help="Fix only this fix group."),
    solve_motion: bool = typer.Option(False, "--solve-motion", help="Also solve course and speed made good, when the sights allow."),
    csv: bool = typer.Option(False, "--csv", help="Print one line per fix group as CSV (decimal degrees)."),
    rates: str | None = typer.Option(None, "--rates", help=_RATES_HELP),
    dates: str | None = typer.Option(None, "--dates", help=_DATES_HELP),
) -> None:
    """Least-squares fix of every fix group: position, 95 % ellipse, residuals and flags.

    Sights are fixed together by their fix_group column; where it is blank, one observer's
    sights less than two hours apart make a group. Sights at different times make a running
    fix with the course and speed columns. Every sight is named by its row in the log.

    Example:  navred fix sample_sights/demo_sights.csv --group evening-stars --chart-lat "43 16.5 N" --chart-lon "013 11.4 W"
    """
    from ..jobs.voyage import fix_groups, process_log

    with _reported(ctx):
        lat = _angle_option(chart_lat, "lat", "--chart-lat") if chart_lat is not None else None
        lon = _angle_option(chart_lon, "lon", "--chart-lon") if chart_lon is not None else None
        if at is not None:
            from ..timescales import utc_datetime64

            try:
                utc_datetime64(at)
            except NavredError as exc:
                raise NavredError(f"--at: {exc}") from None
        if (lat is None) != (lon is None):
            raise NavredError("give both --chart-lat and --chart-lon, or neither")
        voyage = process_log(_source(sights_files), dates=dates, solve_motion=solve_motion, plan=False, at_utc=at,
                             rates=_ratings(rates, dates))
        _print_notes(voyage, err=True)
        _nothing_reduced(len(voyage.reduced), voyage.n_reduced)
        names = [g.name for g in voyage.groups]
        if group is not None:
            voyage.group(group)  # refuses an unknown group, naming the log's groups
        if lat is not None and group is None and len(names) > 1:
            raise NavredError("a chart position belongs to one fix: give --group with --chart-lat/--chart-lon "
                              "(or chart_lat/chart_lon columns in the log)")
        if lat is not None:
            voyage.groups = fix_groups(voyage.reduced, solve_motion=solve_motion, at_utc=at,
                                       only=group or names[0], chart=(lat, lon))
        elif group is not None:
            voyage.groups = [voyage.group(group)]
        if csv:
            typer.echo(_fixes_csv(voyage), nl=False)
            if not any(item.fix is not None for item in voyage.groups):
                raise NavredError("no group had two usable sights: nothing to fix")
            return
        labels = _labels(voyage.reduced)
        fixes = 0
        for item in voyage.groups:
            if item.fix is None:
                typer.echo(f"Group {item.name}: no fix ({item.problem})")
                typer.echo("")
                continue
            _print_fix(item, voyage.reduced, labels)
            typer.echo("")
            fixes += 1
        if fixes:
            from ..fixstats import ELLIPSE_COVERS

            typer.echo(f"Each 95 % ellipse (or band) {ELLIPSE_COVERS}.")
            typer.echo("")
        _print_latitude_checks(voyage.reduced, labels)
        if voyage.n_rejected_rows:
            typer.echo(f"{voyage.n_rejected_rows} row(s) not reduced: see 'navred reduce' for why")
        if not fixes:
            raise NavredError("no group had two usable sights: nothing to fix")


@app.command("workbook")
def workbook_command(
    ctx: typer.Context,
    sights_files: list[str] = typer.Argument(..., metavar="SIGHTS...", help=_SIGHTS_HELP),
    output: str | None = typer.Option(None, "--output", "-o", help="Workbook to write (.xlsx); default: the first log with .navred.xlsx."),
    plots: str | None = typer.Option(None, "--plots", help="Also write each fix's plotting sheet as files (PNG and SVG) into this folder."),
    pictures: str = typer.Option("embed", "--pictures", help="embed: pictures in the workbook (the first 100 of each kind); files: plotting sheets only as files (in --plots, or a folder beside the workbook); none: no pictures."),
    plot_formats: str = typer.Option("png,svg", "--plot-formats", help="The plotting-sheet files to write: png, svg or png,svg."),
    gpx: str | None = typer.Option(None, "--gpx", help="Also write the fixes and DRs as GPX 1.1 waypoints to this file."),
    geojson: str | None = typer.Option(None, "--geojson", help="Also write fixes, ellipses and lines of position as GeoJSON."),
    strict: bool = typer.Option(False, "--strict", help="Exit 1 if any row was rejected."),
    solve_motion: bool = typer.Option(False, "--solve-motion", help="Also solve course and speed made good where the sights allow."),
    carry_current: bool = typer.Option(False, "--carry-current", help="Carry the set and drift found at each fix on in the DR until the next fix."),
    rates: str | None = typer.Option(None, "--rates", help=_RATES_HELP),
    dates: str | None = typer.Option(None, "--dates", help=_DATES_HELP),
) -> None:
    """The whole job: read and check the logs, reduce every sight, fix every group, write the workbook.

    Every row of the logs ends up in the workbook: reduced (Working sheet) or rejected with
    the reason (Rejected sheet), named by its row number in its log. Exits 1 only when
    nothing could be reduced, or with --strict when anything was rejected.

    Example:  navred workbook sample_sights/demo_sights.csv -o demo_voyage.xlsx --plots plots
    """
    from pathlib import Path

    from ..io.logbook import read_sight_log
    from ..io.output import check_output
    from ..io.workbook import Pictures, check_fits, write_plots, write_workbook
    from ..jobs.voyage import process_log

    with _reported(ctx):
        first = Path(sights_files[0])
        target = Path(output) if output else (first / "logs.navred.xlsx" if first.is_dir()
                                              else first.with_suffix(".navred.xlsx"))
        if pictures not in ("embed", "files", "none"):
            raise NavredError(f"--pictures {pictures!r}: give embed, files or none")
        formats = tuple(dict.fromkeys(f.strip().lower() for f in plot_formats.split(",") if f.strip()))
        if not formats or set(formats) - {"png", "svg"}:
            raise NavredError(f"--plot-formats {plot_formats!r}: give png, svg or png,svg")
        if pictures == "files" and not plots:
            plots = str(target.with_name(target.name.removesuffix(".xlsx") + "-plots"))
        inputs = _input_files(sights_files, rates)
        # every output refused now, before the work, not after it
        check_output(target, inputs, suffixes=(".xlsx",), what="--output")
        if gpx:
            check_output(gpx, inputs, suffixes=(".gpx",), what="--gpx")
        if geojson:
            check_output(geojson, inputs, suffixes=(".geojson", ".json"), what="--geojson")
        if plots:
            _check_folder(plots, inputs, "--plots")
        ratings = _ratings(rates, dates)
        log = read_sight_log(_source(sights_files), dates=dates, rates=ratings)
        _print_notes(ratings, log)
        check_fits(len(log.table))
        if not len(log.table):
            _nothing_reduced(0, 0)
        for path in (target, gpx, geojson):
            if path:
                check_output(path, log.sources)  # a folder's logs, now that they are known
        bar = None

        def progress(done: int, total: int) -> None:
            nonlocal bar
            if bar is None:
                bar = typer.progressbar(length=total, label="reducing sights", file=sys.stderr)
                bar.__enter__()
            bar.update(done - bar.pos)

        voyage = process_log(log, solve_motion=solve_motion, progress=progress, carry_current=carry_current,
                             rates=ratings)
        if bar is not None:
            bar.__exit__(None, None, None)
        chosen = Pictures(embed=pictures == "embed", folder=plots)
        write_workbook(voyage, target, plots=chosen)
        typer.echo(f"wrote {target}")
        fixed = sum(group.fix is not None for group in voyage.groups)
        note = chosen.note("plotting sheets", min(fixed, chosen.limit) if chosen.embed else 0, fixed)
        if note:
            typer.echo(f"note: {note}", err=True)
        if plots:
            written = write_plots(voyage, plots, formats)
            typer.echo(f"wrote {len(written)} picture files (plotting sheets and the voyage track) to {plots}")
        if gpx:
            from ..io.exports import write_gpx

            typer.echo(f"wrote {write_gpx(voyage, gpx)}")
        if geojson:
            from ..io.exports import write_geojson

            typer.echo(f"wrote {write_geojson(voyage, geojson)}")
        for group in voyage.groups:
            if group.fix is None:
                typer.echo(f"group {group.name}: no fix ({group.problem})")
            for text in (group.fix.warnings if group.fix is not None else []):
                typer.echo(f"warning: group {group.name}: {text}", err=True)
        _print_sight_warnings(voyage.reduced, _labels(voyage.reduced), err=True)
        typer.echo(voyage.summary())
        if voyage.n_reduced == 0:
            raise NavredError(f"nothing could be reduced: the Rejected sheet of {target} gives every row's reason")
        if strict and voyage.n_rejected_rows:
            typer.echo(f"--strict: {voyage.n_rejected_rows} row(s) rejected", err=True)
            raise typer.Exit(code=1)


def _time_text(value) -> str:
    import numpy as np

    if value is None or (isinstance(value, np.datetime64) and np.isnat(value)):
        return "-"
    return str(value)[:19].replace("T", " ")


def _plan_frame(plan):
    import pandas as pd

    from ..angles import format_angle

    frame = pd.DataFrame({"body": plan.body, "hc_deg": plan.hc_deg, "zn_deg": plan.zn_deg,
                          "magnitude": plan.magnitude, "moon_separation_deg": plan.moon_separation_deg,
                          "recommended": plan.recommended})
    frame.insert(0, "utc", _time_text(plan.utc))
    frame["hc"] = [format_angle(v, "signed") for v in plan.hc_deg]
    return frame.sort_values("zn_deg").reset_index(drop=True)


def _print_plan(plan, label: str) -> None:
    from ..angles import format_angle

    typer.echo(f"{label}: {_time_text(plan.utc)} UTC at {format_angle(plan.lat_deg, 'lat')} "
               f"{format_angle(plan.lon_deg, 'lon')}")
    typer.echo(f"  {'body':<16}{'Hc (preset)':>12}{'Zn':>8}{'mag':>6}  {'from Moon':>9}")
    frame = _plan_frame(plan)
    for row in frame.itertuples():
        mark = "  <- recommended" if row.recommended else ""
        typer.echo(f"  {row.body:<16}{row.hc:>12}{row.zn_deg:7.1f}°{row.magnitude:6.1f}  "
                   f"{row.moon_separation_deg:8.0f}°{mark}")
    typer.echo(f"  choice: {plan.explanation}")


def _angle_option(text: str | None, kind: str, name: str):
    """An angle given on the command line, read by the log's own rules ('43 14.1 N', '4 W', -5.25)."""
    from ..angles import parse_angle

    if text is None:
        raise NavredError(f"{name} is required")
    try:
        return float(parse_angle(text, kind))
    except NavredError as exc:
        raise NavredError(f"{name}: {exc}") from None


@app.command("plan")
def plan_command(
    ctx: typer.Context,
    date: str = typer.Option(..., "--date", help="Local civil date of the first day, e.g. 2026-03-26."),
    lat: str = typer.Option(..., "--lat", help="DR latitude at 00:00 local time, e.g. '43 16.6 N'."),
    lon: str = typer.Option(..., "--lon", help="DR longitude at 00:00 local time, e.g. '013 11.4 W'."),
    course: float = typer.Option(0.0, "--course", help="Course to steer (degrees true) for the DR track."),
    speed: float = typer.Option(0.0, "--speed", help="Speed (knots) for the DR track."),
    days: int = typer.Option(1, "--days", min=1, max=400, help="How many days to plan."),
    eye: str | None = typer.Option(None, "--eye", help="Height of eye with its unit, '2.8 m' or '9 ft' (dip at sunrise and sunset, and the Hs to preset)."),
    index_error: str = typer.Option("0", "--index-error", help="Index error for the Hs to preset: '1.4 on' (on the arc), '0.8 off', or signed arcminutes."),
    zone: str | None = typer.Option(None, "--zone", help="The zone description kept (ZT + ZD = UTC), e.g. '+1'; default: the DR longitude's zone each day."),
    count: int = typer.Option(3, "--count", help="Bodies in the recommended set: 3, 4 or 5."),
    min_alt: float = typer.Option(15.0, "--min-alt", help="Lowest altitude to plan (degrees)."),
    max_alt: float = typer.Option(70.0, "--max-alt", help="Highest altitude to plan (degrees)."),
    at: str | None = typer.Option(None, "--at", help="Plan at this instant instead of at the twilights (ISO 8601 with a zone)."),
    output: list[str] = typer.Option(None, "--output", "-o", help="Files to write, by suffix: .pdf (a page per round of sights with the sky picture, for the bridge), .txt (this text), .png or .svg (the first round's sky)."),
    csv_out: str | None = typer.Option(None, "--csv", help="Write the day's times and every plan as CSV (two files: NAME and NAME with -plans)."),
    sky: str | None = typer.Option(None, "--sky", help="Draw the first plan's sky as PNG or SVG to this file."),
) -> None:
    """Twilight times along the DR track and a sight plan for each twilight (or one instant), for the bridge.

    For each day: nautical and civil twilight, sunrise, sunset and the Sun's meridian passage in zone
    time and UTC to the minute, and the noon Hs to preset (lower limb); for each twilight every star,
    planet and the Moon between the altitude limits with the Hs to preset (Hc with dip, refraction, SD,
    parallax and index error taken back off), the limb (the Moon's lit one), Hc, Zn and magnitude,
    and the recommended set.

    Example:  navred plan --date 2026-03-26 --lat "44 30 N" --lon "012 00 W" --course 215 --speed 6.5 --eye "2.8 m" -o plan.pdf
    """
    from ..corrections import parse_index_error_arcmin
    from ..jobs.bridge import bridge_plan
    from ..timework import parse_date, parse_zone_description

    with _reported(ctx):
        from pathlib import Path

        from ..io.output import check_output

        if csv_out:
            check_output(csv_out, suffixes=(".csv",), what="--csv")
            check_output(Path(csv_out).with_name(Path(csv_out).stem + "-plans.csv"), what="--csv")
        if sky:
            check_output(sky, suffixes=(".png", ".svg"), what="--sky")
        lat_deg, lon_deg = _angle_option(lat, "lat", "--lat"), _angle_option(lon, "lon", "--lon")
        _column_number(course, "--course", "course"), _column_number(speed, "--speed", "speed")
        _number(min_alt, "--min-alt", 0.0, 90.0), _number(max_alt, "--max-alt", 0.0, 90.0)
        eye_m = _eye_option(eye)
        try:
            index_error_arcmin = float(parse_index_error_arcmin(index_error))
        except NavredError as exc:
            raise NavredError(f"--index-error: {exc}") from None
        try:
            zd = None if zone is None else float(parse_zone_description(zone))
        except NavredError as exc:
            raise NavredError(f"--zone: {exc}") from None
        try:
            date = "{:04d}-{:02d}-{:02d}".format(*parse_date(date, declarable=False))
        except NavredError as exc:
            raise NavredError(f"--date: {exc}") from None
        files = _output_files(output, {".pdf": "a page per round of sights, for the bridge", ".txt": "the text shown",
                                       ".png": "the first round's sky", ".svg": "the first round's sky"})
        plan = bridge_plan(date, days, lat_deg, lon_deg, course_deg=course, speed_kn=speed, eye_height_m=eye_m,
                           index_error_arcmin=index_error_arcmin, zone_description_h=zd, count=count,
                           min_alt_deg=min_alt, max_alt_deg=max_alt, at=at)
        lines = plan.text_lines()
        for line in lines:
            typer.echo(line)
        _write_plan_files(plan, files, csv_out, sky, lines)


def _write_plan_files(plan, files: dict[str, str], csv_out: str | None, sky: str | None, lines: list[str]) -> None:
    """The plan's files: each 'wrote' line on stderr, so that the text on stdout is the plan alone."""
    from pathlib import Path

    from ..io.output import atomic_write, csv_text

    if ".txt" in files:
        text = "\n".join(lines) + "\n"
        atomic_write(files[".txt"], lambda p: Path(p).write_text(text, encoding="utf-8"))
        typer.echo(f"wrote {files['.txt']}", err=True)
    if ".pdf" in files:
        from ..io.printed import write_pdf

        typer.echo(f"wrote {write_pdf(plan.document(), files['.pdf'])}", err=True)
    if csv_out:
        target = Path(csv_out)
        events, table = csv_text(plan.events_table()), csv_text(plan.plans_table())
        atomic_write(target, lambda p: Path(p).write_text(events, encoding="utf-8"))
        plans_file = target.with_name(target.stem + "-plans" + target.suffix)
        atomic_write(plans_file, lambda p: Path(p).write_text(table, encoding="utf-8"))
        typer.echo(f"wrote {target} and {plans_file}", err=True)
    pictures = [files[s] for s in (".png", ".svg") if s in files] + ([sky] if sky else [])
    if pictures and plan.rounds:
        from ..figures.plotting import save_figure, sky_picture

        first = plan.rounds[0]
        for path in pictures:
            atomic_write(path, lambda p, r=first: save_figure(sky_picture(r.plan, title=r.label), p))
            typer.echo(f"wrote {path}", err=True)


def _eye_option(text: str | None) -> float:
    """A height of eye with its unit ('3.5 m', '11 ft') in metres; a bare number is refused naming both readings."""
    import re

    from ..vocabulary import UNIT_SPELLINGS, convert_to_working_unit

    if text is None:
        return 0.0
    match = re.fullmatch(r"\s*([0-9]+(?:[.,][0-9]+)?)\s*([A-Za-z]*)\s*\.?\s*", str(text))
    if not match:
        raise NavredError(f"--eye {text!r}: give the height of eye with its unit, such as '3.5 m' or '11 ft'")
    value, unit = float(match.group(1).replace(",", ".")), match.group(2).lower()
    if not unit:
        raise NavredError(f"--eye {text}: metres or feet? write '{text} m' or '{text} ft'")
    if UNIT_SPELLINGS.get(unit) not in ("m", "ft"):
        raise NavredError(f"--eye {text!r}: the unit {unit!r} is not one for a height; give metres (m) or feet (ft)")
    metres = convert_to_working_unit(value, UNIT_SPELLINGS[unit])
    return _column_number(metres, "--eye (metres)", "eye_height")


def _output_files(paths: list[str] | None, suffixes: dict[str, str], inputs=()) -> dict[str, str]:
    """The -o files of a command by suffix, each refused before the work when its suffix is not one the command
    writes (``suffixes`` maps each to what it holds), its name is empty, its folder is missing, or it is an input."""
    from pathlib import Path

    from ..io.output import check_output

    chosen: dict[str, str] = {}
    accepted = "; ".join(f"{suffix} ({what})" for suffix, what in suffixes.items())
    for path in paths or []:
        if not str(path).strip():
            raise NavredError(f"-o: an empty file name; accepted: {accepted}")
        suffix = Path(path).suffix.lower()
        if suffix not in suffixes:
            raise NavredError(f"-o {path}: navred does not write {suffix or 'a file without a suffix'} here; "
                              f"accepted: {accepted}")
        if suffix in chosen:
            raise NavredError(f"-o {path}: a second {suffix} file (the first is {chosen[suffix]})")
        if not Path(path).parent.exists():
            raise NavredError(f"-o {path}: the folder {Path(path).parent} does not exist")
        check_output(path, inputs)
        chosen[suffix] = path
    return chosen


def _caution() -> None:
    """The safety caution, one line on stderr, once at the end of every run that did its work (every command but
    the list of bodies shows a position, a course or a time); on stderr, so that --csv output stays clean."""
    from ..io.cautions import CAUTION

    typer.echo(CAUTION, err=True)


@app.command("paper")
def paper_command(
    ctx: typer.Context,
    first: str = typer.Option(..., "--from", help="The passage's first date (UTC), e.g. 2026-03-26."),
    last: str = typer.Option(..., "--to", help="The passage's last date (UTC), inclusive."),
    lat: str = typer.Option(..., "--lat", help="DR latitude at 00:00 local time of the first date, e.g. '44 30 N'."),
    lon: str = typer.Option(..., "--lon", help="DR longitude then, e.g. '012 00 W'."),
    course: float = typer.Option(0.0, "--course", help="Course to steer (degrees true) for the DR track."),
    speed: float = typer.Option(0.0, "--speed", help="Speed (knots) for the DR track; 0 for a fixed position."),
    eye: str | None = typer.Option(None, "--eye", help="Height of eye with its unit, '2.8 m' or '9 ft' (for the Hs to preset)."),
    index_error: str = typer.Option("0", "--index-error", help="Index error: '1.4 on' (on the arc), '0.8 off', or signed arcminutes."),
    zone: str | None = typer.Option(None, "--zone", help="The zone description kept (ZT + ZD = UTC), e.g. '+1'; default: the DR longitude's zone."),
    count: int = typer.Option(4, "--count", help="Bodies in each twilight's recommended set: 3, 4 or 5."),
    output: list[str] = typer.Option(None, "--output", "-o", help="The file to write: .pdf (the printed paper)."),
    tables: str | None = typer.Option(None, "--tables", help="Also write every printed table as a CSV file into this folder."),
) -> None:
    """The printed backup of a passage: hourly GHA and Dec, the stars, altitude corrections, the twilight sights
    planned along the DR with Hc, Zn and their change per minute, the noon Sun, a Polaris table, the
    calculator's formulas, and blank forms (docs/paper.md says what to print and how to use each page).

    Example:  navred paper --from 2026-03-26 --to 2026-03-31 --lat "44 30 N" --lon "012 00 W" --course 215 --speed 6.5 --eye "2.8 m" -o passage.pdf --tables passage-tables
    """
    from pathlib import Path

    from ..corrections import parse_index_error_arcmin
    from ..io.printed import write_pdf, write_tables
    from ..jobs.paper import passage_paper
    from ..timework import parse_zone_description

    with _reported(ctx):
        files = _output_files(output, {".pdf": "the printed paper"})
        if not files and not tables:
            raise NavredError("give -o FILE.pdf for the printed paper, --tables DIR for its tables as CSV, or both")
        if tables and Path(tables).exists() and not Path(tables).is_dir():
            raise NavredError(f"--tables {tables}: that is a file; give a folder for the tables")
        lat_deg, lon_deg = _angle_option(lat, "lat", "--lat"), _angle_option(lon, "lon", "--lon")
        _column_number(course, "--course", "course"), _column_number(speed, "--speed", "speed")
        try:
            index_error_arcmin = float(parse_index_error_arcmin(index_error))
        except NavredError as exc:
            raise NavredError(f"--index-error: {exc}") from None
        try:
            zd = None if zone is None else float(parse_zone_description(zone))
        except NavredError as exc:
            raise NavredError(f"--zone: {exc}") from None
        if count not in (3, 4, 5):
            raise NavredError(f"--count {count}: give 3, 4 or 5")
        paper = passage_paper(first, last, lat_deg, lon_deg, course_deg=course, speed_kn=speed,
                              eye_height_m=_eye_option(eye), index_error_arcmin=index_error_arcmin,
                              zone_description_h=zd, count=count)
        if ".pdf" in files:
            written = write_pdf(paper.document, files[".pdf"])
            typer.echo(f"wrote {written} ({paper.days} day{'s' if paper.days > 1 else ''}, valid "
                       f"{paper.document.valid_for})")
        if tables:
            written_tables = write_tables(paper.document, tables)
            typer.echo(f"wrote {len(written_tables)} tables as CSV to {tables}")


@app.command("compass")
def compass_command(
    ctx: typer.Context,
    body: str = typer.Argument(..., help="The body whose bearing was taken (Sun, a star, a planet, the Moon)."),
    utc: str = typer.Option(..., "--utc", "-t", help="Instant of the bearing, ISO 8601 with a zone."),
    lat: str = typer.Option(..., "--lat", help="DR latitude."),
    lon: str = typer.Option(..., "--lon", help="DR longitude."),
    bearing: float | None = typer.Option(None, "--compass-bearing", help="The bearing read on the compass (degrees)."),
    variation_text: str = typer.Option("0", "--variation", help="Magnetic variation from the chart: '4 W', '3.5 E', '3 30 E', or a signed decimal (east positive)."),
    heading: float | None = typer.Option(None, "--heading", help="Ship's compass heading then, for the deviation card."),
    card: str | None = typer.Option(None, "--card", help="CSV deviation card to add this check to (created if absent); it is printed."),
    eye: float = typer.Option(0.0, "--eye", help="Height of eye in metres (amplitude at the visible horizon)."),
) -> None:
    """Compass check: a body's true azimuth, the compass error and deviation, and the Sun's amplitudes.

    Example:  navred compass Sun --utc 2026-03-26T17:30:00Z --lat "43 20 N" --lon "013 10 W" --compass-bearing 262 --variation "4 W" --heading 215
    """
    from pathlib import Path

    import numpy as np

    from ..almanac import places
    from ..angles import format_angle
    from ..compass import (
        amplitude_deg,
        compass_check,
        compass_error_deg,
        deviation_deg,
        visible_horizon_altitude_deg,
    )
    from ..io.cards import add_check
    from ..stars import canonical_body_name

    with _reported(ctx):
        if card:
            from ..io.output import check_output

            check_output(card, suffixes=(".csv",), what="--card")
        lat_deg, lon_deg = _angle_option(lat, "lat", "--lat"), _angle_option(lon, "lon", "--lon")
        variation = _angle_option(variation_text, "variation", "--variation")
        _number(bearing, "--compass-bearing", 0.0, 360.0), _number(heading, "--heading", 0.0, 360.0)
        _column_number(eye, "--eye", "eye_height")
        name = canonical_body_name(body)
        zn, hc = compass_check(name, utc, lat_deg, lon_deg)
        typer.echo(f"{name} at {utc}: true azimuth Zn {zn:05.1f}°, altitude {format_angle(hc, 'signed')}")
        dec = float(np.ravel(places(name, utc).dec_deg)[0])
        for label, altitude in (("true horizon", 0.0), ("visible horizon", float(visible_horizon_altitude_deg(eye)))):
            a = float(amplitude_deg(dec, lat_deg, altitude))
            if np.isnan(a):
                typer.echo(f"  amplitude ({label}): the body does not rise or set at this latitude")
                continue
            side = "N" if a >= 0 else "S"
            typer.echo(f"  amplitude ({label}): rising E {abs(a):.1f}° {side} (Zn {90 - a:05.1f}°), "
                       f"setting W {abs(a):.1f}° {side} (Zn {270 + a:05.1f}°)")
        if bearing is None:
            return
        error = float(compass_error_deg(zn, bearing))
        deviation = float(deviation_deg(error, variation))
        typer.echo(f"  compass {bearing:05.1f}°: compass error {abs(error):.1f}° {'E' if error >= 0 else 'W'}, "
                   f"variation {abs(variation):.1f}° {'E' if variation >= 0 else 'W'}, "
                   f"deviation {abs(deviation):.1f}° {'E' if deviation >= 0 else 'W'}")
        if card:
            path = Path(card)
            row = {"utc": utc, "body": name, "lat_deg": lat_deg, "lon_deg": lon_deg,
                   "compass_heading_deg": heading, "compass_bearing_deg": bearing, "true_bearing_deg": round(zn, 2),
                   "compass_error_deg": round(error, 2), "variation_deg": variation,
                   "deviation_deg": round(deviation, 2)}
            table = add_check(path, row)
            typer.echo(f"deviation card {path} ({len(table)} checks):")
            typer.echo(table[["utc", "body", "compass_heading_deg", "compass_error_deg", "deviation_deg"]]
                       .to_string(index=False))


@app.command("azimuths")
def azimuths_command(
    ctx: typer.Context,
    date: str = typer.Option(..., "--date", help="Local civil date of the first day, e.g. 2026-03-26."),
    lat: str = typer.Option(..., "--lat", help="DR latitude at 00:00 local time, e.g. '43 16.6 N'."),
    lon: str = typer.Option(..., "--lon", help="DR longitude at 00:00 local time, e.g. '013 11.4 W'."),
    course: float = typer.Option(0.0, "--course", help="Course to steer (degrees true) for the DR track."),
    speed: float = typer.Option(0.0, "--speed", help="Speed (knots) for the DR track."),
    days: int = typer.Option(1, "--days", min=1, max=31, help="How many days."),
    every: float = typer.Option(10.0, "--every", help="Minutes between the rows of the azimuth table (1 to 240)."),
    eye: str | None = typer.Option(None, "--eye", help="Height of eye with its unit, '2.8 m' or '9 ft' (the visible sunrise and sunset)."),
    zone: str | None = typer.Option(None, "--zone", help="The zone description kept (ZT + ZD = UTC), e.g. '+1'; default: the DR longitude's zone each day."),
    csv: bool = typer.Option(False, "--csv", help="Print the Sun's azimuth table as CSV (nothing else on stdout)."),
    output: list[str] = typer.Option(None, "--output", "-o", help="Files to write, by suffix: .pdf (the tables printed), .csv (the Sun's azimuth table), .txt (this text)."),
) -> None:
    """For the watch's compass: the Sun's true azimuth along the DR at an interval, a bright body low enough for
    a bearing at each twilight, and the times and true amplitudes of sunrise and sunset.

    Example:  navred azimuths --date 2026-03-26 --lat "44 30 N" --lon "012 00 W" --course 215 --speed 6.5 --every 15 -o azimuths.pdf
    """
    from pathlib import Path

    from ..io.output import atomic_write, csv_text
    from ..jobs.compasswork import watch_azimuths
    from ..timework import parse_date, parse_zone_description

    with _reported(ctx):
        lat_deg, lon_deg = _angle_option(lat, "lat", "--lat"), _angle_option(lon, "lon", "--lon")
        _column_number(course, "--course", "course"), _column_number(speed, "--speed", "speed")
        _number(every, "--every", 1.0, 240.0)
        eye_m = _eye_option(eye)
        try:
            zd = None if zone is None else float(parse_zone_description(zone))
        except NavredError as exc:
            raise NavredError(f"--zone: {exc}") from None
        try:
            date = "{:04d}-{:02d}-{:02d}".format(*parse_date(date, declarable=False))
        except NavredError as exc:
            raise NavredError(f"--date: {exc}") from None
        files = _output_files(output, {".pdf": "the tables printed", ".csv": "the Sun's azimuth table",
                                       ".txt": "the text shown"})
        result = watch_azimuths(date, days, lat_deg, lon_deg, course_deg=course, speed_kn=speed, step_minutes=every,
                                eye_height_m=eye_m, zone_description_h=zd)
        lines = result.text_lines()
        if csv:
            sys.stdout.write(csv_text(result.sun))
        else:
            for line in lines:
                typer.echo(line)
        if ".csv" in files:
            text = csv_text(result.sun)
            atomic_write(files[".csv"], lambda p: Path(p).write_text(text, encoding="utf-8"))
            typer.echo(f"wrote {files['.csv']}", err=True)
        if ".txt" in files:
            text = "\n".join(lines) + "\n"
            atomic_write(files[".txt"], lambda p: Path(p).write_text(text, encoding="utf-8"))
            typer.echo(f"wrote {files['.txt']}", err=True)
        if ".pdf" in files:
            import numpy as np

            from ..io.printed import write_pdf

            last = str(np.datetime64(date) + np.timedelta64(days - 1, "D"))
            valid = date + (f" to {last}" if days > 1 else "") + " (local dates)"
            typer.echo(f"wrote {write_pdf(result.document(valid), files['.pdf'])}", err=True)


@app.command("compass-book")
def compass_book_command(
    ctx: typer.Context,
    books: list[str] = typer.Argument(..., metavar="BOOK...", help="Compass error books: CSV or .xlsx with utc, body, compass (gyro or magnetic), bearing, lat, lon, and heading and variation for a magnetic compass (docs/compass.md)."),
    csv: bool = typer.Option(False, "--csv", help="Print every bearing worked out as CSV (nothing else on stdout)."),
    output: list[str] = typer.Option(None, "--output", "-o", help="Files to write, by suffix: .pdf (the book and the deviation card printed), .csv (every bearing worked out)."),
    dates: str | None = typer.Option(None, "--dates", help=_DATES_HELP),
) -> None:
    """The compass error book: each bearing of a body against its true azimuth, the gyro's error (high or low),
    the magnetic compass's error and deviation by heading against the variation, and the deviation card.

    Example:  navred compass-book sample_sights/compass_book.csv -o compass.pdf
    """
    from pathlib import Path

    from ..io.output import atomic_write, csv_text
    from ..jobs.compasswork import compass_book

    with _reported(ctx):
        files = _output_files(output, {".pdf": "the book and the deviation card printed",
                                       ".csv": "every bearing worked out"}, inputs=books)
        book = compass_book(_source(books), dates=dates)
        columns = ["row", "source", "utc", "body", "compass", "bearing_deg", "true_bearing_deg", "altitude_deg",
                   "gyro_error_deg", "heading_deg", "variation_deg", "compass_error_deg", "deviation_deg", "remarks"]
        table = book.observations[[c for c in columns if c in book.observations]]
        if csv:
            sys.stdout.write(csv_text(table))
        else:
            for line in book.text_lines():
                typer.echo(line)
        if ".csv" in files:
            text = csv_text(table)
            atomic_write(files[".csv"], lambda p: Path(p).write_text(text, encoding="utf-8"), inputs=book.sources)
            typer.echo(f"wrote {files['.csv']}", err=True)
        if ".pdf" in files:
            from ..io.printed import write_pdf

            typer.echo(f"wrote {write_pdf(book.document(), files['.pdf'], inputs=book.sources)}", err=True)


@app.command("identify")
def identify_command(
    ctx: typer.Context,
    utc: str = typer.Option(..., "--utc", "-t", help="Instant of the observation, ISO 8601 with a zone."),
    lat: str = typer.Option(..., "--lat", help="DR latitude."),
    lon: str = typer.Option(..., "--lon", help="DR longitude."),
    altitude: float = typer.Option(..., "--alt", help="Approximate altitude of the unknown body (degrees)."),
    azimuth: float = typer.Option(..., "--az", help="Approximate true bearing of the unknown body (degrees)."),
    top: int = typer.Option(5, "--top", help="How many candidates to list."),
    csv: bool = typer.Option(False, "--csv", help="Print the whole ranking as CSV."),
) -> None:
    """Which body was that? Catalogue bodies ranked against a rough altitude and bearing.

    Example:  navred identify --utc 2026-03-26T19:45:00Z --lat "43 17 N" --lon "013 11 W" --alt 30 --az 186
    """
    import pandas as pd

    from ..identify import identify

    with _reported(ctx):
        lat_deg, lon_deg = _angle_option(lat, "lat", "--lat"), _angle_option(lon, "lon", "--lon")
        _number(altitude, "--alt", -5.0, 90.0), _number(azimuth, "--az", 0.0, 360.0)
        if top < 1:
            raise NavredError(f"--top {top} must be 1 or more")
        ranked = pd.DataFrame(identify(altitude, azimuth, utc, lat_deg, lon_deg))
        if csv:
            typer.echo(_csv_safe(ranked).to_csv(index=False, float_format="%.3f"), nl=False)
            return
        typer.echo(f"{'rank':>4}  {'body':<16}{'Hc':>8}{'Zn':>8}{'ΔH':>7}{'ΔZ':>7}{'score':>7}")
        for rank, row in enumerate(ranked.head(top).itertuples(), start=1):
            typer.echo(f"{rank:>4}  {row.body:<16}{row.hc_deg:7.1f}°{row.zn_deg:7.1f}°"
                       f"{row.altitude_difference_deg:+6.1f}°{row.azimuth_difference_deg:+6.1f}°{row.score:7.2f}")
        typer.echo("score: the differences in units of 1° of altitude and 3° of bearing; lowest first")


@app.command("series")
def series_command(
    ctx: typer.Context,
    sights_files: list[str] = typer.Argument(..., metavar="SIGHTS...", help=_SIGHTS_HELP),
    threshold: float = typer.Option(2.0, "--threshold", help="Flag a sight this far off the curve (arcminutes)."),
    csv: bool = typer.Option(False, "--csv", help="Print every sight with its series columns as CSV."),
    dates: str | None = typer.Option(None, "--dates", help=_DATES_HELP),
) -> None:
    """Check each series of sights of one body against the altitude curve; flag the bad ones.

    A series is the series column of the log, or one observer's sights of a body less than
    five minutes apart. Only the offset from the predicted curve is fitted; a sight more
    than --threshold off it, or three times the scatter of the others, is flagged (and kept).

    Example:  navred series sample_sights/training_sights.csv
    """
    import numpy as np

    from ..angles import format_angle
    from ..jobs.frames import series_columns
    from ..jobs.voyage import process_log

    with _reported(ctx):
        _number(threshold, "--threshold", 0.1, 60.0)
        voyage = process_log(_source(sights_files), dates=dates, plan=False)
        _print_notes(voyage)
        _nothing_reduced(len(voyage.reduced), voyage.n_reduced)
        reduced = voyage.reduced
        if len(reduced):
            for column, values in series_columns(reduced, threshold_arcmin=threshold).items():
                reduced[column] = values
        if csv:
            typer.echo(_csv_safe(reduced).to_csv(index=False, float_format="%.5f"), nl=False)
            return
        labels = _labels(reduced)
        multi = reduced[reduced.series_size >= 2] if len(reduced) else reduced
        typer.echo(f"{multi.series.nunique() if len(multi) else 0} series of two or more sights "
                   f"({voyage.n_rejected_rows} rows rejected)")
        for name, part in multi.groupby("series", sort=False):
            best = part[part.series_best]
            flagged = [labels[i] for i in part.index[part.series_flag]]
            typer.echo(f"  {name:<12} {part.body_name.iloc[0]:<12} {len(part)} sights, offset "
                       f"{part.series_offset_arcmin.iloc[0]:+.1f}′, scatter {np.nanmedian(part.series_scatter_arcmin):.1f}′"
                       + (f", FLAGGED {', '.join(flagged)}" if flagged else ""))
            if len(best):
                typer.echo(f"  {'':<12} best sight: {labels[best.index[0]]} at "
                           f"{best.sight_utc.iloc[0]:%H:%M:%S} UTC, Ho {format_angle(best.series_best_ho_deg.iloc[0], 'signed')}")


@app.command("training")
def training_command(
    ctx: typer.Context,
    sights_files: list[str] = typer.Argument(..., metavar="SIGHTS...", help="Sight logs with an observer column: CSV or .xlsx files, or a folder of them."),
    track: str = typer.Option(..., "--track", help="The ship's reference track: GPX 1.1, NMEA 0183 (RMC/GGA) or CSV (utc, lat, lon)."),
    output: str | None = typer.Option(None, "--output", "-o", help="Workbook to write (.xlsx), with a Training sheet."),
    summary: str | None = typer.Option(None, "--summary", help="One printable page across observers (PDF, PNG or SVG)."),
    plots: str | None = typer.Option(None, "--plots", help="Folder for one picture per observer (PNG)."),
    csv: str | None = typer.Option(None, "--csv", help="Write the per-sight errors and the per-observer figures as CSV (NAME and NAME with -observers)."),
    dates: str | None = typer.Option(None, "--dates", help=_DATES_HELP),
) -> None:
    """Each observer's errors against the ship's satellite track: personal error, scatter, blunders, trend.

    Give one log, several, or a folder of cadets' logs: every sight keeps its file and row.

    Example:  navred training sample_sights/training_sights.csv --track sample_sights/training_track.gpx --summary summary.pdf
    """
    from pathlib import Path

    import pandas as pd

    from ..figures.plotting import save_figure
    from ..io.logbook import read_sight_log
    from ..io.output import atomic_write, check_output
    from ..io.track import read_track
    from ..io.workbook import check_fits, write_workbook
    from ..jobs.frames import row_list
    from ..jobs.training import observer_figure, summary_figure, training_report
    from ..jobs.voyage import process_log

    with _reported(ctx):
        protected = _input_files(sights_files, track)
        # every output checked before the work: its suffix, its folder, not an input
        if output:
            check_output(output, protected, suffixes=(".xlsx",), what="--output")
        if summary:
            check_output(summary, protected, suffixes=(".pdf", ".png", ".svg"), what="--summary")
        if csv:
            check_output(csv, protected, suffixes=(".csv",), what="--csv")
            check_output(Path(csv).with_name(Path(csv).stem + "-observers.csv"), protected, what="--csv")
        if plots:
            _check_folder(plots, protected, "--plots")
        reference = read_track(track)
        log = read_sight_log(_source(sights_files), dates=dates)
        _print_notes(log)
        protected = [*log.sources, track]
        for path in (output, summary, csv):
            if path:
                check_output(path, protected)
        if output:
            check_fits(len(log.table))
        voyage = process_log(log)
        _nothing_reduced(len(voyage.reduced), voyage.n_reduced)
        report = training_report(voyage.reduced, reference, voyage.groups)
        voyage.training = report
        _print_track_problems(reference)
        unmarked = report.sights[~report.sights.within_track]
        typer.echo(f"{len(report.sights) - len(unmarked)} of {len(report.sights)} sights marked against {track}"
                   + (f"; {len(unmarked)} not marked:" if len(unmarked) else ""))
        for note, rows in unmarked.groupby("note", sort=False):
            typer.echo(f"  {row_list(rows)} ({len(rows)} sight{'s' if len(rows) > 1 else ''}): {note}")
        typer.echo(f"{'observer':<22}{'sights':>7}{'blunders':>9}{'personal error':>16}{'± 95 %':>8}{'scatter':>9}{'trend/day':>11}")
        for values in report.observers.to_dict("records"):
            typer.echo(f"{values['observer']:<22}{values['sights']:>7}{values['blunders']:>9}"
                       f"{values['personal error (′)']:>+15.2f}′{values['95 % interval (′)']:>7.2f}′"
                       f"{values['scatter (′)']:>8.2f}′{values['trend (′ per day)']:>+10.3f}′")
        for row in report.fixes.to_dict("records"):
            if "distance from reference (nm)" not in row or row["distance from reference (nm)"] != \
                    row["distance from reference (nm)"]:
                continue
            if row.get("kind", FixKind.FIX) == FixKind.FIX:
                typer.echo(f"fix {row['fix group']}: {row['distance from reference (nm)']:.1f} nm from the reference, "
                           f"reference inside the 95 % ellipse: {row['reference inside 95 % ellipse']}")
            else:
                typer.echo(f"{row['kind']} {row['fix group']} (not a fix): the reference lies "
                           f"{row['distance from reference (nm)']:.1f} nm off it, "
                           f"{row['reference inside 95 % ellipse']}")
        for group in voyage.groups:
            for text in (group.fix.warnings if group.fix is not None else []):
                typer.echo(f"warning: group {group.name}: {text}", err=True)
        if output:
            typer.echo(f"wrote {write_workbook(voyage, output)}")
        if summary:
            typer.echo(f"wrote {atomic_write(summary, lambda p: save_figure(summary_figure(report), p), inputs=protected)}")
        if plots:
            folder = Path(plots)
            folder.mkdir(parents=True, exist_ok=True)
            for name in report.observers.observer:
                stem = "".join(c if c.isalnum() else "-" for c in name)
                atomic_write(folder / f"observer-{stem}.png", lambda p, n=name: save_figure(observer_figure(report, n), p),
                             inputs=protected)
            typer.echo(f"wrote {len(report.observers)} observer pictures to {folder}")
        if csv:
            target = Path(csv)
            atomic_write(target, lambda p: _csv_safe(report.sights).to_csv(p, index=False), inputs=protected)
            others = target.with_name(target.stem + "-observers" + target.suffix)
            atomic_write(others, lambda p: _csv_safe(pd.concat([report.observers, report.by_body])).to_csv(p, index=False),
                         inputs=protected)
            typer.echo(f"wrote {target} and {others}")


def _print_track_problems(reference, shown: int = 20) -> None:
    """The points of the reference track that were refused, each by its point (GPX) or line (NMEA, CSV)."""
    problems = reference.problems
    if not len(problems):
        return
    where = "point" if reference.source.lower().endswith(".gpx") else "line"
    typer.echo(f"{len(problems)} point{'s' if len(problems) > 1 else ''} of the track refused (not used):")
    for row in problems.head(shown).itertuples():
        typer.echo(f"  {where} {row.point}: {row.reason}")
    if len(problems) > shown:
        typer.echo(f"  ... and {len(problems) - shown} more (every one is on the Training sheet of the workbook, -o)")


#: What `navred mark -o FILE` writes, by the file's suffix.
MARK_OUTPUTS = {".xlsx": "the marking workbook: the class, the mistakes, the fixes, each cadet's progress and a "
                         "marking sheet per cadet", ".pdf": "each cadet's sight book, printed: progress, fixes and "
                         "every working with its marks", ".csv": "one row per working (the table --csv prints)"}


@app.command("mark")
def mark_command(
    ctx: typer.Context,
    workings: list[str] = typer.Argument(None, metavar="WORKINGS...", help="Hand workings: CSV or .xlsx files, a folder of them, a workbook with a sheet per cadet, or filled sight-book pages (see docs/marking.md)."),
    output: list[str] = typer.Option(None, "--output", "-o", help="A file to write; its suffix picks what: " + "; ".join(f"{k} {v}" for k, v in MARK_OUTPUTS.items()) + ". Give -o several times for several files."),
    csv: bool = typer.Option(False, "--csv", help="Print one row per working as CSV: row, verdict, first_wrong_line (empty when all is right), cause, noticed, and more."),
    track: str | None = typer.Option(None, "--track", help="The ship's reference track (GPX, NMEA or CSV, as for navred training): each cadet's personal error against it."),
    exam: bool = typer.Option(False, "--exam", help="Exam mode: leave out navred's fix and any reference position."),
    template: str | None = typer.Option(None, "--template", help="Write an empty sight book (.xlsx: a page per method) to this file and stop."),
    rates: str | None = typer.Option(None, "--rates", help=_RATES_HELP),
    dates: str | None = typer.Option(None, "--dates", help=_DATES_HELP),
    pdf: str | None = typer.Option(None, "--pdf", hidden=True, help="Old name of -o FILE.pdf (kept for one release)."),
) -> None:
    """Mark hand reductions by every method taught: each line recomputed from the cadet's own earlier
    lines, the first wrong line named with its probable cause, what should have been noticed, and what
    a slip costs in miles.

    Example:  navred mark sample_sights/class_workings.xlsx -o marking.xlsx -o sight_books.pdf
    """
    from pathlib import Path

    from ..io.output import check_output, csv_text

    with _reported(ctx):
        if template:
            from ..jobs.workings import write_template

            check_output(template, _input_files(workings), suffixes=(".xlsx",), what="--template")
            typer.echo(f"wrote {write_template(template)}")
            return
        if not workings:
            raise NavredError("give the workings to mark (files, a folder, a workbook with a sheet per cadet, or "
                              "filled sight-book pages), or --template FILE for an empty sight book")
        from ..io.workings import source_name
        from ..jobs.workings import (
            describe,
            mark_workings,
            marking_csv,
            write_marking_pdf,
            write_marking_workbook,
        )

        source = _source(workings)
        inputs = _input_files(workings, track, rates)
        targets = list(output or []) + ([pdf] if pdf else [])
        for path in targets:
            check_output(path, inputs, suffixes=tuple(MARK_OUTPUTS), what="-o")
        report = mark_workings(source, dates=dates, exam=exam, track=track, rates=_ratings(rates, dates))
        _print_notes(report.workings.log)
        if not len(report.rows) and not len(report.workings.log.table):
            _nothing_reduced(0, 0)
        written = []  # the files first: a target that cannot be written stops the run before the long list
        for path in targets:
            suffix = Path(str(path)).suffix.lower()
            if suffix == ".xlsx":
                written.append(write_marking_workbook(report, path))
            elif suffix == ".pdf":
                written.append(write_marking_pdf(report, path))
            else:
                from ..io.output import atomic_write

                table = csv_text(marking_csv(report))
                written.append(atomic_write(path, lambda p, text=table: Path(p).write_text(text, encoding="utf-8"),
                                            inputs=report.workings.log.sources))
        if csv:
            sys.stdout.write(csv_text(marking_csv(report)))
        else:
            typer.echo(report.summary())
            for row in report.rows.to_dict("records"):
                if row["verdict"] != "right":
                    typer.echo(describe(row))
            for p in report.personal.to_dict("records") if len(report.personal) else []:
                typer.echo(f"{p['cadet']}: personal error {p['personal error (′)']:+.2f}′ "
                           f"± {p['95 % interval (′)']:.2f}′ (95 %) against the track, over {int(p['sights'])} sights")
            for row in report.rejected.itertuples():
                typer.echo(f"not read: {source_name(row.source)} row {row.row}: {row.column}: {row.reason}")
        for path in written:
            typer.echo(f"wrote {path}", err=csv)
        if not len(report.rows):
            raise NavredError("no working could be marked: every row was rejected"
                              + (" (the reasons are above)" if not csv else " (navred mark without --csv gives "
                                                                             "the reasons)"))


@app.command("days")
def days_command(
    ctx: typer.Context,
    sights_files: list[str] = typer.Argument(..., metavar="LOG...", help=_SIGHTS_HELP + " Entry rows (entry: departure, position, course, current) keep the DR."),
    carry_current: bool = typer.Option(False, "--carry-current", help="Carry the set and drift found at each fix on in the DR until the next fix."),
    csv: bool = typer.Option(False, "--csv", help="Print the noon positions and the day's run as CSV."),
    picture: str | None = typer.Option(None, "--picture", help="Draw the voyage (DR legs, fixes, set and drift, noons) to this file (.png or .svg)."),
    rates: str | None = typer.Option(None, "--rates", help=_RATES_HELP),
    dates: str | None = typer.Option(None, "--dates", help=_DATES_HELP),
) -> None:
    """The day's work: the noon positions and the day's run, the set and drift at each fix, the estimated
    positions; the DR kept from the departure through every course and speed and restarted at each fix.

    Example:  navred days sample_sights/passage_log.csv --picture passage.png
    """
    from ..io.output import check_output, csv_text
    from ..jobs.voyage import process_log

    with _reported(ctx):
        if picture:
            check_output(picture, _input_files(sights_files, rates), suffixes=(".png", ".svg"), what="--picture")
        voyage = process_log(_source(sights_files), dates=dates, plan=False, carry_current=carry_current,
                             rates=_ratings(rates, dates))
        _print_notes(voyage)
        days = voyage.days_work()
        nothing = len(voyage.reduced) > 0 and voyage.n_reduced == 0
        if csv:
            sys.stdout.write(csv_text(days.noons))
            for group in voyage.groups:
                for text in (group.fix.warnings if group.fix is not None else []):
                    typer.echo(f"warning: group {group.name}: {text}", err=True)
        else:
            typer.echo(voyage.summary())
            if days.empty:
                typer.echo("no day's work: the log gives no departure (an entry row) and no fix to keep the DR from")
            for vessel in days.tracks:
                noons = days.noons[days.noons.vessel == vessel]
                typer.echo(f"\n{vessel or 'the vessel'}: noon positions and the day's run")
                for r in noons.to_dict("records"):
                    run = (f"  run {r['run (nm)']:6.1f} nm, {r['course made good (deg)']:05.1f}° made good at "
                           f"{r['speed made good (kn)']:4.1f} kn in {r['hours']:.0f} h ({r['through the water (nm)']:.1f} "
                           "nm through the water)" if r["run (nm)"] == r["run (nm)"] else "")
                    typer.echo(f"  {r['date']} noon (ZD {r['zone (h)']:+.0f}) {r['noon position']:<24} "
                               f"{r['noon from']}{run}")
                sets = days.set_drift[days.set_drift.vessel == vessel]
                if len(sets):
                    typer.echo(f"{vessel or 'the vessel'}: set and drift at each fix (95 %)")
                for r in sets.to_dict("records"):
                    spread = (f"±{r['set ±95 % (deg)']:.0f}°" if r["set ±95 % (deg)"] == r["set ±95 % (deg)"]
                              else "(set not determined)")
                    typer.echo(f"  {r['fix (UTC)']} fix {r['fix group']}: set {r['set (deg)']:05.1f}° {spread}, drift "
                               f"{r['drift (kn)']:.2f} ±{r['drift ±95 % (kn)']:.2f} kn over {r['hours']:.1f} h from the "
                               f"{r['from']}")
            for r in days.estimated.to_dict("records"):
                typer.echo(f"estimated position {r['fix group']} at {r['UTC']}: {r['estimated position']} ({r['from']})")
            for group in voyage.groups:
                if group.fix is not None and group.fix.warnings:
                    for text in group.fix.warnings:
                        typer.echo(f"warning: group {group.name}: {text}", err=True)
            _print_sight_warnings(voyage.reduced, _labels(voyage.reduced), err=True)
            if voyage.n_rejected_rows:
                typer.echo(f"{voyage.n_rejected_rows} row(s) not read: navred reduce names each and why", err=True)
        if nothing or (days.empty and not len(voyage.reduced)):
            _nothing_reduced(len(voyage.reduced), voyage.n_reduced)
        if days.empty:
            raise NavredError("no day's work: the log gives no departure (an entry row) and no fix to keep the DR from")
        if picture:
            from ..figures.plotting import canvas_bytes, voyage_track_picture
            from ..io.output import atomic_write

            vessels = list(days.tracks) or [None]
            data = canvas_bytes(voyage_track_picture(days, vessels[0]), picture.rsplit(".", 1)[-1], png_width_px=1320)
            written = atomic_write(picture, lambda p: open(p, "wb").write(data), inputs=voyage.inputs)
            typer.echo(f"wrote {written}" + (f" (the first of {len(vessels)} vessels)" if len(vessels) > 1 else ""),
                       err=csv)


@app.command("rate")
def rate_command(
    ctx: typer.Context,
    rating_logs: list[str] = typer.Argument(..., metavar="RATING_LOG...", help="Time-signal comparisons: CSV or .xlsx with utc (the signal), reading (the timepiece at it), and timepiece and zone_description where needed."),
    csv: bool = typer.Option(False, "--csv", help="Print every comparison with its error and residual as CSV."),
    dates: str | None = typer.Option(None, "--dates", help=_DATES_HELP),
) -> None:
    """Each timepiece's error and daily rate from time signals, by least squares, with the rate's 95 %
    interval, and a flag when the rate has changed.

    Example:  navred rate sample_sights/passage_time_signals.csv
    """
    from ..io.output import csv_text

    with _reported(ctx):
        ratings = _ratings(rating_logs if len(rating_logs) > 1 else rating_logs[0], dates)
        _print_notes(ratings)
        if csv:
            import pandas as pd

            frames = [p.comparisons.assign(signal_utc=p.comparisons.signal_utc.dt.strftime("%Y-%m-%dT%H:%M:%SZ"))
                      for p in ratings.timepieces.values()]
            sys.stdout.write(csv_text(pd.concat(frames, ignore_index=True)))
            return
        for piece in ratings.timepieces.values():
            typer.echo(piece.summary())
        for r in ratings.rejected.itertuples():
            typer.echo(f"not read: row {r.row} of {r.source}: {r.column}: {r.reason}")


@app.command("route", context_settings={"ignore_unknown_options": True})
def route_command(
    ctx: typer.Context,
    from_lat: str = typer.Argument(..., metavar="FROM_LAT", help="Latitude of the start: 49 57.0 N"),
    from_lon: str = typer.Argument(..., metavar="FROM_LON", help="Longitude of the start: 005 12.0 W"),
    to_lat: str = typer.Argument(..., metavar="TO_LAT", help="Latitude of the destination"),
    to_lon: str = typer.Argument(..., metavar="TO_LON", help="Longitude of the destination"),
    spacing: float = typer.Option(300.0, "--spacing", help="Waypoints along the great circle every this many nautical miles."),
    limit: str | None = typer.Option(None, "--limit", help="A limiting latitude for a composite great circle: 50 N."),
    csv: bool = typer.Option(False, "--csv", help="Print the waypoints as CSV."),
    gpx: str | None = typer.Option(None, "--gpx", help="Write the route (its waypoints) as a GPX 1.1 route to this file."),
    geojson: str | None = typer.Option(None, "--geojson", help="Write the route as GeoJSON to this file."),
) -> None:
    """Sailings between two positions on the WGS 84 ellipsoid: the rhumb line and the great circle
    (distance, initial and final course), the great circle's vertex, waypoints at a spacing, and a composite
    great circle that keeps within a limiting latitude.

    Example:  navred route "40 30 N" "073 00 W" "49 57 N" "005 12 W" --limit "50 N" --gpx route.gpx
    """
    from ..jobs.routes import plan_route, route_geojson, route_gpx

    with _reported(ctx):
        lat1, lon1 = _angle_option(from_lat, "lat", "FROM_LAT"), _angle_option(from_lon, "lon", "FROM_LON")
        lat2, lon2 = _angle_option(to_lat, "lat", "TO_LAT"), _angle_option(to_lon, "lon", "TO_LON")
        limit_deg = _angle_option(limit, "lat", "--limit") if limit is not None else None
        spacing = _number(spacing, "--spacing", 1.0, 20000.0)
        from ..io.output import check_output, csv_text

        if gpx:
            check_output(gpx, suffixes=(".gpx",), what="--gpx")
        if geojson:
            check_output(geojson, suffixes=(".geojson", ".json"), what="--geojson")
        route = plan_route(lat1, lon1, lat2, lon2, spacing_nm=spacing, limit_lat_deg=limit_deg)
        if csv:
            sys.stdout.write(csv_text(route.waypoints))
        else:
            for line in route.summary_lines():
                typer.echo(line)
        if gpx:
            typer.echo(f"wrote {route_gpx(route, gpx)}", err=csv)
        if geojson:
            typer.echo(f"wrote {route_geojson(route, geojson)}", err=csv)


@app.command("lunar")
def lunar_command(
    ctx: typer.Context,
    distance: str = typer.Argument(..., help="The sextant reading of the distance, e.g. '38 52.4' (degrees and minutes)."),
    other: str = typer.Option(..., "--other", help="The body the distance was taken to: Sun, a planet or a star."),
    utc: str = typer.Option(..., "--utc", "-t", help="The chronometer's time of the observation (ISO 8601 with a zone)."),
    lat: str = typer.Option(..., "--lat", help="DR latitude."),
    lon: str = typer.Option(..., "--lon", help="DR longitude."),
    moon_limb: str = typer.Option("near", "--moon-limb", help="Moon's limb used: near or far (from the other body)."),
    other_limb: str = typer.Option("centre", "--other-limb", help="The Sun's limb: near, far or centre (stars, planets)."),
    index_error: str = typer.Option("0", "--index-error", help="Index error, on the arc positive, or '1.2 off'."),
    moon_alt: str | None = typer.Option(None, "--moon-alt", help="Apparent altitude of the Moon's centre, if observed."),
    other_alt: str | None = typer.Option(None, "--other-alt", help="Apparent altitude of the other body's centre, if observed."),
    csv: bool = typer.Option(False, "--csv", help="Print the result as CSV."),
    xlsx: str | None = typer.Option(None, "--xlsx", help="Also write the working to a workbook (.xlsx)."),
) -> None:
    """Longitude by lunar distance: clear the distance, find UTC, the chronometer error and the longitude.

    Altitudes are apparent altitudes of the centres (index error, dip and semi-diameter applied);
    without them they are computed at the DR. Longitude needs the other body's altitude observed.

    Example:  navred lunar "29 44.7" --other Antares --utc 2024-09-12T19:33:00Z --lat "30 N" --lon "040 W" --moon-limb far
    """
    from ..angles import format_angle, parse_angle
    from ..corrections import parse_index_error_arcmin
    from ..lunar import lunar_distance

    with _reported(ctx):
        if xlsx:
            from ..io.output import check_output

            check_output(xlsx, suffixes=(".xlsx",), what="--xlsx")
        result = lunar_distance(
            float(parse_angle(distance, "angle")), other, utc, _angle_option(lat, "lat", "--lat"),
            _angle_option(lon, "lon", "--lon"), moon_limb=moon_limb, other_limb=other_limb,
            index_error_arcmin=parse_index_error_arcmin(index_error),
            moon_apparent_altitude_deg=None if moon_alt is None else float(parse_angle(moon_alt, "angle")),
            other_apparent_altitude_deg=None if other_alt is None else float(parse_angle(other_alt, "angle")))
        values = {"utc": _time_text(result.utc), "cleared_distance_deg": result.cleared_distance_deg,
                  "apparent_distance_deg": result.apparent_distance_deg,
                  "chronometer_error_s": result.chronometer_error_s,
                  "seconds_per_tenth_arcmin": result.seconds_per_tenth_arcmin,
                  "longitude_deg": result.longitude_deg, "longitude_from": result.longitude_from}
        if xlsx:
            from ..io.workbook import write_lunar_workbook

            inputs = {"observed distance": distance, "other body": other, "chronometer time": utc, "DR latitude": lat,
                      "DR longitude": lon, "Moon's limb": moon_limb, "other body's limb": other_limb,
                      "index error": index_error, "Moon's apparent altitude": moon_alt or "computed at the DR",
                      "other body's apparent altitude": other_alt or "computed at the DR"}
            typer.echo(f"wrote {write_lunar_workbook(inputs, values, xlsx)}")
        if csv:
            typer.echo(",".join(values))
            typer.echo(",".join("" if v is None else str(v) for v in values.values()))
            return
        typer.echo(f"apparent distance of the centres {format_angle(result.apparent_distance_deg)}, "
                   f"cleared {format_angle(result.cleared_distance_deg)}")
        typer.echo(f"UTC {_time_text(result.utc)}; the chronometer is {abs(result.chronometer_error_s):.0f} s "
                   f"{'fast' if result.chronometer_error_s >= 0 else 'slow'}")
        typer.echo(f"sensitivity: 0.1′ of distance is {result.seconds_per_tenth_arcmin:.0f} s of time, "
                   f"{result.seconds_per_tenth_arcmin * 0.25:.1f}′ of longitude")
        if result.longitude_deg is not None:
            typer.echo(f"longitude {format_angle(result.longitude_deg, 'lon')} ({result.longitude_from})")
        else:
            typer.echo("longitude: observe the other body's altitude (--other-alt) for a time sight")


@app.command("bodies")
def bodies_command() -> None:
    """List every body navred knows, with the stars' list numbers and magnitudes.

    Example:  navred bodies
    """
    from ..stars import SOLAR_SYSTEM, star_table

    typer.echo("Sun, Moon and planets: " + ", ".join(SOLAR_SYSTEM.values()))
    table = star_table()
    typer.echo(f"{'no.':>4}  {'star':<18}{'HIP':>7}{'mag (Hp)':>10}")
    for number, name, hip, mag in zip(table.number, table.name, table.hip, table.magnitude):
        typer.echo(f"{number if number else '-':>4}  {name:<18}{hip:>7}{mag:>10.2f}")


def main() -> None:
    """Entry point of the ``navred`` console script."""
    app(prog_name="navred")


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
