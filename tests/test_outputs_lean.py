"""The candidates table is written in row blocks by a fast row formatter; its text must be
what pandas' own CSV writer gives for the same table (pandas is the reference)."""

from __future__ import annotations

import io
import math

import numpy as np
import pandas as pd
import pytest

from stackopt.outputs import exports
from tests.outputs_support import run


def pandas_csv(df: pd.DataFrame) -> str:
    """The reference: pandas.DataFrame.to_csv with the cell neutralisation applied."""
    out = df.copy()
    for col in out.columns:
        if out[col].dtype == object or pd.api.types.is_string_dtype(out[col]):
            out[col] = out[col].map(exports.csv_safe)
    out.columns = [exports.csv_safe(str(c)) for c in out.columns]
    return out.to_csv(index=False, lineterminator="\n", float_format="%.10g")


def ours(df: pd.DataFrame) -> str:
    """Our formatter on the same columns."""
    return exports._csv_text({c: df[c].to_numpy() for c in df.columns})


def test_formatter_equals_pandas_on_awkward_cells():
    df = pd.DataFrame({
        "id": ["C00001", "a,b", 'say "hi"', "line\nbreak", "=1+2", "Tiefpass für 2,4 GHz",
               "", None],
        "x": [1.0, -0.5, 1e-12, 123456789.123, np.inf, -np.inf, np.nan, 0.1 + 0.2],
        "n": np.arange(8, dtype=np.int64) - 3,
        "ok": [True, False] * 4,
        "y": np.linspace(0, 1, 8),
        "t,comma": ["x"] * 8,
    })
    assert ours(df) == pandas_csv(df)


@pytest.mark.parametrize("block", [7, 1000, 10**6])
def test_candidates_csv_in_blocks_equals_the_whole_table(block, monkeypatch):
    result = run()
    monkeypatch.setattr(exports, "CSV_BLOCK", block)
    text = exports.candidates_csv(result)
    assert text == pandas_csv(result.table)
    # and the values are the evaluation's own (read back independently)
    back = pd.read_csv(io.StringIO(text))
    ev = result.evaluation
    assert len(back) == result.n
    assert np.allclose(back["unit_cost"], ev.unit_cost, rtol=1e-9)
    assert np.allclose(back["margin_dB"], ev.margin, rtol=1e-9)
    assert (back["on_front"].to_numpy() == result.on_front).all()
    assert list(back["id"][:3]) == result.ids[:3]


def test_front_csv_rows_are_the_front_by_cost():
    result = run()
    text = exports.front_csv(result)
    assert text == pandas_csv(result.frame(np.asarray(result.front_order)))
    back = pd.read_csv(io.StringIO(text))
    assert list(back["id"]) == [result.ids[i] for i in result.front_order]
    assert all(math.isclose(a, b, rel_tol=1e-9) for a, b in
               zip(back["unit_cost"], result.evaluation.unit_cost[result.front_order],
                   strict=True))


def test_slot_names_of_the_whole_batch_match_each_candidate_in_words():
    # the batch lookup (one code per slot) against the per-candidate description, which
    # reads each slot's option list directly
    r = run()
    sp = r.problem.space
    names = sp.slot_names(r.candidates)
    top = sp.slot_names(r.candidates, 0)
    for i in np.random.default_rng(3).choice(r.n, size=60, replace=False).tolist():
        mats = sp.describe(r.candidates, i)["materials"]
        assert [x for x in names[i] if x] == mats
        assert top[i] == mats[0]


def test_formatter_equals_pandas_on_a_column_of_few_values():
    # few distinct values take the formatted-once path: -0.0, NaN and inf keep their text
    vals = np.array([0.0, -0.0, np.nan, np.inf, 35e-6, 1.6e-3, 0.1 + 0.2])
    rng = np.random.default_rng(5)
    df = pd.DataFrame({"x": rng.choice(vals, size=400),
                       "n": np.arange(400, dtype=np.int64),
                       "k": rng.integers(-3, 3, 400),  # few distinct integers
                       "u": rng.integers(0, 2**63, 400, dtype=np.uint64) // 2**40 * 2**40,
                       "b": rng.random(400) < 0.3})
    text = ours(df)
    assert text == pandas_csv(df)
    assert "-0," in text and ",\n" not in text.splitlines()[0]


def test_a_record_is_made_once_and_each_caller_gets_its_own_copy():
    # Result.record keeps the records it made (the summary, the stackup files and the
    # comparisons read the same boards); a caller changing its copy changes no other
    from stackopt.search.records import candidate_record

    r = run()
    i = int(r.front_order[0])
    a = r.record(i)
    a["id"] = "changed"
    a["stackup"].clear()
    b = r.record(i)
    assert b == candidate_record(r, i) and b["id"] == r.ids[i] and b["stackup"]
    assert r.record(i, check_lines=True) == candidate_record(r, i, check_lines=True)


@pytest.mark.parametrize("scenario", ["harmonic_lowpass", "two_layer_only", "consumer_emi"])
def test_mitigations_csv_equals_pandas_on_the_ladders_frame(scenario):
    # written a part at a time without a data frame; pandas' concat of the parts (a
    # column a part lacks is missing there) and its CSV writer are the reference
    from tests.outputs_support import ROOT

    ladder = run(ROOT / "scenarios" / f"{scenario}.yaml").ladder
    assert exports.mitigations_csv(ladder) == pandas_csv(ladder.frame())


@pytest.mark.parametrize("values", [
    np.array([3, 1, 3, 2, 1, 7], dtype=np.int64),
    np.array([0.5, -0.0, 0.0, np.nan, 0.5, np.nan]).view(np.int64),
    np.array(["b", "a", "b", None, "c", "a"], dtype=object),
    np.zeros(0, dtype=np.int64)])
def test_factorize_equals_pandas(values):
    from stackopt.rows import factorize

    codes, uniques = factorize(values)
    ref_codes, ref_uniques = pd.factorize(values, use_na_sentinel=False)
    assert codes.tolist() == ref_codes.tolist()

    def missing_as_none(v):  # pandas gives NaN for a missing text, we keep None
        return None if v is None or (isinstance(v, float) and v != v) else v

    assert [missing_as_none(v) for v in uniques] == [missing_as_none(v) for v in ref_uniques]
