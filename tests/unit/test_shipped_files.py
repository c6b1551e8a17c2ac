"""Every shipped target, study and design passes `springsynth check` (fast: no search)."""

from __future__ import annotations

import pytest
from typer.testing import CliRunner

from springsynth.cli import app
from tests.conftest import ROOT

SHIPPED = sorted(p.relative_to(ROOT).as_posix() for d in ("targets", "studies") for p in (ROOT / d).iterdir()
                 if p.suffix in (".csv", ".toml"))


def test_the_shipped_files_are_found():
    kinds = {p.split("/")[0] + ("/design" if p.endswith(".design.toml") else "") for p in SHIPPED}
    assert kinds == {"targets", "studies", "studies/design"}, SHIPPED


@pytest.mark.parametrize("rel", SHIPPED)
def test_check_accepts_every_shipped_file(rel):
    r = CliRunner().invoke(app, ["check", str(ROOT / rel)])
    assert r.exit_code == 0, r.output
    assert not r.stderr.strip(), r.stderr
    if rel.endswith(".csv"):
        assert "target with" in r.output and "points over 0 .." in r.output
    elif rel.endswith(".design.toml"):
        assert "design with" in r.output and "element(s)" in r.output
    else:
        assert "study '" in r.output and "kinds" in r.output
