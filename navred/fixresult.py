"""What a fix gives: :class:`FixResult` (a fix, a line of position or a latitude, how good it is and which
sight was bad), a chart position compared with it (:class:`ChartCheck`), and a batch's results
(:class:`GroupFixes`)."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .angles import wrap_axial
from .status import Distrust, FixKind, RunFrom
from .triangle import distance_bearing

#: Lines of position that cross at less than this make a line (or a latitude), not a fix (common practice: below
#: about 15° the lines' crossing is too fine to plot a point by).
LINE_ONLY_DEG = 15.0

#: A least-squares position whose 95 % ellipse has a semi-major axis beyond this (nm) is not plotted as a fix:
#: a position not known within 30 miles along an axis is no fix, and the plotting sheet's flat working of
#: intercepts holds to about that distance (common practice; the same 30 nm as LARGE_INTERCEPT_NM). An ellipse
#: that long and as narrow as lines crossing below LINE_ONLY_DEG give (LINE_ONLY_RATIO) is a line of position;
#: one that long and round is a position that cannot be trusted (too few sights, or a scatter).
FIX_ELLIPSE_LIMIT_NM = 30.0

#: The ratio of the ellipse's axes for two equally good lines crossing at LINE_ONLY_DEG: cot(θ/2) (the normal
#: matrix n₁n₁ᵀ + n₂n₂ᵀ has eigenvalues 1 ± cos θ; the axes go as their inverse square roots).
LINE_ONLY_RATIO = 1.0 / math.tan(math.radians(LINE_ONLY_DEG / 2.0))


def angle_words(angle_deg: float, limit_deg: float) -> str:
    """An angle of cut written beside a limit, in whole degrees, or in tenths (cut down, never up) where an angle
    below the limit would otherwise read as the limit itself: '3°', '14.7°' for 14.74° beside 15°, never
    '15° ... below 15°'.

    >>> angle_words(3.2, 15.0), angle_words(14.96, 15.0), angle_words(40.0, 15.0)
    ('3°', '14.9°', '40°')
    """
    if angle_deg < limit_deg and round(angle_deg) >= limit_deg:
        return f"{math.floor(angle_deg * 10.0) / 10.0:.1f}°"
    return f"{angle_deg:.0f}°"


def angle_of_cut_deg(zn_deg) -> float:
    """The angle of cut of lines of position, 0°-90°: the widest acute angle at which two of them cross (each
    line runs across its azimuth, so lines whose azimuths differ by d cross at d or 180° − d, whichever is
    less; common practice). NaN with fewer than two lines.

    >>> angle_of_cut_deg([113.5, 180.2, 233.1])
    66.7
    """
    directions = wrap_axial(np.asarray(zn_deg, dtype=float))
    directions = directions[np.isfinite(directions)]
    if directions.size < 2:
        return float("nan")
    d = np.abs(directions[:, None] - directions[None, :])
    return round(float(np.minimum(d, 180.0 - d).max()), 10)


EMPTY_ROWS = np.zeros(0)
EMPTY_ROWS.flags.writeable = False  # a placeholder for per-sight arrays not yet filled in (never written to)


@dataclass
class ChartCheck:
    """A chart or satellite position compared with the celestial fix."""

    lat_deg: float
    lon_deg: float
    distance_nm: float
    bearing_deg: float
    inside_ellipse: bool


@dataclass
class FixResult:
    """A fix (or a line, or a latitude), how good it is, and which sight was bad. One residual and flag per input row.

    ``kind`` is a :class:`~navred.status.FixKind` (``"fix"``, ``"line of position"`` or ``"latitude"``): when the lines cross at less
    than :data:`LINE_ONLY_DEG` there is no fix, and ``lat_deg``/``lon_deg`` are the foot of the
    combined line nearest the DR, which runs at ``line_bearing_deg``; the ellipse is then a band
    of half-width ``ellipse_semi_minor_nm`` along the line (its semi-major axis is infinite).
    """

    utc: np.datetime64
    lat_deg: float
    lon_deg: float
    sigma_arcmin: float
    ellipse_semi_major_nm: float
    ellipse_semi_minor_nm: float
    ellipse_orientation_deg: float
    residual_arcmin: np.ndarray
    outlier: np.ndarray
    warnings: list[str]
    used: np.ndarray
    n_sights: int
    covariance_nm2: np.ndarray
    confidence_scale: float
    sigma_source: str
    iterations: int
    #: the quantile the ellipse is scaled by: 'F(2, ν)' for a σ estimated from ν redundant sights (ν their real
    #: count), 'chi-square(2)' for a σ assumed (two sights) or taken as known where the DR's error over the run has
    #: a say in the residuals (:func:`navred.fixstats.ellipse_sigma`), 't(ν)' or 'normal' for a line's band
    quantile: str = ""
    #: the sights' σ (arcminutes) the ellipse or band is built on: ``sigma_arcmin``, or where σ is taken as known,
    #: the larger of it and the a priori 1′ (NaN: not worked)
    ellipse_sigma_arcmin: float = float("nan")
    kind: FixKind = FixKind.FIX
    spread_deg: float = float("nan")
    line_bearing_deg: float | None = None
    #: the line's distance from the DR at the fix time, toward line_toward_deg (a line or latitude)
    line_offset_nm: float | None = None
    line_toward_deg: float | None = None
    #: the latitude from the noon curve (a parabola fitted to a series around meridian passage)
    noon_curve_latitude_deg: float | None = None
    dr_error_included: bool = False
    course_made_good_deg: float | None = None
    speed_made_good_kn: float | None = None
    #: the check fix: this one recomputed without the sights flagged as possible blunders (kept in it)
    without_outliers: FixResult | None = field(default=None, repr=False)
    #: per input row: a sight whose line is a gross error beyond doubt, left out of this fix (see all_sights)
    left_out: np.ndarray = field(default_factory=lambda: EMPTY_ROWS)
    #: per input row: a flagged sight of this fix that is a gross error beyond doubt (GROSS_ARCMIN off)
    gross: np.ndarray = field(default_factory=lambda: EMPTY_ROWS)
    #: per input row: a flagged sight of this fix that the blunder test also flags at BLUNDER_CLEAR_ALPHA
    clear_blunder: np.ndarray = field(default_factory=lambda: EMPTY_ROWS)
    #: per input row: the sight's weight in the fix, (A_PRIORI_SIGMA_ARCMIN / its own σ)², 1 where the log gives no σ
    weight: np.ndarray = field(default_factory=lambda: EMPTY_ROWS)
    #: per input row: a sight left out of this fix by the blunder test alone (flagged, not a gross error)
    blunder_left_out: np.ndarray = field(default_factory=lambda: EMPTY_ROWS)
    #: the fix from every sight, when a sight was left out of this one (a gross error, or flagged by the test)
    all_sights: FixResult | None = field(default=None, repr=False)
    #: why this position cannot be trusted as the position to plot ('' when nothing says so): a round whose
    #: altitudes read another way agree (degrees and minutes written as a decimal), or whose sights still
    #: scatter beyond any hand-held sextant
    untrusted: str = ""
    #: the kind of that reason (a :class:`~navred.status.Distrust`; None for a position to plot), set with it
    untrusted_cause: Distrust | None = None
    #: the fix of every sight with its Hs read as degrees and minutes written as a decimal, when that reading
    #: makes the sights agree (the reason this one is untrusted)
    other_reading: FixResult | None = field(default=None, repr=False)
    #: the names of the sights left out ('row 9', as the labels given)
    left_out_names: list[str] = field(default_factory=list)
    #: why the sights give no fix (a line or a latitude), in words: the lines cross too finely, the least-squares
    #: position did not settle, or its ellipse is longer than a fix's (FIX_ELLIPSE_LIMIT_NM); '' for a fix
    not_fix_reason: str = ""
    #: sights beyond the unknowns (n − k): how many check the others
    redundant: int = 0
    #: what the ellipse's size means for this count of sights, in words (few redundant sights)
    ellipse_note: str = ""
    #: what the blunder test can find with these sights, in words
    blunder_note: str = ""
    #: about the smallest blunder (arcminutes) the test finds in half the fixes, from this fix's scatter
    #: (NaN when the sights are too few to single one out)
    detectable_blunder_arcmin: float = float("nan")
    #: how the run between the sights was found: 'course and speed', 'course, speed and current', 'the
    #: rows' own DRs', or 'none' (sights taken together, or a ship taken as stopped)
    run_from: RunFrom = RunFrom.NONE
    #: the run between the sights in words, how it was found and the values it was carried by: 'course and
    #: speed, 215° at 6.5 kn', 'course and speed, stopped (0 kn)' (:func:`run_words`; '' where there is no run)
    run_text: str = ""
    #: the fix's distance from the DR at the fix time (nm)
    dr_distance_nm: float = float("nan")
    #: the DR's age at the fix time (hours; UNKNOWN_DR_AGE_H where the log does not date it), whether the log
    #: dates it, and how far the fix may lie from it before the far-from-DR warning (nm)
    dr_age_h: float = float("nan")
    dr_age_known: bool = False
    dr_allowed_nm: float = float("nan")
    #: the sights scatter beyond any hand-held sextant (SEXTANT_SIGMA_LIMIT_ARCMIN, at SCATTER_CONFIDENCE)
    scatter_impossible: bool = False
    chart_distance_nm: float | None = None
    chart_bearing_deg: float | None = None
    chart_inside_ellipse: bool | None = None
    #: the DR at the fix time, and each sight's line of position advanced (or retired) to the
    #: fix time, as an intercept and azimuth from that DR (input-row order, NaN if unused)
    dr_lat_deg: float = float("nan")
    dr_lon_deg: float = float("nan")
    lop_intercept_nm: np.ndarray = field(default_factory=lambda: EMPTY_ROWS)
    lop_zn_deg: np.ndarray = field(default_factory=lambda: EMPTY_ROWS)
    #: each line's foot (the intercept along Zn from that DR) and the true bearing of the line there:
    #: tangent to the circle of equal altitude at the foot
    lop_foot_lat_deg: np.ndarray = field(default_factory=lambda: EMPTY_ROWS)
    lop_foot_lon_deg: np.ndarray = field(default_factory=lambda: EMPTY_ROWS)
    lop_tangent_deg: np.ndarray = field(default_factory=lambda: EMPTY_ROWS)

    @property
    def is_fix(self) -> bool:
        return self.kind == FixKind.FIX

    @property
    def trusted(self) -> bool:
        """False for a position marked as not to be plotted (:attr:`untrusted` says why): the ``trusted`` column
        of every table of fixes, the Fixes sheet, GPX and GeoJSON read this one property."""
        return not self.untrusted

    def ellipse_text(self) -> str:
        """The 95 % ellipse's full size as a navigator reads it, and its semi-axes: '10.9 × 2.8 nm, semi-axes
        5.4 × 1.4 nm' (for a line or a latitude, the band's width: '2.8 nm wide, ±1.4 nm')."""
        if not self.is_fix:
            return f"{2 * self.ellipse_semi_minor_nm:.1f} nm wide, ±{self.ellipse_semi_minor_nm:.1f} nm"
        a, b = self.ellipse_semi_major_nm, self.ellipse_semi_minor_nm
        return f"{2 * a:.1f} × {2 * b:.1f} nm, semi-axes {a:.1f} × {b:.1f} nm"

    @property
    def angle_of_cut_deg(self) -> float:
        """The angle of cut of the lines the fix used, 0°-90° (:func:`angle_of_cut_deg`)."""
        zn = np.asarray(self.lop_zn_deg, dtype=float)
        use = np.asarray(self.used, dtype=bool) if np.size(self.used) == zn.size else np.ones(zn.size, dtype=bool)
        if np.size(self.left_out) == zn.size:
            use = use & ~np.asarray(self.left_out, dtype=bool)
        return angle_of_cut_deg(zn[use])

    @property
    def weighted(self) -> bool:
        """Whether the log weighs some sight of this fix by its own σ (a weight other than 1)."""
        return bool(np.any(np.asarray(self.weight)[np.asarray(self.used, dtype=bool)] != 1.0)) \
            if np.size(self.weight) == np.size(self.used) else False

    @property
    def sight_sigma_arcmin(self) -> np.ndarray:
        """Per input row: the standard error the fix takes each sight to have, σ/√w (σ the round's, that of a
        sight of weight 1; w the sight's weight)."""
        weight = np.asarray(self.weight, dtype=float) if np.size(self.weight) else np.ones(np.size(self.used))
        return self.sigma_arcmin / np.sqrt(weight)

    @property
    def standard_error_nm(self) -> float:
        """Root of the trace of the position covariance: the fix's standard error, nm: 1σ radial (the drms,
        √(σ north² + σ east²), the root-mean-square distance of the fix from the true position; about 63 % to
        68 % of fixes lie within it, depending on the ellipse's shape), not a 95 % figure."""
        return float(np.sqrt(np.trace(self.covariance_nm2)))

    def cross_check(self, lat_deg: float, lon_deg: float) -> ChartCheck:
        """Distance and bearing from the fix to a chart or GNSS position, and whether it lies inside
        the 95 % ellipse (for a line of position: within its 95 % band)."""
        distance, bearing = distance_bearing(self.lat_deg, self.lon_deg, lat_deg, lon_deg)
        if not self.is_fix:
            across = self.distance_off_line_nm(lat_deg, lon_deg)
            return ChartCheck(float(lat_deg), float(lon_deg), float(distance), float(bearing),
                              bool(abs(across) <= self.ellipse_semi_minor_nm))
        b = np.radians(float(bearing))
        offset = float(distance) * np.array([np.cos(b), np.sin(b)])
        inside = float(offset @ np.linalg.solve(self.covariance_nm2, offset)) <= self.confidence_scale**2
        return ChartCheck(float(lat_deg), float(lon_deg), float(distance), float(bearing), bool(inside))

    def distance_off_line_nm(self, lat_deg: float, lon_deg: float) -> float:
        """For a line of position or a latitude: how far a position lies off the line (positive
        on the side the line's azimuth points to)."""
        distance, bearing = distance_bearing(self.lat_deg, self.lon_deg, lat_deg, lon_deg)
        toward = self.line_toward_deg if self.line_toward_deg is not None else 0.0
        return float(distance * np.cos(np.radians(float(bearing) - toward)))


@dataclass
class GroupFixes:
    """One fix (or line, or latitude) per group, or the reason there is none."""

    results: list[FixResult | None]
    problems: list[str]


PARALLEL_LINES = "the lines of position are parallel (all azimuths alike or opposite): no fix"


def run_words(run_from: RunFrom, course_deg: np.ndarray, speed_kn: np.ndarray, set_deg: np.ndarray,
              drift_kn: np.ndarray) -> str:
    """The run between a fix's sights in words, as a navigator reads it: how it was found, then the course and
    speed each sight gives (in its order, a change written once: '215° at 6.5 kn, then stopped (0 kn)') and the
    current. A speed of 0 (or none given, taken as 0) is 'stopped (0 kn)', never left blank. '' where there
    is no run (``RunFrom.NONE``)."""
    if run_from == RunFrom.NONE:
        return ""
    words = str(run_from)
    if run_from not in (RunFrom.COURSE_AND_SPEED, RunFrom.COURSE_SPEED_AND_CURRENT, RunFrom.CURRENT):
        return words

    def changes(texts: list[str]) -> str:
        kept = [t for k, t in enumerate(texts) if k == 0 or t != texts[k - 1]]
        return ", then ".join(kept)

    said = []
    if run_from != RunFrom.CURRENT:
        legs = []
        for course, speed in zip(np.asarray(course_deg, dtype=float).tolist(),
                                 np.asarray(speed_kn, dtype=float).tolist()):
            if not math.isfinite(speed):
                legs.append("stopped (no speed given: 0 kn)")
            elif speed <= 0.0:
                legs.append("stopped (0 kn)")
            else:
                legs.append(f"{course:03.0f}° at {speed:.1f} kn" if math.isfinite(course) else
                            f"{speed:.1f} kn, no course given")
        if legs:
            said.append(changes(legs))
    currents = [f"{a:03.0f}° {b:.1f} kn" if b > 0 else "none"
                for a, b in zip(np.asarray(set_deg, dtype=float).tolist(), np.asarray(drift_kn, dtype=float).tolist())
                if math.isfinite(a) and math.isfinite(b)]
    if run_from != RunFrom.COURSE_AND_SPEED and any(c != "none" for c in currents):
        said.append("current " + changes(currents))
    return words + (", " + "; ".join(said) if said else "")


__all__ = ["angle_of_cut_deg", "angle_words", "LINE_ONLY_DEG", "FIX_ELLIPSE_LIMIT_NM", "LINE_ONLY_RATIO", "EMPTY_ROWS", "ChartCheck", "FixResult", "GroupFixes", "PARALLEL_LINES", "run_words"]
