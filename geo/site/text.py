"""The readable ``--format text`` summary of a resolved site."""

from __future__ import annotations

from neve.engine.format import elevation_text, load_text, significant
from neve.engine.printable import printable
from neve.engine.roof_text import roof_text

DEMO_BANNER = "*** DEMO DATA — invented values, never for design ***"

#: what a missing value prints as in the site summary
NONE = "—"


def _load(x: dict | None, si: bool = False) -> str:
    """A load of the summary: 0.1 psf and 0.01 kPa, ``35.1 psf (1.68 kPa)`` (psf first).

    ``si``: kPa first (an sk layer, EN 1991-1-3): ``0.85 kPa (17.8 psf)``.  The
    figures the layer gives are in the ground value steps (three significant
    figures) and, unrounded, in the JSON output.
    """
    return load_text(x, missing=NONE, first="kPa" if si else None)


def _length(x: dict | None, si: bool = False) -> str:
    """An elevation or a distance on the ground: ``1350 ft (411.5 m)``; ``si``: metres first."""
    return elevation_text(x, missing=NONE, first="m" if si else None)


#: ground quantities shown SI first (EN 1991-1-3's sk)
SI_FIRST = ("sk",)


def _outcome(at: dict) -> str:
    """``ok, pg 30.0 psf (1.44 kPa)`` or the status of a result at one elevation."""
    return f"{at['status']}, pg {_load(at['pg'])}" if at.get("pg") else str(at["status"])


def site_text(result, show_steps: bool = True) -> str:
    """Summary lines: site, ground status and value, zone, flags, elevation, layer, roof."""
    s, g, roof = result.site, result.ground, result.roof
    lines: list[str] = []
    if result.demo:
        lines += [DEMO_BANNER, ""]
    where = f"{s['lat']:.6f}, {s['lon']:.6f}"
    if s.get("address"):
        where = f"{s['address']}  ({where})"
    lines.append(f"Site:        {printable(where)}")
    precision = s.get("location_precision")
    if precision and precision != "coordinates":
        radius = _length(s.get("location_radius"))
        source = printable(s.get("location_source") or NONE)
        lines.append(f"Location:    {precision}, uncertain within {radius}  (from {source})")
        if precision in ("postal_code", "place"):
            what = "ZIP code" if precision == "postal_code" else "place"
            lines.append(f"             approximate: a {what} centroid; zones within the circle "
                         "were searched and the larger value governs")  # fmt: skip
    if s.get("name") or s.get("project"):
        lines.append(f"Name:        {s.get('name') or '—'}    Project: {s.get('project') or '—'}")
    lines.append(f"Status:      {g['status']}")
    q = g.get("quantity") or "pg"
    si = q in SI_FIRST
    load = lambda x: _load(x, si)  # noqa: E731
    length = lambda x: _length(x, si)  # noqa: E731
    lines.append(f"Ground {q}:   {load(g.get(q))}")
    by_risk = g.get("pg_by_risk")
    if by_risk:  # a per-risk layer (ASCE 7-22): the chosen category and all four
        lines.append(f"Risk:        category {g.get('risk_category')}; pg by category: "
                     + ", ".join(f"{c} {_load(v)}" for c, v in by_risk.items()))  # fmt: skip
    w2 = g.get("w2")
    if w2 is not None:
        value = NONE if w2["value"] is None else f"{w2['value']:g}"
        w2_flags = ", ".join(w2["flags"]) or "none"
        w2_zone = printable(w2["zone_id"] or NONE)
        lines.append(f"W2:          {value}    zone: {w2_zone}    flags: {w2_flags}")
    zone = g["zone_id"] or "—"
    if len(g["zone_ids"]) > 1:
        zone += f"  (overlapping: {', '.join(g['zone_ids'])})"
    lines.append(f"Zone:        {zone}    rule: {g['rule'] or '—'}")
    lines.append(f"Flags:       {', '.join(g['flags']) if g['flags'] else 'none'}")
    lines.append(f"Elevation:   {length(g['elevation'])}  source: {g['elevation_source']}")
    over = g.get("elevation_over_radius")
    if over:
        lines.append(f"Over circle: DEM min {_length(over['min'])}, max {_length(over['max'])},"
                     f" used {_length(over['used'])} (the {over.get('used_at', 'maximum')})")  # fmt: skip
        if over.get("at_min") and over.get("at_max"):
            change = ("an elevation rule change lies within the circle: elevation_rule_within_radius"
                      if over.get("rule_change") else "the same result at both")  # fmt: skip
            lines.append(f"             at min {_outcome(over['at_min'])}, at max "
                         f"{_outcome(over['at_max'])}; {change}")  # fmt: skip
        if g["dem_elevation"] is not None:
            lines.append(f"             DEM at the centre {_length(g['dem_elevation'])}")
    if g["dem_elevation"] is not None and g["elevation_source"] != "dem":
        lines.append(f"DEM:         {length(g['dem_elevation'])}")
    for alt in g.get("elevation_alternatives") or []:  # given elevation and DEM disagree
        where = "given" if alt["source"] == "input" else "DEM"
        role = "governs" if alt["governs"] else "does not govern"
        lines.append(
            f"  at {where:5} {length(alt['elevation'])}: {alt['status']}, "
            f"{q} {load(alt.get(q))} ({role})"
        )
    if g["distance_to_other"] is not None:
        lines.append(
            f"Other value: nearest zone with another value {length(g['distance_to_other'])}"
        )
    layer = g["layer"]
    if layer is not None:
        lines.append(f"Layer:       {layer['name']} ({layer['jurisdiction']})")
        lines.append(f"             {layer['standard']}; source: {layer['source']}")
        lines.append(f"             SHA-256 {layer['sha256']}")
    for other in g["other_layers"]:
        lines.append(
            f"Also:        {other['name']}: {other['status']}, {q} {load(other.get(q))}, "
            f"zone {other['zone_id'] or '—'}"
        )
    lines.append("")
    lines.append(g["message"])
    if g["steps"]:
        lines.append("")
        lines.append("Ground value steps:")
        for st in g["steps"]:
            value = "" if st["value"] is None else f" = {significant(st['value'])} {st['unit']}"
            lines.append(f"  {st['symbol']}: {st['description']}: {st['substituted']}{value}")
    if roof is not None:
        lines.append("")
        lines.append(f"Roof ({roof['standard']}):")
        pitch = getattr(getattr(result, "roof_result", None), "roof", None)
        pitch = getattr(pitch, "slope_pitch", None)  # given as a rise:run: 6:12 (26.6°)
        body = roof_text(roof, show_steps=show_steps, show_cautions=False, pitch=pitch)
        lines += ["  " + line if line else "" for line in body.splitlines()]
        if "ground_provisional" in roof.get("flags", []):
            lines.append(f"  ! {roof['cautions'][0]}")
    lines += on_record_lines(getattr(result, "on_record", None))
    lines.append("")
    lines.append("Cautions:")
    lines += [f"  - {c}" for c in g["cautions"]]
    if result.demo:
        lines += ["", DEMO_BANNER]
    return printable("\n".join(lines))


def on_record_lines(rec: dict | None) -> list[str]:
    """The existing-roof check of ``neve site --on-record`` in words (none without it)."""
    if not rec:
        return []
    lines = ["", f"On record:   {_load(rec['load'])} (the roof's design snow load on record)"]
    lines.append(f"Today:       {_load(rec['design_uniform'])} ({rec['compared_with']})")
    if rec["load_ratio"] is None:
        lines.append(f"Load ratio:  {NONE}  ({rec['reason']})")
    else:
        verdict = (
            "above the record: exceeds_record" if rec["exceeds_record"] else "not above the record"
        )
        lines.append(f"Load ratio:  {rec['load_ratio']:.3f}  ({verdict})")
    lines.append(f"  {rec['note']}")
    return lines
