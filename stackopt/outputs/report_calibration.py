"""The report's calibration section: which model was calibrated to which measured
coupons, by what factor, and how well one factor explains every coupon."""

from __future__ import annotations

from typing import TYPE_CHECKING

from stackopt.outputs.facts import mm, plural
from stackopt.units import format_quantity as fq

if TYPE_CHECKING:
    from stackopt.search.results import Result

__all__ = ["calibration_section", "calibration_note"]


def _ref(result: Result):
    cal = result.problem.scenario.search.calibration
    return None if cal is None or isinstance(cal, str) else cal


def calibration_note(result: Result) -> str:
    """One clause for the assumptions: '' uncalibrated, else the factor and the file."""
    cal = _ref(result)
    if cal is None:
        return ""
    model = result.problem.scenario.search.via_model
    k = cal.data.factor(model)
    if k is None:
        return (f" (calibration file {cal.file} has no factor for this model: "
                "uncalibrated)")
    return (f", calibrated to {plural(len(cal.data.coupons), 'measured coupon')}: via self and "
            f"mutual inductances x{k:.3g} (from {cal.file})")


def calibration_section(result: Result) -> list[tuple]:
    """Blocks of the report's calibration section (none when uncalibrated)."""
    cal = _ref(result)
    if cal is None:
        return []
    sc = result.problem.scenario
    model = sc.search.via_model
    d = cal.data
    rec = d.factors.get(model)
    head = (f"The {model} via model was calibrated to {plural(len(d.coupons), 'measured coupon')} "
            f"in {cal.file} (SHA-256 {cal.sha256[:12]}…): its via self and mutual "
            f"inductances are multiplied by {rec.factor:.3g}." if rec else
            f"The calibration file {cal.file} has no coupon that calibrates the {model} "
            "model; it was used uncalibrated.")
    rows = []
    for c in d.coupons:
        mr = c.models.get(model)
        geo = (f"{mm(c.depth_m)} deep, {mm(c.drill_m)} drill, {plural(c.count, 'via')}"
               if c.kind == "via" else f"board: {c.stackup}")
        rows.append([c.name, geo,
                     fq(c.inductance_H, "inductance") if c.inductance_H else "n/a",
                     fq(mr.predicted_H, "inductance") if mr and mr.predicted_H else "n/a",
                     f"{mr.ratio:.3g}" if mr and mr.ratio else "n/a",
                     f"{rec.residuals[c.name]:+.1%}" if rec and c.name in rec.residuals
                     else "n/a", f"{c.rms_error_dB:.2f} dB"])
    text = ("Residual: the coupon's measured / predicted ratio over the one factor, minus 1 "
            "(what the calibrated model still gets wrong there). The model spread below "
            "scales every model by its own factor from the same file"
            + (f"; the model that one factor explains best is {d.best_model}."
               if d.best_model else "."))
    return [("h2", "Calibration to measured coupons"), ("p", head),
            ("table", ["Coupon", "Geometry", "Measured", f"{model} predicted", "Ratio",
                       "Residual", "Fit error (rms)"], rows),
            ("p", text)]
