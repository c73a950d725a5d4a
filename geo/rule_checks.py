"""What goes wrong with a zone's rule, in words: per-site errors and range checks.

:func:`site_errors` explains, for (zone, elevation) pairs whose evaluation
gave no value (:data:`geo.rules.BAD` or :data:`geo.rules.NUMERIC`), why:
the zone's defects, or what its formula did at that elevation (division by
zero, overflow, an undefined operation, a negative value, a value beyond the
plausibility bound), naming the zone and the value.

:func:`range_problems` is the part of ``neve layer check`` that works every
formula and table over the elevation range the layer claims for it (from 0
to ``elev_max``, to the end of a table, or to :data:`DEFAULT_TOP_M` when the
zone claims no limit; never beyond :data:`HIGHEST_M`), with the very same
:func:`geo.rules.evaluate` that site look-ups use, so the check and the
look-ups cannot disagree.
"""

from __future__ import annotations

import math

import numpy as np

from engine.units import FT_PER_M
from geo import rules as R
from geo.expr import DIV_ZERO, FAILURES, FINE, OVERFLOW, UNDEFINED

#: top of the checked elevation range for zones that claim no limit [m]
DEFAULT_TOP_M = 4500.0
#: highest elevation ever checked (above the highest summit on Earth) [m]
HIGHEST_M = 9000.0
#: most elevations checked per zone
MAX_POINTS = 30_001
#: most (zone, elevation) pairs evaluated at once (bounds memory)
CHUNK_PAIRS = 2_000_000


def _num(x: float) -> str:
    return f"{x:.6g}"


def _formula_cause(zt: R.ZoneTable, j: int, a: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Raw formula values of zone ``j`` at elevations ``a`` and a cause text per elevation."""
    expr = zt.exprs[j]
    env = {c: zt.columns[c][j] for c in expr.names - {"A"}}
    env["A"] = a
    raw, code = expr.evaluate_checked(env)
    raw = np.broadcast_to(raw, a.shape)
    code = np.broadcast_to(code, a.shape)
    cause = np.full(a.shape, "", dtype=object)
    for c, text in FAILURES.items():
        cause[code == c] = text
    fine = code == FINE
    cause[fine & (raw < 0)] = "gives a negative value"
    cause[fine & (raw > zt.limit)] = "gives a value beyond the plausibility bound"
    return raw, cause


def site_errors(
    zt: R.ZoneTable, zone: np.ndarray, elev: np.ndarray, value_units: str, elevation_units: str
) -> np.ndarray:
    """Why each (zone, elevation) pair has no value, naming the zone and the value.

    Parameters
    ----------
    zt : geo.rules.ZoneTable
    zone : numpy.ndarray of int
        Zone index of each pair.
    elev : numpy.ndarray of float
        Site elevation [layer elevation_units]; NaN when unknown.
    value_units, elevation_units : str
        The layer's units (for the messages).

    Returns
    -------
    numpy.ndarray of object
        One sentence per pair ("" for pairs that are neither defective nor
        numerically failed).
    """
    zone = np.asarray(zone, dtype=np.intp)
    elev = np.asarray(elev, dtype=float)
    out = np.full(zone.size, "", dtype=object)
    if zone.size == 0:
        return out
    _, state = R.evaluate(zt, zone, elev)
    bound = f"accepted: 0 to {zt.limit:.4g} {value_units}"
    for j in np.unique(zone[(state == R.BAD) | (state == R.NUMERIC)]):
        j = int(j)
        zid = zt.zone_id[j] or f"row {j}"
        sel = np.flatnonzero(zone == j)
        if state[sel[0]] == R.BAD or zt.bad[j]:
            why = "; ".join(zt.defects.get(j, [])) or f"zone {zid} is defective"
            out[sel] = why[0].upper() + why[1:] + "."
            continue
        sel = sel[state[sel] == R.NUMERIC]
        if zt.rule[j] != R.RULE_CODE["formula"] or j not in zt.exprs:
            out[sel] = f"Zone {zid} gives no value from 0 to {zt.limit:.4g} {value_units} here."
            continue
        a_u, inv = np.unique(elev[sel], return_inverse=True)
        raw, cause = _formula_cause(zt, j, a_u)
        text = zt.exprs[j].text
        msgs = []
        for a, v, c in zip(a_u, raw, cause, strict=True):
            at = f" at A = {_num(a)} {elevation_units}" if "A" in zt.exprs[j].names else ""
            c = c or "gives no usable value"
            shown = f" ({_num(v)} {value_units}; {bound})" if c.startswith("gives") else ""
            msgs.append(f"Zone {zid}: the formula {text!r} {c}{at}{shown}.")
        out[sel] = np.array(msgs, dtype=object)[inv.ravel()]
    return out


def claimed_top(zt: R.ZoneTable, j: int, elevation_units: str) -> float:
    """Top of the elevation range zone ``j`` claims [layer elevation_units]."""
    per_m = FT_PER_M if elevation_units == "ft" else 1.0
    top = DEFAULT_TOP_M * per_m
    if math.isfinite(zt.elev_max[j]):
        top = float(zt.elev_max[j])
    elif j in zt.tables:
        top = float(zt.tables[j][0][-1])
    return float(np.clip(top, 0.0, HIGHEST_M * per_m))


def _grid(zt: R.ZoneTable, j: int, top: float) -> np.ndarray:
    """Elevations checked for zone ``j``: every whole unit (or finer steps), the ends,
    the table's points and the numbers written in the formula."""
    step = max(1.0, top / (MAX_POINTS - 1))
    extra = [0.0, top]
    if j in zt.tables:
        extra.extend(zt.tables[j][0].tolist())
    if j in zt.exprs:
        import ast

        for node in ast.walk(zt.exprs[j].tree):
            if isinstance(node, ast.Constant):
                extra.extend([float(node.value), -float(node.value)])
    a = np.concatenate([np.arange(0.0, top + step / 2, step), np.array(extra, dtype=float)])
    return np.unique(a[(a >= 0) & (a <= top)])


def range_problems(zt: R.ZoneTable, value_units: str, elevation_units: str) -> list[dict]:
    """Evaluate every formula and table zone over its claimed elevation range.

    Returns
    -------
    list of dict
        Problems ``{"kind", "zone_id", "message", "cause", "elevation"}``:
        kind ``implausible_value`` for results beyond the plausibility bound,
        ``formula_range`` (formulas) or ``table_range`` (tables) for division
        by zero, overflow, undefined operations and negative values.  One
        problem per zone and cause, at the lowest elevation where it occurs.
    """
    rule_of = {R.RULE_CODE["formula"]: "formula", R.RULE_CODE["elevation_table"]: "table"}
    todo = [
        j
        for j in range(len(zt))
        if zt.rule[j] in rule_of and not zt.bad[j] and (j in zt.exprs or j in zt.tables)
    ]
    problems: list[dict] = []
    batch: list[tuple[int, np.ndarray]] = []
    size = 0
    for k, j in enumerate(todo):
        grid = _grid(zt, j, claimed_top(zt, j, elevation_units))
        if j in zt.exprs and "A" not in zt.exprs[j].names:
            grid = grid[:1]
        batch.append((j, grid))
        size += grid.size
        if size >= CHUNK_PAIRS or k == len(todo) - 1:
            problems.extend(_batch_problems(zt, batch, rule_of, value_units, elevation_units))
            batch, size = [], 0
    return problems


def _batch_problems(zt, batch, rule_of, value_units, elevation_units) -> list[dict]:
    zone = np.concatenate([np.full(g.size, j, dtype=np.intp) for j, g in batch])
    elev = np.concatenate([g for _, g in batch])
    _, state = R.evaluate(zt, zone, elev)
    failed = state == R.NUMERIC
    out: list[dict] = []
    for j in np.unique(zone[failed]):
        j = int(j)
        sel = failed & (zone == j)
        a = elev[sel]
        zid = zt.zone_id[j] or f"row {j}"
        top = claimed_top(zt, j, elevation_units)
        span = f"checked A = 0 to {_num(top)} {elevation_units}"
        if j in zt.exprs:
            raw, cause = _formula_cause(zt, j, a)
            what = f"the formula {zt.exprs[j].text!r}"
        else:
            raw = np.full(a.shape, np.nan)
            cause = np.full(a.shape, "gives no value from 0 to the plausibility bound", object)
            what = "the elevation table"
        for c in dict.fromkeys(cause.tolist()):
            hit = cause == c
            lo, hi = float(a[hit].min()), float(a[hit].max())
            where = f"A = {_num(lo)}" + (f" to {_num(hi)}" if hi > lo else "")
            where += f" {elevation_units}"
            value = ""
            if c.startswith("gives") and np.isfinite(raw[hit]).any():
                ext = raw[hit][np.argmax(np.abs(np.nan_to_num(raw[hit])))]
                value = (
                    f"; e.g. {_num(ext)} {value_units}, accepted 0 to {zt.limit:.4g} {value_units}"
                )
            beyond = "beyond the plausibility bound" in c
            kind = "implausible_value" if beyond else f"{rule_of[int(zt.rule[j])]}_range"
            if "A" not in getattr(zt.exprs.get(j), "names", {"A"}):
                where = "every elevation"
                span = "the formula does not use A"
            out.append(
                {
                    "kind": kind,
                    "zone_id": zt.zone_id[j] or None,
                    "message": f"zone {zid}: {what} {c} at {where}{value} ({span}); "
                    "sites there get status error",
                    "cause": _CAUSE_CODE.get(c, "no_value"),
                    "elevation": lo,
                }
            )
    return out


_CAUSE_CODE = {
    FAILURES[DIV_ZERO]: "division_by_zero",
    FAILURES[OVERFLOW]: "overflow",
    FAILURES[UNDEFINED]: "undefined",
    "gives a negative value": "negative",
    "gives a value beyond the plausibility bound": "above_bound",
}
