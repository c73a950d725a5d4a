"""Roof input ranges and contradictions (issue 8 sec. 3.3-3.4), strict JSON output.

Sources, beside each check:

* the ranges are neve's own choice, listed in the README ("Accepted ranges of
  roof input") and in ``neve.engine.roof_limits.RANGES``: common practice (a value
  outside them is a typo or a unit slip on any real building); the Ce and Ct
  ranges are the extremes of ASCE 7-16 Table 7.3-1 and Table 7.3-2 (from
  memory);
* a flat roof slopes 5 degrees or less: ASCE 7-16 Sec. 7.3 (from memory);
* JSON has no NaN or Infinity: RFC 8259, Sec. 6.
"""

from __future__ import annotations

import json
import math

import pytest
import tomli_w

from neve.engine import InputError, Roof, analyze_roof
from neve.engine.jsonsafe import NON_FINITE_FLAG, dumps, finite_copy
from neve.engine.roof_limits import FLAT_SLOPE_MAX_DEG, RANGES
from neve.engine.roof_spec import Parapet, Projection, RoofStep

from .conftest import run

BASE_STEP = {"height": "10ft", "upper_length": "120ft", "lower_length": "60ft"}
#: where each ranged key lives: (option or table, key in it, unit written after the number)
WHERE = {
    "pg": ("--pg", None, "psf"),
    "ce": ("--ce", None, ""),
    "ct": ("--ct", None, ""),
    "r_value": ("--r-value", None, ""),
    "eave_to_ridge": ("--eave-to-ridge", None, "ft"),
    "overhang.length": ("overhang", "length", "ft"),
    "step.height": ("step", "height", "ft"),
    "step.upper_length": ("step", "upper_length", "ft"),
    "step.lower_length": ("step", "lower_length", "ft"),
    "step.separation": ("step", "separation", "ft"),
    "step.upper_eave_to_ridge": ("step", "upper_eave_to_ridge", "ft"),
    "step.upper_pf": ("step", "upper_pf", "psf"),
    "parapet.height": ("parapet", "height", "ft"),
    "parapet.upwind_length": ("parapet", "upwind_length", "ft"),
    "parapet.drift_space": ("parapet", "drift_space", "ft"),  # issue 13 (EN Annex B)
    "option.length": ("--guard-width", None, "ft"),  # issue 13: EN lengths (guard width ...)
    "projection.height": ("projection", "height", "ft"),
    "projection.plan_length": ("projection", "plan_length", "ft"),
    "projection.upwind_length": ("projection", "upwind_length", "ft"),
    # issue 12
    "step.upper_parapet": ("step", "upper_parapet", "ft"),
    "step.upper_ce": ("step", "upper_ce", ""),
    "step.upper_ct": ("step", "upper_ct", ""),
    "step.upper_is": ("step", "upper_is", ""),
    "projection.length_left": ("projection", "length_left", "ft"),
    "projection.length_right": ("projection", "length_right", "ft"),
    "projection.plan_width": ("projection", "plan_width", "ft"),
    "projection.length_front": ("projection", "length_front", "ft"),
    "projection.length_back": ("projection", "length_back", "ft"),
    # issue 12: curved, dome and multi-span roofs
    "rise": ("--rise", None, "ft"),
    "chord": ("--chord", None, "ft"),
    "ridge_height": ("--ridge-height", None, "ft"),
    "spans": ("--spans", None, ""),
}
#: the rest of a roof that each issue-12 option needs (a long chord: any rise in range fits)
SHAPED = {
    "--rise": ["--shape", "curved", "--chord", "5000ft"],
    "--chord": ["--shape", "curved", "--rise", "1ft"],
    "--ridge-height": ["--shape", "sawtooth", "--slope", "3:12"],
    "--spans": ["--shape", "sawtooth", "--slope", "3:12", "--ridge-height", "6ft"],
}
TABLES = {
    "step": dict(BASE_STEP),
    "parapet": {"height": "3ft", "upwind_length": "100ft"},
    "projection": {"height": "4ft", "plan_length": "20ft", "upwind_length": "80ft"},
    "overhang": {"length": "2ft"},
}
#: keys whose table needs other keys beside them (issue 12: a projection's sides)
_PROJ = {"height": "4ft", "plan_length": "20ft"}
TABLE_FOR = {
    "projection.length_left": dict(_PROJ, length_right="80ft"),
    "projection.plan_width": dict(_PROJ, upwind_length="80ft", length_front="40ft"),
    "projection.length_front": dict(_PROJ, upwind_length="80ft", plan_width="10ft"),
    "projection.length_back": dict(_PROJ, upwind_length="80ft", plan_width="10ft"),
}
#: the field name an error must carry, for each ranged key
ARRAYS = ("step", "parapet", "projection")
FIELD = {k: k.replace(".", "[0].") for k in WHERE if k.split(".")[0] in ARRAYS}
FIELD["option.length"] = "guard_width"  # one range for the EN lengths, named by the option given


def test_every_ranged_key_is_exercised():
    # regression guard: a new range gets its line in WHERE (and in the README table)
    assert set(WHERE) == set(RANGES)


def roof_args(key: str, text: str, tmp_path) -> list[str]:
    """``neve roof`` arguments that give ``text`` to the ranged input ``key``."""
    where, inner, _ = WHERE[key]
    if key == "option.length":  # an EN 1991-1-3 option: its standard and ground load sk
        return ["--standard", "en1991-1-3", "--sk", "1kPa", where, text]
    pg = ["--pg", text] if where == "--pg" else ["--pg", "35psf"]
    if where == "--pg":
        return pg
    if where.startswith("--"):
        shape = ["--shape", "gable", "--slope", "6:12"] if where == "--eave-to-ridge" else []
        shape = SHAPED.get(where, shape)
        return [*pg, *shape, where, text]
    table = dict(TABLE_FOR.get(key, TABLES[where]), **{inner: text})
    doc = {"shape": "flat", where: table if where == "overhang" else [table]}
    path = tmp_path / "roof.toml"
    path.write_text(tomli_w.dumps(doc), encoding="utf-8")
    return [*pg, "--roof", str(path)]


def _text(x: float, unit: str) -> str:
    return f"{x!r}{unit}"


def _refused_values(key: str) -> list[tuple[str, str]]:
    b, unit = RANGES[key], WHERE[key][2]
    out = [("above the top", _text(b.hi * 1.001, unit)), ("absurd", _text(1e9, unit))]
    out.append(("at zero" if b.lo_open else "below the bottom",
                _text(b.lo if b.lo_open else b.lo - 0.01, unit)))  # fmt: skip
    out.append(("negative", _text(-1.0, unit)))
    if unit:  # with a unit: text the quantity parser refuses, and values that overflow in ft
        out += [("nan", f"nan{unit}"), ("inf", f"inf{unit}")]
        if unit == "ft":
            out.append(("overflows in ft", "1e308m"))
    else:
        out += [("nan", "nan"), ("inf", "inf")]
    return out


REFUSED = [(key, why, text) for key in WHERE for why, text in _refused_values(key)]


@pytest.mark.parametrize("fmt", ["text", "json"])
@pytest.mark.parametrize(("key", "why", "text"), REFUSED, ids=[f"{k}-{w}" for k, w, _ in REFUSED])
def test_out_of_range_is_exit_2_with_the_range(tmp_path, key, why, text, fmt):
    # common practice / README table: a value outside its range is refused (exit 2); the
    # message names the field and states the range, in text and JSON mode alike
    res = run("roof", *roof_args(key, text, tmp_path), "--format", fmt)
    assert res.exit_code == 2, res.output
    assert res.stdout == ""
    field = FIELD.get(key, key)
    assert f"{field}:" in res.stderr, res.stderr
    if not (why in ("nan", "inf") and WHERE[key][2]):  # "nanft" is no quantity: units listed
        assert f"{RANGES[key].hi:g}" in res.stderr and "accepted" in res.stderr, res.stderr
    assert "Traceback" not in res.stderr


ACCEPTED = [(key, RANGES[key].hi) for key in WHERE] + [
    (key, RANGES[key].lo) for key in WHERE if not RANGES[key].lo_open
]


@pytest.mark.parametrize(("key", "value"), ACCEPTED, ids=[f"{k}={v:g}" for k, v in ACCEPTED])
def test_the_ends_of_each_range_are_accepted(tmp_path, key, value):
    # README table: the bounds themselves are inside the range (closed ends)
    res = run("roof", *roof_args(key, _text(value, WHERE[key][2]), tmp_path), "--format", "json")
    assert res.exit_code == 0, res.output
    json.loads(res.stdout, parse_constant=_no_constant)


def _no_constant(name):
    raise AssertionError(f"strict JSON (RFC 8259) has no {name}")


@pytest.mark.parametrize(
    ("args", "toml", "field"),
    [
        (["--eave-to-ridge", "1e308m", "--shape", "gable", "--slope", "6:12"], None,
         "eave_to_ridge"),
        (["--eave-to-ridge", "1e6ft", "--shape", "gable", "--slope", "6:12"], None,
         "eave_to_ridge"),
        ([], {"step": [dict(BASE_STEP, upper_pf="1e9psf")]}, "step[0].upper_pf"),
        ([], {"step": [dict(BASE_STEP, lower_length="0ft")]}, "step[0].lower_length"),
    ],
)  # fmt: skip
@pytest.mark.parametrize("command", ["roof", "site"])
@pytest.mark.parametrize("fmt", ["text", "json"])
def test_issue_reproducers_refused_by_roof_and_site(tmp_path, args, toml, field, command, fmt):
    # issue 8 sec. 3.3 reproducers, README table (common practice)
    extra = list(args)
    if toml is not None:
        p = tmp_path / "roof.toml"
        p.write_text(tomli_w.dumps({"shape": "flat", **toml}), encoding="utf-8")
        extra += ["--roof", str(p)]
    head = ["--pg", "35psf"] if command == "roof" else ["--at", "47.52,-140.05", "--dem", "demo"]
    res = run(command, *head, *extra, "--format", fmt)
    assert res.exit_code == 2, res.output
    assert f"{field}:" in res.stderr and "accepted" in res.stderr, res.stderr


def test_screen_refuses_a_bad_profile_when_it_loads_the_roof_file(tmp_path):
    # common practice / README table: the roof file is checked whole before any site is
    # worked; nothing is written
    sites = tmp_path / "sites.csv"
    sites.write_text("site_id,lat,lon,roof\nA,47.52,-140.05,shed\n", encoding="utf-8")
    profiles = tmp_path / "profiles.toml"
    bad = {"shape": "flat", "step": [dict(BASE_STEP, height="1e6ft")]}
    profiles.write_text(tomli_w.dumps({"profile": {"shed": bad}}), encoding="utf-8")
    out = tmp_path / "out.csv"
    res = run("screen", str(sites), "-o", str(out), "--roof", str(profiles), "--quiet")
    assert res.exit_code == 2, res.output
    assert "profile.shed.step[0].height" in res.stderr and "500 ft" in res.stderr
    assert not out.exists()


@pytest.mark.parametrize(
    "build",
    [
        lambda: Roof(shape="gable", slope=26.6, eave_to_ridge=math.inf),
        lambda: Roof(shape="gable", slope=26.6, eave_to_ridge=1e308),
        lambda: Roof(ce=math.nan),
        lambda: Roof(slope=-1.0),
        lambda: Roof(overhang=0.0),
        lambda: RoofStep(name="s", height=10.0, upper_length=120.0, lower_length=0.0),
        lambda: RoofStep(
            name="s", height=10.0, upper_length=120.0, lower_length=60.0, upper_pf=1e9
        ),  # fmt: skip
        lambda: Parapet(name="p", height=-3.0, upwind_length=100.0),
        lambda: Projection(name="p", height=4.0, plan_length=math.inf, upwind_length=80.0),
    ],
)
def test_python_api_holds_the_same_ranges(build):
    # README table: a Roof built directly in Python is held to the ranges of the options
    with pytest.raises(InputError):
        build()


# --- contradictions (issue 8 sec. 3.4) ---------------------------------------------


@pytest.mark.parametrize(
    ("slope", "ok"),
    [("0.25:12", True), ("1:12", True), (f"{FLAT_SLOPE_MAX_DEG}deg", True), ("5.01deg", False),
     ("1.1:12", False), ("6:12", False)],
)  # fmt: skip
def test_flat_roof_slope_at_most_5_degrees(slope, ok):
    # ASCE 7-16 Sec. 7.3 (from memory): the flat roof snow load is for roofs of 5 degrees
    # or less (1 on 12 = 4.76 deg, 1.1 on 12 = 5.24 deg)
    res = run("roof", "--pg", "35psf", "--shape", "flat", "--slope", slope)
    assert res.exit_code == (0 if ok else 2), res.output
    if not ok:
        assert "slope:" in res.stderr and "flat" in res.stderr and "5 degrees" in res.stderr


def test_a_steep_slope_without_a_shape_asks_for_the_shape():
    # ASCE 7-16 Sec. 7.3 (from memory): without --shape the roof is taken as flat, which a
    # 6:12 slope cannot be
    res = run("roof", "--pg", "35psf", "--slope", "6:12")
    assert res.exit_code == 2 and "shape:" in res.stderr and "gable" in res.stderr


def test_a_steep_file_slope_under_a_flat_command_line_shape_is_refused(tmp_path):
    # ASCE 7-16 Sec. 7.3 (from memory); README: options override the file, so the merged
    # roof is flat at 6:12
    p = tmp_path / "roof.toml"
    p.write_text('shape = "gable"\nslope = "6:12"\neave_to_ridge = "30ft"\n', encoding="utf-8")
    res = run("roof", "--pg", "35psf", "--roof", str(p), "--shape", "flat")
    assert res.exit_code == 2 and "slope:" in res.stderr


PAIRS = [("--ventilated", "--unventilated"), ("--unobstructed", "--obstructed"),
         ("--prismatic", "--non-prismatic")]  # fmt: skip


@pytest.mark.parametrize("command", ["roof", "site"])
@pytest.mark.parametrize(("yes", "no"), PAIRS)
def test_both_sides_of_a_yes_no_pair_are_refused(command, yes, no):
    # common practice: a roof is ventilated or not, never both
    head = ["--pg", "35psf"] if command == "roof" else ["--at", "47.52,-140.05"]
    gable = ["--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "30ft"]
    for order in ((yes, no), (no, yes)):
        res = run(command, *head, *gable, *order)
        assert res.exit_code == 2, res.output
        assert yes in res.stderr and no in res.stderr and "together" in res.stderr
    res = run(command, *head, *gable, no, no, "--format", "json")  # the same side twice: fine
    assert res.exit_code == 0, res.output


@pytest.mark.parametrize(
    "text",
    ['ventilated = true\nunventilated = true\n', 'ventilated = false\nunventilated = true\n',
     'unobstructed = true\nobstructed = false\n', 'prismatic = true\nnon_prismatic = true\n',
     'ct = 1.1\nthermal = "heated"\n', 'ce = 1.0\nterrain = "B"\n', 'ce = 1.0\nexposure = "fully"\n'],
)  # fmt: skip
def test_both_spellings_in_one_roof_file_are_refused(tmp_path, text):
    # common practice: one file says one thing about each condition
    p = tmp_path / "roof.toml"
    p.write_text('shape = "flat"\n' + text, encoding="utf-8")
    res = run("roof", "--pg", "35psf", "--roof", str(p))
    assert res.exit_code == 2, res.output
    assert "not both" in res.stderr


def _json(*args):
    res = run("roof", "--pg", "35psf", *args, "--format", "json")
    assert res.exit_code == 0, res.output
    return json.loads(res.stdout)


WARM = ["--shape", "gable", "--slope", "8:12", "--eave-to-ridge", "30ft",
        "--surface", "slippery", "--r-value", "20"]  # fmt: skip


def test_command_line_overrides_the_file_also_across_spellings(tmp_path):
    # README: options override the ROOF.toml; a negative key in the file means the same as
    # the pair's other spelling on the command line
    p = tmp_path / "roof.toml"
    p.write_text('thermal = "unheated"\nventilated = true\nobstructed = true\n'
                 'terrain = "B"\nexposure = "sheltered"\n', encoding="utf-8")  # fmt: skip
    # ASCE 7-16 Table 7.3-2 (from memory): unheated Ct = 1.2; --ct 1.0 replaces it
    assert _json("--roof", str(p), "--ct", "1.0")["factors"]["Ct"] == 1.0
    # ASCE 7-16 Table 7.3-1 (from memory): B sheltered Ce = 1.2; --ce 0.9 replaces both keys
    assert _json("--roof", str(p), "--ce", "0.9")["factors"]["Ce"] == 0.9
    # --terrain D replaces nothing but terrain: D sheltered = 1.0 (Table 7.3-1, from memory)
    assert _json("--roof", str(p), "--terrain", "D")["factors"]["Ce"] == 1.0
    q = tmp_path / "neg.toml"
    q.write_text("unventilated = true\nobstructed = false\n", encoding="utf-8")
    # the file's unventilated/obstructed spellings give the same roof as the options
    assert _json(*WARM, "--roof", str(q)) == _json(*WARM, "--unventilated", "--unobstructed")
    r = tmp_path / "pos.toml"
    r.write_text("ventilated = true\nunobstructed = false\n", encoding="utf-8")
    # the command line's opposite spelling wins over the file's
    assert _json(*WARM, "--roof", str(r), "--unventilated", "--unobstructed") == _json(
        *WARM, "--unventilated", "--unobstructed"
    )


def test_ct_with_thermal_and_ce_with_terrain_on_the_command_line_are_refused():
    # common practice: one way of stating each factor
    for args in (["--ct", "1.1", "--thermal", "heated"], ["--ce", "1.0", "--terrain", "B"],
                 ["--ce", "1.0", "--exposure", "fully"]):  # fmt: skip
        res = run("roof", "--pg", "35psf", *args)
        assert res.exit_code == 2 and "not both" in res.stderr, res.output


def test_roof_file_with_a_byte_order_mark_is_read(tmp_path):
    # TOML 1.0 has no byte-order mark, but editors write one: it is dropped (common practice)
    text = 'shape = "gable"\nslope = "6:12"\neave_to_ridge = "30ft"\nrisk = "III"\n'
    plain, bom = tmp_path / "plain.toml", tmp_path / "bom.toml"
    plain.write_text(text, encoding="utf-8")
    bom.write_bytes(b"\xef\xbb\xbf" + text.encode("utf-8"))
    assert _json("--roof", str(bom)) == _json("--roof", str(plain))


# --- strict JSON (RFC 8259: no NaN, no Infinity) -----------------------------------


def test_finite_copy_turns_non_finite_values_into_null_with_a_flag():
    import numpy as np

    data = {
        "site": {"lat": float("nan")},
        "ground": {"pg": {"psf": float("inf"), "kPa": np.float32(1.5)}, "flags": ["demo_data"]},
        "roof": {"flags": [], "cases": [{"value": np.float64(-np.inf)}], "ok": np.int64(3)},
    }
    out = finite_copy(data)
    assert data["site"]["lat"] != data["site"]["lat"]  # the input is left as it was
    assert out["ground"]["pg"] == {"psf": None, "kPa": 1.5}
    assert out["ground"]["flags"] == ["demo_data", NON_FINITE_FLAG]
    assert out["ground"]["non_finite_paths"] == ["$.ground.pg.psf"]
    assert out["roof"]["cases"][0]["value"] is None and out["roof"]["ok"] == 3
    assert out["roof"]["flags"] == [NON_FINITE_FLAG]
    # no object with flags on the way to site.lat: the top object carries it
    assert out["site"]["lat"] is None and out["flags"] == [NON_FINITE_FLAG]
    assert out["non_finite_paths"] == ["$.site.lat"]
    json.loads(dumps(data), parse_constant=_no_constant)
    assert finite_copy({"a": [1.0, 2]}) == {"a": [1.0, 2]}  # nothing to flag: unchanged


def test_dumps_fails_loudly_if_a_non_finite_value_slips_through(monkeypatch):
    # RFC 8259: dumps never writes NaN; with the copy bypassed it raises instead
    import neve.engine.jsonsafe as js

    monkeypatch.setattr(js, "finite_copy", lambda obj: obj)
    with pytest.raises(ValueError):
        js.dumps({"pg": float("nan")})


class _FakeSite:
    """A resolved site whose JSON carries a NaN (the resolver defect of issue 8 sec. 6.1)."""

    def to_json(self):
        return {"site": {"lat": 30.0, "lon": -40.0},
                "ground": {"status": "ok", "pg": {"psf": float("nan"), "kPa": float("nan")},
                           "flags": []},
                "roof": None}  # fmt: skip

    def to_text(self):
        return "fake site"


def test_neve_site_json_never_carries_nan(monkeypatch):
    # RFC 8259: a NaN that reaches neve site's output becomes null with a flag, exit 0
    import neve.geo.site.one

    monkeypatch.setattr(neve.geo.site.one, "resolve_site", lambda *a, **k: _FakeSite())
    res = run("site", "--at", "30,-40", "--format", "json")
    assert res.exit_code == 0, res.output
    g = json.loads(res.stdout, parse_constant=_no_constant)["ground"]
    assert g["pg"] == {"psf": None, "kPa": None} and NON_FINITE_FLAG in g["flags"]


@pytest.mark.parametrize(
    "args",
    [["--pg", "0psf"], ["--pg", "2000psf", "--shape", "gable", "--slope", "6:12",
                         "--eave-to-ridge", "5000ft"], ["--pg", "35psf", "--slope", "5deg"]],
)  # fmt: skip
def test_neve_roof_json_is_strict_at_the_edges(args):
    # RFC 8259: strict JSON at the ends of the accepted ranges
    res = run("roof", *args, "--format", "json")
    assert res.exit_code == 0, res.output
    json.loads(res.stdout, parse_constant=_no_constant)


def test_analyze_roof_at_the_top_of_every_range_stays_finite():
    # RFC 8259 / README table: the largest accepted inputs give finite numbers throughout
    roof = Roof.from_mapping({
        "shape": "flat", "slope": "5deg", "eave_to_ridge": "5000ft", "ce": 1.2, "ct": 1.3,
        "r_value": 200, "overhang": "50ft",
        "step": [{"height": "500ft", "upper_length": "5000ft", "lower_length": "5000ft",
                  "separation": "0ft", "upper_slope": "89deg", "upper_eave_to_ridge": "5000ft",
                  "upper_pf": "2000psf"}],
        "parapet": [{"height": "50ft", "upwind_length": "5000ft"}],
        "projection": [{"height": "100ft", "plan_length": "5000ft", "upwind_length": "5000ft"}],
    })  # fmt: skip
    out = analyze_roof(2000.0, roof).to_json()
    assert NON_FINITE_FLAG not in out["flags"]
    json.loads(json.dumps(out, allow_nan=False))


def test_screen_profiles_override_shared_keys_across_spellings():
    # README (neve screen): top-level keys are shared defaults a profile may override, and
    # options override both; ASCE 7-16 Table 7.3-2 (from memory): unheated Ct = 1.2
    from neve.geo.screen.run import roofs_from_mapping

    data = {"thermal": "unheated", "shape": "flat",
            "profile": {"a": {"ct": 1.1}, "b": {}, "c": {"ventilated": True}}}  # fmt: skip
    roofs = roofs_from_mapping(data)
    assert (roofs["a"].ct, roofs["a"].thermal) == (1.1, None)
    assert (roofs["b"].ct, roofs["b"].thermal) == (None, "unheated")
    over = roofs_from_mapping(data, {"ct": 1.0, "unventilated": True})
    assert all(r.ct == 1.0 and r.thermal is None for r in over.values())
    assert over["c"].ventilated is False
    with pytest.raises(InputError, match="profile.a.ct"):
        roofs_from_mapping({"profile": {"a": {"ct": 1.1, "thermal": "heated"}}})
