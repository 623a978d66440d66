"""The ideal-ground reference in summary.json, against the analytic Chebyshev response.

Source: the Chebyshev insertion loss 10 log10(1 + eps^2 T_n(w/wc)^2), eps^2 = 10^(Ar/10) - 1
(Matthaei, Young & Jones, *Microwave Filters...*, 1964, sec. 4.03), for the ideal
equally-terminated odd-order ladder. The demo scenario is invented data.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from outputs_support import DEMO, run

from stackopt.analyses.ideal import ideal_ground
from stackopt.inputs.scenario import load_scenario
from stackopt.search.problem import Problem


def _cheb_db(f, fc, n, ripple):
    eps2 = 10 ** (ripple / 10) - 1
    return 10 * np.log10(1 + eps2 * np.cosh(n * np.arccosh(f / fc)) ** 2)


def test_ideal_ground_is_the_analytic_ladder():
    sc = load_scenario(DEMO)
    flt = sc.circuit.filter.model_copy(update={"capacitor": type(sc.circuit.filter.capacitor)(),
                                               "inductor": type(sc.circuit.filter.inductor)()})
    sc = sc.model_copy(update={"circuit": sc.circuit.model_copy(update={"filter": flt})})
    pb = Problem(sc, run().problem.table)
    ig = ideal_ground(pb)
    for r in sc.requirements:
        want = _cheb_db(r.frequency, flt.cutoff, flt.order, flt.ripple)
        assert ig.attenuation[r.key] == pytest.approx(want, abs=1e-6)
    assert ig.margin == pytest.approx(min(ig.attenuation[r.key] - r.min_attenuation
                                          for r in sc.requirements), abs=1e-12)


def test_summary_has_ideal_ground(tmp_path):
    from stackopt.outputs.bundle import render_all

    data = json.loads(render_all(run())["summary.json"])
    keys = [r["key"] for r in data["requirements"]]
    assert sorted(data["ideal_ground"]["attenuation_dB"]) == sorted(keys)
    assert isinstance(data["ideal_ground"]["margin_dB"], float)
