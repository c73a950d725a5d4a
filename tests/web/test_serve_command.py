"""``neve serve`` as a command: it starts, listens on loopback and serves the demo.

Source: issue 15 ("neve serve on a fresh install shows the demo site ... with no
internet"; "binds to 127.0.0.1 unless told otherwise"). The page is fetched
with the standard library, no browser.
"""

from __future__ import annotations

import socket
import subprocess
import time


def test_neve_serve_starts_and_serves_the_demo(tmp_path):
    """The command itself: ``neve serve`` on a free loopback port answers the site page."""
    import sys
    import urllib.request

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    proc = subprocess.Popen(
        [sys.executable, "-m", "neve", "serve", "--port", str(port), "--workdir", str(tmp_path)],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    try:
        page = None
        for _ in range(150):
            try:
                with urllib.request.urlopen(f"http://127.0.0.1:{port}/", timeout=2) as r:
                    page = r.read().decode("utf-8")
                break
            except OSError:
                if proc.poll() is not None:
                    break
                time.sleep(0.2)
        assert page is not None, proc.stderr.read() if proc.poll() is not None else "no answer"
        assert "DEMO DATA" in page and "/assets/leaflet.js" in page
    finally:
        proc.terminate()
        proc.wait(timeout=10)
    assert f"http://127.0.0.1:{port}/" in proc.stderr.read()
