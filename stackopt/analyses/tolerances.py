r"""Fab and part tolerances: a seeded Monte Carlo of the builds of a few candidates.

Each of ``S`` simulated builds draws, once for every candidate (common random numbers,
so that candidates are compared on the same builds):

- the dielectric under the top copper, relative: :math:`h = h_0 (1 + \delta_t)`; the
  ground vias and the controlled-impedance traces sit on the same dielectric, so both
  see the same draw;
- its Dk, relative; the etched trace width, :math:`w = w_0 + \delta_w`; the drill,
  :math:`d = d_0 + \delta_d`;
- every part's value, :math:`v = v_0 (1 + \delta_e)`, uniform over ± its tolerance.

Fab deviates are normal with the tolerance at three standard deviations (``distribution:
normal``, common practice for process spreads, no source) or uniform over ± tolerance.
Draws are a Latin hypercube (McKay, Beckman & Conover, "A comparison of three methods
for selecting values of input variables in the analysis of output from a computer
code", Technometrics 21(2), 239-245, 1979: each variable's range cut into ``S``
equal-probability strata, one draw in each, strata paired at random), from a seeded
numpy ``Generator``: fewer samples than plain random sampling for the same error on the
smooth, nearly additive responses here (``scipy.stats.qmc`` does the same but costs a
second to import). The yield is the share of builds meeting every
requirement; its standard error is at most :math:`\sqrt{p(1-p)/n}` (the binomial value,
which Latin hypercube sampling does not exceed for monotone responses).

All builds of all candidates are one batch (chunked only to bound memory): the ground
inductance of ``candidates × samples`` geometries, the element impedances of every
sample and one nodal solve per (build, frequency).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from scipy.special import ndtri

from stackopt.circuit import compile_circuit, ground_inductance_matrix
from stackopt.circuit.filters import filter_circuit
from stackopt.circuit.metrics import attenuation_db
from stackopt.circuit.mna import CHUNK, mna_s_varied
from stackopt.model.circuit import Circuit
from stackopt.model.scenario import RobustnessSpec
from stackopt.physics.synthesis import line_impedance
from stackopt.search.phenotype import batch_key, unique_rows
from stackopt.search.problem import Problem
from stackopt.search.space import Geometry

__all__ = ["PART_TOLERANCE", "Draws", "MonteCarlo", "draw", "latin_hypercube", "part_impedances",
           "monte_carlo", "expanded_circuit"]

#: Value tolerance of a part that does not give ``tolerance:`` (± fraction): capacitors
#: and inductors 5 % (the usual "J" grade of RF chip parts), resistors 1 % (common
#: practice, no source).
PART_TOLERANCE = {"C": 0.05, "L": 0.05, "R": 0.01}
#: Smallest drill a draw may give, m (keeps a wide drill tolerance physical).
_MIN_DRILL = 10e-6
#: Narrowest trace a draw may give, m.
_MIN_WIDTH = 5e-6


def expanded_circuit(circuit: Circuit) -> Circuit:
    """The circuit with its ``filter:`` generator expanded into elements."""
    if circuit.filter is None:
        return circuit
    return filter_circuit(circuit.filter, circuit.z0, circuit.input, circuit.output)


@dataclass(frozen=True)
class Draws:
    """Deviations of ``n`` simulated builds (arrays over samples)."""

    thickness: np.ndarray  # (S,) relative
    dk: np.ndarray  # (S,) relative
    etch: np.ndarray  # (S,) m, added to the trace width
    drill: np.ndarray  # (S,) m, added to the drill
    parts: np.ndarray  # (S, E) relative, per element of the expanded circuit

    @property
    def n(self) -> int:
        """Number of builds S."""
        return len(self.thickness)


def latin_hypercube(n: int, d: int, rng: np.random.Generator) -> np.ndarray:
    """``n`` points of a Latin hypercube in the open unit cube, shape (n, d): in every
    column each of the ``n`` strata ``[k/n, (k+1)/n)`` holds exactly one point."""
    strata = rng.permuted(np.broadcast_to(np.arange(n), (d, n)), axis=1).T
    return (strata + rng.uniform(1e-12, 1.0, size=(n, d))) / n


def draw(spec: RobustnessSpec, thickness_tolerance: float, part_tolerance: np.ndarray,
         seed: int) -> Draws:
    """``spec.samples`` builds from the seed (same seed, same draws, bit for bit).

    Parameters
    ----------
    spec : RobustnessSpec
        Samples, Dk / etch / drill tolerances and the fab distribution.
    thickness_tolerance : float
        ± fraction of the dielectric thickness (the fab's, unless ``spec.thickness``).
    part_tolerance : ndarray, shape (E,)
        ± fraction of every element's value.
    seed : int
        Seed of the numpy ``Generator`` behind the Latin hypercube.
    """
    tol_e = np.asarray(part_tolerance, dtype=float)
    u = latin_hypercube(spec.samples, 4 + len(tol_e), np.random.default_rng(seed))
    fab = u[:, :4]
    unit = ndtri(fab) / 3.0 if spec.distribution == "normal" else 2.0 * fab - 1.0
    tol = np.array([thickness_tolerance, spec.dk, spec.etch, spec.drill])
    x = unit * tol
    return Draws(thickness=x[:, 0], dk=x[:, 1], etch=x[:, 2], drill=x[:, 3],
                 parts=(2.0 * u[:, 4:] - 1.0) * tol_e)


def part_tolerances(circuit: Circuit) -> np.ndarray:
    """± fraction of every element of the expanded circuit (its own or the default)."""
    els = expanded_circuit(circuit).elements
    return np.array([PART_TOLERANCE[e.type] if e.tolerance is None else e.tolerance
                     for e in els], dtype=float)


def part_impedances(circuit: Circuit, freqs: np.ndarray, deviation: np.ndarray
                    ) -> np.ndarray:
    r"""Compiled element impedances (S, F, E) [ohm] with every part's value scaled by
    ``1 + deviation`` (S, parts of the expanded circuit).

    A compiled element is :math:`Z = Z_{fix} + Z_{val}\,s` with :math:`s = v/v_0` for R
    and L and :math:`v_0/v` for C (ESL, ESR and the Q loss of a resistor-like part stay
    fixed; a Q given at a frequency scales with the value, as its loss does). An
    inductor's self-resonance capacitor (``<name>.srf``) follows its inductor so that the
    self-resonant frequency stays put. ``Z_val`` comes from compiling the circuit once
    more with every value doubled. Couplings between inductors keep their nominal mutual
    inductance.
    """
    base = expanded_circuit(circuit)
    doubled = base.model_copy(update={"elements": tuple(
        e.model_copy(update={"value": 2.0 * float(e.value or 0.0)}) for e in base.elements)})
    f = np.asarray(freqs, dtype=float)
    c1 = compile_circuit(base)
    z1 = c1.impedance(f)
    z2 = compile_circuit(doubled).impedance(f)
    names = [e.name for e in base.elements]
    kind = {e.name: e.type for e in base.elements}
    parent = np.array([names.index(n.removesuffix(".srf")) if n not in kind else names.index(n)
                       for n in c1.names])
    inverse = np.array([kind.get(n) == "C" for n in c1.names])  # srf capacitors follow L
    zval = np.where(inverse, 2.0 * (z1 - z2), z2 - z1)  # (F, E)
    scale = 1.0 + np.asarray(deviation, dtype=float)[:, parent]  # (S, E)
    s = np.where(inverse, 1.0 / scale, scale)
    return (z1 - zval)[None] + zval[None] * s[:, None, :]


@dataclass(frozen=True)
class MonteCarlo:
    """Monte Carlo of P candidates over S builds."""

    margin: np.ndarray  # (P, S) dB, every requirement, under the ranking model
    impedance_min: np.ndarray  # (P, L) ohm, per controlled-impedance line
    impedance_max: np.ndarray  # (P, L) ohm

    @property
    def yields(self) -> np.ndarray:
        """Share of builds meeting every requirement (P,)."""
        return np.mean(self.margin >= 0.0, axis=1)

    @property
    def standard_error(self) -> np.ndarray:
        """Binomial standard error of each yield, sqrt(p (1 - p) / S) (P,)."""
        p = self.yields
        return np.sqrt(p * (1.0 - p) / self.margin.shape[1])


def thickness_tolerance(problem: Problem) -> float:
    """The dielectric thickness tolerance in force: the scenario's, else the fab's."""
    t = problem.scenario.search.robustness.thickness
    return problem.table.capabilities.thickness_tolerance if t is None else float(t)


def build_draws(problem: Problem, seed: int | None = None) -> Draws:
    """The scenario's builds (seed: the search seed)."""
    sc = problem.scenario
    return draw(sc.search.robustness, thickness_tolerance(problem),
                part_tolerances(sc.circuit), sc.search.seed if seed is None else seed)


def _margins(problem: Problem, g: Geometry, model: str, d: Draws) -> np.ndarray:
    """Margin (P, S) of every candidate in every build: per phenotype, one batch."""
    gb = problem.ground_batch(g)
    first, inv = unique_rows(batch_key(gb))  # the circuit's whole input, as the search
    u, s = len(first), d.n
    rep = np.repeat(first, s)  # phenotype-major: row = phenotype * S + sample
    k = np.tile(np.arange(s), u)
    gb = gb.take(rep)
    gb = replace(gb, height=gb.height * (1.0 + d.thickness[k]),
                 drill=np.maximum(gb.drill + d.drill[k], _MIN_DRILL))
    freqs = problem.freqs
    ze = part_impedances(problem.scenario.circuit, freqs, d.parts)  # (S, F, E)
    out = np.empty(u * s)
    step = max(1, CHUNK // len(freqs))
    for i0 in range(0, u * s, step):  # chunks bound the memory (not a loop over samples)
        sl = slice(i0, i0 + step)
        sub = gb.take(np.arange(u * s)[sl])
        lg = ground_inductance_matrix(problem.compiled, sub, model)
        sp = mna_s_varied(problem.compiled, freqs, lg, ze[k[sl]])
        out[sl] = problem.attenuation(attenuation_db(sp))[1]
    out = np.nan_to_num(out, nan=-999.0, posinf=999.0, neginf=-999.0)
    return out.reshape(u, s)[inv]


def _impedances(problem: Problem, g: Geometry, widths: np.ndarray, d: Draws
                ) -> tuple[np.ndarray, np.ndarray]:
    """Min and max impedance (P, L) of every controlled line over the builds."""
    lines = problem.scenario.lines
    p = len(g)
    zmin, zmax = np.full((p, len(lines)), np.nan), np.full((p, len(lines)), np.nan)
    for j, ln in enumerate(lines):  # a handful of lines
        lb = problem.line_batch(g, j)  # what the width synthesis saw, per candidate
        h = lb.height[:, None] * (1.0 + d.thickness[None])
        er = lb.er[:, None] * (1.0 + d.dk[None])
        t = np.broadcast_to(lb.copper[:, None], h.shape)
        w = np.maximum(widths[:, j, None] + d.etch[None], _MIN_WIDTH)
        gap = ln.gap if ln.gap is not None else problem.pour_gap
        cpw = np.broadcast_to(lb.coplanar[:, None], h.shape)
        z = np.where(cpw, line_impedance(w, h, er, t, "cpwg", gap=gap),
                     line_impedance(w, h, er, t, "microstrip"))
        zmin[:, j], zmax[:, j] = z.min(axis=1), z.max(axis=1)
    return zmin, zmax


def monte_carlo(problem: Problem, g: Geometry, widths: np.ndarray, model: str,
                draws: Draws) -> MonteCarlo:
    """Every candidate of ``g`` (P) built ``draws.n`` times.

    Parameters
    ----------
    problem : Problem
        The search problem (circuit, requirements, lines).
    g : Geometry
        The P candidates' nominal geometry.
    widths : ndarray, shape (P, L)
        Nominal controlled-impedance widths [m] (NaN: unreachable; spread NaN too).
    model : str
        Via model of the ranking (the yield is under the model the search ranks by).
    draws : Draws
        From :func:`draw` / :func:`build_draws`.
    """
    zmin, zmax = _impedances(problem, g, widths, draws)
    return MonteCarlo(margin=_margins(problem, g, model, draws), impedance_min=zmin,
                      impedance_max=zmax)
