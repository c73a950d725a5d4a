"""The nationally determined parameters of EN 1991-1-3, as data.

A national annex may set some values of EN 1991-1-3 (its nationally
determined parameters); the standard gives a recommended value for each in
a note.  neve keeps every such value in a :class:`ParameterSet`, so that a
country's annex is a data file, not new code.  :data:`PARAMETERS` lists the
parameters neve uses, each with its recommended value, the clause that
allows a national choice, its accepted range and what it is;
:data:`RECOMMENDED` is the set of recommended values (``--annex
recommended``, the default).

The shipped sets are TOML files in ``annexes/`` beside this module (read by
:mod:`neve.roof_file` at the edge: the engine reads no file); a user may
give a file of their own in the same form.  :func:`parameter_set` checks a
mapping read from such a file against :data:`PARAMETERS`.

Values recalled without the document at hand are marked "from memory" in
``note``; where the worked example of [SSB03] uses a value, the note says so.

References
----------
.. [EN] EN 1991-1-3:2003 + A1:2015, the notes to the clauses named below.
.. [SSB03] Single-Storey Steel Buildings, Part 3: Actions, Appendix A
   (worked example): Cesl = 2, Table 5.1's normal topography, gamma = 2
   kN/m3 and the bounds of mu_w and ls in 5.3.6, as used there.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

from neve.engine.errors import InputError
from neve.engine.units import Bound

#: the design cases of Annex A (Table A.1): which accidental situations apply
DESIGN_CASES = {
    "A": "no exceptional snow falls, no exceptional drifts (persistent/transient only)",
    "B1": "exceptional snow falls, no exceptional drifts (adds sAd = Cesl sk, 4.3)",
    "B2": "exceptional drifts, no exceptional snow falls (adds Annex B)",
    "B3": "exceptional snow falls and exceptional drifts (adds both)",
}


@dataclass(frozen=True)
class Parameter:
    """One nationally determined parameter neve uses.

    Parameters
    ----------
    name : str
        The key in a parameter-set file (``Ce_windswept``).
    recommended : float or str
        The standard's recommended value.
    clause : str
        The clause whose note allows a national choice.
    bound : Bound or None
        The accepted range of a number (None: a word from ``words``).
    unit : str
        Its unit (``""`` for a coefficient).
    what : str
        A few words for people.
    words : tuple of str
        The accepted words of a choice.
    note : str
        How sure the recommended value is ("from memory", a guide that uses it).
    """

    name: str
    recommended: float | str
    clause: str
    bound: Bound | None
    unit: str
    what: str
    words: tuple[str, ...] = ()
    note: str = "from memory"


_SSB = "from memory; used as such in the worked example of [SSB03]"

#: every parameter neve takes from a parameter set, keyed by its file name
PARAMETERS: dict[str, Parameter] = {p.name: p for p in (
    Parameter("Ce_windswept", 0.8, "5.2(7), Table 5.1", Bound(0.5, 1.5), "",
              "exposure coefficient, windswept topography"),
    Parameter("Ce_normal", 1.0, "5.2(7), Table 5.1", Bound(0.5, 1.5), "",
              "exposure coefficient, normal topography", note=_SSB),
    Parameter("Ce_sheltered", 1.2, "5.2(7), Table 5.1", Bound(0.5, 1.5), "",
              "exposure coefficient, sheltered topography"),
    Parameter("Ct", 1.0, "5.2(8)", Bound(0.0, 1.0, lo_open=True), "",
              "thermal coefficient where no reduced value is justified", note=_SSB),
    Parameter("Cesl", 2.0, "4.3(1)", Bound(1.0, 5.0), "",
              "coefficient for exceptional snow loads on the ground", note=_SSB),
    Parameter("design_case", "A", "Annex A, Table A.1", None, "",
              "the design case of Annex A (which accidental situations apply)",
              words=tuple(DESIGN_CASES),
              note="reading: the recommended set adds no accidental situation unless asked "
                   "(--snow-case), as for locations without exceptional falls or drifts"),
    Parameter("mu3_max", 2.0, "5.3.5(1)", Bound(0.8, 5.0), "",
              "upper value of the cylindrical roof coefficient mu3"),
    Parameter("gamma_drift", 2.0, "5.3.6(1), 6.2(2)", Bound(1.0, 6.0), "kN/m3",
              "weight density of snow for drifts at taller construction and obstructions",
              note=_SSB),
    Parameter("mu_w_min", 0.8, "5.3.6(1)", Bound(0.0, 10.0), "",
              "lower bound of the wind drift coefficient mu_w", note=_SSB),
    Parameter("mu_w_max", 4.0, "5.3.6(1)", Bound(0.8, 10.0), "",
              "upper bound of the wind drift coefficient mu_w", note=_SSB),
    Parameter("ls_min", 5.0, "5.3.6(3)", Bound(0.0, 50.0), "m",
              "shortest drift length at taller construction and obstructions", note=_SSB),
    Parameter("ls_max", 15.0, "5.3.6(3)", Bound(1.0, 100.0), "m",
              "longest drift length at taller construction and obstructions", note=_SSB),
    Parameter("mu2_obstruction_min", 0.8, "6.2(2)", Bound(0.0, 10.0), "",
              "lower bound of mu2 at projections and obstructions"),
    Parameter("mu2_obstruction_max", 2.0, "6.2(2)", Bound(0.8, 10.0), "",
              "upper bound of mu2 at projections and obstructions"),
    Parameter("gamma_overhang", 3.0, "6.3(2)", Bound(1.0, 10.0), "kN/m3",
              "weight density of snow for the load of snow overhanging a roof edge"),
    Parameter("overhang_altitude", 800.0, "6.3(1)", Bound(0.0, 5000.0), "m",
              "site altitude above which snow overhanging a roof edge is designed for"),
    Parameter("annex_b_mu_max_step", 8.0, "1.1(4), B3", Bound(0.8, 20.0), "",
              "upper bound of the exceptional drift coefficient at taller construction"),
    Parameter("annex_b_mu_max_parapet", 8.0, "1.1(4), B4", Bound(0.8, 20.0), "",
              "upper bound of the exceptional drift coefficient behind parapets", note=_SSB),
    Parameter("annex_b_mu_max_projection", 5.0, "1.1(4), B4", Bound(0.8, 20.0), "",
              "upper bound of the exceptional drift coefficient at local projections"),
    Parameter("annex_b_ls_max", 15.0, "1.1(4), B4", Bound(1.0, 100.0), "m",
              "longest exceptional drift behind parapets", note=_SSB),
)}  # fmt: skip

#: the standard's recommended values, by parameter name
RECOMMENDED_VALUES: dict[str, float | str] = {k: p.recommended for k, p in PARAMETERS.items()}


@dataclass(frozen=True)
class ParameterSet:
    """A set of nationally determined parameters: its name, source and values.

    Parameters
    ----------
    name : str
        ``recommended``, or a country code (``IE``) or a file's own name.
    title : str
        What the set is, for people.
    source : str
        The published document its values come from.
    values : mapping
        Every parameter of :data:`PARAMETERS` (those a file leaves out take
        the recommended value; ``set_here`` lists what the file set).
    set_here : tuple of str
        The parameters the set itself gives.
    demo : bool
        Invented values (never for design).
    """

    name: str
    title: str
    source: str
    values: Mapping[str, float | str] = field(default_factory=dict)
    set_here: tuple[str, ...] = ()
    demo: bool = False

    def __getitem__(self, key: str):
        return self.values[key]

    def to_json(self) -> dict:
        """The set as the roof result's ``parameters`` object."""
        return {
            "name": self.name,
            "title": self.title,
            "source": self.source,
            "demo": self.demo,
            "set_here": list(self.set_here),
            "values": dict(self.values),
        }


RECOMMENDED = ParameterSet(
    name="recommended",
    title="EN 1991-1-3 recommended values",
    source="EN 1991-1-3:2003 + A1:2015, the recommended values of the notes to the clauses "
    "named beside each parameter (from memory where so marked)",
    values=dict(RECOMMENDED_VALUES),
    set_here=tuple(RECOMMENDED_VALUES),
)


def _value(p: Parameter, raw, where: str):
    field_ = f"{where}.{p.name}"
    if p.bound is None:
        text = str(raw).strip().upper()
        if isinstance(raw, bool) or text not in p.words:
            raise InputError(field_, f"{raw!r} is not accepted", ", ".join(p.words))
        return text
    if isinstance(raw, bool) or not isinstance(raw, (int, float)):
        raise InputError(field_, f"{raw!r} is not a number", p.bound.text())
    return p.bound.check(float(raw), field_)


def parameter_set(data, where: str = "annex") -> ParameterSet:
    """A :class:`ParameterSet` from a mapping (a parameter-set file as read), checked.

    ``data`` has ``name``, ``title``, ``source`` (all text, required), an
    optional ``demo`` (true/false) and a ``values`` table of parameters by
    name.  An unknown parameter, a value out of its range or a missing
    source is an :class:`InputError` naming the field.  A
    :class:`ParameterSet`, or ``"recommended"``, is returned as it is.

    >>> parameter_set({"name": "x", "title": "t", "source": "s",
    ...                "values": {"Cesl": 3.0}})["Cesl"]
    3.0
    >>> parameter_set({"name": "x", "title": "t", "source": "s", "values": {"gamma": 2}})
    ... # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    neve.engine.errors.InputError: annex.values: unknown parameter(s) gamma; accepted: Ce_windswept, ...
    """
    if isinstance(data, ParameterSet):
        return data
    if data is None or (isinstance(data, str) and data.strip().lower() == "recommended"):
        return RECOMMENDED
    if isinstance(data, str):
        raise InputError(
            where,
            f"{data!r} is not a parameter set the engine holds",
            "recommended, or a parameter-set mapping (neve.roof_file reads the shipped sets "
            "and files)",
        )
    if not isinstance(data, Mapping):
        raise InputError(where, f"{type(data).__name__} is not a parameter set", "a mapping")
    unknown = sorted(set(data) - {"name", "title", "source", "demo", "values"})
    if unknown:
        raise InputError(
            where, f"unknown key(s) {', '.join(unknown)}", "name, title, source, demo, values"
        )
    for key in ("name", "title", "source"):
        if not isinstance(data.get(key), str) or not data[key].strip():
            raise InputError(f"{where}.{key}", "missing or empty", "a text")
    values = data.get("values", {})
    if not isinstance(values, Mapping):
        raise InputError(f"{where}.values", "is not a table", "a [values] table")
    unknown = sorted(set(values) - set(PARAMETERS))
    if unknown:
        raise InputError(
            f"{where}.values", f"unknown parameter(s) {', '.join(unknown)}", ", ".join(PARAMETERS)
        )
    out = dict(RECOMMENDED_VALUES)
    for key, raw in values.items():
        out[key] = _value(PARAMETERS[key], raw, f"{where}.values")
    if out["mu_w_min"] > out["mu_w_max"] or out["ls_min"] > out["ls_max"]:
        raise InputError(f"{where}.values", "a lower bound is above its upper bound",
                         "mu_w_min <= mu_w_max and ls_min <= ls_max")  # fmt: skip
    if out["mu2_obstruction_min"] > out["mu2_obstruction_max"]:
        raise InputError(f"{where}.values", "mu2_obstruction_min is above mu2_obstruction_max",
                         "mu2_obstruction_min <= mu2_obstruction_max")  # fmt: skip
    demo = data.get("demo", False)
    if not isinstance(demo, bool):
        raise InputError(f"{where}.demo", f"{demo!r} is not true or false", "true, false")
    return ParameterSet(
        name=data["name"].strip(),
        title=data["title"].strip(),
        source=data["source"].strip(),
        values=out,
        set_here=tuple(values),
        demo=demo,
    )
