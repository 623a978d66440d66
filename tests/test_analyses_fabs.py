"""Fab against fab (issue 15): two tables in one run give the picks of two separate runs;
currencies are ranked only with user rates; folder names are safe and distinct; bad input
is a one-line error; the multi-fab output is written all or nothing.

Tables are the invented demo tables (``cost_tables/``) and edited copies of them.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

import stackopt
from stackopt.analyses.fabs import (
    Rate,
    Rates,
    check_rates,
    compare_fabs,
    fab_folders,
    parse_rate,
)
from stackopt.cli.main import main
from stackopt.errors import InputError
from stackopt.inputs.costtable import load_cost_table
from stackopt.inputs.scenario import load_scenario

ROOT = Path(__file__).resolve().parents[1]
SCENARIO = ROOT / "scenarios" / "harmonic_lowpass.yaml"
QUICK = ROOT / "cost_tables" / "quickturn.yaml"
VOLUME = ROOT / "cost_tables" / "volume.yaml"


def _copy(tmp: Path, name: str, fab: str | None = None, currency: str | None = None,
          src: Path = QUICK, setup: str | None = None) -> Path:
    """An edited copy of a demo table (its CSV price matrix copied beside it)."""
    text = src.read_text(encoding="utf-8")
    if fab is not None:
        text = re.sub(r"^fab: .*$", f"fab: {json.dumps(fab, ensure_ascii=False)}", text,
                      flags=re.M)
    if currency is not None:
        text = re.sub(r"^currency: .*$", f"currency: {currency}", text, flags=re.M)
    if setup is not None:
        text = re.sub(r"^setup: .*$", f"setup: {setup}", text, flags=re.M)
    for csv in src.parent.glob("*.csv"):
        (tmp / csv.name).write_bytes(csv.read_bytes())
    p = tmp / name
    p.write_text(text, encoding="utf-8")
    return p


def _picks(result) -> dict:
    ev = result.evaluation
    return {k: None if i is None else (result.ids[i], float(ev.unit_cost[i]),
                                       float(ev.lot_cost[i]), int(ev.geometry.layers[i]))
            for k, i in result.picks.items()}


@pytest.fixture(scope="module")
def both():
    sc = load_scenario(SCENARIO)
    tables = [(load_cost_table(QUICK), QUICK.name), (load_cost_table(VOLUME), VOLUME.name)]
    return sc, tables, compare_fabs(sc, tables)


@pytest.mark.slow
def test_two_tables_in_one_run_equal_two_separate_runs(both):
    sc, tables, comp = both
    for run, (table, _) in zip(comp.runs, tables, strict=True):
        alone = stackopt.optimize(sc, table)
        assert _picks(run.result) == _picks(alone)
    # the catalogues overlap electrically: the second fab reused solved responses
    assert comp.memo.reused > 0


def test_different_currencies_are_not_ranked_without_a_rate(both):
    from stackopt.outputs.comparison import comparison_summary, ranking_sentences

    _, _, comp = both
    s = comparison_summary(comp)
    assert {f["currency"] for f in s["fabs"]} == {"EUR", "USD"}
    assert all(f["rank"] is None for f in s["fabs"])
    assert "not ranked against each other" in s["not_ranked"]
    assert any("--rate" in t for t in ranking_sentences(comp))


@pytest.mark.parametrize("rate", [0.92, 2.0])
def test_with_a_rate_the_fabs_are_ranked_in_one_currency(both, rate):
    from stackopt.outputs.comparison import comparison_summary

    sc, tables, comp0 = both
    comp = compare_fabs(sc, tables, rates=[parse_rate(f"USD/EUR={rate}")],
                        memo=comp0.memo)
    s = comparison_summary(comp)
    assert s["not_ranked"] is None and s["rates"][0]["pair"] == "USD/EUR"
    # by hand: the EUR fab as it is, the USD fab's unit cost times the rate
    eur = s["fabs"][0]["cheapest_meeting_requirements"]["unit_cost"]
    usd = s["fabs"][1]["cheapest_meeting_requirements"]["unit_cost"] * rate
    assert s["fabs"][1]["unit_cost_ranked"] == pytest.approx(usd, rel=1e-12)
    want = [1, 2] if eur <= usd else [2, 1]
    assert [f["rank"] for f in s["fabs"]] == want
    assert all(f["ranked_in"] == "EUR" for f in s["fabs"])


def test_rates_invert_and_chain():
    r = Rates((Rate("USD", "EUR", 0.92, "--rate"), Rate("GBP", "USD", 1.25, "--rate")))
    assert r.factor("EUR", "USD") == pytest.approx(1 / 0.92)
    assert r.factor("GBP", "EUR") == pytest.approx(1.25 * 0.92)
    assert r.factor("EUR", "JPY") is None


def test_contradicting_rates_and_unused_currencies_are_refused():
    with pytest.raises(InputError, match="contradicts"):
        check_rates([parse_rate("USD/EUR=0.92"), parse_rate("EUR/USD=1.2")], ["EUR", "USD"])
    check_rates([parse_rate("USD/EUR=0.8"), parse_rate("EUR/USD=1.25")], ["EUR", "USD"])
    with pytest.raises(InputError, match="no cost table is priced in GBP"):
        check_rates([parse_rate("GBP/EUR=1.1")], ["EUR", "USD"])


def test_folder_names_are_safe_and_distinct():
    names = ["Fab A", "fab a", "Fab/A", "Fab\\A", "../../etc", ".", "Müller Leiterplatten",
             "Muller Leiterplatten", "深圳板厂", "深圳二厂", "CON", "nul.txt", "Ωmega PCB",
             "a" * 300]
    folders = fab_folders(names)
    assert len({f.lower() for f in folders}) == len(names)  # distinct, even ignoring case
    for f in folders:
        assert re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9._-]*", f), f
        assert len(f) <= 70 and f.split(".")[0].lower() not in ("con", "nul")
    assert folders[6] == "Muller-Leiterplatten" and folders[7] == "Muller-Leiterplatten-2"
    assert folders[8].startswith("fab-") and folders[8] != folders[9]
    assert fab_folders(["深圳板厂"]) == fab_folders(["深圳板厂"])  # stable


@pytest.mark.slow
def test_cli_writes_every_fab_and_the_comparison(tmp_path, capsys):
    a = _copy(tmp_path, "a.yaml", fab="Leiterplatten Müller / Nord", currency="EUR")
    b = _copy(tmp_path, "b.yaml", fab="深圳板厂", currency="EUR", setup="{2: 5, 4: 10, 6: "
              "20, 8: 30}")
    out = tmp_path / "out"
    assert main(["optimize", str(SCENARIO), "--costs", str(a), "--costs", str(b),
                 "--out", str(out)]) == 0
    text = capsys.readouterr().out
    assert "fab against fab" in text
    s = json.loads((out / "comparison.json").read_text(encoding="utf-8"))
    folders = [f["folder"] for f in s["fabs"]]
    assert folders[0] == "Leiterplatten-Muller-Nord" and folders[1].startswith("fab-")
    for f in s["fabs"]:
        assert (out / f["folder"] / "report.html").is_file()
        assert (out / f["folder"] / "summary.json").is_file()
        for pick in ("cheapest_meeting_requirements", "cheapest_two_layer", "recommended"):
            rec = f[pick]
            assert set(rec) >= {"id", "layers", "unit_cost", "lot_cost", "lead_time_days",
                                "margin_dB"}
    for name in ("comparison.md", "comparison.html", "comparison.png"):
        assert (out / name).stat().st_size > 0
    # one currency: ranked without rates; the table with the lower setup is cheaper
    assert [f["rank"] for f in s["fabs"]] == [2, 1]
    assert "深圳板厂" in (out / "comparison.html").read_text(encoding="utf-8")


def test_bad_fab_inputs_are_one_line_errors(tmp_path, capsys):
    copy = _copy(tmp_path, "copy.yaml")
    bad_rates = tmp_path / "rates.yaml"
    bad_rates.write_text("rates: {USD-EUR: 0.9}\n", encoding="utf-8")
    cases = [
        (["--costs", str(QUICK), "--costs", str(QUICK)], "--costs", "given twice"),
        (["--costs", str(QUICK), "--costs", str(copy)], "--costs", "same contents"),
        (["--costs", str(QUICK), "--costs", str(VOLUME), "--rate", "GBP/EUR=1.1"],
         "--rate", "no cost table is priced in GBP"),
        (["--costs", str(QUICK), "--costs", str(VOLUME), "--rate", "USD/EUR"],
         "--rate", "has no '='"),
        (["--costs", str(QUICK), "--costs", str(VOLUME), "--rate", "USD/EUR=-1"],
         "--rate", "not a positive number"),
        (["--costs", str(QUICK), "--costs", str(VOLUME), "--rates", str(bad_rates)],
         "rates.USD-EUR", "not a currency pair"),
        (["--costs", str(QUICK), "--rate", "USD/EUR=0.9"], "--rate", "two or more"),
    ]
    for extra, key, words in cases:
        out = tmp_path / "o"
        assert main(["optimize", str(SCENARIO), *extra, "--out", str(out)]) == 2, extra
        err = capsys.readouterr().err.strip()
        assert "\n" not in err and key in err and words in err, err
        assert not out.exists()


def test_multi_fab_output_is_all_or_nothing(tmp_path, monkeypatch, capsys):
    import stackopt.outputs.comparison as cmp

    out = tmp_path / "out"
    out.mkdir()
    (out / "keep.txt").write_text("earlier", encoding="utf-8")

    def boom(comp):
        raise RuntimeError("rendering failed")

    monkeypatch.setattr(cmp, "plot_comparison", boom)
    b = _copy(tmp_path, "b.yaml", fab="Second", setup="{2: 5, 4: 10, 6: 20, 8: 30}")
    rc = main(["optimize", str(SCENARIO), "--costs", str(QUICK), "--costs", str(b),
               "--out", str(out), "--force", "--method", "exact"])
    assert rc == 1
    assert sorted(p.name for p in out.iterdir()) == ["keep.txt"]  # nothing half-written
    assert not [p for p in tmp_path.iterdir() if ".stackopt-" in p.name]
