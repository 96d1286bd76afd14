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

    import pandas as pd

    file = Path(path)
    if not file.is_file():
        raise NavredError(f"no such file: {path}")
    try:
        if file.suffix.lower() in (".xlsx", ".xlsm"):
            return pd.read_excel(file, dtype=object)
        return pd.read_csv(file, dtype=str, keep_default_na=False)
    except (ValueError, UnicodeDecodeError, OSError) as exc:
        raise NavredError(f"cannot read {path} as a CSV or .xlsx sight table: {exc}") from None


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
