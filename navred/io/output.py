"""Writing navred's files so that an interruption or a second run never leaves a broken one.

Edge code. Every file navred writes (workbook, GPX, GeoJSON, PDF, PNG, SVG, CSV) goes
through :func:`atomic_write`: the new file is written beside the target under a temporary
name, synced to disk, and renamed over the target in one step, so the target is always
either the complete new file or the old one untouched, even when the process is killed
mid-write. A temporary file left by a killed run is removed by the next write to the same
place. The target must be a regular file (or not exist yet), never one of the run's inputs,
and in a folder that can be written; each refusal is one clear line.
"""

from __future__ import annotations

import os
import re
import secrets
import stat
from collections.abc import Callable, Iterable
from pathlib import Path

from ..errors import NavredError

_TEMP = re.compile(r"^\.(?P<name>.+)\.(?P<pid>\d+)\.[0-9a-f]{8}\.navred-tmp(?P<suffix>\.[^.]*)?$")
#: Formula-like text: a CSV cell that begins with one of these is read by a spreadsheet as a
#: formula (OWASP, "CSV Injection"), so navred's CSV output puts a ' before it.
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


class OutputError(NavredError):
    """An output path navred will not write to."""


#: The longest temporary name navred adds to a target's name (".NAME.PID.RANDOM.navred-tmp.EXT"), less the name.
_TEMP_EXTRA = len(".") + len(".4194304.") + 8 + len(".navred-tmp")


def check_output(path: str | Path, inputs: Iterable[str | Path] = (), *, suffixes: Iterable[str] = (),
                 what: str = "") -> Path:
    """The output path, after refusing one that is not a regular file, is an input, cannot be written, has a
    name too long for its temporary file, or (``suffixes`` given, such as ('.xlsx',)) does not end with a
    suffix whose format navred writes there (``what``: the option, for the message)."""
    target = Path(path)
    named = f"{what} " if what else ""
    if str(path).strip() == "":
        raise OutputError(f"{named}no output file given (an empty name)".strip())
    if "\x00" in str(path):
        raise OutputError(f"{named}a file name cannot hold a NUL byte".strip())
    try:
        longest = os.pathconf(_existing_folder(target), "PC_NAME_MAX")
    except (OSError, ValueError):
        longest = 255
    if len(os.fsencode(target.name)) + len(os.fsencode(target.suffix)) + _TEMP_EXTRA > longest:
        raise OutputError(f"{named}{target.name[:40]}...: the name is too long for this folder ({len(target.name)} "
                          f"characters; navred writes through a temporary name {_TEMP_EXTRA + len(target.suffix)} "
                          f"characters longer, and the folder takes {longest}): give a shorter name")
    if target.is_symlink():
        raise OutputError(f"{target} is a symbolic link: give the real path of the file to write")
    if target.exists():
        mode = target.stat().st_mode
        if stat.S_ISDIR(mode):
            raise OutputError(f"{target} is a folder: give a file name to write (such as {target / 'voyage.xlsx'})")
        if not stat.S_ISREG(mode):
            raise OutputError(f"{target} is not a regular file (a device, a pipe or a socket): navred writes only "
                              "regular files")
    for source in inputs:
        if "\x00" in str(source):
            continue  # no file has such a name: it is refused by its reader
        source_path = Path(source)
        try:
            same = source_path.exists() and target.exists() and os.path.samefile(source_path, target)
        except OSError:
            same = False
        if same or source_path.resolve() == target.resolve():
            raise OutputError(f"{target} is one of the inputs of this run: writing it would overwrite it; give "
                              "another output name")
    suffixes = tuple(s.lower() for s in suffixes)
    if suffixes and target.suffix.lower() not in suffixes:
        raise OutputError(f"{named}{target}: navred writes {' or '.join(s.lstrip('.').upper() for s in suffixes)} "
                          f"there, so the name must end {' or '.join(suffixes)} (the suffix says what the file holds)")
    parent = target.parent
    for folder in (parent, *parent.parents):
        if folder.exists():
            if not folder.is_dir():
                raise OutputError(f"cannot write {target}: {folder} is a file, not a folder")
            if not os.access(folder, os.W_OK | os.X_OK):
                raise OutputError(f"cannot write {target}: the folder {folder} is not writable (read-only?)")
            break
    return target


def _existing_folder(target: Path) -> Path:
    """The nearest folder of the target's that exists (where its name will be made)."""
    for folder in (target.parent, *target.parent.parents):
        if folder.is_dir():
            return folder
    return Path(".")


def _sweep(folder: Path, name: str) -> None:
    """Remove the temporary files a killed earlier write to the same target left behind."""
    _sweep_all(folder, {name})


def _sweep_all(folder: Path, names: set[str], entries=None) -> None:
    """Remove the temporaries killed earlier writes to any of these targets left, in one scan of the folder
    (``entries``: the scan, when the caller has made it)."""
    if entries is None:
        try:
            entries = list(os.scandir(folder))
        except OSError:
            return
    for entry in entries:
        found = _TEMP.match(entry.name)
        if not found or found.group("name") not in names:
            continue
        pid = int(found.group("pid"))
        if pid == os.getpid() or _alive(pid):
            continue  # another run is writing it now
        try:
            os.unlink(entry.path)
        except OSError:
            pass


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def _fsync(path: str | Path, directory: bool = False) -> None:
    flags = os.O_RDONLY | (getattr(os, "O_DIRECTORY", 0) if directory else 0)
    try:
        handle = os.open(path, flags)
    except OSError:
        return  # a folder that cannot be opened for syncing (some file systems): the rename still holds
    try:
        os.fsync(handle)
    except OSError:
        pass
    finally:
        os.close(handle)


def atomic_write(path: str | Path, write: Callable[[str], object], *, inputs: Iterable[str | Path] = ()) -> Path:
    """Call ``write(temporary_path)`` and rename the result over ``path``: all of the new file or none of it.

    The temporary file is in the target's folder (so the rename is atomic), ends with the
    target's suffix (writers that go by the suffix choose the right format), is synced to disk
    before the rename, and is removed if anything fails. ``inputs`` are refused as targets.
    """
    target = check_output(path, inputs)
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"cannot make the folder {target.parent}: {exc.strerror or exc}") from None
    _sweep(target.parent, target.name)
    temporary = target.parent / f".{target.name}.{os.getpid()}.{secrets.token_hex(4)}.navred-tmp{target.suffix}"
    try:
        handle = os.open(temporary, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o666)  # the umask applies
        os.close(handle)
    except OSError as exc:
        raise OutputError(f"cannot write in {target.parent}: {exc.strerror or exc}") from None
    try:
        write(str(temporary))
        _fsync(temporary)
        os.replace(temporary, target)
        _fsync(target.parent, directory=True)
    except OSError as exc:
        raise OutputError(f"cannot write {target}: {exc.strerror or exc}") from None
    finally:
        if os.path.exists(temporary):
            os.unlink(temporary)
    return target


def write_text(path: str | Path, text: str, *, inputs: Iterable[str | Path] = ()) -> Path:
    """A text file (UTF-8) written through :func:`atomic_write`."""
    return atomic_write(path, lambda p: Path(p).write_text(text, encoding="utf-8"), inputs=inputs)


def atomic_write_many(folder: str | Path, files: dict[str, bytes], *, inputs: Iterable[str | Path] = ()) -> list[Path]:
    """:func:`atomic_write` for many files in one folder (the plotting sheets of a long passage).

    ``files`` maps each file name to its contents. Each file is written under a temporary name;
    all are synced to disk at once, then each is renamed over its target: every target is its
    complete new file or its old one, as with :func:`atomic_write`, for one folder scan and one
    sync instead of one of each per file.
    """
    folder = Path(folder)
    if not files:
        return []
    inputs = list(inputs)
    check_output(folder / next(iter(files)), inputs)  # the folder's checks, once
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"cannot make the folder {folder}: {exc.strerror or exc}") from None
    sources = {Path(source).resolve() for source in inputs}
    where = folder.resolve()
    present = {entry.name: entry for entry in os.scandir(folder)}
    targets = []
    for name in files:
        entry = present.get(name)
        if (entry is not None and (entry.is_symlink() or not entry.is_file())) or where / name in sources:
            check_output(folder / name, inputs)  # the refusal, in its own words
        targets.append(folder / name)
    _sweep_all(folder, set(files), present.values())
    token = f"{os.getpid()}.{secrets.token_hex(4)}"
    temporaries: list[Path] = []
    try:
        for target, contents in zip(targets, files.values()):
            temporary = target.parent / f".{target.name}.{token}.navred-tmp{target.suffix}"
            try:
                handle = os.open(temporary, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o666)
            except OSError as exc:
                raise OutputError(f"cannot write in {folder}: {exc.strerror or exc}") from None
            temporaries.append(temporary)
            try:
                os.write(handle, contents)
            finally:
                os.close(handle)
        os.sync()  # every new file on disk before any is renamed into place
        for temporary, target in zip(temporaries, targets):
            os.replace(temporary, target)
        _fsync(folder, directory=True)
    except OSError as exc:
        raise OutputError(f"cannot write in {folder}: {exc.strerror or exc}") from None
    finally:
        for temporary in temporaries:
            if os.path.exists(temporary):
                os.unlink(temporary)
    return targets


#: rows of a table turned into CSV text together
CSV_ROWS_AT_ONCE = 20_000
#: a column of numbers with at most this share of distinct values is formatted each distinct value once (in the
#: row-by-row form, kept for a float format other than "%.Nf")
FEW_DISTINCT = 0.25
#: the float formats written by digits: "%.Nf", N from 0 to 9
_FIXED_FORMAT = re.compile(r"%\.([0-9])f")


class _Tables:
    """The digit tables, made when first used (numpy is not imported with this module): ``words``, the four
    bytes of k from 0 to 999 (a byte left for what goes before, then k's three digits); ``kept``, the
    pattern of those bytes kept when the first j digits are left out (j from 0 to 3); ``kept_first``, when
    only the first j digits are kept; ``powers``, 10**k."""

    def __getattr__(self, name):
        import numpy as np

        if name == "words":
            value = np.frombuffer("".join(f"\0{k:03d}" for k in range(1000)).encode("ascii"), dtype=np.uint32)
        elif name == "kept":
            value = np.array([[0] + [m >= j for m in range(3)] for j in range(4)], dtype=np.uint8).view(np.uint32)
            value = value.ravel()
        elif name == "kept_first":
            value = np.array([[0] + [m < j for m in range(3)] for j in range(4)], dtype=np.uint8).view(np.uint32)
            value = value.ravel()
        elif name == "powers":
            value = 10 ** np.arange(19, dtype=np.int64)
        else:
            raise AttributeError(name)
        setattr(self, name, value)
        return value


_TABLES = _Tables()
#: a number scaled by 10**N at or beyond this is formatted by Python's %-format (its digits need more than int64)
_FIXED_LIMIT = 1e15


def csv_text(frame, *, header: bool = True, float_format: str = "%.6f") -> str:
    """A table as CSV text, column by column, with text cells that could be taken for formulas
    neutralised as :func:`csv_safe` does: the same text pandas' ``to_csv(index=False,
    float_format=...)`` writes of :func:`csv_safe` of the table (tested), at many times its speed.

    Numbers in the float format (NaN and missing values empty), integers and booleans as written,
    instants with a zone as ``YYYY-MM-DD HH:MM:SS+00:00``; a field holding a comma, a quote or a
    line break is quoted (RFC 4180, csv.QUOTE_MINIMAL). :func:`csv_bytes` is the same text as UTF-8.
    """
    return csv_bytes(frame, header=header, float_format=float_format).decode("utf-8")


#: rows of the byte matrix put together at a time (a few MB: kept in the processor's cache)
_ROWS_AT_ONCE = 2048


def csv_bytes(frame, *, header: bool = True, float_format: str = "%.6f") -> bytes:
    """:func:`csv_text` as UTF-8 bytes (what a file or a pipe is written).

    With a fixed float format (``%.6f``, ``%.2f``...) every cell is made as bytes in numpy, a column at a
    time (:func:`_column_cells`): numbers by their digits (a number whose scaled value lies too near a half
    for the multiplication to tell which way it rounds, or too large for int64's digits, or infinite, is
    formatted by Python's %-format: the very text of the format), a column of text by its distinct values'
    bytes gathered. The columns are laid side by side in a matrix of bytes a few thousand rows at a time,
    and the bytes where each cell is are kept, in order, at once. Any other float format is formatted a row
    at a time (:func:`_csv_text_by_rows`).
    """
    import numpy as np

    if len(frame) > CSV_ROWS_AT_ONCE:  # the text of every cell of a large table at once would be several times its size
        return b"".join(csv_bytes(frame.iloc[start:start + CSV_ROWS_AT_ONCE], header=header and start == 0,
                                  float_format=float_format) for start in range(0, len(frame), CSV_ROWS_AT_ONCE))
    fixed = _FIXED_FORMAT.fullmatch(float_format)
    if fixed is None or len(frame) == 0 or len(frame.columns) == 0:
        return _csv_text_by_rows(frame, header=header, float_format=float_format).encode("utf-8")
    decimals = int(fixed.group(1))
    n = len(frame)
    cells = [_column_cells(frame.iloc[:, j], decimals, float_format) for j in range(len(frame.columns))]
    width = sum(c.width for c in cells) + len(cells)
    parts = [(",".join(_quoted(_neutral(str(name))) for name in frame.columns) + "\n").encode("utf-8")] \
        if header else []
    rows = min(n, _ROWS_AT_ONCE)
    matrix = np.empty((rows, width), dtype=np.uint8)
    keep = np.ones((rows, width), dtype=bool)
    at = 0
    for j, c in enumerate(cells):  # what is the same in every row, once
        if c.constant:
            matrix[:, at:at + c.width] = c.matrix
        at += c.width
        matrix[:, at] = ord("\n") if j == len(cells) - 1 else ord(",")
        at += 1
    for start in range(0, n, rows):
        stop = min(n, start + rows)
        if stop - start < rows:
            matrix, keep = matrix[:stop - start], keep[:stop - start]
        at = 0
        for c in cells:
            if not c.constant:
                cell_bytes, kept = c.rows(start, stop)
                matrix[:, at:at + c.width] = cell_bytes
                if kept is not None:
                    keep[:, at:at + c.width] = kept
            at += c.width + 1
        parts.append(matrix[keep].tobytes())
    return b"".join(parts)


class _Cells:
    """One column's cells as bytes: ``matrix`` (rows x width) and ``keep`` (where the cell's bytes are; None:
    everywhere), or one text for every row (``matrix`` of one row, broadcast), or (``codes`` given) a table of
    distinct cells' bytes, ``matrix``, with their ``lengths``, row k holding cell ``codes[k]`` (gathered a
    piece of rows at a time, where they are laid: a wide column of few texts is not made whole)."""

    __slots__ = ("matrix", "keep", "width", "codes", "lengths", "full")

    def __init__(self, matrix, keep=None, codes=None, lengths=None):
        import numpy as np

        self.matrix, self.keep, self.width = matrix, keep, matrix.shape[1]
        self.codes, self.lengths = codes, lengths
        self.full = lengths is None or bool((lengths == self.width).all())
        if codes is not None:
            self.codes = np.asarray(codes, dtype=np.intp)

    @property
    def constant(self) -> bool:
        """One text in every row (a table of one row is such a text only with every byte kept)."""
        return self.codes is None and self.keep is None and self.matrix.shape[0] == 1

    def rows(self, start: int, stop: int):
        """(bytes, where kept or None) of rows ``start`` to ``stop``."""
        import numpy as np

        if self.codes is None:
            return self.matrix[start:stop], None if self.keep is None else self.keep[start:stop]
        codes = self.codes[start:stop]
        keep = None if self.full else np.arange(self.width) < self.lengths[codes][:, None]
        return self.matrix[codes], keep


def _text_cells(n: int, codes, texts: list[str]) -> _Cells:
    """Cells whose row ``k`` holds ``texts[codes[k]]`` (``codes`` None: one text in every row)."""
    import numpy as np

    encoded = [t.encode("utf-8") for t in texts]
    if codes is None or len(encoded) == 1:
        return _Cells(np.frombuffer(encoded[0], dtype=np.uint8).reshape(1, -1))
    lengths = np.fromiter((len(b) for b in encoded), dtype=np.int64, count=len(encoded))
    width = int(lengths.max())
    table = np.zeros((len(encoded), width), dtype=np.uint8)
    flat = np.frombuffer(b"".join(encoded), dtype=np.uint8)
    if flat.size:
        which = np.repeat(np.arange(len(encoded)), lengths)
        starts = np.repeat(np.cumsum(lengths) - lengths, lengths)
        table[which, np.arange(flat.size) - starts] = flat
    return _Cells(table, codes=codes, lengths=lengths)


def _row_texts(n: int, texts: list[str]) -> _Cells:
    """Cells from one text a row (each distinct text's bytes made once)."""
    import pandas as pd

    codes, distinct = pd.factorize(pd.Series(texts, dtype=object))
    return _text_cells(n, codes, list(distinct))


def _digit_cells(numbers, decimals: int, float_format: str | None) -> _Cells:
    """Numbers as their digits: floats (``float_format`` "%.Nf", ``decimals`` N) written as the format writes
    them, NaN empty; integers (``float_format`` None) as ``str`` writes them. A float whose scaled value's
    fraction lies within the multiplication's rounding of a half (so that which way it rounds cannot be told
    from the product), or too large for int64's digits, or infinite, is formatted by the %-format itself.

    The cells are made four bytes at a time: a byte before each three digits (the sign before the first
    three, the decimal point before the first three decimals, elsewhere a byte left out), the digits from a
    table of "000" to "999"; what is kept (the sign of a negative number, the whole part from its first
    significant digit, the decimals) from a table of four patterns."""
    import numpy as np

    n = len(numbers)
    if float_format is None:  # integers
        negative = numbers < 0
        slow = numbers == np.iinfo(np.int64).min  # no positive int64 of its size
        whole = np.abs(np.where(slow, 0, numbers)).astype(np.int64)
        fraction = None
        missing = np.zeros(n, dtype=bool)
        decimals = 0
    else:
        missing = np.isnan(numbers)
        with np.errstate(invalid="ignore", over="ignore"):
            scaled = numbers * 10.0 ** decimals
            size = np.abs(scaled)
            # the product is within half a unit of its last place (2**-53 of it) of the exact scaled value: a
            # fraction further than that from a half rounds the same way as the exact value (margin 8x)
            tie = np.abs(scaled - np.floor(scaled) - 0.5) <= np.maximum(size, 1.0) * 2.0 ** -50
            slow = (~(size < _FIXED_LIMIT) | tie) & ~missing
            rounded = np.abs(np.rint(np.where(slow | missing, 0.0, scaled))).astype(np.int64)
        negative = np.signbit(numbers) & ~missing  # as the format: -0.0 and a small negative that rounds to 0
        whole, fraction = np.divmod(rounded, 10 ** decimals) if decimals else (rounded, None)
    tables = _TABLES
    places = max(1, len(str(int(whole.max())))) if n else 1
    groups = -(-places // 3)
    tail = -(-decimals // 3)
    words = np.empty((n, groups + tail), dtype=np.uint32)
    kept = np.empty((n, groups + tail), dtype=np.uint32)
    digits = np.searchsorted(tables.powers[1:places], whole, side="right") + 1
    rest = whole
    for k in range(groups - 1, -1, -1):
        rest, three = np.divmod(rest, 1000)
        words[:, k] = tables.words[three]
        kept[:, k] = tables.kept[np.clip(3 * groups - digits - 3 * k, 0, 3)]
    words[:, 0] |= ord("-")
    kept[:, 0] |= negative.astype(np.uint32)
    if tail:
        rest = fraction * 10 ** (3 * tail - decimals)  # the last three left-aligned
        for k in range(groups + tail - 1, groups - 1, -1):
            rest, three = np.divmod(rest, 1000)
            words[:, k] = tables.words[three]
        kept[:, groups:] = tables.kept[0]
        if decimals % 3:
            kept[:, -1] = tables.kept_first[decimals % 3]
        words[:, groups] |= ord(".")
        kept[:, groups] |= 1
    matrix = words.view(np.uint8)
    keep = kept.view(bool)
    keep[missing] = False
    if slow.any():
        width = matrix.shape[1]
        rows = np.flatnonzero(slow)
        texts = [(float_format % v) if float_format is not None else str(v) for v in numbers[rows].tolist()]
        encoded = [t.encode("ascii") for t in texts]
        longest = max(len(b) for b in encoded)
        if longest > width:  # wider cells: the others keep their bytes at the right
            grown = np.zeros((n, longest), dtype=np.uint8)
            grown[:, longest - width:] = matrix
            wider = np.zeros((n, longest), dtype=bool)
            wider[:, longest - width:] = keep
            matrix, keep, width = grown, wider, longest
        for row, b in zip(rows.tolist(), encoded):
            matrix[row, :len(b)] = np.frombuffer(b, dtype=np.uint8)
            keep[row, :] = False
            keep[row, :len(b)] = True
    return _Cells(matrix, keep)


def _column_cells(values, decimals: int, float_format: str) -> _Cells:
    """One column's cells as :func:`_csv_text_by_rows` writes them (the same text, tested)."""
    import numpy as np
    import pandas as pd

    n = len(values)
    dtype = values.dtype
    if isinstance(dtype, pd.DatetimeTZDtype) or str(dtype).startswith("datetime64"):
        return _instant_cells(values)
    if isinstance(dtype, np.dtype) and dtype.kind == "f":
        numbers = values.to_numpy().astype(np.float64)
        bits = numbers.view(np.int64)
        if (bits == bits[0]).all():  # one value (by its bits: -0.0 is not 0.0)
            return _text_cells(n, None, ["" if numbers[0] != numbers[0] else float_format % float(numbers[0])])
        return _digit_cells(numbers, decimals, float_format)
    if isinstance(dtype, np.dtype) and dtype.kind == "b":
        flags = values.to_numpy()
        return _text_cells(n, flags.astype(np.int8), ["False", "True"])
    if isinstance(dtype, np.dtype) and dtype.kind in "iu":
        numbers = values.to_numpy()
        if (numbers == numbers[0]).all():
            return _text_cells(n, None, [str(numbers[:1].tolist()[0])])
        if dtype.kind == "u" and dtype.itemsize == 8 and int(numbers.max()) > np.iinfo(np.int64).max:
            return _row_texts(n, [str(v) for v in numbers.tolist()])
        return _digit_cells(numbers.astype(np.int64), 0, None)
    if dtype.kind in "iub":  # an extension type of numbers: as the row-by-row form writes it
        return _row_texts(n, [str(v) for v in values.to_numpy().tolist()])
    # each distinct value once (most text columns hold few: the body, the limb, the status...)
    array = values.to_numpy(dtype=object)
    first = array[0]
    if isinstance(first, str) and (array == first).all():  # one text (a quick look before the factorizing)
        return _text_cells(n, None, [_quoted(_csv_cell(first, float_format))])
    codes, distinct = pd.factorize(array, use_na_sentinel=False)
    if len(distinct) > _MANY_TEXTS:
        plain = _plain_texts(distinct)
        if plain is not None:
            return _Cells(plain[0], codes=codes, lengths=plain[1])
    return _text_cells(n, codes, [_quoted(_csv_cell(v, float_format)) for v in distinct.tolist()])


#: a column of more distinct texts than this has them checked and made bytes at once (np.strings)
_MANY_TEXTS = 200


def _plain_texts(distinct):
    """The bytes (a matrix, a text a row) and lengths of texts that are written as they are (ASCII, no NUL, no
    separator, quote or line break, nothing a spreadsheet takes for a formula), or None when any is not."""
    import numpy as np
    import pandas as pd

    if pd.api.types.infer_dtype(distinct, skipna=False) != "string":
        return None
    texts = np.asarray(distinct).astype(str)
    lengths = np.strings.str_len(texts)
    if int(lengths.sum()) != sum(map(len, distinct.tolist())):  # a text ending in NUL (numpy's texts drop them)
        return None
    for start in FORMULA_STARTS:
        if np.strings.startswith(texts, start).any():
            return None
    for special in (",", '"', "\n", "\r"):
        if (np.strings.find(texts, special) >= 0).any():
            return None
    points = texts.view(np.uint32).reshape(len(texts), -1)  # each character's code point (UCS-4)
    if (points > 127).any() or ((points == 0) & (np.arange(points.shape[1]) < lengths[:, None])).any():
        return None  # beyond ASCII, or a NUL within a text
    return points.astype(np.uint8), lengths


def _instant_cells(values) -> _Cells:
    """Instants as :func:`_instant_texts` writes them, made as bytes at once when they are whole seconds."""
    import numpy as np

    zoned = getattr(values.dt, "tz", None) is not None
    stamps = values.dt.tz_convert("UTC").dt.tz_localize(None) if zoned else values
    plain = stamps.to_numpy().astype("datetime64[ns]")
    missing = np.isnat(plain)
    whole = plain[~missing]
    if whole.size and np.any(whole.astype("datetime64[s]") != whole):
        texts = _instant_texts(values)
        joined = "".join(texts)
        if "," in joined or '"' in joined or "\n" in joined or "\r" in joined:
            texts = [_quoted(t) for t in texts]
        return _row_texts(len(values), texts)
    seconds = np.where(missing, 0, plain.astype("datetime64[s]").astype(np.int64))
    # the civil date of each day (H. Hinnant, "chrono-Compatible Low-Level Date Algorithms", civil_from_days:
    # the proleptic Gregorian calendar from days since 1970-01-01, floor divisions throughout)
    days, clock = np.divmod(seconds, 86400)
    era, day_of_era = np.divmod(days + 719468, 146097)
    year_of_era = (day_of_era - day_of_era // 1460 + day_of_era // 36524 - day_of_era // 146096) // 365
    day_of_year = day_of_era - (365 * year_of_era + year_of_era // 4 - year_of_era // 100)
    shifted_month = (5 * day_of_year + 2) // 153
    day = day_of_year - (153 * shifted_month + 2) // 5 + 1
    month = np.where(shifted_month < 10, shifted_month + 3, shifted_month - 9)
    year = year_of_era + era * 400 + (month <= 2)
    if n_rows := len(values):
        if year.min() < 1000 or year.max() > 9999:  # (not four digits: numpy's own texts)
            return _row_texts(n_rows, _instant_texts(values))
    hour, rest = np.divmod(clock, 3600)
    minute, second = np.divmod(rest, 60)
    matrix = np.empty((len(values), 25 if zoned else 19), dtype=np.uint8)
    for at, number in ((0, year // 100), (2, year % 100), (5, month), (8, day), (11, hour), (14, minute),
                       (17, second)):
        tens, units = np.divmod(number, 10)
        matrix[:, at] = tens + 48
        matrix[:, at + 1] = units + 48
    for at, mark in ((4, "-"), (7, "-"), (10, " "), (13, ":"), (16, ":")):
        matrix[:, at] = ord(mark)
    if zoned:
        matrix[:, 19:] = np.frombuffer(b"+00:00", dtype=np.uint8)
    keep = None
    if missing.any():
        keep = np.ones(matrix.shape, dtype=bool)
        keep[missing] = False
    return _Cells(matrix, keep)


def _csv_text_by_rows(frame, *, header: bool = True, float_format: str = "%.6f") -> str:
    """:func:`csv_text` a row at a time by one %-format (any float format)."""
    import numpy as np
    import pandas as pd

    # each row is one %-formatting of all its fields at once: a float column with no gap is formatted there
    # (in C), every other column is text made column by column first
    specs: list[str] = []
    columns: list[list] = []
    gaps = np.zeros(len(frame), dtype=bool)  # rows holding a missing number, written as _GAP and emptied after
    for name in frame.columns:
        values = frame[name]
        dtype = values.dtype
        if isinstance(dtype, pd.DatetimeTZDtype) or str(dtype).startswith("datetime64"):
            texts = _instant_texts(values)
        elif dtype.kind == "f":
            numbers = values.to_numpy().astype(np.float64)  # (float32 cannot hold the gap's stand-in)
            missing = np.isnan(numbers)
            if missing.all():
                specs.append("")  # an empty field in every row
                continue
            # a column of few distinct numbers (a constant, a course, a speed): each formatted once, then text.
            # Distinct by their bits, so that -0.0 and 0.0 keep their own texts
            bits64 = numbers.astype(np.float64).view(np.int64)
            few = len(pd.unique(bits64[:4096])) <= FEW_DISTINCT * min(len(bits64), 4096)  # (a look at the first rows)
            codes, bits = pd.factorize(bits64) if few else (None, bits64)
            if few and len(bits) <= FEW_DISTINCT * len(numbers):
                cells = ["" if v != v else float_format % v for v in bits.view(np.float64).tolist()]
                if len(cells) == 1:
                    specs.append(cells[0].replace("%", "%%"))  # the same text in every row: part of the form
                    continue
                texts = np.array(cells, dtype=object)[codes].tolist()
                specs.append("%s")
                columns.append(texts)
                continue
            if missing.any():
                numbers = np.where(missing, _GAP, numbers)
                gaps |= missing
            specs.append(float_format)
            columns.append(numbers.tolist())
            continue
        elif dtype.kind in "iub":
            numbers = values.to_numpy()
            if len(numbers) and (numbers == numbers[0]).all():
                specs.append(str(numbers[:1].tolist()[0]).replace("%", "%%"))  # one value: part of the form
                continue
            specs.append("%s")
            columns.append(numbers.tolist())
            continue
        else:
            # each distinct value once (most text columns hold few: the body, the limb, the status...)
            codes, distinct = pd.factorize(values.to_numpy(dtype=object), use_na_sentinel=False)
            cells = [_quoted(_csv_cell(v, float_format)) for v in distinct.tolist()]
            if len(cells) == 1:
                specs.append(cells[0].replace("%", "%%"))  # the same text in every row: part of the form
                continue
            texts = np.array(cells + [""], dtype=object)[codes].tolist()
            specs.append("%s")
            columns.append(texts)
            continue
        joined = "".join(texts)
        if "," in joined or '"' in joined or "\n" in joined or "\r" in joined:
            texts = [_quoted(t) for t in texts]
        specs.append("%s")
        columns.append(texts)
    form = ",".join(specs)
    rows = [form % row for row in zip(*columns)] if columns else [form.replace("%%", "%")] * len(frame)
    if gaps.any():
        gap_text = float_format % _GAP
        for k in np.flatnonzero(gaps).tolist():
            rows[k] = rows[k].replace(gap_text, "")
    lines = [",".join(_quoted(_neutral(str(name))) for name in frame.columns)] if header else []
    return "\n".join(lines + rows) + ("\n" if lines or rows else "")


#: a stand-in for a missing number while a row is formatted (its 300 digits appear in no real cell)
_GAP = -7.777777777e299


def _instant_texts(values) -> list[str]:
    """Instants with a zone as pandas writes them in a CSV (``2026-03-26 09:10:00+00:00``), empty when missing."""
    import numpy as np

    stamps = values.dt.tz_convert("UTC").dt.tz_localize(None) if getattr(values.dt, "tz", None) is not None \
        else values
    plain = stamps.to_numpy().astype("datetime64[ns]")
    missing = np.isnat(plain)
    whole = plain[~missing]
    if whole.size and np.any(whole.astype("datetime64[s]") != whole):
        texts = values.astype(str).tolist()  # fractions of a second: pandas' own layout
        return ["" if not isinstance(t, str) or t in ("NaT", "nan", "None") else t for t in texts]  # (NaT: a NaN)
    suffix = "+00:00" if getattr(values.dt, "tz", None) is not None else ""
    texts = [t.replace("T", " ") + suffix for t in np.datetime_as_string(plain, unit="s").tolist()]
    for k in np.flatnonzero(missing).tolist():
        texts[k] = ""
    return texts


def _csv_cell(value, float_format: str) -> str:
    """One cell of a text column as CSV text: formula-like text neutralised (OWASP)."""
    if value is None:
        return ""
    if isinstance(value, str):
        return "'" + value if value.startswith(FORMULA_STARTS) else value
    if isinstance(value, float):  # a number among text: written as pandas writes it there, in full
        return "" if value != value else str(value)
    if isinstance(value, bool):
        return str(value)
    try:
        import pandas as pd

        if pd.isna(value):
            return ""
    except (TypeError, ValueError):
        pass
    return str(value)


def _neutral(text: str) -> str:
    """Text a spreadsheet would not take for a formula: a ' before =, +, -, @, a tab or a carriage return."""
    return "'" + text if text.startswith(FORMULA_STARTS) else text


def _quoted(text: str) -> str:
    if "," in text or '"' in text or "\n" in text or "\r" in text:
        return '"' + text.replace('"', '""') + '"'
    return text


def csv_safe(frame):
    """A copy of a table whose text cells and headers cannot be taken for formulas by a spreadsheet: a
    cell or header that begins with =, +, -, @, a tab or a carriage return gets a ' before it (OWASP,
    "CSV Injection")."""
    out = frame.copy()
    # the header too: an extra column of a log keeps its own header, which came from the file (OWASP)
    out.columns = [_neutral(c) if isinstance(c, str) else c for c in out.columns]
    for column in out.columns:
        values = out[column]
        if values.dtype == object or str(values.dtype) in ("str", "string"):
            out[column] = values.map(lambda v: "'" + v if isinstance(v, str) and v.startswith(FORMULA_STARTS) else v)
    return out


__all__ = ["atomic_write", "atomic_write_many", "check_output", "csv_bytes", "csv_safe", "csv_text", "OutputError", "FORMULA_STARTS"]
