"""Which sights keep the ship's navigation: the ship's navigator's, and the exercises of a training log.

A training ship's log holds the watch's exercises beside the navigator's own sights. Every sight is reduced
and every group fixed alike; only the ship's fixes restart her DR, give her set and drift and her noon. A
sight is the ship's or an exercise by, in order:

1. its own ``role`` cell (``ship`` or ``exercise``);
2. the navigators named for the run (``navred days --navigator NAME``, ``process_log(navigators=...)``): their
   sights are the ship's, every other observer's an exercise;
3. a vessel whose sights are one observer's (or name none): all the ship's;
4. a vessel with several observers and none marked (a training log as written): each *round* of fixes (fixes
   by different observers within :data:`ROUND_MINUTES` of one another) is combined into one ship's fix, their
   mean weighted by their ellipses, and so are a round's lines for noon. The output says so, and how to mark
   the navigator. Guessing which observer is the navigator would be a silent misreading; leaving the ship
   without any fix would lose the DR's check; the combined round is what a training officer's own plot of the
   watch's fixes shows.

A group is the ship's unless a sight of it is an exercise. Exercise fixes are compared with the ship's position
at their time (the Day's work's exercises table).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from ..angles import wrap_180
from ..errors import NavredError
from ..io.logbook import SightLog
from ..status import SightStatus

#: Fixes by different observers within this many minutes of one another are one round (a watch's star round).
ROUND_MINUTES = 30.0

SHIP, EXERCISE = "ship", "exercise"


@dataclass(frozen=True)
class ShipsSights:
    """Each fix group's role (``ship`` or ``exercise``), the vessels whose unmarked rounds are combined, and
    what the output says about it (one line per vessel that needs one)."""

    role: dict[str, str]
    combined: frozenset[str] = frozenset()
    notes: tuple[str, ...] = ()
    vessel: dict[str, str] = field(default_factory=dict)
    observer: dict[str, str] = field(default_factory=dict)

    def is_ship(self, group: str) -> bool:
        return self.role.get(group, SHIP) == SHIP


def _group_first_rows(voyage) -> dict[str, int]:
    """Each group's first usable row (else its first row)."""
    reduced = voyage.reduced
    status = reduced["status"].to_numpy() if len(reduced) else np.zeros(0, dtype=object)
    out = {}
    for group in voyage.groups:
        usable = [int(r) for r in group.rows if status[r] != SightStatus.ERROR]
        if usable or len(group.rows):
            out[group.name] = usable[0] if usable else int(group.rows[0])
    return out


def check_navigators(observers, navigators) -> tuple[str, ...]:
    """The navigators named for the run, each matched to an observer of the log (case and spacing aside); one
    that names no observer is refused with the log's observers."""
    known = {" ".join(str(o).split()).casefold(): str(o) for o in observers if str(o)}
    matched = []
    for name in navigators or ():
        key = " ".join(str(name).split()).casefold()
        if key not in known:
            listed = ", ".join(sorted(known.values())) or "none (the log has no observer column)"
            raise NavredError(f"--navigator {name!r} names no observer of the log; its observers: {listed}")
        matched.append(known[key])
    return tuple(dict.fromkeys(matched))


def ships_sights(voyage, navigators=()) -> ShipsSights:
    """The role of every fix group of a voyage (see the module's rules) and what to say about it."""
    reduced = voyage.reduced
    if not len(reduced) or not voyage.groups:
        return ShipsSights({})
    first = _group_first_rows(voyage)
    vessels = reduced["vessel"].to_numpy(dtype=object)
    observers = reduced["observer"].to_numpy(dtype=object)
    roles = reduced["role"].to_numpy(dtype=object) if "role" in reduced.columns else np.full(len(reduced), "")
    named = set(check_navigators(set(observers.tolist()), navigators))
    status = reduced["status"].to_numpy()
    role: dict[str, str] = {}
    vessel_of = {g: str(vessels[k]) for g, k in first.items()}
    observer_of = {g: str(observers[k]) for g, k in first.items()}
    notes, combined = [], set()
    for vessel in dict.fromkeys(vessel_of.values()):
        groups = [g.name for g in voyage.groups if vessel_of.get(g.name) == vessel]
        rows = np.flatnonzero((vessels == vessel) & (status != SightStatus.ERROR))
        marked = rows[roles[rows] != ""]
        who = sorted({str(o) for o in observers[rows].tolist()})
        for name in groups:
            group_rows = next(g.rows for g in voyage.groups if g.name == name)
            own = [str(r) for r in roles[group_rows].tolist() if r]
            if own:
                role[name] = EXERCISE if EXERCISE in own else SHIP
            elif named:
                role[name] = SHIP if observer_of[name] in named else EXERCISE
            else:
                role[name] = SHIP
        ship = [g for g in groups if role[g] == SHIP]
        exercise = [g for g in groups if role[g] == EXERCISE]
        label = vessel or "the ship"
        if marked.size or named:
            keepers = sorted({observer_of[g] for g in ship if observer_of[g]})
            how = "the role column" if marked.size else "--navigator"
            notes.append(f"{label}: the ship's DR and noon are kept by the fixes of "
                         f"{', '.join(keepers) or 'the sights marked ship'} ({how}); {len(exercise)} exercise "
                         f"group{'s' if len(exercise) != 1 else ''} of {len({observer_of[g] for g in exercise})} "
                         "observer(s) are fixed and compared with the ship's position, never restarting her DR")
            if not ship:
                notes.append(f"{label}: no sight is marked as the ship's: her DR runs from her departure and position "
                             "entries alone")
        elif len([o for o in who if o]) > 1:
            combined.add(vessel)
            notes.append(f"{label}: {len(who)} observers ({', '.join(who)}) and none marked as the ship's navigator: "
                         f"each round of their fixes (within {ROUND_MINUTES:.0f} min of one another) is combined into "
                         "one ship's fix, their mean weighted by their ellipses, and so are a round's lines at noon; "
                         "mark the navigator (column role: ship or exercise, or --navigator NAME) to keep the DR by "
                         "the navigator's fixes alone")
    return ShipsSights(role, frozenset(combined), tuple(notes), vessel_of, observer_of)


def combined_rounds(times_ns: np.ndarray, groups: list[str], observer_of: dict[str, str]) -> list[list[int]]:
    """Fixes (their times, in time order, and groups) as rounds: a fix joins the round before it when it is within
    :data:`ROUND_MINUTES` of that round's first fix and by an observer not yet in it."""
    rounds: list[list[int]] = []
    for k, t in enumerate(np.asarray(times_ns, dtype=np.int64).tolist()):
        if rounds:
            current = rounds[-1]
            start = int(times_ns[current[0]])
            seen = {observer_of.get(groups[j], "") for j in current}
            if t - start <= ROUND_MINUTES * 60e9 and observer_of.get(groups[k], "") not in seen:
                current.append(k)
                continue
        rounds.append([k])
    return rounds


def weighted_mean_position(lat_deg: np.ndarray, lon_deg: np.ndarray, cov_nm2: np.ndarray
                           ) -> tuple[float, float, np.ndarray]:
    """The mean of positions (degrees) weighted by their covariances (north-east nm², 1 σ), and its covariance: the
    least-squares combination of independent estimates (any estimation text). Fixes taken together by several
    observers share the ship's motion but not their personal errors; the covariance returned takes them as
    independent, so it is the smallest the round can claim."""
    lat0, lon0 = float(lat_deg[0]), float(lon_deg[0])
    north = (np.asarray(lat_deg, dtype=float) - lat0) * 60.0
    east = wrap_180(np.asarray(lon_deg, dtype=float) - lon0) * 60.0 * np.cos(np.radians(lat0))
    cov = np.asarray(cov_nm2, dtype=float)
    good = np.array([np.all(np.isfinite(c)) and np.linalg.det(c) > 0 for c in cov])
    if not good.any():
        return float(np.mean(lat_deg)), float(lon0 + np.mean(east) / 60.0 / np.cos(np.radians(lat0))), cov[0]
    inverse = np.linalg.inv(cov[good])
    total = np.linalg.inv(inverse.sum(axis=0))
    mean = total @ np.einsum("kij,kj->i", inverse, np.stack([north[good], east[good]], axis=1))
    lat = lat0 + mean[0] / 60.0
    lon = float(wrap_180(lon0 + mean[1] / 60.0 / np.cos(np.radians(lat0))))
    return float(lat), float(lon), total


def split_mixed_groups(log: SightLog, navigators: tuple[str, ...] = ()) -> SightLog:
    """A fix group that holds the ship's sights (the navigators', or rows marked ship) and another observer's is
    split by observer: the others' rows become a group of their own, '<group> (<observer>)', so that no exercise
    sight ever enters the ship's position; a note names each group split. Nothing changes when no navigator is
    named and no row carries a role."""
    table = log.table
    if not len(table) or "observer" not in table.columns:
        return log
    roles = table["role"].fillna("").astype(str).to_numpy(dtype=object) if "role" in table.columns \
        else np.full(len(table), "", dtype=object)
    if not navigators and not (roles != "").any():
        return log
    observers = table["observer"].fillna("").astype(str).to_numpy(dtype=object)
    groups = table["fix_group"].fillna("").astype(str).to_numpy(dtype=object)
    keeper = np.where(roles != "", roles == "ship", np.isin(observers, list(navigators)))
    renamed = groups.copy()
    notes = []
    for name in dict.fromkeys(groups[groups != ""].tolist()):
        rows = np.flatnonzero(groups == name)
        if not keeper[rows].any() or keeper[rows].all():
            continue
        others = rows[~keeper[rows]]
        for who in dict.fromkeys(observers[others].tolist()):
            mine = others[observers[others] == who]
            renamed[mine] = f"{name} ({who or 'no observer'})"
        ship_names = ", ".join(sorted({o for o in observers[rows[keeper[rows]]].tolist() if o})) or "the ship"
        other_names = ", ".join(sorted({o or "no observer" for o in observers[others].tolist()}))
        notes.append(f"fix group {name} held the sights of {ship_names} and of {other_names}: split by observer, the "
                     f"ship's fix from {ship_names}'s sights alone, the others' an exercise of their own "
                     f"({', '.join(sorted({renamed[k] for k in others.tolist()}))})")
    if not notes:
        return log
    return replace(log, table=table.assign(fix_group=renamed), notes=tuple(dict.fromkeys([*log.notes, *notes])))


__all__ = ["split_mixed_groups", "ShipsSights", "ships_sights", "check_navigators", "combined_rounds",
           "weighted_mean_position", "ROUND_MINUTES", "SHIP", "EXERCISE"]
