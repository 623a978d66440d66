"""Analyses above the search: they consume a problem's evaluation and never re-declare its
physics (ideal-ground reference, and the robustness, tolerance, limits, sweeps, fab
comparison and calibration analyses)."""
