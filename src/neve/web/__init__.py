"""``neve serve``: neve's second front end, the site and portfolio pages and a JSON API.

The parts: :mod:`neve.web.config` (what the server was started with and may
read), :mod:`neve.web.asks` (request keys -> the commands' library calls),
:mod:`neve.web.site_form` and :mod:`neve.web.screen_form` (the forms),
:mod:`neve.web.uploads` (streamed, size-limited uploads), :mod:`neve.web.jobs`
(unguessable ids, one folder each), :mod:`neve.web.work` (results, packages,
portfolio runs), :mod:`neve.web.pages` (templates, assets, tiles),
:mod:`neve.web.app` (the FastAPI application) and :mod:`neve.web.server`
(uvicorn). Only the command line (``neve.cli.serve``) imports this package.
"""
