"""Size statistics against Hatch-Choate, the RRSB closed forms and scipy integration."""

import numpy as np
import pytest
from scipy import integrate, stats

from sizing.constants import SHAPE_FACTORS
from sizing.errors import InputError
from sizing.physics.distribution import (
    interfacial_area,
    lognormal_stats,
    rrsb_stats,
    table_from_columns,
    table_stats,
)


def test_hatch_choate_worked_values():
    # Hatch and Choate, J. Franklin Inst. 207 (1929) 369 relations; values derived exactly from
    # them: CMD = 1 um, gsd = 1.5 -> d32 1.50833, MMD 1.63756, d43 1.77785 um.
    # Printed to 6 significant figures: tolerance 5e-6 relative.
    s = lognormal_stats(1e-6, 1.5, "number")
    assert s.d32 * 1e6 == pytest.approx(1.50833, rel=5e-6)
    assert s.dv50 * 1e6 == pytest.approx(1.63756, rel=5e-6)
    assert s.d43 * 1e6 == pytest.approx(1.77785, rel=5e-6)


@pytest.mark.parametrize("cmd, gsd", [(1e-6, 1.5), (3e-6, 2.2), (0.4e-6, 1.2)])
def test_lognormal_against_scipy_integration(cmd, gsd):
    # Cross-check against scipy.stats.lognorm moments integrated with scipy.integrate.quad
    # (general-purpose reference library); tolerance 1e-8 relative (quadrature accuracy).
    dist = stats.lognorm(s=np.log(gsd), scale=cmd * 1e6)  # work in um so quad sees O(1) numbers

    def moment(k):
        return integrate.quad(lambda d: d**k * dist.pdf(d), 0, np.inf, limit=200, epsabs=0)[0]

    s = lognormal_stats(cmd, gsd, "number")
    assert s.d32 * 1e6 == pytest.approx(moment(3) / moment(2), rel=1e-8)
    assert s.d43 * 1e6 == pytest.approx(moment(4) / moment(3), rel=1e-8)
    assert s.d10 * 1e6 == pytest.approx(moment(1) / moment(0), rel=1e-8)
    # the volume median: where the cumulative volume reaches one half
    total = moment(3)
    half = integrate.quad(lambda d: d**3 * dist.pdf(d), 0, s.dv50 * 1e6, limit=200)[0]
    assert half / total == pytest.approx(0.5, rel=1e-8)


def test_lognormal_volume_basis_is_consistent():
    # A volume-basis median is MMD = CMD exp(3 ln^2 gsd) (Hatch-Choate): both bases agree.
    n = lognormal_stats(1e-6, 1.8, "number")
    v = lognormal_stats(n.dv50, 1.8, "volume")
    assert v.d32 == pytest.approx(n.d32, rel=1e-12)  # regression pin of an identity
    assert v.d32 == pytest.approx(n.dv50 * np.exp(-0.5 * np.log(1.8) ** 2), rel=1e-12)


def test_rrsb_worked_values():
    # RRSB closed forms (Rosin and Rammler, J. Inst. Fuel 7 (1933) 29 [from memory]; d50 = x' (ln 2)**(1/n),
    # d32 = x'/Gamma(1 - 1/n), derived exactly): x' = 100 um, n = 2: d32 = 56.419 um,
    # d50 = 83.2555 um, span = 1.43274; tolerance at the printed precision.
    s = rrsb_stats(100e-6, 2.0)
    assert s.d32 * 1e6 == pytest.approx(56.419, abs=5e-4)
    assert s.dv50 * 1e6 == pytest.approx(83.2555, abs=5e-5)
    assert float(s.span) == pytest.approx(1.43274, abs=5e-6)


@pytest.mark.parametrize("x, n", [(100e-6, 2.0), (5e-6, 3.5), (20e-6, 1.4)])
def test_rrsb_against_quad(x, n):
    # Cross-check with scipy.integrate.quad on the volume density q3 = dQ3/dd;
    # 1/d32 = integral of q3/d (volume-weighted mean of 1/d). Tolerance 1e-8 relative.
    xu = x * 1e6

    def q3(d):
        return n / xu * (d / xu) ** (n - 1) * np.exp(-((d / xu) ** n))

    inv = integrate.quad(lambda d: q3(d) / d, 0, np.inf, limit=200)[0]
    mean = integrate.quad(lambda d: q3(d) * d, 0, np.inf, limit=200)[0]
    s = rrsb_stats(x, n)
    assert s.d32 * 1e6 == pytest.approx(1 / inv, rel=1e-8)
    assert s.d43 * 1e6 == pytest.approx(mean, rel=1e-8)


def test_table_integrates_within_classes():
    # A single class [a, b] with volume uniform in ln d: 1/d32 = (1/a - 1/b)/ln(b/a), checked
    # against scipy.integrate.quad of the same density; the geometric midpoint sqrt(a b) would
    # be 19 % off here.
    a, b = 1e-6, 10e-6
    t = table_from_columns({"lower": np.array([a]), "upper": np.array([b]), "volume": np.array([100.0])})
    ref = integrate.quad(lambda lnd: np.exp(-lnd), np.log(a * 1e6), np.log(b * 1e6))[0] / np.log(b / a)
    assert table_stats(t).d32 * 1e6 == pytest.approx(1 / ref, rel=1e-12)
    assert abs(table_stats(t).d32 / np.sqrt(a * b) - 1) > 0.15


def test_fine_table_approaches_lognormal():
    # A log-normal sampled into 200 fine classes must give the Hatch-Choate d32 (Hatch and
    # Choate, J. Franklin Inst. 207 (1929) 369);
    # discretisation tolerance 1e-4 relative.
    cmd, gsd = 1e-6, 1.6
    s = lognormal_stats(cmd, gsd)
    edges = np.exp(np.linspace(np.log(s.dv50) - 6 * np.log(gsd), np.log(s.dv50) + 6 * np.log(gsd), 201))
    cdf = stats.norm.cdf(np.log(edges / s.dv50) / np.log(gsd))
    t = table_from_columns({"lower": edges[:-1], "upper": edges[1:], "volume": 100 * np.diff(cdf)})
    ts = table_stats(t)
    assert ts.d32 == pytest.approx(s.d32, rel=1e-4)
    assert ts.dv50 == pytest.approx(s.dv50, rel=1e-4)
    assert ts.dv90 == pytest.approx(s.dv90, rel=1e-3)


def test_table_layouts_and_errors():
    upper = np.array([1, 2, 4, 8]) * 1e-6
    t1 = table_from_columns({"upper": upper, "volume": np.array([10, 40, 40, 10.0])})
    assert t1.lower[0] == pytest.approx(0.5e-6)
    cum = table_from_columns({"size": upper, "undersize": np.array([10, 50, 90, 100.0])})
    np.testing.assert_allclose(cum.volume_fraction, t1.volume_fraction)
    counts = table_from_columns({"upper": upper, "count": np.array([1000, 100, 10, 1.0])})
    assert counts.volume_fraction.sum() == pytest.approx(1.0)
    with pytest.raises(InputError, match="needs a 'volume"):
        table_from_columns({"upper": upper, "mass": upper})
    with pytest.raises(InputError, match="sizes must increase"):
        table_from_columns({"size": upper[::-1], "undersize": np.array([10, 50, 90, 100.0])})
    with pytest.raises(InputError, match="holds no drops"):
        table_from_columns({"upper": upper, "volume": np.zeros(4)})


def test_area_identities():
    # A = 6 V_d / d32 for spheres (ISO 9276-2, specific surface of a size distribution), derived
    # exactly: phi = 0.2, d32 = 1 um gives 1.2e6 m2 per m3 of dispersion.
    assert interfacial_area(1e-6, 0.2) == pytest.approx(1.2e6, rel=1e-12)
    d = np.array([1e-6, 2e-6])
    np.testing.assert_allclose(interfacial_area(d, 0.2), [1.2e6, 0.6e6])


def test_kelvin_cell_factor():
    # Kelvin's tetrakaidecahedron 1.0970 (Princen and Levinson, J. Colloid Interface Sci. 120
    # (1987) 172), Weaire-Phelan 1.0935 (Weaire and Phelan, Phil. Mag. Lett. 69 (1994) 107).
    assert SHAPE_FACTORS["kelvin"] == pytest.approx(1.0970, abs=5e-5)
    assert SHAPE_FACTORS["weaire_phelan"] == pytest.approx(1.0935, abs=5e-5)
    assert interfacial_area(1e-3, 0.9, SHAPE_FACTORS["kelvin"]) == pytest.approx(1.0970 * 6 * 0.9 / 1e-3)


def test_count_table_integrates_number_density_within_classes():
    # A count table: number density uniform in ln d inside each class, so
    # d32 = int d**3 dln d / int d**2 dln d over [1, 2] um = (7/3)/(3/2) = 1.5556 um;
    # checked with scipy.integrate.quad, tolerance 1e-12 relative.
    t = table_from_columns({"lower": np.array([1e-6]), "upper": np.array([2e-6]), "count": np.array([1.0])})
    m3 = integrate.quad(lambda x: np.exp(3 * x), 0, np.log(2))[0]
    m2 = integrate.quad(lambda x: np.exp(2 * x), 0, np.log(2))[0]
    m1 = integrate.quad(lambda x: np.exp(x), 0, np.log(2))[0]
    s = table_stats(t)
    assert s.d32 * 1e6 == pytest.approx(m3 / m2, rel=1e-12)
    assert s.d10 * 1e6 == pytest.approx(m1 / np.log(2), rel=1e-12)


def test_fine_count_table_approaches_lognormal():
    # Counts of a number-based log-normal (CMD 1 um, gsd 1.6) in fine classes reproduce the
    # Hatch-Choate d32, d10 and volume median (Hatch and Choate 1929); 800 classes keep the
    # discretisation error (second order in the class width) under the 1e-4 tolerance.
    cmd, gsd = 1e-6, 1.6
    s = lognormal_stats(cmd, gsd, "number")
    edges = np.exp(np.linspace(np.log(cmd) - 7 * np.log(gsd), np.log(cmd) + 7 * np.log(gsd), 801))
    counts = np.diff(stats.norm.cdf(np.log(edges / cmd) / np.log(gsd)))
    ts = table_stats(table_from_columns({"lower": edges[:-1], "upper": edges[1:], "count": counts}))
    assert ts.d32 == pytest.approx(s.d32, rel=1e-4)
    assert ts.d10 == pytest.approx(s.d10, rel=1e-4)
    assert ts.dv50 == pytest.approx(s.dv50, rel=1e-4)


def test_table_that_does_not_add_up_is_noted():
    # Volume % that add up to 145 (a typing error) are rescaled, and the user is told.
    upper = np.array([1, 2, 4, 8]) * 1e-6
    t = table_from_columns({"upper": upper, "volume": np.array([10, 40, 45, 50.0])}, "sizes.csv")
    assert t.volume_fraction.sum() == pytest.approx(1.0)
    assert any("adds up to 145" in n for n in table_stats(t).notes)
    ok = table_from_columns({"upper": upper, "volume": np.array([10, 40, 40, 10.0])})
    assert table_stats(ok).notes == ()


def test_the_normal_quantile_constants_are_scipys():
    from scipy.special import ndtri

    from sizing.physics import distribution

    assert distribution.Z10 == ndtri(0.1) and distribution.Z90 == ndtri(0.9)
