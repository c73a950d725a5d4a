"""Where a calculation package may be written (no heavy imports).

A package folder carries a marker file, :data:`MARKER`.  An existing folder
is replaced (with ``overwrite``) only when it is empty or is itself a neve
package, so ``--package . --overwrite`` can never wipe a folder of the
user's own files.
"""

from __future__ import annotations

from pathlib import Path

from neve.engine.errors import InputError

#: the marker file every package folder carries
MARKER = ".neve-package"
#: the names a package folder holds (a folder holding only these is a package
#: written before the marker existed)
PACKAGE_NAMES = {
    MARKER, "report.html", "report.pdf", "site.json", "site_map.html",
    "static_map.png", "static_map.svg", "diagrams",
}  # fmt: skip


def check_package_target(dest: str | Path, overwrite: bool) -> None:
    """Raise :class:`InputError` unless a package may be written to ``dest``."""
    dest = Path(dest)
    if dest.exists() and not dest.is_dir():
        raise InputError("package", f"{str(dest)!r} is a file", "a folder path")
    if not dest.is_dir() or not any(dest.iterdir()):
        return
    names = {p.name for p in dest.iterdir()}
    if not (dest / MARKER).is_file() and not names <= PACKAGE_NAMES:
        raise InputError(
            "package",
            f"folder {str(dest)!r} exists, is not empty and is not a neve package",
            "a new or empty folder, or a previous neve package with --overwrite",
        )
    if not overwrite:
        raise InputError(
            "package",
            f"folder {str(dest)!r} holds a package already",
            "a new folder, or --overwrite",
        )


# --- temporary names beside a target, and publishing without replacing -------------
#
# Everything neve writes is built under a temporary name in the target's own folder and
# renamed into place when complete.  The temporary names are hidden (they start with a
# dot), carry neve's tag, the host and the process that owns them, and end in ``.part``
# (files and folders of a file output), ``.building`` (a package being built) or
# ``.old`` (a package put aside while it is replaced): never in a result's suffix, so
# that a glob such as ``results*.csv`` or ``*.parquet`` never picks one up.  A run that
# was killed (SIGKILL, power loss) leaves them behind; the next run to the same target
# removes the ones whose process is gone (same host) or that are older than
# :data:`STALE_AFTER_S` (any host, e.g. on a shared disk).

#: kinds of temporary names
TEMP_KINDS = ("part", "building", "old")
#: a temporary name of another host is stale after this long [s]
STALE_AFTER_S = 24 * 3600.0
_SIDE_FILES = ("-wal", "-shm", "-journal")  # SQLite (GeoPackage) side files


def _host_tag() -> str:
    import hashlib
    import socket

    return hashlib.sha256(socket.gethostname().encode("utf-8", "replace")).hexdigest()[:8]


def temp_prefix(target: str | Path) -> str:
    """The start of every temporary name this process gives for ``target``."""
    import os

    return f".{Path(target).name}.neve-{_host_tag()}-{os.getpid()}-"


def _temp_pattern(target: Path):
    import re

    kinds = "|".join(TEMP_KINDS)
    sides = "|".join(_SIDE_FILES)
    return re.compile(
        rf"^\.{re.escape(target.name)}\.neve-(?P<host>[0-9a-f]{{8}})-(?P<pid>\d+)-"
        rf"[A-Za-z0-9_]+\.(?P<kind>{kinds})(?:{sides})?$"
    )


def make_temp(target: str | Path, kind: str = "part", *, folder: bool = True) -> Path:
    """Create a temporary folder (or empty file) beside ``target``, named as described above."""
    import os
    import tempfile

    if kind not in TEMP_KINDS:
        raise ValueError(f"kind must be one of {TEMP_KINDS}")
    target = Path(target)
    prefix, suffix = temp_prefix(target), f".{kind}"
    if folder:
        return Path(tempfile.mkdtemp(prefix=prefix, suffix=suffix, dir=target.parent))
    fd, name = tempfile.mkstemp(prefix=prefix, suffix=suffix, dir=target.parent)
    os.close(fd)
    return Path(name)


def _process_gone(pid: int) -> bool:
    """True when no process ``pid`` runs on this host (never guessed on Windows)."""
    import os

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
    import shutil

    if path.is_dir() and not path.is_symlink():
        shutil.rmtree(path, ignore_errors=True)
    else:
        path.unlink(missing_ok=True)


def remove_stale(target: str | Path, *, now: float | None = None) -> list[Path]:
    """Remove the temporary names of ``target`` left by runs that died; return them.

    A name is stale when its process is gone (same host), or when it is older than
    :data:`STALE_AFTER_S`.  Only names of neve's own pattern for this very target are
    looked at.  A package that was put aside (``.old``) while it was being replaced
    is put back when the target is missing, so a killed ``--overwrite`` never loses it.
    """
    import os
    import time

    target = Path(target)
    folder = target.parent if str(target.parent) else Path(".")
    try:
        entries = list(os.scandir(folder))
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
        if m["kind"] == "old" and (path / "package").is_dir() and not target.exists():
            try:
                os.rename(path / "package", target)  # the replaced package comes back
            except OSError:
                continue
        _remove_path(path)
        removed.append(path)
    return removed


def publish(tmp: str | Path, target: str | Path, *, overwrite: bool, field: str = "output"):
    """Rename the complete ``tmp`` to ``target``; never replace an existing one unless asked.

    Without ``overwrite`` the rename cannot replace anything: a file is hard-linked into
    place (which fails if ``target`` exists), a folder is renamed (which fails onto a
    folder that is not empty); a target that appeared while neve was working (another
    run, another program) is an :class:`InputError` and is left as it is.
    """
    import errno
    import os

    tmp, target = Path(tmp), Path(target)
    appeared = InputError(
        field,
        f"{str(target)!r} appeared while neve was writing it (another run?); it was left as it is",
        "a new path, or --overwrite",
    )
    if overwrite:
        os.replace(tmp, target)
        return target
    if tmp.is_dir():
        try:
            os.rename(tmp, target)  # onto a missing or empty folder only
        except OSError as exc:
            if exc.errno in (errno.EEXIST, errno.ENOTEMPTY) or target.exists():
                raise appeared from None
            raise
        return target
    try:
        os.link(tmp, target)
    except FileExistsError:
        raise appeared from None
    except OSError:  # no hard links on this file system: check, then rename
        if target.exists() or target.is_symlink():
            raise appeared from None
        os.replace(tmp, target)
        return target
    tmp.unlink()
    return target
