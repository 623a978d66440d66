"""Touchstone (.s2p, version 1) export of a two-port response.

The open Touchstone format (IBIS Open Forum, *Touchstone File Format Specification*,
version 1.1): ``!`` comment lines, one option line ``# Hz S RI R <z0>``, then one line per
frequency with real/imaginary pairs in the two-port order **N11 N21 N12 N22** (the
two-port is the one case where the order is column-wise).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from numpy.typing import ArrayLike

from stackopt.errors import InputError, OutputError

__all__ = ["touchstone_text", "write_touchstone", "ascii_comment"]

#: Letters that Unicode decomposition does not reduce to ASCII but that have a usual
#: Latin spelling (German, Nordic, Polish ...).
_LATIN = {"ß": "ss", "ẞ": "SS", "æ": "ae", "Æ": "AE", "ø": "o", "Ø": "O", "œ": "oe",
          "Œ": "OE", "ł": "l", "Ł": "L", "đ": "d", "Đ": "D", "þ": "th", "Þ": "TH",
          "–": "-", "—": "-", "‘": "'", "’": "'", "“": '"', "”": '"', "µ": "u", "μ": "u",
          "Ω": "ohm", "°": " deg", "±": "+/-", "×": "x"}


def ascii_comment(text: str) -> str:
    r"""``text`` as printable ASCII for a Touchstone comment line (the format is ASCII):
    accents dropped (``für`` -> ``fur``), a few letters spelt out (``ß`` -> ``ss``), every
    other character -- Greek, Japanese, control and direction marks -- escaped as
    ``\uXXXX`` so nothing is lost and nothing can act on a terminal."""
    import unicodedata

    out = []
    for c in text:
        if " " <= c <= "~":
            out.append(c)
            continue
        if c in _LATIN:
            out.append(_LATIN[c])
            continue
        base = "".join(b for b in unicodedata.normalize("NFKD", c)
                       if " " <= b <= "~")
        if base and unicodedata.category(c)[0] in "LNPS":
            out.append(base)
        else:
            out.append(f"\\u{ord(c):04x}" if ord(c) < 0x10000 else f"\\U{ord(c):08x}")
    return "".join(out)


def touchstone_text(freqs: ArrayLike, s: ArrayLike, z0: float, comment: str = "") -> str:
    """Return the text of a .s2p file.

    Parameters
    ----------
    freqs : array_like, shape (F,)
        Frequencies [Hz], increasing.
    s : array_like, shape (F, 2, 2) (or (1, F, 2, 2))
        S-parameters, ``s[:, i, j]`` = S(i+1)(j+1).
    z0 : float
        Reference impedance [ohm], > 0.
    comment : str
        Free text written as ``!`` lines at the top (may hold newlines; any script:
        written through :func:`ascii_comment`).
    """
    f = np.asarray(freqs, dtype=float).reshape(-1)
    arr = np.asarray(s, dtype=complex)
    if arr.ndim == 4 and arr.shape[0] == 1:
        arr = arr[0]
    if arr.shape != (len(f), 2, 2):
        raise InputError(f"S-parameters of shape {arr.shape} do not match {len(f)} "
                         "frequencies of a two-port", fix="pass one response (F, 2, 2)")
    if np.any(np.diff(f) <= 0) or not z0 > 0:
        raise InputError("Touchstone needs increasing frequencies and z0 > 0",
                         fix="sort the grid")
    lines = ([f"! {ascii_comment(c)}".rstrip() for c in comment.splitlines()]
             if comment else [])
    lines.append(f"# Hz S RI R {z0:.12g}")
    order = ((0, 0), (1, 0), (0, 1), (1, 1))  # N11 N21 N12 N22
    for fi, si in zip(f, arr, strict=True):
        vals = " ".join(f"{si[i, j].real:.12e} {si[i, j].imag:.12e}" for i, j in order)
        lines.append(f"{fi:.12e} {vals}")
    return "\n".join(lines) + "\n"


def write_touchstone(path: str | Path, freqs: ArrayLike, s: ArrayLike, z0: float,
                     comment: str = "") -> Path:
    """Write a .s2p file (see :func:`touchstone_text`); return its path.

    Raises
    ------
    OutputError
        The name does not end in ``.s2p`` or the file cannot be written.
    """
    p = Path(path)
    if p.suffix.lower() != ".s2p":
        raise OutputError(f"{p}: a two-port Touchstone file must end in .s2p")
    text = touchstone_text(freqs, s, z0, comment)
    try:
        p.write_text(text, encoding="ascii")
    except OSError as exc:
        raise OutputError(f"{p}: cannot write ({exc.strerror})") from None
    return p
