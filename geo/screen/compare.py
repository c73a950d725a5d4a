"""Portfolio screening under two or more editions, joined row by row (``neve screen --compare``).

:func:`run_compare` runs the ordinary screening (:func:`neve.geo.screen.run.run_screen`)
once per edition, each with the layers that edition accepts
(:func:`neve.geo.site.compare.edition_layers`; the demo layers of each edition
when none are given), and joins the runs: the input columns once, as given and
in order, then the coordinates used (``site_lat``, ``site_lon``, once: the same in
every edition), then every other result column of each edition as
``<column>__<standard id>`` (``pg_psf__asce7-16``, ``design_uniform_psf__asce7-22``,
...), then the ratios

* ``pg_ratio`` = ``pg_psf`` of the last edition / ``pg_psf`` of the first,
* ``design_uniform_ratio`` = the same of ``design_uniform_psf`` (with a roof),

empty where either value is missing or the first is zero.  The summary counts
the sites whose governing uniform load rises by more than 10 %
(``rises_over_10pct``: ``design_uniform_ratio`` > 1.10) and keeps each
edition's own summary under ``editions``.  Addresses are geocoded for the first
edition and taken from a temporary cache for the others (unless a
``geocode_cache`` or ``geocoder`` is given).

Results are an aid to, not a substitute for, a licensed design professional.
"""

from __future__ import annotations

import tempfile
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from neve.engine.errors import NeveError

#: a rise above this ratio (last / first edition) is counted in ``rises_over_10pct``
RISE_RATIO = 1.10
#: result columns given once, unsuffixed, when every edition has the same values (the
#: coordinates used: the same site file is read the same way for every edition)
SHARED = ("site_lat", "site_lon")
#: (ratio column, the per-edition column it divides)
RATIOS = (("pg_ratio", "pg_psf"), ("design_uniform_ratio", "design_uniform_psf"))


def _same(a: pd.Series, b: pd.Series) -> bool:
    x = pd.to_numeric(a, errors="coerce").to_numpy(dtype=float)
    y = pd.to_numeric(b, errors="coerce").to_numpy(dtype=float)
    return bool(np.array_equal(x, y, equal_nan=True))


def column_name(column: str, standard_id: str) -> str:
    """The per-edition name of a result column.

    >>> column_name("pg_psf", "asce7-16")
    'pg_psf__asce7-16'
    """
    return f"{column}__{standard_id}"


@dataclass
class CompareRun:
    """The joined table, its summary, and each edition's own screening run."""

    results: pd.DataFrame
    summary: dict
    runs: list = field(default_factory=list)  # [(Standard, ScreenRun)]
    geometry: object = None


def _split(results: pd.DataFrame) -> int:
    """The number of input columns: the results start at the first column named ``status``.

    The screening puts the input columns first and renames an input column
    that clashes with a result name to ``input_<name>`` (``run._join_input``).
    """
    cols = list(results.columns)
    if "status" not in cols:
        raise NeveError("screening result without a status column")
    return cols.index("status")


def _ratio(last: pd.Series, first: pd.Series) -> np.ndarray:
    a = pd.to_numeric(first, errors="coerce").to_numpy(dtype=float)
    b = pd.to_numeric(last, errors="coerce").to_numpy(dtype=float)
    out = np.full(len(a), np.nan)
    ok = np.isfinite(a) & np.isfinite(b) & (a != 0)
    out[ok] = b[ok] / a[ok]
    return out


def _range(values: np.ndarray) -> dict | None:
    v = values[np.isfinite(values)]
    return None if not len(v) else {"min": float(v.min()), "max": float(v.max())}


def run_compare(sites, standards, *, layers=None, **screen_kw) -> CompareRun:
    """Screen ``sites`` under each of ``standards`` (two or more) and join the results.

    ``screen_kw`` are the keywords of :func:`neve.geo.screen.run.run_screen`
    (``roof``, ``dem``, ``engine``, ...), the same for every edition.
    """
    from neve.geo.screen.outputs import CAUTIONS
    from neve.geo.screen.run import run_screen
    from neve.geo.site.compare import check_editions, edition_layers

    chosen = check_editions(standards, field_name="compare")
    screen_kw.pop("standard", None)
    per_edition = [(std, edition_layers(std, layers)) for std in chosen]  # refused before work
    with tempfile.TemporaryDirectory(prefix="neve-compare-") as tmp:
        if screen_kw.get("geocoder") is None and screen_kw.get("geocode_cache") is None:
            # addresses found for the first edition are not asked again for the next
            screen_kw["geocode_cache"] = Path(tmp) / "geocode_cache.json"
        runs = [(std, run_screen(sites, layers=kept, standard=std, **screen_kw))
                for std, kept in per_edition]  # fmt: skip
    first = runs[0][1].results
    k = _split(first)
    cols = {c: first[c] for c in first.columns[:k]}  # the input, once, as given
    for std, run in runs:
        if len(run.results) != len(first):
            raise NeveError(f"{std.id}: {len(run.results)} result rows for {len(first)} input rows")
    shared = [c for c in SHARED if all(_same(run.results[c], first[c]) for _, run in runs)]
    for c in shared:  # the coordinates used: one pair, as a point output needs them
        cols[c] = first[c]
    for std, run in runs:
        res = run.results
        for c in res.columns[_split(res) :]:
            if c not in shared:
                cols[column_name(c, std.id)] = res[c]
    a_id, b_id = chosen[0].id, chosen[-1].id
    ratios = {}
    for name, col in RATIOS:
        a, b = column_name(col, a_id), column_name(col, b_id)
        if a in cols and b in cols:
            ratios[name] = _ratio(cols[b], cols[a])
    for name, values in ratios.items():
        cols[name] = pd.Series(values, index=first.index)
    results = pd.DataFrame(cols, copy=False)
    design = ratios.get("design_uniform_ratio")
    rises = None if design is None else int(np.count_nonzero(design > RISE_RATIO))
    summaries = {std.id: run.summary for std, run in runs}
    status, flags = {}, {}
    for sid, s in summaries.items():
        status.update({column_name(key, sid): n for key, n in s.get("status", {}).items()})
        flags.update({column_name(key, sid): n for key, n in s.get("flags", {}).items()})
    layers_used: list[dict] = []
    for s in summaries.values():
        layers_used.extend(x for x in s.get("layers", []) if x not in layers_used)
    summary = {
        "rows": int(len(results)),
        "status": status,
        "flags": flags,
        "pg_psf": None,  # per edition under editions.<id>.pg_psf
        "layers": layers_used,
        "demo": any(s.get("demo") for s in summaries.values()),
        "cautions": list(CAUTIONS),
        "standards": [std.id for std in chosen],
        "ratio": f"{b_id} / {a_id}",
        "rises_over_10pct": rises,
        "compared": None if design is None else int(np.count_nonzero(np.isfinite(design))),
        "pg_ratio": _range(ratios["pg_ratio"]) if "pg_ratio" in ratios else None,
        "design_uniform_ratio": None if design is None else _range(design),
        "editions": summaries,
    }
    return CompareRun(results, summary, runs, runs[0][1].geometry)


def format_compare_summary(summary: dict) -> str:
    """The printed summary of a comparison run: each edition's, then the comparison."""
    from neve.engine.printable import printable
    from neve.geo.screen.outputs import format_summary

    lines = []
    for sid, s in summary["editions"].items():
        lines.append(f"== {sid} ==")
        lines.extend(line for line in format_summary(s).splitlines()
                     if not line.startswith("caution:"))  # fmt: skip
    lines.append(f"== comparison: ratio = {summary['ratio']} ==")
    r = summary.get("pg_ratio")
    if r:
        lines.append(f"pg_ratio range: {r['min']:.3f} to {r['max']:.3f}")
    if summary["rises_over_10pct"] is None:
        lines.append("no roof given: design_uniform_ratio and rises_over_10pct need roof loads")
    else:
        d = summary.get("design_uniform_ratio")
        if d:
            lines.append(f"design_uniform_ratio range: {d['min']:.3f} to {d['max']:.3f}")
        lines.append(
            f"sites whose governing uniform load rises by more than 10 % (rises_over_10pct): "
            f"{summary['rises_over_10pct']:,} of {summary['compared']:,} compared"
        )
    lines.extend(f"caution: {c}" for c in summary.get("cautions", []))
    return printable("\n".join(lines))
