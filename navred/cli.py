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
