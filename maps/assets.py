"""Offline web assets for neve's HTML maps.

A self-contained map must still open in ten years with no internet, so the
JavaScript and CSS the page needs are read from the XStatic Python packages
(Leaflet, jQuery, Leaflet.markercluster, Font Awesome) and inlined into the
page; images and fonts those stylesheets refer to become ``data:`` URIs.
Bootstrap is left out: neither folium's vector layers nor neve's own panels
need it.

Without ``self_contained`` the page links the same libraries from folium's
own default locations (folium's lists, filtered to what neve uses), so
neve itself names no download host.
"""

from __future__ import annotations

import base64
import functools
import os
import re
from importlib import resources
from pathlib import Path

#: folium resource names neve keeps when linking (not inlining) assets
LINKED_JS = ("leaflet", "jquery")
LINKED_CSS = ("leaflet_css", "awesome_markers_font_css")

_REMOTE = re.compile(
    r"""<script\b[^>]*\bsrc\s*=\s*["']?\s*(?:https?:)?//"""
    r"""|<link\b[^>]*\bhref\s*=\s*["']?\s*(?:https?:)?//"""
    r"""|@import\s+(?:url\()?\s*["']?\s*(?:https?:)?//"""
    r"""|url\(\s*["']?\s*(?:https?:)?//""",
    re.IGNORECASE,
)
_MAP_COMMENT = re.compile(r"/[/*]#\s*sourceMappingURL=[^\s*]+(\s*\*/)?")


def _xstatic_dir(name: str) -> Path:
    import importlib

    module = importlib.import_module(f"xstatic.pkg.{name}")
    return Path(module.BASE_DIR)


def _data_uri(path: Path, mime: str) -> str:
    return f"data:{mime};base64," + base64.b64encode(path.read_bytes()).decode("ascii")


def _script_safe(code: str) -> str:
    """Make library code safe to place between ``<script>`` tags."""
    code = _MAP_COMMENT.sub("", code)
    return code.replace("</script", "<\\/script").replace("<!--", "<\\!--")


def _style_safe(css: str) -> str:
    css = _MAP_COMMENT.sub("", css)
    return css.replace("</style", "<\\/style")


@functools.cache
def leaflet_js() -> str:
    """Leaflet's minified JavaScript (XStatic-Leaflet)."""
    return _script_safe((_xstatic_dir("leaflet") / "leaflet.js").read_text(encoding="utf-8"))


@functools.cache
def leaflet_css() -> str:
    """Leaflet's stylesheet with its control images inlined as data URIs."""
    base = _xstatic_dir("leaflet")
    css = (base / "leaflet.css").read_text(encoding="utf-8")

    def repl(match: re.Match) -> str:
        target = base / match.group(1)
        return f"url({_data_uri(target, 'image/png')})" if target.is_file() else match.group(0)

    return _style_safe(re.sub(r"url\((images/[\w.\-]+\.png)\)", repl, css))


@functools.cache
def jquery_js() -> str:
    """jQuery's minified JavaScript (XStatic-jQuery)."""
    return _script_safe((_xstatic_dir("jquery") / "jquery.min.js").read_text(encoding="utf-8"))


@functools.cache
def markercluster_js() -> str:
    """Leaflet.markercluster's JavaScript (XStatic-Leaflet-MarkerCluster)."""
    base = _xstatic_dir("leaflet_markercluster")
    return _script_safe((base / "leaflet.markercluster.js").read_text(encoding="utf-8"))


@functools.cache
def markercluster_css() -> str:
    """Leaflet.markercluster's two stylesheets."""
    base = _xstatic_dir("leaflet_markercluster")
    return _style_safe(
        (base / "MarkerCluster.css").read_text(encoding="utf-8")
        + "\n"
        + (base / "MarkerCluster.Default.css").read_text(encoding="utf-8")
    )


@functools.cache
def fontawesome_css() -> str:
    """Font Awesome's core and solid styles with the solid web font inlined."""
    base = _xstatic_dir("font_awesome")
    core = (base / "css" / "fontawesome.min.css").read_text(encoding="utf-8")
    solid = (base / "css" / "solid.min.css").read_text(encoding="utf-8")
    font = _data_uri(base / "webfonts" / "fa-solid-900.woff2", "font/woff2")
    solid = re.sub(
        r"src:url\(\.\./webfonts/fa-solid-900\.woff2\)[^;}]*",
        f'src:url({font}) format("woff2")',
        solid,
    )
    return _style_safe(core + "\n" + solid)


@functools.cache
def leaflet_icon_js() -> str:
    """Point Leaflet's default marker icon at inlined images.

    folium creates every marker with Leaflet's default icon before it sets
    our own, and Leaflet would otherwise ask the server for
    ``marker-icon.png``.
    """
    img = _xstatic_dir("leaflet") / "images"
    urls = {
        "iconUrl": _data_uri(img / "marker-icon.png", "image/png"),
        "iconRetinaUrl": _data_uri(img / "marker-icon-2x.png", "image/png"),
        "shadowUrl": _data_uri(img / "marker-shadow.png", "image/png"),
    }
    opts = ", ".join(f'{k}: "{v}"' for k, v in urls.items())
    return f'L.Icon.Default.imagePath = ""; L.Icon.Default.mergeOptions({{{opts}}});'


def package_text(name: str) -> str:
    """Text of one of neve's own files under ``maps/static/``."""
    return resources.files("neve.maps").joinpath("static", name).read_text(encoding="utf-8")


def inline_head(*, cluster: bool = False, icons: bool = True) -> str:
    """The ``<script>``/``<style>`` block a self-contained map needs.

    Parameters
    ----------
    cluster : bool
        Include Leaflet.markercluster.
    icons : bool
        Include Font Awesome (solid icons).
    """
    parts = [f"<style>{leaflet_css()}</style>"]
    if icons:
        parts.append(f"<style>{fontawesome_css()}</style>")
    if cluster:
        parts.append(f"<style>{markercluster_css()}</style>")
    parts.append(f"<script>{leaflet_js()}</script>")
    parts.append(f"<script>{leaflet_icon_js()}</script>")
    parts.append(f"<script>{jquery_js()}</script>")
    if cluster:
        parts.append(f"<script>{markercluster_js()}</script>")
    return "\n".join(parts)


def prepare_assets(m, elements=(), *, self_contained: bool, cluster: bool = False) -> None:
    """Set the map's script and style sources, per instance (never class-wide).

    Parameters
    ----------
    m : folium.Map
        The map.
    elements : iterable
        Other folium elements with their own ``default_js`` (marker clusters).
    self_contained : bool
        Inline everything from the XStatic packages instead of linking.
    cluster : bool
        The page uses Leaflet.markercluster.
    """
    import folium

    from neve.maps.templating import fixed_html

    if self_contained:
        m.default_js = []
        m.default_css = []
        for el in elements:
            el.default_js = []
            el.default_css = []
        # library code is data too: never compiled as a template
        m.get_root().header.add_child(fixed_html(inline_head(cluster=cluster)), name="neve_assets")
    else:
        m.default_js = [(n, u) for n, u in folium.Map.default_js if n in LINKED_JS]
        m.default_css = [(n, u) for n, u in folium.Map.default_css if n in LINKED_CSS]


def remote_references(html: str) -> list[str]:
    """Script, stylesheet, import or ``url()`` references to another host in ``html``."""
    return [m.group(0) for m in _REMOTE.finditer(html)]


def atomic_write_text(path: str | os.PathLike, text: str) -> Path:
    """Replace ``path`` with ``text`` (UTF-8) atomically: :func:`neve.safe_write.write_text`.

    Kept for code written before :mod:`neve.safe_write`: like it did, it replaces an
    existing file (the caller decides) and creates missing folders.  neve's own
    writers call :mod:`neve.safe_write` with their ``overwrite`` instead.
    """
    return atomic_write_bytes(path, text.encode("utf-8"))


def atomic_write_bytes(path: str | os.PathLike, data: bytes) -> Path:
    """Replace ``path`` with ``data`` atomically: :func:`neve.safe_write.write_bytes`.

    See :func:`atomic_write_text`.  As before, a folder in the way is an ``OSError``
    (:class:`neve.safe_write.TargetKindError`, an ``InputError`` too).
    """
    from neve.safe_write import write_bytes

    return write_bytes(path, data, overwrite=True, field="path", parents=True)
