"""The few special functions the balance needs, in numpy: the logistic sigmoid and its logarithm.

``scipy.special`` would give them too, but importing it costs about 0.2 s of every command's
start-up (issue 16: ``sizing solve`` within 1.3x of importing scipy.optimize).  These are the
numerically stable forms (no overflow for any finite input); ``tests/test_special.py`` checks them
against scipy.special.expit and log_expit to a few ulp.  The Lambert W function of the Volmer
isotherm is imported from scipy where it is used.
"""

from __future__ import annotations

import numpy as np


def expit(x):
    """The logistic sigmoid ``1 / (1 + exp(-x))``, stable on both sides (as scipy.special.expit).

    >>> float(expit(0.0)), float(expit(800.0)), float(expit(-800.0))
    (0.5, 1.0, 0.0)
    """
    x = np.asarray(x, dtype=float)
    e = np.exp(-np.abs(x))
    return np.where(x >= 0, 1.0 / (1.0 + e), e / (1.0 + e))


def log_expit(x):
    """``ln(expit(x)) = -ln(1 + exp(-x))``, stable on both sides (as scipy.special.log_expit).

    >>> bool(float(log_expit(0.0)) == -np.log(2.0)), float(log_expit(-800.0))
    (True, -800.0)
    """
    x = np.asarray(x, dtype=float)
    return -np.logaddexp(0.0, -x)
