"""The causes named when a sight's intercept is huge or a fix lands far from its DR: each of the usual slips
(a zone description not the DR's zone or of the wrong sign, the hour one out, am for pm, a day out, the wrong
limb, a whole degree or ten misread in Hs) is undone on the sight, and a slip is named only when undoing it
leaves an intercept within SLIP_FIT_NM. Used by the reduction (each flagged row's note) and by every fix (the
fix's warning), alike for every command and the API."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from ..grosserrors import distrust
from ..status import Distrust

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
        nautical = np.rint(-lon / 15.0) + 0.0  # + 0.0: no −0
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
                         f"{SLIP_FIT_NM:.0f} nm): " + "; or ".join(c.replace("possible cause: ", "") for c in causes))
    texts = np.array(texts, dtype=object)
    if fitted_only:
        keep = np.array([bool(f) for f in found], dtype=bool)
        return rows[keep], texts[keep]
    return rows, texts


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
    far = [k for k, result in enumerate(results) if result is not None and
           np.isfinite(result.dr_distance_nm) and result.dr_distance_nm > result.dr_allowed_nm]
    if not far:
        return {}
    # a round whose sights agree among themselves (three or more, σ within a sextant's) was not moved by a slip in
    # one of them: the DR, or a slip common to every sight, moved it; a cause is named for it only where every one
    # of its sights names the same (a ZD of the wrong sign, a day out), else the DR is said to be the likely cause
    agree = {k for k in far if int(np.sum(results[k].used)) >= 3 and results[k].sigma_arcmin <= AGREEING_SIGMA_ARCMIN}
    rows, texts = zone_sign_suspects(reduced, np.isin(group, far), fitted_only=True)
    said: dict[int, list[tuple[int, str]]] = {}
    for row, text in zip(rows.tolist(), texts.tolist()):
        said.setdefault(int(group[row]), []).append((row, text))
    contradicted: dict[int, str] = {}
    names = (np.asarray(labels, dtype=object) if labels is not None
             else np.array([f"row {i + 1}" for i in range(len(reduced))], dtype=object))
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


__all__ = ["zone_sign_suspects", "name_zone_slips", "drop_contradicted"]
