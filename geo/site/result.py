"""The typed result of site resolution: arrays of codes, bits and values.

:class:`Resolution` is what :func:`neve.geo.site.resolve.resolve` returns for n
sites: status codes, flag bits, the resolved values per quantity, the
governing layer and zone, the elevation used, the neighbouring values, the
elevation alternatives and the provenance of the layers.  It is turned into
text only at the edges: :meth:`Resolution.to_frame` (the columns of
:func:`neve.geo.site.resolve.resolve_points` and, through
:mod:`neve.geo.screen.run`, of ``neve screen``), the ``ground`` object of
``neve site`` (:mod:`neve.geo.site.one`) and :func:`flags_text`.

Codes
-----
Status (:data:`STATUSES`, int8): 0 ``ok``, 1 ``provisional``, 2
``study_required``, 3 ``no_data``, 4 ``error``; -1 means "none" where a
status is optional (``alt_status`` of a site without an elevation
alternative).

Elevation source (:data:`ELEVATION_ORIGINS`, int8): 0 ``input``, 1 ``dem``,
2 ``none``; -1 for "none" in ``alt_source``.

Flags (:data:`FLAG_TABLE`, uint64): one bit per flag, named and placed in
that table only.  Flags stay bits from the look-up to the output; names are
made from bits by :func:`flag_names` / :func:`flags_text`, and the names
other parts of neve hand over (the roof engine's flags) become bits by
:func:`bits_of`.  No flag text is ever parsed back into bits.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field, fields

import numpy as np
import pandas as pd

from neve.engine.errors import InputError, NeveError
from neve.engine.units import KPA_PER_PSF, M_PER_FT

#: status names by code
STATUSES = ("ok", "provisional", "study_required", "no_data", "error")
OK, PROVISIONAL, STUDY, NO_DATA, ERROR = range(5)
#: where an elevation came from, by code
ELEVATION_ORIGINS = ("input", "dem", "none")
FROM_INPUT, FROM_DEM, FROM_NONE = range(3)


@dataclass(frozen=True)
class Flag:
    """One flag: its name, its bit position, who sets it and what it says."""

    name: str
    bit: int
    kind: str  # "site" (resolution), "row" (screening rows), "roof" (roof engine), "note"
    meaning: str

    @property
    def mask(self) -> int:
        return 1 << self.bit

    @property
    def shown(self) -> bool:
        """Notes steer the messages and are never printed as flags."""
        return self.kind != "note"


#: every flag neve sets on a site or a row, with its bit (the one place bits are assigned)
FLAG_TABLE: tuple[Flag, ...] = (
    Flag("study_required", 0, "site", "the map gives no design value: a site-specific case study"),
    Flag("above_elevation_limit", 1, "site", "the site lies above the zone's elevation limit"),
    Flag("elevation_needed", 2, "site", "the zone's rule or limit needs an elevation not given"),
    Flag("outside_layer", 3, "site", "the site lies in no zone of the layer"),
    Flag("near_boundary", 4, "site", "a zone of another value lies within the tolerance"),
    Flag("overlapping_zones", 5, "site", "the site lies in overlapping zones"),
    Flag("dem_nodata", 6, "site", "the DEM has no value at the site"),
    Flag("coordinates_suspect", 7, "site", "swapped coordinates or 0,0"),
    Flag("elevation_mismatch", 8, "site", "the given elevation and the DEM disagree"),
    Flag("demo_data", 9, "site", "an invented demo layer was used"),
    Flag("study_area_nearby", 10, "site", "a zone requiring a study lies within the tolerance"),
    Flag("dem_implausible", 11, "site", "the DEM value is no land elevation"),
    Flag(
        "roof_standard_unsupported", 12, "site", "the layer's standard cannot feed the roof engine"
    ),
    Flag("non_finite_value", 13, "site", "a reported value was not finite and is null"),
    Flag("w2_study_required", 14, "site", "the W2 layer requires a site-specific study here"),
    Flag("w2_missing", 15, "site", "W2 layers were given but give no usable W2 value here"),
    Flag("duplicate_site_id", 16, "row", "another row has the same site_id"),
    Flag("multiline_field", 17, "row", "a quoted cell of the record holds line breaks"),
    Flag("cell_escaped", 18, "row", "a cell was neutralised for a spreadsheet output"),
    Flag("cell_truncated", 19, "row", "a cell was cut to fit the output format"),
    Flag("exceeds_record", 20, "row", "today's uniform roof load is above the load on record"),
    Flag(
        "location_approximate",
        21,
        "site",
        "the site was located at a postal code or place centroid: its uncertainty circle was searched",
    ),  # fmt: skip
    Flag(
        "edition_mismatch",
        22,
        "site",
        "the governing layer is of another edition than --standard: no roof loads from it",
    ),  # fmt: skip
    Flag("shape_assumed", 24, "roof", "no roof shape given: flat assumed"),
    Flag("exposure_assumed", 25, "roof", "Ce from the default terrain and exposure"),
    Flag("thermal_assumed", 26, "roof", "Ct from the default thermal condition"),
    Flag("risk_assumed", 27, "roof", "Is from the default risk category"),
    Flag("rain_on_snow_eave_to_ridge_unknown", 28, "roof", "rain-on-snow applied with W unknown"),
    Flag("roof_cases_not_screened", 29, "roof", "load cases beyond the uniform ones may govern"),
    Flag("slippery_line_not_used", 30, "roof", "slippery-line conditions not stated"),
    Flag("unobstructed_unstated", 31, "roof", "obstruction of sliding not stated"),
    Flag("ventilation_unstated", 32, "roof", "ventilation of the roof not stated"),
    Flag("r_value_unstated", 33, "roof", "the roof's R-value not stated"),
    Flag("ice_dam_conditions_unstated", 34, "roof", "the ice-dam waiver conditions not stated"),
    Flag("members_unstated", 35, "roof", "prismatic members not stated"),
    Flag("upper_pf_assumed", 36, "roof", "the upper roof's pf taken as this roof's"),
    Flag("w2_needed", 37, "roof", "cases that need the winter wind parameter W2 not computed"),
    Flag("thermal_upper_bound", 38, "roof", "Ct is the upper bound of the heated-roof table"),
    Flag("eave_to_ridge_needed", 39, "roof", "unbalanced cases that need W not computed"),
    Flag("ponding_check_required", 40, "roof", "slope under 1/4 on 12: check ponding instability"),
    # EN 1991-1-3 (issue 13)
    Flag("topography_assumed", 41, "roof", "Ce from the default (normal) topography"),
    Flag("ct_reduced", 42, "roof", "a thermal coefficient below 1.0 given: to be justified"),
    Flag("snow_retention_unstated", 43, "roof", "whether snow can slide off not stated"),
    Flag("upper_slope_unstated", 44, "roof", "the upper roof's slope not given: no sliding snow"),
    Flag("altitude_unstated", 45, "roof", "site altitude not given: overhanging snow applied"),
    Flag("demo_parameters", 46, "roof", "the parameter set is invented (demo)"),
    # issue 12 (curved roofs); bits from 52 down, so that other roof flags can take 39 up
    Flag("eave_abutment_unstated", 52, "roof", "curved roof: abutment at the eave not stated"),
    # issue 14: an approximate location's circle crosses an elevation rule change (bits 41-46
    # are taken by the EN 1991-1-3 roof flags on their branch; 52 by curved roofs)
    Flag(
        "elevation_rule_within_radius",
        53,
        "site",
        "the zone's elevation rule gives another result within the location circle (DEM min-max)",
    ),  # fmt: skip
    Flag("bad_coordinates", 56, "note", "coordinates missing or out of range: no look-up"),
    Flag("near_unknown", 57, "note", "a zone within the tolerance has no usable value"),
    Flag("near_valued", 58, "note", "a zone within the tolerance has another usable value"),
)
#: flag name -> its bit mask
BIT: dict[str, int] = {f.name: f.mask for f in FLAG_TABLE}
#: the flags that resolution sets, in bit order (the names printed in ``flags``)
FLAGS = tuple(f.name for f in FLAG_TABLE if f.kind == "site" and f.bit < 12)
#: every bit that is printed as a flag
SHOWN = sum(f.mask for f in FLAG_TABLE if f.shown)
#: flags that make a usable value provisional
LIMITING = (
    BIT["near_boundary"]
    | BIT["overlapping_zones"]
    | BIT["elevation_needed"]
    | BIT["coordinates_suspect"]
    | BIT["elevation_mismatch"]
    | BIT["study_area_nearby"]
    | BIT["elevation_rule_within_radius"]
)
#: shown flags in the order they are printed (by name)
_BY_NAME = tuple(sorted((f for f in FLAG_TABLE if f.shown), key=lambda f: f.name))


def bits_of(names: Iterable[str]) -> int:
    """The bit mask of flag ``names`` (names other parts hand over, e.g. the roof engine's)."""
    bits = 0
    for name in names:
        try:
            bits |= BIT[name]
        except KeyError:
            raise NeveError(f"flag {name!r} is not in neve.geo.site.result.FLAG_TABLE") from None
    return bits


def flag_names(bits: int) -> list[str]:
    """The names of the shown flags set in ``bits``, sorted by name."""
    b = int(bits)
    return [f.name for f in _BY_NAME if b & f.mask]


def flags_text(bits: np.ndarray) -> np.ndarray:
    """';'-joined flag names per site (object array), made once per distinct combination."""
    bits = np.asarray(bits, dtype=np.uint64) & np.uint64(SHOWN)
    codes, uniques = pd.factorize(bits, sort=False)
    texts = np.array([";".join(flag_names(u)) for u in uniques] + [""], dtype=object)
    return texts[codes]


@dataclass(frozen=True)
class Provenance:
    """Where a layer's values come from (the ``layer_*`` of a result)."""

    name: str
    source: str
    sha256: str
    standard: str
    quantity: str = "pg"

    @classmethod
    def of(cls, layer) -> Provenance:
        m = layer.meta
        return cls(
            str(m["name"]),
            str(m["source"]),
            str(layer.sha256),
            str(m.get("standard", "")),
            str(m.get("quantity", "pg")),
        )


#: the columns of :meth:`Resolution.to_frame`, in order
COLUMNS = [
    "status", "pg_psf", "pg_kpa", "zone_id", "zone_ids", "rule", "flags", "message",
    "elevation_ft", "elevation_m", "elevation_source", "dem_elevation_ft",
    "distance_to_other_m", "neighbour_values_psf", "layer_name", "layer_sha256", "other_layers",
    "alt_elevation_source", "alt_elevation_ft", "alt_status", "alt_pg_psf", "alt_zone_id",
]  # fmt: skip
#: the unit each quantity's values travel in inside geo (loads in psf, EN 1991-1-3's sk too:
#: the edges give them in kPa and hand the EN engine kPa)
UNITS = {"pg": "psf", "sk": "psf", "w2": "fraction"}


def blank_like(v: np.ndarray, n: int) -> np.ndarray:
    """n entries of ``v``'s dtype meaning "none": NaN, -1 (codes), 0 (bits) or ""."""
    v = np.asarray(v)
    if v.dtype.kind == "f":
        return np.full(n, np.nan, dtype=v.dtype)
    if v.dtype.kind == "i":
        return np.full(n, -1, dtype=v.dtype)
    if v.dtype.kind in "ub":
        return np.zeros(n, dtype=v.dtype)
    return np.full(n, "", dtype=object)


def _texts(table: Sequence[str], codes: np.ndarray, none: str = "") -> np.ndarray:
    """Names of ``codes`` in ``table`` (object array); code -1 gives ``none``."""
    return np.array([*table, none], dtype=object)[np.asarray(codes, dtype=np.intp)]


def _same(a: np.ndarray, b: np.ndarray) -> bool:
    if a.dtype != b.dtype or a.shape != b.shape:
        return False
    return bool(np.array_equal(a, b, equal_nan=a.dtype.kind == "f"))


@dataclass(eq=False)
class Resolution:
    """n resolved sites as arrays (one entry per site, in input order).

    Attributes
    ----------
    status : numpy.ndarray of int8
        Code into :data:`STATUSES`.
    flags : numpy.ndarray of uint64
        Bits of :data:`FLAG_TABLE`.
    values : dict of str to numpy.ndarray
        Resolved value per quantity in the standard's units (:data:`UNITS`:
        ``{"pg": [psf]}``); NaN where the status gives no value.
    layer : numpy.ndarray of intp
        Index of the governing layer into ``layers``; -1 for none.
    zone_id, zone_ids, rule : numpy.ndarray of object
        Governing zone, every zone at the site (';'-joined) and its rule; "" for none.
    elevation_ft : numpy.ndarray of float
        Elevation used [ft]; NaN for none.
    elevation_source : numpy.ndarray of int8
        Code into :data:`ELEVATION_ORIGINS`.
    dem_elevation_ft : numpy.ndarray of float
        The DEM's elevation at the site [ft].
    distance_to_other_m : numpy.ndarray of float
        Distance to the nearest zone of another value [m].
    neighbour_values : numpy.ndarray of object
        ';'-joined values [psf] (or states) of the zones within the tolerance.
    other_layers : numpy.ndarray of object
        ';'-joined ``name=value`` of the layers that do not govern.
    message : numpy.ndarray of object
        What the result means, in words.
    alt_source, alt_elevation_ft, alt_status, alt_values, alt_zone_id
        Where a given elevation and the DEM disagree, the result at the
        elevation that does not govern (codes -1 / NaN / "" elsewhere).
    layers : tuple of Provenance
        The layers, most local first (``layer`` indexes them).
    detail : object, optional
        The look-up detail of :func:`neve.geo.site.resolve.resolve` with
        ``keep_detail=True`` (for one site's steps); never concatenated or
        compared.
    """

    status: np.ndarray
    flags: np.ndarray
    values: dict
    layer: np.ndarray
    zone_id: np.ndarray
    zone_ids: np.ndarray
    rule: np.ndarray
    elevation_ft: np.ndarray
    elevation_source: np.ndarray
    dem_elevation_ft: np.ndarray
    distance_to_other_m: np.ndarray
    neighbour_values: np.ndarray
    other_layers: np.ndarray
    message: np.ndarray
    alt_source: np.ndarray
    alt_elevation_ft: np.ndarray
    alt_status: np.ndarray
    alt_values: dict
    alt_zone_id: np.ndarray
    layers: tuple = ()
    detail: object = field(default=None, repr=False, compare=False)
    #: further per-site arrays by name (the W2 look-up: ``w2_status``, ``w2_flags``,
    #: ``w2_zone_id``, ``w2_layer``; see :func:`neve.geo.site.resolve.resolve`)
    extra: dict = field(default_factory=dict)

    def __len__(self) -> int:
        return int(self.status.size)

    def __eq__(self, other) -> bool:
        """Equal when every array (NaN equal to NaN) and the layers are; the detail is not compared."""
        if not isinstance(other, Resolution) or self.layers != other.layers:
            return NotImplemented if not isinstance(other, Resolution) else False
        for (_, a), (_, b) in zip(self._arrays(), other._arrays(), strict=True):
            if isinstance(a, dict):
                if set(a) != set(b) or not all(_same(a[q], b[q]) for q in a):
                    return False
            elif not _same(a, b):
                return False
        return True

    # ------------------------------------------------------------------ building
    @classmethod
    def blank(cls, n: int, layers: Sequence[Provenance] = (), quantities=("pg",)) -> Resolution:
        """n sites with no look-up: status ``error``, no flags, no values."""
        text = np.full(n, "", dtype=object)
        nan = np.full(n, np.nan)
        return cls(
            status=np.full(n, ERROR, dtype=np.int8),
            flags=np.zeros(n, dtype=np.uint64),
            values={q: nan.copy() for q in quantities},
            layer=np.full(n, -1, dtype=np.intp),
            zone_id=text.copy(),
            zone_ids=text.copy(),
            rule=text.copy(),
            elevation_ft=nan.copy(),
            elevation_source=np.full(n, FROM_NONE, dtype=np.int8),
            dem_elevation_ft=nan.copy(),
            distance_to_other_m=nan.copy(),
            neighbour_values=text.copy(),
            other_layers=text.copy(),
            message=text.copy(),
            alt_source=np.full(n, -1, dtype=np.int8),
            alt_elevation_ft=nan.copy(),
            alt_status=np.full(n, -1, dtype=np.int8),
            alt_values={q: nan.copy() for q in quantities},
            alt_zone_id=text.copy(),
            layers=tuple(layers),
        )

    def _arrays(self):
        for f in fields(self):
            if f.name not in ("layers", "detail"):
                yield f.name, getattr(self, f.name)

    @classmethod
    def concat(cls, parts: Sequence[Resolution]) -> Resolution:
        """One result of the parts, in order (they must share their layers)."""
        parts = list(parts)
        if not parts:
            raise NeveError("no resolution results to concatenate")
        first = parts[0]
        if any(p.layers != first.layers for p in parts[1:]):
            raise NeveError("resolution results of different layers cannot be concatenated")
        if len(parts) == 1:
            return first
        out = {}
        for name, value in first._arrays():
            if isinstance(value, dict):
                out[name] = {q: np.concatenate([p.__dict__[name][q] for p in parts]) for q in value}
            else:
                out[name] = np.concatenate([p.__dict__[name] for p in parts])
        return cls(**out, layers=first.layers)

    def placed(self, rows: np.ndarray, n: int) -> Resolution:
        """A result for ``n`` rows with these sites at ``rows``, the others :meth:`blank`."""
        rows = np.asarray(rows, dtype=np.intp)
        if rows.size != len(self):
            raise NeveError(f"{rows.size} rows for {len(self)} resolved sites")
        if n == len(self) and np.array_equal(rows, np.arange(n)):
            return self
        out = Resolution.blank(n, self.layers, tuple(self.values))
        for name, value in self._arrays():
            target = getattr(out, name)
            if isinstance(value, dict):
                for q, v in value.items():
                    if q not in target:
                        target[q] = blank_like(v, n)
                    target[q][rows] = v
            else:
                target[rows] = value
        return out

    def assign(self, pos: np.ndarray, part: Resolution) -> None:
        """Put ``part``'s sites into this result at positions ``pos`` (the same layers)."""
        for name, value in part._arrays():
            target = getattr(self, name)
            if isinstance(value, dict):
                for q, v in value.items():
                    if q in target:
                        target[q][pos] = v
            else:
                target[pos] = value

    def without_detail(self) -> Resolution:
        """The same result without the look-up detail (what travels between processes)."""
        return Resolution(**dict(self._arrays()), layers=self.layers)

    # ------------------------------------------------------------------ edges
    def value(self, quantity: str = "pg") -> np.ndarray:
        """The resolved values of ``quantity`` (NaN everywhere when no layer maps it)."""
        got = self.values.get(quantity)
        return np.full(len(self), np.nan) if got is None else got

    def status_text(self) -> np.ndarray:
        return _texts(STATUSES, self.status)

    def elevation_source_text(self) -> np.ndarray:
        return _texts(ELEVATION_ORIGINS, self.elevation_source)

    def layer_field(self, name: str) -> np.ndarray:
        """``name`` (a :class:`Provenance` field) of each site's governing layer ("" for none)."""
        return _texts([getattr(p, name) for p in self.layers], self.layer)

    def to_frame(self, columns: Sequence[str] | None = None) -> pd.DataFrame:
        """The resolver's table: one row per site, the :data:`COLUMNS` (or ``columns``)."""
        want = list(COLUMNS if columns is None else columns)
        pg = self.value("pg")
        make = {
            "status": self.status_text,
            "pg_psf": lambda: pg,
            "pg_kpa": lambda: pg * KPA_PER_PSF,
            "zone_id": lambda: self.zone_id,
            "zone_ids": lambda: self.zone_ids,
            "rule": lambda: self.rule,
            "flags": lambda: flags_text(self.flags),
            "message": lambda: self.message,
            "elevation_ft": lambda: self.elevation_ft,
            "elevation_m": lambda: self.elevation_ft * M_PER_FT,
            "elevation_source": self.elevation_source_text,
            "dem_elevation_ft": lambda: self.dem_elevation_ft,
            "distance_to_other_m": lambda: self.distance_to_other_m,
            "neighbour_values_psf": lambda: self.neighbour_values,
            "layer_name": lambda: self.layer_field("name"),
            "layer_sha256": lambda: self.layer_field("sha256"),
            "other_layers": lambda: self.other_layers,
            "alt_elevation_source": lambda: _texts(ELEVATION_ORIGINS, self.alt_source),
            "alt_elevation_ft": lambda: self.alt_elevation_ft,
            "alt_status": lambda: _texts(STATUSES, self.alt_status),
            "alt_pg_psf": lambda: self.alt_values.get("pg", np.full(len(self), np.nan)),
            "alt_zone_id": lambda: self.alt_zone_id,
            # on request only (not in COLUMNS): sk of EN 1991-1-3 layers (kPa first), and
            "sk_kpa": lambda: self.value("sk") * KPA_PER_PSF,
            "sk_psf": lambda: self.value("sk"),
            # the W2 look-up (ASCE 7-22 W2 layers)
            "w2": lambda: self.value("w2"),
            "w2_zone_id": lambda: self.extra.get("w2_zone_id", np.full(len(self), "", object)),
            "w2_flags": lambda: flags_text(
                self.extra.get("w2_flags", np.zeros(len(self), np.uint64))
            ),
        }
        unknown = [c for c in want if c not in make]
        if unknown:
            raise InputError("columns", f"no resolver column {unknown[0]!r}",
                             ", ".join([*COLUMNS, "sk_kpa", "sk_psf", "w2", "w2_zone_id",
                                        "w2_flags"]))  # fmt: skip
        # object columns stay object (no per-row conversion to string dtype for big portfolios)
        cols = {}
        for c in want:
            v = np.asarray(make[c]())
            cols[c] = pd.Series(v, dtype=object if v.dtype == object else v.dtype, copy=False)
        return pd.DataFrame(cols, copy=False)

    def row(self, i: int = 0) -> dict:
        """Site ``i`` as a dict of :meth:`to_frame`'s columns."""
        one = self.take(np.array([i]))
        return one.to_frame().iloc[0].to_dict()

    def take(self, idx: np.ndarray) -> Resolution:
        """The sites ``idx`` (an index array), in that order, without the detail."""
        idx = np.asarray(idx, dtype=np.intp)
        out = {}
        for name, value in self._arrays():
            out[name] = (
                {q: v[idx] for q, v in value.items()} if isinstance(value, dict) else value[idx]
            )
        return Resolution(**out, layers=self.layers)
