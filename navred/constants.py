"""Physical and conventional constants, each with its source.

Where a value is recalled rather than copied from the source in hand, the
comment says ``from memory``; docs/references.md lists every source.
"""

from __future__ import annotations

# --- Units -----------------------------------------------------------------
ARCMIN_PER_DEG = 60.0
ARCSEC_PER_DEG = 3600.0
DEG_PER_HOUR = 15.0  # 24 h of right ascension = 360 degrees (definition)
SECONDS_PER_MINUTE = 60.0
SECONDS_PER_HOUR = 3600.0
SECONDS_PER_DAY = 86400.0
MINUTES_PER_HOUR = 60.0
MINUTES_PER_DAY = 1440.0
#: Instants are numpy datetime64[ns] (UTC); these turn their int64 nanoseconds into whole units.
NS_PER_MILLISECOND = 1_000_000
NS_PER_SECOND = 1_000_000_000
NS_PER_MINUTE = 60 * NS_PER_SECOND
NS_PER_HOUR = 60 * NS_PER_MINUTE
NS_PER_DAY = 24 * NS_PER_HOUR
DAYS_PER_JULIAN_YEAR = 365.25  # IAU definition of the Julian year
NM_PER_ARCMIN = 1.0  # one nautical mile is one arcminute of a great circle (common practice)
METRES_PER_NM = 1852.0  # international nautical mile (1929 convention)

# --- Epochs ----------------------------------------------------------------
JD_J2000 = 2451545.0  # J2000.0 = 2000 January 1, 12h TT (IAU 1976/1994)
JD_UNIX_EPOCH = 2440587.5  # 1970 January 1, 0h
JD_HIPPARCOS_EPOCH = 2448349.0625  # J1991.25 (TT), the Hipparcos catalogue epoch (ESA SP-1200)

# --- The Earth -------------------------------------------------------------
EARTH_EQUATORIAL_RADIUS_KM = 6378.137  # WGS 84 / GRS 80 semi-major axis
EARTH_FLATTENING = 1.0 / 298.257223563  # WGS 84

# --- The bodies ------------------------------------------------------------
AU_KM = 149597870.700  # IAU 2012 Resolution B2
SPEED_OF_LIGHT_KM_S = 299792.458  # SI definition
SPEED_OF_LIGHT_AU_DAY = SPEED_OF_LIGHT_KM_S * SECONDS_PER_DAY / AU_KM
SUN_RADIUS_KM = 695700.0  # IAU 2015 Resolution B3, nominal solar radius
MOON_RADIUS_KM = 1737.4  # IAU Working Group on Cartographic Coordinates, mean lunar radius
VENUS_RADIUS_KM = 6051.8  # the same Working Group (2015 report), mean radius (from memory)
MARS_RADIUS_KM = 3389.5  # the same Working Group (2015 report), mean radius (from memory)

# --- Time ------------------------------------------------------------------
TT_MINUS_TAI_S = 32.184  # IAU 1991 Resolution A4
GHA_ERROR_ARCMIN_PER_S_UT1 = 0.25  # 360 deg per sidereal day ~ 15 arcsec of GHA per second of UT1

# --- Navigation conventions --------------------------------------------------
#: A star or planet on the sea horizon is taken in twilight: from when the Sun is about 3° below the horizon
#: (the sky dark enough for the brighter stars; common practice) to when it is 12° below (the end of nautical
#: twilight, when the horizon can no longer be made out: the almanac's and the US Naval Observatory's
#: definition of nautical twilight, from memory).
SUN_BRIGHT_SKY_DEG = -3.0
SUN_DARK_HORIZON_DEG = -12.0
#: An intercept (a position line's distance from the DR) beyond this usually means a blunder or a poor DR:
#: it should be questioned (common practice).
LARGE_INTERCEPT_NM = 30.0
#: A drift under this (knots) is nil, 0.0 to the tenth it is given to: it has no set (common practice: a "nil"
#: current; the direction of a gap of a few cables over many hours is noise).
NIL_DRIFT_KN = 0.05
