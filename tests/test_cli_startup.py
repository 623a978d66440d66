"""The command line imports only what the command it runs uses (start-up time).

The calculators and ``--version`` must not pull in the libraries of the search and the
report (pandas, matplotlib, pymoo, pydantic): each is checked in a fresh interpreter,
since this test process has imported everything already.
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

HEAVY = ("pandas", "matplotlib", "pymoo", "pydantic")

PROBE = """
import json, sys
from stackopt.cli.main import main
try:
    rc = main(sys.argv[1:])
except SystemExit as exc:  # --version, --help
    rc = exc.code
print(json.dumps({"rc": rc, "mods": sorted({m.split('.')[0] for m in sys.modules})}),
      file=sys.stderr)
"""


def _imported(*argv: str) -> tuple[int, set[str]]:
    proc = subprocess.run([sys.executable, "-c", PROBE, *argv], capture_output=True,
                          text=True, timeout=120)
    last = proc.stderr.strip().splitlines()[-1]
    out = json.loads(last)
    return out["rc"], set(out["mods"])


@pytest.mark.parametrize("argv", [
    ("calc", "via", "--depth", "0.19mm", "--drill", "0.3mm", "--freq", "800MHz"),
    ("calc", "via", "--depth", "0.19mm", "--drill", "0.3mm", "--json"),
    ("--version",),
    ("--help",),
    ("calc", "--help"),
])
def test_light_commands_import_no_heavy_library(argv):
    rc, mods = _imported(*argv)
    assert rc == 0
    assert not mods & set(HEAVY), sorted(mods & set(HEAVY))


def test_check_does_not_import_plotting_or_search():
    rc, mods = _imported("check", "scenarios/harmonic_lowpass.yaml")
    assert rc == 0
    assert not mods & {"matplotlib", "pymoo", "pandas"}


def test_every_registered_command_still_has_its_options():
    # each command registered in full answers --help with its own options
    from stackopt.cli.main import build_parser
    from stackopt.cli.registry import CALCULATORS, COMMANDS

    for name in COMMANDS:
        text = build_parser([name]).format_help()
        assert name in text
    for name in CALCULATORS:
        parser = build_parser(["calc", name])
        sub = next(a for a in parser._actions if a.dest == "command")
        calc = sub.choices["calc"]
        csub = next(a for a in calc._actions if a.dest == "calculator")
        assert "--json" in csub.choices[name].format_help()


def test_unknown_command_is_a_one_line_error(capsys):
    from stackopt.cli.main import main

    assert main(["optimise"]) == 2
    err = capsys.readouterr().err
    assert "invalid choice" in err and "optimize" in err and len(err.strip().splitlines()) == 1


def test_only_elliptic_designs_import_scipy_signal():
    # scipy.signal takes about 0.7 s to import; a Chebyshev design must not pay for it
    probe = ("import sys, stackopt\n"
             "from stackopt.inputs.scenario import load_scenario\n"
             "from stackopt.circuit.compile import compile_circuit\n"
             "sc = load_scenario(sys.argv[1])\n"
             "compile_circuit(sc.circuit)\n"
             "print('scipy.signal' in sys.modules)")
    proc = subprocess.run([sys.executable, "-c", probe, "scenarios/harmonic_lowpass.yaml"],
                          capture_output=True, text=True, timeout=120)
    assert proc.stdout.strip() == "False", proc.stderr[-2000:]


def test_the_search_and_the_texts_do_not_import_matplotlib_or_pandas():
    # matplotlib, pandas and scipy take about 0.3, 0.15 and 0.1 s to import; the process
    # that searches and writes the tables, the summary and the reports while another
    # draws the figures must not pay for them (scipy: the search and its analyses; the
    # texts' field solves here stand in for the ones the drawing process makes)
    probe = ("import sys, stackopt\n"
             "from stackopt.cli.common import load_inputs\n"
             "from stackopt.outputs import bundle\n"
             "from stackopt.outputs.report import report_html\n"
             "inp = load_inputs(None, None, None)\n"
             "r = stackopt.optimize(inp.scenario, inp.table, seed=1)\n"
             "assert 'scipy' not in sys.modules, 'the search loaded scipy'\n"
             "out = bundle._texts(r, None, None)\n"
             "bundle._tables(r, whole=True)\n"
             "assert b'robust' in out['report.md']\n"
             "report_html(r, {}, None)\n"
             "print(sorted(m for m in sys.modules if m.split('.')[0] in "
             "('matplotlib', 'pandas')))")
    proc = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                          timeout=120)
    assert proc.stdout.strip() == "[]", proc.stderr[-2000:]


def test_the_console_entry_flushes_and_keeps_the_exit_code(capsys):
    # entry() ends the process with os._exit (no interpreter teardown): what main() prints
    # must still all arrive, piped, with main()'s exit code
    from stackopt.cli.main import main

    argv = ["calc", "via", "--depth", "0.19mm", "--drill", "0.3mm", "--json"]
    assert main(argv) == 0
    expected = capsys.readouterr().out
    ok = subprocess.run([sys.executable, "-m", "stackopt", *argv], capture_output=True,
                        text=True, timeout=120)
    assert (ok.returncode, ok.stdout) == (0, expected)
    bad = subprocess.run([sys.executable, "-m", "stackopt", "calc", "via", "--depth", "-1mm",
                          "--drill", "0.3mm"], capture_output=True, text=True, timeout=120)
    assert bad.returncode == 2 and len(bad.stderr.strip().splitlines()) == 1, bad.stderr
    # a reader that stops early: no traceback
    head = subprocess.run(f"'{sys.executable}' -m stackopt calc via --depth 0.19mm "
                          "--drill 0.3mm --json | head -c 1", shell=True, capture_output=True,
                          text=True, timeout=120)
    assert "Traceback" not in head.stderr
