"""Scenario builders shared by the tests: an edited copy of a demo scenario or cost table,
and the shunt-via probe (one 100 pF capacitor to ground through one via). The demo files
are invented data."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

import yaml

ROOT = Path(__file__).resolve().parents[1]
TWO = ROOT / "scenarios" / "two_layer_only.yaml"
TABLE = ROOT / "cost_tables" / "quickturn.yaml"


def edited_copy(tmp_path: Path, name: str, source: Path,
                edit: Callable[[dict[str, Any]], object]) -> Path:
    """``source`` (a scenario or cost table YAML) loaded, its ``cost_table`` dropped,
    changed in place by ``edit`` and written as ``tmp_path / name`` (keys in file order)."""
    data = yaml.safe_load(source.read_text(encoding="utf-8"))
    data.pop("cost_table", None)
    edit(data)
    p = tmp_path / name
    p.write_text(yaml.safe_dump(data, sort_keys=False, allow_unicode=True), encoding="utf-8")
    return p


def shunt_via_problem(tmp_path: Path, required_db: float, robustness: dict, layers: int = 2,
                      table: Path = TABLE):
    """One 100 pF shunt capacitor through one ground via on a ``layers``-layer board,
    ``required_db`` wanted at 6 GHz: above its series resonance the attenuation falls as
    the via (the dielectric under the top copper) gets thicker. Parts have no tolerance,
    so only the board's tolerances move a build."""
    from stackopt.inputs.costtable import load_cost_table
    from stackopt.inputs.scenario import load_scenario
    from stackopt.search.problem import Problem

    def edit(d):
        d["circuit"] = {"z0": "50 ohm", "input": "a", "output": "b", "elements": [
            {"name": "C1", "type": "C", "value": "100 pF", "between": ["a", "gnd"],
             "ground": "g1", "tolerance": 0},
            {"name": "R1", "type": "R", "value": "0 ohm", "between": ["a", "b"],
             "tolerance": 0}],
            "grounds": [{"name": "g1", "at": ["0 mm", "0 mm"]}]}
        d["requirements"] = [{"frequency": "6 GHz", "min_attenuation": f"{required_db} dB"}]
        d["lines"] = []
        d["space"] = {"layers": [layers], "copper": ["1 oz"], "drills": ["0.3 mm"],
                      "vias_per_ground": [1]}
        d["search"] = {"objective": "margin", "robustness": robustness}
    sc = edited_copy(tmp_path, f"shunt{layers}-{required_db:.6f}.yaml", TWO, edit)
    return Problem(load_scenario(sc), load_cost_table(table))
