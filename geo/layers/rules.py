"""Zone rules: how a zone's row gives a ground snow load at a site elevation.

The rules (docs/contract.md, "Vector columns and rules"):

``fixed``
    The mapped value in the layer's value column (``pg``).
``study``
    No mapped value; a site-specific case study is required.
``elevation_table``
    Piecewise-linear interpolation in a JSON list of ``[elevation, value]``
    pairs with strictly increasing elevation.  Below the first point the
    first value holds; above the last point a study is required.
``formula``
    A safe arithmetic expression (:mod:`neve.geo.layers.formula`) in ``A`` (site elevation)
    and the row's numeric columns.

Any rule may carry ``elev_max`` (above it a study is required) and
``pg_min`` (a floor on the result; ``sk_min`` in an ``sk`` layer).  Elevations are in the layer's
``elevation_units`` and values in its ``value_units``.

Every value a layer can produce (``pg``, ``pg_min``, table points, formula
results) must lie between 0 and the plausibility bound of
:func:`plausible_limit` (2000 psf, 95.8 kPa): a mapped value outside it is a
unit or data-entry error, never a ground snow load.  A zone whose geometry
is invalid (a self-intersecting ring, say) is defective too: which side of
the crossing belongs to the zone is not knowable, so its sites get status
``error`` rather than a value from a repaired guess.

:class:`ZoneTable` parses the rows once, recording every defect as a
problem (``neve layer check`` lists them; a site in a defective zone gets
status ``error``); :func:`evaluate` works on arrays of (zone, elevation)
pairs so that a portfolio is evaluated in a few numpy passes.
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from neve.engine.errors import LayerError
from neve.engine.roof_spec import PG_MAX_PSF
from neve.geo.layers.formula import MAX_MAGNITUDE, Expr, ExpressionError, compile_expr

RULES = ("fixed", "study", "elevation_table", "formula")
RULE_CODE = {name: i for i, name in enumerate(RULES)}
BAD_RULE = -1

# states of one (site, zone) evaluation
OK = 0  #: a value was found
STUDY = 1  #: the zone requires a site-specific study
ABOVE = 2  #: the site is above elev_max or the end of the table: study required
NEED_ELEV = 3  #: the rule needs an elevation and none is known
BAD = 4  #: the zone's row is defective (see ZoneTable.problems)
UNCHECKED = 5  #: a value exists but elev_max could not be checked (no elevation)
NUMERIC = 6  #: the rule gave no finite number from 0 to the plausibility bound at this site

#: columns with a meaning of their own (never treated as formula variables)
RESERVED = {"zone_id", "rule", "table", "expr", "source", "note", "geometry"}
#: per risk category (ASCE 7-22 layers), the table and expression columns are ``table_<cat>``
#: and ``expr_<cat>``: text, never formula variables
RESERVED |= {f"{c}_{k}" for c in ("table", "expr") for k in ("I", "II", "III", "IV")}


#: the floor column of a quantity's rules where it is not ``pg_min`` (an sk layer: ``sk_min``)
FLOOR_COLUMNS = {"sk": "sk_min"}


def floor_column(quantity: str = "pg") -> str:
    """The column of a rule's floor in a layer of ``quantity``: ``pg_min``, ``sk_min`` for sk.

    >>> floor_column("pg"), floor_column("sk")
    ('pg_min', 'sk_min')
    """
    return FLOOR_COLUMNS.get(quantity, "pg_min")


class LayerValueError(LayerError, ValueError):
    """A cell of a zone layer is not a usable value (a bad number or elevation table)."""


def _clean_text(value) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return ""
    return str(value).strip()


def _opt_float(value) -> float:
    """A float, NaN for missing; raises ValueError (LayerValueError) for text that is not a number."""
    if value is None:
        return math.nan
    if isinstance(value, str):
        if not value.strip():
            return math.nan
        return float(value)
    if isinstance(value, bool):
        raise LayerValueError("a boolean is not a number")
    return float(value)


def parse_table(value) -> tuple[np.ndarray, np.ndarray]:
    """Parse an ``elevation_table`` cell into elevation and value arrays.

    Raises
    ------
    LayerValueError
        (a ``ValueError`` too) When the text is not a JSON list of at least two ``[elevation, value]``
        number pairs with strictly increasing elevation and values of zero or more.
    """
    text = _clean_text(value)
    if not text:
        raise LayerValueError("the table is missing")
    try:
        pairs = json.loads(text)
    except json.JSONDecodeError as exc:
        raise LayerValueError(f"the table is not JSON ({exc.msg})") from None
    if not isinstance(pairs, list) or len(pairs) < 2:
        raise LayerValueError("the table must be a list of at least two [elevation, value] pairs")
    elev, vals = [], []
    for pair in pairs:
        if (
            not isinstance(pair, list)
            or len(pair) != 2
            or not all(isinstance(x, (int, float)) and not isinstance(x, bool) for x in pair)
            or not all(math.isfinite(x) for x in pair)
        ):
            raise LayerValueError(f"entry {pair!r} is not an [elevation, value] pair of numbers")
        elev.append(float(pair[0]))
        vals.append(float(pair[1]))
    e, v = np.array(elev), np.array(vals)
    if np.any(np.diff(e) <= 0):
        raise LayerValueError("elevations in the table are not strictly increasing")
    if np.any(v < 0):
        raise LayerValueError("the table has a negative value")
    return e, v


@dataclass
class ZoneTable:
    """The parsed rows of a vector layer (or the cells of a raster layer).

    Attributes are arrays with one entry per zone; ``problems`` lists the
    defects found as dicts ``{"kind", "zone_id", "message"}``.
    """

    zone_id: np.ndarray
    rule: np.ndarray  # int codes into RULES, BAD_RULE when unknown
    value: np.ndarray  # mapped value for fixed zones [value_units]
    elev_max: np.ndarray  # [elevation_units], NaN when none
    pg_min: np.ndarray  # [value_units], NaN when none
    bad: np.ndarray  # bool: the row is defective
    tables: dict[int, tuple[np.ndarray, np.ndarray]] = field(default_factory=dict)
    exprs: dict[int, Expr] = field(default_factory=dict)
    columns: dict[str, np.ndarray] = field(default_factory=dict)
    note: np.ndarray | None = None
    source: np.ndarray | None = None
    problems: list[dict] = field(default_factory=list)
    limit: float = math.inf  # largest plausible value [value_units]
    defects: dict[int, list[str]] = field(default_factory=dict)  # row -> problem messages
    quantity: str = "pg"  # the quantity the rows map (the symbol of its steps: pg, sk)

    def __len__(self) -> int:
        return len(self.zone_id)

    def rule_names(self) -> np.ndarray:
        names = np.array(list(RULES) + ["invalid"], dtype=object)
        return names[np.where(self.rule < 0, len(RULES), self.rule)]

    def needs_elevation(self, j: int) -> bool:
        if self.rule[j] == RULE_CODE["study"]:
            return False
        if self.rule[j] in (RULE_CODE["elevation_table"],) or not math.isnan(self.elev_max[j]):
            return True
        expr = self.exprs.get(j)
        return expr is not None and "A" in expr.names

    @classmethod
    def from_frame(
        cls,
        df: pd.DataFrame,
        quantity: str = "pg",
        value_units: str = "psf",
        category: str | None = None,
    ) -> ZoneTable:
        """Parse the attribute table of a vector layer (geometry column ignored).

        ``category`` (a risk category, ``"I"`` .. ``"IV"``, for a layer that maps
        one value per category, e.g. ASCE 7-22): the rules read the columns of that
        category, ``<quantity>_<cat>`` (``pg_III``), ``table_<cat>``, ``expr_<cat>``
        and ``pg_min_<cat>``; ``zone_id``, ``rule`` and ``elev_max`` are shared.

        Values above :func:`plausible_limit` (2000 psf, 95.8 kPa) are defects:
        no mapped ground snow load comes near them, so such a value is a unit
        or data-entry error.  When ``df`` is a GeoDataFrame, zones with an
        invalid geometry (shapely validity) are defects as well.
        """
        limit = plausible_limit(value_units)
        n = len(df)
        problems: list[dict] = []
        get = lambda col: df[col].tolist() if col in df.columns else [None] * n  # noqa: E731
        ids = [_clean_text(v) for v in get("zone_id")]
        invalid_geom = _invalid_geometries(df)
        rules, values, elev_max, pg_min = (
            np.full(n, BAD_RULE, dtype=np.int8),
            np.full(n, np.nan),
            np.full(n, np.nan),
            np.full(n, np.nan),
        )
        bad = np.zeros(n, dtype=bool)
        numeric: dict[str, np.ndarray] = {}
        for col in df.columns:
            if col in RESERVED or col == getattr(df, "_geometry_column_name", None):
                continue
            conv = pd.to_numeric(df[col], errors="coerce")
            if conv.notna().any() or pd.api.types.is_numeric_dtype(df[col]):
                numeric[str(col)] = conv.to_numpy(dtype=float)
        tables: dict[int, tuple[np.ndarray, np.ndarray]] = {}
        exprs: dict[int, Expr] = {}

        defects: dict[int, list[str]] = {}

        def problem(j, kind, message):
            bad[j] = True
            defects.setdefault(j, []).append(message)
            problems.append({"kind": kind, "zone_id": ids[j] or None, "message": message})

        if "zone_id" not in df.columns:
            problems.append(
                {"kind": "missing_column", "zone_id": None, "message": "no zone_id column"}
            )
        if "rule" not in df.columns:
            problems.append(
                {"kind": "missing_column", "zone_id": None, "message": "no rule column"}
            )
        sfx = f"_{category}" if category else ""
        value_col, min_col = f"{quantity}{sfx}", f"{floor_column(quantity)}{sfx}"
        table_col, expr_col = f"table{sfx}", f"expr{sfx}"
        raw_rules, raw_vals = get("rule"), get(value_col)
        raw_emax, raw_min = get("elev_max"), get(min_col)
        raw_tab, raw_expr = get(table_col), get(expr_col)
        for j in range(n):
            label = ids[j] or f"row {j}"
            if not ids[j]:
                problem(j, "missing_id", f"row {j} has no zone_id")
            if invalid_geom.get(j):
                problem(
                    j,
                    "invalid_geometry",
                    f"zone {label}: invalid geometry ({invalid_geom[j]}); sites in this zone "
                    "get status error until the geometry is repaired",
                )
            name = _clean_text(raw_rules[j]).lower().replace("-", "_").replace(" ", "_")
            if name not in RULE_CODE:
                problem(
                    j,
                    "rule",
                    f"zone {label}: rule {raw_rules[j]!r} is not known; accepted: {', '.join(RULES)}",
                )
                continue
            rules[j] = RULE_CODE[name]
            for raw, arr, col in ((raw_emax, elev_max, "elev_max"), (raw_min, pg_min, min_col)):
                try:
                    x = _opt_float(raw[j])
                except (TypeError, ValueError):
                    problem(j, "parameter", f"zone {label}: {col} {raw[j]!r} is not a number")
                    continue
                if not math.isnan(x) and (not math.isfinite(x) or (col == min_col and x < 0)):
                    problem(j, "parameter", f"zone {label}: {col} {raw[j]!r} is out of range")
                    continue
                if col == min_col and x > limit:
                    problem(
                        j,
                        "implausible_value",
                        f"zone {label}: {min_col} {raw[j]!r} {value_units} is implausibly large "
                        f"(accepted: 0 to {limit:.4g} {value_units}); check the value and its units",
                    )
                    continue
                arr[j] = x
            if name == "fixed":
                try:
                    x = _opt_float(raw_vals[j])
                except (TypeError, ValueError):
                    x = math.nan
                if not math.isfinite(x) or x < 0:
                    problem(
                        j,
                        "parameter",
                        f"zone {label}: rule fixed needs a value of zero or more in column "
                        f"{value_col!r}, found {raw_vals[j]!r}",
                    )
                elif x > limit:
                    problem(
                        j,
                        "implausible_value",
                        f"zone {label}: {value_col} {raw_vals[j]!r} {value_units} is implausibly "
                        f"large (above {limit:.4g} {value_units}); check the value and its units",
                    )
                else:
                    values[j] = x
            elif name == "elevation_table":
                try:
                    tables[j] = parse_table(raw_tab[j])
                except ValueError as exc:
                    where = f" (column {table_col})" if category else ""
                    problem(j, "table", f"zone {label}: {exc}{where}")
                    continue
                if np.any(tables[j][1] > limit):
                    problem(
                        j,
                        "implausible_value",
                        f"zone {label}: the table has values above {limit:.4g} {value_units}; "
                        "check the values and their units",
                    )
            elif name == "formula":
                try:
                    expr = compile_expr(_clean_text(raw_expr[j]))
                except ExpressionError as exc:
                    where = f" (column {expr_col})" if category else ""
                    problem(j, "expression", f"zone {label}: {exc}{where}")
                    continue
                unknown = sorted(expr.names - {"A"} - set(numeric))
                if unknown:
                    problem(
                        j,
                        "expression",
                        f"zone {label}: expression {expr.text!r} uses {', '.join(unknown)}, "
                        "which is neither A nor a numeric column of the layer",
                    )
                    continue
                empty = [c for c in sorted(expr.names - {"A"}) if math.isnan(numeric[c][j])]
                if empty:
                    problem(
                        j, "expression", f"zone {label}: column(s) {', '.join(empty)} empty here"
                    )
                    continue
                wild = [
                    f"{c} = {numeric[c][j]!r}"
                    for c in sorted(expr.names - {"A"})
                    if not abs(numeric[c][j]) <= MAX_MAGNITUDE
                ]
                if wild:
                    problem(
                        j,
                        "parameter",
                        f"zone {label}: the formula's column value(s) {', '.join(wild)} are not "
                        f"finite numbers within {MAX_MAGNITUDE:g} in magnitude",
                    )
                    continue
                exprs[j] = expr
        return cls(
            zone_id=np.array(ids, dtype=object),
            rule=rules,
            value=values,
            elev_max=elev_max,
            pg_min=pg_min,
            bad=bad,
            tables=tables,
            exprs=exprs,
            columns=numeric,
            note=np.array([_clean_text(v) for v in get("note")], dtype=object),
            source=np.array([_clean_text(v) for v in get("source")], dtype=object),
            quantity=str(quantity),
            problems=problems,
            limit=limit,
            defects=defects,
        )


def _invalid_geometries(df) -> dict[int, str]:
    """Row index -> shapely's reason, for each present but invalid geometry of a GeoDataFrame."""
    col = getattr(df, "_geometry_column_name", None)
    if col is None or col not in df.columns:
        return {}
    import shapely

    geoms = np.asarray(df[col].values)
    present = ~(shapely.is_missing(geoms) | shapely.is_empty(geoms))
    bad = np.flatnonzero(present & ~shapely.is_valid(geoms))
    return {int(j): str(shapely.is_valid_reason(geoms[j])) for j in bad}


def plausible_limit(value_units: str) -> float:
    """The largest plausible mapped value in a layer's value units."""
    from neve.engine.units import KPA_PER_PSF

    if value_units == "fraction":  # W2: a fraction from 0 to 1
        return 1.0
    return PG_MAX_PSF * KPA_PER_PSF if value_units == "kPa" else PG_MAX_PSF


def evaluate(zt: ZoneTable, zone: np.ndarray, elev: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Evaluate zone rules for arrays of (zone index, site elevation) pairs.

    Parameters
    ----------
    zt : ZoneTable
        The layer's parsed zones.
    zone : numpy.ndarray of int
        Zone index of each pair.
    elev : numpy.ndarray of float
        Site elevation of each pair [layer elevation_units]; NaN when unknown.

    Returns
    -------
    value : numpy.ndarray of float
        The ground load [layer value_units]; NaN where the state is not
        ``OK`` or ``UNCHECKED``.
    state : numpy.ndarray of int8
        One of ``OK``, ``STUDY``, ``ABOVE``, ``NEED_ELEV``, ``BAD``,
        ``UNCHECKED``, ``NUMERIC``.
    """
    zone = np.asarray(zone, dtype=np.intp)
    elev = np.asarray(elev, dtype=float)
    n = zone.size
    value = np.full(n, np.nan)
    state = np.full(n, OK, dtype=np.int8)
    if n == 0:
        return value, state
    bad = zt.bad[zone] | (zt.rule[zone] == BAD_RULE)
    rule = np.where(bad, BAD_RULE, zt.rule[zone])
    has_a = np.isfinite(elev)
    # fixed
    m = rule == RULE_CODE["fixed"]
    value[m] = zt.value[zone[m]]
    # study
    state[rule == RULE_CODE["study"]] = STUDY
    # elevation tables, one unique zone at a time (tables differ in length)
    m = np.flatnonzero(rule == RULE_CODE["elevation_table"])
    by_zone = m[np.argsort(zone[m], stable=True)]  # the pairs of each zone side by side
    zs = zone[by_zone]
    cuts = np.flatnonzero(zs[1:] != zs[:-1]) + 1
    for sel in np.split(by_zone, cuts) if by_zone.size else ():
        e, v = zt.tables[int(zone[sel[0]])]
        a = elev[sel]
        out = np.interp(a, e, v)
        st = np.where(~np.isfinite(a), NEED_ELEV, np.where(a > e[-1], ABOVE, OK))
        value[sel] = np.where(st == OK, out, np.nan)
        state[sel] = st
    # formulas, grouped by expression text
    m = rule == RULE_CODE["formula"]
    if m.any():
        by_text: dict[str, list[int]] = {}
        for j in np.unique(zone[m]):
            by_text.setdefault(zt.exprs[int(j)].text, []).append(int(j))
        for js in by_text.values():
            expr = zt.exprs[js[0]]
            sel = m & np.isin(zone, js)
            env = {c: zt.columns[c][zone[sel]] for c in expr.names - {"A"}}
            env["A"] = elev[sel]
            out = np.broadcast_to(expr.evaluate(env), (int(sel.sum()),))
            st = np.full(out.shape, OK, dtype=np.int8)
            if "A" in expr.names:
                st[~has_a[sel]] = NEED_ELEV
            st[(st == OK) & ~(np.isfinite(out) & (out >= 0) & (out <= zt.limit))] = NUMERIC
            value[sel] = np.where(st == OK, out, np.nan)
            state[sel] = st
    # elevation limit on any valued rule
    emax = zt.elev_max[zone]
    lim = np.isfinite(emax) & (state == OK)
    state[lim & has_a & (elev > emax)] = ABOVE
    state[lim & ~has_a] = UNCHECKED
    # floor
    floor = zt.pg_min[zone]
    valued = (state == OK) | (state == UNCHECKED)
    f = valued & np.isfinite(floor)
    value[f] = np.maximum(value[f], floor[f])
    # the plausibility bound holds for every value, whatever rule produced it
    valued = (state == OK) | (state == UNCHECKED)
    state[valued & ~((value >= 0) & (value <= zt.limit))] = NUMERIC
    # defective rows last: they override everything
    state[bad] = BAD
    value[~((state == OK) | (state == UNCHECKED))] = np.nan
    return value, state
