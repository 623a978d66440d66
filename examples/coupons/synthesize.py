"""Write the SYNTHESIZED (not measured) example coupons of docs/calibration.md.

Each file is a scikit-rf cascade: 25 mm of 50 ohm feed line (effective permittivity
3.3), a shunt branch R + jwL to ground at the middle, 25 mm of feed line, with seeded
noise at a level a bench VNA shows (0.01 dB rms trace noise, -100 dB noise floor; common
practice, no source). The inductances are invented round numbers near what the models
give for these geometries; they are not measurements of any board.

    python examples/coupons/synthesize.py
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import skrf
from skrf.media import DefinedGammaZ0

HERE = Path(__file__).resolve().parent
C0 = 299_792_458.0
#: name: (via depth m, drill m, L H, R ohm, seed)
COUPONS = {
    "two_layer_1p5mm": (1.5e-3, 0.3e-3, 0.45e-9, 0.006, 1),
    "four_layer_0p2mm": (0.2e-3, 0.3e-3, 21e-12, 0.004, 2),
}


def coupon(inductance: float, resistance: float, seed: int) -> skrf.Network:
    """One coupon: feed line, shunt R + jwL, feed line, plus seeded noise."""
    fr = skrf.Frequency.from_f(np.linspace(10e6, 3e9, 300), unit="hz")
    m = DefinedGammaZ0(fr, z0=50.0, gamma=1j * 2 * np.pi * fr.f * math.sqrt(3.3) / C0)
    branch = m.resistor(resistance) ** m.inductor(inductance) ** m.short()
    net = m.line(0.025, "m") ** m.shunt(branch) ** m.line(0.025, "m")
    rng = np.random.default_rng(seed)
    trace = 10 ** (rng.normal(0, 0.01, net.s.shape) / 20)
    floor = 1e-5 * (rng.normal(size=net.s.shape) + 1j * rng.normal(size=net.s.shape))
    net.s = net.s * trace + floor / math.sqrt(2)
    return net


def main() -> None:
    """Write every coupon of :data:`COUPONS` next to this script."""
    for name, (depth, drill, ind, res, seed) in COUPONS.items():
        net = coupon(ind, res, seed)
        net.comments = (f"SYNTHESIZED, NOT MEASURED: stackopt example coupon {name}; via depth "
                        f"{depth * 1e3:g} mm, drill {drill * 1e3:g} mm; made with L = "
                        f"{ind * 1e12:g} pH, R = {res * 1e3:g} mohm, 2 x 25 mm feed line "
                        "(eeff 3.3), seeded VNA-like noise (examples/coupons/synthesize.py)")
        net.write_touchstone(str(HERE / name))


if __name__ == "__main__":
    main()
