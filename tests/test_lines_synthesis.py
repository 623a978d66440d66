"""Width synthesis over a batch (stackopt.physics.synthesis)."""

import numpy as np
import pytest

from stackopt.errors import ModelError
from stackopt.physics.synthesis import LINE_KINDS, line_impedance, synthesize_width

KW = {"microstrip": {}, "stripline": {}, "cpwg": {"gap": 0.2e-3},
      "coupled_microstrip": {"s": 0.2e-3}, "coupled_stripline": {"s": 0.2e-3}}
TARGET = {"microstrip": 50.0, "stripline": 50.0, "cpwg": 50.0,
          "coupled_microstrip": 100.0, "coupled_stripline": 100.0}


@pytest.mark.parametrize("kind", LINE_KINDS)
def test_synthesized_width_hits_target(kind):
    # Round trip: the width found gives the target within 0.1 % (brief), here 1e-6.
    h = np.array([0.1e-3, 0.2e-3, 0.5e-3, 1.0e-3, 1.6e-3])[:, None]
    er = np.array([3.0, 4.5])
    zt = TARGET[kind]
    w, ok = synthesize_width(zt, h, er, 35e-6, kind=kind, **KW[kind])
    assert w.shape == ok.shape == (5, 2)
    z = line_impedance(w, h, er, 35e-6, kind=kind, **KW[kind])
    good = ok
    assert good.sum() >= 8
    np.testing.assert_allclose(z[good], zt, rtol=1e-3)
    assert np.all(np.isnan(w[~good]))


@pytest.mark.parametrize("model", ["hammerstad-jensen", "ipc-2141", "wheeler"])
def test_microstrip_models_and_out_of_range(model):
    zt = np.array([5.0, 30.0, 50.0, 90.0, 300.0])
    w, ok = synthesize_width(zt, 0.5e-3, 4.2, 35e-6, w_min=50e-6, w_max=5e-3, model=model)
    # IPC-2141's log form runs down to 0 ohm near 0.8w + t = 5.98h (far outside its
    # stated range), so 5 ohm "exists" there; the other models cannot go that low.
    low_ok = model == "ipc-2141"
    assert ok.tolist() == [low_ok, True, True, True, False]
    assert np.isnan(w[-1]) and (low_ok or np.isnan(w[0]))
    z = line_impedance(w[ok], 0.5e-3, 4.2, 35e-6, model=model)
    np.testing.assert_allclose(z, zt[ok], rtol=1e-3)
    assert np.all((w[ok] >= 50e-6) & (w[ok] <= 5e-3))


def test_limits_are_respected_never_a_clipped_root():
    # 50 ohm on 1.6 mm FR-4 needs ~3 mm; with a 1 mm limit no root exists.
    w, ok = synthesize_width(50.0, 1.6e-3, 4.5, w_max=1e-3)
    assert not ok and np.isnan(w)
    w, ok = synthesize_width([50.0, np.nan, -1.0], 1.6e-3, 4.5)
    assert ok.tolist() == [True, False, False]


def test_batch_equals_scalar_calls():
    rng = np.random.default_rng(7)
    zt = rng.uniform(30, 90, 20)
    h = rng.uniform(0.1e-3, 1.6e-3, 20)
    er = rng.uniform(3, 5, 20)
    w, ok = synthesize_width(zt, h, er, 35e-6)
    for i in range(20):
        wi, oki = synthesize_width(zt[i], h[i], er[i], 35e-6)
        assert oki == ok[i]
        assert wi == pytest.approx(w[i], rel=1e-12)


def test_bad_kind_and_options():
    with pytest.raises(ModelError, match="cpwg"):
        synthesize_width(50.0, 1e-3, 4.5, kind="coplanar")
    with pytest.raises(ModelError, match="gap"):
        synthesize_width(50.0, 1e-3, 4.5, kind="cpwg")
    with pytest.raises(ModelError, match="hammerstad-jensen"):
        synthesize_width(50.0, 1e-3, 4.5, model="hj")
    with pytest.raises(ModelError):
        synthesize_width(50.0, 1e-3, 4.5, kind="stripline", gap=1e-4)
