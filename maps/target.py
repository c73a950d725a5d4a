"""Where a calculation package may be written (no heavy imports).

A package folder carries a marker file, :data:`MARKER`.  An existing folder
is replaced (with ``overwrite``) only when it is empty or is itself a neve
package, so ``--package . --overwrite`` can never wipe a folder of the
user's own files.

Temporary names, the no-replace rename and the clean-up of killed runs are
:mod:`neve.safe_write`'s (the one module every writer uses); they are named
here too for the code that imported them from this module.
"""

from __future__ import annotations

from pathlib import Path

from neve.engine.errors import InputError
from neve.safe_write import (  # noqa: F401  (re-exported)
    STALE_AFTER_S,
    TEMP_KINDS,
    _host_tag,
    _process_gone,
    make_temp,
    publish,
    remove_stale,
    temp_prefix,
)
from neve.safe_write import check_target as _check_target

#: the marker file every package folder carries
MARKER = ".neve-package"
#: the names a package folder holds (a folder holding only these is a package
#: written before the marker existed)
PACKAGE_NAMES = {
    MARKER, "report.html", "report.pdf", "site.json", "site_map.html",
    "static_map.png", "static_map.svg", "diagrams",
}  # fmt: skip


def is_package(folder: str | Path) -> bool:
    """True when ``folder`` is a neve package (it carries the marker, or holds only package names)."""
    folder = Path(folder)
    if (folder / MARKER).is_file():
        return True
    return {p.name for p in folder.iterdir()} <= PACKAGE_NAMES


def package_replaceable(folder: Path) -> None:
    """Raise :class:`InputError` unless the existing, non-empty ``folder`` is a neve package."""
    if not is_package(folder):
        raise InputError(
            "package",
            f"folder {str(folder)!r} exists, is not empty and is not a neve package",
            "a new or empty folder, or a previous neve package with --overwrite",
        )


def check_package_target(dest: str | Path, overwrite: bool, *, parents: bool = True) -> Path:
    """Raise :class:`InputError` unless a package may be written to ``dest``.

    A new or empty folder always may; a previous neve package only with
    ``overwrite``; any other folder (or a file) never.  A missing parent folder
    is created by :func:`neve.maps.package.write_package`.
    """
    return _check_target(
        dest, overwrite=overwrite, field="package", folder=True,
        replaceable=package_replaceable, parents=parents,
    )  # fmt: skip
