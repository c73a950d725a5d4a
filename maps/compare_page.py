"""The comparison page of the calculation package (``neve compare --package DIR``).

:func:`comparison_html` renders ``maps/templates/comparison.html.j2`` from the
JSON of ``neve compare`` (:meth:`neve.geo.site.compare.Comparison.to_json`):
the editions with their ground layers and governing uniform cases, then
every compared quantity and roof case per edition with the difference (last
minus first), the ratio (last / first) and the provisions each value comes
from, and the cautions.  Every text from inputs (site and project names,
layer names, zone ids) is a template variable, autoescaped.
"""

from __future__ import annotations

from collections.abc import Mapping

from neve.engine.roof_text import NOT_APPLICABLE, absent_loads, not_applicable_here
from neve.maps import style
from neve.maps.templating import render

#: labels of the site and roof quantities
LABELS = {
    "pg": "Ground snow load pg",
    "sk": "Characteristic ground snow load sk",
    "pf": "Flat roof snow load pf",
    "ps": "Sloped roof snow load ps",
    "pm": "Minimum roof snow load pm",
    "rain_on_snow": "Rain-on-snow surcharge",
    "design_uniform": "Governing uniform load",
}


def _text(value) -> str:
    if value is None:
        return "\u2014"
    if isinstance(value, Mapping):
        return style.quantity_text(value)
    return str(value)


def _ratio(r) -> str:
    return "\u2014" if r is None else f"{r:.3f}"


def _governing_text(gov: Mapping | None) -> str:
    if gov is None:
        return "no roof loads"
    what = gov.get("case") or "design_uniform"
    if gov.get("name"):
        what += f" ({gov['name']})"
    return f"{what}: {style.load_text(gov.get('load'))}"


def _labelled(title: str, ref: str | None) -> str:
    """A provision or source, with the edition's title in front unless it starts with it."""
    if not ref:
        return f"{title}: \u2014"
    return ref if ref.startswith(title) else f"{title}: {ref}"


def _row(d: Mapping, ids: list[str], titles: Mapping, label: str, absent: Mapping) -> dict:
    values = [NOT_APPLICABLE if not_applicable_here(d, i, absent) else _text(d["values"].get(i))
              for i in ids]  # fmt: skip
    na = NOT_APPLICABLE in values  # no difference to a load that does not apply
    return {
        "label": label,
        "values": values,
        "difference": "\u2014" if na else _text(d["difference"]),
        "ratio": "\u2014" if na else _ratio(d["ratio"]),
        "refs": [_labelled(titles[i], d["refs"].get(i)) for i in ids],
        "governing": d["quantity"] == "design_uniform",
    }


def comparison_context(data: Mapping) -> dict:
    """What the template shows, as text (numbers formatted by :mod:`neve.maps.style`)."""
    results = data["results"]
    ids = [r["standard"] for r in results]
    titles = {r["standard"]: r.get("title") or r["standard"] for r in results}
    editions = []
    for r in results:
        g = r.get("ground") or {}
        layer = g.get("layer") or {}
        gov = (data.get("governing") or {}).get(r["standard"])
        editions.append(
            {
                "title": titles[r["standard"]],
                "layer": layer.get("name") or "no layer",
                "layer_standard": layer.get("standard") or "",
                "zone": g.get("zone_id") or "\u2014",
                "status": g.get("status") or "",
                "flags": list(g.get("flags") or []),
                "governing": _governing_text(gov),
                "governing_ref": "" if gov is None else gov.get("ref") or "",
                "roof_flags": list((r.get("roof") or {}).get("flags") or []),
                "not_worked": [
                    f"{n.get('case')}"
                    + (f" ({n['name']})" if n.get("name") else "")
                    + f": {n.get('reason')}"
                    for n in (r.get("roof") or {}).get("not_required") or []
                ],
            }
        )
    absent = absent_loads(data)
    site_rows, cases, index = [], [], {}
    for d in data["differences"]:
        if d["case"] is None:
            label = LABELS.get(d["quantity"], d["quantity"])
            site_rows.append(_row(d, ids, titles, label, absent))
            continue
        key = (d["case"], d["name"])
        if key not in index:
            index[key] = len(cases)
            present = [d["refs"].get(i) for i in ids]
            cases.append(
                {
                    "kind": d["case"],
                    "name": d["name"],
                    "refs": [(titles[i], ref or "") for i, ref in zip(ids, present, strict=True)],
                    "rows": [],
                }
            )
        label = d["quantity"].replace("_", " ")
        cases[index[key]]["rows"].append(_row(d, ids, titles, label, absent))
    for c in cases:  # which editions have the case at all
        have = {i for row in c["rows"] for i, v in zip(ids, row["values"], strict=True)
                if v != "\u2014"}  # fmt: skip
        c["missing"] = [titles[i] for i in ids if i not in have]
    site = data["site"]
    return {
        "site": site,
        "site_name": site.get("name") or "Site",
        "titles": [titles[i] for i in ids],
        "first": titles[ids[0]],
        "last": titles[ids[-1]],
        "editions": editions,
        "site_rows": site_rows,
        "cases": cases,
        "cautions": list(data.get("cautions") or []),
        "demo": any("demo_data" in ((r.get("ground") or {}).get("flags") or []) for r in results),
    }


def comparison_html(data: Mapping) -> str:
    """The comparison page as an HTML fragment (a ``<section>``), autoescaped."""
    return render("comparison.html.j2", **comparison_context(data))
