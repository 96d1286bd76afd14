"""CSV text made as bytes in numpy (navred.io.output.csv_text / csv_bytes, issue 26): the very text the
row-by-row %-format gave, which is the text pandas' to_csv writes of the neutralised table (the
general-purpose reference), and Python's own %-format of each number (the C library's correctly rounded
conversion: CPython's float formatting, PEP 3101 / printf "%.Nf")."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from navred.io.output import _csv_text_by_rows, csv_bytes, csv_safe, csv_text


def _numbers(rng: np.random.Generator, n: int, decimals: int) -> np.ndarray:
    """Seeded floats that try the digits: every magnitude, both signs, zeros of both signs, exact halves of
    the last place and their neighbours a unit of the last bit either way, small negatives that round to
    zero, the largest the digits take and beyond, gaps and infinities."""
    scale = 10.0 ** decimals
    magnitudes = 10.0 ** rng.uniform(-12, 17, n)
    signs = rng.choice([-1.0, 1.0], n)
    # k + 1/2 of the last place, where it is a binary number (so that the tie is exact): (2k + 1) / 2 / 10**d
    # is binary only when 10**d divides out: use m / 2**j, whose scaled value ends in .5 for the right m
    ties = (2 * rng.integers(0, 10**6, n) + 1) / 2.0 / scale
    dyadic = rng.integers(-(2**20), 2**20, n) / 2.0 ** rng.integers(1, 12, n)  # exact binary fractions: true ties
    near = np.concatenate([np.nextafter(ties, np.inf), np.nextafter(ties, -np.inf)])
    special = np.array([0.0, -0.0, -1e-9, 1e-9, -4e-7, 4.9999999e-7, -0.5 / scale, 0.5 / scale, 1.5 / scale,
                        2.5 / scale, 359.9999995, -359.9999995, 1e15 / scale, 9.99e14 / scale, 1e16, 2.0**53,
                        -(2.0**53), 1e20, -1e300, 1e308, np.nan, np.inf, -np.inf, 5e-324, -5e-324,
                        0.0078125, 0.5, 1.5, 2.5, -2.5, 123456789.0000005])
    values = np.concatenate([magnitudes * signs, ties, -ties, dyadic, near, special,
                             rng.normal(0, 100, n), rng.uniform(-360, 360, n).round(6)])
    return rng.permutation(values)


@pytest.mark.parametrize("decimals", [0, 1, 2, 3, 6, 9])
def test_numbers_are_pythons_percent_format_and_pandas_text(decimals):
    rng = np.random.default_rng(2600 + decimals)
    values = _numbers(rng, 1500, decimals)
    form = f"%.{decimals}f"
    with np.errstate(over="ignore"):
        single = values.astype(np.float32)  # (beyond float32's range: infinite)
    frame = pd.DataFrame({"x": values, "y": values[::-1].copy(), "f32": single})
    text = csv_text(frame, float_format=form)
    # Python's %-format of each number (the reference), a gap empty
    expected = ["x,y,f32"] + [",".join("" if v != v else form % v for v in row)
                              for row in zip(values.tolist(), values[::-1].tolist(),
                                             single.astype(float).tolist())]
    assert text.split("\n")[:-1] == expected
    assert text == csv_safe(frame).to_csv(index=False, float_format=form)  # pandas, the general-purpose reference
    assert text == _csv_text_by_rows(frame, float_format=form)


def test_negative_zero_and_small_negatives_keep_their_sign_as_the_format_writes_them():
    # "%.6f" % -1e-9 is "-0.000000" and "%.6f" % -0.0 is "-0.000000" (Python's format): kept as they were
    frame = pd.DataFrame({"x": [-0.0, -1e-9, 0.0, 1e-9, -4e-7, -5e-7, -6e-7, 1.0]})
    assert csv_text(frame).split("\n")[1:-1] == ["-0.000000", "-0.000000", "0.000000", "0.000000", "-0.000000",
                                                 "-0.000000", "-0.000001", "1.000000"]


def test_integers_booleans_and_their_extremes_are_written_as_python_writes_them():
    rng = np.random.default_rng(261)
    big = np.iinfo(np.int64)
    frame = pd.DataFrame({
        "i64": np.r_[rng.integers(big.min, big.max, 500, dtype=np.int64), [big.min, big.max, 0, -1, 1, -10, 10]],
        "i8": rng.integers(-128, 127, 507).astype(np.int8),
        "u64": np.r_[rng.integers(0, 2**63, 500, dtype=np.uint64),
                     np.array([2**64 - 1, 2**63, 0, 1, 9, 10, 99], dtype=np.uint64)],
        "u32": rng.integers(0, 2**32, 507).astype(np.uint32),
        "flag": rng.random(507) < 0.5,
    })
    text = csv_text(frame)
    expected = ["i64,i8,u64,u32,flag"] + [",".join(str(v) for v in row) for row in
                                         zip(*(frame[c].tolist() for c in frame.columns))]
    assert text.split("\n")[:-1] == expected
    assert text == csv_safe(frame).to_csv(index=False, float_format="%.6f")


@pytest.mark.parametrize("distinct", [5, 3000])  # few texts (each made once) and many (checked at once)
def test_text_columns_are_what_pandas_writes_of_the_neutralised_table(distinct):
    # quotes, separators, line breaks, formula-like text (OWASP: a ' before it), text beyond ASCII, a NUL inside
    # and at the end, blank and missing cells, numbers among text
    rng = np.random.default_rng(262 + distinct)
    pool = ["plain", "a, b", 'say "hi"', "two\nlines", "cr\rhere", "=1+1", "+3", "-5", "@x", "\tlead", "",
            "Zoë Ångström", "33° 06.6′ S", "nul\x00inside", "ends\x00", " spaced ", None, float("nan"), 1.5]
    plain = [f"g{k:05d}-{'x' * (k % 7)}" for k in range(distinct)]
    texts = rng.choice(np.array(plain, dtype=object), 4000)
    mixed = texts.copy()
    spots = rng.choice(4000, 60, replace=False)
    mixed[spots] = np.array(pool * 4, dtype=object)[:60]
    frame = pd.DataFrame({"clean": pd.Series(texts, dtype=object), "mixed": pd.Series(mixed, dtype=object),
                          "str": pd.Series([t for t in texts], dtype="str"),
                          "ascii_only": pd.Series(plain[:1] * 4000, dtype=object)})
    text = csv_text(frame)
    assert text == _csv_text_by_rows(frame)
    assert csv_bytes(frame) == text.encode("utf-8")
    # pandas (the reference) leaves a lone carriage return unquoted where navred quotes it (RFC 4180, 2.6: a
    # field holding CR is quoted): compared without that cell
    no_cr = frame.map(lambda v: v.replace("\r", "") if isinstance(v, str) else v)
    assert csv_text(no_cr) == csv_safe(no_cr).to_csv(index=False, float_format="%.6f")


def test_instants_whole_and_fractional_with_gaps_are_what_pandas_writes():
    rng = np.random.default_rng(263)
    seconds = rng.integers(0, 200 * 365 * 86400, 3000)
    whole = pd.Series(pd.to_datetime(seconds, unit="s", origin="1900-01-01"))
    whole[rng.random(3000) < 0.05] = pd.NaT
    frame = pd.DataFrame({"naive": whole, "zoned": whole.dt.tz_localize("UTC"),
                          "other_zone": whole.dt.tz_localize("UTC").dt.tz_convert("Asia/Kolkata")})
    fractions = pd.to_timedelta(rng.integers(0, 10**9, 3000), unit="ns")
    for table in (frame, frame.assign(naive=frame.naive + fractions, zoned=frame.zoned + fractions)):
        text = csv_text(table)
        assert text == _csv_text_by_rows(table)
        # pandas (the reference) writes the instants in UTC as navred does; another zone navred writes in UTC
        utc = table[["naive", "zoned"]]
        assert csv_text(utc) == csv_safe(utc).to_csv(index=False)
    assert csv_text(frame).split("\n")[1].split(",")[2] == \
        csv_text(frame[["zoned"]]).split("\n")[1]  # (the same instant, in UTC)


def test_a_reduced_demo_log_is_the_row_by_row_text_and_pandas_text(tmp_path):
    # the reduced table of the demo logs (about 80 columns of every kind), large enough to be made in several
    # pieces of rows: the same text as the row-by-row form and as pandas
    from navred.io.logbook import read_sight_log
    from navred.jobs.reducing import reduced_sights

    reduced = reduced_sights(read_sight_log("sample_sights/demo_sights.csv"))
    big = pd.concat([reduced] * 40, ignore_index=True)  # > one piece of _ROWS_AT_ONCE rows
    assert csv_text(big) == _csv_text_by_rows(big)
    assert csv_text(reduced) == csv_safe(reduced).to_csv(index=False, float_format="%.6f")


def test_a_log_changed_between_the_look_and_the_reading_of_a_block_is_refused(tmp_path):
    # a long plain log is looked at once by the first process (fields counted, blank cells noted, each block's
    # digest); a block whose bytes differ when it is read (the same length, a quote or a digit changed) is refused
    from navred.io import readers
    from navred.io.logbook import LogbookError

    frame = pd.read_csv("sample_sights/training_sights.csv", dtype=str, keep_default_na=False).iloc[:120]
    path = tmp_path / "log.csv"
    frame.to_csv(path, index=False)
    plain = readers.plain_csv_blocks(path, 50)
    assert len(plain) == 3 and len(plain.digests) == 3 and plain.blank_lines.tolist() == [0, 0, 0]
    assert plain.block(1).n_rows == 50
    data = bytearray(path.read_bytes())
    at = int(plain.offsets[1]) + 5
    for change in (b'"', b"7" if data[at:at + 1] != b"7" else b"8"):
        changed = data.copy()
        changed[at:at + 1] = change
        path.write_bytes(bytes(changed))
        assert plain.block(0).n_rows == 50  # (the block before is as it was)
        with pytest.raises(LogbookError, match="changed while it was being read"):
            plain.block(1)


def test_instants_dates_are_numpys_calendar_across_the_whole_range():
    # the date of each instant is worked from its day number (the civil calendar's arithmetic); numpy's own
    # texts (np.datetime_as_string, the reference) over pandas' whole range of instants, leap days and century
    # years (1900, 2000, 2100) and the days either side of 1970 included
    rng = np.random.default_rng(264)
    low, high = pd.Timestamp.min.value // 10**9 + 1, pd.Timestamp.max.value // 10**9
    edges = [low, high, 0, -1, 86399, 86400, -86400, -86401]
    for day in ("1900-02-28", "1900-03-01", "2000-02-29", "2000-03-01", "2100-02-28", "2100-03-01", "1999-12-31"):
        edges += [int(pd.Timestamp(day).value // 10**9) + k for k in (-1, 0, 86399, 86400)]
    seconds = np.r_[rng.integers(low, high, 20000), edges]
    instants = pd.Series(pd.to_datetime(seconds, unit="s"))
    expected = [t.replace("T", " ") for t in
                np.datetime_as_string(instants.to_numpy().astype("datetime64[s]"), unit="s").tolist()]
    assert csv_text(pd.DataFrame({"t": instants}), header=False).split("\n")[:-1] == expected
    zoned = pd.DataFrame({"t": instants.dt.tz_localize("UTC")})
    assert csv_text(zoned) == csv_safe(zoned).to_csv(index=False)  # pandas, the general-purpose reference


def test_a_table_of_one_row_is_written_as_pandas_writes_it():
    # a row alone: its cells are their own column (a gap, a missing instant, a negative number with padding)
    frame = pd.DataFrame({"gap": [np.nan], "when": pd.to_datetime([None], utc=True), "x": [-1.5], "n": [-7],
                          "t": ["a, b"]})
    for row in (frame, frame.assign(gap=[2.0], when=pd.to_datetime(["2026-03-26T09:10:00Z"], utc=True))):
        assert csv_text(row) == csv_safe(row).to_csv(index=False, float_format="%.6f")
        assert csv_text(pd.concat([row, row], ignore_index=True)) == \
            csv_safe(pd.concat([row, row], ignore_index=True)).to_csv(index=False, float_format="%.6f")


def test_reduce_csv_in_blocks_is_pandas_text_of_the_reduced_log(monkeypatch):
    # navred reduce --csv of the invented training voyage (405 sights) in blocks of 60 rows, the blocks made as
    # bytes by two processes: the text pandas' to_csv (the general-purpose reference) writes of the log reduced
    # whole and neutralised, byte for byte
    from typer.testing import CliRunner

    from navred.cli import app
    from navred.jobs import forking, reducing

    log = "sample_sights/training_sights.csv"
    monkeypatch.setattr(reducing, "REDUCE_BLOCK_ROWS", 60)
    monkeypatch.setattr(forking, "cores", lambda: 2)
    result = CliRunner().invoke(app, ["reduce", log, "--csv"])
    assert result.exit_code == 0
    reduced = reducing.reduce_log(log).reduced
    assert result.stdout == csv_safe(reduced).to_csv(index=False, float_format="%.6f")
