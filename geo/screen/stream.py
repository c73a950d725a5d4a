"""Streamed screening: a site file read in chunks, results written as each chunk is done.

:func:`stream_screen` reads the site file in chunks of :func:`chunk_rows` rows
(:func:`neve.geo.screen.read.iter_site_chunks`), screens each chunk as
:func:`neve.geo.screen.run.run_screen` screens a whole file
(:func:`neve.geo.screen.run.screen_sites`, under one plan: the layers, DEM and
roofs are loaded once), and appends its rows to the output: Parquet row groups,
CSV lines, GeoPackage transactions.  The output is built under a temporary name
(:func:`neve.safe_write.atomic_file`) and renamed into place only when every
chunk is written, so a run that fails or is killed leaves no partial output at
the target.  Memory is bounded by the chunk, not by the file.

What needs the whole file is done before or after the chunks: repeated site ids
(``duplicate_site_id``) are counted over the whole file in a first pass that
reads only when the file has more than one chunk; the summary is the sum of the
chunks'.  Every row comes back once, in input order, with the cells and columns
the in-memory path gives it (the tests compare the two row for row).

XLSX results are not streamed (one sheet, written whole, at most
:data:`neve.geo.screen.outputs.XLSX_MAX_ROWS` rows).
"""

from __future__ import annotations

import os
import time
from pathlib import Path

import numpy as np
import pandas as pd

from neve.engine.errors import InputError, NeveError

#: environment variable: rows per chunk of a streamed ``neve screen`` run
CHUNK_ROWS_ENV = "NEVE_CHUNK_ROWS"
#: rows per chunk when ``NEVE_CHUNK_ROWS`` is not set
CHUNK_ROWS = 1_000_000
#: rows per chunk of the first pass that reads the site ids of the whole file
ID_PASS_ROWS = 2_000_000
#: result formats written chunk by chunk
STREAMED_FORMATS = ("csv", "parquet", "gpkg")


def chunk_rows() -> int:
    """Rows per chunk: ``NEVE_CHUNK_ROWS`` (a positive whole number) or :data:`CHUNK_ROWS`."""
    env = os.environ.get(CHUNK_ROWS_ENV, "").strip()
    if not env:
        return CHUNK_ROWS
    if not env.isdigit() or int(env) < 1:
        raise InputError(CHUNK_ROWS_ENV, f"{env!r} is not a positive whole number", "1, 2, ...")
    return int(env)


def _chunks_with_duplicates(path: Path, rows: int):
    """The chunks of the site file, each with its rows' whole-file ``duplicate`` marks (or None).

    The marks are computed only when the file has more than one chunk and a
    ``site_id`` column (a first pass over the file); otherwise the chunk's own
    count is the whole file's.
    """
    from neve.geo.screen.read import (
        SITE_ID_NAMES,
        find_column,
        iter_site_chunks,
        iter_site_column,
    )

    chunks = iter_site_chunks(path, rows)
    first = next(chunks)
    second = next(chunks, None)
    if second is None:
        yield first, None
        return
    col = find_column(first[0].columns, SITE_ID_NAMES)
    repeated = None
    if col is not None:  # only the id column is read, in large chunks
        repeated = _repeated_ids(iter_site_column(path, col, max(rows, ID_PASS_ROWS)))

    def marks(frame):
        if repeated is None:
            return None
        return _is_repeated(frame[col], repeated)

    yield first, marks(first[0])
    yield second, marks(second[0])
    for chunk in chunks:
        yield chunk, marks(chunk[0])


def _arrow_ids(ids: pd.Series):
    import pyarrow as pa

    try:
        return pa.array(ids, from_pandas=True)
    except (pa.ArrowInvalid, pa.ArrowTypeError):  # mixed cells: compared as text
        return pa.array(ids.map(lambda v: None if pd.isna(v) else str(v)), type=pa.string())


def _repeated_ids(columns):
    """The site ids that appear on more than one row of the file (an Arrow array)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    parts = [_arrow_ids(ids) for ids in columns]
    types = {p.type for p in parts if not pa.types.is_null(p.type)}
    kind = types.pop() if len(types) == 1 else (pa.string() if types else pa.null())
    chunks = []  # the Arrow arrays of every part (a part may come as a ChunkedArray)
    for p in parts:
        p = p if p.type == kind else p.cast(kind)
        chunks.extend(p.chunks if isinstance(p, pa.ChunkedArray) else [p])
    ids = pa.chunked_array(chunks, type=kind)
    if pa.types.is_null(ids.type):
        return pa.array([], type=pa.null())
    if pa.types.is_string(ids.type) or pa.types.is_binary(ids.type):
        ids = ids.cast(pa.large_string() if pa.types.is_string(ids.type) else pa.large_binary())
    # sorted, each id beside its equals: a fraction of the time and memory of counting
    # ten million distinct ids in a hash table (pyarrow's value_counts)
    arr = ids.combine_chunks()
    if len(arr) < 2:
        return arr.slice(0, 0)
    ranked = arr.take(pc.array_sort_indices(arr, null_placement="at_end"))
    same = pc.fill_null(pc.equal(ranked.slice(1), ranked.slice(0, len(arr) - 1)), False)
    return pc.unique(pc.filter(ranked.slice(1), same))


def _is_repeated(ids: pd.Series, repeated) -> np.ndarray:
    """True where a chunk's site id is one of the file's repeated ids (never a blank one)."""
    import pyarrow.compute as pc

    arr = _arrow_ids(ids)
    if arr.type != repeated.type:
        arr = arr.cast(repeated.type)
    out = pc.fill_null(pc.is_in(arr, value_set=repeated), False).to_numpy(zero_copy_only=False)
    out = np.asarray(out, dtype=bool)
    if out.any():  # blank ids are not ids
        out &= (ids.astype(str).str.strip() != "").to_numpy()
    return out


class _Writer:
    """Appends result chunks to one temporary file in a streamed format."""

    def __init__(self, fmt: str, tmp: Path, csv_raw: bool):
        self.fmt, self.tmp, self.csv_raw = fmt, tmp, csv_raw
        self.columns: list | None = None
        self.schema = None
        self.parquet = None
        self.fh = None
        self.counts = {"csv_cells_neutralised": 0, "cell_escaped": 0, "cell_truncated": 0}

    def write(self, df: pd.DataFrame, geometry) -> None:
        if self.columns is None:
            self.columns = list(df.columns)
        elif list(df.columns) != self.columns:
            missing = [c for c in self.columns if c not in df.columns]
            extra = [c for c in df.columns if c not in self.columns]
            if extra:
                raise NeveError(f"a chunk of the results has columns the first had not: {extra}")
            for c in missing:  # a column only some chunks have (e.g. all rows error)
                df[c] = None
            df = df[self.columns]
        getattr(self, f"_{self.fmt}")(df, geometry)

    def _parquet(self, df, geometry) -> None:
        import pyarrow.parquet as pq

        from neve.geo.screen.outputs import geoparquet_table, input_geometry_table

        if geometry is not None:
            table = input_geometry_table(df, geometry)
        else:
            table = geoparquet_table(df)
        if self.schema is None:
            self.schema = _stable_schema(table.schema)
            self.parquet = pq.ParquetWriter(self.tmp, self.schema)
        self.parquet.write_table(_conform(table, self.schema))

    def _csv(self, df, geometry) -> None:
        from neve.geo.screen.outputs import _for_text, write_csv_part

        if self.fh is None:
            self.fh = open(self.tmp, "wb")  # noqa: SIM115 (closed in close())
            header = True
        else:
            header = False
        changed = write_csv_part(_for_text(df, geometry), self.fh, raw=self.csv_raw,
                                 header=header)  # fmt: skip
        self.counts["csv_cells_neutralised"] += changed

    def _gpkg(self, df, geometry) -> None:
        from neve.geo.screen.outputs import write_gpkg_part

        counts = write_gpkg_part(df, geometry, self.tmp, append=self.fh is not None)
        self.fh = True
        for k, v in counts.items():
            self.counts[k] += v

    def close(self) -> None:
        if self.parquet is not None:
            self.parquet.close()
        if self.fh is not None and self.fh is not True:
            self.fh.close()


def _stable_schema(schema):
    """The first chunk's schema made to hold every chunk: text for all-empty columns,
    dictionaries with 32-bit indices."""
    import pyarrow as pa

    fields = []
    for f in schema:
        t = f.type
        if pa.types.is_null(t):
            t = pa.string()
        elif pa.types.is_dictionary(t):
            t = pa.dictionary(pa.int32(), t.value_type)
        fields.append(pa.field(f.name, t, nullable=True, metadata=f.metadata))
    return pa.schema(fields, metadata=schema.metadata)


def _conform(table, schema):
    """A chunk's table cast to the run's schema (a column another chunk typed differently)."""
    import pyarrow as pa

    if table.schema.equals(schema, check_metadata=False):
        return table.replace_schema_metadata(schema.metadata)
    cols = []
    for f in schema:
        col = table.column(f.name)
        if not col.type.equals(f.type):
            if pa.types.is_dictionary(col.type) and not pa.types.is_dictionary(f.type):
                col = col.cast(col.type.value_type)
            try:
                col = col.cast(f.type)
            except (pa.ArrowInvalid, pa.ArrowNotImplementedError, pa.ArrowTypeError):
                col = pa.chunked_array(
                    [pa.array(col.to_pandas().map(lambda v: None if pd.isna(v) else str(v)),
                              type=pa.string())]).cast(f.type)  # fmt: skip
        cols.append(col)
    return pa.Table.from_arrays(cols, schema=schema)


def merge_info(infos: list[dict]) -> dict:
    """The layout of a file read in chunks: counts added, the first chunk's words kept."""
    out: dict = {}
    for info in infos:
        for k, v in info.items():
            if k in out and isinstance(v, int) and not isinstance(v, bool) and k != "header_line":
                out[k] += v
            else:
                out.setdefault(k, v)
    return out


def merge_summaries(parts: list[dict]) -> dict:
    """One summary from the summaries of the chunks (counts added, ranges widened)."""
    out = dict(parts[0])
    out["rows"] = sum(p["rows"] for p in parts)
    for key in ("status", "flags"):
        total: dict = {}
        for p in parts:
            for k, v in p[key].items():
                total[k] = total.get(k, 0) + v
        out[key] = dict(sorted(total.items())) if key == "flags" else total
    for key in ("pg_psf", "sk_kpa"):  # the ground-load range (sk_kpa: a run on sk layers)
        if key not in out:
            continue
        ranges = [p[key] for p in parts if p.get(key)]
        out[key] = (
            {"min": min(r["min"] for r in ranges), "max": max(r["max"] for r in ranges)}
            if ranges
            else None
        )
    if "on_record" in out:
        recs = [p["on_record"] for p in parts]
        rec = dict(recs[0])
        for k in ("given", "compared", "exceeds_record"):
            rec[k] = sum(r[k] for r in recs)
        ratios = [r["load_ratio"] for r in recs if r.get("load_ratio")]
        rec["load_ratio"] = (
            {"min": min(r["min"] for r in ratios), "max": max(r["max"] for r in ratios)}
            if ratios
            else None
        )
        out["on_record"] = rec
    return out


def stream_screen(
    sites: str | Path,
    output: str | Path,
    *,
    overwrite: bool = False,
    csv_raw: bool = False,
    progress: bool = False,
    rows: int | None = None,
    _chunk_hook=None,
    **options,
) -> dict:
    """Screen a site file chunk by chunk into ``output``; return the run summary.

    Parameters
    ----------
    sites : str or Path
        A CSV, XLSX, GeoPackage or Parquet site file.
    output : str or Path
        A ``.csv``, ``.parquet`` or ``.gpkg`` target (see :data:`STREAMED_FORMATS`).
    overwrite, csv_raw
        As for :func:`neve.geo.screen.outputs.write_results`.
    progress : bool
        Show a progress bar of the sites screened on stderr.
    rows : int, optional
        Rows per chunk (:func:`chunk_rows` when omitted).
    **options
        The options of :func:`neve.geo.screen.run.plan_screen` (``layers``,
        ``dem``, ``roof``, ``standard``, ...).
    """
    from neve.geo.screen.local import progress_bar
    from neve.geo.screen.outputs import result_format, summarize
    from neve.geo.screen.run import plan_screen, screen_sites
    from neve.geo.screen.sitefile import parse_sites
    from neve.safe_write import atomic_file

    t0 = time.perf_counter()
    fmt = result_format(output)
    if fmt not in STREAMED_FORMATS:
        raise InputError("output", f"a .{fmt} output is written whole",
                         ", ".join(f".{f}" for f in STREAMED_FORMATS))  # fmt: skip
    rows = chunk_rows() if rows is None else max(1, int(rows))
    plan = plan_screen(progress=False, **options)  # layers and roofs loaded once
    summaries: list[dict] = []
    infos: list[dict] = []
    timings: dict[str, float] = {}
    bar = progress_bar(_total_rows(sites), progress, "screening")
    try:
        with atomic_file(output, overwrite=overwrite, field="output") as tmp:
            writer = _Writer(fmt, tmp, csv_raw)
            try:
                clock = [t0]

                def lap(name: str) -> None:
                    now = time.perf_counter()
                    timings[name] = timings.get(name, 0.0) + now - clock[0]
                    clock[0] = now

                lap("layers")
                for (frame, geometry), repeated in _chunks_with_duplicates(Path(sites), rows):
                    infos.append(dict(frame.attrs["neve_read_notes"].info))
                    lap("read")
                    if len(frame) == 0:
                        continue
                    site = parse_sites(frame, geometry, duplicates=repeated)
                    lap("parse")
                    results = screen_sites(plan, site, lap)
                    writer.write(results, site.geometry)
                    lap("write")
                    summaries.append(
                        summarize(results, plan.layers if not summaries else (), engine=plan.engine)
                    )
                    lap("summary")
                    bar.update(len(frame))
                    if _chunk_hook is not None:  # tests: interrupt a run between chunks
                        _chunk_hook(len(summaries), tmp)
            finally:
                writer.close()
            if not summaries:
                raise InputError(
                    "sites", f"{str(sites)!r} has no rows", "a table with at least one site"
                )
    finally:
        bar.close()
    summary = merge_summaries(summaries)
    counts = writer.counts
    for name in ("cell_escaped", "cell_truncated"):
        if counts[name]:
            summary["flags"][name] = summary["flags"].get(name, 0) + counts[name]
            summary["flags"] = dict(sorted(summary["flags"].items()))
    if fmt == "csv":
        summary["csv_cells_neutralised"] = counts["csv_cells_neutralised"]
    summary["input"] = merge_info(infos)
    summary["seconds"] = round(time.perf_counter() - t0, 3)
    summary["timings_s"] = {k: round(v, 3) for k, v in timings.items()}
    summary["chunks"] = len(summaries)
    return summary


def _total_rows(sites) -> int | None:
    """The number of rows when the file says it without being read (Parquet, GeoPackage)."""
    p = Path(sites)
    try:
        if p.suffix.lower() in (".parquet", ".geoparquet", ".pq"):
            import pyarrow.parquet as pq

            return int(pq.ParquetFile(p).metadata.num_rows)
        if p.suffix.lower() == ".gpkg":
            import pyogrio

            return int(pyogrio.read_info(p)["features"])
    except Exception:  # the reader says what is wrong with the file
        return None
    return None
