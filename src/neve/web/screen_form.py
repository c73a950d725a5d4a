"""The text fields of a portfolio upload -> the options of :func:`neve.geo.screen.run.run_screen`.

Fields (all optional): ``standard`` (``--standard``), ``roof`` (the text of a
ROOF.toml, ``[profile.NAME]`` tables allowed, or the same as a JSON object),
``layer`` (names of the server's layers, comma-separated, most local first),
``dem`` (``demo``, the server's DEM by name, or ``true``) and ``dem_units``.
"""

from __future__ import annotations

import json
import tomllib

from neve.engine.errors import InputError

#: the text fields of ``POST /api/screen`` beside the file ``sites``
SCREEN_FIELDS = ("standard", "roof", "layer", "dem", "dem_units")


def roof_text_data(text: str) -> dict:
    """A ROOF.toml given as text (or as a JSON object) -> its mapping."""
    stripped = text.strip()
    if stripped.startswith("{"):
        try:
            data = json.loads(stripped)
        except ValueError as exc:
            raise InputError(
                "roof", f"not valid JSON ({exc})", "a ROOF.toml or a JSON object"
            ) from None
    else:
        try:
            data = tomllib.loads(stripped)
        except tomllib.TOMLDecodeError as exc:
            raise InputError("roof", f"not valid TOML ({exc})", "the text of a ROOF.toml") from None
    if not isinstance(data, dict):
        raise InputError("roof", "not a table of roof keys", "a ROOF.toml or a JSON object")
    return data


def screen_options(fields: dict[str, str], config) -> dict:
    """Check the fields (names a field the run does not take) and read them."""
    for key in fields:
        if key not in SCREEN_FIELDS:
            raise InputError(
                key, "is not a field of POST /api/screen", "sites, " + ", ".join(SCREEN_FIELDS)
            )
    values = {k: v.strip() for k, v in fields.items() if v.strip()}
    out: dict = {}
    if "standard" in values:
        from neve.engine.standards import get_standard

        out["standard"] = get_standard(values["standard"], field="standard")
    if "roof" in values:
        from neve.roof_file import roofs_from_mapping

        out["roof"] = roofs_from_mapping(roof_text_data(values["roof"]))
    if "layer" in values:
        out["layers"] = config.pick_layers(
            [n.strip() for n in values["layer"].split(",") if n.strip()]
        )
    else:
        out["layers"] = config.pick_layers(None)
    if "dem" in values:
        dem = values["dem"]
        out["dem"] = config.pick_dem(True if dem.lower() == "true" else dem)
    if "dem_units" in values:
        from neve.geo.site.elevation import canonical_dem_unit

        out["dem_units"] = canonical_dem_unit(values["dem_units"])
    elif out.get("dem") not in (None, "demo"):
        out["dem_units"] = config.dem_units
    return out
