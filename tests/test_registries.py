"""One registry per family: adding an entry is enough for every reader.

A dummy via model (the image-theory kernel doubled: invented, not a published model) is
registered the way DEVELOPERS.md says — one kernel, one entry in ``VIA_MODELS`` — and must
then be accepted by ``stackopt calc via --model``, by a scenario's ``search.via_model`` and
by the report's model-spread table. Every mitigation and every pick must have its words.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from stackopt.cli.main import main
from stackopt.inputs.costtable import load_cost_table
from stackopt.model.mitigations import MITIGATIONS
from stackopt.model.scenario import Scenario
from stackopt.outputs.report_sections import spread_table
from stackopt.physics import inductance as ind
from stackopt.search.api import optimize
from stackopt.search.ladder import _words
from stackopt.search.picks import PICKS
from stackopt.search.problem import Problem
from stackopt.search.space import Candidates

TABLE = load_cost_table("cost_tables/quickturn.yaml")
DUMMY = "dummy-double-image"


def _dummy(h, d):
    return 2.0 * ind.via_image(h, d)


def _scenario(**search):
    return Scenario.model_validate({
        "name": "registry", "board": {"width": "30 mm", "height": "20 mm", "quantity": 100},
        "circuit": {"z0": "50 ohm", "filter": {
            "family": "chebyshev", "order": 3, "cutoff": "1 GHz", "ripple": "0.1 dB",
            "ground": {"trace_length": "0.5 mm", "trace_width": "0.4 mm"}}},
        "requirements": [{"frequency": "2 GHz", "min_attenuation": "20 dB"}],
        "space": {"layers": [2], "drills": ["0.3 mm"], "vias_per_ground": [1, 2],
                  "copper": ["1 oz"], "mitigations": list(MITIGATIONS)},
        "search": search})


@pytest.fixture
def dummy_model(monkeypatch):
    monkeypatch.setitem(ind.VIA_MODELS, DUMMY, _dummy)
    return DUMMY


def test_dummy_via_model_reaches_calc_via(dummy_model, capsys):
    argv = ["calc", "via", "--depth", "0.5mm", "--drill", "0.3mm", "--model", dummy_model,
            "--json"]
    assert main(argv) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["model"] == dummy_model
    assert out["single_via_H"] == pytest.approx(float(_dummy(0.5e-3, 0.3e-3)), rel=1e-12)
    assert dummy_model in out["models_H"]


def test_dummy_via_model_reaches_the_scenario_and_the_spread_table(dummy_model):
    sc = _scenario(via_model=dummy_model, method="exact")
    assert sc.search.via_model == dummy_model
    r = optimize(sc, TABLE, method="exact")
    assert set(r.spread) == set(ind.VIA_MODELS)
    table = next(x for x in spread_table(r) if x[0] == "table")
    assert dummy_model in table[1]
    # the ranking model's column equals the search's own margins (the same kernel ran)
    col = table[1].index(dummy_model)
    for row, (i, _) in zip(table[2], _picks(r), strict=True):
        assert row[col] == f"{r.evaluation.margin[i]:+.1f} dB"


def _picks(r):
    from stackopt.outputs.facts import unique_picks
    return unique_picks(r)


def test_unknown_via_model_in_a_scenario_lists_the_registered_ones():
    with pytest.raises(ValueError) as err:
        _scenario(via_model="jonson")
    msg = str(err.value)
    assert "did you mean 'johnson'" in msg
    assert all(m in msg for m in ind.VIA_MODELS)


def test_every_mitigation_has_its_words_in_every_output():
    p = Problem(_scenario(), TABLE)
    sp = p.space
    assert sp.mitigations == tuple(MITIGATIONS)
    for k, m in enumerate(sp.mitigations):
        assert MITIGATIONS[m].words and MITIGATIONS[m].label
        off = np.zeros((1, len(sp.mitigations)), dtype=bool)
        z = np.zeros(1, dtype=np.int64)
        slot = np.zeros((1, sp.n_slots), dtype=np.int64)
        a = Candidates(z, slot, z, z, z, off)
        b = a.with_switch(k)
        assert _words(sp, a, b) == MITIGATIONS[m].words  # the ladder's step
        assert MITIGATIONS[m].words in _words(sp, None, b)  # the ladder's start


def test_every_pick_has_its_labels_and_a_rule():
    r = optimize(_scenario(), TABLE, method="exact")
    assert list(r.picks) == list(PICKS)
    for name, p in PICKS.items():
        assert p.console and p.report and p.plot, name
        assert r.picks[name] is None or 0 <= r.picks[name] < r.n


# ---- line types: one registry (physics/linetypes.py LINE_TYPES) -------------------------
DUMMY_LINE = "dummy-surface-line"


@pytest.fixture
def dummy_line_type(monkeypatch):
    """A dummy line type registered as an entry of the registry alone (invented: it has a
    plain microstrip's features, so it takes the microstrip closed form)."""
    from stackopt.physics import linetypes as lt

    monkeypatch.setitem(lt.LINE_TYPES, DUMMY_LINE, lt.LineTypeEntry())
    return DUMMY_LINE


def _line_scenario(line_type):
    base = _scenario(via_model="goldfarb-pucel", method="exact").model_dump()
    base["lines"] = [{"name": "rf", "type": line_type, "impedance": 50.0}]
    return Scenario.model_validate(base)


def test_dummy_line_type_reaches_a_scenario_and_sizes_like_its_features(dummy_line_type):
    from stackopt.physics.lines import microstrip
    from stackopt.physics.linetypes import PAIR_TYPES, STRIPLINE_TYPES, LineSpec, line_width

    sc = _line_scenario(dummy_line_type)
    assert sc.lines[0].type == dummy_line_type
    assert sc.lines[0].layer_rule == "outer"  # neither between planes nor a pair
    assert dummy_line_type not in PAIR_TYPES and dummy_line_type not in STRIPLINE_TYPES
    # sized by the microstrip closed form: the width gives back 50 ohm by Hammerstad-Jensen
    w, ok = line_width(LineSpec(dummy_line_type, h=0.2e-3, er=4.3, t=35e-6), 50.0)
    assert bool(ok)
    z0, _ = microstrip(w, 0.2e-3, 4.3, 35e-6)
    assert float(z0) == pytest.approx(50.0, rel=1e-5)
    r = optimize(sc, TABLE, method="exact")
    assert np.isfinite(r.evaluation.widths[:, 0]).any()


def test_unregistered_line_type_is_refused_naming_the_registry():
    from stackopt.physics.linetypes import LINE_TYPES

    with pytest.raises(ValueError) as err:
        _line_scenario("microstip")
    text = str(err.value)
    assert "unknown line type 'microstip'" in text and "microstrip" in text
    assert all(name in text for name in LINE_TYPES)
