"""Static map and load diagrams: made with Agg, no display, no network."""

from __future__ import annotations

import copy
import json
import math
import os
import subprocess
import sys
import textwrap
import xml.etree.ElementTree as ET

import pytest

from neve.maps.diagrams import write_case_diagrams
from neve.maps.geom import local_crs
from neve.maps.static import _nice_length, true_north_angle, write_static_map
from tests.maps.conftest import make_roof_json, make_site_json, make_view


def test_static_map_and_diagrams_without_display_or_network(tmp_path):
    """Run in a fresh interpreter with no DISPLAY and every socket connection refused."""
    code = textwrap.dedent(
        f"""
        import socket, sys
        def refuse(*a, **k):
            raise OSError("network used")
        socket.socket.connect = refuse
        socket.create_connection = refuse
        sys.path.insert(0, {os.getcwd()!r})
        from tests.maps.conftest import make_site_json, make_view, make_roof_json
        from neve.maps.static import write_static_map
        from neve.maps.diagrams import write_case_diagrams
        import matplotlib
        out = write_static_map(make_site_json(), [make_view()], {str(tmp_path / "m.png")!r},
                               {str(tmp_path / "m.svg")!r})
        d = write_case_diagrams(make_roof_json(), {str(tmp_path / "d")!r})
        print(matplotlib.get_backend().lower(), len(out), len(d))
        """
    )
    env = {k: v for k, v in os.environ.items() if k not in ("DISPLAY", "WAYLAND_DISPLAY")}
    env["MPLBACKEND"] = "Agg"
    run = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True,
                         timeout=120)  # fmt: skip
    assert run.returncode == 0, run.stderr
    assert run.stdout.split() == ["agg", "2", "2"]
    from PIL import Image

    with Image.open(tmp_path / "m.png") as im:
        assert im.size[0] > 1000 and im.size[1] > 700
    root = ET.parse(tmp_path / "m.svg").getroot()
    assert root.tag.endswith("svg")


def test_static_map_content(tmp_path):
    png, svg = write_static_map(
        make_site_json(), [make_view()], tmp_path / "m.png", tmp_path / "m.svg"
    )
    text = svg.read_text(encoding="utf-8")  # text is kept as text (svg.fonttype none)
    assert png.stat().st_size > 20_000
    for part in ("site: pg = 35 psf (1.68 kPa)", "Ground snow load pg [psf]", "governing zone",
                 "case study required (no value)", "2 km", "5,000 ft", ">N<", "UTM zone 12N",
                 "DEMO DATA"):  # fmt: skip
        assert part in text, part
    assert sorted(p.name for p in tmp_path.iterdir()) == ["m.png", "m.svg"]


def test_static_map_needs_no_views(tmp_path):
    site = make_site_json(roof=False)
    (png,) = write_static_map(site, [], tmp_path / "m.png")
    assert png.exists()


@pytest.mark.parametrize(("target", "nice"), [(1.0, 1.0), (2600.0, 2000.0), (4999.0, 2000.0),
                                              (5000.0, 5000.0), (0.73, 0.5)])  # fmt: skip
def test_scale_bar_lengths_are_round(target, nice):
    # 1-2-5 steps (common practice for scale bars)
    assert _nice_length(target) == nice


@pytest.mark.parametrize(("lat", "lon"), [(44.0, -110.0), (44.0, -113.9), (60.0, 24.0 + 2.5)])
def test_north_arrow_follows_meridian_convergence(lat, lon):
    """Transverse Mercator convergence gamma ~ atan(tan(lon - lon0) sin(lat)).

    Spherical approximation of the grid convergence (from memory, Snyder 1987,
    Map Projections: A Working Manual, transverse Mercator chapter); agrees
    with the ellipsoidal value to well under 0.05 degrees this close to the
    central meridian.
    """
    crs = local_crs(lat, lon)
    zone = crs.to_epsg() - 32600
    lon0 = -183.0 + 6.0 * zone
    expected = math.degrees(
        math.atan(math.tan(math.radians(lon - lon0)) * math.sin(math.radians(lat)))
    )
    assert true_north_angle(lat, lon, crs) == pytest.approx(expected, abs=0.05)


def test_diagrams_for_their_case_kinds_only(tmp_path):
    roof = make_roof_json()
    roof["cases"].append({"case": "sliding", "name": "onto canopy",
                          "load": {"psf": 12.0, "kPa": 0.5746}, "extent": {"ft": 15.0, "m": 4.572}})  # fmt: skip
    roof["cases"].append({"case": "ice_dam", "name": "eave of the canopy",
                          "load": {"psf": 53.9, "kPa": 2.5807}, "overhang": {"ft": 2.0, "m": 0.6096}})  # fmt: skip
    out = write_case_diagrams(roof, tmp_path)
    # balanced and the unknown "mystery" case get none
    assert list(out) == ["unbalanced (wind across ridge)", "drift at high bay", "onto canopy",
                         "eave of the canopy"]  # fmt: skip
    for p in out.values():
        assert p.suffix == ".png" and p.stat().st_size > 5_000
    assert write_case_diagrams(None, tmp_path / "none") == {}
    json.dumps({k: str(v) for k, v in out.items()})  # plain, serialisable names


# --- one dimensioned diagram per kind, from cases the engine computes ---------------------

#: an invented roof (not a real project) with every kind of case: a step onto this roof, an
#: adjacent separate structure, a parapet, a rooftop unit and an overhang
ROOF_TOML = """
shape = "gable"
slope = "3:12"
eave_to_ridge = "40ft"

[[step]]
name = "high bay"
height = "10ft"
upper_length = "120ft"
lower_length = "60ft"
upper_slope = "4:12"
upper_surface = "slippery"
upper_eave_to_ridge = "40ft"

[[step]]
name = "annex"
height = "8ft"
upper_length = "80ft"
lower_length = "60ft"
separation = "6ft"
upper_slope = "4:12"
upper_surface = "slippery"
upper_eave_to_ridge = "30ft"

[[parapet]]
name = "north parapet"
height = "3.5ft"
upwind_length = "200ft"

[[projection]]
name = "RTU-1"
height = "5ft"
plan_length = "18ft"
upwind_length = "90ft"

[overhang]
length = "2ft"
"""


#: invented curved, dome and sawtooth roofs (issue 12) whose cases join the roof above: a
#: half-circle hall (eave slope above 70°), a shallow dome, a sawtooth whose valley limit governs
SHAPE_ROOFS = [
    {"shape": "curved", "rise": "30ft", "chord": "60ft", "eave_clear": True},
    {"shape": "dome", "rise": "10ft", "diameter": "100ft"},
    {"shape": "sawtooth", "slope": "4:12", "ridge_height": "2ft", "spans": 4},
]


def _engine_roof(standard="asce7-16"):
    import tomllib

    import neve

    roof = neve.Roof.from_mapping(tomllib.loads(ROOF_TOML))
    extra = {"w2": 0.5} if standard == "asce7-22" else {}
    out = json.loads(
        json.dumps(neve.analyze_roof(35.0, roof, standard=standard, **extra).to_json())
    )
    for spec in SHAPE_ROOFS:
        shaped = neve.analyze_roof(35.0, neve.Roof.from_mapping(spec), standard=standard, **extra)
        out["cases"] += [c for c in json.loads(json.dumps(shaped.to_json()))["cases"]
                         if c.get("method") in ("curved", "dome", "sawtooth")]  # fmt: skip
    return out


@pytest.fixture(scope="module", params=["asce7-16", "asce7-22"])
def engine_roof(request):
    return _engine_roof(request.param)


def _case(roof, kind, name_part=""):
    from neve.maps.diagrams import diagram_kind

    for case in roof["cases"]:
        if diagram_kind(case) == kind and name_part in case["name"]:
            return case
    raise AssertionError(f"no {kind} case {name_part!r}")


def _texts(fig):
    from matplotlib.text import Text

    return [t for t in fig.findobj(Text) if t.get_visible() and t.get_text().strip()]


def _all_text(fig) -> str:
    return "\n".join(t.get_text() for t in _texts(fig))


#: (kind, a part of the case name, the parts the sketch names, case keys whose values it shows)
KINDS = [
    ("step", "high bay", ["upper roof", "lower roof", "hb", "hc", "hd", "w", "lu", "wind",
                          "ps + pd"], ["balanced", "pd", "total_peak", "hb", "hc", "hd", "w"]),
    ("adjacent", "annex", ["upper roof", "lower roof", "hb", "hc", "hd", "w", "lu"],
     ["balanced", "pd", "total_peak", "hb", "hc", "hd", "w"]),
    ("parapet", "", ["parapet", "hb", "hc", "hd", "w", "lu", "wind", "ps + pd"],
     ["balanced", "pd", "total_peak", "hb", "hc", "hd", "w"]),
    ("projection", "", ["projection", "hb", "hc", "hd", "w", "lu", "wind", "ps + pd"],
     ["balanced", "pd", "total_peak", "hb", "hc", "hd", "w"]),
    ("sliding", "high bay", ["upper roof", "lower roof", "extent", "snow slides", "ps + sliding"],
     ["balanced", "load", "total", "line_load", "extent"]),
    ("sliding", "annex", ["upper roof", "lower roof", "extent", "s"],
     ["balanced", "load", "total", "line_load", "extent"]),
    ("unbalanced", "", ["windward", "leeward", "surcharge", "ridge", "wind", "extent", "W"],
     ["windward", "leeward", "surcharge", "leeward_peak", "surcharge_extent"]),
    ("ice_dam", "", ["eave", "overhang", "eave load", "ice dam"], ["load", "overhang"]),
    # issue 12
    ("curved_balanced", "curved roof", ["crown", "eave", "30\u00b0", "70\u00b0", "h", "c", "x30",
                                        "x70", "Cs pf"],
     ["crown", "at_30", "at_70", "eave", "x_30", "x_70", "half_chord", "rise"]),
    ("curved", "", ["windward", "leeward", "crown", "eave", "30\u00b0", "70\u00b0", "wind", "h",
                    "c", "x30", "x70"],
     ["leeward_crown", "leeward_30", "leeward_70", "leeward_eave", "windward", "x_30", "x_70",
      "half_chord", "rise"]),
    ("dome", "", ["plan", "leeward", "wind", "crown", "eave", "h", "c"],
     ["leeward_crown", "leeward_eave", "windward", "half_chord", "rise"]),
    ("sawtooth", "", ["ridge", "valley", "hr", "W", "p valley", "p ridge"],
     ["ridge", "valley", "valley_unlimited", "valley_limit", "ridge_height", "ridge_to_valley",
      "gamma"]),
]  # fmt: skip


def test_every_kind_is_drawn_from_the_engine_json(engine_roof, tmp_path):
    from neve.maps.diagrams import DIAGRAM_CASES, DIAGRAM_KINDS, diagram_kind

    kinds = [diagram_kind(c) for c in engine_roof["cases"]]
    assert set(DIAGRAM_KINDS) <= set(kinds)
    out = write_case_diagrams(engine_roof, tmp_path)
    drawn = [c for c in engine_roof["cases"]
             if c["case"] in DIAGRAM_CASES or c.get("method") in ("curved", "dome")]  # fmt: skip
    assert len(out) == len(drawn) == sum(k is not None for k in kinds)
    from PIL import Image

    for p in out.values():
        with Image.open(p) as im:
            assert im.size == (1080, 525)


@pytest.mark.parametrize(("kind", "part", "names", "keys"), KINDS)
def test_diagram_names_its_parts_and_shows_the_case_values(engine_roof, kind, part, names, keys):
    """Every value as the package's case table prints it (the one formatter)."""
    from neve.maps.diagrams import case_figure
    from neve.maps.package import _value_text

    case = _case(engine_roof, kind, part)
    fig = case_figure(case, engine_roof)
    labels = {t.get_text() for t in _texts(fig)}
    for name in names:
        assert name in labels, name
    text = _all_text(fig)
    for key in keys:
        assert _value_text(case[key], key) in text, key
    assert "schematic; lengths not to scale" in text


@pytest.mark.parametrize(("kind", "part", "fetch"), [
    ("step", "leeward drift at roof step", "120 ft (36.58 m)"),  # upper_length (7-22 leeward)
    ("step", "windward drift at roof step", "60 ft (18.29 m)"),  # lower_length (7-22 windward)
    ("step", "drift at roof step 'high bay'", None),  # 7-16: the governing side's fetch
    ("parapet", "", "200 ft (60.96 m)"),  # upwind_length of the parapet
    ("projection", "", "90 ft (27.43 m)"),  # upwind_length of the unit
    ("unbalanced", "", "40 ft (12.19 m)"),  # eave to ridge
])  # fmt: skip
def test_fetch_lu_is_the_input_length(engine_roof, kind, part, fetch):
    """lu is read from the engine's steps; it must be the length given in ROOF_TOML."""
    from neve.maps.diagrams import case_figure

    cases = [c for c in engine_roof["cases"] if part in c["name"]]
    try:
        case = _case(engine_roof, kind, part)
    except AssertionError:
        assert not cases  # this edition names its step drifts otherwise
        return
    if fetch is None:
        fetch = {"leeward": "120 ft (36.58 m)", "windward": "60 ft (18.29 m)"}[case["governs"]]
    rows = [t.get_text() for t in _texts(case_figure(case, engine_roof))]
    assert fetch in rows
    assert "lu" in rows


@pytest.mark.parametrize(("kind", "part"), [("adjacent", "leeward"), ("sliding", "annex")])
def test_separation_is_the_input_length(engine_roof, kind, part):
    from neve.maps.diagrams import case_figure, separation

    cases = [c for c in engine_roof["cases"]
             if c["case"] in ("drift", "sliding") and "annex" in c["name"]]  # fmt: skip
    case = next((c for c in cases if part in c["name"] or kind == "sliding" and
                 c["case"] == "sliding"), cases[0])  # fmt: skip
    if kind == "adjacent" and "leeward" not in case["name"]:
        case = _case(engine_roof, "adjacent", "annex")  # 7-16: one drift case per step
    assert separation(case) == {"ft": 6.0, "m": 1.8288}  # separation = "6ft" in ROOF_TOML
    assert "6 ft (1.83 m)" in _all_text(case_figure(case, engine_roof))


@pytest.mark.parametrize("variant", ["engine", "fixture"])
def test_every_symbol_on_the_sketch_has_its_value_in_the_table(engine_roof, variant):
    """A dimension or load named on the sketch (italic) is a row of the table beside it."""
    from neve.maps.diagrams import case_figure

    roof = engine_roof if variant == "engine" else make_roof_json()
    for case in roof["cases"]:
        fig = case_figure(case, roof)
        if fig is None:
            continue
        texts = [t for t in _texts(fig) if t.get_style() == "italic"]
        sketch = {t.get_text() for t in texts if t.axes is not None}
        table = {t.get_text() for t in texts if t.axes is None}
        assert sketch and sketch <= table, (case["name"], sketch - table)


@pytest.mark.parametrize("standard", ["asce7-16", "asce7-22"])
def test_drift_cut_at_the_far_edge_of_a_short_lower_roof(standard):
    """A lower roof shorter than the drift: the width on the roof and the edge surcharge."""
    import neve
    from neve.maps.diagrams import case_figure
    from neve.maps.package import _value_text

    roof = neve.Roof.from_mapping({"shape": "flat", "slope": "0.25:12", "step": [
        {"name": "short canopy", "height": "10ft", "upper_length": "150ft",
         "lower_length": "8ft"}]})  # fmt: skip
    extra = {"w2": 0.5} if standard == "asce7-22" else {}
    data = json.loads(
        json.dumps(neve.analyze_roof(50.0, roof, standard=standard, **extra).to_json())
    )
    cut = [c for c in data["cases"] if c["case"] == "drift" and c["pd_far_edge"]["psf"] > 0]
    assert cut  # an 8 ft lower roof is narrower than any of its drifts here
    for case in cut:
        fig = case_figure(case, data)
        text = _all_text(fig)
        assert _value_text(case["w_on_roof"]) == "8 ft (2.44 m)"  # lower_length above
        for key in ("w_on_roof", "pd_far_edge", "w", "total_peak"):
            assert _value_text(case[key], key) in text, key
        assert _overlaps(fig) == ([], [])


def test_drift_kinds_follow_the_source_key():
    from neve.maps.diagrams import diagram_kind

    for source in ("step", "adjacent", "parapet", "projection"):
        # the source decides, whatever the (user-given) name says
        assert (
            diagram_kind({"case": "drift", "source": source, "name": "drift at parapet"}) == source
        )
    assert diagram_kind({"case": "drift", "name": "drift at parapet 'n'"}) == "parapet"  # no source
    assert diagram_kind({"case": "drift", "name": "drift at high bay"}) == "step"
    assert diagram_kind({"case": "balanced", "name": "balanced"}) is None
    assert diagram_kind({"case": "partial"}) is None


def _scaled(case, loads=1.0, depths=1.0, widths=1.0):
    """A copy of a case with its loads and lengths scaled (invented extremes)."""
    out = copy.deepcopy(case)
    for key, value in case.items():
        if isinstance(value, dict) and "psf" in value:
            out[key] = {"psf": value["psf"] * loads, "kPa": value["kPa"] * loads}
        elif isinstance(value, dict) and "ft" in value:
            f = (
                widths
                if key in ("w", "w_on_roof", "extent", "surcharge_extent", "overhang")
                else depths
            )
            out[key] = {"ft": value["ft"] * f, "m": value["m"] * f}
        elif isinstance(value, dict) and "plf" in value:
            out[key] = {"plf": value["plf"] * loads, "kN/m": value["kN/m"] * loads}
    return out


LONG_NAME = ("drift at roof step 'north high bay of the cold store, grid lines A to K and 1 to 14, "
             "revision C as issued for tender, see the structural notes sheet S-001'")  # fmt: skip

VARIANTS = {
    "as computed": lambda c: c,
    "long name": lambda c: dict(c, name=LONG_NAME * 2),
    "one long word": lambda c: dict(c, name="X" * 400),
    "large loads": lambda c: _scaled(c, loads=400.0, depths=60.0, widths=80.0),
    "small loads": lambda c: _scaled(c, loads=0.002, depths=0.01, widths=0.01),
    "deep drift, shallow snow": lambda c: dict(_scaled(c, depths=1.0), hb={"ft": 0.02, "m": 0.006},
                                               hd={"ft": 40.0, "m": 12.19},
                                               hc={"ft": 40.0, "m": 12.19}),
    "shallow drift, deep snow": lambda c: dict(c, hb={"ft": 30.0, "m": 9.14},
                                               hd={"ft": 0.01, "m": 0.003},
                                               hc={"ft": 0.05, "m": 0.015}),
}  # fmt: skip


def test_overlap_check_sees_overlapping_and_outside_text():
    """The check itself: two labels on one spot, and one past the edge, are found."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(4, 2))
    FigureCanvasAgg(fig)
    fig.text(0.5, 0.5, "hd = 3.99 ft")
    fig.text(0.52, 0.5, "w = 15.97 ft")
    fig.text(0.98, 0.1, "lu = 120 ft")
    outside, pairs = _overlaps(fig)
    assert outside == ["lu = 120 ft"]
    assert ("hd = 3.99 ft", "w = 15.97 ft") in pairs


def _overlaps(fig):
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    boxes = [(t.get_text(), t.get_window_extent(renderer)) for t in _texts(fig)]
    page = fig.bbox
    outside = [s for s, b in boxes if b.x0 < page.x0 - 0.5 or b.x1 > page.x1 + 0.5
               or b.y0 < page.y0 - 0.5 or b.y1 > page.y1 + 0.5]  # fmt: skip
    pairs = [(a, b) for i, (a, ba) in enumerate(boxes) for b, bb in boxes[i + 1:]
             if ba.overlaps(bb)]  # fmt: skip
    return outside, pairs


@pytest.mark.parametrize("variant", list(VARIANTS))
@pytest.mark.parametrize(("kind", "part"), [(k, p) for k, p, _, _ in KINDS])
def test_no_two_labels_overlap(engine_roof, kind, part, variant):
    """No text box touches another or leaves the figure (matplotlib's own text extents)."""
    from neve.maps.diagrams import case_figure

    case = VARIANTS[variant](_case(engine_roof, kind, part))
    outside, pairs = _overlaps(case_figure(case, engine_roof))
    assert outside == []
    assert pairs == []


def test_no_overlap_without_the_optional_keys():
    """An older or smaller JSON (the fixture's drift has no hb, hc, source): still no overlap."""
    from neve.maps.diagrams import case_figure

    roof = make_roof_json()
    for case in roof["cases"]:
        fig = case_figure(case, roof)
        if fig is not None:
            assert _overlaps(fig) == ([], [])


def test_narrow_roof_unbalanced_without_surcharge():
    import neve
    from neve.maps.diagrams import case_figure

    roof = neve.Roof.from_mapping({"shape": "gable", "slope": "6:12", "eave_to_ridge": "15ft",
                                   "prismatic": True})  # fmt: skip
    data = json.loads(json.dumps(neve.analyze_roof(35.0, roof).to_json()))
    (case,) = [c for c in data["cases"] if c["case"] == "unbalanced"]
    fig = case_figure(case, data)
    labels = {t.get_text() for t in _texts(fig)}
    assert "surcharge" not in labels and "windward" in labels and "leeward" in labels
    assert "35.0 psf (1.68 kPa)" in labels  # leeward = Is pg with Is = 1.0, pg = 35 psf
    assert _overlaps(fig) == ([], [])


HOSTILE_NAMES = ["{{7*7}}", "{% for x in y %}loop{% endfor %}", "<b>bold</b> & <i>",
                 "$\\frac{a}{b}$ costs $5 and $x^2$", "two\nlines\tand a tab"]  # fmt: skip


@pytest.mark.parametrize("name", HOSTILE_NAMES)
def test_hostile_case_names_are_shown_literally(engine_roof, name, tmp_path):
    from neve.maps.diagrams import case_figure

    for kind, part, _, _ in KINDS[::2]:
        case = dict(_case(engine_roof, kind, part), name=name)
        fig = case_figure(case, engine_roof)
        (title,) = [t for t in _texts(fig) if t.get_fontsize() > 9]
        # as typed (line breaks and tabs fold into spaces): no template, no markup, no maths
        assert " ".join(title.get_text().split()).endswith(": " + " ".join(name.split()))
        assert "49" not in title.get_text()
        assert not title.get_parse_math()  # "$...$" is text, not mathematics
        assert _overlaps(fig) == ([], [])
    if name != HOSTILE_NAMES[-1]:
        return  # files: once (a name with a line break and a tab) is enough
    roof = copy.deepcopy(engine_roof)
    for case in roof["cases"]:
        case["name"] = name
    out = write_case_diagrams(roof, tmp_path)
    assert len(out) >= 8  # the same name made unique per case, each drawn
