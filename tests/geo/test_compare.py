"""``neve compare``: one site under ASCE 7-16 and ASCE 7-22 (neve.geo.site.compare).

Layers are the invented fixture grid of tests/geo/conftest.py, once as an
ASCE 7-16 layer (zone Z1 fixed 20 psf) and once as an ASCE 7-22 layer (zone
Z1 fixed 26 psf, with per-risk-category columns pg_I..pg_IV whose risk-II value
is the same 26 psf). Every expected number is worked by hand beside it:

* ASCE 7-16 Eq. 7.3-1, pf = 0.7 Ce Ct Is pg (from memory);
  Sec. 7.3.4, pm = Is pg for pg <= 20 psf (from memory);
  Sec. 7.10, rain-on-snow surcharge 5 psf where pg <= 20 psf on a low-slope roof
  (from memory; design_uniform = the larger of ps + surcharge and pm).
* ASCE 7-22 Eq. 7.3-1, pf = 0.7 Ce Ct pg, no Is (confirmed: STRUCTURE magazine,
  "ASCE 7-22 Flat Roof Snow Load versus Minimum Snow Load", which quotes the
  equation); Sec. 7.3.3, pm = min(pg, pm,max) with pm,max = 30 psf for risk
  category II (from memory; the table of pm,max per risk category is named in
  NFBA's "Your toolkit" article, Sept. 2025); no rain-on-snow for pg > 20 psf
  (from memory).
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner
from hypothesis import given
from hypothesis import strategies as st

from neve.cli import main
from neve.geo.site.compare import compare_site, differences, governing_case
from tests.geo.conftest import LAT0, LON0, D, fixture_rows, write_layer

AT = f"{LAT0 + D / 2},{LON0 + D / 2}"  # inside zone Z1 of the fixture grid
FLAT = ["--shape", "flat", "--ce", "1.0", "--ct", "1.0", "--risk", "II"]
TWO = ["--standard", "asce7-16", "--standard", "asce7-22"]


def _rows_722() -> list[dict]:
    rows = []
    for r in fixture_rows():
        r = dict(r)
        if r["zone_id"] in ("Z1", "Z6"):
            r["pg"] = 26.0  # invented 7-22 value (risk category II)
        for cat, value in zip(("I", "II", "III", "IV"), (23.0, 26.0, 29.0, 33.0), strict=True):
            r[f"pg_{cat}"] = value if r["rule"] == "fixed" else float("nan")
        rows.append(r)
    return rows


@pytest.fixture(scope="module")
def layers(tmp_path_factory):
    d = tmp_path_factory.mktemp("compare")
    a16 = write_layer(d / "asce716.geojson", fixture_rows(), {"name": "grid 7-16"})
    a22 = write_layer(d / "asce722.geojson", _rows_722(),
                      {"name": "grid 7-22", "standard": "ASCE 7-22"})  # fmt: skip
    return str(a16), str(a22)


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


@pytest.fixture(scope="module")
def cmp_json(layers):
    a16, a22 = layers
    r = _run("compare", "--at", AT, "--layer", a16, "--layer", a22, *TWO, *FLAT, "--format", "json")
    assert r.exit_code == 0, r.output
    return json.loads(r.stdout)


def _diff(data, quantity, case=None, name=None):
    hits = [d for d in data["differences"]
            if d["quantity"] == quantity and d["case"] == case and d["name"] == name]  # fmt: skip
    assert len(hits) == 1, (quantity, case, name, hits)
    return hits[0]


def test_every_json_key(cmp_json):
    assert set(cmp_json) == {"site", "results", "differences", "governing", "basis", "cautions"}
    assert [r["standard"] for r in cmp_json["results"]] == ["asce7-16", "asce7-22"]
    assert [r["title"] for r in cmp_json["results"]] == ["ASCE 7-16", "ASCE 7-22"]
    for r in cmp_json["results"]:
        assert set(r) == {"standard", "title", "ground", "roof"}
    for d in cmp_json["differences"]:
        assert set(d) == {"quantity", "case", "name", "values", "difference", "ratio", "refs"}
        assert set(d["values"]) == set(d["refs"]) == {"asce7-16", "asce7-22"}
    assert cmp_json["basis"] == {
        "first": "asce7-16",
        "last": "asce7-22",
        "difference": "asce7-22 minus asce7-16",
        "ratio": "asce7-22 / asce7-16",
    }
    assert set(cmp_json["governing"]) == {"asce7-16", "asce7-22"}
    assert set(cmp_json["site"]) >= {"lat", "lon", "name", "project", "input"}
    assert any("licensed design professional" in c for c in cmp_json["cautions"])


def test_each_edition_is_exactly_what_neve_site_prints(cmp_json, layers):
    for k, (std, layer) in enumerate(zip(("asce7-16", "asce7-22"), layers, strict=True)):
        r = _run("site", "--at", AT, "--layer", layer, "--standard", std, *FLAT, "--format", "json")
        assert r.exit_code == 0, r.output
        site = json.loads(r.stdout)
        assert cmp_json["results"][k]["ground"] == site["ground"]
        assert cmp_json["results"][k]["roof"] == site["roof"]


def test_each_edition_takes_only_its_own_layer(cmp_json):
    g16, g22 = (r["ground"] for r in cmp_json["results"])
    assert g16["layer"]["standard"] == "ASCE 7-16" and g16["layer"]["name"] == "grid 7-16"
    assert g22["layer"]["standard"] == "ASCE 7-22" and g22["layer"]["name"] == "grid 7-22"
    assert [x["name"] for x in g16["layers"]] == ["grid 7-16"]
    assert [x["name"] for x in g22["layers"]] == ["grid 7-22"]
    assert cmp_json["results"][0]["roof"]["standard"] == "ASCE 7-16"
    assert cmp_json["results"][1]["roof"]["standard"] == "ASCE 7-22"


def test_difference_arithmetic_hand_checked(cmp_json):
    # pg: 20 psf (7-16 layer) and 26 psf (7-22 layer): 26 - 20 = 6; 26 / 20 = 1.3
    pg = _diff(cmp_json, "pg")
    assert pg["values"]["asce7-16"]["psf"] == pytest.approx(20.0)
    assert pg["values"]["asce7-22"]["psf"] == pytest.approx(26.0)
    assert pg["difference"]["psf"] == pytest.approx(6.0)
    assert pg["ratio"] == pytest.approx(1.3)
    # kPa difference of the printed kPa values: 1.2449 - 0.9576 = 0.2873
    # (26 and 20 psf x 0.0478803 kPa/psf, NIST SP 811 App. B, rounded to 4 decimals)
    assert pg["difference"]["kPa"] == pytest.approx(0.2873, abs=1e-4)
    # pf: 7-16 Eq. 7.3-1: 0.7 x 1.0 x 1.0 x 1.0 x 20 = 14.0; 7-22 Eq. 7.3-1: 0.7 x 1.0 x 1.0
    # x 26 = 18.2; difference 4.2, ratio 18.2 / 14 = 1.3
    pf = _diff(cmp_json, "pf")
    assert pf["values"]["asce7-16"]["psf"] == pytest.approx(14.0)
    assert pf["values"]["asce7-22"]["psf"] == pytest.approx(18.2)
    assert pf["difference"]["psf"] == pytest.approx(4.2)
    assert pf["ratio"] == pytest.approx(1.3)
    # flat roof: Cs = 1, ps = pf (both editions, Sec. 7.4)
    ps = _diff(cmp_json, "ps")
    assert ps["difference"]["psf"] == pytest.approx(4.2)
    # pm: 7-16 Is pg = 20 (pg <= 20 psf, Sec. 7.3.4); 7-22 min(26, 30) = 26 (Sec. 7.3.3)
    pm = _diff(cmp_json, "pm")
    assert pm["values"]["asce7-16"]["psf"] == pytest.approx(20.0)
    assert pm["values"]["asce7-22"]["psf"] == pytest.approx(26.0)
    assert pm["difference"]["psf"] == pytest.approx(6.0) and pm["ratio"] == pytest.approx(1.3)
    # rain-on-snow: 7-16 5 psf (pg = 20 <= 20 psf, Sec. 7.10); 7-22 none above 20 psf
    ros = _diff(cmp_json, "rain_on_snow")
    assert ros["values"]["asce7-16"]["psf"] == pytest.approx(5.0)
    assert ros["values"]["asce7-22"] is None
    assert ros["difference"] is None and ros["ratio"] is None
    # design_uniform: 7-16 max(14 + 5, 20) = 20 (pm = Is pg, Sec. 7.3.4); 7-22
    # max(18.2, min(26, 30)) = 26: difference 6, ratio 1.3
    du = _diff(cmp_json, "design_uniform")
    assert du["values"]["asce7-16"]["psf"] == pytest.approx(20.0)
    assert du["values"]["asce7-22"]["psf"] == pytest.approx(26.0)
    assert du["difference"]["psf"] == pytest.approx(6.0)
    assert du["ratio"] == pytest.approx(1.3)


def test_difference_equals_the_editions_values(cmp_json):
    """Every entry: difference = last - first of the printed values, ratio = last / first."""
    for d in cmp_json["differences"]:
        a, b = d["values"]["asce7-16"], d["values"]["asce7-22"]
        if a is None or b is None:
            assert d["difference"] is None and d["ratio"] is None
            continue
        for unit, x in a.items():
            assert d["difference"][unit] == pytest.approx(b[unit] - x, abs=1e-4)
        first = next(iter(a))
        if a[first]:
            assert d["ratio"] == pytest.approx(b[first] / a[first], abs=1e-4)


def test_cases_matched_by_kind_and_name(cmp_json):
    # the minimum case (low-slope roof) exists in both: 20 -> 26 psf (see design_uniform)
    names = {(d["case"], d["name"]) for d in cmp_json["differences"] if d["case"]}
    minimum = [n for n in names if n[0] == "minimum"]
    assert len(minimum) == 1
    load = _diff(cmp_json, "load", *minimum[0])
    assert load["values"]["asce7-16"]["psf"] == pytest.approx(20.0)
    assert load["values"]["asce7-22"]["psf"] == pytest.approx(26.0)
    assert load["difference"]["psf"] == pytest.approx(6.0)
    assert load["refs"]["asce7-16"].startswith("ASCE 7-16")
    assert load["refs"]["asce7-22"].startswith("ASCE 7-22")
    # every case of each edition appears, each with its own values
    for k, sid in enumerate(("asce7-16", "asce7-22")):
        for case in cmp_json["results"][k]["roof"]["cases"]:
            rows = [d for d in cmp_json["differences"]
                    if (d["case"], d["name"]) == (case["case"], case["name"])]  # fmt: skip
            for d in rows:
                assert d["values"][sid] == case[d["quantity"]]


def test_a_case_of_one_edition_only_has_null_for_the_other(cmp_json):
    # 7-16 adds the rain-on-snow surcharge to the balanced case (pg = 20 psf <= 20 psf,
    # Sec. 7.10) and names it so; 7-22's balanced case at 26 psf has none: two cases
    roofs = [r["roof"] for r in cmp_json["results"]]
    b16 = {c["name"] for c in roofs[0]["cases"] if c["case"] == "balanced"}
    b22 = {c["name"] for c in roofs[1]["cases"] if c["case"] == "balanced"}
    only16 = b16 - b22
    assert only16, (b16, b22)
    for name in only16:
        d = _diff(cmp_json, "load", "balanced", name)
        assert d["values"]["asce7-22"] is None
        assert d["values"]["asce7-16"]["psf"] == pytest.approx(19.0)  # 14 + 5 psf
        assert d["difference"] is None and d["ratio"] is None
        assert d["refs"]["asce7-22"] == ""


def test_governing_case_per_edition(cmp_json):
    # both: the minimum load governs (7-16: 20 > 19; 7-22: 26 > 18.2)
    g = cmp_json["governing"]
    assert g["asce7-16"]["case"] == "minimum"
    assert g["asce7-16"]["load"]["psf"] == pytest.approx(20.0)
    assert g["asce7-22"]["case"] == "minimum"
    assert g["asce7-22"]["load"]["psf"] == pytest.approx(26.0)
    assert g["asce7-16"]["ref"].startswith("ASCE 7-16")


def test_text_output(layers):
    a16, a22 = layers
    r = _run("compare", "--at", AT, "--layer", a16, "--layer", a22, *TWO, *FLAT)
    assert r.exit_code == 0, r.output
    assert "asce7-22 - asce7-16" in r.stdout
    assert "design_uniform" in r.stdout and "1.300" in r.stdout
    assert "governing uniform load, asce7-22: minimum" in r.stdout
    assert "caution:" in r.stdout
    assert "roof flags:" in r.stdout and "case minimum:" in r.stdout


@pytest.mark.parametrize(
    ("args", "field"),
    [
        (["--standard", "asce7-16"], "standard"),
        (["--standard", "asce7-22"], "standard"),
        ([], "standard"),
        (["--standard", "asce7-16", "--standard", "BS 6399-3"], "standard"),
        (["--standard", "asce7-16", "--standard", "ASCE 7-16"], "standard"),
    ],
)
def test_one_unknown_or_repeated_standard_exits_2(layers, args, field):
    r = _run("compare", "--at", AT, "--layer", layers[0], "--layer", layers[1], *args)
    assert r.exit_code == 2, r.output
    assert f"error: {field}:" in r.stderr
    assert "accepted:" in r.stderr


def test_an_edition_without_a_layer_of_its_own_exits_2(layers):
    r = _run("compare", "--at", AT, "--layer", layers[0], *TWO, *FLAT)
    assert r.exit_code == 2, r.output
    assert "error: layer:" in r.stderr and "ASCE 7-22" in r.stderr


def test_without_a_roof_only_the_ground_is_compared(layers):
    cmp = compare_site(LAT0 + D / 2, LON0 + D / 2, ["asce7-16", "asce7-22"], layers=list(layers))
    data = cmp.to_json()
    assert [r["roof"] for r in data["results"]] == [None, None]
    assert data["governing"] == {"asce7-16": None, "asce7-22": None}
    assert _diff(data, "pg")["difference"]["psf"] == pytest.approx(6.0)
    assert _diff(data, "pf")["values"] == {"asce7-16": None, "asce7-22": None}


def test_differences_of_three_editions_use_last_and_first():
    # synthetic JSON (no standard behind the ids): 10 -> 12 -> 15 psf; 15 - 10 = 5; 15 / 10 = 1.5
    def site(psf):
        return {"ground": {"pg": {"psf": psf, "kPa": psf * 0.0478803}}, "roof": None}

    out = differences([("a", site(10.0)), ("b", site(12.0)), ("c", site(15.0))])
    pg = out[0]
    assert pg["quantity"] == "pg" and list(pg["values"]) == ["a", "b", "c"]
    assert pg["difference"]["psf"] == pytest.approx(5.0)
    assert pg["ratio"] == pytest.approx(1.5)


def test_zero_first_value_has_no_ratio():
    def site(psf):
        return {"ground": {"pg": {"psf": psf, "kPa": 0.0}}, "roof": None}

    pg = differences([("a", site(0.0)), ("b", site(5.0))])[0]
    assert pg["ratio"] is None and pg["difference"]["psf"] == pytest.approx(5.0)


def test_governing_case_without_roof_is_none():
    assert governing_case(None) is None


def test_demo_compare_uses_each_editions_demo_layers():
    # Skerrow Island harbour (invented demo site): each edition resolved on its own demo layers
    r = _run("compare", "--at", "47.52,-140.05", "--elevation", "450m", *TWO, *FLAT,
             "--format", "json")  # fmt: skip
    assert r.exit_code == 0, r.output
    data = json.loads(r.stdout)
    for res, title in zip(data["results"], ("ASCE 7-16", "ASCE 7-22"), strict=True):
        assert "demo_data" in res["ground"]["flags"]
        assert "edition_mismatch" not in res["ground"]["flags"]  # never one edition's map
        assert res["ground"]["layers"]
        assert all(x["standard"] == title for x in res["ground"]["layers"])
        assert res["roof"]["standard"] == title
    # the 7-22 edition takes its W2 layer too (ground.w2), the 7-16 edition none of it
    g16, g22 = (r["ground"] for r in data["results"])
    assert 0.0 <= g22["w2"]["value"] <= 1.0
    assert g22["w2"]["layer"]["path"] in {x["path"] for x in g22["layers"]}
    assert g22["w2"]["layer"]["path"] not in {x["path"] for x in g16["layers"]}
    assert data["cautions"][0].startswith("DEMO DATA")
    assert _diff(data, "pg")["ratio"] is not None


def test_an_edition_missing_from_the_demo_stack_takes_the_demo_folders_other_layers(
    tmp_path, monkeypatch
):
    import neve.geo.layers.model as model
    from neve.geo.site.compare import edition_layers

    model.demo_layers()  # the default stack, loaded from the real demo folder
    write_layer(tmp_path / "other_722.geojson", _rows_722(),
                {"name": "other 7-22", "standard": "ASCE 7-22", "demo": True})  # fmt: skip
    monkeypatch.setattr(model, "DEMO_DIR", tmp_path)
    if hasattr(model, "demo_layers_for"):  # the layer model's own per-standard demo stack
        monkeypatch.setattr(model, "demo_layers_for", lambda std=None: model.demo_layers())
    if any(ly.meta["standard"] == "ASCE 7-22" for ly in model.demo_layers()):
        pytest.skip("the default demo stack has ASCE 7-22 layers itself")
    got = edition_layers("asce7-22")
    assert [ly.name for ly in got] == ["other 7-22"]
    assert all(ly.meta["standard"] == "ASCE 7-16" for ly in edition_layers("asce7-16"))


def test_a_study_site_compares_nothing_but_says_so(layers):
    # zone Z3 of the fixture grid requires a site-specific case study in both layers
    at = f"{LAT0 + D / 2},{LON0 + 2.5 * D}"
    r = _run("compare", "--at", at, "--layer", layers[0], "--layer", layers[1], *TWO, *FLAT,
             "--format", "json")  # fmt: skip
    assert r.exit_code == 0, r.output
    data = json.loads(r.stdout)
    for res in data["results"]:
        assert res["ground"]["status"] == "study_required"
        assert "study_required" in res["ground"]["flags"]
        assert res["roof"] is None
    pg = _diff(data, "pg")
    assert pg["values"] == {"asce7-16": None, "asce7-22": None}
    assert pg["difference"] is None and pg["ratio"] is None
    assert data["governing"] == {"asce7-16": None, "asce7-22": None}
    assert any("site-specific case study" in c for c in data["cautions"])


_LOAD = st.floats(min_value=0.0, max_value=2000.0, allow_nan=False)


@given(a=_LOAD, b=_LOAD)
def test_difference_and_ratio_property(a, b):
    """difference = b - a per unit (4 decimals); ratio = b / a (4 decimals), none for a = 0."""
    from neve.engine.units import load_json

    def site(psf):
        return {"ground": {"pg": load_json(psf)}, "roof": None}

    pg = differences([("x", site(a)), ("y", site(b))])[0]
    va, vb = load_json(a), load_json(b)
    assert pg["difference"]["psf"] == pytest.approx(vb["psf"] - va["psf"], abs=1e-4)
    assert pg["difference"]["kPa"] == pytest.approx(vb["kPa"] - va["kPa"], abs=1e-4)
    if va["psf"] == 0:
        assert pg["ratio"] is None
    else:
        assert pg["ratio"] == pytest.approx(vb["psf"] / va["psf"], abs=1e-4)


def _drift(name, pd):
    return {"case": "drift", "name": name, "source": "step", "pd": {"psf": pd, "kPa": None},
            "steps": []}  # fmt: skip


def test_step_drifts_are_compared_by_the_governing_drift_at_each_step():
    # invented case values: one edition reports the governing step drift as one case
    # (ASCE 7-16 Sec. 7.7.1 form), the other leeward and windward separately (ASCE 7-22)
    a = {"ground": {}, "roof": {"cases": [_drift("drift at roof step 'hb'", 20.0)]}}
    b = {"ground": {}, "roof": {"cases": [_drift("leeward drift at roof step 'hb'", 30.0),
                                          _drift("windward drift at roof step 'hb'", 25.0)]}}  # fmt: skip
    out = differences([("asce7-16", a), ("asce7-22", b)])
    row = [d for d in out if d["name"] == "governing drift at roof step 'hb'" and d["quantity"] == "pd"]
    assert len(row) == 1
    assert row[0]["values"]["asce7-16"]["psf"] == 20.0
    assert row[0]["values"]["asce7-22"]["psf"] == 30.0  # the larger of 30 and 25
    assert row[0]["difference"]["psf"] == pytest.approx(10.0)
    assert row[0]["ratio"] == pytest.approx(1.5)
