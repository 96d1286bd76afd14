"""The fix-level checks that look past the arithmetic: a ship taken as stopped, a fix far from its DR, a
scatter no hand-held sextant gives. Each adds a warning a navigator can act on."""

from __future__ import annotations

import numpy as np

from .fixresult import FixResult
from .fixstats import DR_ALONE_SCALE, DR_ERROR_FRACTION, DR_ERROR_KN, WEAK_CROSSING_DEG
from .stats import chi_square_cdf, chi_square_quantile
from .status import RunFrom
from .triangle import distance_bearing

#: The check on a round's scatter: a hand-held marine sextant at sea gives about 0.5-1′, 2′ in a seaway
#: (common practice); a σ beyond this at 99.9 % (chi-square) is not a sextant's.
SEXTANT_SIGMA_LIMIT_ARCMIN = 2.0


SCATTER_CONFIDENCE = 0.999

#: The closest agreement sextant sights at sea give: about 0.3′ for the best work (the arc read to 0.1′, the
#: horizon and the eye adding the rest; common practice). A round whose σ is below this at 99.9 % (chi-square,
#: two or more sights beyond the unknowns) agrees more closely than sights observed: its ellipse, drawn from
#: that agreement, is too small, and the fix says so.
SEXTANT_SIGMA_BEST_ARCMIN = 0.3
#: A sextant's arc is read to 0.1′ (common practice): sights that agree closer than this look computed, rounded or
#: copied; where the round is too small to say so at SCATTER_CONFIDENCE, the fix says that it cannot be judged.
SEXTANT_READING_ARCMIN = 0.1


#: Sights spanning more than this (minutes) with no course, no speed and one DR: the ship is taken as
#: stopped, and the fix says so.
STOPPED_SPAN_MIN = 10.0


#: A DR whose age the log does not give (a DR written on each sight) is taken to be this old (hours) when
#: the fix is compared with it.
UNKNOWN_DR_AGE_H = 24.0


#: The fix is further from its DR than this many times the DR's own error (DR_ERROR_KN per hour of the DR's
#: age and DR_ERROR_FRACTION of the miles run since), plus the fix's 95 % semi-major axis and a mile:
#: the time, the DR or a body name is wrong (a fix-level warning).
DR_DISAGREEMENT_SIGMAS = 4.0


#: An error common to every altitude of a fix (an index error mistaken or of the wrong sign, an observer's
#: personal error). What a fix can see of it: a constant error c adds c to every intercept; the least-squares fix
#: takes up the part of it that its two unknowns can (moving the fix), and the rest stays in the residuals. With
#: the bodies evenly all round the horizon none is taken up (the fix stays, every residual is c); with them all on
#: one side nearly all is (the fix moves by about c, the residuals show nothing). So the residuals' common part is
#: estimated as the third unknown of the fix would be (ĉ = uᵀr / uᵀu, u the part of (1, ..., 1) the fix's two
#: unknowns cannot take up), and named only where the bodies are spread enough (uᵀu at least
#: COMMON_ERROR_MIN_SPREAD of the sights' count), ĉ is at least COMMON_ERROR_MIN_ARCMIN (common practice: an
#: index error of a minute is worth correcting) and makes up COMMON_ERROR_SHARE of the residuals (a misread
#: altitude or a wrong body leaves residuals of both signs), from COMMON_ERROR_MIN_SIGHTS sights or more (three
#: bodies all round leave one residual degree of freedom, the common one, so that any scatter of three looks
#: alike: a constant error and chance cannot be told apart).
COMMON_ERROR_MIN_ARCMIN = 1.0
COMMON_ERROR_SHARE = 0.8
COMMON_ERROR_MIN_SIGHTS = 4
COMMON_ERROR_MIN_SPREAD = 0.5


def common_error(result: FixResult) -> tuple[float, float, float]:
    """The error common to every altitude of a fix that its residuals show (ĉ arcminutes, + the altitudes read
    high), and how far it moved the fix (north, east nm: the fix allowed for it lies that far the other way); NaNs
    where the residuals show none (see COMMON_ERROR_MIN_ARCMIN and the rest)."""
    nothing = (float("nan"),) * 3
    residual = np.asarray(result.residual_arcmin, dtype=float)
    zn = np.asarray(result.lop_zn_deg, dtype=float)
    if zn.size != residual.size:
        return nothing
    used = np.asarray(result.used, dtype=bool) if np.size(result.used) == residual.size else np.ones(residual.size,
                                                                                                   dtype=bool)
    keep = used & np.isfinite(residual) & np.isfinite(zn)
    r, z = residual[keep], np.radians(zn[keep])
    if r.size < COMMON_ERROR_MIN_SIGHTS:
        return nothing
    a = np.column_stack([np.cos(z), np.sin(z)])
    normal = a.T @ a
    if abs(np.linalg.det(normal)) < 1e-12:
        return nothing
    taken = np.linalg.solve(normal, a.T @ np.ones(r.size))  # the fix's move for 1′ on every altitude (nm)
    u = np.ones(r.size) - a @ taken
    spread = float(u @ u)
    if spread < COMMON_ERROR_MIN_SPREAD * r.size:
        return nothing
    c = float(u @ r) / spread
    if abs(c) < COMMON_ERROR_MIN_ARCMIN or abs(c) * np.sqrt(spread) < COMMON_ERROR_SHARE * float(np.sqrt(r @ r)):
        return nothing
    return c, float(taken[0] * c), float(taken[1] * c)


def common_error_arcmin(result: FixResult) -> float:
    """The error common to every altitude that a fix's residuals show (:func:`common_error`), or NaN."""
    return common_error(result)[0]


def _common_error_words(result: FixResult) -> str:
    c, north, east = common_error(result)
    moved = float(np.hypot(north, east))
    allowed = (f"; allowed for, the fix lies {moved:.1f} nm {np.degrees(np.arctan2(-east, -north)) % 360.0:03.0f}° "
               "from this one" if moved >= 0.1 else "; the bodies all round, it leaves the fix in place")
    return (f"every sight is off by about the same amount ({abs(c):.1f}′ {'high' if c > 0 else 'low'}): an error "
            "common to every altitude, most likely the index error (its value or its sign: 'on the arc' is "
            f"subtracted) or the observer's personal error{allowed}")


def too_good(sigma_arcmin, dof) -> tuple[np.ndarray, np.ndarray]:
    """The one rule for sights that agree too well, for fix and day's work alike (every fix's sense checks): the
    chance that sights as good as the best sextant work (σ SEXTANT_SIGMA_BEST_ARCMIN) agree as closely as
    ``sigma_arcmin`` on ``dof`` sights beyond the unknowns (chi-square: ν s²/σ² has ν degrees of freedom, for
    Gaussian sight errors; navred.stats), and a remark in words: a warning where that chance is below
    1 − SCATTER_CONFIDENCE (0.1 %), else, for a σ under SEXTANT_READING_ARCMIN, that the round is too small to
    judge it ('cannot be judged'), else nothing (''). No σ estimated (two sights, ν 0): nothing.

    >>> chance, words = too_good(np.array([0.04, 0.04, 0.5]), np.array([1, 8, 1]))
    >>> [w.split(':')[0] for w in words]
    ['the sights agree to σ 0.04′, closer than a sextant is read (0.1′), but 1 sight beyond the unknowns cannot judge whether that is too good to be true', 'the sights agree to σ 0.04′, closer than sights observed at sea agree', '']
    """
    sigma = np.atleast_1d(np.asarray(sigma_arcmin, dtype=float))
    dof = np.atleast_1d(np.asarray(dof, dtype=float))
    chance = np.full(sigma.shape, np.nan)
    judged = (dof >= 1) & np.isfinite(sigma)
    if judged.any():
        chance[judged] = chi_square_cdf(dof[judged] * (sigma[judged] / SEXTANT_SIGMA_BEST_ARCMIN) ** 2, dof[judged])
    words = np.full(sigma.shape, "", dtype=object)
    alarm = 1.0 - SCATTER_CONFIDENCE
    with np.errstate(invalid="ignore"):
        remark = judged & ((chance < alarm) | (sigma < SEXTANT_READING_ARCMIN))
    for j in np.flatnonzero(remark).tolist():
        nu, s, p = int(dof[j]), float(sigma[j]), float(chance[j])
        odds = (f"sights as good as the best sextant work (σ {SEXTANT_SIGMA_BEST_ARCMIN:.1f}′) agree this closely in "
                f"{_chance(p)} (chi-square, {nu} degree{'' if nu == 1 else 's'} of freedom)")
        if p < alarm:
            words[j] = (
                f"the sights agree to σ {s:.2f}′, closer than sights observed at sea agree: {odds}; navred warns "
                f"below 1 in {round(1 / alarm):,}; the 95 % ellipse, drawn from that agreement, is too small to "
                "trust; if the altitudes were computed, rounded from a fix or copied, take the position as good to a "
                "mile or two at best")
        elif s < SEXTANT_READING_ARCMIN:
            words[j] = (
                f"the sights agree to σ {s:.2f}′, closer than a sextant is read ({SEXTANT_READING_ARCMIN:.1f}′), but "
                f"{nu} sight{'' if nu == 1 else 's'} beyond the unknowns cannot judge whether that is too good to be "
                f"true: {odds}, and navred warns only below 1 in {round(1 / alarm):,}; if the altitudes were computed, rounded "
                "from a fix or copied, the ellipse is too small")
    return chance, words


def _chance(p: float) -> str:
    """'11 % of rounds', '1.8 % of rounds', 'fewer than 1 round in 10,000' (at most 'in 1,000,000')."""
    if p >= 0.095:
        return f"{p * 100:.0f} % of rounds"
    if p >= 0.001:
        return f"{p * 100:.1f} % of rounds"
    k = min(6, int(np.floor(-np.log10(p)))) if p > 0 else 6
    return f"fewer than 1 round in {10 ** k:,}"


def sense_checks(results: list[FixResult], run_from: list[RunFrom], span_min: np.ndarray, age_h: np.ndarray,
                  speed_kn: np.ndarray, age_known: np.ndarray) -> None:
    """The fix-level warnings that look past the arithmetic, for a batch of results at once: a ship taken
    as stopped, a fix far from its DR, a scatter no sextant gives."""
    lat = np.array([r.lat_deg for r in results])
    lon = np.array([r.lon_deg for r in results])
    distance = distance_bearing(np.array([r.dr_lat_deg for r in results]), np.array([r.dr_lon_deg for r in results]),
                                lat, lon)[0]
    is_fix = np.array([r.is_fix for r in results])
    offset = np.array([abs(r.line_offset_nm) if r.line_offset_nm is not None else np.nan for r in results])
    distance = np.where(is_fix, distance, offset)
    size = np.array([r.ellipse_semi_major_nm if r.is_fix else r.ellipse_semi_minor_nm for r in results])
    dr_sigma = DR_ERROR_KN * age_h + DR_ERROR_FRACTION * speed_kn * age_h
    # the fix's own uncertainty widens the allowance, but no more than the DR's does: a fix as uncertain as
    # that has its own warning
    allowed = (DR_DISAGREEMENT_SIGMAS * dr_sigma
               + np.minimum(np.where(np.isfinite(size), size, 0.0), DR_DISAGREEMENT_SIGMAS * dr_sigma) + 1.0)
    dof = np.array([r.redundant for r in results])
    sigma = np.array([r.sigma_arcmin for r in results])
    limit = np.full(dof.size, np.inf)
    judged = dof >= 1
    if judged.any():
        limit[judged] = SEXTANT_SIGMA_LIMIT_ARCMIN * np.sqrt(chi_square_quantile(SCATTER_CONFIDENCE, dof[judged])
                                                             / dof[judged])
    wild = is_fix & (sigma > limit)
    too_close = np.where(is_fix, too_good(sigma, dof)[1], "")
    far = distance > allowed
    dr_alone = DR_ALONE_SCALE * dr_sigma
    major = np.where(is_fix, size, 0.0)
    larger = is_fix & age_known & (dr_alone > 0) & (major > dr_alone)
    stopped = np.array([r == RunFrom.NONE for r in run_from], dtype=bool) & (span_min > STOPPED_SPAN_MIN)
    for j, result in enumerate(results):
        result.dr_distance_nm = float(distance[j])
        result.dr_age_h, result.dr_age_known = float(age_h[j]), bool(age_known[j])
        result.dr_allowed_nm = float(allowed[j])
        result.scatter_impossible = bool(wild[j])
    for j in np.flatnonzero(stopped).tolist():
        results[j].warnings.append(
            f"the sights span {span_min[j]:.0f} minutes but the log gives no course or speed and one DR for them "
            "all: the ship is taken as stopped; if she was under way, give the course and speed (or each "
            "sight's own DR) and fix again")
    for j in np.flatnonzero(far).tolist():
        result = results[j]
        age = (f"a DR {age_h[j]:.1f} h old" if age_known[j] else
               f"a DR of unknown age, taken as {UNKNOWN_DR_AGE_H:.0f} h old")
        result.warnings.append(
            f"the {result.kind} is {distance[j]:.0f} nm from the DR, far more than the DR could be out (about "
            f"{allowed[j]:.0f} nm for {age} at {speed_kn[j]:.1f} kn): check the time (the zone description and "
            "its sign, the date, the watch error), the DR and the body names before using either")
    for j in np.flatnonzero(larger).tolist():
        result = results[j]
        if result.spread_deg < 2 * WEAK_CROSSING_DEG:
            why = f"the lines cross at {result.spread_deg:.0f}° at most, too fine an angle to fix it along that axis"
        elif result.ellipse_note:
            why = "the sights are too few to judge their own error by (see the ellipse's note)"
        else:
            why = f"the sights scatter by σ {result.sigma_arcmin:.1f}′"
        axis = result.ellipse_orientation_deg
        result.warnings.append(
            f"the 95 % ellipse ({result.ellipse_semi_major_nm:.1f} nm semi-major axis, along {axis:03.0f}°/"
            f"{(axis + 180.0) % 360.0:03.0f}°) is larger than the DR's own 95 % circle ({dr_alone[j]:.1f} nm for a DR "
            f"{age_h[j]:.1f} h old at {speed_kn[j]:.1f} kn, navred's DR-error model): {why}; along that axis the "
            "DR is the better guide")
    for j in np.flatnonzero(too_close != "").tolist():
        results[j].warnings.append(too_close[j])
    common = np.array([common_error_arcmin(r) if w else np.nan for r, w in zip(results, wild)])
    for j in np.flatnonzero(wild).tolist():
        result = results[j]
        if np.isfinite(common[j]):
            result.warnings.append(
                f"the sights scatter by σ {result.sigma_arcmin:.1f}′ about the {result.kind}, beyond any hand-held "
                f"sextant: {_common_error_words(result)}")
            continue
        result.warnings.append(
            f"the sights scatter by σ {result.sigma_arcmin:.1f}′ about the {result.kind}, beyond any hand-held "
            f"sextant (a good sight is within about 1′, {SEXTANT_SIGMA_LIMIT_ARCMIN:.0f}′ in a seaway): most "
            "likely the altitudes are written wrongly (degrees and minutes written as a decimal, 29.216 for "
            "29° 21.6′), or a time or a body's name is wrong"
            + ("; or the run between the sights (course, speed, current)" if run_from[j] != RunFrom.NONE
               else ""))


__all__ = ["SEXTANT_SIGMA_LIMIT_ARCMIN", "SEXTANT_SIGMA_BEST_ARCMIN", "SEXTANT_READING_ARCMIN", "SCATTER_CONFIDENCE", "STOPPED_SPAN_MIN", "UNKNOWN_DR_AGE_H",
           "DR_DISAGREEMENT_SIGMAS", "COMMON_ERROR_MIN_ARCMIN", "COMMON_ERROR_SHARE", "COMMON_ERROR_MIN_SIGHTS",
           "COMMON_ERROR_MIN_SPREAD", "common_error", "common_error_arcmin",
           "sense_checks", "too_good"]
