"""A roof and its site quantities -> the load cases of a standard, asked of the registry.

The facade over the standards registry (:mod:`neve.engine.standards`) with
the names neve has always had: :func:`analyze_roof` works one roof for one
ground snow load and records every step; :func:`uniform_loads` evaluates the
uniform loads for many ground loads at once (portfolio screening);
:func:`screening_flags` gives the flags that go with them.  Each takes
``standard=`` (an id or a name users type; the default standard when
omitted) and hands the work to that standard's ``analyze``, ``uniform`` and
``screening_flags``; the provisions themselves live in the standard's own
sub-package.  :class:`RoofResult` is the result of one roof.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from neve.engine.roof_shapes import shape_json
from neve.engine.roof_spec import Roof
from neve.engine.units import length_json, load_json


def __getattr__(name: str):
    # ``CAUTIONS``: the cautions of the default standard (asked of the registry when used)
    if name == "CAUTIONS":
        from neve.engine.standards import get_standard

        return list(get_standard().cautions)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


@dataclass
class RoofResult:
    """The outcome of :func:`analyze_roof`; :meth:`to_json` gives the contract."""

    standard: str
    pg: float
    roof: Roof
    factors: dict
    loads: dict
    cases: list[dict]
    design_uniform: float
    flags: list[str] = field(default_factory=list)
    not_required: list[dict] = field(default_factory=list)
    cautions: list[str] = field(default_factory=list)
    #: keys a standard adds to the JSON object (ASCE 7-22: ``w2``, ``seismic_weight``)
    extra: dict = field(default_factory=dict)

    def case(self, kind: str) -> list[dict]:
        """All cases of one kind (``"drift"``, ``"unbalanced"`` ...)."""
        return [c for c in self.cases if c["case"] == kind]

    def to_json(self) -> dict:
        r = self.roof
        out = {
            "standard": self.standard,
            "pg": load_json(self.pg),
            "roof": {
                "name": r.name,
                "shape": r.shape,
                "slope_deg": round(r.slope, 3),
                "surface": r.surface,
                "risk": self.factors["risk"],
                "eave_to_ridge": length_json(r.eave_to_ridge),
                "eave_to_ridge_sides": None
                if r.eave_to_ridge_sides is None
                else [length_json(w) for w in r.eave_to_ridge_sides],
            },
            "factors": {k: self.factors[k] for k in ("Ce", "Ct", "Is", "Cs")},
            "loads": {k: load_json(v) for k, v in self.loads.items()},
            "cases": self.cases,
            "design_uniform": load_json(self.design_uniform),
            "not_required": self.not_required,
            "flags": sorted(set(self.flags)),
            "cautions": list(self.cautions),
        }
        out["roof"].update(shape_json(r))  # curved, dome, multi-span roofs only (issue 12)
        for key, value in self.extra.items():
            out.setdefault(key, value)
        return out


def _standard(standard):
    from neve.engine.standards import get_standard

    return get_standard(standard)


def _quantities(std, pg, quantities, more) -> dict:
    """The site quantities by name: ``pg`` first, then ``quantities=`` and keywords (``w2=``).

    A quantity the standard does not take is an InputError naming it; a value
    of None is "not given" and left out.
    """
    out = {std.quantities[0]: pg}
    for source in (quantities or {}, more):
        for key, value in source.items():
            if value is None:
                continue
            if key not in std.quantities:
                from neve.engine.errors import InputError

                raise InputError(
                    key,
                    f"{std.title} takes no site quantity {key!r}",
                    ", ".join(std.quantities),
                )
            out[key] = value
    return out


def analyze_roof(pg: float, roof: Roof, *, standard=None, quantities=None, **more) -> RoofResult:
    """Every load case of ``roof`` under ground snow load ``pg``, by ``standard``.

    Parameters
    ----------
    pg : float
        Ground snow load in the standard's load unit ([psf] for ASCE 7-16),
        zero or more.
    roof : Roof
        The roof (see :meth:`Roof.from_mapping`).
    standard : str, optional
        An id or name of a registered standard; the default one when omitted.
    quantities : mapping, optional
        Further site quantities by name, e.g. ``{"w2": 0.45}`` for ASCE 7-22
        (also as keywords: ``w2=0.45``); None values count as not given.

    Returns
    -------
    RoofResult
        Factors, uniform loads, every applicable case with its steps, the
        cases found not required and why, the governing uniform load, flags
        and cautions.
    """
    std = _standard(standard)
    return std.analyze(_quantities(std, pg, quantities, more), roof)


def uniform_loads(pg, roof: Roof, *, standard=None, quantities=None, **more) -> dict:
    """Uniform roof loads for many ground snow loads at once (arrays), by ``standard``.

    Parameters
    ----------
    pg : array_like
        Ground snow loads in the standard's load unit ([psf] for ASCE 7-16);
        NaN stays NaN, and a value out of range gives NaN (no result) rather
        than stopping a batch.
    roof : Roof
        One roof for all of them.
    standard : str, optional
        An id or name of a registered standard; the default one when omitted.
    quantities : mapping, optional
        Further site quantities (arrays) by name, e.g. ``{"w2": ...}``.

    Returns
    -------
    dict of ndarray
        ``pf``, ``ps``, ``pm`` (NaN where the minimum does not apply),
        ``rain_on_snow`` (0 where it does not apply) and ``design_uniform``.
    """
    std = _standard(standard)
    return std.uniform(_quantities(std, pg, quantities, more), roof)


def screening_flags(roof: Roof, *, standard=None) -> list[str]:
    """Flags that go with :func:`uniform_loads` results of ``roof`` (see the standard's own).

    The flags of the roof description (defaults assumed, slippery line not
    used, rain-on-snow with W unknown) plus ``roof_cases_not_screened`` where
    the roof has load cases beyond the uniform ones that can govern:
    screening reports uniform loads only, and those cases need
    :func:`analyze_roof` (``neve site``).
    """
    return _standard(standard).screening_flags(roof)


def parse_w2(value, field: str = "w2") -> float | None:
    """The winter wind parameter W2 as given (text or number): a plain number in [0, 1], or None.

    The one reading of ``--w2`` (``neve roof``) and of the ``w2`` key of the
    web API (``neve serve``).
    """
    if value is None:
        return None
    from neve.engine.errors import InputError

    accepted = "a plain number from 0 to 1, e.g. 0.45 (the winter wind parameter W2)"
    if isinstance(value, bool):
        raise InputError(field, f"{value!r} is not a number", accepted)
    try:
        w2 = float(str(value).strip())
    except ValueError:
        raise InputError(field, f"{value!r} is not a number", accepted) from None
    if not (0.0 <= w2 <= 1.0):  # also refuses nan
        raise InputError(field, f"{value!r} is outside 0 to 1", accepted)
    return w2


def ground_load(std, pg, sk) -> float:
    """The ground snow load ``std`` takes, in its load unit: ``pg`` (psf) or ``sk`` (kPa).

    ``pg`` and ``sk`` are loads with their units as given (or None).  The
    quantity the standard does not take, or neither, is an InputError naming
    the one it takes (``--pg`` for ASCE 7, ``--sk`` for EN 1991-1-3).
    """
    from neve.engine.errors import InputError
    from neve.engine.roof_spec import parse_pg
    from neve.engine.units import psf_to_kpa

    wanted = std.quantities[0]
    given = {"pg": pg, "sk": sk}
    for name, value in given.items():
        if value is not None and name != wanted:
            raise InputError(
                name, f"{std.title} takes no {name}: its ground snow load is {wanted}",
                f"--{wanted} with a load and its unit",
            )  # fmt: skip
    if given.get(wanted) is None:
        raise InputError(wanted, f"missing: {std.title} needs the ground snow load {wanted}",
                         f"--{wanted} with a load and its unit, e.g. "
                         + ("0.65kPa" if wanted == "sk" else "35psf"))  # fmt: skip
    value = parse_pg(given[wanted], wanted)
    return psf_to_kpa(value) if std.units.get("load") == "kPa" else value


def roof_answer(
    pg: str | None = None, roof: Roof | None = None, *, sk=None, standard=None, w2=None
) -> tuple[dict, Roof]:
    """What ``neve roof --format json`` prints: the JSON object of one roof, and the roof.

    Parameters
    ----------
    pg : str, optional
        Ground snow load pg with its unit as given (``"35psf"``, ``"1.68kPa"``), for
        a standard whose ground quantity is pg (ASCE 7).
    sk : str, optional
        Characteristic ground snow load sk with its unit (``"0.65kPa"``), for
        EN 1991-1-3; the quantity a standard does not take is refused.
    roof : Roof, optional
        The roof; None is the default roof (a flat roof with every default).
    standard : str or Standard, optional
        The standard (``--standard``); the default one when omitted.
    w2 : float, optional
        The winter wind parameter W2, for a standard that takes it (refused otherwise).

    Returns
    -------
    (dict, Roof)
        The ``neve roof`` JSON object and the roof worked.  ``neve roof`` and
        ``neve serve`` (``POST /api/roof``) both call this, so they cannot differ.
    """
    from neve.engine.errors import InputError
    from neve.engine.standards import get_standard, standards

    std = get_standard(standard) if standard is None or isinstance(standard, str) else standard
    ground = ground_load(std, pg, sk)
    if w2 is not None and "w2" not in std.quantities:
        raise InputError(
            "w2",
            f"{std.title} takes no winter wind parameter",
            "--w2 only with a standard that uses W2: "
            + ", ".join(s.id for s in standards() if "w2" in s.quantities),
        )
    roof_ = roof or Roof.from_mapping({})
    return analyze_roof(ground, roof_, standard=std, w2=w2).to_json(), roof_
