"""Sites in, results out and zone layers through PostgreSQL + PostGIS (issue 17).

A database is named by a URL with neve's own query keys::

    postgresql://USER@HOST:PORT/DB?table=SCHEMA.TABLE
    postgresql://USER@HOST:PORT/DB?query=SELECT ...
    postgresql:///DB?service=office&table=sites          (a libpq service file)

``table`` (a table or view, ``SCHEMA.NAME`` or ``NAME``) or ``query`` (one
``SELECT``/``WITH`` statement, sites only) says what is read; ``geometry``
names the geometry column when a table has more than one; ``layer_meta``
(a zone layer only; what ``--layer-meta FILE.toml`` adds to the URL) names
the layer's sidecar file.  Every other query
key goes to libpq as it is (``sslmode``, ``service``, ``connect_timeout`` ...).

Passwords never travel on the command line: a URL holding one is refused,
and libpq's own mechanisms work as usual (``PGPASSWORD``, a password file
``~/.pgpass`` or ``PGPASSFILE``, a service file ``PGSERVICE``).  Every
message shows the URL masked (:func:`masked`).

Reading runs in a read-only transaction.  Writing a results table happens in
one transaction: a new table under a temporary name is created and filled,
given a spatial index, the old table (with ``--overwrite``) dropped and the new
one renamed into its place, then the transaction commits -- so a failed or
killed run leaves the old table as it was and no half-written table behind.

Zone layers read from PostGIS are built by :mod:`neve.geo.layers.postgis`
with the helpers here (this module imports no other room of ``neve.geo``).
"""

from __future__ import annotations

import re
import secrets
from dataclasses import dataclass, field
from urllib.parse import parse_qsl, quote, urlencode, urlsplit, urlunsplit

import numpy as np
import pandas as pd

from neve.engine.errors import InputError

#: URL schemes taken as a database
SCHEMES = ("postgresql", "postgres", "postgresql+psycopg")
#: neve's own query keys (the rest go to libpq)
OWN_KEYS = ("table", "query", "geometry", "layer_meta")
#: the name of the table that may hold layer sidecars (see :func:`load_db_layer`)
META_TABLE = "neve_layer_meta"
#: PostgreSQL's longest identifier [bytes]
MAX_IDENT = 63
#: the geometry column of a results table (another name is taken if an input column has it)
RESULT_GEOMETRY = "geom"
_IDENT = re.compile(r"^[A-Za-z_][A-Za-z0-9_$]*$")
_ACCEPTED_URL = (
    "postgresql://USER@HOST:PORT/DB?table=SCHEMA.TABLE or ?query=SELECT ... "
    "(password from PGPASSWORD, ~/.pgpass or a service file)"
)


def is_db_url(text) -> bool:
    """Whether ``text`` names a database (``postgresql://...``) rather than a file."""
    if not isinstance(text, str):
        return False
    head = text.split("://", 1)[0].lower() if "://" in text else ""
    return head in SCHEMES


def masked(text: str) -> str:
    """``text`` with any password in a URL or a ``password=`` pair replaced by ``***``."""
    out = re.sub(r"(://[^/@:\s]*):[^@/\s]*@", r"\1:***@", str(text))
    return re.sub(r"(?i)(password\s*=\s*)('[^']*'|\S+)", r"\1***", out)


@dataclass(frozen=True)
class DbSource:
    """A parsed database URL: where to connect and what to read or write."""

    #: the connection URL for SQLAlchemy (no neve keys, never a password)
    connect: str
    #: ``(schema or None, name)`` of a table, or None for a query
    table: tuple | None
    query: str | None
    geometry: str | None
    #: the URL as shown in messages and provenance (masked, without ``layer_meta``)
    shown: str
    libpq: dict = field(default_factory=dict)
    #: a zone layer's sidecar file (``layer_meta``), or None
    layer_meta: str | None = None

    @property
    def table_text(self) -> str:
        schema, name = self.table
        return f"{schema}.{name}" if schema else name


def _ident(part: str, where: str) -> str:
    if not _IDENT.match(part) or len(part.encode()) > MAX_IDENT:
        raise InputError(
            where,
            f"{part!r} is not a plain table name",
            f"letters, digits, _ and $, starting with a letter or _, at most {MAX_IDENT} bytes "
            "(SCHEMA.TABLE or TABLE)",
        )
    return part


def parse_db_url(text: str, where: str, *, want: str = "sites") -> DbSource:
    """Parse a database URL for ``want`` (``sites``, ``output`` or ``layer``).

    Raises :class:`InputError` naming ``where`` for a password in the URL,
    a missing or doubled ``table``/``query``, a query for an output or layer,
    or a table name that is not a plain identifier.
    """
    parts = urlsplit(text)
    if parts.password is not None:
        raise InputError(
            where,
            f"{masked(text)!r} holds a password, which would show in shell history, process "
            "lists and logs",
            "the URL without the password, and PGPASSWORD, a ~/.pgpass password file or a "
            "service file (PGSERVICE)",
        )
    pairs = parse_qsl(parts.query, keep_blank_values=True)
    own = {k: v for k, v in pairs if k in OWN_KEYS}
    if len(own) != len([k for k, _ in pairs if k in OWN_KEYS]):
        raise InputError(where, "a query key is given twice", _ACCEPTED_URL)
    libpq = {k: v for k, v in pairs if k not in OWN_KEYS}
    table, query = own.get("table"), own.get("query")
    if want != "sites" and query is not None:
        raise InputError(where, f"a query cannot be the {want}", f"?table=SCHEMA.TABLE for the {want}")
    if (table is None) == (query is None):
        raise InputError(
            where, "give exactly one of table= and query=" if want == "sites" else "no table= given",
            _ACCEPTED_URL,
        )  # fmt: skip
    name = None
    if table is not None:
        bits = table.split(".")
        if len(bits) > 2 or not table:
            raise InputError(where, f"table {table!r} is not SCHEMA.TABLE or TABLE", _ACCEPTED_URL)
        bits = [_ident(b, where) for b in bits]
        name = (bits[0], bits[1]) if len(bits) == 2 else (None, bits[0])
    if query is not None:
        q = query.strip().rstrip(";").strip()
        if not re.match(r"(?is)^(select|with)\b", q) or ";" in q:
            raise InputError(where, "the query is not one SELECT statement", "?query=SELECT ... FROM ...")
        query = q
    geom = own.get("geometry")
    if geom is not None:
        geom = _ident(geom, where)
    meta = own.get("layer_meta")
    if meta is not None and want != "layer":
        raise InputError(where, f"layer_meta given for the {want}", "layer_meta with --layer only")
    scheme = "postgresql+psycopg"
    connect = urlunsplit((scheme, parts.netloc, parts.path, urlencode(libpq, quote_via=quote), ""))
    keep = urlencode([(k, v) for k, v in pairs if k != "layer_meta"], quote_via=quote, safe=".,=*")
    shown = masked(urlunsplit((parts.scheme, parts.netloc, parts.path, keep, "")))
    return DbSource(connect, name, query, geom, shown, libpq, meta)


def with_layer_meta(url: str, meta_path: str) -> str:
    """``url`` with its sidecar file named (``--layer-meta``): the ``layer_meta`` key added."""
    parts = urlsplit(url)
    pairs = [(k, v) for k, v in parse_qsl(parts.query, keep_blank_values=True) if k != "layer_meta"]
    pairs.append(("layer_meta", str(meta_path)))
    return urlunsplit((*parts[:3], urlencode(pairs, quote_via=quote), parts[4]))


def same_table(a: str, b: str) -> bool:
    """Whether two database URLs name the same table of the same database."""
    pa, pb = urlsplit(a), urlsplit(b)
    ta = dict(parse_qsl(pa.query)).get("table")
    tb = dict(parse_qsl(pb.query)).get("table")
    if ta is None or tb is None:
        return False
    norm = (lambda t: t if "." in t else f"public.{t}")  # noqa: E731
    return (pa.hostname, pa.port, pa.path) == (pb.hostname, pb.port, pb.path) and norm(ta) == norm(tb)


# --- connecting ---------------------------------------------------------------------


def _engine(src: DbSource):
    from sqlalchemy import create_engine
    from sqlalchemy.pool import NullPool

    args = {} if "connect_timeout" in src.libpq else {"connect_timeout": 10}
    return create_engine(src.connect, poolclass=NullPool, connect_args=args)


def _db_error(exc: Exception, src: DbSource, where: str) -> InputError:
    """A clear :class:`InputError` for a failed connection or statement (credentials masked)."""
    msg = masked(str(getattr(exc, "orig", None) or exc)).strip().splitlines()
    first = msg[0] if msg else type(exc).__name__
    low = " ".join(msg).lower()
    if "password authentication failed" in low or "no password supplied" in low:
        what = "the server refused the credentials"
        accepted = "a user and password the server accepts (PGPASSWORD, ~/.pgpass, a service file)"
    elif "database" in low and "does not exist" in low:
        what = "the database does not exist"
        accepted = "an existing database in the URL's path"
    elif any(w in low for w in ("connection refused", "could not connect", "timeout", "timed out",
                                "could not translate host", "name or service not known",
                                "no such file or directory")):  # fmt: skip
        what = "the server cannot be reached"
        accepted = "a running PostgreSQL server at the URL's host and port"
    else:
        what = "the database answered with an error"
        accepted = _ACCEPTED_URL
    return InputError(where, f"{src.shown}: {what} ({first})", accepted)


def _connect(src: DbSource, where: str):
    """An open SQLAlchemy engine for ``src`` whose database has PostGIS (else InputError)."""
    from sqlalchemy import text

    engine = _engine(src)
    try:
        with engine.connect() as conn:
            has = conn.execute(text("SELECT 1 FROM pg_extension WHERE extname = 'postgis'")).first()
    except InputError:
        raise
    except Exception as exc:  # psycopg / SQLAlchemy raise several kinds
        engine.dispose()
        raise _db_error(exc, src, where) from None
    if has is None:
        engine.dispose()
        raise InputError(
            where,
            f"{src.shown}: the database has no PostGIS extension",
            "a database where CREATE EXTENSION postgis has been run",
        )
    return engine


def _qualified(conn, schema: str | None, name: str) -> str:
    prep = conn.dialect.identifier_preparer
    return (f"{prep.quote_identifier(schema)}." if schema else "") + prep.quote_identifier(name)


def _table_exists(conn, schema: str | None, name: str) -> bool:
    from sqlalchemy import inspect

    insp = inspect(conn)
    return insp.has_table(name, schema=schema) or name in insp.get_view_names(schema=schema)


# --- sites in -------------------------------------------------------------------------


def _columns(conn, select_sql: str) -> list[tuple[str, bool]]:
    """``(name, is geometry or geography)`` of every column of ``select_sql`` (no row read)."""
    from sqlalchemy import text

    oids = {r[0] for r in conn.execute(
        text("SELECT oid FROM pg_type WHERE typname IN ('geometry', 'geography')"))}  # fmt: skip
    cur = conn.connection.driver_connection.cursor()
    try:
        cur.execute(f"SELECT * FROM ({select_sql}) AS neve_q LIMIT 0")
        return [(d.name, d.type_code in oids) for d in cur.description]
    finally:
        cur.close()


def _geometry_columns(conn, select_sql: str) -> list[str]:
    """The columns of ``select_sql`` whose type is PostGIS geometry (or geography)."""
    return [name for name, geo in _columns(conn, select_sql) if geo]


def _order_by(conn, src: DbSource) -> str:
    """``ORDER BY`` the table's primary key (rows keep the table's key order), or ''."""
    if src.table is None:
        return ""
    from sqlalchemy import inspect

    schema, name = src.table
    try:
        pk = inspect(conn).get_pk_constraint(name, schema=schema).get("constrained_columns") or []
    except Exception:  # a view has none
        pk = []
    prep = conn.dialect.identifier_preparer
    return (" ORDER BY " + ", ".join(f"neve_q.{prep.quote_identifier(c)}" for c in pk)) if pk else ""


def read_db_sites(url: str, where: str = "sites") -> tuple[pd.DataFrame, object]:
    """Read sites from a table or query: (every column but the geometry, the geometry or None).

    A geometry column of any SRID is transformed to WGS 84 on the server; a
    geometry without an SRID is refused unless the rows also carry
    ``lat``/``lon`` columns (then it is left out).  Rows come in the table's
    primary-key order (a query: in its own order).
    """
    from sqlalchemy import text

    src = parse_db_url(url, where, want="sites")
    engine = _connect(src, where)
    try:
        with engine.connect() as conn:
            conn.execute(text("SET TRANSACTION READ ONLY"))
            if src.table is not None:
                schema, name = src.table
                if not _table_exists(conn, schema, name):
                    raise InputError(where, f"{src.shown}: no table {src.table_text!r}",
                                     "an existing table or view, SCHEMA.TABLE")  # fmt: skip
                base = f"SELECT * FROM {_qualified(conn, schema, name)}"
            else:
                base = src.query
            columns = _columns(conn, base)
            geoms = [name for name, geo in columns if geo]
            if src.geometry is not None and src.geometry not in geoms:
                raise InputError(where, f"{src.shown}: no geometry column {src.geometry!r}",
                                 ", ".join(geoms) or "a table with a geometry column")  # fmt: skip
            gcol = src.geometry or (geoms[0] if len(geoms) == 1 else None)
            if gcol is None and len(geoms) > 1:
                raise InputError(where, f"{src.shown}: several geometry columns ({', '.join(geoms)})",
                                 "?geometry=COLUMN naming one")  # fmt: skip
            order = _order_by(conn, src)
            prep = conn.dialect.identifier_preparer
            if gcol is not None:
                g = f"neve_q.{prep.quote_identifier(gcol)}"
                sql = (f"SELECT neve_q.*, ST_AsBinary(ST_Transform({g}::geometry, 4326)) "
                       f"AS neve_wkb__, ST_SRID({g}::geometry) AS neve_srid__ "
                       f"FROM ({base}) AS neve_q WHERE {g} IS NULL OR ST_SRID({g}::geometry) <> 0"
                       f"{order}")  # fmt: skip
                nosrid = conn.execute(text(
                    f"SELECT count(*) FROM ({base}) AS neve_q "
                    f"WHERE {g} IS NOT NULL AND ST_SRID({g}::geometry) = 0")).scalar()  # fmt: skip
                if nosrid:
                    cols = {name.lower() for name, _ in columns}
                    if not ({"lat", "latitude"} & cols and {"lon", "lng", "longitude"} & cols):
                        raise InputError(
                            where,
                            f"{src.shown}: geometry column {gcol!r} has no SRID on {nosrid} row(s)",
                            "a geometry with its SRID (any), or lat/lon columns",
                        )
                    gcol = None  # lat/lon carry the sites; the geometry is left out
            if gcol is None:
                frame = pd.read_sql(text(f"SELECT neve_q.* FROM ({base}) AS neve_q{order}"), conn)
                frame = frame.drop(columns=[c for c in geoms if c in frame.columns])
                if not len(frame.columns):
                    raise InputError(where, f"{src.shown}: no usable columns",
                                     "a point geometry column or lat/lon columns")  # fmt: skip
                return frame.reset_index(drop=True), None
            frame = pd.read_sql(text(sql), conn)
    except InputError:
        raise
    except Exception as exc:
        raise _db_error(exc, src, where) from None
    finally:
        engine.dispose()
    import geopandas as gpd

    wkb = frame.pop("neve_wkb__")
    frame = frame.drop(columns=["neve_srid__", *[c for c in geoms if c in frame.columns]])
    values = [None if v is None else bytes(v) for v in wkb]
    geometry = gpd.GeoSeries.from_wkb(values, crs="EPSG:4326").reset_index(drop=True)
    return frame.reset_index(drop=True), geometry


# --- results out ----------------------------------------------------------------------


def check_db_target(url: str, overwrite: bool, where: str = "output") -> DbSource:
    """Refuse, before any work, a results table that cannot be written.

    Connects, checks PostGIS, and refuses an existing table without ``overwrite``.
    """
    src = parse_db_url(url, where, want="output")
    engine = _connect(src, where)
    try:
        with engine.connect() as conn:
            schema, name = src.table
            if schema is not None:
                from sqlalchemy import inspect

                if schema not in inspect(conn).get_schema_names():
                    raise InputError(where, f"{src.shown}: no schema {schema!r}",
                                     "an existing schema (CREATE SCHEMA first)")  # fmt: skip
            if _table_exists(conn, schema, name) and not overwrite:
                raise InputError(
                    where,
                    f"{src.shown}: table {src.table_text!r} exists",
                    "--overwrite to replace it (in one transaction), or another table",
                )
    except InputError:
        raise
    except Exception as exc:
        raise _db_error(exc, src, where) from None
    finally:
        engine.dispose()
    return src


def _csv_bytes(frame: pd.DataFrame) -> bytes:
    """``frame`` as CSV for COPY, by pyarrow's writer: every text quoted, a null unquoted empty.

    So a text cell that reads ``\\N`` or is empty stays that text, and only a missing
    value becomes NULL (COPY's CSV default).  A column of mixed Python objects is
    written as their text.
    """
    import io

    import pyarrow as pa
    import pyarrow.csv as pacsv

    try:
        table = pa.Table.from_pandas(frame, preserve_index=False)
    except (pa.ArrowInvalid, pa.ArrowTypeError, pa.ArrowNotImplementedError):
        frame = frame.copy()
        for col in [c for c in frame.columns if frame[c].dtype.kind == "O"]:
            frame[col] = [None if v is None or (isinstance(v, float) and np.isnan(v)) else str(v)
                          for v in frame[col]]  # fmt: skip
        table = pa.Table.from_pandas(frame, preserve_index=False)
    buf = io.BytesIO()
    pacsv.write_csv(table, buf, pacsv.WriteOptions(include_header=False))
    return buf.getvalue()


def _copy_frame(conn, schema, name: str, frame: pd.DataFrame) -> None:
    """Fill a table with ``frame``'s rows through COPY (CSV from :func:`_csv_bytes`)."""
    data = memoryview(_csv_bytes(frame))
    prep = conn.dialect.identifier_preparer
    cols = ", ".join(prep.quote_identifier(str(k)) for k in frame.columns)
    sql = f"COPY {_qualified(conn, schema, name)} ({cols}) FROM STDIN WITH (FORMAT csv)"
    with conn.connection.driver_connection.cursor() as cur, cur.copy(sql) as cp:
        for start in range(0, len(data), 1 << 20):
            cp.write(data[start : start + (1 << 20)])


def write_db_results(df: pd.DataFrame, url: str, *, overwrite: bool = False, _hook=None) -> str:
    """Write a results table: every column, a point geometry in EPSG:4326, a spatial index.

    The table is built under a temporary name and swapped in within one
    transaction (see the module docstring); ``_hook(conn)`` (tests) runs
    inside that transaction after the rows are written.  Returns the masked URL.
    """
    import shapely
    from geoalchemy2 import Geometry
    from sqlalchemy import text

    src = check_db_target(url, overwrite)
    long = [c for c in df.columns if len(str(c).encode()) > MAX_IDENT]
    if long:
        raise InputError("output", f"column name {str(long[0])[:40]!r}... is longer than "
                         f"PostgreSQL's {MAX_IDENT} bytes", "a file output, or shorter input column names")  # fmt: skip
    lowered = [str(c).lower() for c in df.columns]
    gname = RESULT_GEOMETRY
    while gname in lowered:
        gname = "neve_" + gname
    lon = pd.to_numeric(df["site_lon"], errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    lat = pd.to_numeric(df["site_lat"], errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    pts = shapely.points(lon, lat)
    pts[np.isnan(lon) | np.isnan(lat)] = None
    table = df.reset_index(drop=True).copy()
    # hex EWKB text, which PostGIS reads as a geometry (through COPY, like every cell)
    table[gname] = shapely.to_wkb(shapely.set_srid(pts, 4326), hex=True, include_srid=True)
    schema, name = src.table
    tmp = f"{name[:40]}__neve_{secrets.token_hex(4)}"
    engine = _engine(src)
    try:
        with engine.begin() as conn:
            prep = conn.dialect.identifier_preparer
            # the table (types from pandas, the geometry typed, its spatial index), then the rows
            table.head(0).to_sql(tmp, conn, schema=schema, if_exists="fail", index=False,
                                 dtype={gname: Geometry("POINT", srid=4326)})  # fmt: skip
            _copy_frame(conn, schema, tmp, table)
            if _hook is not None:
                _hook(conn)
            old = _qualified(conn, schema, name)
            if _table_exists(conn, schema, name):
                if not overwrite:
                    raise InputError("output", f"{src.shown}: table {src.table_text!r} exists",
                                     "--overwrite to replace it")  # fmt: skip
                conn.execute(text(f"DROP TABLE {old}"))
            conn.execute(text(f"ALTER TABLE {_qualified(conn, schema, tmp)} RENAME TO "
                              f"{prep.quote_identifier(name)}"))  # fmt: skip
            for (idx,) in conn.execute(
                text("SELECT indexname FROM pg_indexes WHERE tablename = :t"
                     + (" AND schemaname = :s" if schema else " AND schemaname = current_schema()")),
                {"t": name, "s": schema},
            ).fetchall():  # fmt: skip
                if tmp in idx:
                    new = idx.replace(tmp, name)[:MAX_IDENT]
                    q = _qualified(conn, schema, idx)
                    conn.execute(text(f"ALTER INDEX {q} RENAME TO {prep.quote_identifier(new)}"))
            have = conn.execute(text(
                "SELECT count(*) FROM pg_indexes WHERE tablename = :t AND indexdef ILIKE '%gist%'"
            ), {"t": name}).scalar()  # fmt: skip
            if not have:
                conn.execute(text(f"CREATE INDEX ON {_qualified(conn, schema, name)} "
                                  f"USING gist ({prep.quote_identifier(gname)})"))  # fmt: skip
    except InputError:
        raise
    except Exception as exc:
        raise _db_error(exc, src, "output") from None
    finally:
        engine.dispose()
    return src.shown
