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


def _start(args):
    import sys

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    proc = subprocess.Popen([sys.executable, "-m", "neve", "serve", "--port", str(port), *args],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)  # fmt: skip
    return proc, port


def _wait_for_page(proc, port) -> None:
    import urllib.request

    for _ in range(150):
        try:
            with urllib.request.urlopen(f"http://127.0.0.1:{port}/", timeout=2):
                return
        except OSError:
            assert proc.poll() is None, proc.stderr.read()
            time.sleep(0.2)
    raise AssertionError("neve serve did not answer")


def test_its_own_temporary_work_folder_goes_at_shutdown_a_given_one_stays(tmp_path):
    """Without --workdir the jobs live in a temporary folder neve removes when it stops
    (common practice for temporary files); a --workdir and its jobs are left in place."""
    import re
    from pathlib import Path

    proc, port = _start([])
    line = ""
    try:
        line = proc.stderr.readline()
        _wait_for_page(proc, port)
        work = Path(re.search(r"jobs in (\S+)$", line.strip()).group(1))
        assert work.is_dir()
    finally:
        proc.terminate()
        proc.wait(timeout=20)
    assert not work.exists()

    given = tmp_path / "jobs"
    (given / "kept").mkdir(parents=True)
    proc, port = _start(["--workdir", str(given)])
    try:
        _wait_for_page(proc, port)
    finally:
        proc.terminate()
        proc.wait(timeout=20)
    assert (given / "kept").is_dir()
