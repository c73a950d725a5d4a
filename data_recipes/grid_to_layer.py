"""Recipe: a published grid of ground snow loads -> a neve raster layer.

Some jurisdictions publish their ground snow loads as a grid.  This recipe
takes any grid GDAL reads (GeoTIFF, ASCII grid, ...), optionally converts
its values (``--scale``, e.g. 20.885 for kPa -> psf, or keep the source unit
and say so with ``--value-units``), marks cells holding a "study required"
code (``--study-value``) in a companion mask raster, turns other codes
(``--nodata``) into nodata, and writes a compressed GeoTIFF layer with its
sidecar, then runs ``neve layer check`` on the result.

Example::

    python data_recipes/grid_to_layer.py --grid published.asc --crs EPSG:4326 \\
        --study-value -1 --out my_grid.tif --name "National ground snow grid" \\
        --jurisdiction "My country" --standard "ASCE 7-16" --value-units psf \\
        --elevation-units ft --source "National map, 2023 edition" \\
        --license "open data" --date 2023-01-01

The exit code is that of ``neve layer check``.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from table_to_layer import run_check, sidecar_args, sidecar_meta, write_sidecar  # noqa: E402

NODATA = -9999.0


def build_grid(args: argparse.Namespace) -> Path:
    """Write the raster layer, its optional study mask and its sidecar."""
    import rasterio

    with rasterio.open(args.grid) as src:
        data = src.read(args.band, masked=True).astype("float64")
        crs = src.crs or (rasterio.crs.CRS.from_user_input(args.crs) if args.crs else None)
        if crs is None:
            sys.exit("the grid has no CRS; give --crs (e.g. EPSG:4326)")
        transform = src.transform
    vals = np.ma.filled(data, np.nan)
    study = np.zeros(vals.shape, dtype="uint8")
    if args.study_value is not None:
        study = np.isclose(vals, args.study_value).astype("uint8")
        vals[study.astype(bool)] = np.nan
    for code in args.nodata or []:
        vals[np.isclose(vals, code)] = np.nan
    vals = vals * args.scale
    out = Path(args.out)
    profile = {
        "driver": "GTiff", "width": vals.shape[1], "height": vals.shape[0], "count": 1,
        "crs": crs, "transform": transform, "compress": "deflate",
    }  # fmt: skip
    with rasterio.open(out, "w", dtype="float32", nodata=NODATA, **profile) as ds:
        ds.write(np.where(np.isfinite(vals), vals, NODATA).astype("float32"), 1)
        ds.set_band_unit(1, args.value_units)
    meta = sidecar_meta(args)
    if study.any():
        mask = out.with_name(out.stem + "_study.tif")
        with rasterio.open(mask, "w", dtype="uint8", nodata=None, **profile) as ms:
            ms.write(study, 1)
        meta["study_mask"] = mask.name
    write_sidecar(out, meta)
    print(f"wrote {out}" + (f" and {meta['study_mask']}" if "study_mask" in meta else ""))
    return out


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--grid", required=True, help="published grid (any GDAL raster)")
    ap.add_argument("--band", type=int, default=1)
    ap.add_argument("--crs", help="CRS when the grid does not declare one")
    ap.add_argument("--scale", type=float, default=1.0, help="multiply values by this")
    ap.add_argument("--study-value", type=float, help="cell code meaning study required")
    ap.add_argument("--nodata", type=float, action="append", help="extra code(s) for no value")
    ap.add_argument("--out", required=True, help="output GeoTIFF")
    sidecar_args(ap)
    args = ap.parse_args(argv)
    return run_check(build_grid(args))


if __name__ == "__main__":
    sys.exit(main())
