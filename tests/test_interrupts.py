"""All or nothing under signals: ``optimize`` interrupted at the search, while staging and
during the swap leaves ``--out`` holding the complete previous or the complete new result,
never a mix, and no staging folder. Each phase is hit deterministically through the
``STACKOPT_TEST_PAUSE`` hook (see :mod:`stackopt.outputs.resultdir`). POSIX only.
"""

from __future__ import annotations

import os
import shutil
import signal
import subprocess
import sys
from pathlib import Path

import pytest

from stackopt.outputs.resultdir import MANIFEST, write_result

ROOT = Path(__file__).resolve().parent.parent
SCENARIO = str(ROOT / "scenarios" / "two_layer_only.yaml")
COSTS = str(ROOT / "cost_tables" / "quickturn.yaml")

pytestmark = pytest.mark.skipif(os.name != "posix", reason="POSIX signals")


def _cmd(out: Path, seed: int) -> list[str]:
    return [sys.executable, "-m", "stackopt", "optimize", SCENARIO, "--costs", COSTS,
            "--out", str(out), "--force", "--quiet", "--seed", str(seed)]


def _env(**extra: str) -> dict[str, str]:
    env = dict(os.environ)
    env.pop("STACKOPT_TEST_PAUSE", None)
    env.pop("STACKOPT_TEST_NO_EXCHANGE", None)
    env.update(extra)
    return env


def _tree(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): p.read_bytes()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def _leftovers(parent: Path) -> list[str]:
    return [p.name for p in parent.iterdir() if ".stackopt-" in p.name]


@pytest.fixture(scope="module")
def results(tmp_path_factory):
    """The complete result of seed 1 (the 'previous' one) and of seed 2 (the 'new' one)."""
    base = tmp_path_factory.mktemp("results")
    trees = {}
    for seed in (1, 2):
        subprocess.run(_cmd(base / f"s{seed}", seed), check=True, env=_env())
        trees[seed] = _tree(base / f"s{seed}")
    assert trees[1] != trees[2]  # the two results are told apart by their bytes
    return base, trees


def _interrupt(tmp_path, results, phase: str, sig: int, **env: str):
    base, trees = results
    out = tmp_path / "out"
    shutil.copytree(base / "s1", out)
    (out / "notes.txt").write_text("mine\n")  # a file stackopt did not write
    proc = subprocess.Popen(_cmd(out, 2), stderr=subprocess.PIPE, text=True,
                            env=_env(STACKOPT_TEST_PAUSE=phase, **env))
    assert proc.stderr is not None
    line = proc.stderr.readline()
    assert line.strip() == f"stackopt-test: paused at {phase.split(':')[0]}", line
    proc.send_signal(sig)
    err = proc.stderr.read()
    rc = proc.wait(timeout=60)
    tree = _tree(out)
    assert tree.pop("notes.txt") == b"mine\n"  # never touched
    old = {k: v for k, v in trees[1].items()}
    new = {k: v for k, v in trees[2].items()}
    assert tree in (old, new)
    assert _leftovers(tmp_path) == []
    assert err.count("\n") == 1 and err.startswith("stackopt: interrupted")
    assert rc == 128 + sig
    return tree == new, err


@pytest.mark.slow
@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM])
@pytest.mark.parametrize("phase", ["search", "staging"])
def test_interrupt_before_swap_keeps_previous_result(tmp_path, results, phase, sig):
    is_new, err = _interrupt(tmp_path, results, phase, sig)
    assert not is_new
    assert "previous contents" in err and "intact" in err


@pytest.mark.slow
@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM])
def test_interrupt_during_swap_gives_complete_new_result(tmp_path, results, sig):
    is_new, err = _interrupt(tmp_path, results, "swap:1", sig)
    assert is_new and "new result was complete" in err


@pytest.mark.slow
def test_interrupt_between_two_renames_is_held(tmp_path, results):
    """Without the atomic exchange the two renames run with the signals held."""
    is_new, err = _interrupt(tmp_path, results, "swap-between:1", signal.SIGTERM,
                             STACKOPT_TEST_NO_EXCHANGE="1")
    assert is_new and "new result was complete" in err


@pytest.mark.slow
def test_kill_between_two_renames_is_repaired_by_next_run(tmp_path, results):
    """SIGKILL cannot be held: the next run puts the previous result back first."""
    base, trees = results
    out = tmp_path / "out"
    shutil.copytree(base / "s1", out)
    proc = subprocess.Popen(_cmd(out, 2), stderr=subprocess.PIPE, text=True,
                            env=_env(STACKOPT_TEST_PAUSE="swap-between",
                                     STACKOPT_TEST_NO_EXCHANGE="1"))
    assert proc.stderr is not None
    assert "paused at swap-between" in proc.stderr.readline()
    proc.kill()
    proc.wait(timeout=60)
    assert not out.exists()  # the window a kill -9 can hit on the fallback path
    write_result(tmp_path / "other", {"a.txt": b"x"})  # unrelated folder: nothing moves
    from stackopt.outputs.resultdir import check_out_dir

    check_out_dir(out, force=True)  # what every run does first
    assert _tree(out) == trees[1]
    assert _leftovers(tmp_path) == []


def test_force_leaves_no_stale_files(tmp_path):
    """A rerun whose result has fewer files (no ladder) removes the earlier extra ones."""
    out = tmp_path / "o"
    write_result(out, {"summary.json": b"1", "mitigations.csv": b"old",
                       "stackups/s1.yaml": b"a", "stackups/s2.yaml": b"b"})
    (out / "stackups" / "user.txt").write_text("kept")
    (out / "mine").mkdir()
    (out / "mine" / "x").write_text("kept")
    write_result(out, {"summary.json": b"2", "stackups/s1.yaml": b"c"}, force=True)
    assert _tree(out) == {"summary.json": b"2", "stackups/s1.yaml": b"c", MANIFEST: (
        out / MANIFEST).read_bytes(), "stackups/user.txt": b"kept", "mine/x": b"kept"}
    assert _leftovers(tmp_path) == []


def test_force_on_folder_from_before_the_manifest(tmp_path):
    """Without a manifest, the names earlier versions wrote count as stackopt's own."""
    out = tmp_path / "o"
    out.mkdir()
    (out / "mitigations.csv").write_text("old")
    (out / "keep.txt").write_text("user")
    write_result(out, {"summary.json": b"2"}, force=True)
    assert sorted(p.name for p in out.iterdir()) == [MANIFEST, "keep.txt", "summary.json"]


def test_foreign_files_are_hard_links_not_copies(tmp_path):
    out = tmp_path / "o"
    write_result(out, {"a.txt": b"1"})
    (out / "user.bin").write_bytes(b"u")
    inode = (out / "user.bin").stat().st_ino
    write_result(out, {"a.txt": b"2"}, force=True)
    assert (out / "user.bin").stat().st_ino == inode


def test_result_names_must_stay_inside(tmp_path):
    from stackopt.errors import OutputError

    for bad in ("../x", "/etc/x", "a//b", MANIFEST, ""):
        with pytest.raises(OutputError):
            write_result(tmp_path / "o", {bad: b"x"})
    assert not (tmp_path / "o").exists()


def test_failed_write_leaves_folder_as_it_was(tmp_path, monkeypatch):
    from stackopt.errors import OutputError
    from stackopt.outputs import resultdir

    out = tmp_path / "o"
    write_result(out, {"a.txt": b"1"})

    def boom(*a, **k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(resultdir, "_swap", boom)
    with pytest.raises(OutputError, match="as it was"):
        write_result(out, {"a.txt": b"2", "b.txt": b"3"}, force=True)
    assert (out / "a.txt").read_bytes() == b"1" and not (out / "b.txt").exists()
    assert _leftovers(tmp_path) == []


@pytest.mark.slow
def test_force_rerun_four_layer_only_drops_the_ladder_files(tmp_path):
    """The reported case: a four-layer-only rerun kept the old mitigations.csv/.png."""
    import yaml

    from stackopt.cli.main import main

    out = tmp_path / "out"
    assert main(["optimize", SCENARIO, "--costs", COSTS, "--out", str(out), "--quiet"]) == 0
    assert (out / "mitigations.csv").is_file()
    data = yaml.safe_load(Path(SCENARIO).read_text(encoding="utf-8"))
    data.pop("cost_table")
    data["space"].update(layers=[4], mitigations=[])
    four = tmp_path / "four.yaml"
    four.write_text(yaml.safe_dump(data), encoding="utf-8")
    assert main(["optimize", str(four), "--costs", COSTS, "--out", str(out), "--quiet",
                 "--force"]) == 0
    assert not (out / "mitigations.csv").exists() and not (out / "mitigations.png").exists()
    import json

    assert json.loads((out / "summary.json").read_text())["mitigation_ladder"] is None
    assert _leftovers(tmp_path) == []


def test_out_that_holds_the_working_folder_is_refused(tmp_path, monkeypatch):
    from stackopt.errors import OutputError
    from stackopt.outputs.resultdir import check_out_dir

    (tmp_path / "w").mkdir()
    monkeypatch.chdir(tmp_path / "w")
    for out in (".", str(tmp_path)):
        with pytest.raises(OutputError, match="current folder"):
            check_out_dir(out, force=True)
    assert check_out_dir("results") == tmp_path / "w" / "results"


def test_force_refuses_a_large_foreign_tree(tmp_path, monkeypatch):
    from stackopt.errors import OutputError
    from stackopt.outputs import resultdir

    monkeypatch.setattr(resultdir, "MAX_FOREIGN", 5)
    out = tmp_path / "proj"
    out.mkdir()
    for k in range(30):  # more than 5 beyond the 15 names earlier versions wrote
        (out / f"src{k}.c").write_text("x")
    with pytest.raises(OutputError, match="more than 5 files"):
        write_result(out, {"a.txt": b"1"}, force=True)
    assert len(list(out.iterdir())) == 30 and not (out / "a.txt").exists()
