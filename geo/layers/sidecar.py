"""The layer sidecar: ``<layer file>.toml`` with layer-wide metadata.

Every zone layer file (``zones.gpkg``, ``grid.tif`` ...) has a sidecar
named after it with ``.toml`` appended (``zones.gpkg.toml``).  It is
validated strictly: a missing file, a missing required key, an unknown key,
an unknown unit or an unreasonable tolerance is a :class:`SidecarError` (a
:class:`~neve.engine.errors.LayerError`) that names the key and what is accepted;
nothing is guessed.  The file is read as UTF-8, with or without a byte-order
mark.

Keys (docs/contract.md, "Sidecar"):

========================  ========  ==============================================
key                       required  meaning
========================  ========  ==============================================
``name``                  yes       short name of the layer
``jurisdiction``          yes       who publishes the map or table
``standard``              yes       e.g. ``"ASCE 7-16"``
``value_units``           yes       ``"psf"`` or ``"kPa"``
``elevation_units``       yes       ``"ft"`` or ``"m"``
``source``                yes       citation of the published map or table
``license``               yes       licence of the data
``date``                  yes       date of the published data (text or TOML date)
``boundary_tolerance_m``  no        default 100 [m]; 0 to 5000
``demo``                  no        default false; true for invented data
``quantity``              no        default ``"pg"`` (the column holding the value)
``study_mask``            no        raster only: companion mask file, nonzero = study
``risk_rasters``          no        raster ``pg`` layer of a per-risk edition (ASCE 7-22):
                                    a table ``{I = "file", II = ..., III = ..., IV = ...}``
                                    of one raster per risk category, beside the layer file
``notes``                 no        free text
========================  ========  ==============================================

Per risk category (ASCE 7-22).  A ``pg`` layer whose ``standard`` is one of
:data:`PER_RISK_STANDARDS` maps one value per risk category
(:data:`RISK_CATEGORIES`): vector columns ``pg_I`` .. ``pg_IV`` (and
``table_<cat>``, ``expr_<cat>``, ``pg_min_<cat>`` for the other rule kinds),
or, for a raster layer, ``risk_rasters``.

W2 layers.  A layer with ``quantity = "w2"`` maps the winter wind parameter
W2, a fraction from 0 to 1: its sidecar needs no ``value_units`` (when given,
it must be ``"fraction"``).
"""

from __future__ import annotations

import datetime as _dt
import tomllib
from pathlib import Path

from neve.engine.errors import LayerError
from neve.engine.standards import site_quantities
from neve.engine.units import FT_PER_M, KPA_PER_PSF

REQUIRED = (
    "name",
    "jurisdiction",
    "standard",
    "value_units",
    "elevation_units",
    "source",
    "license",
    "date",
)
OPTIONAL = {
    "boundary_tolerance_m": 100.0,
    "demo": False,
    "quantity": "pg",
    "study_mask": None,
    "risk_rasters": None,
    "notes": "",
}
#: risk categories of a per-risk layer, in order
RISK_CATEGORIES = ("I", "II", "III", "IV")
#: the registered standards (ids of :mod:`neve.engine.standards`) whose ground loads are
#: mapped once per risk category: a ``pg`` layer of an edition they take (their
#: ``layer_standards``) carries one value per category
PER_RISK_STANDARDS = ("asce7-22",)
#: the unit of a fraction (W2): the only ``value_units`` of a ``w2`` layer
FRACTION = "fraction"
#: quantities that are fractions (no value unit)
FRACTION_QUANTITIES = ("w2",)


def per_risk_editions() -> tuple[str, ...]:
    """The layer editions (sidecar ``standard`` strings) mapped per risk category."""
    from neve.engine.standards import find_standard

    out: list[str] = []
    for sid in PER_RISK_STANDARDS:
        std = find_standard(sid)
        if std is not None:
            out.extend(std.layer_standards)
    return tuple(out)


def is_per_risk(meta: dict) -> bool:
    """Whether a layer (its validated sidecar) maps ``pg`` once per risk category."""
    if meta.get("quantity", "pg") != "pg":
        return False
    from neve.engine.standards import find_standard

    for sid in PER_RISK_STANDARDS:
        std = find_standard(sid)
        if std is not None and std.accepts_layer(str(meta.get("standard", "")), "pg"):
            return True
    return False


#: accepted value units (canonical spelling) and their factor to psf
VALUE_UNITS = {"psf": 1.0, "kPa": 1.0 / KPA_PER_PSF}
#: accepted elevation units (canonical spelling) and their factor to ft
ELEVATION_UNITS = {"ft": 1.0, "m": FT_PER_M}
#: largest boundary tolerance accepted [m]
MAX_TOLERANCE_M = 5000.0
#: quantities a layer may map: those the registered standards need, by name
#: (:func:`neve.engine.standards.site_quantities`; ASCE 7-16 needs ``pg``)
QUANTITIES = site_quantities()


class SidecarError(LayerError):
    """A sidecar defect; :attr:`key` names the offending key (None: the file as a whole).

    :attr:`kind` is the problem kind ``neve layer check`` files it under:
    ``missing_sidecar``, ``units`` (an unknown ``value_units`` or
    ``elevation_units``) or ``sidecar`` (anything else: unknown or missing
    keys, wrong types, out-of-range values, TOML that does not parse).
    """

    def __init__(self, message: str, key: str | None = None, kind: str = "sidecar"):
        super().__init__(message)
        self.key = key
        self.kind = kind


def sidecar_path(layer_path: str | Path) -> Path:
    """The sidecar path of a layer file: the file name with ``.toml`` appended."""
    p = Path(layer_path)
    return p.with_name(p.name + ".toml")


def _unit(value: object, key: str, table: dict[str, float]) -> str:
    for canonical in table:
        if str(value).strip().lower() == canonical.lower():
            return canonical
    raise SidecarError(
        f"sidecar {key}: unknown unit {value!r}; accepted: {', '.join(table)}", key, "units"
    )


def validate_meta(raw: dict, where: str = "sidecar") -> dict:
    """Validate a sidecar mapping and return it with every key filled in.

    Parameters
    ----------
    raw : dict
        The parsed TOML.
    where : str
        Name of the file, for messages.

    Returns
    -------
    dict
        All of :data:`REQUIRED` and :data:`OPTIONAL`, with canonical units,
        ``date`` as ISO text, ``boundary_tolerance_m`` as float and ``demo``
        as bool.

    Raises
    ------
    SidecarError
        Naming the first offending key and what is accepted.
    """
    if not isinstance(raw, dict):
        raise SidecarError(f"{where}: not a TOML table")
    unknown = sorted(set(raw) - set(REQUIRED) - set(OPTIONAL))
    if unknown:
        raise SidecarError(
            f"{where}: unknown key(s) {', '.join(unknown)}; accepted: "
            + ", ".join(list(REQUIRED) + list(OPTIONAL)),
            unknown[0],
        )
    fraction = raw.get("quantity") in FRACTION_QUANTITIES
    if fraction:
        unit = raw.get("value_units", FRACTION)
        if str(unit).strip().lower() != FRACTION:
            raise SidecarError(
                f"{where} value_units: {unit!r} for quantity {raw.get('quantity')!r}, a fraction; "
                f"accepted: no value_units (or {FRACTION!r})",
                "value_units",
                "units",
            )
        raw = dict(raw, value_units="psf")  # validated below as a unit, then set to fraction
    missing = [k for k in REQUIRED if k not in raw]
    if missing:
        raise SidecarError(f"{where}: missing required key(s) {', '.join(missing)}", missing[0])
    meta = dict(OPTIONAL)
    meta.update(raw)
    for key in ("name", "jurisdiction", "standard", "source", "license", "quantity", "notes"):
        if not isinstance(meta[key], str):
            raise SidecarError(f"{where} {key}: {meta[key]!r} is not text; accepted: a string", key)
    for key in ("name", "jurisdiction", "standard", "source"):
        if not meta[key].strip():
            raise SidecarError(f"{where} {key}: empty; accepted: a non-empty string", key)
    date = meta["date"]
    if isinstance(date, (_dt.date, _dt.datetime)):
        meta["date"] = date.isoformat()
    elif not isinstance(date, str):
        raise SidecarError(
            f"{where} date: {date!r} is not a date; accepted: 2024-05-01 or text", "date"
        )
    try:
        meta["value_units"] = _unit(meta["value_units"], "value_units", VALUE_UNITS)
        meta["elevation_units"] = _unit(meta["elevation_units"], "elevation_units", ELEVATION_UNITS)
    except SidecarError as exc:
        raise SidecarError(
            f"{where} {str(exc).removeprefix('sidecar ')}", exc.key, exc.kind
        ) from None
    tol = meta["boundary_tolerance_m"]
    if isinstance(tol, bool) or not isinstance(tol, (int, float)):
        raise SidecarError(
            f"{where} boundary_tolerance_m: {tol!r} is not a number; "
            f"accepted: metres from 0 to {MAX_TOLERANCE_M:g}",
            "boundary_tolerance_m",
        )
    if not 0.0 <= float(tol) <= MAX_TOLERANCE_M:
        raise SidecarError(
            f"{where} boundary_tolerance_m: {tol!r} is out of range; "
            f"accepted: metres from 0 to {MAX_TOLERANCE_M:g}",
            "boundary_tolerance_m",
        )
    meta["boundary_tolerance_m"] = float(tol)
    if fraction:
        meta["value_units"] = FRACTION
    if not isinstance(meta["demo"], bool):
        raise SidecarError(f"{where} demo: {meta['demo']!r} is not true or false", "demo")
    if meta["quantity"] not in QUANTITIES:
        raise SidecarError(
            f"{where} quantity: {meta['quantity']!r} is not supported yet; "
            f"accepted: {', '.join(QUANTITIES)}",
            "quantity",
        )
    mask = meta["study_mask"]
    if mask is not None and (not isinstance(mask, str) or not mask.strip()):
        raise SidecarError(
            f"{where} study_mask: {mask!r}; accepted: a raster file name", "study_mask"
        )
    rr = meta["risk_rasters"]
    if rr is not None:
        if not is_per_risk(meta):
            raise SidecarError(
                f"{where} risk_rasters: only a pg layer of {', '.join(per_risk_editions())} maps "
                "values per risk category; accepted: no risk_rasters here",
                "risk_rasters",
            )
        if (
            not isinstance(rr, dict)
            or sorted(rr) != sorted(RISK_CATEGORIES)
            or not all(isinstance(v, str) and v.strip() for v in rr.values())
        ):
            raise SidecarError(
                f"{where} risk_rasters: {rr!r}; accepted: a table of one raster file name per "
                'risk category, {I = "pg_I.tif", II = ..., III = ..., IV = ...}',
                "risk_rasters",
            )
        meta["risk_rasters"] = {c: rr[c].strip() for c in RISK_CATEGORIES}
    return meta


def read_sidecar(layer_path: str | Path) -> dict:
    """Read and validate the sidecar of ``layer_path``.

    Raises
    ------
    SidecarError
        When the sidecar is missing, is not valid UTF-8 TOML, or fails
        :func:`validate_meta`.
    """
    side = sidecar_path(layer_path)
    if not side.is_file():
        raise SidecarError(
            f"layer {str(layer_path)!r} has no sidecar: expected {side.name!r} beside it "
            f"with keys {', '.join(REQUIRED)}",
            kind="missing_sidecar",
        )
    return read_sidecar_file(side)


def read_sidecar_file(side: str | Path) -> dict:
    """Read and validate a sidecar TOML file (``--layer-meta`` of a database layer)."""
    side = Path(side)
    if not side.is_file():
        raise SidecarError(f"sidecar {side.name!r} not found; accepted: a TOML file with keys "
                           f"{', '.join(REQUIRED)}", kind="missing_sidecar")  # fmt: skip
    try:
        # utf-8-sig: a byte-order mark written by some editors is not part of the TOML
        text = side.read_bytes().decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise SidecarError(
            f"sidecar {side.name!r} is not UTF-8 text (byte {exc.start}); accepted: UTF-8 TOML"
        ) from None
    except OSError as exc:
        raise SidecarError(f"sidecar {side.name!r} cannot be read ({exc.strerror})") from None
    try:
        raw = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise SidecarError(f"sidecar {side.name!r} is not valid TOML ({exc})") from None
    return validate_meta(raw, f"sidecar {side.name!r}")
