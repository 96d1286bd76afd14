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

from .errors import NavredError

_TEMP = re.compile(r"^\.(?P<name>.+)\.(?P<pid>\d+)\.[0-9a-f]{8}\.navred-tmp(?P<suffix>\.[^.]*)?$")
#: Formula-like text: a CSV cell that begins with one of these is read by a spreadsheet as a
#: formula (OWASP, "CSV Injection"), so navred's CSV output puts a ' before it.
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


class OutputError(NavredError):
    """An output path navred will not write to."""


def check_output(path: str | Path, inputs: Iterable[str | Path] = ()) -> Path:
    """The output path, after refusing one that is not a regular file, is an input, or cannot be written."""
    target = Path(path)
    if str(path).strip() == "":
        raise OutputError("no output file given (an empty name)")
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
        source_path = Path(source)
        try:
            same = source_path.exists() and target.exists() and os.path.samefile(source_path, target)
        except OSError:
            same = False
        if same or source_path.resolve() == target.resolve():
            raise OutputError(f"{target} is one of the inputs of this run: writing it would overwrite it; give "
                              "another output name")
    parent = target.parent
    for folder in (parent, *parent.parents):
        if folder.exists():
            if not folder.is_dir():
                raise OutputError(f"cannot write {target}: {folder} is a file, not a folder")
            if not os.access(folder, os.W_OK | os.X_OK):
                raise OutputError(f"cannot write {target}: the folder {folder} is not writable (read-only?)")
            break
    return target


def _sweep(folder: Path, name: str) -> None:
    """Remove the temporary files a killed earlier write to the same target left behind."""
    _sweep_all(folder, {name})


def _sweep_all(folder: Path, names: set[str]) -> None:
    """Remove the temporaries killed earlier writes to any of these targets left, in one scan of the folder."""
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


def atomic_write_many(folder: str | Path, files: dict[str, Callable[[str], object]], *,
                      inputs: Iterable[str | Path] = ()) -> list[Path]:
    """:func:`atomic_write` for many files in one folder (the plotting sheets of a long passage).

    Each file is written under a temporary name; all are synced to disk at once, then each is
    renamed over its target: every target is its complete new file or its old one, as with
    :func:`atomic_write`, for one folder scan and one sync instead of one of each per file.
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
    targets = []
    for name in files:
        target = folder / name
        if target.is_symlink() or (target.exists() and not target.is_file()) or where / name in sources:
            check_output(target, inputs)  # the refusal, in its own words
        targets.append(target)
    names = {target.name for target in targets}
    _sweep_all(folder, names)
    temporaries: list[Path] = []
    try:
        for target, write in zip(targets, files.values()):
            temporary = target.parent / f".{target.name}.{os.getpid()}.{secrets.token_hex(4)}.navred-tmp{target.suffix}"
            try:
                os.close(os.open(temporary, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o666))
            except OSError as exc:
                raise OutputError(f"cannot write in {folder}: {exc.strerror or exc}") from None
            temporaries.append(temporary)
            write(str(temporary))
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


def csv_safe(frame):
    """A copy of a table whose text cells cannot be taken for formulas by a spreadsheet: a cell that
    begins with =, +, -, @, a tab or a carriage return gets a ' before it (OWASP, "CSV Injection")."""
    out = frame.copy()
    for column in out.columns:
        values = out[column]
        if values.dtype == object or str(values.dtype) in ("str", "string"):
            out[column] = values.map(lambda v: "'" + v if isinstance(v, str) and v.startswith(FORMULA_STARTS) else v)
    return out


__all__ = ["atomic_write", "atomic_write_many", "check_output", "csv_safe", "OutputError", "FORMULA_STARTS"]
