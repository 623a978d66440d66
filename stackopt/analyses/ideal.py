"""The ideal-ground reference: the same circuit with every ground connection ideal.

What the circuit would do if the board added nothing to its grounds (no via, pad-trace
or mounted-loop inductance, interconnect lines shorted; parts keep their intrinsic
parasitics: ESL, ESR, Q, self-resonance). The gap between a candidate and this reference
is what the stackup costs; a candidate can also beat it where the ground and mounted
inductance in series with a shunt capacitor put a notch near a requirement.
"""

from __future__ import annotations

from dataclasses import dataclass

from stackopt.circuit import attenuation_db, compile_circuit, solve
from stackopt.circuit.compile import without_interconnect

__all__ = ["IdealGround", "ideal_ground"]


@dataclass(frozen=True)
class IdealGround:
    """Attenuation per requirement [dB] (keyed as the scenario's requirements) and the
    margin [dB] of the ideal-ground circuit."""

    attenuation: dict[str, float]
    margin: float

    def to_summary(self) -> dict:
        """``summary.json``'s ``ideal_ground`` entry."""
        return {"attenuation_dB": dict(self.attenuation), "margin_dB": self.margin}


def ideal_ground(problem) -> IdealGround:
    """The ideal-ground reference of a :class:`~stackopt.search.problem.Problem`.

    Solves the compiled circuit once with no ground batch (every connection ideal) at the
    requirement frequencies and reduces it like a candidate (worst over each band).
    """
    compiled = problem.compiled
    if len(compiled.line_length):  # the board's interconnect is not part of the ideal
        compiled = compile_circuit(without_interconnect(problem.scenario.circuit))
    att_f = attenuation_db(solve(compiled, problem.freqs, None))
    att, margin = problem.attenuation(att_f)
    keys = [r.key for r in problem.scenario.requirements]
    return IdealGround(attenuation={k: float(att[0, j]) for j, k in enumerate(keys)},
                       margin=float(margin[0]))
