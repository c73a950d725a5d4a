"""Exceptions shared by every part of neve.

One base class, :class:`NeveError`, and named subclasses.  Each carries the
process exit code the command-line interface uses for it, so the CLI never
has to guess: bad input and unreadable layers exit with 2, anything else
with 1.  Warnings about a result are never raised or printed; they travel as
flags inside the result.
"""

from __future__ import annotations


class NeveError(Exception):
    """Base class of all errors neve raises on purpose."""

    exit_code = 1


class InputError(NeveError, ValueError):
    """A value supplied by the user is malformed, out of range or unknown.

    Parameters
    ----------
    field : str
        The name of the input field as the user wrote it (``pg``, ``slope``,
        ``step[0].height``, ...).
    problem : str
        What is wrong with the value.
    accepted : str, optional
        What would have been accepted.
    """

    exit_code = 2

    def __init__(self, field: str, problem: str, accepted: str | None = None):
        self.field = field
        self.problem = problem
        self.accepted = accepted
        text = f"{field}: {problem}"
        if accepted:
            text += f"; accepted: {accepted}"
        super().__init__(text)


class LayerError(NeveError):
    """A zone layer, its sidecar or a DEM cannot be read or is malformed."""

    exit_code = 2


class MissingDataError(NeveError):
    """A value the computation needs is not available (e.g. no elevation)."""

    exit_code = 2


class UnsupportedError(InputError):
    """The request is understood but not covered by neve (e.g. a curved roof)."""
