"""The README's two set-up commands stay true (regression guard).

The first command's ``neve ...`` part is run as written (in a temporary
folder, with the installed ``neve``); the second must be the command that
``.ci/run`` runs.
"""

from __future__ import annotations

import re
import shlex
import shutil
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _setup_commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    head = text[: text.index("## Usage")]
    return re.findall(r"```sh\n(.+?)\n```", head, flags=re.S)


def test_exactly_two_setup_commands():
    cmds = _setup_commands()
    assert len(cmds) == 2
    assert "pip install" in cmds[0] and "neve site" in cmds[0]
    assert "pip install" in cmds[1] and "pytest" in cmds[1]


def test_ci_runs_the_readme_test_command():
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert _setup_commands()[1] in ci


@pytest.mark.skipif(shutil.which("neve") is None, reason="the neve command is not installed")
def test_main_command_runs_on_the_demo_data(tmp_path):
    main = _setup_commands()[0]
    neve = main[main.index("neve site") :]
    args = shlex.split(neve)
    res = subprocess.run(args, cwd=tmp_path, capture_output=True, text=True, timeout=300)
    assert res.returncode == 0, res.stderr
    assert "DEMO DATA" in res.stdout
    assert "design uniform load" in res.stdout
    for name in ("report.pdf", "report.html", "site.json", "site_map.html"):
        assert (tmp_path / "calc" / name).is_file(), name
    assert (tmp_path / "site.html").is_file()
