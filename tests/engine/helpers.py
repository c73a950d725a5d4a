"""Small helpers shared by the engine tests (no expected values live here)."""

from __future__ import annotations

from neve.engine import Roof, analyze_roof

#: a neutral roof: every factor 1.0, so hand arithmetic stays short
NEUTRAL = {"ce": 1.0, "ct": 1.0, "risk": "II"}


def roof(**kw) -> Roof:
    """A Roof from option names; starts from the neutral factors unless overridden."""
    data = dict(NEUTRAL)
    if "terrain" in kw or "exposure" in kw:
        data.pop("ce")
    if "thermal" in kw:
        data.pop("ct")
    data.update(kw)
    return Roof.from_mapping(data)


def run(pg_psf: float, **kw) -> dict:
    """``analyze_roof(pg, roof(**kw)).to_json()``."""
    return analyze_roof(pg_psf, roof(**kw)).to_json()


def cases(result: dict, kind: str) -> list[dict]:
    """All cases of one kind in a JSON result."""
    return [c for c in result["cases"] if c["case"] == kind]


def skipped(result: dict, kind: str) -> list[dict]:
    """All not-required entries of one kind in a JSON result."""
    return [c for c in result["not_required"] if c["case"] == kind]
