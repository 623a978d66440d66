"""What the board adds to the circuit: mounted parts, via placement, self-resonance.

Sources: mounted loop = air microstrip over the plane (Hammerstad & Jensen 1980; Paul,
*Inductance: Loop and Partial*, 2010; checked against a field solve in
test_mounting.py); the parallel-resonance impedance of an ideal L || C (elementary
circuit theory); rotation invariance of a physical layout (geometry).
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from stackopt.circuit import GroundBatch, attenuation_db, compile_circuit, solve
from stackopt.circuit.filters import filter_circuit
from stackopt.circuit.grounds import ground_breakdown, ground_inductance_matrix, ground_parts
from stackopt.circuit.placement import place_circuit
from stackopt.errors import InputError
from stackopt.model.circuit import Circuit, FilterSpec
from stackopt.physics.mounting import SIZE_CODES, mount_height, mounted_inductance

F = np.array([1.736e9, 2.604e9])


def _shunt(**part):
    return Circuit(elements=[{"name": "C1", "type": "C", "value": 10e-12,
                              "between": ["in", "gnd"], "ground": "g1", **part}],
                   grounds=[{"name": "g1", "at": [0, 0]}], output="in")


def test_mount_adds_the_loop_and_rises_with_height():
    c = compile_circuit(_shunt(mount="0402"))
    b = GroundBatch.broadcast(height=[0.115e-3, 0.345e-3, 1.5e-3])
    p = ground_parts(c, b)
    length, width, thick = SIZE_CODES["0402"]
    want = mounted_inductance(length, width, mount_height(b.height, b.copper, thick))
    np.testing.assert_allclose(p.mount[:, 0], want, rtol=1e-12)
    assert np.all(np.diff(p.mount[:, 0]) > 0)
    np.testing.assert_allclose(p.matrix[:, 0, 0], p.via[:, 0] + p.trace[:, 0] + want,
                               rtol=1e-12)


def test_measured_mounted_esl_replaces_the_model():
    b = GroundBatch.broadcast(height=[0.115e-3, 1.5e-3])
    c = compile_circuit(_shunt(mounted_esl="0.45 nH"))
    assert np.all(ground_parts(c, b).mount == 0)
    assert c.l[0] == pytest.approx(0.45e-9)
    with pytest.raises(ValueError, match="replaces"):
        _shunt(mounted_esl="0.45 nH", mount="0402")


def test_unknown_size_code_is_an_error():
    with pytest.raises(ValueError, match="unknown part size '0404'.*0402"):
        _shunt(mount="0404")


def test_series_part_mount_in_mna_and_ladder_alike():
    # A mounted series inductor is a terminal of its own; the ABCD cascade and the nodal
    # analysis must agree (two independent solvers of the same network).
    spec = Circuit(elements=[
        {"name": "C1", "type": "C", "value": 4e-12, "between": ["in", "gnd"], "ground": "g1",
         "mount": "0402"},
        {"name": "L2", "type": "L", "value": 10e-9, "between": ["in", "out"], "mount": "0603"},
        {"name": "C3", "type": "C", "value": 4e-12, "between": ["out", "gnd"], "ground": "g2",
         "mount": "0402"}],
        grounds=[{"name": "g1", "at": [0, 0]}, {"name": "g2", "at": [0.05, 0]}])
    c = compile_circuit(spec)
    assert c.n_terminals == 3 and c.n_ground_terminals == 2
    b = GroundBatch.broadcast(height=[0.2e-3, 1.5e-3])
    lad = solve(c, F, b, mutual=False, method="ladder")
    mna = solve(c, F, b, mutual=False, method="mna")
    np.testing.assert_allclose(lad, mna, rtol=1e-9, atol=1e-12)


def test_srf_is_a_parallel_resonance():
    # Ideal L || C: |Z| -> infinity at 1/(2 pi sqrt(LC)); a series element then blocks.
    L, srf = 22e-9, 1.2e9
    spec = Circuit(elements=[{"name": "L1", "type": "L", "value": L, "between": ["in", "out"],
                              "srf": srf, "esr": 1e-3},
                             {"name": "R", "type": "R", "value": 50, "between": ["out", "gnd"]}])
    c = compile_circuit(spec)
    cp = 1 / ((2 * np.pi * srf) ** 2 * L)
    assert c.names[-1] == "L1.srf" and 1 / c.d[-1].real == pytest.approx(cp)
    f = np.array([0.3e9, srf])
    att = attenuation_db(solve(c, f))[0]
    assert att[1] > att[0] + 40


def _rotated(spec: Circuit) -> Circuit:
    gr = [g.model_copy(update={"at": (-g.at[1], g.at[0]), "vias_at": None if g.vias_at is None
                               else tuple((-y, x) for x, y in g.vias_at)}) for g in spec.grounds]
    return spec.model_copy(update={"grounds": tuple(gr)})


@pytest.mark.parametrize("layout", ["row", "zigzag", "explicit"])
def test_rotating_the_board_changes_no_margin(layout):
    spec = filter_circuit(FilterSpec(family="chebyshev", order=7, cutoff=1e9, ripple=0.1,
                                     ground={"trace_length": 0.5e-3, "trace_width": 0.4e-3}),
                          50.0)
    if layout != "row":
        gr = list(spec.grounds)
        gr = [g.model_copy(update={"at": (g.at[0], 2e-3 * (k % 2))}) for k, g in enumerate(gr)]
        if layout == "explicit":
            gr[0] = gr[0].model_copy(update={"vias_at": ((0.0, 0.0), (0.5e-3, 0.7e-3))})
        spec = spec.model_copy(update={"grounds": tuple(gr)})
    b = GroundBatch.broadcast(height=[0.115e-3, 0.345e-3, 1.5e-3], vias=[1, 3, 2],
                              own_vias=[False, True, False], coplanar=[False, False, True])
    a = attenuation_db(solve(compile_circuit(spec), F, b))
    r = attenuation_db(solve(compile_circuit(_rotated(spec)), F, b))
    assert np.max(np.abs(a - r)) < 0.5  # issue contract
    assert np.max(np.abs(a - r)) < 1e-6  # in fact exact: rows turn with the board


def test_coinciding_vias_are_an_error_naming_both():
    spec = Circuit(elements=[
        {"name": "C1", "type": "C", "value": 4e-12, "between": ["in", "gnd"], "ground": "ga"},
        {"name": "L2", "type": "L", "value": 10e-9, "between": ["in", "out"]},
        {"name": "C3", "type": "C", "value": 4e-12, "between": ["out", "gnd"], "ground": "gb"}],
        grounds=[{"name": "ga", "at": [0, 0]}, {"name": "gb", "at": [0.3e-3, 0.0]}])
    with pytest.raises(InputError, match="ga and gb") as err:
        place_circuit(spec, 0.3e-3, 3, 0.1e-3)  # 0.3 mm < drill 0.3 + space 0.1 mm
    assert "\n" not in str(err.value)
    far = spec.model_copy(update={"grounds": (spec.grounds[0], spec.grounds[1].model_copy(
        update={"at": (0.5e-3, 0.0)}))})
    _, notes = place_circuit(far, 0.3e-3, 3, 0.1e-3)  # rows side by side, 0.5 mm apart
    assert notes == ()


def test_generated_filter_is_moved_apart_and_says_so():
    spec = Circuit(filter=FilterSpec(family="chebyshev", order=5, cutoff=1e9, ripple=0.1,
                                     spacing=0.3e-3, ground={}))
    c, notes = place_circuit(spec, 0.3e-3, 3, 0.1e-3)
    assert len(notes) == 1 and "moved apart" in notes[0]
    assert np.min(np.diff(c.conn_xy[:, 0])) > 0.3e-3


def test_breakdown_sums_to_the_diagonal():
    spec = filter_circuit(FilterSpec(family="chebyshev", order=5, cutoff=1e9, ripple=0.1,
                                     ground={"trace_length": 0.5e-3, "trace_width": 0.4e-3},
                                     capacitor={"mount": "0402"}), 50.0)
    c = compile_circuit(spec)
    b = GroundBatch.broadcast(height=[0.2e-3, 1.5e-3])
    rows = ground_breakdown(c, b)
    lg = ground_inductance_matrix(c, b)
    for t, row in enumerate(rows):
        np.testing.assert_allclose(row["total_H"], lg[:, t, t], rtol=1e-12)
        assert np.all(row["mount_H"] > 0) and np.all(row["via_H"] > 0)


def test_eval_json_lists_grounds(tmp_path, capsys):
    from outputs_support import DEMO, run

    from stackopt.cli.main import main
    from stackopt.outputs.exports import selected_yaml

    p = tmp_path / "sel.yaml"
    p.write_text(selected_yaml(run()))
    assert main(["eval", str(DEMO), "--stackup", str(p), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["grounds"] and set(out["grounds"][0]) == {"name", "via_H", "trace_H",
                                                        "mount_H", "total_H"}
    assert isinstance(out["mutual_guard_active"], bool)
