"""The commands about the sky at an instant: almanac, bodies, identify, lunar.

Each parses its options, makes one library call and hands the result to a formatter (:mod:`.format`) or a writer.
"""

from __future__ import annotations

import typer

from ..errors import NavredError
from .common import (
    CSV_HELP,
    angle_option,
    command,
    echo_csv,
    echo_lines,
    index_error_option,
    number,
    old_outputs,
    output_files,
    outputs_help,
    position_option,
    reported,
)


@command("almanac")
def almanac_command(
    ctx: typer.Context,
    bodies: list[str] = typer.Argument(..., help="Body names: Sun, Moon, Venus, Mars, Jupiter, Saturn, a navigational "
                                                 "star, or Aries (the first point of Aries: its GHA)."),
    utc: str = typer.Option(..., "--utc", "-t", help="Instant, ISO 8601 with a zone, e.g. 2026-03-20T18:42:10Z."),
    dut1: float | None = typer.Option(None, "--dut1", help="UT1 - UTC in seconds (from a radio time signal); default: the IERS table."),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="a row per body, decimal degrees,")),
) -> None:
    """GHA, Dec, SHA, HP and SD of bodies at one instant, in navigational form, with v and d for a tables working.

    v is the excess of the hour's change of GHA over the increments table's rate, d the hour's change of Dec,
    over the hour of UTC that holds the instant (the Sun, the Moon and the planets).

    Example:  navred almanac Sun Moon Vega Aries --utc 2026-03-20T18:42:10Z
    """
    from ..vocabulary import COLUMN
    from .format import almanac_text

    with reported(ctx):
        number(dut1, "--dut1", COLUMN["dut1"].low, COLUMN["dut1"].high,  # as the log's dut1 column
               "seconds: UT1 − UTC is kept within 0.9 s by leap seconds, and the log's dut1 column is held to it")
        from ..errors import TimeInputError

        try:
            text = almanac_text(list(bodies), utc, dut1, csv=csv)
        except TimeInputError as exc:  # named by the option it came from
            raise TimeInputError(f"--utc: {exc}") from None
        echo_csv(text)


@command("bodies")
def bodies_command(
    ctx: typer.Context,
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="every body (number, name, HIP, magnitude)")),
) -> None:
    """List every body navred knows, with the stars' list numbers and magnitudes.

    Example:  navred bodies
    """
    from ..io.output import csv_text
    from .format import bodies_lines, bodies_table

    with reported(ctx, caution=False):  # a list of names: no position, course or time
        if csv:
            echo_csv(csv_text(bodies_table(), float_format="%.2f"))
        else:
            echo_lines(bodies_lines())


@command("identify")
def identify_command(
    ctx: typer.Context,
    utc: str = typer.Option(..., "--utc", "-t", help="Instant of the observation, ISO 8601 with a zone."),
    lat: str = typer.Option(..., "--lat", help="DR latitude."),
    lon: str = typer.Option(..., "--lon", help="DR longitude."),
    altitude: float = typer.Option(..., "--alt", help="Approximate altitude of the unknown body (degrees)."),
    azimuth: float = typer.Option(..., "--az", help="Approximate true bearing of the unknown body (degrees)."),
    top: int = typer.Option(5, "--top", help="How many candidates to list."),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="the whole ranking")),
) -> None:
    """Which body was that: the catalogue's bodies ranked against a rough altitude and bearing.

    Example:  navred identify --utc 2026-03-26T19:45:00Z --lat "43 17 N" --lon "013 11 W" --alt 30 --az 186
    """
    import pandas as pd

    from ..identify import identify
    from .format import identify_csv, identify_lines

    with reported(ctx):
        lat_deg, lon_deg = position_option(lat, lon)
        number(altitude, "--alt", -5.0, 90.0), number(azimuth, "--az", 0.0, 360.0)
        if top < 1:
            raise NavredError(f"--top {top} must be 1 or more")
        ranked = pd.DataFrame(identify(altitude, azimuth, utc, lat_deg, lon_deg))
        if csv:
            echo_csv(identify_csv(ranked))
        else:
            echo_lines(identify_lines(ranked, top))


LUNAR_FILES = {".xlsx": "the working as a workbook"}


@command("lunar")
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
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="the result")),
    output: list[str] = typer.Option(None, "--output", "-o", help=outputs_help(LUNAR_FILES)),
    xlsx: str | None = typer.Option(None, "--xlsx", hidden=True),
) -> None:
    """Longitude by lunar distance: clear the distance, find UTC, the chronometer error and the longitude.

    Altitudes are apparent altitudes of the centres (index error, dip and semi-diameter applied);
    without them they are computed at the DR. Longitude needs the other body's altitude observed.

    Example:  navred lunar "29 44.7" --other Antares --utc 2024-09-12T19:33:00Z --lat "30 N" --lon "040 W" --moon-limb far
    """
    from ..jobs.lunarwork import work_lunar, write_lunar_workbook
    from .format import lunar_csv, lunar_lines

    with reported(ctx):
        files = output_files(old_outputs(output, xlsx=xlsx), LUNAR_FILES)
        lat_deg, lon_deg = position_option(lat, lon)
        as_given = {"observed distance": distance, "other body": other, "chronometer time": utc, "DR latitude": lat,
                    "DR longitude": lon, "Moon's limb": moon_limb, "other body's limb": other_limb,
                    "index error": index_error, "Moon's apparent altitude": moon_alt or "computed at the DR",
                    "other body's apparent altitude": other_alt or "computed at the DR"}
        working = work_lunar(
            angle_option(distance, "angle", "DISTANCE"), other, utc, lat_deg, lon_deg, moon_limb=moon_limb,
            other_limb=other_limb, index_error_arcmin=index_error_option(index_error),
            moon_altitude_deg=None if moon_alt is None else angle_option(moon_alt, "angle", "--moon-alt"),
            other_altitude_deg=None if other_alt is None else angle_option(other_alt, "angle", "--other-alt"),
            as_given=as_given)
        if ".xlsx" in files:
            typer.echo(f"wrote {write_lunar_workbook(working, files['.xlsx'])}", err=csv)
        if csv:
            echo_csv(lunar_csv(working))
        else:
            echo_lines(lunar_lines(working))
