"""Hostile numbers in roof input and contradictory options (issue 8, sections 2, 3 and 5).

Invariants: exit 0 or 2, never 1, and the same exit code in text and JSON
mode; the JSON output parses strictly (no NaN, no Infinity); a refusal names
the option or key.  Accepted ranges are the README's; only "refused or
finite" is checked for random values, the exact bounds belong to the engine's
own tests.

Everything here is invented test data.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import pytest
from hypothesis import event, given
from hypothesis import strategies as st

from tests.hostile.helpers import (
    assert_exit,
    examples,
    read_parquet_columns,
    run,
    strict_json,
    walk_numbers,
)

ODD = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-(10**400), 10**400).map(str),
    st.sampled_from(("0", "-0", "1e308", "1e309", "-1e308", "nan", "inf", "-inf", "1e-320",
                     "0x10", "1_000", "", " ", "12", "9" * 400, "1e13", "1e30", "1e200",
                     "-5", "1e6")),
)  # fmt: skip


def _usually(plausible, odd):
    """Mostly a value an engineer would give, sometimes an odd one (one odd value per run)."""
    return st.integers(0, 6).flatmap(lambda k: odd if k == 0 else plausible)


FACTOR = _usually(st.floats(0.9, 1.2).map(lambda v: f"{v:.2f}"), ODD)  # Ct, Ce
R_VALUE = _usually(st.floats(5.0, 60.0).map(lambda v: f"{v:.1f}"), ODD)
ODD_LENGTH = st.tuples(ODD, st.sampled_from(("ft", "m", "ft", "m", "in", "", "psf", " ft")))
ODD_LENGTH = ODD_LENGTH.map("".join)


def length(lo: float, hi: float):
    """A length in ft between lo and hi, sometimes an odd one."""
    return _usually(st.floats(lo, hi).map(lambda v: f"{v:.1f}ft"), ODD_LENGTH)


LENGTH = length(1.0, 300.0)
HEIGHT = length(1.0, 20.0)
LOAD = _usually(
    st.floats(0.0, 150.0).map(lambda v: f"{v:.1f}psf"),
    st.tuples(ODD, st.sampled_from(("psf", "kPa", " kN/m2", "", "ft"))).map("".join),
)
SLOPE = _usually(
    st.sampled_from(("0.25:12", "1:12", "3:12", "6:12", "12:12", "30deg")),
    st.one_of(
        st.tuples(ODD, st.sampled_from((":12", "deg"))).map("".join),
        st.sampled_from(("0:12", "12:0", "-1:12", "90deg", "89.99deg", "1:0", ":12")),
    ),
)
SHAPES = st.sampled_from(("flat", "monoslope", "gable", "hip"))


def _both_modes(args: list[str]) -> list[str]:
    """Run ``neve roof ARGS`` in text and JSON mode; list the broken invariants."""
    text = run(["roof", *args])
    data = run(["roof", *args, "--format", "json"])
    assert_exit(text, (0, 2), f"neve roof {args}")
    assert_exit(data, (0, 2), f"neve roof {args} --format json")
    event(f"roof exit {data.exit_code}")
    problems = []
    if text.exit_code != data.exit_code:
        problems.append(f"exit {text.exit_code} in text mode, {data.exit_code} in JSON mode")
    if data.exit_code == 0:
        doc = strict_json(data.stdout)
        design = (doc.get("design_uniform") or {}).get("psf")
        if design is not None and design < 0:
            problems.append(f"design_uniform {design!r} psf")
        big = [(p, v) for p, v in walk_numbers(doc) if abs(v) > 1e12]
        if big:
            problems.append(f"absurd numbers accepted: {big[:4]}")
    elif "neve: error:" not in data.stderr:
        problems.append(f"refusal without a message naming the field: {data.stderr[-300:]}")
    return problems


PLAIN = {
    "--pg": st.floats(0.0, 150.0).map(lambda v: f"{v:.1f}psf"),
    "--slope": st.sampled_from(("0.25:12", "1:12", "3:12", "6:12", "12:12", "30deg")),
    "--eave-to-ridge": st.floats(1.0, 300.0).map(lambda v: f"{v:.1f}ft"),
    "--ct": st.floats(0.9, 1.2).map(lambda v: f"{v:.2f}"),
    "--ce": st.floats(0.9, 1.2).map(lambda v: f"{v:.2f}"),
    "--r-value": st.floats(5.0, 60.0).map(lambda v: f"{v:.1f}"),
}
ODD_OF = {
    "--pg": st.tuples(ODD, st.sampled_from(("psf", "kPa", " kN/m2", "", "ft"))).map("".join),
    "--slope": st.one_of(
        st.tuples(ODD, st.sampled_from((":12", "deg"))).map("".join),
        st.sampled_from(("0:12", "12:0", "-1:12", "90deg", "89.99deg", "1:0", ":12")),
    ),
    "--eave-to-ridge": ODD_LENGTH,
    "--ct": ODD,
    "--ce": ODD,
    "--r-value": ODD,
}


@pytest.mark.issue8("3")
@examples(40)
@given(data=st.data(), shape=SHAPES, odd=st.sampled_from((None, *PLAIN)))
def test_roof_options_refused_or_finite(data, shape, odd):
    # issue 8 sections 3 and 5: every number finite, or exit 2 naming the option; one odd
    # value per run (the others plain), so an odd value that is accepted shows
    values = {k: data.draw(ODD_OF[k] if k == odd else v, label=k) for k, v in PLAIN.items()}
    if shape == "flat" and odd != "--slope":
        values["--slope"] = "0.25:12"
    args = ["--shape", shape]
    for name, value in values.items():
        if name in ("--ct", "--ce", "--r-value") and not value.strip():
            continue
        args += [name, value]
    problems = _both_modes(args)
    assert not problems, "\n".join(problems)


@pytest.mark.issue8("3")
@examples(20)
@given(
    height=HEIGHT,
    upper=LENGTH,
    lower=LENGTH,
    separation=length(0.0, 30.0),
    upper_pf=LOAD,
    parapet=HEIGHT,
    overhang=length(0.5, 5.0),
)
def test_roof_file_values_refused_or_finite(
    height, upper, lower, separation, upper_pf, parapet, overhang
):
    # issue 8 sections 3 and 5: the same for the lengths and loads of a ROOF.toml
    import tomli_w

    roof = {
        "shape": "monoslope",
        "slope": "1:12",
        "eave_to_ridge": "40ft",
        "step": [{"name": "high bay", "height": height, "upper_length": upper,
                  "lower_length": lower, "separation": separation, "upper_slope": "3:12",
                  "upper_surface": "slippery", "upper_eave_to_ridge": "40ft",
                  "upper_pf": upper_pf}],
        "parapet": [{"name": "north", "height": parapet, "upwind_length": upper}],
        "overhang": {"length": overhang},
    }  # fmt: skip
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "roof.toml"
        path.write_text(tomli_w.dumps(roof), encoding="utf-8")
        problems = _both_modes(["--pg", "40psf", "--roof", str(path)])
    assert not problems, "\n".join(problems)


# --------------------------------------------------------------------------- reproducers


@pytest.mark.issue8("3")
@pytest.mark.parametrize(
    "args",
    [
        pytest.param(["--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "1e308m"],
                     id="eave-to-ridge-1e308m"),
        pytest.param(["--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "1e6ft"],
                     id="eave-to-ridge-1e6ft"),
        pytest.param(["--shape", "flat", "--slope", "6:12"], id="flat-with-6:12"),
        pytest.param(["--ventilated", "--unventilated"], id="ventilated-both-ways"),
    ],
)  # fmt: skip
def test_issue_roof_reproducers_refused_in_both_modes(args):
    # issue 8 section 3: absurd values and contradictions get exit 2 in text and JSON mode
    for mode in ([], ["--format", "json"]):
        result = run(["roof", "--pg", "35psf", *args, *mode])
        assert_exit(result, (2,), f"neve roof {args} {mode}")
        assert "neve: error:" in result.stderr


@pytest.mark.issue8("3")
@pytest.mark.parametrize(
    "step",
    [
        pytest.param({"upper_pf": "1e9psf"}, id="upper_pf-1e9psf"),
        pytest.param({"lower_length": "0ft"}, id="lower_length-0ft"),
    ],
)
def test_issue_roof_file_reproducers_refused(tmp_path, step):
    # issue 8 section 3 reproducers from a ROOF.toml [[step]]
    import tomli_w

    entry = {"name": "high bay", "height": "10ft", "upper_length": "120ft",
             "lower_length": "60ft", **step}  # fmt: skip
    path = tmp_path / "roof.toml"
    path.write_text(tomli_w.dumps({"shape": "flat", "step": [entry]}), encoding="utf-8")
    for mode in ([], ["--format", "json"]):
        result = run(["roof", "--pg", "35psf", "--roof", path, *mode])
        assert_exit(result, (2,), f"ROOF.toml {step} {mode}")
        key = next(iter(step))
        assert key in result.stderr, result.stderr


def _sites(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "sites.csv"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.mark.issue8("2")
@pytest.mark.parametrize(
    "outputs",
    [
        pytest.param(["-o", "{d}/r.csv", "--summary-json", "{d}/r.csv"], id="summary-is-o"),
        pytest.param(["-o", "{d}/r.html", "--map", "{d}/r.html"], id="map-is-o"),
        pytest.param(["-o", "{d}/r.csv", "--map", "{d}/m.html", "--summary-json", "{d}/m.html"],
                     id="summary-is-map"),
    ],
)  # fmt: skip
def test_two_outputs_on_one_path_refused_before_any_work(tmp_path, outputs):
    # issue 8 section 2: any two outputs of one run on the same path: exit 2, nothing written
    sites = _sites(tmp_path, "site_id,lat,lon\nA,47.52,-140.05\n")
    before = sorted(p.name for p in tmp_path.iterdir())
    args = [a.format(d=tmp_path) for a in outputs]
    result = run(["screen", sites, *args, "--quiet"])
    assert_exit(result, (2,), f"screen {outputs}")
    assert sorted(p.name for p in tmp_path.iterdir()) == before


@pytest.mark.issue8("3")
@pytest.mark.parametrize(
    "text",
    [
        pytest.param("site_id,lat,latitude,lon\nA,47.52,47.52,-140.05\n", id="lat-and-latitude"),
        pytest.param("site_id,lat,lon,elevation_ft\nA,47.52,-140.05,450m\n",
                     id="elevation_ft-cell-in-m"),
    ],
)  # fmt: skip
def test_contradictory_site_files_refused(tmp_path, text):
    # issue 8 section 3: contradictions are refused with exit 2.  Reading of the issue: a
    # contradiction in one cell may instead make that row `error` (README: a malformed row
    # never stops the run); what may never happen is a value from either reading.
    out = tmp_path / "r.parquet"
    result = run(["screen", _sites(tmp_path, text), "-o", out, "--quiet"])
    assert_exit(result, (0, 2), text.splitlines()[0])
    if result.exit_code == 2:
        assert not out.exists()
        return
    header = text.splitlines()[0]
    assert "latitude" not in header, "both lat and latitude: the whole file is ambiguous"
    cols = read_parquet_columns(out)[1]
    assert cols["status"] == ["error"]
    assert "elevation_ft" in cols["message"][0]
