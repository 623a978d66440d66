"""Every violation and constraint code in words: the one table of sentences.

The search reports a broken constraint as a code and an amount (``min_dielectric``:
0.25 means 25 % under the fab's minimum; see :mod:`stackopt.cost.pricing` and
:meth:`stackopt.search.problem.Problem.evaluate_geometry`). The report, the console,
``stackopt eval`` and ``stackopt check`` turn codes into sentences here, and nowhere
else: :data:`SENTENCES` has one entry per code family, each with what is wrong and what
would make the board feasible, with the figures filled in from the candidate and the
limit.

Codes that carry a name (``line_<name>_too_wide``, ``<feature>_not_offered``) map to
their family with :func:`family`.
"""

from __future__ import annotations

import math
import re
from typing import NamedTuple

from stackopt.units import format_quantity as fq

__all__ = ["Sentence", "SENTENCES", "FEATURE_WORDS", "family", "figures", "code_sentence",
           "because", "would_work_if", "rules", "sentence"]

class Sentence(NamedTuple):
    """The words of one code family (lower case, no full stop)."""

    wrong: str  # what is wrong with a candidate
    fix: str  # what would make that candidate feasible
    rule: str  # the constraint itself, for ``stackopt check``


#: Code family -> :class:`Sentence`. Placeholders:
#: ``{value}`` the candidate's figure, ``{limit}`` the limit, ``{by}`` how far beyond it,
#: ``{name}`` / ``{z}`` a line's name and impedance, ``{feature}`` a fab feature in words.
SENTENCES: dict[str, Sentence] = {
    "max_layers": Sentence(
        "the board has {value} copper layers; the fab builds at most {limit}",
        "the fab built {value} layers (it builds at most {limit})",
        "at most {limit} copper layers (the cost table's largest row)"),
    "layer_count_offered": Sentence(
        "the fab's cost table has no price for {value} copper layers",
        "the fab priced {value}-layer boards",
        "only layer counts the cost table prices"),
    "min_trace": Sentence(
        "the narrowest controlled-impedance line is {value} wide, {by} under the fab's "
        "minimum trace of {limit}",
        "the fab could etch {value} traces (its minimum is {limit})",
        "controlled-impedance lines at least {limit} wide (the fab's minimum trace)"),
    "min_space": Sentence(
        "the narrowest gap is {value}, {by} under the fab's minimum space of {limit}",
        "the fab could etch {value} gaps (its minimum is {limit})",
        "gaps at least {limit} (the fab's minimum space)"),
    "min_dielectric": Sentence(
        "the thinnest dielectric is {value}, {by} under the fab's minimum of {limit}",
        "the fab could press a {value} dielectric (its minimum is {limit})",
        "dielectrics at least {limit} thick (the fab's minimum)"),
    "min_drill": Sentence(
        "the drill is {value}, {by} under the fab's smallest drill of {limit}",
        "the fab could drill {value} (its smallest drill is {limit})",
        "drills of at least {limit} (the fab's smallest)"),
    "max_aspect_ratio": Sentence(
        "the board is {value} times as thick as its smallest drill; the fab plates at "
        "most {limit}:1",
        "the fab could plate an aspect ratio of {value}:1 (its limit is {limit}:1)",
        "finished thickness at most {limit} times the smallest drill (plating aspect "
        "ratio)"),
    "max_copper": Sentence(
        "the copper is {value}, heavier than the fab's heaviest foil of {limit}",
        "the fab offered {value} copper (its heaviest is {limit})",
        "copper no heavier than {limit} (the fab's heaviest foil)"),
    "max_thickness": Sentence(
        "the finished board is {value} thick, {by} over the fab's maximum of {limit}",
        "the fab could build {value} boards (its maximum is {limit})",
        "finished thickness at most {limit} (the fab's maximum)"),
    "thickness_window": Sentence(
        "the finished board is {value} thick, outside the scenario's thickness window of "
        "{limit} ({by})",
        "the finished thickness may be {value} (window {limit})",
        "finished thickness within {limit} (the scenario's window)"),
    "line_too_wide": Sentence(
        "the {z} line '{name}' would be {value} wide; the scenario allows at most {limit}",
        "the {z} line '{name}' may be {value} wide (limit {limit})",
        "the {z} line '{name}' at most {limit} wide (the scenario's limit)"),
    "line_unreachable": Sentence(
        "no width between {limit} gives the {z} line '{name}' its impedance on this "
        "dielectric",
        "the {z} line '{name}' had another dielectric under it",
        "the {z} line '{name}' reachable with a width between {limit}"),
    "line_too_narrow": Sentence(
        "the {z} line '{name}' would be {value} wide; the scenario asks for at least {limit}",
        "the {z} line '{name}' may be {value} wide (minimum {limit})",
        "the {z} line '{name}' at least {limit} wide (the scenario's minimum)"),
    "line_no_layer": Sentence(
        "the board has no layer for the {z} line '{name}' (it asks for {limit})",
        "the board had a layer for the {z} line '{name}' ({limit})",
        "a layer for the {z} line '{name}' ({limit})"),
    "not_offered": Sentence(
        "the board needs {feature}, which the fab does not offer",
        "the fab offered {feature}",
        "no {feature} (the fab does not offer it)"),
    "circuit_nonfinite": Sentence(
        "the circuit analysis gave no finite answer for this board (a singular circuit: "
        "check zero-valued parts)",
        "the circuit had no zero-impedance loop",
        "a finite circuit response"),
}

#: Fab features (the cost table's ``features``) in words.
FEATURE_WORDS = {
    "impedance_control": "impedance control (tested coupons)",
    "via_in_pad": "via-in-pad (filled and capped vias)",
    "blind_vias": "blind vias",
    "buried_vias": "buried vias",
    "microvias": "microvias",
    "non_standard_thickness": "a non-standard finished thickness",
}

#: ``line_<name>_<kind>``: a controlled-impedance line's own constraints.
_LINE_CODE = re.compile(r"line_(.+)_(too_wide|too_narrow|unreachable|no_layer)")
_MAX = {"max_layers", "max_aspect_ratio", "max_copper", "max_thickness"}
_MIN = {"min_trace", "min_space", "min_dielectric", "min_drill"}


def family(code: str) -> str:
    """The :data:`SENTENCES` key of a violation code (``line_rf50_too_wide`` ->
    ``line_too_wide``, ``via_in_pad_not_offered`` -> ``not_offered``)."""
    m = _LINE_CODE.fullmatch(code)
    if m:
        return f"line_{m.group(2)}"
    if code.endswith("_not_offered"):
        return "not_offered"
    return code


def _limit(problem, code: str) -> float | None:
    cap = problem.table.capabilities
    if code == "max_layers":
        return float(problem.table.max_layers)
    if code == "max_copper":
        return float(problem.table.copper[-1].weight)
    if code == "max_thickness":
        return None if cap.max_thickness is None else float(cap.max_thickness)
    return float(getattr(cap, code))


def _line(problem, code: str):
    """(scenario line, name in the code, route index or None) of a line code: the route's
    ``rf50@L1`` for a width constraint, the line's ``rf50`` for ``no_layer``."""
    name = _LINE_CODE.fullmatch(code).group(1)  # type: ignore[union-attr]
    for r, rt in enumerate(problem.routes):
        if rt.name == name:
            return problem.scenario.lines[rt.line], name, r
    return next(ln for ln in problem.scenario.lines if ln.name == name), name, None


def figures(problem, ev, i: int, code: str, amount: float) -> dict[str, str]:
    """The placeholders of ``code``'s sentences for candidate ``i`` of evaluation ``ev``
    (``amount``: the code's violation, a fraction beyond the limit; ``ev`` ``None``: the
    limits only, for the rule)."""
    fam = family(code)
    g = ev.geometry if ev is not None else None
    if fam in _MAX | _MIN:
        lim = _limit(problem, fam)
        if lim is None:
            return {"value": "?", "limit": "none", "by": f"{amount:.0%}"}
        val = lim * (1 + amount) if fam in _MAX else lim * (1 - amount)
        if fam == "max_layers":
            return {"value": f"{val:.0f}", "limit": f"{lim:.0f}", "by": f"{val - lim:.0f}"}
        if fam == "max_aspect_ratio":
            return {"value": f"{val:.3g}", "limit": f"{lim:g}", "by": f"{amount:.0%}"}
        return {"value": fq(val, "length"), "limit": fq(lim, "length"),
                "by": fq(abs(val - lim), "length")}
    if fam == "layer_count_offered":
        return {"value": "?" if g is None else f"{int(g.layers[i])}"}
    if fam == "thickness_window":
        lo, hi = problem.scenario.space.thickness.bounds
        t = float(g.thickness[i]) if g is not None else math.nan
        by = (f"{fq(lo - t, 'length')} too thin" if t < lo else
              f"{fq(t - hi, 'length')} too thick" if t > hi else "inside")
        return {"value": fq(t, "length"), "by": by,
                "limit": f"{fq(lo, 'length')} to {fq(hi, 'length')}"}
    if fam.startswith("line_"):
        ln, name, r = _line(problem, code)
        pair = getattr(ln, "differential", None) is not None
        z = getattr(ln, "differential", None) if pair else ln.impedance
        out = {"name": name, "z": f"{z:g} ohm" + (" differential" if pair else "")}
        if fam in ("line_too_wide", "line_too_narrow"):
            lim = ln.max_width if fam == "line_too_wide" else ln.min_width
            w = (float(ev.widths[i, r]) if ev is not None
                 else lim * (1 + amount if fam == "line_too_wide" else 1 - amount))
            out.update(value=fq(w, "length"), limit=fq(lim, "length"),
                       by=fq(abs(w - lim), "length"))
        elif fam == "line_no_layer":
            from stackopt.model.routing import layer_words

            out["limit"] = layer_words(ln.type, ln.layer_rule)
        else:
            from stackopt.search.lineroutes import WIDTH_RANGE

            out["limit"] = f"{fq(WIDTH_RANGE[0], 'length')} and {fq(WIDTH_RANGE[1], 'length')}"
        return out
    if fam == "not_offered":
        f = code[: -len("_not_offered")]
        return {"feature": FEATURE_WORDS.get(f, f.replace("_", " "))}
    return {}


def code_sentence(problem, ev, i: int, code: str, amount: float,
                  part: str = "wrong") -> str:
    """One code in words: ``part`` is ``"wrong"`` (what is wrong with candidate ``i``),
    ``"fix"`` (what would make it feasible) or ``"rule"`` (the constraint). A code without
    an entry falls back to its name (a test forbids that)."""
    entry = SENTENCES.get(family(code))
    if entry is None:
        return f"{code.replace('_', ' ')} ({amount:+.3g})"
    try:
        return getattr(entry, part).format(**figures(problem, ev, i, code, amount))
    except (KeyError, StopIteration, AttributeError, ValueError, TypeError):
        return getattr(entry, part).split("{")[0].strip() or code.replace("_", " ")


def _broken(ev, i: int) -> list[tuple[str, float]]:
    return [(k, float(v[i])) for k, v in ev.violations.items() if v[i] > 0]


def because(problem, ev, i: int) -> list[str]:
    """What keeps candidate ``i`` of ``ev`` from being built, one clause per broken
    constraint (lower case, no full stop); empty when it is feasible."""
    return [code_sentence(problem, ev, i, k, a) for k, a in _broken(ev, i)]


def would_work_if(problem, ev, i: int) -> list[str]:
    """What would make candidate ``i`` feasible, one clause per broken constraint."""
    return [code_sentence(problem, ev, i, k, a, "fix") for k, a in _broken(ev, i)]


def rules(problem, codes) -> list[str]:
    """The constraints the search applies, in words (one per code of ``codes``; a
    feature the fab offers and an absent maximum are no constraint and left out)."""
    out = []
    for code in codes:
        fam = family(code)
        if fam == "not_offered" and getattr(problem.table.features,
                                            code[: -len("_not_offered")]) is not None:
            continue
        if fam == "max_thickness" and problem.table.capabilities.max_thickness is None:
            continue
        out.append(code_sentence(problem, None, 0, code, 0.0, "rule"))
    return out


def sentence(clauses: list[str]) -> str:
    """Clauses joined into one sentence: capitalised, ``;``-separated, full stop."""
    text = "; ".join(c for c in clauses if c)
    return (text[:1].upper() + text[1:] + ".") if text else ""
