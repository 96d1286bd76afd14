"""The fix groups of a sight log: the log's own label, or, where a row gives none, one observer's sights of one
vessel less than two hours apart; and one spelling per observer. Used by :mod:`navred.io.logbook`."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from ..constants import NS_PER_HOUR

#: Sights closer together than this fall in one fix group when the log gives none (issue 5).
DEFAULT_GROUP_GAP_HOURS = 2.0


def observer_names(names: np.ndarray) -> np.ndarray:
    """One spelling per observer: names equal but for case and spacing take the first one written."""
    codes, uniques = pd.factorize(names)
    first: dict[str, str] = {}
    spelled = np.array([first.setdefault(" ".join(str(u).split()).casefold(), " ".join(str(u).split()))
                        for u in uniques], dtype=object)
    return spelled[codes] if len(uniques) else np.full(len(names), "", dtype=object)


def automatic_fix_groups(table: pd.DataFrame, ok: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The fix group of each row: the log's label, or, where it gives none, one observer's sights of
    one vessel less than two hours apart (named after the first sight's time and the observer).
    Labels are kept apart by file when several files are read."""
    has = table["fix_group_given"].to_numpy(dtype=bool)
    labels = np.where(has, table["fix_group"].to_numpy(dtype=object), "").astype(object)
    auto = ok & ~has
    if auto.any():
        rows = np.flatnonzero(auto)
        times = table["sight_utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]")[rows]
        who = table[["source", "vessel", "observer"]].iloc[rows]
        key_codes = who.groupby(list(who.columns), sort=False).ngroup().to_numpy()
        ticks = times.astype(np.int64)
        order = np.lexsort((ticks, key_codes))
        gap = np.diff(ticks[order]) > DEFAULT_GROUP_GAP_HOURS * NS_PER_HOUR
        new = np.concatenate([[True], gap | (key_codes[order][1:] != key_codes[order][:-1])])
        ids = np.empty(rows.size, dtype=int)
        ids[order] = np.cumsum(new) - 1
        leads = order[new]  # the first sight of each group, in group order
        stamps = np.datetime_as_string(times[leads].astype("datetime64[m]"))
        observers = who["observer"].to_numpy(dtype=object)[leads]
        names = np.array([f"{t[:10]} {t[11:13]}{t[14:16]}Z" + (f" {o}" if o else "")
                          for t, o in zip(stamps, observers)], dtype=object)
        labels[rows] = names[ids]
    labels = ships_apart(table, labels, ok)
    if table["source"].nunique() > 1:
        files = table["source"].map(lambda s: Path(s).name).to_numpy(dtype=object)
        labels = np.where(labels != "", files + ": " + labels.astype(str), labels).astype(object)
    return labels, has


def ships_apart(table: pd.DataFrame, labels: np.ndarray, ok: np.ndarray) -> np.ndarray:
    """A fix group's label (written in the log or made for it) that two named vessels share names two groups:
    each such row's label is prefixed by its vessel, since no fix is made of two ships' sights (two officers
    of the watch, both logged "OOW", at the same minute). A row naming no vessel is taken as the others'."""
    vessels = table["vessel"].to_numpy(dtype=object)
    named = ok & (vessels != "") & (labels != "")
    if not named.any():
        return labels
    sources = table["source"].to_numpy(dtype=object)
    pairs = pd.DataFrame({"source": sources[named], "label": labels[named], "vessel": vessels[named]})
    counts = pairs.groupby(["source", "label"], sort=False)["vessel"].nunique()
    shared = counts.index[counts.to_numpy() > 1]
    if not len(shared):
        return labels
    keys = pd.MultiIndex.from_arrays([sources, labels])
    rows = np.flatnonzero(named & keys.isin(shared))
    out = labels.copy()
    out[rows] = [f"{vessels[r]}: {labels[r]}" for r in rows]
    return out
