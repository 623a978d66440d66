"""Array behaviour and monotonicity of every line kernel (hypothesis)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stackopt.physics.coplanar import cpwg
from stackopt.physics.coupled import coupled_microstrip, coupled_stripline
from stackopt.physics.lines import MICROSTRIP_MODELS, microstrip, pad_trace_inductance, stripline

# Geometry in the models' common validity range (SI).
h_st = st.floats(0.1e-3, 1.6e-3)
u_st = st.floats(0.1, 10.0)
er_st = st.floats(1.5, 12.0)
step = st.floats(1.01, 1.5)


def _z_microstrip(w, h, er, model="hammerstad-jensen"):
    return microstrip(w, h, er, 35e-6, model)[0]


def _z_stripline(w, h, er):
    return stripline(w, 2 * h + 35e-6, er, 35e-6)


def _z_cpwg(w, h, er):
    return cpwg(w, 0.2e-3, h, er, 17e-6)[0]


KERNELS = {"microstrip": _z_microstrip, "stripline": _z_stripline, "cpwg": _z_cpwg,
           **{f"microstrip-{m}": (lambda w, h, er, m=m: _z_microstrip(w, h, er, m))
              for m in MICROSTRIP_MODELS[1:]}}


@pytest.mark.parametrize("name", list(KERNELS))
@settings(max_examples=60, deadline=None)
@given(h=h_st, u=u_st, er=er_st, f=step)
def test_z0_falls_with_width_rises_with_height_falls_with_er(name, h, u, er, f):
    # Physical monotonicity of any TEM line over a plane (common practice, no source).
    z = KERNELS[name]
    if name == "microstrip-ipc-2141":  # its stated range: 0.1 < w/h < 2
        u = min(u, 2.0)
    w = u * h
    z0 = z(w, h, er)
    assert z(w * f, h, er) < z0
    assert z(w, h * f, er) > z0
    assert z(w, h, er * f) < z0


@settings(max_examples=40, deadline=None)
@given(h=h_st, u=st.floats(0.2, 5.0), g=st.floats(0.2, 5.0), er=er_st)
def test_coupled_modes_bracket_single_line(h, u, g, er):
    # Even/odd ordering, Kirschning & Jansen 1984 / Cohn 1955.
    m = coupled_microstrip(u * h, g * h, h, er, 35e-6)
    z0 = microstrip(u * h, h, er, 35e-6)[0]
    assert m["z_odd"] < z0 < m["z_even"]
    b = 2 * h + 35e-6
    s = coupled_stripline(u * h, g * h, b, er, 35e-6)
    z0s = stripline(u * h, b, er, 35e-6)
    assert s["z_odd"] < z0s < s["z_even"]


def test_arrays_equal_scalar_calls_and_broadcast():
    rng = np.random.default_rng(3)
    n = 12
    h = rng.uniform(0.1e-3, 1.6e-3, n)
    w = h * rng.uniform(0.1, 10, n)
    er = rng.uniform(2, 10, n)
    t = rng.uniform(0, 70e-6, n)
    calls = {
        "microstrip": lambda i: microstrip(w[i], h[i], er[i], t[i]),
        "wheeler": lambda i: microstrip(w[i], h[i], er[i], t[i], "wheeler"),
        "stripline": lambda i: (stripline(w[i], 3 * h[i], er[i], t[i], 0.1 * h[i]),),
        "cpwg": lambda i: cpwg(w[i], 0.3 * h[i], h[i], er[i], t[i] / 4),
        "cmicro": lambda i: tuple(coupled_microstrip(w[i], h[i], h[i], er[i], t[i]).values()),
        "cstrip": lambda i: tuple(coupled_stripline(w[i], h[i], 3 * h[i], er[i], t[i]).values()),
        "pad": lambda i: (pad_trace_inductance(w[i] * 3, w[i], h[i], t[i]),),
    }
    sl = slice(None)
    for name, f in calls.items():
        batch = f(sl)
        for i in range(n):
            single = f(i)
            for a, b in zip(batch, single, strict=True):
                assert np.shape(b) == ()
                assert a[i] == pytest.approx(float(b), rel=1e-12), name
    # broadcasting over a grid: (3, 1) x (4,) -> (3, 4)
    z, e = microstrip(np.array([0.1e-3, 0.3e-3, 1e-3])[:, None], 0.2e-3,
                      np.array([2.0, 3.0, 4.0, 5.0]))
    assert z.shape == e.shape == (3, 4)
    assert cpwg(np.ones((2, 1, 1)) * 1e-3, [1e-4, 2e-4], 1e-3, [[3.0], [4.0], [5.0]])[0].shape \
        == (2, 3, 2)
