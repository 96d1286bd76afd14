"""Trust in the day's work's positions: each estimated position (EP) worked from the DR carried from the last
known position (the last trusted fix, else the departure), not from the log's own DR column; the uncertainty of
each EP and noon position, said beside it; and a flag beside any noon position, EP or day's run a master would
not believe, with its cause. Edge code over :mod:`navred.reckoning` and :mod:`navred.triangle` (the core).

- **The EP's DR**: the DR track of :func:`navred.jobs.shiptrack.vessel_tracks`, restarted at each of the ship's
  trusted fixes (a fix that cannot be trusted never restarts it), carried with the current the DR carries (a
  logged current, or with ``--carry-current`` the set and drift found at each fix). A single sight's line is
  worked again from that DR (Hc and Zn at the DR from the sight's own GHA, Dec and Ho: the intercept method, common
  practice) and the EP is the foot of the perpendicular from it; the line of a group (several sights of one body, or
  a latitude) is the same line, and the EP the foot of the perpendicular from that DR onto it.
- **Uncertainty** (common practice, the model of navred's fixes): a line is good to a mile (1 σ,
  :data:`navred.jobs.noons.LINE_SIGMA_NM`) across it; along it the EP is only as good as the DR, whose error grows
  from the known position's own by 0.3 kn an hour and 2 % of the miles run
  (:data:`navred.fixstats.DR_ERROR_KN`, :data:`navred.fixstats.DR_ERROR_FRACTION`). Stated at 95 %: ×1.96 on each
  axis of an EP, and the 95 % circle (×2.45 of the 1 σ each way) of a noon position.
- **Plausibility** (a figure a master would not believe is flagged, never dropped): a noon position or EP farther
  from the DR carried to its time than :data:`PLAUSIBLE_SIGMAS` times the DR's and the line's error together (and
  at least :data:`PLAUSIBLE_MIN_NM`); a noon resting on a line of a fix that cannot be trusted; a day's run whose run
  made good differs from the run through the water by more than :data:`navred.jobs.shiptrack.MAX_CURRENT_KN` over
  its hours (more than any current of the sea), or that starts or ends at a flagged noon. A flagged noon or EP
  never restarts the DR (neither ever does: only fixes and position entries do).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..angles import wrap_180
from ..constants import NS_PER_HOUR
from ..fixstats import DR_ERROR_FRACTION, DR_ERROR_KN
from ..reckoning import DRTrack, estimated_position
from ..sailings import rhumb_inverse
from ..sensechecks import UNKNOWN_DR_AGE_H
from ..status import SightStatus
from ..triangle import computed_altitude_azimuth
from .frames import utc64
from .shiptrack import (
    LOGGED_DR,
    MAX_CURRENT_KN,
    position_text,
    stamp,
    untrusted_fixes,
    water_run_nm,
)

#: A position farther from the DR carried to its time than this many σ of the DR's and the line's error together
#: is flagged (3 σ: a 1-in-90 chance for a good position, on the two axes together; common practice).
PLAUSIBLE_SIGMAS = 3.0
#: ... and never under this many miles (a position this close to the DR is never flagged).
PLAUSIBLE_MIN_NM = 5.0
#: 95 % on one axis of a normal error (×1.96 of its σ), and the radius of the 95 % circle of an error of one σ
#: each way (√(−2 ln 0.05) = 2.45 σ; a published property of the normal distribution: Rayleigh's).
AXIS_95 = 1.959964
CIRCLE_95 = float(np.sqrt(-2.0 * np.log(0.05)))
#: The line of position's own error across it (1 σ, nm): a mile (common practice; the noon's rule).
LINE_SIGMA_NM = 1.0

#: The columns the day's work adds to the estimated positions and to the noons.
EP_TRUST_COLUMNS = ["dr_used", "across_95_nm", "along_95_nm", "uncertainty", "check"]
NOON_TRUST_COLUMNS = ["noon_95_nm", "noon_uncertainty", "noon_check", "run_check"]

UNCERTAINTY_COVERS = ("95 %: the line a mile (1 σ) across; the DR's error since the {base}, 0.3 kn an hour and 2 % "
                      "of the miles run (common practice); not a blunder in the sight or the log")
NOON_COVERS = ("95 % circle: the fix's or lines' own error (a mile a line, 1 σ) and the DR's over the run to noon, "
               "0.3 kn an hour and 2 % of the miles (common practice); not a blunder in a sight or the log")


def _dr_at(track: DRTrack, when: np.ndarray):
    """The DR carried to each instant from the known position before it: (lat, lon, the known position's label,
    its instant, the DR's error (1 σ each way, nm: the known position's own and 0.3 kn an hour and 2 % of the
    miles run since)); NaN and '' where the track has no DR yet."""
    when = np.asarray(when, dtype=np.int64)
    lat, lon, origin = track.positions(when)
    index = np.array([track.known_index(int(o)) if o >= 0 else -1 for o in origin.tolist()], dtype=int)
    start = np.where(index >= 0, track.known_ns[np.maximum(index, 0)], when)
    hours = np.abs(when - start) / NS_PER_HOUR
    water = track.through_water if track.through_water is not None else track
    miles = np.abs(water_run_nm(water, np.minimum(start, when), np.maximum(start, when)))
    own = np.zeros(when.size)
    if track.known_cov_nm2 is not None and len(track.known_cov_nm2):
        cov = np.asarray(track.known_cov_nm2)[np.maximum(index, 0)]
        own = np.trace(cov.reshape(-1, 2, 2), axis1=1, axis2=2) / 2.0 if cov.ndim == 3 else np.zeros(when.size)
    labels = [track.known_label[i] if i >= 0 else "" for i in index.tolist()]
    # a DR the log writes (no fix behind it) is itself a DR of unknown age: taken as UNKNOWN_DR_AGE_H old, as the
    # fix's own check of its distance from the DR takes it (navred.sensechecks)
    logged = np.array([str(label).startswith(LOGGED_DR) for label in labels], dtype=bool)
    own = own + np.where(logged, (DR_ERROR_KN * UNKNOWN_DR_AGE_H) ** 2, 0.0)
    sigma = np.sqrt(np.maximum(own, 0.0) + (DR_ERROR_KN * hours + DR_ERROR_FRACTION * miles) ** 2)
    return lat, lon, labels, start, np.where(index >= 0, sigma, np.nan)


def _dr_words(label: str, start: int, when: int, current: str) -> str:
    """'the DR from the fix stars 2026-06-12 at 06-12 06:12 UTC, run 4.6 h (no current in it)'."""
    hours = abs(when - start) / NS_PER_HOUR
    return f"the DR from the {label} at {stamp(start)[5:16]} UTC, run {hours:.1f} h ({current})"


def allowed_nm(sigma_nm) -> np.ndarray:
    """How far a position may lie from the DR carried to its time before it is flagged (nm)."""
    return np.maximum(PLAUSIBLE_MIN_NM, PLAUSIBLE_SIGMAS * np.hypot(np.asarray(sigma_nm, dtype=float),
                                                                     LINE_SIGMA_NM))


#: A logged DR is said to have a hemisphere letter wrong when the other letter brings it this much nearer the DR
#: carried (to under a twentieth of the distance, or within the DR's reach).
HEMISPHERE_RATIO = 0.05


def _hemisphere_hint(lat: float, lon: float, dr_lat: float, dr_lon: float, limit: float) -> str:
    """Which hemisphere letter, if flipped, brings a logged DR near the DR carried (or '')."""
    far, _ = rhumb_inverse(lat, lon, dr_lat, dr_lon)
    limit = max(limit, HEMISPHERE_RATIO * float(far))
    for flip_lat, flip_lon, words in ((1, -1, "its longitude written E for W, or W for E?"),
                                      (-1, 1, "its latitude written N for S, or S for N?"),
                                      (-1, -1, "both its N/S and E/W written wrong?")):
        d, _ = rhumb_inverse(lat * flip_lat, lon * flip_lon, dr_lat, dr_lon)
        if float(d) <= limit:
            return words
    return ""


def logged_dr_causes(voyage, vessel: str, track: DRTrack, start_ns: int, end_ns: int,
                     rows: np.ndarray | None = None) -> list[str]:
    """The vessel's sights between two instants (or the sights ``rows``, positions in the reduced table) whose
    logged DR lies farther from the DR carried to their time than it could be out: each 'row 15's logged DR
    37° 07.0′ N 037° 07.2′ E lies 3556 nm from the DR carried from the fix ... (its longitude written E for W, or
    W for E?)'."""
    reduced = voyage.reduced
    if not len(reduced):
        return []
    if rows is not None:
        k = np.asarray(rows, dtype=int)
        when = np.zeros(len(reduced), dtype=np.int64)
        when[k] = utc64(reduced["sight_utc"].iloc[k]).astype(np.int64)
    else:
        when = utc64(reduced["sight_utc"]).astype(np.int64)
        mine = ((reduced["vessel"].to_numpy(dtype=object) == vessel)
                & (reduced["status"].to_numpy() != SightStatus.ERROR) & (when >= start_ns) & (when <= end_ns))
        k = np.flatnonzero(mine)
    if not k.size:
        return []
    dr_lat, dr_lon, labels, _, sigma = _dr_at(track, when[k])
    lat = reduced["dr_lat_deg"].to_numpy(dtype=float)[k]
    lon = reduced["dr_lon_deg"].to_numpy(dtype=float)[k]
    ok = np.isfinite(dr_lat) & np.isfinite(lat) & np.isfinite(lon)
    if not ok.any():
        return []
    d = np.full(k.size, np.nan)
    d[ok], _ = rhumb_inverse(lat[ok], lon[ok], dr_lat[ok], dr_lon[ok])
    limit = allowed_nm(sigma)
    out = []
    for j in np.flatnonzero(ok & (d > limit)).tolist():
        hint = _hemisphere_hint(lat[j], lon[j], dr_lat[j], dr_lon[j], float(limit[j]))
        out.append(f"row {reduced['row'].iat[int(k[j])]}'s logged DR {position_text(lat[j], lon[j])} lies "
                   f"{d[j]:.0f} nm from the DR carried from the {labels[j]}" + (f" ({hint})" if hint else ""))
    return out


def rework_estimated(voyage, estimated: list[dict], tracks: dict[str, DRTrack], current_words) -> list[dict]:
    """Each EP worked from the DR carried from the vessel's last known position (module doc), with the DR it used,
    its uncertainty and any flag; an EP whose vessel has no DR yet keeps the log's DR and says so.
    ``current_words(vessel, track, instant)`` names the current the DR carries there ('' for none)."""
    if not estimated:
        return estimated
    reduced = voyage.reduced
    groups = {g.name: g for g in voyage.groups}
    status = reduced["status"].to_numpy() if len(reduced) else np.zeros(0, dtype=object)
    out = []
    for e in estimated:
        e = dict(e)
        track = tracks.get(e["vessel"])
        when = int(pd.Timestamp(e["utc"]).value)
        e.update({"dr_used": "the log's own DR column (no known position before it to carry a DR from)",
                  "across_95_nm": AXIS_95 * LINE_SIGMA_NM, "along_95_nm": np.nan, "uncertainty": "", "check": ""})
        base = None if track is None else _dr_at(track, np.array([when]))
        if base is None or not np.isfinite(base[0][0]):
            e["uncertainty"] = (f"± {AXIS_95 * LINE_SIGMA_NM:.1f} nm across the line; along it not known (the log's "
                                "DR has no stated error)")
            out.append(e)
            continue
        dr_lat, dr_lon, label, start, sigma = (float(base[0][0]), float(base[1][0]), base[2][0], int(base[3][0]),
                                               float(base[4][0]))
        current = current_words(e["vessel"], track, when) or "no current in it"
        used = _dr_words(label, start, when, current)
        group = groups.get(e["fix_group"])
        rows = group.rows[status[group.rows] != SightStatus.ERROR] if group is not None else np.zeros(0, int)
        if group is not None and group.fix is None and rows.size == 1:
            r = reduced.iloc[int(rows[0])]
            hc, zn = computed_altitude_azimuth(dr_lat, dr_lon, float(r["gha_deg"]), float(r["dec_deg"]))
            intercept = (float(r["ho_deg"]) - float(hc)) * 60.0
            lat, lon = estimated_position(dr_lat, dr_lon, intercept, float(zn))
            e["from"] = (f"the foot of the perpendicular from {used} to the line (the line worked again from that DR, "
                         f"intercept {abs(intercept):.1f} nm {'toward' if intercept >= 0 else 'away'} on {float(zn):05.1f}°)")
        elif group is not None and group.fix is not None:
            fix = group.fix
            toward = fix.line_toward_deg if fix.line_toward_deg is not None else (fix.line_bearing_deg or 0.0) + 90.0
            d, bearing = rhumb_inverse(dr_lat, dr_lon, fix.lat_deg, fix.lon_deg)
            intercept = float(d) * float(np.cos(np.radians(float(bearing) - float(toward))))
            lat, lon = estimated_position(dr_lat, dr_lon, intercept, float(toward))
            e["from"] = f"the {fix.kind} nearest {used}"
        else:
            out.append(e)
            continue
        lat, lon = float(lat), float(lon)
        e.update({"lat_deg": lat, "lon_deg": float(wrap_180(lon)), "estimated_position": position_text(lat, lon),
                  "dr_used": used, "along_95_nm": AXIS_95 * sigma})
        e["uncertainty"] = (f"± {AXIS_95 * LINE_SIGMA_NM:.1f} nm across the line, ± {AXIS_95 * sigma:.1f} nm along it ("
                            + UNCERTAINTY_COVERS.format(base=label) + ")")
        limit = float(allowed_nm(sigma))
        causes = logged_dr_causes(voyage, e["vessel"], track, when, when, rows=rows)
        if abs(intercept) > limit:
            e["check"] = (f"CANNOT BE TRUSTED: the line lies {abs(intercept):.0f} nm from the DR, more than the "
                          f"{limit:.0f} nm it could be out (3 σ): check the sight, its time and the DR")
        if causes:
            e["check"] = "; ".join(([e["check"]] if e["check"] else []) + [
                c + ": not used (the EP is worked from the DR carried)" for c in causes])
        out.append(e)
    return out


def noon_trust(voyage, noons: list[dict], tracks: dict[str, DRTrack]) -> list[dict]:
    """The noon rows with their 95 % uncertainty and the flags on the noon position and the day's run (module
    doc); each row's ``noon_sigma_nm`` (1 σ each way) is the noon's own error."""
    left_out = {v: {name: why for name, why in items} for v, items in untrusted_fixes(voyage).items()}
    out = []
    flagged_before = {}
    for n in noons:
        n = dict(n)
        vessel = n["vessel"]
        sigma = float(n.pop("noon_sigma_nm", np.nan))
        n.update({"noon_95_nm": CIRCLE_95 * sigma if np.isfinite(sigma) else np.nan,
                  "noon_uncertainty": (f"within {CIRCLE_95 * sigma:.1f} nm ({NOON_COVERS})" if np.isfinite(sigma)
                                       else ""),
                  "noon_check": "", "run_check": ""})
        track = tracks.get(vessel)
        when = int(pd.Timestamp(n["noon_utc"]).value)
        reasons = []
        for name, why in left_out.get(vessel, {}).items():
            if f"(in the fix {name})" in n["noon_from"]:
                reasons.append(f"it rests on a line of the fix {name}, which cannot be trusted ({first_clause(why)})")
        reckoned = str(n["noon_from"]).startswith(("DR ", "EP ("))
        if track is not None and np.isfinite(n["lat_deg"]) and not reckoned:
            dr_lat, dr_lon, labels, start, dr_sigma = _dr_at(track, np.array([when]))
            if np.isfinite(dr_lat[0]):
                d, _ = rhumb_inverse(n["lat_deg"], n["lon_deg"], dr_lat[0], dr_lon[0])
                limit = float(allowed_nm(dr_sigma[0]))
                if float(d) > limit:
                    reasons.append(f"it lies {float(d):.0f} nm from the DR carried from the {labels[0]} "
                                   f"({(when - int(start[0])) / NS_PER_HOUR:.1f} h), more than the {limit:.0f} nm "
                                   "the DR could be out (3 σ)")
                    reasons += logged_dr_causes(voyage, vessel, track, when - 7 * NS_PER_HOUR, when + NS_PER_HOUR)
        if reasons:
            n["noon_check"] = ("CANNOT BE TRUSTED: " + "; ".join(dict.fromkeys(reasons)) + ": the DR is not restarted "
                               "from it; check the sights it rests on")
        if np.isfinite(n.get("run_nm", np.nan)) and np.isfinite(n.get("hours", np.nan)) and n["hours"] > 0:
            run_reasons = []
            if flagged_before.get(vessel):
                run_reasons.append("it starts at the last noon, which cannot be trusted")
            if n["noon_check"]:
                run_reasons.append("it ends at this noon, which cannot be trusted")
            water = n.get("through_water_nm", np.nan)
            if np.isfinite(water):
                gap_kn = abs(n["run_nm"] - water) / n["hours"]
                if gap_kn > MAX_CURRENT_KN:
                    run_reasons.append(f"the speed made good {n['speed_made_good_kn']:.1f} kn is more than the "
                                       f"{water / n['hours']:.1f} kn through the water + {MAX_CURRENT_KN:.0f} kn "
                                       "(any current of the sea)")
            if run_reasons:
                n["run_check"] = "NOT BELIEVABLE: " + "; ".join(run_reasons)
        flagged_before[vessel] = bool(n["noon_check"])
        out.append(n)
    return out



def first_clause(text: str) -> str:
    """A reason's first clause: the text before the first colon outside brackets (a time's '06:56' and a
    bracketed aside are kept whole).

    >>> first_clause("row 8 (Sun) carries a slip (from the fix at 06:56 UTC): with 2 sights nothing checks it")
    'row 8 (Sun) carries a slip (from the fix at 06:56 UTC)'
    """
    depth = 0
    for k, char in enumerate(text):
        depth += {"(": 1, ")": -1}.get(char, 0)
        if char == ":" and depth <= 0 and text[k + 1:k + 2] in (" ", ""):
            return text[:k]
    return text

__all__ = ["first_clause", "rework_estimated", "noon_trust", "logged_dr_causes", "allowed_nm", "PLAUSIBLE_SIGMAS",
           "PLAUSIBLE_MIN_NM", "AXIS_95", "CIRCLE_95", "LINE_SIGMA_NM", "EP_TRUST_COLUMNS", "NOON_TRUST_COLUMNS"]
