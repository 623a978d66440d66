"""The stackup model: derived geometry is computed from the ordered thicknesses (checked by
hand arithmetic written beside each expectation), and bad layers give located errors."""

import pytest
from pydantic import ValidationError

from stackopt.inputs.validate import validate_model
from stackopt.inputs.yamlio import parse_yaml_text
from stackopt.model.stackup import Copper, Dielectric, Stackup

CU = 35e-6


def four_layer(pp=0.19e-3, core=1.0e-3, roles=("signal", "ground", "power", "signal")):
    return Stackup(
        copper=tuple(Copper(thickness=CU, role=r) for r in roles),
        dielectrics=(Dielectric(kind="prepreg", material="2116", thickness=pp, er=4.2),
                     Dielectric(kind="core", material="core-1.0", thickness=core, er=4.5),
                     Dielectric(kind="prepreg", material="2116", thickness=pp, er=4.2)))


def test_z_positions_and_thickness():
    s = four_layer()
    # layer tops: 0; 35u + 190u = 225u; 225u + 35u + 1000u = 1260u; 1260u + 35u + 190u
    assert s.z_top == pytest.approx([0.0, 225e-6, 1260e-6, 1485e-6])
    assert s.thickness == pytest.approx(4 * CU + 2 * 0.19e-3 + 1.0e-3)  # 1.52 mm


def test_plane_distances_and_via_height():
    s = four_layer()
    assert s.plane_distance(0) == (None, pytest.approx(0.19e-3))
    assert s.plane_distance(3) == (pytest.approx(0.19e-3), None)
    assert s.via_height(0) == pytest.approx(0.19e-3)  # to the ground plane on L2
    # ground on L3: the via crosses the prepreg, L2's copper and the core
    s2 = four_layer(roles=("signal", "power", "ground", "signal"))
    assert s2.via_height(0) == pytest.approx(0.19e-3 + CU + 1.0e-3)
    assert s2.reference_plane(0) == 1 and s2.ground_plane(0) == 2


def test_via_span_and_symmetry():
    s = four_layer()
    assert s.via_span(0, 3) == pytest.approx(s.thickness)
    assert s.is_symmetric
    assert not four_layer(roles=("signal", "ground", "power", "signal")).model_copy(
        update={"dielectrics": (four_layer().dielectrics[0], four_layer().dielectrics[1],
                                Dielectric(kind="prepreg", material="106",
                                           thickness=0.05e-3, er=3.7))}).is_symmetric


def test_two_layer_helper():
    s = Stackup.two_layer(1.55e-3)
    assert s.n_layers == 2 and s.via_height(0) == pytest.approx(1.55e-3)
    assert s.thickness == pytest.approx(1.55e-3 + 2 * CU)


def test_wrong_number_of_dielectrics_is_an_error_with_the_fix():
    with pytest.raises(ValidationError, match="need 3 dielectrics"):
        Stackup(copper=tuple(Copper(thickness=CU, role="signal") for _ in range(4)),
                dielectrics=())


def test_frozen():
    s = four_layer()
    with pytest.raises(ValidationError):
        s.copper[0].thickness = 1.0  # type: ignore[misc]


def test_bad_layer_is_located_in_the_file():
    text = ("copper:\n  - {thickness: 1 oz, role: signal}\n  - {thickness: 1 oz, role: ground}\n"
            "dielectrics:\n  - {kind: core, material: x, thickness: -1 mm, er: 4.5}\n")
    with pytest.raises(Exception) as info:
        validate_model(Stackup, parse_yaml_text(text, "s.yaml"))
    msg = str(info.value)
    assert "s.yaml:5" in msg and "dielectrics[0].thickness" in msg and "\n" not in msg


def test_records_top_to_bottom():
    recs = four_layer().to_records()
    assert [r["kind"] for r in recs] == ["copper", "prepreg", "copper", "core", "copper",
                                         "prepreg", "copper"]
    assert recs[2]["role"] == "ground" and recs[3]["er"] == 4.5
