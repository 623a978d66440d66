"""The scenario example in docs/scenarios.md loads (a user writes their own from it)."""

import re
from pathlib import Path

from stackopt.inputs.scenario import load_scenario

ROOT = Path(__file__).resolve().parent.parent


def test_scenario_doc_example_loads(tmp_path):
    text = (ROOT / "docs" / "scenarios.md").read_text()
    block = re.search(r"```yaml\n(.*?)```", text, re.S).group(1)
    p = tmp_path / "example.yaml"
    p.write_text(block.replace("../cost_tables/quickturn.yaml",
                               str(ROOT / "cost_tables" / "quickturn.yaml")))
    sc = load_scenario(p)
    assert sc.name == "my-868-filter"
    assert len(sc.requirements) == 3 and sc.space.layers == (2, 4, 6, 8)
