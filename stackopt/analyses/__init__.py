"""Analyses above the search: they consume a problem's evaluation (and re-run only its cheap
parts) and never re-declare its physics. Each module is imported on its own; this package
imports nothing heavy.

- :mod:`~stackopt.analyses.ideal`: the ideal-ground reference.
- :mod:`~stackopt.analyses.quantities`: the picks again at other lot sizes (price only).
- :mod:`~stackopt.analyses.fabs`: one scenario against several fabs' cost tables.
"""
