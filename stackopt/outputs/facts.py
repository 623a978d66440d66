"""Numbers the plots, the report and the exports share, derived from a search
:class:`~stackopt.search.results.Result` (computed here once, never stored twice).

Nothing here formats for people except :func:`money`, :func:`mm` and :func:`db`.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from stackopt.search.picks import PICKS
from stackopt.search.responses import PLOT_POINTS
from stackopt.search.responses import sweep_freqs as _sweep_freqs

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["RECOMMENDED", "unique_picks", "selected_index",
           "cost_items", "sweep_freqs", "responses", "passband_losses", "passband_summary",
           "passband_text",
           "ground_figures", "plural", "top_dielectric", "shortfalls", "money",
           "money_digits", "mm", "db"]


def money(x: float | None, currency: str, digits: int = 2) -> str:
    """``1,234.50 EUR``; ``n/a`` for ``None`` or a non-finite value."""
    if x is None or not math.isfinite(x):
        return "n/a"
    return f"{x:,.{digits}f} {currency}"


def plural(n: int, word: str, many: str | None = None) -> str:
    """``"1 via"``, ``"3 vias"`` (``many``: an irregular plural)."""
    return f"{n:,} {word if n == 1 else (many or word + 's')}"


def money_digits(values, floor: int = 2, most: int = 4) -> int:
    """Decimals that tell the amounts ``values`` apart (at least ``floor``, at most
    ``most``): 1.478 and 1.482 need 3, where 2 would print both as 1.48."""
    v = np.unique(np.round(np.asarray([x for x in values if x is not None
                                       and math.isfinite(x)], dtype=float), 9))
    for d in range(floor, most + 1):
        if len(np.unique(np.round(v, d))) == len(v):
            return d
    return most


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


def unique_picks(result: Result) -> list[tuple[int, list[str]]]:
    """Distinct picked candidates in report order, each with the pick names it holds."""
    out: dict[int, list[str]] = {}
    for name in PICKS:
        i = result.picks.get(name)
        if i is not None:
            out.setdefault(int(i), []).append(name)
    return list(out.items())


#: Picks that can be the recommendation, most trusted first (the robust pick where the
#: search has one).
RECOMMENDED = ("cheapest_robust", "cheapest_meeting_requirements")


def selected_index(result: Result) -> int | None:
    """The recommended candidate: the cheapest robust one (every requirement under every
    listed via model and the yield target), else the cheapest meeting the requirements,
    else the closest feasible one, else the evaluated candidate with the best margin
    (``None``: nothing)."""
    for name in RECOMMENDED:
        i = result.picks.get(name)
        if i is not None:
            return int(i)
    close = result.closest(1)
    if close:
        return int(close[0])
    if result.n == 0:
        return None
    return int(np.argmax(result.evaluation.margin))


def cost_items(result: Result, idx: Sequence[int] | np.ndarray) -> dict[str, np.ndarray]:
    """Itemised unit cost (name -> (k,) array, summing to the unit cost) of candidates
    ``idx``, as the search priced them."""
    idx = np.asarray(idx, dtype=np.int64)
    return {k: v[idx] for k, v in result.evaluation.cost_items.items()}


def sweep_freqs(result: Result, n: int = PLOT_POINTS) -> np.ndarray:
    """The response sweep of a result, Hz (:func:`stackopt.search.responses.sweep_freqs`)."""
    return _sweep_freqs(result.problem, n)


def responses(result: Result, idx: Sequence[int] | np.ndarray, freqs: np.ndarray
              ) -> tuple[np.ndarray, np.ndarray]:
    """(|S21| dB of candidates ``idx`` (k, F), |S21| dB with ideal grounding (F,)) over
    ``freqs`` (a sweep of :func:`sweep_freqs`), under the scenario's via model; read from
    the result's sweeps (solved once per result, not here)."""
    sw = result.sweeps
    s = sw.s(idx, freqs)
    s0 = sw.ideal[sw.at(freqs)]
    tiny = 1e-30
    return (20 * np.log10(np.abs(s[..., 1, 0]) + tiny),
            20 * np.log10(np.abs(s0[:, 1, 0]) + tiny))


def top_dielectric(result: Result, rows: np.ndarray | None = None) -> np.ndarray:
    """Name of the dielectric under the top copper of the candidates ``rows`` (default:
    every candidate), (len(rows),) str."""
    c = result.candidates if rows is None else result.candidates.take(rows)
    return result.problem.space.slot_names(c, 0)


def shortfalls(result: Result, i: int) -> list[tuple[str, float, float, float]]:
    """Per requirement of candidate ``i``: (label, attenuation, required, margin) in dB."""
    sc, ev = result.problem.scenario, result.evaluation
    return [(r.label, float(ev.attenuation[i, k]), float(r.min_attenuation),
             float(ev.attenuation[i, k] - r.min_attenuation))
            for k, r in enumerate(sc.requirements)]


def passband_losses(result: Result, idx: Sequence[int] | np.ndarray
                    ) -> tuple[np.ndarray, np.ndarray] | None:
    """(worst insertion loss (k,), worst return loss (k,)) in dB of candidates ``idx``
    over the scenario's passband (:attr:`Scenario.passband_hz`; ``None`` without one):
    the largest -20 log10|S21| and the smallest -20 log10|S11| on the log-spaced
    :func:`~stackopt.search.responses.passband_freqs` (band edges included), under the
    scenario's via model; read from the result's sweeps (solved once per candidate)."""
    from stackopt.circuit.metrics import attenuation_db
    from stackopt.search.responses import passband_freqs

    f = passband_freqs(result.problem)
    if f is None:
        return None
    s = result.sweeps.s(np.asarray(idx, dtype=np.int64), f)
    rl = -20 * np.log10(np.maximum(np.abs(s[..., 0, 0]), 1e-15))
    return attenuation_db(s).max(axis=-1), rl.min(axis=-1)


def passband_text(result: Result) -> str:
    """The passband in words, e.g. "863 MHz to 870 MHz", and, when the scenario does not
    state it, that it is the generated filter's design band."""
    from stackopt.model.scenario import DESIGN_BAND_NOTE

    sc = result.problem.scenario
    words = sc.passband_words
    assert words is not None  # the caller shows a passband only where there is one
    return words if sc.passband is not None else f"{words} ({DESIGN_BAND_NOTE})"


def ground_figures(result: Result, idx: Sequence[int] | np.ndarray
                   ) -> tuple[np.ndarray, np.ndarray]:
    """:func:`stackopt.circuit.grounds.worst_path_and_coupling` of candidates ``idx``
    under the scenario's via model: (worst path (k,), largest coupling (k,)) [H]."""
    from stackopt.circuit.grounds import worst_path_and_coupling

    pb = result.problem
    idx = np.asarray(idx, dtype=np.int64)
    gb = pb.ground_batch(pb.space.geometry(result.candidates.take(idx)))
    return worst_path_and_coupling(pb.compiled, gb, pb.scenario.search.via_model)


def passband_summary(result: Result) -> dict | None:
    """``summary.json``'s ``passband``: the band and, per named pick, its worst insertion
    and return loss over it (``None`` when the scenario has no passband)."""
    band = result.problem.scenario.passband_hz
    picks = unique_picks(result)
    if band is None:
        return None
    out: dict = {"low_Hz": float(band[0]), "high_Hz": float(band[1]), "picks": {}}
    if not picks:
        return out
    il, rl = passband_losses(result, [i for i, _ in picks])  # type: ignore[misc]
    for k, (i, names) in enumerate(picks):
        for name in names:
            out["picks"][name] = {"id": result.ids[i], "insertion_loss_dB": float(il[k]),
                                  "return_loss_dB": float(rl[k])}
    return out
