"""The documented contract cannot drift from the code (regression guard).

Source of every check: the repository's own contract, ``docs/contract.md``.
Each test gathers what the code offers or emits -- every command and option
of the click group, every flag and status, every problem kind of ``neve layer
check``, every JSON key that ``neve roof``/``neve site``/``neve screen`` print,
every column of a screening result, every sidecar key -- and asserts that the
contract names it. A name added to the code without a line in the contract
fails here. Inputs are the embedded demo data (invented) and an invented
two-row site file.
"""

from __future__ import annotations

import ast
import json
import re
from pathlib import Path

import click
import pytest
from click.testing import CliRunner

from neve.cli import main

ROOT = Path(__file__).resolve().parents[1]
CONTRACT = ROOT / "docs" / "contract.md"
#: the library's source folders (mapped into the ``neve`` namespace by packaging)
LIBRARY = ("engine", "geo", "maps", "neve")


def _contract() -> str:
    return CONTRACT.read_text(encoding="utf-8")


def _code_tokens() -> set[str]:
    """Every name written in a `code span` of the contract (and each whole span)."""
    tokens: set[str] = set()
    for span in re.findall(r"`([^`\n]+)`", _contract()):
        tokens.add(span.strip())
        tokens.update(re.findall(r"[A-Za-z_][A-Za-z0-9_/]*", span))
    return tokens


def _section(title: str) -> str:
    """The text of one section of the contract, from its heading to the next of its level."""
    text = _contract()
    head = re.search(rf"^(#+) {re.escape(title)}\s*$", text, flags=re.M)
    assert head, f"docs/contract.md has no section {title!r}"
    level = len(head.group(1))
    end = re.compile(rf"^#{{1,{level}}} ", flags=re.M).search(text, head.end())
    return text[head.end() : end.start() if end else len(text)]


def _spans(section: str) -> set[str]:
    """The whole `code spans` of one section."""
    return {s.strip() for s in re.findall(r"`([^`\n]+)`", _section(section))}


def _missing(names, what: str, section: str | None = None) -> None:
    """Assert that every name is in the contract: as a whole `code span` of ``section``
    when given, else as a name inside any code span."""
    have = _spans(section) if section else _code_tokens()
    missing = sorted(set(names) - have)
    where = f"section {section!r} of docs/contract.md" if section else "docs/contract.md"
    assert not missing, f"{what} not named in {where}: {', '.join(missing)}"


def _sources():
    for folder in LIBRARY:
        for path in sorted((ROOT / folder).rglob("*.py")):
            yield path, ast.parse(path.read_text(encoding="utf-8"), filename=str(path))


def _const(node) -> str | None:
    return node.value if isinstance(node, ast.Constant) and isinstance(node.value, str) else None


# --------------------------------------------------------------------------- commands


def _commands():
    """(path, click command) for every command and sub-command of ``neve``."""
    ctx = click.Context(main, info_name="neve")
    out = []

    def walk(group, prefix):
        for name in group.list_commands(ctx):
            cmd = group.get_command(ctx, name)
            assert cmd is not None, f"neve {prefix}{name} is listed but cannot be loaded"
            out.append((f"{prefix}{name}", cmd))
            if isinstance(cmd, click.Group):
                walk(cmd, f"{prefix}{name} ")

    walk(main, "")
    return out


def test_every_command_is_in_the_contract():
    text = _contract()
    for path, _ in _commands():
        assert f"neve {path}" in text, f"`neve {path}` is not in docs/contract.md"


def test_every_option_of_every_command_is_in_the_contract():
    text = _contract()
    for path, cmd in [("", main), *_commands()]:
        for param in cmd.params:
            if not isinstance(param, click.Option):
                continue
            for opt in (*param.opts, *param.secondary_opts):
                found = re.search(rf"(?<![\w-]){re.escape(opt)}(?![\w-])", text)
                assert found, f"option {opt} of `neve {path}`".replace("  ", " ") + (
                    " is not in docs/contract.md"
                )


def test_the_option_walk_sees_the_known_options():
    # the walk above must not pass vacuously: a few options the contract has always had
    seen = {o for _, c in _commands() for p in c.params for o in getattr(p, "opts", [])}
    assert {"--pg", "--at", "--layer", "--dem", "--eave-to-ridge", "--output"} <= seen


# --------------------------------------------------------------------------- flags


def _flag_table_names() -> set[str]:
    """Flags of the resolver's flag table (every flag a site or row can carry)."""
    try:
        from neve.geo.site.result import FLAG_TABLE
    except ImportError:  # before the typed result: the resolver's own tuple
        from neve.geo.site.resolve import FLAGS

        return set(FLAGS)
    return {f.name for f in FLAG_TABLE if f.shown}


def _emitted_flag_literals() -> dict[str, str]:
    """Flag names written as literals where the library adds them to a result.

    Patterns: ``<...flags...>.append("x")`` / ``.add("x")``; ``{... "x"}``
    joined with ``|`` to a flag set; a module constant ``*_FLAG = "x"``; and
    the list literals returned by a function whose docstring says it returns
    flags (``return ok, ["x"]``).
    """
    found: dict[str, str] = {}

    def note(value, path, node):
        if value is not None:
            found.setdefault(value, f"{path.relative_to(ROOT)}:{node.lineno}")

    for path, tree in _sources():
        for node in ast.walk(tree):
            if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute):
                target = ast.unparse(node.func.value).lower()
                if node.func.attr in ("append", "add") and "flag" in target and node.args:
                    note(_const(node.args[0]), path, node)
            elif isinstance(node, ast.BinOp) and isinstance(node.op, ast.BitOr):
                if "flag" in ast.unparse(node).lower():
                    for side in (node.left, node.right):
                        if isinstance(side, ast.Set):
                            for elt in side.elts:
                                note(_const(elt), path, node)
            elif isinstance(node, ast.Assign) and len(node.targets) == 1:
                target = node.targets[0]
                if isinstance(target, ast.Name) and target.id.endswith("_FLAG"):
                    note(_const(node.value), path, node)
            elif isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                doc = (ast.get_docstring(node) or "").lower()
                if "flags" not in doc:
                    continue
                for ret in ast.walk(node):
                    if isinstance(ret, ast.Return) and isinstance(ret.value, ast.Tuple):
                        for elt in ret.value.elts:
                            if isinstance(elt, ast.List):
                                for item in elt.elts:
                                    note(_const(item), path, ret)
    return found


def test_every_flag_of_the_flag_table_is_in_the_contract():
    names = _flag_table_names()
    assert {"study_required", "demo_data", "near_boundary"} <= names  # not vacuous
    _missing(names, "flag(s) of the flag table", "Flags")


def test_every_flag_the_library_emits_is_in_the_contract():
    found = _emitted_flag_literals()
    # not vacuous: roof flags from three engine modules and the screening rows
    assert {"shape_assumed", "members_unstated", "ice_dam_conditions_unstated"} <= set(found)
    missing = sorted(set(found) - _spans("Flags"))
    assert not missing, "flags emitted but not in docs/contract.md, Flags: " + ", ".join(
        f"{name} ({found[name]})" for name in missing
    )


def test_every_status_is_in_the_contract():
    from neve.geo.site.resolve import STATUSES

    _missing(STATUSES, "status(es)", "Statuses")


# --------------------------------------------------------------------------- layers


def _problem_kinds() -> dict[str, str]:
    """Problem kinds ``neve layer check`` can report, read from geo/layers/."""
    kinds: dict[str, str] = {}
    for path, tree in _sources():
        if "layers" not in path.parts:
            continue
        range_rules: list[str] = []
        ranged = False
        for node in ast.walk(tree):
            where = f"{path.relative_to(ROOT)}:{getattr(node, 'lineno', 0)}"
            if isinstance(node, ast.Call):
                name = ast.unparse(node.func)
                if name.endswith("_problem") and node.args:
                    kinds.setdefault(_const(node.args[0]) or "", where)
                elif name == "problem" and len(node.args) > 1:
                    kinds.setdefault(_const(node.args[1]) or "", where)
                elif name.endswith("SidecarError") and len(node.args) > 2:  # (message, key, kind)
                    kinds.setdefault(_const(node.args[2]) or "", where)
                for kw in node.keywords:
                    if kw.arg == "kind" and _const(kw.value):
                        kinds.setdefault(_const(kw.value), where)
            elif isinstance(node, ast.Dict):
                for key, value in zip(node.keys, node.values, strict=True):
                    if key is not None and _const(key) == "kind" and _const(value):
                        kinds.setdefault(_const(value), where)
            elif isinstance(node, ast.Assign) and ast.unparse(node.targets[0]) == "rule_of":
                if isinstance(node.value, ast.Dict):
                    range_rules = [_const(v) for v in node.value.values if _const(v)]
            elif isinstance(node, ast.JoinedStr) and _const(node.values[-1]) == "_range":
                ranged = True
            elif (
                isinstance(node, ast.FunctionDef) and node.name == "__init__" and node.args.defaults
            ):
                for arg, default in zip(
                    node.args.args[-len(node.args.defaults) :], node.args.defaults, strict=True
                ):
                    if arg.arg == "kind" and _const(default):
                        kinds.setdefault(_const(default), where)
        if ranged:  # f"{rule}_range" over the rules that have a range check
            assert range_rules, f"{path}: '_range' kinds built from an unknown rule map"
            for rule in range_rules:
                kinds.setdefault(f"{rule}_range", f"{path.relative_to(ROOT)}")
    kinds.pop("", None)
    return kinds


def test_every_layer_check_kind_is_in_the_contract():
    kinds = _problem_kinds()
    assert {"missing_sidecar", "units", "crs_area", "overlap", "formula_range"} <= set(kinds)
    missing = sorted(set(kinds) - _spans("Layer check"))
    assert not missing, "layer check kinds not in docs/contract.md, Layer check: " + ", ".join(
        f"{k} ({kinds[k]})" for k in missing
    )


def test_sidecar_keys_rules_and_layer_files_are_in_the_contract():
    from neve.geo.layers import model, rules, sidecar

    _missing(sidecar.REQUIRED, "required sidecar key(s)", "Sidecar")
    _missing(sidecar.OPTIONAL, "optional sidecar key(s)", "Sidecar")
    _missing(sidecar.VALUE_UNITS, "value unit(s)")
    _missing(sidecar.ELEVATION_UNITS, "elevation unit(s)")
    _missing(rules.RULES, "rule(s)", "Vector columns and rules")
    _missing(
        {c for c in rules.RESERVED if c != "geometry"} | {"pg", "elev_max", "pg_min"},
        "layer column(s)",
    )
    _missing(model.RASTER_SUFFIXES + model.VECTOR_SUFFIXES, "layer file suffix(es)")


# --------------------------------------------------------------------------- JSON keys


def _run_json(*args: str) -> dict:
    res = CliRunner().invoke(main, [*args, "--format", "json"])
    assert res.exit_code == 0, res.output
    return json.loads(res.stdout)


#: objects whose keys are data (inputs of a verification case, counts per name), not contract
_OPEN = {"inputs", "expected", "computed", "tolerance", "timings_s"}


def _keys(obj, out: set[str]) -> set[str]:
    if isinstance(obj, dict):
        for key, value in obj.items():
            out.add(key)
            if key not in _OPEN:
                _keys(value, out)
    elif isinstance(obj, list):
        for item in obj:
            _keys(item, out)
    return out


def test_roof_json_keys_are_in_the_contract():
    keys: set[str] = set()
    warehouse = str(ROOT / "examples" / "warehouse.toml")
    _keys(_run_json("roof", "--pg", "35psf", "--roof", warehouse), keys)
    gable = ["--shape", "gable", "--slope", "6:12"]
    _keys(_run_json("roof", "--pg", "35psf", *gable, "--eave-to-ridge", "30ft"), keys)
    _keys(_run_json("roof", "--pg", "35psf", *gable, "--eave-to-ridge", "15ft"), keys)
    # issue 12: an asymmetric gable, and a roof with every kind of place (invented example)
    _keys(_run_json("roof", "--pg", "35psf", *gable, "--eave-to-ridge", "40ft,12ft"), keys)
    _keys(_run_json("roof", "--pg", "35psf", "--roof", str(ROOT / "examples" / "annex.toml")), keys)
    assert {"design_uniform", "surcharge_extent", "governs", "ref"} <= keys  # not vacuous
    assert {"wind_from", "inside_corners", "roof_length", "place", "lower_roof"} <= keys
    _missing(keys, "`neve roof` JSON key(s)")


def test_site_json_keys_are_in_the_contract():
    # demo data (invented): a given elevation far from the DEM's gives the alternatives too
    out = _run_json(
        "site", "--at", "47.52,-140.05", "--dem", "demo", "--elevation", "900m", "--shape", "flat"
    )
    keys = _keys(out, set())
    # an approximate location over the demo DEM (invented): the circle's keys
    from neve.geo.site.one import resolve_site

    circle = resolve_site(47.52, -140.05, dem="demo", location_precision="place",
                          location_radius_m=3000.0)  # fmt: skip
    _keys(json.loads(json.dumps(circle.to_json(), default=str)), keys)
    assert {"site", "ground", "roof", "elevation_alternatives", "neighbours"} <= keys
    assert {"used_at", "at_min", "at_max", "rule_change"} <= keys
    _missing(keys, "`neve site` JSON key(s)")


def test_layer_check_json_keys_are_in_the_contract():
    from neve.geo.layers.model import DEMO_DIR, DEMO_LAYER_FILES

    layer = DEMO_DIR / DEMO_LAYER_FILES[0]
    _missing(_keys(_run_json("layer", "check", str(layer)), set()), "`neve layer check` key(s)")


def test_verify_json_keys_are_in_the_contract():
    ctx = click.Context(main, info_name="neve")
    if main.get_command(ctx, "verify") is None:
        pytest.skip("neve verify is not built yet")
    res = CliRunner().invoke(main, ["verify", "--format", "json"])
    assert res.exit_code in (0, 1), res.output
    keys = _keys(json.loads(res.stdout), set())
    assert {"cases", "summary"} <= keys
    _missing(keys, "`neve verify` JSON key(s)")


# --------------------------------------------------------------------------- screening


@pytest.fixture(scope="module")
def screened(tmp_path_factory):
    """An invented two-row site file screened on the demo layers, with a roof."""
    d = tmp_path_factory.mktemp("docs_screen")
    sites = d / "sites.csv"
    sites.write_text("site_id,lat,lon,elevation\nA,47.52,-140.05,450m\nB,91,0,\n", "utf-8")
    out, summary = d / "results.csv", d / "summary.json"
    roof = ["--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "30ft"]
    args = ["screen", str(sites), "-o", str(out), "--summary-json", str(summary), "--quiet"]
    res = CliRunner().invoke(main, [*args, *roof])
    assert res.exit_code == 0, res.output
    header = out.read_text(encoding="utf-8").splitlines()[0]
    columns = [c.strip('"') for c in header.split(",")]
    return columns, json.loads(summary.read_text(encoding="utf-8"))


def test_screen_result_columns_are_in_the_contract(screened):
    columns, _ = screened
    added = columns[columns.index("status") :]
    assert {"pg_psf", "flags", "site_elevation_source", "design_uniform_kpa"} <= set(added)
    _missing(added, "screening result column(s)")


def test_screen_summary_keys_are_in_the_contract(screened):
    _, summary = screened
    keys = _keys({k: v for k, v in summary.items() if k not in ("status", "flags")}, set())
    _missing(keys, "`--summary-json` key(s)")


def test_site_file_columns_and_formats_are_in_the_contract():
    from neve.geo.screen import outputs, read, sitefile

    names = (
        *read.GIVEN_LAT_NAMES, *read.GIVEN_LON_NAMES, *read.WKT_NAMES, *read.ADDRESS_NAMES,
        *read.SITE_ID_NAMES, *read.ROOF_NAMES, *sitefile.ELEVATION_NAMES,
    )  # fmt: skip
    _missing(names, "site file column(s)")
    _missing(read.SITE_FORMATS, "site file suffix(es)")
    _missing(outputs.RESULT_FORMATS, "result suffix(es)")


def test_environment_variables_are_in_the_contract():
    found = set()
    for _, tree in _sources():
        for node in ast.walk(tree):
            value = _const(node)
            if value and re.fullmatch(r"NEVE_[A-Z_]+", value):
                found.add(value)
    assert "NEVE_GEOCODER_URL" in found
    _missing(found, "environment variable(s)", "Environment variables")


# --------------------------------------------------------------------------- the house picture

#: folder -> import name (pyproject.toml, [tool.setuptools] package-dir)
_PACKAGE_DIRS = {
    "src/neve": "neve",
    "engine": "neve.engine",
    "geo": "neve.geo",
    "maps": "neve.maps",
}

#: the rooms of DEVELOPERS.md's picture, and what each may import (besides itself)
_MAY_IMPORT = {
    "api": {"*"},  # src/neve/__init__.py, src/neve/__main__.py: the public API and `python -m neve`
    "cli": {"*"},
    "geo.screen": {
        "geo",
        "geo.site",
        "geo.layers",
        "geo.postgis",
        "engine",
        "registry",
        "safe_write",
        "roof_file",
    },
    "geo.site": {"geo", "geo.layers", "engine", "registry"},
    "geo.layers": {"geo", "geo.postgis", "engine", "registry"},
    "geo.postgis": {"engine"},  # issue 17: the database helpers, beside every other room
    "geo": {"engine"},
    "maps": {"engine", "registry", "safe_write"},
    "engine": {"registry"},
    "registry": {"engine"},
    "standard": {"engine", "registry"},
    "safe_write": {"engine"},
    "roof_file": {"engine", "registry"},  # issue 13: a standard's parameter sets
    # issue 15: neve serve's pages and API; only the CLI imports it (tests/contract/test_house.py)
    "web": {"engine", "registry", "geo", "geo.site", "geo.layers", "geo.screen"}
    | {"maps", "safe_write", "roof_file", "api"},
}
#: imports against the picture that are known and reported, each with its reason
_KNOWN_EXCEPTIONS: set[tuple[str, str]] = set()  # none left


def _module_names() -> dict[str, Path]:
    out = {}
    for folder, name in _PACKAGE_DIRS.items():
        for path in (ROOT / folder).rglob("*.py"):
            rel = path.relative_to(ROOT / folder).with_suffix("").parts
            parts = [name, *rel]
            if parts[-1] == "__init__":
                parts = parts[:-1]
            out[".".join(parts)] = path
    # src/neve/ holds only the root and the CLI: its engine/geo/maps come from their own folders
    return {m: p for m, p in out.items() if m.startswith("neve")}


def _room(module: str) -> str:
    parts = module.split(".")
    if module in ("neve", "neve.__main__"):
        return "api"
    second = parts[1]
    if second in ("cli", "safe_write", "roof_file", "maps", "web"):
        return second
    if second == "geo":
        return "geo" if len(parts) == 2 else f"geo.{parts[2]}"
    if second == "engine":
        if len(parts) > 2 and parts[2] == "standards":
            return "registry"
        is_package = len(parts) > 2 and (ROOT / "engine" / parts[2]).is_dir()
        return "standard" if is_package else "engine"
    raise AssertionError(f"{module} is in no room of DEVELOPERS.md's picture")


def _imports(modules: dict[str, Path]):
    """(importer, imported module) for every neve import, function-level ones included."""
    for module, path in modules.items():
        package = module if path.name == "__init__.py" else module.rsplit(".", 1)[0]
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Import):
                targets = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                base = node.module or ""
                if node.level:
                    up = package.split(".")[: len(package.split(".")) - node.level + 1]
                    base = ".".join([*up, base] if base else up)
                targets = [
                    f"{base}.{a.name}" if f"{base}.{a.name}" in modules else base
                    for a in node.names
                ]
            else:
                continue
            for target in targets:
                if target.split(".")[0] == "neve":
                    while target not in modules and "." in target:
                        target = target.rsplit(".", 1)[0]
                    yield module, target


def test_the_rooms_import_as_developers_md_draws_them():
    modules = _module_names()
    edges = set(_imports(modules))
    assert ("neve.geo.site.resolve", "neve.geo.layers.vector") in edges  # the walk sees imports
    wrong = []
    for importer, imported in sorted(edges):
        a, b = _room(importer), _room(imported)
        allowed = _MAY_IMPORT[a]
        if a == b or "*" in allowed or b in allowed or (importer, imported) in _KNOWN_EXCEPTIONS:
            continue
        wrong.append(f"{importer} ({a}) imports {imported} ({b})")
    assert not wrong, "imports against DEVELOPERS.md, 'The house':\n" + "\n".join(wrong)


def test_nothing_imports_data_recipes():
    found = []
    for module, path in _module_names().items():
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = [a.name for a in node.names] if isinstance(node, ast.Import) else []
            if isinstance(node, ast.ImportFrom):
                names = [node.module or ""]
            found += [f"{module} imports {n}" for n in names if n.split(".")[0] == "data_recipes"]
    assert not found, found


def test_the_known_exceptions_are_still_there():
    # an exception that has been fixed is removed from the list (and from DEVELOPERS.md)
    edges = set(_imports(_module_names()))
    assert _KNOWN_EXCEPTIONS <= edges, _KNOWN_EXCEPTIONS - edges


def test_serve_addresses_keys_and_fields_are_in_the_contract(tmp_path):
    """Every address of neve serve, every request key and field, the job object's keys
    and the error keys are named in the contract's section on it (issue 15)."""
    pytest.importorskip("fastapi")
    from neve.web import asks, screen_form
    from neve.web.app import create_app
    from neve.web.config import ServeConfig
    from neve.web.jobs import RESULT_FILES, SCREEN_STAGES

    app = create_app(ServeConfig(work=tmp_path))
    inner = ("/assets/", "/tiles/", "/map/", "/docs", "/redoc")  # the pages' own parts
    routes = {r.path for r in app.routes if hasattr(r, "methods") and not r.path.startswith(inner)}
    assert "/api/site" in routes and "/api/jobs/{job_id}" in routes  # the walk sees the routes
    text = _section("`neve serve`")
    for path in routes:
        shown = path.replace("{job_id}", "{id}")
        assert shown in text, f"address {shown} is not in docs/contract.md, `neve serve`"
    spans = _spans("`neve serve`")
    names = {*asks.ROOF_REQUEST_KEYS[:4], *asks.SITE_REQUEST_KEYS[:14], *screen_form.SCREEN_FIELDS,
             *RESULT_FILES, *SCREEN_STAGES, "id", "kind", "status", "stage", "progress",
             "message", "files", "summary", "page", "sites"}  # fmt: skip
    missing = sorted(n for n in names if n not in spans and f"`{n}`" not in text)
    assert not missing, f"not named in docs/contract.md, `neve serve`: {', '.join(missing)}"
    job = app.url_path_for("api_job", job_id="x")
    assert job == "/api/jobs/x"


def test_developers_md_names_every_room():
    text = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    picture = text[text.index("## The house") :]
    for room in ("neve.cli", "neve.geo.screen", "neve.geo.site", "neve.geo.layers", "neve.maps",
                 "neve.engine", "neve.engine.standards", "neve.engine.asce7_16",
                 "neve.safe_write", "neve.roof_file"):  # fmt: skip
        assert room in picture, room
    for std in sorted({m.split(".")[2] for m in _module_names() if _room(m) == "standard"}):
        assert f"neve.engine.{std}" in picture, f"the standard neve.engine.{std} is not drawn"


# --------------------------------------------------------------------------- the docs themselves

#: spelled in pieces so that this file does not match itself
_OUTSIDE = ("DESIGN" + ".md", "/work/" + "shared", "../" + "shared")


def test_nothing_cites_a_file_outside_the_repository():
    paths = [
        p
        for folder in (*LIBRARY, "tests", "data_recipes", "docs")
        for p in (ROOT / folder).rglob("*")
    ]
    paths += [ROOT / n for n in ("README.md", "DEVELOPERS.md", "CHANGELOG.md", "pyproject.toml")]
    hits = []
    for path in paths:
        if path.suffix not in (".py", ".md", ".toml", ".j2", ".txt") or not path.is_file():
            continue
        text = path.read_text(encoding="utf-8", errors="replace")
        hits += [f"{path.relative_to(ROOT)}: {s}" for s in _OUTSIDE if s in text]
    assert not hits, "\n".join(hits)


def test_markdown_links_resolve_and_the_readme_links_the_contract():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert "(docs/contract.md)" in readme
    docs = [ROOT / "README.md", ROOT / "DEVELOPERS.md", *sorted((ROOT / "docs").glob("*.md"))]
    for doc in docs:
        for target in re.findall(r"\]\(([^)\s]+)\)", doc.read_text(encoding="utf-8")):
            if re.match(r"[a-z]+:", target) or target.startswith("#"):
                continue
            path = (doc.parent / target.split("#", 1)[0]).resolve()
            assert path.exists(), f"{doc.relative_to(ROOT)} links {target}, which does not exist"


def test_readme_python_examples_use_the_public_api():
    """Every import and ``neve.<name>`` of the README's Python examples exists."""
    import importlib

    import neve

    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    blocks = re.findall(r"```python\n(.+?)```", readme, flags=re.S)
    assert blocks
    used = set()
    for block in blocks:
        for node in ast.walk(ast.parse(block)):
            if isinstance(node, ast.Import):
                for alias in node.names:
                    assert alias.name.split(".")[0] == "neve", ast.unparse(node)
                    importlib.import_module(alias.name)
            elif isinstance(node, ast.ImportFrom):
                assert (node.module or "").split(".")[0] == "neve", ast.unparse(node)
                module = importlib.import_module(node.module)
                for alias in node.names:
                    assert hasattr(module, alias.name), f"README: {ast.unparse(node)}"
            elif isinstance(node, ast.Attribute) and ast.unparse(node.value) == "neve":
                used.add(node.attr)
    assert used, "no neve.<name> in the README's Python examples"
    for name in sorted(used):
        assert hasattr(neve, name), f"README uses neve.{name}, which neve does not have"


def _resolves(dotted: str) -> bool:
    import importlib

    parts = dotted.split(".")
    for i in range(len(parts), 0, -1):
        try:
            obj = importlib.import_module(".".join(parts[:i]))
        except ImportError:
            continue
        for attr in parts[i:]:
            if not hasattr(obj, attr):
                return False
            obj = getattr(obj, attr)
        return True
    return False


@pytest.mark.parametrize("doc", ["README.md", "DEVELOPERS.md", "docs/contract.md"])
def test_every_neve_name_the_docs_give_exists(doc):
    text = (ROOT / doc).read_text(encoding="utf-8")
    names = set(re.findall(r"`(neve(?:\.[A-Za-z_]\w*)+)", text))
    assert names or doc == "docs/contract.md"
    missing = sorted(n for n in names if not _resolves(n))
    assert not missing, f"{doc} names what neve does not have: {', '.join(missing)}"


@pytest.mark.parametrize("doc", ["README.md", "docs/contract.md"])
def test_every_repository_path_the_docs_give_exists(doc):
    text = (ROOT / doc).read_text(encoding="utf-8")
    paths = re.findall(
        r"`((?:engine|geo|maps|neve|tests|data_recipes|docs|examples)/[\w/.-]+)`", text
    )
    missing = sorted({p for p in paths if not (ROOT / p).exists()})
    assert not missing, f"{doc} names files that do not exist: {', '.join(missing)}"
