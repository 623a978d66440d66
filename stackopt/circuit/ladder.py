r"""Fast path for plain ladders: an ABCD cascade, elementwise over candidates × frequencies.

.. math::

    \text{series } Z:\ \begin{pmatrix}1 & Z\\ 0 & 1\end{pmatrix},\qquad
    \text{shunt } Y:\ \begin{pmatrix}1 & 0\\ Y & 1\end{pmatrix}

and the two-port's S-parameters for equal real reference impedances :math:`Z_0`
(Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, table 4.2):

.. math::

    \Delta = A + B/Z_0 + C Z_0 + D,\quad
    S_{11} = \frac{A + B/Z_0 - C Z_0 - D}{\Delta},\quad
    S_{12} = \frac{2(AD - BC)}{\Delta},\quad S_{21} = \frac{2}{\Delta},\quad
    S_{22} = \frac{-A + B/Z_0 - C Z_0 + D}{\Delta}

Exact only when the shunt branches are not coupled to each other (no mutual inductance
between their ground connections, no shared via); :func:`stackopt.circuit.mna.solve`
chooses it only then, and the tests check that it gives the nodal analysis's numbers.
"""

from __future__ import annotations

import numpy as np

from stackopt.circuit.compile import CompiledCircuit

__all__ = ["ladder_s", "abcd_to_s"]


def abcd_to_s(a: np.ndarray, b: np.ndarray, c: np.ndarray, d: np.ndarray, z0: float,
              det: np.ndarray | float | None = None) -> np.ndarray:
    """S-parameters (..., 2, 2) of ABCD arrays for reference impedance ``z0`` [ohm].

    ``det`` is AD - BC when known exactly (1 for a reciprocal cascade: computing it from
    the products loses every digit deep in a stopband).
    """
    bz, cz = b / z0, c * z0
    det = a * d - b * c if det is None else det
    den = a + bz + cz + d
    s = np.empty(np.shape(den) + (2, 2), dtype=complex)
    s[..., 0, 0] = (a + bz - cz - d) / den
    s[..., 0, 1] = 2.0 * det / den
    s[..., 1, 0] = 2.0 / den
    s[..., 1, 1] = (-a + bz - cz + d) / den
    return s


def ladder_s(compiled: CompiledCircuit, freqs: np.ndarray, self_l: np.ndarray) -> np.ndarray:
    """S-parameters (N, F, 2, 2) of a ladder by ABCD cascade.

    Parameters
    ----------
    compiled : CompiledCircuit
        A circuit with ``compiled.ladder`` set.
    freqs : ndarray, shape (F,)
        Frequencies [Hz], > 0.
    self_l : ndarray, shape (N, G)
        Series inductance of each ground terminal [H] (zeros for ideal grounds).
    """
    if compiled.ladder is None:
        raise ValueError("not a ladder; use the nodal analysis")
    w = 2.0 * np.pi * np.asarray(freqs, dtype=float)
    jw = 1j * w[None, :]
    n = self_l.shape[0]
    ze = compiled.impedance(freqs)  # (F, E)
    extra = {int(e): t for t, e in enumerate(compiled.terminal_element)}
    one = np.ones((n, len(w)), dtype=complex)
    a, b, c, d = one, np.zeros_like(one), np.zeros_like(one), one
    for stage in compiled.ladder:  # a handful of stages
        z = [ze[None, :, i] + (jw * self_l[:, extra[i], None] if i in extra else 0.0)
             for i in stage.elements]
        if stage.kind == "series":
            b, d = b + a * z[0], d + c * z[0]
        else:
            y = sum(1.0 / zi for zi in z)
            a, c = a + b * y, c + d * y
    return abcd_to_s(a, b, c, d, compiled.z0, det=1.0)  # every stage has det 1
