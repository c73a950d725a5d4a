"""Where a calculation package may be written (no heavy imports).

A package folder carries a marker file, :data:`MARKER`.  An existing folder
is replaced (with ``overwrite``) only when it is empty or is itself a neve
package, so ``--package . --overwrite`` can never wipe a folder of the
user's own files.
"""

from __future__ import annotations

from pathlib import Path

from engine.errors import InputError

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
