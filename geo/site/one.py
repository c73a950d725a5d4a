"""One site, end to end: coordinates -> ground snow load -> roof snow loads.

:func:`resolve_site` runs the vectorized resolver (:mod:`neve.geo.site.resolve`) on a
single site, adds the detail a calculation package needs (step records for
the ground value, neighbouring zones, the other stacked layers) and, when a
roof is given and the ground value is usable, runs the roof engine on it.
:meth:`SiteResult.to_json` is the ``{site, ground, roof}`` object of
``neve site --format json`` (docs/contract.md, "JSON output").
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from neve.engine.errors import InputError
from neve.engine.steps import Step, fmt
from neve.engine.units import FT_PER_M, KPA_PER_PSF, M_PER_FT, length_json, load_json
from neve.geo.layers import rules as R
from neve.geo.layers.explain import explain
from neve.geo.layers.model import as_layers, dem_argument
from neve.geo.site.coords import check_range
from neve.geo.site.elevation import MISMATCH_M, check_dem_options, parse_elevation
from neve.geo.site.resolve import ELEVATION_SOURCES, ground_quantity, resolve
from neve.geo.site.result import (
    BIT,
    ELEVATION_ORIGINS,
    STATUSES,
    Resolution,
    flag_names,
)

#: radius within which neighbouring zones are listed for one site [m]
SEARCH_M = 1000.0
DEMO_CAUTION = "DEMO DATA: the layer is invented (demo = true); its values are never for design."


def _num(x) -> float | None:
    return None if x is None or not math.isfinite(float(x)) else float(x)


@dataclass
class SiteResult:
    """The resolved site; :meth:`to_json` gives ``{site, ground, roof}`` (docs/contract.md, "JSON output")."""

    site: dict
    ground: dict
    roof: dict | None
    layers: list = field(default_factory=list)
    resolution: Resolution | None = None  # the look-up's result (ground flags add site-level ones)
    roof_result: object = None
    on_record: dict | None = None  # `--on-record`: the existing-roof check (engine/on_record.py)

    @property
    def row(self) -> dict:
        """The site as a row of :func:`neve.geo.site.resolve.resolve_points`."""
        return {} if self.resolution is None else self.resolution.row(0)

    @property
    def demo(self) -> bool:
        if self.resolution is None:
            return "demo_data" in self.ground["flags"]
        return bool(int(self.resolution.flags[0]) & BIT["demo_data"])

    def to_json(self) -> dict:
        out = {"site": self.site, "ground": self.ground, "roof": self.roof}
        if self.on_record is not None:  # only when a load on record was given
            out["on_record"] = self.on_record
        return out

    def views(self, radius_m: float = 5000) -> list[dict]:
        """``layer.view(center)`` of every layer used, for the maps."""
        center = (self.site["lat"], self.site["lon"])
        # the maps draw ground load layers; W2 layers (fractions, not loads) are in ground.w2
        return [
            layer.view(center=center, radius_m=radius_m)
            for layer in self.layers
            if getattr(layer, "quantity", "pg") != "w2"
        ]

    def to_text(self) -> str:
        """A readable summary for ``--format text``."""
        from neve.geo.site.text import site_text

        return site_text(self)


def _steps(layer, hits, pg: float, elev_ft: float, source: str) -> list[dict]:
    """The derivation of one site's ground value in ``layer`` (``hits`` of that one site).

    ``pg``: the resolved value [psf] (of the layer's quantity: pg, or sk, whose
    steps end in kPa).
    """
    q = layer.quantity
    si = q in SI_FIRST  # an sk layer: the steps end in kPa
    shown = (lambda psf: psf * KPA_PER_PSF) if si else (lambda psf: psf)
    unit = "kPa" if si else "psf"
    steps: list[Step] = []
    if np.isfinite(elev_ft) and si:  # the site altitude of EN 1991-1-3, in metres
        steps.append(
            Step("A", f"site altitude ({source})", "A", f"{fmt(elev_ft)} ft",
                 elev_ft / FT_PER_M, "m", f"site elevation from {source}")
        )  # fmt: skip
    elif np.isfinite(elev_ft):
        steps.append(
            Step("A", f"site elevation ({source})", "A", f"{fmt(elev_ft / FT_PER_M)} m",
                 elev_ft, "ft", f"site elevation from {source}")
        )  # fmt: skip
    zid = hits.zone_id[0]
    j = int(hits.zone_idx[0])
    meta = layer.meta
    zsrc = ""
    if not layer.is_raster and j >= 0 and layer.zones.source[j]:
        zsrc = f"; {layer.zones.source[j]}"
    ref = f"{layer.name}, zone {zid} ({meta['source']}{zsrc})"
    if layer.is_raster:
        base = hits.base_psf[0]
        if np.isfinite(base):
            raw = base / layer.to_psf
            steps.append(Step(q, f"grid cell value of {layer.name}", f"{q} = cell value",
                              f"{q} = {fmt(raw)} {meta['value_units']}", raw,
                              meta["value_units"], ref))  # fmt: skip
    elif j >= 0:
        scale = 1.0 if meta["elevation_units"] == "ft" else 1.0 / FT_PER_M
        steps.extend(explain(layer.zones, j, elev_ft * scale, meta, ref))
    base = hits.base_psf[0]
    if si and meta["value_units"] == "psf" and np.isfinite(base):
        steps.append(Step(q, "converted to kPa", f"{q} [kPa] = {q} [psf] x 0.0479",
                          f"{fmt(base)} x {fmt(KPA_PER_PSF)}", base * KPA_PER_PSF, "kPa",
                          "NIST SP 811 Appendix B (1 psf = 0.0478803 kPa)"))  # fmt: skip
    elif not si and meta["value_units"] == "kPa" and np.isfinite(base):
        steps.append(Step("pg", "converted to psf", "pg [psf] = pg [kPa] / 0.0479",
                          f"{fmt(base * KPA_PER_PSF)} / {fmt(KPA_PER_PSF)}", base, "psf",
                          "NIST SP 811 Appendix B (1 psf = 0.0478803 kPa)"))  # fmt: skip
    valued = int(hits.state[0]) in (R.OK, R.UNCHECKED) and np.isfinite(base)
    if hits.zone_ids[0] != zid and not valued and int(hits.state[0]) in (R.STUDY, R.ABOVE):
        where = "overlapping zones" if hits.overlap[0] else "a shared edge of zones"
        steps.append(Step(q, f"{where}: a zone that requires a site-specific case study "
                          "precedes the mapped values of the others",
                          "study required where any zone of the site requires one",
                          hits.zone_ids[0].replace(";", ", "), None, unit,
                          f"{layer.name} ({where}; README, site resolution)"))  # fmt: skip
    elif hits.overlap[0] and valued:
        steps.append(Step(q, "overlapping zones: the larger value governs",
                          f"{q} = max({q} of each zone)", hits.zone_ids[0], shown(base), unit,
                          f"{layer.name} (overlapping zones)"))  # fmt: skip
    if hits.raised[0] and valued:
        neigh = hits.neigh_vals[0]
        if si:  # the neighbouring values travel in psf: shown in kPa
            neigh = "; ".join(_kpa_text(v) for v in str(neigh).split(";"))
        steps.append(Step(q, f"zone with a larger value within {layer.tolerance_m:g} m "
                          "of the site: the larger value governs",
                          f"{q} = max({q}, neighbouring values)",
                          f"max({fmt(shown(base))}; {neigh})", shown(pg), unit,
                          f"{layer.name} (boundary tolerance)"))  # fmt: skip
    return [s.to_dict() for s in steps]


#: ground quantities shown SI first (kPa before psf): EN 1991-1-3's sk
SI_FIRST = ("sk",)


def _kpa_text(value: str) -> str:
    """A neighbouring value [psf] of the look-up in kPa (a state such as ``study`` as it is)."""
    try:
        return fmt(float(value) * KPA_PER_PSF)
    except ValueError:
        return value


def _site_at(res: Resolution, alt: bool, q: str = "pg") -> tuple:
    """(elevation source, elevation [ft], status, pg [psf], zone) of the one site of ``res``.

    ``alt``: the result at the elevation that does not govern.
    """
    if alt:
        return (
            ELEVATION_ORIGINS[res.alt_source[0]],
            float(res.alt_elevation_ft[0]),
            STATUSES[res.alt_status[0]],
            float(res.alt_values.get(q, res.value(q))[0]),
            res.alt_zone_id[0],
        )
    return (ELEVATION_ORIGINS[res.elevation_source[0]], float(res.elevation_ft[0]),
            STATUSES[res.status[0]], float(res.value(q)[0]), res.zone_id[0])  # fmt: skip


def _elevation_step(res: Resolution, rule: str, q: str = "pg") -> dict:
    """The step that records a given elevation and the DEM disagreeing, and what governs."""
    _, elev_ft, status, pg, _ = _site_at(res, False, q)
    alt_src, alt_ft, alt_status, alt_pg, _ = _site_at(res, True, q)
    gov_src = "dem" if alt_src == "input" else "input"
    here = _outcome_text(status, pg, q)
    there = _outcome_text(alt_status, alt_pg, q)
    at = {gov_src: (elev_ft, here), alt_src: (alt_ft, there)}
    sub = "; ".join(
        f"{'given' if src == 'input' else 'DEM'} A = {fmt(at[src][0] * M_PER_FT)} m: {at[src][1]}"
        for src in ("input", "dem")
    )
    if rule == "input":
        eq, ref = "A = given elevation", "elevation source: input (given by the user)"
    else:
        eq = "A = the elevation with the more demanding ground load"
        ref = "neve: the larger ground load governs (README, site resolution)"
    return Step(
        "A",
        f"given elevation and DEM differ by more than {MISMATCH_M:g} m: "
        f"ground load worked at both; the {'DEM' if gov_src == 'dem' else 'given'} "
        "elevation governs",
        eq, sub, elev_ft, "ft", ref,
    ).to_dict()  # fmt: skip


def _outcome_text(status: str, psf, q: str = "pg") -> str:
    if status in ("ok", "provisional") and _num(psf) is not None:
        if q in SI_FIRST:
            return f"{q} = {fmt(float(psf) * KPA_PER_PSF)} kPa ({status})"
        return f"{q} = {fmt(float(psf))} psf ({status})"
    return status


def _alternatives(res: Resolution, q: str = "pg") -> list[dict]:
    """Both elevations of a site whose given elevation and DEM disagree, with their results.

    The value is under the key of the ground quantity ``q`` (``pg``, ``sk``).
    """
    if res.alt_source[0] < 0:
        return []
    alt_src, alt_ft, alt_status, alt_pg, alt_zone = _site_at(res, True, q)
    _, elev_ft, status, pg, zone = _site_at(res, False, q)
    gov_src = "dem" if alt_src == "input" else "input"

    def entry(src, ft, status, psf, zone, governs):
        usable = status in ("ok", "provisional") and _num(psf) is not None
        return {
            "source": src,
            "elevation": length_json(_num(ft)),
            "status": status,
            q: load_json(float(psf)) if usable else None,
            "zone_id": zone or None,
            "governs": governs,
        }

    both = [
        entry(gov_src, elev_ft, status, pg, zone, True),
        entry(alt_src, alt_ft, alt_status, alt_pg, alt_zone, False),
    ]
    return sorted(both, key=lambda e: e["source"] != "input")


def _finite(obj):
    """``obj`` with every non-finite float replaced by None, and whether any was."""
    if isinstance(obj, dict):
        pairs = [(k, _finite(v)) for k, v in obj.items()]
        return {k: v for k, (v, _) in pairs}, any(b for _, (_, b) in pairs)
    if isinstance(obj, list):
        pairs = [_finite(v) for v in obj]
        return [v for v, _ in pairs], any(b for _, b in pairs)
    if isinstance(obj, (float, np.floating)) and not math.isfinite(float(obj)):
        return None, True
    return obj, False


def _neighbours(hits, tol_m: float, q: str = "pg") -> list[dict]:
    p = hits.pairs
    if not p:
        return []
    sel = np.flatnonzero(p["site"] == 0)
    best: dict[str, tuple] = {}
    for k in sel:
        zid = str(p["zone_id"][k])
        d = float(p["m"][k])
        if zid not in best or d < best[zid][0]:
            best[zid] = (d, float(p["psf"][k]), int(p["state"][k]))
    out = []
    for zid, (d, psf, st) in sorted(best.items(), key=lambda kv: kv[1][0]):
        out.append(
            {
                "zone_id": zid,
                q: load_json(psf) if math.isfinite(psf) else None,
                "state": "value" if st in (R.OK, R.UNCHECKED) else "no value",
                "distance": length_json(d * FT_PER_M),
                "within_tolerance": d <= tol_m,
            }
        )
    return out


def roof_engine_accepts(standard: str, roof_standard=None, quantity: str = "pg") -> bool:
    """Whether a layer of ``standard`` (and ``quantity``) may feed ``roof_standard``'s roof loads.

    ``roof_standard``: a registered standard's id or name (the default one when
    omitted); the registry says which layer editions and quantities it takes
    (:meth:`neve.engine.standards.Standard.accepts_layer`).
    """
    from neve.engine.standards import get_standard

    return get_standard(roof_standard).accepts_layer(standard, quantity)


def resolve_site(
    lat: float,
    lon: float,
    *,
    elevation: str | None = None,
    dem=None,
    dem_units: str | None = None,
    layers=None,
    roof=None,
    name: str | None = None,
    project: str | None = None,
    address: str | None = None,
    given: str | None = None,
    elevation_source: str = "larger",
    standard=None,
    on_record_psf: float | None = None,
    risk: str | None = None,
    location_precision: str = "coordinates",
    location_radius_m: float = 0.0,
    location_source: str | None = None,
) -> SiteResult:
    """Resolve one site to its ground snow load and, given a roof, its roof loads.

    Parameters
    ----------
    lat, lon : float
        Site coordinates [degrees, EPSG:4326].
    elevation : str, optional
        Site elevation with its unit (``"412m"``, ``"1350ft"``).
    dem : path, optional
        DEM to sample (``"demo"`` is the embedded synthetic DEM).
    dem_units : str, optional
        Vertical unit of a DEM that states none; never overrides the unit
        the DEM states (a contradiction is refused), refused without ``dem``.
    layers : list of paths or Layer, optional
        Most local first; None gives the embedded demo stack.
    roof : engine.Roof, optional
        When given and the ground value is usable (``ok`` or
        ``provisional``), the roof engine runs on the ground value.
    name, project, address, given : str, optional
        Reported in ``site`` (``given`` is the input as the user wrote it).
    elevation_source : {"larger", "input"}
        Where ``elevation`` and the DEM differ by more than 15 m
        (``elevation_mismatch``), the ground load is worked at both and
        reported in ``ground.elevation_alternatives``; ``"larger"`` (default)
        lets the more demanding result govern, ``"input"`` the given
        elevation (:func:`neve.geo.site.resolve.more_demanding`).
    standard : str, optional
        The standard of the roof loads (an id or name of the standards
        registry, :mod:`neve.engine.standards`).  When omitted, the standard
        that takes the governing layer's edition (sidecar ``standard``: an
        ASCE 7-22 layer gives ASCE 7-22 roof loads), else the default one
        (ASCE 7-16).  An unknown one is an ``InputError`` listing those
        available.  Given, and the governing layer is of an edition another
        registered standard takes: flag ``edition_mismatch`` and no roof loads.
        With no ``layers``, a standard the default demo does not feed (ASCE
        7-22) uses its own invented demo layers.
    risk : {"I", "II", "III", "IV"}, optional
        The risk category whose ground load per-risk layers (ASCE 7-22) give;
        default the roof's ``risk``, else ``"II"``.  ``ground.pg_by_risk``
        lists all four.
    location_precision : {"coordinates", "address", "postal_code", "place"}
        How precisely ``lat, lon`` locate the site (:mod:`neve.geo.site.places`);
        ``postal_code`` and ``place`` set the flag ``location_approximate``.
    location_radius_m : float
        The uncertainty radius of the location [m]: every layer's boundary
        tolerance is raised to it (:meth:`neve.geo.layers.model.Layer.widened`),
        so a zone of another value or a study area within the circle flags the
        site and the larger value governs; with a DEM and no ``elevation`` the
        site is worked at the DEM's minimum and maximum over the circle, the more
        demanding result governs, and where they differ the flag
        ``elevation_rule_within_radius`` is set (:mod:`neve.geo.site.circle`;
        ``ground.elevation_over_radius``; the elevation source is ``dem``).
    location_source : str, optional
        Where the location came from (reported in ``site.location_source``).
    on_record_psf : float, optional
        The roof snow load on record of an existing roof [psf]: the result's
        ``on_record`` gives ``load_ratio`` = ``design_uniform`` / this load and
        ``exceeds_record`` (:mod:`neve.engine.on_record`).
    """
    from neve.engine.standards import get_standard

    explicit = get_standard(standard) if standard is not None else None  # unknown: refused now
    lat, lon = float(lat), float(lon)
    check_range(lat, lon)
    if roof is not None:
        from neve.engine.roof_spec import as_roof

        roof = as_roof(roof)
    from neve.engine.choices import choose_key

    elevation_source = choose_key("elevation-source", elevation_source, ELEVATION_SOURCES)
    if elevation_source == "input" and elevation is None:
        raise InputError(
            "elevation-source",
            "'input' given without --elevation",
            "--elevation-source input together with --elevation (e.g. 412m)",
        )
    dem_path = dem_argument(dem)
    check_dem_options(dem_path, dem_units)
    if layers is None or (isinstance(layers, (list, tuple)) and not layers):
        from neve.geo.layers.model import demo_layers_for

        layers = demo_layers_for(explicit)  # --standard asce7-22: the 7-22 demo layers
    risk = _risk_of(risk, roof)
    layers = [ly.for_risk(risk) for ly in as_layers(layers)]
    # ground layers first, then W2 layers: the look-up detail indexes the ground layers
    layers = [ly for ly in layers if ly.quantity != "w2"] + [
        ly for ly in layers if ly.quantity == "w2"
    ]
    from neve.geo.site.places import APPROXIMATE, PRECISIONS

    location_precision = choose_key("location-precision", location_precision, PRECISIONS)
    radius_m = float(location_radius_m or 0.0)
    if not math.isfinite(radius_m) or radius_m < 0:
        raise InputError("location-radius", f"{location_radius_m!r} is not a radius", "metres >= 0")
    if radius_m > 0:
        layers = [ly.widened(radius_m) for ly in layers]
    q = ground_quantity(layers)  # pg, or sk (EN 1991-1-3); a mixed stack is refused
    elev_in = parse_elevation(elevation)
    look_kw = dict(elevation_ft=[elev_in], dem=dem_path, dem_units=dem_units, search_m=SEARCH_M,
                   elevation_source=elevation_source)  # fmt: skip
    over = None
    circle = location_precision in APPROXIMATE and radius_m > 0 and math.isnan(elev_in)
    if circle and dem_path is not None:
        over = _over_circle(lat, lon, radius_m, dem_path, dem_units, layers)
    if over is None:
        res = resolve([lat], [lon], layers=layers, keep_detail=True, **look_kw)
    else:  # the DEM over the circle: worked at its minimum and maximum, the larger governs
        res = over.pop("result")
        look_kw = dict(elevation_ft=[float(res.elevation_ft[0])], search_m=SEARCH_M)
    look, _ = res.detail.governing(0)  # where the DEM elevation governs, its look-up
    g = int(res.layer[0])
    bits = int(res.flags[0])
    status = STATUSES[res.status[0]]
    pg = float(res.value(q)[0])  # the ground value [psf], in the one container it travels in
    message = res.message[0]
    gov_layer = layers[g] if g >= 0 else None
    steps: list[dict] = []
    neighbours: list[dict] = []
    if gov_layer is not None:
        hits = look.hits[g]
        source = ELEVATION_ORIGINS[res.elevation_source[0]]
        if over is not None:
            source = f"DEM, the {over['used_at']} over the location circle"
        steps = _steps(gov_layer, hits, pg, float(res.elevation_ft[0]), source)
        if res.alt_source[0] >= 0:
            steps.insert(0, _elevation_step(res, elevation_source, q))
        neighbours = _neighbours(hits, gov_layer.tolerance_m, q)
        zone = f"Zone {res.zone_id[0]} ({res.rule[0]})"
        if res.zone_ids[0] != res.zone_id[0]:
            zone += f", of overlapping zones {res.zone_ids[0].replace(';', ', ')}"
        message = f"{zone}. {message}"
    else:
        near = [n for h in look.hits for n in _neighbours(h, math.inf, q)]
        if near:
            n0 = min(near, key=lambda n: n["distance"]["m"])
            message += f" The nearest zone is {n0['zone_id']}, {n0['distance']['m']:.0f} m away."
    if bits & BIT["coordinates_suspect"] and g < 0 and abs(lon) <= 90 and lat != lon:
        message += f" Did you mean {lon:g},{lat:g} (latitude and longitude swapped)?"
    others = []
    for k, layer in enumerate(layers):
        if k == g or layer.quantity == "w2":
            continue
        st, _ = look.per_layer[k]
        h = look.hits[k]
        psf = h.value_psf[0] if st[0] == 0 else math.nan
        others.append(
            {
                "name": layer.name,
                "status": STATUSES[int(st[0])] if h.covered[0] else "no_data",
                q: load_json(psf) if math.isfinite(psf) else None,
                "zone_id": h.zone_id[0] or None,
                "sha256": layer.sha256,
            }
        )
    if location_precision in ("postal_code", "place"):
        bits |= BIT["location_approximate"]
        res.flags[0] = np.uint64(int(res.flags[0]) | BIT["location_approximate"])
        what = "ZIP code" if location_precision == "postal_code" else "place"
        message += (
            f" The site was located at a {what} centroid, uncertain within {radius_m:,.0f} m:"
            " zones, study areas and elevation limits within that circle were considered"
            " and the larger value governs; give --at LAT,LON or a full address for the"
            " site itself."
        )
    usable = status in ("ok", "provisional")
    roof_json = None
    roof_result = None
    std = str(gov_layer.meta.get("standard", "")) if gov_layer is not None else ""
    quantity = str(gov_layer.meta.get("quantity", "pg")) if gov_layer is not None else "pg"
    roof_std = explicit if explicit is not None else layer_standard(std, quantity)
    w2 = float(res.value("w2")[0])
    if roof is not None and usable and not roof_std.accepts_layer(std, quantity):
        takers = [s.title for s in _takers(std, quantity)]
        if explicit is not None and takers:
            bits |= BIT["edition_mismatch"]
            message += (
                f" No roof snow loads were computed: the governing layer maps {std} ground loads"
                f" (for {', '.join(takers)}), and --standard asks for {roof_std.title};"
                " neve never mixes one edition's map with another edition's equations"
                f" (give a {roof_std.title} layer, or --standard {_takers(std, quantity)[0].id})."
            )
        else:
            bits |= BIT["roof_standard_unsupported"]
            message += (
                f" No roof snow loads were computed: the layer maps ground loads for {std},"
                f" and neve's roof engine covers {', '.join(roof_std.layer_standards)} ground loads only."
            )
    elif roof is not None:
        if usable:
            # the standard's load unit: ASCE 7 takes pg in psf, EN 1991-1-3 sk in kPa
            load_in = KPA_PER_PSF if roof_std.units.get("load") == "kPa" else 1.0
            quantities = {quantity: pg * load_in}
            roof = _with_site_altitude(roof, roof_std, float(res.elevation_ft[0]))
            if "w2" in roof_std.quantities:
                quantities["w2"] = w2 if math.isfinite(w2) else None
            roof_result = roof_std.analyze(quantities, roof)
            roof_json = roof_result.to_json()
            if status == "provisional":
                limiting = ", ".join(flag_names(bits & ~BIT["demo_data"]))
                roof_json["flags"] = sorted(set(roof_json["flags"]) | {"ground_provisional"})
                roof_json["cautions"].insert(
                    0,
                    f"These roof loads follow from a provisional ground snow load ({limiting});"
                    " resolve those flags before design.",
                )
        else:
            message += f" No roof snow loads were computed: the ground status is {status}."
    cautions = list(roof_std.cautions)
    if any(layer.demo for layer in layers):
        cautions.insert(0, DEMO_CAUTION)
    elev_ft = _num(res.elevation_ft[0])
    dist = _num(res.distance_to_other_m[0])
    zone_id, zone_ids = res.zone_id[0], res.zone_ids[0]
    ground = {
        "status": status,
        "quantity": q,
        "pg": load_json(pg) if usable and q == "pg" else None,
        **({q: load_json(pg) if usable else None} if q != "pg" else {}),
        "zone_id": zone_id or None,
        "zone_ids": _zone_list(zone_id, zone_ids),
        "rule": res.rule[0] or None,
        "flags": flag_names(bits),
        "message": message,
        "elevation": length_json(elev_ft),
        "elevation_source": ELEVATION_ORIGINS[res.elevation_source[0]],
        "dem_elevation": length_json(_num(res.dem_elevation_ft[0])),
        "elevation_rule": elevation_source,
        "elevation_alternatives": _alternatives(res, q),
        "elevation_over_radius": None if over is None else _over_json(over),
        "distance_to_other": None if dist is None else length_json(dist * FT_PER_M),
        "neighbours": neighbours,
        "risk_category": risk,
        "pg_by_risk": _pg_by_risk(gov_layer, res, lat, lon, layers, look_kw),
        "w2": _w2_json(res, layers),
        "layer": gov_layer.info() if gov_layer is not None else None,
        "layers": [layer.info() for layer in layers],
        "other_layers": others,
        "steps": steps,
        "cautions": cautions,
    }
    site = {
        "lat": lat,
        "lon": lon,
        "name": name,
        "project": project,
        "input": given if given is not None else f"{lat:g},{lon:g}",
    }
    if address is not None:
        site["address"] = address
    site["location_precision"] = location_precision
    site["location_radius"] = length_json(radius_m * FT_PER_M)
    site["location_source"] = location_source
    ground, nonfinite = _finite(ground)
    if nonfinite:  # never NaN or infinity in an output: null, and said so
        bits |= BIT["non_finite_value"]
        ground["flags"] = flag_names(bits)
        ground["message"] += " A value that is not a finite number was reported as null."
    on_record = None
    if on_record_psf is not None:
        from neve.engine.on_record import on_record_json, parse_on_record

        if isinstance(on_record_psf, str):
            on_record_psf = parse_on_record(on_record_psf)
        design = None if roof_json is None else roof_json.get("design_uniform")
        exact = getattr(roof_result, "design_uniform", None)  # unrounded, as screening has it
        on_record = on_record_json(
            float(on_record_psf), design, status, roof is not None, design_psf=exact
        )
    return SiteResult(
        site, ground, roof_json, list(layers), res.without_detail(), roof_result, on_record
    )


def _with_site_altitude(roof, std, elev_ft: float):
    """``roof`` with the site's elevation as its ``altitude`` where ``std`` takes one and none
    was given (EN 1991-1-3: the site altitude of 6.3); unchanged otherwise."""
    if not math.isfinite(elev_ft) or roof.option("altitude") is not None:
        return roof
    if not any(o.name == "altitude" for o in std.roof_options):
        return roof
    from dataclasses import replace

    return replace(roof, extra={**dict(roof.extra), "altitude": elev_ft})


def _risk_of(risk, roof) -> str:
    """The risk category asked: ``risk``, else the roof's, else II."""
    from neve.engine.choices import choose_key
    from neve.geo.layers.model import DEFAULT_RISK
    from neve.geo.layers.sidecar import RISK_CATEGORIES

    if risk is None and roof is not None:
        risk = getattr(roof, "risk", None)
    return choose_key("risk", str(risk or DEFAULT_RISK).upper(), RISK_CATEGORIES)


def _takers(layer_std: str, quantity: str = "pg") -> list:
    """The registered standards that take a layer of edition ``layer_std``."""
    from neve.engine.standards import standards

    return [s for s in standards() if s.accepts_layer(layer_std, quantity)]


def layer_standard(layer_std: str, quantity: str = "pg"):
    """The roof standard a layer's edition chooses: the first registered one that takes it,
    else the default standard (ASCE 7-16)."""
    from neve.engine.standards import get_standard

    takers = _takers(layer_std, quantity) if layer_std else []
    return takers[0] if takers else get_standard(None)


def _pg_by_risk(gov_layer, res, lat, lon, layers, look_kw) -> dict | None:
    """``{"I": load|null, ... "IV": ...}`` when the governing layer maps pg per risk category.

    Each category is resolved with the same layers, elevation and rules as the
    chosen one; null for a category without a usable value.  None (JSON null)
    when the governing layer maps one pg for every category (ASCE 7-16).
    """
    if gov_layer is None or not gov_layer.per_risk:
        return None
    from neve.geo.layers.sidecar import RISK_CATEGORIES

    out = {}
    for cat in RISK_CATEGORIES:
        if cat == gov_layer.risk:
            r = res
        else:
            r = resolve([lat], [lon], layers=[ly.for_risk(cat) for ly in layers], **look_kw)
        v = float(r.value("pg")[0])
        ok = STATUSES[r.status[0]] in ("ok", "provisional") and math.isfinite(v)
        out[cat] = load_json(v) if ok else None
    return out


def _w2_json(res: Resolution, layers) -> dict | None:
    """``{"value", "zone_id", "layer", "flags"}`` of the W2 look-up; None without a W2 layer."""
    if not any(ly.quantity == "w2" for ly in layers):
        return None
    k = int(res.extra["w2_layer"][0])
    v = _num(res.value("w2")[0])
    return {
        "value": None if v is None else round(v, 6),
        "zone_id": res.extra["w2_zone_id"][0] or None,
        "layer": layers[k].info() if k >= 0 else None,
        "flags": flag_names(int(res.extra["w2_flags"][0])),
    }


def _zone_list(zone_id: str, zone_ids: str) -> list[str]:
    """Every zone at the site: the governing one alone unless zones overlap or touch."""
    if zone_ids == zone_id:
        return [zone_id] if zone_id else []
    return [z for z in zone_ids.split(";") if z]


def _over_circle(lat, lon, radius_m, dem_path, dem_units, layers) -> dict | None:
    """The site resolved over its uncertainty circle (:mod:`neve.geo.site.circle`), or None.

    None where no point of the circle has a DEM value (the site is then resolved
    as without the circle, and flagged ``dem_nodata``).
    """
    from neve.geo.site.circle import elevation_over_circle, resolve_over_circle

    got = elevation_over_circle([lat], [lon], [radius_m], dem_path, dem_units)
    if not np.isfinite(got["min_ft"][0]):
        return None

    def one(la, lo, elev, **kw):
        return resolve(la, lo, elevation_ft=elev, **kw)

    res, changed, max_governs = resolve_over_circle(
        [lat], [lon], [radius_m], got, resolver=one, layers=layers, search_m=SEARCH_M,
        keep_detail=True,
    )  # fmt: skip
    lo_ft, hi_ft = float(got["min_ft"][0]), float(got["max_ft"][0])
    return {
        "result": res,
        "min_ft": lo_ft,
        "max_ft": hi_ft,
        "used_ft": hi_ft if max_governs[0] else lo_ft,
        "used_at": "maximum" if max_governs[0] else "minimum",
        "points": int(got["points"][0]),
        "rule_change": bool(changed[0]),
        "at_min": _circle_outcome(res, "min"),
        "at_max": _circle_outcome(res, "max"),
    }


def _circle_outcome(res: Resolution, which: str) -> dict:
    """``{status, pg}`` of the result at the circle's minimum or maximum elevation."""
    status = STATUSES[int(res.extra[f"circle_{which}_status"][0])]
    pg = float(res.extra[f"circle_{which}_pg"][0])
    usable = status in ("ok", "provisional") and math.isfinite(pg)
    return {"status": status, "pg": load_json(pg) if usable else None}


def _over_json(over: dict) -> dict:
    """``ground.elevation_over_radius`` (docs/contract.md, "JSON output")."""
    return {
        "min": length_json(over["min_ft"]),
        "max": length_json(over["max_ft"]),
        "used": length_json(over["used_ft"]),
        "used_at": over["used_at"],
        "points": over["points"],
        "rule_change": over["rule_change"],
        "at_min": over["at_min"],
        "at_max": over["at_max"],
    }
