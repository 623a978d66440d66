import matplotlib

matplotlib.use("Agg")


# ---- fuzz case counter (tests/test_fuzz_inputs.py) ------------------------------------
import pytest  # noqa: E402

FUZZ_COUNTS = pytest.StashKey[dict]()


@pytest.fixture(scope="session")
def fuzz_counter(request) -> dict:
    """Generated fuzz cases run in this session, by command (printed at the end)."""
    return request.config.stash.setdefault(FUZZ_COUNTS, {})


def pytest_terminal_summary(terminalreporter, exitstatus, config):
    """Print how many generated input cases the fuzz suite ran."""
    counts = config.stash.get(FUZZ_COUNTS, None)
    if counts:
        total = sum(counts.values())
        detail = ", ".join(f"{n} through 'stackopt {k}'" for k, n in sorted(counts.items()))
        terminalreporter.write_line(f"fuzz: {total} generated input cases ({detail})")
