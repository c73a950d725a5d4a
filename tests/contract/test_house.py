"""The shape of the house (issue 9): import directions, no circles, one CLI, one exception root.

Source of every check: issue 9 ("no import circle and no library -> CLI import
remains"; "every option defined once and shared"; "one exception root") and
DEVELOPERS.md, "The house" (engine imports nothing of the
others, reads no file, imports no GIS library). These are structural
regression guards: they read the source with :mod:`ast`, nothing is imported
to build the graph, so a module that fails to import still shows its edges.

The graph has one node per module of the ``neve`` import package (the folders
mapped into it by ``[tool.setuptools] package-dir`` in pyproject.toml) and one
edge per ``import``/``from ... import`` statement, wherever it stands (module
level or inside a function), resolved relative imports included. Imports under
``if TYPE_CHECKING:`` never run and are left out. ``from pkg import name`` is an
edge to ``pkg.name`` when that is a module, else to ``pkg``. Implicit imports
of parent packages are not edges (every module would otherwise reach its own
``__init__``).
"""

from __future__ import annotations

import ast
import sys
import tomllib
from functools import cache
from pathlib import Path

import click
import pytest

ROOT = Path(__file__).resolve().parents[2]

#: the stdlib and numpy: all the engine may import (DEVELOPERS.md: "numpy only")
ENGINE_THIRD_PARTY_ALLOWED = {"numpy"}

#: modules outside neve.cli allowed to import it: the ``python -m neve`` entry point
CLI_ENTRY_POINTS = {"neve.__main__"}


def _package_dirs() -> dict[str, Path]:
    conf = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    return {pkg: ROOT / folder for pkg, folder in conf["tool"]["setuptools"]["package-dir"].items()}


@cache
def modules() -> dict[str, Path]:
    """Every module of the neve package: dotted name -> file."""
    dirs = _package_dirs()
    out: dict[str, Path] = {}
    for pkg, folder in dirs.items():
        for path in folder.rglob("*.py"):
            rel = path.relative_to(folder).with_suffix("")
            parts = [p for p in rel.parts if p != "__init__"]
            name = ".".join([pkg, *parts])
            # a sub-folder mapped to its own package is listed under that package
            owner = max((p for p in dirs if name == p or name.startswith(p + ".")), key=len)
            if owner == pkg:
                out[name] = path
    return out


def _is_package(name: str) -> bool:
    return modules()[name].name == "__init__.py"


def _type_checking_blocks(tree: ast.AST) -> set[int]:
    """ids of the nodes inside ``if TYPE_CHECKING:`` (or ``typing.TYPE_CHECKING``)."""
    skip: set[int] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.If):
            test = node.test
            name = getattr(test, "id", None) or getattr(test, "attr", None)
            if name == "TYPE_CHECKING":
                for child in node.body:
                    skip.update(id(n) for n in ast.walk(child))
    return skip


def imports_of(name: str) -> list[tuple[str, int]]:
    """Every absolute module name ``name`` imports (with the line), as written and resolved."""
    path = modules()[name]
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    skip = _type_checking_blocks(tree)
    package = name if _is_package(name) else name.rpartition(".")[0]
    out: list[tuple[str, int]] = []
    for node in ast.walk(tree):
        if id(node) in skip:
            continue
        if isinstance(node, ast.Import):
            out += [(alias.name, node.lineno) for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base_parts = package.split(".")
                base_parts = base_parts[: len(base_parts) - (node.level - 1)]
                base = ".".join(base_parts + ([node.module] if node.module else []))
            else:
                base = node.module or ""
            for alias in node.names:
                out.append((f"{base}.{alias.name}", node.lineno))
                out.append((base, node.lineno))
    return out


def _resolve(target: str) -> str | None:
    """The module of the package a dotted import target names, or None if outside neve."""
    mods = modules()
    while target:
        if target in mods:
            return target
        target = target.rpartition(".")[0]
    return None


@cache
def graph() -> dict[str, set[str]]:
    out: dict[str, set[str]] = {}
    for name in modules():
        edges = set()
        for target, _ in imports_of(name):
            mod = _resolve(target)
            if mod is not None and mod != name:
                edges.add(mod)
        out[name] = edges
    return out


def _cycles(g: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components with more than one module (Tarjan)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on: set[str] = set()
    found: list[list[str]] = []
    counter = [0]
    sys.setrecursionlimit(max(sys.getrecursionlimit(), 10_000))

    def visit(v: str) -> None:
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on.add(v)
        for w in g.get(v, ()):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                found.append(sorted(comp))

    for v in sorted(g):
        if v not in index:
            visit(v)
    return found


def test_the_graph_sees_the_whole_package():
    """The graph is not empty by accident: each room is there, with its edges."""
    mods = modules()
    for name in ("neve", "neve.cli", "neve.engine.roof", "neve.geo.layers.vector",
                 "neve.geo.site.one", "neve.geo.screen.run", "neve.maps.package"):  # fmt: skip
        assert name in mods, name
    assert "neve.engine.units" in graph()["neve.engine.roof_spec"]


def test_the_checker_finds_a_circle_and_skips_type_checking():
    """The cycle finder itself, on a hand-made graph (a check that can fail)."""
    assert _cycles({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}) == [["a", "b", "c"]]
    assert _cycles({"a": {"b"}, "b": set()}) == []
    tree = ast.parse(
        "from typing import TYPE_CHECKING\nif TYPE_CHECKING:\n    import x\nimport y\n"
    )
    skipped = _type_checking_blocks(tree)
    names = [a.name for n in ast.walk(tree) if isinstance(n, ast.Import) and id(n) not in skipped
             for a in n.names]  # fmt: skip
    assert names == ["y"]


def test_no_import_circles():
    """No module reaches itself through imports, function-level imports included."""
    assert _cycles(graph()) == []


def test_no_library_module_imports_the_cli():
    offenders = [
        f"{name}:{line} imports {target}"
        for name in modules()
        if not (name == "neve.cli" or name.startswith("neve.cli.")) and name not in CLI_ENTRY_POINTS
        for target, line in imports_of(name)
        if target == "neve.cli" or target.startswith("neve.cli.")
    ]
    assert offenders == []


#: what the web room (neve.web, issue 15) may import of neve: the engine, geo, maps, the
#: public API and the two shared modules; never the CLI
WEB_MAY_IMPORT = ("neve.engine", "neve.geo", "neve.maps", "neve.safe_write", "neve.roof_file")


def test_only_the_cli_imports_the_web_room():
    """neve.web is a front end: nothing but ``neve serve`` (neve.cli.serve) imports it."""
    offenders = [
        f"{name}:{line} imports {target}"
        for name in modules()
        if not (name.startswith("neve.web") or name.startswith("neve.cli"))
        for target, line in imports_of(name)
        if target == "neve.web" or target.startswith("neve.web.")
    ]
    assert offenders == []
    importers = {
        name
        for name in modules()
        if name.startswith("neve.cli")
        for target, _ in imports_of(name)
        if target.startswith("neve.web")
    }
    assert importers == {"neve.cli.serve"}  # the check sees the one importer there is


def test_the_web_room_imports_only_the_library():
    offenders = []
    for name in modules():
        if not name.startswith("neve.web"):
            continue
        for target, line in imports_of(name):
            if not target.startswith("neve.") or target.startswith("neve.web"):
                continue
            if not target.startswith(WEB_MAY_IMPORT):
                offenders.append(f"{name}:{line} imports {target}")
    assert offenders == []
    assert "neve.web.app" in modules()  # the room is there (a check that can fail)


def test_the_engine_imports_none_of_the_other_rooms_and_no_io_library():
    stdlib = set(sys.stdlib_module_names)
    offenders = []
    for name in modules():
        if not name.startswith("neve.engine"):
            continue
        for target, line in imports_of(name):
            top = target.split(".")[0]
            if target.startswith("neve."):
                if not (target == "neve.engine" or target.startswith("neve.engine.")):
                    offenders.append(f"{name}:{line} imports {target}")
            elif (
                top not in stdlib and top not in ENGINE_THIRD_PARTY_ALLOWED and top != "__future__"
            ):
                offenders.append(f"{name}:{line} imports {target}")
    assert offenders == []


def test_the_engine_reads_no_file():
    """No ``open``/``Path.read_*``/``tomllib.load`` in the engine (it never reads a file)."""
    offenders = []
    for name, path in modules().items():
        if not name.startswith("neve.engine"):
            continue
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Call):
                f = node.func
                called = getattr(f, "id", None) or getattr(f, "attr", None)
                if called in {"open", "read_text", "read_bytes", "write_text", "write_bytes",
                              "load", "print"}:  # fmt: skip
                    offenders.append(f"{name}:{node.lineno} calls {called}")
    assert offenders == []


def _all_python_files():
    skip = {".venv", "build", "dist", ".git", "node_modules"}
    for path in ROOT.rglob("*.py"):
        if not skip.intersection(path.relative_to(ROOT).parts):
            yield path


def test_nothing_imports_the_old_top_level_names():
    """engine, geo and maps exist only as neve.engine, neve.geo, neve.maps (code and tests)."""
    offenders = []
    for path in _all_python_files():
        tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
        for node in ast.walk(tree):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and not node.level and node.module:
                names = [node.module]
            for n in names:
                if n.split(".")[0] in {"engine", "geo", "maps"}:
                    offenders.append(f"{path.relative_to(ROOT)}:{node.lineno} imports {n}")
    assert offenders == []


# --- one exception root ------------------------------------------------------------

#: exception classes a library module may raise directly: the neve hierarchy, plus
#: the protocol exceptions Python itself requires of some methods
ALLOWED_RAISES = {"AttributeError", "StopIteration", "NotImplementedError", "KeyboardInterrupt"}

#: raises that answer another library's protocol and never reach a user, by module:
#: folium's render outside a Figure (its own check, restated), and WeasyPrint's URL
#: fetcher refusing a non-data URL (WeasyPrint catches it and leaves the resource out)
PROTOCOL_RAISES = {("neve.maps.templating", "TypeError"), ("neve.maps.package", "ValueError")}


def _neve_error_names() -> set[str]:
    """Names of the NeveError classes (defined in neve.engine.errors or subclassing them)."""
    names = {"NeveError"}
    trees = {n: ast.parse(p.read_text(encoding="utf-8")) for n, p in modules().items()}
    grew = True
    while grew:
        grew = False
        for tree in trees.values():
            for node in ast.walk(tree):
                if isinstance(node, ast.ClassDef) and node.name not in names:
                    bases = {getattr(b, "id", None) or getattr(b, "attr", None) for b in node.bases}
                    if bases & names:
                        names.add(node.name)
                        grew = True
    return names


def test_library_raises_only_neve_errors():
    """A bare ValueError, RuntimeError, LookupError, KeyError or TypeError raised on purpose by
    the library would escape the CLI as a traceback: every one is a NeveError subclass."""
    allowed = _neve_error_names() | ALLOWED_RAISES
    offenders = []
    for name, path in modules().items():
        if name.startswith("neve.cli"):
            continue
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Raise) and node.exc is not None:
                exc = node.exc.func if isinstance(node.exc, ast.Call) else node.exc
                called = getattr(exc, "id", None) or getattr(exc, "attr", None)
                if called and called[0].isupper() and called not in allowed:
                    if (name, called) not in PROTOCOL_RAISES:
                        offenders.append(f"{name}:{node.lineno} raises {called}")
    assert offenders == []


def test_the_named_errors_keep_their_built_in_bases_and_exit_codes():
    """Callers catching ``ValueError``/``LookupError`` still catch them; layer faults exit 2."""
    from neve.engine.errors import InputError, LayerError, NeveError, OutputError
    from neve.geo.layers.rules import LayerValueError, parse_table
    from neve.geo.screen.geocode_rows import GeocodeMiss

    assert issubclass(InputError, ValueError) and InputError.exit_code == 2
    assert issubclass(LayerValueError, LayerError) and issubclass(LayerValueError, ValueError)
    assert LayerValueError.exit_code == 2
    assert issubclass(GeocodeMiss, NeveError) and issubclass(GeocodeMiss, LookupError)
    assert issubclass(OutputError, NeveError) and OutputError.exit_code == 1
    with pytest.raises(LayerValueError, match="strictly increasing"):
        parse_table("[[100, 20], [50, 30]]")  # an elevation table must rise (layer format)


# --- every option defined once -----------------------------------------------------


def _option_decls(path: Path) -> list[tuple[str, int]]:
    """Every option spelling passed to ``click.option(...)`` in a file, with its line."""
    out = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if (isinstance(node, ast.Call) and getattr(node.func, "attr", None) == "option"
                and getattr(node.func.value, "id", None) == "click"):  # fmt: skip
            for arg in node.args:
                if isinstance(arg, ast.Constant) and str(arg.value).startswith("-"):
                    for spelling in str(arg.value).split("/"):
                        out.append((spelling, node.lineno))
    return out


def test_every_option_is_defined_once():
    """An option spelling appears in one ``click.option`` call in all of src/neve/cli."""
    seen: dict[str, list[str]] = {}
    for path in sorted((ROOT / "src" / "neve" / "cli").glob("*.py")):
        for spelling, line in _option_decls(path):
            seen.setdefault(spelling, []).append(f"{path.name}:{line}")
    assert {k: v for k, v in seen.items() if len(v) > 1} == {}


def test_shared_options_live_in_options_py():
    """Options used by more than one command are defined in src/neve/cli/options.py only."""
    here = {s for s, _ in _option_decls(ROOT / "src" / "neve" / "cli" / "options.py")}
    for shared in ("--layer", "--dem", "--dem-units", "--elevation-source", "--format",
                   "--overwrite", "--tiles", "--basemap", "--basemap-attribution", "--self-contained", "--map", "--gazetteer",
                   "--geocoder-url", "--roof", "--shape", "--slope"):  # fmt: skip
        assert shared in here, shared


def _params(cmd: click.Command) -> list[tuple]:
    ctx = click.Context(cmd)
    out = []
    for p in cmd.params:
        t = p.type
        kind = type(t).__name__
        if isinstance(t, click.Choice):
            kind = f"Choice{tuple(t.choices)}"
        default = p.get_default(ctx, call=False)
        if default == () or "UNSET" in repr(default):  # not given (click 8.2+: a sentinel)
            default = None
        spellings = tuple(p.opts) + tuple(getattr(p, "secondary_opts", ()))
        out.append((p.name, spellings, kind, default, p.multiple, p.required))
    return sorted(out, key=lambda x: x[0] or "")


def _command(*path: str) -> click.Command:
    from neve.cli import main

    ctx = click.Context(main)
    cmd = main
    for name in path:
        cmd = cmd.get_command(ctx, name)
    return cmd


#: the options of each command before and after the CLI was taken apart (issue 9),
#: recorded from ``neve <command> --help`` / click's parameters: (name, spellings,
#: type, default, multiple, required). ``--standard`` is issue 9's one new option.
_PATH = "Path"
_ROOF_OPTS = [
    ("ce", ("--ce",), "StringParamType", None, False, False),
    ("ct", ("--ct",), "StringParamType", None, False, False),
    ("eave_to_ridge", ("--eave-to-ridge",), "StringParamType", None, False, False),
    ("exposure", ("--exposure",), "StringParamType", None, False, False),
    ("prismatic", ("--prismatic", "--non-prismatic"), "BoolParamType", None, True, False),
    ("r_value", ("--r-value",), "StringParamType", None, False, False),
    ("risk", ("--risk",), "StringParamType", None, False, False),
    ("roof_file", ("--roof",), _PATH, None, False, False),
    ("shape", ("--shape",), "StringParamType", None, False, False),
    ("slope", ("--slope",), "StringParamType", None, False, False),
    ("surface", ("--surface",), "StringParamType", None, False, False),
    ("terrain", ("--terrain",), "StringParamType", None, False, False),
    ("thermal", ("--thermal",), "StringParamType", None, False, False),
    ("unobstructed", ("--unobstructed", "--obstructed"), "BoolParamType", None, True, False),
    ("ventilated", ("--ventilated", "--unventilated"), "BoolParamType", None, True, False),
    # issue 13: the roof options of EN 1991-1-3
    ("topography", ("--topography",), "StringParamType", None, False, False),
    ("annex", ("--annex",), "StringParamType", None, False, False),
    ("snow_case", ("--snow-case",), "StringParamType", None, False, False),
    ("return_period", ("--return-period",), "StringParamType", None, False, False),
    ("cov", ("--cov",), "StringParamType", None, False, False),
    ("other_slope", ("--other-slope",), "StringParamType", None, False, False),
    ("altitude", ("--altitude",), "StringParamType", None, False, False),
    ("guard_width", ("--guard-width",), "StringParamType", None, False, False),
]
#: issue 13: neve compare compares editions of one ground quantity and keeps the earlier roof
#: options (the EN 1991-1-3 ones are neve roof's, site's and screen's)
_EN_ONLY = {"topography", "annex", "snow_case", "return_period", "cov", "other_slope",
            "altitude", "guard_width"}  # fmt: skip
# issue 12: curved, dome and multi-span roofs (neve.engine.roof_shapes), on every roof command
_ROOF_OPTS += [
    ("chord", ("--chord",), "StringParamType", None, False, False),
    ("diameter", ("--diameter",), "StringParamType", None, False, False),
    ("eave_abutted", ("--eave-abutted", "--eave-clear"), "BoolParamType", None, True, False),
    ("eave_slope", ("--eave-slope",), "StringParamType", None, False, False),
    ("ridge_height", ("--ridge-height",), "StringParamType", None, False, False),
    ("rise", ("--rise",), "StringParamType", None, False, False),
    ("spans", ("--spans",), "StringParamType", None, False, False),
]
_COMPARE_ROOF_OPTS = [o for o in _ROOF_OPTS if o[0] not in _EN_ONLY]
# issue 11: the package's title block, on neve site and neve compare
_TITLE_BLOCK = [
    ("job", ("--job",), "StringParamType", None, False, False),
    ("prepared_by", ("--prepared-by",), "StringParamType", None, False, False),
    ("checked_by", ("--checked-by",), "StringParamType", None, False, False),
    ("revision", ("--revision",), "StringParamType", None, False, False),
]
_FORMAT = ("fmt", ("--format",), "Choice('text', 'json')", "text", False, False)
_DEM = ("dem", ("--dem",), "DemPath", None, False, False)
_DEM_UNITS = ("dem_units", ("--dem-units",), "DemUnitType", None, False, False)
_ELEV_SOURCE = ("elevation_source", ("--elevation-source",), "Choice('larger', 'input')",
                "larger", False, False)  # fmt: skip
_LAYERS = ("layers", ("--layer",), _PATH, None, True, False)
# issue 17: the sidecars of zone layers read from PostGIS
_LAYER_META = ("layer_meta", ("--layer-meta",), _PATH, None, True, False)
_TILES = ("tiles", ("--tiles",), "Choice('none', 'osm')", "none", False, False)
# issue 11: the basemap under the zones (--tiles stays, the older spelling)
_BASEMAP = ("basemap", ("--basemap",), "StringParamType", "auto", False, False)
_BASEMAP_ATTR = ("basemap_attribution", ("--basemap-attribution",), "StringParamType", None,
                 False, False)  # fmt: skip
_SELF_CONTAINED = ("self_contained", ("--self-contained", "--cdn"), "BoolParamType", True, False,
                   False)  # issue 11: inlined by default, --cdn links  # fmt: skip
_OVERWRITE = ("overwrite", ("--overwrite",), "BoolParamType", False, False, False)
_MAP = ("map_path", ("--map",), _PATH, None, False, False)
_GAZETTEER = ("gazetteer", ("--gazetteer",), _PATH, None, False, False)
_GEOCODER_URL = ("geocoder_url", ("--geocoder-url",), "StringParamType", None, False, False)

# issue 14: --country and --region narrow the shipped gazetteer's place search
_NARROW = [
    ("country", ("--country",), "StringParamType", None, False, False),
    ("region", ("--region",), "StringParamType", None, False, False),
]

EXPECTED_OPTIONS = {
    ("roof",): sorted(
        [
            *_ROOF_OPTS,
            _FORMAT,
            # issue 13: --pg no longer required (EN 1991-1-3 takes --sk instead)
            ("pg", ("--pg",), "StringParamType", None, True, False),
            ("sk", ("--sk",), "StringParamType", None, True, False),
            ("no_steps", ("--no-steps",), "BoolParamType", False, False, False),
            ("w2", ("--w2",), "StringParamType", None, False, False),  # issue 10
        ]
    ),  # fmt: skip
    ("site",): sorted(
        [
            *_ROOF_OPTS,
            _FORMAT,
            _DEM,
            _DEM_UNITS,
            _ELEV_SOURCE,
            _LAYERS,
            _LAYER_META,
            _TILES,
            _BASEMAP,
            _BASEMAP_ATTR,
            _SELF_CONTAINED,
            _OVERWRITE,
            _MAP,
            _GAZETTEER,
            _GEOCODER_URL,
            ("address", ("--address",), "StringParamType", None, False, False),
            ("at", ("--at",), "StringParamType", None, False, False),
            ("elevation", ("--elevation",), "StringParamType", None, False, False),
            ("geocoder_timeout", ("--geocoder-timeout",), "FloatParamType", 10.0, False, False),
            ("package_dir", ("--package",), _PATH, None, False, False),
            ("project", ("--project",), "StringParamType", None, False, False),
            ("site_name", ("--site-name",), "StringParamType", None, False, False),
            ("user_agent", ("--user-agent",), "StringParamType", None, False, False),
            ("on_record", ("--on-record",), "StringParamType", None, True, False),  # issue 10
            *_TITLE_BLOCK,
            *_NARROW,  # issue 14
        ]
    ),  # fmt: skip
    ("screen",): sorted(
        [
            *_ROOF_OPTS,
            _DEM,
            _DEM_UNITS,
            _ELEV_SOURCE,
            _LAYERS,
            _LAYER_META,
            _TILES,
            _BASEMAP,
            _BASEMAP_ATTR,
            _SELF_CONTAINED,
            _OVERWRITE,
            _MAP,
            _GAZETTEER,
            _GEOCODER_URL,
            ("sites", ("sites",), _PATH, None, False, True),
            ("output", ("-o", "--output"), _PATH, None, False, True),
            ("engine", ("--engine",), "Choice('local', 'dask')", "local", False, False),
            ("scheduler", ("--scheduler",), "StringParamType", None, False, False),
            ("staging", ("--staging",), _PATH, None, False, False),
            ("partitions", ("--partitions",), "IntRange", None, False, False),
            ("geocode_cache", ("--geocode-cache",), _PATH, None, False, False),
            ("quiet", ("--quiet",), "BoolParamType", False, False, False),
            ("csv_raw", ("--csv-raw",), "BoolParamType", False, False, False),
            ("summary_json", ("--summary-json",), _PATH, None, False, False),
            (
                "map_colour",
                ("--map-colour",),
                "Choice('ground', 'ratio')",
                "ground",
                False,
                False,
            ),  # issue 10
            ("compare", ("--compare",), "StringParamType", None, False, False),  # issue 10
        ]
    ),  # fmt: skip
    # issue 10: neve compare takes neve site's parameters of these names as they are
    ("compare",): sorted(
        [
            *_COMPARE_ROOF_OPTS,
            _FORMAT,
            _DEM,
            _DEM_UNITS,
            _ELEV_SOURCE,
            _LAYERS,
            _LAYER_META,
            _OVERWRITE,
            _GAZETTEER,
            _GEOCODER_URL,
            *_NARROW,  # issue 14: the offline gazetteer, as in neve site
            ("address", ("--address",), "StringParamType", None, False, False),
            ("at", ("--at",), "StringParamType", None, False, False),
            ("elevation", ("--elevation",), "StringParamType", None, False, False),
            ("geocoder_timeout", ("--geocoder-timeout",), "FloatParamType", 10.0, False, False),
            ("package_dir", ("--package",), _PATH, None, False, False),
            ("project", ("--project",), "StringParamType", None, False, False),
            ("site_name", ("--site-name",), "StringParamType", None, False, False),
            ("user_agent", ("--user-agent",), "StringParamType", None, False, False),
            *_TITLE_BLOCK,
        ]
    ),  # fmt: skip
    ("layer", "check"): sorted(
        [_FORMAT, ("layer_path", ("layer_path",), _PATH, None, False, True)]
    ),  # fmt: skip
    ("layer", "show"): sorted(
        [
            _TILES,
            _BASEMAP,
            _BASEMAP_ATTR,
            _SELF_CONTAINED,
            _OVERWRITE,
            ("map_path", ("--map",), _PATH, None, False, True),
            ("layer_path", ("layer_path",), _PATH, None, False, True),
        ]
    ),  # fmt: skip
    # issue 15: neve serve, the pages and the JSON API (neve.web)
    ("serve",): sorted(
        [
            _DEM,
            _DEM_UNITS,
            _LAYERS,
            _LAYER_META,
            _BASEMAP,
            _BASEMAP_ATTR,
            _GAZETTEER,
            _GEOCODER_URL,
            ("host", ("--host",), "StringParamType", "127.0.0.1", False, False),
            ("port", ("--port",), "IntRange", 8750, False, False),
            ("layers_dir", ("--layers-dir",), _PATH, None, False, False),
            ("workdir", ("--workdir",), _PATH, None, False, False),
            ("token", ("--token",), "StringParamType", None, False, False),
            ("max_upload_mb", ("--max-upload-mb",), "FloatParamType", 50.0, False, False),
        ]
    ),  # fmt: skip
}
STANDARD_OPTION = ("standard", ("--standard",))


@pytest.mark.parametrize("path", sorted(EXPECTED_OPTIONS), ids=" ".join)
def test_each_command_keeps_its_options(path):
    """Names, spellings, types, defaults, multiplicity and required-ness, as recorded.

    Regression guard of the CLI contract (issue 9: "keeping every CLI command, option,
    JSON key and exit code exactly"); ``--standard`` is issue 9's addition."""
    got = [p for p in _params(_command(*path)) if p[:2] != STANDARD_OPTION]
    expected = sorted(EXPECTED_OPTIONS[path], key=lambda x: x[0])
    assert got == expected


def test_a_deliberate_library_error_reaches_the_user_as_a_message(tmp_path, monkeypatch):
    """The CLI turns a NeveError into one line and its exit code, never a traceback.

    Forced here: a self-contained map that would still link a remote file (OutputError)."""
    from click.testing import CliRunner

    import neve.maps.assets
    from neve.cli import main

    monkeypatch.setattr(neve.maps.assets, "remote_references", lambda html: ["https://x/y.js"])
    out = tmp_path / "site.html"
    res = CliRunner().invoke(
        main, ["site", "--at", "47.52,-140.05", "--map", str(out), "--self-contained"]
    )
    assert res.exit_code == 1, res.output
    assert "neve: error: self-contained map still references remote assets" in res.stderr
    assert res.exception is None or isinstance(res.exception, SystemExit)
    assert not out.exists()  # nothing half written


# --- one formatter -----------------------------------------------------------------

_PAIR = r"(-?[0-9.]+) (psf|ft|plf|pcf) \((-?[0-9.]+) (kPa|m|kN/m|kN/m3)\)"


def _numbers(text: str) -> tuple[float, str, float, str]:
    import re

    m = re.fullmatch(_PAIR, text.strip())
    assert m, text
    return float(m.group(1)), m.group(2), float(m.group(3)), m.group(4)


@pytest.mark.parametrize("module", ["neve.engine.format", "neve.engine.roof_text"])
def test_formatter_examples(module):
    """The formatter's docstring examples run (regression guard of its printed forms)."""
    import doctest
    import importlib

    mod = importlib.import_module(module)
    result = doctest.testmod(mod, optionflags=doctest.ELLIPSIS)
    assert result.failed == 0
    if module == "neve.engine.format":
        assert result.attempted > 5


@pytest.mark.parametrize(
    ("x", "decimals", "trim", "expected"),
    [
        (35.0, 1, False, "35.0"),
        (35.0, 1, True, "35"),
        (1.67585, 2, False, "1.68"),
        (-0.004, 2, False, "0.00"),  # no "-0.00"
        (float("nan"), 1, False, "n/a"),
        (float("inf"), 1, False, "n/a"),
        (None, 1, False, "n/a"),
        ("abc", 1, False, "n/a"),
        (35.0875, None, False, "35.0875"),
        (294.4, 0, False, "294"),
    ],
)
def test_number(x, decimals, trim, expected):
    """Rounding half to even of Python's format, as printed (regression guard)."""
    from neve.engine.format import number

    assert number(x, decimals, trim=trim) == expected


def test_cli_text_and_package_show_the_same_numbers(tmp_path):
    """Every quantity of a roof result reads the same in ``neve roof`` text and the package.

    The package drops trailing zeros; the numbers are the same (issue 9: "one formatter for
    loads, lengths and slopes used by the CLI, maps and package alike"). Regression guard."""
    from neve.engine.format import is_quantity
    from neve.engine.roof import analyze_roof
    from neve.engine.roof_text import case_values
    from neve.maps.package import _value_text
    from neve.roof_file import read_roof

    roof = read_roof(ROOT / "examples" / "warehouse.toml")
    data = analyze_roof(35.0, roof).to_json()
    checked = 0
    for case in data["cases"]:
        lines = dict(line.split(" = ", 1) for line in case_values(case) if " = " in line)
        for key, value in case.items():
            if key in ("steps",) or not is_quantity(value):
                continue
            cli = _numbers(lines[key])
            doc = _numbers(_value_text(value))
            assert cli == doc, (case["case"], key, lines[key], _value_text(value))
            checked += 1
    assert checked > 20  # loads, lengths, line loads and densities were all compared


def test_site_text_and_site_map_show_the_same_elevation():
    """The ground elevation reads the same in ``neve site`` text and on the site map."""
    import re

    from neve.geo.site.one import resolve_site
    from neve.maps.site_map import summary_context

    result = resolve_site(47.52, -140.05, elevation="450m")  # the invented demo island
    text = result.to_text()
    line = re.search(r"Elevation: +(.+?)  source", text).group(1)
    shown = summary_context(result.to_json())["elevation"]
    assert _numbers(line) == _numbers(shown), (line, shown)
