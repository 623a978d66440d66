"""``stackopt calc line`` (stackopt.cli.calc_line)."""

import json

import pytest
from test_fieldsolve import _cohn_coupled  # Cohn 1955, written out with scipy

from stackopt.cli.main import main
from stackopt.physics.coplanar import cpwg
from stackopt.physics.coupled import coupled_microstrip
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


# ------------------------------------------------------------ pairs, offset, field solver
def test_diff_microstrip_modes_are_kirschning_jansen(capsys):
    r = _json(capsys, "--type", "diff-microstrip", "--height", "0.1mm", "--er", "4.2",
              "--width", "0.12mm", "--spacing", "0.15mm")
    m = coupled_microstrip(0.12e-3, 0.15e-3, 0.1e-3, 4.2, 35e-6)  # Kirschning & Jansen 1984
    assert r["solver"] == "closed-form"
    assert r["z_odd_ohm"] == pytest.approx(float(m["z_odd"]))
    assert r["z_even_ohm"] == pytest.approx(float(m["z_even"]))
    assert r["z_diff_ohm"] == 2 * r["z_odd_ohm"] and r["z_common_ohm"] == r["z_even_ohm"] / 2
    assert r["eps_eff"] == r["eps_odd"] == pytest.approx(float(m["eps_odd"]))
    assert r["z0_ohm"] == pytest.approx(float(microstrip(0.12e-3, 0.1e-3, 4.2, 35e-6)[0]))


def test_target_diff_synthesizes_the_width(capsys):
    r = _json(capsys, "--type", "diff-microstrip", "--height", "0.1mm", "--er", "4.2",
              "--spacing", "0.15mm", "--target-diff", "100")
    assert r["z_diff_ohm"] == pytest.approx(100.0, rel=1e-4)
    back = _json(capsys, "--type", "diff-microstrip", "--height", "0.1mm", "--er", "4.2",
                 "--spacing", "0.15mm", "--width", f"{r['width_m']}")
    assert back["z_diff_ohm"] == pytest.approx(100.0, rel=1e-4)


def test_diff_stripline_thin_is_cohn_exact_both_solvers(capsys):
    # Cohn 1955 at t = 0: the closed form exactly, the field solver within 0.5 %
    even, odd = _cohn_coupled(0.1e-3, 0.2e-3, 0.4e-3, 4.2)
    args = ("--type", "diff-stripline", "--height", "0.4mm", "--er", "4.2", "--width",
            "0.1mm", "--spacing", "0.2mm", "--copper", "0")
    cf = _json(capsys, *args)
    assert cf["z_odd_ohm"] == pytest.approx(odd, rel=1e-9)
    assert cf["z_even_ohm"] == pytest.approx(even, rel=1e-9)
    fs = _json(capsys, *args, "--solver", "field")
    assert fs["solver"] == "field"
    assert fs["z_odd_ohm"] == pytest.approx(odd, rel=5e-3)
    assert fs["z_diff_ohm"] == pytest.approx(2 * odd, rel=5e-3)
    assert fs["eps_eff"] == pytest.approx(4.2)


def test_offset_stripline(capsys):
    r = _json(capsys, "--type", "stripline", "--height", "0.5mm", "--offset", "0.1mm",
              "--er", "4.2", "--width", "0.15mm")
    assert r["z0_ohm"] == pytest.approx(float(stripline(0.15e-3, 0.5e-3, 4.2, 35e-6, 1e-4)))
    assert r["z_diff_ohm"] is None and r["offset_m"] == pytest.approx(1e-4)
    down = _json(capsys, "--type", "stripline", "--height", "0.5mm", "--offset=-0.1mm",
                 "--er", "4.2", "--width", "0.15mm", "--solver", "field")
    up = _json(capsys, "--type", "stripline", "--height", "0.5mm", "--offset", "0.1mm",
               "--er", "4.2", "--width", "0.15mm", "--solver", "field")
    # mirror symmetry of the cross-section (one Dk): up and down give the same line; the
    # Wadell closed form is a few per cent high off centre (docs/models.md)
    assert down["z0_ohm"] == pytest.approx(up["z0_ohm"], rel=2e-3)
    assert 0.0 < r["z0_ohm"] / up["z0_ohm"] - 1.0 < 0.03


def test_field_solver_with_solder_mask_lowers_z(capsys):
    args = ("--type", "microstrip", "--height", "0.1mm", "--er", "4.2", "--width", "0.18mm",
            "--solver", "field")
    bare, masked = _json(capsys, *args), _json(capsys, *args, "--mask", "20um")
    assert masked["z0_ohm"] < bare["z0_ohm"] and masked["eps_eff"] > bare["eps_eff"]
    assert masked["mask_m"] == pytest.approx(20e-6) and bare["mask_m"] is None


BAD_PAIRS = [
    ["--type", "diff-microstrip", "--height", "0.1mm", "--er", "4.2", "--width", "0.1mm"],
    ["--type", "diff-microstrip", "--height", "0.1mm", "--er", "4.2", "--spacing", "0.1mm",
     "--target", "50"],
    ["--type", "microstrip", "--height", "0.1mm", "--er", "4.2", "--width", "0.1mm",
     "--spacing", "0.1mm"],
    ["--type", "microstrip", "--height", "0.1mm", "--er", "4.2", "--target-diff", "100"],
    ["--type", "microstrip", "--height", "0.1mm", "--er", "4.2", "--width", "0.1mm",
     "--mask", "20um"],
    ["--type", "diff-stripline", "--height", "0.4mm", "--er", "4.2", "--width", "0.1mm",
     "--spacing", "0.1mm", "--offset", "0.05mm"],
    ["--type", "stripline", "--height", "0.4mm", "--er", "4.2", "--width", "0.1mm",
     "--offset", "0.19mm"],
    ["--type", "microstrip", "--height", "0.1mm", "--er", "4.2", "--width", "0.1mm",
     "--offset", "0.01mm"],
    ["--type", "diff-microstrip", "--height", "0.1mm", "--er", "4.2", "--width", "0.1mm",
     "--spacing", "0.1mm", "--solver", "fem"],
]


@pytest.mark.parametrize("argv", BAD_PAIRS)
def test_bad_pair_input_is_one_line_exit_2(capsys, argv):
    assert main(["calc", "line", *argv]) == 2
    cap = capsys.readouterr()
    assert cap.out == "" and cap.err.count("\n") == 1 and "Traceback" not in cap.err


def test_calc_line_starts_without_the_field_solver_or_heavy_libraries():
    import subprocess
    import sys

    probe = ("import sys; from stackopt.cli.main import main; "
             "main(['calc', 'line', '--type', 'microstrip', '--height', '1.6mm', '--er', "
             "'4.5', '--target', '50']); print(sorted(m for m in sys.modules if m in "
             "('scipy', 'pandas', 'pydantic', 'stackopt.physics.fieldsolve')))")
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                         timeout=120).stdout.strip().splitlines()[-1]
    assert out == "[]"


def test_two_dielectric_stripline_from_the_command_line(capsys):
    # a trace on a 0.2 mm core (Dk 4.6) under a 0.3 mm prepreg (Dk 3.9), plane spacing
    # 0.535 mm with 35 um copper: the CLI's field solve against the independent test solver
    # tests/reference/fd2d.py with the same two dielectric rectangles (within 1 %); the
    # closed form takes the thickness-weighted mean Dk (Wadell's offset form)
    from dataclasses import replace

    from reference import fd2d

    w, h1, h2, e1, e2, t = 0.15e-3, 0.2e-3, 0.3e-3, 4.6, 3.9, 35e-6
    b = h1 + h2 + t
    off = h1 + t / 2 - b / 2
    args = ("--type", "stripline", "--height", f"{b * 1e3:.6g}mm", f"--offset={off * 1e3:.6g}mm",
            "--er", str(e1), "--er-above", str(e2), "--width", "0.15mm")
    r = _json(capsys, *args, "--solver", "field")
    base = fd2d.stripline_box(w, b, e1, t, offset=off)
    diel = (fd2d.Rect(0, base.x_max, 0, h1, e1), fd2d.Rect(0, base.x_max, h1, b, e2))
    ref = fd2d.solve_line(replace(base, dielectrics=diel))[0]
    assert r["z0_ohm"] == pytest.approx(ref.z0, rel=0.01)
    assert r["eps_eff"] == pytest.approx(ref.eps_eff, rel=0.01)
    assert r["er_above"] == e2
    cf = _json(capsys, *args)
    er_mean = (e1 * h1 + e2 * (h2 + t)) / b
    assert cf["eps_eff"] == pytest.approx(er_mean)
    assert cf["z0_ohm"] == pytest.approx(float(stripline(w, b, er_mean, t, off)))


@pytest.mark.parametrize("argv,key", [
    (["--type", "microstrip", "--height", "0.2mm", "--er", "4.2", "--er-above", "3.9",
      "--width", "0.3mm"], "--er-above"),
])
def test_two_dielectric_options_only_for_stripline(capsys, argv, key):
    assert main(["calc", "line", *argv]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and key in err
