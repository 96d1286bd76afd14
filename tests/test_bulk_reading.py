"""A long log's columns read at once (issue 26): angles written plainly read as bytes, each to the very number
the careful one-by-one parser (navred.angles.parse_angle, the reference) gives, and nothing it refuses."""

from __future__ import annotations

import numpy as np


def test_plain_angles_of_ascii_texts_read_as_bytes_are_read_as_one_by_one(monkeypatch):
    # a column of ASCII texts (the usual file) is read as a matrix of bytes; 12,000 seeded texts of the plain form
    # ("33 06.7 S", "067 58.9"), half mutated by an ASCII character put in, taken out or changed (a second
    # space, a point, a sign, a letter of the wrong kind, a tab, 60′ or more, a digit too many), each checked
    # against parse_angle; and the same texts among one text beyond ASCII (read the other way) give the same
    from navred import angles
    from navred.angles import parse_angle, parse_angles_fast
    from navred.errors import AngleInputError

    as_bytes = []
    original = angles._plain_degrees_minutes_bytes
    monkeypatch.setattr(angles, "_plain_degrees_minutes_bytes", lambda *a: as_bytes.append(a[0].size) or original(*a))

    rng = np.random.default_rng(2611)
    count = 12_000
    degrees = [f"{d:0{w}d}" for d, w in zip(rng.integers(0, 400, count).tolist(), rng.integers(1, 4, count).tolist())]
    minutes = [f"{m:0{4 + p}.{p}f}" if p else f"{int(m):02d}" for m, p in
               zip(rng.uniform(0, 61, count).tolist(), rng.integers(0, 4, count).tolist())]
    letters = np.array(list("NSEWnsewX") + [""], dtype=object)[rng.integers(0, 10, count)].tolist()
    texts = [f"{d} {m} {h}" if h else f"{d} {m}" for d, m, h in zip(degrees, minutes, letters)]
    pieces = list(" .-+,'0123456789NSEWnsew\t") + ["  ", "1234567890123456"]
    for k in np.flatnonzero(rng.random(count) < 0.5).tolist():
        text, at = texts[k], int(rng.integers(0, len(texts[k]) + 1))
        piece = pieces[int(rng.integers(0, len(pieces)))]
        texts[k] = [text[:at] + piece + text[at:], text[:at] + text[at + 1:], text[:at] + piece + text[at + 1:]][
            int(rng.integers(0, 3))]
    texts += ["", " ", "1 ", " 1", "1 .5", "1 5.", "1 5.5.5", "0 0", "90 00.0 N", "90 00.1 N", "180 00.0 W"]
    taken = 0
    for kind in ("lat", "lon", "angle", "signed", "dec"):
        values, done = parse_angles_fast(texts, kind)
        mixed_values, mixed_done = parse_angles_fast(texts + ["33° 06.6′ S"], kind)  # the other way
        assert np.array_equal(done, mixed_done[:-1])
        assert np.array_equal(values[done], mixed_values[:-1][done])
        taken += int(done.sum())
        for text, value, was_read in zip(texts, values.tolist(), done.tolist()):
            try:
                careful = parse_angle(text, kind)
            except AngleInputError:
                assert not was_read, f"{kind} {text!r} read at once as {value} but refused one by one"
                continue
            if was_read:
                assert careful == value, (kind, text, careful, value)
    assert taken > 4_000 and as_bytes == [len(texts)] * 5  # the plain texts were read as bytes
