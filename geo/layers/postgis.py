"""Zone layers read from a PostGIS table (issue 17).

``--layer "postgresql://USER@HOST/DB?table=SCHEMA.ZONES"``: the rows are read
in a read-only transaction (connection, URL keys and messages as in
:mod:`neve.geo.postgis`), the sidecar comes from ``--layer-meta FILE.toml`` or
from the table :data:`~neve.geo.postgis.META_TABLE`.

The provenance hash of such a layer is a SHA-256 over its rows as read
(:func:`rows_sha256`): each row's geometry as WKB and its attribute values as
text, rows sorted by those bytes, so the hash does not depend on the order the
server returns them in.
"""

from __future__ import annotations

import hashlib

import numpy as np

from neve.engine.errors import InputError, LayerError
from neve.geo.postgis import (
    META_TABLE,
    _connect,
    _db_error,
    _geometry_columns,
    _qualified,
    _table_exists,
    parse_db_url,
)

# --- zone layers ----------------------------------------------------------------------


def rows_sha256(gdf) -> str:
    """SHA-256 over a layer's rows as read, independent of row order (module docstring)."""
    import shapely

    geom = gdf.geometry
    wkb = shapely.to_wkb(np.asarray(geom.values), hex=False, output_dimension=2)
    attrs = gdf.drop(columns=[geom.name])
    cols = sorted(map(str, attrs.columns))
    rows = []
    for i in range(len(gdf)):
        parts = [b"" if wkb[i] is None else wkb[i]]
        parts += [repr(attrs.iloc[i][c]).encode() for c in cols]
        rows.append(b"\x1f".join(parts))
    h = hashlib.sha256()
    h.update(("\x1f".join(cols) + "\n").encode())
    for r in sorted(rows):
        h.update(hashlib.sha256(r).digest())
    return h.hexdigest()


def read_db_layer(url: str, meta_path=None):  # noqa: C901
    """A zone layer's parts from a PostGIS table: (frame, sidecar, SHA-256, shown URL).

    :func:`neve.geo.layers.model.load_layer` builds the layer from them.

    The sidecar is ``meta_path`` (a TOML file, as beside a layer file) or,
    without it, the row of the table :data:`META_TABLE` (columns
    ``layer_table`` text, ``sidecar`` text holding the TOML) whose
    ``layer_table`` is the table's ``SCHEMA.NAME`` or ``NAME``.
    """
    import tomllib

    import geopandas as gpd
    from sqlalchemy import text

    from neve.geo.layers.sidecar import read_sidecar_file, validate_meta

    where = "layer"
    src = parse_db_url(url, where, want="layer")
    meta_path = meta_path if meta_path is not None else src.layer_meta
    engine = _connect(src, where)
    try:
        with engine.connect() as conn:
            conn.execute(text("SET TRANSACTION READ ONLY"))
            schema, name = src.table
            if not _table_exists(conn, schema, name):
                raise LayerError(f"layer {src.shown}: no table {src.table_text!r}; accepted: an "
                                 "existing table of zone polygons")  # fmt: skip
            base = f"SELECT * FROM {_qualified(conn, schema, name)}"
            geoms = _geometry_columns(conn, base)
            gcol = src.geometry or (geoms[0] if len(geoms) == 1 else None)
            if gcol is None or gcol not in geoms:
                raise LayerError(f"layer {src.shown}: no single geometry column "
                                 f"({', '.join(geoms) or 'none'}); accepted: ?geometry=COLUMN")  # fmt: skip
            if meta_path is not None:
                meta = read_sidecar_file(meta_path)
            else:
                if not _table_exists(conn, schema, META_TABLE):
                    raise LayerError(
                        f"layer {src.shown}: no sidecar: give --layer-meta FILE.toml or a table "
                        f"{META_TABLE!r} (layer_table, sidecar) in the layer's schema"
                    )
                row = conn.execute(
                    text(f"SELECT sidecar FROM {_qualified(conn, schema, META_TABLE)} "
                         "WHERE layer_table IN (:a, :b)"),
                    {"a": name, "b": src.table_text},
                ).first()  # fmt: skip
                if row is None:
                    raise LayerError(f"layer {src.shown}: {META_TABLE!r} has no row for "
                                     f"{src.table_text!r}; accepted: a row (layer_table, sidecar)")  # fmt: skip
                try:
                    raw = tomllib.loads(str(row[0]))
                except tomllib.TOMLDecodeError as exc:
                    raise LayerError(f"layer {src.shown}: the sidecar in {META_TABLE!r} is not "
                                     f"valid TOML ({exc})") from None  # fmt: skip
                meta = validate_meta(raw, f"sidecar of {src.table_text!r} in {META_TABLE!r}")
            gdf = gpd.read_postgis(text(base), conn, geom_col=gcol)
    except (InputError, LayerError):
        raise
    except Exception as exc:
        raise _db_error(exc, src, where) from None
    finally:
        engine.dispose()
    if gdf.crs is None:
        raise LayerError(f"layer {src.shown}: geometry column {gcol!r} has no SRID; accepted: a "
                         "geometry with its SRID (e.g. 4326)")  # fmt: skip
    if meta.get("study_mask"):
        raise LayerError(f"layer {src.shown}: study_mask is for raster layers")
    return gdf, meta, rows_sha256(gdf), src.shown
