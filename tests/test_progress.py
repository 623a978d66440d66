"""Progress of the tolerance Monte Carlo: reported through the library's hook (the shape
of the search's: ``progress(done, total)``), drawn by the CLI only on a terminal."""

from __future__ import annotations

import numpy as np
from outputs_support import DEMO

import stackopt


def test_monte_carlo_reports_every_build_through_the_hook():
    calls: list[tuple[int, int]] = []
    res = stackopt.optimize(DEMO, monte_carlo_progress=lambda d, t: calls.append((d, t)))
    assert calls
    done = [d for d, _ in calls]
    total = [t for _, t in calls]
    assert done == sorted(done) and total == sorted(total)  # grows, never goes back
    assert all(0 < d <= t for d, t in calls)
    assert done[-1] == total[-1]  # every build announced was solved
    # one solve per distinct (circuit input, build): at most candidates x samples
    samples = res.problem.scenario.search.robustness.samples
    sampled = int(np.isfinite(res.yields).sum())
    assert 0 < total[-1] <= sampled * samples


def test_no_progress_when_stderr_is_not_a_terminal(tmp_path, capsys):
    # pytest's captured stderr is not a terminal: nothing may be drawn there
    from stackopt.cli.main import main

    assert main(["optimize", str(DEMO), "--out", str(tmp_path / "o")]) == 0
    err = capsys.readouterr().err
    assert "Monte Carlo" not in err and "searching" not in err and "\r" not in err
