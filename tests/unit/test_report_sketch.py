"""The arrangement sketch of a design figure: its words never cover one another."""

from __future__ import annotations

import pytest

import springsynth as ss


def _design(tmp_path, links: int, offset_mm: float):
    coil = ('kind = "helical_compression"\nmaterial = "music_wire"\ncount = 1\nwire_diameter_mm = 0.6\n'
            'mean_diameter_mm = 4.5\nactive_coils = 20.0\nfree_length_mm = 25.0\n')
    text = f'name = "S"\n\n[[chain]]\ncount = 2\noffset_mm = {offset_mm}\n' + "".join(
        f"\n[[chain.element]]\n{coil}" for _ in range(links))
    text += f'\n[[element]]\n{coil}offset_mm = {offset_mm}\n'
    path = tmp_path / "s.toml"
    path.write_text(text)
    return ss.load_design(path)


def _sketch(design, alone: bool):
    """The sketch's axes: of the report's design figure, or of a sketch alone."""
    import numpy as np

    from springsynth.assembly.evaluate import evaluate_design
    from springsynth.report.design_figure import plot_design
    from springsynth.report.schematic import plot_schematic

    if alone:
        return plot_schematic(design).axes[0]
    return plot_design(design, evaluate_design(design, np.linspace(0.0, 3.0, 7)), stress_limit=0.8).axes[2]


@pytest.mark.parametrize("alone", [False, True])
@pytest.mark.parametrize("links", [2, 3])
@pytest.mark.parametrize("offset_mm", [-4.0, 1.5])
def test_preload_and_gap_marks_leave_the_element_labels_clear(tmp_path, links, offset_mm, alone):
    # a preloaded chain once had its "preload" words over its second link's label "e2"
    from matplotlib.text import Text

    ax = _sketch(_design(tmp_path, links, offset_mm), alone)
    fig = ax.figure
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    texts = [t for t in ax.findobj(Text) if t.get_text() and t.get_visible()]
    words = [t.get_text() for t in texts]
    assert any(w.startswith("preload" if offset_mm < 0 else "gap") for w in words), words
    assert {f"e{j}" for j in range(2, links + 1)} <= set(words), words
    boxes = [(t.get_text(), t.get_window_extent(renderer)) for t in texts]
    for i, (a, ba) in enumerate(boxes):
        for b, bb in boxes[i + 1:]:
            assert not ba.overlaps(bb), (a, b)
