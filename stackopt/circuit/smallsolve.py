r"""Many small dense systems at once: Gaussian elimination vectorized over the batch.

For a handful of unknowns (the ground terminals of one circuit) LAPACK's fixed cost per
matrix dominates a stacked ``numpy.linalg.solve``. Here the batch is the last, contiguous
axis of one array and the Python loop runs over the pivot columns only; each step is a
few numpy operations on every system at once.

:func:`schur_small` eliminates the first ``g`` columns of bordered systems

.. math::

    \begin{pmatrix} K & B \\ C & D \end{pmatrix} \;\to\; D - C K^{-1} B

by Gaussian elimination with partial pivoting among the rows of :math:`K` (row of largest
modulus in the pivot column, first one on ties), the textbook algorithm of Golub & Van
Loan, *Matrix Computations*, 4th ed., Johns Hopkins University Press, 2013, alg. 3.4.1,
number from memory (what LAPACK's ``getrf`` does per matrix); the border rows are updated
along with the others and are never pivot rows. With :math:`C = -I`, :math:`D = 0` it solves
:math:`K X = B`.
"""

from __future__ import annotations

import numpy as np

__all__ = ["schur_small", "SMALL"]

#: Largest ``g`` eliminated here; larger systems go to ``numpy.linalg.solve``.
SMALL = 8


def _pivot(a: np.ndarray, k: int, g: int) -> None:
    """Swap row ``k`` with the row (of ``k..g-1``) of largest modulus in column ``k``."""
    mag = np.abs(a[k:g, k])
    best, p = mag[0].copy(), np.zeros(a.shape[2], dtype=np.intp)
    for i in range(1, g - k):
        better = mag[i] > best
        p[better] = i
        np.maximum(best, mag[i], out=best)
    idx = np.flatnonzero(p)  # only the systems that need a swap (few, usually)
    if idx.size:
        sub, rows = a[:, k:], p[idx] + k
        row_p = sub[rows, :, idx]  # (swaps, columns)
        sub[rows, :, idx] = sub[k][:, idx].T
        sub[k, :, idx] = row_p


def schur_small(a: np.ndarray, g: int) -> np.ndarray:
    """Schur complement ``D - C K^-1 B`` of every bordered system of a batch, in place.

    Parameters
    ----------
    a : ndarray of complex, shape (g + q, g + m, B)
        ``B`` systems ``[[K, B], [C, D]]`` with ``K`` of shape (g, g), batch axis last;
        overwritten.
    g : int
        Size of ``K`` (columns eliminated).

    Returns
    -------
    ndarray of complex, shape (q, m, B)
        ``D - C K^-1 B`` (a view into ``a``).

    Raises
    ------
    numpy.linalg.LinAlgError
        If some ``K`` is exactly singular (a zero pivot), as ``numpy.linalg.solve`` does.
    """
    if g > SMALL:
        k_, b_ = a[:g, :g].transpose(2, 0, 1), a[:g, g:].transpose(2, 0, 1)
        a[g:, g:] -= (a[g:, :g].transpose(2, 0, 1) @ np.linalg.solve(k_, b_)).transpose(1, 2, 0)
        return a[g:, g:]
    for k in range(g):
        if k + 1 < g:
            _pivot(a, k, g)
        piv = a[k, k]
        if not np.all(piv != 0):
            raise np.linalg.LinAlgError("Singular matrix")
        a[k, k + 1:] *= 1.0 / piv
        a[k + 1:, k + 1:] -= a[k + 1:, k, None] * a[k, None, k + 1:]
    return a[g:, g:]
