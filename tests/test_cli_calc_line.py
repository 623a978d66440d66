"""``stackopt calc line`` (stackopt.cli.calc_line)."""

import json

import pytest

from stackopt.cli.main import main
from stackopt.physics.coplanar import cpwg
from stackopt.physics.lines import microstrip, stripline


def _json(capsys, *argv):
    assert main(["calc", "line", *argv, "--json"]) == 0
    out = capsys.readouterr().out
    assert out.count("\n") == 1
    return json.loads(out)


def test_microstrip_50_ohm_on_fr4_is_about_3_mm(capsys):
    # 50 ohm on 1.6 mm FR-4 (er 4.5, 1 oz) is about 3 mm wide: common practice, no source.
    r = _json(capsys, "--type", "microstrip", "--height", "1.6mm", "--er", "4.5",
              "--target", "50")
    assert {"z0_ohm", "width_m", "eps_eff"} <= r.keys()
    assert r["z0_ohm"] == pytest.approx(50.0, rel=1e-4)
    assert 2.8e-3 < r["width_m"] < 3.2e-3
    assert r["model"] == "hammerstad-jensen" and r["copper_m"] == pytest.approx(35e-6)
    z, e = microstrip(r["width_m"], 1.6e-3, 4.5, 35e-6)
    assert r["eps_eff"] == pytest.approx(float(e))


@pytest.mark.parametrize("width", ["0.19mm", "7.5mil", "0.0075in", "0.0001905"])
def test_units_at_the_edge(capsys, width):
    r = _json(capsys, "--type", "microstrip", "--height", "0.2mm", "--er", "4.2",
              "--width", width, "--model", "wheeler", "--copper", "0.5oz")
    assert r["width_m"] == pytest.approx(0.19e-3, rel=0.003)
    z, _ = microstrip(r["width_m"], 0.2e-3, 4.2, r["copper_m"], "wheeler")
    assert r["z0_ohm"] == pytest.approx(float(z))


def test_stripline_height_is_plane_spacing_and_eps_is_er(capsys):
    r = _json(capsys, "--type", "stripline", "--height", "0.5mm", "--er", "4.2",
              "--width", "0.15mm", "--copper", "17um")
    assert r["eps_eff"] == 4.2
    assert r["z0_ohm"] == pytest.approx(float(stripline(0.15e-3, 0.5e-3, 4.2, 17e-6)))


def test_cpwg_needs_gap_and_uses_it(capsys):
    r = _json(capsys, "--type", "cpwg", "--height", "0.063in", "--er", "4.5", "--gap",
              "0.2mm", "--width", "1mm")
    z, e = cpwg(1e-3, 0.2e-3, 0.063 * 0.0254, 4.5, 35e-6)
    assert r["z0_ohm"] == pytest.approx(float(z)) and r["eps_eff"] == pytest.approx(float(e))
    assert r["gap_m"] == pytest.approx(0.2e-3)


def test_human_table(capsys):
    assert main(["calc", "line", "--type", "microstrip", "--height", "1.6mm", "--er", "4.5",
                 "--target", "50ohm"]) == 0
    out = capsys.readouterr().out
    assert "mm" in out and "50 ohm" in out and "hammerstad-jensen" in out


BAD = [
    ["--type", "cpwg", "--height", "1.6mm", "--er", "4.5", "--width", "1mm"],  # no gap
    ["--type", "microstrip", "--height", "1.6mm", "--er", "4.5", "--target", "300"],
    ["--type", "microstrip", "--height", "1.6mm", "--er", "40", "--width", "1mm"],
    ["--type", "microstrip", "--height", "1.6mm", "--er", "nan", "--width", "1mm"],
    ["--type", "microstrip", "--height", "1.6mm", "--er", "0.5", "--width", "1mm"],
    ["--type", "microstrip", "--height", "0mm", "--er", "4.5", "--width", "1mm"],
    ["--type", "microstrip", "--height", "1.6mm", "--er", "4.5", "--width", "nan"],
    ["--type", "microstrip", "--height", "1.6furlong", "--er", "4.5", "--width", "1mm"],
    ["--type", "microstrp", "--height", "1.6mm", "--er", "4.5", "--width", "1mm"],
    ["--type", "microstrip", "--height", "1.6mm", "--er", "4.5"],  # no width/target
    ["--type", "microstrip", "--height", "1.6mm", "--er", "4.5", "--width", "1mm",
     "--target", "50"],
    ["--type", "microstrip", "--height", "1.6mm", "--er", "4.5", "--width", "1mm",
     "--model", "hj"],
    ["--type", "microstrip", "--height", "1.6mm", "--er", "4.5", "--width", "1mm",
     "--copper=-1um"],
    ["--type", "stripline", "--height", "0.2mm", "--er", "4.5", "--width", "0.1mm",
     "--copper", "0.3mm"],
    ["--type", "stripline", "--height", "0.5mm", "--er", "4.5", "--width", "0.1mm",
     "--gap", "0.1mm"],
    ["--type", "stripline", "--height", "0.5mm", "--er", "4.5", "--width", "0.1mm",
     "--model", "wheeler"],
    ["--type", "microstrip", "--height", "1.6mm", "--er", "4.5", "--target", "50ohm",
     "--json", "--width"],
]


@pytest.mark.parametrize("argv", BAD)
def test_bad_input_is_one_line_exit_2(capsys, argv):
    assert main(["calc", "line", *argv]) == 2
    cap = capsys.readouterr()
    assert cap.out == ""
    assert cap.err.count("\n") == 1 and cap.err.startswith("stackopt: error:")
    assert "Traceback" not in cap.err


def test_unreachable_target_message_names_the_option(capsys):
    assert main(["calc", "line", "--type", "microstrip", "--height", "1.6mm", "--er", "4.5",
                 "--target", "300"]) == 2
    err = capsys.readouterr().err
    assert "--target" in err and "no width" in err


def test_help_runs(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["calc", "line", "--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    assert "example" in out and "--target" in out and "--gap" in out
