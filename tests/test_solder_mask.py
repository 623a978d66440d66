"""Solder mask over the outer layers: a cost-table property (the fab's process) that a
scenario's ``solder_mask`` overrides; plausibility-checked at the edge; used by the field
solver for outer-layer lines (the closed forms ignore it).

Independent check: the picks' field-solved impedance under the table's mask is re-solved
by the test-only solver tests/reference/fd2d.py (node-centred finite volumes, energy
capacitance; independent of stackopt) with the mask as two dielectric rectangles.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from reference import fd2d
from scenario_support import TABLE as QUICK
from scenario_support import TWO, edited_copy
from test_hostile_inputs import one_error
from test_robustness import run

from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.scenario import load_scenario
from stackopt.search.exact import enumerate_all
from stackopt.search.problem import Problem


def _table(tmp_path, mask, name="t.yaml"):
    return edited_copy(tmp_path, name, QUICK,
                       lambda d: mask is None or d.update(solder_mask=mask))


def _scenario(tmp_path, mask=None):
    def edit(d):
        d["lines"] = [{"name": "m", "type": "microstrip", "layer": "L1",
                       "impedance": "50 ohm"}]
        if mask is not None:
            d["solder_mask"] = mask
    return edited_copy(tmp_path, "s.yaml", TWO, edit)


def test_the_scenario_overrides_the_table_and_the_table_is_the_default(tmp_path):
    table = load_cost_table(_table(tmp_path, {"thickness": "30 um", "er": 3.8}))
    assert table.solder_mask.thickness == pytest.approx(30e-6)
    bare = Problem(load_scenario(_scenario(tmp_path)), table)
    assert bare.solder_mask == table.solder_mask  # the fab's mask when the scenario is silent
    own = Problem(load_scenario(_scenario(tmp_path, {"thickness": "15 um", "er": 3.3})), table)
    assert own.solder_mask.thickness == pytest.approx(15e-6) and own.solder_mask.er == 3.3
    none = Problem(load_scenario(_scenario(tmp_path)), load_cost_table(_table(tmp_path, None)))
    assert none.solder_mask is None


def test_the_field_check_puts_the_tables_mask_over_the_top_line(tmp_path):
    # the impedance table's field solve of an L1 microstrip under the fab's 30 um mask
    # (Dk 3.8) against the independent solver with the same rectangles: within 1 %;
    # the mask adds capacitance, so the line reads lower than bare (physics)
    tm, em = 30e-6, 3.8
    table = load_cost_table(_table(tmp_path, {"thickness": "30 um", "er": em}))
    p = Problem(load_scenario(_scenario(tmp_path)), table)
    c = enumerate_all(p.space).take(np.array([0]))
    g = p.space.geometry(c)
    ev = p.evaluate_geometry(g)
    from stackopt.analyses.lines import line_rows

    (row,) = line_rows(p, g, 0, ev.widths[0])
    lb = p.line_batch(g, 0)
    w, h, er, t = row.width_m, float(lb.height[0]), float(lb.er[0]), float(lb.copper[0])
    base = fd2d.microstrip_box(w, h, er, t)
    mask = (fd2d.Rect(0, base.x_max, h, h + tm, em),
            fd2d.Rect(0, w / 2 + tm, h, h + t + tm, em))
    ref = fd2d.solve_line(replace(base, dielectrics=base.dielectrics + mask))[0]
    assert row.z_field_ohm == pytest.approx(ref.z0, rel=0.01)
    assert row.z_field_ohm < row.z_ohm  # the closed form ignores the mask


@pytest.mark.parametrize("mask,words", [
    ({"thickness": 20, "er": 3.5}, ["solder_mask.thickness", "did you mean 20 um"]),
    ({"thickness": "20 um", "er": 35}, ["solder_mask.er"]),
    ({"thickness": "20 um", "dk": 3.5}, ["solder_mask", "dk"]),
])
def test_bad_mask_in_the_table_is_one_located_line(tmp_path, mask, words):
    code, _, err = run("check", str(_scenario(tmp_path)), "--costs",
                       str(_table(tmp_path, mask)))
    one_error(code, err, *words)


def test_bare_mask_thickness_in_the_scenario_suggests_the_unit(tmp_path):
    code, _, err = run("check", str(_scenario(tmp_path, {"thickness": 0.02})), "--costs",
                       str(QUICK))
    one_error(code, err, "solder_mask.thickness", "did you mean 0.02 mm")
