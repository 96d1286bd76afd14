"""The causes named when a sight's intercept is huge or a fix lands far from its DR: each of the usual slips
(a zone description not the DR's zone or of the wrong sign, the hour one out, am for pm, a day out, the wrong
limb, a whole degree or ten misread in Hs) is undone on the sight, and a slip is named only when undoing it
leaves an intercept within SLIP_FIT_NM. Used by the reduction (each flagged row's note) and by every fix (the
fix's warning), alike for every command and the API."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from ..angles import wrap_180
from ..grosserrors import distrust
from ..reckoning import zone_description_h
from ..status import Distrust
from ..triangle import distance_bearing

#: a slip fits a sight when undoing it leaves an intercept within this (nautical miles; common practice: a DR
#: carried a day or so is seldom further out; 15 nm keeps a wrong limb, 32′ at the Sun, apart from a degree
#: misread, 60 nm)
SLIP_FIT_NM = 15.0
#: the slips named beside the one that fits best: those that fit within this of it too (nautical miles), which
#: the sight alone cannot tell apart (a star's date a day out moves it as its Hs a degree out may)
ALSO_FITS_NM = 5.0
#: the words that open a flagged row's note when no single slip fits
NO_SLIP_WORDS = "no single slip (zone, hour, am/pm, day, limb, whole degrees) accounts for it"


def zone_sign_suspects(frame: pd.DataFrame, flagged: np.ndarray, *, ho_deg=None, hc_deg=None, sd_arcmin=None,
                       limb=None, fitted_only: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """The rows among ``flagged`` (a huge intercept, a body below the horizon, a fix far from its DR) and for
    each the slips that account for its intercept (:data:`SLIP_FIT_NM`): each slip is undone on the sight (its
    Hc worked again at the time shifted, its Ho moved by the limb's 2 × SD or the degrees) and named only where
    what is left of the intercept is within SLIP_FIT_NM, the closest first (a ZD of the wrong sign first of
    all), and beside the closest only those within ALSO_FITS_NM of it. A zone description that is not the DR's nautical zone (ZD = longitude west / 15°, rounded; common
    practice) is named only where it fits: a ship may keep another zone. ``ho_deg``, ``hc_deg``, ``sd_arcmin``,
    ``limb`` (every row's; by default the frame's columns); ``fitted_only``: leave out the rows no slip fits
    (else their words say so)."""
    rows = np.flatnonzero(flagged)
    def column(name, given, default=np.nan):
        if given is not None:
            return np.asarray(given)[rows]
        return frame[name].to_numpy()[rows] if name in frame.columns else np.full(rows.size, default, dtype=object)

    empty = rows[:0], np.zeros(0, dtype=object)
    if not rows.size or "utc_jd1" not in frame.columns:
        return empty
    ho = column("ho_deg", ho_deg).astype(float)
    hc = column("hc_deg", hc_deg).astype(float)
    sd = column("sd_arcmin", sd_arcmin).astype(float)
    limbs = column("limb", limb, "").astype(str)
    bodies = column("body_name", None, "").astype(str)
    horizon = column("horizon", None, "sea").astype(str)
    zd = column("zone_description_used_h", None).astype(float)
    lat, lon = column("dr_lat_deg", None).astype(float), column("dr_lon_deg", None).astype(float)
    ok = np.isfinite(ho) & np.isfinite(hc) & np.isfinite(lat) & np.isfinite(lon)
    rows, ho, hc, sd, limbs, bodies, horizon, zd, lat, lon = (
        v[ok] for v in (rows, ho, hc, sd, limbs, bodies, horizon, zd, lat, lon))
    if not rows.size:
        return empty
    intercept = (ho - hc) * 60.0
    with np.errstate(invalid="ignore"):
        nautical = zone_description_h(lon)  # the one zone rule (boundaries, 180°, no −0)
        zoned = np.isfinite(zd) & (zd != nautical) & (np.abs(lon) < 172.5)  # not by the date line
        wrong_side = np.isfinite(zd) & (zd * nautical < 0) & (np.abs(lon) < 172.5)
    # the time slips: the hours the logged UTC would be short of the true one (a ZD of the wrong sign, the DR's
    # nautical zone kept, then the hour, am/pm and the day)
    shifts = [np.where(wrong_side, -2.0 * zd, np.nan), np.where(zoned & (nautical != -zd), nautical - zd, np.nan)]
    shifts += [np.full(rows.size, float(h)) for h in (1, -1, 12, -12, 24, -24)]
    left = [_intercept_at(frame, rows, bodies, lat, lon, ho, h) for h in shifts]
    # a zone description whose sign disagrees with the DR's hemisphere may be right and the DR's longitude written
    # E for W: the sight worked at the time as logged from the DR's longitude mirrored
    mirrored = _intercept_at(frame, rows, bodies, lat, -lon, ho, np.where(wrong_side, 0.0, np.nan))
    found: list[list[tuple[int, float, str]]] = [[] for _ in rows]
    for k, words, rest in _odd_hemisphere(frame, rows, bodies, lat, lon, ho):
        found[k].append((0, rest, words))
    for k in range(rows.size):
        for which, (h, rest) in enumerate(zip(shifts, left)):
            if not np.isfinite(h[k]) or not np.isfinite(rest[k]) or abs(rest[k]) > SLIP_FIT_NM:
                continue
            if which > 1 and any(np.isfinite(shifts[z][k]) and shifts[z][k] == h[k] for z in (0, 1)):
                continue  # the zone's own words already say it
            words = (_sign_words(zd[k], lon[k], nautical[k]) if which == 0 else
                     _zone_words(zd[k], lon[k], nautical[k]) if which == 1 else _time_words(h[k]))
            found[k].append((0 if which == 0 else 1, abs(rest[k]), words))
        if (np.isfinite(mirrored[k]) and abs(mirrored[k]) <= SLIP_FIT_NM
                and not (np.isfinite(left[0][k]) and abs(left[0][k]) <= SLIP_FIT_NM)):
            # the other reading of the same disagreement, named only where the ZD's sign undone does not fit
            found[k].append((0, abs(mirrored[k]), _mirror_words(zd[k], lon[k], nautical[k], mirrored[k])))
        if bodies[k] in ("Sun", "Moon") and horizon[k] != "bubble" and np.isfinite(sd[k]) and sd[k] != 0:
            upper = limbs[k] == "upper"
            rest = intercept[k] + (2 if upper else -2) * abs(sd[k])
            if abs(rest) <= SLIP_FIT_NM:
                found[k].append((1, abs(rest), _limb_words(upper, 2 * abs(sd[k]))))
        for degrees in (1, -1, 10, -10):
            rest = intercept[k] - 60.0 * degrees
            if abs(rest) <= SLIP_FIT_NM:
                found[k].append((1, abs(rest), _degree_words(degrees)))
    texts = []
    for k in range(rows.size):
        ranked = sorted(found[k], key=lambda c: (c[0], c[1]))
        best = min((c[1] for c in ranked), default=0.0)
        causes = [words for first, rest, words in ranked if first == 0 or rest <= best + ALSO_FITS_NM]
        if not causes:
            texts.append(f"{NO_SLIP_WORDS} within {SLIP_FIT_NM:.0f} nm: check the body, the Hs and the DR")
        elif causes[0].startswith("likely cause"):
            texts.append("; or ".join([causes[0]] + [c.replace("possible cause: ", "") for c in causes[1:]]))
        else:
            texts.append(f"possible cause{'s' if len(causes) > 1 else ''} (undone, each leaves an intercept within "
                         f"{SLIP_FIT_NM:.0f} nm): " + "; or ".join(c.replace("possible cause: ", "") for c in causes)
                         + f"; unless the DR itself is {abs(float(intercept[k])):.0f} nm out (a fix of the log shows "
                         "which: do not change a sight before it does)")
    texts = np.array(texts, dtype=object)
    if fitted_only:
        keep = np.array([bool(f) for f in found], dtype=bool)
        return rows[keep], texts[keep]
    return rows, texts


#: a row's neighbours in the log (the rows before and after it) whose DR speaks for it: those this close in time
#: (hours; common practice: a round's sights are minutes apart, a DR does not change hemisphere between them)
NEIGHBOUR_HOURS = 1.0
#: the DR mirrored is taken to agree with a neighbour's when within this (nautical miles: an hour's run and more)
NEIGHBOUR_DR_NM = 60.0


def _odd_hemisphere(frame, rows, bodies, lat, lon, ho) -> list[tuple[int, str, float]]:
    """The flagged rows whose DR names the other hemisphere (N/S or E/W) from their neighbours' in the log, taken
    minutes apart, where the DR mirrored lies by theirs: (index into ``rows``, the words, the intercept worked
    from the DR mirrored). Named first among the causes: one row's DR written N for S jumps thousands of miles."""
    if "dr_lat_deg" not in frame.columns:
        return []
    all_lat = frame["dr_lat_deg"].to_numpy(dtype=float)
    all_lon = frame["dr_lon_deg"].to_numpy(dtype=float)
    jd = frame["utc_jd1"].to_numpy(dtype=float) + frame["utc_jd2"].to_numpy(dtype=float)
    labels = (("row " + frame["row"].astype(int).astype(str)).to_numpy(dtype=object) if "row" in frame.columns
              else np.array([f"row {i + 1}" for i in range(len(frame))], dtype=object))
    n = len(frame)
    out = []
    for flip_lat in (True, False):
        mine = lat if flip_lat else lon
        m_lat, m_lon = (-lat, lon) if flip_lat else (lat, -lon)
        every = all_lat if flip_lat else all_lon
        has = np.zeros((2, rows.size), dtype=bool)  # each flagged row's row before (0) and after (1) speaks
        agree = np.ones(rows.size, dtype=bool)
        for side, step in enumerate((-1, 1)):
            near = np.clip(rows + step, 0, max(n - 1, 0))
            with np.errstate(invalid="ignore"):
                has[side] = ((rows + step >= 0) & (rows + step < n) & np.isfinite(all_lat[near])
                             & np.isfinite(all_lon[near]) & (np.abs(jd[near] - jd[rows]) * 24.0 <= NEIGHBOUR_HOURS))
                apart = distance_bearing(m_lat, m_lon, all_lat[near], all_lon[near])[0]
                agree &= ~has[side] | ((mine * every[near] < 0) & (apart <= NEIGHBOUR_DR_NM))
        odd = np.flatnonzero(has.any(axis=0) & agree & (mine != 0))
        if not odd.size:
            continue
        rest = _intercept_at(frame, rows[odd], bodies[odd], m_lat[odd], m_lon[odd], ho[odd], np.zeros(odd.size))
        for k, left in zip(odd.tolist(), rest.tolist()):
            near = [rows[k] + step for side, step in enumerate((-1, 1)) if has[side, k]]
            jump = float(distance_bearing(lat[k], lon[k], all_lat[near[0]], all_lon[near[0]])[0])
            minutes = abs(jd[near[0]] - jd[rows[k]]) * 1440.0
            if flip_lat:
                what, said, theirs = "latitude", ("N" if lat[k] > 0 else "S"), ("S" if lat[k] > 0 else "N")
            else:
                what, said, theirs = "longitude", ("E" if lon[k] > 0 else "W"), ("W" if lon[k] > 0 else "E")
            others = " and ".join(str(labels[r]) for r in near)
            out.append((k, (
                f"likely cause: {labels[rows[k]]}'s DR {what} {said} where {others} "
                f"{'say' if len(near) > 1 else 'says'} {theirs} (the DR jumps {jump:,.0f} nm in {minutes:.1f} min "
                f"to {labels[near[0]]}); worked from the DR with its {what} {theirs}, the intercept is "
                f"{abs(left):.1f} nm: check the DR's {'N/S' if flip_lat else 'E/W'}"), abs(left)))
    return out


def _intercept_at(frame, rows, bodies, lat, lon, ho, hours) -> np.ndarray:
    """The intercept left (nm) when the sight's time is ``hours`` later than logged (NaN where no shift)."""
    from ..almanac import places
    from ..timescales import instants_from_utc_jd
    from ..triangle import computed_altitude_azimuth

    out = np.full(rows.size, np.nan)
    take = np.flatnonzero(np.isfinite(hours))
    if not take.size:
        return out
    r = rows[take]
    dut1 = (frame["dut1_given_s"].to_numpy(dtype=float)[r] if "dut1_given_s" in frame.columns
            else np.full(r.size, np.nan))
    import warnings

    from ..errors import InstantsWarning

    with warnings.catch_warnings():
        # the trial times are the sights' own, shifted by a slip: the sights' own rows were warned of (the IERS
        # or leap-second table out of date) when they were reduced, by their rows
        warnings.simplefilter("ignore", InstantsWarning)
        inst = instants_from_utc_jd(frame["utc_jd1"].to_numpy(dtype=float)[r],
                                    frame["utc_jd2"].to_numpy(dtype=float)[r] + hours[take] / 24.0, dut1)
    almanac = places(bodies[take].astype(object), inst)
    hc, _ = computed_altitude_azimuth(lat[take], lon[take], almanac.gha_deg, almanac.dec_deg)
    out[take] = (ho[take] - hc) * 60.0
    return out


def _time_words(hours: float) -> str:
    h = abs(hours)
    way = "early" if hours > 0 else "late"
    what = {1: "the hour or the zone description one out", 12: "am written for pm or pm for am",
            24: "the date a day out"}.get(h, "the time out")
    return f"possible cause: {what} (the time as logged {h:.0f} h {way}: worked {h:.0f} h {'later' if hours > 0 else 'earlier'} it fits)"


def _limb_words(upper: bool, two_sd: float) -> str:
    logged, other = ("upper", "lower") if upper else ("lower", "upper")
    return (f"possible cause: the wrong limb (logged {logged}, taken {other}: 2 × SD = {two_sd:.1f}′ "
            f"changes the intercept by {two_sd:.1f} nm)")


def _degree_words(degrees: int) -> str:
    return (f"possible cause: Hs {abs(degrees)}° too {'high' if degrees > 0 else 'low'} (a degree figure "
            f"misread or mistyped: {60 * abs(degrees)} nm)")


def _sign_words(zd: float, lon: float, nautical: float) -> str:
    where = f"the DR, {abs(lon):.0f}° {'W' if lon < 0 else 'E'}, is in zone {nautical:+.0f}"
    return (f"likely cause: the zone description {zd:+.0f} is a zone {'east' if zd < 0 else 'west'} of "
            f"Greenwich, but {where}: a ZD of the wrong sign puts the time {2 * abs(zd):.0f} h out; check its "
            "sign (ZT + ZD = UTC: + west of Greenwich, − east)")


def _mirror_words(zd: float, lon: float, nautical: float, rest_nm: float) -> str:
    return (f"likely cause: the DR's longitude written {'E for W' if lon > 0 else 'W for E'}: the zone description "
            f"{zd:+.0f} is a zone {'east' if zd < 0 else 'west'} of Greenwich, but the DR, {abs(lon):.0f}° "
            f"{'W' if lon < 0 else 'E'}, is in zone {nautical:+.0f}; worked from the DR at {abs(lon):.0f}° "
            f"{'E' if lon < 0 else 'W'} at the time as logged, the intercept is {abs(rest_nm):.1f} nm: check the DR's E/W")


def _zone_words(zd: float, lon: float, nautical: float) -> str:
    where = f"the DR, {abs(lon):.0f}° {'W' if lon < 0 else 'E'}, is in zone {nautical:+.0f}"
    return (f"possible cause: the zone description {zd:+.0f} is not the DR's zone ({where}): if the watch keeps "
            f"zone {nautical:+.0f}, the time is {abs(zd - nautical):.0f} h out; check the ZD")


#: a round's sights agree among themselves within a sextant's scatter (common practice: good sights agree to
#: a minute or two)
AGREEING_SIGMA_ARCMIN = 2.0


def name_zone_slips(results: list, reduced: pd.DataFrame, group: np.ndarray, labels=None) -> dict[int, str]:
    """A fix far from its DR (``result.dr_distance_nm`` beyond ``dr_allowed_nm``) one of whose sights a slip
    accounts for gets that sight's causes added to its warnings (:func:`zone_sign_suspects`):
    the same words for every command and the API. ``group``: each row's index into ``results`` (−1: none);
    ``labels``: each row's name in messages (:func:`navred.jobs.frames.row_labels`; default 'row 1', 'row 2'...).

    A round whose sights agree among themselves names the DR (or a slip common to every sight) as the likely
    cause; a 'possible cause' one of its sights alone suggests (the DR taken as right) would contradict it, so the
    round says it once, as only what that sight alone would suggest. Returns those rows (index into ``reduced``)
    with the words to take out of each one's own note (:func:`drop_contradicted`), so that a sight's note never
    contradicts its round's verdict."""
    names = (np.asarray(labels, dtype=object) if labels is not None
             else np.array([f"row {i + 1}" for i in range(len(reduced))], dtype=object))
    contradicted, explained = unchecked_slips(results, reduced, group, names)
    far = [k for k, result in enumerate(results) if result is not None and
           np.isfinite(result.dr_distance_nm) and result.dr_distance_nm > result.dr_allowed_nm]
    if not far:
        return contradicted
    # a round whose sights agree among themselves (three or more, σ within a sextant's) was not moved by a slip in
    # one of them: the DR, or a slip common to every sight, moved it; a cause is named for it only where every one
    # of its sights names the same (a ZD of the wrong sign, a day out), else the DR is said to be the likely cause
    agree = {k for k in far if int(np.sum(results[k].used)) >= 3 and results[k].sigma_arcmin <= AGREEING_SIGMA_ARCMIN}
    rows, texts = zone_sign_suspects(reduced, np.isin(group, far), fitted_only=True)
    said: dict[int, list[tuple[int, str]]] = {}
    for row, text in zip(rows.tolist(), texts.tolist()):
        if row in explained:  # the latest fix run on explains its intercept: the DR is wrong, no slip offered
            contradicted[row] = text
            continue
        said.setdefault(int(group[row]), []).append((row, text))
    for k in far:
        texts_k = [text for _, text in said.get(k, [])]
        if k not in agree:
            if texts_k:
                results[k].warnings.append(texts_k[0])
            continue
        n = int(np.sum(results[k].used))
        if len(texts_k) >= n and len({re.sub(r"\d+(?:\.\d+)?", "#", t) for t in texts_k}) == 1:
            # every sight names the one slip (its figures aside: each sight's own DR and intercept): the fix was
            # moved by it, and is no position to plot until it is undone
            results[k].warnings.append(texts_k[0])
            distrust(results[k], Distrust.SLIP, (
                f"every one of its {n} sights fits one slip, {_slip_named(texts_k[0])} (see the "
                f"warnings), and the fix is {results[k].dr_distance_nm:.0f} nm from the DR, beyond the "
                f"{results[k].dr_allowed_nm:.0f} nm it could be out: worked as logged the slip moves the fix; "
                "correct it and fix again"))
            continue
        alone = [(row, text) for row, text in said.get(k, []) if text.startswith("possible cause")]
        words = (f"its {n} sights agree among themselves (σ {results[k].sigma_arcmin:.1f}′): a slip in one sight "
                 "cannot move them all, so the DR is the likely cause, or a slip common to every sight (the zone "
                 "description, the date, am/pm, the watch error)")
        if alone:
            words += ("; only what a sight alone would suggest, the DR taken as right (not the round's cause): "
                      + "; ".join(f"{names[row]}, {_cause_only(text)}" for row, text in alone))
            contradicted.update(alone)
        results[k].warnings.append(words)
    return contradicted


#: the latest fix is run on by the DR to test a large intercept only while it is this young (hours; common
#: practice: a DR carried a day is as far as a navigator trusts a run from a fix)
RUN_ON_LIMIT_H = 24.0


def unchecked_slips(results: list, reduced: pd.DataFrame, group: np.ndarray,
                    names: np.ndarray) -> tuple[dict[int, str], set[int]]:
    """Each sight used in a fix whose intercept is over LARGE_INTERCEPT_NM, tested against the best position
    there is: the latest earlier fix that can be trusted (within RUN_ON_LIMIT_H), run on to the sight by the
    DR (the fix's offset from its DR kept). Where the intercept from there is within SLIP_FIT_NM the DR, not the
    sight, is wrong: the fix says so (by how much, from which fix) and the slip the sight's own note offers is
    withdrawn (returned, row: words, for :func:`drop_contradicted`; and the rows so explained, the sights of a
    fix far from its DR among them, which offer no slip either). Where it is not, and the fix has no sight to
    spare (two sights for two unknowns: nothing checks the one), the fix is marked not to be trusted
    (:attr:`Distrust.UNCHECKED_SLIP`), naming the row and the slip that fits it. The fixes are judged in time
    order, so that one marked here is not the position a later one is tested from."""
    from ..constants import LARGE_INTERCEPT_NM
    from ..triangle import computed_altitude_azimuth

    needed = ("intercept_nm", "ho_deg", "gha_deg", "dec_deg", "dr_lat_deg", "dr_lon_deg", "sight_utc")
    if not all(c in reduced.columns for c in needed):
        return {}, set()
    intercept = reduced["intercept_nm"].to_numpy(dtype=float)
    members = {k: np.flatnonzero(group == k) for k, r in enumerate(results) if r is not None}
    big: dict[int, np.ndarray] = {}
    for k, rows in members.items():
        r = results[k]
        used = r.used if r.used.size == rows.size else np.ones(rows.size, dtype=bool)
        left = r.left_out if r.left_out.size == rows.size else np.zeros(rows.size, dtype=bool)
        chosen = rows[used & ~left]
        far = np.isfinite(r.dr_distance_nm) and r.dr_distance_nm > r.dr_allowed_nm
        chosen = chosen if far else chosen[np.abs(intercept[chosen]) > LARGE_INTERCEPT_NM]
        if chosen.size:
            big[k] = chosen
    if not big:
        return {}, set()
    utc = reduced["sight_utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]")  # naive UTC
    bodies = (reduced["body_name"].astype(str).to_numpy() if "body_name" in reduced.columns
              else np.full(len(reduced), "", dtype=object))
    flagged = np.zeros(len(reduced), dtype=bool)
    flagged[np.concatenate(list(big.values()))] = True
    slip_rows, slip_texts = zone_sign_suspects(reduced, flagged, fitted_only=True)
    slips = dict(zip(slip_rows.tolist(), slip_texts.tolist()))
    contradicted: dict[int, str] = {}
    explained: set[int] = set()
    order = sorted(members, key=lambda k: results[k].utc)
    for k in order:
        result = results[k]
        if k not in big:
            continue
        unexplained = []
        for row in big[k].tolist():
            gross = abs(intercept[row]) > LARGE_INTERCEPT_NM
            ref = _latest_trusted(results, order, k, utc[row])
            if ref is None:
                if gross:
                    unexplained.append((row, ""))
                continue
            lat, lon = _run_on(results[ref], float(reduced["dr_lat_deg"].iloc[row]),
                               float(reduced["dr_lon_deg"].iloc[row]))
            hc, _ = computed_altitude_azimuth(lat, lon, float(reduced["gha_deg"].iloc[row]),
                                              float(reduced["dec_deg"].iloc[row]))
            from_fix = (float(reduced["ho_deg"].iloc[row]) - float(hc)) * 60.0
            hours = float((utc[row] - results[ref].utc) / np.timedelta64(1, "h"))
            dr_out = float(np.hypot(results[ref].lat_deg - results[ref].dr_lat_deg,
                                    (results[ref].lon_deg - results[ref].dr_lon_deg)
                                    * np.cos(np.radians(results[ref].lat_deg))) * 60.0)
            fix_words = (f"the fix at {_when(results[ref].utc)} UTC ({_rows_of(names, members[ref], results[ref])}), "
                         f"{hours:.1f} h before, run on by the DR")
            if abs(from_fix) <= SLIP_FIT_NM:
                explained.add(row)
                contradicted[row] = slips.get(row, f"{NO_SLIP_WORDS} within {SLIP_FIT_NM:.0f} nm: check the body, "
                                                   "the Hs and the DR")
                if not gross:
                    continue
                result.warnings.append(
                    f"{names[row]} ({bodies[row]}): its intercept of {abs(intercept[row]):.1f} nm is the DR's error, "
                    f"not the sight's: from {fix_words}, it is {abs(from_fix):.1f} nm; the DR is about "
                    f"{dr_out:.0f} nm out (as it was at that fix): no slip is offered for this sight (undoing one "
                    "would spoil a good line); restart the DR from that fix")
            elif gross:
                unexplained.append((row, f"; from {fix_words}, still {abs(from_fix):.0f} nm"))
        if not unexplained or not result.is_fix or result.untrusted or result.redundant >= 1:
            continue
        said = []
        for row, tested in unexplained:
            slip = slips.get(row, "")
            named = f" carries a probable slip, {_slip_named(slip)}" if slip and not slip.startswith(NO_SLIP_WORDS) else ""
            said.append(f"{names[row]} ({bodies[row]}){named} (its intercept is {abs(intercept[row]):.1f} nm from "
                        f"its DR, over {LARGE_INTERCEPT_NM:.0f} nm{tested})")
        distrust(result, Distrust.UNCHECKED_SLIP, (
            f"{'; '.join(said)}: with {int(np.sum(result.used))} sights for {int(np.sum(result.used)) - result.redundant} "
            "unknowns there is no sight to spare, so nothing checks it and the fix rests on it; correct the sight "
            "(see its note) or take another, and fix again"))
    return contradicted, explained


def _latest_trusted(results: list, order: list[int], k: int, at) -> int | None:
    """The latest fix (not ``k``) before ``at`` that can be trusted, no older than RUN_ON_LIMIT_H."""
    best = None
    for j in order:
        r = results[j]
        if j == k or not r.is_fix or r.untrusted or r.utc > at or not np.isfinite(r.dr_lat_deg):
            continue
        if float((at - r.utc) / np.timedelta64(1, "h")) <= RUN_ON_LIMIT_H:
            best = j
    return best


def _run_on(fix, dr_lat_deg: float, dr_lon_deg: float) -> tuple[float, float]:
    """A fix run on to a later sight by the DR: the sight's DR moved by the fix's offset from its own DR (the
    difference of latitude, and the departure kept; the mid-latitude sailing, common practice)."""
    lat = dr_lat_deg + (fix.lat_deg - fix.dr_lat_deg)
    departure = float(wrap_180(fix.lon_deg - fix.dr_lon_deg)) * np.cos(np.radians(fix.lat_deg))
    lon = dr_lon_deg + departure / max(np.cos(np.radians(lat)), 1e-6)
    return float(lat), float(wrap_180(lon))


def _when(utc) -> str:
    return str(utc)[:16].replace("T", " ")


def _rows_of(names: np.ndarray, rows: np.ndarray, fix) -> str:
    used = fix.used if fix.used.size == rows.size else np.ones(rows.size, dtype=bool)
    shown = [str(n) for n in names[rows[used]]]
    if len(shown) > 1 and all(n.startswith("row ") for n in shown):
        return "rows " + ", ".join(n[4:] for n in shown) if len(shown) <= 3 else f"rows {shown[0][4:]}-{shown[-1][4:]}"
    return ", ".join(shown) if len(shown) <= 3 else f"{shown[0]} to {shown[-1]}"


def _cause_only(text: str) -> str:
    """'the date a day out (...)' from 'possible cause (undone, ...): the date a day out (...)'."""
    return text.split("): ", 1)[1] if text.startswith("possible cause") and "): " in text else text


def _slip_named(text: str) -> str:
    """The slip a note names, in short: 'the date a day out', 'the date a day out; or Hs 1° too high', 'the zone
    description -10 is a zone east of Greenwich, but the DR, 150° W, is in zone +10'."""
    if text.startswith("likely cause: "):
        return text[len("likely cause: "):].split(": ")[0]
    return re.sub(r" \([^)]*\)", "", _cause_only(text))


def drop_contradicted(reduced: pd.DataFrame, contradicted: dict[int, str]) -> None:
    """Take out of each row's own note (``message``, in place) the 'possible cause' its round contradicts
    (:func:`name_zone_slips`): the round's warning says it once, as what the sight alone would suggest."""
    if not contradicted or "message" not in reduced.columns:
        return
    messages = reduced["message"].to_numpy(dtype=object).copy()
    for row, text in contradicted.items():
        note = str(messages[row])
        for form in (f"; {text}", f"{text}; ", text):
            if form in note:
                messages[row] = note.replace(form, "", 1)
                break
    reduced["message"] = messages


__all__ = ["zone_sign_suspects", "name_zone_slips", "unchecked_slips", "drop_contradicted", "RUN_ON_LIMIT_H"]
