r"""Fab and part tolerances: a seeded Monte Carlo of the builds of a few candidates.

Each of ``S`` simulated builds draws, once for every candidate (common random numbers,
so that candidates are compared on the same builds):

- every dielectric layer's thickness, relative and independently per layer (each ply or
  core is pressed to its own tolerance; common practice, no source):
  :math:`h_k = h_{k,0} (1 + u_k\,\tau_k)` with :math:`u_k` a unit deviate and
  :math:`\tau_k` the tolerance of the layer's material — its own
  ``thickness_tolerance`` in the cost table, else the capabilities' one, unless the
  scenario's ``search.robustness.thickness`` sets one for every layer. Every height —
  the ground vias' depth, each line's cross-section, the interconnect's dielectric —
  is read from the perturbed layers by the one geometry owner
  (:class:`~stackopt.model.geometry.LayerStack`), so a via and a trace over the same
  layer see the same draw;
- the Dk of every dielectric, one relative deviate per build; the etched trace width,
  :math:`w = w_0 + \delta_w`; the drill, :math:`d = d_0 + \delta_d`;
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

All builds of all candidates are one batch (chunked only to bound memory): the geometry
of ``candidates × samples`` boards, the ground inductance of each distinct (circuit
input, sample) pair — candidates that share their electrical phenotype and the
tolerances of the layers it depends on share their builds — the element impedances of
every sample and one nodal solve per (build, frequency). Each line's impedance is the
closed form that sized its width (:meth:`~stackopt.search.lineroutes.LineWork.line_impedances`)
on the perturbed cross-section at the etched width.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from stackopt.circuit import compile_circuit, ground_inductance_matrix
from stackopt.circuit.filters import filter_circuit
from stackopt.circuit.interconnect import line_admittance
from stackopt.circuit.metrics import attenuation_db
from stackopt.circuit.mna import CHUNK, mna_s_varied
from stackopt.model.circuit import Circuit
from stackopt.model.geometry import LayerStack
from stackopt.model.scenario import RobustnessSpec
from stackopt.rows import unique_rows
from stackopt.search.phenotype import batch_key, quantize
from stackopt.search.problem import Problem
from stackopt.search.space import Geometry

__all__ = ["PART_TOLERANCE", "Draws", "MonteCarlo", "draw", "latin_hypercube", "part_impedances",
           "monte_carlo", "expanded_circuit", "layer_tolerances", "built", "yield_key"]

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

    thickness: np.ndarray  # (S, K) per dielectric layer, in units of its tolerance
    dk: np.ndarray  # (S,) relative
    etch: np.ndarray  # (S,) m, added to the trace width
    drill: np.ndarray  # (S,) m, added to the drill
    parts: np.ndarray  # (S, E) relative, per element of the expanded circuit
    #: ± fraction of every layer's thickness when the scenario sets one (``None``: each
    #: layer's material's own, :func:`layer_tolerances`).
    thickness_tolerance: float | None = None

    @property
    def n(self) -> int:
        """Number of builds S."""
        return len(self.dk)


def latin_hypercube(n: int, d: int, rng: np.random.Generator) -> np.ndarray:
    """``n`` points of a Latin hypercube in the open unit cube, shape (n, d): in every
    column each of the ``n`` strata ``[k/n, (k+1)/n)`` holds exactly one point."""
    strata = rng.permuted(np.broadcast_to(np.arange(n), (d, n)), axis=1).T
    return (strata + rng.uniform(1e-12, 1.0, size=(n, d))) / n


# Wichura's algorithm AS 241 (PPND16): rational approximations in three ranges of p.
# Numerator and denominator coefficients from the constant term up (the denominators'
# constant term is 1), as published (M. J. Wichura, "Algorithm AS 241: The percentage
# points of the normal distribution", Applied Statistics 37(3), 477-484, 1988).
_AS241_CENTRE = (
    (3.3871328727963666080, 1.3314166789178437745e2, 1.9715909503065514427e3,
     1.3731693765509461125e4, 4.5921953931549871457e4, 6.7265770927008700853e4,
     3.3430575583588128105e4, 2.5090809287301226727e3),
    (1.0, 4.2313330701600911252e1, 6.8718700749205790830e2, 5.3941960214247511077e3,
     2.1213794301586595867e4, 3.9307895800092710610e4, 2.8729085735721942674e4,
     5.2264952788528545610e3))
_AS241_MIDDLE = (
    (1.42343711074968357734, 4.63033784615654529590, 5.76949722146069140550,
     3.64784832476320460504, 1.27045825245236838258, 2.41780725177450611770e-1,
     2.27238449892691845833e-2, 7.74545014278341407640e-4),
    (1.0, 2.05319162663775882187, 1.67638483018380384940, 6.89767334985100004550e-1,
     1.48103976427480074590e-1, 1.51986665636164571966e-2, 5.47593808499534494600e-4,
     1.05075007164441684324e-9))
_AS241_TAIL = (
    (6.65790464350110377720, 5.46378491116411436990, 1.78482653991729133580,
     2.96560571828504891230e-1, 2.65321895265761230930e-2, 1.24266094738807843860e-3,
     2.71155556874348757815e-5, 2.01033439929228813265e-7),
    (1.0, 5.99832206555887937690e-1, 1.36929880922735805310e-1, 1.48753612908506148525e-2,
     7.86869131145613259100e-4, 1.84631831751005468180e-5, 1.42151175831644588870e-7,
     2.04426310338993978564e-15))


def _ratio(coef: tuple[tuple[float, ...], tuple[float, ...]], r: np.ndarray) -> np.ndarray:
    num, den = coef
    return np.polyval(num[::-1], r) / np.polyval(den[::-1], r)


def normal_quantile(p: np.ndarray) -> np.ndarray:
    r"""The standard normal quantile :math:`\Phi^{-1}(p)` (the inverse of the normal
    cumulative distribution), elementwise, for :math:`0 < p < 1`.

    Wichura's AS 241 (PPND16; Applied Statistics 37(3), 477-484, 1988): with
    :math:`q = p - 1/2`, a rational function of :math:`0.180625 - q^2` for
    :math:`|q| \le 0.425`; else, with :math:`r = \sqrt{-\ln\min(p, 1-p)}`, one of
    :math:`r - 1.6` for :math:`r \le 5` and one of :math:`r - 5` beyond, signed as
    :math:`q`. Relative error about 1e-16 (checked against ``scipy.special.ndtri`` in
    the tests); :math:`p = 0` and :math:`1` give :math:`\mp\infty`. Pure numpy, so the
    search process need not load scipy.
    """
    p = np.asarray(p, dtype=float)
    q = p - 0.5
    with np.errstate(divide="ignore", invalid="ignore"):  # p = 0, 1: r is infinite
        centre = q * _ratio(_AS241_CENTRE, 0.180625 - q * q)
        r = np.sqrt(-np.log(np.minimum(p, 1.0 - p)))
        tail = np.where(r <= 5.0, _ratio(_AS241_MIDDLE, r - 1.6),
                        _ratio(_AS241_TAIL, r - 5.0))
    out = np.where(np.abs(q) <= 0.425, centre, np.copysign(tail, q))
    return np.where(np.isinf(r), np.copysign(np.inf, q), out)


def draw(spec: RobustnessSpec, layers: int, part_tolerance: np.ndarray, seed: int) -> Draws:
    """``spec.samples`` builds from the seed (same seed, same draws, bit for bit).

    Parameters
    ----------
    spec : RobustnessSpec
        Samples, thickness (if set) / Dk / etch / drill tolerances and the fab
        distribution.
    layers : int
        Dielectric layers K drawn (the space's most); each layer's deviate is in units of
        its tolerance, scaled per candidate by :func:`layer_tolerances`.
    part_tolerance : ndarray, shape (E,)
        ± fraction of every element's value.
    seed : int
        Seed of the numpy ``Generator`` behind the Latin hypercube.
    """
    tol_e = np.asarray(part_tolerance, dtype=float)
    u = latin_hypercube(spec.samples, 3 + layers + len(tol_e), np.random.default_rng(seed))
    fab = u[:, :3 + layers]
    unit = normal_quantile(fab) / 3.0 if spec.distribution == "normal" else 2.0 * fab - 1.0
    return Draws(thickness=unit[:, 3:], dk=unit[:, 0] * spec.dk, etch=unit[:, 1] * spec.etch,
                 drill=unit[:, 2] * spec.drill,
                 parts=(2.0 * u[:, 3 + layers:] - 1.0) * tol_e,
                 thickness_tolerance=spec.thickness)


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


def layer_tolerances(problem: Problem, g: Geometry, t: float | None = None) -> np.ndarray:
    """± fraction of every dielectric layer's thickness (N, K): ``t`` (the scenario's
    ``search.robustness.thickness``) if given, else the layer material's own
    ``thickness_tolerance``, else the fab's (capabilities)."""
    shape = g.stack.dielectric.shape
    if t is not None:
        return np.full(shape, float(t))
    default = problem.table.capabilities.thickness_tolerance
    if g.slot_material is None:
        return np.full(shape, default)
    own = problem.table.thickness_tolerances()
    m = g.slot_material
    return np.where(m >= 0, own[np.clip(m, 0, None)], default)


def yield_key(problem: Problem, g: Geometry, t: float | None = None) -> np.ndarray:
    """What a candidate's Monte Carlo margins depend on, one int row per candidate: its
    circuit input (the ground batch's phenotype key) and the thickness and tolerance of
    every layer above the planes its vias and top trace reach (each is drawn on its own;
    ``t``: the scenario's override). Equal rows get equal margins in every build."""
    st = g.stack
    top = np.maximum(st.ground_plane(0)[:, 0], st.reference_plane(0)[:, 0])
    above = np.arange(st.dielectric.shape[1])[None, :] < top[:, None]
    tol = np.where(above, layer_tolerances(problem, g, t), 0.0)
    return np.column_stack([batch_key(problem.ground_batch(g)),
                            quantize(np.where(above, st.dielectric, 0.0)),
                            np.round(tol * 1e6).astype(np.int64)])


def build_draws(problem: Problem, seed: int | None = None) -> Draws:
    """The scenario's builds (seed: the search seed)."""
    sc = problem.scenario
    return draw(sc.search.robustness, problem.space.n_slots, part_tolerances(sc.circuit),
                sc.search.seed if seed is None else seed)


def built(problem: Problem, g: Geometry, d: Draws) -> tuple[Geometry, np.ndarray]:
    """Every candidate of ``g`` (P) built ``d.n`` times: the geometry of the P x S boards
    (candidate-major: row = candidate * S + sample) and each row's sample index."""
    p, s = len(g), d.n
    rep, k = np.repeat(np.arange(p), s), np.tile(np.arange(s), p)
    st = g.stack
    slots = st.dielectric.shape[1]
    rel = d.thickness[k, :slots] * layer_tolerances(problem, g, d.thickness_tolerance)[rep]
    has = st.dielectric[rep] > 0
    stack = LayerStack(dielectric=st.dielectric[rep] * (1.0 + rel),
                       er=np.where(has, st.er[rep] * (1.0 + d.dk[k, None]), st.er[rep]),
                       copper=st.copper[rep], role=st.role[rep])
    gs = Geometry(stack=stack, drill=np.maximum(g.drill[rep] + d.drill[k], _MIN_DRILL),
                  vias=g.vias[rep], material_counts=g.material_counts[rep],
                  flags={m: v[rep] for m, v in g.flags.items()},
                  slot_material=None if g.slot_material is None else g.slot_material[rep])
    return gs, k


def _margins(problem: Problem, gs: Geometry, k: np.ndarray, model: str, d: Draws,
             progress: Callable[[int, int], None] | None = None) -> np.ndarray:
    """Margin (P * S,) of every build, one solve per distinct (circuit input, sample);
    ``progress(done, total)`` after every chunk, counting those solves."""
    gb = problem.ground_batch(gs, model)
    first, inv = unique_rows(np.column_stack([batch_key(gb), k]))
    gb, k = gb.take(first), k[first]
    freqs, compiled = problem.freqs, problem.compiled
    ze = part_impedances(problem.scenario.circuit, freqs, d.parts)  # (S, F, E)
    out = np.empty(len(first))
    step = max(1, CHUNK // len(freqs))
    for i0 in range(0, len(first), step):  # chunks bound the memory (not a loop over samples)
        sl = slice(i0, i0 + step)
        sub = gb.take(np.arange(len(first))[sl])
        lg = ground_inductance_matrix(compiled, sub, model)
        yl = line_admittance(compiled, sub, freqs) if len(compiled.line_length) else None
        sp = mna_s_varied(compiled, freqs, lg, ze[k[sl]], yl)
        out[sl] = problem.attenuation(attenuation_db(sp))[1]
        if progress is not None:
            progress(min(i0 + step, len(first)), len(first))
    out = np.nan_to_num(out, nan=-999.0, posinf=999.0, neginf=-999.0)
    return out[inv]


def monte_carlo(problem: Problem, g: Geometry, widths: np.ndarray, model: str,
                draws: Draws, progress: Callable[[int, int], None] | None = None
                ) -> MonteCarlo:
    """Every candidate of ``g`` (P) built ``draws.n`` times.

    Parameters
    ----------
    problem : Problem
        The search problem (circuit, requirements, lines).
    g : Geometry
        The P candidates' nominal geometry.
    widths : ndarray, shape (P, routes)
        Nominal controlled-impedance widths [m] of every line on every layer
        (:attr:`Problem.routes`; NaN: unreachable or absent, spread NaN too).
    model : str
        Via model of the ranking (the yield is under the model the search ranks by).
    draws : Draws
        From :func:`draw` / :func:`build_draws`.
    progress : callable, optional
        ``progress(done, total)`` after every chunk of builds solved (the hook of
        :func:`stackopt.optimize`; the library never prints).
    """
    p, s = len(g), draws.n
    gs, k = built(problem, g, draws)
    rep = np.repeat(np.arange(p), s)
    w = np.maximum(widths[rep] + draws.etch[k, None], _MIN_WIDTH)  # NaN stays NaN
    z = problem.line_impedances(gs, w).reshape(p, s, -1)
    return MonteCarlo(margin=_margins(problem, gs, k, model, draws, progress).reshape(p, s),
                      impedance_min=z.min(axis=1), impedance_max=z.max(axis=1))
