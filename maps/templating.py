"""Jinja2 rendering of neve's own templates (``maps/templates``), autoescape on."""

from __future__ import annotations

import functools


@functools.lru_cache(maxsize=1)
def environment():
    """The Jinja2 environment: package templates, HTML autoescape always on."""
    from jinja2 import ChainableUndefined, Environment, PackageLoader

    env = Environment(
        loader=PackageLoader("maps", "templates"),
        autoescape=True,
        undefined=ChainableUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    from maps import style

    env.filters["load_text"] = style.load_text
    env.filters["len_text"] = style.length_text
    env.filters["num"] = style.num
    env.filters["sha"] = style.short_sha
    return env


def render(template: str, /, **context) -> str:
    """Render ``template`` with ``context`` (all text escaped unless marked safe)."""
    return environment().get_template(template).render(**context)
