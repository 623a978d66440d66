"""Load a calibration file (written by ``stackopt fit --write``) with one-line errors."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from stackopt.errors import InputError
from stackopt.inputs.validate import validate_model
from stackopt.inputs.yamlio import load_yaml
from stackopt.model.calibration import CALIBRATION_VERSION, CalibrationData

__all__ = ["LoadedCalibration", "load_calibration", "resolve_calibration_path"]


@dataclass(frozen=True)
class LoadedCalibration:
    """A calibration file's content with where it came from."""

    path: Path
    sha256: str
    data: CalibrationData

    def factors(self) -> dict[str, float]:
        """Factor per via model."""
        return {m: r.factor for m, r in self.data.factors.items()}

    def echo(self) -> dict:
        """What ``summary.json`` records: ``{file, sha256, factors, coupons}``."""
        return {
            "file": str(self.path), "sha256": self.sha256, "factors": self.factors(),
            "best_model": self.data.best_model,
            "coupons": [{"name": c.name, "kind": c.kind, "file": c.file,
                         "sha256": c.sha256, "rms_error_dB": c.rms_error_dB,
                         "residuals": {m: r.residuals[c.name]
                                       for m, r in self.data.factors.items()
                                       if c.name in r.residuals}}
                        for c in self.data.coupons]}


def load_calibration(path: str | Path) -> LoadedCalibration:
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
    return LoadedCalibration(p, hashlib.sha256(p.read_bytes()).hexdigest(), cal)


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
