"""Standard constructions from the fab's table: loading, errors, and a search restricted
to them. (The volume demo table is invented data, used here as a fixture.)"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from stackopt.errors import InputError
from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.scenario import load_scenario
from stackopt.search.api import optimize
from stackopt.search.exact import enumerate_all
from stackopt.search.front import nondominated
from stackopt.search.problem import Problem

ROOT = Path(__file__).resolve().parent.parent
VOLUME = ROOT / "cost_tables" / "volume.yaml"


def standard_scenario():
    sc = load_scenario(ROOT / "scenarios" / "consumer_emi.yaml")
    return sc.model_copy(update={"space": sc.space.model_copy(
        update={"constructions": "standard"})})


def test_table_lists_its_constructions():
    t = load_cost_table(VOLUME)
    assert [c.layers for c in t.constructions] == [2, 2, 4, 4, 6]


def test_search_uses_only_the_listed_builds():
    t = load_cost_table(VOLUME)
    sc = standard_scenario()
    r = optimize(sc, t)
    assert r.method == "exact"
    builds = {tuple(c.dielectrics) for c in t.constructions}
    names = r.problem.space.slot_names(r.candidates)
    ids = {"2116 x1": "pp-2116 x1", "2116 x2": "pp-2116 x2", "7628 x1": "pp-7628 x1"}
    for row in names:
        used = tuple(ids.get(x, x) for x in row if x)
        assert used in builds
    # 6L builds exist in the table but the scenario allows 2, 4, 6 layers: all counted
    sp = r.problem.space
    n_builds = sum(1 for a in sp.arrangements for b in sp.constructions if b[1] == a.n_layers)
    per = len(sp.copper) * len(sp.drills) * len(sp.vias) * 2 ** len(sp.mitigations)
    assert r.space_size == n_builds * per == r.n
    # the whole space is evaluated, so the front is the brute-force front
    p = Problem(sc, t)
    ev = p.evaluate(enumerate_all(p.space))
    f = p.objectives(ev)[ev.feasible]
    brute = {tuple(np.round(x, 9)) for x in f[nondominated(f)]}
    got = {tuple(np.round(r.objectives[i], 9)) for i in np.flatnonzero(r.on_front)}
    assert got == brute


def test_nsga2_refuses_a_construction_space():
    with pytest.raises(InputError, match="standard constructions"):
        optimize(standard_scenario(), load_cost_table(VOLUME), method="nsga2")


@pytest.mark.parametrize("entry, expect", [
    ("[pp-9999 x1, core-1.2, pp-7628 x1]", "no material 'pp-9999'"),
    ("[core-1.2, pp-7628 x1, core-1.2]", "must be a prepreg"),
    ("[pp-7628 x1, core-1.2 x2, pp-7628 x1]", "a core has no plies"),
    ("[pp-7628 x1, core-1.2, pp-7628 x1, core-1.2, pp-7628 x1, core-1.2, pp-7628 x1, "
     "core-1.2, pp-7628 x1, core-1.2, pp-7628 x1]", "have no base price"),
])
def test_bad_construction_is_a_located_one_line_error(tmp_path, entry, expect):
    text = VOLUME.read_text().replace(
        "[pp-7628 x1, core-1.2, pp-7628 x1]", entry, 1)
    p = tmp_path / "t.yaml"
    p.write_text(text)
    (tmp_path / "volume_base.csv").write_text(
        (ROOT / "cost_tables" / "volume_base.csv").read_text())
    with pytest.raises(InputError) as info:
        load_cost_table(p)
    msg = str(info.value)
    assert expect in msg and "constructions[2]" in msg and "\n" not in msg
