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
    """Return the surface tension of water against its vapour or air [N/m].

    Parameters
    ----------
    temperature : float or ndarray
        T [K], 248 K to 647.096 K.

    Returns
    -------
    ndarray
        sigma [N/m].

    Raises
    ------
    InputError
        For a temperature outside about 248 K to the critical temperature.

    Notes
    -----
    ``sigma = B tau**mu (1 + b tau)``, ``tau = 1 - T/Tc``, Tc = 647.096 K, B = 235.8 mN/m,
    b = -0.625, mu = 1.256 [1]; valid from the triple point (273.16 K) to Tc, and in the
    supercooled liquid to about 248 K [1].  The release's table rounds to 0.01 mN/m.

    Examples
    --------
    >>> round(float(water_surface_tension(298.15)) * 1e3, 12)  # mN/m
    71.97220523023

    References
    ----------
    1. IAPWS R1-76(2014), Revised Release on Surface Tension of Ordinary Water Substance,
       International Association for the Properties of Water and Steam (2014).
    2. Vargaftik, N. B., Volkov, B. N. and Voljak, L. D., "International tables of the surface
       tension of water", J. Phys. Chem. Ref. Data 12 (1983) 817-820, doi:10.1063/1.555688
       [from memory].
    """
    t = np.asarray(temperature, dtype=float)
    if np.any((t < 248.0) | (t >= WATER_CRITICAL_TEMPERATURE)):
        raise InputError(
            f"batch.temperature: {float(np.min(t))} K is outside the range of the water tension "
            "correlation (IAPWS R1-76, about 248 K to 647 K)"
        )
    tau = 1.0 - t / WATER_CRITICAL_TEMPERATURE
    return 235.8e-3 * tau**1.256 * (1.0 - 0.625 * tau)
