"""``navred almanac`` answered without the command-line library, for a quick answer at one instant.

The command-line library takes longer to start than the almanac takes to compute a few bodies, so
``navred almanac BODY ... --utc TIME [--dut1 S] [--csv]`` written plainly is answered here, with the same
formatter (:func:`navred.cli.format.almanac_text`) the app's command uses, so the text is the same (tested).
Anything else (another option, help, a value repeated or empty) and any run with something to say besides
its answer (an error, a warning) is left to the app, which reads and reports it as it always does: this
module never prints a message of its own.
"""

from __future__ import annotations

import math
import sys

_VALUED = {"--utc": "utc", "-t": "utc", "--dut1": "dut1"}


def _plain_almanac(argv: list[str]) -> tuple[list[str], str, float | None, bool] | None:
    """(bodies, utc, dut1, csv) of a plainly written almanac command, or None."""
    if not argv or argv[0] != "almanac":
        return None
    bodies: list[str] = []
    given: dict[str, str] = {}
    csv = False
    words = iter(argv[1:])
    for word in words:
        if word == "--csv" and not csv:
            csv = True
        elif word in _VALUED or word.split("=", 1)[0] in ("--utc", "--dut1"):
            name, _, value = word.partition("=")
            if not _:
                value = next(words, None)
                if value is None:
                    return None
            key = _VALUED[name]
            if key in given or not value.strip() or value.startswith("-") and key == "utc":
                return None
            given[key] = value
        elif word.startswith("-") or not word.strip():
            return None  # help, another option, an empty name: the app's
        else:
            bodies.append(word)
    if not bodies or "utc" not in given:
        return None
    dut1 = None
    if "dut1" in given:
        try:
            dut1 = float(given["dut1"])
        except ValueError:
            return None
        # (the log's dut1 column's range, as the app's command checks it)
        from ..vocabulary import COLUMN

        if not (math.isfinite(dut1) and COLUMN["dut1"].low <= dut1 <= COLUMN["dut1"].high):
            return None
    return bodies, given["utc"], dut1, csv


def quick_answer(argv: list[str]) -> bool:
    """Answer a plainly written ``navred almanac`` and return True, or return False for the app to run it."""
    plain = _plain_almanac(argv)
    if plain is None:
        return False
    import warnings

    from ..io.cautions import CAUTION
    from .format import almanac_text

    bodies, utc, dut1, csv = plain
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            text = almanac_text(bodies, utc, dut1, csv=csv)
        except Exception:  # (the app gives the message, in its own words and exit status)
            return False
    if any(not issubclass(w.category, DeprecationWarning) for w in caught):
        return False  # a warning to print: the app prints it as every command does
    try:
        sys.stdout.write(text)
        sys.stdout.flush()
    except BrokenPipeError:  # the reader closed the pipe: said as the app says it
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        sys.stderr.write("navred: the output was cut short: its reader closed the pipe; nothing after it was done\n")
        raise SystemExit(1) from None
    sys.stderr.write(CAUTION + "\n")
    return True


__all__ = ["quick_answer"]
