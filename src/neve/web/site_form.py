"""The site page's form -> the keys of ``POST /api/site`` (one reading for both).

Field names are the request keys (``at``, ``elevation``, ``shape``,
``eave_to_ridge`` ...); a blank field is a key not given.  Roof parts are
rows named ``step-0-height``, ``parapet-1-upwind_length``, ``projection-0-name``
(their keys: :data:`neve.engine.roof_spec.STEP_KEYS` and its siblings), the
overhang ``overhang_length``, the yes/no options ``yes``/``no``.  The
title-block fields go to the package only.
"""

from __future__ import annotations

import re

from neve.engine.errors import InputError
from neve.engine.roof_spec import PARAPET_KEYS, PROJECTION_KEYS, STEP_KEYS
from neve.web.asks import SITE_REQUEST_KEYS

#: roof parts given as rows, and the keys of each
PART_KEYS = {"step": STEP_KEYS, "parapet": PARAPET_KEYS, "projection": PROJECTION_KEYS}

#: the package's title block (``neve site --job ...``)
TITLE_BLOCK_KEYS = ("job", "prepared_by", "checked_by", "revision")

_YES_NO = {"ventilated", "unobstructed", "prismatic", "eave_abutted"}
_ROW = re.compile(r"^(step|parapet|projection)-(\d{1,3})-([a-z_]+)$")


def form_request(values: dict[str, str]) -> tuple[dict, dict]:
    """(``POST /api/site`` body, title block) of the site form's ``values``."""
    body: dict = {}
    roof: dict = {}
    rows: dict[str, dict[int, dict]] = {}
    title = {}
    for key, raw in values.items():
        value = raw.strip()
        if value == "":
            continue
        row = _ROW.match(key)
        if row:
            part, index, name = row.group(1), int(row.group(2)), row.group(3)
            if name not in PART_KEYS[part]:
                raise InputError(f"{part}[{index}].{name}", "is not a key of a roof " + part,
                                 ", ".join(PART_KEYS[part]))  # fmt: skip
            rows.setdefault(part, {}).setdefault(index, {})[name] = value
        elif key == "overhang_length":
            roof["overhang"] = {"length": value}
        elif key in TITLE_BLOCK_KEYS:
            title[key] = value
        elif key in _YES_NO:
            if value not in ("yes", "no"):
                raise InputError(key, f"{value!r} given", "yes, no or not stated")
            body[key] = value == "yes"
        elif key in SITE_REQUEST_KEYS and key != "roof":
            body[key] = value
        elif key == "locate":
            continue  # the form's own switch (coordinates or address)
        else:
            raise InputError(key, "is not a field of the site form", "the form's own fields")
    for part, by_index in rows.items():
        roof[part] = [by_index[i] for i in sorted(by_index)]
    if roof:
        body["roof"] = roof
    if values.get("locate") == "address":
        body.pop("at", None)
    elif values.get("locate") == "at":
        body.pop("address", None)
    return body, title
