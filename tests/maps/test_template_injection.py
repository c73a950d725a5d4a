"""No text from any input is ever compiled as a template or shown as markup.

Every text field that reaches a map or report (site and project names, the
address, zone ``zone_id``/``note``/``source``, the sidecar's ``name``,
``source``, ``jurisdiction`` and ``license``, roof element names, the names
of stacked layers in the layer switcher, problem messages of a layer check,
and the portfolio's ``site_id``, text columns and column names) carries each
hostile payload of :mod:`tests.maps.hostile`, through the real CLI, into
every HTML output: the site map (default and ``--self-contained``), the
package's ``report.html``, ``site_map.html``, ``static_map.svg`` and
``report.pdf``, ``neve layer show --map`` and ``neve screen --map`` (both
kinds of page).  Each run must exit 0, show every field's text literally
(decoded once, as HTML text, attribute or JSON string), evaluate nothing, run
nothing (a marker file is never created) and hand no input text to Jinja's
compiler at all.

The payloads are the usual template-injection and HTML-injection probes
(common practice in web security testing).  All layers, sites and names are
INVENTED test data (an imaginary basin, demo = true); none is a jurisdiction's
map and none may be used for design.
"""

from __future__ import annotations

import csv
import re
import shutil
import subprocess
import xml.etree.ElementTree as ET

import jinja2
import pytest
from click.testing import CliRunner

from neve.cli import main
from tests.maps import hostile

#: invented site, inside the invented zone ``zone_id`` of the fixture layers
LAT, LON = 44.005, -110.004

#: fields shown by each output (field name -> tag used in the inputs)
SITE_MAP_FIELDS = (
    "site_name", "project", "address", "zone_id", "zone_note", "zone_source",
    "layer_name", "layer2_name", "jurisdiction", "layer_source",
)  # fmt: skip
REPORT_FIELDS = (
    "site_name", "project", "address", "zone_id", "jurisdiction", "license", "layer_name",
    "layer2_name", "layer_source", "step_name", "parapet_name", "projection_name",
)  # fmt: skip
LAYER_MAP_FIELDS = (
    "layer_name", "jurisdiction", "layer_source", "license", "zone_id", "zone_note",
    "zone_source", "dup_zone_id",
)  # fmt: skip

PAYLOAD_NAMES = [*hostile.BASE_PAYLOADS, "marker"]


class Inputs:
    """The hostile input files of one payload (built once per module)."""

    def __init__(self, root, name: str):
        import geopandas as gpd
        import tomli_w
        from shapely.geometry import box

        self.root = root
        self.name = name
        self.marker = root / "MARKER_created_by_template"
        self.payload = hostile.payloads(self.marker)[name]
        t = self.t
        for i, layer_field in enumerate(("layer_name", "layer2_name")):
            d = 0.03
            zones = gpd.GeoDataFrame(
                {
                    "zone_id": [t("zone_id"), "plain-study", t("dup_zone_id"), t("dup_zone_id")],
                    "rule": ["fixed", "study", "fixed", "fixed"],
                    "pg": [30.0, None, 20.0, 20.0],
                    "note": [t("zone_note"), "invented study area", "", ""],
                    "source": [t("zone_source"), "invented", "", ""],
                },
                geometry=[
                    box(LON - d, LAT - d, LON + 0.01, LAT + d),
                    box(LON + 0.01, LAT - d, LON + 0.04, LAT + d),
                    # two far-away zones sharing one id: a problem for `layer check`
                    box(LON + 0.30, LAT, LON + 0.31, LAT + 0.01),
                    box(LON + 0.32, LAT, LON + 0.33, LAT + 0.01),
                ],
                crs=4326,
            )
            path = root / f"layer{i}.geojson"
            zones.to_file(path, driver="GeoJSON")
            sidecar = {
                "name": t(layer_field),
                "jurisdiction": t("jurisdiction"),
                "standard": "ASCE 7-16",
                "source": t("layer_source"),
                "license": t("license"),
                "date": "2026-01-01",
                "value_units": "psf",
                "elevation_units": "ft",
                "demo": True,
            }
            (root / f"layer{i}.geojson.toml").write_text(tomli_w.dumps(sidecar), encoding="utf-8")
        self.layers = ["--layer", str(root / "layer0.geojson"), "--layer", str(root / "layer1.geojson")]  # fmt: skip
        roof = {
            "shape": "flat",
            "slope": "0.25:12",
            "eave_to_ridge": "60ft",
            "step": [{"name": t("step_name"), "height": "10ft", "upper_length": "120ft",
                      "lower_length": "60ft"}],
            "parapet": [{"name": t("parapet_name"), "height": "3.5ft", "upwind_length": "200ft"}],
            "projection": [{"name": t("projection_name"), "height": "5ft", "plan_length": "18ft",
                            "upwind_length": "90ft"}],
        }  # fmt: skip
        self.roof = root / "roof.toml"
        self.roof.write_text(tomli_w.dumps(roof), encoding="utf-8")
        self.gazetteer = root / "gazetteer.csv"
        with open(self.gazetteer, "w", newline="", encoding="utf-8") as fh:
            w = csv.writer(fh)
            w.writerow(["address", "lat", "lon"])
            w.writerow([t("address"), LAT, LON])
        self.sites = root / "sites.csv"
        with open(self.sites, "w", newline="", encoding="utf-8") as fh:
            w = csv.writer(fh)
            w.writerow(
                ["site_id", "lat", "lon", "elevation", "roof_text", t("column_name") + "_psf"]
            )
            w.writerow([t("site_id"), LAT, LON, "100m", t("roof_text"), "1"])
            w.writerow(["plain", LAT + 0.002, LON, "100m", "plain", "2"])

    def t(self, field: str) -> str:
        return hostile.tag(field, self.payload)

    def expected(self, field: str) -> str:
        """The text the page must show for ``field``."""
        if field == "column_name":  # popup labels show column names with spaces for "_"
            return (self.t(field) + "_psf").replace("_", " ")
        return self.t(field)


@pytest.fixture(scope="module")
def inputs(tmp_path_factory):
    cache: dict[str, Inputs] = {}

    def get(name: str) -> Inputs:
        if name not in cache:
            cache[name] = Inputs(tmp_path_factory.mktemp(f"hostile_{name}"), name)
        return cache[name]

    return get


@pytest.fixture
def compiled(monkeypatch):
    """Every template source Jinja compiles while the test runs (all environments)."""
    sources: list[str] = []
    original = jinja2.Environment.compile

    def spy(self, source, *args, **kwargs):
        sources.append(source if isinstance(source, str) else "")
        return original(self, source, *args, **kwargs)

    monkeypatch.setattr(jinja2.Environment, "compile", spy)
    jinja2.Environment().from_string("NVQspy_self_check")  # the spy sees every compile
    assert sources == ["NVQspy_self_check"]
    sources.clear()
    return sources


def run(args, compiled, inp: Inputs):
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 0, (result.output, result.exception)
    assert not inp.marker.exists(), "a template payload ran a shell command"
    leaked = [s for s in compiled if "NVQ" in s]
    assert leaked == [], "input text reached the Jinja compiler"
    return result


def check_raw(source: str) -> None:
    """Nothing hostile is live markup, and nothing printed by ``id`` is there."""
    assert not hostile.LIVE_MARKUP.search(source), hostile.LIVE_MARKUP.search(source).group(0)
    assert not hostile.ID_OUTPUT.search(source)


def check_doc(doc: hostile.Decoded, inp: Inputs, fields) -> None:
    for field in fields:
        assert doc.shows(inp.expected(field)), f"{field} not shown literally"
        for bad in hostile.evaluated_forms(field, inp.name):
            assert not doc.shows(bad), f"{field} was evaluated: {bad!r}"


def check_switcher(source: str, inp: Inputs) -> None:
    """Leaflet inserts layer names with innerHTML: they must create no element and read as typed."""
    names = hostile.layer_switcher_names(source)
    assert len(names) == 2, names
    shown = []
    for name in names:
        text, tags = hostile.html_text(name)
        assert tags == [], f"layer name would create elements {tags}"
        shown.append(text)
    assert shown == [inp.t("layer_name") + " (governs)", inp.t("layer2_name")]


def read(path) -> str:
    return path.read_text(encoding="utf-8")


@pytest.mark.parametrize("name", PAYLOAD_NAMES)
def test_site_map_and_package(name, inputs, compiled, tmp_path):
    inp = inputs(name)
    out = tmp_path / "out"
    args = ["site", "--address", inp.t("address"), "--gazetteer", str(inp.gazetteer),
            "--elevation", "100m", *inp.layers, "--roof", str(inp.roof),
            "--site-name", inp.t("site_name"), "--project", inp.t("project"),
            "--map", str(out / "site.html"), "--package", str(out / "pkg")]  # fmt: skip
    run(args, compiled, inp)
    for page in (out / "site.html", out / "pkg" / "site_map.html"):
        source = read(page)
        check_raw(source)
        check_doc(hostile.Decoded(source), inp, SITE_MAP_FIELDS)
        check_switcher(source, inp)
    report_source = read(out / "pkg" / "report.html")
    check_raw(report_source)
    report = hostile.Decoded(report_source)
    check_doc(report, inp, REPORT_FIELDS)
    assert len(report.nested) == 1  # the interactive map, embedded as srcdoc
    check_doc(report.nested[0], inp, SITE_MAP_FIELDS)
    check_switcher(report.nested[0].source, inp)
    # the static map keeps its title as SVG text (mathtext off, escaped as XML)
    svg_text = "".join(ET.parse(out / "pkg" / "static_map.svg").getroot().itertext())
    assert re.sub(r"\s+", "", inp.t("site_name")) in re.sub(r"\s+", "", svg_text)  # may wrap
    assert (out / "pkg" / "diagrams").is_dir()
    if shutil.which("pdftotext"):
        pdf = subprocess.run(["pdftotext", str(out / "pkg" / "report.pdf"), "-"],
                             capture_output=True, text=True, check=True).stdout  # fmt: skip
        flat = re.sub(r"\s+", "", pdf)
        for field in ("site_name", "project", "step_name"):
            assert re.sub(r"\s+", "", inp.t(field)) in flat, field
            for bad in hostile.evaluated_forms(field, name):
                assert bad not in flat
        assert not hostile.ID_OUTPUT.search(pdf)


@pytest.mark.parametrize("name", PAYLOAD_NAMES)
def test_site_map_self_contained(name, inputs, compiled, tmp_path):
    inp = inputs(name)
    page = tmp_path / "site.html"
    args = ["site", "--address", inp.t("address"), "--gazetteer", str(inp.gazetteer),
            "--elevation", "100m", *inp.layers, "--site-name", inp.t("site_name"),
            "--project", inp.t("project"), "--map", str(page), "--self-contained"]  # fmt: skip
    run(args, compiled, inp)
    source = read(page)
    check_raw(source)
    check_doc(hostile.Decoded(source), inp, SITE_MAP_FIELDS)
    check_switcher(source, inp)


@pytest.mark.parametrize("self_contained", [False, True], ids=["linked", "self_contained"])
@pytest.mark.parametrize("name", PAYLOAD_NAMES)
def test_layer_show_map(name, self_contained, inputs, compiled, tmp_path):
    inp = inputs(name)
    page = tmp_path / "layer.html"
    args = ["layer", "show", inp.layers[1], "--map", str(page)]
    run(args + (["--self-contained"] if self_contained else []), compiled, inp)
    source = read(page)
    check_raw(source)
    check_doc(hostile.Decoded(source), inp, LAYER_MAP_FIELDS)


def clip(text: str, limit: int) -> str:
    """A popup text as the portfolio map cuts it (see ``neve.maps.portfolio.POPUP_TEXT_LIMITS``)."""
    return text if len(text) <= limit else text[: limit - 1] + "\u2026"


@pytest.mark.parametrize("self_contained", [False, True], ids=["linked", "self_contained"])
@pytest.mark.parametrize("name", PAYLOAD_NAMES)
def test_screen_portfolio_map(name, self_contained, inputs, compiled, tmp_path):
    import pandas as pd

    from neve.maps.portfolio import POPUP_TEXT_LIMITS as LIMITS

    inp = inputs(name)
    page = tmp_path / "portfolio.html"
    results = tmp_path / "results.csv"
    args = ["screen", str(inp.sites), "-o", str(results), *inp.layers,
            "--map", str(page)] + (["--self-contained"] if self_contained else [])  # fmt: skip
    run(args, compiled, inp)
    source = read(page)
    check_raw(source)
    doc = hostile.Decoded(source)
    row = pd.read_csv(results, dtype=str, keep_default_na=False).iloc[0]
    # each input text reaches its results cell whole, and the popup shows that cell as text
    for field, column, limit in (
        ("site_id", "site_id", LIMITS["site_id"]),
        ("roof_text", "roof_text", LIMITS["extra"]),
        ("zone_id", "zone_id", LIMITS["zone"]),
        ("layer_name", "message", LIMITS["message"]),
    ):
        assert inp.t(field) in row[column], field
        assert doc.shows(clip(row[column], limit)), f"{field} not shown literally"
        for bad in hostile.evaluated_forms(field, name):
            assert not doc.shows(bad), f"{field} was evaluated: {bad!r}"
    assert doc.shows(inp.expected("column_name"))  # a column name as a popup label


def test_decoder_finds_what_it_should_and_not_more():
    """The checks above are only as good as the decoder: it must see shown text, not source."""
    lit = "NVQf:<script>alert(1)</script>:QVN"
    shown = hostile.Decoded(
        "<div>NVQf:&lt;script&gt;alert(1)&lt;/script&gt;:QVN</div>"
        '<script>var a = "NVQg:\\u003cb\\u003e:QVN";</script>'
    )
    assert shown.shows(lit)
    assert shown.shows("NVQg:<b>:QVN")
    double = hostile.Decoded(
        "<div>NVQf:&amp;lt;script&amp;gt;alert(1)&amp;lt;/script&amp;gt;:QVN</div>"
    )
    assert not double.shows(lit)  # escaped twice: the reader would see entities
    live = hostile.Decoded(f"<div>{lit}</div>")
    assert not live.shows(lit)  # live markup is not text
    assert hostile.html_text("&lt;b&gt;x") == ("<b>x", [])
    assert hostile.html_text("<b>x") == ("x", ["b"])
