"""Screening with per-risk ground layers (ASCE 7-22) and W2 layers.

* Each row's risk category is the row's ``risk`` cell (``I`` .. ``IV``, any
  case; a bad cell makes the row ``error`` naming the column), else the risk
  of the row's roof (the one roof, or the row's profile), else ``II``
  (:func:`row_risk`).  Per-risk layers give the values of that category: the
  rows are resolved once per category present (:func:`resolve_by_risk`);
  layers that map one value for every category (ASCE 7-16) are resolved in
  one pass as before.
* W2 layers (``quantity = "w2"``) are resolved beside the ground layers by
  :func:`neve.geo.site.resolve.resolve`; the rows get ``w2`` and
  ``w2_zone_id`` (:func:`w2_columns`).
* The roof standard of a row is ``--standard`` when given, else the one that
  takes the governing layer's edition (:func:`row_standards`).

Results are an aid to, not a substitute for, a licensed design professional.
"""

from __future__ import annotations

import numpy as np

from neve.geo.site.result import Resolution

#: the column of a site file that gives a row's risk category (any case)
RISK_COLUMN_NAMES = ("risk", "risk_category")


def _risk_column(frame):
    for c in frame.columns:
        if str(c).strip().lower() in RISK_COLUMN_NAMES:
            return c
    return None


def row_risk(site, roofs) -> tuple[np.ndarray, np.ndarray]:
    """Each row's risk category (object array of ``"I"`` .. ``"IV"``) and where a cell gave it.

    A ``risk`` cell that is no risk category marks the row's ``site.error``
    (the row is not looked up) with the column and what is accepted.
    """
    from neve.engine.roof_spec import Roof
    from neve.geo.layers.model import DEFAULT_RISK
    from neve.geo.layers.sidecar import RISK_CATEGORIES

    n = len(site)
    out = np.full(n, DEFAULT_RISK, dtype=object)
    if isinstance(roofs, Roof) and roofs.risk:
        out[:] = str(roofs.risk).upper()
    elif isinstance(roofs, dict) and site.roof is not None:
        for name, roof in roofs.items():
            if roof.risk:
                out[site.roof == name] = str(roof.risk).upper()
    col = _risk_column(site.frame)
    if col is None:
        return out, np.zeros(n, dtype=bool)
    cells = site.frame[col].astype(object).where(site.frame[col].notna(), "")
    text = cells.astype(str).str.strip().str.upper().to_numpy(dtype=object)
    given = text != ""
    good = np.isin(text, RISK_CATEGORIES)
    out[given & good] = text[given & good]
    bad = np.flatnonzero(given & ~good & (site.error == ""))
    for i in bad:
        site.error[i] = (
            f"{col}: {str(cells.iloc[i])!r} is not a risk category; "
            f"accepted: {', '.join(RISK_CATEGORIES)}"
        )
    return out, given & good


def has_per_risk(layers) -> bool:
    return any(getattr(ly, "per_risk", False) for ly in layers)


def resolve_by_risk(resolver, lat, lon, elev, risk: np.ndarray, layers, **kwargs) -> Resolution:
    """``resolver(lat, lon, elev, layers=..., **kwargs)`` once per risk category in ``risk``.

    Each category's rows get the layers' values of that category
    (:meth:`neve.geo.layers.model.Layer.for_risk`); the parts are put back in
    row order.
    """
    cats = [c for c in dict.fromkeys(risk.tolist())]
    if len(cats) == 1:
        return resolver(lat, lon, elev, layers=[ly.for_risk(cats[0]) for ly in layers], **kwargs)
    n = lat.size
    out = None
    for cat in cats:
        rows = np.flatnonzero(risk == cat)
        e = None if elev is None else elev[rows]
        part = resolver(lat[rows], lon[rows], e, layers=[ly.for_risk(cat) for ly in layers],
                        **kwargs)  # fmt: skip
        if out is None:
            out = part.placed(rows, n)
            continue
        for name, value in part._arrays():
            target = getattr(out, name)
            if isinstance(value, dict):
                for q, v in value.items():
                    target[q][rows] = v
            else:
                target[rows] = value
    return out


def row_standards(res: Resolution, layers, explicit) -> dict:
    """Rows by roof standard: ``{standard id: (Standard, row mask)}`` plus the refused rows.

    Returns ``(groups, mismatch, unsupported)``: ``groups`` maps a standard id
    to ``(Standard, mask)`` of the rows whose roof loads it computes;
    ``mismatch`` marks rows whose governing layer is of an edition another
    registered standard takes than ``explicit`` (flag ``edition_mismatch``);
    ``unsupported`` rows whose layer's edition no registered standard takes
    (flag ``roof_standard_unsupported``).
    """
    from neve.geo.site.one import _takers, layer_standard

    n = len(res)
    groups: dict = {}
    mismatch = np.zeros(n, dtype=bool)
    unsupported = np.zeros(n, dtype=bool)
    for k, ly in enumerate(layers):
        sel = res.layer == k
        if not sel.any() or ly.quantity == "w2":
            continue
        edition = str(ly.meta.get("standard", ""))
        std = explicit if explicit is not None else layer_standard(edition, ly.quantity)
        if std.accepts_layer(edition, ly.quantity):
            groups.setdefault(std.id, (std, np.zeros(n, dtype=bool)))[1][sel] = True
        elif explicit is not None and _takers(edition, ly.quantity):
            mismatch |= sel
        else:
            unsupported |= sel
    return groups, mismatch, unsupported


def w2_columns(res: Resolution, layers) -> dict:
    """``w2`` and ``w2_zone_id`` of every row, when a W2 layer is given (else nothing)."""
    if not any(getattr(ly, "quantity", "pg") == "w2" for ly in layers):
        return {}
    zone = res.extra.get("w2_zone_id", np.full(len(res), "", dtype=object))
    zone = np.where(zone == "", None, zone).astype(object)
    return {"w2": res.value("w2"), "w2_zone_id": zone}
