"""Curved roofs and domes (ASCE 7-16 Sec. 7.4.3, 7.6.2, 7.6.4 and Fig. 7.4-2).

The roof is a circular arc (:class:`neve.engine.roof_geometry.Arc`, fixed by
its rise and chord); every load is given at the points Fig. 7.4-2 dimensions:
the crown, the 30° point (where the tangent slopes 30°), the 70° point and
the eave, with the horizontal distance of each point from the crown.  Loads
act on the horizontal projection [psf]; lengths in [ft], slopes in [deg].

* Balanced (Sec. 7.4.3): ``Cs pf`` with Cs read from Fig. 7.4-1 at the slope
  of the tangent at each point; portions steeper than 70° carry no snow.
* Unbalanced (Sec. 7.6.2): the windward side is free of snow; the leeward
  side carries 0.5 pf at the crown and rises to ``2 pf Cs / Ce`` by the three
  eave-slope conditions of Fig. 7.4-2 (below 30°, 30° to 70°, above 70°).
  Not required where the straight line from the eave (or the 70° point,
  where there is one) to the crown slopes under 10° or over 60°.  Where the
  ground or another roof abuts the eave (at or within 3 ft), the load is not
  reduced from the 30° point to the eave.
* Domes (Sec. 7.6.4): the curved-roof unbalanced load on the downwind 90°
  sector in plan, falling to zero over 22.5° on each side, none on the
  remaining 225°.

Readings (where the text leaves room; from memory where marked):

* At the 30° point the leeward load is taken as printed in Fig. 7.4-2,
  ``2 pf / Ce`` (from memory), with no reduction by Cs: on every non-slippery
  line of Fig. 7.4-1 Cs is 1 at 30° anyway, and on the slippery lines this
  is the larger (conservative) value.  At the eave Cs is that of the eave
  slope.
* The abutment rule is applied to the balanced load as well (conservative),
  and where the abutment is not stated the roof is taken as abutted (flag
  ``eave_abutment_unstated``).
* A dome takes the unbalanced load whatever its rise (Sec. 7.6.4 requires
  it for domes with no slope exemption; a curved roof of the same profile
  might be exempt, which the case's note says).

References
----------
.. [1] ASCE/SEI 7-16, Sec. 7.4.3 (curved roofs: Cs from the tangent slope,
   portions over 70° free of snow), Sec. 7.6.2 (unbalanced loads on curved
   roofs), Sec. 7.6.4 (domes), Fig. 7.4-2 (balanced and unbalanced loads for
   curved roofs; the figure number confirmed by a secondary source, its
   values from memory), Fig. 7.4-1 (Cs).
"""

from __future__ import annotations

from neve.engine.asce7_16 import STANDARD
from neve.engine.asce7_16.slope import slope_factor
from neve.engine.roof_geometry import Arc
from neve.engine.steps import StepLog, fmt, fmt_deg

#: portions of a curved roof steeper than this carry no snow [deg] (Sec. 7.4.3)
FREE_OF_SNOW_DEG = 70.0
#: the intermediate point of Fig. 7.4-2 [deg]
POINT_30_DEG = 30.0
#: the eave-slope conditions of Fig. 7.4-2, by number
EAVE_CONDITIONS_FIG_7_4_2 = {
    1: "slope at the eave below 30\u00b0",
    2: "slope at the eave 30\u00b0 to 70\u00b0",
    3: "slope at the eave above 70\u00b0",
}
#: unbalanced loads are not required where the eave-to-crown line slopes outside this [deg]
#: (Sec. 7.6.2)
UNBALANCED_LINE_DEG = (10.0, 60.0)
#: leeward load at the crown, as a share of pf (Fig. 7.4-2)
CROWN_SHARE = 0.5
#: leeward load factor: 2 pf Cs / Ce (Fig. 7.4-2)
LEEWARD_FACTOR = 2.0
#: ground or another roof this close to the eave holds the 30° point load to the eave [ft]
ABUTMENT_DISTANCE_FT = 3.0
#: the dome's plan sectors [deg] (Sec. 7.6.4)
DOME_SECTORS_DEG = {"full": 90.0, "taper": 22.5, "unloaded": 225.0}

_FIG = f"{STANDARD} Fig. 7.4-2"
_POINT_WORDS = {"30": "30\u00b0 point", "eave": "eave"}


def eave_condition(eave_slope: float) -> int:
    """The eave-slope condition of Fig. 7.4-2: 1 below 30°, 2 from 30° to 70°, 3 above 70°.

    >>> [eave_condition(s) for s in (20.0, 30.0, 70.0, 80.0)]
    [1, 2, 2, 3]
    """
    if eave_slope < POINT_30_DEG:
        return 1
    return 2 if eave_slope <= FREE_OF_SNOW_DEG else 3


def arc_steps(arc: Arc, log: StepLog | None) -> int:
    """Record the arc's radius, eave slope, condition and key points; return the condition."""
    cond = eave_condition(arc.eave_slope)
    if log is None:
        return cond
    ref = f"{STANDARD} Sec. 7.4.3"
    c, h, r = arc.half_chord, arc.rise, arc.radius
    log.add("R", "radius of the circular arc through the eaves and the crown",
            "R = (c^2 + h^2) / (2 h), c = chord / 2, h = rise",
            f"R = ({fmt(c)}^2 + {fmt(h)}^2) / (2 x {fmt(h)})", r, "ft", ref)  # fmt: skip
    log.add("theta_e", f"slope of the tangent at the eave: condition {cond}, "
            f"{EAVE_CONDITIONS_FIG_7_4_2[cond]}", "theta_e = asin(c / R)",
            f"theta_e = asin({fmt(c)} / {fmt(r)})", arc.eave_slope, "deg",
            f"{ref}, Fig. 7.4-2")  # fmt: skip
    for alpha in (POINT_30_DEG, FREE_OF_SNOW_DEG):
        if arc.has_point(alpha) and alpha < arc.eave_slope - 1e-9:
            a = int(alpha)
            log.add(f"x_{a}", f"horizontal distance from the crown to the {a}\u00b0 point",
                    f"x{a} = R sin {a} deg", f"x{a} = {fmt(r)} x sin {a}\u00b0",
                    arc.x_at(alpha), "ft", ref)  # fmt: skip
    return cond


def crown_cs(log: StepLog | None = None) -> float:
    """Cs at the crown, where the tangent is level: 1 (Fig. 7.4-1 at 0°).

    The largest balanced load of a curved roof or dome is ``pf`` at its
    crown; it is the roof's uniform ``ps`` (screening), the distribution
    along the roof is :func:`balanced`.
    """
    if log is not None:
        log.add("Cs", "roof slope factor at the crown of the curved roof (level tangent): "
                "the largest balanced load; along the roof Cs follows the tangent slope",
                "Cs = 1 at a slope of 0 deg", "crown slope 0\u00b0, so Cs = 1", 1.0, "-",
                f"{STANDARD} Sec. 7.4.3, Fig. 7.4-1")  # fmt: skip
    return 1.0


def _point_cs(alpha, ct, slippery, log, name) -> float:
    cs = float(slope_factor(alpha, ct, slippery))
    if log is not None:
        log.add(f"Cs_{name}", f"Cs at the {_POINT_WORDS[name]} (tangent {fmt_deg(alpha)})",
                "Cs from Fig. 7.4-1 at the tangent slope; 0 above 70 deg",
                f"slope {fmt_deg(alpha)}, Ct = {fmt(ct)}", cs, "-",
                f"{STANDARD} Sec. 7.4.3, Fig. 7.4-1")  # fmt: skip
    return cs


def _held(cond: int, abutted: bool | None) -> bool:
    """Whether the 30° point value is held to the eave (conditions 2 and 3, abutted or unstated)."""
    return cond >= 2 and abutted is not False


def _hold_step(log, value, abutted) -> None:
    if log is not None:
        said = "stated" if abutted else "not stated, taken as abutted (conservative)"
        log.add("p_hold", f"ground or another roof at or within {fmt(ABUTMENT_DISTANCE_FT)} ft "
                f"of the eave ({said}): the load is not reduced from the 30\u00b0 point "
                "to the eave", "p = p(30 deg point) to the eave", f"p = {fmt(value)}", value,
                "psf", f"{STANDARD} Sec. 7.6.2")  # fmt: skip


def balanced(arc: Arc, pf, ct, slippery: bool, abutted: bool | None = None,
             log: StepLog | None = None) -> dict:  # fmt: skip
    """Balanced load of a curved roof at the crown, 30° point, 70° point and eave [psf].

    Parameters
    ----------
    arc : Arc
        The roof profile [ft].
    pf : float
        Flat roof snow load [psf].
    ct : float
        Thermal factor [-], choosing the Fig. 7.4-1 lines.
    slippery : bool
        Whether the slippery line may be used.
    abutted : bool or None
        Ground or another roof at or within 3 ft of the eave (None: not stated,
        taken as abutted).

    Returns
    -------
    dict
        ``crown``, ``at_30``, ``at_70``, ``eave`` [psf] (None for a point the
        roof does not reach), ``x_30``, ``x_70`` [ft from the crown], ``condition``.

    References
    ----------
    ASCE 7-16 Sec. 7.4.3, Fig. 7.4-2, Fig. 7.4-1.
    """
    pf = float(pf)
    cond = arc_steps(arc, log)
    out = {"condition": cond, "crown": pf, "at_30": None, "at_70": None, "eave": None,
           "x_30": None, "x_70": None}  # fmt: skip
    ref = f"{STANDARD} Sec. 7.4.3"
    if log is not None:
        log.add("p_cr", "balanced load at the crown", "p = Cs pf, Cs = 1",
                f"p = 1 x {fmt(pf)}", pf, "psf", ref)  # fmt: skip
    if cond >= 2:
        cs = _point_cs(POINT_30_DEG, ct, slippery, log, "30")
        out["at_30"], out["x_30"] = cs * pf, arc.x_at(POINT_30_DEG)
        if log is not None:
            log.add("p_30", "balanced load at the 30\u00b0 point", "p = Cs pf",
                    f"p = {fmt(cs)} x {fmt(pf)}", out["at_30"], "psf", ref)  # fmt: skip
    if cond == 3:
        out["x_70"] = arc.x_at(FREE_OF_SNOW_DEG)
        out["at_70"] = out["at_30"] if _held(cond, abutted) else 0.0
    if _held(cond, abutted):
        out["eave"] = out["at_30"]
        _hold_step(log, out["eave"], abutted)
    elif cond == 3:
        out["eave"] = 0.0
        if log is not None:
            log.add("p_eave", "balanced load beyond the 70\u00b0 point to the eave: free of snow",
                    "p = 0 where the slope exceeds 70 deg", "p = 0", 0.0, "psf", ref)  # fmt: skip
    else:
        cs = _point_cs(arc.eave_slope, ct, slippery, log, "eave")
        out["eave"] = cs * pf
        if log is not None:
            log.add("p_eave", "balanced load at the eave", "p = Cs pf",
                    f"p = {fmt(cs)} x {fmt(pf)}", out["eave"], "psf", ref)  # fmt: skip
    return out


def unbalanced_line(arc: Arc, log: StepLog | None = None) -> float:
    """Slope [deg] of the straight line from the eave, or the 70° point, to the crown."""
    seventy = arc.eave_slope > FREE_OF_SNOW_DEG
    line = arc.line_to_crown(FREE_OF_SNOW_DEG) if seventy else arc.crown_angle
    if log is not None:
        frm = "70\u00b0 point" if seventy else "eave"
        log.add("theta_line", f"slope of the straight line from the {frm} to the crown",
                "half the tangent slope at that point (circular arc)",
                f"{fmt_deg(FREE_OF_SNOW_DEG if seventy else arc.eave_slope)} / 2",
                line, "deg", f"{STANDARD} Sec. 7.6.2")  # fmt: skip
    return line


def unbalanced_required(arc: Arc) -> bool:
    """Whether Sec. 7.6.2 requires the unbalanced load: the line of
    :func:`unbalanced_line` slopes from 10° to 60°."""
    lo, hi = UNBALANCED_LINE_DEG
    return bool(lo - 1e-9 <= unbalanced_line(arc) <= hi + 1e-9)


def unbalanced(arc: Arc, pf, ce, ct, slippery: bool, abutted: bool | None = None,
               log: StepLog | None = None) -> dict:  # fmt: skip
    """Unbalanced load of a curved roof: windward free, leeward by Fig. 7.4-2 [psf].

    Parameters
    ----------
    arc : Arc
        The roof profile [ft].
    pf : float
        Flat roof snow load [psf].
    ce, ct : float
        Exposure and thermal factors [-].
    slippery : bool
        Whether the slippery line of Fig. 7.4-1 may be used (Cs at the eave).
    abutted : bool or None
        Ground or another roof at or within 3 ft of the eave (None: not stated,
        taken as abutted).

    Returns
    -------
    dict
        ``windward`` (0), ``leeward_crown``, ``leeward_30``, ``leeward_70``,
        ``leeward_eave`` [psf] (None where the roof has no such point),
        ``x_30``, ``x_70`` [ft from the crown], ``condition``; linear between
        the points.

    References
    ----------
    ASCE 7-16 Sec. 7.6.2, Fig. 7.4-2.
    """
    pf, ce = float(pf), float(ce)
    cond = arc_steps(arc, log)
    unbalanced_line(arc, log)
    ref = f"{STANDARD} Sec. 7.6.2"
    out = {"condition": cond, "windward": 0.0, "leeward_crown": CROWN_SHARE * pf,
           "leeward_30": None, "leeward_70": None, "leeward_eave": None, "x_30": None,
           "x_70": None}  # fmt: skip
    if log is not None:
        log.add("p_wind", "unbalanced: windward side free of snow", "p = 0", "p = 0", 0.0,
                "psf", ref)  # fmt: skip
        log.add("p_cr", "unbalanced: leeward load at the crown", "p = 0.5 pf",
                f"p = 0.5 x {fmt(pf)}", out["leeward_crown"], "psf", _FIG)  # fmt: skip
    if cond >= 2:
        out["leeward_30"] = LEEWARD_FACTOR * pf / ce
        out["x_30"] = arc.x_at(POINT_30_DEG)
        if log is not None:
            log.add("p_30", "unbalanced: leeward load at the 30\u00b0 point", "p = 2 pf / Ce",
                    f"p = 2 x {fmt(pf)} / {fmt(ce)}", out["leeward_30"], "psf", _FIG)  # fmt: skip
    if cond == 3:
        out["x_70"] = arc.x_at(FREE_OF_SNOW_DEG)
        out["leeward_70"] = out["leeward_30"] if _held(cond, abutted) else 0.0
    if _held(cond, abutted):
        out["leeward_eave"] = out["leeward_30"]
        _hold_step(log, out["leeward_eave"], abutted)
    elif cond == 3:
        out["leeward_eave"] = 0.0
        if log is not None:
            log.add("p_70", "unbalanced: leeward load at the 70\u00b0 point and beyond",
                    "p = 2 pf Cs / Ce, Cs = 0 at 70 deg", "p = 0", 0.0, "psf", _FIG)  # fmt: skip
    else:
        cs = _point_cs(arc.eave_slope, ct, slippery, log, "eave")
        out["leeward_eave"] = LEEWARD_FACTOR * pf * cs / ce
        if log is not None:
            log.add("p_eave", "unbalanced: leeward load at the eave", "p = 2 pf Cs / Ce",
                    f"p = 2 x {fmt(pf)} x {fmt(cs)} / {fmt(ce)}", out["leeward_eave"], "psf",
                    _FIG)  # fmt: skip
    return out


def dome_sectors(log: StepLog | None = None) -> dict:
    """The plan sectors of a dome's unbalanced load [deg] (Sec. 7.6.4), recorded as steps."""
    if log is not None:
        ref = f"{STANDARD} Sec. 7.6.4"
        full, taper, none = (DOME_SECTORS_DEG[k] for k in ("full", "taper", "unloaded"))
        log.add("sector", "downwind sector in plan carrying the curved-roof unbalanced load",
                "90 deg, centred on the wind direction", f"{fmt(full)}\u00b0", full, "deg",
                ref)  # fmt: skip
        log.add("taper", "sectors on each side over which the load falls linearly to zero",
                "22.5 deg each side", f"{fmt(taper)}\u00b0", taper, "deg", ref)  # fmt: skip
        log.add("upwind", "upwind sector free of unbalanced snow", "360 - 90 - 2 x 22.5 deg",
                f"{fmt(none)}\u00b0", none, "deg", ref)  # fmt: skip
    return dict(DOME_SECTORS_DEG)


def sector_factor(angle) -> float:
    """Share of a dome's unbalanced load at plan angle ``angle`` [deg] from the downwind axis.

    1 within 45° of the axis (the 90° downwind sector), falling linearly to 0
    over the next 22.5°, 0 beyond (the 225° upwind sector).  Sec. 7.6.4.

    >>> [sector_factor(a) for a in (0, 45, 56.25, 67.5, 90, 180)]
    [1.0, 1.0, 0.5, 0.0, 0.0, 0.0]
    """
    a = abs((float(angle) + 180.0) % 360.0 - 180.0)
    half = DOME_SECTORS_DEG["full"] / 2.0
    end = half + DOME_SECTORS_DEG["taper"]
    if a <= half:
        return 1.0
    if a >= end:
        return 0.0
    return (end - a) / DOME_SECTORS_DEG["taper"]
