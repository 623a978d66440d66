"""Panelization: how many rectangular boards fit on a production panel.

Boards are laid out on a regular grid inside the panel's edge margins with
``board_spacing`` between neighbours, all in one orientation; the better of the two
orientations (board as drawn, or turned 90°) is used. Mixed layouts (some boards turned)
are not considered: they rarely gain a board on real panels and fabs seldom quote them.
"""

from __future__ import annotations

import numpy as np

from stackopt.model.costtable import Panel

__all__ = ["grid_count", "boards_per_panel", "panel_share"]

#: Slack for floating-point round-off when boards fit exactly (1 nm on a panel).
_EPS = 1e-9


def grid_count(usable, board, spacing):
    r"""Boards of length ``board`` that fit in a row of length ``usable`` (all in m).

    .. math:: n = \left\lfloor \frac{u + s}{b + s} \right\rfloor

    since ``n`` boards with ``n - 1`` gaps need :math:`n b + (n - 1) s \le u`.
    Broadcasts over arrays; returns an integer array (0-d for scalars).
    """
    u, b, s = (np.asarray(x, dtype=float) for x in (usable, board, spacing))
    n = np.floor((u + s + _EPS) / (b + s))
    return np.maximum(n, 0).astype(np.int64)


def boards_per_panel(panel: Panel, board_width, board_height):
    """Boards per panel, the better of the two orientations (broadcasts; int array).

    Parameters
    ----------
    panel : Panel
        Panel size, edge margin and spacing between boards.
    board_width, board_height : float or array
        Board outline, m.

    Returns
    -------
    numpy.ndarray of int
        ``max(nx(w) * ny(h), nx(h) * ny(w))``; 0 if the board does not fit at all.

    """
    uw, uh, s = panel.usable_width, panel.usable_height, panel.board_spacing
    upright = grid_count(uw, board_width, s) * grid_count(uh, board_height, s)
    turned = grid_count(uw, board_height, s) * grid_count(uh, board_width, s)
    return np.maximum(upright, turned)


def panel_share(panel_cost, per_panel):
    """Per-board share of a per-panel cost: ``panel_cost / boards_per_panel``.

    The share charges each board its fraction of a full panel; a part-filled last panel
    is not charged extra (fabs fill it or price on the panel fraction, common practice,
    no source). This keeps the unit cost non-increasing in quantity.
    """
    return np.asarray(panel_cost, dtype=float) / np.asarray(per_panel, dtype=float)
