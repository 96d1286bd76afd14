"""Hand workings of sights, synthesized independently of navred: the marking tests' reference and the demo class.

A cadet reducing a sight by hand works from the printed almanac and the sight reduction
tables. This module does the same thing from outside navred:

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
  (tests/conftest.py);
- the assumed position by the trade's rule (latitude the whole degree nearest the DR, longitude
  within 30′ of the DR making LHA whole), then Hc and Z from the spherical triangle
  (sin Hc = sin L sin d + cos L cos d cos LHA; Bowditch ch. 20) at the whole degrees of Dec,
  rounded as the tables print them (Hc and d to 0.1′, Z to 0.1°), the d correction for the
  minutes of Dec, Zn by the tables' rule for the hemisphere and LHA, and the intercept.

A mistake from the catalogue can be planted at its line, with every later line carried forward
from it as the cadet would have carried it (:data:`PLANTS`).

INVENTED DATA only in the demo: ``python scripts/make_class_workings.py`` writes
sample_sights/class_workings.xlsx, the hand workings of three invented cadets of an invented
training ship (a sheet each, a few sights each, some with a planted mistake), and
sample_sights/class_workings_planted.csv, the list of what was planted where.
"""

from __future__ import annotations

import sys
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from tests.conftest import centre_of_light_offset_arcmin, frozen, sky_target  # noqa: E402

OUT = ROOT / "sample_sights"
HOUR_NS = 3_600_000_000_000
#: Base rates of the increment tables, ′ an hour (from memory).
BASE_ARCMIN_PER_HOUR = {"sun": 900.0, "planet": 900.0, "moon": 14 * 60 + 19.0, "aries": 900.0 + 2.46}
RADIUS_KM = {"Sun": 695700.0, "Moon": 1737.4, "Venus": 6051.8, "Mars": 3389.5,
             "Jupiter": 69911.0, "Saturn": 58232.0}  # IAU mean radii (from memory)
EARTH_EQUATORIAL_KM = 6378.137  # WGS 84
PLANETS = ("Venus", "Mars", "Jupiter", "Saturn")
STARS = ("Sirius", "Canopus", "Arcturus", "Vega", "Capella", "Rigel", "Procyon", "Achernar", "Altair",
         "Aldebaran", "Antares", "Spica", "Fomalhaut", "Deneb", "Regulus", "Peacock", "Kochab", "Dubhe")


def r1(arcmin):
    """Rounded to 0.1′ as the almanac and tables print."""
    return float(np.round(arcmin, 1))


def wrap180(deg):
    return (deg + 180.0) % 360.0 - 180.0


def kind_of(body: str) -> str:
    return "sun" if body == "Sun" else "moon" if body == "Moon" else "planet" if body in PLANETS else "star"


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
    hs_arcmin: float  # 0.1′
    dr_lat: float
    dr_lon: float

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


def sky_almanac(ts, eph, body: str, utc_ns: int) -> dict:
    """skyfield's almanac for a sight: GHA, Dec and GHA Aries (degrees) at the instant, its whole hour and the
    next, and the geocentric distance (km) at the instant. Frozen in tests/data by the freeze script."""
    hour = utc_ns // HOUR_NS * HOUR_NS

    def compute():
        stamps = pd.to_datetime([utc_ns, hour, hour + HOUR_NS], utc=True)
        t = ts.utc(stamps.year.to_numpy(), stamps.month.to_numpy(), stamps.day.to_numpy(), stamps.hour.to_numpy(),
                   stamps.minute.to_numpy(), stamps.second.to_numpy())
        ra, dec, distance = eph["earth"].at(t).observe(sky_target(ts, eph, body)).apparent().radec(epoch="date")
        gast = t.gast * 15.0
        return [*((gast - ra.hours * 15.0) % 360.0), *dec.degrees, *(gast % 360.0), float(distance.km[0])]

    v = frozen(f"handwork|{body}|{utc_ns}", compute)
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


#: The catalogue's mistakes as a cadet makes them (navred.marking.CAUSES keys).
PLANTS = ("zone sign", "greenwich date", "watch error", "increment", "v sign", "d sign", "lha sign", "ap lon",
          "ap lat", "zn rule", "hc d sign", "dip added", "feet as metres", "index on off", "sd sign",
          "moon parallax", "toward away")
#: Which lines a working gives, by style: every line, the combined main correction instead of its parts,
#: the main lines only, or the three required.
STYLES = ("full", "main", "short", "minimal")


def work(ts, eph, sight: Sight, plant: str | None = None, style: str = "full") -> dict:
    """The cadet's working: each line's value (degrees for angles, ′ for corrections, nm + TOWARD for the
    intercept, a Timestamp for the UTC), with ``plant`` made where it belongs and carried forward."""
    kind = kind_of(sight.body)
    lines: dict = {}
    # --- the time: watch time − watch error (fast +) + ZD = UTC, on the Greenwich date
    watch = sight.zone_time + pd.Timedelta(seconds=sight.watch_error_s)
    utc = watch - pd.Timedelta(seconds=sight.watch_error_s) + pd.Timedelta(hours=sight.zd_h)
    if plant == "zone sign":
        utc = watch - pd.Timedelta(seconds=sight.watch_error_s) - pd.Timedelta(hours=sight.zd_h)
    elif plant == "watch error":
        utc = watch + pd.Timedelta(seconds=sight.watch_error_s) + pd.Timedelta(hours=sight.zd_h)
    elif plant == "greenwich date":  # the time of day right, the zone date kept
        utc = pd.Timestamp.combine(sight.zone_time.date(), utc.time()).tz_localize("UTC")
    lines["utc_worked"] = utc
    a = sky_almanac(ts, eph, sight.body, utc.value)
    minutes = (utc.value % HOUR_NS) / 6e10
    middle = (np.floor(minutes) + 0.5) / 60.0
    # --- GHA and Dec
    star = kind == "star"
    hour_values = a["aries"] if star else a["gha"]
    base = BASE_ARCMIN_PER_HOUR["aries" if star else kind]
    lines["gha_hour_worked"] = r1(hour_values[1] * 60.0) / 60.0
    lines["increment_worked"] = r1(base * minutes / 60.0)
    if star:
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
    if star:
        lines["dec_worked"] = r1(a["dec"][0] * 60.0) / 60.0
    else:
        lines["dec_hour_worked"] = r1(a["dec"][1] * 60.0) / 60.0
        d = r1((a["dec"][2] - a["dec"][1]) * 60.0)
        lines["d_corr_worked"] = r1(d * middle) * (-1.0 if plant == "d sign" else 1.0)
        lines["dec_worked"] = (lines["dec_hour_worked"] * 60.0 + lines["d_corr_worked"]) / 60.0
    gha, dec = lines["gha_worked"], lines["dec_worked"]
    # --- Hs to Ho
    lines["ic_worked"] = sight.ie_arcmin if plant == "index on off" else -sight.ie_arcmin
    dip = r1(1.76 * np.sqrt(sight.eye_ft if plant == "feet as metres" else sight.eye_m))
    lines["dip_worked"] = dip if plant == "dip added" else -dip
    ha = sight.hs_arcmin + lines["ic_worked"] + lines["dip_worked"]
    lines["ha_worked"] = ha / 60.0
    lines["refraction_worked"] = -r1(bennett_arcmin(ha / 60.0))
    radius = RADIUS_KM.get(sight.body)
    sd = r1(np.degrees(np.arcsin(radius / a["distance_km"])) * 60.0) if kind in ("sun", "moon") else 0.0
    if kind in ("sun", "moon"):
        lower = sight.limb == "lower"
        if plant == "sd sign":
            lower = not lower
        lines["sd_worked"] = sd if lower else -sd
    centre = (ha + lines["refraction_worked"] + lines.get("sd_worked", 0.0)) / 60.0
    if kind != "star":
        hp = np.degrees(np.arcsin(EARTH_EQUATORIAL_KM / a["distance_km"])) * 60.0
        lines["parallax_worked"] = r1(hp * np.cos(np.radians(centre)))
        if plant == "moon parallax":
            del lines["parallax_worked"]
    if sight.body in ("Venus", "Mars"):
        lines["additional_worked"] = -r1(light_offset_arcmin(ts, eph, sight, utc.value))
    main = lines["refraction_worked"] + lines.get("sd_worked", 0.0) + lines.get("parallax_worked", 0.0)
    lines["main_worked"] = main
    lines["ho_worked"] = (ha + main + lines.get("additional_worked", 0.0)) / 60.0
    # --- the assumed position and LHA
    lat = float(np.round(sight.dr_lat))
    if plant == "ap lat":  # the other whole degree beside the DR
        lat = float(np.floor(sight.dr_lat) if lat > sight.dr_lat else np.ceil(sight.dr_lat))
    lines["ap_lat"] = lat
    if plant == "lha sign":  # LHA = GHA − east longitude
        lha = float(np.round(gha - sight.dr_lon) % 360.0)
        lines["ap_lon"] = wrap180(gha - lha)
    elif plant == "ap lon":  # the DR longitude kept, LHA rounded to the whole degree anyway
        lines["ap_lon"] = r1(sight.dr_lon * 60.0) / 60.0
        lha = float(np.round(gha + lines["ap_lon"]) % 360.0)
    else:
        lha = float(np.round(gha + sight.dr_lon) % 360.0)
        lines["ap_lon"] = wrap180(lha - gha)
    lines["lha_worked"] = lha
    # --- the tables: whole degrees of Dec, then the d correction for its minutes
    whole = float(np.sign(dec) * np.floor(abs(dec)))
    step = 1.0 if dec >= 0 else -1.0
    hc0, zn0 = hc_zn(lat, lha, whole)
    hc1, _ = hc_zn(lat, lha, whole + step)
    lines["tab_hc_worked"] = r1(hc0 * 60.0) / 60.0
    lines["tab_d_worked"] = r1((hc1 - hc0) * 60.0)
    lines["tab_z_worked"] = float(np.round(z_of(zn0, lat), 1))
    correction = r1(lines["tab_d_worked"] * (abs(dec) - abs(whole)))
    lines["hc_correction_worked"] = -correction if plant == "hc d sign" else correction
    lines["hc_worked"] = lines["tab_hc_worked"] + lines["hc_correction_worked"] / 60.0
    lines["zn_worked"] = zn_rule(lines["tab_z_worked"], lat, lha, reversed_lha=plant == "zn rule")
    intercept = r1((lines["ho_worked"] - lines["hc_worked"]) * 60.0)
    lines["intercept_worked"] = -intercept if plant == "toward away" else intercept
    return _styled(lines, kind, style)


def _styled(lines: dict, kind: str, style: str) -> dict:
    if style == "minimal":
        keep = ("zn_worked", "ho_worked", "intercept_worked")
    elif style == "short":
        keep = ("utc_worked", "gha_worked", "dec_worked", "ho_worked", "ap_lat", "ap_lon", "lha_worked", "hc_worked",
                "zn_worked", "intercept_worked")
    else:
        keep = tuple(lines)
    out = {k: v for k, v in lines.items() if k in keep}
    if style == "full":
        out.pop("main_worked", None)
    elif style == "main":
        for k in ("refraction_worked", "sd_worked", "parallax_worked"):
            out.pop(k, None)
    return out


def eligible(sight: Sight, right: dict, plant: str) -> bool:
    """Whether a mistake can show on this sight (it changes a line by more than the rounding)."""
    kind = kind_of(sight.body)
    return {
        "zone sign": sight.zd_h != 0,
        "greenwich date": sight.crosses_midnight,
        "watch error": abs(sight.watch_error_s) >= 3,
        "increment": right.get("increment_worked", 0.0) >= 1.0,
        "v sign": abs(right.get("v_corr_worked", 0.0)) >= 0.3,
        "d sign": abs(right.get("d_corr_worked", 0.0)) >= 0.3,
        "hc d sign": abs(right["hc_correction_worked"]) >= 0.5,
        "feet as metres": sight.eye_in_feet,
        "index on off": abs(sight.ie_arcmin) >= 0.3,
        "sd sign": kind in ("sun", "moon"),
        "moon parallax": kind == "moon",
        "toward away": abs(right["intercept_worked"]) >= 0.5,
        "zn rule": 2.0 <= right["tab_z_worked"] <= 178.0,
        "ap lat": abs(sight.dr_lat - np.round(sight.dr_lat)) >= 0.05,
        "ap lon": abs(wrap180(right["gha_worked"] + sight.dr_lon - np.round(right["gha_worked"] + sight.dr_lon)))
        >= 0.05,
    }.get(plant, True)


def make_sights(ts, eph, n: int, seed: int, *, years=(2019, 2025)) -> list[Sight]:
    """``n`` sights spread over bodies, hemispheres, longitudes and times, each DR placed where the body stands
    15-70° high (from its skyfield GP)."""
    rng = np.random.default_rng(seed)
    start = pd.Timestamp(f"{years[0]}-01-01", tz="UTC").value
    span = pd.Timestamp(f"{years[1]}-07-01", tz="UTC").value - start
    bodies = ["Sun"] * 5 + ["Moon"] * 4 + list(PLANETS) * 2 + list(STARS)
    sights = []
    while len(sights) < n:
        body = str(rng.choice(bodies))
        utc_ns = int(start + rng.uniform(0, span)) // 1_000_000_000 * 1_000_000_000
        a = sky_almanac(ts, eph, body, utc_ns)
        gp_lat, gp_lon = a["dec"][0], wrap180(-a["gha"][0])
        zenith = np.radians(rng.uniform(20.0, 75.0))
        bearing = np.radians(rng.uniform(0.0, 360.0))
        p1 = np.radians(gp_lat)
        p2 = np.arcsin(np.sin(p1) * np.cos(zenith) + np.cos(p1) * np.sin(zenith) * np.cos(bearing))
        l2 = np.radians(gp_lon) + np.arctan2(np.sin(bearing) * np.sin(zenith) * np.cos(p1),
                                             np.cos(zenith) - np.sin(p1) * np.sin(p2))
        dr_lat = round(float(np.degrees(p2)), 4)
        dr_lon = round(float(wrap180(np.degrees(l2))), 4)
        if abs(dr_lat) > 62.0 or abs(dr_lon) > 179.0:
            continue
        limb = str(rng.choice(["lower", "upper"])) if body in ("Sun", "Moon") else ""
        eye_m = round(float(rng.uniform(2.0, 25.0)), 1)
        in_feet = bool(rng.random() < 0.3)
        if in_feet:  # the height the log gives, in whole tenths of a foot
            eye_m = round(eye_m / 0.3048, 1) * 0.3048
        ie = 0.0 if rng.random() < 0.15 else round(float(rng.choice([-1, 1]) * rng.uniform(0.3, 3.0)), 1)
        watch = 0 if rng.random() < 0.4 else int(rng.choice([-1, 1]) * rng.integers(4, 45))
        true_altitude = 90.0 - np.degrees(zenith)
        hs = (true_altitude * 60.0 + 1.76 * np.sqrt(eye_m) + bennett_arcmin(true_altitude) + ie
              + rng.uniform(-8.0, 8.0))
        sights.append(Sight(body, limb, utc_ns, int(-np.round(dr_lon / 15.0)), watch, ie, eye_m, in_feet,
                            round(hs, 1), dr_lat, dr_lon))
    return sights


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


def texts(lines: dict, rng: np.random.Generator | None = None) -> dict:
    """Each line as the cadet writes it in the working's column."""
    out = {}
    for name, value in lines.items():
        if name == "utc_worked":
            out[name] = value.strftime("%Y-%m-%d %H:%M:%S")
        elif name in ("ap_lat",):
            out[name] = dm(value, "lat")
        elif name == "ap_lon":
            out[name] = dm(value, "lon")
        elif name in ("dec_worked", "dec_hour_worked"):
            out[name] = dm(value, "dec")
        elif name in ("zn_worked", "tab_z_worked"):
            out[name] = f"{value:.1f}"
        elif name == "lha_worked":
            out[name] = f"{int(round(value)) % 360}"
        elif name == "intercept_worked":
            words = ("T", "A") if rng is None or rng.random() < 0.5 else ("toward", "away")
            out[name] = f"{abs(value):.1f} {words[0] if value >= 0 else words[1]}"
        elif name in ("gha_hour_worked", "sha_worked", "gha_worked", "ha_worked", "ho_worked", "tab_hc_worked",
                      "hc_worked"):
            out[name] = dm(value)
        else:
            out[name] = f"{value:+.1f}"
    return out


def log_row(sight: Sight, lines: dict, rng=None, **extra) -> dict:
    """The sight's own columns as a hand-kept log gives them, then the worked lines."""
    zone = sight.zone_time
    watch = zone + pd.Timedelta(seconds=sight.watch_error_s)
    row = {"Date": zone.strftime("%Y-%m-%d"), "Watch time": watch.strftime("%H:%M:%S"),
           "ZD": f"{sight.zd_h:+d}" if sight.zd_h else "0",
           "Watch error": "" if not sight.watch_error_s else
           f"{abs(sight.watch_error_s)} s {'fast' if sight.watch_error_s > 0 else 'slow'}",
           "Body": sight.body, "Limb": sight.limb,
           "Hs": dm(sight.hs_arcmin / 60.0), "IE": "0" if not sight.ie_arcmin else
           f"{abs(sight.ie_arcmin):.1f} {'on' if sight.ie_arcmin > 0 else 'off'}",
           "Height of eye (ft)" if sight.eye_in_feet else "Height of eye (m)":
               f"{sight.eye_ft:.1f}" if sight.eye_in_feet else f"{sight.eye_m:.1f}",
           "DR lat": dm(sight.dr_lat, "lat"), "DR lon": dm(sight.dr_lon, "lon")}
    row.update(extra)
    row.update(texts(lines, rng))
    return row


# --- the demo class -------------------------------------------------------------------------------

#: The invented class: three cadets of the invented training ship "Grey Shearwater" (she does not exist),
#: each working the morning stars, a forenoon Sun and the evening bodies of one day at sea, and the
#: mistakes planted in their workings (sight number -> the catalogue's key).
CADETS = {"Cadet Ansel": {2: "zone sign", 5: "toward away"},
          "Cadet Birch": {1: "index on off", 4: "sd sign", 6: "zn rule"},
          "Cadet Corrie": {3: "lha sign"}}
DEMO_DAY = pd.Timestamp("2026-10-06", tz="UTC")
DEMO_DR = (35.2, -12.8)  # 35° 12′ N 012° 48′ W, zone +1
DEMO_ZD = 1
DEMO_ROUNDS = (("morning stars", 6, 50, ("Sirius", "Capella", "Procyon", "Aldebaran", "Regulus", "Dubhe",
                                          "Betelgeuse", "Pollux"), 3),
               ("forenoon Sun", 10, 20, ("Sun",), 1),
               ("evening sights", 19, 5, ("Moon", "Vega", "Altair", "Arcturus", "Deneb", "Kochab", "Fomalhaut"), 2))


def _visible(ts, eph, body, utc_ns, lat, lon):
    a = sky_almanac(ts, eph, body, utc_ns)
    return hc_zn(lat, (a["gha"][0] + lon) % 360.0, a["dec"][0])


def demo_sights(ts, eph, seed: int = 1790):
    """(cadet, sight number, fix group, Sight) for the invented class: the ship's DR for the whole day (she
    is hove to for the exercise), each cadet's sights a minute or two apart, Hs with a little scatter."""
    rng = np.random.default_rng(seed)
    lat, lon = DEMO_DR
    chosen = []
    for name, zone_hour, zone_minute, bodies, count in DEMO_ROUNDS:
        utc = DEMO_DAY + pd.Timedelta(hours=zone_hour + DEMO_ZD, minutes=zone_minute)
        up = []
        for body in bodies:
            hc, zn = _visible(ts, eph, body, utc.value, lat, lon)
            if 18.0 <= hc <= 65.0 and all(abs(wrap180(zn - z)) > 50.0 for _, z in up):
                up.append((body, zn))
        if len(up) < count:
            raise RuntimeError(f"only {len(up)} bodies up for the {name}")
        chosen.append((name, utc, [b for b, _ in up[:count]]))
    out = []
    for cadet in CADETS:
        number = 0
        for name, utc, bodies in chosen:
            for k, body in enumerate(bodies):
                number += 1
                when = utc + pd.Timedelta(seconds=int(rng.integers(0, 150)) + 240 * k)
                when_ns = when.value // 1_000_000_000 * 1_000_000_000
                hc, _ = _visible(ts, eph, body, when_ns, lat, lon)
                limb = "lower" if body in ("Sun", "Moon") else ""
                eye = 3.5
                hs = hc * 60.0 + 1.76 * np.sqrt(eye) + bennett_arcmin(hc) + 1.2 + rng.normal(0.0, 1.5)
                if body in ("Sun", "Moon"):
                    a = sky_almanac(ts, eph, body, when_ns)
                    hs -= np.degrees(np.arcsin(RADIUS_KM[body] / a["distance_km"])) * 60.0
                    if body == "Moon":
                        hs -= np.degrees(np.arcsin(EARTH_EQUATORIAL_KM / a["distance_km"])) * 60.0 * np.cos(
                            np.radians(hc))
                out.append((cadet, number, f"06 Oct {name}",
                            Sight(body, limb, int(when_ns), DEMO_ZD, 7, 1.2, eye, False, round(float(hs), 1),
                                  lat, lon)))
    return out


def make_class(ts, eph, seed: int = 1790):
    """The invented class's workings, a table per cadet, and the list of what was planted where."""
    rng = np.random.default_rng(seed)
    rows, planted = {}, []
    for cadet, number, group, sight in demo_sights(ts, eph, seed):
        plant = CADETS[cadet].get(number)
        if plant and not eligible(sight, work(ts, eph, sight), plant):
            raise RuntimeError(f"{plant} cannot show on {cadet}'s sight {number} ({sight.body})")
        lines = work(ts, eph, sight, plant, "full" if number % 2 else "short")
        rows.setdefault(cadet, []).append(log_row(sight, lines, rng, Observer=cadet, **{"Fix group": group}))
        if plant:
            planted.append({"cadet": cadet, "row": number + 1, "body": sight.body, "planted": plant})
    return rows, pd.DataFrame(planted)


def main() -> None:
    import importlib.resources

    from skyfield.api import load

    from tests.conftest import FROZEN_PATH  # noqa: F401  (the frozen almanac, when present)

    ts = load.timescale(builtin=True)
    eph = load(str(importlib.resources.files("skyfield_data") / "data" / "de421.bsp"))
    rows, planted = make_class(ts, eph)
    with pd.ExcelWriter(OUT / "class_workings.xlsx", engine="openpyxl") as writer:
        for cadet, records in rows.items():
            pd.DataFrame(records).to_excel(writer, sheet_name=cadet, index=False)
    planted.to_csv(OUT / "class_workings_planted.csv", index=False)
    print(f"wrote {OUT / 'class_workings.xlsx'} and {OUT / 'class_workings_planted.csv'}")


__all__ = ["Sight", "work", "make_sights", "eligible", "texts", "log_row", "PLANTS", "STYLES", "replace"]

if __name__ == "__main__":
    main()
