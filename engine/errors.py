"""Exceptions shared by every part of neve.

One base class, :class:`NeveError`, and named subclasses.  Each carries the
process exit code the command-line interface uses for it, so the CLI never
has to guess: bad input and unreadable layers exit with 2, anything else
with 1.  Warnings about a result are never raised or printed; they travel as
flags inside the result.

Everything neve raises on purpose derives from :class:`NeveError` (a test reads
the source to hold that: ``tests/contract/test_house.py``). Where a caller may
already catch a built-in exception, the subclass keeps it as a second base
(:class:`InputError` is also a ``ValueError``), so ``except ValueError`` still
works. The named subclasses elsewhere: ``neve.geo.layers.sidecar.SidecarError``,
``neve.geo.layers.formula.ExpressionError``, ``neve.geo.layers.rules.LayerValueError``
(layer errors), ``neve.geo.site.geocode.GeocodeError``,
``neve.geo.screen.geocode_rows.GeocodeMiss`` and the safe writer's
``neve.safe_write.TargetKindError``.
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


class OutputError(NeveError):
    """An output cannot be made as asked (e.g. a self-contained map that still links a file).

    Not the user's input at fault: exit code 1.
    """

    exit_code = 1
