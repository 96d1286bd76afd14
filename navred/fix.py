"""Position fixing: the fix of many groups of sights at once, or of one group, and the chart cross-check.

The pieces are modules of their own: the least-squares solver on the sphere (:mod:`navred.leastsquares`),
one solve of every group of a batch (:mod:`navred.fixbatch`), a fix or a line of position
(:mod:`navred.fixkinds`), the statistics (:mod:`navred.fixstats`), the gross errors left out and the check
fixes (:mod:`navred.grosserrors`), the sense checks (:mod:`navred.sensechecks`), the latitude methods
(:mod:`navred.latitudes`), and the result (:mod:`navred.fixresult`). This module puts them together.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .errors import NavredError
from .fixbatch import SightRows, fix_batch
from .fixresult import FixResult, GroupFixes
from .fixstats import A_PRIORI_SIGMA_ARCMIN, DR_ERROR_FRACTION, DR_ERROR_KN
from .grosserrors import check_fixes, leave_out_gross, mark_untrusted, mirrored_drs, misread_rounds
from .leastsquares import broadcast
from .timescales import utc_datetime64
from .triangle import distance_bearing


def _fix_times(at_utc, groups: int) -> np.ndarray:
    """The fix time of each group as datetime64[ns] (NaT: the group's last sight), from None, one
    instant for every group, or one per group."""
    if at_utc is None:
        return np.full(groups, np.datetime64("NaT"), dtype="datetime64[ns]")
    if isinstance(at_utc, np.datetime64):
        at_utc = np.array([at_utc])
    values = np.atleast_1d(at_utc if isinstance(at_utc, np.ndarray) else np.asarray(at_utc, dtype=object))
    if np.issubdtype(values.dtype, np.datetime64):
        times = values.astype("datetime64[ns]")
    else:
        given = np.array([v is not None and not (isinstance(v, float) and np.isnan(v)) for v in values])
        times = np.full(values.shape, np.datetime64("NaT"), dtype="datetime64[ns]")
        if given.any():
            times[given] = utc_datetime64(values[given])
    return np.broadcast_to(times, (groups,)).copy()


def fixes_from_sights(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, utc: ArrayLike,
                      dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike, group: ArrayLike, *,
                      usable: ArrayLike | None = None, course_deg: ArrayLike | None = None,
                      speed_kn: ArrayLike | None = None, at_utc: object | None = None,
                      chart_lat: ArrayLike | None = None, chart_lon: ArrayLike | None = None,
                      solve_motion: bool = False, set_deg: ArrayLike | None = None, drift_kn: ArrayLike | None = None,
                      labels: ArrayLike | None = None, dr_error_kn: float = DR_ERROR_KN,
                      dr_error_fraction: float = DR_ERROR_FRACTION, refit: bool = True,
                      dr_age_hours: ArrayLike | None = None, hs_deg: ArrayLike | None = None,
                      sigma_arcmin: ArrayLike | None = None, line_sigma_nm: ArrayLike | None = None) -> GroupFixes:
    """Fix many groups of sights at once: one least-squares solve for every group, padded.

    The arrays are one element per sight (1-D), as for :func:`fix_from_sights`; ``group``
    numbers each sight's group 0, 1, ... (a negative number leaves the sight out). ``at_utc``
    is one fix time for all, one per group, or None (each group's last sight); ``chart_lat``
    and ``chart_lon`` one chart or GNSS position per group (NaN where there is none); ``set_deg``
    and ``drift_kn`` one current for all or the current in force after each sight; ``dr_age_hours``
    the age of each sight's DR (hours since the known position it was carried from; NaN or None:
    not known). Each group's arrays in its result follow its sights in input order. Every group
    gets the same result it would get alone, to the last bit (it is solved side by side only with groups of as
    many sights; tests/test_fix.py and tests/test_frames.py check it field by field).

    With ``refit`` (the default), a sight whose line is a gross error beyond doubt is left out of
    its group's fix (the fix from every sight is kept as ``all_sights``), and the sights flagged as
    possible blunders are left out of a check fix (``without_outliers``). With ``hs_deg`` (each sight's
    sextant altitude as read), a round whose Hs read as degrees and minutes written as a decimal agree is marked
    as not to be trusted, before any sight is left out; so is one whose sights still scatter beyond a sextant.

    ``sigma_arcmin``: each sight's own standard error (arcminutes; NaN or None: a sight as good as any). The fix
    then weighs each sight by w = (A_PRIORI_SIGMA_ARCMIN / σᵢ)² (weighted least squares, and its statistics on
    the whitened sights: :func:`navred.fixkinds.solve_fix_part`); the σ given is relative, the round's own
    scatter still sets the ellipse. Without it every weight is 1 and the fix is the unweighted one, bit for bit.

    ``line_sigma_nm``: each row's own σ (nautical miles) where it is a bearing or a range of a charted object
    turned into a body of its own (:mod:`navred.landmarks`), NaN for a sight. A group holding such a line is a
    mixed fix: every line weighed by its own σ, the sights' the a priori 1′, in one ellipse of the stated σ.
    """
    gha, dec, ho = (np.atleast_1d(np.asarray(v, dtype=float)) for v in (gha_deg, dec_deg, ho_deg))
    n_rows = gha.size

    def per_row(values, fill=np.nan):
        if values is None:
            return np.full(n_rows, fill)
        return np.array(broadcast(values, (n_rows,)), dtype=float)

    drift = per_row(drift_kn, 0.0) if set_deg is not None else np.zeros(n_rows)
    weight = sight_weights(per_row(sigma_arcmin), labels)
    sights = SightRows(
        gha, dec, ho, np.array(broadcast(utc_datetime64(utc), (n_rows,), None)), per_row(dr_lat_deg), per_row(dr_lon_deg),
        per_row(course_deg), per_row(speed_kn), _nil_for_nan(per_row(set_deg, 0.0)), _nil_for_nan(drift),
        per_row(dr_age_hours),
        np.arange(1, n_rows + 1).astype(str) if labels is None else np.asarray(labels).astype(str),
        solve_motion, dr_error_kn, dr_error_fraction, weight,
        None if line_sigma_nm is None else per_row(line_sigma_nm))
    group = np.array(broadcast(group, (n_rows,), np.intp))
    n_groups = int(group.max()) + 1 if n_rows and group.max() >= 0 else 0
    ok = (group >= 0) & np.isfinite(gha) & np.isfinite(dec) & np.isfinite(ho) & ~np.isnat(sights.utc)
    if usable is not None:
        ok &= broadcast(usable, (n_rows,), bool)
    nothing = np.zeros(n_rows, dtype=bool)
    fix_times = _fix_times(at_utc, n_groups)
    results, problems = fix_batch(sights, group, n_groups, ok, nothing, fix_times)
    if refit:
        misread = (misread_rounds(sights, per_row(hs_deg), group, n_groups, ok, results) if hs_deg is not None
                   else set())
        leave_out_gross(sights, group, n_groups, ok, results, frozenset(misread), fix_times)
        check_fixes(sights, group, n_groups, ok, results)
        mirrored_drs(sights, group, n_groups, ok, results)
        mark_untrusted(results)
    # --- the chart or GNSS cross-check ------------------------------------------------------------
    if chart_lat is not None and chart_lon is not None:
        _cross_check_all(results, np.broadcast_to(np.asarray(chart_lat, dtype=float), (n_groups,)),
                         np.broadcast_to(np.asarray(chart_lon, dtype=float), (n_groups,)))
    return GroupFixes(results, problems)


def sight_weights(sigma_arcmin: np.ndarray, labels=None) -> np.ndarray:
    """Each sight's weight in the fix, (A_PRIORI_SIGMA_ARCMIN / σ)², from its own standard error in arcminutes (NaN:
    a sight as good as any, weight 1). A σ that is not a positive number is refused, naming its sights.

    >>> sight_weights(np.array([np.nan, 1.0, 2.0, 0.5])).tolist()
    [1.0, 1.0, 0.25, 4.0]
    """
    sigma = np.asarray(sigma_arcmin, dtype=float)
    if np.isnan(sigma).all():  # no sight given a σ of its own (the usual log)
        return np.ones(sigma.shape)
    bad = ~np.isnan(sigma) & ~(np.isfinite(sigma) & (sigma > 0))
    if bad.any():
        names = (np.arange(1, sigma.size + 1).astype(str) if labels is None else np.asarray(labels).astype(str))
        shown = ", ".join(f"{name} ({value:g}′)" for name, value in zip(names[bad][:8], sigma[bad][:8].tolist()))
        raise NavredError(f"a sight's σ must be a positive number of arcminutes; not so for {shown}")
    with np.errstate(divide="ignore"):
        return np.where(np.isnan(sigma), 1.0, (A_PRIORI_SIGMA_ARCMIN / np.where(np.isnan(sigma), 1.0, sigma)) ** 2)


def _nil_for_nan(values: np.ndarray) -> np.ndarray:
    """``np.nan_to_num(values)``, without its cost where every value is a number already."""
    return values if np.isfinite(values).all() else np.nan_to_num(values)


def _cross_check_all(results: list[FixResult | None], chart_lat: np.ndarray, chart_lon: np.ndarray) -> None:
    """:meth:`FixResult.cross_check` of every result that has a chart position, at once."""
    chosen = [g for g, r in enumerate(results) if r is not None and np.isfinite(chart_lat[g])
              and np.isfinite(chart_lon[g])]
    if not chosen:
        return
    picked = [results[g] for g in chosen]
    lat = np.array([r.lat_deg for r in picked])
    lon = np.array([r.lon_deg for r in picked])
    distance, bearing = distance_bearing(lat, lon, chart_lat[chosen], chart_lon[chosen])
    b = np.radians(bearing)
    offset = distance[:, None] * np.stack([np.cos(b), np.sin(b)], axis=1)
    is_fix = np.array([r.is_fix for r in picked])
    cov = np.stack([r.covariance_nm2 if r.is_fix else np.eye(2) for r in picked])
    scale = np.array([r.confidence_scale for r in picked])
    inside_fix = np.einsum("fi,fi->f", offset, np.linalg.solve(cov, offset[..., None])[..., 0]) <= scale**2
    toward = np.array([r.line_toward_deg if r.line_toward_deg is not None else 0.0 for r in picked])
    across = distance * np.cos(np.radians(bearing - toward))
    inside_line = np.abs(across) <= np.array([r.ellipse_semi_minor_nm for r in picked])
    inside = np.where(is_fix, inside_fix, inside_line)
    for j, result in enumerate(picked):
        result.chart_distance_nm, result.chart_bearing_deg = float(distance[j]), float(bearing[j])
        result.chart_inside_ellipse = bool(inside[j])


def fix_from_sights(gha_deg: ArrayLike, dec_deg: ArrayLike, ho_deg: ArrayLike, utc: ArrayLike,
                    dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike, *, usable: ArrayLike | None = None,
                    course_deg: ArrayLike | None = None, speed_kn: ArrayLike | None = None,
                    at_utc: object | None = None, chart_lat: float | None = None, chart_lon: float | None = None,
                    solve_motion: bool = False, set_deg: ArrayLike | None = None,
                    drift_kn: ArrayLike | None = None, labels: ArrayLike | None = None,
                    dr_error_kn: float = DR_ERROR_KN, dr_error_fraction: float = DR_ERROR_FRACTION,
                    dr_age_hours: ArrayLike | None = None, hs_deg: ArrayLike | None = None,
                    sigma_arcmin: ArrayLike | None = None, line_sigma_nm: ArrayLike | None = None) -> FixResult:
    """The least-squares fix from reduced sights, one element per sight (1-D arrays).

    ``gha_deg``, ``dec_deg`` and ``ho_deg`` of each sight, its ``utc`` (datetime64, taken as
    UTC, or any instant form) and the DR at its time; ``usable`` (default: every sight with
    finite values) picks the sights to fix from, the others get NaN residuals. Sights at
    different times make a running fix at ``at_utc`` (default: the last sight's time), along
    the DR track of ``course_deg`` and ``speed_kn`` (per sight: in force from each sight until
    the next; NaN as 0), plus a current ``set_deg``/``drift_kn`` (one, or per sight: in force
    after it); with no course and no speed for any sight, the run between the sights is taken
    from their own DRs where they differ (else the ship is taken as stopped, and a fix spanning
    more than :data:`STOPPED_SPAN_MIN` minutes says so). The run's own error, ``dr_error_kn`` per
    hour and ``dr_error_fraction`` of the miles run, enters the ellipse. ``dr_age_hours``: how old
    each sight's DR is, for the check of the fix against it (default: not known, taken as a day).
    With ``solve_motion`` the course and speed made good are solved as well when the sights
    support it. A chart or GNSS position (``chart_lat``/``chart_lon``) is cross-checked. ``hs_deg``: each
    sight's Hs as read, for the check of a round written in degrees and minutes as a decimal. ``sigma_arcmin``:
    each sight's own standard error, weighing it in the fix (NaN: a sight as good as any; see
    :func:`fixes_from_sights`); ``line_sigma_nm``: a landmark bearing's or range's own σ, as there.
    ``labels`` name the sights in messages (default: 1, 2, ...). One group of
    :func:`fixes_from_sights`.
    """
    n_rows = np.atleast_1d(np.asarray(gha_deg, dtype=float)).size
    batch = fixes_from_sights(
        gha_deg, dec_deg, ho_deg, utc, dr_lat_deg, dr_lon_deg, np.zeros(n_rows, dtype=np.intp), usable=usable,
        course_deg=course_deg, speed_kn=speed_kn, at_utc=at_utc,
        chart_lat=np.nan if chart_lat is None else chart_lat, chart_lon=np.nan if chart_lon is None else chart_lon,
        solve_motion=solve_motion, set_deg=set_deg, drift_kn=drift_kn, labels=labels, dr_error_kn=dr_error_kn,
        dr_error_fraction=dr_error_fraction, dr_age_hours=dr_age_hours, hs_deg=hs_deg, sigma_arcmin=sigma_arcmin,
        line_sigma_nm=line_sigma_nm)
    if batch.results[0] is None:
        raise NavredError(batch.problems[0])
    return batch.results[0]


__all__ = ["fixes_from_sights", "fix_from_sights", "sight_weights", "FixResult", "GroupFixes"]
