"""The standards registry (neve.engine.standards) and ``--standard`` on roof, site and screen.

Sources: issue 9, "A socket for standards" (a standard registers itself with
one registry; the CLI, neve site, neve screen, the maps and the package ask
the registry; nothing outside a standard's own folder names its clauses;
``--standard`` with ASCE 7-16 as the only entry and default; an unknown
standard exits with 2 listing what is available; the JSON ``standard`` key
stays "ASCE 7-16"). Which layer editions feed ASCE 7-16: ASCE 7-05 and 7-10
map the same 50-year ground snow load, ASCE 7-22 strength-level loads and
EN 1991-1-3 a different quantity, sk (from memory). The registry checks are
structural regression guards; the numbers are ASCE 7-16 Eq. 7.3-1 by hand.
"""

from __future__ import annotations

import ast
import doctest
import json
import re
import tomllib
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

import neve.engine.standards as registry
from neve.cli import main
from neve.engine import InputError, NeveError, Roof, analyze_roof, uniform_loads
from neve.engine.roof import RoofResult
from neve.engine.standards import (
    RoofOption,
    Standard,
    available,
    find_standard,
    get_standard,
    register,
    site_quantities,
)

ROOT = Path(__file__).resolve().parents[2]

# --- lookups -------------------------------------------------------------------------


@pytest.mark.parametrize(
    "name", ["asce7-16", "ASCE 7-16", "asce 7-16", "ASCE7-16", "ASCE/SEI 7-16", " Asce 7-16 "]
)
def test_names_users_type_find_asce_7_16(name):
    std = get_standard(name)
    assert std.id == "asce7-16"
    assert std.title == "ASCE 7-16"  # the JSON `standard` value, unchanged


def test_default_standard_is_asce_7_16():
    assert get_standard().id == "asce7-16"
    assert get_standard(None) is get_standard("asce7-16")
    # issue 10 adds ASCE 7-22, issue 13 EN 1991-1-3; the default stays first
    assert available() == ["asce7-16", "asce7-22", "en1991-1-3"]


@pytest.mark.parametrize("name", ["ASCE 7-21", "EN 1991-1-4", "asce7-10", "", "7-16"])
def test_unknown_standard_is_an_input_error_listing_what_is_available(name):
    with pytest.raises(InputError) as info:
        get_standard(name)
    assert info.value.field == "standard"
    assert info.value.accepted == "asce7-16, asce7-22, en1991-1-3"
    assert str(info.value).endswith("accepted: asce7-16, asce7-22, en1991-1-3")
    assert info.value.exit_code == 2
    assert find_standard(name) is None


@pytest.mark.parametrize(
    ("layer_standard", "quantity", "accepted"),
    [
        ("ASCE 7-16", "pg", True),
        ("ASCE/SEI 7-16", "pg", True),
        ("asce 7-10", "pg", True),
        ("ASCE 7-05", "pg", True),
        ("ASCE 7-22", "pg", False),  # strength-level ground loads (from memory)
        ("EN 1991-1-3", "pg", False),
        ("ASCE 7-16", "sk", False),  # a quantity ASCE 7-16 does not use
    ],
)
def test_layer_editions_and_quantity_the_standard_takes(layer_standard, quantity, accepted):
    assert get_standard().accepts_layer(layer_standard, quantity) is accepted


def test_geo_takes_layer_editions_and_quantities_from_the_registry():
    from neve.geo.layers.sidecar import QUANTITIES
    from neve.geo.site.one import roof_engine_accepts

    # w2: ASCE 7-22 (issue 10); sk: EN 1991-1-3 (issue 13)
    assert site_quantities() == ("pg", "w2", "sk") == tuple(QUANTITIES)
    assert roof_engine_accepts("ASCE 7-10") and not roof_engine_accepts("ASCE 7-22")
    assert roof_engine_accepts("ASCE 7-22", "asce7-22", "w2")
    assert roof_engine_accepts("ASCE 7-16", "ASCE 7-16", "pg")
    with pytest.raises(InputError):
        roof_engine_accepts("ASCE 7-16", "no-such-standard")


# --- the declaration -----------------------------------------------------------------


def test_asce_7_16_declares_units_quantities_options_and_cautions():
    from neve.roof_file import ROOF_KEYS

    std = get_standard()
    assert std.units["load"] == "psf" and std.units["length"] == "ft"
    assert std.units["density"] == "pcf"
    assert std.quantities == ("pg",)
    assert set(std.layer_standards) == {"ASCE 7-16", "ASCE 7-10", "ASCE 7-05"}
    names = [o.name for o in std.roof_options]
    # the standard's options sit on top of the shared geometry and are all roof keys
    assert not {"shape", "slope", "eave_to_ridge"} & set(names)
    assert set(names) <= set(ROOF_KEYS)
    # choices as data: what the engine's tables accept (ASCE 7-16 Tables 7.3-1, 7.3-2, 1.5-2)
    assert std.roof_option("terrain").choices == ("B", "C", "D", "above-treeline", "treeless")
    assert std.roof_option("exposure").choices == ("fully", "partially", "sheltered")
    assert std.roof_option("risk").choices == ("I", "II", "III", "IV")
    assert "greenhouse" in std.roof_option("thermal").choices
    assert std.roof_option("ventilated").opposite == "unventilated"
    assert std.roof_option("r_value").flag == "--r-value"
    with pytest.raises(InputError) as info:
        std.roof_option("shape")
    assert "ct" in info.value.accepted
    text = " ".join(std.cautions).lower()
    assert "licensed" in text and "authority having jurisdiction" in text and "study" in text


def test_cli_roof_option_help_comes_from_the_declaration():
    from neve.cli.roof import roof

    helps = {p.name: p.help for p in roof.params}
    for opt in get_standard().roof_options:
        assert helps[opt.name] == opt.help


def test_provisions_of_the_package_come_from_the_standard():
    std = get_standard()
    # ASCE 7-16 Eq. 7.3-1 (pf) and Sec. 7.6.1 (unbalanced) (from memory)
    assert std.ref("load.pf") == "ASCE 7-16 Eq. 7.3-1"
    assert std.case_ref({"case": "unbalanced"}) == "ASCE 7-16 Sec. 7.6.1"
    assert std.case_ref({"case": "drift", "source": "adjacent"}) == "ASCE 7-16 Sec. 7.7.2"
    assert std.case_ref({"case": "drift", "source": "unknown"}) == "ASCE 7-16 Sec. 7.7, 7.8"
    assert std.case_ref({"case": "nothing-known"}) == ""
    assert std.ref("no-such-key") == ""


def test_package_summary_refs_match_the_step_refs():
    # the package's clause labels (from the registry) and the engine's own step refs agree
    from neve.maps.package import _summary

    res = analyze_roof(35.0, Roof.from_mapping({"shape": "gable", "slope": "6:12",
                                                 "eave_to_ridge": "30ft"})).to_json()  # fmt: skip
    rows = {r["label"]: r["ref"] for r in _summary(res)}
    (bal,) = [c for c in res["cases"] if c["case"] == "balanced"]
    pf_step = next(s for s in bal["steps"] if s["symbol"] == "pf")
    assert rows["Flat roof snow load pf"] == pf_step["ref"] == "ASCE 7-16 Eq. 7.3-1"
    unb = next(r for label, r in rows.items() if "unbalanced" in label.lower())
    assert unb == "ASCE 7-16 Sec. 7.6.1"


# --- analyze and the uniform path through the registry -------------------------------


def test_analyze_through_the_registry_is_the_engine_result():
    roof = Roof.from_mapping({"shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft"})
    std = get_standard("ASCE 7-16")
    a = std.analyze({"pg": 35.0}, roof).to_json()
    b = analyze_roof(35.0, roof).to_json()
    c = analyze_roof(35.0, roof, standard="asce7-16").to_json()
    assert a == b == c
    assert a["standard"] == "ASCE 7-16"
    # ASCE 7-16 Eq. 7.3-1 by hand: 0.7 x 35 = 24.5 psf; Cs = 1 at 26.57 deg (Fig. 7.4-1)
    assert a["design_uniform"]["psf"] == pytest.approx(24.5, abs=1e-3)
    pg = np.array([10.0, 35.0, np.nan])
    u = std.uniform({"pg": pg}, roof)
    v = uniform_loads(pg, roof)
    for key in ("pf", "ps", "pm", "rain_on_snow", "design_uniform"):
        np.testing.assert_array_equal(u[key], v[key])
    assert std.screening_flags(roof) == registry.get_standard().screening_flags(roof)
    with pytest.raises(InputError) as info:
        std.analyze({"sk": 1.0}, roof)
    assert info.value.field == "pg"


def test_cautions_name_of_the_engine_roof_module_still_works():
    from neve.engine.roof import CAUTIONS

    assert CAUTIONS == list(get_standard().cautions)


# --- the socket: a second standard plugs in without touching the core -----------------


@pytest.fixture
def toy_standard():
    """An invented second standard (test fixture, not a real one), removed afterwards."""

    def analyze(quantities, roof):
        return RoofResult("TOY 1", float(quantities["sk"]), roof,
                          {"Ce": 1.0, "Ct": 1.0, "Is": 1.0, "Cs": 1.0, "risk": "II"},
                          {"pf": 2.0 * float(quantities["sk"])}, [], 2.0 * float(quantities["sk"]),
                          cautions=["toy caution"])  # fmt: skip

    std = Standard(
        id="toy-1",
        title="TOY 1",
        names=("Toy One",),
        layer_standards=("TOY 1",),
        units={"load": "psf", "length": "ft"},
        quantities=("sk",),
        roof_options=(RoofOption("toy_factor", "number", "An invented factor."),),
        cautions=("toy caution",),
        provisions={"load.pf": "Clause T1"},
        analyze=analyze,
        uniform=lambda q, roof: {"design_uniform": 2.0 * np.asarray(q["sk"], dtype=float)},
        screening_flags=lambda roof: [],
        verification=lambda: [],
    )
    register(std)
    try:
        yield std
    finally:
        registry._REGISTRY.pop("toy-1", None)


def test_a_registered_standard_is_reached_by_the_core_and_the_cli(toy_standard):
    assert available() == ["asce7-16", "asce7-22", "en1991-1-3", "toy-1"]
    assert get_standard("toy one") is toy_standard
    assert site_quantities() == ("pg", "w2", "sk")
    roof = Roof.from_mapping({"shape": "flat"})
    assert analyze_roof(3.0, roof, standard="toy-1").standard == "TOY 1"
    assert uniform_loads([1.0, 2.0], roof, standard="TOY 1")["design_uniform"].tolist() == [2, 4]
    # the toy's ground quantity is sk: neve roof takes it as --sk (issue 13: --pg is refused)
    r = CliRunner().invoke(
        main, ["roof", "--sk", "3psf", "--standard", "toy-1", "--format", "json"]
    )
    assert r.exit_code == 0, r.output
    assert json.loads(r.stdout)["standard"] == "TOY 1"
    bad = CliRunner().invoke(main, ["roof", "--sk", "3psf", "--standard", "nope"])
    assert bad.exit_code == 2
    assert "accepted: asce7-16, asce7-22, en1991-1-3, toy-1" in bad.output


def test_a_name_is_registered_once(toy_standard):
    assert register(toy_standard) is toy_standard  # the same object again: fine
    import dataclasses

    clash = dataclasses.replace(toy_standard, id="toy-2", names=("ASCE 7-16",))
    with pytest.raises(NeveError):
        register(clash)
    assert "toy-2" not in available()


def test_registry_doctests():
    result = doctest.testmod(registry, optionflags=doctest.ELLIPSIS, verbose=False)
    assert result.attempted > 0 and result.failed == 0


# --- nothing outside the standard's folder names its clauses --------------------------

#: clause strings: "Sec. 7.", "Eq. 7.", "Table 7.", "Fig. 7.", "Table 1.5-2" and the like; the
#: Eurocode's "EN 1991-1-3 5.3.3" (a clause number after the standard's name), "5.3.6(1)"
#: (a clause with its paragraph) and "Annex B, B4" (issue 13)
CLAUSE = re.compile(
    r"\b(?:Sec\.|Section|Eq\.|Equation|Table|Fig\.|Figure)\s*\d+\.\d"
    r"|\bEN\s*1991-1-3\s+(?:\d+\.\d|Annex)"
    r"|\b\d\.\d(?:\.\d)*\(\d+\)"
    r"|\bAnnex\s+[A-E],\s*[A-E]\d"
)


def _package_files() -> list[Path]:
    """Every source and template file of the neve package (pyproject's package-dir)."""
    conf = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    out = []
    for folder in conf["tool"]["setuptools"]["package-dir"].values():
        for path in sorted((ROOT / folder).rglob("*")):
            if path.suffix in (".py", ".j2", ".html", ".css", ".js", ".toml") and (
                "demo" not in path.relative_to(ROOT).parts
            ):
                out.append(path)
    return out


def _outside_the_standard(path: Path) -> bool:
    inside = ("engine/asce7_16/", "engine/asce7_22/", "engine/en1991_1_3/")  # the standards' own
    return not path.relative_to(ROOT).as_posix().startswith(inside)


def test_the_clause_check_sees_the_standard_and_the_rest():
    files = _package_files()
    inside = [p for p in files if not _outside_the_standard(p)]
    # the check can fail: the standard's own folder does hold clause strings
    assert any(CLAUSE.search(p.read_text(encoding="utf-8")) for p in inside)
    assert any(p.name == "package.py" for p in files)
    assert any(p.name == "options.py" for p in files)
    assert CLAUSE.search('ref = "Sec. 7.6.1"') and CLAUSE.search("(ASCE 7-16 Table 7.3-1)")
    assert not CLAUSE.search("ASCE 7-16 Chapter 7 and risk category II")
    # the Eurocode's clause strings (issue 13)
    for text in ("EN 1991-1-3 5.3.3", "(EN 1991-1-3 Annex D)", "mu_w 5.3.6(1)", "Annex B, B4",
                 "Table 5.2", "Figure 5.7"):
        assert CLAUSE.search(text), text
    assert not CLAUSE.search("EN 1991-1-3 recommended values, 0.65 kPa")


def test_no_module_outside_the_standard_names_its_clauses():
    offenders = []
    for path in filter(_outside_the_standard, _package_files()):
        for n, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
            if CLAUSE.search(line):
                offenders.append(f"{path.relative_to(ROOT)}:{n}: {line.strip()}")
    assert offenders == []


def test_no_code_outside_the_standard_restates_its_name():
    """``"ASCE 7-16"`` as a value (not in a docstring) lives in engine/asce7_16/ only."""
    offenders = []
    for path in filter(_outside_the_standard, _package_files()):
        if path.suffix != ".py":
            continue
        tree = ast.parse(path.read_text(encoding="utf-8"))
        docs = {
            id(node.body[0].value)
            for node in ast.walk(tree)
            if isinstance(node, (ast.Module, ast.ClassDef, ast.FunctionDef, ast.AsyncFunctionDef))
            and node.body
            and isinstance(node.body[0], ast.Expr)
            and isinstance(node.body[0].value, ast.Constant)
        }
        for node in ast.walk(tree):
            if (isinstance(node, ast.Constant) and isinstance(node.value, str)
                    and id(node) not in docs
                    and ("ASCE" in node.value or "EN 1991" in node.value)):  # fmt: skip
                offenders.append(f"{path.relative_to(ROOT)}:{node.lineno}: {node.value!r}")
    assert offenders == []


# --- --standard on neve roof, neve site and neve screen ------------------------------


def _cli(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


# neve roof defaults to ASCE 7-16; neve site and neve screen default to None: the standard
# that takes the governing layer's edition, else ASCE 7-16 (issue 10, the site side)
@pytest.mark.parametrize(("command", "default"), [("roof", "asce7-16"), ("site", None),
                                                  ("screen", None)])  # fmt: skip
def test_every_roof_command_has_the_shared_standard_option(command, default):
    import click

    ctx = click.Context(main)
    cmd = main.get_command(ctx, command)
    (param,) = [p for p in cmd.params if p.name == "standard"]
    assert param.opts == ["--standard"]
    assert param.default == default


def test_roof_standard_default_explicit_and_unknown():
    base = ["roof", "--pg", "35psf", "--shape", "gable", "--slope", "6:12",
            "--eave-to-ridge", "30ft", "--format", "json"]  # fmt: skip
    default = _cli(*base)
    assert default.exit_code == 0, default.output
    for name in ("asce7-16", "ASCE 7-16", "asce 7-16"):
        explicit = _cli(*base, "--standard", name)
        assert explicit.exit_code == 0, explicit.output
        assert json.loads(explicit.stdout) == json.loads(default.stdout)
    assert json.loads(default.stdout)["standard"] == "ASCE 7-16"
    bad = _cli(*base, "--standard", "BS 6399-3")
    assert bad.exit_code == 2
    assert "standard:" in bad.output and "accepted: asce7-16" in bad.output
    assert bad.stdout == ""  # nothing computed, nothing printed


def test_site_standard_default_explicit_and_unknown(tmp_path):
    # the embedded demo (invented Skerrow Island) and a flat roof
    base = ["site", "--at", "47.52,-140.05", "--elevation", "100m", "--shape", "flat",
            "--format", "json"]  # fmt: skip
    default = _cli(*base)
    assert default.exit_code == 0, default.output
    explicit = _cli(*base, "--standard", "ASCE 7-16")
    assert explicit.exit_code == 0, explicit.output
    a, b = json.loads(default.stdout), json.loads(explicit.stdout)
    assert a == b
    assert a["roof"]["standard"] == "ASCE 7-16"
    pg = a["ground"]["pg"]["psf"]
    # ASCE 7-16 Eq. 7.3-1, flat roof with unstated factors (Ce = Ct = Is = 1): pf = 0.7 pg
    assert a["roof"]["loads"]["pf"]["psf"] == pytest.approx(0.7 * pg, abs=1e-3)
    map_path = tmp_path / "site.html"
    bad = _cli(*base, "--standard", "nope", "--map", map_path)
    assert bad.exit_code == 2
    assert "accepted: asce7-16" in bad.output
    assert not map_path.exists()


def test_screen_standard_default_explicit_and_unknown(tmp_path):
    sites = tmp_path / "sites.csv"
    pd.DataFrame({"site_id": ["a", "b"], "lat": [47.52, 47.50], "lon": [-140.05, -140.10],
                  "elevation": ["100m", "250m"]}).to_csv(sites, index=False)  # fmt: skip
    outs = {}
    for label, extra in (("default", []), ("explicit", ["--standard", "asce7-16"])):
        out = tmp_path / f"{label}.csv"
        r = _cli("screen", sites, "-o", out, "--shape", "flat", "--quiet", *extra)
        assert r.exit_code == 0, r.output
        outs[label] = pd.read_csv(out)
    pd.testing.assert_frame_equal(outs["default"], outs["explicit"])
    res = outs["default"]
    # ASCE 7-16 Eq. 7.3-1 (unstated factors 1.0): pf = 0.7 pg wherever there is a pg
    ok = res["pg_psf"].notna()
    assert ok.any()
    np.testing.assert_allclose(res.loc[ok, "pf_psf"], 0.7 * res.loc[ok, "pg_psf"], atol=1e-6)
    out = tmp_path / "bad.csv"
    bad = _cli("screen", sites, "-o", out, "--shape", "flat", "--standard", "BS 6399-3")
    assert bad.exit_code == 2
    assert "accepted: asce7-16, asce7-22, en1991-1-3" in bad.output
    assert not out.exists()


def test_library_calls_take_the_standard_too():
    from neve.geo.screen.run import screen
    from neve.geo.site.one import resolve_site

    with pytest.raises(InputError) as info:
        resolve_site(47.52, -140.05, elevation="100m", standard="nope")
    assert info.value.field == "standard"
    frame = pd.DataFrame({"lat": [47.52], "lon": [-140.05], "elevation": ["100m"]})
    with pytest.raises(InputError):
        screen(frame, roof={"shape": "flat"}, standard="nope")
    res = screen(frame, roof={"shape": "flat"}, standard="ASCE 7-16")
    assert res["pf_psf"].iloc[0] == pytest.approx(0.7 * res["pg_psf"].iloc[0], abs=1e-6)


def test_public_api_names():
    import neve

    assert neve.get_standard("ASCE 7-16") is get_standard()
    assert [s.id for s in neve.standards()] == available()
    report = neve.verify("asce7-16")
    assert report["summary"]["ok"] and report["summary"]["total"] == len(get_standard().cases())
    assert {"verify", "get_standard", "standards"} <= set(dir(neve))
