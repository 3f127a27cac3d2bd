"""Reference properties: the surface tension of water.

References
----------
1. IAPWS R1-76(2014), Revised Release on Surface Tension of Ordinary Water Substance.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError

WATER_CRITICAL_TEMPERATURE = 647.096  # Tc [K]


def water_surface_tension(temperature):
    """Return the surface tension of water against its vapour/air [N/m] (IAPWS R1-76(2014)).

    ``sigma = B tau**mu (1 + b tau)``, ``tau = 1 - T/Tc``, B = 235.8 mN/m, b = -0.625,
    mu = 1.256; valid from the triple point (273.16 K) to Tc.

    Examples
    --------
    >>> round(float(water_surface_tension(298.15)) * 1e3, 3)
    71.972
    """
    t = np.asarray(temperature, dtype=float)
    if np.any((t < 248.0) | (t >= WATER_CRITICAL_TEMPERATURE)):
        raise InputError(
            f"batch.temperature: {float(np.min(t))} K is outside the range of the water tension "
            "correlation (IAPWS R1-76, about 248 K to 647 K)"
        )
    tau = 1.0 - t / WATER_CRITICAL_TEMPERATURE
    return 235.8e-3 * tau**1.256 * (1.0 - 0.625 * tau)
