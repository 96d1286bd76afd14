"""The command line (typer): the only part of navred that prints. The rule: nothing in navred imports the
command line except ``navred.__main__`` and the ``navred`` console script (``navred.cli:main``); a command
parses its options, makes one library call (navred.jobs, or the core for a single computation) that returns
a result, and hands it to a formatter (``format``) or a writer.

``common`` holds the typer application (``app``), how a run reports and the options read alike everywhere;
the commands are grouped by what they work on: ``sights`` (reduce, fix, workbook, days, series, training, mark,
rate), ``sky`` (almanac, bodies, identify, lunar), ``compass`` (compass, azimuths, compass-book) and
``passage`` (plan, paper, route). ``navred --help`` lists them in the order of :data:`ORDER`."""

from . import compass, passage, sights, sky  # noqa: F401  (importing them registers the commands)
from .common import app, main

#: the commands in the order navred --help lists them: from the sky and the sights to the passage and the ship
ORDER = ("almanac", "reduce", "fix", "workbook", "plan", "paper", "compass", "azimuths", "compass-book", "identify",
         "series", "training", "mark", "days", "rate", "route", "lunar", "bodies")
#: commands whose work is the files they write (a workbook, printed pages): they print what they wrote and a
#: summary, no table, and so take no --csv; every other command prints its main table as CSV with --csv
FILE_COMMANDS = ("workbook", "paper")
app.registered_commands.sort(key=lambda c: ORDER.index(c.name) if c.name in ORDER else len(ORDER))

__all__ = ["app", "main", "ORDER", "FILE_COMMANDS"]
