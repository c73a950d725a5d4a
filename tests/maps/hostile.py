"""Hostile text for the map and report tests, and a decoder of what a page shows.

The payloads are template syntax (Jinja's ``{{ }}``, ``{% %}``, ``{#``),
a template expression that would run a shell command, and the classic HTML
and attribute-breaking payloads (common practice in web security testing).
Every field gets its own tag, ``NVQ<field>:<payload>:QVN``, so the tests can
find each field in each output and tell which one was evaluated: a compiled
``NVQsite_name:{{ 7*7 }}:QVN`` would read ``NVQsite_name:49:QVN``.
"""

from __future__ import annotations

import json
import re
from html.parser import HTMLParser

#: payload name -> text; ``marker`` is built per test folder (see :func:`payloads`)
BASE_PAYLOADS = {
    "expr": "{{ 7*7 }}",
    "loop": "{% for x in [1] %}x{% endfor %}",
    "comment_open": "{#",
    "close": "}}",
    "shell": "A{{ lipsum.__globals__.os.popen('id').read() }}B",
    "script": "<script>alert(1)</script>",
    "img": "<img src=x onerror=alert(1)>",
    "attr_break": '"><svg onload=alert(1)>',
}

#: what a compiled payload would leave between the tag's colons
EVALUATED = {
    "expr": ["49"],
    "loop": ["x"],
    "shell": ["AB"],
    "marker": ["AB"],
}

#: markup that must never appear as live markup in any output
LIVE_MARKUP = re.compile(r"<script>alert\(|<img src=x onerror|<svg onload", re.IGNORECASE)
#: the output of ``id`` (what the shell payload would print)
ID_OUTPUT = re.compile(r"uid=\d+\(\w*\)")


def payloads(marker_path) -> dict[str, str]:
    """All payloads; ``marker`` would create ``marker_path`` if it ever ran."""
    out = dict(BASE_PAYLOADS)
    out["marker"] = "A{{ lipsum.__globals__.os.popen('touch " + str(marker_path) + "').read() }}B"
    return out


def tag(field: str, payload: str) -> str:
    """The hostile text of one field."""
    return f"NVQ{field}:{payload}:QVN"


_JSON_STRING = re.compile(r'"(?:[^"\\\n]|\\.)*"')


class _Page(HTMLParser):
    """Collects what a browser would show or a script would hold, one level decoded."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.texts: list[str] = []
        self.attrs: list[str] = []
        self.scripts: list[str] = []
        self.srcdocs: list[str] = []
        self._in: list[str] = []
        self._buf: list[str] = []

    def _flush(self):
        if self._buf:
            target = self.scripts if self._in and self._in[-1] == "script" else self.texts
            if not (self._in and self._in[-1] == "style"):
                target.append("".join(self._buf))
            self._buf = []

    def handle_starttag(self, tag, attrs):
        self._flush()
        for key, value in attrs:
            if value is None:
                continue
            (self.srcdocs if key == "srcdoc" else self.attrs).append(value)
        if tag in ("script", "style"):
            self._in.append(tag)

    def handle_endtag(self, tag):
        self._flush()
        if self._in and self._in[-1] == tag:
            self._in.pop()

    def handle_data(self, data):
        self._buf.append(data)

    def close(self):
        super().close()
        self._flush()


class Decoded:
    """One HTML document as shown: text nodes, attribute values, JSON strings in scripts.

    ``nested`` holds the documents of ``<iframe srcdoc>`` (the report's map).
    """

    def __init__(self, source: str):
        page = _Page()
        page.feed(source)
        page.close()
        self.source = source
        self.texts = page.texts
        self.attrs = page.attrs
        self.scripts = page.scripts
        self.json_strings = []
        for script in page.scripts:
            for m in _JSON_STRING.finditer(script):
                try:
                    self.json_strings.append(json.loads(m.group(0)))
                except ValueError:
                    pass
        self.nested = [Decoded(s) for s in page.srcdocs]

    def strings(self):
        """Every decoded string of this document (not of nested ones)."""
        return [*self.texts, *self.attrs, *self.json_strings]

    def shows(self, literal: str) -> bool:
        """True when ``literal`` appears, decoded once, as text, attribute or JSON string."""
        return any(literal in s for s in self.strings())


def html_text(fragment: str) -> tuple[str, list[str]]:
    """What ``element.innerHTML = fragment`` shows: (text content, element tags created)."""
    tags: list[str] = []

    class P(HTMLParser):
        def __init__(self):
            super().__init__(convert_charrefs=True)
            self.out: list[str] = []

        def handle_starttag(self, t, attrs):
            tags.append(t)

        def handle_startendtag(self, t, attrs):
            tags.append(t)

        def handle_data(self, data):
            self.out.append(data)

    p = P()
    p.feed(fragment)
    p.close()
    return "".join(p.out), tags


def layer_switcher_names(source: str) -> list[str]:
    """The layer names in the page's layer switcher script (the HTML Leaflet will insert).

    folium writes them as ``"name" : feature_group_<id>,`` entries of the
    ``overlays`` object of ``L.control.layers``.
    """
    entry = re.compile(r'("(?:[^"\\\n]|\\.)*")\s*:\s*feature_group_\w+\s*,')
    return [json.loads(m.group(1)) for m in entry.finditer(source)]


def evaluated_forms(field: str, name: str) -> list[str]:
    """Tagged texts that would mean the payload ``name`` of ``field`` was compiled."""
    return [tag(field, v) for v in EVALUATED.get(name, [])]
