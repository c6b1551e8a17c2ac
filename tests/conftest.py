"""Shared fixtures: small targets and studies written to a temporary folder."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from springsynth.assembly.design import Design, Element
from springsynth.model.materials import catalogue

ROOT = Path(__file__).resolve().parents[1]


def write_target(path: Path, x, f, tol=None) -> Path:
    head = "displacement_mm,force_N" + (",tolerance_N" if tol is not None else "")
    rows = [f"{float(a)!r},{float(b)!r}" + (f",{float(tol)!r}" if tol is not None else "") for a, b in zip(x, f)]
    path.write_text(head + "\n" + "\n".join(rows) + "\n")
    return path


def write_study(folder: Path, target: str, *, extra: str = "", elements=("blade_guided", "helical_compression"),
                materials=("stainless_17_7ph", "music_wire"), population=60, generations=30, env=(60, 40, 30)) -> Path:
    p = folder / "study.toml"
    el = ", ".join(f'"{e}"' for e in elements)
    ma = ", ".join(f'"{m}"' for m in materials)
    p.write_text(f"""name = "t"
[target]
file = "{target}"
[envelope]
length_mm = {env[0]}
width_mm = {env[1]}
height_mm = {env[2]}
[limits]
stress_ratio = 0.8
min_thickness_mm = 0.05
[search]
elements = [{el}]
materials = [{ma}]
max_elements = 2
population = {population}
generations = {generations}
seed = 3
{extra}
""")
    return p


def blade(**kw) -> Element:
    p = {"length_mm": 30.0, "width_mm": 10.0, "thickness_mm": 0.3}
    p.update(kw.pop("params", {}))
    return Element("blade_guided", kw.pop("material", "stainless_17_7ph"), kw.pop("count", 1), kw.pop("offset_mm", 0.0), p)


def design(*elements: Element, name="d") -> Design:
    cat = catalogue()
    return Design(tuple(elements), {e.material: cat[e.material] for e in elements}, name=name)


@pytest.fixture
def linear_study(tmp_path):
    x = np.linspace(0, 6, 13)
    write_target(tmp_path / "lin.csv", x, 3.0 + 1.2 * x, tol=0.3)
    return write_study(tmp_path, "lin.csv")
