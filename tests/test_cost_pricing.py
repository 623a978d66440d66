"""Pricing: hand-worked examples (arithmetic beside each figure), violations, properties.

The demo tables are invented data; the figures below check the arithmetic of the pricing
rules documented in docs/cost_tables.md, not any real fab's prices.
"""

from __future__ import annotations

import copy
from pathlib import Path

import numpy as np
import pytest
import yaml
from hypothesis import given, settings
from hypothesis import strategies as st

from stackopt.cost import ITEMS, VIOLATIONS, PriceBatch, material_price_vector, price
from stackopt.inputs.costtable import load_cost_table
from stackopt.model.costtable import BoardOrder, CostTable

ROOT = Path(__file__).resolve().parents[1] / "cost_tables"
QUICK = load_cost_table(ROOT / "quickturn.yaml")
VOLUME = load_cost_table(ROOT / "volume.yaml")
MM, OZ = 1e-3, 34.3e-6


def one(table, **kw) -> PriceBatch:
    base = dict(layers=4, material_counts=np.zeros(len(table.materials_list()), int),
                copper=OZ, min_drill=0.3 * MM, thickness=1.6 * MM, min_dielectric=0.1 * MM)
    base.update(kw)
    return PriceBatch.broadcast(**base)


def test_hand_worked_quickturn_four_layer():
    order = BoardOrder(width="50 mm", height="40 mm", quantity=10)
    m = np.zeros(14, int)
    m[QUICK.material_index("pp-2116")] = 4
    m[QUICK.material_index("core-1.1")] = 1
    batch = one(QUICK, material_counts=m, min_drill=0.25 * MM, impedance_control=True,
                min_trace=0.15 * MM)
    r = price(QUICK, order, batch)
    assert r.boards_per_panel == 50                       # see test_panel: 10 x 5 turned
    items = dict(r.breakdown(0))
    assert items["base"] == pytest.approx(1500 * 0.05 * 0.04)      # 1500 EUR/m² * 0.002 = 3.00
    assert items["materials"] == pytest.approx((4 * 1.1 + 10.6) / 50)  # 15.0 / 50 = 0.30
    assert items["copper"] == 0.0                                  # 1 oz adds 0 per layer
    assert items["drill"] == pytest.approx(5 / 50)                 # 0.25 mm row: 5 / 50 = 0.10
    assert items["impedance_control"] == pytest.approx(0 / 50 + 40 / 10)  # per lot: 4.00
    assert items["via_in_pad"] == 0.0
    assert items["non_standard_thickness"] == 0.0                  # 1.6 mm is standard
    assert items["setup"] == pytest.approx(60 / 10)                # 4-layer setup: 6.00
    assert r.unit_cost[0] == pytest.approx(13.40)                  # 3 + .3 + .1 + 4 + 6
    assert r.lot_cost[0] == pytest.approx(134.0)                   # 13.40 * 10
    assert r.lead_time_days[0] == 5 + 1                            # 4-layer 5 d + impedance 1 d
    assert r.panels == 1                                           # ceil(10 / 50)
    assert r.feasible[0]


def test_hand_worked_volume_two_layer_from_csv():
    order = BoardOrder(width="100 mm", height="80 mm", quantity=1000)
    m = np.zeros(len(VOLUME.materials_list()), int)
    m[VOLUME.material_index("core-1.2")] = 1
    batch = one(VOLUME, layers=2, material_counts=m, copper=2 * OZ, min_drill=0.2 * MM,
                thickness=1.4 * MM)
    r = price(VOLUME, order, batch)
    b = 28                                                         # see test_panel
    assert r.boards_per_panel == b
    items = dict(r.breakdown(0))
    assert items["base"] == pytest.approx(55 / b)                  # CSV row 2, column 1000
    assert items["materials"] == pytest.approx(16.8 / b)           # one 1.2 mm core
    assert items["copper"] == pytest.approx(2 * 9.0 / b)           # 2 layers of 2 oz at 9.0
    assert items["drill"] == pytest.approx(15 / b)                 # 0.2 mm row
    # 1.4 mm is 16.7 % from 1.2 mm and 12.5 % from 1.6 mm: beyond ±10 %, non-standard
    assert items["non_standard_thickness"] == pytest.approx(3 / b + 150 / 1000)
    assert items["setup"] == pytest.approx(250 / 1000)
    assert r.unit_cost[0] == pytest.approx((55 + 16.8 + 18 + 15 + 3) / b + 0.15 + 0.25)
    assert r.lead_time_days[0] == 10 + 2                           # 2-layer + non-standard
    assert r.panels == 36                                          # ceil(1000 / 28)


def test_quantity_break_columns():
    # the largest break <= the order applies; below the first break, the first column
    rows = QUICK.base_price.layers[2]
    for q, expected in [(1, rows[0]), (4, rows[0]), (5, rows[1]), (99, rows[4]),
                        (100, rows[5]), (10_000, rows[5])]:
        r = price(QUICK, BoardOrder(width=0.1, height=0.1, quantity=q), one(QUICK, layers=2))
        assert r.items["base"][0] == pytest.approx(expected * 0.01)


def test_violations_are_named_and_do_not_change_the_price():
    order = BoardOrder(width="50 mm", height="40 mm", quantity=10)
    ok = one(QUICK, min_trace=0.2 * MM)
    cases = {
        # name: (batch changes, expected fraction, with the arithmetic)
        "min_trace": (dict(min_trace=0.1 * MM), (0.127 - 0.1) / 0.127),
        "min_space": (dict(min_space=0.1 * MM), (0.127 - 0.1) / 0.127),
        "min_dielectric": (dict(min_dielectric=0.04 * MM), (0.05 - 0.04) / 0.05),
        "min_drill": (dict(min_drill=0.15 * MM, thickness=1.0 * MM), (0.2 - 0.15) / 0.2),
        "max_aspect_ratio": (dict(thickness=2.0 * MM, min_drill=0.2 * MM), (10 - 8) / 8),
        "max_copper": (dict(copper=3 * OZ), (3 - 2) / 2),
        "max_thickness": (dict(thickness=3.0 * MM, min_drill=0.4 * MM), (3.0 - 2.4) / 2.4),
        "max_layers": (dict(layers=10), (10 - 8) / 8),
        "layer_count_offered": (dict(layers=5), 1.0),
        "blind_vias_not_offered": (dict(blind_vias=True), 1.0),
    }
    base = price(QUICK, order, ok)
    assert base.violated(0) == {}
    for name, (change, expected) in cases.items():
        r = price(QUICK, order, one(QUICK, **{"min_trace": 0.2 * MM, **change}))
        got = r.violated(0)
        assert got == pytest.approx({name: expected}), name
        assert not r.feasible[0]
    # a violated trace width is a constraint, never a price: same cost as the legal one
    r = price(QUICK, order, one(QUICK, min_trace=0.1 * MM))
    assert r.unit_cost[0] == base.unit_cost[0]
    assert set(r.violations) == set(VIOLATIONS)


def test_unpriced_layer_count_uses_next_row_and_flags_it():
    order = BoardOrder(width="50 mm", height="40 mm", quantity=10)
    r = price(QUICK, order, one(QUICK, layers=[5, 6]))
    assert r.unit_cost[0] == r.unit_cost[1]
    assert r.violations["layer_count_offered"].tolist() == [1.0, 0.0]


def test_board_that_does_not_fit_is_an_input_error():
    from stackopt.errors import InputError
    with pytest.raises(InputError, match="does not fit"):
        price(QUICK, BoardOrder(width="500 mm", height="50 mm", quantity=1), one(QUICK))


def test_materials_item_is_exactly_additive():
    order = BoardOrder(width="50 mm", height="40 mm", quantity=25)
    rng = np.random.default_rng(4)
    m = rng.integers(0, 3, size=(64, 14))
    r = price(QUICK, order, one(QUICK, material_counts=m))
    per_board = material_price_vector(QUICK) / r.boards_per_panel
    np.testing.assert_allclose(r.items["materials"], m @ per_board, rtol=1e-12)


def test_batch_equals_one_at_a_time():
    order = BoardOrder(width="62 mm", height="33 mm", quantity=40)
    rng = np.random.default_rng(7)
    n = 50
    batch = PriceBatch.broadcast(
        layers=rng.choice([2, 4, 6, 8, 10], n), material_counts=rng.integers(0, 3, (n, 15)),
        copper=rng.choice([0.5, 1, 2], n) * OZ, inner_copper=rng.choice([0.5, 1, 2], n) * OZ,
        min_drill=rng.choice([0.15, 0.2, 0.25, 0.3], n) * MM,
        thickness=rng.uniform(0.6, 2.5, n) * MM, min_dielectric=rng.uniform(0.03, 0.3, n) * MM,
        min_trace=np.where(rng.random(n) < 0.5, np.nan, 0.12 * MM),
        via_in_pad=rng.random(n) < 0.5, impedance_control=rng.random(n) < 0.5,
        microvias=rng.random(n) < 0.3)
    whole = price(VOLUME, order, batch)
    for i in range(0, n, 7):
        single = price(VOLUME, order, batch.take([i]))
        assert single.unit_cost[0] == whole.unit_cost[i]
        assert single.lead_time_days[0] == whole.lead_time_days[i]
        for k in VIOLATIONS:
            assert single.violations[k][0] == whole.violations[k][i]


# ---- properties --------------------------------------------------------------------------
candidates = st.fixed_dictionaries(dict(
    layers=st.sampled_from([2, 4, 6, 8]),
    plies=st.lists(st.integers(0, 3), min_size=4, max_size=4),
    cores=st.lists(st.integers(0, 2), min_size=10, max_size=10),
    copper=st.sampled_from([0.5, 1.0, 2.0]), drill=st.sampled_from([0.2, 0.25, 0.3, 0.4]),
    thickness=st.floats(0.6, 2.4), vip=st.booleans(), imp=st.booleans(),
))
boards = st.tuples(st.integers(10, 200), st.integers(10, 200))


def _batch(table: CostTable, c: dict, layers: int | None = None) -> PriceBatch:
    m = np.array(c["plies"] + c["cores"])
    m = np.pad(m, (0, len(table.materials_list()) - len(m)))
    return one(table, layers=c["layers"] if layers is None else layers, material_counts=m,
               copper=c["copper"] * OZ, min_drill=c["drill"] * MM,
               thickness=c["thickness"] * MM, via_in_pad=c["vip"], impedance_control=c["imp"])


@settings(max_examples=120, deadline=None)
@given(c=candidates, wh=boards, q1=st.integers(1, 20_000), q2=st.integers(1, 20_000),
       table=st.sampled_from([QUICK, VOLUME]))
def test_unit_cost_never_rises_with_quantity(c, wh, q1, q2, table):
    lo, hi = sorted((q1, q2))
    batch = _batch(table, c)
    u_lo = price(table, BoardOrder(width=wh[0] * MM, height=wh[1] * MM, quantity=lo), batch)
    u_hi = price(table, BoardOrder(width=wh[0] * MM, height=wh[1] * MM, quantity=hi), batch)
    assert u_hi.unit_cost[0] <= u_lo.unit_cost[0] * (1 + 1e-12)


def _rising_table(first, steps, drops, setups) -> CostTable:
    """The quick-turn table with generated base rows: rising with layers, falling with q."""
    data = yaml.safe_load((ROOT / "quickturn.yaml").read_text())
    data = copy.deepcopy(data)
    rows, row = {}, None
    for k, n in enumerate((2, 4, 6, 8)):
        row = [first] if row is None else [row[0] + steps[k]]
        for d in drops:
            row.append(max(row[-1] - d, 0.0))
        rows[n] = row
        # a higher layer count costs at least as much at every break
        if k:
            rows[n] = [max(a, b) for a, b in zip(rows[n], rows[2 * k], strict=True)]
    data["base_price"]["layers"] = rows
    data["setup"] = {n: float(sum(setups[: k + 1])) for k, n in enumerate((2, 4, 6, 8))}
    return CostTable.model_validate(data)


@settings(max_examples=80, deadline=None)
@given(c=candidates, wh=boards, q=st.integers(1, 5_000),
       first=st.floats(10, 2000), steps=st.lists(st.floats(0, 3000), min_size=4, max_size=4),
       drops=st.lists(st.floats(0, 300), min_size=5, max_size=5),
       setups=st.lists(st.floats(0, 200), min_size=4, max_size=4),
       extra=st.lists(st.integers(0, 2), min_size=14, max_size=14))
def test_adding_a_layer_pair_never_lowers_cost(c, wh, q, first, steps, drops, setups, extra):
    for table in (QUICK, VOLUME, _rising_table(first, steps, drops, setups)):
        order = BoardOrder(width=wh[0] * MM, height=wh[1] * MM, quantity=q)
        layers = min(c["layers"], table.max_layers - 2)
        thin = _batch(table, c, layers)
        more = np.asarray(thin.material_counts[0]).copy()
        more[:14] += np.array(extra)            # the added pair needs material, never less
        thick = one(table, layers=layers + 2, material_counts=more, copper=thin.copper,
                    min_drill=thin.min_drill, thickness=thin.thickness,
                    via_in_pad=thin.via_in_pad, impedance_control=thin.impedance_control)
        a, b = price(table, order, thin), price(table, order, thick)
        # the thickness adder depends on thickness only, which is held fixed here
        assert b.unit_cost[0] >= a.unit_cost[0]


@settings(max_examples=100, deadline=None)
@given(c=candidates, wh=boards, q=st.integers(1, 20_000),
       table=st.sampled_from([QUICK, VOLUME]))
def test_breakdown_sums_exactly_to_unit_cost(c, wh, q, table):
    r = price(table, BoardOrder(width=wh[0] * MM, height=wh[1] * MM, quantity=q),
              _batch(table, c))
    parts = r.breakdown(0)
    assert [name for name, _ in parts] == list(ITEMS)
    total = 0.0
    for _, amount in parts:
        assert amount >= 0.0                    # every item is a cost, never a discount
        total += amount
    assert total == r.unit_cost[0]              # exact: same order of summation
    assert r.lot_cost[0] == pytest.approx(r.unit_cost[0] * q, rel=1e-15)
