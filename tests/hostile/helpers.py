"""Oracles and strategies of the hostile-input suite (issue 8, section 5).

The oracles here are independent of neve's own code: records of a CSV file
are counted by Python's :mod:`csv` module (RFC 4180 reading, which is what
"a record" means for a CSV file), JSON is parsed by a parser that refuses
NaN and Infinity, and HTML is searched for the evaluated forms of template
payloads planted in the inputs.  All data generated here is invented.
"""

from __future__ import annotations

import csv
import html
import io
import json
import math
import os
import re
import traceback
import warnings
from dataclasses import dataclass
from pathlib import Path

from click.testing import CliRunner
from hypothesis import HealthCheck, Phase, settings
from hypothesis import strategies as st

# --------------------------------------------------------------------------- settings

_QUIET_CHECKS = [
    HealthCheck.too_slow,
    HealthCheck.data_too_large,
    HealthCheck.large_base_example,
    HealthCheck.filter_too_much,
]
#: CI: bounded and derandomized, so a failure reproduces on every machine; no shrinking,
#: so a failing run stays short and prints its example (the deep profile shrinks)
settings.register_profile(
    "hostile-ci",
    max_examples=20,
    deadline=None,
    derandomize=True,
    database=None,
    suppress_health_check=_QUIET_CHECKS,
    print_blob=True,
    phases=(Phase.explicit, Phase.reuse, Phase.generate),
    report_multiple_bugs=False,
)
#: local hunting: twenty times the examples, random, with the example database, shrinking
settings.register_profile(
    "hostile-deep",
    max_examples=400,
    deadline=None,
    derandomize=False,
    suppress_health_check=_QUIET_CHECKS,
    print_blob=True,
)


def examples(n: int = 20) -> settings:
    """Hypothesis settings for a test of this folder: ``n`` examples in CI, 20 x locally.

    ``NEVE_HYPOTHESIS_PROFILE=deep`` selects the deep profile (see conftest.py).
    """
    deep = os.environ.get("NEVE_HYPOTHESIS_PROFILE", "").lower() == "deep"
    parent = settings.get_profile("hostile-deep" if deep else "hostile-ci")
    return settings(parent, max_examples=n * 20 if deep else n)


# --------------------------------------------------------------------------- running neve


#: warning categories Python does not show a user by default
_HIDDEN_WARNINGS = (DeprecationWarning, PendingDeprecationWarning, ImportWarning, ResourceWarning)


def run(args: list[str]):
    """Run ``neve ARGS`` in-process through click's CliRunner (no geocoder from the environment).

    The Python warnings a user would see on stderr are kept as ``result.shown_warnings``.
    """
    from neve.cli import main

    runner = CliRunner(env={"NEVE_GEOCODER_URL": None})
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        result = runner.invoke(main, [str(a) for a in args], catch_exceptions=True)
    result.shown_warnings = [w for w in caught if not issubclass(w.category, _HIDDEN_WARNINGS)]
    return result


def warning_problems(result, what: str) -> list[str]:
    """A library warning that would reach the user's stderr (flags say it, warnings never)."""
    return [
        f"{what}: {w.category.__name__} on stderr: {str(w.message)[:160]} "
        f"({Path(w.filename).name}:{w.lineno})"
        for w in getattr(result, "shown_warnings", [])
    ]


def crash_text(result) -> str:
    """The uncaught exception of a CliRunner result as text, or ``""`` when there is none."""
    exc = result.exception
    if exc is None or isinstance(exc, SystemExit):
        return ""
    return "".join(traceback.format_exception(type(exc), exc, exc.__traceback__))


def assert_exit(result, allowed=(0, 2), what: str = "") -> None:
    """Exit code in ``allowed`` and no uncaught exception (issue 8 section 5: never 1)."""
    crash = crash_text(result)
    assert not crash, f"{what}: uncaught exception (exit {result.exit_code}):\n{crash}"
    assert result.exit_code in allowed, (
        f"{what}: exit {result.exit_code}, expected one of {allowed}\n"
        f"stdout: {result.stdout[-1500:]}\nstderr: {result.stderr[-1500:]}"
    )


def _no_constant(name: str):
    raise ValueError(f"non-finite number {name} in JSON output")


def strict_json(text: str):
    """Parse JSON refusing NaN, Infinity and -Infinity (RFC 8259 has no such numbers)."""
    return json.loads(text, parse_constant=_no_constant)


def walk_numbers(obj, path: str = ""):
    """Yield (path, number) for every int or float in a parsed JSON document."""
    if isinstance(obj, bool):
        return
    if isinstance(obj, (int, float)):
        yield path, obj
    elif isinstance(obj, dict):
        for k, v in obj.items():
            yield from walk_numbers(v, f"{path}.{k}")
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            yield from walk_numbers(v, f"{path}[{i}]")


# --------------------------------------------------------------------------- hostile text

#: template payloads planted in text fields -> what they become when a template engine runs them
TEMPLATE_PAYLOADS = {
    "Z7Q{{ 7*7 }}": ("Z7Q49",),
    "Z8Q{% for x in [1] %}x{% endfor %}Z8R": ("Z8QxZ8R",),
    "Z9Q{# c #}Z9R": ("Z9QZ9R",),
    "Z3Q{#": (),  # an unterminated comment: a template engine refuses it (crash)
    "Z2Q{{": (),  # an unterminated expression: same
    "Z1Q}}": (),
    # runs `echo` (harmless) if a template engine evaluates it; the output would read Y6P42
    "Y6Q{{ lipsum.__globals__.os.popen('echo Y6P$((6*7))').read() }}": ("Y6P42",),
}
#: HTML payloads -> raw text that must never appear in a page (an element built from input text)
HTML_PAYLOADS = {
    "<script>Z4Q</script>": ("<script>z4q", "z4q</script"),
    "<img src=x onerror=Z5Q()>": ("<img src=x onerror=z5q",),
    '"><svg onload=Z0Q()>': ("<svg onload=z0q",),
}
PAYLOADS = {**TEMPLATE_PAYLOADS, **HTML_PAYLOADS}
#: every payload starts with a token of three characters that is shown when the text is shown
TOKENS = {p: re.search(r"[ZY]\dQ", p).group(0) for p in PAYLOADS}

FRAGMENTS = (
    *PAYLOADS,
    "{{",
    "}}",
    "{%",
    "%}",
    "{#",
    "#}",
    "<",
    ">",
    "&",
    "&amp;",
    "</div>",
    "</script>",
    "<!--",
    "'",
    '"',
    "`",
    "${alert(3)}",
    "\\",
    "\\u0000",
    "\t",
    "\r",
    "\n",
    "\r\n",
    "\x00",
    "\x01",
    "\x1b[31m",
    "\x7f",
    "\x85",
    "\u2028",
    "\u202e",
    "\ufeff",
    " ",
    ",",
    ";",
    "=1+1",
    "+1",
    "-1",
    "@SUM(A1)",
    "NA",
    "null",
    "None",
    "N/A",
    "nan",
    "inf",
    "TRUE",
    "2024-01-05",
    "02134",
    "12345678901234567891",
    "é",
    "雪",
    "😀",
)


def hostile_text(max_parts: int = 5) -> st.SearchStrategy[str]:
    """Random text: hostile fragments mixed with arbitrary unicode (no surrogates)."""
    part = st.one_of(st.sampled_from(FRAGMENTS), st.text(max_size=6))
    return st.lists(part, max_size=max_parts).map("".join)


def marked_text(max_parts: int = 4) -> st.SearchStrategy[str]:
    """A payload first (so its token survives any cut to length), then random text."""
    return st.tuples(st.sampled_from(list(PAYLOADS)), hostile_text(max_parts)).map("".join)


def arg_text(strategy: st.SearchStrategy[str]) -> st.SearchStrategy[str]:
    """Text that can be a command-line argument (an argv string cannot carry NUL)."""
    return strategy.map(lambda s: s.replace("\x00", ""))


# --------------------------------------------------------------------------- HTML oracle

_U_ESCAPE = re.compile(r"\\u([0-9a-fA-F]{4})")


def decoded(text: str) -> str:
    """Text with HTML character references and JS/JSON ``\\uXXXX`` escapes resolved (twice)."""
    for _ in range(2):
        text = html.unescape(_U_ESCAPE.sub(lambda m: chr(int(m.group(1), 16)), text))
    return text


_SWITCHER = re.compile(r"\b(?:base_layers|overlays)\s*:\s*\{(.*?)\}", re.S)
_JS_KEY = re.compile(r'"((?:[^"\\]|\\.)*)"\s*:')


def switcher_names(raw: str) -> list[str]:
    """The layer names of a Leaflet layer switcher, as the browser gets them.

    Leaflet inserts these names with ``innerHTML``, so, once their JSON
    escapes are resolved, they must hold no markup of their own.
    """
    names = []
    for block in _SWITCHER.findall(raw):
        for key in _JS_KEY.findall(block):
            try:
                names.append(json.loads(f'"{key}"'))
            except ValueError:
                names.append(key)
    return names


def page_defects(path: Path) -> list[str]:
    """What a page shows of an evaluated template or an element built from input text.

    A template payload must never turn into its evaluated form, in the raw page
    or once its escapes are resolved; an HTML payload must never stand in the
    raw page (HTML or SVG) as markup, nor in a name of the layer switcher
    (which Leaflet inserts as HTML) once its JSON escapes are resolved.  A JSON file is data: it keeps the text
    exactly, so only the template check applies to it.
    """
    raw = Path(path).read_text(encoding="utf-8", errors="replace")
    out = []
    plain = decoded(raw)
    for payload, evaluated in TEMPLATE_PAYLOADS.items():
        for form in evaluated:
            if form in raw or form in plain:
                out.append(f"{path.name}: {payload!r} was evaluated (found {form!r})")
    if Path(path).suffix.lower() == ".json":  # data, not a page: text kept exactly
        return out
    low = raw.lower()
    switcher = " ".join(switcher_names(raw)).lower()
    for payload, forms in HTML_PAYLOADS.items():
        for form in forms:
            if form in low:
                out.append(f"{path.name}: {payload!r} stands as markup (found {form!r})")
            if form in switcher:
                out.append(f"{path.name}: {payload!r} is markup in the layer switcher")
    return out


def shows_token(path: Path, text: str) -> bool:
    """True when the page shows the token of the payload that starts ``text``."""
    token = next((TOKENS[p] for p in PAYLOADS if text.startswith(p)), None)
    if token is None:
        return True
    return token in decoded(Path(path).read_text(encoding="utf-8", errors="replace"))


def output_pages(folder: Path) -> list[Path]:
    """Every HTML, SVG and JSON file under ``folder`` (a calculation package, say)."""
    return sorted(
        p for p in Path(folder).rglob("*") if p.suffix.lower() in (".html", ".htm", ".svg", ".json")
    )


# --------------------------------------------------------------------------- CSV oracle


@dataclass
class Record:
    """One CSV record: its fields and the physical lines it spans (1-based)."""

    fields: list[str]
    first_line: int
    last_line: int
    malformed: bool = False  # not an RFC 4180 record: the line is read on its own

    @property
    def lines(self) -> int:
        return self.last_line - self.first_line + 1


def physical_lines(data: bytes) -> list[str]:
    """The physical lines of a CSV file (ends kept; CR, LF and CR LF end a line)."""
    text = data.decode("utf-8", "surrogateescape")
    if text.startswith("\ufeff"):
        text = text[1:]
    return list(io.StringIO(text, newline=""))


def csv_records(data: bytes) -> list[Record]:
    """The records of a CSV file as a strict RFC 4180 reader finds them, line by line.

    From each line that starts a record, Python's csv module (``strict=True``)
    reads one record: a quoted field may hold line breaks, so a record may span
    several physical lines.  Where the lines do not make a well-formed record
    (a quote never closed, text after a closing quote), that one line is a
    record of its own, marked malformed (an error row), and reading goes on
    with the next line, so a stray quote never swallows the rows after it.  A
    line with nothing on it is not a record.  Bytes that are not UTF-8 are kept
    as surrogate escapes so they never shift a record boundary.
    """
    lines = physical_lines(data)
    out, i = [], 0
    while i < len(lines):
        if lines[i] in ("\n", "\r\n", "\r"):
            i += 1
            continue
        reader = csv.reader(iter(lines[i:]), strict=True)
        try:
            fields = next(reader)
            out.append(Record(fields, i + 1, i + reader.line_num))
            i += reader.line_num
        except csv.Error:
            fields = next(csv.reader([lines[i]]), [])
            out.append(Record(fields, i + 1, i + 1, malformed=True))
            i += 1
    return out


def has_surrogate(text: str) -> bool:
    return any("\udc80" <= c <= "\udcff" for c in text)


def csv_field(value: str, quote_all: bool = False) -> str:
    """One field as a careful writer writes it (RFC 4180 minimal quoting)."""
    if quote_all or any(c in value for c in ',"\r\n'):
        return '"' + value.replace('"', '""') + '"'
    return value


def is_missing(value) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value))


def same_cell(expected, got, numeric_ok: bool = False) -> bool:
    """An output cell equal to the input cell: same text; a blank input may come back empty.

    ``numeric_ok``: a column neve reads as numbers (lat, lon) may come back as
    the same number.
    """
    if is_missing(got):
        return is_missing(expected) or expected == ""
    if isinstance(expected, str) and isinstance(got, str):
        return got == expected
    if isinstance(got, bool) or isinstance(expected, bool):
        return got is expected
    if numeric_ok and isinstance(got, (int, float)):
        try:
            return float(expected) == float(got)
        except (TypeError, ValueError):
            return False
    return got == expected


def read_parquet_columns(path: Path) -> tuple[list[str], dict[str, list]]:
    """Column names and values of a Parquet file, nulls as None (no NaN/None blurring)."""
    import pyarrow.parquet as pq

    table = pq.read_table(path)
    return table.column_names, {name: table.column(name).to_pylist() for name in table.column_names}


def row_flags(cell) -> set[str]:
    if not isinstance(cell, str):
        return set()
    return {f.strip() for f in re.split(r"[;,]", cell) if f.strip()}


#: statuses a site can have (README); `error` is the only one without a value expected
STATUSES = ("ok", "provisional", "study_required", "no_data", "error")
#: the plausibility bound on ground snow loads (README: values above 2000 psf are data errors)
PG_MAX_PSF = 2000.0


def number_defects(columns: dict[str, list], statuses: list) -> list[str]:
    """Every number finite or its row ``error``; a value for ok/provisional rows, within bounds.

    Loads of an ``ok`` or ``provisional`` row lie between 0 and the 2000 psf
    plausibility bound (README, issue 8 section 3).
    """
    out = []
    for name, values in columns.items():
        for i, v in enumerate(values):
            if isinstance(v, bool) or not isinstance(v, (int, float)):
                continue
            if not math.isfinite(v) and statuses[i] != "error":
                out.append(f"row {i}: {name} = {v!r} with status {statuses[i]!r}")
    pg = columns.get("pg_psf")
    if pg is not None:
        for i, (v, s) in enumerate(zip(pg, statuses, strict=True)):
            if s in ("ok", "provisional"):
                if is_missing(v) or not (0.0 <= v <= PG_MAX_PSF):
                    out.append(f"row {i}: status {s!r} with pg_psf {v!r}")
    return out
