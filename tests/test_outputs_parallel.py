"""Figures drawn on several cores are the same bytes as drawn in one process."""

from __future__ import annotations

import pytest

from stackopt.outputs import parallel
from tests.outputs_support import run


def test_parallel_rendering_is_byte_identical_to_serial(monkeypatch):
    from stackopt.outputs.bundle import render_all

    result = run()
    monkeypatch.setenv("STACKOPT_JOBS", "1")
    serial = render_all(result)
    monkeypatch.setenv("STACKOPT_JOBS", "2")
    if parallel.workers(8) < 2:
        pytest.skip("fork is not available here")
    assert parallel.workers(8) == 2
    par = render_all(result)
    assert list(par) == list(serial)
    assert [k for k in par if par[k] != serial[k]] == []


def test_a_job_error_reaches_the_caller(monkeypatch):
    monkeypatch.setenv("STACKOPT_JOBS", "2")

    def bad() -> bytes:
        raise ValueError("boom")

    with pytest.raises(ValueError, match="boom"):
        parallel.render({"a": lambda: b"x", "b": bad})


def test_meanwhile_runs_in_this_process_beside_the_jobs(monkeypatch):
    import os

    jobs = {"a": lambda: str(os.getpid()).encode(), "b": lambda: str(os.getpid()).encode()}
    for n in ("1", "2"):
        monkeypatch.setenv("STACKOPT_JOBS", n)
        out, mine = parallel.render(jobs, meanwhile=os.getpid)
        assert mine == os.getpid()
        in_parent = {k: v == str(os.getpid()).encode() for k, v in out.items()}
        forked = parallel.workers(2) == 2
        assert in_parent == {"a": not forked, "b": not forked}


def test_jobs_returning_several_files_are_merged_in_order(monkeypatch):
    for n in ("1", "2"):
        monkeypatch.setenv("STACKOPT_JOBS", n)
        out, _ = parallel.render({"a": lambda: {"a.png": b"1", "a.svg": b"2"},
                                  "b": lambda: b"3"})
        assert list(out.items()) == [("a.png", b"1"), ("a.svg", b"2"), ("b", b"3")]


def test_the_candidates_table_in_blocks_on_several_cores_is_the_whole_table(monkeypatch):
    from stackopt.outputs import exports
    from stackopt.outputs.bundle import render_all

    result = run()
    whole = exports.candidates_csv(result)  # one block: the demo is small
    monkeypatch.setattr(exports, "CSV_BLOCK", 997)  # many blocks, the last one short
    assert exports.csv_blocks(result) > 3
    for n in ("1", "2"):
        monkeypatch.setenv("STACKOPT_JOBS", n)
        assert render_all(result)["candidates.csv"] == whole.encode("utf-8")


def _drawer_or_skip(warm=lambda: None):
    from stackopt.outputs.drawer import Drawer

    d = Drawer.start(warm)
    if d is None:
        pytest.skip("fork is not available here")
    return d


def _pid() -> int:
    import os

    return os.getpid()


def _fail(msg: str) -> None:
    raise ValueError(msg)


def test_files_drawn_by_a_drawer_started_before_the_search_are_the_serial_bytes(monkeypatch):
    # The drawer forks before the search and receives the result pickled: every file must
    # still be the bytes one process writes (figures, the candidates table, the report).
    from stackopt.outputs.bundle import render_all, warm

    monkeypatch.setenv("STACKOPT_JOBS", "2")
    drawer = _drawer_or_skip(warm)
    result = run()
    with drawer:
        drawn = render_all(result, drawer=drawer)
    monkeypatch.setenv("STACKOPT_JOBS", "1")
    serial = render_all(result)
    assert list(drawn) == list(serial)
    assert [k for k in drawn if drawn[k] != serial[k]] == []


def test_a_drawer_runs_its_task_elsewhere_and_raises_its_error_here(monkeypatch):
    import os

    monkeypatch.setenv("STACKOPT_JOBS", "2")
    with _drawer_or_skip() as d:
        assert d.submit(_pid)
        assert d.result() != os.getpid()
    with _drawer_or_skip() as d:
        assert d.submit(_fail, "boom")
        with pytest.raises(ValueError, match="boom"):
            d.result()


def test_an_unpicklable_task_is_refused_and_the_caller_does_the_work(monkeypatch):
    monkeypatch.setenv("STACKOPT_JOBS", "2")
    d = _drawer_or_skip()
    assert d.submit(_pid, lambda: None) is False  # a lambda does not pickle
    assert not d._proc.is_alive()  # closed: nothing left behind


def test_closing_a_busy_drawer_ends_it_with_its_workers(monkeypatch):
    import time

    monkeypatch.setenv("STACKOPT_JOBS", "2")
    d = _drawer_or_skip()
    assert d.submit(time.sleep, 60)
    t = time.perf_counter()
    d.close()
    assert time.perf_counter() - t < 10 and not d._proc.is_alive()


def test_one_core_starts_no_drawer(monkeypatch):
    from stackopt.outputs.drawer import Drawer

    monkeypatch.setenv("STACKOPT_JOBS", "1")
    assert Drawer.start(lambda: None) is None


def test_a_drawer_returns_the_values_of_several_tasks_in_order(monkeypatch):
    import os

    monkeypatch.setenv("STACKOPT_JOBS", "2")
    with _drawer_or_skip() as d:
        assert d.submit(_pid) and d.submit(_fail, "second") and d.submit(_pid)
        assert d.result() != os.getpid()
        with pytest.raises(ValueError, match="second"):
            d.result()
    assert not d._proc.is_alive()  # the third value was never collected: ended anyway


def test_field_solves_sent_ahead_give_the_serial_bytes(monkeypatch):
    # The picks' field solves run in the drawer while the analyses run here; the files
    # must be the bytes of one process that solves everything itself.
    import stackopt
    from stackopt.outputs.bundle import Ahead, render_all, warm
    from tests.outputs_support import DEMO

    monkeypatch.setenv("STACKOPT_JOBS", "2")
    drawer = _drawer_or_skip(warm)
    ahead = Ahead(drawer)
    with drawer:
        result = stackopt.optimize(DEMO, searched=ahead)
        drawn = render_all(result, drawer=drawer, ahead=ahead)
    assert result.line_solves  # filled from the other process
    monkeypatch.setenv("STACKOPT_JOBS", "1")
    serial = render_all(run())
    assert list(drawn) == list(serial)
    assert [k for k in drawn if drawn[k] != serial[k]] == []


def test_objects_the_drawer_keeps_are_sent_once(monkeypatch):
    # keep() sends a large part once; a later task that holds the very object sends its
    # name, and the drawer computes with its copy
    import numpy as np

    monkeypatch.setenv("STACKOPT_JOBS", "2")
    big = np.arange(1_000_000, dtype=np.float64)
    with _drawer_or_skip() as d:
        sizes: list[int] = []
        send = d._conn.send_bytes
        monkeypatch.setattr(d._conn, "send_bytes", lambda b: (sizes.append(len(b)), send(b)))
        assert d.keep(big=big)
        assert d.submit(np.sum, big) and d.result() == float(np.sum(big))
        assert d.submit(np.sum, big.copy()) and d.result() == float(np.sum(big))
    assert sizes[0] > 8_000_000 and sizes[1] < 1_000 < 8_000_000 < sizes[2]


def test_a_task_written_in_the_background_does_not_wait_for_a_busy_drawer(monkeypatch):
    # a pipe holds little: a large task sent while the drawer works on another would
    # block the caller; wait=False returns at once and the values still come in order
    import time

    import numpy as np

    monkeypatch.setenv("STACKOPT_JOBS", "2")
    big = np.ones(2_000_000)
    with _drawer_or_skip() as d:
        assert d.submit(time.sleep, 1.0)
        t = time.perf_counter()
        assert d.keep(big=big, wait=False) and d.submit(np.sum, big, wait=False)
        assert d.submit(np.sum, big.copy(), wait=False)
        assert time.perf_counter() - t < 0.5  # did not wait for the sleeping drawer
        assert d.result() is None
        assert d.result() == 2_000_000.0 and d.result() == 2_000_000.0
