"""Load test of ``neve serve``: concurrent clients on ``POST /api/site`` over loopback.

Run::

    python tests/benchmarks/bench_serve.py                       # 20 clients, 500 requests, demo
    python tests/benchmarks/bench_serve.py --clients 40 --requests 2000
    python tests/benchmarks/bench_serve.py --roof                # with a gable roof in each request
    python tests/benchmarks/bench_serve.py --elevation           # an elevation given, no DEM read
    python tests/benchmarks/bench_serve.py --layer zones.gpkg    # the server's layers

Starts ``neve serve`` in a subprocess on a free 127.0.0.1 port (the layers are
loaded once, at start; one warm-up request loads what the first request
loads), then ``--clients`` threads, each with its own keep-alive HTTP client
(httpx), send ``--requests`` requests in all, each a site at invented
coordinates on and around the demo island (seeded) with the demo DEM.
Prints the error count, throughput and the latency percentiles beside the
target of issue 15: median under 150 ms with 20 clients. Figures are
printed, never asserted.

Not collected by pytest (``norecursedirs``) and not run by CI.
"""

from __future__ import annotations

import argparse
import random
import socket
import statistics
import subprocess
import sys
import tempfile
import threading
import time

TARGET_MEDIAN_MS = 150.0


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _wait(base: str, proc) -> None:
    import httpx

    for _ in range(300):
        if proc.poll() is not None:
            raise SystemExit("neve serve stopped: " + proc.stderr.read())
        try:
            if httpx.get(base + "/", timeout=2).status_code == 200:
                return
        except httpx.HTTPError:
            time.sleep(0.1)
    raise SystemExit("neve serve did not answer")


def _bodies(n: int, roof: bool, elevation: bool = False, seed: int = 15) -> list[dict]:
    rng = random.Random(seed)
    out = []
    for _ in range(n):
        body = {"at": f"{rng.uniform(47.38, 47.62):.5f},{rng.uniform(-140.35, -139.75):.5f}",
                "dem": "demo"}  # fmt: skip
        if elevation:
            body.pop("dem")
            body["elevation"] = "400m"
        if roof:
            body.update(shape="gable", slope="6:12", eave_to_ridge="30ft")
        out.append(body)
    return out


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--clients", type=int, default=20)
    ap.add_argument("--requests", type=int, default=500)
    ap.add_argument("--roof", action="store_true", help="a gable roof in every request")
    ap.add_argument("--layer", action="append", default=[], help="a layer for the server")
    ap.add_argument(
        "--elevation",
        action="store_true",
        help="each request gives an elevation (400m) instead of asking the demo DEM",
    )
    args = ap.parse_args(argv)
    import httpx

    port = _free_port()
    base = f"http://127.0.0.1:{port}"
    cmd = [sys.executable, "-m", "neve", "serve", "--port", str(port),
           "--workdir", tempfile.mkdtemp(prefix="bench-serve-")]  # fmt: skip
    for layer in args.layer:
        cmd += ["--layer", layer]
    t0 = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    try:
        _wait(base, proc)
        started = time.perf_counter() - t0
        bodies = _bodies(args.requests, args.roof, args.elevation)
        warm = time.perf_counter()
        httpx.post(base + "/api/site", json=bodies[0], timeout=60).raise_for_status()
        warm = time.perf_counter() - warm
        latencies: list[float] = []
        errors: list[str] = []
        lock = threading.Lock()
        queue = list(enumerate(bodies))

        def worker():
            with httpx.Client(base_url=base, timeout=60) as client:
                while True:
                    with lock:
                        if not queue:
                            return
                        _, body = queue.pop()
                    t = time.perf_counter()
                    try:
                        r = client.post("/api/site", json=body)
                        ok = r.status_code == 200 and "ground" in r.json()
                    except httpx.HTTPError as exc:
                        ok, r = False, exc
                    dt = time.perf_counter() - t
                    with lock:
                        latencies.append(dt)
                        if not ok:
                            errors.append(str(getattr(r, "status_code", r)))

        threads = [threading.Thread(target=worker) for _ in range(args.clients)]
        wall = time.perf_counter()
        for th in threads:
            th.start()
        for th in threads:
            th.join()
        wall = time.perf_counter() - wall
    finally:
        proc.terminate()
        proc.wait(timeout=10)
    ms = sorted(x * 1000 for x in latencies)

    def pct(p: float) -> float:
        return ms[min(len(ms) - 1, int(round(p / 100 * (len(ms) - 1))))]

    median = statistics.median(ms)
    print(f"neve serve load test: {args.clients} clients, {len(ms)} requests to POST /api/site"
          f"{' (with a gable roof)' if args.roof else ''}, "
          f"{'layers ' + ', '.join(args.layer) if args.layer else 'demo layers'}"
          f"{', elevation given' if args.elevation else ' + demo DEM'}")  # fmt: skip
    print(f"  server start {started:.1f} s, first request (warm-up) {warm * 1000:.0f} ms")
    print(
        f"  errors      {len(errors)}" + (f" ({', '.join(sorted(set(errors)))})" if errors else "")
    )
    print(f"  throughput  {len(ms) / wall:.1f} requests/s ({wall:.2f} s wall)")
    print(f"  latency ms  p50 {median:.1f}   p90 {pct(90):.1f}   p95 {pct(95):.1f}   "
          f"p99 {pct(99):.1f}   max {ms[-1]:.1f}   min {ms[0]:.1f}")  # fmt: skip
    verdict = "meets" if median < TARGET_MEDIAN_MS else "misses"
    print(f"  target      median < {TARGET_MEDIAN_MS:.0f} ms: {verdict} ({median:.1f} ms)")


if __name__ == "__main__":
    main()
