r"""Interconnect lines between parts: microstrip on each candidate's top layer.

Each line of a :class:`~stackopt.circuit.compile.CompiledCircuit` (``line_a``, ``line_b``,
``line_length``, ``line_width``) is a lossless TEM line over the candidate's plane with
the Hammerstad–Jensen impedance :math:`Z_0` and effective permittivity
:math:`\varepsilon_{eff}` of its width, the dielectric under it (``GroundBatch.line_height``,
``line_er``) and the top copper. A line without a width takes, on each candidate, the
width that gives the circuit's reference impedance
(:func:`stackopt.physics.synthesis.synthesize_width`). Its two-port admittance (common
return: the plane, the circuit's ground node)

.. math::

    Y = \frac{1}{Z_0}\begin{pmatrix}\coth\gamma\ell & -\mathrm{csch}\,\gamma\ell\\
    -\mathrm{csch}\,\gamma\ell & \coth\gamma\ell\end{pmatrix},\qquad
    \gamma = j\omega\sqrt{\varepsilon_{eff}}/c_0

(D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, table 4.2) is stamped into
the nodal matrix of every candidate.
"""

from __future__ import annotations

import numpy as np

from stackopt.circuit.compile import CompiledCircuit
from stackopt.circuit.grounds import GroundBatch
from stackopt.physics.constants import C0
from stackopt.physics.lines import microstrip_hammerstad_jensen
from stackopt.physics.synthesis import synthesize_width

__all__ = ["line_parameters", "line_admittance"]


def line_parameters(compiled: CompiledCircuit, batch: GroundBatch
                    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Width [m], impedance [ohm] and effective permittivity, each (N, T)."""
    n, t = batch.n, len(compiled.line_length)
    h, er, cu = (np.asarray(batch.line_height)[:, None], np.asarray(batch.line_er)[:, None],
                 batch.copper[:, None])
    width = np.broadcast_to(compiled.line_width[None, :], (n, t)).copy()
    if np.any(np.isnan(width)):
        w50, ok = synthesize_width(compiled.z0, h[:, 0], er[:, 0], cu[:, 0])
        width = np.where(np.isnan(width), np.where(ok, w50, np.nan)[:, None], width)
    z0, eeff = microstrip_hammerstad_jensen(width, h, er, cu)
    return width, np.asarray(z0), np.asarray(eeff)


def line_admittance(compiled: CompiledCircuit, batch: GroundBatch, freqs: np.ndarray
                    ) -> np.ndarray:
    """Two-port admittance of every line, (N, F, T, 2, 2) complex [S]."""
    _, z0, eeff = line_parameters(compiled, batch)
    w = 2 * np.pi * np.asarray(freqs, dtype=float)
    gl = 1j * w[None, :, None] * np.sqrt(eeff)[:, None, :] / C0 * compiled.line_length
    zc = z0[:, None, :]
    y = np.empty(gl.shape + (2, 2), dtype=complex)
    y[..., 0, 0] = y[..., 1, 1] = 1.0 / (zc * np.tanh(gl))
    y[..., 0, 1] = y[..., 1, 0] = -1.0 / (zc * np.sinh(gl))
    return y
