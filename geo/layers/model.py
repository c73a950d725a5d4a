"""Zone layers: a vector or raster file plus its validated sidecar.

:func:`load_layer` reads a GeoPackage, GeoJSON, Shapefile or FlatGeobuf
(through pyogrio) or a GeoTIFF (through rasterio) in any CRS, with the
sidecar ``<layer file>.toml`` (:mod:`neve.geo.layers.sidecar`).  A :class:`Layer` keeps
the zones in the layer's own CRS for point-in-zone tests and, lazily, in
World Mercator (EPSG:3395) for boundary distances (see
:mod:`neve.geo.layers.vector`).  :meth:`Layer.view` gives the maps what they draw.

:func:`demo_layers` is the embedded, invented demo stack (most local first).
"""

from __future__ import annotations

import functools
import hashlib
import math
import warnings
from pathlib import Path

import numpy as np

from neve.engine.errors import LayerError
from neve.engine.units import FT_PER_M, KPA_PER_PSF
from neve.geo.layers.rules import RULE_CODE, ZoneTable
from neve.geo.layers.sidecar import RISK_CATEGORIES, is_per_risk, read_sidecar, sidecar_path

DEMO_DIR = Path(__file__).resolve().parent.parent / "demo"
#: the embedded demo stack, most local first
DEMO_LAYER_FILES = ("port_hallin_amendment.geojson", "skerrow_base.gpkg")
DEMO_DEM_FILE = "skerrow_dem.tif"
#: the invented raster basemap of the demo island (built by data_recipes/build_demo_basemap.py)
DEMO_BASEMAP_FILE = "skerrow_basemap.mbtiles"
#: the embedded, invented ASCE 7-22 demo stack (per risk category, and W2), most local first;
#: used when ``--standard asce7-22`` is asked with no ``--layer`` (:func:`demo_layers_for`)
DEMO_722_LAYER_FILES = ("skerrow_722_pg.gpkg", "skerrow_722_w2.geojson")
#: the embedded, invented EN 1991-1-3 demo layer (sk of the island's metric district);
#: used when ``--standard en1991-1-3`` is asked with no ``--layer``
DEMO_EN_LAYER_FILES = ("skerrow_en_sk.gpkg",)
#: quantities whose layers are drawn and labelled kPa first (EN 1991-1-3's sk)
KPA_FIRST = ("sk",)
#: the risk category a per-risk layer gives when none is asked (the common building)
DEFAULT_RISK = "II"
RASTER_SUFFIXES = (".tif", ".tiff", ".gtiff")
VECTOR_SUFFIXES = (".gpkg", ".geojson", ".json", ".shp", ".fgb")
_SHAPEFILE_PARTS = (".shp", ".shx", ".dbf", ".prj", ".cpg")


def file_sha256(path: str | Path) -> str:
    """SHA-256 of a layer's data (a Shapefile hashes its .shp/.shx/.dbf/.prj/.cpg)."""
    p = Path(path)
    parts = [p]
    if p.suffix.lower() == ".shp":
        parts = [q for q in (p.with_suffix(s) for s in _SHAPEFILE_PARTS) if q.is_file()]
    h = hashlib.sha256()
    for q in parts:
        with open(q, "rb") as fh:
            for chunk in iter(lambda: fh.read(1 << 20), b""):
                h.update(chunk)
    return h.hexdigest()


def _files_sha256(paths) -> str:
    """One SHA-256 over several files, in order (a per-risk raster layer's data)."""
    h = hashlib.sha256()
    for q in paths:
        with open(q, "rb") as fh:
            for chunk in iter(lambda: fh.read(1 << 20), b""):
                h.update(chunk)
    return h.hexdigest()


def read_vector(path: str | Path, *, require_crs: bool = True):
    """Read a vector layer file into a GeoDataFrame (LayerError when unreadable).

    ``require_crs=False`` (``neve layer check``) returns a frame without a CRS
    so that the check can report it among the other problems.
    """
    import geopandas as gpd

    try:
        with warnings.catch_warnings():
            # geopandas warns when a column of JSON text does not parse; the
            # table column is parsed, and its defects reported, by neve.geo.layers.rules
            warnings.filterwarnings(
                "ignore", message="Could not parse column", category=UserWarning
            )
            gdf = gpd.read_file(path, engine="pyogrio")
    except Exception as exc:  # pyogrio raises several types for unreadable data
        raise LayerError(f"layer {str(path)!r} cannot be read as a vector file ({exc})") from None
    if gdf.crs is None and require_crs:
        raise LayerError(
            f"layer {str(path)!r} has no coordinate reference system; "
            "accepted: a file that declares its CRS (e.g. EPSG:4326)"
        )
    return gdf


class Layer:
    """A zone layer ready for site look-ups.

    Attributes
    ----------
    path : pathlib.Path
    meta : dict
        The validated sidecar (every key of :mod:`neve.geo.layers.sidecar`).
    sha256 : str
    is_raster : bool
    demo : bool
    """

    def __init__(
        self, path: str | Path, meta: dict, *, frame=None, raster=None, sha256=None, label=None
    ):
        self.path = Path(path)
        #: what the layer is called in the JSON ``layer.path`` (a database layer: its masked URL)
        self.label = str(label) if label is not None else str(self.path)
        self.meta = meta
        self.is_raster = raster is not None
        self.per_risk = is_per_risk(meta)
        #: the risk category whose values this layer gives (None: one value for all)
        self.risk = DEFAULT_RISK if self.per_risk else None
        if sha256 is not None:  # a layer not read from a file (neve.geo.postgis.rows_sha256)
            self.sha256 = sha256
        elif self.is_raster and raster.get("risk_paths"):
            # one hash over the layer file and its per-category rasters (in category order)
            self.sha256 = _files_sha256([self.path, *raster["risk_paths"].values()])
        else:
            self.sha256 = file_sha256(self.path)
        self.demo = bool(meta["demo"])
        self.frame = frame  # GeoDataFrame in the layer's CRS (vector layers)
        self.raster = raster  # dict of raster properties (raster layers)
        if self.is_raster and raster.get("risk_paths"):
            self.raster = dict(raster, data=raster["risk_paths"][DEFAULT_RISK])
        self.zones = (
            ZoneTable.from_frame(frame, meta["quantity"], meta["value_units"], self.risk)
            if frame is not None
            else None
        )
        self._cache: dict = {}
        self._risk_views: dict = {}
        self._built: dict = {}  # unprepared prefilter geometries, shared by copies

    @property
    def quantity(self) -> str:
        return str(self.meta.get("quantity", "pg"))

    def for_risk(self, category: str | None) -> Layer:
        """This layer giving the values of risk ``category`` (``"I"`` .. ``"IV"``).

        A layer that maps one value for every category (ASCE 7-16, a W2 layer)
        returns itself.  The view shares the layer's geometry and caches.
        """
        if not self.per_risk or category is None:
            return self
        from neve.engine.choices import choose_key

        cat = choose_key("risk", str(category).upper(), RISK_CATEGORIES)
        if cat == self.risk:
            return self
        views = self.__dict__.setdefault("_risk_views", {})
        if cat not in views:
            view = object.__new__(Layer)
            view.__dict__.update(self.__dict__)
            view._risk_views = views
            view.risk = cat
            if self.is_raster:
                view.raster = dict(self.raster, data=self.raster["risk_paths"][cat])
            else:
                view.zones = ZoneTable.from_frame(
                    self.frame, self.meta["quantity"], self.meta["value_units"], cat
                )
            views[cat] = view
            views.setdefault(self.risk, self)
        return views[cat]

    def widened(self, radius_m: float) -> Layer:
        """This layer with its boundary tolerance raised to ``radius_m`` [m] (never lowered).

        An approximate site location (a ZIP code or place centroid) searches its
        whole uncertainty circle for zones of another value and study areas.  The
        view shares the layer's geometry and caches.
        """
        r = float(radius_m or 0.0)
        if not math.isfinite(r) or r <= self.tolerance_m:
            return self
        view = object.__new__(Layer)
        view.__dict__.update(self.__dict__)
        view.meta = dict(self.meta, boundary_tolerance_m=r)
        return view

    # --- naming -------------------------------------------------------------
    @property
    def name(self) -> str:
        return self.meta["name"]

    @property
    def tolerance_m(self) -> float:
        return float(self.meta["boundary_tolerance_m"])

    @property
    def to_psf(self) -> float:
        """Factor from the layer's value units to psf."""
        return 1.0 / KPA_PER_PSF if self.meta["value_units"] == "kPa" else 1.0

    @property
    def crs(self):
        return self.frame.crs if self.frame is not None else self.raster["crs"]

    def __repr__(self) -> str:
        kind = "raster" if self.is_raster else f"{len(self.frame)} zones"
        return f"Layer({self.name!r}, {kind}, demo={self.demo})"

    def __getstate__(self) -> dict:
        """The layer's attributes for pickling and copying, with the look-up caches emptied.

        GEOS prepared geometries and trees do not survive pickling in a usable
        state (and are not safe to share between threads), so a pickled or
        copied layer builds its own on first use.  This also keeps what is
        sent to a Dask worker small.
        """
        state = self.__dict__.copy()
        state["_cache"] = {}
        state["_risk_views"] = {}
        state["_built"] = {}
        return state

    def __copy__(self):
        """A copy with empty look-up caches that shares the unprepared prefilter geometries.

        The grown union and the shrunk zones (:meth:`coverage_m`, :meth:`shrunk_m`)
        are built once for the layer and its copies (one per thread of the local
        engine); each copy prepares its own copy of them.
        """
        new = self.__class__.__new__(self.__class__)
        new.__dict__.update(self.__getstate__())
        new._built = self.__dict__.setdefault("_built", {})
        return new

    def _prefilter(self, key, build):
        """The prepared geometry of ``key``: built once (shared by copies), prepared per copy."""
        if key not in self._cache:
            import threading

            import shapely

            built = self.__dict__.setdefault("_built", {})
            with built.setdefault("lock", threading.Lock()):  # one build for all copies
                base = built.get(key)
                if base is None:
                    base = mine = built[key] = build()
                else:  # another copy built it: prepare a copy of our own
                    mine = shapely.from_wkb(shapely.to_wkb(base))
            shapely.prepare(mine)
            self._cache[key] = mine
        return self._cache[key]

    def info(self) -> dict:
        """The ``layer`` object of the JSON contract."""
        m = self.meta
        return {
            "name": m["name"],
            "jurisdiction": m["jurisdiction"],
            "standard": m["standard"],
            "source": m["source"],
            "license": m["license"],
            "date": m["date"],
            "sha256": self.sha256,
            "demo": self.demo,
            "path": self.label,
        }

    def site_errors(self, hits, sites: np.ndarray, elev_ft: np.ndarray) -> np.ndarray:
        """Why sites have status ``error`` in this layer, naming the zone and the value.

        Parameters
        ----------
        hits : neve.geo.layers.vector.Hits
            This layer's hits for all sites.
        sites : numpy.ndarray of int
            Indices of the sites in error (their governing zone is defective
            or gave no plausible value).
        elev_ft : numpy.ndarray of float
            Their elevations [ft]; NaN where unknown.

        Returns
        -------
        numpy.ndarray of object
            One sentence per site ("" when there is nothing more to say).
        """
        sites = np.asarray(sites, dtype=np.intp)
        if self.is_raster:
            from neve.geo.layers.raster import cell_errors

            return cell_errors(self, hits.zone_id[sites])
        from neve.geo.layers.rule_checks import site_errors

        zone = hits.zone_idx[sites]
        out = np.full(sites.size, "", dtype=object)
        known = zone >= 0
        scale = 1.0 if self.meta["elevation_units"] == "ft" else 1.0 / FT_PER_M
        out[known] = site_errors(
            self.zones, zone[known], np.asarray(elev_ft, dtype=float)[known] * scale,
            self.meta["value_units"], self.meta["elevation_units"],
        )  # fmt: skip
        return out

    # --- geometry caches (vector) -----------------------------------------------
    def tree(self):
        """STRtree of the zones in the layer's CRS."""
        if "tree" not in self._cache:
            import shapely

            self._cache["tree"] = shapely.STRtree(self.prepared())
        return self._cache["tree"]

    def tree_m(self):
        """(geometries, STRtree) of the zones in World Mercator EPSG:3395 [m]."""
        if "tree_m" not in self._cache:
            import shapely

            # coordinates that do not project (a layer outside its CRS's area of use, which
            # `neve layer check` reports) become inf here: they match no site, quietly
            with np.errstate(invalid="ignore", over="ignore"):
                geoms = np.asarray(
                    shapely.make_valid(np.asarray(self.frame.geometry.to_crs(3395).values))
                )
            self._cache["tree_m"] = (geoms, shapely.STRtree(geoms))
        return self._cache["tree_m"]

    def prepared(self) -> np.ndarray:
        """The zone geometries (layer CRS), prepared for repeated point tests."""
        if "prepared" not in self._cache:
            import shapely

            # invalid zones (reported by `neve layer check`) are repaired for the look-up
            geoms = np.asarray(shapely.make_valid(np.asarray(self.frame.geometry.values)))
            shapely.prepare(geoms)
            self._cache["prepared"] = geoms
        return self._cache["prepared"]

    def shrunk_m(self, distance_m: float) -> np.ndarray:
        """Zones in EPSG:3395 shrunk by ``distance_m`` on the ground (conservatively), prepared.

        A site inside a shrunk zone is farther than ``distance_m`` from the
        zone's boundary.  The shrink uses the largest Mercator scale factor
        over the zone's latitudes, so it never shrinks too little.
        """

        def build():
            import shapely

            from neve.geo.layers.vector import mercator_scale

            geoms, _ = self.tree_m()
            b = self.frame.geometry.to_crs(4326).bounds
            lat_max = np.maximum(np.abs(b["miny"].to_numpy()), np.abs(b["maxy"].to_numpy()))
            k = mercator_scale(np.nan_to_num(lat_max, nan=0.0))
            with np.errstate(invalid="ignore", over="ignore"):
                return shapely.buffer(geoms, -distance_m * k * 1.001)

        return self._prefilter(("shrunk", float(distance_m)), build)

    def coverage_m(self, distance_m: float):
        """Union of the zones in EPSG:3395 grown by ``distance_m`` on the ground, prepared."""

        def build():
            import shapely

            from neve.geo.layers.vector import mercator_scale

            geoms, _ = self.tree_m()
            b = self.frame.geometry.to_crs(4326).total_bounds
            k = float(mercator_scale(max(abs(b[1]), abs(b[3]))))
            with np.errstate(invalid="ignore", over="ignore"):
                return shapely.buffer(shapely.union_all(geoms), distance_m * k * 1.001 + 1.0)

        return self._prefilter(("coverage", float(distance_m)), build)

    # --- what maps need -------------------------------------------------------
    def view(self, center: tuple[float, float] | None = None, radius_m: float = 5000) -> dict:
        """The layer as maps draw it.

        Parameters
        ----------
        center : (float, float) or None
            (lat, lon) [degrees]; None gives every zone.
        radius_m : float
            Half-width of the window around ``center`` [m].

        Returns
        -------
        dict
            ``name``, ``meta``, ``sha256``, ``demo``, ``value_units`` (the
            units of the ``pg`` columns: kPa for an ``sk`` layer, whatever its
            sidecar's), ``quantity`` (``pg``, ``sk``), ``demo_basemap`` (demo layers only: the invented demo basemap) and
            ``zones``: a GeoDataFrame in EPSG:4326 with ``zone_id``, ``rule``,
            ``pg`` [value_units, NaN where no single mapped value], ``pg_psf``,
            ``elev_max``, ``note``, ``source``, ``study`` (bool), ``pg_lo`` and
            ``pg_hi`` (the smallest and largest value of an elevation table, a
            formula's floor as ``pg_lo``; NaN otherwise) and geometry.
        """
        if self.is_raster:
            from neve.geo.layers.raster import raster_view

            zones = raster_view(self, center, radius_m)
        else:
            zones = self._vector_view(center, radius_m)
        units = self.meta["value_units"]
        if self.quantity in KPA_FIRST and units != "kPa":
            # an EN 1991-1-3 layer is drawn and labelled in kPa, whatever units it maps in
            k = self.to_psf * KPA_PER_PSF
            zones = zones.assign(**{c: zones[c] * k for c in ("pg", "pg_lo", "pg_hi")
                                    if c in zones.columns})  # fmt: skip
            units = "kPa"
        view = {
            "name": self.name,
            "meta": dict(self.meta),
            "sha256": self.sha256,
            "demo": self.demo,
            "value_units": units,
            "quantity": self.quantity,
            "zones": zones,
        }
        if self.demo and demo_basemap_path().is_file():  # the maps draw it under demo zones
            view["demo_basemap"] = str(demo_basemap_path())
        return view

    def _vector_view(self, center, radius_m):
        import geopandas as gpd

        zt = self.zones
        pg = np.where(zt.rule == RULE_CODE["fixed"], zt.value, np.nan)
        # the range a rule by elevation gives (table values; a formula's floor) for labels
        lo = np.full(len(zt), np.nan)
        hi = np.full(len(zt), np.nan)
        for j, (_, values) in zt.tables.items():
            if len(values):
                lo[j], hi[j] = float(np.min(values)), float(np.max(values))
        formula = zt.rule == RULE_CODE["formula"]
        lo = np.where(formula, zt.pg_min, lo)
        gdf = gpd.GeoDataFrame(
            {
                "zone_id": zt.zone_id.astype(str),
                "rule": zt.rule_names().astype(str),
                "pg": pg,
                "pg_psf": pg * self.to_psf,
                "elev_max": zt.elev_max,
                "note": zt.note.astype(str),
                "source": zt.source.astype(str),
                "study": zt.rule == RULE_CODE["study"],
                "pg_lo": lo,
                "pg_hi": hi,
            },
            geometry=self.frame.geometry.values,
            crs=self.frame.crs,
        ).to_crs(4326)
        if center is not None:
            lat, lon = float(center[0]), float(center[1])
            dlat = radius_m / 111_320.0
            dlon = radius_m / (111_320.0 * max(math.cos(math.radians(lat)), 0.01))
            gdf = gdf.cx[lon - dlon : lon + dlon, lat - dlat : lat + dlat]
        return gdf.reset_index(drop=True)


def load_layer(path: str | Path) -> Layer:
    """Read a zone layer and its sidecar.

    Parameters
    ----------
    path : str or pathlib.Path
        GeoPackage, GeoJSON, Shapefile, FlatGeobuf or GeoTIFF; the sidecar is
        ``<path>.toml``.

    Raises
    ------
    LayerError
        When the file or its sidecar is missing, unreadable or invalid.
    """
    if isinstance(path, Layer):
        return path
    from neve.geo.postgis import is_db_url

    if is_db_url(path):  # a PostGIS table; its sidecar in the neve_layer_meta table
        from neve.geo.layers.postgis import read_db_layer

        frame, meta, sha, shown = read_db_layer(str(path))
        return Layer(shown.split("?")[0].rsplit("/", 1)[-1] or "postgis", meta, frame=frame,
                     sha256=sha, label=shown)  # fmt: skip
    p = Path(path)
    if not p.is_file():
        raise LayerError(f"layer file {str(p)!r} not found")
    meta = read_sidecar(p)
    if p.suffix.lower() in RASTER_SUFFIXES:
        from neve.geo.layers.raster import open_raster_layer

        return Layer(p, meta, raster=open_raster_layer(p, meta))
    if meta["study_mask"]:
        raise LayerError(
            f"sidecar {sidecar_path(p).name!r} study_mask: only raster layers take a mask; "
            "accepted: rule = study zones in a vector layer"
        )
    return Layer(p, meta, frame=read_vector(p))


def as_layers(layers) -> list[Layer]:
    """Layers from paths or Layer objects; None gives the demo stack."""
    if layers is None:
        return demo_layers()
    if isinstance(layers, (str, Path, Layer)):
        layers = [layers]
    out = [x if isinstance(x, Layer) else load_layer(x) for x in layers]
    if not out:
        raise LayerError("no layer given; accepted: one or more layer files, most local first")
    return out


@functools.lru_cache(maxsize=1)
def _demo_stack() -> tuple[Layer, ...]:
    missing = [f for f in DEMO_LAYER_FILES if not (DEMO_DIR / f).is_file()]
    if missing:
        raise LayerError(
            f"the embedded demo data is missing ({', '.join(missing)}); "
            "rebuild it with: python data_recipes/build_demo.py"
        )
    return tuple(load_layer(DEMO_DIR / f) for f in DEMO_LAYER_FILES)


def demo_layers() -> list[Layer]:
    """The embedded, invented demo layer stack, most local first (``demo = true``)."""
    return list(_demo_stack())


@functools.lru_cache(maxsize=1)
def _demo_722_stack() -> tuple[Layer, ...]:
    missing = [f for f in DEMO_722_LAYER_FILES if not (DEMO_DIR / f).is_file()]
    if missing:
        raise LayerError(
            f"the embedded per-risk demo data (asce7-22) is missing ({', '.join(missing)}); "
            "rebuild it with: python data_recipes/build_demo.py"
        )
    return tuple(load_layer(DEMO_DIR / f) for f in DEMO_722_LAYER_FILES)


def demo_722_layers() -> list[Layer]:
    """The embedded, invented ASCE 7-22 demo stack: pg per risk category, then W2 (``demo = true``)."""
    return list(_demo_722_stack())


@functools.lru_cache(maxsize=1)
def _demo_en_stack() -> tuple[Layer, ...]:
    missing = [f for f in DEMO_EN_LAYER_FILES if not (DEMO_DIR / f).is_file()]
    if missing:
        raise LayerError(
            f"the embedded sk demo data (en1991-1-3) is missing ({', '.join(missing)}); "
            "rebuild it with: python data_recipes/build_demo.py"
        )
    return tuple(load_layer(DEMO_DIR / f) for f in DEMO_EN_LAYER_FILES)


def demo_en_layers() -> list[Layer]:
    """The embedded, invented EN 1991-1-3 demo layer: sk of the island's metric district (``demo = true``)."""
    return list(_demo_en_stack())


def demo_layers_for(standard=None) -> list[Layer]:
    """The demo stack for the roof standard ``standard`` (None: the default demo, ASCE 7-16).

    A standard the default demo layers do not feed (ASCE 7-22, EN 1991-1-3) gets
    its own invented demo layers when neve has them; otherwise the default demo stack.
    """
    stack = demo_layers()
    if standard is None:
        return stack
    from neve.engine.standards import get_standard

    std = get_standard(standard)
    if any(std.accepts_layer(ly.meta["standard"], ly.quantity) for ly in stack):
        return stack
    for other in (demo_722_layers, demo_en_layers):
        layers = other()
        if any(std.accepts_layer(ly.meta["standard"], ly.quantity) for ly in layers):
            return layers
    return stack


def demo_dem_path() -> Path:
    """Path of the embedded synthetic demo DEM (metres)."""
    return DEMO_DIR / DEMO_DEM_FILE


def demo_basemap_path() -> Path:
    """Path of the embedded invented demo basemap (raster MBTiles)."""
    return DEMO_DIR / DEMO_BASEMAP_FILE


def dem_argument(dem):
    """A ``--dem`` value: ``"demo"`` (with no file of that name) is the embedded DEM."""
    if dem is not None and str(dem) == "demo" and not Path("demo").exists():
        return demo_dem_path()
    return dem
