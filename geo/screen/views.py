"""The zone layers of a screening run as the portfolio map draws them, around its sites.

``neve screen --map`` and the portfolio page of ``neve serve`` both take
these views (:func:`zone_views`), so the two maps show the same zones.
"""

from __future__ import annotations

import math

import numpy as np


def zone_views(layers, results) -> list[dict]:
    """The views of the ground-load layers used, around the screened sites.

    Parameters
    ----------
    layers : list of neve.geo.layers.model.Layer
        The run's layers (``ScreenRun.layers``); W2 layers (fractions, not loads) are left out.
    results : pandas.DataFrame
        The map's table of sites, with ``lat`` and ``lon`` [degrees].
    """
    lat = np.asarray(results["lat"], dtype=float)
    lon = np.asarray(results["lon"], dtype=float)
    ok = np.isfinite(lat) & np.isfinite(lon)
    if not ok.any():
        return []
    s, n, w, e = lat[ok].min(), lat[ok].max(), lon[ok].min(), lon[ok].max()
    centre = ((s + n) / 2, (w + e) / 2)
    half = max(n - s, (e - w) * math.cos(math.radians(centre[0]))) / 2 * 111_320.0
    radius = min(half * 1.3 + 5_000.0, 3_000_000.0)
    views = []
    for layer in layers or []:
        if getattr(layer, "quantity", "pg") not in (None, "pg"):
            continue  # a W2 layer is not a load: not drawn under the load bands
        views.append(layer.view(center=centre, radius_m=radius))
    return views
