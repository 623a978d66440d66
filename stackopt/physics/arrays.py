"""The array types of the physics kernels: inputs are anything numpy reads as an array
(``ArrayLike``: SI floats, lists, arrays that broadcast), outputs float64 arrays."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["ArrayLike", "FloatArray"]

#: A float64 array: what every physics kernel returns.
FloatArray = NDArray[np.float64]
