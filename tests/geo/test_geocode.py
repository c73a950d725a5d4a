"""Addresses (neve.geo.site.geocode): gazetteer file, a Nominatim-format server on loopback, failures.

The loopback server answers ``/search`` the way the Nominatim search API
documents its ``format=json`` output: a JSON list of places with ``lat`` and
``lon`` as text and a ``display_name``.  Places and addresses are invented.
"""

from __future__ import annotations

import json
import socket
import threading
from http.server import BaseHTTPRequestHandler, HTTPServer
from urllib.parse import parse_qs, urlsplit

import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.errors import InputError
from neve.geo.site.geocode import GeocodeError, geocode, normalise

PLACES = {
    "1 harbour road, port hallin": [
        {"place_id": 1, "lat": "47.4834", "lon": "-140.1861", "display_name": "1 Harbour Road, "
         "Port Hallin, Skerrow Island", "class": "place", "type": "house", "importance": 0.5,
         "boundingbox": ["47.4833", "47.4835", "-140.1862", "-140.1860"]},
    ],
    "mill lane": [
        {"place_id": 2, "lat": "47.48", "lon": "-140.18", "display_name": "Mill Lane, West"},
        {"place_id": 3, "lat": "47.56", "lon": "-139.90", "display_name": "Mill Lane, East"},
    ],
}  # fmt: skip


class Handler(BaseHTTPRequestHandler):
    seen: list = []

    def do_GET(self):  # noqa: N802 - http.server API
        url = urlsplit(self.path)
        q = parse_qs(url.query)
        Handler.seen.append((url.path, q))
        body = json.dumps(PLACES.get(q.get("q", [""])[0].lower(), [])).encode()
        self.send_response(200)
        self.send_header("Content-Type", "application/json")
        self.end_headers()
        self.wfile.write(body)

    def log_message(self, *args):
        pass


@pytest.fixture(scope="module")
def server():
    httpd = HTTPServer(("127.0.0.1", 0), Handler)
    t = threading.Thread(target=httpd.serve_forever, daemon=True)
    t.start()
    yield f"http://127.0.0.1:{httpd.server_port}"
    httpd.shutdown()


@pytest.fixture()
def closed_port_url():
    s = socket.socket()
    s.bind(("127.0.0.1", 0))
    port = s.getsockname()[1]
    s.close()  # nothing listens here now
    return f"http://127.0.0.1:{port}"


@pytest.fixture()
def gazetteer(tmp_path):
    p = tmp_path / "addresses.csv"
    p.write_text(
        "address,lat,lon\n"
        '"2 Quay St., Port Hallin",47.4830,-140.1850\n'
        "Twin Farm,47.50,-140.10\n"
        "Twin Farm,47.52,-140.00\n",
        encoding="utf-8",
    )
    return p


def test_server_single_match(server):
    hit = geocode("1 Harbour Road, Port Hallin", url=server)
    assert (hit.lat, hit.lon) == (47.4834, -140.1861)
    assert "Port Hallin" in hit.address and hit.source.startswith("server:")
    path, q = Handler.seen[-1]
    assert path == "/search" and q["format"] == ["json"]


def test_server_ambiguous_is_reported(server):
    with pytest.raises(InputError, match="ambiguous: 2 matches"):
        geocode("Mill Lane", url=server)


def test_server_no_match(server):
    with pytest.raises(InputError, match="no match"):
        geocode("Nowhere Street", url=server)


def test_network_down(closed_port_url):
    with pytest.raises(GeocodeError, match="could not answer"):
        geocode("1 Harbour Road, Port Hallin", url=closed_port_url, timeout=2)


def test_gazetteer_exact_after_normalising(gazetteer):
    hit = geocode("2 quay st  port hallin", gazetteer=gazetteer)
    assert (hit.lat, hit.lon) == (47.483, -140.185)
    assert normalise("2 Quay St., Port Hallin") == "2 quay st port hallin"


def test_gazetteer_ambiguous_and_missing(gazetteer):
    with pytest.raises(InputError, match="ambiguous"):
        geocode("Twin Farm", gazetteer=gazetteer)
    with pytest.raises(InputError, match="not in the gazetteer"):
        geocode("3 Quay St", gazetteer=gazetteer)


def test_gazetteer_falls_back_to_the_server(gazetteer, server):
    assert geocode("1 harbour road, port hallin", gazetteer=gazetteer, url=server).lat == 47.4834


def test_no_geocoder_configured(monkeypatch):
    monkeypatch.delenv("NEVE_GEOCODER_URL", raising=False)
    with pytest.raises(InputError, match="no geocoder configured"):
        geocode("1 Harbour Road")


def test_bad_gazetteer_columns(tmp_path):
    p = tmp_path / "g.csv"
    p.write_text("street,y,x\na,1,2\n")
    with pytest.raises(InputError, match="lacks column"):
        geocode("a", gazetteer=p)


def test_cli_address_through_the_server(server):
    res = CliRunner().invoke(
        main, ["site", "--address", "1 Harbour Road, Port Hallin", "--geocoder-url", server,
               "--format", "json"],
    )  # fmt: skip
    assert res.exit_code == 0, res.output
    data = json.loads(res.output)
    assert data["site"]["address"].startswith("1 Harbour Road")
    assert data["site"]["input"] == "1 Harbour Road, Port Hallin"
    assert data["ground"]["zone_id"] == "PH-1"  # the invented town's amendment zone


def test_cli_ambiguous_and_down(server, closed_port_url):
    r = CliRunner().invoke(main, ["site", "--address", "Mill Lane", "--geocoder-url", server])
    assert r.exit_code == 2 and "ambiguous" in r.output
    r = CliRunner().invoke(
        main,
        ["site", "--address", "x", "--geocoder-url", closed_port_url, "--geocoder-timeout", "2"],
    )
    assert r.exit_code == 1 and "could not answer" in r.output
