"""The layout check finds each defect a reader would see when it is put in a figure on purpose,
and names the panel and the element."""

from __future__ import annotations

import numpy as np
import pytest

from figspec.output.layout_check import layout_check


def _figure(width_in=3.0, height_in=2.0):
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in), dpi=100)
    sub = fig.add_subfigure(fig.add_gridspec(1, 1)[0, 0])
    sub.set_gid("rate")
    ax = sub.add_subplot(position=[0.2, 0.2, 0.6, 0.6])
    return fig, sub, ax


def _rules(findings) -> dict[str, list]:
    out: dict[str, list] = {}
    for f in findings:
        out.setdefault(f.rule, []).append(f)
    return out


def test_a_clean_figure_has_no_findings():
    fig, _, ax = _figure()
    ax.plot([0, 1], [0, 1])
    ax.set_xticks([])
    ax.set_yticks([])
    assert layout_check(fig) == []


def test_overlapping_texts_are_found_with_their_panel():
    fig, sub, ax = _figure()
    ax.set_xticks([])
    ax.set_yticks([])
    sub.text(0.5, 0.5, "Rate (spikes/s)", fontsize=8)
    sub.text(0.52, 0.5, "Sound level", fontsize=8)
    [found] = _rules(layout_check(fig))["overlap"]
    assert found.panel == "rate" and "'Rate (spikes/s)'" in found.element and "'Sound level'" in found.message


@pytest.mark.parametrize("x, ha, rule", [(0.99, "left", "clipped"), (1 - 0.3 / 25.4 / 3.0, "right", "edge")])
def test_text_past_or_near_the_page_edge(x, ha, rule):
    fig, sub, ax = _figure()                          # 3 in wide: the second text ends 0.3 mm from the edge
    ax.set_xticks([])
    ax.set_yticks([])
    fig.text(x, 0.5, "label", fontsize=8, ha=ha)
    found = _rules(layout_check(fig))
    assert rule in found and found[rule][0].element == "text 'label'"
    if rule == "edge":
        fig.texts[-1].set_x(0.5)
        assert "edge" not in _rules(layout_check(fig))


def test_text_below_the_smallest_printable_size():
    fig, sub, ax = _figure()
    ax.set_xticks([])
    ax.set_yticks([])
    sub.text(0.5, 0.9, "tiny", fontsize=4)
    [found] = _rules(layout_check(fig))["text size"]
    assert "4 pt is below 5 pt" in found.message


def test_a_key_over_drawn_data():
    fig, sub, ax = _figure()
    x = np.linspace(0, 1, 200)
    ax.plot(x, np.full_like(x, 0.9), label="u1")     # a line along the top, where the key goes
    ax.set_ylim(0, 1.05)
    ax.set_xticks([])
    ax.set_yticks([])
    ax.legend(loc="upper right")
    [found] = _rules(layout_check(fig))["key over data"]
    assert found.panel == "rate" and found.element == "key"
    ax.legend(loc="lower left")
    assert "key over data" not in _rules(layout_check(fig))
