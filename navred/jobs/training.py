"""Training records: each sight and fix against the ship's reference (satellite) track.

For every sight, its intercept computed from the reference position is the observer's total
error for that sight. For every observer: the number of sights, the personal error (mean
error of the sights that are not blunders, with its standard error and 95 % interval), the
scatter, the blunder rate (errors over 5′), the same by kind of body, and the trend across
the voyage (error against time, arcminutes a day, with its standard error). For every fix:
its distance and bearing from the reference position and whether that lies inside the
95 % ellipse. The figures and their uncertainty; no ranking.

Edge code (pandas); the arithmetic is the core's.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..constants import ARCMIN_PER_DEG, SECONDS_PER_DAY
from ..io.logbook import LogSource, SightLog, read_sight_log
from ..io.timesignals import Ratings
from ..io.track import ReferenceTrack, read_track
from ..stars import SOLAR_SYSTEM
from ..stats import student_t_quantile
from ..status import SightStatus
from ..triangle import computed_altitude_azimuth
from .voyage import VoyageResult, process_log

BLUNDER_ARCMIN = 5.0


def body_kind(name: str) -> str:
    if name in ("Sun", "Moon"):
        return name
    return "planet" if name in SOLAR_SYSTEM else "star"


@dataclass(frozen=True)
class TrainingReport:
    sights: pd.DataFrame
    observers: pd.DataFrame
    by_body: pd.DataFrame
    fixes: pd.DataFrame
    track_span: tuple[str, str]
    #: the reference track's file and the points of it that were refused (point or line, field, value, reason)
    track_source: str = ""
    track_problems: pd.DataFrame = field(default_factory=pd.DataFrame)


def _summaries(frame: pd.DataFrame, keys: list[str]) -> pd.DataFrame:
    usable = frame[frame.within_track]
    rows = []
    for key, part in usable.groupby(keys, sort=True):
        error = part.error_arcmin.to_numpy()
        blunder = np.abs(error) > BLUNDER_ARCMIN
        good = error[~blunder]
        n_good = good.size
        mean = float(good.mean()) if n_good else np.nan
        scatter = float(good.std(ddof=1)) if n_good > 1 else np.nan
        se = scatter / np.sqrt(n_good) if n_good > 1 else np.nan
        half = float(student_t_quantile(0.975, n_good - 1)) * se if n_good > 1 else np.nan
        days = (part.sight_utc - part.sight_utc.min()).dt.total_seconds().to_numpy() / SECONDS_PER_DAY
        slope = slope_se = np.nan
        trend_note = ("fewer than 3 good sights" if n_good < 3 else
                      "sights within a day" if not np.ptp(days[~blunder]) > 1.0 else "")
        if not trend_note:
            x = days[~blunder]
            x_mean = x.mean()
            sxx = np.sum((x - x_mean) ** 2)
            slope = float(np.sum((x - x_mean) * (good - mean)) / sxx)
            residual = good - mean - slope * (x - x_mean)
            slope_se = float(np.sqrt(np.sum(residual**2) / (n_good - 2) / sxx))
        names = key if isinstance(key, tuple) else (key,)
        rows.append({**dict(zip(keys, names)), "sights": int(error.size), "blunders": int(blunder.sum()),
                     "blunder_rate": float(blunder.mean()), "personal_error_arcmin": mean,
                     "standard_error_arcmin": se, "interval_95_arcmin": half, "scatter_arcmin": scatter,
                     "trend_arcmin_per_day": slope, "trend_standard_error_arcmin_per_day": slope_se,
                     "trend_note": trend_note})
    return pd.DataFrame(rows)


def training_report(reduced: pd.DataFrame, track: ReferenceTrack, groups: object = ()) -> TrainingReport:
    """The training report of a reduced log against a reference track (see the module docstring)."""
    usable = (reduced.status != SightStatus.ERROR).to_numpy()
    frame = reduced[usable].reset_index(drop=True)
    times = frame.sight_utc.dt.tz_convert(None).to_numpy().astype("datetime64[ns]")
    lat, lon, why_not = track.positions_at(times)
    inside = why_not == ""
    hc, zn = computed_altitude_azimuth(np.nan_to_num(lat), np.nan_to_num(lon), frame.gha_deg.to_numpy(dtype=float),
                                       frame.dec_deg.to_numpy(dtype=float))
    error = np.where(inside, (frame.ho_deg.to_numpy(dtype=float) - hc) * ARCMIN_PER_DEG, np.nan)
    observer = frame["observer"].astype(str) if "observer" in frame.columns else pd.Series("(not given)", index=frame.index)
    span = track.span
    from .frames import row_labels

    sights = pd.DataFrame({
        "row": frame["row"] if "row" in frame.columns else np.arange(1, len(frame) + 1),
        "sight": row_labels(frame),
        "observer": observer.replace("", "(not given)"), "body": frame.body_name,
        "body_kind": [body_kind(b) for b in frame.body_name], "sight_utc": frame.sight_utc,
        "reference_lat_deg": lat, "reference_lon_deg": lon, "hc_reference_deg": np.where(inside, hc, np.nan),
        "ho_deg": frame.ho_deg, "error_arcmin": error, "blunder": np.abs(np.nan_to_num(error)) > BLUNDER_ARCMIN,
        "within_track": inside,
        "note": why_not,
    })
    observers = _summaries(sights, ["observer"])
    by_body = _summaries(sights, ["observer", "body_kind"])
    fix_rows = []
    for group in groups:
        fix = getattr(group, "fix", None)
        if fix is None:
            continue
        f_lat, f_lon, f_why = track.positions_at(np.array([fix.utc], dtype="datetime64[ns]"))
        if f_why[0]:
            fix_rows.append({"fix_group": group.name, "utc": str(fix.utc)[:19], "note": f_why[0]})
            continue
        check = fix.cross_check(float(f_lat[0]), float(f_lon[0]))
        members = reduced.iloc[group.rows]
        who = ", ".join(sorted(set(members["observer"].astype(str)))) if "observer" in members.columns else ""
        if fix.is_fix:
            fix_rows.append({"fix_group": group.name, "utc": str(fix.utc)[:19], "observers": who, "kind": fix.kind,
                             "distance_from_reference_nm": check.distance_nm,
                             "bearing_to_reference_deg": check.bearing_deg,
                             "reference_inside_95": ("yes" if check.inside_ellipse else "NO") + (
                                 " (but the fix cannot be trusted)" if fix.untrusted else ""),
                             "ellipse_semi_major_95_nm": fix.ellipse_semi_major_nm,
                             "note": f"CANNOT BE TRUSTED: {fix.untrusted}" if fix.untrusted else ""})
        else:
            # not a fix: the sights give one line (or a latitude), so they are marked by the reference's distance off it
            fix_rows.append({"fix_group": group.name, "utc": str(fix.utc)[:19], "observers": who, "kind": fix.kind,
                             "distance_from_reference_nm": abs(fix.distance_off_line_nm(float(f_lat[0]),
                                                                                          float(f_lon[0]))),
                             "bearing_to_reference_deg": np.nan,
                             "reference_inside_95": "yes (within the line's band)" if check.inside_ellipse
                             else "NO (off the line's band)",
                             "ellipse_semi_major_95_nm": np.nan,
                             "note": f"not a fix: {fix.not_fix_reason or 'the lines cross too finely'}; marked by "
                                     f"the distance off the {fix.kind}"})
    return TrainingReport(sights, observers, by_body, pd.DataFrame(fix_rows), span, track.source,
                          track.problems.copy())


@dataclass(frozen=True)
class TrainingRun:
    """navred training's result: the voyage (every sight reduced and fixed), the reference track read, and the
    report against it."""

    voyage: VoyageResult
    reference: ReferenceTrack
    report: TrainingReport

    @property
    def inputs(self) -> tuple[str, ...]:
        """Every file the run read (the logs, the rating log, the track): never to be written over."""
        return tuple(dict.fromkeys([*self.voyage.inputs, self.reference.source]))


def train_log(source: LogSource, track: str, *, dates: str | None = None, rates: Ratings | None = None,
              check_rows: Callable[[SightLog], None] | None = None) -> TrainingRun:
    """Each observer's errors in a log (or a folder of cadets' logs) against the ship's reference track (GPX,
    NMEA or CSV), every sight reduced and fixed as every command does. ``check_rows``: called with the number
    of rows read before the work (a workbook's bound, say)."""
    reference = read_track(track)
    log = read_sight_log(source, dates=dates, rates=rates)
    if check_rows is not None:
        check_rows(log)
    voyage = process_log(log, rates=rates)
    return TrainingRun(voyage, reference, training_report(voyage.reduced, reference, voyage.groups))


def observer_stem(name: str) -> str:
    """A file-name stem for an observer's picture (letters and digits, the rest as hyphens)."""
    return "".join(c if c.isalnum() else "-" for c in name)


def write_training_summary(report: TrainingReport, path, *, inputs=()):
    """One printable page across observers (PDF, PNG or SVG, by the suffix)."""
    from ..figures.plotting import save_figure
    from ..figures.training import summary_figure
    from ..io.output import atomic_write

    return atomic_write(path, lambda p: save_figure(summary_figure(report), p), inputs=inputs)


def write_observer_pictures(report: TrainingReport, folder, *, inputs=()) -> int:
    """One picture per observer (PNG) in ``folder``: how many were written."""
    from pathlib import Path

    from ..figures.plotting import save_figure
    from ..figures.training import observer_figure
    from ..io.output import atomic_write

    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    for name in report.observers.observer:
        atomic_write(folder / f"observer-{observer_stem(name)}.png",
                     lambda p, n=name: save_figure(observer_figure(report, n), p), inputs=inputs)
    return len(report.observers)


def write_training_csv(report: TrainingReport, path, *, inputs=()):
    """The per-sight errors as CSV in ``path``, and the per-observer and per-kind figures beside it (the name
    with -observers): the two files written."""
    from pathlib import Path

    from ..io.output import atomic_write, csv_safe

    target = Path(path)
    atomic_write(target, lambda p: csv_safe(report.sights).to_csv(p, index=False), inputs=inputs)
    others = observers_csv_path(target)
    atomic_write(others, lambda p: csv_safe(pd.concat([report.observers, report.by_body])).to_csv(p, index=False),
                 inputs=inputs)
    return target, others


def observers_csv_path(path):
    """Where :func:`write_training_csv` writes the per-observer figures beside the per-sight errors."""
    from pathlib import Path

    target = Path(path)
    return target.with_name(target.stem + "-observers" + target.suffix)
