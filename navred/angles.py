"""Angles the trade's way: wrapping, the navigational form DDD° MM.m′ and RA in h m s.

Every function accepts scalars or numpy arrays. Parsing accepts the forms a
navigator writes by hand (``47° 12.4′ N``, ``47 12.4 N``, ``47°12.4'N``,
``N 47 12.4``, ``-5.5317``, ``47:12:24``) and refuses anything else with a
message that shows the accepted forms.
"""

from __future__ import annotations

import math
import re
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike

from .constants import (
    ARCMIN_PER_DEG,
    DEG_PER_HOUR,
    MINUTES_PER_HOUR,
    SECONDS_PER_HOUR,
    SECONDS_PER_MINUTE,
)
from .errors import AngleInputError, failed_elements

AngleKind = Literal["lat", "lon", "dec", "angle", "signed", "variation"]

_ACCEPTED = {
    "lat": "47° 12.4′ N, 47 12.4 N, N 47 12.4, 47°12.4'N, 44 10'.1 N, or a signed decimal 47.2067 / -47.2067 "
           "(north positive, ISO 6709)",
    "lon": "005° 31.9′ W, 5 31.9 W, W 5 31.9, or a signed decimal -5.5317 (east positive, ISO 6709; "
           "354.47 east of Greenwich is read too)",
    "dec": "23° 26.2′ S, 23 26.2 S, or a signed decimal -23.437 (north positive)",
    "variation": "4 W, 3.5 E, 3 30 E, or a signed decimal -4.0 (east positive)",
    "angle": "123° 45.6′, 123 45.6, 123.76",
    "signed": "-0° 12.5′, -0 12.5, -0.2083",
}
_HEMISPHERES = {"lat": "NS", "dec": "NS", "lon": "EW", "variation": "EW"}
_LIMITS = {"lat": 90.0, "dec": 90.0, "lon": 360.0, "angle": 360.0, "signed": 360.0, "variation": 180.0}
_MARK_THEN_POINT = re.compile(r"(\d)\s*['′’\"″”]\s*\.(\d)")
_HEMISPHERE_OF = {"N": "a latitude", "S": "a latitude", "E": "a longitude", "W": "a longitude"}


def wrap_360(angle_deg: ArrayLike) -> np.ndarray:
    """Angle in degrees wrapped into [0, 360).

    >>> float(wrap_360(-10.0)), float(wrap_360(720.5))
    (350.0, 0.5)
    """
    wrapped = np.mod(np.asarray(angle_deg, dtype=float), 360.0)
    # np.mod returns exactly 360.0 for tiny negative inputs
    return np.where(wrapped >= 360.0, 0.0, wrapped)


def wrap_180(angle_deg: ArrayLike) -> np.ndarray:
    """Angle in degrees wrapped into [-180, 180).

    >>> float(wrap_180(190.0)), float(wrap_180(-180.0))
    (-170.0, -180.0)
    """
    return np.mod(np.asarray(angle_deg, dtype=float) + 180.0, 360.0) - 180.0


def wrap_axial(angle_deg: ArrayLike) -> np.ndarray:
    """The direction of a line, either way along it, in degrees [0, 180): a line of position's bearing,
    an ellipse's axis (an azimuth and its reciprocal are one line).

    >>> float(wrap_axial(200.0)), float(wrap_axial(-30.0))
    (20.0, 150.0)
    """
    wrapped = np.mod(np.asarray(angle_deg, dtype=float), 180.0)
    return np.where(wrapped >= 180.0, 0.0, wrapped)


def _refused(value: object, kind: AngleKind, why: str = "") -> AngleInputError:
    reason = f": {why}" if why else ""
    name = _NAMES[kind]
    article = "an" if name[0] in "aeiou" else "a"
    return AngleInputError(f"cannot read {value!r} as {article} {name}{reason}; accepted: {_ACCEPTED[kind]}")


#: degrees and minutes joined by a hyphen, nothing else between ('35-30.0', '020-35.2 N', 'N 20-35'): the
#: degrees unsigned, the minutes under 60 with or without a decimal; read as '35 30.0'
_HYPHEN_MINUTES = re.compile(r"^([NSEWnsew]?\s*\d{1,3})-([0-5]?\d(?:\.\d+)?\s*[NSEWnsew]?)$")


def _parse_one(value: object, kind: AngleKind, decimal_comma: bool = False) -> float:
    if isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, bool):
        number = float(value)
        if not math.isfinite(number):
            raise AngleInputError(f"{kind} {value!r} is not a finite number; accepted: {_ACCEPTED[kind]}")
        return _checked(number, value, kind)
    if not isinstance(value, str):
        raise _refused(value, kind)
    text = value.strip().replace("−", "-").replace("–", "-")
    if _NOT_FINITE.fullmatch(text):
        raise AngleInputError(f"{_NAMES[kind]} {value!r} is not a number; accepted: {_ACCEPTED[kind]}")
    if "," in text:
        if not decimal_comma:
            raise _refused(value, kind, "a comma here is ambiguous (a decimal comma, or two values?); write "
                                        "the decimal with a point")
        if "." in text or text.count(",") > 1:
            raise _refused(value, kind, "both a decimal comma and a point")
        text = text.replace(",", ".")
    text = _MARK_THEN_POINT.sub(r"\1.\2", text)  # 44° 10'.1: the point written after the minute mark
    text = _HYPHEN_MINUTES.sub(r"\1 \2", text)  # 35-30.0: a hyphen between the degrees and the minutes
    hemi = None
    letters = _HEMISPHERES.get(kind, "")
    if letters and text:
        last, first = text[-1].upper(), text[0].upper()
        if last in "NSEW" and first in "NSEW":
            raise _refused(value, kind, "a hemisphere letter at both ends")
        for letter, rest in ((last, text[:-1]), (first, text[1:])):
            if letter in "NSEW":
                if letter not in letters:
                    raise _refused(value, kind, f"{letter} is a hemisphere of {_HEMISPHERE_OF[letter]}, and "
                                                f"{'an' if _NAMES[kind][0] in 'aeiou' else 'a'} {_NAMES[kind]} "
                                                f"takes {letters[0]} or {letters[1]}")
                hemi, text = letter, rest.strip()
                break
    parts, units = _parts_and_units(text)
    if parts is None or not 1 <= len(parts) <= 3:
        raise _refused(value, kind)
    if units is None:
        raise _refused(value, kind, "its degree, minute and second marks are out of order (degrees ° first, then "
                                    "minutes ′, then seconds ″, each once)")
    if any(p[0] in "+-" for p in parts[1:]):
        raise _refused(value, kind, "a sign inside the minutes or seconds; a sign belongs before the degrees")
    if 2 in units and 1 not in units:
        raise _refused(value, kind, _seconds_without_minutes(parts, units, hemi))
    negative = parts[0].startswith("-")
    numbers = [abs(float(p)) for p in parts]
    if any(n >= 60.0 for n, u in zip(numbers, units) if u > 0):
        raise _refused(value, kind, "minutes and seconds must be below 60")
    if len(numbers) > 1 and any("." in p for p in parts[:-1]):
        raise _refused(value, kind, "only the last part may have decimals")
    magnitude = sum(n / 60.0 ** u for n, u in zip(numbers, units))
    if hemi is not None:
        if negative or parts[0].startswith("+"):
            raise AngleInputError(
                f"cannot read {value!r}: give either a sign or a hemisphere letter, not both")
        number = -magnitude if hemi in "SW" else magnitude
    else:
        if letters and (len(parts) > 1 or units[0] > 0):
            # degrees and minutes with no hemisphere: north or south? east or west? Never guessed.
            a, b = letters
            shown = text.lstrip("+-").strip()
            if parts[0][0] in "+-" and a == "N":
                # a latitude's sign has one convention only (south negative: no one signs north negative), as a
                # signed decimal latitude is read
                return _checked(-magnitude if negative else magnitude, value, kind)
            if parts[0][0] in "+-":
                # a longitude's sign says which way only under a convention, and logs sign degrees and minutes both ways
                # (west negative as ISO 6709 signs a decimal, or west positive as hour angles run): never guessed
                iso, other = (b, a) if negative else (a, b)  # ISO 6709: north and east positive
                sign = "negative" if negative else "positive"
                words = {"N": "north", "S": "south", "E": "east", "W": "west"}
                raise _refused(value, kind, f"degrees and minutes with a sign but no hemisphere letter: {shown} "
                                            f"{iso} ({words[iso]} {sign}, as ISO 6709 signs a decimal) or {shown} "
                                            f"{other} ({words[other]} {sign})? write {shown} {a} or {shown} {b}")
            raise _refused(value, kind, f"degrees and minutes with no hemisphere letter could be {a} or {b}: "
                                        f"write {shown} {a} or {shown} {b} (a signed decimal follows ISO 6709, "
                                        "north and east positive)")
        number = -magnitude if negative else magnitude
    return _checked(number, value, kind)


def _seconds_without_minutes(parts: list[str], units: list[int], hemi: str | None) -> str:
    """Why a seconds mark with no minutes before it is refused, with both readings: a double quote typed for the
    minutes mark (42°12.9" meant 42° 12.9′) is as likely as seconds with the minutes left out (42° 00′ 12.9″),
    and the two lie 12.7 nm apart."""
    degrees = f"{parts[0]}° " if units[0] == 0 else ""
    seconds = parts[-1]
    letter = f" {hemi}" if hemi else ""
    as_minutes = f"{degrees}{seconds}′{letter}".strip()
    as_seconds = f"{degrees or '0° '}00′ {seconds}″{letter}"
    return (f"a seconds mark with no minutes: {as_minutes} (the mark meant for minutes) or "
            f"{as_seconds} (the minutes left out)? write the minutes mark ′ or ', or the minutes with the seconds")


_NOT_FINITE = re.compile(r"[+-]?\s*(?:nan|inf|infinity)", re.IGNORECASE)
_PART = re.compile(r"\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+))\s*([°º˚dD]|['′’mM]|[\"″”sS])?\s*:?")
_UNIT_OF_MARK = {**dict.fromkeys("°º˚dD", 0), **dict.fromkeys("'′’mM", 1), **dict.fromkeys('"″”sS', 2)}


def _parts_and_units(text: str) -> tuple[list[str] | None, list[int] | None]:
    """The numbers of an angle's text and the unit of each (0 degrees, 1 minutes, 2 seconds), from their
    marks where they have them and from their place where they do not: ``30′`` is 30 minutes, ``12 30′``
    12° 30′, ``44 10 30`` 44° 10′ 30″. (None, None) when the text is not numbers and marks; units None when
    the marks are out of order or repeated (``30′ 12°``)."""
    parts, marks, at = [], [], 0
    while at < len(text):
        found = _PART.match(text, at)
        if not found or found.end() == at:
            return None, None
        parts.append(found.group(1))
        marks.append(found.group(2))
        at = found.end()
    if not parts:
        return None, None
    units, previous = [], -1
    for mark in marks:
        unit = previous + 1 if mark is None else _UNIT_OF_MARK[mark]
        if unit <= previous or unit > 2:
            return parts, None
        units.append(unit)
        previous = unit
    return parts, units


_NAMES = {"lat": "latitude", "lon": "longitude", "dec": "declination",
          "angle": "angle", "signed": "signed angle", "variation": "variation"}


def _checked_array(numbers: np.ndarray, kind: AngleKind) -> np.ndarray:
    """The vectorised form of :func:`_checked` for arrays of numbers."""
    limit = _LIMITS[kind]
    low = -180.0 if kind in ("lon", "variation") else -limit
    bad = ~np.isfinite(numbers) | (numbers < low) | (numbers > limit)
    if bad.any():
        first = numbers[bad].ravel()[0]
        try:
            _checked(float(first), first, kind) if np.isfinite(first) else _parse_one(float(first), kind)
        except AngleInputError as exc:
            raise AngleInputError(f"angles refused: {failed_elements(bad)}; first: {exc}") from None
    if kind == "lon":
        numbers = np.where(numbers >= 180.0, wrap_180(numbers), numbers)
    return numbers


def _checked(number: float, original: object, kind: AngleKind) -> float:
    limit = _LIMITS[kind]
    low = -180.0 if kind in ("lon", "variation") else -limit
    if not low <= number <= limit:
        accepted = {"lat": "-90 to 90 (90° S to 90° N)", "dec": "-90 to 90",
                    "lon": "-180 to 360 (west negative, or east of Greenwich up to 360)",
                    "angle": "-360 to 360", "signed": "-360 to 360", "variation": "-180 to 180"}[kind]
        raise AngleInputError(f"{_NAMES[kind]} {original!r} is outside {accepted}")
    if kind == "lon":
        number = float(wrap_180(number)) if number >= 180.0 else number
    return number


def parse_angle(value: object, kind: AngleKind = "angle", decimal_comma: bool = False) -> float | np.ndarray:
    """Angle in decimal degrees from navigational text or a number.

    ``kind`` is ``lat``, ``lon``, ``dec``, ``variation`` (east positive), ``angle``
    (0-360) or ``signed``; latitudes and declinations are positive north, longitudes
    positive east and returned in [-180, 180). Degrees and minutes of a latitude,
    longitude, declination or variation must carry their hemisphere letter (a letter of
    the wrong kind, S on a longitude, is refused); a bare number is a signed decimal as
    ISO 6709 has it. ``decimal_comma`` reads ``14,1`` as 14.1 (a file whose separator
    leaves no doubt); otherwise a comma is refused. Arrays (or lists) of values are
    parsed element by element and the error names every element that failed.

    >>> round(parse_angle("47° 12.4′ N", "lat"), 6)
    47.206667
    >>> round(parse_angle("005 31.9 W", "lon"), 4)
    -5.5317
    >>> parse_angle(["N 10 30", -5.25], "lat").tolist()
    [10.5, -5.25]
    """
    if np.ndim(value) == 0 and not isinstance(value, np.ndarray):
        return _parse_one(value, kind, decimal_comma)
    numeric = np.asarray(value) if not isinstance(value, np.ndarray) else value
    if numeric.dtype.kind in "fiu":
        return _checked_array(numeric.astype(float), kind)
    items = np.asarray(value, dtype=object)
    out = np.empty(items.shape, dtype=float)
    bad = np.zeros(items.shape, dtype=bool)
    first_message = ""
    for index, item in np.ndenumerate(items):
        try:
            out[index] = _parse_one(item, kind, decimal_comma)
        except AngleInputError as exc:
            bad[index] = True
            first_message = first_message or str(exc)
    if bad.any():
        if items.size == 1:  # one angle: its own reason, no count of elements
            raise AngleInputError(first_message)
        raise AngleInputError(f"angles that could not be read: {failed_elements(bad)}; first: {first_message}")
    return out


#: The forms most logs are written in, read in bulk: a plain decimal, or whole degrees and decimal
#: minutes with an optional degree mark, minute mark and hemisphere letter at the end. Anything
#: else (seconds, a leading letter, a comma, a sign with a letter...) goes to the careful parser.
_FAST_DECIMAL = re.compile(r"\s*([+-]?\d+(?:\.\d*)?)\s*")
_FAST_DM = re.compile(r"\s*([+-]?)(\d+)(?:\s*[°º˚]\s*|\s+)(\d+(?:\.\d+)?)\s*['′’]?\s*([NSEWnsew]?)\s*")


def parse_angles_fast(texts: list[str], kind: AngleKind = "angle") -> tuple[np.ndarray, np.ndarray]:
    """Angles (degrees) from texts in the common forms, and which texts were read that way.

    A text is read here only when :func:`parse_angle` reads it to the same value; every other text
    (a form not covered, or one the careful parser refuses) is left to it: its element is NaN and
    not marked. A decimal comma is never read here. Tested against :func:`parse_angle` on fuzzed text.
    """
    letters = _HEMISPHERES.get(kind, "")
    negative_letters = {"S", "W", "s", "w"}
    limit = _LIMITS[kind]
    low = -180.0 if kind in ("lon", "variation") else -limit
    value, done = _plain_degrees_minutes(texts, letters, low, limit)
    decimal, dm = _FAST_DECIMAL.fullmatch, _FAST_DM.fullmatch
    for k in np.flatnonzero(~done).tolist():
        text = texts[k]
        if type(text) is not str:
            continue
        found = dm(text)  # degrees and minutes first: the form most logs use
        if found:
            sign, degrees, minutes, hemisphere = found.groups()
            if letters:
                # degrees and minutes need their letter, of the right kind, and no sign beside it
                if not hemisphere or hemisphere.upper() not in letters or sign:
                    continue
            elif hemisphere:
                continue
            m = float(minutes)
            if m >= 60.0:
                continue
            number = float(degrees) + m / 60.0
            if sign == "-" or hemisphere in negative_letters:
                number = -number
        else:
            found = decimal(text)
            if not found:
                continue
            number = float(found.group(1))
        if low <= number <= limit:
            value[k] = number
            done[k] = True
    if kind == "lon":
        value = np.where(done & (value >= 180.0), wrap_180(value), value)
    return value, done


def _plain_degrees_minutes(texts: list, letters: str, low: float, limit: float) -> tuple[np.ndarray, np.ndarray]:
    """The texts written plainly as ``DDD MM.m`` (with `` H``, one of ``letters``, where the kind has letters):
    ASCII digits, one space between the parts, nothing else; read at once by numpy's string functions, each
    to the very number :func:`parse_angles_fast`'s own reading gives (degrees + minutes / 60, tested). The
    rest are left (NaN, not marked)."""
    n = len(texts)
    values, done = np.full(n, np.nan), np.zeros(n, dtype=bool)
    if not hasattr(getattr(np, "strings", None), "partition"):  # numpy before 2.2: every text read one by one
        return values, done
    strings, text = np.strings, np.dtypes.StringDType()
    try:
        joined = "".join(texts)
        every = joined.isascii() and "\x00" not in joined  # every one a text of ASCII (the usual column), at once
    except TypeError:
        every = False  # (not every one a text)
    if every and n:
        return _plain_degrees_minutes_bytes(np.array(texts, dtype="S"), letters, low, limit)
    else:
        index = np.array([k for k, t in enumerate(texts) if type(t) is str and t.isascii()], dtype=np.intp)
        if not index.size:
            return values, done
        chosen = np.array([texts[k] for k in index.tolist()], dtype=text)
    blank, dot = np.array(" ", dtype=text), np.array(".", dtype=text)
    degrees, space, rest = strings.partition(chosen, blank)
    minutes, space2, hemisphere = strings.partition(rest, blank)
    whole, point, fraction = strings.partition(minutes, dot)
    good = ((space == " ") & strings.isdecimal(degrees) & strings.isdecimal(whole)
            & ((point == "") | strings.isdecimal(fraction)))
    if letters:
        allowed = [c for c in letters + letters.lower()]
        good &= (space2 == " ") & np.isin(hemisphere, np.array(allowed, dtype=text))
    else:
        good &= space2 == ""
    # the numbers from their digits as whole numbers (numpy reads those several times quicker than decimals):
    # the minutes m digits over 10**k, one correctly rounded division of exact numbers, the very float of the
    # decimal text (up to 15 digits; longer ones are left to the reading one by one)
    places = np.where(point == "", 0, strings.str_len(fraction))
    good &= (strings.str_len(degrees) <= 15) & (strings.str_len(whole) + places <= 15)
    if not good.any():
        return values, done
    index, degrees, hemisphere = index[good], degrees[good], hemisphere[good]
    whole, fraction, places = whole[good], fraction[good], places[good]
    digits = whole.astype(np.int64) * 10 ** places + np.where(places > 0, fraction, "0").astype(np.int64)
    m = digits / 10.0 ** places
    number = degrees.astype(np.int64).astype(np.float64) + m / 60.0
    if letters:
        south_west = np.isin(hemisphere, np.array(["S", "W", "s", "w"], dtype=text))
        number = np.where(south_west, -number, number)
    kept = (m < 60.0) & (low <= number) & (number <= limit)
    values[index[kept]] = number[kept]
    done[index[kept]] = True
    return values, done


def _plain_degrees_minutes_bytes(texts: np.ndarray, letters: str, low: float, limit: float):
    """:func:`_plain_degrees_minutes` of texts of ASCII without NUL, as numpy's bytes (``S``): each text a row of
    a matrix of bytes, its form told by where its spaces and its point are, its digits read left to right
    (the same texts taken, to the same numbers: the minutes' digits as a whole number over a power of ten)."""
    n = texts.size
    values, done = np.full(n, np.nan), np.zeros(n, dtype=bool)
    width = texts.dtype.itemsize
    codes = texts.view(np.uint8).reshape(n, width)
    length = np.strings.str_len(texts) if hasattr(np, "strings") else np.char.str_len(texts)
    column = np.arange(width)
    inside = column < length[:, None]
    space = (codes == 32) & inside
    first = np.argmax(space, axis=1)  # the first space (0 when there is none: told by ``spaced``)
    spaced = space.any(axis=1)
    later = space & (column > first[:, None])
    second = np.where(later.any(axis=1), np.argmax(later, axis=1), length)  # the second space, or the end
    twice = second < length
    digit = (codes >= 48) & (codes <= 57)
    point = codes == 46
    in_degrees = column < first[:, None]
    in_minutes = (column > first[:, None]) & (column < second[:, None])
    points = (point & in_minutes).sum(axis=1)
    at_point = np.where(points > 0, np.argmax(point & in_minutes, axis=1), second)
    good = (spaced & (first >= 1) & ~(in_degrees & ~digit).any(axis=1)
            & ~(in_minutes & ~digit & ~point).any(axis=1) & (points <= 1)
            & (at_point > first + 1) & ((points == 0) | (at_point < second - 1)))
    if letters:
        allowed = np.frombuffer((letters + letters.lower()).encode("ascii"), dtype=np.uint8)
        hemisphere = codes[np.arange(n), np.minimum(second + 1, width - 1)]
        good &= twice & (length == second + 2) & np.isin(hemisphere, allowed)
    else:
        good &= ~twice
    places = np.where(points > 0, second - at_point - 1, 0)
    good &= (first <= 15) & (second - first - 1 - points <= 15)
    if not good.any():
        return values, done
    rows = np.flatnonzero(good)
    codes, digit, column = codes[rows], digit[rows], column[None, :]
    first, second, at_point, places = first[rows], second[rows], at_point[rows], places[rows]
    ones = codes.astype(np.int64) - 48
    in_degrees = column < first[:, None]
    in_minutes = (column > first[:, None]) & (column < second[:, None]) & digit
    # the digits read left to right, ten times what is read so far plus the next (whole numbers: exact)
    degrees = np.zeros(rows.size, dtype=np.int64)
    minutes = np.zeros(rows.size, dtype=np.int64)
    for j in range(width):
        degrees = np.where(in_degrees[:, j], degrees * 10 + ones[:, j], degrees)
        minutes = np.where(in_minutes[:, j], minutes * 10 + ones[:, j], minutes)
    m = minutes / 10.0 ** places
    number = degrees.astype(np.float64) + m / 60.0
    if letters:
        hemisphere = codes[np.arange(rows.size), second + 1]
        number = np.where(np.isin(hemisphere, np.frombuffer(b"SWsw", dtype=np.uint8)), -number, number)
    kept = (m < 60.0) & (low <= number) & (number <= limit)
    values[rows[kept]] = number[kept]
    done[rows[kept]] = True
    return values, done


def _split_minutes(angle_deg, decimals: int):
    """Whole degrees and rounded minutes of |angle|, with 59.95′ carried into the degree."""
    magnitude = np.abs(np.asarray(angle_deg, dtype=float))
    total_minutes = np.round(magnitude * ARCMIN_PER_DEG, decimals)
    degrees = np.floor(total_minutes / ARCMIN_PER_DEG + 1e-12)
    minutes = np.round(total_minutes - degrees * ARCMIN_PER_DEG, decimals)
    return np.nan_to_num(degrees).astype(int), np.abs(minutes)


def _format_one(value: float, kind: str, decimals: int) -> str:
    """:func:`format_angle` of one number, in plain Python (the same rounding and carry)."""
    if not math.isfinite(value):
        return ""
    if kind == "angle":
        value = value % 360.0
        value = 0.0 if value >= 360.0 else value
    elif kind == "lon":
        value = (value + 180.0) % 360.0 - 180.0
    scale = 10.0 ** decimals  # numpy's rounding (scale, round half to even, unscale), as the array path
    total_minutes = round(abs(value) * ARCMIN_PER_DEG * scale) / scale
    degrees = math.floor(total_minutes / ARCMIN_PER_DEG + 1e-12)
    minutes = abs(round((total_minutes - degrees * ARCMIN_PER_DEG) * scale) / scale)
    width = 3 + decimals if decimals else 2
    mins = f"{minutes:0{width}.{decimals}f}′"
    zero = degrees == 0 and minutes == 0
    if kind in ("lat", "dec"):
        return f"{degrees:02d}° {mins} {'S' if value < 0 else 'N'}"
    if kind == "lon":
        return f"{degrees:03d}° {mins} {'W' if value < 0 and not zero else 'E'}"
    if kind == "angle":
        return f"{degrees % 360:03d}° {mins}"
    return f"{'-' if value < 0 and not zero else ''}{degrees}° {mins}"


def format_angle(angle_deg: ArrayLike, kind: AngleKind = "angle", decimals: int = 1) -> str | np.ndarray:
    """Navigational text for an angle in degrees: ``47° 12.4′ N``, ``005° 31.9′ W``, ``123° 45.6′``.

    ``lat`` and ``dec`` get N/S, ``lon`` gets E/W (three-digit degrees), ``angle``
    is wrapped into 0-360 with three-digit degrees, ``signed`` keeps its sign.
    Returns a str for a scalar and an array of str for an array; NaN gives ``''``.

    >>> format_angle(-5.5317, "lon")
    '005° 31.9′ W'
    >>> format_angle(47.99999, "lat")
    '48° 00.0′ N'
    >>> format_angle(-0.2, "signed")
    '-0° 12.0′'
    """
    if isinstance(angle_deg, (float, int, np.floating, np.integer)):
        return _format_one(float(angle_deg), kind, decimals)
    values = np.asarray(angle_deg, dtype=float)
    if kind == "angle":
        values = np.asarray(wrap_360(values), dtype=float)
    elif kind == "lon":
        values = wrap_180(values)
    degrees, minutes = _split_minutes(values, decimals)
    width = 3 + decimals if decimals else 2
    finite = np.isfinite(values)
    negative = values < 0
    zero = (degrees == 0) & (minutes == 0)
    # one f-string per element from plain Python values (the whole array at once, no numpy scalars)
    d_list, m_list = degrees.ravel().tolist(), minutes.ravel().tolist()
    ok_list, neg_list, zero_list = finite.ravel().tolist(), negative.ravel().tolist(), zero.ravel().tolist()
    rows = zip(d_list, m_list, ok_list, neg_list, zero_list)
    if kind in ("lat", "dec"):
        texts = [f"{d:02d}° {m:0{width}.{decimals}f}′ {'S' if n else 'N'}" if ok else ""
                 for d, m, ok, n, _ in rows]
    elif kind == "lon":
        texts = [f"{d:03d}° {m:0{width}.{decimals}f}′ {'W' if n and not z else 'E'}" if ok else ""
                 for d, m, ok, n, z in rows]
    elif kind == "angle":
        texts = [f"{d % 360:03d}° {m:0{width}.{decimals}f}′" if ok else "" for d, m, ok, _, _ in rows]
    else:
        texts = [f"{'-' if n and not z else ''}{d}° {m:0{width}.{decimals}f}′" if ok else ""
                 for d, m, ok, n, z in rows]
    out = np.empty(values.size, dtype=object)
    out[:] = texts
    out = out.reshape(values.shape)
    return out.item() if out.ndim == 0 else out


def ra_hours_to_deg(ra_hours: ArrayLike) -> np.ndarray:
    """Right ascension in degrees from hours (1 h = 15°).

    >>> float(ra_hours_to_deg(24.0))
    360.0
    """
    return np.asarray(ra_hours, dtype=float) * DEG_PER_HOUR


def deg_to_ra_hours(angle_deg: ArrayLike) -> np.ndarray:
    """Right ascension in hours from degrees (15° = 1 h)."""
    return np.asarray(angle_deg, dtype=float) / DEG_PER_HOUR


def sha_deg_from_ra_hours(ra_hours: ArrayLike) -> np.ndarray:
    """Sidereal hour angle in degrees, 360° − RA, from RA in hours.

    >>> float(sha_deg_from_ra_hours(6.0))
    270.0
    """
    return np.asarray(wrap_360(360.0 - ra_hours_to_deg(ra_hours)), dtype=float)


def ra_hours_from_sha_deg(sha_deg: ArrayLike) -> np.ndarray:
    """Right ascension in hours [0, 24) from sidereal hour angle in degrees.

    >>> float(ra_hours_from_sha_deg(270.0))
    6.0
    """
    return np.asarray(wrap_360(360.0 - np.asarray(sha_deg, dtype=float)), dtype=float) / DEG_PER_HOUR


def hms_from_hours(hours: ArrayLike, decimals: int = 2) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Split hours into (h, m, s) arrays, rounding seconds to ``decimals`` and carrying.

    >>> [float(x) for x in hms_from_hours(5.999999)]
    [6.0, 0.0, 0.0]
    """
    total_s = np.round(np.asarray(hours, dtype=float) * SECONDS_PER_HOUR, decimals)
    h = np.floor(total_s / SECONDS_PER_HOUR + 1e-12)
    m = np.floor((total_s - h * SECONDS_PER_HOUR) / SECONDS_PER_MINUTE + 1e-12)
    s = np.round(total_s - h * SECONDS_PER_HOUR - m * SECONDS_PER_MINUTE, decimals)
    return h, m, s


def format_hms(hours: ArrayLike, decimals: int = 2) -> str | np.ndarray:
    """Text ``05h 34m 31.94s`` for hours (RA or time).

    >>> format_hms(5.575539)
    '05h 34m 31.94s'
    """
    h, m, s = hms_from_hours(hours, decimals)
    out = np.empty(np.shape(h), dtype=object)
    for index, value in np.ndenumerate(np.asarray(h)):
        width = 3 + decimals if decimals else 2
        out[index] = f"{int(value):02d}h {int(m[index]):02d}m {s[index]:0{width}.{decimals}f}s"
    return out.item() if out.ndim == 0 else out


_HMS = re.compile(
    r"^\s*([+-]?\d+(?:\.\d+)?)\s*(?:h|:|\s)\s*(\d+(?:\.\d+)?)?\s*(?:m|:|\s)?\s*(\d+(?:\.\d+)?)?\s*s?\s*$",
    re.IGNORECASE)


def hours_from_hms(value: object) -> float | np.ndarray:
    """Hours from ``5h 34m 31.9s``, ``5 34 31.9``, ``05:34:31.9`` or a number of hours.

    >>> round(hours_from_hms("05h 34m 31.94s"), 6)
    5.575539
    """
    if np.ndim(value) and not isinstance(value, str):
        return np.array([hours_from_hms(v) for v in np.asarray(value, dtype=object).ravel()]).reshape(np.shape(value))
    if isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, bool):
        return float(value)
    match = _HMS.match(str(value))
    if not match:
        raise AngleInputError(f"cannot read {value!r} as hours-minutes-seconds; accepted: 05h 34m 31.9s, 5 34 31.9, 05:34:31.9")
    h, m, s = (float(g) if g else 0.0 for g in match.groups())
    if m >= 60 or s >= 60:
        raise AngleInputError(f"cannot read {value!r}: minutes and seconds must be below 60")
    sign = -1.0 if match.group(1).startswith("-") else 1.0
    return sign * (abs(h) + m / MINUTES_PER_HOUR + s / SECONDS_PER_HOUR)

#: the spaces inside a position or an angle that a printed line must not break at: before a hemisphere letter
#: ('30.0′ N', '44 N') and after a degree sign ('44° 30.0′')
_UNBROKEN_SPACE = re.compile(r"(?<=[\d′'])[ ]+(?=[NSEW]\b)|(?<=°)[ ]+(?=\d)")


def keep_angles_whole(text: str) -> str:
    """A text to be printed whose angles keep together on a line: each hemisphere letter with its number, the
    minutes with their degrees (the spaces between them made no-break spaces, U+00A0, which a line is never
    broken at: the printed pages, the pictures' wrapped notes).

    >>> keep_angles_whole("DR 44° 30.0′ N 012° 00.0′ W") == "DR 44°\u00a030.0′\u00a0N 012°\u00a000.0′\u00a0W"
    True
    """
    return _UNBROKEN_SPACE.sub("\u00a0", text)

