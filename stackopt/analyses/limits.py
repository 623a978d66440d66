"""What limits the circuit: the parts themselves, the ground connections' own inductance,
or the coupling between ground connections (a shared return path).

For each pick the margin is solved three ways under the ranking via model: with ideal
grounds (the circuit alone, :func:`stackopt.analyses.ideal.ideal_ground`), with each
ground connection's self inductance only (mutual couplings between connections off),
and with everything. The losses between them name the mechanism:

- ``circuit``: even with ideal grounds a requirement fails — no stackup can fix it (a
  board may still meet where its ground inductance tunes a resonance onto the
  requirement, a margin that rests on the via model);
- ``stackup_self_inductance``: the self inductance costs more than the coupling;
- ``ground_coupling``: the coupling between connections costs more;
- ``none``: the board reaches within :data:`NONE_DB` of its ideal-ground margin.
"""

from __future__ import annotations

import numpy as np

from stackopt.analyses.ideal import ideal_ground
from stackopt.circuit import ground_inductance_matrix, solve
from stackopt.circuit.metrics import attenuation_db
from stackopt.search.results import Result

__all__ = ["pick_limits", "limit_sentence", "MECHANISMS", "NONE_DB"]

#: Values of ``mechanism`` in ``summary.json`` ``limits``.
MECHANISMS = ("stackup_self_inductance", "ground_coupling", "circuit", "none")
#: Grounds that cost less than this against ideal grounds do not limit the board, dB
#: (about the spread of part tolerances; common practice, no source).
NONE_DB = 1.0


def _mechanism(ideal: float, self_only: float, full: float) -> str:
    if ideal < 0:
        return "circuit"
    if ideal - full < NONE_DB:
        return "none"
    return "stackup_self_inductance" if ideal - self_only >= self_only - full \
        else "ground_coupling"


def _coupled_pair(result: Result, i: int) -> tuple[str, str] | None:
    """The two elements whose ground connections couple most on candidate ``i``."""
    p = result.problem
    c = p.compiled
    if c.n_terminals < 2:
        return None
    g = p.space.geometry(result.candidates.take(np.array([i])))
    lg = ground_inductance_matrix(c, p.ground_batch(g), p.scenario.search.via_model)[0]
    other = c.terminal_conn[:, None] != c.terminal_conn[None, :]
    m = np.where(other, np.abs(lg), 0.0)
    if not np.any(m > 0):
        return None
    a, b = np.unravel_index(int(np.argmax(m)), m.shape)
    return c.names[c.terminal_element[a]], c.names[c.terminal_element[b]]


def pick_limits(result: Result) -> dict[str, dict]:
    """``{pick: {ideal_ground_margin_dB, self_only_margin_dB, margin_dB, mechanism,
    binding, sentence}}`` for every pick that exists (one batch over the picks)."""
    p = result.problem
    sc = p.scenario
    names = [k for k, v in result.picks.items() if v is not None]
    if not names or not sc.requirements:
        return {}
    idx = np.array([result.picks[k] for k in names], dtype=np.int64)
    g = p.space.geometry(result.candidates.take(idx))
    model = sc.search.via_model
    ref = ideal_ground(p)
    att_ideal = np.array([[ref.attenuation[r.key] for r in sc.requirements]])
    att_self, _ = p.attenuation(attenuation_db(
        solve(p.compiled, p.freqs, p.ground_batch(g), model, mutual=False)))
    att_full = result.evaluation.attenuation[idx]
    req = p.required[None, :]
    out: dict[str, dict] = {}
    for k, name in enumerate(names):  # a handful of picks
        full = att_full[k] - req[0]
        ideal = att_ideal[0] - req[0]
        self_only = att_self[k] - req[0]
        mech = _mechanism(float(ideal.min()), float(self_only.min()), float(full.min()))
        j = int(np.argmin(ideal)) if mech == "circuit" else int(np.argmin(full))
        d = {"ideal_ground_margin_dB": float(ideal.min()),
             "self_only_margin_dB": float(self_only.min()),
             "margin_dB": float(full.min()), "mechanism": mech,
             "binding": sc.requirements[j].label,
             "binding_attenuation_dB": {"ideal": float(att_ideal[0, j]),
                                        "self_only": float(att_self[k, j]),
                                        "full": float(att_full[k, j]),
                                        "required": float(p.required[j])}}
        pair = _coupled_pair(result, int(idx[k])) if mech == "ground_coupling" else None
        d["sentence"] = limit_sentence(d, pair)
        out[name] = d
    return out


def limit_sentence(d: dict, pair: tuple[str, str] | None = None) -> str:
    """One plain-words sentence on what limits the circuit (from a ``limits`` entry)."""
    a = d["binding_attenuation_dB"]
    req, mech = d["binding"], d["mechanism"]
    if mech == "circuit" and a["full"] >= a["required"]:
        return (f"With ideal grounds this circuit reaches only {a['ideal']:.1f} dB at the "
                f"{req} ({a['required']:.0f} dB required): the parts limit it, and this "
                f"board ({a['full']:.1f} dB) meets only because its ground inductance tunes "
                "the shunt parts' series resonance towards that frequency — a margin that "
                "rests on the via model; change the parts or the circuit for one that does "
                "not.")
    if mech == "circuit":
        return (f"Even with ideal grounds this circuit reaches only {a['ideal']:.1f} dB at "
                f"the {req} ({a['required']:.0f} dB required): the parts' own values and "
                "inductance limit it and no stackup can fix that — change the parts or the "
                "circuit.")
    if mech == "none" and d["margin_dB"] > d["ideal_ground_margin_dB"]:
        return (f"Nothing limits this board: its worst margin, {d['margin_dB']:+.1f} dB (at "
                f"the {req}), is more than the {d['ideal_ground_margin_dB']:+.1f} dB of ideal "
                "grounds (the ground inductance tunes the shunt parts' series resonance "
                "towards a requirement).")
    if mech == "none":
        return (f"Nothing limits this board: its worst margin, {d['margin_dB']:+.1f} dB (at "
                f"the {req}), is within {NONE_DB:.0f} dB of the "
                f"{d['ideal_ground_margin_dB']:+.1f} dB the circuit reaches with ideal "
                "grounds.")
    if mech == "ground_coupling":
        who = (f"the ground vias of {pair[0]} and {pair[1]}" if pair
               else "the ground connections")
        return (f"The {req} is limited by coupling between {who} (a shared return path): "
                f"{a['full']:.1f} dB here, {a['self_only']:.1f} dB without that coupling "
                f"and {a['ideal']:.1f} dB with ideal grounds.")
    return (f"The {req} is limited by the ground connections' own inductance (via depth, "
            f"drill, vias per connection): {a['full']:.1f} dB here, {a['ideal']:.1f} dB "
            "with ideal grounds; a thinner dielectric to the plane or more vias help.")
