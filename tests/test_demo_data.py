"""The built-in demo shipped in the package equals the files in scenarios/ and cost_tables/
(invented demo data; this only checks that the copies agree)."""

from pathlib import Path

from stackopt.inputs.scenario import demo_paths, load_scenario

ROOT = Path(__file__).resolve().parent.parent


def test_demo_scenario_matches_scenarios_folder():
    scen, _ = demo_paths()
    shipped = scen.read_text().replace("cost_table: demo_costs.yaml",
                                       "cost_table: ../cost_tables/quickturn.yaml")
    assert shipped == (ROOT / "scenarios" / "harmonic_lowpass.yaml").read_text()


def test_every_demo_scenario_loads_and_is_labelled_invented():
    for p in sorted((ROOT / "scenarios").glob("*.yaml")):
        sc = load_scenario(p)
        assert sc.invented, p
        assert "INVENTED" in p.read_text().splitlines()[0]
