"""Cost: panelization and batched pricing of candidate boards from a fab's ``CostTable``.

>>> from stackopt.inputs.costtable import load_demo_cost_table
>>> from stackopt.model.costtable import BoardOrder
>>> table = load_demo_cost_table()
>>> order = BoardOrder(width="50 mm", height="40 mm", quantity=10)
>>> batch = PriceBatch.broadcast(layers=[2, 4], material_counts=[0] * 14,
...                              copper=35e-6, min_drill=0.3e-3, thickness=1.6e-3,
...                              min_dielectric=0.2e-3)
>>> r = price(table, order, batch)
>>> bool(r.unit_cost[1] > r.unit_cost[0])
True
"""

from stackopt.cost.batch import PriceBatch
from stackopt.cost.panel import boards_per_panel, grid_count, panel_share
from stackopt.cost.pricing import ITEMS, VIOLATIONS, PriceResult, material_price_vector, price

__all__ = ["PriceBatch", "PriceResult", "price", "material_price_vector", "boards_per_panel",
           "grid_count", "panel_share", "ITEMS", "VIOLATIONS"]
