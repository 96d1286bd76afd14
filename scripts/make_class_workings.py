"""Hand workings of sights by every method taught, synthesized independently of navred: the marking
tests' reference and the invented demo class.

A cadet reducing a sight by hand works from the printed almanac, the sight reduction tables or a
calculator. This module does the same thing from outside navred, each line rounded as a cadet's
tables and a calculator round it:

- the almanac from skyfield (DE421, apparent places of date; GHA = GAST − RA): GHA and Dec at
  the sight's instant, at its whole hour and the next hour; GHA Aries; the distance for SD and HP;
  every tabulated value rounded to 0.1′ as the almanac prints it;
- the increment at the base rates of the increment tables (15° an hour for the Sun and planets,
  14° 19.0′ for the Moon, 15° 02.46′ for Aries; from memory), the v and d corrections as the
  printed tables give them, v·(m + ½)/60 for minute m (from memory);
- the altitude corrections: dip 1.76′√h (the almanac's dip coefficient, from memory), refraction
  by skyfield's earthlib.refraction (Bennett's formula, Journal of Navigation 35, 1982) at 10 °C
  and 1010 hPa, SD = asin(R / distance) with the IAU radii (from memory), parallax HP·cos h at the
  altitude of the centre (Bowditch, The American Practical Navigator, ch. 16; common practice), and
  for Venus and Mars the offset of the centre of light from the tests' own lune integration
  (tests/conftest.py); the Moon also by the two-part table (its first correction for the lower limb
  at a horizontal parallax of 54.0′, SD 0.2724 HP, then the HP correction, −30′ for the upper limb;
  the almanac's Moon tables, from memory);
- the intercept method: from an assumed position (latitude the whole degree nearest the DR,
  longitude within 30′ of the DR making LHA whole) with the tables (Hc and Z from the spherical
  triangle, sin Hc = sin L sin d + cos L cos d cos LHA, Bowditch ch. 20, at the whole degrees of Dec,
  rounded as the tables print them: Hc and d to 0.1′, Z to 0.1°; the d correction for the minutes
  of Dec; Zn from Z as tabulated or interpolated for the minutes of Dec, by the tables' rule) or
  with a calculator (Hc and Zn at the AP, 0.1′ and 0.1°); or from the DR with a calculator;
- the meridian altitude: zenith distance 90° − Ho named opposite to the bearing, latitude = Dec ±
  zenith distance (Bowditch ch. 20); the ex-meridian: a = 1.9635″ cos L cos d / sin(L ∼ d) per
  minute² (the second-order term of the altitude about meridian passage, (2π/1440)²/2 radians),
  the reduction a·t², added to Ho;
- Polaris: the latitude at which Polaris (skyfield's place) stands at Ho, solved from the
  spherical triangle by Newton's method in this script, the correction latitude − Ho;
- the compass: the amplitude sin A = sin d / cos L (Bowditch, "amplitudes"), the azimuth from the
  triangle at the DR, compass error = true − compass (east +), deviation = error − variation.

A mistake from the catalogue can be planted at its line, with every later line carried forward
from it as the cadet would have carried it (:data:`PLANTS`); the cadet's plotted fix can be plotted
right, or with one intercept laid off the wrong way, or one line from the DR (:func:`plotted_fix`).
The sights themselves are chosen to make sense: stars and planets with the Sun 4°-11° below the
horizon (nautical twilight), the Sun by day, the meridian altitude at meridian passage, the
amplitude at rising or setting, Polaris in northern latitudes.

INVENTED DATA only in the demo: ``python scripts/make_class_workings.py`` writes
sample_sights/class_workings.xlsx, the hand workings of three invented cadets of an invented
training ship over one invented day (a sheet each), and sample_sights/class_workings_planted.csv,
the list of what was planted where.
"""

from __future__ import annotations

import sys
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from tests.conftest import centre_of_light_offset_arcmin, frozen, is_frozen, sky_target  # noqa: E402

OUT = ROOT / "sample_sights"
HOUR_NS = 3_600_000_000_000
SECOND_NS = 1_000_000_000
#: Base rates of the increment tables, ′ an hour (from memory).
BASE_ARCMIN_PER_HOUR = {"sun": 900.0, "planet": 900.0, "moon": 14 * 60 + 19.0, "aries": 900.0 + 2.46}
RADIUS_KM = {"Sun": 695700.0, "Moon": 1737.4, "Venus": 6051.8, "Mars": 3389.5,
             "Jupiter": 69911.0, "Saturn": 58232.0}  # IAU mean radii (from memory)
EARTH_EQUATORIAL_KM = 6378.137  # WGS 84
#: The Moon's two-part table (from memory): first correction at HP 54.0′, SD = 0.2724 HP, upper limb −30′.
MOON_TABLE_HP = 54.0
MOON_SD_PER_HP = RADIUS_KM["Moon"] / EARTH_EQUATORIAL_KM
#: The ex-meridian's a for cos L cos d / sin z = 1: (2π/1440)²/2 radians, in arcseconds.
EX_MERIDIAN_ARCSEC = (2 * np.pi / 1440.0) ** 2 / 2.0 * 206264.806
PLANETS = ("Venus", "Mars", "Jupiter", "Saturn")
STARS = ("Sirius", "Canopus", "Arcturus", "Vega", "Capella", "Rigel", "Procyon", "Achernar", "Altair",
         "Aldebaran", "Antares", "Spica", "Fomalhaut", "Deneb", "Regulus", "Peacock", "Kochab", "Dubhe")
METHODS = ("intercept", "meridian", "ex-meridian", "polaris", "amplitude", "azimuth")


def r1(arcmin):
    """Rounded to 0.1′ as the almanac and tables print."""
    return float(np.round(arcmin, 1))


def wrap180(deg):
    return (deg + 180.0) % 360.0 - 180.0


def kind_of(body: str) -> str:
    return "sun" if body == "Sun" else "moon" if body == "Moon" else "planet" if body in PLANETS else "star"


def written(deg: float) -> float:
    """An angle as a log writes it, to 0.1′."""
    return float(np.round(deg * 600.0) / 600.0)


@dataclass(frozen=True)
class Sight:
    """One sight as the cadet took it (the log's columns)."""

    body: str
    limb: str  # lower / upper / '' (stars, planets)
    utc_ns: int  # the true UTC, whole seconds
    zd_h: int  # zone description, + west (ZT + ZD = UTC)
    watch_error_s: int  # fast +
    ie_arcmin: float  # index error, on the arc +
    eye_m: float  # height of eye (the log gives it in feet when eye_in_feet)
    eye_in_feet: bool
    hs_arcmin: float  # 0.1′ (NaN for a compass check)
    dr_lat: float  # as the log writes it, to 0.1′
    dr_lon: float
    method: str = "intercept"
    compass_deg: float = float("nan")  # the compass bearing of a compass check
    variation_deg: float = float("nan")  # east +

    @property
    def utc(self) -> pd.Timestamp:
        return pd.Timestamp(self.utc_ns, tz="UTC")

    @property
    def zone_time(self) -> pd.Timestamp:
        return self.utc - pd.Timedelta(hours=self.zd_h)

    @property
    def crosses_midnight(self) -> bool:
        return self.zone_time.date() != self.utc.date()

    @property
    def eye_ft(self) -> float:
        return round(self.eye_m / 0.3048, 1)


# --- skyfield's sky ----------------------------------------------------------------------------------

def _almanac_key(body: str, utc_ns: int) -> str:
    return f"handwork|{body}|{utc_ns}"


def _almanac_batch(ts, eph, body: str, utc_ns: list[int]) -> list[list[float]]:
    """skyfield's GHA, Dec and GHA Aries at each instant, its whole hour and the next, and the distance."""
    hours = [u // HOUR_NS * HOUR_NS for u in utc_ns]
    every = np.array([x for u, h in zip(utc_ns, hours) for x in (u, h, h + HOUR_NS)], dtype=np.int64)
    stamps = pd.to_datetime(every, utc=True)
    t = ts.utc(stamps.year.to_numpy(), stamps.month.to_numpy(), stamps.day.to_numpy(), stamps.hour.to_numpy(),
               stamps.minute.to_numpy(), stamps.second.to_numpy())
    ra, dec, distance = eph["earth"].at(t).observe(sky_target(ts, eph, body)).apparent().radec(epoch="date")
    gast = t.gast * 15.0
    gha = ((gast - ra.hours * 15.0) % 360.0).reshape(-1, 3)
    decs = dec.degrees.reshape(-1, 3)
    aries = (gast % 360.0).reshape(-1, 3)
    km = distance.km.reshape(-1, 3)[:, 0]
    return [[*gha[k], *decs[k], *aries[k], float(km[k])] for k in range(len(utc_ns))]


def prefetch(ts, eph, pairs) -> None:
    """Compute at once (one skyfield call per body) every (body, UTC ns) not frozen yet."""
    missing: dict[str, list[int]] = {}
    for body, utc_ns in pairs:
        if not is_frozen(_almanac_key(body, int(utc_ns))):
            missing.setdefault(body, []).append(int(utc_ns))
    for body, times in missing.items():
        times = sorted(set(times))
        for u, values in zip(times, _almanac_batch(ts, eph, body, times)):
            frozen(_almanac_key(body, u), lambda v=values: v)


def sky_almanac(ts, eph, body: str, utc_ns: int) -> dict:
    """skyfield's almanac for a sight: GHA, Dec and GHA Aries (degrees) at the instant, its whole hour and the
    next, and the geocentric distance (km) at the instant. Frozen in tests/data by the freeze script."""
    v = frozen(_almanac_key(body, int(utc_ns)), lambda: _almanac_batch(ts, eph, body, [int(utc_ns)])[0])
    return {"gha": v[0:3], "dec": v[3:6], "aries": v[6:9], "distance_km": v[9]}


def light_offset_arcmin(ts, eph, sight: Sight, utc_ns: int) -> float:
    """How far Venus's or Mars's centre of light stands above the centre (tests/conftest.py), at the DR."""
    def compute():
        stamp = pd.Timestamp(utc_ns, tz="UTC")
        t = ts.utc(stamp.year, stamp.month, stamp.day, stamp.hour, stamp.minute, stamp.second)
        return [centre_of_light_offset_arcmin(eph, sight.body, t, sight.dr_lat, sight.dr_lon, grid=201)]

    return frozen(f"handwork-light|{sight.body}|{utc_ns}|{sight.dr_lat!r}|{sight.dr_lon!r}", compute)[0]


def hc_zn(lat, lha, dec):
    """Hc and Zn (degrees) from the spherical triangle (Bowditch ch. 20; the tables tabulate the same)."""
    L, t, d = np.radians(lat), np.radians(lha), np.radians(dec)
    hc = np.degrees(np.arcsin(np.sin(L) * np.sin(d) + np.cos(L) * np.cos(d) * np.cos(t)))
    zn = np.degrees(np.arctan2(-np.cos(d) * np.sin(t), np.cos(L) * np.sin(d) - np.sin(L) * np.cos(d) * np.cos(t)))
    return float(hc), float(zn % 360.0)


def altitude_at(ts, eph, body: str, utc_ns: int, lat: float, lon: float) -> float:
    a = sky_almanac(ts, eph, body, utc_ns)
    return hc_zn(lat, (a["gha"][0] + lon) % 360.0, a["dec"][0])[0]


def z_of(zn, lat):
    """The tables' azimuth angle Z, 0-180° from the elevated pole."""
    if lat >= 0:
        return zn if zn <= 180.0 else 360.0 - zn
    return 180.0 - zn if zn <= 180.0 else zn - 180.0


def zn_rule(z, lat, lha, *, reversed_lha=False):
    """Zn from Z, the rule printed with the sight reduction tables (common practice): N. Lat: LHA greater than
    180°, Zn = Z; less, Zn = 360° − Z. S. Lat: LHA greater than 180°, Zn = 180° − Z; less, Zn = 180° + Z."""
    east = (lha % 360.0) > 180.0
    if reversed_lha:
        east = not east
    if lat >= 0:
        return z % 360.0 if east else (360.0 - z) % 360.0
    return (180.0 - z) % 360.0 if east else (180.0 + z) % 360.0


def bennett_arcmin(ha_deg):
    """Refraction at the almanac's standard 10 °C and 1010 hPa: skyfield's Bennett formula."""
    from skyfield.earthlib import refraction

    return float(refraction(ha_deg, 10.0, 1010.0)) * 60.0


def latitude_for(ho_deg: float, lha_deg: float, dec_deg: float, start_deg: float) -> float:
    """The latitude at which a body of LHA and Dec stands at Ho: Newton's method on
    f(L) = sin L sin d + cos L cos d cos t − sin Ho (this script's own solution of the triangle)."""
    L, d, t, h = np.radians(start_deg), np.radians(dec_deg), np.radians(lha_deg), np.radians(ho_deg)
    for _ in range(30):
        f = np.sin(L) * np.sin(d) + np.cos(L) * np.cos(d) * np.cos(t) - np.sin(h)
        df = np.cos(L) * np.sin(d) - np.sin(L) * np.cos(d) * np.cos(t)
        step = f / df
        L -= step
        if abs(step) < 1e-13:
            break
    return float(np.degrees(L))


#: The catalogue's mistakes as a cadet makes them (navred.marking.CAUSES keys), and the methods each is
#: planted in.
PLANTS = {
    # a noon sight's UTC crosses midnight only near the date line: the Greenwich date is not planted there
    "zone sign": METHODS, "greenwich date": ("intercept", "polaris", "amplitude", "azimuth"), "watch error": METHODS,
    "increment": ("intercept", "meridian", "ex-meridian", "polaris", "azimuth"),
    "v sign": ("intercept", "meridian", "ex-meridian"),
    "d sign": ("intercept", "meridian", "ex-meridian", "amplitude", "azimuth"),
    "lha sign": ("intercept", "ex-meridian", "polaris", "azimuth"),
    "ap lon": ("intercept",), "ap lat": ("intercept",), "zn rule": ("intercept",), "hc d sign": ("intercept",),
    "dip added": ("intercept", "meridian", "ex-meridian", "polaris"),
    "feet as metres": ("intercept", "meridian", "ex-meridian", "polaris"),
    "index on off": ("intercept", "meridian", "ex-meridian", "polaris"),
    "sd sign": ("intercept", "meridian", "ex-meridian"),
    "moon parallax": ("intercept", "meridian"),
    "upper limb": ("intercept",),
    "toward away": ("intercept",),
    "zenith name": ("meridian", "ex-meridian"),
    "bearing name": ("meridian", "ex-meridian"),
    "reduction sign": ("ex-meridian",),
    "polaris degree": ("polaris",),
    "amplitude name": ("amplitude",),
    "error name": ("amplitude", "azimuth"),
    "variation sign": ("amplitude", "azimuth"),
}
#: The plot's mistakes, made on a round's plotted fix (:func:`plotted_fix`).
PLOT_PLANTS = ("plotted away", "plotted from dr")
#: How a working is written, by method: which lines it gives and how it works them ("z-line": Z interpolated for
#: the minutes of Dec written in the only Z line; "z-interpolated": on a line of its own below the tabulated Z;
#: besides these, "signed" is the full ex-meridian with a reduction taken off written negative and added).
STYLES = {
    "intercept": ("full", "main", "short", "minimal", "interpolated", "z-line", "z-interpolated", "calculator", "dr",
                  "dr-minimal", "two-part"),
    "meridian": ("full", "minimal"), "ex-meridian": ("full", "minimal"), "polaris": ("full", "minimal"),
    "amplitude": ("full", "minimal"), "azimuth": ("full", "minimal"),
}
REQUIRED = {"intercept": ("zn_worked", "ho_worked", "intercept_worked"),
            "meridian": ("ho_worked", "latitude_worked"), "ex-meridian": ("ho_worked", "latitude_worked"),
            "polaris": ("ho_worked", "latitude_worked"), "amplitude": ("compass_error_worked",),
            "azimuth": ("zn_worked", "compass_error_worked")}


# --- the working ---------------------------------------------------------------------------------------

def _time(sight: Sight, plant: str | None) -> pd.Timestamp:
    """The UTC as the cadet works it: watch time − watch error (fast +) + ZD, on the Greenwich date."""
    watch = sight.zone_time + pd.Timedelta(seconds=sight.watch_error_s)
    utc = watch - pd.Timedelta(seconds=sight.watch_error_s) + pd.Timedelta(hours=sight.zd_h)
    if plant == "zone sign":
        utc = watch - pd.Timedelta(seconds=sight.watch_error_s) - pd.Timedelta(hours=sight.zd_h)
    elif plant == "watch error":
        utc = watch + pd.Timedelta(seconds=sight.watch_error_s) + pd.Timedelta(hours=sight.zd_h)
    elif plant == "greenwich date":  # the time of day right, the zone date kept
        utc = pd.Timestamp.combine(sight.zone_time.date(), utc.time()).tz_localize("UTC")
    return utc


def _almanac(lines: dict, a: dict, kind: str, utc: pd.Timestamp, plant: str | None, aries_only: bool):
    """The GHA and Dec lines; returns (GHA, Dec) in degrees as the cadet carries them."""
    minutes = (utc.value % HOUR_NS) / 6e10
    middle = (np.floor(minutes) + 0.5) / 60.0
    star = kind == "star" or aries_only
    hour_values = a["aries"] if star else a["gha"]
    base = BASE_ARCMIN_PER_HOUR["aries" if star else kind]
    lines["gha_hour_worked"] = r1(hour_values[1] * 60.0) / 60.0
    lines["increment_worked"] = r1(base * minutes / 60.0)
    if aries_only:
        third = 0.0
    elif star:
        lines["sha_worked"] = r1(((a["gha"][0] - a["aries"][0]) % 360.0) * 60.0) / 60.0
        third = lines["sha_worked"] * 60.0
    elif kind == "sun":
        third = 0.0
    else:
        v = r1(wrap180(a["gha"][2] - a["gha"][1] - base / 60.0) * 60.0)
        lines["v_corr_worked"] = r1(v * middle) * (-1.0 if plant == "v sign" else 1.0)
        third = lines["v_corr_worked"]
    increment = 0.0 if plant == "increment" else lines["increment_worked"]
    if plant == "increment":
        del lines["increment_worked"]
    lines["gha_worked"] = ((lines["gha_hour_worked"] * 60.0 + increment + third) / 60.0) % 360.0
    if kind == "star":
        lines["dec_worked"] = r1(a["dec"][0] * 60.0) / 60.0
    else:
        lines["dec_hour_worked"] = r1(a["dec"][1] * 60.0) / 60.0
        d = r1((a["dec"][2] - a["dec"][1]) * 60.0)
        lines["d_corr_worked"] = r1(d * middle) * (-1.0 if plant == "d sign" else 1.0)
        lines["dec_worked"] = (lines["dec_hour_worked"] * 60.0 + lines["d_corr_worked"]) / 60.0
    return lines["gha_worked"], lines["dec_worked"]


def _altitude(ts, eph, lines: dict, sight: Sight, a: dict, kind: str, utc: pd.Timestamp, plant: str | None,
              two_part: bool) -> float:
    """Hs to Ho; returns Ho (degrees)."""
    lines["ic_worked"] = sight.ie_arcmin if plant == "index on off" else -sight.ie_arcmin
    dip = r1(1.76 * np.sqrt(sight.eye_ft if plant == "feet as metres" else sight.eye_m))
    lines["dip_worked"] = dip if plant == "dip added" else -dip
    ha = sight.hs_arcmin + lines["ic_worked"] + lines["dip_worked"]
    lines["ha_worked"] = ha / 60.0
    refraction = bennett_arcmin(ha / 60.0)
    lines["refraction_worked"] = -r1(refraction)
    radius = RADIUS_KM.get(sight.body)
    sd_exact = np.degrees(np.arcsin(radius / a["distance_km"])) * 60.0 if kind in ("sun", "moon") else 0.0
    lower = sight.limb == "lower"
    if kind in ("sun", "moon"):
        if plant == "sd sign":
            lower = not lower
        lines["sd_worked"] = r1(sd_exact) if lower else -r1(sd_exact)
    centre = (ha + lines["refraction_worked"] + lines.get("sd_worked", 0.0)) / 60.0
    hp = np.degrees(np.arcsin(EARTH_EQUATORIAL_KM / a["distance_km"])) * 60.0
    if kind != "star":
        lines["parallax_worked"] = r1(hp * np.cos(np.radians(centre)))
        if plant == "moon parallax" and not two_part:
            del lines["parallax_worked"]
    if sight.body in ("Venus", "Mars"):
        lines["additional_worked"] = -r1(light_offset_arcmin(ts, eph, sight, utc.value))
    main = lines["refraction_worked"] + lines.get("sd_worked", 0.0) + lines.get("parallax_worked", 0.0)
    lines["main_worked"] = main
    if two_part and kind == "moon":
        # the first correction at the table's HP, for the lower limb; then what the day's HP adds
        sd0 = MOON_SD_PER_HP * MOON_TABLE_HP
        centre0 = ha / 60.0 + (-refraction + sd0) / 60.0
        first = -refraction + sd0 + MOON_TABLE_HP * np.cos(np.radians(centre0))
        total = -refraction + (sd_exact if lower else -sd_exact) + hp * np.cos(np.radians(
            ha / 60.0 + (-refraction + (sd_exact if lower else -sd_exact)) / 60.0))
        lines["main_worked"] = r1(first)
        lines["hp_corr_worked"] = r1(total - lines["main_worked"] + (0.0 if lower else 30.0))
        if not lower:
            lines["upper_limb_worked"] = -30.0
        if plant == "moon parallax":
            del lines["hp_corr_worked"]
        if plant == "upper limb":
            del lines["upper_limb_worked"]
        main = lines["main_worked"] + lines.get("hp_corr_worked", 0.0) + lines.get("upper_limb_worked", 0.0)
        for key in ("refraction_worked", "sd_worked", "parallax_worked"):
            lines.pop(key, None)
    lines["ho_worked"] = (ha + main + lines.get("additional_worked", 0.0)) / 60.0
    return lines["ho_worked"]


def _intercept(lines: dict, sight: Sight, gha: float, dec: float, ho: float, plant: str | None, way: str,
               zn_from: str) -> None:
    """The position, LHA, tables or calculator, Hc, Zn and the intercept."""
    if way == "dr":
        lat, lon = sight.dr_lat, sight.dr_lon
        lines["ap_lat"], lines["ap_lon"] = lat, lon
        lha = written((gha - lon if plant == "lha sign" else gha + lon) % 360.0)
        lines["lha_worked"] = lha
        hc, zn = hc_zn(lat, lha, dec)
        lines["hc_worked"] = r1(hc * 60.0) / 60.0
        lines["zn_worked"] = float(np.round(zn, 1)) % 360.0
    else:
        lat = float(np.round(sight.dr_lat))
        if plant == "ap lat":  # the other whole degree beside the DR
            lat = float(np.floor(sight.dr_lat) if lat > sight.dr_lat else np.ceil(sight.dr_lat))
        lines["ap_lat"] = lat
        if plant == "lha sign":  # LHA = GHA − east longitude
            lha = float(np.round(gha - sight.dr_lon) % 360.0)
            lines["ap_lon"] = wrap180(gha - lha)
        elif plant == "ap lon":  # the DR longitude kept, LHA rounded to the whole degree anyway
            lines["ap_lon"] = sight.dr_lon
            lha = float(np.round(gha + lines["ap_lon"]) % 360.0)
        else:
            lha = float(np.round(gha + sight.dr_lon) % 360.0)
            lines["ap_lon"] = wrap180(lha - gha)
        lines["lha_worked"] = lha
        if way == "calculator":
            hc, zn = hc_zn(lat, lha, dec)
            lines["hc_worked"] = r1(hc * 60.0) / 60.0
            lines["zn_worked"] = zn_rule(float(np.round(z_of(zn, lat), 1)), lat, lha,
                                         reversed_lha=plant == "zn rule")
        else:  # the tables: whole degrees of Dec, then the d correction for its minutes
            whole = float(np.sign(dec) * np.floor(abs(dec)))
            step = 1.0 if dec >= 0 else -1.0
            hc0, zn0 = hc_zn(lat, lha, whole)
            hc1, zn1 = hc_zn(lat, lha, whole + step)
            lines["tab_hc_worked"] = r1(hc0 * 60.0) / 60.0
            lines["tab_d_worked"] = r1((hc1 - hc0) * 60.0)
            lines["tab_z_worked"] = float(np.round(z_of(zn0, lat), 1))
            minutes = abs(dec) - abs(whole)
            correction = r1(lines["tab_d_worked"] * minutes)
            lines["hc_correction_worked"] = -correction if plant == "hc d sign" else correction
            lines["hc_worked"] = lines["tab_hc_worked"] + lines["hc_correction_worked"] / 60.0
            z = lines["tab_z_worked"]
            if zn_from != "tabulated":  # Z interpolated for the minutes of Dec, from the next degree's Z
                z1 = float(np.round(z_of(zn1, lat), 1))
                z = float(np.round(z + (z1 - z) * minutes, 1))
                if zn_from == "z-line":  # written in the only Z line
                    lines["tab_z_worked"] = z
                elif zn_from == "z-interpolated":  # written on a line of its own, below the tabulated Z
                    lines["z_interpolated_worked"] = z
            lines["zn_worked"] = zn_rule(z, lat, lha, reversed_lha=plant == "zn rule")
    intercept = r1((ho - lines["hc_worked"]) * 60.0)
    lines["intercept_worked"] = -intercept if plant == "toward away" else intercept


def _latitude(lines: dict, sight: Sight, gha: float, dec: float, ho: float, plant: str | None, ex: bool,
              signed: bool = False) -> None:
    """The meridian altitude (or the ex-meridian's reduction to it), the zenith distance and the latitude."""
    meridian = ho * 60.0
    if ex:
        lha = written((gha - sight.dr_lon if plant == "lha sign" else gha + sight.dr_lon) % 360.0)
        lines["lha_worked"] = lha
        t = abs(wrap180(lha)) * 4.0  # minutes of time from meridian passage
        L, d = np.radians(sight.dr_lat), np.radians(dec)
        a = float(np.round(EX_MERIDIAN_ARCSEC * np.cos(L) * np.cos(d) / abs(np.sin(L - d)), 1))
        lines["ex_meridian_a_worked"] = a
        lines["reduction_worked"] = r1(a * t * t / 60.0)
        meridian = meridian - lines["reduction_worked"] if plant == "reduction sign" else \
            meridian + lines["reduction_worked"]
        if plant == "reduction sign" and signed:  # written negative, as a correction taken off, and added
            lines["reduction_worked"] = -lines["reduction_worked"]
        lines["meridian_altitude_worked"] = meridian / 60.0
    bears_south = sight.dr_lat > dec  # the body's bearing at meridian passage (Bowditch ch. 20)
    if plant == "bearing name":
        bears_south = not bears_south
    lines["bearing_worked"] = 180.0 if bears_south else 0.0
    name = 1.0 if bears_south else -1.0  # the body bears south: the zenith distance is named north
    zenith = name * (90.0 * 60.0 - meridian)
    lines["zenith_distance_worked"] = (-zenith if plant == "zenith name" else zenith) / 60.0
    lines["latitude_worked"] = dec + lines["zenith_distance_worked"]


def _polaris(lines: dict, sight: Sight, a: dict, gha_aries: float, ho: float, plant: str | None) -> None:
    lha = written((gha_aries - sight.dr_lon if plant == "lha sign" else gha_aries + sight.dr_lon) % 360.0)
    lines["lha_worked"] = lha
    sha = (a["gha"][0] - a["aries"][0]) % 360.0
    latitude = latitude_for(ho, lha + sha, a["dec"][0], ho)
    correction = r1((latitude - ho) * 60.0) + (60.0 if plant == "polaris degree" else 0.0)
    lines["polaris_corr_worked"] = correction
    lines["latitude_worked"] = (ho * 60.0 + correction) / 60.0


def _compass(lines: dict, sight: Sight, a: dict, gha: float, dec: float, plant: str | None, amplitude: bool) -> None:
    if amplitude:
        value = float(np.round(np.degrees(np.arcsin(np.sin(np.radians(dec)) / np.cos(np.radians(sight.dr_lat)))), 1))
        if plant == "amplitude name":
            value = -value
        lines["amplitude_worked"] = value
        rising = (a["gha"][0] + sight.dr_lon) % 360.0 > 180.0
        lines["zn_worked"] = float(np.round((90.0 - value if rising else 270.0 + value) % 360.0, 1))
    else:
        lha = written((gha - sight.dr_lon if plant == "lha sign" else gha + sight.dr_lon) % 360.0)
        lines["lha_worked"] = lha
        lines["zn_worked"] = float(np.round(hc_zn(sight.dr_lat, lha, dec)[1], 1)) % 360.0
    error = float(np.round(wrap180(lines["zn_worked"] - sight.compass_deg), 1))
    lines["compass_error_worked"] = -error if plant == "error name" else error
    variation = sight.variation_deg
    deviation = lines["compass_error_worked"] + variation if plant == "variation sign" else \
        lines["compass_error_worked"] - variation
    lines["deviation_worked"] = float(np.round(deviation, 1))


def work(ts, eph, sight: Sight, plant: str | None = None, style: str = "full") -> dict:
    """The cadet's working by the sight's method: each line's value (degrees for angles, ′ for corrections,
    ″ for a, nm + TOWARD for the intercept, degrees E + for the compass, a Timestamp for the UTC), with
    ``plant`` made where it belongs and carried forward, written in ``style`` (:data:`STYLES`)."""
    kind = kind_of(sight.body)
    lines: dict = {}
    utc = _time(sight, plant)
    lines["utc_worked"] = utc
    a = sky_almanac(ts, eph, sight.body, utc.value)
    aries_only = sight.method == "polaris"
    gha, dec = _almanac(lines, a, kind, utc, plant, aries_only)
    if sight.method in ("amplitude", "azimuth"):
        _compass(lines, sight, a, gha, dec, plant, sight.method == "amplitude")
        return _styled(lines, sight, style)
    ho = _altitude(ts, eph, lines, sight, a, kind, utc, plant, style == "two-part")
    if sight.method == "intercept":
        way = {"dr": "dr", "dr-minimal": "dr", "calculator": "calculator"}.get(style, "tables")
        _intercept(lines, sight, gha, dec, ho, plant, way,
                   style if style in ("interpolated", "z-line", "z-interpolated") else "tabulated")
    elif sight.method == "polaris":
        _polaris(lines, sight, a, gha, ho, plant)
    else:
        _latitude(lines, sight, gha, dec, ho, plant, sight.method == "ex-meridian", style == "signed")
    return _styled(lines, sight, style)


def _styled(lines: dict, sight: Sight, style: str) -> dict:
    if style in ("minimal", "dr-minimal"):
        keep = REQUIRED[sight.method]
        if sight.method == "ex-meridian":
            keep = keep + ("reduction_worked",)
        return {k: v for k, v in lines.items() if k in keep}
    if style == "short":
        keep = ("utc_worked", "gha_worked", "dec_worked", "ho_worked", "ap_lat", "ap_lon", "lha_worked", "hc_worked",
                "zn_worked", "intercept_worked")
        return {k: v for k, v in lines.items() if k in keep}
    out = dict(lines)
    if style in ("full", "interpolated", "z-line", "z-interpolated", "calculator", "dr", "signed") and \
            "hp_corr_worked" not in out:
        out.pop("main_worked", None)
    elif style == "main":
        for k in ("refraction_worked", "sd_worked", "parallax_worked"):
            out.pop(k, None)
    if sight.method in ("amplitude", "azimuth"):  # a compass check's time and almanac: the Dec it needs
        for k in ("gha_hour_worked", "increment_worked", "v_corr_worked", "sha_worked", "gha_worked"):
            if sight.method == "amplitude":
                out.pop(k, None)
    return out


def eligible(sight: Sight, right: dict, plant: str, style: str = "full") -> bool:
    """Whether a mistake can show on this sight written in this style (it changes a line by more than the
    rounding, and the line is written)."""
    kind = kind_of(sight.body)
    if sight.method not in PLANTS.get(plant, ()):
        return False
    two_part = style == "two-part" and kind == "moon"
    return {
        "zone sign": sight.zd_h != 0,
        "greenwich date": sight.crosses_midnight,
        "watch error": abs(sight.watch_error_s) >= 3,
        "increment": right.get("increment_worked", 0.0) >= 1.0 and "gha_worked" in right,
        "v sign": abs(right.get("v_corr_worked", 0.0)) >= 0.3,
        "d sign": abs(right.get("d_corr_worked", 0.0)) >= 0.3,
        "hc d sign": abs(right.get("hc_correction_worked", 0.0)) >= 0.5,
        "feet as metres": sight.eye_in_feet,
        "index on off": abs(sight.ie_arcmin) >= 0.3,
        "sd sign": kind in ("sun", "moon") and not two_part,
        "moon parallax": kind == "moon" and (not two_part or abs(right.get("hp_corr_worked", 0.0)) >= 0.5),
        "upper limb": two_part and sight.limb == "upper",
        "toward away": abs(right.get("intercept_worked", 0.0)) >= 0.5,
        "zn rule": 2.0 <= right.get("tab_z_worked", z_of(right.get("zn_worked", 0.0), sight.dr_lat)) <= 178.0,
        "ap lat": abs(sight.dr_lat - np.round(sight.dr_lat)) >= 0.05,
        "ap lon": abs(wrap180(right["gha_worked"] + sight.dr_lon - np.round(right["gha_worked"] + sight.dr_lon)))
        >= 0.05 if "gha_worked" in right else False,
        "lha sign": abs(sight.dr_lon) >= 0.5,
        "zenith name": abs(right.get("zenith_distance_worked", 0.0)) >= 0.5,
        "bearing name": "bearing_worked" in right and abs(right.get("zenith_distance_worked", 0.0)) >= 0.5,
        "reduction sign": abs(right.get("reduction_worked", 0.0)) >= 0.3,
        "amplitude name": abs(right.get("amplitude_worked", 0.0)) >= 0.3,
        "error name": abs(right.get("compass_error_worked", 0.0)) >= 0.3,
        "variation sign": abs(sight.variation_deg) >= 0.3 if sight.variation_deg == sight.variation_deg else False,
    }.get(plant, True)


# --- the sights, chosen to make sense -----------------------------------------------------------------

def _gp_offset(gp_lat: float, gp_lon: float, zenith_deg: float, bearing_deg: float) -> tuple[float, float]:
    """The point ``zenith_deg`` from a body's geographical position along ``bearing_deg`` (the sphere)."""
    zenith, bearing = np.radians(zenith_deg), np.radians(bearing_deg)
    p1 = np.radians(gp_lat)
    p2 = np.arcsin(np.sin(p1) * np.cos(zenith) + np.cos(p1) * np.sin(zenith) * np.cos(bearing))
    l2 = np.radians(gp_lon) + np.arctan2(np.sin(bearing) * np.sin(zenith) * np.cos(p1),
                                         np.cos(zenith) - np.sin(p1) * np.sin(p2))
    return float(np.degrees(p2)), float(wrap180(np.degrees(l2)))


def _observer(rng) -> dict:
    """A cadet's instrument and watch: height of eye (in feet in three logs out of ten), index error, watch."""
    eye_m = round(float(rng.uniform(2.0, 25.0)), 1)
    in_feet = bool(rng.random() < 0.3)
    if in_feet:  # the height the log gives, in whole tenths of a foot
        eye_m = round(eye_m / 0.3048, 1) * 0.3048
    ie = 0.0 if rng.random() < 0.15 else round(float(rng.choice([-1, 1]) * rng.uniform(0.3, 3.0)), 1)
    watch = 0 if rng.random() < 0.4 else int(rng.choice([-1, 1]) * rng.integers(4, 45))
    return {"eye_m": eye_m, "in_feet": in_feet, "ie": ie, "watch": watch}


def _hs(sight_kind: str, body: str, true_alt: float, o: dict, a: dict, limb: str, rng, noise: float = 8.0) -> float:
    """A sextant altitude from a true altitude: plus dip, refraction and the index error, the limb's SD, and noise
    (up to ``noise``′ either way, so that the position line stands off the DR)."""
    hs = true_alt * 60.0 + 1.76 * np.sqrt(o["eye_m"]) + bennett_arcmin(true_alt) + o["ie"] + rng.uniform(-noise, noise)
    if body in ("Sun", "Moon"):
        sd = np.degrees(np.arcsin(RADIUS_KM[body] / a["distance_km"])) * 60.0
        hs += -sd if limb == "lower" else sd
        if body == "Moon":
            hs -= np.degrees(np.arcsin(EARTH_EQUATORIAL_KM / a["distance_km"])) * 60.0 * np.cos(np.radians(true_alt))
    return round(float(hs), 1)


def _sight(body, limb, utc_ns, dr_lat, dr_lon, o, hs, **extra) -> Sight:
    lat, lon = written(dr_lat), written(dr_lon)
    return Sight(body, limb, int(utc_ns) // SECOND_NS * SECOND_NS, int(-np.round(lon / 15.0)), o["watch"], o["ie"], o["eye_m"], o["in_feet"],
                 hs, lat, lon, **extra)


def _times(rng, years, count):
    start = pd.Timestamp(f"{years[0]}-01-01", tz="UTC").value
    span = pd.Timestamp(f"{years[1]}-07-01", tz="UTC").value - start
    return [int(start + rng.uniform(0, span)) // SECOND_NS * SECOND_NS for _ in range(count)]


def make_sights(ts, eph, n: int, seed: int, *, years=(2019, 2025), bodies: list[str] | None = None) -> list[Sight]:
    """``n`` sights for the intercept method, spread over bodies, hemispheres, longitudes and times: the Sun and
    the Moon 15-70° high anywhere by day or night (the Moon), stars and planets with the Sun 4°-11° below the
    horizon (nautical twilight) and 15-70° high (each DR placed from the bodies' skyfield GP)."""
    rng = np.random.default_rng(seed)
    bodies = bodies or ["Sun"] * 5 + ["Moon"] * 4 + list(PLANETS) * 2 + list(STARS)
    sights = []
    while len(sights) < n:
        batch = min(200, 2 * (n - len(sights)) + 10)
        times = _times(rng, years, batch)
        chosen = [str(rng.choice(bodies)) for _ in times]
        prefetch(ts, eph, [(b, u) for b, u in zip(chosen, times)] + [("Sun", u) for b, u in zip(chosen, times)
                                                                      if kind_of(b) in ("star", "planet")])
        for body, utc_ns in zip(chosen, times):
            if len(sights) >= n:
                break
            a = sky_almanac(ts, eph, body, utc_ns)
            gp_lat, gp_lon = a["dec"][0], wrap180(-a["gha"][0])
            if kind_of(body) in ("sun", "moon"):
                dr = _gp_offset(gp_lat, gp_lon, rng.uniform(20.0, 75.0), rng.uniform(0.0, 360.0))
            else:  # a place in nautical twilight from which the body stands 15-70° high
                sun = sky_almanac(ts, eph, "Sun", utc_ns)
                dr = None
                for _ in range(24):
                    place = _gp_offset(sun["dec"][0], wrap180(-sun["gha"][0]), 90.0 + rng.uniform(4.0, 11.0),
                                       rng.uniform(0.0, 360.0))
                    alt = hc_zn(place[0], (a["gha"][0] + place[1]) % 360.0, a["dec"][0])[0]
                    if 15.0 <= alt <= 70.0:
                        dr = place
                        break
                if dr is None:
                    continue
            if abs(dr[0]) > 62.0 or abs(dr[1]) > 179.0:
                continue
            limb = str(rng.choice(["lower", "upper"])) if body in ("Sun", "Moon") else ""
            o = _observer(rng)
            true_alt = hc_zn(dr[0], (a["gha"][0] + dr[1]) % 360.0, a["dec"][0])[0]
            sights.append(_sight(body, limb, utc_ns, dr[0], dr[1], o, _hs(kind_of(body), body, true_alt, o, a, limb,
                                                                          rng)))
    return sights


def _transit(ts, eph, body: str, guess_ns: int, lon: float) -> int:
    """The instant (whole seconds) of the body's upper meridian passage over ``lon``: GHA + lon = 0, by
    iterating on skyfield's GHA (about 15° an hour; 14.5° for the Moon)."""
    rate = 14.5 if body == "Moon" else 15.0
    t = guess_ns // SECOND_NS * SECOND_NS
    for _ in range(4):
        a = sky_almanac(ts, eph, body, t)
        off = wrap180(a["gha"][0] + lon)
        step = int(round(-off / rate * 3600.0)) * SECOND_NS
        if step == 0:
            break
        t += step
    return t


def make_latitude_sights(ts, eph, n: int, seed: int, *, ex: bool = False, years=(2019, 2025)) -> list[Sight]:
    """``n`` noon sights (the Sun; the Moon one in three) at meridian passage over the DR (``ex``: 2 minutes or
    more before or after it, and fewer minutes than the zenith distance in degrees), 20-75° high."""
    rng = np.random.default_rng(seed)
    sights = []
    for utc_ns in _times(rng, years, 4 * n):
        if len(sights) >= n:
            break
        body = "Moon" if rng.random() < 0.35 else "Sun"
        lon = float(rng.uniform(-178.0, 178.0))
        guess = utc_ns // (24 * HOUR_NS) * (24 * HOUR_NS) + int((12.0 - lon / 15.0) * HOUR_NS)
        transit = _transit(ts, eph, body, guess, lon)
        a = sky_almanac(ts, eph, body, transit)
        altitude = rng.uniform(20.0, 75.0)
        lat = a["dec"][0] + (90.0 - altitude) * rng.choice([-1.0, 1.0])
        if abs(lat) > 62.0:
            continue
        when = transit
        if ex:
            zenith = abs(lat - a["dec"][0])
            minutes = rng.uniform(2.0, min(0.9 * zenith, 25.0))
            when = transit + int(rng.choice([-1, 1]) * minutes * 60.0) * SECOND_NS
            a = sky_almanac(ts, eph, body, when)
        limb = str(rng.choice(["lower", "upper"]))
        o = _observer(rng)
        true_alt = hc_zn(lat, (a["gha"][0] + lon) % 360.0, a["dec"][0])[0]
        sights.append(_sight(body, limb, when, lat, lon, o, _hs("sun", body, true_alt, o, a, limb, rng, noise=3.0),
                             method="ex-meridian" if ex else "meridian"))
    return sights


def make_polaris_sights(ts, eph, n: int, seed: int, *, years=(2019, 2025)) -> list[Sight]:
    """``n`` Polaris sights from 5°-60° N in nautical twilight (the Sun 4°-11° below the horizon)."""
    rng = np.random.default_rng(seed)
    sights = []
    times = _times(rng, years, 2 * n)
    prefetch(ts, eph, [("Sun", u) for u in times] + [("Polaris", u) for u in times])
    for utc_ns in times:
        if len(sights) >= n:
            break
        lat = float(rng.uniform(5.0, 60.0))
        sun = sky_almanac(ts, eph, "Sun", utc_ns)
        target = -rng.uniform(4.0, 11.0)
        L, d = np.radians(lat), np.radians(sun["dec"][0])
        cos_t = (np.sin(np.radians(target)) - np.sin(L) * np.sin(d)) / (np.cos(L) * np.cos(d))
        if abs(cos_t) > 1.0:
            continue
        lha = np.degrees(np.arccos(cos_t)) * rng.choice([-1.0, 1.0])  # evening (west) or morning (east)
        lon = float(wrap180(lha - sun["gha"][0]))
        if abs(lon) > 179.0:
            continue
        a = sky_almanac(ts, eph, "Polaris", utc_ns)
        o = _observer(rng)
        true_alt = hc_zn(lat, (a["gha"][0] + lon) % 360.0, a["dec"][0])[0]
        sights.append(_sight("Polaris", "", utc_ns, lat, lon, o, _hs("star", "Polaris", true_alt, o, a, "", rng,
                                                                     noise=3.0), method="polaris"))
    return sights


def _compass_fields(rng, zn_true: float) -> dict:
    """An invented compass: its error (variation and deviation) and the bearing it reads, to 0.5°."""
    variation = round(float(rng.uniform(-15.0, 15.0)) * 2) / 2
    deviation = round(float(rng.uniform(-4.0, 4.0)) * 2) / 2
    compass = round(((zn_true - variation - deviation) % 360.0) * 2) / 2
    return {"compass_deg": compass, "variation_deg": variation}


def _altitude_zero(ts, eph, body: str, guess_ns: int, lat: float, lon: float) -> int:
    """The instant (whole seconds) near ``guess_ns`` when the body's centre stands on the celestial horizon
    (its altitude from skyfield's GHA and Dec 0°), by the secant method."""
    t0, t1 = guess_ns, guess_ns + 300 * SECOND_NS
    f0, f1 = altitude_at(ts, eph, body, t0, lat, lon), altitude_at(ts, eph, body, t1, lat, lon)
    for _ in range(8):
        if f1 == f0:
            break
        t2 = int(round(t1 - f1 * (t1 - t0) / (f1 - f0))) // SECOND_NS * SECOND_NS
        if t2 == t1:
            break
        t0, f0, t1 = t1, f1, t2
        f1 = altitude_at(ts, eph, body, t1, lat, lon)
    return t1


def make_compass_sights(ts, eph, n: int, seed: int, *, amplitude: bool, years=(2019, 2025)) -> list[Sight]:
    """``n`` compass checks on the Sun: by amplitude at rising or setting (its centre on the celestial horizon,
    skyfield), or by azimuth by day (the Sun 10-60° high)."""
    rng = np.random.default_rng(seed)
    sights = []
    for utc_ns in _times(rng, years, 3 * n):
        if len(sights) >= n:
            break
        lat = float(rng.uniform(-55.0, 55.0))
        lon = float(rng.uniform(-178.0, 178.0))
        o = _observer(rng)
        if amplitude:
            day = utc_ns // (24 * HOUR_NS) * (24 * HOUR_NS)
            a = sky_almanac(ts, eph, "Sun", day)
            cos_h = -np.tan(np.radians(lat)) * np.tan(np.radians(a["dec"][0]))
            if abs(cos_h) > 0.95:
                continue
            hour_angle = np.degrees(np.arccos(cos_h))
            target = 360.0 - hour_angle if rng.random() < 0.5 else hour_angle  # rising (east) or setting
            guess = day + int((((target - lon) / 15.0 + 12.0) % 24.0) * HOUR_NS) // SECOND_NS * SECOND_NS
            when = _altitude_zero(ts, eph, "Sun", guess, written(lat), written(lon))
        else:
            a = sky_almanac(ts, eph, "Sun", utc_ns)
            lat, lon = _gp_offset(a["dec"][0], wrap180(-a["gha"][0]), rng.uniform(30.0, 80.0),
                                  rng.uniform(0.0, 360.0))
            if abs(lat) > 62.0 or abs(lon) > 179.0:
                continue
            when = utc_ns
        a = sky_almanac(ts, eph, "Sun", when)
        zn_true = hc_zn(written(lat), (a["gha"][0] + written(lon)) % 360.0, a["dec"][0])[1]
        sights.append(_sight("Sun", "", when, lat, lon, o, float("nan"),
                             method="amplitude" if amplitude else "azimuth", **_compass_fields(rng, zn_true)))
    return sights


def make_rounds(ts, eph, n: int, seed: int, *, years=(2019, 2025)) -> list[list[Sight]]:
    """``n`` rounds of three stars taken together in nautical twilight from one DR, their azimuths spread."""
    rng = np.random.default_rng(seed)
    rounds = []
    times = _times(rng, years, 3 * n)
    prefetch(ts, eph, [("Sun", u) for u in times] + [(s, u) for u in times for s in STARS])
    for utc_ns in times:
        if len(rounds) >= n:
            break
        sun = sky_almanac(ts, eph, "Sun", utc_ns)
        lat, lon = _gp_offset(sun["dec"][0], wrap180(-sun["gha"][0]), 90.0 + rng.uniform(4.0, 11.0),
                              rng.uniform(0.0, 360.0))
        if abs(lat) > 62.0 or abs(lon) > 179.0:
            continue
        up = []
        for star in STARS:
            a = sky_almanac(ts, eph, star, utc_ns)
            alt, zn = hc_zn(lat, (a["gha"][0] + lon) % 360.0, a["dec"][0])
            if 15.0 <= alt <= 70.0 and all(abs(wrap180(zn - z)) > 40.0 for _, z, _, _ in up):
                up.append((star, zn, alt, a))
        if len(up) < 3:
            continue
        o = _observer(rng)
        members = []
        for k, (star, _, _, _) in enumerate(up[:3]):  # each sight two minutes after the last, at its own instant
            when = utc_ns + 120 * k * SECOND_NS
            alt = altitude_at(ts, eph, star, when, written(lat), written(lon))
            members.append(_sight(star, "", when, lat, lon, o, _hs("star", star, alt, o, sky_almanac(
                ts, eph, star, when), "", rng, noise=4.0)))
        rounds.append(members)
    return rounds


def plotted_fix(lines_of_round: list[dict], plant: str | None = None, which: int = 0,
                dr: tuple[float, float] | None = None) -> tuple[float, float]:
    """The fix a cadet plots from a round's lines (each from its position, Zn and intercept; a latitude as a
    line east and west through it), crossed by least squares on a plane tangent at the first line's position
    (this script's own plotting; the sheet's scale cos(latitude)). ``plant``: line ``which`` laid off the
    wrong way, or from the DR ``dr``."""
    def position(lines):
        if "latitude_worked" in lines:
            return lines["latitude_worked"], dr[1], 0.0, 0.0
        return lines["ap_lat"], lines["ap_lon"], lines["intercept_worked"], lines["zn_worked"]

    lat0, lon0, _, _ = position(lines_of_round[0])
    rows, rhs = [], []
    for k, lines in enumerate(lines_of_round):
        lat, lon, intercept, zn = position(lines)
        if k == which and plant == "plotted away":
            intercept = -intercept
        if k == which and plant == "plotted from dr":
            lat, lon = dr
        zn = np.radians(zn)
        x = wrap180(lon - lon0) * 60.0 * np.cos(np.radians(lat0)) + intercept * np.sin(zn)
        y = (lat - lat0) * 60.0 + intercept * np.cos(zn)
        rows.append([np.sin(zn), np.cos(zn)])
        rhs.append(np.sin(zn) * x + np.cos(zn) * y)
    (e, nn), *_ = np.linalg.lstsq(np.array(rows), np.array(rhs), rcond=None)
    lat = lat0 + nn / 60.0
    return float(lat), float(wrap180(lon0 + e / 60.0 / np.cos(np.radians(lat0))))


# --- the working as written ----------------------------------------------------------------------

def dm(deg: float, kind: str = "angle") -> str:
    """Degrees and minutes as a cadet writes them: 123° 45.6′, 44° 10.1′ N, 012° 09.3′ W, -0° 12.3′."""
    value = abs(deg)
    tenths = int(np.round(value * 600.0))
    d, m = divmod(tenths, 600)
    text = f"{d}° {m / 10:04.1f}′" if kind != "lon" else f"{d:03d}° {m / 10:04.1f}′"
    if kind == "lat" or kind == "dec":
        return f"{text} {'N' if deg >= 0 else 'S'}"
    if kind == "lon":
        return f"{text} {'E' if deg >= 0 else 'W'}"
    return f"-{text}" if deg < 0 and tenths else text


def texts(lines: dict, rng: np.random.Generator | None = None, amplitude_side: str = "") -> dict:
    """Each line as the cadet writes it in the working's column."""
    out = {}
    for name, value in lines.items():
        if name == "utc_worked":
            out[name] = value.strftime("%Y-%m-%d %H:%M:%S")
        elif name in ("ap_lat", "latitude_worked", "fix_lat_worked"):
            out[name] = dm(value, "lat")
        elif name in ("ap_lon", "fix_lon_worked"):
            out[name] = dm(value, "lon")
        elif name in ("dec_worked", "dec_hour_worked", "zenith_distance_worked"):
            out[name] = dm(value, "dec")
        elif name in ("zn_worked", "tab_z_worked", "z_interpolated_worked"):
            out[name] = f"{value:.1f}"
        elif name == "bearing_worked":
            out[name] = "S" if value == 180.0 else "N"
        elif name == "amplitude_worked":
            out[name] = f"{amplitude_side} {abs(value):.1f} {'N' if value >= 0 else 'S'}".strip()
        elif name in ("compass_error_worked", "deviation_worked"):
            out[name] = f"{abs(value):.1f} {'E' if value >= 0 else 'W'}"
        elif name == "lha_worked":
            whole = abs(value - np.round(value)) < 1e-9
            out[name] = f"{int(round(value)) % 360}" if whole else dm(value)
        elif name == "ex_meridian_a_worked":
            out[name] = f"{value:.1f}"
        elif name == "intercept_worked":
            words = ("T", "A") if rng is None or rng.random() < 0.5 else ("toward", "away")
            out[name] = f"{abs(value):.1f} {words[0] if value >= 0 else words[1]}"
        elif name in ("gha_hour_worked", "sha_worked", "gha_worked", "ha_worked", "ho_worked", "tab_hc_worked",
                      "hc_worked", "meridian_altitude_worked"):
            out[name] = dm(value)
        elif name == "increment_worked" and abs(value) >= 60.0:
            out[name] = dm(value / 60.0)
        else:
            out[name] = f"{value:+.1f}"
    return out


def log_row(sight: Sight, lines: dict, rng=None, **extra) -> dict:
    """The sight's own columns as a hand-kept log gives them (and the method, the compass bearing and the
    variation where they apply), then the worked lines."""
    zone = sight.zone_time
    watch = zone + pd.Timedelta(seconds=sight.watch_error_s)
    row = {"Date": zone.strftime("%Y-%m-%d"), "Watch time": watch.strftime("%H:%M:%S"),
           "ZD": f"{sight.zd_h:+d}" if sight.zd_h else "0",
           "Watch error": "" if not sight.watch_error_s else
           f"{abs(sight.watch_error_s)} s {'fast' if sight.watch_error_s > 0 else 'slow'}",
           "Body": sight.body, "Limb": sight.limb,
           "Hs": "" if sight.hs_arcmin != sight.hs_arcmin else dm(sight.hs_arcmin / 60.0),
           "IE": "0" if not sight.ie_arcmin else f"{abs(sight.ie_arcmin):.1f} {'on' if sight.ie_arcmin > 0 else 'off'}",
           "Height of eye (ft)" if sight.eye_in_feet else "Height of eye (m)":
               f"{sight.eye_ft:.1f}" if sight.eye_in_feet else f"{sight.eye_m:.1f}",
           "DR lat": dm(sight.dr_lat, "lat"), "DR lon": dm(sight.dr_lon, "lon"),
           "Method": "" if sight.method == "intercept" else sight.method}
    if sight.method in ("amplitude", "azimuth"):
        row["Compass bearing"] = f"{sight.compass_deg:.1f}"
        row["Variation"] = f"{abs(sight.variation_deg):.1f} {'E' if sight.variation_deg >= 0 else 'W'}"
    row.update(extra)
    side = ""
    if sight.method == "amplitude" and rng is not None and rng.random() < 0.5:
        side = "E" if lines.get("zn_worked", 90.0) < 180.0 else "W"
    row.update(texts(lines, rng, side))
    return row


def sights_to_mark(sights: list[Sight], groups: list[str] | None = None):
    """navred's SightsToMark of these sights, as navred's log reader gives them (the true UTC, the DR as
    written, the zone and watch error, the height of eye and its feet), for marking without a file."""
    from navred.marking import SightsToMark

    def column(values, dtype=float):
        return np.array(values, dtype=dtype)

    return SightsToMark(
        body=column([s.body for s in sights], object), limb=column([s.limb for s in sights], object),
        horizon=column(["sea"] * len(sights), object),
        hs_deg=column([0.0 if s.hs_arcmin != s.hs_arcmin else s.hs_arcmin / 60.0 for s in sights]),
        index_error_arcmin=column([s.ie_arcmin for s in sights]), eye_height_m=column([s.eye_m for s in sights]),
        eye_height_ft=column([s.eye_ft if s.eye_in_feet else np.nan for s in sights]),
        temperature_c=column([10.0] * len(sights)), pressure_hpa=column([1010.0] * len(sights)),
        utc=column([s.utc_ns for s in sights], "datetime64[ns]"),
        zone_description_h=column([float(s.zd_h) for s in sights]),
        watch_error_s=column([float(s.watch_error_s) for s in sights]),
        dr_lat_deg=column([s.dr_lat for s in sights]), dr_lon_deg=column([s.dr_lon for s in sights]),
        dut1_s=column([np.nan] * len(sights)), method=column([s.method for s in sights], object),
        compass_bearing_deg=column([s.compass_deg for s in sights]),
        variation_deg=column([s.variation_deg for s in sights]),
        fix_group=None if groups is None else column(groups, object))


def given_arrays(workings: list[dict]) -> dict:
    """The lines of many workings as navred.marking.mark's arrays (NaN/NaT where a working lacks a line)."""
    keys = sorted({k for w in workings for k in w})
    out = {}
    for key in keys:
        if key == "utc_worked":
            out[key] = np.array([w[key].value if key in w else np.datetime64("NaT", "ns") for w in workings],
                                dtype="datetime64[ns]")
        else:
            out[key] = np.array([w.get(key, np.nan) for w in workings], dtype=float)
    return out


# --- the demo class -------------------------------------------------------------------------------

#: The invented class: three cadets of the invented training ship "Grey Shearwater" (she does not exist),
#: hove to for a day's exercise, each working the morning stars, an amplitude at sunrise, a forenoon Sun,
#: an ex-meridian and the noon Sun (crossed with the forenoon Sun as the noon round), an azimuth in the
#: afternoon, Polaris and the evening stars; and the
#: mistakes planted in their workings (working number -> the catalogue's key; "plot" plants on the round's
#: plotted fix).
CADETS = {"Cadet Ansel": {2: "zone sign", 10: "toward away"},
          "Cadet Birch": {1: "index on off", 5: "sd sign", 7: "zenith name", 11: "plotted away"},
          "Cadet Corrie": {4: "error name", 6: "lha sign", 9: "polaris degree"}}
DEMO_DAY = pd.Timestamp("2026-10-06", tz="UTC")
DEMO_DR = (35.2, -12.8)  # 35° 12′ N 012° 48′ W, zone +1
DEMO_ZD = 1
MORNING_STARS = ("Sirius", "Capella", "Procyon", "Aldebaran", "Regulus", "Dubhe", "Betelgeuse", "Pollux", "Rigel")
EVENING_STARS = ("Vega", "Altair", "Arcturus", "Deneb", "Kochab", "Fomalhaut", "Enif", "Alphecca", "Rasalhague")


def _sun_altitude_at(ts, eph, utc_ns, lat, lon):
    return altitude_at(ts, eph, "Sun", utc_ns, lat, lon)


def _sun_crossing(ts, eph, start_ns, end_ns, altitude, lat, lon) -> int:
    """The instant (whole seconds) between start and end when the Sun's centre crosses ``altitude`` (bisection
    on skyfield's altitude)."""
    lo, hi = start_ns, end_ns
    f_lo = _sun_altitude_at(ts, eph, lo, lat, lon) - altitude
    for _ in range(40):
        mid = (lo + hi) // 2 // SECOND_NS * SECOND_NS
        if mid in (lo, hi):
            break
        f_mid = _sun_altitude_at(ts, eph, mid, lat, lon) - altitude
        if (f_mid < 0) == (f_lo < 0):
            lo, f_lo = mid, f_mid
        else:
            hi = mid
    return lo


def demo_day(ts, eph) -> dict:
    """The demo day's times at the ship (skyfield): morning and evening nautical twilight (the Sun at −7°),
    sunrise and sunset (the centre at 0°), meridian passage."""
    lat, lon = DEMO_DR
    day = DEMO_DAY.value
    hour = HOUR_NS
    noon = _transit(ts, eph, "Sun", day + int((12.0 - lon / 15.0) * hour), lon)
    return {"morning": _sun_crossing(ts, eph, day + 4 * hour, noon, -7.0, lat, lon),
            "sunrise": _sun_crossing(ts, eph, day + 4 * hour, noon, 0.0, lat, lon),
            "noon": noon,
            "sunset": _sun_crossing(ts, eph, noon + 8 * hour, noon, 0.0, lat, lon),
            "evening": _sun_crossing(ts, eph, noon + 9 * hour, noon, -7.0, lat, lon)}


def demo_sights(ts, eph, seed: int = 1790):
    """(cadet, working number, fix group, Sight, style) for the invented class: the ship's DR for the whole day
    (she is hove to for the exercise), each cadet's sights a minute or two apart, Hs with a little scatter."""
    rng = np.random.default_rng(seed)
    lat, lon = DEMO_DR
    times = demo_day(ts, eph)

    def stars_up(when, names, count):
        up = []
        for body in names:
            a = sky_almanac(ts, eph, body, when)
            alt, zn = hc_zn(lat, (a["gha"][0] + lon) % 360.0, a["dec"][0])
            if 18.0 <= alt <= 65.0 and all(abs(wrap180(zn - z)) > 50.0 for _, z in up):
                up.append((body, zn))
        if len(up) < count:
            raise RuntimeError(f"only {len(up)} stars up at {pd.Timestamp(when, tz='UTC')}")
        return [b for b, _ in up[:count]]

    o = {"eye_m": 3.5, "in_feet": False, "ie": 1.2, "watch": 7}
    morning, evening = times["morning"], times["evening"]
    plan = [  # (the round, "" for a working on its own; method, body, limb, UTC, style): the forenoon Sun crossed
        # with the noon latitudes, the stars of each twilight
        *[("06 Oct morning stars", "intercept", s, "", morning + 150 * k * SECOND_NS, style)
          for k, (s, style) in enumerate(zip(stars_up(morning, MORNING_STARS, 3), ("full", "calculator", "dr")))],
        ("", "amplitude", "Sun", "", times["sunrise"], "full"),
        ("06 Oct noon", "intercept", "Sun", "lower", times["noon"] - int(2.5 * HOUR_NS), "full"),
        ("06 Oct noon", "ex-meridian", "Sun", "lower", times["noon"] - 12 * 60 * SECOND_NS, "full"),
        ("06 Oct noon", "meridian", "Sun", "lower", times["noon"], "full"),
        ("", "azimuth", "Sun", "", times["noon"] + int(3.2 * HOUR_NS), "full"),
        ("06 Oct evening stars", "polaris", "Polaris", "", evening, "full"),
        *[("06 Oct evening stars", "intercept", s, "", evening + 150 * (k + 1) * SECOND_NS, style)
          for k, (s, style) in enumerate(zip(stars_up(evening, EVENING_STARS, 2), ("full", "interpolated")))],
    ]
    out = []
    for cadet in CADETS:
        for number, (group, method, body, limb, when, style) in enumerate(plan, start=1):
            when = (when + int(rng.integers(0, 90)) * SECOND_NS) // SECOND_NS * SECOND_NS
            if method == "amplitude":
                when = times["sunrise"]
            if method == "meridian":
                when = times["noon"]
            a = sky_almanac(ts, eph, body, when)
            alt, zn = hc_zn(lat, (a["gha"][0] + lon) % 360.0, a["dec"][0])
            extra = {}
            hs = float("nan")
            if method in ("amplitude", "azimuth"):
                extra = {"compass_deg": round(((zn - (-4.5) - 1.5) % 360.0) * 2) / 2, "variation_deg": -4.5}
            else:
                hs = _hs(kind_of(body), body, alt, o, a, limb, rng, noise=1.5)
            out.append((cadet, number, group, replace(_sight(body, limb, when, lat, lon, o, hs, method=method,
                                                             **extra), zd_h=DEMO_ZD), style))
    return out


def make_class(ts, eph, seed: int = 1790):
    """The invented class's workings, a table per cadet, and the list of what was planted where."""
    rng = np.random.default_rng(seed)
    rows, planted = {}, []
    entries = demo_sights(ts, eph, seed)
    rounds: dict[tuple[str, str], list] = {}
    for cadet, number, group, sight, style in entries:
        plant = CADETS[cadet].get(number)
        lines_plant = None if plant in PLOT_PLANTS else plant
        if lines_plant and not eligible(sight, work(ts, eph, sight, None, style), lines_plant, style):
            raise RuntimeError(f"{plant} cannot show on {cadet}'s working {number} ({sight.body})")
        lines = work(ts, eph, sight, lines_plant, style)
        rounds.setdefault((cadet, group), []).append((number, sight, lines, plant))
        rows.setdefault(cadet, []).append(log_row(sight, lines, rng, Observer=cadet, **{"Fix group": group}))
        if plant:
            planted.append({"cadet": cadet, "row": number + 1, "body": sight.body, "method": sight.method,
                            "planted": plant})
    # each round of position lines: the fix the cadet plotted, on its last sight
    for (cadet, _group), members in rounds.items():
        lines = [m[2] for m in members if m[1].method in ("intercept", "polaris", "meridian", "ex-meridian")]
        if len(lines) < 2 or not any(m[1].method == "intercept" for m in members):
            continue
        plant = next((m[3] for m in members if m[3] in PLOT_PLANTS), None)
        which = next(k for k, m in enumerate(members) if m[1].method == "intercept")
        fix = plotted_fix(lines, plant, which, (members[0][1].dr_lat, members[0][1].dr_lon))
        last = members[-1][0] - 1
        rows[cadet][last]["fix_lat_worked"] = dm(fix[0], "lat")
        rows[cadet][last]["fix_lon_worked"] = dm(fix[1], "lon")
    return rows, pd.DataFrame(planted)


def main() -> None:
    import importlib.resources

    from skyfield.api import load

    ts = load.timescale(builtin=True)
    eph = load(str(importlib.resources.files("skyfield_data") / "data" / "de421.bsp"))
    rows, planted = make_class(ts, eph)
    columns = list(dict.fromkeys(k for records in rows.values() for r in records for k in r))
    with pd.ExcelWriter(OUT / "class_workings.xlsx", engine="openpyxl") as writer:
        for cadet, records in rows.items():
            pd.DataFrame(records).reindex(columns=columns).to_excel(writer, sheet_name=cadet, index=False)
    planted.to_csv(OUT / "class_workings_planted.csv", index=False)
    print(f"wrote {OUT / 'class_workings.xlsx'} and {OUT / 'class_workings_planted.csv'}")


__all__ = ["Sight", "work", "make_sights", "make_latitude_sights", "make_polaris_sights", "make_compass_sights",
           "make_rounds", "plotted_fix", "eligible", "texts", "log_row", "sights_to_mark", "given_arrays", "PLANTS",
           "PLOT_PLANTS", "STYLES", "METHODS", "replace", "prefetch"]

if __name__ == "__main__":
    main()
