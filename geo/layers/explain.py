"""Step records for a zone's ground snow load at one site (the calculation package).

:func:`explain` restates, for one zone and one elevation, what
:func:`neve.geo.layers.rules.evaluate` computed on arrays: the mapped value, the table
interpolation, the formula with its numbers, the elevation limit and the
``pg_min`` floor, each as an :class:`neve.engine.steps.Step` whose ``ref`` names
the layer's source and the zone.
"""

from __future__ import annotations

import math

import numpy as np

from neve.engine.steps import Step, fmt
from neve.geo.layers.rules import (
    ABOVE,
    BAD,
    NEED_ELEV,
    NUMERIC,
    OK,
    RULES,
    UNCHECKED,
    ZoneTable,
    evaluate,
    floor_column,
)

#: the interpolation in an elevation table, by quantity (the others: v1, v2 for the values)
_TABLE_EQ = {"pg": "pg = p1 + (A - A1)(p2 - p1)/(A2 - A1)"}


def explain(zt: ZoneTable, j: int, elev: float, meta: dict, ref: str) -> list[Step]:
    """Step records for zone ``j`` at one site elevation (for the calculation package).

    Parameters
    ----------
    zt : ZoneTable
    j : int
        Zone index.
    elev : float
        Site elevation [layer elevation_units]; NaN when unknown.
    meta : dict
        The layer sidecar (for units).
    ref : str
        Provenance text for ``ref`` (layer source and zone).
    """
    vu, eu = meta["value_units"], meta["elevation_units"]
    q = zt.quantity  # the symbol: pg, or sk in an EN 1991-1-3 layer
    floor_col = floor_column(q)
    value, state = evaluate(zt, np.array([j]), np.array([elev]))
    value, state = float(value[0]), int(state[0])
    zid = zt.zone_id[j]
    steps: list[Step] = []
    rule = RULES[zt.rule[j]] if zt.rule[j] >= 0 else "invalid"
    a_txt = "unknown" if not math.isfinite(elev) else f"{fmt(elev)} {eu}"
    if rule == "fixed" and not (math.isfinite(float(zt.value[j])) and zt.value[j] >= 0):
        steps.append(
            Step(
                q,
                f"zone {zid} has no valid mapped value (found {zt.value[j]!r})",
                f"{q} = mapped value",
                "no value: see neve layer check",
                None,
                vu,
                ref,
            )  # fmt: skip
        )
    elif rule == "fixed":
        raw = float(zt.value[j])
        steps.append(
            Step(
                q,
                f"mapped ground snow load of zone {zid}",
                f"{q} = mapped value",
                f"{q} = {fmt(raw)} {vu}",
                raw,
                vu,
                ref,
            )  # fmt: skip
        )
    elif rule == "study":
        steps.append(
            Step(
                q,
                f"zone {zid} carries no mapped value",
                "site-specific case study",
                "study required",
                None,
                vu,
                ref,
            )  # fmt: skip
        )
    elif rule == "elevation_table" and j in zt.tables:
        e, v = zt.tables[j]
        pairs = ", ".join(f"[{fmt(a)}, {fmt(b)}]" for a, b in zip(e, v, strict=True))
        if math.isfinite(elev) and elev <= e[-1]:
            k = int(np.clip(np.searchsorted(e, elev), 1, len(e) - 1))
            raw = float(np.interp(elev, e, v))
            if elev <= e[0]:
                sub = f"A = {a_txt} at or below the first point: {q} = {fmt(v[0])}"
            else:
                sub = (
                    f"{fmt(v[k - 1])} + ({fmt(elev)} - {fmt(e[k - 1])}) x "
                    f"({fmt(v[k])} - {fmt(v[k - 1])}) / ({fmt(e[k])} - {fmt(e[k - 1])})"
                )
            steps.append(
                Step(
                    q,
                    f"linear interpolation in the elevation table of zone {zid} ({pairs})",
                    _TABLE_EQ.get(q, f"{q} = v1 + (A - A1)(v2 - v1)/(A2 - A1)"),
                    sub,
                    raw,
                    vu,
                    ref,
                )  # fmt: skip
            )
        else:
            steps.append(
                Step(
                    q,
                    f"elevation table of zone {zid} ({pairs})",
                    f"table ends at {fmt(e[-1])} {eu}",
                    f"A = {a_txt}",
                    None,
                    vu,
                    ref,
                )  # fmt: skip
            )
    elif rule == "formula" and j in zt.exprs:
        expr = zt.exprs[j]
        subs = ", ".join(
            [f"A = {a_txt}"] * ("A" in expr.names)
            + [f"{c} = {fmt(zt.columns[c][j])}" for c in sorted(expr.names - {"A"})]
        )
        raw_val = math.nan
        if state not in (NEED_ELEV, BAD):
            env = {c: zt.columns[c][j] for c in expr.names - {"A"}}
            env["A"] = elev
            raw_val = float(expr.evaluate(env))
            subs = f"{subs}: {expr.substitute(env)}"
        steps.append(
            Step(
                q,
                f"formula of zone {zid}",
                f"{q} = {expr.text}",
                subs,
                raw_val if math.isfinite(raw_val) else None,
                vu,
                ref,
            )  # fmt: skip
        )
    if state in (NUMERIC, BAD):
        from neve.geo.layers.rule_checks import site_errors

        why = site_errors(zt, np.array([j]), np.array([elev]), vu, eu)[0]
        steps.append(
            Step(
                q,
                f"zone {zid} gives no usable ground snow load at this site (status error)",
                f"0 <= {q} <= {fmt(zt.limit)} {vu} (plausibility bound)",
                why or "no finite value within the bound",
                None,
                vu,
                ref,
            )  # fmt: skip
        )
    if not math.isnan(zt.elev_max[j]) and rule != "study":
        lim = float(zt.elev_max[j])
        verdict = {
            ABOVE: "above the limit: study required",
            UNCHECKED: "not checked (no elevation)",
        }
        steps.append(
            Step(
                "elev_max",
                f"upper elevation limit of zone {zid}",
                "A <= elev_max",
                f"{a_txt} vs {fmt(lim)} {eu}: {verdict.get(state, 'within the limit')}",
                lim,
                eu,
                ref,
            )  # fmt: skip
        )
    if not math.isnan(zt.pg_min[j]) and state in (OK, UNCHECKED):
        floor = float(zt.pg_min[j])
        before = [st.value for st in steps if st.symbol == q and st.value is not None]
        pre = fmt(before[-1]) if before else q
        steps.append(
            Step(
                q,
                f"floor {floor_col} of zone {zid}",
                f"{q} = max({q}, {floor_col})",
                f"max({pre}, {fmt(floor)})",
                value,
                vu,
                ref,
            )  # fmt: skip
        )
    return steps
