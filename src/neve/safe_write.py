"""Every file and folder neve writes goes through here (standard library only).

One set of rules for all of neve's outputs (site, layer and portfolio maps, the
calculation package, screening results, the run summary, the geocode cache,
``neve verify -o``):

- **Refuse an existing target** unless ``overwrite=True``:
  :func:`check_target` raises :class:`~neve.engine.errors.InputError` naming the
  field, the path and ``--overwrite`` (exit code 2).  Writers check before any
  work, so a refusal costs nothing, and again at the final rename.
- **Write atomically**: the output is built under a temporary name beside the
  target and renamed into place only when complete.  Without ``overwrite`` the
  rename never replaces anything (:func:`publish`): a target that another run
  created meanwhile is kept and the writer raises an ``InputError``.
- **Clean up on failure**: on any exception (KeyboardInterrupt included) the
  temporary name and everything in it are removed.  A run killed with SIGKILL
  or by a power cut cannot clean up; the next writer to the same target
  removes the temporary names of dead runs (:func:`remove_stale`).

Temporary names are hidden (they start with a dot), carry neve's tag, the host
and the process that owns them, and end in ``.part`` (a file being written,
inside a folder of that name), ``.building`` (a folder being built) or ``.old``
(a folder put aside while it is replaced): never in a result's suffix, so a
glob such as ``results*.csv`` or ``*.parquet`` never picks one up::

    .results.csv.neve-HOST-PID-RANDOM.part/results.csv
    .calc.neve-HOST-PID-RANDOM.building/

Use it as::

    from neve import safe_write

    safe_write.write_text("summary.json", text, overwrite=False, field="summary-json")
    with safe_write.atomic_file("results.parquet", overwrite=False) as tmp:
        table.to_parquet(tmp)          # any writer that takes a path
    with safe_write.atomic_folder("calc", overwrite=False, field="package") as tmp:
        ...                            # fill the folder tmp

The rules for which existing *folder* may be replaced (a calculation package
only replaces an earlier package) are given by the caller as ``replaceable``.
"""

from __future__ import annotations

import errno
import os
import shutil
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path

from neve.engine.errors import InputError, NeveError


class TargetKindError(InputError, OSError):
    """A folder stands where a file goes, or a file where a folder goes (exit code 2).

    Also an ``OSError``, as the failed rename it prevents would have been.
    """


__all__ = [
    "STALE_AFTER_S",
    "TEMP_KINDS",
    "TargetKindError",
    "atomic_file",
    "atomic_folder",
    "check_target",
    "make_temp",
    "publish",
    "remove_stale",
    "temp_prefix",
    "write_bytes",
    "write_text",
]

#: kinds of temporary names: a file being written, a folder being built, a folder put aside
TEMP_KINDS = ("part", "building", "old")
#: a temporary name of another host (or of a process that cannot be probed) is stale
#: after this long [s]
STALE_AFTER_S = 24 * 3600.0
#: what a replaced folder is called inside its ``.old`` folder (``package``: issue-8 runs)
_ASIDE_NAMES = ("previous", "package")
#: SQLite (GeoPackage) side files a driver may leave beside a temporary file
_SIDE_FILES = ("-wal", "-shm", "-journal")
#: the longest target name [bytes] kept whole in a temporary name (file names end at 255)
_NAME_BYTES = 120
#: what a refusal of an existing target accepts instead
ACCEPTED = "a new path, or --overwrite"


# --- temporary names ----------------------------------------------------------------


def _host_tag() -> str:
    import hashlib
    import socket

    return hashlib.sha256(socket.gethostname().encode("utf-8", "replace")).hexdigest()[:8]


def _stem(name: str) -> str:
    """``name`` as it appears in a temporary name: whole, or cut and tagged when long."""
    raw = name.encode("utf-8", "surrogateescape")
    if len(raw) <= _NAME_BYTES:
        return name
    import hashlib

    cut = raw[: _NAME_BYTES // 2].decode("utf-8", "ignore")
    return f"{cut}~{hashlib.sha256(raw).hexdigest()[:12]}"


def temp_prefix(target: str | os.PathLike) -> str:
    """The start of every temporary name this process gives for ``target``."""
    return f".{_stem(Path(target).name)}.neve-{_host_tag()}-{os.getpid()}-"


def _temp_pattern(target: Path):
    import re

    kinds = "|".join(TEMP_KINDS)
    sides = "|".join(_SIDE_FILES)
    return re.compile(
        rf"^\.{re.escape(_stem(target.name))}\.neve-(?P<host>[0-9a-f]{{8}})-(?P<pid>\d+)-"
        rf"[A-Za-z0-9_]+\.(?P<kind>{kinds})(?:{sides})?$"
    )


def _folder_of(target: Path) -> Path:
    return target.parent if str(target.parent) else Path(".")


def make_temp(target: str | os.PathLike, kind: str = "part", *, folder: bool = True) -> Path:
    """Create a temporary folder (or empty file) beside ``target``, named as described above."""
    import tempfile

    if kind not in TEMP_KINDS:
        raise InputError("kind", f"unknown temporary kind {kind!r}", ", ".join(TEMP_KINDS))
    target = Path(target)
    prefix, suffix = temp_prefix(target), f".{kind}"
    where = _folder_of(target)
    if folder:
        return Path(tempfile.mkdtemp(prefix=prefix, suffix=suffix, dir=where))
    fd, name = tempfile.mkstemp(prefix=prefix, suffix=suffix, dir=where)
    os.close(fd)
    return Path(name)


def _process_gone(pid: int) -> bool:
    """True when no process ``pid`` runs on this host (never guessed on Windows)."""
    if os.name == "nt" or pid == os.getpid():  # os.kill(pid, 0) is not a probe on Windows
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return True
    except OSError:  # it exists but belongs to someone else
        return False
    return False


def _remove_path(path: Path) -> None:
    if path.is_dir() and not path.is_symlink():
        shutil.rmtree(path, ignore_errors=True)
    else:
        path.unlink(missing_ok=True)


def remove_stale(target: str | os.PathLike, *, now: float | None = None) -> list[Path]:
    """Remove the temporary names of ``target`` left by runs that died; return them.

    A name is stale when its process is gone (same host), or when it is older than
    :data:`STALE_AFTER_S`.  Only names of this module's pattern for this very target
    are looked at; nothing else in the folder is touched.  A folder that was put
    aside (``.old``) while it was being replaced is put back when the target is
    missing, so a killed ``--overwrite`` never loses the previous output.
    """
    import time

    target = Path(target)
    try:
        entries = list(os.scandir(_folder_of(target)))
    except OSError:
        return []
    pattern = _temp_pattern(target)
    host = _host_tag()
    now = time.time() if now is None else now
    removed = []
    for entry in entries:
        m = pattern.match(entry.name)
        if m is None:
            continue
        try:
            age = now - entry.stat(follow_symlinks=False).st_mtime
        except OSError:
            continue
        gone = m["host"] == host and _process_gone(int(m["pid"]))
        if not gone and age < STALE_AFTER_S:
            continue
        path = Path(entry.path)
        if m["kind"] == "old" and not (target.exists() or target.is_symlink()):
            aside = [path / n for n in _ASIDE_NAMES if (path / n).is_dir()]
            if aside:
                try:
                    os.rename(aside[0], target)  # the replaced folder comes back
                except OSError:
                    continue
        _remove_path(path)
        removed.append(path)
    return removed


# --- the checks ---------------------------------------------------------------------


def _exists(p: Path) -> bool:
    return p.exists() or p.is_symlink()  # a dangling symbolic link is a name in use too


def check_target(
    path: str | os.PathLike,
    *,
    overwrite: bool = False,
    field: str = "output",
    folder: bool = False,
    replaceable: Callable[[Path], None] | None = None,
    parents: bool = False,
) -> Path:
    """Refuse a target that may not be written; return it as a Path.

    Temporary names that killed runs left for this target are removed on the way
    (:func:`remove_stale`).  Nothing is created.

    Parameters
    ----------
    path : path-like
        The output file or folder.
    overwrite : bool
        An existing target may be replaced (``--overwrite``).
    field : str
        The option or argument the path came from, named in the error.
    folder : bool
        The output is a folder.  A missing or empty folder is always writable.
    replaceable : callable, optional
        Folders only: called with an existing, non-empty target folder; raises an
        ``InputError`` when that folder may never be replaced (e.g. it is not a
        previous output of the same kind), whatever ``overwrite`` says.
    parents : bool
        A missing parent folder is created by the writer; otherwise it is an error.

    Raises
    ------
    InputError
        The target exists and ``overwrite`` is false (the message names the path and
        ``--overwrite``); it is of the wrong kind (a folder where a file goes, or the
        reverse); ``replaceable`` refuses it; or its folder does not exist.
    """
    p = Path(path)
    parent = _folder_of(p)
    if parent.is_dir():
        remove_stale(p)
    elif not parents:
        raise InputError(
            field, f"folder {str(parent)!r} does not exist", "a path in an existing folder"
        )
    if folder:
        if _exists(p) and not p.is_dir():
            raise TargetKindError(field, f"{str(p)!r} is a file", "a folder path")
        if not p.is_dir() or not any(p.iterdir()):
            return p
        if replaceable is not None:
            replaceable(p)
        if not overwrite:
            raise InputError(field, f"folder {str(p)!r} already exists and is not empty",
                             "a new or empty folder, or --overwrite")  # fmt: skip
        return p
    if _exists(p) and not overwrite:
        raise InputError(field, f"{str(p)!r} already exists", ACCEPTED)
    if p.is_dir():
        raise TargetKindError(field, f"{str(p)!r} is a folder", "a file path")
    return p


def _appeared(target: Path, field: str) -> InputError:
    return InputError(
        field,
        f"{str(target)!r} appeared while neve was writing it (another run?); it was left as it is",
        ACCEPTED,
    )


def _fsync(path: Path) -> None:
    """Flush a file (or a folder's entries) to the disk; best effort."""
    try:
        fd = os.open(path, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:  # file systems or platforms without fsync on this kind of file
        pass
    finally:
        os.close(fd)


def publish(
    tmp: str | os.PathLike, target: str | os.PathLike, *, overwrite: bool, field: str = "output"
) -> Path:
    """Rename the complete ``tmp`` to ``target``; never replace an existing one unless asked.

    Without ``overwrite`` the rename cannot replace anything: a file is hard-linked
    into place (which fails if ``target`` exists), a folder is renamed (which fails
    onto a folder that is not empty); a target that appeared while neve was working
    (another run, another program) is an :class:`InputError` and is left as it is.
    Where the file system has no hard links, the target is checked just before the
    rename (a window of microseconds instead of the whole run).
    """
    tmp, target = Path(tmp), Path(target)
    if overwrite:
        os.replace(tmp, target)
    elif tmp.is_dir():
        try:
            os.rename(tmp, target)  # onto a missing or empty folder only
        except OSError as exc:
            if exc.errno in (errno.EEXIST, errno.ENOTEMPTY, errno.ENOTDIR) or _exists(target):
                raise _appeared(target, field) from None
            raise
    else:
        try:
            os.link(tmp, target)
        except FileExistsError:
            raise _appeared(target, field) from None
        except OSError:  # no hard links on this file system: check, then rename
            if _exists(target):
                raise _appeared(target, field) from None
            os.replace(tmp, target)
        else:
            tmp.unlink()
    _fsync(_folder_of(target))
    return target


# --- the writers --------------------------------------------------------------------


@contextmanager
def atomic_file(
    path: str | os.PathLike,
    *,
    overwrite: bool = False,
    field: str = "output",
    parents: bool = False,
) -> Iterator[Path]:
    """Yield a temporary path for the file ``path``; move it into place on success.

    The temporary path is ``path``'s own name inside a hidden folder beside it
    (``.NAME.neve-HOST-PID-RANDOM.part/NAME``), so a writer sees the real suffix
    (drivers that choose the format by suffix work) while no glob of the results'
    folder can pick up a partial file.  On success the file is flushed to disk and
    published (:func:`publish`); on any exception the folder and everything a driver
    left in it (``-wal``, ``-shm``, ``-journal``) is removed.

    Parameters are those of :func:`check_target`; ``parents`` creates a missing
    parent folder.
    """
    target = check_target(path, overwrite=overwrite, field=field, parents=parents)
    if parents:
        _folder_of(target).mkdir(parents=True, exist_ok=True)
    holder = make_temp(target, "part")
    tmp = holder / target.name
    try:
        yield tmp
        if not tmp.is_file():
            raise NeveError(f"the writer produced no file for {str(target)!r}")
        _fsync(tmp)
        publish(tmp, target, overwrite=overwrite, field=field)
    finally:
        shutil.rmtree(holder, ignore_errors=True)


def write_bytes(
    path: str | os.PathLike,
    data: bytes,
    *,
    overwrite: bool = False,
    field: str = "output",
    parents: bool = False,
) -> Path:
    """Write ``data`` to the file ``path`` atomically (see :func:`atomic_file`)."""
    with atomic_file(path, overwrite=overwrite, field=field, parents=parents) as tmp:
        with open(tmp, "xb") as fh:
            fh.write(data)
    return Path(path)


def write_text(
    path: str | os.PathLike,
    text: str,
    *,
    overwrite: bool = False,
    field: str = "output",
    parents: bool = False,
    encoding: str = "utf-8",
) -> Path:
    """Write ``text`` to the file ``path`` atomically (UTF-8 unless told; see :func:`atomic_file`)."""
    return write_bytes(
        path, text.encode(encoding), overwrite=overwrite, field=field, parents=parents
    )


@contextmanager
def atomic_folder(
    path: str | os.PathLike,
    *,
    overwrite: bool = False,
    field: str = "output",
    replaceable: Callable[[Path], None] | None = None,
    parents: bool = False,
) -> Iterator[Path]:
    """Yield a new temporary folder for the folder ``path``; rename it into place on success.

    The folder is built beside its destination (``.NAME.neve-HOST-PID-RANDOM.building/``)
    and renamed into place when the ``with`` block ends without an exception, so it
    is written whole or not at all; on an exception it is removed.

    Without ``overwrite`` the rename never replaces a folder that is not empty (one
    another run created meanwhile is kept, and an :class:`InputError` is raised).  With
    ``overwrite`` the existing folder is checked again (``replaceable``: what is there
    now may not be what was checked before the work), put aside in a ``.old`` name,
    and put back if the rename fails; a run killed in between leaves it there, and
    :func:`remove_stale` gives it back.

    Parameters are those of :func:`check_target`.
    """
    target = check_target(
        path, overwrite=overwrite, field=field, folder=True, replaceable=replaceable,
        parents=parents,
    )  # fmt: skip
    if parents:
        _folder_of(target).mkdir(parents=True, exist_ok=True)
    tmp = make_temp(target, "building")
    os.chmod(tmp, 0o755)  # mkdtemp gives 0700: a published folder is readable like any other
    try:
        yield tmp
        _put_folder(tmp, target, overwrite=overwrite, field=field, replaceable=replaceable)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise


def _put_folder(
    tmp: Path, target: Path, *, overwrite: bool, field: str, replaceable: Callable | None
) -> None:
    """Rename the finished folder ``tmp`` to ``target`` (see :func:`atomic_folder`)."""
    if not overwrite or not target.is_dir() or not any(target.iterdir()):
        publish(tmp, target, overwrite=False, field=field)
        return
    if replaceable is not None:
        replaceable(target)
    old = make_temp(target, "old")
    os.rename(target, old / _ASIDE_NAMES[0])
    try:
        os.rename(tmp, target)
    except OSError:
        os.rename(old / _ASIDE_NAMES[0], target)  # put the previous folder back
        shutil.rmtree(old, ignore_errors=True)
        raise
    _fsync(_folder_of(target))
    shutil.rmtree(old, ignore_errors=True)
