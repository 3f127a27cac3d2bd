"""The numpy sigmoid and its logarithm (sizing.physics.special) against scipy.special, a few ulp."""

from __future__ import annotations

import numpy as np
from scipy import special

from sizing.physics.special import expit, log_expit


def test_against_scipy_over_the_whole_range():
    x = np.concatenate([np.linspace(-800, 800, 20001), np.geomspace(1e-300, 1e3, 2001),
                        -np.geomspace(1e-300, 1e3, 2001), [0.0, -0.0]])
    np.testing.assert_allclose(expit(x), special.expit(x), rtol=4e-16, atol=1e-300)  # subnormals aside
    np.testing.assert_allclose(log_expit(x), special.log_expit(x), rtol=4e-16, atol=1e-300)
