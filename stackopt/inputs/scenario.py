"""Load a scenario file (YAML) into a validated :class:`~stackopt.model.scenario.Scenario`."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

from stackopt.errors import InputError
from stackopt.inputs.sanity import check_scenario
from stackopt.inputs.validate import validate_model
from stackopt.inputs.yamlio import load_yaml
from stackopt.model.costtable import CostTable
from stackopt.model.scenario import Scenario

__all__ = ["load_scenario", "scenario_cost_table", "scenario_cost_table_path", "demo_paths"]


def load_scenario(path: str | Path) -> Scenario:
    """Read and validate a scenario file; errors are one line naming file, line and key."""
    doc = load_yaml(path)
    scenario = validate_model(Scenario, doc)
    check_scenario(scenario, doc)  # physical ranges: errors, and warnings for odd values
    from stackopt.inputs.calibration import with_calibration

    return with_calibration(scenario, path)  # search.calibration: the file, loaded


def scenario_cost_table_path(scenario: Scenario, scenario_path: str | Path) -> Path | None:
    """Path of the cost table the scenario names (relative to the scenario file), or
    ``None``; an error naming the scenario's key if that file does not exist."""
    if not scenario.cost_table:
        return None
    p = Path(scenario.cost_table)
    if not p.is_absolute():
        p = Path(scenario_path).parent / p
    if not p.exists():
        raise InputError(f"cost table {scenario.cost_table!r} not found (looked at {p})",
                         file=scenario_path, key="cost_table",
                         fix="give a path relative to the scenario file, or pass --costs")
    return p


def scenario_cost_table(scenario: Scenario, scenario_path: str | Path) -> CostTable | None:
    """The cost table the scenario names (relative to the scenario file), or ``None``."""
    from stackopt.inputs.costtable import load_cost_table

    p = scenario_cost_table_path(scenario, scenario_path)
    return None if p is None else load_cost_table(p)


def demo_paths() -> tuple[Path, Path]:
    """(scenario, cost table) of the built-in demo shipped inside the package."""
    base = resources.files("stackopt.data")
    return Path(str(base / "demo_scenario.yaml")), Path(str(base / "demo_costs.yaml"))
