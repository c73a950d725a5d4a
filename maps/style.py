"""neve's own colours, symbols, value classes and text helpers for maps and reports.

Colours are our own: a cool sequence from pale frost to deep slate for mapped
values, an orange hatch for study-required areas (no value, so it is drawn
as a pattern and never as a colour of the value scale), lavender for zones
whose value depends on elevation, and a crimson outline for the zone that
governs the site.
"""

from __future__ import annotations

import functools
import math
import warnings
from html import escape

from neve.engine import format as fmt
from neve.engine.units import KPA_PER_PSF

#: value scale, low to high (our own)
VALUE_COLOURS = (
    "#eef7f6",
    "#cde9e4",
    "#a3d6d3",
    "#76bdc9",
    "#4f9cbd",
    "#3b78a8",
    "#34548f",
    "#2c3470",
)
#: study-required areas: hatch colour
STUDY_COLOUR = "#d9480f"
#: zones whose value follows from elevation (table or formula)
ELEVATION_COLOUR = "#cfc5ea"
#: zones with no usable value for another reason
NO_VALUE_COLOUR = "#d0d0d0"
#: outline of the governing zone
GOVERNING_COLOUR = "#c2185b"
#: problems found by a layer check
PROBLEM_COLOUR = "#e03131"
#: site marker
SITE_COLOUR = "#1b1f3b"

#: load diagrams of the roof cases (maps/diagrams.py): one visual language for every kind.
#: Structure is dark slate like the site marker; snow is a pale tint of the value scale;
#: any surcharge (drift, sliding, unbalanced, eave load) is amber with a hatch, so that
#: balanced snow and surcharge still differ on a black-and-white print.
DIAGRAM_COLOURS = {
    "structure": SITE_COLOUR,  # roof lines, walls
    "interior": "#f3f4f8",  # building section below a roof
    "solid": "#b9bdcb",  # parapet wall, rooftop unit (drawn hatched)
    "snow": "#d3e8f1",  # balanced snow
    "snow_edge": VALUE_COLOURS[5],
    "surcharge": "#f4c27f",  # drift, sliding, unbalanced surcharge, eave load
    "surcharge_edge": "#9a5b12",
    "ice": "#e8f4fb",  # ice dam and icicles
    "ice_edge": "#5b8fb0",
    "dimension": "#3d4256",  # dimension lines and their symbols
    "wind": "#55607a",
    "text": SITE_COLOUR,
    "muted": "#5a5f70",  # notes, table descriptions
    "rule": "#c9cdd8",  # table rules
}
#: hatches of the load diagrams (matplotlib hatch patterns)
DIAGRAM_HATCHES = {"solid": "////", "surcharge": "\\\\", "ice": ".."}

#: short, plain descriptions of the rule kinds
RULE_LABELS = {
    "fixed": "fixed mapped value",
    "elevation_table": "value from an elevation table",
    "formula": "value from a formula in elevation",
    "study": "site-specific case study required",
}

#: ground-load bands of our own for portfolio screening [psf]: (upper bound, label)
PORTFOLIO_BANDS_PSF = (
    (10.0, "under 10 psf"),
    (20.0, "10 to under 20 psf"),
    (30.0, "20 to under 30 psf"),
    (50.0, "30 to under 50 psf"),
    (70.0, "50 to under 70 psf"),
    (100.0, "70 to under 100 psf"),
    (math.inf, "100 psf and over"),
)


def band_labels_kpa() -> list[str]:
    """The names of :data:`PORTFOLIO_BANDS_PSF` kPa first, for sk sites (EN 1991-1-3).

    >>> band_labels_kpa()[:2]
    ['under 0.48 kPa (10 psf)', '0.48 to under 0.96 kPa (10 to under 20 psf)']
    """
    out, lo = [], None
    for upper, _ in PORTFOLIO_BANDS_PSF:
        kpa = lambda psf: num(psf * KPA_PER_PSF, 2)  # noqa: E731
        if lo is None:
            out.append(f"under {kpa(upper)} kPa ({num(upper, 0)} psf)")
        elif math.isinf(upper):
            out.append(f"{kpa(lo)} kPa and over ({num(lo, 0)} psf and over)")
        else:
            out.append(f"{kpa(lo)} to under {kpa(upper)} kPa "
                       f"({num(lo, 0)} to under {num(upper, 0)} psf)")  # fmt: skip
        lo = upper
    return out


#: fills of :data:`PORTFOLIO_BANDS_PSF`: neve's own sequential scale, pale straw through
#: green and teal to deep indigo.  Lightness falls steadily from band to band and the
#: hue turns as it falls, so the bands read in order and adjacent ones stay apart for
#: readers with any of the three common colour-vision deficiencies (checked in
#: tests/maps/test_palette.py with colorspacious: CAM02-UCS lightness strictly
#: decreasing and adjacent delta E >= 8 under simulated protan, deutan and tritan
#: vision, >= 12 with normal vision).  Chosen in CIELCh: lightness 95 to 24 in equal
#: steps, hue 95 to 300 degrees.
PORTFOLIO_BAND_COLOURS = (
    "#fff0a7",
    "#addd87",
    "#50c296",
    "#00a1a2",
    "#007ea0",
    "#005991",
    "#36316e",
)


def portfolio_classes() -> list[dict]:
    """The portfolio bands as value classes [psf] (for :func:`colour_for`): zones drawn alike."""
    out, lo = [], 0.0
    for (upper, label), colour in zip(PORTFOLIO_BANDS_PSF, PORTFOLIO_BAND_COLOURS, strict=True):
        out.append({"lo": lo, "hi": upper, "colour": colour, "label": label})
        lo = upper
    return out


def esc(value: object) -> str:
    """HTML-escape any value (None -> empty), quotes included."""
    return "" if value is None else escape(str(value), quote=True)


def num(x: object, digits: int = 1) -> str:
    """A number for people: trailing zeros dropped; None/NaN -> an em dash.

    The one formatter of :mod:`neve.engine.format`, as maps and reports show it.
    """
    return fmt.number(x, digits, trim=True, missing="\u2014")


def load_text(load: dict | None, first: str = "psf") -> str:
    """``{"psf": x, "kPa": y}`` -> ``"x psf (y kPa)"``; None -> ``"none"``."""
    return fmt.load_text(load, trim=True, missing="none", missing_number="\u2014", first=first)


def length_text(length: dict | None) -> str:
    """``{"ft": x, "m": y}`` -> ``"x ft (y m)"``; None -> ``"none"``."""
    return fmt.length_text(length, trim=True, missing="none", missing_number="\u2014")


def elevation_text(length: dict | None, first: str | None = None) -> str:
    """An elevation or a distance on the ground: ``"1350 ft (411.5 m)"``; None -> ``"none"``.

    ``first="m"``: metres first (an EN 1991-1-3 site: ``"250 m (820 ft)"``).
    """
    return fmt.elevation_text(
        length, trim=True, missing="none", missing_number="\u2014", first=first
    )


#: ground quantities shown SI first (kPa, m) and their symbol as (letter, subscript)
SI_QUANTITIES = ("sk",)
SYMBOLS = {"pg": ("p", "g"), "sk": ("s", "k")}


def ground_quantity(site_json: dict) -> str:
    """The ground quantity of a ``neve site`` object: ``ground.quantity`` (``pg`` if absent)."""
    q = str((site_json.get("ground") or {}).get("quantity") or "pg")
    return q if q in SYMBOLS else "pg"


def si_first(site_json: dict) -> bool:
    """Whether a site's loads are shown kPa first: an sk ground value, or a roof of a
    standard whose load unit is kPa (EN 1991-1-3, asked of the registry)."""
    if ground_quantity(site_json) in SI_QUANTITIES:
        return True
    roof = site_json.get("roof") or {}
    if not roof.get("standard"):
        return False
    from neve.engine.standards import find_standard

    std = find_standard(str(roof["standard"]))
    return std is not None and std.units.get("load") == "kPa"


def quantity_text(value: dict | None) -> str:
    """Any two-unit quantity of the JSON contract (load, length, line load, density)."""
    return fmt.quantity_text(value, trim=True, missing="none", missing_number="\u2014")


def _nice_step(span: float, n: int) -> float:
    raw = span / max(n, 1)
    if raw <= 0:
        return 1.0
    mag = 10 ** math.floor(math.log10(raw))
    for f in (1, 2, 2.5, 5, 10):
        if f * mag >= raw:
            return f * mag
    return 10 * mag


def value_classes(values, max_exact: int = 8) -> list[dict]:
    """Classes of mapped values for a legend.

    Parameters
    ----------
    values : iterable of float
        Mapped values (NaN and None are ignored) [layer units].
    max_exact : int
        Up to this many distinct values get one class each.

    Returns
    -------
    list of dict
        ``{"lo", "hi", "colour", "label"}`` in increasing order; ``lo == hi``
        for exact classes.
    """
    vals = sorted({float(v) for v in values if v is not None and math.isfinite(float(v))})
    if not vals:
        return []
    n_col = len(VALUE_COLOURS)
    if len(vals) <= max_exact:
        out = []
        for i, v in enumerate(vals):
            k = 0 if len(vals) == 1 else round(i * (n_col - 1) / (len(vals) - 1))
            out.append({"lo": v, "hi": v, "colour": VALUE_COLOURS[k], "label": num(v, 2)})
        return out
    step = _nice_step(vals[-1] - vals[0], 6)
    start = math.floor(vals[0] / step) * step
    edges = [start]
    while edges[-1] <= vals[-1]:
        edges.append(edges[-1] + step)
    n = len(edges) - 1
    out = []
    for i in range(n):
        k = 0 if n == 1 else round(i * (n_col - 1) / (n - 1))
        lo, hi = edges[i], edges[i + 1]
        out.append(
            {
                "lo": lo,
                "hi": hi,
                "colour": VALUE_COLOURS[k],
                "label": f"{num(lo, 2)} to under {num(hi, 2)}",
            }
        )
    return out


def colour_for(value, classes: list[dict]) -> str | None:
    """The legend colour of ``value``; None when it has no finite value."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    if not math.isfinite(v) or not classes:
        return None
    for c in classes:
        if c["lo"] == c["hi"]:
            if abs(v - c["lo"]) <= 1e-9 * max(1.0, abs(v)):
                return c["colour"]
        elif c["lo"] <= v < c["hi"]:
            return c["colour"]
    return classes[-1]["colour"] if v >= classes[-1]["lo"] else classes[0]["colour"]


def portfolio_band(pg_psf) -> int:
    """Index into :data:`PORTFOLIO_BANDS_PSF` for a ground load [psf]; -1 for none."""
    try:
        v = float(pg_psf)
    except (TypeError, ValueError):
        return -1
    if not math.isfinite(v):
        return -1
    for i, (upper, _) in enumerate(PORTFOLIO_BANDS_PSF):
        if v < upper:
            return i
    return len(PORTFOLIO_BANDS_PSF) - 1


def short_sha(sha: object, n: int = 12) -> str:
    """The first ``n`` hex digits of a SHA-256 (empty when unknown)."""
    return "" if not sha else str(sha)[:n]


def plain_figure_text(func):
    """Run a figure-drawing function with matplotlib's mathtext off.

    matplotlib parses text between ``$`` signs as mathematics, so a site or
    case name such as ``$\\frac{a}$`` would crash the drawing (and ``$x$``
    would not show as typed).  Names from inputs are shown as typed.
    """

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        import matplotlib

        with matplotlib.rc_context({"text.parse_math": False}), warnings.catch_warnings():
            # a name may hold characters no font has (control characters, rare
            # code points): drawn as an empty box, not a warning on the terminal
            warnings.filterwarnings("ignore", message=r"Glyph \d+ .*missing from font")
            return func(*args, **kwargs)

    return wrapper
