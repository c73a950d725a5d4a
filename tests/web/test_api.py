"""neve serve's JSON API against the CLI, its 422 answers, and what no request may reach.

Sources of the checks: issue 15 ("return exactly the JSON of --format json";
"bad input answers 422 with the same message the CLI gives"; "no path from a
request ever reaches the filesystem"; "jobs are isolated by unguessable ids";
"errors never show a traceback") and docs/contract.md, *neve serve*. The
expected answers are the CLI's own, run beside the API on the same inputs
(the embedded, invented demo data); nothing here is a hard-coded load.
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from neve.cli import main
from tests.web.conftest import DEMO_AT, HOSTILE, make_client, sites_csv


def cli(*args) -> tuple[int, dict | None, str]:
    res = CliRunner().invoke(main, list(args))
    data = json.loads(res.stdout) if res.exit_code == 0 and res.stdout.strip() else None
    return res.exit_code, data, res.stderr.strip()


# --- the same JSON as the commands -----------------------------------------------------


@pytest.mark.parametrize(
    ("body", "args"),
    [
        ({"pg": "35psf"}, ["--pg", "35psf"]),
        (
            {"pg": "1.68kPa", "shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft",
             "risk": "III", "thermal": "unheated", "unobstructed": True},
            ["--pg", "1.68kPa", "--shape", "gable", "--slope", "6:12", "--eave-to-ridge",
             "30ft", "--risk", "III", "--thermal", "unheated", "--unobstructed"],
        ),
        (
            {"pg": "30psf", "standard": "asce7-22", "w2": 0.45, "shape": "hip", "slope": "4:12",
             "eave_to_ridge": "40ft"},
            ["--pg", "30psf", "--standard", "asce7-22", "--w2", "0.45", "--shape", "hip",
             "--slope", "4:12", "--eave-to-ridge", "40ft"],
        ),
        (  # EN 1991-1-3 takes sk (issue 13)
            {"sk": "0.65kPa", "standard": "en1991-1-3", "shape": "gable", "slope": "8.5deg",
             "topography": "windswept"},
            ["--sk", "0.65kPa", "--standard", "en1991-1-3", "--shape", "gable", "--slope",
             "8.5deg", "--topography", "windswept"],
        ),
    ],
)  # fmt: skip
def test_api_roof_is_neve_roof_json(client, body, args):
    code, expected, _ = cli("roof", *args, "--format", "json")
    assert code == 0
    got = client.post("/api/roof", json=body)
    assert got.status_code == 200
    assert got.json() == expected


def test_api_roof_object_is_the_roof_toml(client, tmp_path):
    """A ``roof`` object reads as the ROOF.toml it mirrors (steps, parapets, overhang)."""
    toml = (
        'shape = "monoslope"\nslope = "0.5:12"\n\n[[step]]\nname = "high bay"\n'
        'height = "10ft"\nupper_length = "120ft"\nlower_length = "60ft"\n\n'
        '[[parapet]]\nname = "north"\nheight = "3ft"\nupwind_length = "100ft"\n\n'
        '[overhang]\nlength = "2ft"\n'
    )
    path = tmp_path / "roof.toml"
    path.write_text(toml, encoding="utf-8")
    import tomllib

    code, expected, _ = cli("roof", "--pg", "40psf", "--roof", str(path), "--risk", "IV",
                            "--format", "json")  # fmt: skip
    assert code == 0
    body = {"pg": "40psf", "roof": tomllib.loads(toml), "risk": "IV"}
    got = client.post("/api/roof", json=body)
    assert got.status_code == 200, got.text
    assert got.json() == expected
    assert any(c["case"] == "drift" for c in got.json()["cases"])  # the rows were read


@pytest.mark.parametrize(
    ("body", "args"),
    [
        ({"at": DEMO_AT}, ["--at", DEMO_AT]),
        ({"at": DEMO_AT, "dem": "demo"}, ["--at", DEMO_AT, "--dem", "demo"]),
        (
            {"at": "47.48,-140.10", "elevation": "450m", "shape": "gable", "slope": "6:12",
             "eave_to_ridge": "30ft", "site_name": HOSTILE, "project": "p"},
            ["--at", "47.48,-140.10", "--elevation", "450m", "--shape", "gable", "--slope",
             "6:12", "--eave-to-ridge", "30ft", "--site-name", HOSTILE, "--project", "p"],
        ),
        ({"at": DEMO_AT, "standard": "asce7-22", "risk": "III"},
         ["--at", DEMO_AT, "--standard", "asce7-22", "--risk", "III"]),
        ({"at": "47.52,-140.1", "elevation": "250m", "standard": "en1991-1-3", "shape": "gable",
          "slope": "20deg"},
         ["--at", "47.52,-140.1", "--elevation", "250m", "--standard", "en1991-1-3", "--shape",
          "gable", "--slope", "20deg"]),  # the invented metric district (issue 13)
        ({"address": "05401"}, ["--address", "05401"]),  # a US ZIP code: the shipped gazetteer
        ({"at": DEMO_AT, "dem": "demo", "on_record": "30psf", "shape": "flat"},
         ["--at", DEMO_AT, "--dem", "demo", "--on-record", "30psf", "--shape", "flat"]),
    ],
)  # fmt: skip
def test_api_site_is_neve_site_json(client, body, args):
    code, expected, err = cli("site", *args, "--format", "json")
    assert code == 0, err
    got = client.post("/api/site", json=body)
    assert got.status_code == 200, got.text
    assert got.json() == expected


def test_api_site_takes_the_servers_layers_by_name(tmp_path, layers_dir):
    """--layers-dir: a request names a layer by its file name, never by a path."""
    base = str(layers_dir / "skerrow_base.gpkg")
    code, expected, _ = cli("site", "--at", DEMO_AT, "--layer", base, "--format", "json")
    assert code == 0
    with make_client(tmp_path, layers_dir=layers_dir) as c:
        got = c.post("/api/site", json={"at": DEMO_AT, "layer": "skerrow_base.gpkg"})
        assert got.status_code == 200, got.text
        assert got.json() == expected
        for bad in (base, "../skerrow_base.gpkg", "/etc/passwd", "nothing.gpkg"):
            r = c.post("/api/site", json={"at": DEMO_AT, "layer": bad})
            assert r.status_code == 422
            assert r.json()["field"] == "layer"
            assert "is not a layer this server offers" in r.json()["error"]


# --- bad input: 422 with the command's message ---------------------------------------


@pytest.mark.parametrize(
    ("path", "body", "args"),
    [
        ("/api/roof", {"pg": "35"}, ["roof", "--pg", "35"]),
        ("/api/roof", {"pg": "35psf", "slope": "steep"}, ["roof", "--pg", "35psf", "--slope", "steep"]),
        ("/api/roof", {"pg": "35psf", "shape": "igloo"}, ["roof", "--pg", "35psf", "--shape", "igloo"]),
        ("/api/roof", {"pg": "35psf", "w2": 0.5}, ["roof", "--pg", "35psf", "--w2", "0.5"]),
        ("/api/roof", {"pg": "35psf", "w2": "2"}, ["roof", "--pg", "35psf", "--w2", "2"]),
        ("/api/roof", {"pg": "35psf", "standard": "nbcc"}, ["roof", "--pg", "35psf", "--standard", "nbcc"]),
        ("/api/roof", {"pg": "-5psf"}, ["roof", "--pg", "-5psf"]),
        ("/api/site", {"at": DEMO_AT, "address": "05401"}, ["site", "--at", DEMO_AT, "--address", "05401"]),
        ("/api/site", {}, ["site"]),
        ("/api/site", {"at": "95,10"}, ["site", "--at", "95,10"]),
        ("/api/site", {"at": DEMO_AT, "elevation": "412"}, ["site", "--at", DEMO_AT, "--elevation", "412"]),
        ("/api/site", {"at": DEMO_AT, "on_record": "0psf"}, ["site", "--at", DEMO_AT, "--on-record", "0psf"]),
    ],
)  # fmt: skip
def test_bad_input_is_422_with_the_cli_message(client, path, body, args):
    code, _, err = cli(*args)
    assert code == 2
    got = client.post(path, json=body)
    assert got.status_code == 422
    assert f"neve: error: {got.json()['error']}" == err
    assert "Traceback" not in got.text


@pytest.mark.parametrize(
    ("body", "field"),
    [
        ([1, 2], "body"),
        ("35psf", "body"),
        ({"pg": "35psf", "roof_file": "/etc/passwd"}, "roof_file"),
        ({"pg": "35psf", "--pg": "35psf"}, "--pg"),
        ({"pg": {"psf": 35}}, "pg"),
        ({"pg": "35psf", "ventilated": "yes"}, "ventilated"),
        ({"pg": "35psf", "roof": "roof.toml"}, "roof"),
        ({"pg": "35psf", "roof": {"profile": {"a": {"shape": "flat"}}}}, "roof"),
        ({"pg": "35psf", "roof": {"step": [{"height": "10ft", "colour": "red"}]}}, "step[0]"),
    ],
)
def test_requests_neve_does_not_take_are_422_naming_the_field(client, body, field):
    got = client.post("/api/roof", json=body)
    assert got.status_code == 422
    assert got.json()["error"].startswith(f"{field}: ")


def test_a_body_that_is_not_json_is_422(client):
    got = client.post("/api/roof", content=b"pg=35psf", headers={"content-type": "text/plain"})
    assert got.status_code == 422
    assert got.json() == {"error": "body: not valid JSON; accepted: a JSON object", "field": "body"}


@pytest.mark.parametrize(
    "dem", ["/etc/passwd", "../geo/demo/skerrow_dem.tif", "skerrow_dem.tif", True]
)
def test_a_dem_the_server_does_not_offer_is_422(client, dem):
    got = client.post("/api/site", json={"at": DEMO_AT, "dem": dem})
    assert got.status_code == 422
    assert got.json()["field"] == "dem"


# --- jobs, uploads and downloads ---------------------------------------------------------


def _wait(client, job_id: str) -> dict:
    import time

    for _ in range(600):
        job = client.get(f"/api/jobs/{job_id}").json()
        if job["status"] in ("done", "error"):
            return job
        time.sleep(0.1)
    raise AssertionError("the job did not finish")


def test_screen_job_every_row_and_format(client, tmp_path):
    """The upload's results are neve screen's, in every format; hostile cells stay as given."""
    import pandas as pd

    text = sites_csv(120, hostile=True)
    (tmp_path / "sites.csv").write_text(text, encoding="utf-8")
    code = CliRunner().invoke(main, ["screen", str(tmp_path / "sites.csv"), "-o",
                                     str(tmp_path / "cli.parquet"), "--quiet"]).exit_code  # fmt: skip
    assert code == 0
    got = client.post("/api/screen", files={"sites": ("a <b>name</b>.csv", text, "text/csv")})
    assert got.status_code == 202, got.text
    job = _wait(client, got.json()["id"])
    assert job["status"] == "done", job["message"]
    assert set(job["files"]) == {"results.csv", "results.xlsx", "results.gpkg",
                                 "results.parquet", "summary.json", "portfolio_map.html"}  # fmt: skip
    assert job["summary"]["rows"] == 120 and job["progress"] == 1.0
    parquet = client.get(job["files"]["results.parquet"])
    assert parquet.status_code == 200
    (tmp_path / "web.parquet").write_bytes(parquet.content)
    web, ref = pd.read_parquet(tmp_path / "web.parquet"), pd.read_parquet(tmp_path / "cli.parquet")
    pd.testing.assert_frame_equal(web, ref)
    assert web["note"].iloc[0] == HOSTILE.replace(",", ";")
    csv = client.get(job["files"]["results.csv"])
    assert "attachment" in csv.headers["content-disposition"]
    assert csv.text.count("\n") == 121
    xlsx = client.get(job["files"]["results.xlsx"])
    (tmp_path / "web.xlsx").write_bytes(xlsx.content)
    assert len(pd.read_excel(tmp_path / "web.xlsx", sheet_name=0)) == 120


@pytest.mark.parametrize(
    ("files", "data", "field"),
    [
        ({"sites": ("../../evil.sh", "x", "text/plain")}, {}, "sites"),
        ({"sites": ("sites.csv", sites_csv(2), "text/csv")}, {"output": "/tmp/x.csv"}, "output"),
        ({"sites": ("sites.csv", sites_csv(2), "text/csv")}, {"roof": "shape = "}, "roof"),
        ({"sites": ("sites.csv", sites_csv(2), "text/csv")}, {"layer": "/etc/passwd"}, "layer"),
        ({"other": ("sites.csv", sites_csv(2), "text/csv")}, {}, "other"),
        (None, {"standard": "asce7-16"}, "content-type"),
    ],
)
def test_bad_uploads_are_422_and_leave_no_job(client, files, data, field):
    work = client.app.state.config.work
    before = set(work.iterdir())
    got = client.post("/api/screen", files=files, data=data)
    assert got.status_code == 422, got.text
    assert got.json()["error"].startswith(f"{field}: ")
    assert set(work.iterdir()) == before  # the job's folder went with it


def test_an_upload_over_the_limit_is_413(tmp_path):
    with make_client(tmp_path, max_upload_mb=0.01) as c:
        got = c.post("/api/screen", files={"sites": ("sites.csv", sites_csv(2000), "text/csv")})
        assert got.status_code == 413
        assert "larger than" in got.json()["error"]
        assert list(c.app.state.config.work.iterdir()) == []


def test_uploads_are_stored_only_in_the_jobs_folder(client):
    got = client.post("/api/screen", files={"sites": ("../../../x.csv", sites_csv(3), "text/csv")})
    job = _wait(client, got.json()["id"])
    work = client.app.state.config.work
    folders = list(work.iterdir())
    assert len(folders) == 1 and folders[0].name.startswith("job-")
    assert (folders[0] / "sites.csv").read_text(encoding="utf-8") == sites_csv(3)
    assert not (work.parent / "x.csv").exists()
    assert job["status"] == "done"


@pytest.mark.parametrize(
    "path",
    [
        "/jobs/{id}/files/..%2F..%2Fetc%2Fpasswd",
        "/jobs/{id}/files/%2Fetc%2Fpasswd",
        "/jobs/{id}/files/sites.csv",  # the upload itself is not a file the job made
        "/jobs/{id}/files/upload.part",
        "/jobs/{id}/files/results.csv%00",
        "/jobs/..%2F{id}/files/results.csv",
        "/jobs/{id}/../../etc/passwd",
        "/assets/..%2F..%2Fpyproject.toml",
        "/assets/neve.css%2F..%2F..%2Fapp.py",
        "/jobs/not-a-job/files/results.csv",
        "/api/jobs/..%2F..%2F",
    ],
)
def test_no_request_path_reaches_the_filesystem(client, path):
    got = client.post("/api/screen", files={"sites": ("sites.csv", sites_csv(3), "text/csv")})
    job_id = got.json()["id"]
    _wait(client, job_id)
    res = client.get(path.replace("{id}", job_id))
    assert res.status_code == 404
    assert "root:" not in res.text and "[project]" not in res.text


def test_a_symlink_in_a_jobs_folder_is_never_served(client, tmp_path):
    got = client.post("/api/screen", files={"sites": ("sites.csv", sites_csv(3), "text/csv")})
    job = client.app.state.store.get(got.json()["id"])
    _wait(client, job.id)
    secret = tmp_path / "secret.txt"
    secret.write_text("secret", encoding="utf-8")
    (job.folder / "link.csv").symlink_to(secret)
    job.add("link.csv", job.folder / "link.csv")
    res = client.get(f"/jobs/{job.id}/files/link.csv")
    assert res.status_code == 404 and "secret" not in res.text


def test_jobs_have_unguessable_ids_and_are_not_listed(client):
    ids = set()
    for _ in range(3):
        got = client.post("/api/screen", files={"sites": ("sites.csv", sites_csv(2), "text/csv")})
        ids.add(got.json()["id"])
    assert len(ids) == 3 and all(len(i) >= 24 for i in ids)  # 18 random bytes, base64
    for listing in ("/api/jobs", "/api/jobs/", "/jobs", "/jobs/"):
        assert client.get(listing).status_code in (404, 405)
    assert client.get("/api/jobs/" + "A" * 24).status_code == 404


# --- the site page, the package -----------------------------------------------------------


def test_site_form_to_result_page_and_package(client):
    """Form in, result page out (hostile text escaped), then the package as PDF and zip."""
    import io
    import zipfile

    from pypdf import PdfReader

    form = {"locate": "at", "at": DEMO_AT, "dem": "demo", "shape": "gable", "slope": "6:12",
            "eave_to_ridge": "30ft", "site_name": HOSTILE, "parapet-0-height": "3ft",
            "parapet-0-upwind_length": "100ft", "parapet-0-name": HOSTILE, "job": HOSTILE}  # fmt: skip
    res = client.post("/site", data=form, follow_redirects=False)
    assert res.status_code == 303
    page = client.get(res.headers["location"])
    assert page.status_code == 200
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page.text
    assert "<script>alert(1)</script>" not in page.text and ">49<" not in page.text
    assert "DEMO DATA" in page.text and "licensed design professional" in page.text
    job_id = res.headers["location"].rsplit("/", 1)[1]
    code, expected, _ = cli("site", "--at", DEMO_AT, "--dem", "demo", "--shape", "gable",
                            "--slope", "6:12", "--eave-to-ridge", "30ft", "--format", "json")  # fmt: skip
    shown = client.get(f"/jobs/{job_id}/files/site.json").json()
    assert shown["ground"]["pg"] == expected["ground"]["pg"]
    assert shown["roof"]["design_uniform"] == expected["roof"]["design_uniform"]
    pdf = client.get(f"/jobs/{job_id}/files/report.pdf")
    assert pdf.status_code == 200 and pdf.content.startswith(b"%PDF")
    text = "".join(p.extract_text() for p in PdfReader(io.BytesIO(pdf.content)).pages)
    assert "{{ 7*7 }}" in text and "DEMO" in text
    archive = zipfile.ZipFile(io.BytesIO(client.get(f"/jobs/{job_id}/files/package.zip").content))
    names = archive.namelist()
    assert "package/report.pdf" in names and "package/site.json" in names
    assert all(not n.startswith(("/", "..")) for n in names)


def test_a_bad_form_comes_back_with_the_message_and_the_values(client):
    res = client.post("/site", data={"at": DEMO_AT, "slope": "steep", "site_name": HOSTILE})
    assert res.status_code == 422
    code, _, err = cli("site", "--at", DEMO_AT, "--slope", "steep")
    assert err.removeprefix("neve: error: ").replace("'", "&#39;") in res.text
    assert 'value="{{ 7*7 }} {% if 1 %}x{% endif %} ${7*7} &lt;script&gt;' in res.text


def test_the_form_refuses_fields_it_does_not_have(client):
    res = client.post("/site", data={"at": DEMO_AT, "roof_file": "/etc/passwd"})
    assert res.status_code == 422 and "roof_file: is not a field of the site form" in res.text


# --- safety: binding, token, errors -----------------------------------------------------


@pytest.mark.parametrize("host", ["0.0.0.0", "192.168.1.20", "::", "example.org"])
def test_binding_beyond_this_machine_needs_a_token(host):
    res = CliRunner().invoke(main, ["serve", "--host", host])
    assert res.exit_code == 2
    assert "token: --host" in res.stderr and "Traceback" not in res.output


def test_loopback_needs_no_token():
    from neve.web.config import check_binding

    for host in ("127.0.0.1", "127.0.0.2", "::1", "localhost"):
        check_binding(host, None)  # no error


def test_a_token_guards_every_address(tmp_path):
    token = "s3cret-token-of-the-office"
    with make_client(tmp_path, token=token) as c:
        assert c.get("/").status_code == 401
        assert c.post("/api/roof", json={"pg": "35psf"}).status_code == 401
        assert c.get("/openapi.json").status_code == 401
        wrong = {"authorization": "Bearer " + token[:-1] + "x"}
        assert c.post("/api/roof", json={"pg": "35psf"}, headers=wrong).status_code == 401
        right = {"authorization": "Bearer " + token}
        assert c.post("/api/roof", json={"pg": "35psf"}, headers=right).status_code == 200
        first = c.get("/?token=" + token, follow_redirects=False)
        assert first.status_code == 303 and first.headers["location"] == "/"
        assert c.get("/").status_code == 200  # the cookie it set


def test_an_unexpected_failure_shows_no_traceback(client, monkeypatch):
    import neve.web.asks

    def broken(body):
        raise RuntimeError("secret internals /home/someone")

    monkeypatch.setattr(neve.web.asks, "roof_request", broken)
    got = client.post("/api/roof", json={"pg": "35psf"})
    assert got.status_code == 500
    assert got.json() == {"error": "unexpected failure; the server's log has the details"}
    assert "secret internals" not in got.text and "Traceback" not in got.text


def test_pages_carry_a_strict_content_security_policy(client):
    res = client.get("/")
    csp = res.headers["content-security-policy"]
    assert "script-src 'self'" in csp and "unsafe-inline" not in csp
    assert res.headers["x-content-type-options"] == "nosniff"


def test_every_script_and_style_is_served_locally(client):
    import re

    page = client.get("/").text
    refs = re.findall(r'(?:src|href)="([^"]+)"', page)
    assert refs and all(r.startswith(("/", "#", "data:")) for r in refs), refs
    for ref in refs:
        if ref.startswith("/assets/"):
            assert client.get(ref).status_code == 200
    assert (
        "L.map" in client.get("/assets/leaflet.js").text
        or "Leaflet" in client.get("/assets/leaflet.js").text
    )


def test_openapi_is_served_and_the_online_docs_are_not(client):
    spec = client.get("/openapi.json").json()
    assert {"/api/roof", "/api/site", "/api/screen", "/api/jobs/{job_id}"} <= set(spec["paths"])
    body = spec["paths"]["/api/roof"]["post"]["requestBody"]["content"]["application/json"]
    assert "eave_to_ridge" in body["schema"]["properties"]
    assert client.get("/docs").status_code == 404  # it would load scripts from the internet


def test_the_map_tiles_and_zones_of_the_form(client):
    zones = client.get("/map/zones.geojson").json()
    assert zones["type"] == "FeatureCollection" and len(zones["features"]) > 3
    info = client.app.state.config.basemap_for(True).meta
    z = info["_maxzoom"]
    import math

    lat, lon = 47.5, -140.0
    n = 2**z
    x = int((lon + 180) / 360 * n)
    y = int((1 - math.asinh(math.tan(math.radians(lat))) / math.pi) / 2 * n)
    tile = client.get(f"/tiles/{z}/{x}/{y}.png")
    assert tile.status_code == 200 and tile.content[:4] == b"\x89PNG"
    assert client.get("/tiles/3/0/0.png").status_code == 204  # outside the file
    assert client.get("/tiles/a/b/c.png").status_code == 422


def test_a_run_that_fails_reports_the_message_on_its_job(client):
    """A site file neve cannot read fails the job with the command's message, not a trace."""
    import tempfile
    from pathlib import Path

    text = "name,colour\nshed,red\n"  # neither coordinates nor addresses
    got = client.post("/api/screen", files={"sites": ("sites.csv", text, "text/csv")})
    assert got.status_code == 202
    job = _wait(client, got.json()["id"])
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "sites.csv"
        path.write_text(text, encoding="utf-8")
        code, _, err = cli("screen", str(path), "-o", str(Path(tmp) / "r.csv"), "--quiet")
    assert code == 2
    assert job["status"] == "error" and job["files"] == {}
    assert f"neve: error: {job['message']}" == err


def test_a_site_jobs_files_are_listed_on_its_job(client):
    res = client.post("/site", data={"at": DEMO_AT}, follow_redirects=False)
    job_id = res.headers["location"].rsplit("/", 1)[1]
    job = client.get(f"/api/jobs/{job_id}").json()
    assert job["kind"] == "site" and job["page"] == f"/sites/{job_id}"
    assert set(job["files"]) == {"site.json", "site_map.html", "report.pdf", "package.zip"}
    assert (
        client.get(job["files"]["site_map.html"])
        .headers["content-security-policy"]
        .startswith("default-src 'none'")
    )


def test_a_loopback_server_answers_only_its_own_names(tmp_path):
    """A page of another site cannot reach a loopback server under a name of its own."""
    from fastapi.testclient import TestClient

    from neve.web.app import create_app
    from neve.web.config import load_config, loopback_hosts

    config = load_config(workdir=tmp_path / "work")
    config.allowed_hosts = loopback_hosts("127.0.0.1")
    with TestClient(create_app(config), base_url="http://127.0.0.1:8750") as c:
        assert c.get("/").status_code == 200
        assert c.get("/", headers={"host": "localhost:8750"}).status_code == 200
        assert c.get("/", headers={"host": "rebound.example:8750"}).status_code == 400
    assert loopback_hosts("0.0.0.0") is None  # elsewhere: the token guards it


def test_a_post_from_another_sites_page_is_refused(client):
    other = {"origin": "http://elsewhere.example"}
    got = client.post("/api/roof", json={"pg": "35psf"}, headers=other)
    assert got.status_code == 403 and got.json()["error"].startswith("origin: ")
    own = {"origin": "http://testserver"}
    assert client.post("/api/roof", json={"pg": "35psf"}, headers=own).status_code == 200


@pytest.mark.parametrize("suffix", [".xlsx", ".parquet", ".gpkg"])
def test_every_site_file_format_uploads(client, tmp_path, suffix):
    """XLSX, Parquet and GeoPackage site files screen as the CSV of the same sites."""
    import io

    import pandas as pd

    frame = pd.read_csv(io.StringIO(sites_csv(25)))
    path = tmp_path / f"sites{suffix}"
    if suffix == ".xlsx":
        frame.to_excel(path, index=False)
    elif suffix == ".parquet":
        frame.to_parquet(path, index=False)
    else:
        import geopandas as gpd

        points = gpd.points_from_xy(frame["lon"], frame["lat"], crs="EPSG:4326")
        gpd.GeoDataFrame(frame, geometry=points).to_file(path, driver="GPKG")
    got = client.post("/api/screen", files={"sites": (path.name, path.read_bytes())})
    assert got.status_code == 202, got.text
    job = _wait(client, got.json()["id"])
    assert job["status"] == "done", job["message"]
    csv = pd.read_csv(io.StringIO(client.get(job["files"]["results.csv"]).text), dtype=str)
    assert list(csv["site_id"]) == list(frame["site_id"])
    ref = client.post("/api/screen", files={"sites": ("s.csv", sites_csv(25))}).json()
    ref_csv = client.get(_wait(client, ref["id"])["files"]["results.csv"]).text
    ref_frame = pd.read_csv(io.StringIO(ref_csv), dtype=str)
    assert list(csv["pg_psf"]) == list(ref_frame["pg_psf"])
