"""Every option of the ``neve`` commands, defined once and shared (as in rasterio).

Each option is a decorator here; a command stacks the ones it takes, so an
option has one spelling, one type, one default and one behaviour in every
command that offers it. Where commands describe an option's object
differently (``--map`` is a site map in ``neve site`` and a portfolio map in
``neve screen``), the decorator takes that command's ``help`` and nothing else.

``roof_options`` adds the roof options and ``--roof ROOF.toml``;
:func:`roof_from_options` hands the parsed values to the library's
:mod:`neve.roof_file` (command-line options override the file).
"""

from __future__ import annotations

from pathlib import Path

import click

from neve.engine.errors import InputError
from neve.engine.roof_spec import Roof
from neve.engine.standards import Standard
from neve.roof_file import ROOF_KEYS, read_toml, roof_mapping  # noqa: F401  (re-exported)

#: roof option names as they appear in kwargs (and ROOF.toml keys)
ROOF_OPTION_KEYS = ROOF_KEYS


def _stack(*options):
    """One decorator applying ``options`` in the order listed (as in ``--help``)."""

    def decorate(f):
        for opt in reversed(options):
            f = opt(f)
        return f

    return decorate


# --- values given once -------------------------------------------------------------


def once(field: str):
    """A callback for a ``multiple=True`` option that must be given exactly once."""

    def callback(ctx, param, values: tuple):
        if not values:
            return None
        if len(values) > 1:
            raise InputError(field, f"given {len(values)} times ({', '.join(values)})", "one value")
        return values[0]

    return callback


def pg_option(f):
    """``--pg``: the ground snow load with its unit, given once (ASCE 7)."""
    return click.option(
        "--pg",
        multiple=True,
        callback=once("pg"),
        help="Ground snow load with its unit, e.g. 35psf or 1.68kPa (required with a standard "
        "whose ground quantity is pg: asce7-16, asce7-22).",
    )(f)


def sk_option(f):
    """``--sk``: the characteristic ground snow load with its unit, given once (EN 1991-1-3)."""
    return click.option(
        "--sk",
        multiple=True,
        callback=once("sk"),
        help="Characteristic ground snow load with its unit, e.g. 0.65kPa or 0.65kN/m2 "
        "(en1991-1-3; required with a standard whose ground quantity is sk).",
    )(f)


def _w2(ctx, param, value):
    """``--w2``: a plain number from 0 to 1 (the winter wind parameter W2), or None."""
    from neve.engine.roof import parse_w2

    return parse_w2(value, "w2")


def w2_option(f):
    """``--w2``: the site's winter wind parameter W2, a plain number in [0, 1] (ASCE 7-22)."""
    return click.option(
        "--w2",
        "w2",
        default=None,
        callback=_w2,
        metavar="FRACTION",
        help="Winter wind parameter W2 of the site, a plain number from 0 to 1, e.g. 0.45, "
        "for a standard that uses it (asce7-22: drifts and unbalanced loads; without it "
        "those cases are not computed).",
    )(f)


# --- roof --------------------------------------------------------------------------


def _one_answer(ctx, param, values: tuple):
    """A yes/no pair (``--ventilated/--unventilated``) given once, or both ways: refused."""
    if not values:
        return None
    if len(set(values)) > 1:
        yes, no = param.opts[0], param.secondary_opts[0]
        raise InputError(param.name, f"{yes} and {no} given together", f"one of {yes}, {no}")
    return values[0]


def _pair(decl: str, name: str, help_: str):
    """A yes/no option pair; giving both spellings is a contradiction (exit 2)."""
    return click.option(decl, name, default=None, multiple=True, callback=_one_answer, help=help_)


def _roof_help(name: str) -> str:
    """The help of a roof option the default standard declares (its roof options are data)."""
    from neve.engine.standards import get_standard

    return get_standard().roof_option(name).help


def _own_help(name: str) -> str:
    """The help of a roof option some registered standard declares (the first that does)."""
    from neve.engine.standards import standards

    for std in standards():
        for opt in std.roof_options:
            if opt.name == name:
                return opt.help + f" ({std.id} only)"
    return ""


roof_options = _stack(
    click.option(
        "--roof",
        "roof_file",
        type=click.Path(dir_okay=False),
        help="ROOF.toml describing the roof (options below override it).",
    ),
    click.option(
        "--shape",
        help="Roof shape: flat, monoslope, gable, hip, curved (or arch), dome, "
        "sawtooth (or folded-plate, barrel-vault), multi-span, cylindrical "
        "(monopitch = monoslope, duopitch = gable); each standard covers its own.",
    ),
    click.option("--slope", help="Roof slope, e.g. 6:12 or 26.6deg."),
    click.option("--surface", help=_roof_help("surface")),
    click.option("--ct", help=_roof_help("ct")),
    click.option("--thermal", help=_roof_help("thermal")),
    click.option("--ce", help=_roof_help("ce")),
    click.option("--terrain", help=_roof_help("terrain")),
    click.option("--exposure", help=_roof_help("exposure")),
    click.option("--risk", help=_roof_help("risk")),
    click.option(
        "--eave-to-ridge",
        "eave_to_ridge",
        help="Horizontal eave-to-ridge distance W, e.g. 30ft; an asymmetric gable or hip "
        "roof: one per side, 30ft,20ft.",
    ),
    click.option("--r-value", "r_value", help=_roof_help("r_value")),
    _pair("--ventilated/--unventilated", "ventilated", _roof_help("ventilated")),
    _pair("--unobstructed/--obstructed", "unobstructed", _roof_help("unobstructed")),
    _pair("--prismatic/--non-prismatic", "prismatic", _roof_help("prismatic")),
    click.option("--topography", help=_own_help("topography")),
    click.option("--annex", metavar="NAME|FILE.toml", help=_own_help("annex")),
    click.option("--snow-case", "snow_case", help=_own_help("snow_case")),
    click.option(
        "--return-period", "return_period", metavar="YEARS", help=_own_help("return_period")
    ),
    click.option("--cov", metavar="V", help=_own_help("cov")),
    click.option("--other-slope", "other_slope", help=_own_help("other_slope")),
    click.option("--altitude", help=_own_help("altitude")),
    click.option("--guard-width", "guard_width", help=_own_help("guard_width")),
    # curved, dome and multi-span roofs (issue 12): neve.engine.roof_shapes
    click.option(
        "--rise", help="Curved or cylindrical roof, dome: rise from eave to crown, e.g. 12ft."
    ),
    click.option(
        "--chord",
        help="Curved or cylindrical roof: horizontal chord (span) from eave to eave, e.g. 60ft.",
    ),
    click.option("--diameter", help="Dome: base diameter, e.g. 80ft."),
    click.option(
        "--eave-slope",
        "eave_slope",
        help="Curved roof or dome: tangent slope at the eave, e.g. 40deg (two of rise, "
        "chord and eave slope fix the arc; all three are checked).",
    ),
    _pair(
        "--eave-abutted/--eave-clear",
        "eave_abutted",
        "Curved roof: the ground or another roof meets it at or within 3 ft of the eave.",
    ),
    click.option(
        "--ridge-height",
        "ridge_height",
        help="Sawtooth, folded plate or barrel vault roof: ridge-to-valley height hr, e.g. 6ft.",
    ),
    click.option("--spans", help="Sawtooth, folded plate or barrel vault roof: number of spans."),
)
roof_options.__doc__ = "Decorate a click command with the roof options and ``--roof ROOF.toml``."


def roof_from_options(kwargs: dict) -> Roof | None:
    """The roof described by the options and ``--roof`` file, or None if none was."""
    from neve.roof_file import read_roof

    return read_roof(kwargs.get("roof_file"), kwargs)


def roofs_from_options(kwargs: dict):
    """A screening roof (one Roof, named profiles, or None) from ``--roof`` and the options."""
    from neve.roof_file import read_roofs

    return read_roofs(kwargs.get("roof_file"), kwargs)


# --- zone layers and elevation -----------------------------------------------------


def _layer_meta_given(ctx, param, value):
    ctx.meta["neve_layer_meta"] = tuple(value or ())
    return value


def _layers_with_meta(ctx, param, value):
    """Pair each ``--layer-meta`` with a database ``--layer`` URL, in order."""
    metas = ctx.meta.get("neve_layer_meta", ())
    if not metas:
        return value
    from neve.geo.postgis import is_db_url, with_layer_meta

    urls = [i for i, v in enumerate(value) if is_db_url(v)]
    if len(metas) != len(urls):
        raise InputError(
            "layer-meta",
            f"{len(metas)} given for {len(urls)} database layer(s)",
            "one --layer-meta FILE.toml per postgresql:// --layer, in the same order",
        )
    out = list(value)
    for i, meta in zip(urls, metas, strict=True):
        out[i] = with_layer_meta(out[i], meta)
    return tuple(out)


def layers_option(f):
    """``--layer`` (repeatable): the zone layers, most local first; ``--layer-meta`` for
    the sidecars of layers read from PostGIS."""
    f = click.option(
        "--layer",
        "layers",
        multiple=True,
        type=click.Path(dir_okay=False),
        callback=_layers_with_meta,
        help="Zone layer (repeat, most local first): a file, or a PostGIS table "
        "postgresql://USER@HOST/DB?table=SCHEMA.ZONES. Default: the embedded, invented DEMO "
        "layers (never for design).",
    )(f)
    return click.option(
        "--layer-meta",
        "layer_meta",
        multiple=True,
        type=click.Path(dir_okay=False),
        is_eager=True,
        expose_value=False,
        callback=_layer_meta_given,
        help="Sidecar TOML of a PostGIS --layer (repeat, one per database layer, in order); "
        "without it the sidecar is read from the table neve_layer_meta.",
    )(f)


class DemPath(click.Path):
    """``--dem``: a GeoTIFF path (not a folder), or ``demo`` for the embedded demo DEM."""

    def __init__(self):
        super().__init__(dir_okay=False)

    def convert(self, value, param, ctx):
        if value == "demo":  # the library decides between a file so named and the demo
            return value
        return super().convert(value, param, ctx)


def dem_option(f):
    """``--dem``: the DEM the site elevations are sampled from."""
    return click.option(
        "--dem",
        type=DemPath(),
        help="DEM GeoTIFF to sample the elevation from (any CRS); 'demo' = the embedded demo DEM.",
    )(f)


class DemUnitType(click.ParamType):
    """``--dem-units``: one vertical unit (``m``, ``ft``, ``us-ft`` or a longer spelling)."""

    name = "m|ft|us-ft"

    def convert(self, value, param, ctx):
        from neve.geo.site.elevation import canonical_dem_unit

        try:
            return canonical_dem_unit(value)
        except InputError:
            self.fail(
                f"{value!r} is not a vertical unit; accepted: m, ft, us-ft "
                "(also metre, foot, US survey foot)",
                param,
                ctx,
            )


def dem_units_option(f):
    """``--dem-units``, the same choice for every command that takes ``--dem``."""
    return click.option(
        "--dem-units",
        type=DemUnitType(),
        help="Vertical unit of a DEM that does not state one: m, ft, us-ft. Needs --dem; "
        "never overrides the unit the DEM states (a contradiction is refused).",
    )(f)


def elevation_source_option(f):
    """``--elevation-source``: which elevation governs where a given one and the DEM disagree."""
    return click.option(
        "--elevation-source",
        "elevation_source",
        type=click.Choice(["larger", "input"], case_sensitive=False),
        default="larger",
        show_default=True,
        help="Where a given elevation and the DEM differ by more than 15 m: 'larger' lets "
        "the more demanding ground load govern, 'input' the given elevation.",
    )(f)


#: ``--dem``, ``--dem-units`` and ``--elevation-source``, in that order
dem_options = _stack(dem_option, dem_units_option, elevation_source_option)


# --- geocoding ---------------------------------------------------------------------


def gazetteer_option(f):
    """``--gazetteer``: an offline address list, looked at before any server."""
    return click.option(
        "--gazetteer",
        type=click.Path(dir_okay=False),
        help="Offline address list: CSV with address,lat,lon (looked at before --geocoder-url).",
    )(f)


def narrow_options(f):
    """``--country`` and ``--region``: narrow the shipped gazetteer's place search."""
    f = click.option(
        "--region",
        help="Region (US state, or the gazetteer's region code) that narrows a place name.",
    )(f)
    return click.option(
        "--country", help="Country (ISO code or name) that narrows a place name, e.g. US, CH."
    )(f)


def geocoder_url_option(f):
    """``--geocoder-url``: a geocoding server for addresses the gazetteer does not hold."""
    return click.option(
        "--geocoder-url",
        "geocoder_url",
        help="Nominatim-compatible geocoding server, e.g. http://localhost:8080 (one request "
        "per second at most).",
    )(f)


# --- outputs -----------------------------------------------------------------------


def format_option(f=None, *, choices: tuple[str, ...] = ("text", "json"), help: str | None = None):
    """``--format text|json``: what the command prints.

    ``@format_option`` gives text or json; ``@format_option(choices=..., help=...)``
    a command with more formats (``neve verify``: text, json, html).
    """
    opt = click.option(
        "--format",
        "fmt",
        type=click.Choice(list(choices)),
        default="text",
        show_default=True,
        help=help or "Output: readable text, or one JSON object.",
    )
    return opt if f is None else opt(f)


def map_option(help: str, *, required: bool = False):
    """``--map FILE.html``: an HTML map to write; ``help`` says which map."""
    return click.option(
        "--map", "map_path", required=required, type=click.Path(dir_okay=False), help=help
    )


def tiles_option(f):
    """``--tiles none|osm``: background tiles of a map."""
    return click.option(
        "--tiles",
        type=click.Choice(["none", "osm"], case_sensitive=False),
        default="none",
        show_default=True,
        help="Background tiles of the map: none works offline, osm needs internet.",
    )(f)


def self_contained_option(f):
    """``--self-contained`` (the default) / ``--cdn``: how a map page gets its scripts.

    ``--self-contained`` inlines the map's scripts and styles, so the page opens
    with no internet; it is the default and stays accepted.  ``--cdn`` opts into
    the smaller page that loads them from the internet.
    """
    return click.option(
        "--self-contained/--cdn",
        "self_contained",
        default=True,
        help="--self-contained (the default): inline the map's scripts and styles, so the "
        "page opens with no internet (with --tiles none). --cdn: a smaller page that "
        "loads them from the internet.",
    )(f)


def basemap_option(f):
    """``--basemap auto|none|demo|osm|URL-TEMPLATE|FILE.mbtiles``: what lies under the zones."""
    return click.option(
        "--basemap",
        default="auto",
        show_default=True,
        metavar="auto|none|demo|osm|URL|FILE.mbtiles",
        help="What lies under the zones of the maps: auto (the invented demo basemap for "
        "demo data, otherwise none), none, demo, osm (needs internet), an http(s) tile URL "
        "template with {z}/{x}/{y} (needs --basemap-attribution), or a raster .mbtiles "
        "file (embedded: works offline; also drawn on the static map of the package). "
        "--tiles osm is the older spelling of --basemap osm.",
    )(f)


def basemap_attribution_option(f):
    """``--basemap-attribution TEXT``: the attribution shown with a basemap."""
    return click.option(
        "--basemap-attribution",
        "basemap_attribution",
        default=None,
        metavar="TEXT",
        help="Attribution shown with the basemap (required with a URL template; replaces "
        "an MBTiles file's own).",
    )(f)


#: ``--tiles``, ``--basemap``, ``--basemap-attribution`` and ``--self-contained``/``--cdn``
map_look_options = _stack(
    tiles_option, basemap_option, basemap_attribution_option, self_contained_option
)


def resolve_basemap(kw: dict, *, demo_data: bool):
    """The :class:`neve.maps.basemap.Basemap` asked by ``--basemap`` (and ``--tiles``)."""
    from neve.geo.layers.model import demo_basemap_path
    from neve.maps.basemap import resolve

    return resolve(
        kw.get("basemap"), kw.get("basemap_attribution"), demo_data=demo_data,
        tiles=kw.get("tiles"), demo_file=demo_basemap_path(),
    )  # fmt: skip


def map_colour_option(f):
    """``--map-colour ground|ratio``: what colours the sites of the portfolio map."""
    return click.option(
        "--map-colour",
        "map_colour",
        type=click.Choice(["ground", "ratio"], case_sensitive=False),
        default="ground",
        show_default=True,
        help="Colour the portfolio map's sites by ground snow load band (ground), or by "
        "load_ratio, today's design_uniform / snow_load_on_record (ratio).",
    )(f)


# --- the existing-roof check ---------------------------------------------------------


def _on_record(ctx, param, values: tuple):
    """``--on-record``: the roof snow load on record [psf] (given once), or None."""
    value = once("on-record")(ctx, param, values)
    if value is None:
        return None
    from neve.engine.on_record import parse_on_record

    return parse_on_record(value, "on-record")


def on_record_option(f):
    """``--on-record LOAD``: the roof snow load an existing roof was designed for."""
    return click.option(
        "--on-record",
        "on_record",
        metavar="LOAD",
        multiple=True,
        callback=_on_record,
        help="Roof snow load on record of an existing roof, with its unit (30psf, 1.44kPa): "
        "reports load_ratio = today's design_uniform / this load, and exceeds_record above 1.0.",
    )(f)


def overwrite_option(help: str):
    """``--overwrite``: replace existing outputs; ``help`` names the command's outputs."""
    return click.option("--overwrite", is_flag=True, help=help)


# --- the title block of the calculation package (issue 11) ----------------------------

#: the title-block options' parameter names (the package's ``title_block`` fields)
TITLE_BLOCK_KEYS = ("job", "prepared_by", "checked_by", "revision")


def title_block_options(f):
    """``--job``, ``--prepared-by``, ``--checked-by``, ``--revision``: the package's title block.

    Free text, shown as given (escaped) in the title block at the foot of every
    page of ``--package``; a field not given is shown empty, never left out.
    """
    return _stack(
        click.option("--job", metavar="TEXT", help="Job number for the package's title block."),
        click.option("--prepared-by", metavar="TEXT",
                     help="Who prepared the calculation (title block)."),
        click.option("--checked-by", metavar="TEXT",
                     help="Who checked the calculation (title block)."),
        click.option("--revision", metavar="TEXT", help="Revision of the package (title block)."),
    )(f)  # fmt: skip


def title_block_from_options(kwargs: dict) -> dict:
    """The title-block fields given on the command line (missing ones as None)."""
    return {k: kwargs.get(k) for k in TITLE_BLOCK_KEYS}


def quiet_option(f):
    """``--quiet``: no progress bar."""
    return click.option("--quiet", is_flag=True, help="No progress bar.")(f)


def output_option(help: str, *, required: bool = False):
    """``-o/--output FILE``: the file a command writes; ``help`` says which."""
    return click.option(
        "-o", "--output", "output", required=required, type=click.Path(dir_okay=False), help=help
    )


# --- the standard --------------------------------------------------------------------


def _standard(ctx, param, value):
    """The registered standard named by ``--standard`` (unknown: exit 2, listing those there are)."""
    if value is None:
        return None
    from neve.engine.standards import get_standard

    return get_standard(value, field="standard")


def _standards(ctx, param, values):
    """The registered standards named by a repeated ``--standard`` (unknown: exit 2)."""
    from neve.engine.standards import get_standard

    return [get_standard(v, field="standard") for v in values or ()]


def standard_option(
    f=None, *, default: str | None = "asce7-16", help: str | None = None, multiple: bool = False
):
    """``--standard ID``: the standard of the roof loads (ids and names of the registry).

    ``@standard_option`` defaults to ``asce7-16``; ``neve verify`` takes
    ``@standard_option(default=None, help=...)`` (every registered standard).
    The command receives the :class:`neve.engine.standards.Standard` (or None).
    """
    from neve.engine.standards import standards

    known = "; ".join(f"{s.id} ({s.title})" for s in standards())
    opt = click.option(
        "--standard",
        "standard",
        metavar="ID",
        default=None if multiple else default,  # ``multiple``: neve compare (issue 10)
        show_default=default is not None and not multiple,
        multiple=multiple,
        callback=_standards if multiple else _standard,
        help=(help or "Standard of the roof snow loads") + f": {known}.",
    )
    return opt if f is None else opt(f)


def layer_standard_option(f):
    """``--standard ID`` of ``neve site`` and ``neve screen``: default from the governing layer.

    Omitted, the roof standard is the one that takes the governing layer's
    edition (an ASCE 7-22 layer: asce7-22), else asce7-16; the command
    receives None then.  Given, a layer of another edition is flagged
    ``edition_mismatch`` (no roof loads from it).
    """
    return standard_option(
        f,
        default=None,
        help="Standard of the roof snow loads (default: the one that takes the governing "
        "layer's edition, else asce7-16; a layer of another edition than the one given is "
        "flagged edition_mismatch)",
    )


# --- edition comparison (issue 10) -------------------------------------------------------


def _compare(ctx, param, value):
    """``--compare ID,ID[,...]``: two or more registered standards (unknown or one: exit 2)."""
    if value is None:
        return None
    from neve.geo.site.compare import check_editions

    names = [v.strip() for v in str(value).split(",") if v.strip()]
    return check_editions(names, field_name="compare")


def compare_option(f):
    """``--compare asce7-16,asce7-22``: screen under each edition and join the results."""
    return click.option(
        "--compare",
        "compare",
        metavar="ID,ID",
        default=None,
        callback=_compare,
        help="Screen under each of these standards (comma-separated ids, two or more, e.g. "
        "asce7-16,asce7-22), each with its own layers: per-edition columns <column>__<id>, "
        "pg_ratio and design_uniform_ratio (last / first), and the count of sites whose "
        "governing uniform load rises by more than 10 %.",
    )(f)


#: options whose values are files or folders: echoed by file name only
_PATH_PARAMS = {"layers", "dem", "roof_file", "gazetteer", "map_path", "package_dir",
                "geocode_cache", "summary_json", "output", "sites"}  # fmt: skip


def command_echo() -> str:
    """The command being run, as the package echoes it: the options given, paths cut to
    their file names (never a folder of the user's machine), quoted for a shell."""
    import shlex
    from pathlib import PureWindowsPath

    from click.core import ParameterSource

    ctx = click.get_current_context()
    words = ["neve", *ctx.command_path.split()[1:]]  # the program, however it was started
    for param in ctx.command.params:
        name = param.name
        if name is None or ctx.get_parameter_source(name) not in (
            ParameterSource.COMMANDLINE,
            ParameterSource.ENVIRONMENT,
        ):
            continue
        value = ctx.params.get(name)
        values = list(value) if isinstance(value, (list, tuple)) else [value]
        for v in values:
            if v is None:
                continue
            if isinstance(param, click.Option) and param.is_flag:
                if param.secondary_opts and not v:
                    words.append(param.secondary_opts[0])
                elif v:
                    words.append(param.opts[0])
                continue
            # a --standard parsed to its registry entry is echoed by its id, never its repr
            text = str(v.id) if isinstance(v, Standard) else str(v)
            if name in _PATH_PARAMS and text != "demo":
                text = PureWindowsPath(text).name if "\\" in text else Path(text).name
            words.extend([param.opts[0], text] if isinstance(param, click.Option) else [text])
    return shlex.join(words)


def roof_file_echo(kw: dict) -> tuple[str, str] | None:
    """(file name, text) of the ``--roof`` file, for the package; None without one."""
    path = kw.get("roof_file")
    if not path:
        return None
    try:
        return Path(path).name, Path(path).read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError):  # already read (and checked) by the roof reader
        return Path(path).name, ""


# --- neve serve (issue 15) -------------------------------------------------------------


#: ``neve serve``'s own options: where it listens, what it may read and write
serve_options = _stack(
    click.option("--host", default="127.0.0.1", show_default=True,
                 help="Address to listen on. Anything but this machine (127.0.0.1, ::1, "
                 "localhost) needs --token."),
    click.option("--port", type=click.IntRange(1, 65535), default=8750, show_default=True,
                 help="Port to listen on."),
    click.option("--layers-dir", "layers_dir", type=click.Path(file_okay=False),
                 help="Folder of zone layers (each file with its sidecar <file>.toml) that "
                 "requests may name; the default stack when no --layer is given."),
    click.option("--workdir", type=click.Path(file_okay=False),
                 help="Folder of the jobs (uploads, results, packages), one random folder "
                 "each. Default: a new temporary folder."),
    click.option("--token", envvar="NEVE_SERVE_TOKEN", metavar="SECRET",
                 help="Secret every request must carry (open the printed address once, or "
                 "send 'Authorization: Bearer SECRET'); required with a --host other than "
                 "this machine. Also read from NEVE_SERVE_TOKEN."),
    click.option("--max-upload-mb", "max_upload_mb", type=float, default=50.0,
                 show_default=True, help="Largest site file a portfolio upload may be [MB]."),
)  # fmt: skip
serve_options.__doc__ = "Decorate ``neve serve`` with its own options (host, port, folders, token)."
