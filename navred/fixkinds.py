"""A batch of groups solved the way each calls for: a fix (position, or position, course and speed made
good) by least squares, or, when the lines of position (nearly) coincide, one combined line of position
or a latitude, worked from the DR. Each way gives its groups' residuals, blunder flags and results."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from .angles import wrap_180, wrap_360, wrap_axial
from .constants import ARCMIN_PER_DEG
from .fixresult import (
    EMPTY_ROWS,
    FIX_ELLIPSE_LIMIT_NM,
    LINE_ONLY_DEG,
    LINE_ONLY_RATIO,
    FixResult,
    angle_words,
)
from .fixstats import (
    A_PRIORI_SIGMA_ARCMIN,
    CONFIDENCE,
    WEAK_CROSSING_DEG,
    azimuth_spread_many,
    blunder_note,
    blunder_test,
    ellipse_note,
    ellipse_sigma,
    error_ellipse,
    quantile_name,
    run_error_covariance,
    sight_variance,
    sigma_source,
)
from .leastsquares import (
    CONVERGED_NM,
    MAX_ITERATIONS,
    CoreFixes,
    at_sights,
    run_to_fix_nm,
    sight_hours,
    solve_fixes,
)
from .stats import chi_square_cdf, f_2_quantile, student_t_quantile
from .status import FixKind
from .triangle import computed_altitude_azimuth, destination

#: A mixed fix whose lines agree with their stated σ less often than this (chi-square) is warned.
STATED_DISAGREE = 0.01
#: Lines whose azimuths all lie within this of north or south are a latitude (sights on the meridian).
MERIDIAN_AZIMUTH_DEG = 10.0


_NAT = np.datetime64("NaT")

#: How σ reads when the log weighs some sights by their own σ.
WEIGHTED_WORDS = ("; the sights weighted by the σ the log gives them, 1/σ²: this σ is that of a sight the log "
                  "gives none (1′ as given), a sight of σ s′ is taken as good to s times it")


@dataclass(frozen=True)
class Part:
    """The groups of a batch solved one way: their residuals, blunder flags and gross errors (groups,
    sights), and the FixResult of group j (its per-sight arrays are filled in by the caller)."""

    residual_arcmin: np.ndarray
    outlier: np.ndarray
    gross: np.ndarray
    clear: np.ndarray
    result: Callable[[int], FixResult | None]
    #: a fix part's groups: why each is no fix after all ('' for a fix; see :func:`not_a_fix`)
    not_fix: np.ndarray | None = None
    #: a fix part's groups: the widest angle at which the lines cross at the position solved
    spread_deg: np.ndarray | None = None

    def take(self, keep: np.ndarray) -> Part:
        """This part's groups ``keep`` (indices), in that order."""
        keep = np.asarray(keep, dtype=np.intp)
        picked = keep.tolist()
        return Part(self.residual_arcmin[keep], self.outlier[keep], self.gross[keep], self.clear[keep],
                    lambda j: self.result(picked[j]),
                    None if self.not_fix is None else self.not_fix[keep],
                    None if self.spread_deg is None else self.spread_deg[keep])


def not_a_fix(spread_deg: np.ndarray, converged: np.ndarray, major_nm: np.ndarray, minor_nm: np.ndarray,
              singular: np.ndarray) -> np.ndarray:
    """Why each least-squares position is no fix, in words ('' for a fix), one rule for every group: its lines
    cross at less than LINE_ONLY_DEG where it lies; the iteration did not settle; or its 95 % ellipse is longer
    than FIX_ELLIPSE_LIMIT_NM (semi-major axis) and as narrow as lines crossing below LINE_ONLY_DEG give
    (LINE_ONLY_RATIO). Each such group is then worked as what it is, a line of position (or a latitude). A long
    round ellipse (a scatter, or too few sights) stays a position, marked as not to be trusted
    (:func:`navred.grosserrors.mark_untrusted`)."""
    out = np.full(spread_deg.shape, "", dtype=object)
    with np.errstate(invalid="ignore", divide="ignore"):
        narrow = (major_nm > FIX_ELLIPSE_LIMIT_NM) & (major_nm > LINE_ONLY_RATIO * minor_nm)
    for j in np.flatnonzero(~singular & ((spread_deg < LINE_ONLY_DEG) | ~converged | narrow)).tolist():
        angle = angle_words(float(spread_deg[j]), LINE_ONLY_DEG)
        if spread_deg[j] < LINE_ONLY_DEG:
            out[j] = f"the lines of position cross at {angle} at most (below {LINE_ONLY_DEG:.0f}°)"
        elif not converged[j]:
            out[j] = (f"the least-squares position did not settle to {CONVERGED_NM} nm in {MAX_ITERATIONS} steps "
                      f"(the lines cross at {angle} at most)")
        else:
            out[j] = (f"its 95 % ellipse would be {2 * major_nm[j]:.0f} × {2 * minor_nm[j]:.1f} nm, beyond the "
                      f"{2 * FIX_ELLIPSE_LIMIT_NM:.0f} nm of a position to plot as a fix and as thin as a line's (the "
                      f"lines cross at {angle} at most)")
    return out


def solve_fix_part(k, rows, gha, dec, ho, use, present, track, lat0, lon0, velocity0, dr_error_kn, dr_error_fraction,
                   weight=None, sigma=None, start=None):
    """Fix the groups ``rows`` with k unknowns (2: position; 4: position, course and speed made
    good) in one solve; returns a function giving group j's FixResult (per-sight arrays padded).

    ``weight`` (groups, sights): each sight's weight w = (σ₀/σᵢ)², σ₀ = A_PRIORI_SIGMA_ARCMIN (1 for a sight
    the log gives no σ). The fix is then the weighted least-squares one, x = (AᵀWA)⁻¹AᵀW r, and every statistic
    below is worked on the whitened sights (each residual and each row of A times √w, the run's covariance
    D C D with D = diag √w), in which the sights' errors are again alike: σ is that of a sight of unit weight
    (one the log gives no σ), a sight of weight w is taken as good to σ/√w, and the blunder test and the ellipse
    follow (C. F. Gauss's weighted least squares; any text on adjustment computations, e.g. P. D. Ghilani,
    *Adjustment Computations*, ch. 10; from memory). With every weight 1 this is the unweighted fix, bit for bit.

    σ is estimated from the residuals with no floor (Σr²/ν; with a run, the restricted likelihood that
    weighs out the DR error's share, :func:`sight_variance`); the position's covariance is
    A(σ²I + C)Aᵀ and the 95 % ellipse is scaled by √(2 F(2, ν)), ν the redundant sights, where the residuals
    alone judge σ (exact for Gaussian sight errors), and by chi-square(2) on σ taken as known (the larger of the
    residuals' and the a priori 1′) where the DR's error over the run has a say in them (:func:`ellipse_sigma`).

    A mixed fix (``sigma``, each cell's stated σ in nautical miles where it has one: a bearing or range of a
    charted object, :mod:`navred.landmarks`) weighs every line by its own σ, a sight's taken as the a priori
    A_PRIORI_SIGMA_ARCMIN, and its ellipse is the covariance of those stated σ (and the run's error) at the
    chi-square(2) quantile; the lines' agreement with their σ is tested (chi-square, 99 %). A group with no
    stated σ is worked as above, unchanged.

    ``start``: the groups' Hc and Zn at their DRs when worked already (the layout's ``at_dr``), for the first step of
    the solution (the same numbers).
    """
    motion = k == 4
    u = use[rows]
    w = np.ones(u.shape) if weight is None else np.where(u, weight[rows], 1.0)
    sub_track = track.take(rows)
    stated, each = None, None
    if sigma is not None and np.any(u & np.isfinite(sigma)):
        stated = sigma
        mixed = np.any(u & np.isfinite(stated), axis=1)
        # a mark's line its stated σ; a sight its own (the a priori 1′ scaled by its weight)
        each = np.where(np.isfinite(stated), stated, A_PRIORI_SIGMA_ARCMIN / np.sqrt(w))
        w = np.where(mixed[:, None], (A_PRIORI_SIGMA_ARCMIN / each) ** 2, w)
    core = solve_fixes(gha[rows], dec[rows], ho[rows], lat0[rows], lon0[rows], dt_hours=sight_hours(sub_track),
                       velocity_north_kn=sub_track.north_kn[..., :-1], velocity_east_kn=sub_track.east_kn[..., :-1],
                       weights=w, mask=u, report=present[rows], solve_motion=motion, velocity0_kn=velocity0,
                       mark_singular=True, track=sub_track, start=start)
    st = _fix_statistics(core, u, sub_track, k, dr_error_kn, dr_error_fraction, np.sqrt(w))
    st["weighted"] = np.any(u & (w != 1.0), axis=1)
    if stated is not None:
        _stated_statistics(st, core, u, sub_track, k, stated, each, dr_error_kn, dr_error_fraction)
    why = not_a_fix(st["spread"], core.converged, st["major"], st["minor"], core.singular)
    return Part(core.residual_arcmin, st["outlier"], st["gross"], st["clear"], _fix_results(core, st, k), why,
                st["spread"])


def _stated_statistics(st: dict, core: CoreFixes, u: np.ndarray, sub_track, k: int, stated: np.ndarray,
                       each_sigma: np.ndarray, dr_error_kn: float, dr_error_fraction: float) -> None:
    """The statistics of the mixed fixes of a part, in place of the estimated ones (see :func:`solve_fix_part`):
    each line weighed by its stated σ, the covariance G (diag σ² + C) Gᵀ of the weighted estimator G, the
    chi-square(2) ellipse, the blunder test on the residuals each scaled to the sights' σ, and the chi-square
    test of the lines' agreement."""
    mixed = np.any(u & np.isfinite(stated), axis=1)
    f = np.flatnonzero(mixed)
    uu = u[f]
    each = each_sigma[f]
    weight = np.where(uu, (A_PRIORI_SIGMA_ARCMIN / each) ** 2, 0.0)
    unit, jac = core.covariance_nm2[f], core.jacobian[f]
    gain = (unit @ np.swapaxes(jac, 1, 2)) * weight[:, None, :]
    if k == 4:
        run_cov = np.zeros((f.size, uu.shape[1], uu.shape[1]))
    else:
        run_cov = run_error_covariance(np.where(uu, core.zn_deg[f], 0.0), sight_hours(sub_track)[f],
                                       run_to_fix_nm(sub_track)[f], dr_error_kn, dr_error_fraction)
        run_cov = run_cov * uu[:, :, None] * uu[:, None, :]
    errors = np.eye(uu.shape[1])[None] * np.where(uu, each**2, 0.0)[:, :, None] + run_cov
    covariance = gain @ errors @ np.swapaxes(gain, 1, 2)
    scale = np.full(f.size, np.sqrt(-2.0 * np.log(1.0 - CONFIDENCE)))  # chi-square(2): the σ are stated
    major, minor, orientation = error_ellipse(covariance[:, :2, :2], scale)
    residual = np.where(uu, core.residual_arcmin[f], 0.0)
    scaled = residual * A_PRIORI_SIGMA_ARCMIN / each
    leverage = np.einsum("fsi,fij,fsj->fs", jac, unit, jac) * weight
    dof = st["dof"][f]
    outlier, gross, clear, detectable = blunder_test(scaled, leverage, uu, dof,
                                                     np.full(f.size, A_PRIORI_SIGMA_ARCMIN))
    misfit = np.sum((residual / each) ** 2, axis=1)
    with np.errstate(invalid="ignore"):
        chance = np.where(dof >= 1, 1.0 - chi_square_cdf(misfit, np.maximum(dof, 1)), 1.0)
    for name, value in (("position_cov", covariance[:, :2, :2]), ("scale", scale), ("major", major),
                        ("minor", minor), ("orientation", orientation), ("detectable", detectable)):
        st[name][f] = value
    st["sigma"][f] = A_PRIORI_SIGMA_ARCMIN
    st["nu"][f] = np.inf
    st["weight"][f] = 1.0
    for name, value in (("outlier", outlier), ("gross", gross), ("clear", clear)):
        st[name][f] = value
    if k == 4:
        st["speed_sigma"][f] = np.sqrt(np.trace(covariance[:, 2:, 2:], axis1=1, axis2=2))
    st["stated"] = {int(j): (float(chance[i]), int(np.sum(uu[i] & np.isfinite(stated[j])))) for i, j in
                    enumerate(f.tolist())}


def _fix_statistics(core: CoreFixes, u: np.ndarray, sub_track, k: int, dr_error_kn: float,
                    dr_error_fraction: float, root_w: np.ndarray) -> dict[str, np.ndarray]:
    """Each fix's σ, covariance, ellipse, effective degrees of freedom, crossing and blunder test (arrays over
    the fixes; see :func:`solve_fix_part`), worked on the sights whitened by ``root_w`` (√ of each weight)."""
    motion = k == 4
    n = u.sum(axis=1)
    dof = n - k
    residual = np.where(u, core.residual_arcmin * root_w, 0.0)
    unit, jac = core.covariance_nm2, core.jacobian * root_w[..., None]  # (ÃᵀÃ)⁻¹ = (AᵀWA)⁻¹ already
    width = u.shape[1]
    if motion:  # no known run: the motion itself was solved
        run_cov = np.zeros((u.shape[0], width, width))
    else:
        run_cov = run_error_covariance(np.where(u, core.zn_deg, 0.0), sight_hours(sub_track),
                                       run_to_fix_nm(sub_track), dr_error_kn, dr_error_fraction)
        run_cov = run_cov * (u * root_w)[:, :, None] * (u * root_w)[:, None, :]
    gain = unit @ jac.transpose(0, 2, 1)  # x = gain @ residual: the least-squares estimator
    gain_t = gain.transpose(0, 2, 1)
    identity = np.eye(width)[None] * u[:, :, None]  # I on the used sights
    projector = identity - jac @ gain  # M = I − H on the used sights
    variance = sight_variance(residual, projector, run_cov, dof)
    sigma2 = variance.working
    sigma = np.where(dof >= 1, np.sqrt(sigma2), A_PRIORI_SIGMA_ARCMIN)
    run_included = run_cov.any(axis=(1, 2))
    ellipse_sigma2, nu, taken = ellipse_sigma(sigma2, variance.weight, dof, run_included)
    known = gain @ run_cov @ gain_t
    covariance = ellipse_sigma2[:, None, None] * (gain @ identity @ gain_t) + known
    scale = np.sqrt(2.0 * f_2_quantile(CONFIDENCE, nu))
    major, minor, orientation = error_ellipse(covariance[:, :2, :2], scale)
    leverage = np.einsum("fsi,fij,fsj->fs", jac, unit, jac)
    outlier, gross, clear, detectable = blunder_test(residual, leverage, u, dof, sigma, root_w)
    speed_sigma = np.sqrt(np.trace(covariance[:, 2:, 2:], axis1=1, axis2=2)) if motion else np.zeros(u.shape[0])
    return {"n": n, "dof": dof, "sigma": sigma, "position_cov": covariance[:, :2, :2], "scale": scale, "major": major,
            "minor": minor, "orientation": orientation, "spread": azimuth_spread_many(core.zn_deg, u), "nu": nu,
            "detectable": detectable, "speed_sigma": speed_sigma, "run_included": run_included,
            "outlier": outlier, "gross": gross, "clear": clear, "weight": variance.weight, "taken": taken,
            "ellipse_sigma": np.sqrt(ellipse_sigma2)}


def _fix_results(core: CoreFixes, st: dict[str, np.ndarray], k: int) -> Callable[[int], FixResult | None]:
    """A function giving fix j's FixResult (None for parallel lines), its words and warnings, from the solution
    and its statistics; plain Python numbers, converted once (a numpy scalar costs more to handle)."""
    motion = k == 4
    lat, lon = core.lat_deg.tolist(), core.lon_deg.tolist()
    numbers = {name: st[name].tolist() for name in ("sigma", "major", "minor", "orientation", "scale", "spread",
                                                     "speed_sigma", "nu", "detectable", "dof", "n", "run_included",
                                                     "weight", "weighted", "ellipse_sigma")}
    steps_l, converged_l, singular_l = (core.iterations_each.tolist(), core.converged.tolist(),
                                        core.singular.tolist())
    position_cov = st["position_cov"]
    stated = st.get("stated", {})

    def result(j: int) -> FixResult | None:
        if singular_l[j]:
            return None
        warnings_: list[str] = []
        d, n, run_included = numbers["dof"][j], numbers["n"][j], numbers["run_included"][j]
        weight = numbers["weight"][j]
        chance, lines = stated.get(j, (None, 0))
        if lines:
            source = (f"stated: {A_PRIORI_SIGMA_ARCMIN}′ a sight (a good sight at sea) and each mark's line its own "
                      f"σ ({lines} line{'s' if lines != 1 else ''} of charted objects)")
            if chance < STATED_DISAGREE:
                warnings_.append(f"the lines disagree beyond their stated σ (a chance of {chance:.1%} if the σ "
                                 "are right): a sight or a mark's line is wrong, or the σ are too small; the ellipse "
                                 "rests on the stated σ")
        elif d >= 1:
            source = sigma_source(d, weight, run_included, numbers["ellipse_sigma"][j])
        else:
            source = f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight, no redundancy"
            warnings_.append(f"{n} sights and {k} unknowns: no redundancy, so the ellipse rests on an "
                             f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight and there is no check on a blunder")
        if numbers["weighted"][j]:
            source += WEIGHTED_WORDS
        spread = numbers["spread"][j]
        if spread < WEAK_CROSSING_DEG:
            warnings_.append(f"weak fix: the lines of position cross at {angle_words(spread, WEAK_CROSSING_DEG)} at "
                             f"most (azimuths alike or opposite); below {WEAK_CROSSING_DEG:.0f}° the fix is poorly "
                             "defined")
        if not converged_l[j]:
            warnings_.append(f"the iteration did not settle to {CONVERGED_NM} nm in {MAX_ITERATIONS} steps")
        detectable = numbers["detectable"][j]
        fix = FixResult(
            utc=_NAT, lat_deg=lat[j], lon_deg=lon[j], sigma_arcmin=numbers["sigma"][j],
            ellipse_semi_major_nm=numbers["major"][j], ellipse_semi_minor_nm=numbers["minor"][j],
            ellipse_orientation_deg=numbers["orientation"][j], residual_arcmin=EMPTY_ROWS, outlier=EMPTY_ROWS,
            warnings=warnings_, used=EMPTY_ROWS, n_sights=n, covariance_nm2=position_cov[j],
            confidence_scale=numbers["scale"][j], sigma_source=source, iterations=steps_l[j],
            ellipse_sigma_arcmin=(A_PRIORI_SIGMA_ARCMIN if lines else numbers["ellipse_sigma"][j]),
            quantile=quantile_name(numbers["nu"][j], d), spread_deg=spread, dr_error_included=run_included,
            redundant=d, ellipse_note=(
                "the 95 % ellipse of the stated σ of every line (chi-square(2)): each line weighed by its own σ"
                if lines else ellipse_note(n, k, d, numbers["nu"][j], weight, run_included,
                                           numbers["ellipse_sigma"][j])),
            blunder_note=blunder_note(n, d, detectable, k),
            detectable_blunder_arcmin=detectable)
        if motion:
            vn, ve = float(core.velocity_north_kn[j]), float(core.velocity_east_kn[j])
            fix.course_made_good_deg = float(wrap_360(np.degrees(np.arctan2(ve, vn))))
            fix.speed_made_good_kn = float(np.hypot(vn, ve))
            if numbers["speed_sigma"][j] > 2.0:
                warnings_.append(f"course and speed made good are poorly determined "
                                 f"(±{numbers['speed_sigma'][j]:.1f} kn)")
        return fix

    return result


def solve_line_part(rows, gha, dec, ho, use, present, track, lat0, lon0, spread0, dr_error_kn, dr_error_fraction,
                    weight=None, reason=None):
    """Groups whose lines of position (nearly) coincide: one combined line each, worked from the DR.

    Each line, advanced to the fix time, lies a_j miles from the DR toward its azimuth Z_j; the
    combined line runs across the mean azimuth Z (the axial mean) and lies p miles from the DR,
    the least-squares p = Σ a_j c_j / Σ c_j² with c_j = cos(Z_j − Z). Its 95 % band is Student's t
    with n − 1 degrees of freedom (an effective number when the DR's error over the run is part of it).
    With ``weight`` w_j (:func:`solve_fix_part`) the sums are weighted, p = Σ w_j a_j c_j / Σ w_j c_j², Z the
    weighted axial mean, and the statistics are those of the whitened sights.
    """
    u = use[rows]
    w = np.ones(u.shape) if weight is None else np.where(u, weight[rows], 1.0)
    root_w = np.sqrt(w)
    shown = present[rows]
    sub_track = track.take(rows)
    sight_lat, sight_lon = at_sights(sub_track, lat0[rows], lon0[rows])
    hc, zn = computed_altitude_azimuth(sight_lat, sight_lon, gha[rows], dec[rows])
    intercept_all = (ho[rows] - hc) * ARCMIN_PER_DEG
    intercept = np.where(u, intercept_all, 0.0)
    doubled = np.radians(2.0 * zn)
    toward = np.degrees(np.arctan2(np.where(u, w * np.sin(doubled), 0.0).sum(1),
                                   np.where(u, w * np.cos(doubled), 0.0).sum(1))) / 2.0
    cosines_all = np.cos(np.radians(zn - toward[:, None]))
    cosines = np.where(u, cosines_all, 0.0)
    flip = np.sum(w * intercept * cosines, axis=1) < 0  # point the line's azimuth to the side it lies on
    toward = wrap_360(np.where(flip, toward + 180.0, toward))
    cosines = np.where(flip[:, None], -cosines, cosines)
    cosines_all = np.where(flip[:, None], -cosines_all, cosines_all)
    cosines = cosines * root_w  # whitened: each line's row and intercept times √w
    total = np.sum(cosines**2, axis=1)
    offset = np.sum(intercept * root_w * cosines, axis=1) / total
    residual = np.where(shown, intercept_all - offset[:, None] * cosines_all, np.nan)
    r = np.where(u, residual * root_w, 0.0)
    n = u.sum(axis=1)
    dof = n - 1
    run_cov = run_error_covariance(np.where(u, zn, 0.0), sight_hours(sub_track), run_to_fix_nm(sub_track),
                                   dr_error_kn, dr_error_fraction)
    run_cov = run_cov * (u * root_w)[:, :, None] * (u * root_w)[:, None, :]
    gain = cosines / total[:, None]
    projector = np.eye(u.shape[1])[None] * u[:, :, None] - cosines[:, :, None] * gain[:, None, :]
    sights_variance = sight_variance(r, projector, run_cov, dof)
    sigma2 = sights_variance.working
    sigma = np.where(dof >= 1, np.sqrt(sigma2), A_PRIORI_SIGMA_ARCMIN)
    run_included = run_cov.any(axis=(1, 2))
    band_sigma2, nu, taken = ellipse_sigma(sigma2, sights_variance.weight, dof, run_included)
    known = np.einsum("fi,fij,fj->f", gain, run_cov, gain)
    unit = np.sum(gain**2, axis=1)
    variance = band_sigma2 * unit + known
    t = np.where(np.isfinite(nu), student_t_quantile(0.975, np.where(np.isfinite(nu), nu, 1.0)),
                 float(student_t_quantile(0.975, np.inf)))
    half_width = t * np.sqrt(variance)
    foot_lat, foot_lon = destination(lat0[rows], lon0[rows], toward, offset)
    near_meridian = np.minimum(np.abs(wrap_180(zn)), np.abs(wrap_180(zn - 180.0))) <= MERIDIAN_AZIMUTH_DEG
    meridian = np.all(near_meridian | ~u, axis=1)
    along = wrap_axial(toward + 90.0)
    outlier, gross, clear, detectable = blunder_test(r, cosines * gain, u, dof, sigma, root_w)
    weighted = np.any(u & (w != 1.0), axis=1)

    def result(j: int) -> FixResult:
        d = int(dof[j])
        source = (sigma_source(d, float(sights_variance.weight[j]), bool(run_included[j]),
                               float(np.sqrt(band_sigma2[j]))) if d >= 1
                  else f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight") + (WEIGHTED_WORDS if weighted[j] else "")
        side = "toward" if offset[j] >= 0 else "away from"
        what = "a latitude (the sights are on the meridian)" if meridian[j] else "a line of position"
        why = (reason[rows[j]] if reason is not None else "") or (
            f"the lines of position cross at {angle_words(float(spread0[rows[j]]), LINE_ONLY_DEG)} at most (below "
            f"{LINE_ONLY_DEG:.0f}°)")
        message = (f"not a fix: {why}, so the sights give {what}, {abs(offset[j]):.1f} nm {side} "
                   f"{toward[j]:03.0f}° from the DR, good to ±{half_width[j]:.1f} nm (95 %); the position along "
                   "it is the DR's")
        quantile = "normal" if not np.isfinite(nu[j]) else (f"t({d})" if abs(nu[j] - d) < 0.05 else f"t({nu[j]:.1f})")
        return FixResult(
            utc=np.datetime64("NaT"), lat_deg=float(foot_lat[j]), lon_deg=float(foot_lon[j]),
            sigma_arcmin=float(sigma[j]), ellipse_semi_major_nm=float("inf"),
            ellipse_semi_minor_nm=float(half_width[j]), ellipse_orientation_deg=float(along[j]),
            residual_arcmin=residual[j], outlier=outlier[j], warnings=[message], used=u[j], n_sights=int(n[j]),
            covariance_nm2=np.array([[variance[j], 0.0], [0.0, np.inf]]), confidence_scale=float(t[j]),
            sigma_source=source, iterations=0, quantile=quantile,
            ellipse_sigma_arcmin=float(np.sqrt(band_sigma2[j])), kind=FixKind.LATITUDE if meridian[j] else FixKind.LINE,
            spread_deg=float(spread0[rows[j]]), line_bearing_deg=float(along[j]), line_offset_nm=float(offset[j]),
            line_toward_deg=float(toward[j]), dr_error_included=bool(run_included[j]), redundant=d, not_fix_reason=why,
            blunder_note=blunder_note(int(n[j]), d, float(detectable[j]), 1),
            detectable_blunder_arcmin=float(detectable[j]))

    return Part(residual, outlier, gross, clear, result)


__all__ = ["WEIGHTED_WORDS", "WEAK_CROSSING_DEG", "MERIDIAN_AZIMUTH_DEG", "Part", "not_a_fix", "solve_fix_part",
           "solve_line_part"]
