"""One site under two or more editions of a standard, side by side (``neve compare``).

Each edition is resolved on its own: :func:`edition_layers` keeps the zone
layers whose sidecar ``standard`` (and ``quantity``) the edition accepts
(:meth:`neve.engine.standards.Standard.accepts_layer`); with no layers given,
the embedded demo layers of that edition.  Each edition then runs through
:func:`neve.geo.site.one.resolve_site`, the code path of ``neve site``, so
``results[k].ground`` and ``results[k].roof`` are exactly what ``neve site
--format json --standard <edition>`` prints.

:func:`differences` lines the editions up: the ground load ``pg``, the roof
loads ``pf``, ``ps``, ``pm`` and ``rain_on_snow``, ``design_uniform`` and every load and length of each
roof case (matched by case kind and name; a case one edition does not have is
listed with null for it).  ``difference`` = last edition minus first edition
(per unit, in the units of the values), ``ratio`` = last / first (of the
first unit: psf for loads, ft for lengths); the editions are taken in the
order given.

Results are an aid to, not a substitute for, a licensed design professional.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

from neve.engine.errors import InputError
from neve.engine.format import is_quantity
from neve.engine.jsonsafe import finite_copy

#: the roof loads compared (keys of ``roof.loads``), then ``design_uniform``
ROOF_LOADS = ("pf", "ps", "pm", "rain_on_snow")
#: case keys that are no quantity to compare
_CASE_META = ("case", "name", "steps", "source", "governs", "method", "note", "not_combined_with")
#: cases whose ``load`` is a uniform load that ``design_uniform`` may take
UNIFORM_CASES = ("balanced", "minimum")


def layer_accepted(standard, layer) -> bool:
    """Whether ``layer`` (its sidecar ``standard`` and ``quantity``) may feed ``standard``."""
    meta = layer.meta
    return standard.accepts_layer(str(meta.get("standard", "")), str(meta.get("quantity", "pg")))


def edition_layers(standard, layers=None, *, field_name: str = "layer") -> list:
    """The layers of ``layers`` (None: the demo stack) that ``standard`` accepts, in order.

    An edition that accepts none of them is an :class:`InputError` naming the
    layers' editions and the ones the standard takes: neve never mixes one
    edition's map with another edition's equations.
    """
    from neve.engine.standards import get_standard
    from neve.geo.layers.model import as_layers

    std = get_standard(standard)  # with no layers: that edition's demo stack
    demo = layers is None or list(layers) == []
    given = _demo_stack(std) if demo else as_layers(list(layers))
    kept = [ly for ly in given if layer_accepted(std, ly)]
    if demo and not kept:
        given = given + [ly for ly in _other_demo_layers(given) if ly not in given]
        kept = [ly for ly in given if layer_accepted(std, ly)]
    if not kept:
        seen = sorted({str(ly.meta.get("standard", "")) for ly in given})
        where = "the embedded demo layers" if not layers else "the layers given"
        raise InputError(
            field_name,
            f"{where} map ground loads for {', '.join(seen) or 'no standard'}, none for {std.title}",
            f"for {std.id}, a layer whose sidecar standard is one of "
            f"{', '.join(std.layer_standards)} (give one --layer per edition)",
        )
    return kept


def _demo_stack(std) -> list:
    """The embedded demo stack of ``std`` (the geo layer model's choice where it makes one)."""
    from neve.engine.errors import LayerError
    from neve.geo.layers import model

    pick = getattr(model, "demo_layers_for", None)  # the demo stack per standard, where built
    if pick is not None:
        try:
            return list(pick(std))
        except LayerError:  # that edition's demo files are not built: the default stack
            pass
    return model.demo_layers()


def _other_demo_layers(stack) -> list:
    """Every other layer file with a sidecar in the demo folder (another edition's).

    Used only when the default demo stack has no layer of an edition; in the
    order of the file names.
    """
    from neve.geo.layers.model import DEMO_DIR, load_layer

    have = {ly.path.resolve() for ly in stack}
    out = []
    for sidecar in sorted(DEMO_DIR.glob("*.toml")):
        path = sidecar.with_suffix("")
        if path.is_file() and path.resolve() not in have:
            out.append(load_layer(path))
    return out


def check_editions(standards: Sequence, field_name: str = "standard") -> list:
    """At least two distinct registered standards (unknown or too few: InputError, exit 2)."""
    from neve.engine.standards import available, get_standard

    chosen = [get_standard(s, field=field_name) for s in standards]
    ids = [s.id for s in chosen]
    if len(set(ids)) != len(ids):
        raise InputError(field_name, f"an edition is given twice ({', '.join(ids)})",
                         "each registered standard once")  # fmt: skip
    if len(chosen) < 2:
        raise InputError(
            field_name,
            f"{len(chosen)} edition{'' if len(chosen) == 1 else 's'} given; "
            "a comparison needs at least two",
            f"two or more of {', '.join(available())}, e.g. --standard asce7-16 --standard asce7-22",
        )
    return chosen


@dataclass
class Comparison:
    """The editions' site results; :meth:`to_json` is the ``neve compare`` JSON.

    ``{site, results, differences, governing, basis, cautions}`` (docs/contract.md).
    """

    site: dict
    results: list = field(default_factory=list)  # [(Standard, SiteResult, site JSON)]

    @property
    def standards(self) -> list:
        return [std for std, _, _ in self.results]

    def to_json(self) -> dict:
        rows = [
            {"standard": std.id, "title": std.title, "ground": d["ground"], "roof": d["roof"]}
            for std, _, d in self.results
        ]
        editions = [(std.id, d) for std, _, d in self.results]
        return {
            "site": self.site,
            "results": rows,
            "differences": differences(editions),
            "governing": {sid: governing_case(d.get("roof")) for sid, d in editions},
            "basis": {
                "first": editions[0][0],
                "last": editions[-1][0],
                "difference": f"{editions[-1][0]} minus {editions[0][0]}",
                "ratio": f"{editions[-1][0]} / {editions[0][0]}",
            },
            "cautions": cautions(self.results),
        }

    def to_text(self) -> str:
        return comparison_text(self.to_json())


def cautions(results) -> list[str]:
    """Every edition's cautions once, in order (the demo caution first when any is demo)."""
    out: list[str] = []
    for _, _, d in results:
        for c in (d.get("ground") or {}).get("cautions") or []:
            if c not in out:
                out.append(c)
        for c in (d.get("roof") or {}).get("cautions") or []:
            if c not in out:
                out.append(c)
    return out


def compare_site(
    lat: float, lon: float, standards: Sequence, *, layers=None, **site_kw
) -> Comparison:
    """Resolve one site under each of ``standards`` (two or more) with that edition's layers.

    ``site_kw`` are the keywords of :func:`neve.geo.site.one.resolve_site`
    (``elevation``, ``dem``, ``roof``, ``name``, ...), the same for every edition.
    """
    from neve.geo.site.one import resolve_site

    chosen = check_editions(standards)
    site_kw.pop("standard", None)
    per_edition = [(std, edition_layers(std, layers)) for std in chosen]  # refuse before work
    out = []
    for std, kept in per_edition:
        result = resolve_site(lat, lon, layers=kept, standard=std, **site_kw)
        out.append((std, result, finite_copy(result.to_json())))
    return Comparison(out[0][2]["site"], out)


# --- the differences ----------------------------------------------------------------


def _delta(values: list):
    """(difference per unit, ratio of the first unit) of the last value against the first."""
    a, b = values[0], values[-1]
    if not (isinstance(a, Mapping) and isinstance(b, Mapping)):
        return None, None
    diff = {}
    for unit, x in a.items():
        y = b.get(unit)
        if isinstance(x, (int, float)) and isinstance(y, (int, float)):
            diff[unit] = round(float(y) - float(x), 4)
    unit = next(iter(a), None)
    x, y = a.get(unit), b.get(unit)
    ratio = None
    if isinstance(x, (int, float)) and isinstance(y, (int, float)) and float(x) != 0.0:
        ratio = round(float(y) / float(x), 4)
    return (diff or None), ratio


def _entry(quantity, case, name, ids, values, refs) -> dict:
    diff, ratio = _delta(values)
    return {
        "quantity": quantity,
        "case": case,
        "name": name,
        "values": dict(zip(ids, values, strict=True)),
        "difference": diff,
        "ratio": ratio,
        "refs": dict(zip(ids, refs, strict=True)),
    }


def _case_values(case: Mapping) -> dict:
    """The loads and lengths of a case (``{"psf", "kPa"}``, ``{"ft", "m"}``), by key."""
    return {
        k: v for k, v in case.items() if k not in _CASE_META and isinstance(v, Mapping)
        and is_quantity(v)
    }  # fmt: skip


def _ref(standard_id: str, key: str) -> str:
    from neve.engine.standards import find_standard

    std = find_standard(standard_id)
    return std.ref(key) if std is not None else ""


def _case_ref(standard_id: str, case: Mapping | None) -> str:
    from neve.engine.standards import find_standard

    std = find_standard(standard_id)
    return std.case_ref(case) if std is not None and case else ""


def _ground_ref(ground: Mapping) -> str:
    layer = (ground or {}).get("layer") or {}
    if not layer:
        return ""
    zone = ground.get("zone_id")
    return f"{layer.get('name')}{f', zone {zone}' if zone else ''} ({layer.get('standard')})"


def differences(editions: Sequence[tuple[str, Mapping]]) -> list[dict]:
    """The comparable quantities of ``editions`` (``[(standard id, site JSON)]``), side by side.

    Each entry: ``quantity`` (``pg``; ``sk`` where an edition's ground is sk;
    ``pf``, ``ps``, ``pm``, ``rain_on_snow``,
    ``design_uniform`` or a
    case's key such as ``pd``), ``case`` and ``name`` (null for the site and
    roof quantities), ``values`` (standard id -> value or null), ``difference``
    (last minus first, per unit; null when either is null), ``ratio`` (last /
    first in psf or ft; null when either is null or the first is zero) and
    ``refs`` (standard id -> the provision or layer each value comes from).
    """
    ids = [sid for sid, _ in editions]
    grounds = [d.get("ground") or {} for _, d in editions]
    roofs = [d.get("roof") or {} for _, d in editions]
    out = [_entry("pg", None, None, ids, [g.get("pg") for g in grounds],
                  [_ground_ref(g) for g in grounds])]  # fmt: skip
    if any(g.get("quantity") == "sk" for g in grounds):  # an EN 1991-1-3 edition: its sk
        out.append(_entry("sk", None, None, ids, [g.get("sk") for g in grounds],
                          [_ground_ref(g) if g.get("quantity") == "sk" else ""
                           for g in grounds]))  # fmt: skip
    for key in ROOF_LOADS:
        vals = [(r.get("loads") or {}).get(key) for r in roofs]
        out.append(_entry(key, None, None, ids, vals, [_ref(s, f"load.{key}") for s in ids]))
    out.append(_entry("design_uniform", None, None, ids, [r.get("design_uniform") for r in roofs],
                      [_ref(s, "design_uniform") for s in ids]))  # fmt: skip
    order: list[tuple[str, str]] = []
    cases: list[dict] = []
    for r in roofs:
        by_key = {}
        for c in r.get("cases") or []:
            key = (str(c.get("case") or ""), str(c.get("name") or ""))
            by_key.setdefault(key, c)
            if key not in order:
                order.append(key)
        for key, c in _governing_drifts(r.get("cases") or []).items():
            by_key[key] = c
            if key not in order:
                order.append(key)
        cases.append(by_key)
    for kind, name in order:
        found = [c.get((kind, name)) for c in cases]
        keys: list[str] = []
        for c in found:
            keys.extend(k for k in _case_values(c or {}) if k not in keys)
        refs = [_case_ref(s, c) for s, c in zip(ids, found, strict=True)]
        for k in keys:
            vals = [_case_values(c).get(k) if c else None for c in found]
            out.append(_entry(k, kind, name, ids, vals, refs))
    return out


def _governing_drifts(cases) -> dict:
    """The larger drift at each roof step or adjacent structure, keyed for matching.

    One edition may report a step's leeward and windward drifts as one case
    (the governing one, ASCE 7-16) and another as two cases (ASCE 7-22); the
    like-for-like comparison is the drift that governs at that step, so each
    edition adds a row ``governing drift at <the step>`` holding its larger
    ``pd`` case.
    """
    best: dict = {}
    for c in cases:
        if c.get("case") != "drift" or c.get("source") not in ("step", "adjacent"):
            continue
        name = str(c.get("name") or "")
        where = name[name.find(" at ") + 4 :] if " at " in name else name
        key = ("drift", f"governing drift at {where}")
        pd = ((c.get("pd") or {}).get("psf")) or 0.0
        if key not in best or pd > ((best[key].get("pd") or {}).get("psf") or 0.0):
            best[key] = c
    return best


def governing_case(roof: Mapping | None) -> dict | None:
    """The uniform case that sets ``design_uniform`` (balanced or minimum): case, name, load, ref.

    The balanced or minimum case whose ``load`` equals ``design_uniform``
    (within 0.001 psf); null without roof loads.
    """
    if not roof or not roof.get("design_uniform"):
        return None
    target = float(roof["design_uniform"]["psf"])
    best = None
    for c in roof.get("cases") or []:
        load = c.get("load")
        if c.get("case") in UNIFORM_CASES and isinstance(load, Mapping) and "psf" in load:
            if abs(float(load["psf"]) - target) <= 1e-3 and best is None:
                best = c
    if best is None:
        return {"case": None, "name": None, "load": roof["design_uniform"], "ref": ""}
    return {
        "case": best.get("case"),
        "name": best.get("name"),
        "load": roof["design_uniform"],
        "ref": _case_ref(str(roof.get("standard") or ""), best),
    }


# --- text ---------------------------------------------------------------------------


def _show(value) -> str:
    from neve.engine.format import quantity_text

    if value is None:
        return "-"
    if isinstance(value, Mapping) and is_quantity(value):
        return quantity_text(value)
    return str(value)


def comparison_text(data: Mapping) -> str:
    """``neve compare --format text``: one line per quantity, the editions side by side."""
    from neve.engine.printable import printable
    from neve.engine.roof_text import NOT_APPLICABLE, absent_loads, not_applicable_here

    ids = [r["standard"] for r in data["results"]]
    site = data["site"]
    lines = []
    if any("demo_data" in ((r.get("ground") or {}).get("flags") or []) for r in data["results"]):
        lines.append("DEMO DATA: invented layers; these results are never for design.")
    where = site.get("name") or site.get("input")
    lines.append(f"Edition comparison at {where} ({site['lat']:g}, {site['lon']:g})")
    precision = site.get("location_precision")
    if precision and precision != "coordinates":
        radius = (site.get("location_radius") or {}).get("m") or 0.0
        source = site.get("location_source") or "-"
        lines.append(f"  location: {precision}, uncertain within {radius:,.0f} m (from {source})")
        if precision in ("postal_code", "place"):
            lines.append("  approximate: zones, study areas and elevation rules within that circle "
                         "were considered in every edition and the larger value governs")  # fmt: skip
    for r in data["results"]:
        g = r.get("ground") or {}
        layer = (g.get("layer") or {}).get("name") or "no layer"
        flags = ", ".join(g.get("flags") or []) or "no flags"
        lines.append(f"  {r['title']}: ground status {g.get('status')} ({layer}; {flags})")
        roof = r.get("roof")
        if roof:
            lines.append(f"    roof flags: {', '.join(roof.get('flags') or []) or 'none'}")
            for n in roof.get("not_required") or []:
                what = str(n.get("case")) + (f" ({n['name']})" if n.get("name") else "")
                lines.append(f"    not worked: {what}: {n.get('reason')}")
    lines.append("")
    head = ["quantity"] + ids + [f"{ids[-1]} - {ids[0]}", "ratio"]
    absent = absent_loads(data)
    rows: list = []
    case = None
    for d in data["differences"]:
        key = (d["case"], d["name"])
        if d["case"] is not None and key != case:
            rows.append(f"case {d['case']}: {d['name']}")  # a heading line
            case = key
        values = [NOT_APPLICABLE if not_applicable_here(d, i, absent) else _show(d["values"][i])
                  for i in ids]  # fmt: skip
        na = NOT_APPLICABLE in values  # no difference to a load that does not apply
        diff = "-" if na or not d["difference"] else _show(d["difference"])
        ratio = "-" if na or d["ratio"] is None else f"{d['ratio']:.3f}"
        label = d["quantity"] if d["case"] is None else f"  {d['quantity']}"
        rows.append([label] + values + [diff, ratio])
    table = [head] + [r for r in rows if isinstance(r, list)]
    widths = [max(len(str(x[i])) for x in table) for i in range(len(head))]
    for row in [head, *rows]:
        if isinstance(row, str):
            lines.append(row)
            continue
        lines.append("  ".join(str(x).ljust(w) for x, w in zip(row, widths, strict=True)).rstrip())
    lines.append("")
    for sid, gov in data["governing"].items():
        if gov is None:
            lines.append(f"governing uniform load, {sid}: not computed")
        else:
            what = f"{gov['case']} ({gov['name']})" if gov["case"] else "design_uniform"
            ref = f" [{gov['ref']}]" if gov["ref"] else ""
            lines.append(f"governing uniform load, {sid}: {what}, {_show(gov['load'])}{ref}")
    lines.append(f"difference = {data['basis']['difference']}; ratio = {data['basis']['ratio']}")
    lines.extend(f"caution: {c}" for c in data["cautions"])
    return printable("\n".join(lines))
