"""The calculation package: report (HTML and PDF), site JSON, site map, static map, diagrams.

The package is one folder that must still open in ten years: the HTML report
embeds its CSS, its images (data URIs) and the interactive site map with all
of the map's scripts; the PDF is made from the same HTML with WeasyPrint
(letter pages, page numbers, a running header with project and site on every
page).  The folder is built next to its destination and renamed into place
(:func:`neve.safe_write.atomic_folder`), so it is written whole or not at all.
"""

from __future__ import annotations

import base64
import contextvars
import copy
import datetime as _dt
import json
import os
from pathlib import Path

from neve.engine import format as fmt
from neve.engine.format import is_quantity
from neve.engine.roof_text import NOT_APPLICABLE, not_applicable, step_value_text
from neve.maps import assets, style
from neve.maps.diagrams import write_case_diagrams
from neve.maps.site_map import cautions_of, is_demo, summary_context, write_site_map
from neve.maps.static import write_static_map
from neve.maps.target import MARKER, package_replaceable
from neve.maps.templating import render

#: the title block's fields given by the engineer (``--job`` .. ``--revision``)
TITLE_BLOCK_FIELDS = ("job", "prepared_by", "checked_by", "revision")

#: keys of a case that are not values to tabulate
_CASE_META = ("case", "name", "steps")


def _version() -> str:
    try:
        from importlib.metadata import version

        return version("neve")
    except Exception:  # pragma: no cover - source tree without metadata
        return "0+unknown"


def _data_uri(path: Path) -> str:
    mime = "image/png" if path.suffix == ".png" else "image/svg+xml"
    return f"data:{mime};base64," + base64.b64encode(path.read_bytes()).decode("ascii")


#: the unit every load of the package being written shows first: ``kPa`` for an EN
#: 1991-1-3 site (an sk ground value or a kPa standard's roof), else ``psf``
_FIRST: contextvars.ContextVar[str] = contextvars.ContextVar("neve_package_first", default="psf")


def _load_text(load) -> str:
    """A load in the package: 0.1 psf and 0.01 kPa, zeros kept (``32.0 psf (1.53 kPa)``).

    kPa first (``1.12 kPa (23.4 psf)``) in the package of an EN 1991-1-3 site.
    """
    return fmt.load_text(load, missing="none", missing_number="\u2014", first=_FIRST.get())


def _rain_on_snow_text(load) -> str:
    """The rain-on-snow surcharge where it applies; "not applicable" (never with a zero) where not.

    Where it does not apply the summary says so once; the cases leave out the
    zero the engine holds there (:func:`neve.engine.roof_text.not_applicable`)
    and its step reads "not applicable" beside the conditions it checked.
    """
    psf = fmt._finite((load or {}).get("psf")) if isinstance(load, dict) else None
    if not psf:
        return NOT_APPLICABLE
    return _load_text(load)


def _value_text(value, key: str = "") -> str:
    """Render a case value generically: loads, lengths, line loads, numbers, text."""
    if key == "rain_on_snow":
        return _rain_on_snow_text(value)
    if isinstance(value, dict):
        if "psf" in value:  # a load: fixed decimals (engineering rounding of a summary)
            return _load_text(value)
        if is_quantity(value):  # length, line load, density: the one formatter
            return style.quantity_text(value)
        return ", ".join(f"{k}: {_value_text(v)}" for k, v in value.items())
    if isinstance(value, (list, tuple)):
        return "; ".join(_value_text(v) for v in value)
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)):
        return fmt.significant(value)
    return "" if value is None else str(value)


def _steps(steps, absent=()) -> list[dict]:
    """Calculation steps with their values to three significant figures (engineering rounding).

    ``absent``: symbols of the steps of loads that do not apply (their value reads
    "not applicable", never 0).
    """
    out = []
    for st in steps or []:
        row = dict(st)
        if isinstance(row.get("value"), (int, float)) and not isinstance(row["value"], bool):
            row["value"] = step_value_text(row, absent)
            if row["value"] == NOT_APPLICABLE:  # words, not a number: a cell that wraps
                row["unit"], row["applies"] = "-", False
        out.append(row)
    return out


def _cases(roof: dict | None, diagrams: dict[str, Path]) -> list[dict]:
    out = []
    absent = not_applicable(roof or {})
    for i, case in enumerate((roof or {}).get("cases") or []):
        name = str(case.get("name") or case.get("case") or f"case {i + 1}")
        values = [
            (k.replace("_", " "), _value_text(v, k))
            for k, v in case.items()
            if k not in _CASE_META and k not in absent
        ]
        values = [(k, v) for k, v in values if v != ""]
        diag = diagrams.get(name) or diagrams.get(f"{name} ({i})")
        out.append(
            {
                "kind": str(case.get("case") or "case"),
                "name": name,
                "values": values,
                "steps": _steps(case.get("steps"), absent.values()),
                "diagram": _data_uri(diag) if diag else None,
            }
        )
    return out


def _ground_context(data: dict) -> dict:
    """The site map's ground summary, its pg as every load of the package: ``30.0 psf (1.44 kPa)``."""
    g = summary_context(data)
    pg = (data.get("ground") or {}).get(style.ground_quantity(data))
    if pg:
        g["pg"] = _load_text(pg)
    return g


def _factors(roof: dict | None) -> list[dict]:
    if not roof:
        return []
    steps = {}
    for case in roof.get("cases") or []:
        for st in case.get("steps") or []:
            steps.setdefault(st.get("symbol"), st)
    out = []
    given = roof.get("factors") or {}
    # ASCE 7's four factors (as always shown), then a standard's own (EN 1991-1-3: Cesl)
    asce = ("Ce", "Ct", "Is", "Cs")
    syms = asce if "Cs" in given else tuple(given)
    for sym in syms:
        st = steps.get(sym) or {}
        out.append(
            {
                "symbol": sym,
                "value": _value_text((roof.get("factors") or {}).get(sym)),
                "description": st.get("description", ""),
                "ref": st.get("ref", ""),
            }
        )
    return out


#: labels of the roof description keys the engine reports
_ROOF_LABELS = {
    "risk": "Risk category",
    "shape": "Roof shape",
    "slope_deg": "Roof slope",
    "surface": "Roof surface",
    "eave_to_ridge": "Eave to ridge W",
    "thermal": "Thermal condition",
    "terrain": "Surface roughness",
    "exposure": "Exposure",
}


def _inputs(inputs: dict | None, views) -> dict:
    """The inputs echoed in the report: command, ROOF.toml, layers (names and SHA-256)."""
    given = inputs or {}
    roof_file = given.get("roof_file")
    layers = [
        {"name": str(v.get("name") or "layer"), "sha256": str(v.get("sha256") or "")}
        for v in views or []
    ]
    return {
        "command": strip_machine_paths(str(given.get("command") or "")),
        "roof_name": _file_name(roof_file[0]) if roof_file else "",
        "roof_text": str(roof_file[1]) if roof_file else "",
        "layers": layers,
    }


def _roof_rows(roof: dict | None, pitch: bool | None = None) -> list[tuple[str, str]]:
    """The roof description (``roof_json["roof"]``) as label/value rows, generically.

    ``pitch``: the slope as ``6:12 (26.6°)`` (given as a rise:run; also when not
    known, None) or, False, as its angle ``26.6°``.
    """
    desc = (roof or {}).get("roof") or {}
    rows = []
    for key, value in desc.items():
        if value is None or value == "" or key == "name":
            continue
        if key == "slope_deg":
            text = fmt.slope_text(value, pitch=pitch is not False)
        else:
            text = _value_text(value, key)
        rows.append((_ROOF_LABELS.get(key, key.replace("_", " ")), text))
    return rows


def _summary(roof: dict | None) -> list[dict]:
    if not roof:
        return []
    from neve.engine.standards import find_standard

    std = roof.get("standard") or ""
    standard = find_standard(std) if std else None  # clause labels come from the standard

    def provision(key: str) -> str:
        return standard.provision(key) if standard is not None else ""

    loads = roof.get("loads") or {}
    absent = not_applicable(roof)
    rows = []
    labels = {
        "pf": "Flat roof snow load pf",
        "ps": "Sloped roof snow load ps",
        "pm": "Minimum roof snow load pm",
        "rain_on_snow": "Rain-on-snow surcharge",
    }
    for key, load in loads.items():
        label, ref = labels.get(key, key), provision(f"load.{key}")
        text = (
            _rain_on_snow_text(load)
            if key == "rain_on_snow"
            else (_load_text(load) if load else "not applicable")
        )
        rows.append({"label": label, "value": text,
                     "ref": f"{std} {ref}".strip(), "governing": False})  # fmt: skip
    for case in roof.get("cases") or []:
        vals = [
            f"{k.replace('_', ' ')} {_value_text(v, k)}"
            for k, v in case.items()
            if k not in _CASE_META and k not in absent and isinstance(v, dict) and ("psf" in v)
        ]
        ref = (standard.case_ref(case) if standard is not None else "") or (
            f"{std} {case.get('case') or ''}"
        )
        rows.append({"label": f"Case: {case.get('name') or case.get('case')}",
                     "value": "; ".join(vals) or "\u2014", "ref": ref.strip(),
                     "governing": False})  # fmt: skip
    rule = provision("design_uniform")
    if "pf" not in loads:  # EN 1991-1-3: the undrifted load s governs the uniform load
        rows.append({"label": "Governing uniform load (the largest undrifted load; drifted, "
                              "local and accidental cases act separately)",
                     "value": _load_text(roof.get("design_uniform")),
                     "ref": f"{std} {rule}".strip(), "governing": True})  # fmt: skip
        return rows
    rows.append({"label": "Governing uniform load (balanced or minimum; unbalanced, drift and "
                          "sliding cases act separately)",
                 "value": _load_text(roof.get("design_uniform")),
                 "ref": f"{std} larger of ps + rain-on-snow and pm"
                        f"{f' ({rule})' if rule else ''}".strip(),
                 "governing": True})  # fmt: skip
    return rows


def _on_record_rows(rec: dict | None) -> list[dict]:
    """The existing-roof check (``neve site --on-record``) as rows of the summary table."""
    if not rec:
        return []
    ratio = rec.get("load_ratio")
    if ratio is None:
        verdict = f"not computed: {rec.get('reason') or 'no design_uniform load'}"
    else:
        above = "above the record (exceeds_record)" if rec.get("exceeds_record") else "not above"
        verdict = f"{ratio:.3f}: {above}"
    ref = "neve existing-roof check: uniform loads only, drifts not included"
    return [
        {"label": "Roof snow load on record", "value": _load_text(rec.get("load")),
         "ref": "as given (--on-record)", "governing": False},
        {"label": "Load ratio (design_uniform / load on record)", "value": verdict,
         "ref": ref, "governing": False},
    ]  # fmt: skip


#: keys whose text value names a file: shown by its file name only in the package
_FILE_KEYS = ("path", "file", "dem", "roof_file", "layer_path")


def _file_name(text: str) -> str:
    """``/home/ana/layers/zones.gpkg`` -> ``zones.gpkg`` (either separator)."""
    return text.replace("\\", "/").rstrip("/").rsplit("/", 1)[-1]


def _looks_like_machine_path(text: str) -> bool:
    """Whether ``text`` is an absolute path of this machine (or a Windows one)."""
    if len(text) < 2 or "\n" in text:
        return False
    if text[1:3] in (":\\", ":/"):  # C:\... or C:/...
        return True
    if not text.startswith(("/", "~")):
        return False
    prefixes = {os.path.expanduser("~"), os.getcwd(), str(Path(__file__).resolve().parents[1])}
    return any(text.startswith(p) for p in prefixes if p not in ("", "/")) or os.path.exists(
        os.path.expanduser(text)
    )


def strip_machine_paths(value):
    """A copy of ``value`` without absolute paths of the user's machine.

    A file named in the package (zone layers, a DEM, a ROOF.toml) is shown by
    its file name only: the folder it sat in on the engineer's machine says
    nothing to the reader and may say too much (a user name, a client folder).
    The file's SHA-256 stays beside it, so the file is still identified.
    Text under a file key (:data:`_FILE_KEYS`, ``*_path``, ``*_file``) and any
    text that is an absolute path of this machine is cut to its last part.

    >>> strip_machine_paths({"layer": {"path": "/home/ana/zones.gpkg", "sha256": "ab"}})
    {'layer': {'path': 'zones.gpkg', 'sha256': 'ab'}}
    >>> strip_machine_paths({"name": "North shed", "path": r"C:\\jobs\\z.geojson"})
    {'name': 'North shed', 'path': 'z.geojson'}
    """
    if isinstance(value, dict):
        out = {}
        for k, v in value.items():
            key = str(k)
            if (
                isinstance(v, str)
                and (key in _FILE_KEYS or key.endswith(("_path", "_file")))
                and ("/" in v or "\\" in v)
            ):
                out[k] = _file_name(v)
            else:
                out[k] = strip_machine_paths(v)
        return out
    if isinstance(value, list):
        return [strip_machine_paths(v) for v in value]
    if isinstance(value, tuple):
        return tuple(strip_machine_paths(v) for v in value)
    if isinstance(value, str) and _looks_like_machine_path(value):
        return _file_name(value)
    return value


def _provenance(ground: dict) -> list[tuple[str, str]]:
    layer = ground.get("layer") or {}
    rows = [
        ("Layer", layer.get("name")),
        ("Jurisdiction", layer.get("jurisdiction")),
        ("Standard", layer.get("standard")),
        ("Source", layer.get("source")),
        ("Licence", layer.get("license")),
        ("Date", layer.get("date")),
        ("File", layer.get("path")),
        ("SHA-256", layer.get("sha256")),
        ("Demo data", "yes \u2014 invented values" if layer.get("demo") else "no"),
    ]
    return [(k, "" if v is None else str(v)) for k, v in rows]


def _offline_fetcher():
    """A WeasyPrint URL fetcher that serves ``data:`` URIs only: the PDF never uses the network."""
    try:
        from weasyprint.urls import URLFetcher
    except ImportError:  # WeasyPrint before the URLFetcher class: a plain function
        from weasyprint.urls import default_url_fetcher

        def fetch(url, *args, **kwargs):
            if str(url).startswith("data:"):
                return default_url_fetcher(url, *args, **kwargs)
            raise ValueError(f"neve report: refusing to fetch {url!r}")

        return fetch
    return URLFetcher(allowed_protocols={"data"})


def result_context(
    data: dict, diagrams: dict[str, Path] | None = None, slope_pitch: bool | None = None
) -> dict:
    """What the report shows of a ``neve site`` JSON object, as plain values for a template.

    ``cautions``, ``g`` (the ground summary), ``roof``, ``factors``, ``roof_rows``,
    ``not_required``, ``summary``, ``provenance``, ``ground_steps`` and ``cases``
    (each with its values, steps and, given its PNG in ``diagrams``, the diagram as a
    data URI).  The calculation package and the result page of ``neve serve`` both
    take it, so they read the same.  Text stays text: the templates escape it.
    """
    ground = data.get("ground") or {}
    roof = data.get("roof")
    return {
        "cautions": cautions_of(data),
        "g": _ground_context(data),
        "roof": roof,
        "factors": _factors(roof),
        "roof_rows": _roof_rows(roof, slope_pitch),
        "not_required": list((roof or {}).get("not_required") or []),
        "summary": _summary(roof) + _on_record_rows(data.get("on_record")),
        "provenance": _provenance(ground),
        "ground_steps": _steps(ground.get("steps")),
        "cases": _cases(roof, diagrams or {}),
    }


def write_package(
    site_json: dict,
    views: list[dict],
    outdir: str | os.PathLike,
    *,
    project: str | None = None,
    site_name: str | None = None,
    overwrite: bool = False,
    comparison: dict | None = None,
    title_block: dict | None = None,
    basemap=None,
    slope_pitch: bool | None = None,
    inputs: dict | None = None,
) -> dict[str, Path]:
    """Write the calculation package folder.

    Parameters
    ----------
    site_json : dict
        The ``neve site`` JSON object (``site``, ``ground``, ``roof``).
    views : list of dict
        Zone layers, most local first (see :func:`neve.maps.site_map.write_site_map`).
    outdir : path-like
        The package folder; it must not exist (or be empty) unless
        ``overwrite`` is true.
    project, site_name : str, optional
        Override the project and site names of ``site_json``.
    overwrite : bool
        Replace an existing package folder.
    comparison : dict, optional
        The ``neve compare`` JSON: adds ``comparison.json`` and the edition
        comparison page to the report (:mod:`neve.maps.compare_page`).
    title_block : dict, optional
        ``job``, ``prepared_by``, ``checked_by``, ``revision`` (text; missing
        ones are shown as empty fields) of the title block at the foot of every
        page, beside the project, site, date, sheet n of N and an empty seal box.
    basemap : str or neve.maps.basemap.Basemap, optional
        What lies under the zones of the site map and the static map
        (:mod:`neve.maps.basemap`; the static map draws offline basemaps only);
        by default the demo basemap for demo data, otherwise none.
    inputs : dict, optional
        What was asked, echoed in the report's design criteria: ``command`` (the
        command line, paths already cut to file names) and ``roof_file``
        (``(file name, text)`` of the ROOF.toml, or None). The layers used are
        listed from ``views`` with their SHA-256.
    slope_pitch : bool, optional
        The roof slope was given as a rise:run: shown as ``6:12 (26.6°)``; False:
        as its angle, ``26.6°``; None (not known): as the pitch with its angle.

    Returns
    -------
    dict
        ``report_html``, ``report_pdf``, ``site_json``, ``site_map``,
        ``static_png``, ``static_svg``, ``diagram:<case name>`` and, with
        ``comparison``, ``comparison_json`` -> path (paths inside the final folder).
    """
    token = _FIRST.set("kPa" if style.si_first(site_json) else "psf")
    try:
        return _write_package(site_json, views, outdir, project=project, site_name=site_name,
                              overwrite=overwrite, comparison=comparison,
                              title_block=title_block, basemap=basemap,
                              slope_pitch=slope_pitch, inputs=inputs)  # fmt: skip
    finally:
        _FIRST.reset(token)


def _write_package(site_json, views, outdir, *, project, site_name, overwrite, comparison,
                   title_block, basemap, slope_pitch, inputs) -> dict[str, Path]:  # fmt: skip
    """:func:`write_package`, with the unit shown first set."""
    from weasyprint import HTML

    from neve import safe_write

    dest = Path(outdir)
    data = strip_machine_paths(copy.deepcopy(site_json))  # file names only, never a folder
    data.setdefault("site", {})
    if project is not None:
        data["site"]["project"] = project
    if site_name is not None:
        data["site"]["name"] = site_name
    # checked before any work; built beside dest and renamed into place whole; an
    # earlier package (and only a package) is replaced with overwrite, checked again
    with safe_write.atomic_folder(
        dest, overwrite=overwrite, field="package", replaceable=package_replaceable, parents=True
    ) as tmp:
        files: dict[str, Path] = {}
        safe_write.write_text(
            tmp / MARKER, "written by neve; this folder may be replaced by neve --overwrite\n"
        )
        files["site_json"] = safe_write.write_text(
            tmp / "site.json", json.dumps(data, indent=2, ensure_ascii=False) + "\n"
        )
        from neve.maps.basemap import as_basemap

        base = as_basemap(basemap, demo_data=is_demo(data, views), views=views)
        files["site_map"] = write_site_map(
            data, views, tmp / "site_map.html", self_contained=True, basemap=base
        )
        png, svg = write_static_map(
            data, views, tmp / "static_map.png", tmp / "static_map.svg", basemap=base
        )
        files["static_png"], files["static_svg"] = png, svg
        diagrams = write_case_diagrams(data.get("roof"), tmp / "diagrams")
        for name, p in diagrams.items():
            files[f"diagram:{name}"] = p
        today = _dt.date.today().isoformat()
        given = {k: v for k, v in (title_block or {}).items() if k in TITLE_BLOCK_FIELDS}
        tb = {k: "" if given.get(k) is None else str(given[k]) for k in TITLE_BLOCK_FIELDS}
        tb.update(project=data["site"].get("project") or "",
                  site=data["site"].get("name") or "Site", date=today)  # fmt: skip
        ctx = {
            "tb": tb,
            "css": assets.package_text("report.css"),
            "project": data["site"].get("project") or "",
            "site_name": data["site"].get("name") or "Site",
            "s": data["site"],
            "date": today,
            "version": _version(),
            "demo": is_demo(data, views),
            **result_context(data, diagrams, slope_pitch),
            "inputs": _inputs(inputs, views),
            "static_map": _data_uri(png),
            "map_html": files["site_map"].read_text(encoding="utf-8"),
        }
        html = render("report.html.j2", **ctx)
        if comparison is not None:  # the edition comparison page, last (neve compare --package)
            from neve.maps.compare_page import comparison_html

            cmp = strip_machine_paths(copy.deepcopy(comparison))
            for key in ("project", "name"):
                cmp["site"][key] = data["site"].get(key)
            files["comparison_json"] = safe_write.write_text(
                tmp / "comparison.json", json.dumps(cmp, indent=2, ensure_ascii=False) + "\n"
            )
            head, _, tail = html.rpartition("</body>")
            html = f"{head}{comparison_html(cmp)}</body>{tail}"
        files["report_html"] = safe_write.write_text(tmp / "report.html", html)
        # the PDF gets the page without the interactive map (a renderer of print cannot
        # run it; the static map stands in for it): the same template, map left out
        ctx["map_html"] = None
        pdf_html = render("report.html.j2", **ctx)
        if comparison is not None:
            head, _, tail = pdf_html.rpartition("</body>")
            pdf_html = f"{head}{comparison_html(cmp)}</body>{tail}"
        pdf = HTML(string=pdf_html, url_fetcher=_offline_fetcher(), base_url=str(tmp)).write_pdf()
        files["report_pdf"] = safe_write.write_bytes(tmp / "report.pdf", pdf)
    return {k: dest / p.relative_to(tmp) for k, p in files.items()}
