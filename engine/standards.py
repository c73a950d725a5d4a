"""The registry of design standards: the one socket every standard plugs into.

A standard is a sub-package of the engine (``neve.engine.asce7_16`` today)
that builds one :class:`Standard` and hands it to :func:`register`.  The rest
of neve — the command line, one site, screening, the maps and the
calculation package — asks the registry (:func:`get_standard`), never a
standard's own modules, and never names a standard's clauses: provision
labels come from :meth:`Standard.ref`.

A :class:`Standard` declares

* its ``id`` and the names users type (``asce7-16``, ``ASCE 7-16``; matched
  without regard to case, spaces or ``/SEI``);
* the ``standard`` strings of zone layers whose values it may take
  (``layer_standards``) and the site ``quantities`` it needs by name, which
  geo reads from a layer by the sidecar's ``quantity``;
* its unit system, its roof options on top of the shared roof geometry (as
  :class:`RoofOption` data the CLI and docs can use) and its cautions;
* ``analyze`` (one site, every case with steps and provisions), the
  vectorized ``uniform`` path and ``screening_flags`` for screening;
* its verification cases (:class:`VerificationCase`), run by
  :func:`run_verification` (``neve verify``) and by the test suite.

The standards that come with neve are imported on the first lookup
(:data:`BUILTIN`), so ``import neve`` stays cheap.  This module is pure: no
file I/O, no prints.
"""

from __future__ import annotations

import importlib
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from neve.engine.errors import InputError, NeveError

__all__ = [
    "BUILTIN",
    "DEFAULT",
    "RoofOption",
    "Standard",
    "VerificationCase",
    "available",
    "find_standard",
    "get_standard",
    "norm_name",
    "register",
    "run_verification",
    "site_quantities",
    "standards",
    "verification_text",
]

#: id of the standard used when none is named
DEFAULT = "asce7-16"
#: modules that register the standards shipped with neve (imported on first lookup)
BUILTIN = (
    "neve.engine.asce7_16.standard",
    "neve.engine.asce7_22.standard",
    "neve.engine.en1991_1_3.standard",
)

_REGISTRY: dict[str, Standard] = {}
_loaded = False


def norm_name(name: str) -> str:
    """A standard's name as compared: case folded, no spaces, no ``/SEI``.

    >>> norm_name("ASCE/SEI 7-16"), norm_name(" asce 7-16 "), norm_name("asce7-16")
    ('asce7-16', 'asce7-16', 'asce7-16')
    """
    return "".join(str(name).split()).casefold().replace("/sei", "")


@dataclass(frozen=True)
class RoofOption:
    """One roof option a standard adds to the shared roof geometry, as data.

    Parameters
    ----------
    name : str
        The ROOF.toml key (``ct``); the command-line option is ``--`` plus the
        name with ``-`` for ``_``.
    kind : {"choice", "number", "yes/no", "length", "slope", "text", "parameter set"}
        What the option takes (``neve.engine.roof_spec.OPTION_KINDS``); a
        ``parameter set`` is a name of one of the standard's shipped sets
        (:attr:`Standard.parameter_sets`) or a TOML file of one, read at the edge.
    help : str
        One line for ``--help`` and the docs (may name the standard's clauses).
    choices : tuple of str
        The accepted words of a ``choice``.
    opposite : str
        For ``yes/no``: the negative spelling (``unventilated``).
    """

    name: str
    kind: str
    help: str
    choices: tuple[str, ...] = ()
    opposite: str = ""

    @property
    def flag(self) -> str:
        """The command-line spelling, e.g. ``--eave-to-ridge``."""
        return "--" + self.name.replace("_", "-")


def _lookup(values: Mapping, key: str):
    """``values[key]``, or for ``name [unit]`` the ``unit`` entry of ``values[name]``.

    >>> _lookup({"pd": {"psf": 63.0, "kPa": 3.02}}, "pd [psf]"), _lookup({"Cs": 0.6}, "Cs")
    (63.0, 0.6)
    """
    if key in values:
        return values[key]
    name, _, unit = key.partition(" [")
    value = values.get(name)
    if unit and isinstance(value, Mapping):
        return value.get(unit.removesuffix("]"))
    return value


def _close(expected, computed, tol: float) -> bool:
    """Whether a computed value matches its expected value within ``tol``."""
    if isinstance(expected, bool) or expected is None or isinstance(expected, str):
        return computed == expected
    if isinstance(computed, bool) or not isinstance(computed, (int, float)):
        return False
    if not math.isfinite(float(computed)):
        return False
    return abs(float(computed) - float(expected)) <= tol


@dataclass(frozen=True)
class VerificationCase:
    """A published value (table cell, equation worked by hand) and how to compute it.

    Parameters
    ----------
    id : str
        Unique within the standard, e.g. ``table-7.3-1/B/fully``.
    source : str
        Where the expected value comes from: standard and clause, book and
        example number, article; "from memory" where the document was not at hand.
    inputs : mapping
        The inputs, as JSON-ready values (loads and lengths with units).
    expected : mapping
        Quantity name (with its unit in brackets, e.g. ``pd [psf]``) -> value;
        a number, or a word / yes-no for a choice the standard makes.
    tolerance : float or mapping
        Absolute tolerance of each number, in its unit (one number for all, or
        per quantity); words and yes/no must match exactly.
    compute : callable
        ``compute(inputs) -> mapping`` of the same quantity names.
    note : str
        The hand calculation or reading, for the manual.
    group : str
        The provision the manual files the case under (a table, an equation).
    """

    id: str
    source: str
    inputs: Mapping[str, Any]
    expected: Mapping[str, Any]
    tolerance: float | Mapping[str, float]
    compute: Callable[[Mapping[str, Any]], Mapping[str, Any]]
    note: str = ""
    group: str = ""

    def tolerances(self) -> dict[str, float]:
        """The absolute tolerance of every quantity (0 for words and yes/no)."""
        out = {}
        for key, value in self.expected.items():
            if isinstance(value, (bool, str)) or value is None:
                out[key] = 0.0
            elif isinstance(self.tolerance, Mapping):
                out[key] = float(self.tolerance[key])
            else:
                out[key] = float(self.tolerance)
        return out

    def run(self, standard: str) -> dict:
        """Compute the case: ``{id, standard, source, inputs, expected, computed, tolerance, ok}``.

        A computation that raises counts as a failure, with the error in ``error``.
        """
        tol = self.tolerances()
        error = None
        try:
            got = dict(self.compute(self.inputs))
        except Exception as exc:  # a verification run reports every failure, never stops
            got, error = {}, f"{type(exc).__name__}: {exc}"
        computed = {key: _lookup(got, key) for key in self.expected}
        ok = error is None and all(
            _close(self.expected[key], computed[key], tol[key]) for key in self.expected
        )
        out = {
            "id": self.id,
            "standard": standard,
            "group": self.group,
            "source": self.source,
            "inputs": dict(self.inputs),
            "expected": dict(self.expected),
            "computed": computed,
            "tolerance": tol,
            "ok": ok,
        }
        if self.note:
            out["note"] = self.note
        if error is not None:
            out["error"] = error
        return out


#: shapes of one physical form that the standards name differently (ASCE 7's curved
#: and sawtooth families, EN 1991-1-3's cylindrical and multi-span roofs)
_SAME_FORM = {"cylindrical": "curved", "curved": "cylindrical", "multi-span": "sawtooth",
              "sawtooth": "multi-span"}  # fmt: skip


@dataclass(frozen=True)
class Standard:
    """What a standard declares to the registry (see the module docstring).

    ``analyze(quantities, roof)`` takes the site quantities by name
    (``{"pg": 35.0}`` in the standard's load unit) and returns a result with
    ``to_json()``; ``uniform(quantities, roof)`` takes arrays and returns
    arrays; ``screening_flags(roof)`` the flags that go with ``uniform``.
    ``verification`` returns the cases (called once, on first use).
    """

    id: str
    title: str
    names: tuple[str, ...]
    layer_standards: tuple[str, ...]
    units: Mapping[str, str]
    quantities: tuple[str, ...]
    roof_options: tuple[RoofOption, ...]
    cautions: tuple[str, ...]
    provisions: Mapping[str, str]
    analyze: Callable[..., Any]
    uniform: Callable[..., dict]
    screening_flags: Callable[..., list]
    verification: Callable[[], Sequence[VerificationCase]]
    summary: str = ""
    #: the roof shapes of the shared vocabulary the standard covers (ASCE 7's by default)
    shapes: tuple[str, ...] = ("flat", "monoslope", "gable", "hip", "curved", "dome", "sawtooth")
    #: the package holding the standard's parameter sets (``<name>.toml`` files; read
    #: by ``neve.roof_file``, never by the engine); "" for none
    parameter_sets: str = ""
    _cases: list = field(default_factory=list, compare=False, repr=False)

    def check_roof(self, roof) -> None:
        """Refuse a roof this standard cannot work: a shape it does not cover, an option it lacks.

        A shape outside :attr:`shapes` is an ``UnsupportedError`` (exit 2) naming the
        shapes covered; a standard's own roof option (``roof.extra``) that this
        standard does not declare is an ``InputError`` naming it.
        """
        from neve.engine.errors import UnsupportedError

        shape = getattr(roof, "shape", None)
        if shape is not None and shape not in self.shapes:
            other = _SAME_FORM.get(shape)
            hint = (f"; a roof of this form is {other!r} in {self.title}"
                    if other in self.shapes else "")  # fmt: skip
            raise UnsupportedError(
                "shape", f"{self.title} in neve does not cover {shape!r} roofs{hint}",
                ", ".join(self.shapes),
            )  # fmt: skip
        names = {o.name for o in self.roof_options}
        for key in getattr(roof, "extra", {}) or {}:
            if key not in names:
                raise InputError(
                    key, f"{self.title} takes no roof option {key!r}",
                    ", ".join(sorted(names)) or "none",
                )  # fmt: skip

    def matches(self, name: str) -> bool:
        """Whether ``name`` is one of this standard's names (case and spaces aside)."""
        key = norm_name(name)
        return key in {norm_name(n) for n in (self.id, self.title, *self.names)}

    def accepts_layer(self, layer_standard: str, quantity: str = "pg") -> bool:
        """Whether a layer of this ``standard`` string and ``quantity`` may feed this standard.

        >>> std = get_standard("asce7-16")
        >>> std.accepts_layer("ASCE/SEI 7-10"), std.accepts_layer("ASCE 7-22")
        (True, False)
        """
        norm = str(layer_standard).upper().replace(" ", "").replace("/SEI", "")
        edition = any(norm == s.upper().replace(" ", "") for s in self.layer_standards)
        return edition and quantity in self.quantities

    def roof_option(self, name: str) -> RoofOption:
        """The declared roof option ``name`` (ROOF.toml key)."""
        for opt in self.roof_options:
            if opt.name == name:
                return opt
        raise InputError(
            "roof option",
            f"{name!r} is not a roof option of {self.title}",
            ", ".join(o.name for o in self.roof_options),
        )

    def provision(self, key: str) -> str:
        """The clause behind ``key`` (``"load.pf"``: the equation of pf); ``""`` if none."""
        return str(self.provisions.get(key, ""))

    def ref(self, key: str) -> str:
        """The provision with the standard's title (a step's ``ref``); ``""`` if none.

        >>> get_standard().ref("load.pf") == "ASCE 7-16 " + get_standard().provision("load.pf")
        True
        """
        clause = self.provision(key)
        return f"{self.title} {clause}" if clause else ""

    def case_ref(self, case: Mapping) -> str:
        """The provision a load case of ``analyze`` comes from (its ``case``, ``source``, ``method``)."""
        kind = str(case.get("case") or "")
        source = str(case.get("source") or "")
        method = str(case.get("method") or "")
        for key in (f"case.{kind}.{source}", f"case.{kind}.{method}", f"case.{kind}"):
            if key in self.provisions:
                return self.ref(key)
        return ""

    def cases(self) -> list[VerificationCase]:
        """The verification cases (loaded once)."""
        if not self._cases:
            self._cases.extend(self.verification())
        return list(self._cases)


def register(standard: Standard) -> Standard:
    """Add ``standard`` to the registry; its id and names must be new (re-registering it is fine)."""
    old = _REGISTRY.get(standard.id)
    if old is standard:
        return standard
    names = {norm_name(n) for n in (standard.id, standard.title, *standard.names)}
    for other in _REGISTRY.values():
        if other.id == standard.id or any(other.matches(n) for n in names):
            raise NeveError(f"standard {standard.id!r}: a name is already taken by {other.id!r}")
    _REGISTRY[standard.id] = standard
    return standard


def _load_builtin() -> None:
    global _loaded
    if not _loaded:
        for module in BUILTIN:
            importlib.import_module(module)
        _loaded = True


def standards() -> list[Standard]:
    """Every registered standard, in registration order."""
    _load_builtin()
    return list(_REGISTRY.values())


def available() -> list[str]:
    """The ids of the registered standards (what ``--standard`` accepts)."""
    return [s.id for s in standards()]


def find_standard(name: str | None) -> Standard | None:
    """The standard called ``name`` (None: the default), or None when there is none."""
    if name is None:
        name = DEFAULT
    if isinstance(name, Standard):
        return name
    for std in standards():
        if std.matches(name):
            return std
    return None


def get_standard(name: str | Standard | None = None, field: str = "standard") -> Standard:
    """The standard called ``name`` (an id or a name users type; None: :data:`DEFAULT`).

    An unknown name is an :class:`InputError` naming ``field`` and listing what is available.

    >>> get_standard("ASCE 7-16").id
    'asce7-16'
    >>> get_standard("EN 1991-1-3").id
    'en1991-1-3'
    >>> get_standard("BS 6399-3")
    Traceback (most recent call last):
    ...
    neve.engine.errors.InputError: standard: 'BS 6399-3' is not a standard neve has; accepted: asce7-16, asce7-22, en1991-1-3
    """
    std = find_standard(name)
    if std is None:
        raise InputError(field, f"{str(name)!r} is not a standard neve has", ", ".join(available()))
    return std


def site_quantities() -> tuple[str, ...]:
    """Every site quantity a registered standard needs (the layer ``quantity`` values)."""
    out: list[str] = []
    for std in standards():
        out.extend(q for q in std.quantities if q not in out)
    return tuple(out)


def run_verification(standard: str | Standard | None = None) -> dict:
    """Run the verification cases of one standard, or of every registered one.

    Returns
    -------
    dict
        ``cases`` (one object per case: ``id``, ``standard``, ``source``,
        ``inputs``, ``expected``, ``computed``, ``tolerance``, ``ok``) and
        ``summary`` (``total``, ``passed``, ``failed``, ``standards``, ``ok``).
    """
    chosen = standards() if standard is None else [get_standard(standard)]
    cases = [case.run(std.title) for std in chosen for case in std.cases()]
    passed = sum(1 for c in cases if c["ok"])
    summary = {
        "total": len(cases),
        "passed": passed,
        "failed": len(cases) - passed,
        "standards": [std.title for std in chosen],
        "ok": passed == len(cases) and len(cases) > 0,
    }
    return {"cases": cases, "summary": summary}


def _show(value) -> str:
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:.6g}"
    if isinstance(value, Mapping):
        return "{" + ", ".join(f"{k}: {_show(v)}" for k, v in value.items()) + "}"
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_show(v) for v in value) + "]"
    return "none" if value is None else str(value)


def verification_text(report: Mapping) -> str:
    """The report of :func:`run_verification` as plain text, one block per case."""
    lines = []
    for c in report["cases"]:
        lines.append(f"[{'pass' if c['ok'] else 'FAIL'}] {c['id']}  ({c['standard']})")
        lines.append(f"    source:    {c['source']}")
        lines.append(f"    inputs:    {_show(c['inputs'])}")
        for key, want in c["expected"].items():
            got = c["computed"].get(key)
            tol = c["tolerance"].get(key, 0.0)
            tol_text = f" +/- {tol:g}" if tol else " (exact)"
            lines.append(f"    {key}: expected {_show(want)}{tol_text}, computed {_show(got)}")
        if c.get("error"):
            lines.append(f"    error:     {c['error']}")
    s = report["summary"]
    lines.append("")
    lines.append(
        f"{s['passed']} of {s['total']} verification cases pass"
        f" ({', '.join(s['standards'])}); {s['failed']} fail."
    )
    return "\n".join(lines)
