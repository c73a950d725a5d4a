"""The work behind the pages: a site's result and package, a portfolio run.

Each writes only into its job's folder, through the library writers
(:func:`neve.maps.site_map.write_site_map`, :func:`neve.maps.package.write_package`,
:func:`neve.geo.screen.outputs.write_results`,
:func:`neve.maps.portfolio.write_portfolio_map`), which go through
:mod:`neve.safe_write`.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

from neve.web.jobs import RESULT_FILES, Job, fail


def request_echo(path: str, body: dict) -> str:
    """What the package echoes as the command: the request, paths never included."""
    return f"neve serve: POST {path} " + json.dumps(body, ensure_ascii=False, sort_keys=True)


def site_job(store, config, body: dict) -> Job:
    """Resolve one site (as ``POST /api/site``) and keep it as a job with its site map."""
    from neve.geo.site.ask import site_json
    from neve.maps.site_map import is_demo, write_site_map
    from neve.web.asks import site_request

    result = site_request(body, config)  # a bad request is refused before a job exists
    data = site_json(result)
    job = store.new("site", body)
    try:
        views = result.views()
        job.result, job.data = result, data
        import copy

        from neve import safe_write
        from neve.maps.package import strip_machine_paths

        shown = strip_machine_paths(copy.deepcopy(data))  # as the package's site.json: no folders
        job.add("site.json", safe_write.write_text(
            job.folder / "site.json", json.dumps(shown, indent=2, ensure_ascii=False) + "\n"))  # fmt: skip
        job.add("site_map.html", write_site_map(
            data, views, job.folder / "site_map.html", self_contained=True,
            basemap=config.basemap_for(is_demo(data, views))))  # fmt: skip
        from neve.maps.diagrams import write_case_diagrams

        job.diagrams = write_case_diagrams(data.get("roof"), job.folder / "diagrams")
        job.status = job.stage = "done"
    except Exception:
        store.drop(job)
        raise
    return job


def build_package(job: Job, config) -> None:
    """Write the job's calculation package (once) and its zip: ``report.pdf``, ``package.zip``."""
    with job.lock:
        if "package.zip" in job.files:
            return
        from neve.maps.package import write_package
        from neve.maps.site_map import is_demo

        result, data, body = job.result, job.data, job.request
        views = result.views()
        from neve.web.asks import roof_of

        roof = roof_of({k: v for k, v in body.items() if k != "layer"})
        files = write_package(
            data,
            views,
            job.folder / "package",
            title_block={k: body.get(k) for k in ("job", "prepared_by", "checked_by", "revision")},
            inputs={"command": request_echo("/api/site", body), "roof_file": None},
            basemap=config.basemap_for(is_demo(data, views)),
            slope_pitch=getattr(roof, "slope_pitch", None),
        )
        job.add("report.pdf", files["report_pdf"])
        job.add("report.html", files["report_html"])
        from neve import safe_write

        with safe_write.atomic_file(job.folder / "package.zip", field="package") as tmp:
            shutil.make_archive(str(tmp.with_suffix("")), "zip", root_dir=job.folder,
                                base_dir="package")  # fmt: skip
        zipped = job.folder / "package.zip"
        job.add("package.zip", zipped)


def run_screen_job(job: Job, config, sites: Path, options: dict) -> None:
    """A portfolio run (in a worker thread): every result format, the map, the summary."""
    try:
        from neve import safe_write
        from neve.geo.screen.outputs import write_results
        from neve.geo.screen.run import run_screen

        job.status, job.stage = "running", "screening"
        run = run_screen(
            sites,
            layers=options.get("layers"),
            dem=options.get("dem"),
            dem_units=options.get("dem_units"),
            roof=options.get("roof"),
            standard=options.get("standard"),
            gazetteer=config.gazetteer,
            geocoder_url=config.geocoder_url,
            max_rows=None,
            progress=False,
        )
        job.stage = "writing results"
        from neve.geo.screen.outputs import XLSX_MAX_ROWS

        for name in RESULT_FILES:
            if name.endswith(".xlsx") and len(run.results) > XLSX_MAX_ROWS:
                continue
            path = job.folder / name
            write_results(run.results, path, summary=run.summary, geometry=run.geometry)
            job.add(name, path)
        job.add("summary.json", safe_write.write_text(
            job.folder / "summary.json", json.dumps(run.summary, indent=2) + "\n"))  # fmt: skip
        job.stage = "writing the map"
        from neve.geo.screen.views import zone_views
        from neve.maps.portfolio import screen_view, write_portfolio_map

        demo = bool(run.summary.get("demo"))
        view = screen_view(run.results)
        job.add("portfolio_map.html", write_portfolio_map(
            view, job.folder / "portfolio_map.html", demo=demo,
            basemap=config.basemap_for(demo), views=zone_views(run.layers or [], view),
            self_contained=True))  # fmt: skip
        job.data = run.summary
        job.stage, job.status = "done", "done"
    except Exception as exc:  # the job reports it; the server goes on
        import logging

        logging.getLogger("neve.web").exception("portfolio job %s failed", job.id[:6])
        fail(job, exc)
