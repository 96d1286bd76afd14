"""The navred command line (typer): the only module that prints.

Every command catches navred's own errors, prints one clear line and exits 1;
warnings from the core are printed, never hidden.
"""

from __future__ import annotations

import contextlib
import sys
import warnings

import typer

from . import __version__
from .errors import NavredError, NavredWarning

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
def _reported():
    """Turn navred errors into one line and exit 1; print every warning."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", NavredWarning)
        try:
            yield
        except NavredError as exc:
            _print_warnings(caught)
            typer.echo(f"navred: error: {exc}", err=True)
            raise typer.Exit(code=1) from None
    _print_warnings(caught)


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
    bodies: list[str] = typer.Argument(..., help="Body names: Sun, Moon, Venus, Mars, Jupiter, Saturn or a navigational star."),
    utc: str = typer.Option(..., "--utc", "-t", help="Instant, ISO 8601 with a zone, e.g. 2026-03-20T18:42:10Z."),
    dut1: float | None = typer.Option(None, "--dut1", help="UT1 - UTC in seconds (from a radio time signal); default: the IERS table."),
    csv: bool = typer.Option(False, "--csv", help="Machine-readable CSV with decimal degrees instead of the table."),
) -> None:
    """GHA, Dec, SHA, HP and SD of bodies at one instant, in navigational form.

    Example:  navred almanac Sun Moon Vega --utc 2026-03-20T18:42:10Z
    """
    from .almanac import body_positions
    from .angles import format_angle

    with _reported():
        frame = body_positions(list(bodies), utc, dut1_s=dut1)
        if csv:
            out = frame.copy()
            out["utc"] = out["utc"].dt.strftime("%Y-%m-%dT%H:%M:%S.%fZ")
            typer.echo(out.to_csv(index=False, float_format="%.7f"), nl=False)
            return
        first = frame.iloc[0]
        typer.echo(f"UTC {first.utc:%Y-%m-%d %H:%M:%S}   DUT1 {first.dut1_s:+.3f} s ({first.ut1_source})")
        typer.echo(f"GHA Aries {format_angle(first.gha_aries_deg)}")
        typer.echo("")
        typer.echo(f"{'body':<16}{'GHA':>13}{'Dec':>14}{'SHA':>13}{'HP':>8}{'SD':>8}")
        for row in frame.itertuples():
            hp = f"{row.hp_arcmin:.1f}′" if row.hp_arcmin else "-"
            sd = f"{row.sd_arcmin:.1f}′" if row.sd_arcmin else "-"
            typer.echo(f"{row.body:<16}{format_angle(row.gha_deg):>13}{format_angle(row.dec_deg, 'dec'):>14}"
                       f"{format_angle(row.sha_deg):>13}{hp:>8}{sd:>8}")


def _read_table(path: str):
    """A CSV or .xlsx sight table as a DataFrame of text, or a one-line error."""
    from pathlib import Path

    from .logbook import _normalise_columns, _read_raw

    return _normalise_columns(_read_raw(Path(path)), Path(path))


@app.command("reduce")
def reduce_command(
    sights_file: str = typer.Argument(..., metavar="SIGHTS", help="Sight table, CSV or .xlsx (see docs/sight-log.md)."),
    csv: bool = typer.Option(False, "--csv", help="Print every column of every reduced sight as CSV."),
) -> None:
    """Reduce every sight: Ho, Hc, Zn and the intercept TOWARD or AWAY, with any warning.

    Example:  navred reduce sample_sights/demo_sights.csv
    """
    from .angles import format_angle
    from .sights import reduce_sights

    with _reported():
        reduced = reduce_sights(_read_table(sights_file))
        if csv:
            typer.echo(reduced.to_csv(index=False, float_format="%.6f"), nl=False)
            return
        typer.echo(f"{'row':>4}  {'body':<15}{'UTC':<21}{'Ho':>12}{'Hc':>12}{'Zn':>8}  {'intercept':<18}note")
        for number, row in enumerate(reduced.itertuples(), start=1):
            when = f"{row.sight_utc:%Y-%m-%d %H:%M:%S}" if row.sight_utc is not None and str(row.sight_utc) != "NaT" else ""
            if row.status == "error":
                typer.echo(f"{number:>4}  {str(row.body):<15}{when:<21}{'not reduced:':>12} {row.message}")
                continue
            intercept = f"{abs(row.intercept_nm):5.1f} nm {row.intercept_direction}"
            typer.echo(f"{number:>4}  {row.body_name:<15}{when:<21}{format_angle(row.ho_deg, 'signed'):>12}"
                       f"{format_angle(row.hc_deg, 'signed'):>12}{row.zn_deg:7.1f}°  {intercept:<18}{row.message}")
        counts = reduced.status.value_counts()
        typer.echo(f"{int(counts.get('ok', 0) + counts.get('warning', 0))} sights reduced "
                   f"({int(counts.get('warning', 0))} with a warning), {int(counts.get('error', 0))} not reduced")
        if counts.get("error", 0) == len(reduced):
            raise typer.Exit(code=1)


def _print_fix(label: str, fix, reduced, rows) -> None:
    from .angles import format_angle

    typer.echo(f"Fix {label}: {int(fix.used.sum())} sights, at {str(fix.utc)[:19].replace('T', ' ')} UTC")
    typer.echo(f"  position       {format_angle(fix.lat_deg, 'lat')}  {format_angle(fix.lon_deg, 'lon')}")
    typer.echo(f"  95 % ellipse   {fix.ellipse_semi_major_nm:.1f} nm x {fix.ellipse_semi_minor_nm:.1f} nm, major axis "
               f"{fix.ellipse_orientation_deg:03.0f}°/{(fix.ellipse_orientation_deg + 180) % 360:03.0f}°")
    typer.echo(f"  sight error    {fix.sigma_arcmin:.2f}′ ({fix.sigma_source}); "
               f"fix standard error {fix.standard_error_nm:.2f} nm")
    if fix.course_made_good_deg is not None:
        typer.echo(f"  made good      {fix.course_made_good_deg:05.1f}° at {fix.speed_made_good_kn:.1f} kn")
    typer.echo(f"  {'row':>5}  {'body':<16}{'residual':>10}  flag")
    for row in rows:
        residual = fix.residual_arcmin[row]
        flag = "BLUNDER? left out of the check fix" if fix.outlier[row] else ""
        text = f"{residual:+.1f}′" if residual == residual else "-"
        typer.echo(f"  {row + 1:>5}  {reduced.body_name[row]:<16}{text:>10}  {flag}")
    if fix.without_outliers is not None:
        other = fix.without_outliers
        typer.echo(f"  without the flagged sights: {format_angle(other.lat_deg, 'lat')}  "
                   f"{format_angle(other.lon_deg, 'lon')}, ellipse {other.ellipse_semi_major_nm:.1f} x "
                   f"{other.ellipse_semi_minor_nm:.1f} nm")
    if fix.chart_distance_nm is not None:
        where = "inside" if fix.chart_inside_ellipse else "OUTSIDE"
        typer.echo(f"  chart position {fix.chart_distance_nm:.1f} nm from the fix, bearing "
                   f"{fix.chart_bearing_deg:03.0f}°: {where} the 95 % ellipse")
    for text in fix.warnings:
        typer.echo(f"  warning: {text}")


def _print_latitude_checks(reduced) -> None:
    """Latitude by meridian altitude (sights within 0.25° of LHA 0) and by Polaris, as checks."""
    import numpy as np

    from .angles import format_angle
    from .fix import latitude_by_meridian_altitude, latitude_by_polaris

    usable = reduced.status.to_numpy() != "error"
    lha = reduced.lha_deg.to_numpy()
    on_meridian = usable & ((lha < 0.25) | (lha > 359.75)) & (reduced.body_name.to_numpy() != "Polaris")
    polaris = usable & (reduced.body_name.to_numpy() == "Polaris")
    if not (on_meridian.any() or polaris.any()):
        return
    typer.echo("Latitude checks")
    for row in np.flatnonzero(on_meridian):
        bearing = "S" if 90.0 < reduced.zn_deg[row] < 270.0 else "N"
        latitude = latitude_by_meridian_altitude(reduced.ho_deg[row], reduced.dec_deg[row], bearing)
        typer.echo(f"  row {row + 1:>3}  {reduced.body_name[row]:<10} on the meridian: latitude "
                   f"{format_angle(float(latitude), 'lat')} (DR {format_angle(reduced.dr_lat_deg[row], 'lat')})")
    for row in np.flatnonzero(polaris):
        latitude = latitude_by_polaris(reduced.ho_deg[row], reduced.gha_deg[row], reduced.dec_deg[row],
                                       reduced.dr_lon_deg[row])
        typer.echo(f"  row {row + 1:>3}  Polaris: latitude {format_angle(float(latitude), 'lat')} "
                   f"(DR {format_angle(reduced.dr_lat_deg[row], 'lat')})")
    typer.echo("")


@app.command("fix")
def fix_command(
    sights_file: str = typer.Argument(..., metavar="SIGHTS", help="Sight table, CSV or .xlsx (see docs/sight-log.md)."),
    at: str | None = typer.Option(None, "--at", help="Fix time (ISO 8601 with a zone); default: the last sight of each group."),
    chart_lat: str | None = typer.Option(None, "--chart-lat", help="Chart or GNSS latitude to cross-check, e.g. '43 16.5 N'."),
    chart_lon: str | None = typer.Option(None, "--chart-lon", help="Chart or GNSS longitude to cross-check, e.g. '013 11.4 W'."),
    group: str | None = typer.Option(None, "--group", help="Fix only this fix_group."),
    solve_motion: bool = typer.Option(False, "--solve-motion", help="Also solve course and speed made good, when the sights allow."),
) -> None:
    """Least-squares fix of every fix group: position, 95 % ellipse, residuals and flags.

    Sights are fixed together by their fix_group column (all together when there is none);
    sights at different times make a running fix with the course_deg and speed_kn columns.

    Example:  navred fix sample_sights/demo_sights.csv --group evening-stars --chart-lat "43 16.5 N" --chart-lon "013 11.4 W"
    """
    import numpy as np

    from .angles import parse_angle
    from .fix import fix_position
    from .sights import reduce_sights

    with _reported():
        reduced = reduce_sights(_read_table(sights_file))
        lat = parse_angle(chart_lat, "lat") if chart_lat is not None else None
        lon = parse_angle(chart_lon, "lon") if chart_lon is not None else None
        if (lat is None) != (lon is None):
            raise NavredError("give both --chart-lat and --chart-lon, or neither")
        columns = {c.lower(): c for c in reduced.columns}
        groups = reduced[columns["fix_group"]].astype(str) if "fix_group" in columns else \
            np.full(len(reduced), "all sights", dtype=object)
        names = [group] if group is not None else list(dict.fromkeys(groups))
        if group is not None and group not in set(groups):
            raise NavredError(f"no fix_group {group!r}; the log has: {', '.join(dict.fromkeys(groups))}")
        if lat is not None and len(names) > 1:
            raise NavredError("a chart position belongs to one fix: give --group with --chart-lat/--chart-lon "
                              "(or chart_lat/chart_lon columns in the log)")
        fixes = 0
        for name in names:
            rows = np.flatnonzero(np.asarray(groups) == name)
            usable = rows[reduced.status.to_numpy()[rows] != "error"]
            if usable.size < 2:
                typer.echo(f"Group {name}: {usable.size} usable sight(s), no fix (a fix needs two or more)")
                typer.echo("")
                continue
            subset = reduced.iloc[rows].reset_index(drop=True)
            group_lat, group_lon = lat, lon
            if group_lat is None and "chart_lat" in columns and "chart_lon" in columns:
                given = subset[columns["chart_lat"]].replace("", np.nan).dropna()
                if len(given):
                    group_lat = parse_angle(given.iloc[0], "lat")
                    group_lon = parse_angle(subset[columns["chart_lon"]].replace("", np.nan).dropna().iloc[0], "lon")
            fix = fix_position(subset, at_utc=at, chart_lat=group_lat, chart_lon=group_lon,
                               solve_motion=solve_motion)
            _print_fix(f'"{name}"', fix, subset.assign(body_name=subset.body_name), range(len(rows)))
            typer.echo("")
            fixes += 1
        _print_latitude_checks(reduced)
        if not fixes:
            raise NavredError("no group had two usable sights: nothing to fix")


@app.command("workbook")
def workbook_command(
    sights_file: str = typer.Argument(..., metavar="SIGHTS", help="Sight log, CSV or .xlsx (see docs/sight-log.md)."),
    output: str | None = typer.Option(None, "--output", "-o", help="Workbook to write (.xlsx); default: SIGHTS with .navred.xlsx."),
    plots: str | None = typer.Option(None, "--plots", help="Also write each fix's plotting sheet as PNG and SVG into this folder."),
    gpx: str | None = typer.Option(None, "--gpx", help="Also write the fixes and DRs as GPX 1.1 waypoints to this file."),
    geojson: str | None = typer.Option(None, "--geojson", help="Also write fixes, ellipses and lines of position as GeoJSON."),
    strict: bool = typer.Option(False, "--strict", help="Exit 1 if any row was rejected."),
    solve_motion: bool = typer.Option(False, "--solve-motion", help="Also solve course and speed made good where the sights allow."),
) -> None:
    """The whole job: read and check the log, reduce every sight, fix every group, write the workbook.

    Every row of the log ends up in the workbook: reduced (Working sheet) or rejected with
    the reason (Rejected sheet). Exits 1 only when nothing could be reduced, or with --strict
    when anything was rejected.

    Example:  navred workbook sample_sights/demo_sights.csv -o demo_voyage.xlsx --plots plots
    """
    from pathlib import Path

    from .voyage import process_log
    from .workbook import write_plots, write_workbook

    with _reported():
        target = Path(output) if output else Path(sights_file).with_suffix(".navred.xlsx")
        bar = None

        def progress(done: int, total: int) -> None:
            nonlocal bar
            if bar is None:
                bar = typer.progressbar(length=total, label="reducing sights", file=sys.stderr)
                bar.__enter__()
            bar.update(done - bar.pos)

        voyage = process_log(sights_file, solve_motion=solve_motion, progress=progress)
        if bar is not None:
            bar.__exit__(None, None, None)
        write_workbook(voyage, target)
        typer.echo(f"wrote {target}")
        if plots:
            written = write_plots(voyage, plots)
            typer.echo(f"wrote {len(written)} plotting-sheet files to {plots}")
        if gpx:
            from .exports import write_gpx

            typer.echo(f"wrote {write_gpx(voyage, gpx)}")
        if geojson:
            from .exports import write_geojson

            typer.echo(f"wrote {write_geojson(voyage, geojson)}")
        for group in voyage.groups:
            if group.fix is None:
                typer.echo(f"group {group.name}: no fix ({group.problem})")
            for text in (group.fix.warnings if group.fix is not None else []):
                typer.echo(f"warning: group {group.name}: {text}", err=True)
        typer.echo(voyage.summary())
        if voyage.n_reduced == 0:
            raise NavredError("nothing could be reduced: see the Rejected sheet for every row's reason")
        if strict and voyage.n_rejected_rows:
            typer.echo(f"--strict: {voyage.n_rejected_rows} row(s) rejected", err=True)
            raise typer.Exit(code=1)


@app.command("bodies")
def bodies_command() -> None:
    """List every body navred knows, with the stars' list numbers and magnitudes.

    Example:  navred bodies
    """
    from .stars import SOLAR_SYSTEM, star_table

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
