"""Strict JSON for every output of neve: no NaN, no Infinity, ever.

Python's ``json`` writes ``NaN`` and ``Infinity``, which strict JSON
(RFC 8259) does not have and many readers refuse.  :func:`finite_copy`
replaces each non-finite number by ``null`` and says so: the nearest object
on the way to it that carries a ``flags`` list gets the flag
``non_finite_value`` and a ``non_finite_paths`` list naming the values (the
top object gets them when no object on the way has ``flags``).
:func:`dumps` does that and then writes with ``allow_nan=False``, so a value
that slipped past the copy fails loudly instead of writing bad JSON.

Pure: no file is read or written here.

>>> dumps({"pg": float("nan"), "flags": []})
'{"pg": null, "flags": ["non_finite_value"], "non_finite_paths": ["$.pg"]}'
>>> dumps([1.0, 2])
'[1.0, 2]'
"""

from __future__ import annotations

import json
import math
from collections.abc import Mapping

import numpy as np

#: the flag of an object in which a NaN or infinite value was replaced by null
NON_FINITE_FLAG = "non_finite_value"


def _clean(obj, path: str):
    """(copy, paths of non-finite values not yet reported by an inner ``flags`` object)."""
    if isinstance(obj, np.ndarray):
        obj = obj.tolist()
    elif isinstance(obj, np.generic):
        obj = obj.item()
    if isinstance(obj, bool) or obj is None or isinstance(obj, (str, int)):
        return obj, []
    if isinstance(obj, float):
        if math.isfinite(obj):
            return obj, []
        return None, [path]
    if isinstance(obj, Mapping):
        out, pending = {}, []
        for key, value in obj.items():
            out[key], bad = _clean(value, f"{path}.{key}")
            pending += bad
        if pending and isinstance(out.get("flags"), list):
            _mark(out, pending)
            pending = []
        return out, pending
    if isinstance(obj, (list, tuple)):
        out, pending = [], []
        for i, value in enumerate(obj):
            item, bad = _clean(value, f"{path}[{i}]")
            out.append(item)
            pending += bad
        return out, pending
    return obj, []  # anything else: json.dumps decides (and refuses what it cannot write)


def _mark(obj: dict, paths: list[str]) -> None:
    flags = list(obj.get("flags") or [])
    was_sorted = flags == sorted(flags, key=str)
    if NON_FINITE_FLAG not in flags:
        flags.append(NON_FINITE_FLAG)
        if was_sorted:
            flags.sort(key=str)
    obj["flags"] = flags
    obj["non_finite_paths"] = list(obj.get("non_finite_paths") or []) + paths


def finite_copy(obj):
    """A copy of ``obj`` for JSON: NaN and infinities become None, and are flagged.

    numpy scalars and arrays become Python numbers and lists.  Returns the
    copy; ``obj`` itself is not changed.  A top-level list has no place for
    the flag: its values still become None.
    """
    out, pending = _clean(obj, "$")
    if pending and isinstance(out, dict):
        _mark(out, pending)
    return out


def dumps(obj, **kwargs) -> str:
    """``json.dumps`` of :func:`finite_copy` (obj), with ``allow_nan=False``."""
    kwargs["allow_nan"] = False
    return json.dumps(finite_copy(obj), **kwargs)
