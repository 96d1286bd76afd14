"""What every command shares: the typer application, how a run reports (errors as one line, every warning, the
caution), the options read alike in every command (positions, heights of eye, dates, zones, instants, -o files,
--rates, --dates), and the old names of renamed options kept for one release.

The command modules (:mod:`.sights`, :mod:`.sky`, :mod:`.compass`, :mod:`.passage`) each parse their options,
make one library call and hand its result to a formatter (:mod:`.format`) or a writer.
"""

from __future__ import annotations

import contextlib
import inspect
import math
import os
import sys
import warnings
from collections.abc import Callable, Iterable

import typer
from typer.core import TyperCommand, TyperGroup

from .. import __version__
from ..errors import NavredError, NavredInternalError, NavredWarning

#: the command line's own refusal of its words (an option unknown, left out, or of a value of the wrong type):
#: BadParameter's base (typer names it publicly only through its subclass)
USAGE_ERROR = next(k for k in typer.BadParameter.__mro__ if k.__name__ == "UsageError")


class NavredGroup(TyperGroup):
    """The app's group: a command's option refused by the command line itself (a value that is not a number, an
    option navred does not have, one left out) is said as click says it, then the safety caution, as every other
    refusal of a command ends (:func:`failed`)."""

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except USAGE_ERROR as exc:
            if exc.ctx is None or exc.ctx.command is self:
                raise  # no command named (or none navred has): navred's own usage, no caution
            exc.show()
            end_stdout()
            print_caution()
            raise typer.Exit(code=exc.exit_code) from None


app = typer.Typer(
    cls=NavredGroup,
    name="navred",
    help=("Celestial-navigation sight reduction from first principles. An aid to navigation, "
          "not a sole means: check against the official almanac and keep a DR plot."),
    no_args_is_help=True,
    add_completion=False,
    rich_markup_mode=None,
    pretty_exceptions_enable=False,
)

SIGHTS_HELP = "Sight logs: CSV or .xlsx files, or folders of them (see docs/sight-log.md)."
DATES_HELP = ("The order of numeric dates that are not ISO 8601 (05/03/2026), for the whole log: "
              "day-first or month-first. Without it such a date is refused.")
RATES_HELP = ("A rating log of time signals (utc, reading, timepiece): a sight kept in zone time with no watch_error "
              "takes its timepiece's predicted error (docs/timepieces.md).")
EYE_HELP = "Height of eye with its unit, '2.8 m' or '9 ft'"
CSV_HELP = "Print {what} as CSV on stdout (snake_case headers with units; nothing else on stdout)."


# --- The options of a DR track from a date (plan, azimuths): one declaration each --------------------------------

def first_date_option():
    return typer.Option(..., "--date", help="The first date by the ship's clock (zone date; the DR given is for 00:00 zone time of it), e.g. 2026-03-26.")


def dr_lat_option():
    return typer.Option(..., "--lat", help="DR latitude at 00:00 zone time of the first date (the ship's clock: the nautical zone of --lon (15° a zone centred on multiples of 15°; a boundary such as 7 30 E goes to the zone farther from Greenwich; 180° to ZD −12), or --zone; the output states the instant in UTC), e.g. '43 16.6 N'.")


def dr_lon_option():
    return typer.Option(..., "--lon", help="DR longitude at 00:00 zone time of the first date (as --lat), e.g. '013 11.4 W'.")


def course_option():
    return typer.Option(0.0, "--course", help="Course to steer (degrees true) for the DR track.")


def speed_option():
    return typer.Option(0.0, "--speed", help="Speed (knots) for the DR track.")


def zone_kept_option():
    return typer.Option(None, "--zone", help="The zone description kept (ZT + ZD = UTC), e.g. '+1'; default: the DR "
                                             "longitude's zone each day.")


def first_sentence(doc: str | None) -> str:
    """A command's first sentence, whole, as the top-level help lists it."""
    paragraph = inspect.cleandoc(doc or "").split("\n\n")[0].replace("\n", " ")
    for end in (". ", "? "):
        if end in paragraph:
            return paragraph[:paragraph.index(end) + 1]
    return paragraph


def command(name: str, **settings) -> Callable:
    """Register a command of the app, its first sentence as its line in ``navred --help`` (never cut short)."""
    def register(function: Callable) -> Callable:
        return app.command(name, short_help=first_sentence(function.__doc__), **settings)(function)

    return register


class CsvFileOfOld(TyperCommand):
    """A command whose --csv took a file before it became a flag (plan, training): ``--csv NAME.csv`` (or
    ``--csv=NAME.csv``) is read as the old form, the hidden ``--csv-file NAME.csv``, which the command takes as
    ``-o NAME.csv`` with a note, for one release."""

    def parse_args(self, ctx, args):
        args = list(args)
        for k, arg in enumerate(args):
            if arg == "--":
                break
            if arg.startswith("--csv="):
                args[k:k + 1] = ["--csv-file", arg[len("--csv="):]]
            elif arg == "--csv" and k + 1 < len(args) and (args[k + 1].lower().endswith(".csv")
                                                           or not args[k + 1].strip()) \
                    and not args[k + 1].startswith("-"):
                args[k:k + 2] = ["--csv-file", args[k + 1]]
        return super().parse_args(ctx, args)


def _version(value: bool) -> None:
    if value:
        typer.echo(f"navred {__version__}")
        raise typer.Exit()


@app.callback()
def _main(version: bool = typer.Option(False, "--version", callback=_version, is_eager=True,
                                       help="Print the version and exit.")) -> None:
    """navred: reduce sextant sights, fix the position, keep an auditable log."""


def main() -> None:
    """Entry point of the ``navred`` console script and of ``python -m navred``."""
    app(prog_name="navred")


# --- How a run reports ---------------------------------------------------------------------------

#: whether this run has named a log to read (:func:`source`)
_RUN = {"log_named": False}


def failed(message: str, caught=(), *, caution: bool = True) -> None:
    """A run's failure on stderr: every warning caught, the one error line, then the caution, whatever failed (a
    log, or an option refused before the work: a navigator reads the caution with every answer or refusal);
    stdout flushed first, so that its last line is never run into."""
    end_stdout()
    print_warnings(caught)
    typer.echo(f"navred: error: {message}", err=True)
    if caution:
        print_caution()


@contextlib.contextmanager
def reported(ctx=None, *, caution: bool = True):
    """Turn navred errors into one line and exit 1; print every warning; end with the caution (after a failure
    too, an option refused included). Anything unforeseen is one line too (no traceback reaches a user; NAVRED_DEBUG=1
    shows it)."""
    _RUN["log_named"] = False
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", NavredWarning)
        _RUN["caught"], _RUN["said"] = caught, 0
        try:
            refuse_empty_values(ctx)
            check_dates(ctx)
            yield
        except NavredError as exc:
            if os.environ.get("NAVRED_DEBUG") and isinstance(exc, NavredInternalError):
                raise
            failed(str(exc), caught, caution=caution)
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
            failed(f"{exc.strerror or exc}{f': {exc.filename}' if exc.filename else ''}", caught, caution=caution)
            raise typer.Exit(code=1) from None
        except Exception as exc:  # a failure navred did not foresee: one line, and how to report it
            if os.environ.get("NAVRED_DEBUG"):
                raise
            failed(f"an unexpected failure ({type(exc).__name__}: {exc}); this is a fault in navred: please report "
                   "it with the command and the input (NAVRED_DEBUG=1 shows the detail)", caught, caution=caution)
            raise typer.Exit(code=1) from None
    end_stdout()
    print_warnings(caught)
    if caution:
        print_caution()


#: hidden options that stand for the old form of a visible one (``--csv FILE`` is read as ``--csv-file FILE``)
OLD_FORMS = {"--csv-file": "--csv"}


def check_dates(context) -> None:
    """--dates, where a command takes it, is one of the orders navred knows: refused at once, whether or not the
    log holds a date it would decide."""
    if context is None:
        return
    value = context.params.get("dates")
    if value is not None:
        from ..timework import DATE_ORDERS

        if value not in DATE_ORDERS:
            raise NavredError(f"--dates {value!r} is not one of {', '.join(DATE_ORDERS)}")


def refuse_empty_values(context) -> None:
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
            name = OLD_FORMS.get(name, name)
            if not parameter.opts or not parameter.opts[0].startswith("-"):
                name = (parameter.metavar or parameter.name).upper().rstrip(".")
            raise NavredError(f"{name}: an empty value was given; give a value, or leave the option out")


#: a line of a run's closing on stderr is folded once it is longer than this (characters)
LINE_CHARS = 200


def folded(line: str, width: int = LINE_CHARS) -> list[str]:
    """A long line of a run's closing folded at word boundaries into lines of at most ``width`` characters, the
    following ones indented (nothing left out: a refusal says in full what was wrong and what is accepted)."""
    if len(line) <= width:
        return [line]
    import textwrap

    return textwrap.wrap(line, width=width, subsequent_indent="    ", break_long_words=False,
                         break_on_hyphens=False)


def merged_warnings(caught) -> tuple[list[str], list]:
    """The navred warnings caught (each said once), and those about rows of a log put together: one warning
    per thing wrong for the whole run, whatever blocks the log was read in, naming its rows
    (:class:`navred.errors.RowsWarning`). Returns the lines and the merged row warnings (for a closing
    summary)."""
    import pandas as pd

    from ..errors import RowsWarning
    from ..jobs.frames import short_row_list

    lines, seen, rows_of = [], set(), {}
    for item in caught:
        message = item.message
        if isinstance(message, RowsWarning) and message.rows is not None:
            if message.about not in rows_of:
                rows_of[message.about] = []
                lines.append(message.about)  # the place of the merged line
            rows_of[message.about].append(message.rows)
        elif issubclass(item.category, NavredWarning) and str(message) not in seen:
            seen.add(str(message))
            lines.append(f"warning: {message}")
    merged = []
    for about, parts in rows_of.items():
        rows = pd.concat(parts, ignore_index=True).drop_duplicates()
        merged.append(RowsWarning(f"{short_row_list(rows)}: {about}", about, rows))
    texts = {m.about: f"warning: {len(m.rows):,} sight{'s' if len(m.rows) > 1 else ''}, {m}" for m in merged}
    return [texts.get(line, line) for line in lines], merged


def said_warnings() -> list:
    """Print now (on stderr) the warnings this run has raised so far, merged (:func:`merged_warnings`), rather than
    at the end: a run that closes with its counts prints them before the counts. Returns the merged row
    warnings, for the closing summary; those printed are not printed again."""
    caught = _RUN.get("caught") or []
    lines, merged = merged_warnings(caught[_RUN.get("said", 0):])
    _RUN["said"] = len(caught)
    for line in lines:
        for part in folded(line):
            typer.echo(part, err=True)
    return merged


def print_warnings(caught) -> None:
    if caught is _RUN.get("caught"):
        caught = caught[_RUN.get("said", 0):]
    lines, merged = merged_warnings(caught)
    about_rows = tuple(f"warning: {len(m.rows):,} sight" for m in merged)
    for line in lines:  # a warning about rows (a long list of them) folded; every other as it is
        for part in (folded(line) if about_rows and line.startswith(about_rows) else (line,)):
            typer.echo(part, err=True)


def course_and_speed_together(ctx: typer.Context) -> None:
    """A DR track's --course without --speed (or the other way) is refused: either alone would be filled in
    silently (a fixed position, or a course of 000°)."""
    # the source's name, so as to rely on no one click (typer carries its own)
    given = {name: getattr(ctx.get_parameter_source(name), "name", "DEFAULT") != "DEFAULT"
             for name in ("course", "speed")}
    if given["course"] != given["speed"]:
        alone, missing = ("--course", "--speed") if given["course"] else ("--speed", "--course")
        raise NavredError(f"{alone} without {missing}: the DR track needs both (leave both out for a fixed position)")


def no_eye_warning(eye: str | None) -> None:
    """Said on stderr when --eye is left out of a command that presets the sextant: the Hs would be for an eye
    at the sea's surface."""
    if eye is None:
        typer.echo("warning: no --eye given: every Hs to preset is for a height of eye of 0 m (about 3′ too high "
                   "for a 3 m bridge, 6′ for 12 m); give --eye", err=True)


def print_caution() -> None:
    """The safety caution, one line on stderr, once at the end of every run that did its work or read a log; on
    stderr, so that --csv output stays clean."""
    from ..io.cautions import CAUTION

    end_stdout()
    typer.echo(CAUTION, err=True)


def end_stdout() -> None:
    """Before anything goes to stderr: stdout flushed (every line written to it is ended: typer.echo ends each,
    :func:`echo_csv` the table's last), so that a terminal, or both streams sent to one file (2>&1), never shows
    stderr's line run on after stdout's."""
    try:
        sys.stdout.flush()
    except (BrokenPipeError, ValueError):  # the reader closed it (said elsewhere), or stdout is closed
        pass


def print_notes(*sources, err: bool = True) -> None:
    """The notes a reader made about its files as a whole (the columns it does not read, a file read as
    Windows-1252, a column repeated), one line each."""
    seen = set()
    if err:
        end_stdout()
    for source in sources:
        for note in getattr(source, "notes", None) or ():
            if note not in seen:
                seen.add(note)
                typer.echo(f"note: {note}", err=err)


def echo_lines(lines: Iterable[str], *, err: bool = False, fold: bool = False) -> None:
    """Lines on stdout or (``err``) stderr; ``fold``: each longer than :data:`LINE_CHARS` folded
    (:func:`folded`), as a run that writes CSV closes on stderr."""
    if err:
        end_stdout()
    for line in lines:
        for part in (folded(line) if fold else (line,)):
            typer.echo(part, err=err)


def echo_csv(text: str) -> None:
    """A table's CSV text on stdout, as it is (the formatters give it whole), its last line ended."""
    sys.stdout.write(text)
    if text and not text.endswith("\n"):
        sys.stdout.write("\n")
    sys.stdout.flush()


# --- Options read alike in every command ---------------------------------------------------------

def number(value: float | None, name: str, low: float, high: float, why: str = "") -> float | None:
    """A number given on the command line, refused with one line when not finite or out of range (``why``: what
    the range is, for the message)."""
    if value is None:
        return None
    if not math.isfinite(value):
        raise NavredError(f"{name} {value!r} is not a number; give a value from {low:g} to {high:g}")
    if not low <= value <= high:
        raise NavredError(f"{name} {value!r} is outside {low:g} to {high:g}" + (f" ({why})" if why else ""))
    return value


def column_number(value: float | None, name: str, key: str) -> float | None:
    """A number for one of the sight log's quantities (course, speed, height of eye...), checked against the
    range the log's column takes (``navred.vocabulary.COLUMNS``, the one table of ranges)."""
    from ..vocabulary import COLUMN

    return number(value, name, COLUMN[key].low, COLUMN[key].high)


def angle_option(text: str | None, kind: str, name: str) -> float:
    """An angle given on the command line, read by the log's own rules ('43 14.1 N', '4 W', -5.25)."""
    from ..angles import parse_angle
    from ..io.logcells import minutes_as_decimal_refusal

    if text is None:
        raise NavredError(f"{name} is required")
    two_readings = minutes_as_decimal_refusal(str(text), kind, "") if kind in ("lat", "lon") else None
    if two_readings:  # '44.30 N' on the command line as in a log: 44.30° N or 44° 30′ N?
        raise NavredError(f"{name}: {two_readings}")
    try:
        return float(parse_angle(text, kind))
    except NavredError as exc:
        raise NavredError(f"{name}: {exc}") from None


def position_option(lat: str, lon: str, names: tuple[str, str] = ("--lat", "--lon")) -> tuple[float, float]:
    return angle_option(lat, "lat", names[0]), angle_option(lon, "lon", names[1])


def eye_option(text: str | None, name: str = "--eye") -> float:
    """A height of eye with its unit ('3.5 m', '11 ft') in metres; a bare number is refused naming both readings."""
    import re

    from ..vocabulary import UNIT_SPELLINGS, convert_to_working_unit

    if text is None:
        return 0.0
    match = re.fullmatch(r"\s*([0-9]+(?:[.,][0-9]+)?)\s*([A-Za-z]*)\s*\.?\s*", str(text))
    if not match:
        raise NavredError(f"{name} {text!r}: give the height of eye with its unit, such as '3.5 m' or '11 ft'")
    value, unit = float(match.group(1).replace(",", ".")), match.group(2).lower()
    if not unit:
        raise NavredError(f"{name} {text}: metres or feet? write '{text} m' or '{text} ft'")
    if UNIT_SPELLINGS.get(unit) not in ("m", "ft"):
        raise NavredError(f"{name} {text!r}: the unit {unit!r} is not one for a height; give metres (m) or feet (ft)")
    metres = convert_to_working_unit(value, UNIT_SPELLINGS[unit])
    return column_number(metres, f"{name} (metres)", "eye_height")


def parsed(name: str, parse: Callable, text):
    """``parse(text)``, a refusal named by the option it came from."""
    try:
        return parse(text)
    except NavredError as exc:
        raise NavredError(f"{name}: {exc}") from None


def date_option(text: str, name: str = "--date") -> str:
    """A civil date, written as the log's dates are, as YYYY-MM-DD."""
    from ..timework import parse_date

    return "{:04d}-{:02d}-{:02d}".format(*parsed(name, lambda t: parse_date(t, declarable=False), text))


def zone_option(text: str | None, name: str = "--zone") -> float | None:
    """A zone description ('+1', '-5', a zone letter), hours (ZT + ZD = UTC); None when not given. An offset
    named UTC or GMT ('UTC-10') is read as the zone description of the opposite sign, with a note."""
    from ..timework import parse_zone_description, utc_offset_zone

    if text is None:
        return None
    zd = float(parsed(name, parse_zone_description, text))
    if utc_offset_zone(text) is not None:
        typer.echo(f"note: {name} {text!r} is a UTC offset: read as zone description {int(zd):+d} "
                   "(ZT + ZD = UTC, the offset's opposite sign)", err=True)
    return zd


def index_error_option(text: str, name: str = "--index-error") -> float:
    """An index error ('1.4 on', '0.8 off', signed arcminutes, on the arc +), in arcminutes."""
    from ..corrections import parse_index_error_arcmin

    return float(parsed(name, parse_index_error_arcmin, text))


def instant_option(text: str | None, name: str = "--utc") -> str | None:
    """One instant (ISO 8601 with a zone), checked now so that a bad one is refused by its option's name."""
    if text is None:
        return None
    from ..timescales import utc_datetime64

    parsed(name, utc_datetime64, text)
    return text


def renamed(new, old, new_name: str, old_name: str):
    """An option renamed for the command-line vocabulary: its old name is kept, hidden, for one release, with a
    note; both given is refused."""
    if old is None or old is False or old == []:
        return new
    if new is not None and new is not False and new != [] and new != old:
        raise NavredError(f"{old_name} is the old name of {new_name}: give one of them")
    typer.echo(f"note: {old_name} is now {new_name} (the old name is kept until the next release)", err=True)
    return old


def old_outputs(outputs: list[str] | None, **old: str | None) -> list[str]:
    """The -o files with those given by an output option's old name (``--gpx route.gpx`` is now ``-o route.gpx``),
    each with its note."""
    files = list(outputs or [])
    for name, path in old.items():
        if path:
            option = "--" + name.replace("_", "-")
            typer.echo(f"note: {option} FILE is now -o FILE (the old name is kept until the next release)", err=True)
            files.append(path)
    return files


def source(paths: list[str]):
    """One file as itself, several as a list: what the readers take. From here the run has a log: a failure
    after this ends with the caution too (:func:`failed`)."""
    log_named()
    return paths[0] if len(paths) == 1 else list(paths)


def log_named() -> None:
    """The run is about to read a log (sights, a rating log, a compass book): a failure from here on ends with the
    caution, as the run's success would."""
    _RUN["log_named"] = True


def ratings(rates: str | None, dates: str | None = None):
    """The rating log given with --rates, read and fitted with the log's date order (None without one)."""
    if not rates:
        return None
    log_named()
    from ..io.timesignals import read_rating_log

    return read_rating_log(rates, dates=dates)


def input_files(*groups) -> list[str]:
    """Every file a run reads from these paths (a folder's logs included), to be refused as an output."""
    from pathlib import Path

    files = []
    for group in groups:
        for item in ([group] if isinstance(group, str) else list(group or [])):
            if not item:
                continue
            path = Path(item)
            files.append(str(path))
            if "\x00" not in str(item) and path.is_dir():  # (a NUL byte: no file, refused by its reader)
                files.extend(str(p) for p in path.iterdir() if p.is_file())
    return files


def check_folder(folder: str, inputs, name: str) -> None:
    """A folder to write files into, checked before the work: not a file, not an input, writable."""
    from pathlib import Path

    from ..io.output import check_output

    path = Path(folder)
    if "\x00" in str(folder):
        raise NavredError(f"{name}: a folder name cannot hold a NUL byte")
    if path.exists() and not path.is_dir():
        raise NavredError(f"{name} {folder}: that is a file; give a folder")
    if any(Path(i).resolve() == path.resolve() for i in inputs if "\x00" not in str(i)):
        raise NavredError(f"{name} {folder}: that is one of the inputs of this run; give another folder")
    check_output(path / "picture.png", inputs, what=name)


def output_files(paths: list[str] | None, suffixes: dict[str, str], inputs=(),
                 alike: dict[str, str] | None = None) -> dict[str, str]:
    """The -o files of a command by suffix, each refused before the work when its suffix is not one the command
    writes (``suffixes`` maps each to what it holds), its name is empty, its folder is missing, or it is an input.
    ``alike``: suffixes that are one kind of file (``{".json": ".geojson"}``), kept under the second."""
    from pathlib import Path

    from ..io.output import check_output

    chosen: dict[str, str] = {}
    accepted = "; ".join(f"{suffix} ({what})" for suffix, what in suffixes.items())
    for path in paths or []:
        if not str(path).strip():
            raise NavredError(f"-o: an empty file name; accepted: {accepted}")
        check_output(path, inputs, what="-o")  # an input, a folder, a device, a name too long: refused first
        suffix = Path(path).suffix.lower()
        if suffix not in suffixes:
            raise NavredError(f"-o {path}: navred does not write {suffix or 'a file without a suffix'} here; "
                              f"accepted: {accepted}")
        suffix = (alike or {}).get(suffix, suffix)
        if suffix in chosen:
            raise NavredError(f"-o {path}: a second {suffix} file (the first is {chosen[suffix]})")
        if not Path(path).parent.exists():
            raise NavredError(f"-o {path}: the folder {Path(path).parent} does not exist")
        chosen[suffix] = path
    return chosen


def outputs_help(suffixes: dict[str, str]) -> str:
    """The help of a command's -o: each suffix and what it holds."""
    return ("Files to write, repeatable, the suffix choosing what: "
            + "; ".join(f"{suffix} ({what})" for suffix, what in suffixes.items()) + ".")
