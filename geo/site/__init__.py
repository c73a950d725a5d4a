"""One site: coordinates, elevation, geocoding, resolution against the layers."""
