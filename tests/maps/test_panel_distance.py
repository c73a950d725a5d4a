"""The site map's panel names a distance as a distance (issue 11: "Nearest other value
2685 ft" read like an elevation)."""

from __future__ import annotations

from click.testing import CliRunner

from neve.cli import main


def test_panel_labels_the_neighbour_distance_as_a_distance(tmp_path):
    out = tmp_path / "site.html"
    # the README's first site on the invented demo: zone SK-N lies about 819 m away
    r = CliRunner().invoke(main, ["site", "--at", "47.52,-140.05", "--dem", "demo",
                                  "--map", str(out)])  # fmt: skip
    assert r.exit_code == 0, r.output
    html = out.read_text(encoding="utf-8")
    assert "Distance to a zone of another value" in html
    assert "Nearest other value" not in html
    assert "m) away" in html  # e.g. "2685 ft (818.5 m) away"
