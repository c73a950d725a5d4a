"""One validating lookup for every string option.

Every choice a user makes by name (``surface=``, ``thermal=``, ``risk=``,
``rule=`` ...) goes through :func:`choose`, so that an unknown value always
gives the same kind of message: the field, the value, and the accepted list.

>>> choose("risk", "ii", {"I": 0.8, "II": 1.0})
1.0
>>> choose("risk", "V", {"I": 0.8, "II": 1.0})
Traceback (most recent call last):
...
neve.engine.errors.InputError: risk: 'V' is not accepted; accepted: I, II
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TypeVar

from neve.engine.errors import InputError

T = TypeVar("T")


def _norm(text: str) -> str:
    return str(text).strip().lower().replace("_", "-").replace(" ", "-")


def choose(field: str, value: object, options: Mapping[str, T]) -> T:
    """Return ``options[value]``, matching case-, space- and underscore-blind.

    Parameters
    ----------
    field : str
        Name of the input field, used in the error message.
    value : str
        The user's choice.
    options : Mapping[str, T]
        The registry of accepted names.

    Raises
    ------
    InputError
        When ``value`` matches none of the names; the message lists them.
    """
    wanted = _norm(value)
    for key, item in options.items():
        if _norm(key) == wanted:
            return item
    raise InputError(field, f"{value!r} is not accepted", ", ".join(options))


def choose_key(field: str, value: object, options: Mapping[str, object] | list[str]) -> str:
    """Like :func:`choose` but return the canonical key itself."""
    keys = list(options)
    return choose(field, value, {k: k for k in keys})
