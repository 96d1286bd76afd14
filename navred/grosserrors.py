"""The gross errors of a batch of fixes left out, and the check fixes.

A sight whose line lies far beyond any sextant error from the others (a misnamed body, a slip of
degrees or minutes, a wrong time) is left out of its fix, the fix from every sight kept beside it;
where the scatter alone betrays a gross error, each sight (then each pair) is left out in turn to
find it. The sights flagged as possible blunders, kept in the fix, are left out of a check fix."""

from __future__ import annotations

import itertools
from dataclasses import replace

import numpy as np

from .angles import format_angle
from .fixbatch import SightRows, fix_batch, subset_groups
from .fixresult import FIX_ELLIPSE_LIMIT_NM, FixResult
from .fixstats import (
    A_PRIORI_SIGMA_ARCMIN,
    BLUNDER_ALPHA,
    BLUNDER_CLEAR_ALPHA,
    GROSS_ARCMIN,
    MAX_SIGHTS_SEARCHED,
)
from .sensechecks import SEXTANT_SIGMA_LIMIT_ARCMIN, common_error_arcmin
from .stats import student_t_quantile
from .status import Distrust
from .triangle import distance_bearing


def leave_out_gross(sights: SightRows, group, n_groups, ok, results, skip: frozenset[int] = frozenset(),
                    fix_times: np.ndarray | None = None) -> None:
    """Each group's gross errors beyond doubt left out of its fix, a round at a time (a second one can hide
    behind the first), and the sights the blunder test flags once the gross errors are out (while three or more
    sights remain to fix from and check); the fix from every sight kept beside it, and a loud warning naming
    each row. The groups ``skip`` are left as they are (a round that cannot be trusted as written).
    ``fix_times``: each group's fix time as the caller gave it (NaT: none given); where none was given the fix
    left without its gross errors is at the last sight it uses (a sight left out sets nothing: not the fix's
    time, nor the time the others are run to); default: the time of the fix from every sight."""
    left_out = np.zeros(group.size, dtype=bool)
    by_test = np.zeros(group.size, dtype=bool)
    tested: set[int] = set()
    first = list(results)
    bounds = np.concatenate([[0], np.cumsum(np.bincount(group[group >= 0], minlength=n_groups))])
    by_group = np.argsort(np.where(group >= 0, group, n_groups), kind="stable")
    for _ in range(3):
        chosen, rows, wild = [], [], []
        for g, result in enumerate(results):
            if result is None or g in skip:
                continue
            members = by_group[bounds[g]:bounds[g + 1]]
            doubtful = result.clear_blunder & ~_or_empty(result.left_out, members.size)
            if result.gross.any():
                chosen.append(g)
                rows.append(members[result.gross])
            elif (g not in tested and doubtful.any() and result.is_fix
                  and int(result.used.sum()) - int(doubtful.sum()) >= 3):
                tested.add(g)
                chosen.append(g)
                rows.append(members[doubtful])
                by_test[members[doubtful]] = True
            elif result.scatter_impossible and result.redundant >= 2 and result.n_sights <= MAX_SIGHTS_SEARCHED:
                wild.append(g)
            tested.add(g)
        for g, found in _gross_by_leaving_out(sights, group, ok, left_out, wild, results).items():
            chosen.append(g)
            rows.append(np.array(found))
        if not chosen:
            break
        left_out[np.concatenate(rows)] = True
        times = np.array([results[g].utc for g in chosen], dtype="datetime64[ns]")
        if fix_times is not None:  # no time given: NaT, the last sight used (fix_batch)
            times = np.where(np.isnat(fix_times[chosen]), np.datetime64("NaT"), times)
        again, _ = fix_batch(sights, subset_groups(group, chosen, n_groups), len(chosen), ok, left_out, times)
        for j, g in enumerate(chosen):
            if again[j] is not None:
                results[g] = again[j]
    for g, result in enumerate(results):
        if result is None or first[g] is result or not result.left_out.any():
            continue
        members = by_group[bounds[g]:bounds[g + 1]]
        result.all_sights = first[g]
        result.blunder_left_out = by_test[members] & result.left_out
        _say_left_out(result, sights.names[members])


def _say_left_out(result, names_here: np.ndarray) -> None:
    """The loud warning of the sights left out of a fix: each row, how far its line lies, and why."""
    every = result.all_sights
    out = result.left_out
    names = names_here[out]
    result.left_out_names = [str(name) for name in names]
    misses = np.abs(result.residual_arcmin[out]).tolist()
    tested = result.blunder_left_out[out].tolist()
    miles = float(distance_bearing(result.lat_deg, result.lon_deg, every.lat_deg, every.lon_deg)[0])
    gross = [f"{name} ({miss:.0f}′ off)" for name, miss, t in zip(names, misses, tested) if not t]
    flagged = [f"{name} ({miss:.1f}′ off)" for name, miss, t in zip(names, misses, tested) if t]
    reasons = []
    if gross:
        reasons.append(f"{', '.join(gross)}: {'their lines lie' if len(gross) > 1 else 'its line lies'} far beyond "
                       "any sextant error from the others (a misnamed body, a slip of degrees or minutes, a wrong "
                       "time?)")
    if flagged:
        reasons.append(f"{', '.join(flagged)}: the blunder test finds {'them' if len(flagged) > 1 else 'it'} a "
                       f"clear blunder (beyond its {BLUNDER_CLEAR_ALPHA * 100:.0f} % level: a good round has a sight "
                       "left out one time in a hundred at most)")
    result.warnings.insert(0, (
        f"LEFT OUT of this {result.kind}: {'; '.join(reasons)}; the {every.kind} from every sight is {miles:.1f} nm "
        f"away, at {format_angle(every.lat_deg, 'lat')} {format_angle(every.lon_deg, 'lon')}"))
    if every.utc != result.utc:
        result.warnings.insert(1, (
            f"the {result.kind} is at {str(result.utc)[:16].replace('T', ' ')} UTC, the time of the last sight it "
            f"uses; {', '.join(str(n) for n in names)}, left out, sets neither its time nor the time the others "
            f"are run to (the {every.kind} from every sight was at {str(every.utc)[:16].replace('T', ' ')} UTC)"))
    if miles > 1.0:
        rows = ", ".join(str(name) for name in names)
        result.warnings.insert(1, f"this {result.kind} and the one from every sight differ by {miles:.1f} nm: "
                                  f"plot this one, and find out what is wrong with {rows} (its time, body, "
                                  "altitude)")


def _gross_by_leaving_out(sights: SightRows, group, ok, left_out, wild: list[int], results) -> dict[int, list[int]]:
    """For fixes whose sights scatter beyond any sextant: each sight left out in turn (then, where that finds
    nothing and six or more sights remain, each pair), every such fix of the others solved at once (from the DR,
    not from the all-sights fix a gross error has dragged off). The sights whose leaving out makes the
    others agree, each of whose lines then lies more than GROSS_ARCMIN and beyond the blunder test's limit
    from their fix, are the gross errors: their rows, per group."""
    found: dict[int, list[int]] = {}
    for size in (1, 2):
        todo = [g for g in wild if g not in found]
        copies_rows, copies_group, copies_left, owner, dropped = [], [], [], [], []
        for g in todo:
            members = np.flatnonzero((group == g) & ok)
            free = members[~left_out[members]]
            if free.size - size < 2 + size:  # the others keep a check of their own: 3 for one out, 4 for two
                continue
            for chosen in itertools.combinations(free.tolist(), size):
                copies_rows.append(members)
                copies_group.append(np.full(members.size, len(owner)))
                copies_left.append(left_out[members] | np.isin(members, chosen))
                owner.append(g)
                dropped.append(list(chosen))
        if not owner:
            continue
        rows = np.concatenate(copies_rows)
        sub = replace(sights, gha=sights.gha[rows], dec=sights.dec[rows], ho=sights.ho[rows], utc=sights.utc[rows],
                      dr_lat=sights.dr_lat[rows], dr_lon=sights.dr_lon[rows], course=sights.course[rows],
                      speed=sights.speed[rows], set_deg=sights.set_deg[rows], drift_kn=sights.drift_kn[rows],
                      dr_age_h=sights.dr_age_h[rows], names=sights.names[rows],
                      weight=None if sights.weight is None else sights.weight[rows],
                      line_sigma=None if sights.line_sigma is None else sights.line_sigma[rows])
        times = np.array([results[g].utc for g in owner], dtype="datetime64[ns]")
        trials, _ = fix_batch(sub, np.concatenate(copies_group), len(owner), np.ones(rows.size, dtype=bool),
                               np.concatenate(copies_left), times)
        best: dict[int, tuple[float, list[int], np.ndarray, int, np.ndarray]] = {}
        for c, (g, chosen) in enumerate(zip(owner, dropped)):
            trial = trials[c]
            if trial is None or trial.redundant < 1 or trial.scatter_impossible:
                continue
            misses = np.array([float(trial.residual_arcmin[np.flatnonzero(copies_rows[c] == row)[0]])
                               for row in chosen])
            roots = np.sqrt(np.ones(len(chosen)) if sights.weight is None else sights.weight[chosen])
            if g not in best or trial.sigma_arcmin < best[g][0]:
                best[g] = (trial.sigma_arcmin, chosen, misses, trial.redundant, roots)
        for g, (sigma, chosen, misses, d, roots) in best.items():
            n = d + 2 + size  # the sights of the fix of the others (two unknowns) and those left out
            limit = float(student_t_quantile(1.0 - BLUNDER_ALPHA / (2.0 * n), d)) * sigma / roots  # σ of each
            if np.all((np.abs(misses) > GROSS_ARCMIN) & (np.abs(misses) > limit)):
                found[g] = chosen
    return found


#: A round read again with its Hs as degrees and minutes written as a decimal (29.216 as 29° 21.6′) is taken to
#: have been written so when its residuals' sum of squares falls by at least this factor, to a scatter a sextant
#: gives: read as written, the sights then disagree ten times as much (in variance) as read that way.
DECIMAL_EVIDENCE = 10.0


def misread_rounds(sights: SightRows, hs_deg: np.ndarray, group, n_groups, ok, results) -> set[int]:
    """The groups whose Hs look like degrees and minutes written as a decimal (29.216 for 29° 21.6′): every
    usable Hs reads that way too (a fraction under .60), the sights as written scatter more than a good sight
    (A_PRIORI_SIGMA_ARCMIN), and read that way they agree to a sextant's scatter, DECIMAL_EVIDENCE times better
    (the sums of squares of the residuals). Each such fix is marked as not to be trusted (``untrusted``), with
    the position the other reading gives; its gross errors are not looked for (they would be the misreading's).
    Run on the fixes of every sight, before any sight is left out."""
    degrees = np.trunc(hs_deg)
    minutes = np.round((hs_deg - degrees) * 100.0, 6)
    shift = np.where(np.abs(minutes) < 60.0, degrees + minutes / 60.0 - hs_deg, np.nan)
    bounds = np.concatenate([[0], np.cumsum(np.bincount(group[group >= 0], minlength=n_groups))])
    by_group = np.argsort(np.where(group >= 0, group, n_groups), kind="stable")
    chosen = []
    for g, result in enumerate(results):
        if result is None or not result.is_fix or result.redundant < 1 or result.sigma_arcmin <= A_PRIORI_SIGMA_ARCMIN:
            continue
        members = by_group[bounds[g]:bounds[g + 1]][result.used]
        if np.isfinite(shift[members]).all() and np.any(shift[members] != 0):
            chosen.append(g)
    if not chosen:
        return set()
    times = np.array([results[g].utc for g in chosen], dtype="datetime64[ns]")
    other = replace(sights, ho=sights.ho + np.nan_to_num(shift) * ok)
    again, _ = fix_batch(other, subset_groups(group, chosen, n_groups), len(chosen), ok, np.zeros(group.size, bool),
                         times)
    found = set()
    for j, g in enumerate(chosen):
        result, trial = results[g], again[j]
        if trial is None or trial.redundant < 1 or trial.sigma_arcmin > SEXTANT_SIGMA_LIMIT_ARCMIN:
            continue
        weight = result.weight[result.used] if result.weight.size == result.used.size else 1.0
        written = float(np.nansum(weight * result.residual_arcmin[result.used] ** 2))
        read = float(np.nansum(weight * trial.residual_arcmin[trial.used] ** 2))
        if written < DECIMAL_EVIDENCE * read:
            continue
        found.add(g)
        row = by_group[bounds[g]:bounds[g + 1]][result.used][0]
        miles = float(distance_bearing(result.lat_deg, result.lon_deg, trial.lat_deg, trial.lon_deg)[0])
        result.untrusted_cause = Distrust.HS_AS_DECIMAL
        result.untrusted = (
            f"Hs looks like degrees and minutes written as a decimal: read so ({hs_deg[row]:.3f} as "
            f"{format_angle(hs_deg[row] + shift[row], 'signed')}), the sights agree to σ "
            f"{np.sqrt(read / trial.redundant):.1f}′, "
            f"against σ {np.sqrt(written / result.redundant):.1f}′ as written, and put the {trial.kind} "
            f"{miles:.0f} nm from this one, at {format_angle(trial.lat_deg, 'lat')} "
            f"{format_angle(trial.lon_deg, 'lon')}: write Hs as degrees and minutes (29 21.6) or as decimal "
            "degrees, and fix again")
        result.other_reading = trial
    return found


#: a fix this many times farther from its DR than the DR could be out is not plotted as the ship's position: a
#: slip (a ZD of the wrong sign, a day, a DR in the wrong hemisphere) is far likelier (common practice)
FAR_UNTRUSTED_FACTOR = 3.0


def _mirror_words(lat_deg: float, lon_deg: float, flip_lat: bool, flip_lon: bool) -> str:
    """'the DR's latitude written N for S' (and/or its longitude E for W), from the DR as logged."""
    parts = []
    if flip_lat:
        parts.append(f"latitude written {'N for S' if lat_deg > 0 else 'S for N'}")
    if flip_lon:
        parts.append(f"longitude written {'E for W' if lon_deg > 0 else 'W for E'}")
    return "the DR's " + " and its ".join(parts)


def mirrored_drs(sights: SightRows, group, n_groups, ok, results) -> set[int]:
    """A fix far from its DR (beyond ``dr_allowed_nm``) fixed again from its DR mirrored: the latitude's name
    changed (N for S), the longitude's (E for W), and both (the course and speed kept: only the DR's names are in
    doubt). Where a mirrored DR gives a fix whose sights agree as a sextant's do (σ within
    SEXTANT_SIGMA_LIMIT_ARCMIN) and that lies within what that DR could be out, the DR was written in the wrong
    hemisphere: the fix is marked untrusted saying so (the closest such mirror), before any other reason
    (:func:`mark_untrusted`). Returns the groups so marked."""
    far = [g for g, r in enumerate(results) if r is not None and r.is_fix and not r.untrusted
           and np.isfinite(r.dr_distance_nm) and np.isfinite(r.dr_allowed_nm) and r.dr_distance_nm > r.dr_allowed_nm]
    if not far:
        return set()
    times = np.array([results[g].utc for g in far], dtype="datetime64[ns]")
    subset = subset_groups(group, far, n_groups)
    best: dict[int, tuple[float, FixResult, bool, bool]] = {}
    for flip_lat, flip_lon in ((True, False), (False, True), (True, True)):
        mirrored = replace(sights, dr_lat=-sights.dr_lat if flip_lat else sights.dr_lat,
                           dr_lon=-sights.dr_lon if flip_lon else sights.dr_lon)
        trials, _ = fix_batch(mirrored, subset, len(far), ok, np.zeros(group.size, bool), times)
        for j, g in enumerate(far):
            trial = trials[j]
            if (trial is None or not trial.is_fix or trial.scatter_impossible
                    or trial.sigma_arcmin > SEXTANT_SIGMA_LIMIT_ARCMIN
                    or not trial.dr_distance_nm <= max(trial.dr_allowed_nm, 1.0)):
                continue
            if g not in best or trial.dr_distance_nm < best[g][0]:
                best[g] = (trial.dr_distance_nm, trial, flip_lat, flip_lon)
    for g, (_, trial, flip_lat, flip_lon) in best.items():
        result = results[g]
        words = _mirror_words(result.dr_lat_deg, result.dr_lon_deg, flip_lat, flip_lon)
        check = ' and '.join(n for n, f in (('N/S', flip_lat), ('E/W', flip_lon)) if f)
        read_so = (f"from the DR read so ({format_angle(trial.dr_lat_deg, 'lat')} "
                   f"{format_angle(trial.dr_lon_deg, 'lon')}) the sights agree to σ {trial.sigma_arcmin:.1f}′ and fix "
                   f"at {format_angle(trial.lat_deg, 'lat')} {format_angle(trial.lon_deg, 'lon')}, "
                   f"{trial.dr_distance_nm:.1f} nm from it (within the {trial.dr_allowed_nm:.0f} nm it could be out), "
                   f"against {result.dr_distance_nm:.0f} nm from the DR as logged")
        apart = float(distance_bearing(result.lat_deg, result.lon_deg, trial.lat_deg, trial.lon_deg)[0])
        same = apart <= max(1.0, 2.0 * trial.ellipse_semi_major_nm)
        if same and not result.scatter_impossible and not (
                result.dr_distance_nm > FAR_UNTRUSTED_FACTOR * max(result.dr_allowed_nm, 1.0)):
            # the fix found from the DR as logged is the one from the DR mirrored: the fix stands, the DR is wrong
            result.warnings.append(f"likely cause: {words}: {read_so}; the fix itself stands: check the DR's {check}")
            continue
        result.untrusted_cause = Distrust.DR_HEMISPHERE
        result.untrusted = (f"{words}? {read_so[0].upper()}{read_so[1:]}: check the DR's {check}, correct it and fix "
                            "again" + (" (the position above is that same fix)" if same else ""))
        result.warnings[:] = [
            (f"the sights scatter by σ {result.sigma_arcmin:.1f}′ about this fix, found from the DR as logged; from "
             "the DR mirrored they agree (the first warning)") if w.startswith("the sights scatter by σ") else w
            for w in result.warnings]
    return set(best)


def mark_untrusted(results) -> None:
    """Every fix that cannot be trusted as the position to plot says so first, plainly, with why: a round
    misread (:func:`misread_rounds`), or sights that still scatter beyond any hand-held sextant once the gross
    errors are out (or with none found). A round 95 % ellipse longer than a fix's (FIX_ELLIPSE_LIMIT_NM) is said
    first among the warnings, as a wide fix (a long narrow one is already a line of position,
    :func:`navred.fixkinds.not_a_fix`)."""
    for result in results:
        if result is None or not result.is_fix:
            continue
        if not result.untrusted and (result.scatter_impossible or (
                result.left_out.any() and result.sigma_arcmin > SEXTANT_SIGMA_LIMIT_ARCMIN)):
            left = " left in it" if result.left_out.any() else ""
            common = common_error_arcmin(result)
            if np.isfinite(common):
                result.untrusted_cause = Distrust.COMMON_ERROR
                result.untrusted = (
                    f"the sights{left} scatter beyond a sextant (σ {result.sigma_arcmin:.1f}′) but every one is off by "
                    f"about the same {abs(common):.1f}′ ({'high' if common > 0 else 'low'}): an error common to every "
                    "altitude, most likely the index error or the observer's personal error; its ellipse means "
                    "nothing: correct the altitudes and fix again")
            else:
                result.untrusted_cause = Distrust.SCATTER
                result.untrusted = (
                    f"the sights{left} scatter beyond a sextant: σ {result.sigma_arcmin:.1f}′, more than a hand-held "
                    f"one gives (about 1′, {SEXTANT_SIGMA_LIMIT_ARCMIN:.0f}′ in a seaway): some altitude, time or body "
                    "name, or the run between the sights, is wrong and the others cannot tell which; find it and fix "
                    "again")
        if (not result.untrusted and np.isfinite(result.dr_distance_nm) and np.isfinite(result.dr_allowed_nm)
                and result.dr_distance_nm > FAR_UNTRUSTED_FACTOR * max(result.dr_allowed_nm, 1.0)):
            result.untrusted_cause = Distrust.FAR_FROM_DR
            result.untrusted = (
                f"the fix is {result.dr_distance_nm:.0f} nm from the DR, over {FAR_UNTRUSTED_FACTOR:.0f} times what "
                f"the DR could be out ({result.dr_allowed_nm:.0f} nm): a slip of the time, the date, the zone "
                "description or the DR is far likelier than the ship being there, and the ellipse says only that "
                "the sights agree with each other; find the slip (see the warnings) and fix again")
        if not result.untrusted and result.ellipse_semi_major_nm > FIX_ELLIPSE_LIMIT_NM:
            # (not untrusted: the sights agree as well as a sextant's may; too few of them judge their scatter)
            result.warnings.insert(0, (
                f"a wide fix: its 95 % ellipse is {result.ellipse_text()}, longer than the "
                f"{2 * FIX_ELLIPSE_LIMIT_NM:.0f} nm of a position a navigator plots as a fix without question: "
                f"{result.n_sights} sights scattering by σ {result.sigma_arcmin:.1f}′ with {result.redundant} beyond "
                "the unknowns cannot show that the scatter is smaller; plot it, but as no better than that ellipse, "
                "and take more sights (a cocked hat of this size also comes from an error common to every sight)"))
        if result.untrusted:
            _say_untrusted(result)


def _say_untrusted(result) -> None:
    result.warnings[:] = [w.replace("plot this one, and find out", "plot neither as it stands: find out")
                          for w in result.warnings]
    result.warnings.insert(0, f"CANNOT BE TRUSTED as the position to plot: {result.untrusted}")


def distrust(result, cause: Distrust, reason: str) -> bool:
    """Mark a fix found trusted by :func:`mark_untrusted` as not to be plotted after all, for a reason found once
    the fix is worked (a slip that every one of its sights fits, :func:`navred.jobs.zoneslips.name_zone_slips`):
    the same fields and the same first warning as :func:`mark_untrusted` gives. Returns whether it was marked (a
    fix already untrusted keeps its first reason; a line or latitude is not a position to plot anyway)."""
    if result is None or not result.is_fix or result.untrusted:
        return False
    result.untrusted_cause = cause
    result.untrusted = reason
    _say_untrusted(result)
    return True


def check_fixes(sights: SightRows, group, n_groups, ok, results) -> None:
    """For each fix with sights flagged as possible blunders (kept in it): the check fix without them, and a
    warning of how far it moves."""
    bounds = np.concatenate([[0], np.cumsum(np.bincount(group[group >= 0], minlength=n_groups))])
    by_group = np.argsort(np.where(group >= 0, group, n_groups), kind="stable")
    left_out = np.zeros(group.size, dtype=bool)
    chosen = []
    for g, result in enumerate(results):
        if result is None:
            continue
        rows = by_group[bounds[g]:bounds[g + 1]]
        doubtful = result.outlier & ~_or_empty(result.left_out, rows.size)
        if doubtful.any() and int(result.used.sum()) - int(doubtful.sum()) >= 2:
            chosen.append(g)
            left_out[rows[doubtful | _or_empty(result.left_out, rows.size)]] = True
    if not chosen:
        return
    times = np.array([results[g].utc for g in chosen], dtype="datetime64[ns]")
    checks, _ = fix_batch(sights, subset_groups(group, chosen, n_groups), len(chosen), ok, left_out, times)
    for j, g in enumerate(chosen):
        result, check = results[g], checks[j]
        if check is None:
            continue
        rows = by_group[bounds[g]:bounds[g + 1]]
        doubtful = result.outlier & ~_or_empty(result.left_out, rows.size)
        names = sights.names[rows[doubtful]]
        count = len(names)
        miles = float(distance_bearing(result.lat_deg, result.lon_deg, check.lat_deg, check.lon_deg)[0])
        result.warnings.append(
            f"{', '.join(names)} look{'' if count > 1 else 's'} like {'blunders' if count > 1 else 'a blunder'} "
            f"(the blunder test, at {BLUNDER_ALPHA * 100:.0f} % false alarms for the whole fix); without "
            f"{'them' if count > 1 else 'it'} the {result.kind} moves {miles:.1f} nm (the check fix)"
            + (": more than a mile, so look at the sight before plotting either" if miles > 1.0 else ""))
        result.without_outliers = check
        smaller = [f"{name} ({abs(r):.1f}′ off)" for name, r in zip(names, check.residual_arcmin[doubtful].tolist())
                   if abs(r) < result.detectable_blunder_arcmin]
        if smaller:
            result.blunder_note += f"; {', '.join(smaller)} is flagged all the same: a smaller one is found now and then"


def _or_empty(values: np.ndarray, size: int) -> np.ndarray:
    return values if values.size == size else np.zeros(size, dtype=bool)


__all__ = ["DECIMAL_EVIDENCE", "leave_out_gross", "misread_rounds", "mark_untrusted", "mirrored_drs", "distrust", "check_fixes"]
