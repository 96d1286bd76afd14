"""The commands that plan a passage: plan (the twilights and sight plans for the bridge), paper (the printed
backup), route (the sailings and waypoints).

Each parses its options, makes one library call (navred.jobs) and hands the result to a formatter or a writer.
"""

from __future__ import annotations

from pathlib import Path

import typer

from ..errors import NavredError
from .common import (
    CSV_HELP,
    DATES_HELP,
    EYE_HELP,
    RATES_HELP,
    CsvFileOfOld,
    angle_option,
    check_folder,
    column_number,
    command,
    course_and_speed_together,
    course_option,
    date_option,
    dr_lat_option,
    dr_lon_option,
    echo_csv,
    echo_lines,
    eye_option,
    first_date_option,
    index_error_option,
    input_files,
    instant_option,
    log_named,
    no_eye_warning,
    number,
    old_outputs,
    output_files,
    outputs_help,
    position_option,
    ratings,
    renamed,
    reported,
    speed_option,
    zone_kept_option,
    zone_option,
)

PAPER_FILES = {".pdf": "the printed paper"}
PLAN_FILES = {".pdf": "a page per round of sights with the sky picture, for the bridge", ".txt": "the text shown",
              ".csv": "the day's times, and NAME-plans.csv every plan beside it",
              ".png": "the first round's sky", ".svg": "the first round's sky"}


@command("plan", cls=CsvFileOfOld)
def plan_command(
    ctx: typer.Context,
    date: str = first_date_option(),
    lat: str = dr_lat_option(),
    lon: str = dr_lon_option(),
    course: float = course_option(),
    speed: float = speed_option(),
    days: int = typer.Option(1, "--days", min=1, max=400, help="How many days to plan."),
    eye: str | None = typer.Option(None, "--eye", help=EYE_HELP + " (dip at sunrise and sunset, and the Hs to preset)."),
    index_error: str = typer.Option("0", "--index-error", help="Index error for the Hs to preset: '1.4 on' (on the arc), '0.8 off', or signed arcminutes."),
    zone: str | None = zone_kept_option(),
    count: int = typer.Option(3, "--count", help="Bodies in the recommended set: 3, 4 or 5."),
    min_alt: float = typer.Option(15.0, "--min-alt", help="Lowest altitude to plan (degrees)."),
    max_alt: float = typer.Option(70.0, "--max-alt", help="Highest altitude to plan (degrees)."),
    utc: str | None = typer.Option(None, "--utc", "-t", help="Plan at this instant instead of at the twilights (ISO 8601 with a zone)."),
    output: list[str] = typer.Option(None, "--output", "-o", help=outputs_help(PLAN_FILES)),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="every body of every plan (its round, UTC and zone time, Hs to preset, Hc, Zn)")),
    at: str | None = typer.Option(None, "--at", hidden=True),
    sky: str | None = typer.Option(None, "--sky", hidden=True),
    csv_file: str | None = typer.Option(None, "--csv-file", hidden=True),
) -> None:
    """Twilight times along the DR track and a sight plan for each twilight (or one instant), for the bridge.

    For each day: nautical and civil twilight, sunrise, sunset and the Sun's meridian passage in zone
    time and UTC to the minute, and the noon Hs to preset (lower limb); for each twilight every star,
    planet and the Moon between the altitude limits with the Hs to preset (Hc with dip, refraction, SD,
    parallax and index error taken back off), the limb (the Moon's lit one), Hc, Zn and magnitude,
    and the recommended set.

    Example:  navred plan --date 2026-03-26 --lat "44 30 N" --lon "012 00 W" --course 215 --speed 6.5 --eye "2.8 m" -o plan.pdf
    """
    from ..io.output import csv_text
    from ..jobs.bridge import bridge_plan, plans_csv_path, write_plan_files

    with reported(ctx):
        files = output_files(old_outputs(output, sky=sky, csv=csv_file), PLAN_FILES)
        if ".csv" in files:
            output_files([str(plans_csv_path(files[".csv"]))], {".csv": ""})
        lat_deg, lon_deg = position_option(lat, lon)
        column_number(course, "--course", "course"), column_number(speed, "--speed", "speed")
        number(min_alt, "--min-alt", 0.0, 90.0), number(max_alt, "--max-alt", 0.0, 90.0)
        eye_m, index_error_arcmin = eye_option(eye), index_error_option(index_error)
        course_and_speed_together(ctx)
        zd, first = zone_option(zone), date_option(date)
        utc = instant_option(renamed(utc, at, "--utc", "--at"))
        no_eye_warning(eye)
        plan = bridge_plan(first, days, lat_deg, lon_deg, course_deg=course, speed_kn=speed, eye_height_m=eye_m,
                           index_error_arcmin=index_error_arcmin, zone_description_h=zd, count=count,
                           min_alt_deg=min_alt, max_alt_deg=max_alt, at=utc)
        if csv:
            echo_csv(csv_text(plan.plans_table()))
        else:
            echo_lines(plan.text_lines())
        # each 'wrote' line on stderr, so that stdout is the plan alone
        for written in write_plan_files(plan, files):
            typer.echo(f"wrote {written}", err=True)


@command("paper")
def paper_command(
    ctx: typer.Context,
    first: str = typer.Option(..., "--from", help="The passage's first date, by the ship's clock (zone date), e.g. 2026-03-26."),
    last: str = typer.Option(..., "--to", help="The passage's last date (zone date), inclusive."),
    lat: str | None = typer.Option(None, "--lat", help="DR latitude at 00:00 zone time of the first date (the ship's clock: the nautical zone of --lon (15° a zone centred on multiples of 15°; a boundary such as 7 30 E goes to the zone farther from Greenwich; 180° to ZD −12), or --zone; the cover states the instant in UTC too: 177 00 E on 2026-12-10 is 00:00 ZD −12 = 12:00 UTC 9 Dec), e.g. '44 30 N' (a departure or a fixed position)."),
    lon: str | None = typer.Option(None, "--lon", help="DR longitude then, e.g. '012 00 W'."),
    course: float | None = typer.Option(None, "--course", help="Course to steer (degrees true) from the position given; not with --route or --log."),
    speed: float | None = typer.Option(None, "--speed", help="Speed (knots) from the position given, or along the --route; left out with a position: a fixed position."),
    route: str | None = typer.Option(None, "--route", help="Plan along a route's waypoints in turn: the CSV or GPX navred route writes, or a CSV of waypoints (lat, lon) written by hand; with --speed."),
    depart: str | None = typer.Option(None, "--depart", help="When she leaves the route's first waypoint, or the --lat/--lon position on her --course and --speed (ISO 8601 with a zone); default 00:00 zone time of the first date (the zone of the position, or --zone)."),
    log: str | None = typer.Option(None, "--log", help="Plan along the DR of a sight log with entry rows (departure, course, current), as navred days keeps it."),
    vessel: str | None = typer.Option(None, "--vessel", help="The vessel of the --log to plan for, when it keeps several."),
    carry_current: bool = typer.Option(False, "--carry-current", help="With --log: carry the set and drift found at each fix on in the DR."),
    eye: str | None = typer.Option(None, "--eye", help=EYE_HELP + " (for the Hs to preset)."),
    index_error: str = typer.Option("0", "--index-error", help="Index error: '1.4 on' (on the arc), '0.8 off', or signed arcminutes."),
    zone: str | None = typer.Option(None, "--zone", help="The zone description kept (ZT + ZD = UTC), e.g. '+1'; default: the DR longitude's zone."),
    count: int = typer.Option(4, "--count", help="Bodies in each twilight's recommended set: 3, 4 or 5."),
    output: list[str] = typer.Option(None, "--output", "-o", help=outputs_help(PAPER_FILES)),
    tables: str | None = typer.Option(None, "--tables", help="Also write every printed table as a CSV file into this folder."),
    rates: str | None = typer.Option(None, "--rates", help=RATES_HELP),
    dates: str | None = typer.Option(None, "--dates", help=DATES_HELP),
) -> None:
    """The printed backup of a passage: hourly GHA and Dec, the stars, altitude corrections, the twilight sights, noon, Polaris, formulas and blank forms.

    Planned along a departure's course and speed (or a fixed position), a route's waypoints at a speed
    (--route), or a log's DR with its entry rows (--log): the twilight sights with Hc, Zn and their
    change per minute, the noon Sun, a Polaris table, the calculator's formulas, and blank forms (the
    sight book's pages by method, plotting sheets, a DR log) follow (docs/paper.md says what to print
    and how to use each page). A --lat/--lon position is the DR at 00:00 zone time of the first date
    (the ship's clock: the zone of its longitude, or --zone), not local mean time; the first page
    states that instant in zone time and in UTC.

    Example:  navred paper --from 2026-03-26 --to 2026-03-31 --lat "44 30 N" --lon "012 00 W" --course 215 --speed 6.5 --eye "2.8 m" -o passage.pdf --tables passage-tables
    """
    from ..io.printed import write_pdf, write_tables
    from ..jobs.paper import passage_paper

    with reported(ctx):
        inputs = input_files([log], [route], rates)
        files = output_files(output, PAPER_FILES, inputs)
        if not files and not tables:
            raise NavredError("give -o FILE.pdf for the printed paper, --tables DIR for its tables as CSV, or both")
        if tables:
            if Path(tables).exists() and not Path(tables).is_dir():
                raise NavredError(f"--tables {tables}: that is a file; give a folder for the tables")
            check_folder(tables, inputs, "--tables")
        lat_deg = angle_option(lat, "lat", "--lat") if lat is not None else None
        lon_deg = angle_option(lon, "lon", "--lon") if lon is not None else None
        column_number(course, "--course", "course"), column_number(speed, "--speed", "speed")
        index_error_arcmin, zd = index_error_option(index_error), zone_option(zone)
        if count not in (3, 4, 5):
            raise NavredError(f"--count {count}: give 3, 4 or 5")
        no_eye_warning(eye)
        if log:
            log_named()
        paper = passage_paper(first, last, lat_deg, lon_deg, course_deg=course, speed_kn=speed, route=route,
                              depart=instant_option(depart, "--depart"), log=log, vessel=vessel, dates=dates,
                              rates=ratings(rates, dates), carry_current=carry_current,
                              eye_height_m=eye_option(eye), index_error_arcmin=index_error_arcmin,
                              zone_description_h=zd, count=count)
        if ".pdf" in files:
            written = write_pdf(paper.document, files[".pdf"], inputs=inputs)
            typer.echo(f"wrote {written} ({paper.days} day{'s' if paper.days > 1 else ''}, valid "
                       f"{paper.document.valid_for})")
        if tables:
            written_tables = write_tables(paper.document, tables, inputs=inputs)
            typer.echo(f"wrote {len(written_tables)} tables as CSV to {tables}")


ROUTE_FILES = {".gpx": "the route (its waypoints) as a GPX 1.1 route", ".geojson": "the route as GeoJSON",
               ".json": "the same GeoJSON", ".csv": "the waypoints"}


@command("route", context_settings={"ignore_unknown_options": True})
def route_command(
    ctx: typer.Context,
    from_lat: str = typer.Argument(..., metavar="FROM_LAT", help="Latitude of the start: 49 57.0 N"),
    from_lon: str = typer.Argument(..., metavar="FROM_LON", help="Longitude of the start: 005 12.0 W"),
    to_lat: str = typer.Argument(..., metavar="TO_LAT", help="Latitude of the destination"),
    to_lon: str = typer.Argument(..., metavar="TO_LON", help="Longitude of the destination"),
    spacing: float = typer.Option(300.0, "--spacing", help="Waypoints along the great circle every this many nautical miles."),
    limit: str | None = typer.Option(None, "--limit", help="A limiting latitude for a composite great circle: 50 N."),
    csv: bool = typer.Option(False, "--csv", help=CSV_HELP.format(what="the waypoints")),
    output: list[str] = typer.Option(None, "--output", "-o", help=outputs_help(ROUTE_FILES)),
    gpx: str | None = typer.Option(None, "--gpx", hidden=True),
    geojson: str | None = typer.Option(None, "--geojson", hidden=True),
) -> None:
    """Sailings between two positions on the WGS 84 ellipsoid: the rhumb line and the great circle, the vertex, waypoints and a composite great circle.

    The rhumb line and the great circle are compared (distance, initial and final course); the great
    circle's vertex, waypoints at a spacing, and a composite great circle that keeps within a limiting
    latitude follow.

    Example:  navred route "40 30 N" "073 00 W" "49 57 N" "005 12 W" --limit "50 N" -o route.gpx
    """
    from ..io.output import csv_text, write_text
    from ..jobs.routes import plan_route, route_geojson, route_gpx

    with reported(ctx):
        lat1, lon1 = position_option(from_lat, from_lon, ("FROM_LAT", "FROM_LON"))
        lat2, lon2 = position_option(to_lat, to_lon, ("TO_LAT", "TO_LON"))
        from .common import angle_option

        limit_deg = angle_option(limit, "lat", "--limit") if limit is not None else None
        spacing = number(spacing, "--spacing", 1.0, 20000.0)
        files = output_files(old_outputs(output, gpx=gpx, geojson=geojson), ROUTE_FILES, alike={".json": ".geojson"})
        route = plan_route(lat1, lon1, lat2, lon2, spacing_nm=spacing, limit_lat_deg=limit_deg)
        if csv:
            echo_csv(csv_text(route.waypoints))
        else:
            echo_lines(route.summary_lines())
        if ".gpx" in files:
            typer.echo(f"wrote {route_gpx(route, files['.gpx'])}", err=csv)
        if ".geojson" in files:
            typer.echo(f"wrote {route_geojson(route, files['.geojson'])}", err=csv)
        if ".csv" in files:
            typer.echo(f"wrote {write_text(files['.csv'], csv_text(route.waypoints))}", err=csv)
