"""Numbers the plots, the report and the exports share, derived from a search
:class:`~stackopt.search.results.Result` (computed here once, never stored twice).

Nothing here formats for people except :func:`money`, :func:`mm` and :func:`db`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from stackopt.search.picks import PICKS

__all__ = ["unique_picks", "selected_index", "cost_items",
           "sweep_freqs", "responses", "top_dielectric", "shortfalls", "Comparison",
           "comparison", "money", "mm", "db"]

def money(x: float | None, currency: str, digits: int = 2) -> str:
    """``1,234.50 EUR``; ``n/a`` for ``None`` or a non-finite value."""
    if x is None or not math.isfinite(x):
        return "n/a"
    return f"{x:,.{digits}f} {currency}"


def mm(x: float | None, digits: int = 3) -> str:
    """A length in mm (``0.19 mm``)."""
    if x is None or not math.isfinite(x):
        return "n/a"
    return f"{x * 1e3:.{digits}g} mm"


def db(x: float | None, digits: int = 1, sign: bool = False) -> str:
    """Decibels, ``+27.0 dB`` with ``sign``."""
    if x is None or not math.isfinite(x):
        return "n/a"
    return f"{x:+.{digits}f} dB" if sign else f"{x:.{digits}f} dB"


def unique_picks(result) -> list[tuple[int, list[str]]]:
    """Distinct picked candidates in report order, each with the pick names it holds."""
    out: dict[int, list[str]] = {}
    for name in PICKS:
        i = result.picks.get(name)
        if i is not None:
            out.setdefault(int(i), []).append(name)
    return list(out.items())


def selected_index(result) -> int | None:
    """The recommended candidate: the cheapest robust one (every requirement under every
    listed via model and the yield target), else the cheapest meeting the requirements,
    else the closest feasible one, else the evaluated candidate with the best margin
    (``None``: nothing)."""
    for name in ("cheapest_robust", "cheapest_meeting_requirements"):
        i = result.picks.get(name)
        if i is not None:
            return int(i)
    close = result.closest(1)
    if close:
        return int(close[0])
    if result.n == 0:
        return None
    return int(np.argmax(result.evaluation.margin))


def cost_items(result, idx) -> dict[str, np.ndarray]:
    """Itemised unit cost (name -> (k,) array, summing to the unit cost) of candidates
    ``idx``, as the search priced them."""
    idx = np.asarray(idx, dtype=np.int64)
    return {k: v[idx] for k, v in result.evaluation.cost_items.items()}


def sweep_freqs(result, n: int = 361) -> np.ndarray:
    """A linear sweep from near DC to 1.4 x the highest requirement frequency, Hz (with the
    requirement frequencies themselves included, so their marks sit on the curve)."""
    fs = np.asarray(result.problem.freqs, dtype=float)
    top = 1.4 * float(fs.max())
    grid = np.linspace(top / n, top, n)
    return np.unique(np.concatenate([grid, fs]))


def responses(result, idx, freqs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(|S21| dB of candidates ``idx`` (k, F), |S21| dB with ideal grounding (F,)) over
    ``freqs``, under the scenario's via model."""
    from stackopt.circuit import solve

    pb = result.problem
    model = pb.scenario.search.via_model
    idx = np.asarray(idx, dtype=np.int64)
    g = pb.space.geometry(result.candidates.take(idx))
    s = solve(pb.compiled, freqs, pb.ground_batch(g), model)
    s0 = solve(pb.compiled, freqs, None, model)  # None: ideal grounds
    tiny = 1e-30
    return (20 * np.log10(np.abs(s[..., 1, 0]) + tiny),
            20 * np.log10(np.abs(s0[0, :, 1, 0]) + tiny))


def top_dielectric(result) -> np.ndarray:
    """Name of the dielectric under the top copper of every candidate (N,) str."""
    return result.problem.space.slot_names(result.candidates)[:, 0]


def shortfalls(result, i: int) -> list[tuple[str, float, float, float]]:
    """Per requirement of candidate ``i``: (label, attenuation, required, margin) in dB."""
    sc, ev = result.problem.scenario, result.evaluation
    return [(r.label, float(ev.attenuation[i, k]), float(r.min_attenuation),
             float(ev.attenuation[i, k] - r.min_attenuation))
            for k, r in enumerate(sc.requirements)]


@dataclass(frozen=True)
class Comparison:
    """The first-screen question: the best two-layer option against the cheapest stackup
    that meets the requirements."""

    two: int | None  # best (mitigated) two-layer candidate
    meet: int | None  # cheapest candidate meeting every requirement
    d_unit: float | None  # meet - two, per board
    d_lot: float | None
    d_margin: float | None  # dB of margin bought
    d_att: list[tuple[str, float]]  # (requirement label, dB bought)
    cost_per_db: float | None  # per board and dB of margin
    lot_per_db: float | None

    @property
    def two_meets(self) -> bool:
        """A two-layer board already meets the requirements."""
        return self.meet is not None and self.meet == self.two


def comparison(result) -> Comparison:
    """Compute the :class:`Comparison` (``None`` fields where a side is missing)."""
    ev = result.evaluation
    two = result.picks.get("best_two_layer")
    meet = result.picks.get("cheapest_meeting_requirements")
    if meet is not None and int(ev.geometry.layers[meet]) == 2:
        two = meet  # a two-layer board meets the requirements: nothing to buy
    if two is None or meet is None:
        return Comparison(two, meet, None, None, None, [], None, None)
    d_unit = float(ev.unit_cost[meet] - ev.unit_cost[two])
    d_lot = float(ev.lot_cost[meet] - ev.lot_cost[two])
    d_margin = float(ev.margin[meet] - ev.margin[two])
    d_att = [(r.label, float(ev.attenuation[meet, k] - ev.attenuation[two, k]))
             for k, r in enumerate(result.problem.scenario.requirements)]
    per = d_unit / d_margin if d_margin > 1e-9 else None
    lot = d_lot / d_margin if d_margin > 1e-9 else None
    return Comparison(two, meet, d_unit, d_lot, d_margin, d_att, per, lot)
