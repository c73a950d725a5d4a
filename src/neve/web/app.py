"""The ``neve serve`` application: pages, the JSON API and the job downloads (FastAPI).

:func:`create_app` builds the application for one :class:`neve.web.config.ServeConfig`.
Pages are Jinja2 templates with autoescape on (:mod:`neve.web.pages`); every
script and style is served by the application itself (Leaflet from the
XStatic package the maps embed); the JSON API gives the CLI's JSON
(:mod:`neve.web.asks`).  Errors: a :class:`neve.engine.errors.NeveError` is
answered with its message (422 for bad input, as the CLI's exit code 2), any
other failure with a short line and no traceback (the server's log has it).
"""

from __future__ import annotations

import json
import logging
import secrets

from fastapi import FastAPI, Request
from fastapi.responses import JSONResponse, RedirectResponse, Response
from starlette.concurrency import run_in_threadpool

from neve.engine.errors import InputError, NeveError
from neve.web.asks import ROOF_REQUEST_KEYS, SITE_REQUEST_KEYS
from neve.web.jobs import JobNotFound, JobStore
from neve.web.uploads import TooLarge

LOG = logging.getLogger("neve.web")

#: the largest body of a request that is not a portfolio upload [bytes]
FORM_LIMIT = 1024 * 1024

#: a site job's package files, made on the first request for one of them
SITE_PACKAGE_FILES = ("report.pdf", "package.zip")

#: the answer to an unexpected failure (the details go to the server's log only)
UNEXPECTED = "unexpected failure; the server's log has the details"

#: Content-Security-Policy of neve's pages: nothing from elsewhere, no inline script
PAGE_CSP = (
    "default-src 'self'; img-src 'self' data:; style-src 'self'; script-src 'self'; "
    "frame-src 'self'; object-src 'none'; base-uri 'none'; form-action 'self'"
)
#: the maps a job made (self-contained folium pages: inline scripts, data: images)
MAP_CSP = (
    "default-src 'none'; img-src 'self' data:; style-src 'unsafe-inline' data:; "
    "script-src 'unsafe-inline'; font-src data:; base-uri 'none'; form-action 'none'"
)


def _body_schema(keys, required=()) -> dict:
    """The OpenAPI request body of a JSON endpoint: an object of the CLI's names."""
    props = {
        k: {"type": "object", "description": "ROOF.toml keys, incl. step/parapet/projection lists"}
        if k == "roof"
        else {"description": f"as the command-line option --{k.replace('_', '-')}"}
        for k in keys
    }
    schema = {"type": "object", "properties": props, "additionalProperties": False}
    if required:
        schema["required"] = list(required)
    return {"requestBody": {"required": True,
                            "content": {"application/json": {"schema": schema}}}}  # fmt: skip


class Guard:
    """ASGI middleware: turn away what ``refused`` names, answer ``failed`` for an exception,
    and give every response neve's security headers (CSP, nosniff, no referrer, frames,
    no caching), as set by :data:`PAGE_CSP`."""

    def __init__(self, app, refused, failed):
        self.app, self.refused, self.failed = app, refused, failed

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            await self.app(scope, receive, send)
            return
        from starlette.datastructures import MutableHeaders

        request = Request(scope)
        started = False

        async def send_with_headers(message):
            nonlocal started
            if message["type"] == "http.response.start":
                started = True
                headers = MutableHeaders(scope=message)
                headers.setdefault("Content-Security-Policy", PAGE_CSP)
                headers["X-Content-Type-Options"] = "nosniff"
                headers["Referrer-Policy"] = "no-referrer"
                headers.setdefault("X-Frame-Options", "SAMEORIGIN")
                headers.setdefault("Cache-Control", "no-store")
            await send(message)

        answer = self.refused(request)
        if answer is not None:
            await answer(scope, receive, send_with_headers)
            return
        try:
            await self.app(scope, receive, send_with_headers)
        except Exception:
            if started:  # the answer is on its way: nothing else can be sent
                LOG.exception("failure after the response started on %s", request.url.path)
                return
            await self.failed(request)(scope, receive, send_with_headers)


def create_app(config):
    """The ASGI application serving ``config`` (a :class:`neve.web.config.ServeConfig`)."""
    from concurrent.futures import ThreadPoolExecutor
    from contextlib import asynccontextmanager

    from neve.web import pages

    screens = ThreadPoolExecutor(max_workers=1, thread_name_prefix="neve-screen")

    @asynccontextmanager
    async def lifespan(app):
        yield
        screens.shutdown(wait=False, cancel_futures=True)
        if config.own_work:  # neve's own temporary folder (no --workdir): the jobs go with it
            import shutil

            shutil.rmtree(config.work, ignore_errors=True)

    app = FastAPI(
        lifespan=lifespan,
        title="neve serve",
        summary="Ground and roof snow loads, as neve roof / neve site --format json.",
        description="An aid to a licensed design professional; confirm ground snow loads with "
        "the authority having jurisdiction; flagged sites need a site-specific study.",
        docs_url=None,  # the interactive docs load scripts from the internet: not served
        redoc_url=None,
        openapi_url="/openapi.json",
    )
    store = JobStore(config.work)
    app.state.config, app.state.store = config, store
    app.state.screens = screens

    if config.allowed_hosts is not None:  # a page of another site under a name of its own
        from starlette.middleware.trustedhost import TrustedHostMiddleware

        app.add_middleware(TrustedHostMiddleware, allowed_hosts=list(config.allowed_hosts))

    # --- the guard: token, origin, body size, headers -------------------------------

    def refused(request: Request):
        """The answer to a request the guard turns away (token, origin, size), or None."""
        if config.token:
            given = request.query_params.get("token")
            if given is not None and secrets.compare_digest(given, config.token):
                back = RedirectResponse(request.url.path, status_code=303)
                back.set_cookie("neve_token", config.token, httponly=True, samesite="strict")
                return back
            header = request.headers.get("authorization", "")
            offered = header[7:] if header.lower().startswith("bearer ") else None
            offered = offered or request.cookies.get("neve_token") or ""
            if not secrets.compare_digest(offered.encode(), config.token.encode()):
                return _error(request, 401, "token: missing or wrong",
                              "open the address neve serve printed, with ?token=...")  # fmt: skip
        origin = request.headers.get("origin")
        if request.method == "POST" and origin and origin != "null":
            from urllib.parse import urlsplit

            if urlsplit(origin).netloc != request.headers.get("host", ""):
                return _error(request, 403, "origin: a form of another site",
                              "requests from neve's own pages")  # fmt: skip
        length = request.headers.get("content-length")
        upload = request.url.path in ("/api/screen", "/portfolio")
        limit = config.max_upload_bytes + FORM_LIMIT if upload else FORM_LIMIT
        if length and (not length.isdigit() or int(length) > limit):
            return _error(request, 413, "body: larger than this server takes", "a smaller request")
        return None

    def failed(request: Request):
        """The answer to a request whose handler raised: never a traceback to the browser."""
        LOG.exception("unexpected failure on %s", request.url.path)
        try:
            return _error(request, 500, UNEXPECTED)
        except Exception:  # even the error page failed: one plain line
            return Response(UNEXPECTED, status_code=500, media_type="text/plain")

    # the guard: token, origin, body size, headers -- a plain ASGI middleware (a
    # BaseHTTPMiddleware cost 10-20 % of the requests per second: tests/benchmarks/bench_serve.py)
    app.add_middleware(Guard, refused=refused, failed=failed)

    def _error(request, status: int, message: str, accepted: str | None = None):
        text = message + (f"; accepted: {accepted}" if accepted else "")
        if _wants_json(request):
            return JSONResponse({"error": text}, status_code=status)
        return pages.error_page(config, status, text)

    def _wants_json(request) -> bool:
        return request.url.path.startswith("/api/") or "application/json" in request.headers.get(
            "accept", ""
        )

    @app.exception_handler(NeveError)
    async def neve_error(request: Request, exc: NeveError):
        status = _status(exc)
        if _wants_json(request):
            body = {"error": str(exc)}
            if isinstance(exc, InputError):
                body["field"] = exc.field
            return JSONResponse(body, status_code=status)
        return pages.error_page(config, status, str(exc))

    @app.exception_handler(404)
    async def not_found(request: Request, exc):
        return _error(request, 404, "no such page")

    @app.exception_handler(405)
    async def not_allowed(request: Request, exc):
        return _error(request, 405, f"{request.method} is not taken here")

    from fastapi.exceptions import RequestValidationError

    @app.exception_handler(RequestValidationError)
    async def invalid(request: Request, exc):
        where = ".".join(str(p) for p in (exc.errors() or [{}])[0].get("loc", ()) or ("request",))
        return _error(request, 422, f"{where}: not a value this address takes")

    async def _json_body(request: Request):
        raw = await request.body()
        try:
            return json.loads(raw or b"null")
        except (ValueError, UnicodeDecodeError):
            raise InputError("body", "not valid JSON", "a JSON object") from None

    def _json(data: dict, status: int = 200):
        from neve.engine.jsonsafe import dumps

        return Response(dumps(data, ensure_ascii=False), status_code=status,
                        media_type="application/json")  # fmt: skip

    # --- the JSON API ----------------------------------------------------------------

    # pg or sk, whichever the standard takes (neve roof --pg / --sk): no key is required as such
    @app.post("/api/roof", tags=["api"], openapi_extra=_body_schema(ROOF_REQUEST_KEYS),
              summary="neve roof --format json")  # fmt: skip
    async def api_roof(request: Request):
        from neve.web.asks import roof_request

        body = await _json_body(request)
        return _json(await run_in_threadpool(roof_request, body))

    @app.post("/api/site", tags=["api"], openapi_extra=_body_schema(SITE_REQUEST_KEYS),
              summary="neve site --format json")  # fmt: skip
    async def api_site(request: Request):
        from neve.geo.site.ask import site_json
        from neve.web.asks import site_request

        body = await _json_body(request)
        result = await run_in_threadpool(site_request, body, config)
        return _json(site_json(result))

    @app.post("/api/screen", tags=["api"], summary="neve screen: upload a site file, get a job",
              status_code=202)  # fmt: skip
    async def api_screen(request: Request):
        job = await _start_screen(request)
        return _json(_job_json(job), status=202)

    @app.get("/api/jobs/{job_id}", tags=["api"], summary="a job's progress and result links")
    async def api_job(job_id: str):
        return _json(_job_json(store.get(job_id)))

    def _job_json(job) -> dict:
        files = list(job.files)
        if job.kind == "site":  # the package is made when first asked for
            files = [n for n in files if n != "report.html"]
            files += [n for n in SITE_PACKAGE_FILES if n not in files]
        return {
            "id": job.id,
            "kind": job.kind,
            "status": job.status,
            "stage": job.stage,
            "progress": round(job.progress(), 3),
            "message": job.message,
            "files": {name: f"/jobs/{job.id}/files/{name}" for name in files},
            "summary": job.data if job.kind == "screen" and job.status == "done" else None,
            "page": f"/jobs/{job.id}" if job.kind == "screen" else f"/sites/{job.id}",
        }

    async def _start_screen(request: Request):
        from neve import safe_write
        from neve.web.screen_form import screen_options
        from neve.web.uploads import receive_upload, upload_suffix
        from neve.web.work import run_screen_job

        job = store.new("screen")
        try:
            sink = await receive_upload(request, job.folder, config.max_upload_bytes)
            if sink.file_path is None or sink.file_name is None:
                raise InputError(
                    "sites", "no site file given", "a CSV, XLSX, GeoPackage or Parquet file"
                )
            options = await run_in_threadpool(screen_options, sink.fields, config)
            sites = job.folder / ("sites" + upload_suffix(sink.file_name))
            safe_write.publish(sink.file_path, sites, overwrite=False, field="sites")
            job.request = {"file_name": sink.file_name, **sink.fields}
        except BaseException:
            store.drop(job)
            raise
        screens.submit(run_screen_job, job, config, sites, options)
        return job

    # --- pages -----------------------------------------------------------------------

    @app.get("/", include_in_schema=False)
    async def site_page():
        return pages.site_form(config)

    @app.post("/site", include_in_schema=False)
    async def site_submit(request: Request):
        from neve.web.site_form import form_request
        from neve.web.work import site_job

        form = await request.form()
        values = {k: v for k, v in form.multi_items() if isinstance(v, str) and k != "layer"}
        chosen = [v for v in form.getlist("layer") if isinstance(v, str) and v]
        try:
            body, title_block = form_request(values)
            if chosen:
                body["layer"] = chosen
            job = await run_in_threadpool(site_job, store, config, body)
            job.request = {**body, **title_block}
        except NeveError as exc:
            return pages.site_form(config, values=values, error=str(exc), status=_status(exc))
        return RedirectResponse(f"/sites/{job.id}", status_code=303)

    @app.get("/sites/{job_id}", include_in_schema=False)
    async def site_result(job_id: str):
        job = store.get(job_id)
        if job.kind != "site":
            raise JobNotFound("job", "no such site result", "the address the site form gave")
        return pages.site_result(config, job)

    @app.get("/portfolio", include_in_schema=False)
    async def portfolio_page():
        return pages.portfolio_form(config)

    @app.post("/portfolio", include_in_schema=False)
    async def portfolio_submit(request: Request):
        try:
            job = await _start_screen(request)
        except NeveError as exc:
            return pages.portfolio_form(config, error=str(exc), status=_status(exc))
        return RedirectResponse(f"/jobs/{job.id}", status_code=303)

    @app.get("/jobs/{job_id}", include_in_schema=False)
    async def job_page(job_id: str):
        job = store.get(job_id)
        if job.kind == "site":
            return RedirectResponse(f"/sites/{job.id}", status_code=303)
        return pages.job_page(config, job)

    @app.get("/jobs/{job_id}/files/{name}", tags=["api"], summary="a file the job made")
    async def job_file(job_id: str, name: str):
        from fastapi.responses import FileResponse

        job = store.get(job_id)
        if job.kind == "site" and name in SITE_PACKAGE_FILES + ("report.html",):
            from neve.web.work import build_package

            await run_in_threadpool(build_package, job, config)
        path = job.file(name)
        inline = name.endswith((".html", ".pdf", ".json"))
        response = FileResponse(
            path,
            media_type=pages.media_type(name),
            filename=name,
            content_disposition_type="inline" if inline else "attachment",
        )
        if name.endswith(".html"):
            response.headers["Content-Security-Policy"] = MAP_CSP
        return response

    @app.get("/assets/{name}", include_in_schema=False)
    async def asset(name: str):
        text, media = pages.asset(name)
        return Response(text, media_type=media, headers={"Cache-Control": "max-age=3600"})

    @app.get("/tiles/{z}/{x}/{y}.png", include_in_schema=False)
    async def tile(z: int, x: int, y: int):
        data, media = await run_in_threadpool(pages.tile, config, z, x, y)
        if data is None:
            return Response(status_code=204)
        return Response(data, media_type=media, headers={"Cache-Control": "max-age=3600"})

    @app.get("/map/zones.geojson", include_in_schema=False)
    async def zones():
        text = await run_in_threadpool(pages.zones_geojson, config)
        return Response(text, media_type="application/geo+json")

    return app


def _status(exc: NeveError) -> int:
    if isinstance(exc, JobNotFound):
        return 404
    if isinstance(exc, TooLarge):
        return 413
    return 422 if exc.exit_code == 2 else 500
