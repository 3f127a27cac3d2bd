"""Surfactant dose sizing for emulsions and foams.

The engine: interfacial area from size distributions, adsorption isotherms, partitioning and
micelles in one mass balance, fits from lab data, scale-up and the plant-trial plan.  Pure
computation in SI floats and numpy arrays; units are parsed at the boundary (``sizing.units``).
"""

from .version import __version__ as __version__
