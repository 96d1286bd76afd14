"""The plotting sheets of a voyage's fixes and its track as picture files (PNG, SVG), drawn by several
processes for a fleet's hundreds of sheets (:func:`navred.jobs.forking.forked_map`), each file the same
byte for byte whoever draws it."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import NavredError
from ..io.output import atomic_write, atomic_write_many
from .forking import can_fork, cores, forked_map
from .frames import row_labels


def _sight_columns(voyage) -> dict[str, np.ndarray]:
    """What a plotting sheet needs of every reduced sight (body, UTC, row label, DR, intercept and Zn at its
    time), made once a run."""
    if "sheet columns" not in voyage.cache:
        reduced = voyage.reduced
        voyage.cache["sheet columns"] = {
            "body": reduced.body_name.astype(str).to_numpy(),
            "utc": reduced.sight_utc.dt.tz_convert(None).to_numpy(dtype="datetime64[ns]") if len(reduced)
            else np.zeros(0, dtype="datetime64[ns]"),
            "rows": np.asarray(row_labels(reduced), dtype=object),
            **{name: reduced[name].to_numpy(dtype=float) for name in ("dr_lat_deg", "dr_lon_deg", "intercept_nm",
                                                                       "zn_deg")}}
    return voyage.cache["sheet columns"]


def plotting_figure(voyage, group):
    """The plotting sheet figure of one fix group."""
    from ..figures.plotsheet import SheetSights, plotting_sheet
    from .voyagetables import rows_not_used

    columns = {name: values[group.rows] for name, values in _sight_columns(voyage).items()}
    vessel = voyage.vessel_of(group.name) if len(voyage.vessels) > 1 else ""
    title = f"Plotting sheet: {vessel + ', ' if vessel else ''}{group.name}"
    # the rows refused have no line; those left out are drawn, grey and dashed (the sheet's own list)
    refused = [text for text in rows_not_used(voyage, group) if ": refused, " in text]
    return plotting_sheet(group.fix, SheetSights(**columns, refused=refused), title=title, chart=group.chart)


def plot_file_stems(names) -> list[str]:
    """A file-name stem for each fix group's plotting sheet: the name's letters and digits, made
    unique ('a b' and 'a-b' would both be 'a-b': the second becomes 'a-b-2')."""
    import re

    stems, seen = [], {}
    for name in names:
        stem = re.sub(r"[^A-Za-z0-9_.-]+", "-", str(name)).strip("-.") or "fix"
        count = seen.get(stem.lower(), 0) + 1
        seen[stem.lower()] = count
        stems.append(stem if count == 1 else f"{stem}-{count}")
    return stems


#: a run that will write more picture files than this says first how many and about how long, and shows its
#: progress (the command line)
ANNOUNCE_FILES_FROM = 300
#: about how long one plotting sheet takes to draw and write on one core, seconds a format (measured by
#: benchmarks/bench_workbook.py on the shared two-core machine, docs/speed.md)
SECONDS_PER_SHEET = {"png": 0.065, "svg": 0.0035}


@dataclass(frozen=True)
class PlotPlan:
    """What :func:`write_plots` will write: its files, the plotting sheets among them, the voyage pictures,
    the processes that draw them, and about how long it takes (seconds)."""

    files: int
    sheets: int
    track_pictures: int
    formats: tuple[str, ...]
    drawers: int
    seconds: float

    @property
    def announced(self) -> bool:
        """Whether the run is long enough to say so first (:data:`ANNOUNCE_FILES_FROM` files)."""
        return self.files > ANNOUNCE_FILES_FROM


def plot_plan(voyage, formats: tuple[str, ...] = ("png", "svg"), *, groups=None,
              workers: int | None = None) -> PlotPlan:
    """What :func:`write_plots` with these arguments will write, and about how long it will take."""
    sheets = sum(g.fix is not None for g in (voyage.groups if groups is None else groups))
    tracks = len(voyage.days_work().tracks) if groups is None and not voyage.days_work().empty else 0
    drawers = drawers_for(sheets, workers)
    per_sheet = sum(SECONDS_PER_SHEET.get(f, SECONDS_PER_SHEET["png"]) for f in formats)
    seconds = per_sheet * sheets / max(drawers, 1) + per_sheet * 20 * tracks  # (a voyage picture is larger)
    return PlotPlan((sheets + tracks) * len(formats), sheets, tracks, tuple(formats), drawers, seconds)


def write_plots(voyage, folder: str | Path, formats: tuple[str, ...] = ("png", "svg"), *,
                groups=None, workers: int | None = None,
                progress: Callable[[int, int], None] | None = None) -> list[Path]:
    """Every fix's plotting sheet (or those of ``groups``) as PNG and SVG files in ``folder``.

    Hundreds of sheets are drawn by ``workers`` processes at once (default: one per core this process
    may use, for :data:`PARALLEL_FROM` sheets or more, where the system can fork); each file is the
    same byte for byte whoever draws it. ``progress(done, total)`` is told of the plotting sheets written
    as they are (:func:`plot_plan` says beforehand how many files and about how long)."""
    from ..figures.plotting import canvas_bytes

    out = Path(folder)
    if out.exists() and not out.is_dir():
        raise NavredError(f"{out} is a file: give a folder for the plotting sheets")
    out.mkdir(parents=True, exist_ok=True)
    chosen = [g for g in (voyage.groups if groups is None else groups) if g.fix is not None]
    written: list[Path] = []
    if groups is None and not voyage.days_work().empty:
        from ..figures.plotting import voyage_track_picture

        days = voyage.days_work()
        pictures = {}
        for vessel, stem in zip(days.tracks, plot_file_stems(f"track-{v or 'vessel'}" for v in days.tracks)):
            picture = voyage_track_picture(days, vessel)
            for suffix in formats:
                pictures[f"{stem}.{suffix}"] = canvas_bytes(picture, suffix, png_width_px=1320)
        written += atomic_write_many(out, pictures, inputs=voyage.inputs)
    stems = plot_file_stems(g.name for g in chosen)
    batches = [(start, min(start + PLOTS_PER_WRITE, len(chosen))) for start in range(0, len(chosen), PLOTS_PER_WRITE)]
    _sight_columns(voyage)  # worked out once, before any drawer starts
    context = {"voyage": voyage, "chosen": chosen, "stems": stems, "formats": tuple(formats)}
    done = 0
    if progress is not None:
        progress(0, len(chosen))
    for (start, end), files in zip(batches, forked_map(_draw_batch, batches, context=context,
                                                       workers=drawers_for(len(chosen), workers))):
        written += atomic_write_many(out, files, inputs=voyage.inputs)
        done += end - start
        if progress is not None:
            progress(done, len(chosen))
    return written


#: plotting sheets drawn and written together (their files are held in memory until written)
PLOTS_PER_WRITE = 250
#: from this many plotting sheets, several processes draw them
PARALLEL_FROM = 400


def _draw_batch(context: dict, batch: tuple[int, int]) -> dict[str, bytes]:
    """One batch of plotting sheets drawn (in this process or in a forked drawer)."""
    from ..figures.plotting import canvas_bytes

    voyage, chosen, stems, formats = (context[k] for k in ("voyage", "chosen", "stems", "formats"))
    files = {}
    for group, stem in zip(chosen[batch[0]:batch[1]], stems[batch[0]:batch[1]]):
        sheet = plotting_figure(voyage, group)
        for suffix in formats:
            files[f"plot-{stem}.{suffix}"] = canvas_bytes(sheet, suffix)
    return files


def drawers_for(n_sheets: int, workers: int | None) -> int:
    """How many processes draw: one below PARALLEL_FROM sheets (or where processes cannot be forked), else
    ``workers``, by default one per core."""
    if not can_fork():
        return 1
    if workers is None:
        return 1 if n_sheets < PARALLEL_FROM else cores()
    return max(1, int(workers))



def write_track_picture(days, path: str | Path, *, inputs=()) -> tuple[Path, int]:
    """The voyage picture of the day's work (:class:`navred.jobs.dayswork.DaysWork`; its first vessel's) as
    PNG or SVG, by the file's suffix; the file written and the number of vessels."""
    from ..figures.plotting import canvas_bytes, voyage_track_picture

    vessels = list(days.tracks) or [None]
    data = canvas_bytes(voyage_track_picture(days, vessels[0]), Path(path).suffix.lstrip(".").lower(),
                        png_width_px=1320)
    return atomic_write(path, lambda p: Path(p).write_bytes(data), inputs=inputs), len(vessels)
