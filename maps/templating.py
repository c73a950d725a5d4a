"""Jinja2 rendering of neve's own templates (``maps/templates``), autoescape on.

Input text is only ever a *variable* of these templates, never template
source.  branca compiles text as Jinja source in two places: ``Element(text)``
itself, and ``MacroElement.render``, which wraps the *rendered* output of
every folium element (the GeoJSON data of the zones, tooltip text, layer
switcher names, ...) in ``Element(...)`` once more, so a zone note reading
``{{ ... }}`` would run when the map is written.  Hence:

- :func:`fixed_html` is the one way neve's rendered HTML (and its own
  constant markup, scripts and styles) enters a page: a constant template
  that writes its HTML as data;
- :func:`data_macro` gives a folium class (or neve's own elements) whose
  rendered ``header``/``html``/``script`` parts are added through
  :func:`fixed_html` instead of being compiled again.  Every folium element
  that carries text from inputs must be one of these.
"""

from __future__ import annotations

import functools


@functools.cache
def environment(*packages: str):
    """The Jinja2 environment: package templates, HTML autoescape always on.

    ``packages``: other packages whose ``templates`` folder is searched first
    (``neve serve`` passes ``"neve.web"``); the maps' templates are always there.
    """
    from jinja2 import ChainableUndefined, ChoiceLoader, Environment, PackageLoader

    env = Environment(
        loader=ChoiceLoader(
            [PackageLoader(p, "templates") for p in (*packages, "neve.maps")]
        ),  # fmt: skip
        autoescape=True,
        undefined=ChainableUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    from neve.maps import style

    env.filters["load_text"] = style.load_text
    env.filters["len_text"] = style.length_text
    env.filters["num"] = style.num
    env.filters["sha"] = style.short_sha
    return env


def render(template: str, /, **context) -> str:
    """Render ``template`` with ``context`` (all text escaped unless marked safe)."""
    return environment().get_template(template).render(**context)


@functools.cache
def _fixed_html_class():
    from branca.element import Element
    from jinja2 import Template

    class FixedHtml(Element):
        """Pre-rendered HTML carried as data; the template is the constant below."""

        _template = Template("{{ this.html }}", autoescape=False)

        def __init__(self, html: str):
            super().__init__()  # no template argument: nothing is compiled here
            self._name = "FixedHtml"
            self.html = str(html)

    return FixedHtml


def fixed_html(html: str):
    """A folium/branca element that writes ``html`` verbatim, never compiling it.

    ``html`` must already be safe markup: neve's own constant markup, or the
    output of :func:`neve.maps.templating.render` (input text autoescaped there).
    """
    return _fixed_html_class()(html)


@functools.cache
def _data_macro_base():
    from branca.element import Figure, MacroElement

    class DataMacro(MacroElement):
        """A MacroElement whose rendered parts are inserted as data, never compiled again."""

        def render(self, **kwargs):
            figure = self.get_root()
            if not isinstance(figure, Figure):
                raise TypeError(f"{type(self).__name__} can only be rendered inside a Figure")
            macros = self._template.module.__dict__
            for part in ("header", "html", "script"):
                macro = macros.get(part)
                if macro is not None:
                    getattr(figure, part).add_child(
                        fixed_html(macro(self, kwargs)), name=self.get_name()
                    )
            for element in self._children.values():
                element.render(**kwargs)

    return DataMacro


@functools.cache
def data_macro(cls=None):
    """``cls`` (a folium/branca ``MacroElement`` class) rendering its parts as data.

    Without ``cls``: the base class for neve's own macro elements.  With a
    folium class, a subclass whose own ``render`` still runs (GeoJSON styles,
    layer switcher entries), but whose macro output reaches the page through
    :func:`fixed_html`: text it carries is never compiled as a template.
    """
    base = _data_macro_base()
    if cls is None:
        return base
    return type(f"Data{cls.__name__}", (cls, base), {"__module__": __name__})
