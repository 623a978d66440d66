"""Panelization: hand-worked counts and a direct geometric count of placements."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from stackopt.cost.panel import boards_per_panel, grid_count, panel_share
from stackopt.model.costtable import Panel

MM = 1e-3


def _direct_count(panel: Panel, w: float, h: float) -> int:
    """Place boards one by one, left to right and bottom to top, checking each rectangle
    lies inside the usable area and keeps ``spacing`` from every board placed before it
    (explicit geometry, no formula)."""
    m, s = panel.edge_margin, panel.board_spacing
    placed = np.empty((0, 2))
    tol = 1e-12
    y = m
    while y + h <= panel.height - m + tol:
        x = m
        while x + w <= panel.width - m + tol:
            # the new board is separated from every placed one by >= s in x or in y
            px, py = placed[:, 0], placed[:, 1]
            apart = (px + w + s <= x + tol) | (py + h + s <= y + tol)
            assert apart.all()
            placed = np.vstack([placed, [x, y]])
            x += w + s
        y += h + s
    return len(placed)


def _best_direct(panel: Panel, w: float, h: float) -> int:
    return max(_direct_count(panel, w, h), _direct_count(panel, h, w))


QUICK = Panel(width="457 mm", height="305 mm", edge_margin="10 mm", board_spacing="2.5 mm")


def test_hand_worked_quickturn_50x40():
    # usable 457 - 2*10 = 437 mm by 305 - 2*10 = 285 mm, spacing 2.5 mm
    # as drawn : floor((437 + 2.5) / (50 + 2.5)) = floor(8.37) = 8
    #            floor((285 + 2.5) / (40 + 2.5)) = floor(6.76) = 6   -> 48
    # turned   : floor(439.5 / 42.5) = floor(10.34) = 10
    #            floor(287.5 / 52.5) = floor(5.48) = 5               -> 50
    assert int(grid_count(437 * MM, 50 * MM, 2.5 * MM)) == 8
    assert int(grid_count(285 * MM, 40 * MM, 2.5 * MM)) == 6
    assert int(boards_per_panel(QUICK, 50 * MM, 40 * MM)) == 50
    # per-board share of a 30.00 panel cost: 30 / 50 = 0.60
    assert float(panel_share(30.0, 50)) == 0.6


def test_hand_worked_volume_100x80():
    p = Panel(width="610 mm", height="457 mm", edge_margin="15 mm", board_spacing="3 mm")
    # usable 580 x 427 mm; as drawn floor(583/103)=5 * floor(430/83)=5 -> 25
    # turned floor(583/83)=7 * floor(430/103)=4 -> 28
    assert int(boards_per_panel(p, 100 * MM, 80 * MM)) == 28


def test_exact_fit_counts_the_last_board():
    # 4 boards of 100 mm with 3 gaps of 10 mm = 430 mm exactly fills a 430 mm row
    p = Panel(width="450 mm", height="120 mm", edge_margin="10 mm", board_spacing="10 mm")
    assert int(boards_per_panel(p, 100 * MM, 100 * MM)) == 4
    assert _best_direct(p, 100 * MM, 100 * MM) == 4


def test_board_larger_than_panel_gives_zero():
    assert int(boards_per_panel(QUICK, 500 * MM, 20 * MM)) == 0
    assert int(boards_per_panel(QUICK, 300 * MM, 300 * MM)) == 0


def test_broadcasts_over_arrays():
    w = np.array([50, 100, 20]) * MM
    h = np.array([40, 80, 20]) * MM
    got = boards_per_panel(QUICK, w, h)
    assert got.shape == (3,)
    assert list(got) == [_best_direct(QUICK, a, b) for a, b in zip(w, h, strict=True)]


@settings(max_examples=150, deadline=None)
@given(
    pw=st.integers(100, 700), ph=st.integers(100, 700), margin=st.integers(0, 30),
    spacing=st.integers(0, 10), bw=st.integers(15, 400), bh=st.integers(15, 400),
)
def test_matches_direct_geometric_count(pw, ph, margin, spacing, bw, bh):
    p = Panel(width=pw * MM, height=ph * MM, edge_margin=margin * MM,
              board_spacing=spacing * MM)
    assert int(boards_per_panel(p, bw * MM, bh * MM)) == _best_direct(p, bw * MM, bh * MM)
