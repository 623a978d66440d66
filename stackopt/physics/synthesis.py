r"""Trace width for a target impedance, for a whole batch at once.

Every line model here has an impedance that falls monotonically as the trace widens (more
capacitance to the return conductors, less inductance), so the width is found by
bisection on :math:`\ln w` inside the fab's limits, all elements of the batch stepping
together. Where no width in range reaches the target the answer is NaN with ``ok`` False,
never a clipped or extrapolated width.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Literal, get_args

import numpy as np
from numpy.typing import NDArray

from stackopt.errors import ModelError
from stackopt.physics.arrays import ArrayLike
from stackopt.physics.arrays import FloatArray as _F
from stackopt.physics.coplanar import cpwg
from stackopt.physics.coupled import coupled_microstrip, coupled_stripline
from stackopt.physics.lines import check_microstrip_model, microstrip, stripline

__all__ = ["LINE_KINDS", "LineKind", "line_impedance", "synthesize_width"]

LineKind = Literal["microstrip", "stripline", "cpwg", "coupled_microstrip",
                   "coupled_stripline"]
#: Line kinds :func:`synthesize_width` can size (coupled kinds size for ``z_diff``).
LINE_KINDS: tuple[str, ...] = get_args(LineKind)

#: Extra keyword each kind needs (beyond w, h, er, t) and which it accepts.
_NEEDS = {"cpwg": ("gap",), "coupled_microstrip": ("s",), "coupled_stripline": ("s",)}
_ACCEPTS = {"microstrip": ("model",), "stripline": ("offset",), "cpwg": ("gap",),
            "coupled_microstrip": ("s",), "coupled_stripline": ("s",)}

_KERNELS: dict[str, Callable[..., _F]] = {
    "microstrip": lambda w, h, er, t, model="hammerstad-jensen": microstrip(
        w, h, er, t, model)[0],
    "stripline": lambda w, h, er, t, offset=0.0: stripline(w, h, er, t, offset),
    "cpwg": lambda w, h, er, t, gap: cpwg(w, gap, h, er, t)[0],
    "coupled_microstrip": lambda w, h, er, t, s: coupled_microstrip(w, s, h, er, t)["z_diff"],
    "coupled_stripline": lambda w, h, er, t, s: coupled_stripline(w, s, h, er, t)["z_diff"],
}


def _check(kind: str, kw: Mapping[str, object]) -> None:
    if kind not in _KERNELS:
        raise ModelError(f"unknown line kind {kind!r}", key="kind",
                         fix="choose one of: " + ", ".join(LINE_KINDS))
    missing = [k for k in _NEEDS.get(kind, ()) if k not in kw]
    extra = [k for k in kw if k not in _ACCEPTS[kind]]
    if missing or extra:
        raise ModelError(f"line kind {kind!r} got options {sorted(kw)}", key="kind",
                         fix=f"it takes {', '.join(_ACCEPTS[kind])}"
                         + (f" and needs {', '.join(missing)}" if missing else ""))
    if "model" in kw:
        check_microstrip_model(str(kw["model"]))


def line_impedance(w: ArrayLike, h: ArrayLike, er: ArrayLike, t: ArrayLike = 35e-6,
                   kind: LineKind = "microstrip", **kw: ArrayLike | str) -> _F:
    r"""Impedance [ohm] of one line kind as a function of width (the synthesis target).

    .. math::

        Z(w) = Z_0^{\mathrm{kind}}(w, h, \varepsilon_r, t, \ldots)

    Parameters
    ----------
    w : array_like
        Trace width [m].
    h : array_like
        Dielectric thickness to the plane [m]; for stripline kinds the plane-to-plane
        spacing.
    er : array_like
        Relative permittivity [-].
    t : array_like, optional
        Copper thickness [m].
    kind : str
        One of :data:`LINE_KINDS`.
    **kw
        ``model`` (microstrip), ``offset`` (stripline), ``gap`` (cpwg, required),
        ``s`` (coupled kinds, required; the result is then :math:`Z_{\mathrm{diff}}`).

    Returns
    -------
    ndarray
        :math:`Z_0` [ohm], or :math:`Z_{\mathrm{diff}}` for the coupled kinds.

    """
    _check(kind, kw)
    return np.asarray(_KERNELS[kind](w, h, er, t, **kw), float)


def synthesize_width(z_target: ArrayLike, h: ArrayLike, er: ArrayLike, t: ArrayLike = 35e-6,
                     kind: LineKind = "microstrip", w_min: ArrayLike = 10e-6,
                     w_max: ArrayLike = 50e-3, *, iterations: int = 64, rtol: float = 1e-6,
                     **kw: ArrayLike | str) -> tuple[_F, NDArray[np.bool_]]:
    r"""Width giving a target impedance, by vectorized bisection on :math:`\ln w`.

    Solves :math:`Z(w) = Z_t` for :math:`w \in [w_{\min}, w_{\max}]` with
    :math:`Z(w)` from :func:`line_impedance`, using that :math:`Z` decreases with
    :math:`w`:

    .. math::

        \ln w_{k+1} = \tfrac12(\ln w_{lo} + \ln w_{hi}),\quad
        \begin{cases} w_{lo} \leftarrow w_{k+1} & Z(w_{k+1}) > Z_t \\
        w_{hi} \leftarrow w_{k+1} & \text{otherwise.}\end{cases}

    Parameters
    ----------
    z_target : array_like
        Target impedance [ohm] (:math:`Z_{\mathrm{diff}}` for coupled kinds).
    h, er, t : array_like
        As in :func:`line_impedance` [m, -, m].
    kind : str
        One of :data:`LINE_KINDS`; default ``"microstrip"``.
    w_min, w_max : array_like
        Allowed widths [m] (e.g. the fab's minimum trace and a sane maximum).
    iterations : int
        Bisection steps; 64 resolves :math:`\ln w` far below 1e-12.
    rtol : float
        A width is accepted only if :math:`|Z(w)/Z_t - 1| \le` ``rtol``.
    **kw
        Kind-specific options broadcast with the rest (see :func:`line_impedance`).

    Returns
    -------
    width : ndarray
        Width [m], NaN where ``ok`` is False.
    ok : ndarray of bool
        True where a width in ``[w_min, w_max]`` reaches the target.

    Notes
    -----
    Deterministic, no Python loop over elements (only over the fixed iteration count).
    Valid wherever the underlying model is; a target above :math:`Z(w_{\min})` or below
    :math:`Z(w_{\max})` is reported as not reachable.

    """
    _check(kind, kw)
    arrays = np.broadcast_arrays(*(np.asarray(x, float) for x in
                                   (z_target, h, er, t, w_min, w_max)))
    zt, h, er, t, wlo, whi = arrays
    opts = {k: (v if k == "model" else np.asarray(v, float)) for k, v in kw.items()}

    def z_of(w: _F) -> _F:
        return np.asarray(_KERNELS[kind](w, h, er, t, **opts), float)

    lo, hi = np.log(wlo), np.log(whi)
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        above = z_of(np.exp(mid)) > zt  # NaN (no meaning) counts as below the target
        lo = np.where(above, mid, lo)
        hi = np.where(above, hi, mid)
    w = np.exp(0.5 * (lo + hi))
    resid = np.abs(z_of(w) / zt - 1.0)
    ok = (resid <= rtol) & (wlo <= whi) & np.isfinite(zt) & (zt > 0)
    return np.where(ok, w, np.nan), ok
