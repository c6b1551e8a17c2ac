"""A real browser opens report.html: it renders, the Pareto table has one row per design,
and clicking a column header sorts it. Skipped when Debian's chromium is not installed."""

from __future__ import annotations

import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from springsynth.cli import app
from tests.conftest import write_study, write_target

CHROMIUM = Path("/usr/bin/chromium")

pytestmark = [pytest.mark.slow,
              pytest.mark.skipif(not CHROMIUM.exists(),
                                 reason="needs /usr/bin/chromium (Debian package `chromium`) for a headless browser")]


def _chromium(tmp_path: Path, *args: str, timeout: float = 120) -> subprocess.CompletedProcess:
    profile = tmp_path / "chromium-profile"
    profile.mkdir(exist_ok=True)
    cmd = [str(CHROMIUM), "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
           "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic",
           f"--user-data-dir={profile}", *args]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=timeout)


class _Rows(HTMLParser):
    """Rows of the rendered Pareto table: each a list of (text, data-v) per cell."""

    def __init__(self):
        super().__init__()
        self.rows: list[list[tuple[str, str | None]]] = []
        self._table = self._body = False
        self._cell: list[str] | None = None
        self._v: str | None = None

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "table" and a.get("id") == "pareto-table":
            self._table = True
        elif self._table and tag == "tbody":
            self._body = True
        elif self._body and tag == "tr":
            self.rows.append([])
        elif self._body and tag == "td":
            self._cell, self._v = [], a.get("data-v")

    def handle_endtag(self, tag):
        if tag == "table":
            self._table = self._body = False
        elif tag == "td" and self._cell is not None:
            self.rows[-1].append(("".join(self._cell).strip(), self._v))
            self._cell = None

    def handle_data(self, data):
        if self._cell is not None:
            self._cell.append(data)


@pytest.fixture(scope="module")
def run_dir(tmp_path_factory):
    d = tmp_path_factory.mktemp("browser")
    x = np.linspace(0, 6, 13)
    write_target(d / "lin.csv", x, 3.0 + 1.2 * x, tol=0.4)
    out = d / "run"
    r = CliRunner().invoke(app, ["run", str(write_study(d, "lin.csv")), "--out", str(out), "--population", "20",
                                 "--generations", "5"])
    assert r.exit_code == 0, r.output            # a straight line the blades and coils can follow
    assert pd.read_csv(out / "pareto.csv").feasible.any()
    return out


def test_report_renders_in_a_headless_browser(run_dir, tmp_path):
    shot = tmp_path / "shot.png"
    r = _chromium(tmp_path, "--window-size=1280,2000", f"--screenshot={shot}", (run_dir / "report.html").as_uri())
    assert shot.exists(), r.stderr[-2000:]
    import matplotlib.image as mpimg

    img = mpimg.imread(shot)
    assert img.shape[0] >= 1000 and img.shape[1] >= 1000
    assert shot.stat().st_size > 20_000  # text, tables and figures, not a blank page
    assert float(img[..., :3].std()) > 0.05


def test_rendered_table_has_one_row_per_design(run_dir, tmp_path):
    r = _chromium(tmp_path, "--dump-dom", (run_dir / "report.html").as_uri())
    assert r.returncode == 0, r.stderr[-2000:]
    p = _Rows()
    p.feed(r.stdout)
    ids = list(pd.read_csv(run_dir / "pareto.csv").design_id)
    assert len(p.rows) == len(ids)
    assert [row[0][1] for row in p.rows] == ids  # the id cell's sort key is the design id


def test_clicking_a_header_sorts_the_table(run_dir, tmp_path):
    page = tmp_path / "click.html"
    text = (run_dir / "report.html").read_text(encoding="utf-8")
    # after the report's own script: click "stress ratio" (column 3) twice -> descending order
    click = ('<script>var b=document.querySelectorAll("#pareto-table th button")[2];b.click();b.click();'
             "</script></body>")
    page.write_text(text.replace("</body>", click), encoding="utf-8")
    r = _chromium(tmp_path, "--dump-dom", page.as_uri())
    assert r.returncode == 0, r.stderr[-2000:]
    p = _Rows()
    p.feed(r.stdout)
    values = [float(row[2][1]) for row in p.rows]
    assert values == sorted(values, reverse=True)
    assert 'aria-sort="descending"' in r.stdout
    shutil.rmtree(tmp_path / "chromium-profile", ignore_errors=True)
