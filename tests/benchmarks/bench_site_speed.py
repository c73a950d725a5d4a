"""Benchmark of one ``neve site`` run: the README's first command without and with its outputs.

Run::

    python tests/benchmarks/bench_site_speed.py              # 5 runs of each variant
    python tests/benchmarks/bench_site_speed.py --repeat 9
    python tests/benchmarks/bench_site_speed.py --profile    # and where the --package run goes
    python tests/benchmarks/bench_site_speed.py --imports    # and each library's import alone

It takes the ``neve site`` command of the README's first setup block (the
invented Skerrow demo), drops its ``--map`` and ``--package`` outputs and
times four variants: no output files, ``--map``, ``--package``, and both (the
README command as written). Every run is a fresh subprocess in a fresh
temporary folder; each variant runs ``--repeat`` times and its median wall
time is printed beside the fastest and slowest, next to three floors measured
the same way: the Python interpreter starting (``python -c pass``), the
``neve`` command starting (``neve --help``) and the imports a package run
cannot avoid (WeasyPrint, matplotlib, folium, geopandas, rasterio).

The goal, from issue 11: the README command with map and package in 2 s or
less. Figures are printed, never asserted. ``--profile`` runs the
``--package`` variant once more under :mod:`cProfile` and prints its top
functions by cumulative time.

Not collected by pytest (``norecursedirs``) and not run by CI.
"""

from __future__ import annotations

import argparse
import pstats
import re
import shlex
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

#: the goal of issue 11 for the README command with --map and --package [s]
GOAL_S = 2.0

#: the libraries a --package run cannot do without (their imports: the floor of a package run)
LIBRARIES = ("weasyprint", "matplotlib.pyplot", "folium", "geopandas", "rasterio")
_IMPORTS = "import " + ", ".join(LIBRARIES)


def readme_site_args() -> list[str]:
    """The arguments after ``neve`` of the README's first command, without ``--map``/``--package``."""
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    head = text[: text.index("## Usage")]
    first = re.findall(r"```sh\n(.+?)\n```", head, flags=re.S)[0]
    args = shlex.split(first[first.index("neve site") :])[1:]
    out, skip = [], False
    for a in args:
        if skip:
            skip = False
            continue
        if a in ("--map", "--package"):
            skip = True
            continue
        out.append(a)
    return out


def neve_command() -> list[str]:
    found = shutil.which("neve")
    return [found] if found else [sys.executable, "-m", "neve"]


def wall_time(cmd: list[str]) -> float:
    """Wall time [s] of ``cmd`` run in a fresh temporary folder; a failure stops the benchmark."""
    with tempfile.TemporaryDirectory(prefix="neve-bench-site-") as tmp:
        t = time.perf_counter()
        res = subprocess.run(cmd, cwd=tmp, capture_output=True, text=True)
        wall = time.perf_counter() - t
    if res.returncode != 0:
        raise RuntimeError(f"{shlex.join(cmd)} failed ({res.returncode}):\n{res.stderr[-2000:]}")
    return wall


def timed(cmd: list[str], repeat: int) -> list[float]:
    return [wall_time(cmd) for _ in range(repeat)]


def variants(base: list[str]) -> dict[str, list[str]]:
    site = [*neve_command(), *base]
    return {
        "neve site (no output files)": site,
        "neve site --map": [*site, "--map", "site.html"],
        "neve site --package": [*site, "--package", "calc"],
        "neve site --map --package (README)": [*site, "--map", "site.html", "--package", "calc"],
    }


def floors() -> dict[str, list[str]]:
    return {
        "floor: python -c pass": [sys.executable, "-c", "pass"],
        "floor: neve --help": [*neve_command(), "--help"],
        "floor: imports of a package run": [sys.executable, "-c", _IMPORTS],
    }


def profile(base: list[str], top: int) -> None:
    """Run the ``--package`` variant under cProfile; print the ``top`` functions by cumulative time."""
    with tempfile.TemporaryDirectory(prefix="neve-bench-prof-") as tmp:
        out = Path(tmp) / "package.prof"
        cmd = [sys.executable, "-m", "cProfile", "-o", str(out), "-m", "neve", *base,
               "--package", "calc"]  # fmt: skip
        res = subprocess.run(cmd, cwd=tmp, capture_output=True, text=True)
        if res.returncode != 0:
            raise RuntimeError(f"profiled run failed ({res.returncode}):\n{res.stderr[-2000:]}")
        stats = pstats.Stats(str(out))
        total = stats.total_tt  # type: ignore[attr-defined]
        imports = max(
            (v[3] for k, v in stats.stats.items() if k[2] == "_find_and_load"),  # type: ignore[attr-defined]
            default=0.0,
        )
        print(f"\nprofile of neve site --package (one run under cProfile, {total:.2f} s; "
              f"imports {imports:.2f} s of it)")  # fmt: skip
        print(f"top {top} functions by cumulative time:")
        stats.sort_stats("cumulative").print_stats(top)
        own = rf"{re.escape(str(ROOT))}/(?!\.venv)"  # neve's own modules, not the libraries
        print(f"top {top} of neve's own functions by cumulative time:")
        stats.sort_stats("cumulative").print_stats(own, top)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5, help="runs of each variant (median shown)")
    ap.add_argument("--profile", action="store_true", help="profile the --package run once more")
    ap.add_argument("--top", type=int, default=25, help="functions listed by --profile")
    ap.add_argument("--imports", action="store_true",
                    help="also time the import of each library of the floor alone")  # fmt: skip
    args = ap.parse_args(argv)
    repeat = max(1, args.repeat)
    base = readme_site_args()
    print(f"command: neve {shlex.join(base)}")
    print(f"{repeat} runs each, a fresh subprocess in a fresh temporary folder per run\n")
    rows = [(name, timed(cmd, repeat)) for name, cmd in {**floors(), **variants(base)}.items()]
    width = max(len(name) for name, _ in rows)
    print(f"{'':{width}}  {'median':>8}  {'fastest':>8}  {'slowest':>8}")
    for name, runs in rows:
        print(f"{name:{width}}  {statistics.median(runs):7.2f}s  {min(runs):7.2f}s  "
              f"{max(runs):7.2f}s")  # fmt: skip
    full = statistics.median(rows[-1][1])
    verdict = "met" if full <= GOAL_S else "NOT met"
    print(f"\ngoal: <= {GOAL_S:g} s with map and package (issue 11): {full:.2f} s, {verdict}")
    if args.imports:
        alone = {lib: statistics.median(timed([sys.executable, "-c", f"import {lib}"], repeat))
                 for lib in LIBRARIES}  # fmt: skip
        print("each import alone (median): "
              + ", ".join(f"{lib} {t:.2f} s" for lib, t in alone.items()))  # fmt: skip
    if args.profile:
        profile(base, args.top)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
