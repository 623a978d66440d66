"""Independent cross-check: the search's batch against one stackup through ``eval``.

A random sample of candidates from spaces that vary copper (0.5 / 1 / 2 oz), drill, vias
per ground connection, every mitigation, 2 to 8 layers and every arrangement is evaluated
twice: all at once through :meth:`Problem.evaluate` (decoded by :meth:`Space.geometry`,
physics once per phenotype) and one by one as a :class:`~stackopt.model.stackup.Stackup`
written to and read back from a stackup file, through
:func:`stackopt.search.single.evaluate_stackup` (built from layer records, no phenotype
sharing with other candidates). Margins must agree to 1e-9 dB, unit costs to the cent,
line widths to 1e-9 relative. Every sampled candidate is accompanied by its copies with
each other copper weight and each mitigation flipped, so that a phenotype key that
forgot a field would hand one of them another's response.

The geometry both paths share is checked against an independent walk down the layers in
``tests/test_geometry.py``. The cost table is the invented demo table (fixture only).
"""

from __future__ import annotations

import numpy as np
import pytest

from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.stackup_file import SelectedStackup
from stackopt.model.scenario import Scenario
from stackopt.search.genome import decode_genome, genome_bounds
from stackopt.search.problem import Problem
from stackopt.search.single import evaluate_stackup
from stackopt.search.space import Candidates, candidate_stackup

TABLE = load_cost_table("cost_tables/quickturn.yaml")

FILTER = {
    "z0": "50 ohm",
    "filter": {"family": "chebyshev", "order": 5, "cutoff": "1 GHz", "ripple": "0.1 dB",
               "spacing": "2 mm", "ground": {"trace_length": "0.5 mm", "trace_width": "0.4 mm"}},
}


def scenario(layers, symmetric):
    return Scenario.model_validate({
        "name": "crosscheck", "board": {"width": "50 mm", "height": "40 mm", "quantity": 100},
        "circuit": FILTER,
        "requirements": [{"frequency": "1.8 GHz", "min_attenuation": "35 dB"},
                         {"frequency": "2.7 GHz", "min_attenuation": "45 dB"}],
        "lines": [{"name": "rf50", "type": "microstrip", "impedance": "50 ohm"},
                  {"name": "cpw", "type": "cpwg", "impedance": "50 ohm", "gap": "0.25 mm"}],
        "space": {"layers": list(layers), "symmetric": symmetric,
                  "drills": ["0.2 mm", "0.3 mm", "0.45 mm"], "vias_per_ground": [1, 2, 3],
                  "copper": ["0.5 oz", "1 oz", "2 oz"],
                  "mitigations": ["via_in_pad", "own_vias", "coplanar"]}})


def sample(problem: Problem, per_arrangement: int, seed: int) -> Candidates:
    """Random candidates of every arrangement, each with its copper and mitigation twins."""
    sp = problem.space
    rng = np.random.default_rng(seed)
    lo, hi = genome_bounds(sp)
    parts = []
    for ai in range(len(sp.arrangements)):
        x = rng.integers(lo, hi + 1, size=(per_arrangement, len(lo)))
        x[:, 0] = ai
        c = decode_genome(sp, x)
        parts.append(c)
        for k in range(len(sp.copper)):
            parts.append(Candidates(c.arr, c.slot, np.full(len(c), k), c.drill, c.vias, c.mit))
        for m in range(len(sp.mitigations)):
            mit = c.mit.copy()
            mit[:, m] = ~mit[:, m]
            parts.append(Candidates(c.arr, c.slot, c.copper, c.drill, c.vias, mit))
    return Candidates.concat(parts)


@pytest.mark.slow
@pytest.mark.parametrize("layers, symmetric, seed", [
    ((2, 4), True, 1), ((4, 6, 8), False, 2), ((2, 6, 8), True, 3)])
def test_search_batch_equals_single_stackup_eval(layers, symmetric, seed):
    problem = Problem(scenario(layers, symmetric), TABLE)
    sp = problem.space
    assert {a.n_layers for a in sp.arrangements} == set(layers)
    c = sample(problem, 3, seed)
    batch = problem.evaluate(c)
    assert len(np.unique(c.copper)) == 3 and c.mit.any(axis=0).all()
    for i in range(len(c)):  # one stackup at a time, as `stackopt eval` does
        st = candidate_stackup(sp, c, i)
        mits = tuple(m for k, m in enumerate(sp.mitigations) if c.mit[i, k])
        sf = SelectedStackup(st, sp.drills[int(c.drill[i])], sp.vias[int(c.vias[i])], mits)
        one = evaluate_stackup(problem, sf)
        assert one.margin[0] == pytest.approx(batch.margin[i], abs=1e-9), i
        assert one.inductance[0] == pytest.approx(batch.inductance[i], rel=1e-12), i
        assert abs(one.unit_cost[0] - batch.unit_cost[i]) < 0.005, i
        np.testing.assert_allclose(one.widths[0], batch.widths[i], rtol=1e-9)
        assert one.feasible[0] == batch.feasible[i], i
