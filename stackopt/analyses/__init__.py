"""Analyses above the search: they consume a problem's evaluation (and re-run only its cheap
parts) and never re-declare its physics. Each module is imported on its own; this package
imports nothing heavy.

- :mod:`~stackopt.analyses.ideal`: the ideal-ground reference.
- :mod:`~stackopt.analyses.robust`: the worst margin over the listed via models, and the
  orchestration of the analyses below for a search's result.
- :mod:`~stackopt.analyses.tolerances`: Monte Carlo over fab and part tolerances (yield,
  controlled-impedance spread).
- :mod:`~stackopt.analyses.limits`: what limits each pick's circuit.
- :mod:`~stackopt.analyses.quantities`: the picks again at other lot sizes (price only).
- :mod:`~stackopt.analyses.fabs`: one scenario against several fabs' cost tables.
"""
