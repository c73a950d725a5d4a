"""Helpers for the browser tests: a loopback HTTP server and an offline Chromium page."""

from __future__ import annotations

import contextlib
import functools
import http.server
import shutil
import threading

CHROMIUM_ARGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
    "--disable-quic",
]


class _QuietHandler(http.server.SimpleHTTPRequestHandler):
    def log_message(self, *args):  # keep pytest output clean
        pass


@contextlib.contextmanager
def serve(directory):
    """Serve ``directory`` on 127.0.0.1 (a free port) in a thread; yields the base URL."""
    handler = functools.partial(_QuietHandler, directory=str(directory))
    server = http.server.ThreadingHTTPServer(("127.0.0.1", 0), handler)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        yield f"http://127.0.0.1:{server.server_address[1]}"
    finally:
        server.shutdown()
        server.server_close()
        thread.join(timeout=5)


@contextlib.contextmanager
def offline_page(base_url, *, width=1280, height=860):
    """A Chromium page that may only load ``base_url``; records what else it tried.

    Yields ``(page, record)`` where ``record`` has lists ``blocked``,
    ``page_errors``, ``console_errors`` and ``dialogs``.
    """
    from playwright.sync_api import sync_playwright

    record = {"blocked": [], "page_errors": [], "console_errors": [], "dialogs": []}
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=shutil.which("chromium"), args=CHROMIUM_ARGS)
        try:
            page = browser.new_page(viewport={"width": width, "height": height})

            def route(r):
                url = r.request.url
                if url.startswith(base_url + "/") or url.startswith("data:"):
                    r.continue_()
                else:
                    record["blocked"].append(url)
                    r.abort()

            page.route("**/*", route)
            page.on("pageerror", lambda exc: record["page_errors"].append(str(exc)))
            page.on(
                "console",
                lambda msg: (
                    record["console_errors"].append(msg.text) if msg.type == "error" else None
                ),
            )

            def on_dialog(dialog):
                record["dialogs"].append(dialog.message)
                dialog.dismiss()

            page.on("dialog", on_dialog)
            yield page, record
        finally:
            browser.close()
