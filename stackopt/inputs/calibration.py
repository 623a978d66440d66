"""Load a calibration file (written by ``stackopt fit --write``) with one-line errors."""

from __future__ import annotations

from pathlib import Path

from stackopt.errors import InputError
from stackopt.inputs.validate import validate_model
from stackopt.inputs.yamlio import load_yaml
from stackopt.model.calibration import CALIBRATION_VERSION, CalibrationData, CalibrationRef
from stackopt.model.scenario import Scenario

__all__ = ["load_calibration", "resolve_calibration_path", "with_calibration"]


def load_calibration(path: str | Path) -> CalibrationRef:
    """Read and validate a calibration file."""
    import hashlib

    p = Path(path)
    doc = load_yaml(p)
    data = doc.data
    if isinstance(data, dict) and data.get("stackopt_calibration") != CALIBRATION_VERSION:
        raise doc.error("not a stackopt calibration file of a version this release reads "
                        f"(version key 'stackopt_calibration: {CALIBRATION_VERSION}')",
                        ["stackopt_calibration"],
                        fix="write it with 'stackopt fit COUPON.s2p ... --write FILE'")
    cal = validate_model(CalibrationData, doc)
    return CalibrationRef(file=str(p), sha256=hashlib.sha256(p.read_bytes()).hexdigest(),
                          data=cal)


def resolve_calibration_path(name: str, scenario_path: str | Path | None) -> Path:
    """A calibration file named in a scenario (relative to the scenario file) or on the
    command line (relative to the working directory, ``scenario_path=None``)."""
    p = Path(name)
    if scenario_path is not None and not p.is_absolute():
        p = Path(scenario_path).parent / p
    if not p.is_file():
        raise InputError(f"calibration file {name!r} not found (looked at {p})",
                         file=None if scenario_path is None else str(scenario_path),
                         key="--calibration" if scenario_path is None else "search.calibration",
                         fix="write one with 'stackopt fit COUPON.s2p --depth D --drill D "
                         "--write cal.yaml'")
    return p


def with_calibration(scenario: Scenario, scenario_path: str | Path | None,
                     override: str | None = None) -> Scenario:
    """The scenario with its calibration file loaded into ``search.calibration``:
    ``override`` (``--calibration``, relative to the working directory) wins over the
    scenario's own ``search.calibration`` (relative to the scenario file); unchanged when
    neither names one."""
    name = override if override is not None else scenario.search.calibration
    if name is None or isinstance(name, CalibrationRef):
        return scenario
    path = resolve_calibration_path(str(name), None if override is not None else scenario_path)
    ref = load_calibration(path)
    search = scenario.search.model_copy(update={"calibration": ref})
    return scenario.model_copy(update={"search": search})
