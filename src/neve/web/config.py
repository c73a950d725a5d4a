"""What ``neve serve`` was started with: the layers, the DEM, the basemap, the work folder.

Everything a request may reach on the machine is fixed here, once, when the
server starts: the zone layers (``--layer`` files and the layers found in
``--layers-dir``, loaded once), the DEM (``--dem``), the basemap and the work
folder.  A request names a layer or a DEM by its *name* in these lists and
never by a path (:func:`ServeConfig.pick_layers`, :func:`ServeConfig.pick_dem`).
"""

from __future__ import annotations

import ipaddress
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

from neve.engine.errors import InputError

#: the largest site file a portfolio upload may be [bytes] (``--max-upload-mb``)
DEFAULT_MAX_UPLOAD_MB = 50

#: the names a request gives for the embedded, invented demo DEM
DEMO_DEM = "demo"


def is_loopback(host: str) -> bool:
    """True for an address only this machine reaches (127.0.0.0/8, ::1, ``localhost``)."""
    if host.strip().lower() == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


def loopback_hosts(host: str) -> tuple[str, ...] | None:
    """The Host names a server listening on ``host`` answers: its own on loopback, else any."""
    if not is_loopback(host):
        return None
    return tuple(dict.fromkeys(("127.0.0.1", "localhost", "[::1]", "::1", host.strip())))


def check_binding(host: str, token: str | None) -> None:
    """Refuse to listen beyond this machine without ``--token`` (exit 2, before starting)."""
    if not is_loopback(host) and not token:
        raise InputError(
            "token",
            f"--host {host} lets other machines connect, and no --token was given",
            "--token SECRET with a --host other than 127.0.0.1 (or keep the default host)",
        )
    if token is not None and len(token) < 12:
        raise InputError("token", "shorter than 12 characters", "a secret of 12 characters or more")


def _layers_in(folder: Path) -> list[Path]:
    """The layer files of a folder: every file beside which a sidecar ``<file>.toml`` lies."""
    if not folder.is_dir():
        raise InputError("layers-dir", f"{str(folder)!r} is not a folder", "a folder of layers")
    found = [
        p
        for p in sorted(folder.iterdir())
        if p.is_file() and not p.is_symlink() and p.suffix != ".toml"
        and p.with_name(p.name + ".toml").is_file()
    ]  # fmt: skip
    if not found:
        raise InputError(
            "layers-dir",
            f"no layer in {str(folder)!r}",
            "a folder with layer files and their sidecars (<file>.toml)",
        )
    return found


@dataclass
class ServeConfig:
    """The server's fixed choices (see the module docstring)."""

    #: (name, Layer) of the configured layers, the default stack first (most local first)
    layers: list = field(default_factory=list)
    #: the configured DEM file, or None
    dem: Path | None = None
    dem_units: str | None = None
    #: ``--basemap`` and ``--basemap-attribution`` as given (resolved when a map is drawn)
    basemap: str = "auto"
    basemap_attribution: str | None = None
    work: Path = field(default_factory=lambda: Path(tempfile.mkdtemp(prefix="neve-serve-")))
    token: str | None = None
    gazetteer: Path | None = None
    geocoder_url: str | None = None
    max_upload_bytes: int = DEFAULT_MAX_UPLOAD_MB * 1024 * 1024
    #: how many of ``layers`` make the default stack (the ``--layer`` ones, else all)
    default_count: int = 0
    #: the Host headers answered (None: any); a server on loopback answers only its own
    #: names, so a page of another site cannot reach it under a name of its own
    allowed_hosts: tuple[str, ...] | None = None
    #: the zone outlines of the site form's map, made on first use (``/map/zones.geojson``)
    zones_cache: str | None = field(default=None, repr=False)
    #: the work folder is neve's own temporary folder (no ``--workdir``): removed at shutdown
    own_work: bool = False

    @property
    def demo(self) -> bool:
        """No layer configured: the embedded, invented demo layers are served."""
        return not self.layers

    def basemap_for(self, demo: bool):
        """The :class:`neve.maps.basemap.Basemap` of a map of demo data or not (``--basemap``)."""
        from neve.geo.layers.model import demo_basemap_path
        from neve.maps.basemap import resolve

        return resolve(self.basemap, self.basemap_attribution, demo_data=demo,
                       demo_file=demo_basemap_path())  # fmt: skip

    def layer_names(self) -> list[str]:
        return [name for name, _ in self.layers]

    def dem_names(self) -> list[str]:
        """What a request may give as ``dem``: ``demo`` and the configured DEM's file name."""
        return [DEMO_DEM] + ([self.dem.name] if self.dem is not None else [])

    def pick_layers(self, value) -> list | None:
        """The Layer objects a request's ``layer`` names (None: the default stack or the demo)."""
        if value is None or value == "" or value == []:
            if self.demo:
                return None
            return [layer for _, layer in self.layers[: self.default_count]]
        names = [value] if isinstance(value, str) else value
        if not isinstance(names, list) or not all(isinstance(n, str) for n in names):
            raise InputError("layer", "not a name or a list of names", self._layer_accepted())
        by_name = dict(self.layers)
        out = []
        for n in names:
            if n not in by_name:
                raise InputError(
                    "layer", f"{n!r} is not a layer this server offers", self._layer_accepted()
                )
            out.append(by_name[n])
        return out

    def _layer_accepted(self) -> str:
        if self.demo:
            return "no layer name: this server offers the embedded demo layers only"
        return "names of the server's layers: " + ", ".join(self.layer_names())

    def pick_dem(self, value):
        """The DEM a request's ``dem`` names: None, ``"demo"`` or the configured file."""
        if value is None or value is False or value == "":
            return None
        if value is True:
            if self.dem is None:
                raise InputError("dem", "this server has no DEM (neve serve --dem)",
                                 "dem: " + " or ".join(repr(n) for n in self.dem_names()))  # fmt: skip
            return self.dem
        if value == DEMO_DEM:
            return DEMO_DEM
        if self.dem is not None and value == self.dem.name:
            return self.dem
        raise InputError(
            "dem",
            f"{value!r} is not a DEM this server offers",
            "true (the server's DEM) or one of " + ", ".join(repr(n) for n in self.dem_names()),
        )


def load_config(
    *,
    layers=(),
    layers_dir=None,
    dem=None,
    dem_units=None,
    basemap="auto",
    basemap_attribution=None,
    workdir=None,
    token=None,
    gazetteer=None,
    geocoder_url=None,
    max_upload_mb: float = DEFAULT_MAX_UPLOAD_MB,
) -> ServeConfig:
    """Check and load what ``neve serve`` is started with (every layer read once, here)."""
    from neve.geo.layers.model import demo_basemap_path, load_layer
    from neve.maps.basemap import resolve

    paths = [Path(p) for p in layers]
    default_count = len(paths)
    if layers_dir is not None:
        paths += [p for p in _layers_in(Path(layers_dir)) if p.resolve() not in
                  {q.resolve() for q in paths}]  # fmt: skip
        default_count = default_count or len(paths)
    names = [p.name for p in paths]
    twice = sorted({n for n in names if names.count(n) > 1})
    if twice:
        raise InputError(
            "layer", f"two layers are named {', '.join(twice)}", "layer files of distinct names"
        )
    loaded = [(p.name, load_layer(p)) for p in paths]
    dem_path = None
    if dem is not None:
        dem_path = Path(dem)
        if not dem_path.is_file():
            raise InputError("dem", f"file {str(dem)!r} not found", "a GeoTIFF path")
    if dem_units is not None:
        from neve.geo.site.elevation import canonical_dem_unit

        dem_units = canonical_dem_unit(dem_units)
    if max_upload_mb is None or not (0 < float(max_upload_mb) <= 10_000):
        raise InputError("max-upload-mb", f"{max_upload_mb!r} is out of range", "1 to 10000")
    if workdir is None:
        work = Path(tempfile.mkdtemp(prefix="neve-serve-"))
    else:
        work = Path(workdir)
        if work.exists() and not work.is_dir():
            raise InputError("workdir", f"{str(work)!r} is not a folder", "a folder")
        work.mkdir(parents=True, exist_ok=True)
    resolve(basemap, basemap_attribution, demo_data=not loaded,
            demo_file=demo_basemap_path())  # a bad --basemap is refused at start  # fmt: skip
    return ServeConfig(
        layers=loaded,
        dem=dem_path,
        dem_units=dem_units,
        basemap=basemap,
        basemap_attribution=basemap_attribution,
        work=work.resolve(),
        token=token,
        gazetteer=Path(gazetteer) if gazetteer else None,
        geocoder_url=geocoder_url,
        max_upload_bytes=int(float(max_upload_mb) * 1024 * 1024),
        default_count=default_count,
        own_work=workdir is None,
    )
