"""Process conditions: the CMC and the adsorption constant at another temperature and with salt.

Pure functions on SI floats and arrays:

- CMC against temperature, the van 't Hoff form of the pseudo-phase model:
  ``d ln CMC / d(1/T) = dH_mic / ((1 + b) R)`` with the micellisation enthalpy ``dH_mic`` and the
  counterion binding ``b`` (0 for a nonionic) [1, 2];
- adsorption constant against temperature: ``d ln K / d(1/T) = -dH_ads / R`` [2];
- CMC with an added 1:1 electrolyte, the Corrin-Harkins relation
  ``log CMC = const - b log(CMC + c_salt)``, anchored at the salt-free CMC ``CMC_0`` (at the batch
  temperature): ``CMC (CMC + c_salt)**b = CMC_0**(1 + b)`` [3]; no change for ``b = 0``;
- the Gibbs prefactor of a 1:1 ionic surfactant with salt, ``n = 1 + c / (c + c_salt)`` (2 without
  salt, towards 1 in excess salt) [4].

Order: the temperature law first (the salt-free CMC at the batch temperature), then Corrin-Harkins.

References
----------
1. Rosen, M. J. and Kunjappu, J. T., Surfactants and Interfacial Phenomena, 4th ed., Wiley (2012),
   ch. 3 (thermodynamic parameters of micellisation) [from memory].
2. The van 't Hoff form of an equilibrium constant against temperature; for the pseudo-phase CMC
   with counterion binding see Moroi, Y., Micelles: Theoretical and Applied Aspects, Plenum (1992)
   [from memory].
3. Corrin, M. L. and Harkins, W. D., J. Am. Chem. Soc. 69 (1947) 683.
4. Prosser, A. J. and Franses, E. I., Colloids Surf. A 178 (2001) 1 (Gibbs prefactor of ionic
   surfactants with and without salt) [from memory].
"""

from __future__ import annotations

import numpy as np

from ..constants import GAS_CONSTANT as R
from .roots import bracketed_newton


def cmc_at_temperature(cmc_ref, temperature, reference_temperature, enthalpy=0.0, binding=0.0):
    """Return the CMC [mol/m**3] at ``temperature`` [K] from its value at ``reference_temperature``.

    Parameters
    ----------
    cmc_ref : float or ndarray
        CMC at the reference temperature [mol/m**3] (inf stays inf).
    temperature, reference_temperature : float or ndarray
        [K].
    enthalpy : float or ndarray
        dH_mic [J/mol] (> 0: the CMC falls as T rises, as for ethoxylates).
    binding : float or ndarray
        Counterion binding b [-], 0 for a nonionic.

    Examples
    --------
    >>> round(float(cmc_at_temperature(1.0, 313.15, 298.15, 15e3, 0.0)), 4)  # dH = +15 kJ/mol
    0.7484
    >>> round(float(cmc_at_temperature(1.0, 313.15, 298.15, -2e3)), 4), round(float(cmc_at_temperature(1.0, 313.15, 298.15, -2e3, 0.7)), 4)
    (1.0394, 1.023)
    """
    t, t0 = np.asarray(temperature, dtype=float), np.asarray(reference_temperature, dtype=float)
    return np.asarray(cmc_ref, dtype=float) * np.exp(
        np.asarray(enthalpy, dtype=float) / ((1.0 + np.asarray(binding, dtype=float)) * R) * (1.0 / t - 1.0 / t0))


def adsorption_constant_at_temperature(k_ref, temperature, reference_temperature, enthalpy=0.0):
    """Return K [m**3/mol] at ``temperature`` [K]: ``ln K/K_ref = -(dH_ads/R)(1/T - 1/T_ref)``.

    Examples
    --------
    >>> round(float(adsorption_constant_at_temperature(1.0, 313.15, 298.15, -25e3)), 4)  # exothermic: K falls
    0.6169
    """
    t, t0 = np.asarray(temperature, dtype=float), np.asarray(reference_temperature, dtype=float)
    return np.asarray(k_ref, dtype=float) * np.exp(-np.asarray(enthalpy, dtype=float) / R * (1.0 / t - 1.0 / t0))


def cmc_with_salt(cmc_0, salt, binding):
    """Return the CMC [mol/m**3] with an added 1:1 electrolyte (Corrin-Harkins, anchored at ``cmc_0``).

    Solves ``CMC (CMC + c_salt)**b = CMC_0**(1 + b)`` (one monotone root in ``ln CMC``); the
    salt-free CMC and a nonionic (``b = 0``) come back unchanged.

    Parameters
    ----------
    cmc_0 : salt-free CMC at the batch temperature [mol/m**3]
    salt : added 1:1 electrolyte in the aqueous phase [mol/m**3]
    binding : counterion binding b [-]

    Examples
    --------
    >>> round(float(cmc_with_salt(8.2, 100.0, 0.67)), 3)  # SDS-like, 0.1 M NaCl [mol/m**3 = mM]
    1.519
    """
    c0, cs, b = (np.asarray(x, dtype=float) for x in (cmc_0, salt, binding))
    c0, cs, b = np.broadcast_arrays(c0, cs, b)
    out = np.array(c0, dtype=float, copy=True)
    solve = np.isfinite(c0) & (cs > 0) & (b > 0)
    if np.any(solve):
        C0, S, B = c0[solve], cs[solve], b[solve]
        target = (1.0 + B) * np.log(C0)

        def fdf(x, idx):
            c = np.exp(x)
            g = x + B[idx] * np.log(c + S[idx]) - target[idx]
            dg = 1.0 + B[idx] * c / (c + S[idx])
            return g, dg

        # the root lies between the value with all salt counted (ln c + b ln S) and c0
        lo = target - B * np.log(C0 + S)
        hi = np.log(C0)
        out[solve] = np.exp(bracketed_newton(fdf, np.minimum(lo, hi), hi, xtol=1e-14, rtol=1e-15))
    return out


def gibbs_prefactor_with_salt(prefactor, concentration, salt):
    """Return the Gibbs prefactor [-] of a 1:1 ionic surfactant (given as n = 2) with salt.

    ``n = 1 + c / (c + c_salt)`` [4]; prefactors other than 2 (a nonionic, 1) are returned as given.

    Examples
    --------
    >>> [float(gibbs_prefactor_with_salt(2.0, 8.0, s)) for s in (0.0, 8.0)], float(gibbs_prefactor_with_salt(1.0, 8.0, 8.0))
    ([2.0, 1.5], 1.0)
    """
    n, c, s = (np.asarray(x, dtype=float) for x in (prefactor, concentration, salt))
    with np.errstate(invalid="ignore", divide="ignore"):
        salted = 1.0 + np.where(c + s > 0, c / (c + s), 1.0)
    return np.where(np.isclose(n, 2.0) & (s > 0), salted, n)
