"""Loading shared by the commands: scenario + cost table (demo when none is named)."""

from __future__ import annotations

import hashlib
import re
from dataclasses import dataclass
from pathlib import Path

from stackopt.errors import InputError
from stackopt.model.costtable import CostTable
from stackopt.model.scenario import Scenario


@dataclass(frozen=True)
class Inputs:
    """What a command works on, and where it came from."""

    scenario: Scenario
    table: CostTable
    scenario_path: Path
    table_path: Path
    demo: bool

    def hashes(self) -> dict[str, str]:
        """SHA-256 of each input file (recorded in summary.json)."""
        out = {}
        for key, p in (("scenario", self.scenario_path), ("cost_table", self.table_path)):
            out[key] = hashlib.sha256(p.read_bytes()).hexdigest()
        return out


def load_inputs(scenario: str | None, costs: str | None, calibration: str | None = None
                ) -> Inputs:
    """Scenario and cost table from the command line (built-in demo when none given);
    ``calibration`` (``--calibration``) replaces the scenario's ``search.calibration``."""
    from stackopt.inputs.costtable import load_cost_table
    from stackopt.inputs.scenario import demo_paths, load_scenario, scenario_cost_table_path

    demo = scenario is None
    if scenario is None:
        s_path, demo_costs = demo_paths()
    else:
        s_path, demo_costs = Path(scenario), None
    sc = load_scenario(s_path)
    if calibration is not None:
        from stackopt.inputs.calibration import with_calibration

        sc = with_calibration(sc, s_path, calibration)
    t_path = (Path(costs) if costs is not None
              else scenario_cost_table_path(sc, s_path) or demo_costs)
    if t_path is None:
        raise InputError("no cost table", file=s_path, key="cost_table",
                         fix="name one in the scenario ('cost_table: fab.yaml') or pass "
                         "--costs FILE")
    return Inputs(sc, load_cost_table(t_path), s_path, t_path, demo)


def safe_dirname(name: str) -> str:
    """A folder name from a scenario name (letters, digits, - _ . only)."""
    s = re.sub(r"[^A-Za-z0-9._-]+", "-", name).strip("-.")
    return s[:80] or "scenario"


def table(rows: list[list[str]], header: list[str]) -> str:
    """A plain text table, columns padded."""
    cols = [header, *rows]
    w = [max(len(str(r[i])) for r in cols) for i in range(len(header))]
    lines = ["  ".join(str(c).ljust(w[i]) for i, c in enumerate(r)).rstrip() for r in cols]
    lines.insert(1, "  ".join("-" * x for x in w))
    return "\n".join(lines)
