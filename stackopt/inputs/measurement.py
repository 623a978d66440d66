"""Measured two-port files (Touchstone 1.x and 2.0) → SI arrays, with one-line errors.

The Touchstone grammar is read by scikit-rf (the field's library for network files; it
handles both versions, every number format and unit line); this module only checks that
what it read is a usable measurement of a two-port and turns every failure into one
:class:`~stackopt.errors.InputError` naming the file and what is wrong. scikit-rf is
imported inside :func:`load_two_port`, so commands that never read a measurement do not
pay for it.
"""

from __future__ import annotations

import hashlib
import io
import warnings
from contextlib import redirect_stdout
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from stackopt.errors import InputError

__all__ = ["Measurement", "load_two_port", "file_sha256"]


@dataclass(frozen=True)
class Measurement:
    """A measured two-port: frequencies and S21 at the file's reference impedance.

    Attributes
    ----------
    path : the file read
    sha256 : SHA-256 of its bytes (recorded in calibration files)
    f : frequencies [Hz], increasing, shape (F,)
    s21 : complex transmission S21, shape (F,)
    z0 : the file's (real) reference impedance [ohm]
    """

    path: Path
    sha256: str
    f: np.ndarray
    s21: np.ndarray
    z0: float

    def band(self, lo: float | None, hi: float | None) -> Measurement:
        """The points with ``lo <= f <= hi`` (either bound may be None: open).

        Raises
        ------
        InputError
            When no point lies in the band (the message gives the file's range).
        """
        lo_ = -np.inf if lo is None else lo * (1 - 1e-12)
        hi_ = np.inf if hi is None else hi * (1 + 1e-12)
        sel = (self.f >= lo_) & (self.f <= hi_)
        if sel.sum() < 3:
            from stackopt.units import format_quantity as fq

            raise InputError(
                f"{int(sel.sum())} measured point(s) in the band (at least 3 needed); the file "
                f"covers {fq(self.f[0], 'frequency')} to {fq(self.f[-1], 'frequency')}",
                file=str(self.path), key="--band", fix="give a band inside that range")
        return Measurement(self.path, self.sha256, self.f[sel], self.s21[sel], self.z0)

    def divided_by(self, thru: Measurement) -> Measurement:
        """S21 divided by a thru's S21 (the feed lines alone): removes their loss and
        delay. The thru is interpolated onto these frequencies (log magnitude and unwrapped
        phase, linear in frequency).

        Raises
        ------
        InputError
            When these frequencies reach outside the thru's sweep.
        """
        if self.f[0] < thru.f[0] * (1 - 1e-9) or self.f[-1] > thru.f[-1] * (1 + 1e-9):
            from stackopt.units import format_quantity as fq

            raise InputError(
                f"the thru covers {fq(thru.f[0], 'frequency')} to {fq(thru.f[-1], 'frequency')},"
                f" less than the coupon's {fq(self.f[0], 'frequency')} to "
                f"{fq(self.f[-1], 'frequency')}", file=str(thru.path), key="--thru",
                fix="measure the thru over the coupon's sweep, or narrow --band")
        logmag = np.interp(self.f, thru.f, np.log(np.abs(thru.s21)))
        phase = np.interp(self.f, thru.f, np.unwrap(np.angle(thru.s21)))
        return Measurement(self.path, self.sha256, self.f, self.s21 / np.exp(logmag + 1j * phase),
                           self.z0)


def file_sha256(path: str | Path) -> str:
    """SHA-256 (hex) of a file's bytes."""
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


def load_two_port(path: str | Path, z0: float | None = None) -> Measurement:
    """Read a Touchstone file of a two-port and return its S21.

    Parameters
    ----------
    path : str or Path
        ``.s2p`` (Touchstone 1.x; the port count comes from the extension) or a
        Touchstone 2.0 file (``[Version] 2.0``, port count in the file).
    z0 : float, optional
        Reference impedance [ohm] to renormalize to (scikit-rf ``renormalize``); default
        the file's own.

    Raises
    ------
    InputError
        Missing or unreadable file, malformed numbers, not two ports, fewer than three
        frequencies, non-finite values, complex or unequal port impedances.
    """
    p = Path(path)
    name = str(p)
    if not p.is_file():
        raise InputError("no such file", file=name, fix="check the path of the measurement")
    try:
        import skrf
    except ImportError as exc:  # pragma: no cover - a declared dependency
        raise InputError("reading Touchstone files needs scikit-rf", file=name,
                         fix="pip install scikit-rf") from exc
    sha = file_sha256(p)
    try:
        with warnings.catch_warnings(), redirect_stdout(io.StringIO()):
            warnings.simplefilter("ignore")
            net = skrf.Network(name)
            if z0 is not None:
                net.renormalize(z0)
    except Exception as exc:  # noqa: BLE001 - any parser failure is the file's fault
        text = " ".join(str(exc).split())[:160] or type(exc).__name__
        hint = ("name a Touchstone 1.x file .s2p (its port count comes from the extension)"
                if p.suffix.lower() not in (".s2p", ".ts") else
                "check the option line ('# GHz S RI R 50') and that every data line has "
                "9 numbers")
        raise InputError(f"not a readable Touchstone file ({text})", file=name,
                         fix=hint) from None
    if net.nports != 2:
        raise InputError(f"a {net.nports}-port file, not a two-port", file=name,
                         fix="measure the coupon as a two-port (S11, S21, S12, S22) and "
                         "save it as .s2p")
    f = np.asarray(net.f, dtype=float)
    s21 = np.asarray(net.s[:, 1, 0], dtype=complex)
    zref = np.asarray(net.z0, dtype=complex)
    if len(f) < 3:
        raise InputError(f"only {len(f)} frequency point(s)", file=name,
                         fix="sweep the coupon over a band (a few hundred points)")
    if not (np.all(np.isfinite(f)) and np.all(np.isfinite(s21))):
        raise InputError("non-finite frequencies or S-parameters", file=name,
                         fix="re-export the measurement")
    if np.any(np.diff(f) <= 0):
        raise InputError("frequencies are not strictly increasing", file=name,
                         fix="re-export the sweep in frequency order, without repeats")
    if np.any(np.abs(zref.imag) > 1e-9) or np.ptp(zref.real) > 1e-9 * zref.real.max():
        raise InputError("the ports have complex or unequal reference impedances", file=name,
                         fix="renormalize both ports to one real impedance (e.g. --z0 50)")
    return Measurement(p, sha, f, s21, float(zref.real.flat[0]))
