"""Zone layers: sidecar, rules, formulas, vector and raster look-up, layer check."""
