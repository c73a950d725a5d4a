"""The verification manual: the report of ``neve verify`` as text, JSON or an HTML page.

:func:`verification_report` runs the registered verification cases
(:func:`neve.engine.standards.run_verification`) and adds the machine they ran
on; :func:`verification_html` renders the report as a readable, offline HTML
page through neve's autoescaping Jinja environment (every text escaped);
:func:`write_verification` writes one of the three forms through
:mod:`neve.safe_write` (whole or not at all, never over an existing file
unless asked).
"""

from __future__ import annotations

import datetime as _dt
import platform
import sys
from collections.abc import Mapping
from pathlib import Path

#: what the manual says about itself, above the cases
MANUAL_CAUTIONS = (
    "A passing case shows that neve reproduces the value on this machine; it does not replace "
    "the engineer's own check of the inputs, the load cases and the results.",
    "Expected values marked 'from memory' were restated without the standard at hand: check "
    "them against the edition you design to.",
)

FORMATS = ("text", "json", "html")


def _version() -> str:
    try:
        from importlib.metadata import version

        return version("neve")
    except Exception:  # pragma: no cover - a source tree without metadata
        return "0+unknown"


def environment() -> dict:
    """The machine the cases ran on: neve, Python, numpy, operating system, time (UTC)."""
    import numpy

    return {
        "neve": _version(),
        "python": platform.python_version(),
        "numpy": numpy.__version__,
        "platform": f"{platform.system()} {platform.release()} {platform.machine()}".strip(),
        "executable": sys.executable,
        "run_at": _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M:%S UTC"),
    }


def verification_report(standard=None) -> dict:
    """Run the cases of ``standard`` (None: every registered one) -> ``{cases, summary, environment}``."""
    from neve.engine.standards import run_verification

    report = run_verification(standard)
    report["environment"] = environment()
    return report


def verify(standard=None) -> dict:
    """``neve verify`` from Python: the report of :func:`verification_report`."""
    return verification_report(standard)


def _show(value) -> str:
    """A value for people: numbers to 6 significant digits, mappings as ``key: value``."""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:.6g}"
    if value is None:
        return "none"
    if isinstance(value, Mapping):
        return ", ".join(f"{k}: {_show(v)}" for k, v in value.items())
    if isinstance(value, (list, tuple)):
        return "; ".join(f"[{_show(v)}]" if isinstance(v, Mapping) else _show(v) for v in value)
    return str(value)


def _context(report: Mapping) -> dict:
    from neve.engine.standards import find_standard

    sections: dict[tuple[str, str], list[dict]] = {}
    for case in report["cases"]:
        rows = [
            {
                "quantity": key,
                "expected": _show(want),
                "computed": _show(case["computed"].get(key)),
                "tolerance": (
                    f"\u00b1 {case['tolerance'].get(key, 0.0):g}"
                    if case["tolerance"].get(key)
                    else "exact"
                ),
            }
            for key, want in case["expected"].items()
        ]
        inputs = [(str(k), _show(v)) for k, v in case["inputs"].items()]
        item = dict(case, rows=rows, input_rows=inputs)
        sections.setdefault((case["standard"], case.get("group") or ""), []).append(item)
    cautions = list(MANUAL_CAUTIONS)
    for title in report["summary"]["standards"]:
        std = find_standard(title)
        if std is not None:
            cautions.extend(c for c in std.cautions if c not in cautions)
    return {
        "summary": report["summary"],
        "env": report.get("environment") or {},
        "sections": [
            {
                "standard": std,
                "title": title,
                "cases": cases,
                "failed": sum(not c["ok"] for c in cases),
            }
            for (std, title), cases in sections.items()
        ],
        "cautions": cautions,
    }


def verification_html(report: Mapping) -> str:
    """The verification manual page (one self-contained HTML file, nothing fetched)."""
    from neve.maps.templating import render

    return render("verification.html.j2", **_context(report))


def verification_text(report: Mapping) -> str:
    """The report as plain text (:func:`neve.engine.standards.verification_text`)."""
    from neve.engine.standards import verification_text as text

    return text(report)


def verification_json(report: Mapping) -> str:
    """The report as one JSON object (``cases``, ``summary``, ``environment``)."""
    from neve.engine.jsonsafe import dumps

    return dumps(report, indent=2, ensure_ascii=False)


def render_verification(report: Mapping, fmt: str = "text") -> str:
    """The report in ``fmt`` (``text``, ``json`` or ``html``)."""
    from neve.engine.choices import choose_key

    fmt = choose_key("format", fmt, FORMATS)
    if fmt == "html":
        return verification_html(report)
    if fmt == "json":
        return verification_json(report)
    return verification_text(report)


def write_verification(
    report: Mapping, path: str | Path, fmt: str = "text", *, overwrite: bool = False
) -> Path:
    """Write the report in ``fmt`` to ``path``, atomically; an existing file only with ``overwrite``."""
    from neve.safe_write import write_text

    text = render_verification(report, fmt)
    if not text.endswith("\n"):
        text += "\n"
    return write_text(path, text, overwrite=overwrite, field="output", parents=True)


__all__ = [
    "FORMATS",
    "MANUAL_CAUTIONS",
    "environment",
    "render_verification",
    "verification_html",
    "verification_json",
    "verification_report",
    "verification_text",
    "verify",
    "write_verification",
]
