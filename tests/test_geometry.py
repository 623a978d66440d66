"""Stackup geometry (stackopt.model.geometry) against an independent walk down the layers.

The reference below does what an engineer does with a cross-section drawing: walk the
layers top to bottom accumulating z, then read heights off the faces. It shares no code
with the module (no prefix sums, no index arrays), so a dropped term on either side —
for instance the inner copper in the via height — makes the comparison fail.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stackopt.model.geometry import PLANE_ROLES, ROLES, LayerStack
from stackopt.model.stackup import Role

CU = 35e-6


def walk(diel, er, cu, roles):
    """Reference: z of every copper face by walking the layers; heights face to face."""
    z, tops, bottoms = 0.0, [], []
    for k, t in enumerate(cu):
        tops.append(z)
        z += t
        bottoms.append(z)
        if k < len(diel):
            z += diel[k]
    planes = [k for k, r in enumerate(roles) if r in PLANE_ROLES]
    grounds = [k for k, r in enumerate(roles) if r == "ground"]

    def nearest(cands, layer):
        c = [p for p in cands if p != layer]
        return min(c, key=lambda p: (abs(p - layer), p)) if c else None

    def gap(a, b):
        lo, hi = sorted((a, b))
        return tops[hi] - bottoms[lo]

    def dk(a, b):
        lo, hi = sorted((a, b))
        ts = diel[lo:hi]
        return sum(t * e for t, e in zip(ts, er[lo:hi], strict=True)) / sum(ts)

    out = {"thickness": z, "tops": tops, "layers": {}}
    for k in range(len(cu)):
        g = nearest(grounds, k)
        g = nearest(planes, k) if g is None else g
        up = max((p for p in planes if p < k), default=None)
        down = min((p for p in planes if p > k), default=None)
        out["layers"][k] = {
            "ground": g, "ref": nearest(planes, k), "via": None if g is None else gap(k, g),
            "up": up, "h_up": None if up is None else gap(k, up),
            "er_up": None if up is None else dk(k, up),
            "down": down, "h_down": None if down is None else gap(k, down),
            "er_down": None if down is None else dk(k, down)}
    return out


def close(a, b):
    if b is None:
        return np.isnan(a) or a == -1
    return a == pytest.approx(b, rel=1e-12, abs=1e-18)


stackups = st.integers(2, 8).flatmap(lambda n: st.tuples(
    st.lists(st.floats(0.05e-3, 1.6e-3), min_size=n - 1, max_size=n - 1),
    st.lists(st.floats(2.0, 10.0), min_size=n - 1, max_size=n - 1),
    st.lists(st.sampled_from([12e-6, 18e-6, 35e-6, 70e-6]), min_size=n, max_size=n),
    st.lists(st.sampled_from(ROLES), min_size=n, max_size=n)))


@settings(max_examples=150, deadline=None)
@given(stackups)
def test_every_quantity_matches_an_independent_walk(s):
    diel, er, cu, roles = s
    ref = walk(diel, er, cu, roles)
    ls = LayerStack.of(diel, er, cu, roles)
    assert close(float(ls.thickness[0]), ref["thickness"])
    np.testing.assert_allclose(ls.z_top[0], ref["tops"], rtol=1e-12, atol=1e-18)
    for k, r in ref["layers"].items():
        assert close(int(ls.ground_plane(k)[0, 0]), r["ground"])
        assert close(int(ls.reference_plane(k)[0, 0]), r["ref"])
        assert close(float(ls.via_height(k)[0]), r["via"])
        tr = ls.trace(k)
        for name in ("up", "h_up", "er_up", "down", "h_down", "er_down"):
            field = {"up": "plane_above", "h_up": "height_above", "er_up": "er_above",
                     "down": "plane_below", "h_down": "height_below",
                     "er_down": "er_below"}[name]
            assert close(getattr(tr, field)[0, 0].item(), r[name]), (k, name)


def test_worked_example_s_p_g_s():
    # Hand arithmetic: 0.2 mm prepreg, 1.0 mm core, 0.2 mm prepreg, 35 um copper.
    # The vias of L1 reach the ground on L3 through the L2 plane: h = 0.2 + 0.035 + 1.0 mm.
    ls = LayerStack.of([0.2e-3, 1.0e-3, 0.2e-3], [4.0, 4.6, 4.0], [CU] * 4,
                       ["signal", "power", "ground", "signal"])
    assert ls.via_height(0)[0] == pytest.approx(1.235e-3, rel=1e-12)
    assert ls.trace_height[0] == pytest.approx(0.2e-3, rel=1e-12)
    assert ls.trace_er[0] == 4.0
    assert ls.thickness[0] == pytest.approx(1.54e-3, rel=1e-12)
    assert int(ls.reference_plane(0)[0, 0]) == 1 and int(ls.ground_plane(0)[0, 0]) == 2


def test_asymmetric_stripline_sees_both_dielectrics():
    # L3 of S-G-S-S-P-S between planes L2 and L5; below it, 0.3 mm at Dk 4.0 and 0.1 mm at
    # Dk 3.0 with the L4 copper between: height 0.4 mm + 35 um, Dk (1.2 + 0.3) / 0.4.
    ls = LayerStack.of([0.1e-3, 0.2e-3, 0.3e-3, 0.1e-3, 0.1e-3], [4.2, 4.4, 4.0, 3.0, 4.2],
                       [CU] * 6, ["signal", "ground", "signal", "signal", "power", "signal"])
    tr = ls.trace(2)
    assert (int(tr.plane_above[0, 0]), int(tr.plane_below[0, 0])) == (1, 4)
    assert tr.height_above[0, 0] == pytest.approx(0.2e-3, rel=1e-12)
    assert tr.er_above[0, 0] == 4.4
    assert tr.height_below[0, 0] == pytest.approx(0.4e-3 + CU, rel=1e-12)
    assert tr.er_below[0, 0] == pytest.approx(1.5e-3 / 0.4e-3, rel=1e-12)


def test_a_batch_of_mixed_layer_counts_equals_each_board_alone():
    boards = [([1.5e-3], [4.5], [CU, CU], ["signal", "ground"]),
              ([0.2e-3, 1.0e-3, 0.2e-3], [4.0, 4.6, 4.0], [CU] * 4,
               ["signal", "power", "ground", "signal"])]
    n_cu = 4
    d = np.zeros((2, n_cu - 1))
    e = np.ones((2, n_cu - 1))
    c = np.zeros((2, n_cu))
    r = np.full((2, n_cu), -1)
    for i, (t, er, cu, roles) in enumerate(boards):
        d[i, :len(t)], e[i, :len(er)], c[i, :len(cu)] = t, er, cu
        r[i, :len(roles)] = [ROLES.index(x) for x in roles]
    batch = LayerStack(d, e, c, r)
    for i, b in enumerate(boards):
        one = LayerStack.of(*b)
        assert batch.via_height(0)[i] == one.via_height(0)[0]
        assert batch.trace_height[i] == one.trace_height[0]
        assert batch.thickness[i] == one.thickness[0]
        assert batch.n_layers[i] == len(b[2])


def test_roles_are_one_list():
    assert Role.__args__ == ROLES  # type: ignore[attr-defined]
