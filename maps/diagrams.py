"""Load diagrams of the roof snow load cases (matplotlib, Agg, PNG).

Schematic, not to scale along the roof: each diagram shows the roof line,
the snow load as blocks with their values in psf and kPa, and the lengths
that define them (surcharge extent, drift width and height), so that a
reviewer can see the load case at a glance beside its step-by-step values.
Drawn for the ``unbalanced``, ``drift`` and ``sliding`` cases of the
``neve roof`` JSON object.
"""

from __future__ import annotations

import os
import re
import textwrap
from pathlib import Path

from neve.engine import format as fmt
from neve.maps import style
from neve.safe_write import write_bytes


def _load(load) -> str:
    """A load on a diagram as in the package's tables: 0.1 psf, 0.01 kPa, zeros kept."""
    return fmt.load_text(load, missing="none", missing_number="\u2014")


#: case kinds that get a diagram
DIAGRAM_CASES = ("unbalanced", "drift", "sliding")

_SNOW = "#9ec5e8"
_SNOW_EDGE = "#2f5d8a"
_SURCHARGE = "#f2b66d"
_ROOF = "#1b1f3b"


def _psf(load) -> float | None:
    if isinstance(load, dict) and load.get("psf") is not None:
        return float(load["psf"])
    return None


def _block(ax, x0, x1, y0, h, colour=_SNOW, label=None, base=0.0):
    from matplotlib.patches import Rectangle

    ax.add_patch(
        Rectangle((x0, base + y0), x1 - x0, h, facecolor=colour, edgecolor=_SNOW_EDGE, lw=1)
    )
    if label:
        ax.text((x0 + x1) / 2, base + y0 + h + 0.08, label, ha="center", va="bottom", fontsize=8)


def _dim(ax, x0, x1, y, text):
    ax.annotate(
        "", xy=(x0, y), xytext=(x1, y), arrowprops={"arrowstyle": "<->", "color": "#444", "lw": 0.8}
    )
    ax.text((x0 + x1) / 2, y - 0.06, text, ha="center", va="top", fontsize=8, color="#333")


def _unbalanced(ax, case, scale):
    ww = _psf(case.get("windward")) or 0.0
    lw = _psf(case.get("leeward")) or 0.0
    sc = _psf(case.get("surcharge")) or 0.0
    ext = case.get("surcharge_extent")
    # roof: eaves at x=0 and x=8, ridge at x=4; snow drawn above a datum line
    ax.plot([0, 4, 8], [-1.2, -0.4, -1.2], color=_ROOF, lw=2.5)
    ax.plot([0, 0], [-1.2, -1.9], color=_ROOF, lw=2)
    ax.plot([8, 8], [-1.2, -1.9], color=_ROOF, lw=2)
    _block(ax, 0, 4, 0, ww * scale, label=f"windward {_load(case.get('windward'))}")
    _block(ax, 4, 8, 0, lw * scale, label=None)
    e = 4 * 0.45 if ext else 0.0
    if sc > 0 and e > 0:
        _block(ax, 4, 4 + e, lw * scale, sc * scale, colour=_SURCHARGE)
        ax.text(4 + e + 0.1, lw * scale + sc * scale * 0.5, f"surcharge {_load(case.get('surcharge'))}",
                ha="left", va="center", fontsize=8)  # fmt: skip
        _dim(ax, 4, 4 + e, -0.15, f"extent {style.length_text(ext)}")
    ax.text(
        6.0,
        lw * scale * 0.5,
        f"leeward\n{_load(case.get('leeward'))}",
        ha="center",
        va="center",
        fontsize=8,
    )
    ax.annotate("wind", xy=(1.6, -0.55), xytext=(0.2, -0.55), fontsize=9, va="center",
                arrowprops={"arrowstyle": "-|>", "color": "#555", "lw": 1.4})  # fmt: skip
    ax.text(4, -0.55, "ridge", ha="center", va="top", fontsize=7, color="#555")
    return max(ww, lw + sc)


def _drift(ax, case, scale, balanced, roof_loads=None):
    from matplotlib.patches import Polygon

    pd = _psf(case.get("pd")) or 0.0
    bal = balanced or 0.0
    # upper roof (or parapet/obstruction) on the left, lower roof to the right
    ax.plot([-1.5, 0, 0, 8], [1.6, 1.6, -0.05, -0.05], color=_ROOF, lw=2.5)
    w = 3.6
    _block(ax, 0, 8, 0, bal * scale, label=None)
    ax.add_patch(Polygon([(0, bal * scale), (0, (bal + pd) * scale), (w, bal * scale)],
                         closed=True, facecolor=_SURCHARGE, edgecolor=_SNOW_EDGE, lw=1))  # fmt: skip
    ax.text(
        0.15,
        (bal + pd) * scale + 0.08,
        f"pd = {_load(case.get('pd'))}",
        ha="left",
        va="bottom",
        fontsize=8,
    )
    ax.text(6.0, bal * scale * 0.5, f"balanced\n{_load((roof_loads or {}).get('ps')) if bal else 'none'}",
            ha="center", va="center", fontsize=8)  # fmt: skip
    _dim(ax, 0, w, -0.2, f"w = {style.length_text(case.get('w'))}")
    ax.text(
        w + 0.2,
        (bal + pd * 0.55) * scale,
        f"hd = {style.length_text(case.get('hd'))}",
        fontsize=8,
        va="center",
    )
    gov = case.get("governs")
    if gov:
        ax.text(
            7.9,
            (bal + pd) * scale,
            f"governs: {gov}",
            ha="right",
            va="top",
            fontsize=8,
            color="#333",
        )
    return bal + pd


def _sliding(ax, case, scale, balanced, roof_loads=None):
    load = _psf(case.get("load") or case.get("surcharge") or case.get("ps")) or 0.0
    bal = balanced or 0.0
    ax.plot([-2.0, 0, 0, 8], [2.2, 0.9, -0.05, -0.05], color=_ROOF, lw=2.5)
    _block(ax, 0, 8, 0, bal * scale)
    _block(ax, 0, 2.2, bal * scale, load * scale, colour=_SURCHARGE)
    ext = case.get("extent") or case.get("width") or case.get("w")
    ax.text(2.35, (bal + load * 0.5) * scale, f"sliding {_load(case.get('load') or case.get('surcharge'))}",
            va="center", fontsize=8)  # fmt: skip
    if isinstance(ext, dict):
        _dim(ax, 0, 2.2, -0.2, style.length_text(ext))
    if bal:
        ax.text(5.5, bal * scale * 0.5, f"balanced\n{_load((roof_loads or {}).get('ps'))}",
                ha="center", va="center", fontsize=8)  # fmt: skip
    return bal + load


def _slug(text: str) -> str:
    return re.sub(r"[^a-z0-9]+", "_", text.lower()).strip("_")[:40] or "case"


@style.plain_figure_text
def write_case_diagrams(
    roof_json: dict | None, outdir: str | os.PathLike, *, overwrite: bool = False
) -> dict[str, Path]:
    """Draw a PNG load diagram for each unbalanced, drift and sliding case.

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

    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    out: dict[str, Path] = {}
    if not roof_json:
        return out
    folder = Path(outdir)
    balanced = _psf((roof_json.get("loads") or {}).get("ps"))
    for i, case in enumerate(roof_json.get("cases") or []):
        kind = str(case.get("case", ""))
        if kind not in DIAGRAM_CASES:
            continue
        peak = max(
            [_psf(case.get(k)) or 0.0 for k in ("windward", "leeward", "pd", "load")]
            + [(_psf(case.get("leeward")) or 0.0) + (_psf(case.get("surcharge")) or 0.0)]
            + [(balanced or 0.0) + (_psf(case.get("pd")) or _psf(case.get("load")) or 0.0)]
        )
        scale = 2.2 / peak if peak > 0 else 1.0
        fig, ax = plt.subplots(figsize=(7.2, 3.3), dpi=150)
        if kind == "unbalanced":
            _unbalanced(ax, case, scale)
        elif kind == "drift":
            _drift(ax, case, scale, balanced, roof_json.get("loads"))
        else:
            _sliding(ax, case, scale, balanced, roof_json.get("loads"))
        name = str(case.get("name") or kind)
        title = textwrap.fill(f"{kind}: {name}", 100, max_lines=2, placeholder=" \u2026")
        ax.set_title(title, fontsize=10, loc="left")
        ax.set_xlim(-2.2, 8.6)
        ax.set_ylim(-2.0, 3.0)
        ax.set_aspect("auto")
        ax.axis("off")
        fig.text(
            0.01,
            0.01,
            "schematic; lengths not to scale; loads in psf (kPa)",
            fontsize=7,
            color="#555",
        )
        fig.tight_layout()
        buf = io.BytesIO()
        fig.savefig(buf, format="png")
        plt.close(fig)
        key = name if name not in out else f"{name} ({i})"
        out[key] = write_bytes(
            folder / f"diagram_{i:02d}_{_slug(kind + '_' + name)}.png", buf.getvalue(),
            overwrite=overwrite, field="diagrams", parents=True,
        )  # fmt: skip
    return out
