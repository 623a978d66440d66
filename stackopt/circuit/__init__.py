"""The user's circuit: filter prototypes, compilation, ground parasitics per candidate,
batched nodal analysis (with an ABCD fast path for ladders) and metrics."""

from stackopt.circuit.compile import CompiledCircuit, LadderStage, compile_circuit
from stackopt.circuit.filters import butterworth_g, chebyshev_g, filter_circuit
from stackopt.circuit.grounds import GroundBatch, ground_inductance_matrix
from stackopt.circuit.metrics import (
    at_frequencies,
    attenuation_db,
    difference_from_ideal_db,
    passband_insertion_loss_db,
    worst_in_band,
)
from stackopt.circuit.mna import solve

__all__ = [
    "CompiledCircuit",
    "LadderStage",
    "compile_circuit",
    "butterworth_g",
    "chebyshev_g",
    "filter_circuit",
    "GroundBatch",
    "ground_inductance_matrix",
    "solve",
    "attenuation_db",
    "at_frequencies",
    "worst_in_band",
    "passband_insertion_loss_db",
    "difference_from_ideal_db",
]
