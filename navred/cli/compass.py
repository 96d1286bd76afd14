"""The commands for the compass: compass (one bearing checked), azimuths (the watch's tables), compass-book.

Each parses its options, makes one library call (navred.jobs.compasswork) and hands the result to a formatter
(:mod:`.format`) or a writer.
"""

from __future__ import annotations

import typer

from .common import (
    CSV_HELP,
    DATES_HELP,
    EYE_HELP,
    angle_option,
    column_number,
    command,
    course_option,
    date_option,
    dr_lat_option,
    dr_lon_option,
    echo_csv,
    echo_lines,
    eye_option,
    first_date_option,
    input_files,
    number,
    output_files,
    outputs_help,
    position_option,
    reported,
    source,
    speed_option,
    zone_kept_option,
    zone_option,
)


@command("compass")
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
    eye: str | None = typer.Option(None, "--eye", help=EYE_HELP + " (the amplitude at the visible horizon)."),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="the check as one row")),
) -> None:
    """Compass check: a body's true azimuth, the compass error and deviation, and the Sun's amplitudes.

    Example:  navred compass Sun --utc 2026-03-26T17:30:00Z --lat "43 20 N" --lon "013 10 W" --compass-bearing 262 --variation "4 W" --heading 215
    """
    from ..io.cards import add_check
    from ..io.output import check_output, csv_text
    from ..jobs.compasswork import bearing_check
    from .format import bearing_check_lines, card_lines

    with reported(ctx):
        if card:
            check_output(card, suffixes=(".csv",), what="--card")
        lat_deg, lon_deg = position_option(lat, lon)
        variation = angle_option(variation_text, "variation", "--variation")
        number(bearing, "--compass-bearing", 0.0, 360.0), number(heading, "--heading", 0.0, 360.0)
        check = bearing_check(body, utc, lat_deg, lon_deg, compass_bearing_deg=bearing, variation_deg=variation,
                              heading_deg=heading, eye_height_m=eye_option(eye))
        if csv:
            echo_csv(csv_text(check.table()))
        else:
            echo_lines(bearing_check_lines(check))
        if card and bearing is not None:
            echo_lines(card_lines(card, add_check(card, check.card_row)), err=csv)


AZIMUTH_FILES = {".pdf": "the tables printed", ".csv": "the Sun's azimuth table", ".txt": "the text shown"}


@command("azimuths")
def azimuths_command(
    ctx: typer.Context,
    date: str = first_date_option(),
    lat: str = dr_lat_option(),
    lon: str = dr_lon_option(),
    course: float = course_option(),
    speed: float = speed_option(),
    days: int = typer.Option(1, "--days", min=1, max=31, help="How many days."),
    every: float = typer.Option(10.0, "--every", help="Minutes between the rows of the azimuth table (1 to 240)."),
    eye: str | None = typer.Option(None, "--eye", help=EYE_HELP + " (the visible sunrise and sunset)."),
    zone: str | None = zone_kept_option(),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="the Sun's azimuth table")),
    output: list[str] = typer.Option(None, "--output", "-o", help=outputs_help(AZIMUTH_FILES)),
) -> None:
    """For the watch's compass: the Sun's true azimuth along the DR at an interval, a bright body low enough for a bearing at each twilight, and the times and true amplitudes of sunrise and sunset.

    Example:  navred azimuths --date 2026-03-26 --lat "44 30 N" --lon "012 00 W" --course 215 --speed 6.5 --every 15 -o azimuths.pdf
    """
    from ..io.output import csv_text, write_text
    from ..io.printed import write_pdf
    from ..jobs.compasswork import watch_azimuths

    with reported(ctx):
        lat_deg, lon_deg = position_option(lat, lon)
        column_number(course, "--course", "course"), column_number(speed, "--speed", "speed")
        number(every, "--every", 1.0, 240.0)
        eye_m, zd, first = eye_option(eye), zone_option(zone), date_option(date)
        files = output_files(output, AZIMUTH_FILES)
        result = watch_azimuths(first, days, lat_deg, lon_deg, course_deg=course, speed_kn=speed, step_minutes=every,
                                eye_height_m=eye_m, zone_description_h=zd)
        lines = result.text_lines()
        if csv:
            echo_csv(csv_text(result.sun))
        else:
            echo_lines(lines)
        if ".csv" in files:
            typer.echo(f"wrote {write_text(files['.csv'], csv_text(result.sun))}", err=True)
        if ".txt" in files:
            typer.echo(f"wrote {write_text(files['.txt'], chr(10).join(lines) + chr(10))}", err=True)
        if ".pdf" in files:
            typer.echo(f"wrote {write_pdf(result.document(), files['.pdf'])}", err=True)


BOOK_FILES = {".pdf": "the book and the deviation card printed",
              ".csv": "every bearing worked out: a deviation card that navred days --card and navred compass --card read"}


@command("compass-book")
def compass_book_command(
    ctx: typer.Context,
    books: list[str] = typer.Argument(..., metavar="BOOK...", help="Compass error books: CSV or .xlsx with utc, body, compass (gyro or magnetic), bearing, lat, lon, and heading and variation for a magnetic compass (docs/compass.md)."),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="every bearing worked out")),
    output: list[str] = typer.Option(None, "--output", "-o", help=outputs_help(BOOK_FILES)),
    dates: str | None = typer.Option(None, "--dates", help=DATES_HELP),
) -> None:
    """The compass error book: each bearing of a body against its true azimuth, the gyro's error (high or low), the magnetic compass's error and deviation by heading against the variation, and the deviation card.

    Example:  navred compass-book sample_sights/compass_book.csv -o compass.pdf
    """
    from ..io.output import csv_text, write_text
    from ..io.printed import write_pdf
    from ..jobs.compasswork import compass_book

    with reported(ctx):
        files = output_files(output, BOOK_FILES, inputs=input_files(books))
        book = compass_book(source(books), dates=dates)
        if csv:
            echo_csv(csv_text(book.table()))
        else:
            echo_lines(book.text_lines())
        if ".csv" in files:
            typer.echo(f"wrote {write_text(files['.csv'], csv_text(book.table()), inputs=book.sources)}", err=True)
        if ".pdf" in files:
            typer.echo(f"wrote {write_pdf(book.document(), files['.pdf'], inputs=book.sources)}", err=True)
