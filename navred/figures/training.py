"""The pictures of a training report (matplotlib, imported when drawn): an observer's errors against time
with their histogram, and one printable page of the figures across observers."""

from __future__ import annotations

import numpy as np

from .plotting import FIX, GRID, INK, PAPER


def observer_figure(report, observer: str):
    """Error against time and a histogram for one observer (matplotlib)."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    part = report.sights[(report.sights.observer == observer) & report.sights.within_track]
    row = report.observers[report.observers.observer == observer].iloc[0]
    figure = Figure(figsize=(8.0, 3.4), dpi=100, facecolor=PAPER)
    left = figure.add_axes([0.08, 0.17, 0.56, 0.68], facecolor=PAPER)
    right = figure.add_axes([0.72, 0.17, 0.25, 0.68], facecolor=PAPER)
    kinds = {"star": "o", "planet": "s", "Sun": "D", "Moon": "^"}
    for kind, marker in kinds.items():
        sub = part[part["body_kind"] == kind]
        if len(sub):
            left.plot(sub.sight_utc.dt.tz_convert(None), sub.error_arcmin, marker, ms=4, color=INK, alpha=0.7, label=kind)
    blunders = part[part.blunder]
    if len(blunders):
        left.plot(blunders.sight_utc.dt.tz_convert(None), blunders.error_arcmin, "x", ms=8, color=FIX, label="over 5′")
    left.axhline(0, color=GRID, lw=1)
    if np.isfinite(row["personal_error_arcmin"]):
        left.axhline(row["personal_error_arcmin"], color=FIX, lw=1, ls="--", label="personal error")
    left.set_ylabel("error Ho − Hc(reference) (′)", fontsize=7)
    left.tick_params(labelsize=6)
    left.legend(fontsize=6, frameon=False, ncol=3)
    left.grid(color=GRID, lw=0.4)
    good = part.error_arcmin[~part.blunder]
    right.hist(good, bins=max(5, min(20, len(good) // 3)), color=INK, alpha=0.8)
    right.set_xlabel("error (′), blunders left out", fontsize=7)
    right.tick_params(labelsize=6)
    figure.suptitle(f"{observer}: {int(row['sights'])} sights, personal error {hundredths(row['personal_error_arcmin'], True)}′ "
                    f"± {row['interval_95_arcmin']:.2f}′ (95 %), scatter {row['scatter_arcmin']:.2f}′, "
                    f"blunders {int(row['blunders'])}", fontsize=8, color=INK, x=0.08, ha="left")
    return figure


def hundredths(value: float, signed: bool) -> str:
    """A figure to 0.01′, signed where the sign says which way, never a signed zero ('-0.00')."""
    text = f"{value:+.2f}" if signed else f"{value:.2f}"
    return "0.00" if text in ("-0.00", "+0.00") else text


def summary_figure(report, title: str = "Training summary"):
    """One printable page across observers: a table of the figures and their 95 % intervals."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    figure = Figure(figsize=(8.27, 11.69), dpi=100, facecolor="white")  # A4 portrait
    figure.text(0.07, 0.96, title, fontsize=14, weight="bold", color=INK)
    figure.text(0.07, 0.93, f"Reference track {report.track_span[0]} to {report.track_span[1]} UTC. Error = Ho − Hc "
                "at the reference position.\nPersonal error: mean error of the sights within 5′, with its 95 % "
                "interval. Blunders: errors over 5′. Trend: change of the error per day.",
                fontsize=7, color=INK)
    obs = report.observers
    chart = figure.add_axes([0.25, 0.58, 0.68, 0.33])
    y = np.arange(len(obs))[::-1]
    chart.errorbar(obs["personal_error_arcmin"], y, xerr=obs["interval_95_arcmin"], fmt="o", color=INK, ecolor=FIX, capsize=3)
    chart.axvline(0, color=GRID, lw=1)
    chart.set_yticks(y)
    chart.set_yticklabels(obs.observer, fontsize=7)
    chart.set_xlabel("personal error and 95 % interval (′)", fontsize=8)
    chart.grid(color=GRID, lw=0.4, axis="x")
    table_ax = figure.add_axes([0.05, 0.06, 0.9, 0.45])
    table_ax.axis("off")
    columns = ["observer", "sights", "blunders", "personal_error_arcmin", "interval_95_arcmin", "scatter_arcmin",
               "trend_arcmin_per_day"]
    reasons = {"personal_error_arcmin": "no good sight", "interval_95_arcmin": "one sight",
               "scatter_arcmin": "one sight", "trend_arcmin_per_day": "none (see below)"}
    signed = {"personal_error_arcmin", "trend_arcmin_per_day"}
    cells = [[(hundredths(v, c in signed) if v == v else reasons.get(c, "")) if isinstance(v, float) else str(v)
              for v in obs[c]] for c in columns]
    rows = list(zip(*cells))
    table = table_ax.table(cellText=rows, colLabels=["observer", "sights", "blunders", "personal error′", "± 95 %′",
                                                     "scatter′", "trend ′/day"], loc="upper center", cellLoc="center")
    table.auto_set_font_size(False)
    table.set_fontsize(7)
    table.scale(1.0, 1.3)
    if obs["trend_arcmin_per_day"].isna().any():
        figure.text(0.07, 0.045, "trend ′/day: none where an observer has fewer than 3 good sights or all within a day",
                    fontsize=7, color=INK)
    figure.text(0.07, 0.02, "navred training summary. An aid to instruction and navigation, not a sole means.",
                fontsize=7, style="italic", color=INK)
    return figure
