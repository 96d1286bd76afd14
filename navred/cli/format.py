"""The console text of each command's result: pure functions from a result to lines (the command prints them).

Display words (Zn, Ho, intercept, the degree and minute marks) appear here and in the writers only; the
library's tables and --csv keep their snake_case names with units.
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import TYPE_CHECKING

import numpy as np

from ..angles import format_angle, wrap_360
from ..fixresult import LINE_ONLY_DEG, angle_words
from ..status import FixKind, SightStatus

if TYPE_CHECKING:  # pandas is imported by the formatters that need it: navred almanac stays quick
    import pandas as pd


def csv_text(frame, **options) -> str:
    from ..io.output import csv_text as text

    return text(frame, **options)


def csv_safe(frame):
    from ..io.output import csv_safe as safe

    return safe(frame)


def time_text(value) -> str:
    if value is None or (isinstance(value, np.datetime64) and np.isnat(value)):
        return "-"
    return str(value)[:19].replace("T", " ")


def labels_of(reduced: pd.DataFrame) -> np.ndarray:
    from ..jobs.frames import row_labels

    return row_labels(reduced)


# --- almanac, bodies, identify ------------------------------------------------------------------

ALMANAC_COLUMNS = ("gha_aries_deg", "ra_hours", "sha_deg", "gha_deg", "dec_deg", "hp_arcmin", "sd_arcmin",
                   "distance_km", "v_arcmin", "d_arcmin")


def almanac_csv(result) -> str:
    """The almanac (:class:`navred.handtables.InstantAlmanac`) as CSV: a row per body, decimal degrees to 1e-7
    (body names are the catalogue's own; an empty field where a body has no such value)."""
    stamp = result.utc_text or str(result.utc.astype("datetime64[us]"))  # a leap second is 23:59:60
    lines = [",".join(["body", "utc", *ALMANAC_COLUMNS, "dut1_s", "ut1_source"])]
    for k, body in enumerate(result.body):
        numbers = []
        for column in ALMANAC_COLUMNS:
            value = result.gha_aries_deg if column == "gha_aries_deg" else float(getattr(result, column)[k])
            numbers.append("" if value != value else f"{value:.7f}")
        lines.append(",".join([body, f"{stamp}Z", *numbers, f"{result.dut1_s:.7f}", result.ut1_source]))
    return "\n".join(lines) + "\n"


def almanac_text(bodies: list[str], utc: str, dut1_s: float | None, *, csv: bool) -> str:
    """What ``navred almanac`` prints on stdout: the almanac of ``bodies`` at ``utc`` as CSV or as lines."""
    from ..handtables import almanac_at

    result = almanac_at(bodies, utc, dut1_s)
    return almanac_csv(result) if csv else "\n".join(almanac_lines(result)) + "\n"


def _arcmin_text(value: float, signed: bool = False) -> str:
    if value != value:
        return "-"
    return f"{value:+.1f}′" if signed else (f"{value:.1f}′" if value else "-")


def almanac_lines(result) -> list[str]:
    """The almanac at one instant in navigational form; v and d (signed, d + northward) for the Sun, Moon and
    planets over the hour of UTC that holds the instant."""
    stamp = result.utc_text or str(result.utc.astype("datetime64[us]"))  # a leap second is 23:59:60
    lines = [f"UTC {stamp[:19].replace('T', ' ')}   DUT1 {result.dut1_s:+.3f} s ({result.ut1_source})",
             f"GHA Aries {format_angle(result.gha_aries_deg)}", "",
             f"{'body':<16}{'GHA':>13}{'v':>8}{'Dec':>14}{'d':>8}{'SHA':>13}{'HP':>8}{'SD':>8}"]
    for k, body in enumerate(result.body):
        aries = body == "Aries"  # (no Dec or SHA of its own: an almanac leaves them blank; 0 in --csv)
        lines.append(f"{body:<16}{format_angle(float(result.gha_deg[k])):>13}"
                     f"{_arcmin_text(float(result.v_arcmin[k]), True):>8}"
                     f"{'-' if aries else format_angle(float(result.dec_deg[k]), 'dec'):>14}"
                     f"{_arcmin_text(float(result.d_arcmin[k]), True):>8}"
                     f"{'-' if aries else format_angle(float(result.sha_deg[k])):>13}"
                     f"{_arcmin_text(float(result.hp_arcmin[k])):>8}{_arcmin_text(float(result.sd_arcmin[k])):>8}")
    if any(v == v for v in result.v_arcmin.tolist()):
        lines += ["", "v: the hour's change of GHA less the increments table's rate (15° 00.0′; the Moon 14° 19.0′); "
                      "d: the hour's change of Dec (+ north); both over the hour of UTC that holds the instant"]
    return lines


def plot_plan_line(plan, folder: str) -> str:
    """The line a long run of picture files starts with: how many, what, where, and about how long."""
    minutes = plan.seconds / 60.0
    when = (f"about {minutes:.0f} minutes" if minutes >= 1.5 else
            f"about {max(plan.seconds, 1):.0f} seconds")
    kinds = " and ".join(f.upper() for f in plan.formats)
    who = f" by {plan.drawers} processes" if plan.drawers > 1 else ""
    faster = ""
    if "png" in plan.formats and plan.sheets:
        svg_share = _svg_share(plan)
        faster = f"; --plot-formats svg would take about {svg_share:.0%} of that"
    return (f"writing {plan.files:,} picture files to {folder} ({plan.sheets:,} plotting sheets as {kinds}"
            f"{f', {plan.track_pictures} voyage pictures' if plan.track_pictures else ''}), {when}{who} on a machine "
            f"doing nothing else (longer on a busy one){faster}; Ctrl-C stops it")


def _svg_share(plan) -> float:
    from ..jobs.plotfiles import SECONDS_PER_SHEET

    return SECONDS_PER_SHEET["svg"] / sum(SECONDS_PER_SHEET[f] for f in plan.formats)


def bodies_table() -> pd.DataFrame:
    import pandas as pd

    from ..stars import SOLAR_SYSTEM, star_table

    table = star_table()
    stars = pd.DataFrame({"number": table.number, "body": table.name, "hip": table.hip,
                          "magnitude_hp": table.magnitude, "kind": "star"})
    others = pd.DataFrame({"number": 0, "body": list(SOLAR_SYSTEM.values()), "hip": 0, "magnitude_hp": np.nan,
                           "kind": "solar system"})
    return pd.concat([others, stars], ignore_index=True)


def bodies_lines() -> list[str]:
    from ..stars import SOLAR_SYSTEM, star_table

    lines = ["Sun, Moon and planets: " + ", ".join(SOLAR_SYSTEM.values())]
    table = star_table()
    lines.append(f"{'no.':>4}  {'star':<18}{'HIP':>7}{'mag (Hp)':>10}")
    for number, name, hip, mag in zip(table.number, table.name, table.hip, table.magnitude):
        lines.append(f"{number if number else '-':>4}  {name:<18}{hip:>7}{mag:>10.2f}")
    return lines


def identify_csv(ranked: pd.DataFrame) -> str:
    return csv_safe(ranked).to_csv(index=False, float_format="%.3f")


def identify_lines(ranked: pd.DataFrame, top: int) -> list[str]:
    lines = [f"{'rank':>4}  {'body':<16}{'mag.':>6}{'Hc':>8}{'Zn':>8}{'ΔH':>7}{'ΔZ':>7}{'score':>7}"]
    for rank, row in enumerate(ranked.head(top).itertuples(), start=1):
        zn = f"{row.zn_deg % 360.0:05.1f}°"
        lines.append(f"{rank:>4}  {row.body:<16}{row.magnitude:+6.1f}{row.hc_deg:7.1f}°{zn:>8}"
                     f"{signed(row.altitude_difference_deg):>6}°{signed(row.azimuth_difference_deg):>6}°{row.score:7.2f}")
    lines.append("score: the differences in units of 1° of altitude and 3° of bearing; lowest first. mag.: how "
                 "bright (the brighter the smaller): a planet's visual magnitude, a star's in the Hipparcos "
                 "catalogue's own band, within a few tenths of the visual magnitude an almanac prints (Sirius −1.1 "
                 "there for −1.5, Spica +1.0); a body much brighter or fainter than the one seen is not it")
    return lines


def lunar_csv(working) -> str:
    values = working.values
    return ",".join(values) + "\n" + ",".join("" if v is None else str(v) for v in values.values()) + "\n"


def lunar_lines(working) -> list[str]:
    result = working.result
    lines = [f"apparent distance of the centres {format_angle(result.apparent_distance_deg)}, "
             f"cleared {format_angle(result.cleared_distance_deg)}",
             f"UTC {time_text(result.utc)}; the chronometer is {abs(result.chronometer_error_s):.0f} s "
             f"{'fast' if result.chronometer_error_s >= 0 else 'slow'}",
             f"sensitivity: 0.1′ of distance is {result.seconds_per_tenth_arcmin:.0f} s of time, "
             f"{result.seconds_per_tenth_arcmin * 0.25:.1f}′ of longitude"]
    if result.longitude_deg is not None:
        lines.append(f"longitude {format_angle(result.longitude_deg, 'lon')} ({result.longitude_from})")
    else:
        lines.append("longitude: observe the other body's altitude (--other-alt) for a time sight")
    return lines


# --- compass ----------------------------------------------------------------------------------

def _east_west(value: float) -> str:
    return f"{abs(value):.1f}° {'E' if value >= 0 else 'W'}"


def bearing_check_lines(check) -> list[str]:
    lines = [f"{check.body} at {check.utc}: true azimuth Zn {check.zn_deg:05.1f}°, altitude "
             f"{format_angle(check.hc_deg, 'signed')}"]
    for horizon, a in check.amplitudes:
        if np.isnan(a):
            lines.append(f"  amplitude ({horizon}): the body does not rise or set at this latitude")
            continue
        side = "N" if a >= 0 else "S"
        lines.append(f"  amplitude ({horizon}): rising E {abs(a):.1f}° {side} (Zn {90 - a:05.1f}°), "
                     f"setting W {abs(a):.1f}° {side} (Zn {270 + a:05.1f}°)")
    if check.compass_bearing_deg is not None:
        lines.append(f"  compass {check.compass_bearing_deg:05.1f}°: compass error {_east_west(check.compass_error_deg)}, "
                     f"variation {_east_west(check.variation_deg)}, deviation {_east_west(check.deviation_deg)}")
        from ..jobs.compasswork import LARGE_DEVIATION_DEG

        if check.deviation_deg is not None and abs(check.deviation_deg) > LARGE_DEVIATION_DEG:
            lines.append(f"  WARNING: a deviation over {LARGE_DEVIATION_DEG:g}°: check the time (UTC), the DR, the body, "
                         "the variation and the heading before trusting it")
    return lines


def card_lines(path, card: pd.DataFrame) -> list[str]:
    return [f"deviation card {path} ({len(card)} checks):",
            card[["utc", "body", "compass_heading_deg", "compass_error_deg", "deviation_deg"]].to_string(index=False)]


# --- reduce and fix ---------------------------------------------------------------------------

#: the widest the console's body column grows (a name navred knows is at most 15 letters: Rigil Kentaurus)
BODY_COLUMN_MOST = 22


def reduce_lines(done) -> Iterator[str]:
    """Every sight of a :class:`navred.jobs.reducing.ReducedLog`: Ho, Hc, Zn and the intercept, or why not; line by
    line as it is made (a long log's first lines reach a pager at once)."""
    reduced, log = done.reduced, done.log
    labels = [label.removeprefix("row ") for label in labels_of(reduced)]
    width = max([len(x) for x in labels] + [3])
    # the body's column as wide as its longest name and a space (Rigil Kentaurus), at most BODY_COLUMN_MOST: a
    # longer name, one navred does not know, is cut with '…' (its refusal quotes it whole)
    names = [str(b or "?") for b in reduced.body_name.tolist()] if len(reduced) else []
    body_width = min(max([len(b) + 1 for b in names] + [15]), BODY_COLUMN_MOST)

    def body(name) -> str:
        text = str(name or "?")
        return text if len(text) < body_width else text[:body_width - 2] + "…"

    yield (f"{'row':>{width}}  {'body':<{body_width}}{'UTC':<21}{'Ho':>12}{'Hc':>12}{'Zn':>8}  {'intercept':<18}note")
    from ..timescales import utc_jd_to_seconds_text

    # to the nearest second, a leap second as its :60 (a time cut to the second shows a sight early)
    shown = utc_jd_to_seconds_text(reduced.utc_jd1.to_numpy(dtype=float), reduced.utc_jd2.to_numpy(dtype=float)) \
        if len(reduced) and "utc_jd1" in reduced.columns else np.zeros(len(reduced), dtype=object)
    kinds: dict[str, list] = {}  # each kind of refusal: its rows' labels (the first few shown in full)
    firsts: dict[str, tuple[str, str]] = {}  # each kind's first row: its message and the columns it names
    for label, row, when in zip(labels, reduced.itertuples(), shown.tolist()):
        when = when or ""
        if row.status == SightStatus.ERROR:
            kind = refusal_kind(row.message)
            alike = kinds.setdefault(kind, [])
            alike.append(label)
            columns = str(getattr(row, "error_column", "") or getattr(row, "read_problem_column", "") or "")
            first = firsts.setdefault(kind, (row.message, columns))
            said = row.message if len(alike) <= FULL_REFUSALS else \
                same_reasons_as(alike[0], first[0], row.message, columns)
            yield f"{label:>{width}}  {body(row.body_name):<{body_width}}{when:<21}{'not reduced:':>12} {said}"
            continue
        intercept = f"{abs(row.intercept_nm):5.1f} nm {row.intercept_direction}"
        carried = getattr(row, "motion_carried_from", "")
        note = "; ".join(t for t in (row.message, carried) if t)
        yield (f"{label:>{width}}  {body(row.body_name):<{body_width}}{when:<21}{format_angle(row.ho_deg, 'signed'):>12}"
               f"{format_angle(row.hc_deg, 'signed'):>12}{f'{row.zn_deg % 360.0:05.1f}°':>8}  {intercept:<18}{note}")
    counts = reduced.status.value_counts()
    empty = f", {log.empty_rows} empty row{'s' if log.empty_rows > 1 else ''} skipped" if log.empty_rows else ""
    done = int(counts.get('ok', 0) + counts.get('warning', 0))
    yield (f"{done} sight{'' if done == 1 else 's'} reduced "
           f"({int(counts.get('warning', 0))} with a warning), {int(counts.get('error', 0))} not reduced{empty}")
    for kind, alike in kinds.items():  # a refusal repeated row after row, counted once with its rows
        if len(alike) > FULL_REFUSALS:
            reasons = "reasons" if len(_reason_columns(firsts[kind][1])) > 1 else "reason"
            yield (f"  {len(alike)} rows not reduced for the {reasons} given in full at row {alike[0]} "
                   f"({_compact(alike)})")


#: How many rows of one kind of refusal are given in full before the rest say "as row N".
FULL_REFUSALS = 3


def refusal_kind(message: str) -> str:
    """A refusal with the values it quotes taken out: the rows of a log refused for one reason (600 spreadsheet
    date-times with two readings) share it, whatever their values."""
    import re

    kind = re.sub(r"'[^']*'", "'…'", str(message))
    kind = re.sub(r"\d+", "#", kind)
    return re.sub(r"\(# [A-Z][a-z]+\)", "(#)", kind)


def _reason_columns(columns: str) -> list[str]:
    return [c for c in str(columns).split(", ") if c]


def same_reasons_as(first_label: str, first_message: str, message: str, columns: str) -> str:
    """A refusal said in short as the same as an earlier row's, given in full there: all of its reasons, by the
    columns they name ('the same 2 reasons as row 2 (IE, DR lon)'); where the row's values differ from that
    row's, its own values are quoted, so that none reads as taken."""
    import re

    named = _reason_columns(columns)
    count = f"{len(named)} reasons" if len(named) > 1 else "reason"
    where = f" ({', '.join(named)})" if named else ""
    if str(message) == str(first_message):
        return f"the same {count} as row {first_label}{where}"
    theirs = set(re.findall(r"'[^']*'", str(first_message)))
    values = [v for v in dict.fromkeys(re.findall(r"'[^']*'", str(message))) if v not in theirs]
    own = f"; this row's own value{'s' if len(values) > 1 else ''}: {', '.join(values[:4])}" if values else ""
    return f"the same kind of {count} as row {first_label}{where}{own}"


def _compact(labels: list) -> str:
    """Row labels as a compact list ('rows 2-601'); labels that are not plain numbers listed as they are."""
    import pandas as pd

    from ..jobs.frames import row_list

    if all(str(x).isdigit() for x in labels):
        return row_list(pd.DataFrame({"row": [int(x) for x in labels], "source": ["log"] * len(labels)}))
    return ", ".join(map(str, labels[:12])) + (f" and {len(labels) - 12} more" if len(labels) > 12 else "")


def sight_warning_lines(reduced: pd.DataFrame, labels, rows=None, *, indent: str = "",
                        shown: int | None = None) -> list[str]:
    """Each sight's own warning (a long intercept, a low altitude...), named by its row: a command that shows
    a fix or a position built on the sight shows its warnings too. ``shown``: at most this many of each kind
    of warning, the rest counted (:func:`by_kind`); None: every one."""
    if not len(reduced):
        return []
    rows = np.arange(len(reduced)) if rows is None else np.asarray(list(rows), dtype=np.intp)
    status = reduced["status"].to_numpy(dtype=object)
    messages = reduced["message"].to_numpy(dtype=object)
    bodies = reduced["body_name"].to_numpy(dtype=object)
    picked = rows[np.asarray(status[rows] == SightStatus.WARNING, dtype=bool)].tolist()
    entries = [(labels[row], row, messages[row]) for row in picked if messages[row]]
    return by_kind(entries, shown, indent=indent,
                   line_of=lambda row: f"{indent}warning: {labels[row]} ({bodies[row]}): {messages[row]}")


def sight_refusal_lines(reduced: pd.DataFrame, labels, *, shown: int | None = None) -> list[str]:
    """Each sight not reduced and why, named by its row; ``shown`` as for :func:`sight_warning_lines` (the same
    counting by kind)."""
    if not len(reduced):
        return []
    status = reduced["status"].to_numpy(dtype=object)
    messages = reduced["message"].to_numpy(dtype=object)
    bodies = reduced["body_name"].to_numpy(dtype=object)
    entries = [(labels[row], row, messages[row])
               for row in np.flatnonzero(np.asarray(status == SightStatus.ERROR, dtype=bool)).tolist()]
    return by_kind(entries, shown,
                   line_of=lambda row: f"not reduced: {labels[row]} ({bodies[row] or '?'}): {messages[row]}")


def reduced_count_lines(count, row_warnings=()) -> list[str]:
    """What a reduction written as CSV came to (:class:`navred.jobs.reducing.ReducedCount`), for stderr after
    the CSV: each refusal and each warning, counted by kind as every command counts its warnings
    (:func:`reduced_detail_lines`), then the count and the closing summary (:func:`reduced_closing_lines`)."""
    return reduced_detail_lines(count) + reduced_closing_lines(count, row_warnings)


def reduced_detail_lines(count) -> list[str]:
    """Each refusal and each warning of a reduction (:class:`navred.jobs.reducing.ReducedCount`), the first
    :data:`WARNINGS_SHOWN` of each kind in full and the rest counted (:func:`by_kind`), folded to lines a
    terminal shows (:func:`navred.cli.common.folded`)."""
    flagged = count.flagged
    if flagged is None or not len(flagged):
        return []
    labels = labels_of(flagged)
    refusals = sight_refusal_lines(flagged, labels, shown=WARNINGS_SHOWN)
    warnings = sight_warning_lines(flagged, labels, shown=WARNINGS_SHOWN)
    lines = refusals + warnings
    if len(refusals) < count.refused or len(warnings) < count.warned:
        lines.append(f"note: the first {WARNINGS_SHOWN} of each kind shown above; every row's status and message "
                     "is in the CSV")
    from .common import folded

    return [part for line in lines for part in folded(line)]


#: a closing summary's line says so much of its kind's message, then '…' (the message is in full above)
SUMMARY_CHARS = 200


def _summary_kinds(message: str, *, refused: bool) -> list[str]:
    """The kinds of a sight's message for a closing summary: a refusal's first reason without its values; a
    warning's notes, each by what it is about (the words before its first colon: 'intercept over 30 nm', 'DUT1
    beyond the IERS table'), so that a sight with several warnings counts under each."""
    import re

    if refused:
        first = re.sub(r"'[^']*'", "'…'", message.split("; ")[0])
        return [first if len(first) < 110 else first[:109].rstrip() + "…"]
    heads = []
    for part in message.split("; "):
        head = part.split(":")[0].strip() if ":" in part else ""
        if head and not head.startswith(("possible cause", "no single slip", "or ")):
            heads.append(head)
    return list(dict.fromkeys(heads)) or [message[:110]]


def reduced_closing_lines(count, row_warnings=()) -> list[str]:
    """The last lines of a run that reduced a log (before the caution): the count of sights read, reduced, warned
    about and not reduced, then one line per kind of refusal and of warning with how many rows and the first of
    them (the kinds of :func:`by_kind`), and one per warning about rows of the whole run (``row_warnings``:
    :class:`navred.errors.RowsWarning`, the DUT1 or leap-second tables out of date). Each line is at most
    :data:`SUMMARY_CHARS` long: the kind said in full above, every row in the CSV."""
    from ..jobs.frames import short_row_list

    empty = f", {count.empty_rows:,} empty row{'s' if count.empty_rows > 1 else ''} skipped" if count.empty_rows else ""
    lines = [f"{count.rows:,} sight{'' if count.rows == 1 else 's'} read: {count.reduced:,} reduced "
             f"({count.warned:,} with a warning), {count.refused:,} not reduced{empty}"]
    flagged = count.flagged
    kinds: list[tuple[str, object, str]] = []
    if flagged is not None and len(flagged):
        status = flagged["status"].to_numpy(dtype=object)
        messages = flagged["message"].fillna("").astype(str).to_numpy(dtype=object)
        named = [c for c in ("row", "source") if c in flagged.columns]
        for word, wanted in (("not reduced", SightStatus.ERROR), ("with a warning", SightStatus.WARNING)):
            members: dict[str, list[int]] = {}
            said: dict[str, list[str]] = {}  # each kind (its figures taken out) as first said, and the others
            heads: dict[str, list[str]] = {}  # each distinct message's kinds, worked once
            for i in np.flatnonzero(np.asarray(status == wanted, dtype=bool) & (messages != "")).tolist():
                message = messages[i]
                if message not in heads:
                    heads[message] = _summary_kinds(message, refused=wanted == SightStatus.ERROR)
                for head in heads[message]:
                    kind = refusal_kind(head)
                    members.setdefault(kind, []).append(i)
                    if head not in said.setdefault(kind, []):
                        said[kind].append(head)
            kinds += [(word, flagged.iloc[rows][named],
                       said[kind][0] + (", and the like" if len(said[kind]) > 1 else ""))
                      for kind, rows in members.items()]
    for warning in row_warnings:
        kinds.append(("warned of", warning.rows, warning.about))
    if kinds:
        lines.append("by kind (each said in full above; every row's status and message is in the CSV):")
    for word, rows, text in kinds:
        n = len(rows)
        where = f" ({short_row_list(rows, 60)})"
        head = f"  {n:,} {'sight' if n == 1 else 'sights'} {word}: "
        room = SUMMARY_CHARS - len(head) - len(where)
        lines.append(head + (text if len(text) <= room else text[:max(room - 1, 20)].rstrip() + "…") + where)
    return lines


def group_warning_lines(groups, *, shown: int | None = None) -> list[str]:
    """Each fix's warnings, named by its group; ``shown`` as for :func:`sight_warning_lines`."""
    entries = [(f"group {group.name}", f"warning: group {group.name}: {text}", text) for group in groups
               for text in (group.fix.warnings if group.fix is not None else [])]
    return by_kind(entries, shown)


def no_fix_lines(groups, *, shown: int | None = None) -> list[str]:
    """The groups that gave no fix, and why; ``shown`` as for :func:`sight_warning_lines`."""
    entries = [(f"group {g.name}", f"group {g.name}: no fix ({g.problem})", g.problem) for g in groups
               if g.fix is None]
    return by_kind(entries, shown)


#: How many of each kind of warning a long run prints before counting the rest (the workbook keeps all), and
#: up to how many warnings a run lists every one (a day's or a passage's log: each sight named by its row).
WARNINGS_SHOWN = 3
WARNINGS_LISTED = 30


def by_kind(entries: list[tuple], shown: int | None, *, indent: str = "", line_of=None) -> list[str]:
    """Lines (label, line, message) as they are (``shown`` None, or no more than :data:`WARNINGS_LISTED`), or by
    kind of message (:func:`refusal_kind`: the values taken out) in the order each kind is first met: the first
    ``shown`` of each kind, then 'and N more like it (rows ...)'. No kind is hidden behind another, however
    rare. ``line_of``: each entry's second item is what its line is made from (``line_of(item)``), made only
    for the lines shown (a long log's hundreds of thousands of warnings are counted, not each written)."""
    line = (lambda item: item) if line_of is None else line_of
    if shown is None or len(entries) <= WARNINGS_LISTED:  # a day's log lists every one, by its row
        return [line(item) for _, item, _ in entries]
    kinds: dict[str, list] = {}
    kind_of: dict[str, str] = {}  # each distinct message's kind, worked once (a long log repeats a few)
    for label, item, message in entries:
        kind = kind_of.get(message) if isinstance(message, str) else None
        if kind is None:
            kind = refusal_kind(message)
            if isinstance(message, str):
                kind_of[message] = kind
        kinds.setdefault(kind, []).append((label, item))
    out = []
    for members in kinds.values():
        if len(members) <= shown + 1:  # never 'and 1 more like it': the line itself is as short
            out += [line(item) for _, item in members]
            continue
        out += [line(item) for _, item in members[:shown]]
        if len(members) > shown:
            rest = [str(label) for label, _ in members[shown:]]
            out.append(f"{indent}  and {len(rest):,} more like it ({_label_list(rest)})")
    return out


def _label_list(labels: list[str]) -> str:
    """Row or group labels as a short list: 'rows 12-40, 52' for plain rows of one log, else the first dozen."""
    if all(label.startswith("row ") and label[4:].isdigit() for label in labels):
        import pandas as pd

        from ..jobs.frames import short_row_list

        return short_row_list(pd.DataFrame({"row": [int(label[4:]) for label in labels]}), 120)
    return ", ".join(labels[:12]) + (f" and {len(labels) - 12} more" if len(labels) > 12 else "")


def _fix_head_lines(group, vessel: str = "") -> list[str]:
    fix = group.fix
    when = str(fix.utc)[:19].replace("T", " ")
    left_out = fix.left_out if fix.left_out.size == len(group.rows) else np.zeros(len(group.rows), dtype=bool)
    ship = f"{vessel}: " if vessel else ""
    if fix.is_fix:
        dropped = (f", {int(left_out.sum())} left out (see below)" if left_out.any() else "")
        lines = [f'{ship}Fix "{group.name}": {int(fix.used.sum())} sights{dropped}, at {when} UTC',
                 f"  position       {format_angle(fix.lat_deg, 'lat')}  {format_angle(fix.lon_deg, 'lon')}"
                 + ("   CANNOT BE TRUSTED: not the position to plot (the first warning says why)"
                    if fix.untrusted else ""),
                 f"  95 % ellipse   {fix.ellipse_text()}, major "
                 f"axis {fix.ellipse_orientation_deg:03.0f}°/{float(wrap_360(fix.ellipse_orientation_deg + 180)):03.0f}° "
                 f"(scaled by the {fix.quantile} quantile"
                 + ("; the DR's error over the run included)" if fix.dr_error_included else ")")]
        if fix.ellipse_note:
            lines.append(f"                 {fix.ellipse_note}")
        return lines
    why = fix.not_fix_reason or f"their lines cross at {angle_words(fix.spread_deg, LINE_ONLY_DEG)} at most"
    lines = [f'{ship}No fix in "{group.name}": {int(fix.used.sum())} sights give a {fix.kind}, at {when} UTC: '
             f"{why}"]
    if fix.kind == FixKind.LATITUDE:
        lines.append(f"  latitude       {format_angle(fix.lat_deg, 'lat')}, 95 % band {fix.ellipse_text()}"
                     + (f"; noon curve {format_angle(fix.noon_curve_latitude_deg, 'lat')}"
                        if fix.noon_curve_latitude_deg is not None else ""))
    else:
        lines.append(f"  line           through {format_angle(fix.lat_deg, 'lat')}  {format_angle(fix.lon_deg, 'lon')}, "
                     f"bearing {fix.line_bearing_deg:03.0f}°/{float(wrap_360(fix.line_bearing_deg + 180)):03.0f}°, "
                     f"95 % band {fix.ellipse_text()}")
    lines.append(f"  from the DR    {abs(fix.line_offset_nm):.1f} nm {'toward' if fix.line_offset_nm >= 0 else 'away from'} "
                 f"{fix.line_toward_deg:03.0f}°")
    return lines


def _residual_lines(group, reduced, labels) -> list[str]:
    fix = group.fix
    left_out = fix.left_out if fix.left_out.size == len(group.rows) else np.zeros(len(group.rows), dtype=bool)
    width = max([len(labels[r]) for r in group.rows] + [5])
    weighted = fix.weighted
    sigmas = fix.sight_sigma_arcmin if weighted else None
    lines = [f"  {'sight':<{width}}  {'body':<16}{'residual':>10}" + (f"{'σ taken':>10}" if weighted else "")
             + "  flag"]
    for k, row in enumerate(group.rows):
        residual = fix.residual_arcmin[k]
        flag = "BLUNDER? left out of the check fix" if fix.outlier[k] else ""
        if left_out[k]:
            by_test = fix.blunder_left_out.size == len(group.rows) and fix.blunder_left_out[k]
            flag = ("LEFT OUT of this fix: BLUNDER, a clear one by the blunder test (its line from this fix)" if by_test
                    else "LEFT OUT of this fix: a gross error (its line from this fix)")
        if reduced.status.iloc[row] == SightStatus.ERROR:
            flag = "not reduced"
        carried = reduced["motion_carried_from"].iloc[row] if "motion_carried_from" in reduced.columns else ""
        dr_from = reduced["dr_carried_from"].iloc[row] if "dr_carried_from" in reduced.columns else ""
        flag = "; ".join(t for t in (flag, f"DR {dr_from}" if dr_from else "", carried) if t)
        text = f"{signed(residual)}′" if residual == residual else "not used"
        text = f"{text:>10}"
        if weighted:  # each sight's σ as the fix weighs it: the round's σ scaled by the σ the log gives it
            given = fix.weight[k] != 1.0
            text += f"{sigmas[k]:>9.2f}′" if fix.used[k] else f"{'':>10}"
            flag = "; ".join(t for t in (flag, "weighted by its σ in the log" if given else "") if t)
        lines.append(f"  {labels[row]:<{width}}  {str(reduced.body_name.iloc[row]):<16}{text}  {flag}".rstrip())
    return lines


def _check_lines(group) -> list[str]:
    fix = group.fix
    lines = []
    if fix.all_sights is not None:
        other = fix.all_sights
        lines.append(f"  from every sight (not to plot): {format_angle(other.lat_deg, 'lat')}  "
                     f"{format_angle(other.lon_deg, 'lon')}, 95 % ellipse {other.ellipse_text()}")
    if fix.without_outliers is not None:
        other = fix.without_outliers
        lines.append(f"  without the flagged sights (the check fix): {format_angle(other.lat_deg, 'lat')}  "
                     f"{format_angle(other.lon_deg, 'lon')}, 95 % ellipse {other.ellipse_text()}")
    if fix.chart_distance_nm is not None and fix.is_fix:
        where = "inside" if fix.chart_inside_ellipse else "OUTSIDE"
        lines.append(f"  chart position {fix.chart_distance_nm:.1f} nm from the fix, bearing "
                     f"{fix.chart_bearing_deg:03.0f}°: {where} the 95 % ellipse ({group.chart_note})")
    elif fix.chart_distance_nm is not None:
        off = abs(fix.distance_off_line_nm(*group.chart))
        lines.append(f"  chart position {off:.1f} nm off the {fix.kind}: "
                     f"{'within' if fix.chart_inside_ellipse else 'OUTSIDE'} its 95 % band ({group.chart_note})")
    return lines + [f"  warning: {text}" for text in fix.warnings]


#: what the fix's standard error (FixResult.standard_error_nm, the root of the covariance's trace) is, beside it
STANDARD_ERROR_WORDS = ("1σ radial, the drms: √(σ north² + σ east²), the root-mean-square miss; about two fixes in "
                        "three lie within it, against 19 in 20 within the 95 % ellipse")


def fix_lines(group, reduced: pd.DataFrame, labels, vessel: str = "") -> list[str]:
    """One fix group's fix: position, ellipse or band, sight error, residuals and flags, checks and warnings;
    ``vessel`` names the ship where the log holds several."""
    fix = group.fix
    lines = _fix_head_lines(group, vessel)
    lines.append(f"  sight error    {fix.sigma_arcmin:.2f}′ ({fix.sigma_source})"
                 + (f"; fix standard error {fix.standard_error_nm:.2f} nm ({STANDARD_ERROR_WORDS})" if fix.is_fix
                    else ""))
    if fix.course_made_good_deg is not None:
        lines.append(f"  made good      {fix.course_made_good_deg:05.1f}° at {fix.speed_made_good_kn:.1f} kn")
    if fix.run_text:
        lines.append(f"  run between the sights: {fix.run_text}")
    if fix.dr_allowed_nm == fix.dr_allowed_nm:
        lines.append(f"  from the DR    {fix.dr_distance_nm:.1f} nm; " + (
            f"a DR {fix.dr_age_h:.1f} h old: beyond {fix.dr_allowed_nm:.0f} nm it is questioned" if fix.dr_age_known
            else f"the log does not date the DR, taken as {fix.dr_age_h:.0f} h old: up to {fix.dr_allowed_nm:.0f} nm "
                 "passes unquestioned (an entry row with the departure or a known position dates it)"))
    lines.append(f"  blunder check  {fix.blunder_note}")
    return (lines + _residual_lines(group, reduced, labels) + _check_lines(group)
            + sight_warning_lines(reduced, labels, group.rows, indent="  "))


def latitude_lines(checks: pd.DataFrame) -> list[str]:
    """Latitude by meridian altitude, ex-meridian and Polaris (:func:`navred.jobs.fixing.latitude_checks`), as
    checks; an ex-meridian's with the DR longitude it rests on and how far 10′ of error in it moves it."""
    from ..jobs.latitudechecks import longitude_words

    if not len(checks):
        return []
    lines = ["Latitude checks"]
    for row in checks.to_dict("records"):
        dr = format_angle(row["dr_lat_deg"], "lat")
        if row["method"] == "Polaris":
            lines.append(f"  {row['row']:<8} Polaris: latitude {format_angle(float(row['lat_deg']), 'lat')} (DR {dr})")
        elif row["method"] == "ex-meridian":
            lines.append(f"  {row['row']:<8} {row['body']:<10} ex-meridian, {row['minutes_from_meridian']:.1f} min "
                         f"from the meridian (limit {row['limit_minutes']:.0f} min): latitude "
                         f"{format_angle(float(row['lat_deg']), 'lat')} (DR {dr}); "
                         f"{longitude_words(row['lat_per_10_lon_arcmin'], row['dr_lon_deg'])}"
                         + (f" {row['flag']}" if row.get("flag") else ""))
        else:
            lines.append(f"  {row['row']:<8} {row['body']:<10} on the meridian: latitude "
                         f"{format_angle(float(row['lat_deg']), 'lat')} (DR {dr})")
    return lines + [""]


def fix_report_lines(report) -> list[str]:
    """navred fix's text: each group's fix (or why not), what the ellipses cover, the latitude checks."""
    from ..fixstats import ELLIPSE_COVERS

    voyage = report.voyage
    labels = labels_of(voyage.reduced)
    lines = []
    for item in report.groups:
        if item.fix is None:
            ship = f"{voyage.vessel_of(item.name)}: " if len(voyage.vessels) > 1 else ""
            lines += [f"{ship}Group {item.name}: no fix ({item.problem})", ""]
            continue
        vessel = voyage.vessel_of(item.name) if len(voyage.vessels) > 1 else ""
        lines += fix_lines(item, voyage.reduced, labels, vessel) + [""]
    if report.n_fixes:
        lines += [f"Each 95 % ellipse (or band) {ELLIPSE_COVERS}.", ""]
    lines += latitude_lines(report.latitude_checks())
    if voyage.n_rejected_rows:
        lines += rejected_lines(voyage.rejected)
    return lines


def rejected_lines(rejected: pd.DataFrame, shown: int = 20) -> list[str]:
    """The rows not reduced, each with its reason (the first ``shown``; the rest counted)."""
    from ..jobs.frames import row_list

    table = rejected.drop_duplicates(["source", "row"])
    several = table["source"].nunique() > 1
    lines = [f"{len(table)} row{'' if len(table) == 1 else 's'} not reduced:"]
    # by kind of reason, in the order met: the first few rows of each in full, the rest counted; no kind hidden
    kinds = table["reason"].astype(str).map(refusal_kind)
    groups = list(table.groupby(kinds.to_numpy(), sort=False))
    each = max(FULL_REFUSALS, shown // max(len(groups), 1)) if len(groups) > 1 else shown
    each = min(each, shown) if len(table) > shown else len(table)
    for _, members in groups:
        for item in members.head(each).to_dict("records"):
            where = f"{item['source']} row {item['row']}" if several else f"row {item['row']}"
            column = f" ({item['column']})" if item["column"] else ""
            lines.append(f"  {where}{column}: {item['reason']}")
        if len(members) > each:
            rest = members.iloc[each:]
            lines.append(f"  and {len(rest)} more like it ({row_list(rest)}): 'navred reduce' lists every one")
    return lines


def fixes_csv(report) -> str:
    return csv_safe(report.table()).to_csv(index=False, float_format="%.7f")


# --- series, training, days, rate, mark -----------------------------------------------------

def series_csv(report) -> str:
    return csv_safe(report.sights).to_csv(index=False, float_format="%.5f")


def series_lines(report) -> list[str]:
    sights, voyage = report.sights, report.voyage
    labels = labels_of(sights)
    multi = report.series
    lines = [f"{multi.series.nunique() if len(multi) else 0} series of two or more sights "
             f"({voyage.n_rejected_rows} rows rejected)"]
    for name, part in multi.groupby("series", sort=False):
        best = part[part.series_best]
        flagged = [labels[i] for i in part.index[part.series_flag]]
        lines.append(f"  {name:<12} {part.body_name.iloc[0]:<12} {len(part)} sights, offset "
                     f"{signed(part.series_offset_arcmin.iloc[0])}′, scatter {np.nanmedian(part.series_scatter_arcmin):.1f}′"
                     + (f", FLAGGED {', '.join(flagged)}" if flagged else ""))
        if len(best):
            lines.append(f"  {'':<12} best sight: {labels[best.index[0]]} at "
                         f"{best.sight_utc.iloc[0]:%H:%M:%S} UTC, Ho {format_angle(best.series_best_ho_deg.iloc[0], 'signed')}")
    return lines


def training_csv(report) -> str:
    """Every sight's error against the reference (the per-sight table of a training report)."""
    return csv_safe(report.sights).to_csv(index=False)


def track_problem_lines(reference, shown: int = 20) -> list[str]:
    """The points of the reference track that were refused, each by its point (GPX) or line (NMEA, CSV)."""
    problems = reference.problems
    if not len(problems):
        return []
    where = "point" if reference.source.lower().endswith(".gpx") else "line"
    lines = [f"{len(problems)} point{'s' if len(problems) > 1 else ''} of the track refused (not used):"]
    lines += [f"  {where} {row.point}: {row.reason}" for row in problems.head(shown).itertuples()]
    if len(problems) > shown:
        lines.append(f"  ... and {len(problems) - shown} more (every one is on the Training sheet of the workbook, -o)")
    return lines


def signed(value: float, decimals: int = 1) -> str:
    """A signed figure ('+1.2', '-0.4'), and an unsigned zero where it shows as zero (never '-0.0')."""
    text = f"{value:+.{decimals}f}"
    return text[1:] if float(text) == 0.0 else text


def figure_or(value, form: str, reason: str, unit: str = "") -> str:
    """A figure in ``form`` ('+.2f' signed) with its unit, or the reason there is none (never 'nan', never '-0')."""
    if value is None or value != value:
        return reason
    return f"{signed(value, int(form[2]))}{unit}" if form.startswith("+.") else f"{value:{form}}{unit}"


def training_lines(run, track: str) -> list[str]:
    from ..jobs.frames import row_list

    report = run.report
    lines = track_problem_lines(run.reference)
    unmarked = report.sights[~report.sights.within_track]
    lines.append(f"{len(report.sights) - len(unmarked)} of {len(report.sights)} sights marked against {track}"
                 + (f"; {len(unmarked)} not marked:" if len(unmarked) else ""))
    for note, rows in unmarked.groupby("note", sort=False):
        lines.append(f"  {row_list(rows)} ({len(rows)} sight{'s' if len(rows) > 1 else ''}): {note}")
    lines.append(f"{'observer':<22}{'sights':>7}{'blunders':>9}{'personal error':>16}{'± 95 %':>8}{'scatter':>9}"
                 f"{'trend/day':>11}")
    for v in report.observers.to_dict("records"):
        lines.append(f"{v['observer']:<22}{v['sights']:>7}{v['blunders']:>9}"
                     f"{figure_or(v['personal_error_arcmin'], '+.2f', 'no good sight', '′'):>16}"
                     f"{figure_or(v['interval_95_arcmin'], '.2f', 'one sight', '′'):>8}"
                     f"{figure_or(v['scatter_arcmin'], '.2f', 'one sight', '′'):>9}"
                     f"{figure_or(v['trend_arcmin_per_day'], '+.3f', 'none', '′'):>11}")
    notes = {v["trend_note"] for v in report.observers.to_dict("records") if v.get("trend_note")}
    if notes:
        lines.append(f"trend/day none: {'; '.join(sorted(notes))} (a trend needs 3 good sights over more than a day)")
    for row in report.fixes.to_dict("records"):
        distance = row.get("distance_from_reference_nm")
        if distance is None or distance != distance:
            continue
        if row.get("kind", FixKind.FIX) == FixKind.FIX:
            lines.append(f"fix {row['fix_group']}: {distance:.1f} nm from the reference, "
                         f"reference inside the 95 % ellipse: {row['reference_inside_95']}"
                         + (f"; {row['note']}" if row.get("note") else ""))
        else:
            lines.append(f"{row['kind']} {row['fix_group']} (not a fix): the reference lies {distance:.1f} nm off it, "
                         f"{row['reference_inside_95']}")
    return lines


def _noon_lines(days, vessel) -> list[str]:
    from ..jobs.positiontrust import NOON_COVERS
    from ..jobs.shiptrack import is_reckoned

    noons = days.noons[days.noons.vessel == vessel]
    if not len(noons):
        return []
    lines = [f"\n{vessel or 'the ship'}: noon positions and the day's run (± the 95 % circle: {NOON_COVERS.split(': ', 1)[1]})"]
    for r in noons.to_dict("records"):
        spread = f" ±{r['noon_95_nm']:.1f} nm" if r.get("noon_95_nm", float("nan")) == r.get("noon_95_nm") else ""
        lines.append(f"  {r['date']} noon ({r['zone']}, {r['noon_utc'][:16]} UTC) {r['noon_position'] or 'no position'}"
                     f"{spread if r['noon_position'] else ''}"
                     f"  {'by' if is_reckoned(r['noon_from']) or r['noon_from'].startswith('EP ') else 'from'} "
                     f"{r['noon_from']}")
        if r.get("noon_check"):
            lines.append(f"      noon {r['noon_check']}")
        if r["run_nm"] == r["run_nm"]:
            current = (f"; current {_noon_set_text(r)} {r['current_drift_kn']:.1f} "
                       f"±{r['current_95_kn']:.1f} kn" if r["current_drift_kn"] == r["current_drift_kn"] else
                       f"; current {r['current_note'].split(' (')[0]}" if r["current_note"] else "")
            lines.append(f"      run {r['run_nm']:.1f} nm made good on {r['course_made_good_deg']:05.1f}° at "
                         f"{r['speed_made_good_kn']:.1f} kn in {r['hours']:.0f} h; {r['through_water_nm']:.1f} nm "
                         f"through the water{current}")
            if r.get("run_check"):
                lines.append(f"      run {r['run_check']}")
        if r["to_go_nm"] == r["to_go_nm"]:
            eta = f": ETA {r['eta_ship_time']} ({r['eta_basis']})" if r["eta_ship_time"] else ""
            lines.append(f"      {r['to_go_nm']:.0f} nm to go to {r['to']}{eta}")
        if r["clock_changes"] and " kept on " not in r["clock_changes"]:  # a change, not the first noon's zone
            lines.append(f"      {r['clock_changes']}")
    return lines


def _noon_set_text(row: dict) -> str:
    """The noon current's set with its ± (95 %), to whole degrees where the ± is 5° or more."""
    from ..jobs.shiptrack import set_current_text

    spread = row.get("current_set_95_deg", float("nan"))
    text = set_current_text(row["current_set_deg"], spread)
    return f"{text} ±{spread:.0f}°" if spread == spread else text


def noon_report_lines(row: dict) -> list[str]:
    """One noon report as the master sends it: position (with its 95 % circle) and how found, the day's run and
    current, the distance to go and ETA, the clock changes; a position or run a master would not believe is flagged
    beside it with its cause."""
    from ..jobs.positiontrust import NOON_COVERS

    lines = [f"NOON REPORT {row['vessel'] or ''}".rstrip() + f", {row['date']} ({row['zone']}; {row['noon_utc']} UTC)",
             f"  position          {row['noon_position'] or 'not known'}"
             + (f", within {row['noon_95_nm']:.1f} nm ({NOON_COVERS})" if row['noon_position'] and
                row.get("noon_95_nm", float("nan")) == row.get("noon_95_nm") else ""),
             f"  found by          {row['noon_from']}"]
    if row.get("noon_check"):
        lines.append(f"  CHECK POSITION    {row['noon_check']}")
    if row["run_nm"] == row["run_nm"]:
        lines += [f"  made good         {row['course_made_good_deg']:05.1f}°, {row['run_nm']:.1f} nm in "
                  f"{row['hours']:.0f} h: average speed {row['speed_made_good_kn']:.1f} kn",
                  f"  through the water {row['through_water_nm']:.1f} nm"]
        if row.get("run_check"):
            lines.append(f"  CHECK RUN         {row['run_check']}: the run, speed and current above are not to be sent")
        if row["current_drift_kn"] == row["current_drift_kn"]:
            lines.append(f"  current           {_noon_set_text(row)} {row['current_drift_kn']:.1f} "
                         f"±{row['current_95_kn']:.1f} kn (95 %; {row['current_note']})")
        elif row["current_note"]:
            lines.append(f"  current           {row['current_note']}")
    else:
        lines.append("  made good         (the first noon: no day's run yet)")
    if row["to_go_nm"] == row["to_go_nm"]:
        lines.append(f"  to go             {row['to_go_nm']:.0f} nm to {row['to']}")
        if row["eta_ship_time"]:
            lines.append(f"  ETA               {row['eta_ship_time']} ({row['eta_basis']}); {row['eta_utc']} UTC")
    lines.append(f"  clocks            {row['clock_changes'] or 'unchanged since the last noon'}")
    return lines


def noon_reports_text(days) -> str:
    """Every noon report of the day's work, as text (navred days -o FILE.txt)."""
    from ..io.cautions import CAUTION

    blocks = ["\n".join(noon_report_lines(r)) for r in days.noons.to_dict("records")]
    return "\n\n".join(blocks + [CAUTION]) + "\n"


def _set_drift_lines(days, vessel) -> list[str]:
    from ..jobs.shiptrack import current_split_text, set_current_text

    sets = days.set_drift[days.set_drift.vessel == vessel]
    lines = [f"{vessel or 'the ship'}: set and drift at each of the ship's fixes, the current experienced: the fix "
             "against the DR through the water (95 %: both fixes' errors and the "
             "DR's own over the run, 0.3 kn an hour and 2 % of the miles; the noon report's current by the same "
             "rule)"] if len(sets) else []
    for r in sets.to_dict("records"):
        head = f"  {r['fix_utc']} fix {r['fix_group']}"
        if r["drift_kn"] == r["drift_kn"]:
            split = current_split_text(r)
            lines.append(f"{head}: set {set_current_text(r['set_deg'], r['set_95_deg'])} ±{r['set_95_deg']:.0f}°, "
                         f"drift {r['drift_kn']:.1f} ±{r['drift_95_kn']:.1f} kn over {r['hours']:.1f} h from the "
                         f"{r['from']}" + (f"; the current experienced {split}" if split else ""))
        elif r["note"].startswith("not determined"):
            lines.append(f"{head}: set and drift {r['note']} (from the {r['from']})")
        else:
            lines.append(f"{head}: {r['note']}, over {r['hours']:.1f} h from the {r['from']}")
    return lines


def _plural_words(kind: str, n: int) -> str:
    """'fix' → 'fixes', 'estimated position' → 'estimated positions' (n > 1)."""
    if n <= 1:
        return kind
    return kind + ("es" if kind.endswith(("x", "s", "ch", "sh")) else "s")


def _exercise_lines(days, vessel) -> list[str]:
    table = days.exercises[days.exercises.vessel == vessel] if len(days.exercises) else days.exercises
    if not len(table):
        return []
    lines = [f"{vessel or 'the ship'}: exercises against the ship's position"]
    for observer, part in table.groupby("observer", sort=False):
        off = part["off_nm"].to_numpy(dtype=float)
        kinds = part["kind"].value_counts().to_dict()
        counted = ", ".join(f"{n} {_plural_words(str(k), n)}" for k, n in kinds.items())
        if np.isfinite(off).any():
            lines.append(f"  {observer or '(no observer)'}: {counted}, {np.nanmean(off):.1f} nm off on average "
                         f"(at most {np.nanmax(off):.1f})")
        else:
            lines.append(f"  {observer or '(no observer)'}: {counted}; no ship's DR to compare with")
    kinds = {"the ship's fix": "her own fixes", "the ship's noon": "her noon positions",
             "the ship's EP": "her EPs from single lines", "DR from": "her DR (no position "
             "of her own within the hour)"}
    against = {}
    for source in table["ship_from"].astype(str):
        key = next((words for start, words in kinds.items() if source.startswith(start)), "")
        if key:
            against[key] = against.get(key, 0) + 1
    if against:
        lines.append("  each marked against the ship's best position at its time: "
                     + ", ".join(f"{words} ({n})" for words, n in against.items())
                     + " (the Day's work's Exercises table names each)")
    return lines


NO_DAYS_WORK = "no day's work: the log gives no departure (an entry row) and none of the ship's fixes to keep the DR from"


def days_lines(report) -> list[str]:
    """navred days's text: the summary, what the day's work rests on, each vessel's noons and day's run, set and
    drift, exercises, estimated positions, and the last noon report in full."""
    voyage, days = report.voyage, report.days
    lines = [voyage.summary()] + list(days.notes)
    for vessel in days.tracks:
        lines += _noon_lines(days, vessel) + _set_drift_lines(days, vessel) + _exercise_lines(days, vessel)
    for r in days.estimated.to_dict("records"):
        lines.append(f"{r['ep']} on {r['utc'][:10]} (fix group {r['fix_group']}): {r['estimated_position']}, {r['from']}")
        if r.get("uncertainty"):
            lines.append(f"    {r['uncertainty']}")
        if r.get("check"):
            lines.append(f"    {'' if r['check'].startswith('CANNOT') else 'note: '}{r['check']}")
    for vessel in days.tracks:
        noons = days.noons[days.noons.vessel == vessel]
        if len(noons):
            lines += [""] + noon_report_lines(noons.iloc[-1].to_dict())
    return lines


def days_csv(report) -> str:
    return csv_text(report.days.noons)


def rate_lines(ratings) -> list[str]:
    return [piece.summary() for piece in ratings.timepieces.values()] + [
        f"not read: row {r.row} of {r.source}: {r.column}: {r.reason}" for r in ratings.rejected.itertuples()]


def mark_csv(report) -> str:
    """The marking as CSV, one row per sight, its headers in snake_case as every --csv's."""
    from ..jobs.workings import marking_csv

    table = marking_csv(report)
    return csv_text(table.rename(columns={c: "_".join(str(c).split()) for c in table.columns}))


def mark_lines(report) -> list[str]:
    """navred mark's text: the class's summary, each working that is not right in words, each cadet's personal
    error against a track, and the rows not read."""
    from ..io.workings import source_name
    from ..jobs.workings import describe

    lines = [report.summary()]
    lines += [describe(row) for row in report.rows.to_dict("records") if row["verdict"] != "right"]
    for p in report.personal.to_dict("records") if len(report.personal) else []:
        lines.append(f"{p['cadet']}: personal error {signed(p['personal_error_arcmin'], 2)}′ ± {p['interval_95_arcmin']:.2f}′ "
                     f"(95 %) against the track, over {int(p['sights'])} sights")
    lines += [f"not read: {source_name(row.source)} row {row.row}: {row.column}: {row.reason}"
              for row in report.rejected.itertuples()]
    return lines
