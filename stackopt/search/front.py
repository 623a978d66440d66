"""Non-dominated filtering (minimisation) and hypervolume."""

from __future__ import annotations

import numpy as np

__all__ = ["nondominated", "hypervolume"]


def nondominated(F: np.ndarray) -> np.ndarray:
    """Boolean mask of the rows of ``F`` (N, k) that no other row dominates (minimising).

    Rows with equal objective vectors are all kept. Two objectives use a lexsort and a
    running-minimum sweep (O(N log N)); more objectives compare each distinct row, in
    lexicographic order, with the front found so far (O(N x front size)).
    """
    F = np.asarray(F, dtype=float)
    n = len(F)
    if n == 0:
        return np.zeros(0, dtype=bool)
    if F.shape[1] == 2:
        order = np.lexsort((F[:, 1], F[:, 0]))
        f0, f1 = F[order, 0], F[order, 1]
        # best f1 among rows with strictly smaller f0 (or equal f0 and smaller f1)
        run = np.minimum.accumulate(f1)
        prev = np.r_[np.inf, run[:-1]]
        # a row is dominated if an earlier row (f0 <=) has f1 < own, or same f1 with f0 <
        first_of_f0 = np.r_[True, f0[1:] != f0[:-1]]
        grp = np.cumsum(first_of_f0) - 1
        grp_start = np.flatnonzero(first_of_f0)
        before_grp = np.r_[np.inf, run[grp_start[1:] - 1]] if len(grp_start) else prev
        best_before = before_grp[grp]
        grp_min = np.minimum.reduceat(f1, grp_start)[grp]
        keep_sorted = (f1 < best_before) & (f1 <= grp_min)
        # equal vectors across groups cannot happen (f0 differs); ties inside a group kept
        mask = np.zeros(n, dtype=bool)
        mask[order] = keep_sorted
        return mask
    # More objectives: distinct rows in lexicographic order can only be dominated by an
    # earlier row, and then by one already on the front, so each row is compared with the
    # (small) front found so far instead of with every other row.
    uniq, inv = np.unique(F, axis=0, return_inverse=True)  # sorted lexicographically
    front: list[int] = []
    on = np.zeros(len(uniq), dtype=bool)
    for i in range(len(uniq)):  # the front, not the candidates, bounds each comparison
        if front:
            f = uniq[front]
            if np.any(np.all(f <= uniq[i], axis=1) & np.any(f < uniq[i], axis=1)):
                continue
        front.append(i)
        on[i] = True
    return on[inv.reshape(-1)]


def hypervolume(F: np.ndarray, ref: np.ndarray) -> float:
    """Hypervolume of ``F`` (minimising) against ``ref``, by pymoo's indicator."""
    from pymoo.indicators.hv import HV

    F = np.asarray(F, dtype=float)
    F = F[np.all(F < ref, axis=1)]
    if not len(F):
        return 0.0
    return float(HV(ref_point=np.asarray(ref, dtype=float))(F))
