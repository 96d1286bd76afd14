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

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..constants import ARCMIN_PER_DEG
from ..io.track import ReferenceTrack
from ..stars import SOLAR_SYSTEM
from ..stats import student_t_quantile
from ..triangle import computed_altitude_azimuth

BLUNDER_ARCMIN = 5.0


def body_kind(name: str) -> str:
    if name in ("Sun", "Moon"):
        return name
    return "planet" if name in SOLAR_SYSTEM else "star"


@dataclass
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
        days = (part.sight_utc - part.sight_utc.min()).dt.total_seconds().to_numpy() / 86400.0
        slope = slope_se = np.nan
        if n_good >= 3 and np.ptp(days[~blunder]) > 1.0:
            x = days[~blunder]
            x_mean = x.mean()
            sxx = np.sum((x - x_mean) ** 2)
            slope = float(np.sum((x - x_mean) * (good - mean)) / sxx)
            residual = good - mean - slope * (x - x_mean)
            slope_se = float(np.sqrt(np.sum(residual**2) / (n_good - 2) / sxx))
        names = key if isinstance(key, tuple) else (key,)
        rows.append({**dict(zip(keys, names)), "sights": int(error.size), "blunders": int(blunder.sum()),
                     "blunder rate": float(blunder.mean()), "personal error (′)": mean,
                     "standard error (′)": se, "95 % interval (′)": half, "scatter (′)": scatter,
                     "trend (′ per day)": slope, "trend standard error (′ per day)": slope_se})
    return pd.DataFrame(rows)


def training_report(reduced: pd.DataFrame, track: ReferenceTrack, groups: object = ()) -> TrainingReport:
    """The training report of a reduced log against a reference track (see the module docstring)."""
    usable = (reduced.status != "error").to_numpy()
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
        "body kind": [body_kind(b) for b in frame.body_name], "sight_utc": frame.sight_utc,
        "reference_lat_deg": lat, "reference_lon_deg": lon, "hc_reference_deg": np.where(inside, hc, np.nan),
        "ho_deg": frame.ho_deg, "error_arcmin": error, "blunder": np.abs(np.nan_to_num(error)) > BLUNDER_ARCMIN,
        "within_track": inside,
        "note": why_not,
    })
    observers = _summaries(sights, ["observer"])
    by_body = _summaries(sights, ["observer", "body kind"])
    fix_rows = []
    for group in groups:
        fix = getattr(group, "fix", None)
        if fix is None:
            continue
        f_lat, f_lon, f_why = track.positions_at(np.array([fix.utc], dtype="datetime64[ns]"))
        if f_why[0]:
            fix_rows.append({"fix group": group.name, "UTC": str(fix.utc)[:19], "note": f_why[0]})
            continue
        check = fix.cross_check(float(f_lat[0]), float(f_lon[0]))
        members = reduced.iloc[group.rows]
        who = ", ".join(sorted(set(members["observer"].astype(str)))) if "observer" in members.columns else ""
        if fix.is_fix:
            fix_rows.append({"fix group": group.name, "UTC": str(fix.utc)[:19], "observers": who, "kind": fix.kind,
                             "distance from reference (nm)": check.distance_nm,
                             "bearing from fix to reference (deg)": check.bearing_deg,
                             "reference inside 95 % ellipse": "yes" if check.inside_ellipse else "NO",
                             "95 % semi-major (nm)": fix.ellipse_semi_major_nm, "note": ""})
        else:
            # not a fix: the sights give one line (or a latitude), so they are marked by the reference's distance off it
            fix_rows.append({"fix group": group.name, "UTC": str(fix.utc)[:19], "observers": who, "kind": fix.kind,
                             "distance from reference (nm)": abs(fix.distance_off_line_nm(float(f_lat[0]),
                                                                                          float(f_lon[0]))),
                             "bearing from fix to reference (deg)": np.nan,
                             "reference inside 95 % ellipse": "yes (within the line's band)" if check.inside_ellipse
                             else "NO (off the line's band)",
                             "95 % semi-major (nm)": np.nan,
                             "note": f"not a fix: the lines cross at {fix.spread_deg:.0f}°; marked by the distance off "
                                     f"the {fix.kind}"})
    return TrainingReport(sights, observers, by_body, pd.DataFrame(fix_rows), span, track.source,
                          track.problems.copy())


def observer_figure(report: TrainingReport, observer: str):
    """Error against time and a histogram for one observer (matplotlib)."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    from ..figures.plotting import FIX, GRID, INK, PAPER

    part = report.sights[(report.sights.observer == observer) & report.sights.within_track]
    row = report.observers[report.observers.observer == observer].iloc[0]
    figure = Figure(figsize=(8.0, 3.4), dpi=100, facecolor=PAPER)
    left = figure.add_axes([0.08, 0.17, 0.56, 0.68], facecolor=PAPER)
    right = figure.add_axes([0.72, 0.17, 0.25, 0.68], facecolor=PAPER)
    kinds = {"star": "o", "planet": "s", "Sun": "D", "Moon": "^"}
    for kind, marker in kinds.items():
        sub = part[part["body kind"] == kind]
        if len(sub):
            left.plot(sub.sight_utc.dt.tz_convert(None), sub.error_arcmin, marker, ms=4, color=INK, alpha=0.7, label=kind)
    blunders = part[part.blunder]
    if len(blunders):
        left.plot(blunders.sight_utc.dt.tz_convert(None), blunders.error_arcmin, "x", ms=8, color=FIX, label="over 5′")
    left.axhline(0, color=GRID, lw=1)
    if np.isfinite(row["personal error (′)"]):
        left.axhline(row["personal error (′)"], color=FIX, lw=1, ls="--", label="personal error")
    left.set_ylabel("error Ho − Hc(reference) (′)", fontsize=7)
    left.tick_params(labelsize=6)
    left.legend(fontsize=6, frameon=False, ncol=3)
    left.grid(color=GRID, lw=0.4)
    good = part.error_arcmin[~part.blunder]
    right.hist(good, bins=max(5, min(20, len(good) // 3)), color=INK, alpha=0.8)
    right.set_xlabel("error (′), blunders left out", fontsize=7)
    right.tick_params(labelsize=6)
    figure.suptitle(f"{observer}: {int(row['sights'])} sights, personal error {row['personal error (′)']:+.2f}′ "
                    f"± {row['95 % interval (′)']:.2f}′ (95 %), scatter {row['scatter (′)']:.2f}′, "
                    f"blunders {int(row['blunders'])}", fontsize=8, color=INK, x=0.08, ha="left")
    return figure


def summary_figure(report: TrainingReport, title: str = "Training summary"):
    """One printable page across observers: a table of the figures and their 95 % intervals."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    from ..figures.plotting import FIX, GRID, INK

    figure = Figure(figsize=(8.27, 11.69), dpi=100, facecolor="white")  # A4 portrait
    figure.text(0.07, 0.96, title, fontsize=14, weight="bold", color=INK)
    figure.text(0.07, 0.93, f"Reference track {report.track_span[0]} to {report.track_span[1]} UTC. Error = Ho − Hc "
                "at the reference position.\nPersonal error: mean error of the sights within 5′, with its 95 % "
                "interval. Blunders: errors over 5′. Trend: change of the error per day.",
                fontsize=7, color=INK)
    obs = report.observers
    chart = figure.add_axes([0.25, 0.58, 0.68, 0.33])
    y = np.arange(len(obs))[::-1]
    chart.errorbar(obs["personal error (′)"], y, xerr=obs["95 % interval (′)"], fmt="o", color=INK, ecolor=FIX, capsize=3)
    chart.axvline(0, color=GRID, lw=1)
    chart.set_yticks(y)
    chart.set_yticklabels(obs.observer, fontsize=7)
    chart.set_xlabel("personal error and 95 % interval (′)", fontsize=8)
    chart.grid(color=GRID, lw=0.4, axis="x")
    table_ax = figure.add_axes([0.05, 0.06, 0.9, 0.45])
    table_ax.axis("off")
    columns = ["observer", "sights", "blunders", "personal error (′)", "95 % interval (′)", "scatter (′)",
               "trend (′ per day)"]
    cells = [[f"{v:.2f}" if isinstance(v, float) else str(v) for v in obs[c]] for c in columns]
    rows = list(zip(*cells))
    table = table_ax.table(cellText=rows, colLabels=["observer", "sights", "blunders", "personal error′", "± 95 %′",
                                                     "scatter′", "trend ′/day"], loc="upper center", cellLoc="center")
    table.auto_set_font_size(False)
    table.set_fontsize(7)
    table.scale(1.0, 1.3)
    figure.text(0.07, 0.02, "navred training summary. An aid to instruction and navigation, not a sole means.",
                fontsize=7, style="italic", color=INK)
    return figure
