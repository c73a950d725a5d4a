"""What goes wrong with a zone's rule, in words: per-site errors and range checks.

:func:`site_errors` explains, for (zone, elevation) pairs whose evaluation
gave no value (:data:`neve.geo.layers.rules.BAD` or :data:`neve.geo.layers.rules.NUMERIC`), why:
the zone's defects, or what its formula did at that elevation (division by
zero, overflow, an undefined operation, a negative value, a value beyond the
plausibility bound), naming the zone and the value.

:func:`range_problems` is the part of ``neve layer check`` that works every
formula and table over the elevation range the layer claims for it (from 0
to ``elev_max``, to the end of a table, or to :data:`DEFAULT_TOP_M` when the
zone claims no limit; never beyond :data:`HIGHEST_M`), with the very same
:func:`neve.geo.layers.rules.evaluate` that site look-ups use, so the check and the
look-ups cannot disagree.
"""

from __future__ import annotations

import math

import numpy as np

from neve.engine.units import FT_PER_M
from neve.geo.layers import rules as R
from neve.geo.layers.formula import DIV_ZERO, FAILURES, FINE, OVERFLOW, UNDEFINED

#: top of the checked elevation range for zones that claim no limit [m]
DEFAULT_TOP_M = 4500.0
#: highest elevation ever checked (above the highest summit on Earth) [m]
HIGHEST_M = 9000.0
#: most evenly spaced elevations checked per formula (besides the numbers written in it)
MAX_POINTS = 5_001
#: most (zone, elevation) pairs evaluated at once (bounds memory)
CHUNK_PAIRS = 500_000
#: most zones evaluated at once (evaluate() visits table zones one by one)
MAX_BATCH = 64


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
    zt : neve.geo.layers.rules.ZoneTable
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
    """Elevations checked for zone ``j`` [layer elevation_units].

    A table is piecewise linear, so its extremes lie at its points and at the
    ends of the range: those are checked.  A formula is checked at every
    whole unit (evenly spaced, at most :data:`MAX_POINTS`, when the range is
    longer), at the ends, and at the numbers written in it (and their
    negatives), where a division by zero is most likely.
    """
    if j in zt.tables:
        a = np.concatenate([[0.0, top], zt.tables[j][0]])
    else:
        import ast

        n = int(min(MAX_POINTS, math.floor(top) + 1))
        extra = [top]
        for node in ast.walk(zt.exprs[j].tree):
            if isinstance(node, ast.Constant):
                extra.extend([float(node.value), -float(node.value)])
        a = np.concatenate([np.linspace(0.0, max(n - 1, 0), n) * (top / max(n - 1, 1)), extra])
        if "A" not in zt.exprs[j].names:
            a = a[:1]
    return np.unique(a[(a >= 0) & (a <= top)])


def _key(zt: R.ZoneTable, j: int, top: float) -> tuple:
    """Zones with equal keys evaluate alike: each distinct rule is worked once."""
    floor = float(zt.pg_min[j])
    floor = None if math.isnan(floor) else floor  # NaN is not equal to itself: no dict key
    if j in zt.tables:
        e, v = zt.tables[j]
        return ("table", top, tuple(e.tolist()), tuple(v.tolist()), floor)
    expr = zt.exprs[j]
    cols = tuple(float(zt.columns[c][j]) for c in sorted(expr.names - {"A"}))
    return ("formula", top, expr.text, cols, floor)


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
    groups: dict[tuple, list[int]] = {}
    for j in range(len(zt)):
        if zt.rule[j] in rule_of and not zt.bad[j] and (j in zt.exprs or j in zt.tables):
            groups.setdefault(_key(zt, j, claimed_top(zt, j, elevation_units)), []).append(j)
    found: dict[int, list[dict]] = {}
    batch: list[tuple[int, np.ndarray]] = []
    size = 0
    reps = [js[0] for js in groups.values()]
    for k, j in enumerate(reps):
        grid = _grid(zt, j, claimed_top(zt, j, elevation_units))
        batch.append((j, grid))
        size += grid.size
        if size >= CHUNK_PAIRS or len(batch) >= MAX_BATCH or k == len(reps) - 1:
            found.update(_batch_problems(zt, batch, rule_of, value_units, elevation_units))
            batch, size = [], 0
    problems: list[dict] = []
    for js in groups.values():
        for p in found.get(js[0], []):
            for j in js:
                zid = zt.zone_id[j] or f"row {j}"
                rep = zt.zone_id[js[0]] or f"row {js[0]}"
                msg = f"zone {zid}:" + p["message"].removeprefix(f"zone {rep}:")
                problems.append(dict(p, zone_id=zt.zone_id[j] or None, message=msg))
    return problems


def _batch_problems(zt, batch, rule_of, value_units, elevation_units) -> dict[int, list[dict]]:
    zone = np.concatenate([np.full(g.size, j, dtype=np.intp) for j, g in batch])
    elev = np.concatenate([g for _, g in batch])
    _, state = R.evaluate(zt, zone, elev)
    failed = state == R.NUMERIC
    out: dict[int, list[dict]] = {}
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
            out.setdefault(j, []).append(
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
