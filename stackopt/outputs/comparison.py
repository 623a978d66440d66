"""Fab against fab, for people: ``comparison.json``, ``comparison.md``,
``comparison.html`` and ``comparison.png`` at the top of ``--out``, and each fab's full
result in its own sub-folder — all rendered in memory, then written as one result, all or
nothing (:func:`stackopt.outputs.resultdir.write_result`).
"""

from __future__ import annotations

import json
from typing import TYPE_CHECKING

import numpy as np
from matplotlib.figure import Figure

from stackopt import __version__
from stackopt.analyses.fabs import RANK_PICK, FabComparison
from stackopt.outputs.facts import money
from stackopt.outputs.plots import figure_bytes, new_figure, pick_color, plain, styled
from stackopt.outputs.report_render import render_html, render_markdown
from stackopt.outputs.sweep import label, named_picks

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["COMPARISON_FILES", "COMPARED_PICKS", "comparison_summary",
           "ranking_sentences", "comparison_document", "plot_comparison",
           "render_comparison"]

#: The files at the top of ``--out``.
COMPARISON_FILES = ("comparison.json", "comparison.md", "comparison.html", "comparison.png")
#: The picks compared per fab (labels: :func:`stackopt.outputs.sweep.label`).
COMPARED_PICKS = ("cheapest_meeting_requirements", "cheapest_two_layer", "recommended")
_FIELDS = ("id", "layers", "unit_cost", "lot_cost", "lead_time_days", "margin_dB",
           "meets_requirements")


def _rates_text(comp: FabComparison, source: bool = True) -> str:
    return ", ".join(f"{r.pair} = {r.value:g}" + (f" ({r.source})" if source else "")
                     for r in comp.rates.given)


def comparison_summary(comp: FabComparison) -> dict:
    """``comparison.json``: every fab's compared picks in its own currency, the ranking
    (per group of currencies that rates join) and the rates used."""
    ranking = comp.ranking()
    rank_of: dict[int, tuple[int, str, float]] = {}
    for cur, group, order, _none in ranking:
        if len(group) < 2:  # nothing to rank it against
            continue
        for pos, k in enumerate(order):
            r = comp.runs[k].result
            u = float(r.evaluation.unit_cost[r.picks[RANK_PICK]])
            rank_of[k] = (pos + 1, cur, comp.converted(k, u, cur))
    fabs = []
    for k, run in enumerate(comp.runs):
        r = run.result
        entry: dict = {"name": run.name, "folder": run.folder, "cost_table": run.source,
                       "currency": run.currency}
        for name, i in ((n, named_picks(r)[n]) for n in COMPARED_PICKS):
            entry[name] = None if i is None else {f: r.record(i)[f] for f in _FIELDS}
        rk = rank_of.get(k)
        entry["rank"] = None if rk is None else rk[0]
        entry["ranked_in"] = None if rk is None else rk[1]
        entry["unit_cost_ranked"] = None if rk is None else rk[2]
        fabs.append(entry)
    solved, reused = comp.memo.solved, comp.memo.reused
    return {
        "scenario": comp.scenario.name,
        "quantity": comp.scenario.board.quantity,
        "version": __version__,
        "ranked_by": f"unit_cost of {RANK_PICK}",
        "rates": [{"pair": r.pair, "rate": r.value, "source": r.source}
                  for r in comp.rates.given],
        "fabs": fabs,
        "ranking": [{"currency": cur,
                     "order": [comp.runs[k].folder for k in order],
                     "no_board_meets": [comp.runs[k].folder for k in none]}
                    for cur, _group, order, none in ranking],
        "not_ranked": _not_ranked(comp),
        "shared_evaluation": {"phenotypes_solved": solved, "phenotypes_reused": reused},
    }


def _not_ranked(comp: FabComparison) -> str | None:
    """The sentence saying which currencies are not ranked against each other, or None."""
    groups = comp.groups()
    if len(groups) < 2:
        return None
    curs = [sorted({comp.runs[k].currency for k in g}) for g in groups]
    names = [" and ".join(c) for c in curs]
    a, b = curs[0][0], curs[1][0]
    return (f"Prices in {' / '.join(names)} are not ranked against each other: no exchange "
            f"rate joins them. Give one, e.g. --rate {b}/{a}=<how many {a} one {b} costs>.")


def ranking_sentences(comp: FabComparison) -> list[str]:
    """The answer in words: per group, which fab is cheapest for a board that meets
    every requirement and by how much the others are dearer; what is not ranked."""
    out = []
    q = comp.scenario.board.quantity
    for cur, group, order, none in comp.ranking():
        conv = any(comp.runs[k].currency != cur for k in group)
        at = f" at {_rates_text(comp, source=False)}" if conv else ""
        if order:
            first = comp.runs[order[0]]
            r = first.result
            i = r.picks[RANK_PICK]
            assert i is not None  # ranked runs have the pick (FabComparison.ranking)
            u0 = comp.converted(order[0], float(r.evaluation.unit_cost[i]), cur)
            in_ref = (f" ({money(u0, cur)}{at})" if first.currency != cur else "")
            what = (f"{r.ids[i]} ({int(r.evaluation.geometry.layers[i])} layers), "
                    f"{money(float(r.evaluation.unit_cost[i]), first.currency)} per board"
                    f"{in_ref}, "
                    f"{money(float(r.evaluation.lot_cost[i]), first.currency, 0)} for {q:,}")
            text = (f"{first.name}: the cheapest board meeting every requirement is {what}."
                    if len(group) == 1 else
                    f"Cheapest board meeting every requirement: {first.name}, {what}.")
            for k in order[1:]:
                rk = comp.runs[k].result
                j = rk.picks[RANK_PICK]
                uk = comp.converted(k, float(rk.evaluation.unit_cost[j]), cur)
                pct = f" ({100 * (uk - u0) / u0:.0f} %)" if u0 > 0 else ""
                text += (f" {comp.runs[k].name} costs {money(uk - u0, cur)} more per "
                         f"board{pct}{at}.")
            out.append(text)
        for k in none:
            out.append(f"{comp.runs[k].name}: no board meets every requirement.")
    nr = _not_ranked(comp)
    if nr:
        out.append(nr)
    return out


def _cell(result: Result, i: int | None, cur: str) -> str:
    if i is None:
        return "none"
    ev = result.evaluation
    return (f"{result.ids[i]}, {int(ev.geometry.layers[i])} layers, "
            f"{money(ev.unit_cost[i], cur)}, {ev.margin[i]:+.1f} dB")


def comparison_document(comp: FabComparison) -> list[tuple]:
    """The comparison report as plain-text blocks (see
    :mod:`stackopt.outputs.report_render`)."""
    sc = comp.scenario
    blocks: list[tuple] = [("h1", f"Fab comparison: {sc.name}")]
    if sc.invented or any(run.table.invented for run in comp.runs):
        blocks.append(("note", "Demo data: the scenario and/or cost tables are invented for "
                       "trying the tool; the prices are not a quote from any fab."))
    blocks += [("answer", s) for s in ranking_sentences(comp)]
    rank = {f["folder"]: f["rank"] for f in comparison_summary(comp)["fabs"]}
    rows = []
    for run in comp.runs:
        r, cur = run.result, run.currency
        p = named_picks(r)
        i = p[RANK_PICK]
        ev = r.evaluation
        meet = (["none"] * 6 if i is None else
                [r.ids[i], str(int(ev.geometry.layers[i])), money(ev.unit_cost[i], cur),
                 money(ev.lot_cost[i], cur, 0), f"{ev.lead_time_days[i]:g} days",
                 f"{ev.margin[i]:+.1f} dB"])
        rows.append([run.name, cur, *meet, _cell(r, p["cheapest_two_layer"], cur),
                     _cell(r, p["recommended"], cur),
                     "-" if rank[run.folder] is None else str(rank[run.folder])])
    blocks.append(("table", ["Fab", "Currency", "Cheapest meeting the requirements",
                             "Layers", "Per board", "Lot", "Lead time", "Margin",
                             "Cheapest two-layer", "Recommended", "Rank"], rows))
    if comp.rates.given:
        blocks.append(("p", f"Exchange rates used for the ranking: {_rates_text(comp)}. "
                       "Amounts in the table are in each fab's own currency."))
    else:
        blocks.append(("p", "No exchange rate was given: amounts are in each fab's own "
                       "currency; only fabs of the same currency are ranked together."))
    blocks.append(("img", "comparison", "Cost per board of the compared picks at each fab "
                   "(ranked currencies on one axis, each other currency on its own)."))
    blocks.append(("note", f"One search per fab, each the same as a separate run against "
                   f"that table; the electrical evaluation was shared between them "
                   f"({comp.memo.solved:,} phenotype responses solved, {comp.memo.reused:,} "
                   f"taken from the shared store instead of solved again). Each fab's "
                   f"full result: "
                   + ", ".join(f"{run.folder}/report.html" for run in comp.runs) + "."))
    return blocks


@styled
def plot_comparison(comp: FabComparison) -> Figure:
    """Cost per board of the compared picks, grouped by fab: one panel per group of
    currencies that rates join (amounts converted into the group's currency, the fab's
    own amount written beside each bar)."""
    ranking = comp.ranking()
    fig = new_figure(8.0, 1.6 + 1.1 * len(comp.runs) + 0.6 * len(ranking))
    axes = fig.subplots(len(ranking), 1, squeeze=False)[:, 0]
    names = COMPARED_PICKS
    for ax, (cur, _members, order, none) in zip(axes, ranking, strict=True):
        group = [*order, *none]
        h = 0.8 / len(names)
        for j, n in enumerate(names):
            ys, xs, texts = [], [], []
            for row, k in enumerate(group):
                r = comp.runs[k].result
                i = named_picks(r)[n]
                if i is None:
                    continue
                u = float(r.evaluation.unit_cost[i])
                ys.append(row + (j - (len(names) - 1) / 2) * h)
                x = comp.converted(k, u, cur)
                xs.append(x)
                own = comp.runs[k].currency
                texts.append(f" {r.ids[i]}: {money(u, own)}"
                             + (f" ({money(x, cur)})" if own != cur else ""))
            ax.barh(ys, xs, height=h * 0.9, color=pick_color(j),
                    label=label(n) if ax is axes[0] else None)
            for y, x, t in zip(ys, xs, texts, strict=True):
                ax.text(x, y, plain(t), va="center", fontsize=7)
        ax.set_yticks(np.arange(len(group)))
        ax.set_yticklabels([plain(comp.runs[k].name) for k in group])
        ax.invert_yaxis()
        conv = any(comp.runs[k].currency != cur for k in group)
        ax.set_xlabel(f"Cost per board ({cur}" + (", converted at the given rates)"
                                                   if conv else ")"))
        ax.set_xlim(0, ax.get_xlim()[1] * 1.35)
        if len(ranking) > 1:
            other = "panel" if len(ranking) == 2 else "panels"
            ax.set_title(f"Prices in {cur}: not ranked against the other {other}, no "
                         "exchange rate given", fontsize=8)
    fig.legend(loc="outside lower center", ncols=len(names))
    fig.suptitle(plain(f"Fab against fab — {comp.scenario.name}, "
                       f"{comp.scenario.board.quantity:,} boards"), fontsize=10)
    return fig


def render_comparison(comp: FabComparison, extras: dict[str, dict] | None = None
                      ) -> dict[str, bytes]:
    """Every file of a comparison by path relative to ``--out``: each fab's full result
    (:func:`~stackopt.outputs.bundle.render_all`) under its folder, then the comparison
    files. ``extras`` maps a fab's folder to keys added to its ``summary.json``."""
    from stackopt.outputs.bundle import render_all

    files: dict[str, bytes] = {}
    for run in comp.runs:
        extra = (extras or {}).get(run.folder, {})
        for name, data in render_all(run.result, extra, run.sweep).items():
            files[f"{run.folder}/{name}"] = data
    summary = comparison_summary(comp)
    files["comparison.json"] = (json.dumps(summary, indent=2, ensure_ascii=False,
                                           allow_nan=False) + "\n").encode("utf-8")
    doc = comparison_document(comp)
    png = figure_bytes(plot_comparison(comp), "png")
    files["comparison.md"] = render_markdown(doc, {"comparison": "comparison.png"}
                                             ).encode("utf-8")
    files["comparison.html"] = render_html(doc, {"comparison": png},
                                           title=f"stackopt: fab comparison, "
                                           f"{comp.scenario.name}").encode("utf-8")
    files["comparison.png"] = png
    return files
