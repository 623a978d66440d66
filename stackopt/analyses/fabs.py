"""Fab against fab: one scenario searched against several fabs' cost tables in one run.

Each table gets its own search, exactly the one a separate run against that table would
make (same method, seed and budget). The electrical evaluation is shared: every search
uses one :class:`~stackopt.search.memo.ResponseMemo`, so a phenotype (via height, drill,
vias, copper, mitigations …) that two catalogues both reach is solved once; only what a
table alone offers is solved for it.

Money is never mixed silently. Amounts stay in each fab's own currency; fabs are ranked
against each other only where their currencies are equal or joined by exchange rates the
user gives (``USD/EUR=0.92``: one US dollar costs 0.92 euro), and the comparison says which
rates it used and which fabs it could not rank against which.
"""

from __future__ import annotations

import hashlib
import math
import re
import unicodedata
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from stackopt.analyses.quantities import QuantitySweep
from stackopt.errors import InputError
from stackopt.model.costtable import CostTable
from stackopt.model.scenario import Scenario
from stackopt.model.searchspec import Method
from stackopt.search.memo import ResponseMemo
from stackopt.search.results import Result

__all__ = ["Rate", "Rates", "parse_rate", "load_rates", "check_rates", "fab_folders",
           "FabRun", "FabComparison", "compare_fabs", "RANK_PICK"]

#: The pick fabs are ranked by: what each charges for a board that works.
RANK_PICK = "cheapest_meeting_requirements"
_PAIR = re.compile(r"^\s*([A-Za-z]{3})\s*/\s*([A-Za-z]{3})\s*$")
#: Folder names Windows refuses whatever the extension (common practice, no source).
_RESERVED = {"con", "prn", "aux", "nul", *(f"com{i}" for i in range(1, 10)),
             *(f"lpt{i}" for i in range(1, 10))}


@dataclass(frozen=True)
class Rate:
    """One exchange rate: one ``base`` costs ``value`` ``quote``; ``source`` names where
    it was given (``--rate`` or ``rates.yaml: rates.USD/EUR``)."""

    base: str
    quote: str
    value: float
    source: str

    @property
    def pair(self) -> str:
        """``"USD/EUR"``."""
        return f"{self.base}/{self.quote}"


def _rate(pair: str, value: object, source: str) -> Rate:
    m = _PAIR.match(pair)
    if not m:
        raise ValueError(f"{pair!r} is not a currency pair; write it as two three-letter "
                         "codes, e.g. USD/EUR=0.92 (one USD costs 0.92 EUR)")
    base, quote = m[1].upper(), m[2].upper()
    if base == quote:
        raise ValueError(f"{pair} converts a currency to itself; name two currencies")
    try:
        x = float(str(value).strip()) if not isinstance(value, bool) else math.nan
    except ValueError:
        x = math.nan
    if not math.isfinite(x) or x <= 0:
        raise ValueError(f"rate {value!r} for {base}/{quote} is not a positive number; "
                         f"give how many {quote} one {base} costs, e.g. {base}/{quote}=0.92")
    return Rate(base, quote, x, source)


def parse_rate(text: str) -> Rate:
    """``"USD/EUR=0.92"`` as a :class:`Rate` (one USD costs 0.92 EUR).

    Raises
    ------
    ValueError
        ``"message; fix"``.
    """
    pair, sep, value = str(text).partition("=")
    if not sep:
        raise ValueError(f"{text!r} has no '='; write a rate as USD/EUR=0.92 (one USD "
                         "costs 0.92 EUR)")
    return _rate(pair, value, "--rate")


def load_rates(path: str | Path) -> list[Rate]:
    """Rates from a small YAML file: ``rates: {USD/EUR: 0.92, GBP/EUR: 1.17}``.

    Raises
    ------
    InputError
        Not such a file, or a bad pair or value (naming the file and the key).
    """
    from stackopt.inputs.yamlio import load_yaml

    doc = load_yaml(path)
    data = doc.data
    if not isinstance(data, dict) or set(data) != {"rates"} or not isinstance(
            data["rates"], dict) or not data["rates"]:
        raise doc.error("expected one key 'rates' mapping currency pairs to rates",
                        ["rates"], "write e.g. 'rates: {USD/EUR: 0.92}'")
    out = []
    for pair, value in data["rates"].items():
        try:
            out.append(_rate(str(pair), value, f"{doc.file}: rates.{pair}"))
        except ValueError as exc:
            msg, _, fix = str(exc).partition("; ")
            raise doc.error(msg, ["rates", str(pair)], fix or None) from None
    return out


@dataclass(frozen=True)
class Rates:
    """The exchange rates in use, checked against the tables' currencies."""

    given: tuple[Rate, ...] = ()

    def factor(self, frm: str, to: str) -> float | None:
        """Amount in ``to`` of one ``frm`` through the given rates (directly, inverted or
        chained); ``None`` when no rate joins them."""
        if frm == to:
            return 1.0
        edges: dict[str, list[tuple[str, float]]] = {}
        for r in self.given:
            edges.setdefault(r.base, []).append((r.quote, r.value))
            edges.setdefault(r.quote, []).append((r.base, 1.0 / r.value))
        seen, todo = {frm: 1.0}, [frm]
        while todo:  # breadth first over a handful of currencies
            cur = todo.pop(0)
            for nxt, v in edges.get(cur, ()):
                if nxt not in seen:
                    seen[nxt] = seen[cur] * v
                    todo.append(nxt)
        return seen.get(to)


def check_rates(rates: Sequence[Rate], currencies: Sequence[str]) -> Rates:
    """The rates, refused where they name a currency no table uses or contradict each
    other (the same pair twice with different values, or a pair and its inverse that do
    not multiply to one, within 1e-9).

    Raises
    ------
    InputError
        Naming the rate's source and the fix.
    """
    used = sorted(set(currencies))
    seen: dict[tuple[str, str], Rate] = {}
    for r in rates:
        for c in (r.base, r.quote):
            if c not in used:
                raise InputError(f"{r.pair}: no cost table is priced in {c} (the tables use "
                                 f"{', '.join(used)})", key=r.source,
                                 fix="give rates between the tables' currencies only")
        for key, v in (((r.base, r.quote), r.value), ((r.quote, r.base), 1.0 / r.value)):
            old = seen.get(key)
            if old is not None:
                ov = old.value if (old.base, old.quote) == key else 1.0 / old.value
                if not math.isclose(ov, v, rel_tol=1e-9):
                    raise InputError(f"{r.pair}={r.value:g} contradicts {old.pair}="
                                     f"{old.value:g}", key=r.source,
                                     fix="give each pair of currencies one rate")
        seen[(r.base, r.quote)] = r
    return Rates(tuple(rates))


def fab_folders(names: Sequence[str]) -> list[str]:
    """A folder name per fab name: ASCII letters, digits, ``-``, ``_`` and ``.`` only
    (accents dropped, other characters as ``-``), never a name Windows reserves, unique
    even on a file system that ignores letter case; a name with no ASCII letter left
    becomes ``fab-<hash>`` (stable for the name)."""
    out: list[str] = []
    taken: set[str] = set()
    for name in names:
        ascii_ = unicodedata.normalize("NFKD", name).encode("ascii", "ignore").decode()
        s = re.sub(r"[^A-Za-z0-9._-]+", "-", ascii_).strip("-._")[:60].strip("-._")
        if not re.search(r"[A-Za-z0-9]", s):
            s = "fab-" + hashlib.sha256(name.encode("utf-8")).hexdigest()[:8]
        if s.lower().split(".")[0] in _RESERVED:
            s = "fab-" + s
        base, k = s, 2
        while s.lower() in taken:
            s = f"{base}-{k}"
            k += 1
        taken.add(s.lower())
        out.append(s)
    return out


@dataclass(frozen=True, eq=False)
class FabRun:
    """One fab's search: its table, where its result goes, and (optionally) its cost
    against quantity."""

    table: CostTable
    folder: str
    source: str  # the table's file name, or "" for a table given as a model
    result: Result
    sweep: QuantitySweep | None = None

    @property
    def name(self) -> str:
        """The fab's name as its table gives it."""
        return self.table.fab

    @property
    def currency(self) -> str:
        """The table's currency."""
        return self.table.currency


@dataclass(frozen=True, eq=False)
class FabComparison:
    """Several fabs' searches of one scenario, and the rates to compare them."""

    scenario: Scenario
    runs: tuple[FabRun, ...]
    rates: Rates
    memo: ResponseMemo

    def groups(self) -> list[list[int]]:
        """Runs that can be ranked together (currencies equal or joined by rates), in
        the order the tables were given."""
        out: list[list[int]] = []
        for k, run in enumerate(self.runs):
            for g in out:
                if self.rates.factor(run.currency, self.runs[g[0]].currency) is not None:
                    g.append(k)
                    break
            else:
                out.append([k])
        return out

    def reference(self, group: Sequence[int]) -> str:
        """The currency a group is ranked in: that of its first table."""
        return self.runs[group[0]].currency

    def converted(self, k: int, amount: float, to: str) -> float:
        """``amount`` of run ``k``'s currency in currency ``to`` (a currency its group is
        joined to by the rates)."""
        f = self.rates.factor(self.runs[k].currency, to)
        if f is None:
            raise ValueError(f"no rate joins {self.runs[k].currency} and {to}")
        return amount * f

    def ranking(self) -> list[tuple[str, list[int], list[int], list[int]]]:
        """Per group: (reference currency, its runs, those ranked by the converted unit
        cost of their cheapest board meeting every requirement (ties: lead time, then the
        order given), those with no such board)."""
        out = []
        for g in self.groups():
            cur = self.reference(g)
            ok, none = [], []
            for k in g:
                r = self.runs[k].result
                i = r.picks.get(RANK_PICK)
                if i is None:
                    none.append(k)
                else:
                    ev = r.evaluation
                    ok.append((self.converted(k, float(ev.unit_cost[i]), cur),
                               float(ev.lead_time_days[i]), k))
            out.append((cur, g, [k for *_, k in sorted(ok)], none))
        return out


def compare_fabs(scenario: Scenario, tables: Sequence[tuple[CostTable, str]], *,
                 rates: Sequence[Rate] = (), seed: int | None = None,
                 method: Method | None = None, budget: int | None = None,
                 quantities: Sequence[int] | None = None,
                 memo: ResponseMemo | None = None) -> FabComparison:
    """Search ``scenario`` against every table.

    Parameters
    ----------
    scenario
        The scenario (the same for every fab).
    tables
        ``(cost table, its file name)`` per fab, in the order they were given.
    rates
        Exchange rates (checked by :func:`check_rates`).
    seed, method, budget
        As for :func:`stackopt.optimize`, the same for every fab.
    quantities
        Lot sizes for a cost-against-quantity sweep per fab (optional).
    memo
        Responses shared by every search (default: a new one).

    Raises
    ------
    InputError
        Fewer than two tables, or a bad rate.
    """
    from stackopt.analyses.quantities import quantity_sweep
    from stackopt.search.api import optimize

    if len(tables) < 2:
        raise InputError("comparing fabs needs two or more cost tables", key="--costs",
                         fix="give --costs once per fab")
    checked = check_rates(rates, [t.currency for t, _ in tables])
    memo = memo if memo is not None else ResponseMemo()
    folders = fab_folders([t.fab for t, _ in tables])
    runs = []
    for (table, source), folder in zip(tables, folders, strict=True):  # a few fabs
        result = optimize(scenario, table, seed=seed, method=method, budget=budget,
                          memo=memo)
        sweep = None
        if quantities:
            sweep = quantity_sweep(scenario, table, quantities, seed=seed, method=method,
                                   budget=budget, memo=memo, main=result)
        runs.append(FabRun(table, folder, source, result, sweep))
    return FabComparison(scenario, tuple(runs), checked, memo)
