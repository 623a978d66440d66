"""Batched pricing of N candidate boards from a :class:`CostTable`.

Every item below is a cost per board in the table's currency; ``unit_cost`` is their sum
(in this order) and ``lot_cost = unit_cost * quantity``. With ``b`` boards per panel and
``q`` boards in the lot:

==========================  =================================================  ==========
item                        per board                                          depends on
==========================  =================================================  ==========
``base``                    row(layers, q) / b  (per_panel) or row * area       layers
``materials``               (material_counts @ material_price_vector) / b      counts
``copper``                  (outer * adder(copper) + inner * adder(inner)) / b  layers, Cu
``drill``                   adder(min_drill) / b                               min_drill
``impedance_control`` ...   used * (per_panel / b + per_lot / q)               flag
``non_standard_thickness``  off-standard * (per_panel / b + per_lot / q)       thickness
``setup``                   setup(layers) / q                                  layers
==========================  =================================================  ==========

For an exact search: every item is a function of one decision (or of the layer count and
one decision), so the unit cost is *additive*: ``materials`` is linear in the catalogue
counts (``material_price_vector(table) / b`` per ply or core), the others are table
look-ups. Every item is >= 0 and non-increasing in ``q``; ``base``, ``copper`` and
``setup`` are non-decreasing in the layer count when the table's rows are. Only
``non_standard_thickness`` is not monotone (it depends on the distance of the finished
thickness from the nearest standard one).

Capability limits never raise the price; they come back in ``violations`` (name ->
(N,) float >= 0, 0 = within the limit, else how far beyond it as a fraction of the limit;
1.0 for something the fab does not offer at all). Names: ``max_layers``,
``layer_count_offered``, ``min_trace``, ``min_space``, ``min_dielectric``, ``min_drill``,
``max_aspect_ratio``, ``max_copper``, ``max_thickness`` and ``<feature>_not_offered``.
The set of names is the same for every table. Look-ups: a layer count without its own
row is priced at the next larger priced count (the largest if above all); a foil weight
at the lightest listed weight it does not exceed by more than ``COPPER_SLACK`` (the
heaviest if above all); a drill at the row with the largest ``min_drill`` not above it
(the smallest row if below all).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from stackopt.cost.batch import PriceBatch
from stackopt.cost.panel import boards_per_panel
from stackopt.errors import InputError
from stackopt.model.costtable import FEATURES, BoardOrder, CostTable

__all__ = ["ITEMS", "VIOLATIONS", "COPPER_SLACK", "PriceResult", "price", "material_price_vector"]

#: Breakdown items, in summation order.
ITEMS = ("base", "materials", "copper", "drill", *FEATURES, "setup")
#: Violation names (the same for every table).
VIOLATIONS = ("max_layers", "layer_count_offered", "min_trace", "min_space", "min_dielectric",
              "min_drill", "max_aspect_ratio", "max_copper", "max_thickness",
              *(f"{f}_not_offered" for f in FEATURES))
_REL = 1e-9  # relative slack for values that sit exactly on a limit
#: A foil up to 10 % heavier than a listed weight is priced as that weight (35 um = 1 oz);
#: roughly the foil-weight tolerance, from memory (common practice, no source).
COPPER_SLACK = 0.10


@dataclass(frozen=True)
class PriceResult:
    """Prices of N candidates (table currency, per board unless named ``lot``)."""

    unit_cost: np.ndarray
    lot_cost: np.ndarray
    lead_time_days: np.ndarray
    items: dict[str, np.ndarray]
    violations: dict[str, np.ndarray]
    boards_per_panel: int
    panels: int
    quantity: int
    currency: str

    @property
    def feasible(self) -> np.ndarray:
        """(N,) bool: every capability limit met."""
        return ~np.any(np.stack(list(self.violations.values())) > 0, axis=0)

    def breakdown(self, i: int) -> list[tuple[str, float]]:
        """Itemised unit cost of candidate ``i``; the amounts sum to ``unit_cost[i]``."""
        return [(name, float(self.items[name][i])) for name in ITEMS]

    def violated(self, i: int) -> dict[str, float]:
        """Return the limits candidate ``i`` breaks, with the fraction by which it breaks them."""
        return {k: float(v[i]) for k, v in self.violations.items() if v[i] > 0}


def material_price_vector(table: CostTable) -> np.ndarray:
    """(M,) price per panel of one ply / one core of each catalogue item.

    Column order is ``table.materials_list()``. The ``materials`` item of a board is
    ``material_counts @ material_price_vector(table) / boards_per_panel``, exactly.
    """
    return np.array([m.per_panel for m in table.materials_list()], dtype=float)


def _over(value, limit, slack=_REL):
    """Fraction by which ``value`` exceeds a maximum ``limit`` (0 within ``slack``)."""
    value = np.asarray(value, dtype=float)
    return np.where(value > limit * (1 + slack), (value - limit) / limit, 0.0)


def _under(value, limit):
    """Fraction by which ``value`` falls short of a minimum ``limit`` (0 within; NaN -> 0)."""
    value = np.asarray(value, dtype=float)
    return np.where(value < limit * (1 - _REL), (limit - value) / limit, 0.0)


def _layer_rows(table: CostTable, layers: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    counts = np.asarray(table.base_price.layer_counts)
    row = np.minimum(np.searchsorted(counts, layers, side="left"), len(counts) - 1)
    return counts, row


def _copper_rows(table: CostTable, cu: np.ndarray) -> np.ndarray:
    weights = np.array([c.weight for c in table.copper])
    idx = np.searchsorted(weights, cu / (1 + COPPER_SLACK), side="left")  # listed weight up
    return np.minimum(idx, len(weights) - 1)


def price(table: CostTable, order: BoardOrder, batch: PriceBatch) -> PriceResult:
    """Price a batch of N candidate boards (vectorized; no loop over candidates).

    Parameters
    ----------
    table : CostTable
        The fab's prices and limits.
    order : BoardOrder
        Board outline and lot quantity.
    batch : PriceBatch
        N candidates; ``material_counts`` has one column per catalogue item.

    Raises
    ------
    InputError
        The board does not fit the panel, or the batch's catalogue width is wrong.

    """
    cat = table.materials_list()
    if batch.material_counts.shape[1] != len(cat):
        raise ValueError(f"material_counts has {batch.material_counts.shape[1]} columns; "
                         f"the table's catalogue has {len(cat)} items")
    b = int(boards_per_panel(table.panel, order.width, order.height))
    if b < 1:
        raise InputError(f"a {order.width * 1e3:g} x {order.height * 1e3:g} mm board does not "
                         f"fit the {table.fab} panel ({table.panel.usable_width * 1e3:g} x "
                         f"{table.panel.usable_height * 1e3:g} mm usable)", key="board",
                         fix="use a smaller board or a fab with a larger panel")
    q = order.quantity
    n = len(batch)
    layers = batch.layers
    counts, row = _layer_rows(table, layers)
    bp = table.base_price
    col = max(int(np.searchsorted(bp.quantities, q, side="right")) - 1, 0)
    rate = np.array([bp.layers[k][col] for k in counts])[row]
    items: dict[str, np.ndarray] = {}
    items["base"] = rate / b if bp.basis == "per_panel" else rate * order.area
    items["materials"] = batch.material_counts @ material_price_vector(table) / b
    per_layer = np.array([c.per_layer for c in table.copper])
    outer, inner = np.minimum(layers, 2), np.maximum(layers - 2, 0)
    items["copper"] = (outer * per_layer[_copper_rows(table, batch.copper)]
                       + inner * per_layer[_copper_rows(table, batch.inner_copper)]) / b
    drills = np.array([d.min_drill for d in table.drill])
    d_idx = np.maximum(np.searchsorted(drills, batch.min_drill * (1 + _REL), "right") - 1, 0)
    items["drill"] = np.array([d.per_panel for d in table.drill])[d_idx] / b

    cap = table.capabilities
    std = np.array(cap.standard_thicknesses)
    off_std = np.min(np.abs(batch.thickness[:, None] - std) / std, axis=1)
    used = {f: getattr(batch, f) for f in FEATURES if f != "non_standard_thickness"}
    used["non_standard_thickness"] = off_std > cap.thickness_tolerance + _REL
    days = np.array([table.lead_time[k] for k in counts])[row].astype(np.int64)
    vio: dict[str, np.ndarray] = {}
    for f in FEATURES:
        adder = getattr(table.features, f)
        flag = np.asarray(used[f], dtype=bool)
        if adder is None:
            items[f] = np.zeros(n)
            vio[f"{f}_not_offered"] = flag.astype(float)
        else:
            items[f] = flag * (adder.per_panel / b + adder.per_lot / q)
            vio[f"{f}_not_offered"] = np.zeros(n)
            days = days + flag * adder.days
    items["setup"] = np.array([table.setup[k] for k in counts])[row] / q

    max_layers = table.max_layers
    vio["max_layers"] = _over(layers.astype(float), max_layers)
    vio["layer_count_offered"] = (~np.isin(layers, counts) & (layers <= max_layers)) * 1.0
    vio["min_trace"] = _under(batch.min_trace, cap.min_trace)
    vio["min_space"] = _under(batch.min_space, cap.min_space)
    vio["min_dielectric"] = _under(batch.min_dielectric, cap.min_dielectric)
    vio["min_drill"] = _under(batch.min_drill, cap.min_drill)
    vio["max_aspect_ratio"] = _over(batch.thickness / batch.min_drill, cap.max_aspect_ratio)
    heaviest = table.copper[-1].weight
    vio["max_copper"] = _over(np.maximum(batch.copper, np.where(inner > 0, batch.inner_copper,
                                                                0.0)), heaviest,
                               slack=COPPER_SLACK)
    vio["max_thickness"] = (np.zeros(n) if cap.max_thickness is None
                            else _over(batch.thickness, cap.max_thickness))

    unit = np.zeros(n)
    for name in ITEMS:
        unit = unit + items[name]
    return PriceResult(unit_cost=unit, lot_cost=unit * q, lead_time_days=days, items=items,
                       violations={k: vio[k] for k in VIOLATIONS}, boards_per_panel=b,
                       panels=-(-q // b), quantity=q, currency=table.currency)
