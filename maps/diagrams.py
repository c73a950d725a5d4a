"""Load diagrams of the roof snow load cases (matplotlib, Agg, PNG).

One dimensioned diagram per kind of case: a roof step (or an adjacent,
separate structure), a parapet, a rooftop projection, sliding snow, the
unbalanced load of a gable or hip roof and the ice dam at the eave.  Each
figure has two parts that cannot crowd each other:

- the sketch, schematic and not to scale, that names every part (upper roof,
  parapet, wind, ridge, eave ...) and every dimension by its symbol only
  (``hb``, ``hc``, ``hd``, ``w``, ``lu``, ``s`` ...), each symbol in a lane of
  its own;
- a table beside it that gives each symbol its value, printed by the one
  formatter of :mod:`neve.engine.format` as in the package's tables, with the
  peak total (balanced + surcharge) and the line load where the case has one.

Only values present in the case JSON are shown: the case's own keys, the
roof's loads and description, and two lengths that the engine writes in its
steps only (the upwind fetch ``lu`` and the separation ``s`` of an adjacent
structure); a value that cannot be read from them is left out, never guessed.
Heights are drawn in the ratio of the case's own depths within bounds (so a
very small or very large ratio still leaves room for every label); lengths
along the roof are schematic.
"""

from __future__ import annotations

import math
import os
import re
import textwrap
from pathlib import Path

from neve.engine import format as fmt
from neve.engine.units import length_json
from neve.maps import style
from neve.safe_write import write_bytes

#: case kinds of the ``neve roof`` JSON (its ``case`` key) that get a diagram
DIAGRAM_CASES = ("unbalanced", "drift", "sliding", "ice_dam")

#: the diagram drawn for each kind (a drift by its ``source``), with its title
DIAGRAM_KINDS = {
    "step": "Drift at a roof step",
    "adjacent": "Drift beside an adjacent structure",
    "parapet": "Parapet drift",
    "projection": "Projection drift",
    "sliding": "Sliding snow",
    "unbalanced": "Unbalanced load",
    "ice_dam": "Ice dam at the eave",
    # curved, dome and multi-span roofs (issue 12): told apart by the case's ``method``
    "curved_balanced": "Balanced load on a curved roof",
    "curved": "Unbalanced load on a curved roof",
    "dome": "Unbalanced load on a dome",
    "sawtooth": "Unbalanced load in the valleys",
}
#: (case, method) of the cases of curved, dome and multi-span roofs -> their diagram
SHAPE_DIAGRAMS = {
    ("balanced", "curved"): "curved_balanced",
    ("balanced", "dome"): "curved_balanced",
    ("unbalanced", "curved"): "curved",
    ("unbalanced", "dome"): "dome",
    ("unbalanced", "sawtooth"): "sawtooth",
}

_C = style.DIAGRAM_COLOURS
_H = style.DIAGRAM_HATCHES
_FIG_IN = (7.2, 3.5)  # inches: the package prints it at the full text width
_DPI = 150
_SKETCH = (0.008, 0.075, 0.575, 0.795)  # left, bottom, width, height [figure fraction]
_TABLE = (0.6, 0.992, 0.86)  # left, right, top [figure fraction]
_XLIM, _YLIM = (0.0, 10.0), (-0.85, 7.0)
_FS_LABEL, _FS_TABLE, _FS_TITLE, _FS_NOTE = 8.0, 7.5, 9.5, 6.5
NOTE = "schematic; lengths not to scale; loads in psf (kPa), lengths in ft (m)"


def _load(q) -> str:
    """A load as in the package's tables: 0.1 psf, 0.01 kPa, zeros kept."""
    return fmt.load_text(q, missing="none", missing_number="\u2014")


def _ft(q) -> float | None:
    v = fmt._finite(q.get("ft")) if isinstance(q, dict) else None
    return v


def _psf(q) -> float | None:
    return fmt._finite(q.get("psf")) if isinstance(q, dict) else None


def _clamp(x: float, lo: float, hi: float) -> float:
    return min(max(x, lo), hi)


def diagram_kind(case: dict) -> str | None:
    """The diagram of a case (a key of :data:`DIAGRAM_KINDS`), or None for none.

    Drifts are told apart by their ``source`` (``step``, ``adjacent``,
    ``parapet``, ``projection``); a drift without one (an older JSON) by the
    words of its name, a roof step otherwise.  The cases of curved, dome and
    multi-span roofs by their ``method`` (:data:`SHAPE_DIAGRAMS`; a curved
    roof's balanced case too).
    """
    kind = str(case.get("case", ""))
    shaped = SHAPE_DIAGRAMS.get((kind, str(case.get("method") or "")))
    if shaped is not None:
        return shaped
    if kind not in DIAGRAM_CASES:
        return None
    if kind != "drift":
        return kind
    source = str(case.get("source") or "")
    if source in DIAGRAM_KINDS:
        return source
    name = str(case.get("name") or "").lower()
    for word, found in (("parapet", "parapet"), ("projection", "projection"),
                        ("adjacent", "adjacent")):  # fmt: skip
        if word in name:
            return found
    return "step"


# lengths the engine gives in its steps only --------------------------------

_FETCH = re.compile(r"\blu = (\d+(?:\.\d+)?) ft")
_SEPARATION = (
    re.compile(r"\(6 x \d+(?:\.\d+)? - (\d+(?:\.\d+)?)\)"),  # hd, w beside an adjacent structure
    re.compile(r"\(15 - (\d+(?:\.\d+)?)\)/15"),  # sliding onto a separate structure
)


def fetch(case: dict) -> dict | None:
    """The upwind fetch lu [ft, m] the case's drift height was computed from.

    Read from the step that gives the drift height (its description names
    ``lu``); for the windward drift of a step, the step of the windward
    height.  None when no step names it.
    """
    windward = case.get("governs") == "windward" and case.get("source") in ("step", "adjacent")
    found = []
    for st in case.get("steps") or []:
        m = _FETCH.search(str(st.get("description") or ""))
        if m:
            side = "windward" in str(st.get("symbol")) + str(st.get("description"))[:8]
            found.append((side, float(m.group(1))))
    for side, value in found:
        if side == windward:
            return length_json(value)
    return length_json(found[0][1]) if found and not windward else None


def separation(case: dict) -> dict | None:
    """The separation s [ft, m] of an adjacent structure, from the substituted steps."""
    for st in case.get("steps") or []:
        for pattern in _SEPARATION:
            m = pattern.search(str(st.get("substituted") or ""))
            if m:
                return length_json(float(m.group(1)))
    return None


# drawing helpers ------------------------------------------------------------


def _text(ax, x, y, text, ha="center", va="center", colour=None, **kw):
    return ax.text(x, y, text, ha=ha, va=va, fontsize=kw.pop("size", _FS_LABEL),
                   color=colour or _C["text"], clip_on=False, **kw)  # fmt: skip


def _line(ax, xs, ys, lw=2.2, colour=None, **kw):
    ax.plot(xs, ys, color=colour or _C["structure"], lw=lw, solid_capstyle="butt",
            solid_joinstyle="miter", **kw)  # fmt: skip


def _patch(ax, pts, role, dashed=False):
    """A filled shape of the diagram's palette: snow, surcharge, ice, solid, interior."""
    from matplotlib.patches import Polygon

    edge = {"snow": _C["snow_edge"], "surcharge": _C["surcharge_edge"], "ice": _C["ice_edge"],
            "solid": _C["structure"], "interior": _C["interior"]}[role]  # fmt: skip
    if dashed:  # the same load elsewhere, or beyond the roof's edge: outline only
        ax.add_patch(Polygon(pts, closed=True, fill=False, edgecolor=edge, lw=0.9, ls=(0, (3, 2))))
        return
    ax.add_patch(Polygon(pts, closed=True, facecolor=_C[role], edgecolor=edge,
                         hatch=_H.get(role), lw=0))  # fmt: skip
    if role != "interior":
        ax.add_patch(Polygon(pts, closed=True, fill=False, edgecolor=edge, lw=0.9))


def _rect(x0, x1, y0, y1):
    return [(x0, y0), (x1, y0), (x1, y1), (x0, y1)]


def _arrow(ax, x0, y0, x1, y1, style_="<|-|>", colour=None, lw=0.7, scale=7):
    ax.annotate("", xy=(x1, y1), xytext=(x0, y0), annotation_clip=False,
                arrowprops={"arrowstyle": style_, "color": colour or _C["dimension"], "lw": lw,
                            "shrinkA": 0, "shrinkB": 0, "mutation_scale": scale})  # fmt: skip


def _hdim(ax, x0, x1, y, label, below=True):
    """A horizontal dimension from x0 to x1 with its symbol under (or over) the middle."""
    _arrow(ax, x0, y, x1, y)
    for x in (x0, x1):
        _line(ax, [x, x], [y - 0.13, y + 0.13], lw=0.6, colour=_C["dimension"])
    va, dy = ("top", -0.07) if below else ("bottom", 0.07)
    _text(ax, (x0 + x1) / 2, y + dy, label, va=va, colour=_C["dimension"], style="italic")


def _vdim(ax, x, y0, y1, label, side="left"):
    """A vertical dimension at x from y0 to y1 with its symbol beside the middle."""
    _arrow(ax, x, y0, x, y1)
    for y in (y0, y1):
        _line(ax, [x - 0.09, x + 0.09], [y, y], lw=0.6, colour=_C["dimension"])
    ha, dx = ("right", -0.09) if side == "left" else ("left", 0.09)
    _text(ax, x + dx, (y0 + y1) / 2, label, ha=ha, colour=_C["dimension"], style="italic")


def _ext(ax, x0, x1, y):
    """A thin extension line carrying a level to a dimension column."""
    _line(ax, [x0, x1], [y, y], lw=0.5, colour=_C["dimension"], ls=(0, (1, 1.5)))


def _wind(ax, x_tail, x_head, y):
    """The wind arrow, its word at the tail."""
    _arrow(ax, x_tail, y, x_head, y, style_="-|>", colour=_C["wind"], lw=1.4, scale=11)
    right = x_head > x_tail
    _text(ax, x_tail + (-0.1 if right else 0.1), y, "wind", ha="right" if right else "left",
          colour=_C["wind"], weight="bold")  # fmt: skip


def _depths(case, balanced):
    """Drawn depths (hb, hd, hc) of a drift: the case's ratio within bounds."""
    hb, hd, hc = _ft(case.get("hb")), _ft(case.get("hd")), _ft(case.get("hc"))
    if hb is None:  # no depth given: from the balanced load and the density, else a sketch value
        gamma = fmt._finite((case.get("gamma") or {}).get("pcf"))
        hb = (balanced / gamma) if (balanced and gamma) else None
    total = (hb or 0.0) + (hc if hc is not None else (hd or 0.0) * 1.5)
    k = 3.4 / total if total > 0 else 1.0
    bb = _clamp((hb or 0.4 / k) * k, 0.5, 1.05)
    cc = _clamp((hc if hc is not None else (hd or 1.0) * 1.5) * k, 1.0, 3.6)
    dd = _clamp((hd or 0.0) * k, 0.6, cc)
    if hd is not None and hc is not None and hd < hc and dd >= cc:
        dd = cc - 0.05
    return bb, dd, cc


def _drift_width(case, dd, lo, hi):
    w, hd = _ft(case.get("w")), _ft(case.get("hd"))
    if w and hd:
        return _clamp(dd * w / hd * 0.55, lo, hi)
    return (lo + hi) / 2


# the load rows beside the sketch: (swatch role or None, symbol, description, value)


def _peak(case) -> str:
    """The symbol at a drift's peak: the total where the case gives it, else the surcharge."""
    return "ps + pd" if case.get("total_peak") else "pd"


def _drift_rows(case, roof_json, lu_side: str) -> list[tuple]:
    balanced = case.get("balanced") or ((roof_json or {}).get("loads") or {}).get("ps")
    rows = [
        ("snow", "ps", "balanced snow load", _load(balanced)),
        ("surcharge", "pd", "peak drift surcharge", _load(case.get("pd"))),
        (None, "ps + pd", "peak total load", _load(case.get("total_peak"))),
        (None, "hb", "balanced snow depth", style.length_text(case.get("hb"))),
        (None, "hc", "clear height above it", style.length_text(case.get("hc"))),
        (None, "hd", f"drift height ({case.get('governs') or 'drift'})",
         style.length_text(case.get("hd"))),
        (None, "w", "drift width", style.length_text(case.get("w"))),
    ]  # fmt: skip
    w, won = _ft(case.get("w")), _ft(case.get("w_on_roof"))
    if won is not None and w is not None and won < w - 1e-9:
        rows.append((None, "w roof", "width on this roof", style.length_text(case["w_on_roof"])))
    if (_psf(case.get("pd_far_edge")) or 0.0) > 0:
        rows.append((None, "p edge", "surcharge at far edge", _load(case["pd_far_edge"])))
    lu = fetch(case)
    if lu is not None:
        rows.append((None, "lu", f"fetch ({lu_side})", style.length_text(lu)))
    if case.get("gamma"):
        rows.append((None, "\u03b3", "snow density", style.quantity_text(case["gamma"])))
    return [r for r in rows if not r[3].startswith("none")]


def _draw_step(ax, case, roof_json, adjacent=False):
    bal = _psf(case.get("balanced")) or _psf(((roof_json or {}).get("loads") or {}).get("ps"))
    bb, dd, cc = _depths(case, bal)
    windward = case.get("governs") == "windward"
    yl, xw = 1.0, 3.6
    x0 = xw + (0.75 if adjacent else 0.0)
    xe = 9.6
    yb, yu = yl + bb, yl + bb + cc
    ww = _drift_width(case, dd, 1.8, 3.6)
    w, won = _ft(case.get("w")), _ft(case.get("w_on_roof"))
    cut = (_psf(case.get("pd_far_edge")) or 0.0) > 0 and w and won is not None and won < w
    if cut:
        xe = x0 + max(ww * won / w, 1.3)
    # structure; a parapet on the upper roof at the step stands on its edge, its top at yu
    hp_ft, hb_ft, hc_ft = (_ft(case.get(k)) for k in ("upper_parapet", "hb", "hc"))
    pp = 0.0
    if hp_ft and hb_ft is not None and hc_ft:
        pp = _clamp((bb + cc) * hp_ft / (hb_ft + hc_ft), 0.3, 0.6 * cc)
    yr = yu - pp  # the upper roof's surface
    _patch(ax, [(0.3, yr), (xw, yr), (xw, yl - (1.35 if adjacent else 0.0)),
                (0.3, yl - (1.35 if adjacent else 0.0))], "interior")  # fmt: skip
    _line(ax, [0.3, xw, xw], [yr, yr, yl - (1.35 if adjacent else 0.0)])
    if pp:
        _patch(ax, _rect(xw - 0.22, xw, yr, yu), "solid")
        # hp between the hb/hd column (xw - 0.32) and the hc column (xw - 1.08); the word
        # beyond the hc column
        _vdim(ax, xw - 0.62, yr, yu, "hp")
        _ext(ax, xw - 0.62, xw - 0.22, yu)
        _text(ax, xw - 1.25, (yr + yu) / 2, "parapet", ha="right")
    _line(ax, [x0, xe, xe], [yl, yl, yl - 0.35])
    if adjacent:
        _line(ax, [x0, x0], [yl, yl - 1.35])
    # snow: balanced strip, drift (cut at the far edge of the lower roof, the rest dashed)
    _patch(ax, _rect(x0, xe, yl, yb), "snow")
    if cut:
        y_cut = yb + dd * (1 - (xe - x0) / ww)
        _patch(ax, [(x0, yb), (x0, yb + dd), (xe, y_cut), (xe, yb)], "surcharge")
        _patch(ax, [(xe, yb), (xe, y_cut), (x0 + ww, yb)], "surcharge", dashed=True)
    else:
        _patch(ax, [(x0, yb), (x0, yb + dd), (x0 + ww, yb)], "surcharge")
    # names
    _text(ax, 0.42, yr - 0.1, "upper roof", ha="left", va="top")
    # a short lower roof: its name beyond the far edge, clear of the edge's line
    _text(ax, (xe if cut else x0) + 0.15, yl - 0.1, "lower roof", ha="left", va="top")
    _text(ax, xe - 0.12, (yl + yb) / 2, "ps", ha="right", style="italic")
    _text(ax, x0 + 0.12, yb + dd + 0.06, _peak(case), ha="left", va="bottom", style="italic")
    # heights, in two columns inside the upper structure
    c1, c2 = xw - 0.32, xw - 1.08
    for y in (yb, yb + dd):
        _ext(ax, c2 if y == yb else c1, x0, y)
    if case.get("hb"):
        _vdim(ax, c1, yl, yb, "hb")
        _ext(ax, c1, x0, yl)
    _vdim(ax, c1, yb, yb + dd, "hd")
    if case.get("hc"):
        _vdim(ax, c2, yb, yu, "hc")
    # lengths along the roofs, each in its own lane
    _hdim(ax, x0, x0 + ww, 0.35, "w")
    gap = separation(case) if adjacent else None
    if gap is not None:  # the gap is drawn in any case; its symbol where a step gives s
        _hdim(ax, xw, x0, 0.35, "s")
    if cut and not windward:  # (windward, the fetch lu is this same length)
        _hdim(ax, x0, xe, -0.3, "w roof")
    if windward:
        if fetch(case) is not None:
            _hdim(ax, x0, xe, -0.3, "lu")
        _wind(ax, 8.9, 7.1, yu + 1.0)
    else:
        if fetch(case) is not None:
            _hdim(ax, 0.3, xw, yu + 0.38, "lu", below=False)
        _wind(ax, 0.95, 2.7, yu + 1.12)
    rows = _drift_rows(case, roof_json, "lower roof" if windward else "upper roof")
    if gap is not None:
        rows.append((None, "s", "separation", style.length_text(gap)))
    if pp:
        rows.append((None, "hp", "parapet on the upper roof (in hc)",
                     style.length_text(case["upper_parapet"])))  # fmt: skip
    return rows, []


def _draw_parapet(ax, case, roof_json):
    bal = _psf(case.get("balanced")) or _psf(((roof_json or {}).get("loads") or {}).get("ps"))
    bb, dd, cc = _depths(case, bal)
    yl, xp, t = 1.0, 6.9, 0.3
    yb, yu = yl + bb, yl + bb + cc
    ww = _drift_width(case, dd, 1.8, 3.6)
    _patch(ax, _rect(0.4, xp + t, yl - 0.55, yl), "interior")
    _line(ax, [0.4, xp + t], [yl, yl])
    _patch(ax, _rect(xp, xp + t, yl, yu), "solid")
    _patch(ax, _rect(0.4, xp, yl, yb), "snow")
    _patch(ax, [(xp, yb), (xp, yb + dd), (xp - ww, yb)], "surcharge")
    _text(ax, xp + t + 0.12, yu + 0.08, "parapet", ha="left", va="bottom")
    _text(ax, 0.5, yl - 0.1, "roof", ha="left", va="top")
    _text(ax, 0.55, (yl + yb) / 2, "ps", ha="left", style="italic")
    _text(ax, xp - 0.12, yb + dd + 0.06, _peak(case), ha="right", va="bottom", style="italic")
    c1, c2 = xp + t + 0.55, xp + t + 1.35
    _ext(ax, xp + t, c2, yb)
    _ext(ax, xp, c1, yb + dd)
    if case.get("hb"):
        _vdim(ax, c1, yl, yb, "hb", side="right")
        _ext(ax, xp + t, c1, yl)
    _vdim(ax, c1, yb, yb + dd, "hd", side="right")
    if case.get("hc"):
        _vdim(ax, c2, yb, yu, "hc", side="right")
        _ext(ax, xp + t, c2, yu)
    _hdim(ax, xp - ww, xp, 0.35, "w")
    if fetch(case) is not None:
        _hdim(ax, 0.4, xp, -0.3, "lu")
    _wind(ax, 1.0, 2.8, max(yu, yb + dd) + 0.45)
    return _drift_rows(case, roof_json, "roof upwind"), []


def _draw_projection(ax, case, roof_json):
    bal = _psf(case.get("balanced")) or _psf(((roof_json or {}).get("loads") or {}).get("ps"))
    bb, dd, cc = _depths(case, bal)
    yl, xa, xb = 1.0, 5.6, 7.4
    yb, yt = yl + bb, yl + bb + cc
    ww = _drift_width(case, dd, 1.4, 2.05)
    _patch(ax, _rect(0.4, 9.6, yl - 0.55, yl), "interior")
    _line(ax, [0.4, 9.6], [yl, yl])
    _patch(ax, _rect(0.4, xa, yl, yb), "snow")
    _patch(ax, _rect(xb, 9.6, yl, yb), "snow")
    _patch(ax, [(xa, yb), (xa, yb + dd), (xa - ww, yb)], "surcharge")
    _patch(ax, [(xb, yb), (xb, yb + dd), (xb + ww, yb)], "surcharge", dashed=True)
    _patch(ax, _rect(xa, xb, yl, yt), "interior")  # the unit, hatched along its faces
    _patch(ax, _rect(xa, xa + 0.16, yl, yt), "solid")
    _patch(ax, _rect(xb - 0.16, xb, yl, yt), "solid")
    _line(ax, [xa, xa, xb, xb], [yl, yt, yt, yl], lw=1.6)
    _text(ax, (xa + xb) / 2, yt + 0.08, "projection", va="bottom")
    _text(ax, 0.5, yl - 0.1, "roof", ha="left", va="top")
    _text(ax, 0.55, (yl + yb) / 2, "ps", ha="left", style="italic")
    _text(ax, xa - 0.12, yb + dd + 0.06, _peak(case), ha="right", va="bottom", style="italic")
    c1, c2 = xa + 0.42, xa + 1.18
    _ext(ax, xa, c2, yb)
    _ext(ax, xa, c1, yb + dd)
    if case.get("hb"):
        _vdim(ax, c1, yl, yb, "hb", side="right")
    _vdim(ax, c1, yb, yb + dd, "hd", side="right")
    if case.get("hc"):
        _vdim(ax, c2, yb, yt, "hc", side="right")
    _hdim(ax, xa - ww, xa, 0.35, "w")
    side, length = case.get("side"), case.get("roof_length")
    if side and length:  # a drift per side: the roof length of this side; lu the greater one
        _hdim(ax, 0.4, xa, -0.3, "l")
    elif fetch(case) is not None:
        _hdim(ax, 0.4, xa, -0.3, "lu")
    _wind(ax, 1.0, 2.8, max(yt, yb + dd) + 0.45)
    if side and length:
        rows = _drift_rows(case, roof_json, "the greater roof length of the two sides")
        rows.append((None, "l", f"roof length, {side} side", style.length_text(length)))
        note = f"the {side} side; dashed: the drift on the opposite side, from the same lu"
        return rows, [note]
    note = "dashed: the same drift on another side, with the wind from that side"
    return _drift_rows(case, roof_json, "roof upwind"), [note]


def _draw_sliding(ax, case, roof_json):
    bal = _psf(case.get("balanced"))
    if bal is None:
        bal = _psf(((roof_json or {}).get("loads") or {}).get("ps")) or 0.0
    slide = _psf(case.get("load")) or 0.0
    s = separation(case)
    apart = s is not None and (_ft(s) or 0.0) > 0
    k = 2.4 / (bal + slide) if bal + slide > 0 else 1.0
    hb = _clamp(bal * k, 0.48, 1.3)
    hs = _clamp(slide * k, 0.5, 1.8)
    yl, xw = 1.0, 3.2
    x0 = xw + (0.8 if apart else 0.0)
    ye = 3.7  # upper eave
    ext, up_w = _ft(case.get("extent")), 15.0
    xx = _clamp(3.2 * (ext / up_w if ext else 1.0), 1.6, 3.2)
    base = yl - (1.35 if apart else 0.0)
    _patch(ax, [(0.3, 4.9), (xw, ye), (xw, base), (0.3, base)], "interior")
    _line(ax, [0.3, xw, xw], [4.9, ye, base])
    _line(ax, [x0, 9.6, 9.6], [yl, yl, yl - 0.35])
    if apart:
        _line(ax, [x0, x0], [yl, base])
    _patch(ax, _rect(x0, 9.6, yl, yl + hb), "snow")
    _patch(ax, _rect(x0, x0 + xx, yl + hb, yl + hb + hs), "surcharge")
    # the snow sliding off the upper roof, parallel to it
    _arrow(ax, 0.9, 5.25, 2.75, 4.42, style_="-|>", colour=_C["wind"], lw=1.4, scale=11)
    _text(ax, 0.75, 5.48, "snow slides", ha="left", va="bottom", colour=_C["wind"], weight="bold")
    _text(ax, 0.42, ye - 0.2, "upper roof", ha="left", va="top")
    _text(ax, x0 + 0.15, yl - 0.1, "lower roof", ha="left", va="top")
    _text(ax, 9.48, yl + hb / 2, "ps", ha="right", style="italic")
    _text(ax, x0 + xx / 2, yl + hb + hs + 0.06, "ps + sliding", va="bottom", style="italic")
    _hdim(ax, x0, x0 + xx, 0.35, "extent")
    if apart:
        _hdim(ax, xw, x0, 0.35, "s")
    rows = [
        ("snow", "ps", "balanced snow load", _load(case.get("balanced"))),
        ("surcharge", "sliding", "sliding load, uniform", _load(case.get("load"))),
        (None, "ps + sliding", "total on the extent", _load(case.get("total"))),
        (None, "line load", "per length of eave", style.quantity_text(case.get("line_load"))),
        (None, "extent", "on the lower roof, from its edge", style.length_text(case.get("extent"))),
    ]  # fmt: skip
    if apart:
        rows.append((None, "s", "separation", style.length_text(s)))
    return [r for r in rows if not r[3].startswith("none")], []


def _draw_unbalanced(ax, case, roof_json):
    desc = (roof_json or {}).get("roof") or {}
    ww, lw, sc = (_psf(case.get(k)) or 0.0 for k in ("windward", "leeward", "surcharge"))
    ext = _ft(case.get("surcharge_extent")) or 0.0
    # an asymmetric roof: each case knows its leeward side's W (the side drawn dimensioned)
    w_lee = case.get("leeward_eave_to_ridge") or desc.get("eave_to_ridge")
    w_roof = _ft(w_lee)
    xl, xr, xe = 0.6, 5.0, 9.4
    w_wind = _ft(case.get("windward_eave_to_ridge"))
    if w_wind and w_roof:  # an asymmetric roof: the ridge off the middle, within bounds
        xr = xl + (xe - xl) * _clamp(w_wind / (w_wind + w_roof), 0.3, 0.7)
    slope = fmt._finite(desc.get("slope_deg"))
    t = math.tan(math.radians(slope)) if slope else 0.0
    rise_l, rise_r = ((xr - xl) * t, (xe - xr) * t) if t else (1.2, 1.2)
    top = max(rise_l, rise_r)
    k_rise = _clamp(top, 0.45, 2.0) / top  # the higher side within bounds, the other alike
    yr, y0 = 1.0 + top * k_rise, 3.7
    ye_l, ye_r = yr - rise_l * k_rise, yr - rise_r * k_rise
    k = 2.3 / max(ww, lw + sc, 1e-9)
    hw = _clamp(ww * k, 0.3, 2.3) if ww > 0 else 0.0
    hl = _clamp(lw * k, 0.5, 2.3)
    hs = _clamp(sc * k, 0.45, 2.3) if sc > 0 and ext > 0 else 0.0
    if hl + hs > 2.4:
        hl = max(2.4 - hs, 0.5)
    xx = _clamp((xe - xr) * (ext / w_roof if w_roof else 0.4), 1.3, 2.8) if hs else 0.0
    _patch(ax, [(xl, ye_l), (xr, yr), (xe, ye_r), (xe, 0.25), (xl, 0.25)], "interior")
    _line(ax, [xl, xl, xr, xe, xe], [0.25, ye_l, yr, ye_r, 0.25])
    _line(ax, [xr, xr], [1.0, y0], lw=0.7, colour=_C["muted"], ls=(0, (4, 2)))
    _text(ax, xr, 0.92, "ridge", va="top", colour=_C["muted"])
    if hw:
        _patch(ax, _rect(xl, xr, y0, y0 + hw), "snow")
    else:
        _line(ax, [xl, xr], [y0, y0], lw=0.9, colour=_C["snow_edge"], ls=(0, (3, 2)))
    _patch(ax, _rect(xr, xe, y0, y0 + hl), "snow")
    _text(ax, (xl + xr) / 2, y0 + hw + 0.06, "windward", va="bottom")
    _text(ax, (xr + xx + xe) / 2, y0 + hl + 0.06, "leeward", va="bottom")
    if hs:
        _patch(ax, _rect(xr, xr + xx, y0 + hl, y0 + hl + hs), "surcharge")
        _text(ax, xr + xx / 2, y0 + hl + hs + 0.06, "surcharge", va="bottom")
        _hdim(ax, xr, xr + xx, y0 - 0.3, "extent")
    _wind(ax, 1.05, 2.75, y0 - 0.55)
    if w_roof:
        _hdim(ax, xr, xe, 0.0, "W")
    rows = [
        ("snow", "windward", "windward side", _load(case.get("windward"))),
        ("snow", "leeward", "leeward side", _load(case.get("leeward"))),
    ]
    if hs:
        rows.append(
            ("surcharge", "surcharge", "by the ridge, leeward", _load(case.get("surcharge")))
        )
    if hs:
        rows.append((None, "peak", "leeward + surcharge", _load(case.get("leeward_peak"))))
    if hs:
        rows.append(
            (
                None,
                "extent",
                "surcharge, from ridge",
                style.length_text(case.get("surcharge_extent")),
            )
        )
    if w_roof and case.get("wind_from"):
        rows.append((None, "W", "eave to ridge, leeward side", style.length_text(w_lee)))
        rows.append((None, "W wind", "eave to ridge, windward side",
                     style.length_text(case.get("windward_eave_to_ridge"))))  # fmt: skip
    elif w_roof:
        rows.append((None, "W", "eave to ridge", style.length_text(w_lee)))
    lu = fetch(case)
    if lu is not None:
        rows.append((None, "lu", "fetch of the surcharge", style.length_text(lu)))
    if slope is not None:
        rows.append((None, "slope", "roof slope", fmt.pitch_text(slope)))
    notes = []
    if case.get("wind_from") in ("A", "B"):
        a = case["wind_from"]
        b = "B" if a == "A" else "A"
        notes.append(f"wind from side {a}: side {a} is drawn windward (left), side {b} leeward")
    return [r for r in rows if not r[3].startswith("none")], notes


def _draw_ice_dam(ax, case, roof_json):
    x_top, y_top, xw, xt = 0.4, 4.5, 6.0, 8.4
    slope = (y_top - 1.6) / (xt - x_top)

    def roof_y(x):
        return y_top - slope * (x - x_top)

    yw = roof_y(xw)
    _patch(ax, [(x_top, y_top), (xw, yw), (xw, -0.25), (x_top, -0.25)], "interior")
    _line(ax, [x_top, xt, xt], [y_top, roof_y(xt), roof_y(xt) - 0.18])
    _line(ax, [xw, xw], [yw, -0.25])
    # ice along the eave and icicles under its edge
    xi = 7.1
    _patch(ax, [(xi, roof_y(xi)), (xt, roof_y(xt)), (xt, roof_y(xt) + 0.3),
                (xi + 0.35, roof_y(xi) + 0.22)], "ice")  # fmt: skip
    for x in (7.55, 7.9, 8.25):
        y = roof_y(x) - 0.05
        _patch(ax, [(x - 0.07, y), (x + 0.07, y), (x, y - 0.42)], "ice")
    y0, h = 4.5, 0.85
    _patch(ax, _rect(xw, xt, y0, y0 + h), "surcharge")
    for x in (xw, xt):
        _line(ax, [x, x], [roof_y(x) + (0.35 if x == xt else 0.05), y0], lw=0.5,
              colour=_C["dimension"], ls=(0, (1, 1.5)))  # fmt: skip
    _text(ax, (xw + xt) / 2, y0 + h + 0.06, "eave load", va="bottom", style="italic")
    _text(ax, xt + 0.14, roof_y(xt) + 0.05, "eave", ha="left")
    _text(ax, 7.75, roof_y(7.75) + 0.45, "ice dam", va="bottom", colour=_C["ice_edge"])
    _text(ax, xw - 0.1, 0.0, "exterior wall", ha="right", va="bottom")
    _text(ax, 2.2, roof_y(2.2) + 0.12, "roof", va="bottom")
    _hdim(ax, xw, xt, 0.75, "overhang")
    rows = [
        ("surcharge", "eave load", "uniform, on the overhang", _load(case.get("load"))),
        (None, "overhang", "eave width beyond the wall", style.length_text(case.get("overhang"))),
        (None, "pf", "flat roof snow load", _load(((roof_json or {}).get("loads") or {}).get("pf"))),
    ]  # fmt: skip
    combined = str(case.get("not_combined_with") or "")
    notes = [f"not combined with: {combined}"] if combined else []
    return [r for r in rows if not r[3].startswith("none")], notes


# curved, dome and multi-span roofs (issue 12) -------------------------------------


def _deg(value) -> str:
    v = fmt._finite(value)
    return "none" if v is None else f"{fmt.significant(v)}\u00b0".replace(".0\u00b0", "\u00b0")


def _arc_sketch(ax, case, unbalanced: bool):
    """A curved roof's section, its key points and load profile; returns rows of the lengths.

    The arc is drawn with the case's rise-to-half-chord ratio within bounds; the
    30° and 70° points at their share of the half chord; loads above the roof on
    a baseline, in the ratio of the case's values.
    """
    c, h = _ft(case.get("half_chord")), _ft(case.get("rise"))
    x30, x70 = _ft(case.get("x_30")), _ft(case.get("x_70"))
    xc, cw, ye = 5.0, 4.1, 1.25
    hd = _clamp(cw * (h / c if c and h else 0.4), 0.55, 2.3)
    rd = (cw * cw + hd * hd) / (2.0 * hd)
    yc0 = ye + hd - rd

    def arc_y(x):
        return yc0 + math.sqrt(max(rd * rd - (x - xc) ** 2, 0.0))

    def at(x_ft):  # drawn x of a point x_ft from the crown, leeward (right) side
        return xc + cw * _clamp((x_ft or 0.0) / c, 0.0, 1.0) if c else xc + cw

    xs = [xc - cw + 2 * cw * i / 60 for i in range(61)]
    _patch(ax, [(xc - cw, 0.85), *[(x, arc_y(x)) for x in xs], (xc + cw, 0.85)], "interior")
    _line(ax, [xc - cw, xc - cw], [0.85, ye])
    _line(ax, [xc + cw, xc + cw], [0.85, ye])
    _line(ax, xs, [arc_y(x) for x in xs])
    y0 = ye + hd + 0.55
    pre = "leeward_" if unbalanced else ""
    names = ("crown", "30", "70", "eave") if unbalanced else ("crown", "at_30", "at_70", "eave")
    where = {names[0]: 0.0, names[1]: x30, names[2]: x70, names[3]: c}
    points = [(at(where[n]), _psf(case.get(pre + n))) for n in names
              if _psf(case.get(pre + n)) is not None and (n in (names[0], names[3]) or where[n])]  # fmt: skip
    top = max([v for _, v in points] + [1e-9])
    k = 2.0 / top
    prof = [(x, _clamp(v * k, 0.0, 2.0)) for x, v in points]
    right = [(x, y0 + hh) for x, hh in prof]
    _patch(ax, [(xc, y0), *right, (xc + cw, y0)], "snow")
    if unbalanced:
        _line(ax, [xc - cw, xc], [y0, y0], lw=0.9, colour=_C["snow_edge"], ls=(0, (3, 2)))
    else:
        left = [(2 * xc - x, y) for x, y in reversed(right)]
        _patch(ax, [(xc - cw, y0), *left, (xc, y0)], "snow")
    # the key points: a dashed line from the roof to the load, named below the roof
    for n, label in ((names[1], "30\u00b0"), (names[2], "70\u00b0")):
        if where[n] and _psf(case.get(pre + n)) is not None:
            x = at(where[n])
            _line(ax, [x, x], [arc_y(x), y0], lw=0.6, colour=_C["muted"], ls=(0, (3, 2)))
            _text(ax, x - 0.08, arc_y(x) - 0.12, label, ha="right", va="top", colour=_C["muted"])
    _line(ax, [xc, xc], [ye + hd, y0], lw=0.6, colour=_C["muted"], ls=(0, (3, 2)))
    _text(ax, xc, ye + hd - 0.12, "crown", va="top", colour=_C["muted"])
    _text(ax, xc + cw + 0.12, ye - 0.05, "eave", ha="left", va="top")
    # lengths: the rise at the windward wall, the points' distances from the crown in lanes
    _ext(ax, 0.45, xc, ye + hd)
    _vdim(ax, 0.45, ye, ye + hd, "h", side="right")
    lanes = iter((0.6, 0.17, -0.26))
    _ext(ax, xc, xc, ye)
    _line(ax, [xc, xc], [ye + hd, -0.3], lw=0.5, colour=_C["dimension"], ls=(0, (1, 1.5)))
    rows = []
    for sym, x_ft, what, q in (("c", c, "crown to eave (half chord)", "half_chord"),
                               ("x70", x70, "crown to the 70\u00b0 point", "x_70"),
                               ("x30", x30, "crown to the 30\u00b0 point", "x_30")):  # fmt: skip
        if x_ft:
            _hdim(ax, xc, at(x_ft), next(lanes), sym)
            rows.append((None, sym, what, style.length_text(case.get(q))))
    rows.append((None, "h", "rise, eave to crown", style.length_text(case.get("rise"))))
    cond = str(case.get("eave_condition") or "").split(":")[0]
    rows.append((None, "\u03b8e", f"slope at the eave (condition {cond})" if cond else
                 "slope at the eave", _deg(case.get("eave_slope_deg"))))  # fmt: skip
    return rows, y0, top * k


def _draw_curved_balanced(ax, case, roof_json):
    rows, y0, hmax = _arc_sketch(ax, case, unbalanced=False)
    _text(ax, 7.0, y0 + hmax + 0.06, "Cs pf", va="bottom", style="italic")
    loads = [
        ("snow", "Cs pf", "load at the crown", _load(case.get("crown"))),
        ("snow", "p 30", "at the 30\u00b0 point", _load(case.get("at_30"))),
        ("snow", "p 70", "at the 70\u00b0 point", _load(case.get("at_70"))),
        ("snow", "p eave", "at the eave", _load(case.get("eave"))),
    ]
    notes = ["between the points the load follows Cs of the tangent slope there"]
    return [r for r in loads + rows if not r[3].startswith("none")], notes


def _curved_load_rows(case) -> list[tuple]:
    return [
        ("snow", "p crown", "leeward, at the crown", _load(case.get("leeward_crown"))),
        ("snow", "p 30", "leeward, at the 30\u00b0 point", _load(case.get("leeward_30"))),
        ("snow", "p 70", "leeward, at the 70\u00b0 point", _load(case.get("leeward_70"))),
        ("snow", "p eave", "leeward, at the eave", _load(case.get("leeward_eave"))),
        (None, "windward", "windward side", _load(case.get("windward"))),
    ]


def _draw_curved(ax, case, roof_json):
    rows, y0, hmax = _arc_sketch(ax, case, unbalanced=True)
    _text(ax, 2.95, y0 + 0.08, "windward", va="bottom")
    _text(ax, 7.1, y0 + hmax + 0.06, "leeward", va="bottom")
    _wind(ax, 1.35, 3.1, y0 + 0.95)
    out = _curved_load_rows(case) + rows
    return [r for r in out if not r[3].startswith("none")], []


def _draw_dome(ax, case, roof_json):
    from matplotlib.patches import Circle, Wedge

    rows, y0, hmax = _arc_sketch(ax, case, unbalanced=True)
    _text(ax, 2.95, y0 + 0.08, "section", va="bottom", colour=_C["muted"])
    _text(ax, 7.1, y0 + hmax + 0.06, "leeward", va="bottom")
    _wind(ax, 1.35, 3.1, y0 + 0.95)
    full = fmt._finite(case.get("sector_deg")) or 90.0
    taper = fmt._finite(case.get("taper_deg")) or 22.5
    r, cx, cy = 0.62, 1.55, min(y0 + 2.05, 6.25)
    ax.add_patch(Circle((cx, cy), r, facecolor=_C["interior"], edgecolor=_C["structure"], lw=1.0))
    ax.add_patch(Wedge((cx, cy), r, -full / 2, full / 2, facecolor=_C["snow"],
                       edgecolor=_C["snow_edge"], lw=0.8))  # fmt: skip
    for a0 in (full / 2, -full / 2 - taper):
        ax.add_patch(Wedge((cx, cy), r, a0, a0 + taper, facecolor=_C["snow"], alpha=0.45,
                           edgecolor=_C["snow_edge"], lw=0.6, ls=(0, (2, 2))))  # fmt: skip
    _text(ax, cx + r + 0.15, cy, "plan", ha="left", colour=_C["muted"])
    out = (
        _curved_load_rows(case)
        + rows
        + [
            (None, "sector", "downwind, full load (plan)", _deg(full)),
            (None, "taper", "each side, falling to zero", _deg(taper)),
        ]
    )
    return [r for r in out if not r[3].startswith("none")], []


def _draw_sawtooth(ax, case, roof_json):
    ridge, valley = _psf(case.get("ridge")) or 0.0, _psf(case.get("valley")) or 0.0
    unlimited = _psf(case.get("valley_unlimited")) or valley
    hr, w = _ft(case.get("ridge_height")), _ft(case.get("ridge_to_valley"))
    yv, bay, x0 = 1.0, 4.2, 0.9
    hh = _clamp(bay * (hr / w if hr and w else 0.3), 0.7, 1.9)
    pts = []
    for i in range(2):
        xa = x0 + i * bay
        pts += [(xa, yv), (xa + bay, yv + hh)]
    profile = [(x0, yv - 0.45), *pts, (x0 + 2 * bay, yv - 0.45)]
    _patch(ax, profile, "interior")
    _line(ax, [x0, x0], [yv - 0.45, yv])
    _line(ax, [p[0] for p in pts] + [x0 + 2 * bay], [p[1] for p in pts] + [yv - 0.45])
    y0 = yv + hh + 0.55
    k = 2.3 / max(unlimited, ridge, 1e-9)
    hv, hrd, hu = (_clamp(v * k, 0.15, 2.3) for v in (valley, ridge, unlimited))
    for i in range(2):
        xa = x0 + i * bay
        _patch(ax, [(xa, y0), (xa, y0 + hv), (xa + bay, y0 + hrd), (xa + bay, y0)], "snow")
        if unlimited > valley + 1e-9 and i == 0:  # the valley load before the limit, once
            _patch(ax, [(xa, y0 + hv), (xa, y0 + hu), (xa + bay, y0 + hrd)], "snow", dashed=True)
        _line(ax, [xa, xa], [yv, y0], lw=0.6, colour=_C["muted"], ls=(0, (3, 2)))
    _text(ax, x0 + 0.1, y0 + max(hv, hu) + 0.06, "p valley", ha="left", va="bottom",
          style="italic")  # fmt: skip
    _text(ax, x0 + 2 * bay - 0.1, y0 + hrd + 0.06, "p ridge", ha="right", va="bottom",
          style="italic")  # fmt: skip
    _text(ax, x0 + 0.1, yv - 0.08, "valley", ha="left", va="top", colour=_C["muted"])
    _text(ax, x0 + bay + 0.1, yv - 0.08, "valley", ha="left", va="top", colour=_C["muted"])
    _text(ax, x0 + bay - 0.1, yv + hh + 0.05, "ridge", ha="right", va="bottom",
          colour=_C["muted"])  # fmt: skip
    xd = x0 + 2 * bay + 0.3
    _ext(ax, x0 + 2 * bay, xd, yv + hh)
    _ext(ax, x0 + 2 * bay, xd, yv)
    _vdim(ax, xd, yv, yv + hh, "hr", side="right")
    _hdim(ax, x0 + bay, x0 + 2 * bay, 0.1, "W")
    rows = [
        ("snow", "p ridge", "at the ridge, 0.5 pf", _load(case.get("ridge"))),
        ("snow", "p valley", f"in the valley ({case.get('governs') or 'valley'})",
         _load(case.get("valley"))),
        (None, "2 pf/Ce", "valley, before the limit", _load(case.get("valley_unlimited"))),
        (None, "p max", "valley snow level with the ridge's", _load(case.get("valley_limit"))),
        (None, "hr", "ridge height above the valley", style.length_text(case.get("ridge_height"))),
        (None, "W", "ridge to valley", style.length_text(case.get("ridge_to_valley"))),
    ]  # fmt: skip
    if case.get("gamma"):
        rows.append((None, "\u03b3", "snow density", style.quantity_text(case["gamma"])))
    notes = ["drawn as a sawtooth; folded plates and barrel vaults load alike"]
    if unlimited > valley + 1e-9:
        notes = ["dashed: 2 pf/Ce, cut where the valley snow would rise above the ridge's"]
    return [r for r in rows if not r[3].startswith("none")], notes


_DRAW = {
    "curved_balanced": _draw_curved_balanced,
    "curved": _draw_curved,
    "dome": _draw_dome,
    "sawtooth": _draw_sawtooth,
    "step": _draw_step,
    "adjacent": lambda ax, case, roof: _draw_step(ax, case, roof, adjacent=True),
    "parapet": _draw_parapet,
    "projection": _draw_projection,
    "sliding": _draw_sliding,
    "unbalanced": _draw_unbalanced,
    "ice_dam": _draw_ice_dam,
}


# layout: the title, the table and the notes fitted to the figure -----------


def _fit_title(fig, renderer, text: str):
    """The title, wrapped to at most two lines that fit the figure's width."""
    limit = fig.bbox.width * 0.985
    t = fig.text(0.008, 0.985, "", ha="left", va="top", fontsize=_FS_TITLE, weight="bold",
                 color=_C["text"])  # fmt: skip
    for width in range(110, 19, -6):
        t.set_text(textwrap.fill(text, width, max_lines=2, placeholder=" \u2026"))
        if t.get_window_extent(renderer).x1 <= limit:
            break
    return t


def _table(fig, renderer, rows, size):
    """The rows beside the sketch: swatch, symbol, description, value (right-aligned)."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Rectangle

    left, right, top = _TABLE
    row_h = size * 1.62 / 72 / fig.get_figheight()
    sw = size * 0.9 / 72 / fig.get_figwidth()
    made = []
    syms = []
    for i, (swatch, sym, _, _) in enumerate(rows):
        y = top - (i + 0.5) * row_h
        if swatch:
            made.append(fig.add_artist(Rectangle(
                (left, y - sw * fig.get_figwidth() / fig.get_figheight() / 2), sw,
                sw * fig.get_figwidth() / fig.get_figheight(), transform=fig.transFigure,
                facecolor=_C[swatch], edgecolor=_C[f"{swatch}_edge"], lw=0.6,
                hatch=_H.get(swatch))))  # fmt: skip
        syms.append(fig.text(left + sw * 1.6, y, sym, ha="left", va="center", fontsize=size,
                             style="italic", color=_C["text"]))  # fmt: skip
        made.append(fig.add_artist(Line2D([left, right], [y - row_h / 2] * 2, lw=0.4,
                                          color=_C["rule"], transform=fig.transFigure)))  # fmt: skip
    inv = fig.transFigure.inverted()
    sym_right = max((inv.transform((s.get_window_extent(renderer).x1, 0))[0] for s in syms),
                    default=left)  # fmt: skip
    texts = list(syms)
    for i, (_, _, what, value) in enumerate(rows):
        y = top - (i + 0.5) * row_h
        texts.append(fig.text(sym_right + 0.012, y, what, ha="left", va="center", fontsize=size,
                              color=_C["muted"]))  # fmt: skip
        texts.append(fig.text(right, y, value, ha="right", va="center", fontsize=size,
                              color=_C["text"]))  # fmt: skip
    return texts + made, top - len(rows) * row_h


def _table_fits(renderer, texts, n_rows, bottom, fig) -> bool:
    if bottom < 0.07:
        return False
    sym, rest = texts[:n_rows], texts[n_rows:]
    for i in range(n_rows):
        what, value = rest[2 * i], rest[2 * i + 1]
        a, b = what.get_window_extent(renderer), value.get_window_extent(renderer)
        if a.x1 + 4 > b.x0 or sym[i].get_window_extent(renderer).x1 > a.x0:
            return False
    return True


@style.plain_figure_text
def case_figure(case: dict, roof_json: dict | None = None):
    """The load diagram of one case, as a matplotlib Figure (not saved, not closed).

    Parameters
    ----------
    case : dict
        One case of the ``neve roof`` JSON (``cases[i]``), of a kind in
        :data:`DIAGRAM_CASES`.
    roof_json : dict, optional
        The whole ``neve roof`` JSON object, for the roof's loads (``ps``,
        ``pf``) and description (``eave_to_ridge``, ``slope_deg``).

    Returns
    -------
    matplotlib.figure.Figure or None
        None for a case that has no diagram.
    """
    import matplotlib

    matplotlib.use("Agg", force=True)
    from matplotlib.figure import Figure

    kind = diagram_kind(case)
    if kind is None:
        return None
    with matplotlib.rc_context({"hatch.linewidth": 0.45, "font.family": "DejaVu Sans"}):
        fig = Figure(figsize=_FIG_IN, dpi=_DPI)
        from matplotlib.backends.backend_agg import FigureCanvasAgg

        FigureCanvasAgg(fig)
        renderer = fig.canvas.get_renderer()
        ax = fig.add_axes(_SKETCH)
        ax.set_xlim(*_XLIM)
        ax.set_ylim(*_YLIM)
        ax.axis("off")
        rows, notes = _DRAW[kind](ax, case, roof_json)
        name = str(case.get("name") or case.get("case"))
        _fit_title(fig, renderer, f"{DIAGRAM_KINDS[kind]}: {name}")
        for size in (_FS_TABLE, 7.0, 6.5, 6.0, 5.5, 5.0):
            made, bottom = _table(fig, renderer, rows, size)
            if _table_fits(renderer, made, len(rows), bottom, fig) or size == 5.0:
                break
            for artist in made:
                artist.remove()
        for j, note in enumerate([NOTE, *notes]):
            fig.text(0.008, 0.012 + 0.036 * (len(notes) - j), note, ha="left", va="bottom",
                     fontsize=_FS_NOTE, color=_C["muted"])  # fmt: skip
        fig.canvas.draw()
    return fig


def _slug(text: str) -> str:
    return re.sub(r"[^a-z0-9]+", "_", text.lower()).strip("_")[:40] or "case"


@style.plain_figure_text
def write_case_diagrams(
    roof_json: dict | None, outdir: str | os.PathLike, *, overwrite: bool = False
) -> dict[str, Path]:
    """Draw a PNG load diagram for each case of a kind in :data:`DIAGRAM_CASES`.

    Parameters
    ----------
    roof_json : dict or None
        The ``neve roof`` JSON object (``cases`` with their loads [psf] and
        lengths [ft] in the contract's ``{"psf","kPa"}``/``{"ft","m"}`` form).
    outdir : path-like
        Folder for the PNG files (created if needed).
    overwrite : bool
        Replace diagram files that exist already (otherwise an ``InputError``).

    Returns
    -------
    dict
        Case name -> PNG path, in the order of the cases.
    """
    import io

    out: dict[str, Path] = {}
    if not roof_json:
        return out
    folder = Path(outdir)
    for i, case in enumerate(roof_json.get("cases") or []):
        fig = case_figure(case, roof_json)
        if fig is None:
            continue
        buf = io.BytesIO()
        fig.savefig(buf, format="png", dpi=_DPI)
        kind = str(case.get("case", ""))
        name = str(case.get("name") or kind)
        key = name if name not in out else f"{name} ({i})"
        out[key] = write_bytes(
            folder / f"diagram_{i:02d}_{_slug(kind + '_' + name)}.png", buf.getvalue(),
            overwrite=overwrite, field="diagrams", parents=True,
        )  # fmt: skip
    return out
