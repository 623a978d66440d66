r"""Physical constants in SI units, shared by every physics kernel.

``MU0`` is the classical defined value :math:`4\pi\times10^{-7}` H/m (the 2019 SI makes
it a measured constant equal to this within about 1e-10, far below any model error here),
so that :math:`\mu_0/2\pi = 2\times10^{-7}` H/m = 0.2 nH/mm exactly — the prefactor of
every partial-inductance formula in :mod:`stackopt.physics.inductance`.

References
----------
.. [1] CODATA 2018 recommended values of the fundamental physical constants,
   E. Tiesinga, P. J. Mohr, D. B. Newell and B. N. Taylor, Rev. Mod. Phys. 93, 025010
   (2021).

"""

from __future__ import annotations

import math

__all__ = ["MU0", "EPS0", "C0", "ETA0", "MU0_OVER_2PI"]

#: Speed of light in vacuum [m/s] (exact by the definition of the metre).
C0: float = 299_792_458.0
#: Vacuum permeability [H/m], :math:`4\pi\times10^{-7}`.
MU0: float = 4e-7 * math.pi
#: :math:`\mu_0/2\pi` [H/m] = 2e-7 H/m = 0.2 nH/mm.
MU0_OVER_2PI: float = 2e-7  # = MU0 / (2 pi), written exactly
#: Vacuum permittivity [F/m], :math:`1/(\mu_0 c_0^2)` ≈ 8.854e-12 F/m.
EPS0: float = 1.0 / (MU0 * C0 * C0)
#: Impedance of free space [ohm], :math:`\mu_0 c_0` ≈ 376.73 ohm.
ETA0: float = MU0 * C0
