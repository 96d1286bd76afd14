"""The numbers of the printed backup: tables a navigator reduces sights from with a pencil and a calculator.

Core code (numpy and navred's own almanac and corrections). Every value here is rounded as it is
printed (angles to 0.1′), so that what the tests check is what the page shows:

- hourly GHA and Dec of the Sun, the planets and the Moon (with its HP) and the GHA of Aries, at
  every whole hour of UTC; a navigator interpolates linearly between two printed hours
  (:func:`interpolate_printed`, the rule the page states);
- SHA and Dec of the navigational stars in blocks of a few days;
- altitude corrections of navred's own arrangement: dip by height of eye, refraction at 10 °C and
  1010 hPa by apparent altitude with a factor for the temperature and pressure, the Moon's
  parallax by altitude and HP, the Sun's semi-diameter by date, Venus's and Mars's parallax and
  phase by date;
- a Polaris latitude table: the latitude is Ho plus a first term by LHA Aries and a small
  second term by LHA Aries and altitude (:func:`polaris_terms`).

Linear interpolation between printed hours is good enough: the largest second difference of an
hourly value is the Moon's (about 0.15′ per hour² in Dec), whose interpolation error is an eighth of
it, 0.02′; a printed value is within 0.05′ of the truth, so an interpolated one is too, plus that.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .almanac import phase_angle_deg, places
from .angles import wrap_180, wrap_360, wrap_axial
from .constants import ARCMIN_PER_DEG, NS_PER_DAY, NS_PER_HOUR
from .corrections import (
    PHASE_CENTROID_FACTOR,
    air_density_factor,
    dip_angle_arcmin,
    parallax_in_altitude_arcmin,
    refraction_angle_arcmin,
)
from .errors import NavredError
from .stars import star_table
from .vocabulary import UNIT_CONVERSIONS

#: The rates of the tables of increments, degrees per hour (common practice; from memory): the Sun and the
#: planets 15°, the Moon 14° 19.0′, Aries 15° 02.46′ (a sidereal day in 23 h 56 m 04.09 s). A body's v is
#: the excess of its hourly change of GHA over its rate (:func:`hourly_v_arcmin`).
INCREMENT_RATE_DEG_PER_HOUR = {"sun": 15.0, "moon": 14.0 + 19.0 / 60.0, "aries": 15.0 + 2.46 / 60.0, "planet": 15.0}
#: The names the first point of Aries goes by where a body is asked for (normalised: lower case, no spaces)
ARIES_NAMES = ("aries", "firstpointofaries", "ariesfirstpoint")

#: The bodies of the hourly pages, in the order of their columns.
HOURLY_BODIES = ("Aries", "Sun", "Moon", "Venus", "Mars", "Jupiter", "Saturn")
#: The longest passage the paper covers at once (a page per day).
MAX_DAYS = 62
#: Star places are printed for blocks of this many days, each at the middle instant of its days.
STAR_BLOCK_DAYS = 3
#: A Polaris latitude table serves this many days, made for the middle of them.
POLARIS_BLOCK_DAYS = 10
#: The Moon's semi-diameter over its horizontal parallax: the ratio of the Moon's radius to the
#: Earth's equatorial radius, 1737.4 / 6378.137 (IAU mean radius, WGS 84; common practice).
MOON_SD_PER_HP = 1737.4 / 6378.137


def printed_deg(angle_deg: ArrayLike) -> np.ndarray:
    """An angle (degrees) rounded to the tenth of an arcminute, as a page prints it (NaN kept)."""
    return np.round(np.asarray(angle_deg, dtype=float) * ARCMIN_PER_DEG * 10.0) / (ARCMIN_PER_DEG * 10.0)


def printed_arcmin(value_arcmin: ArrayLike) -> np.ndarray:
    """A value in arcminutes rounded to the tenth, as printed."""
    return np.round(np.asarray(value_arcmin, dtype=float) * 10.0) / 10.0


def interpolate_printed(this_deg: ArrayLike, next_deg: ArrayLike, fraction: ArrayLike, *, gha: bool = False) -> np.ndarray:
    """The page's rule: the value at a fraction of the hour from the printed whole hour and the next.

    value = this + f × (next − this), f = (minutes + seconds / 60) / 60. For a GHA the
    difference is taken the way the hour angle grows (add 360° when the next is the smaller),
    and the result is brought into 0-360°; a Dec is signed (north +).

    >>> float(interpolate_printed(350.0, 5.0, 0.5, gha=True))
    357.5
    """
    this = np.asarray(this_deg, dtype=float)
    difference = np.asarray(next_deg, dtype=float) - this
    if gha:
        difference = np.asarray(wrap_360(difference))
    value = this + np.asarray(fraction, dtype=float) * difference
    return np.asarray(wrap_360(value)) if gha else value


def _day_start(first_date) -> np.datetime64:
    try:
        return np.datetime64(str(first_date)[:10], "D").astype("datetime64[ns]")
    except ValueError:
        raise NavredError(f"date {first_date!r} is not a date; give YYYY-MM-DD") from None


def _check_days(days: int) -> None:
    if not 1 <= int(days) <= MAX_DAYS:
        raise NavredError(f"{days} days: the paper covers 1 to {MAX_DAYS} days at once; print longer passages "
                          "in parts")


@dataclass(frozen=True)
class HourlyTable:
    """Printed hourly values: ``hours`` (datetime64[ns] UTC, every whole hour from 00:00 of the first
    date to 24:00 of the last, so that each day's page ends with the next day's 00:00) and, per
    body (rows, in ``bodies`` order), GHA and Dec in degrees and HP in arcminutes, rounded as printed
    (Dec NaN for Aries, HP NaN but for the Moon)."""

    bodies: tuple[str, ...]
    hours: np.ndarray
    gha_deg: np.ndarray
    dec_deg: np.ndarray
    hp_arcmin: np.ndarray
    dut1_s: np.ndarray
    ut1_source: np.ndarray

    def column(self, body: str) -> int:
        return self.bodies.index(body)

    def day(self, k: int) -> slice:
        """The 25 rows (00:00 to 24:00) of day ``k``."""
        return slice(24 * k, 24 * k + 25)


def hourly_table(first_date: object, days: int, bodies: tuple[str, ...] = HOURLY_BODIES,
                 dut1_s: ArrayLike | None = None) -> HourlyTable:
    """The hourly GHA, Dec and HP of ``bodies`` ("Aries" for the first point of Aries) over ``days`` UTC
    dates from ``first_date``, rounded as printed."""
    _check_days(days)
    hours = _day_start(first_date) + np.arange(24 * int(days) + 1) * np.timedelta64(NS_PER_HOUR, "ns")
    from .timescales import instants

    inst = instants(hours, dut1_s)
    gha = np.full((len(bodies), hours.size), np.nan)
    dec = np.full_like(gha, np.nan)
    hp = np.full_like(gha, np.nan)
    for k, body in enumerate(bodies):
        if body == "Aries":
            p = places("Sun", inst)
            gha[k] = wrap_360(p.gha_aries_deg)
            continue
        p = places(body, inst)
        gha[k], dec[k] = p.gha_deg, p.dec_deg
        if body == "Moon":
            hp[k] = p.hp_arcmin
    return HourlyTable(tuple(bodies), hours, np.asarray(wrap_360(printed_deg(gha))), printed_deg(dec),
                       printed_arcmin(hp), np.asarray(inst.dut1_s), np.asarray(inst.ut1_source))


def hourly_value_at(table: HourlyTable, body: str, utc64: ArrayLike, what: str = "gha") -> np.ndarray:
    """A body's GHA or Dec (degrees) or HP (arcminutes) at instants, by the page's rule from the printed hours."""
    when = np.asarray(utc64, dtype="datetime64[ns]")
    offset = (when - table.hours[0]).astype(np.int64)
    row = offset // NS_PER_HOUR
    if np.any(row < 0) or np.any(row >= table.hours.size - 1):
        raise NavredError("an instant outside the hourly table's dates")
    fraction = (offset - row * NS_PER_HOUR) / NS_PER_HOUR
    values = {"gha": table.gha_deg, "dec": table.dec_deg, "hp": table.hp_arcmin}[what][table.column(body)]
    return interpolate_printed(values[row], values[row + 1], fraction, gha=what == "gha")


def hourly_v_arcmin(gha_hour_deg: ArrayLike, gha_next_deg: ArrayLike, rate_deg_per_hour: ArrayLike) -> np.ndarray:
    """v (arcminutes, signed): the excess of a body's change of GHA from one whole hour of UTC to the next
    over the rate its table of increments uses (:data:`INCREMENT_RATE_DEG_PER_HOUR`); a tables working adds
    v times the fraction of the hour to the hour's GHA and the increment (negative for Venus at times).

    The trade's definition (the printed almanacs' explanation of the increments tables; common practice).

    >>> round(float(hourly_v_arcmin(100.0, 115.0 + 0.2 / 60, 15.0)), 6)  # 15° 00.2′ in the hour: v +0.2′
    0.2
    """
    change = wrap_180(np.asarray(gha_next_deg, dtype=float) - np.asarray(gha_hour_deg, dtype=float)
                      - np.asarray(rate_deg_per_hour, dtype=float))
    return np.asarray(change) * ARCMIN_PER_DEG


def hourly_d_arcmin(dec_hour_deg: ArrayLike, dec_next_deg: ArrayLike) -> np.ndarray:
    """d (arcminutes, signed, + northward): the change of a body's Dec from one whole hour of UTC to the
    next; a tables working adds d times the fraction of the hour to the hour's Dec (common practice: a
    printed almanac gives d without a sign, the navigator taking it from the Dec's trend)."""
    return (np.asarray(dec_next_deg, dtype=float) - np.asarray(dec_hour_deg, dtype=float)) * ARCMIN_PER_DEG


def is_aries(name: object) -> bool:
    """Whether a body's name is the first point of Aries (``Aries``, ``First Point of Aries``)."""
    return isinstance(name, str) and "".join(name.lower().split()).replace("'", "") in ARIES_NAMES


@dataclass(frozen=True)
class InstantAlmanac:
    """The almanac of a few bodies at one instant: per body (in the order asked), GHA, Dec, SHA, RA, HP, SD
    and distance, and the hourly differences v and d of a tables working (the Sun, the Moon and the planets;
    NaN for a star and for Aries). The first point of Aries is a body here: GHA Aries, SHA 0, RA 0, Dec 0 (the
    equinox lies on the equator), no HP, SD, distance, v or d."""

    body: tuple[str, ...]
    utc: np.datetime64
    dut1_s: float
    ut1_source: str
    gha_aries_deg: float
    gha_deg: np.ndarray
    dec_deg: np.ndarray
    sha_deg: np.ndarray
    ra_hours: np.ndarray
    hp_arcmin: np.ndarray
    sd_arcmin: np.ndarray
    distance_km: np.ndarray
    #: the excess of the hourly change of GHA over the increments table's rate, from the whole hour of UTC
    #: at or before the instant to the next (:func:`hourly_v_arcmin`)
    v_arcmin: np.ndarray
    #: the hourly change of Dec over the same hour, + northward (:func:`hourly_d_arcmin`)
    d_arcmin: np.ndarray
    #: the instant as UTC text to the microsecond, no zone (a leap second written as the 23:59:60 it is)
    utc_text: str = ""


def almanac_at(bodies: str | list[str] | tuple[str, ...], utc: object, dut1_s: float | None = None) -> InstantAlmanac:
    """The almanac of ``bodies`` (names; ``Aries`` for the first point of Aries) at the instant ``utc``, with
    v and d over the hour of UTC that holds it, as a tables working takes them (see :class:`InstantAlmanac`)."""
    from .stars import SOLAR_SYSTEM
    from .timescales import instants

    names = [bodies] if isinstance(bodies, str) else list(bodies)
    if not names:
        raise NavredError("no body given: name one or more (Sun, Moon, a planet, a navigational star, Aries)")
    aries = np.array([is_aries(name) for name in names], dtype=bool)
    others = [name for name, a in zip(names, aries.tolist()) if not a]
    inst = instants(np.array([utc], dtype=object), dut1_s)
    found = places(others or ["Sun"], inst)  # (the Sun only for GHA Aries when Aries alone is asked)
    when = inst.utc_datetime64()[0]
    n = len(names)
    out = {key: np.full(n, np.nan) for key in ("gha", "dec", "sha", "ra", "hp", "sd", "km", "v", "d")}
    gha_aries = float(wrap_360(found.gha_aries_deg[0]))
    out["gha"][aries], out["dec"][aries], out["sha"][aries], out["ra"][aries] = gha_aries, 0.0, 0.0, 0.0
    canonical = np.array(["Aries"] * n, dtype=object)
    if others:
        rows = np.flatnonzero(~aries)
        canonical[rows] = found.body
        out["gha"][rows], out["dec"][rows], out["sha"][rows] = found.gha_deg, found.dec_deg, found.sha_deg
        out["ra"][rows], out["hp"][rows], out["sd"][rows] = found.ra_hours, found.hp_arcmin, found.sd_arcmin
        out["km"][rows] = found.distance_km
        moving = [k for k, name in zip(rows.tolist(), found.body.tolist()) if name in SOLAR_SYSTEM.values()]
        if moving:
            hour = when.astype("datetime64[h]").astype("datetime64[ns]")
            hours = np.array([hour, hour + np.timedelta64(NS_PER_HOUR, "ns")])
            moved = canonical[moving].tolist()
            at = places(np.array(moved * 2, dtype=object), instants(np.repeat(hours, len(moved)),
                                                                     None if dut1_s is None else dut1_s))
            gha, dec = at.gha_deg.reshape(2, -1), at.dec_deg.reshape(2, -1)
            rate = np.array([INCREMENT_RATE_DEG_PER_HOUR["moon" if b == "Moon" else "sun" if b == "Sun" else "planet"]
                             for b in moved])
            out["v"][moving] = hourly_v_arcmin(gha[0], gha[1], rate)
            out["d"][moving] = hourly_d_arcmin(dec[0], dec[1])
    return InstantAlmanac(tuple(canonical.tolist()), when, float(inst.dut1_s[0]), str(inst.ut1_source[0]), gha_aries,
                          out["gha"], out["dec"], out["sha"], out["ra"], out["hp"], out["sd"], out["km"], out["v"],
                          out["d"], str(np.ravel(inst.utc_text(6))[0]))


@dataclass(frozen=True)
class StarBlock:
    """The stars' SHA and Dec (degrees, rounded as printed) at the instant ``epoch`` (the middle of the
    block), used on the dates ``first`` to ``last`` (datetime64[D], inclusive)."""

    first: np.datetime64
    last: np.datetime64
    epoch: np.datetime64
    names: np.ndarray
    numbers: np.ndarray
    magnitude: np.ndarray
    sha_deg: np.ndarray
    dec_deg: np.ndarray


def star_blocks(first_date: object, days: int, block_days: int = STAR_BLOCK_DAYS) -> list[StarBlock]:
    """The navigational stars' SHA and Dec for a passage, a block per ``block_days`` dates, each at the
    middle instant of its block.

    In a day and a half a star's SHA and Dec change by at most about 0.02′ (annual aberration and
    precession; nutation less), except near the pole: Polaris's SHA moves up to 0.45′ a day, so
    its place is also printed for every day (:func:`daily_places`) and its latitude table is by
    LHA Aries (:func:`polaris_table`).
    """
    _check_days(days)
    start = _day_start(first_date).astype("datetime64[D]")
    table = star_table()
    blocks = []
    for first in range(0, int(days), block_days):
        last = min(first + block_days, int(days)) - 1
        epoch = start.astype("datetime64[ns]") + np.timedelta64((first + last + 1) * NS_PER_DAY // 2, "ns")
        p = places(np.asarray(table.name, dtype=object), np.full(len(table.name), epoch))
        blocks.append(StarBlock(start + np.timedelta64(first, "D"), start + np.timedelta64(last, "D"), epoch,
                                np.asarray(table.name), np.asarray(table.number), np.asarray(table.magnitude),
                                np.asarray(wrap_360(printed_deg(p.sha_deg))), printed_deg(p.dec_deg)))
    return blocks


def daily_places(body: str, first_date: object, days: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """A body's SHA and Dec (degrees, printed) at 00:00 UTC of each date: (dates, sha_deg, dec_deg)."""
    _check_days(days)
    dates = _day_start(first_date) + np.arange(int(days)) * np.timedelta64(NS_PER_DAY, "ns")
    p = places(body, dates)
    return dates.astype("datetime64[D]"), np.asarray(wrap_360(printed_deg(p.sha_deg))), printed_deg(p.dec_deg)


# --- Altitude corrections -------------------------------------------------------------------

#: Heights of eye (metres) of the dip table.
DIP_HEIGHTS_M = np.array([0.5, 1, 1.5, 2, 2.5, 3, 3.5, 4, 4.5, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 18, 20, 22,
                          24, 26, 28, 30, 35, 40, 45, 50])
#: Heights of eye (feet) of the dip table.
DIP_HEIGHTS_FT = np.array([2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 18, 20, 22, 24, 26, 28, 30, 35, 40, 45,
                           50, 55, 60, 70, 80, 90, 100, 120, 140, 160])


def dip_rows() -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The dip table: (heights m, dip′ printed, heights ft, dip′ printed); the dip is subtracted."""
    metres_per_foot = UNIT_CONVERSIONS["ft"][0]
    return (DIP_HEIGHTS_M, printed_arcmin(dip_angle_arcmin(DIP_HEIGHTS_M)), DIP_HEIGHTS_FT,
            printed_arcmin(dip_angle_arcmin(DIP_HEIGHTS_FT * metres_per_foot)))


#: Apparent altitudes (degrees) of the refraction table: closer where refraction bends fastest, so that
#: linear interpolation between two rows adds at most 0.03′ to the printed rounding (0.025′ from 1° up;
#: tests/test_handtables.py measures it).
REFRACTION_ALTITUDES_DEG = np.concatenate([
    np.arange(0.0, 2.0, 0.2), np.arange(2.0, 4.0, 0.25), np.arange(4.0, 7.0, 0.5), np.arange(7.0, 12.0, 1.0),
    np.arange(12.0, 20.0, 2.0), np.arange(20.0, 35.0, 3.0), np.arange(35.0, 50.0, 5.0), [50.0, 60.0, 75.0, 90.0]])
#: Temperatures (°C) and pressures (hPa) of the refraction factor table.
FACTOR_TEMPERATURES_C = np.arange(-20.0, 45.0, 5.0)
FACTOR_PRESSURES_HPA = np.arange(960.0, 1050.0, 10.0)


def refraction_rows() -> tuple[np.ndarray, np.ndarray]:
    """(apparent altitude °, refraction′ at 10 °C and 1010 hPa, printed); the refraction is subtracted."""
    return REFRACTION_ALTITUDES_DEG, printed_arcmin(refraction_angle_arcmin(REFRACTION_ALTITUDES_DEG))


def refraction_factor_grid() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(temperatures °C, pressures hPa, factor[t, p] to 2 decimals): refraction = table value × factor.

    The factor is (P / 1010)(283 / (273 + T)), the density ratio Bennett's formula is scaled by
    (:func:`navred.corrections.air_density_factor`).
    """
    t, p = FACTOR_TEMPERATURES_C[:, None], FACTOR_PRESSURES_HPA[None, :]
    return FACTOR_TEMPERATURES_C, FACTOR_PRESSURES_HPA, np.round(air_density_factor(t, p), 2)


#: Altitudes (degrees, of the Moon's centre after refraction) and HPs (arcminutes) of the parallax table.
PARALLAX_ALTITUDES_DEG = np.arange(0.0, 91.0, 3.0)
PARALLAX_HP_ARCMIN = np.arange(54.0, 61.6, 0.5)


def moon_parallax_grid() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(altitudes °, HPs ′, parallax in altitude′[h, HP] printed) for an observer on a spherical Earth:
    sin PA = sin HP cos h (:func:`navred.corrections.parallax_in_altitude_arcmin` with latitude 0 and the
    Moon to the north or south, where the flattening's term vanishes)."""
    h, hp = np.meshgrid(PARALLAX_ALTITUDES_DEG, PARALLAX_HP_ARCMIN, indexing="ij")
    return PARALLAX_ALTITUDES_DEG, PARALLAX_HP_ARCMIN, printed_arcmin(parallax_in_altitude_arcmin(h, hp, 0.0, 90.0))


def moon_sd_rows() -> tuple[np.ndarray, np.ndarray]:
    """(HP ′, the Moon's geocentric SD′ printed) for the HPs of the parallax table."""
    return PARALLAX_HP_ARCMIN, printed_arcmin(PARALLAX_HP_ARCMIN * MOON_SD_PER_HP)


#: Altitudes (degrees) of the Moon's augmentation table.
AUGMENTATION_ALTITUDES_DEG = np.arange(0.0, 91.0, 10.0)
AUGMENTATION_HP_ARCMIN = np.array([54.0, 57.0, 60.0, 61.5])


def moon_augmentation_grid() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(altitudes °, HPs ′, the growth of the Moon's SD′ seen from the observer[h, HP]) to 0.1′:
    SD × (1/(topocentric over geocentric distance) − 1) ≈ SD sin HP sin h."""
    from .corrections import moon_augmentation

    h, hp = np.meshgrid(AUGMENTATION_ALTITUDES_DEG, AUGMENTATION_HP_ARCMIN, indexing="ij")
    return AUGMENTATION_ALTITUDES_DEG, AUGMENTATION_HP_ARCMIN, printed_arcmin(
        hp * MOON_SD_PER_HP * (moon_augmentation(h, hp, 0.0, 90.0) - 1.0))


@dataclass(frozen=True)
class DailyFigures:
    """Per date (00:00 UTC): the Sun's SD, and Venus's and Mars's HP, SD, phase angle and phase offset
    (the distance of the centre of light from the centre toward the Sun), arcminutes and degrees."""

    dates: np.ndarray
    sun_sd_arcmin: np.ndarray
    planet_hp_arcmin: dict
    planet_sd_arcmin: dict
    planet_phase_angle_deg: dict
    planet_offset_arcmin: dict


def daily_figures(first_date: object, days: int) -> DailyFigures:
    """The Sun's SD and the phase and parallax of Venus and Mars for each date, printed to 0.1′."""
    _check_days(days)
    dates = _day_start(first_date) + np.arange(int(days)) * np.timedelta64(NS_PER_DAY, "ns")
    from .timescales import instants

    inst = instants(dates)
    sun = places("Sun", inst)
    hp, sd, angle, offset = {}, {}, {}, {}
    for planet in ("Venus", "Mars"):
        p = places(planet, inst)
        hp[planet] = printed_arcmin(p.hp_arcmin)
        sd[planet] = printed_arcmin(p.sd_arcmin)
        angle[planet] = np.round(phase_angle_deg(p, sun))
        offset[planet] = printed_arcmin(PHASE_CENTROID_FACTOR * (1.0 - np.cos(np.radians(phase_angle_deg(p, sun))))
                                        * p.sd_arcmin)
    return DailyFigures(dates.astype("datetime64[D]"), printed_arcmin(sun.sd_arcmin), hp, sd, angle, offset)


# --- Polaris ------------------------------------------------------------------------------------

#: Altitudes (degrees) of the second Polaris term's columns.
POLARIS_ALTITUDES_DEG = np.arange(0.0, 71.0, 10.0)


@dataclass(frozen=True)
class PolarisTable:
    """Latitude = Ho + first + second. ``first_arcmin[k]`` for LHA Aries k° (k = 0..359) and
    ``second_arcmin[j, i]`` for LHA Aries 15 j° (j = 0..11, repeating every 180°) and altitude
    :data:`POLARIS_ALTITUDES_DEG`[i], both printed to 0.1′, for Polaris's place at ``epoch``."""

    epoch: np.datetime64
    sha_deg: float
    dec_deg: float
    first_arcmin: np.ndarray
    second_lha_deg: np.ndarray
    second_arcmin: np.ndarray


def polaris_terms(lha_aries_deg: ArrayLike, ho_deg: ArrayLike, sha_deg: float, dec_deg: float) -> tuple[np.ndarray, np.ndarray]:
    """The two terms (arcminutes) of the latitude by Polaris: latitude = Ho + first + second.

    With p = 90° − Dec and t = LHA Aries + SHA the hour angle of Polaris, the series of
    sin Ho = sin φ sin δ + cos φ cos δ cos t in p gives φ = Ho − p cos t + ½ p² sin² t tan Ho
    (p in radians), the neglected term being of order p³, below 0.01′ (common practice; the
    expansion is in any text on nautical astronomy).
    """
    p = np.radians(90.0 - dec_deg)
    t = np.radians(np.asarray(lha_aries_deg, dtype=float) + sha_deg)
    first = -np.degrees(p * np.cos(t)) * ARCMIN_PER_DEG
    second = np.degrees(0.5 * p**2 * np.sin(t) ** 2 * np.tan(np.radians(np.asarray(ho_deg, dtype=float)))) * ARCMIN_PER_DEG
    return first, second


def polaris_table(epoch: object) -> PolarisTable:
    """The Polaris latitude table for Polaris's place at ``epoch`` (a datetime64 instant, or a date for its
    00:00 UTC).

    Polaris's SHA moves up to about 0.45′ a day and its Dec 0.006′: five days either side of the
    epoch the first term changes by less than 0.04′ (its slope in SHA is p sin t, at most 0.012′
    per arcminute), so one table serves :data:`POLARIS_BLOCK_DAYS` days about its epoch; with the
    printed rounding of its two terms the latitude is then within 0.15′ (tests/test_handtables.py).
    """
    epoch = epoch.astype("datetime64[ns]") if isinstance(epoch, np.datetime64) else _day_start(epoch)
    p = places("Polaris", epoch)
    sha, dec = float(printed_deg(p.sha_deg)), float(printed_deg(p.dec_deg))
    first, _ = polaris_terms(np.arange(360.0), 0.0, sha, dec)
    rows = np.arange(0.0, 180.0, 15.0)
    _, second = polaris_terms(rows[:, None], POLARIS_ALTITUDES_DEG[None, :], sha, dec)
    return PolarisTable(epoch, sha, dec, printed_arcmin(first), rows, printed_arcmin(second))


def polaris_latitude_from_table(table: PolarisTable, ho_deg: float, lha_aries_deg: float) -> float:
    """The latitude (degrees) a navigator gets from the printed Polaris table, interpolating linearly
    in LHA Aries (between whole degrees) and in the second term's rows and columns."""
    lha = float(wrap_360(lha_aries_deg))
    k = int(np.floor(lha))
    first = table.first_arcmin[k] + (lha - k) * (table.first_arcmin[(k + 1) % 360] - table.first_arcmin[k])
    row = float(wrap_axial(lha)) / 15.0
    j = int(np.floor(row))
    column = np.interp(ho_deg, POLARIS_ALTITUDES_DEG, np.arange(POLARIS_ALTITUDES_DEG.size))
    i = min(int(np.floor(column)), POLARIS_ALTITUDES_DEG.size - 2)
    grid = np.vstack([table.second_arcmin, table.second_arcmin[:1]])
    a, b = row - j, column - i
    second = ((1 - a) * (1 - b) * grid[j, i] + (1 - a) * b * grid[j, i + 1] + a * (1 - b) * grid[j + 1, i]
              + a * b * grid[j + 1, i + 1])
    return float(ho_deg) + (first + second) / ARCMIN_PER_DEG


__all__ = ["INCREMENT_RATE_DEG_PER_HOUR", "ARIES_NAMES", "hourly_v_arcmin", "hourly_d_arcmin", "is_aries",
           "InstantAlmanac", "almanac_at", "HOURLY_BODIES", "MAX_DAYS", "STAR_BLOCK_DAYS", "POLARIS_BLOCK_DAYS", "MOON_SD_PER_HP", "printed_deg", "printed_arcmin",
           "interpolate_printed", "HourlyTable", "hourly_table", "hourly_value_at", "StarBlock", "star_blocks",
           "daily_places", "dip_rows", "refraction_rows", "refraction_factor_grid", "moon_parallax_grid",
           "moon_sd_rows", "moon_augmentation_grid", "DailyFigures", "daily_figures", "PolarisTable",
           "polaris_terms", "polaris_table", "polaris_latitude_from_table", "POLARIS_ALTITUDES_DEG",
           "REFRACTION_ALTITUDES_DEG", "DIP_HEIGHTS_M", "DIP_HEIGHTS_FT", "FACTOR_TEMPERATURES_C",
           "FACTOR_PRESSURES_HPA", "PARALLAX_ALTITUDES_DEG", "PARALLAX_HP_ARCMIN", "AUGMENTATION_ALTITUDES_DEG",
           "AUGMENTATION_HP_ARCMIN"]
