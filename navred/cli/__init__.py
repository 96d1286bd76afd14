"""The command line (typer): the only part of navred that prints. The rule: nothing in navred imports the
command line except ``navred.__main__`` and the ``navred`` console script (``navred.cli:main``); a command
parses its options, makes one library call (navred.jobs, or the core for a single computation) that returns
a result, and hands it to a formatter (``format``) or a writer.

``common`` holds the typer application (``app``), how a run reports and the options read alike everywhere;
the commands are grouped by what they work on: ``sights`` (reduce, fix, workbook, days, series, training, mark,
rate), ``sky`` (almanac, bodies, identify, lunar), ``compass`` (compass, azimuths, compass-book) and
``passage`` (plan, paper, route). ``navred --help`` lists them in the order of :data:`ORDER`.

``quick`` answers ``navred almanac`` written plainly without the command-line library (which alone takes
longer to start than the answer takes to compute); anything else, and any almanac run with something to say
besides its answer, goes through the app. The app is built when first asked for (``navred.cli.app``)."""

from __future__ import annotations

#: the commands in the order navred --help lists them: from the sky and the sights to the passage and the ship
ORDER = ("almanac", "reduce", "fix", "workbook", "plan", "paper", "compass", "azimuths", "compass-book", "identify",
         "series", "training", "mark", "days", "rate", "route", "lunar", "bodies")
#: commands whose work is the files they write (a workbook, printed pages): they print what they wrote and a
#: summary, no table, and so take no --csv; every other command prints its main table as CSV with --csv
FILE_COMMANDS = ("workbook", "paper")


def _app():
    """The typer app with every command registered, in :data:`ORDER`."""
    from . import compass, passage, sights, sky  # noqa: F401  (importing them registers the commands)
    from .common import app

    app.registered_commands.sort(key=lambda c: ORDER.index(c.name) if c.name in ORDER else len(ORDER))
    return app


def __getattr__(name: str):
    if name == "app":
        return _app()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def main() -> None:
    """Entry point of the ``navred`` console script and of ``python -m navred``."""
    import sys

    from .quick import quick_answer

    if quick_answer(sys.argv[1:]):
        return
    _app()
    from .common import main as run

    run()


__all__ = ["app", "main", "ORDER", "FILE_COMMANDS"]
