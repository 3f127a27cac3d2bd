"""The adsorption-speed check of a blend: each component diffuses on its own.

Checks: per component tau_D = (Gamma_i / c_i)**2 / D_i (the diffusion time scale of Ferri and Stebe,
Adv. Colloid Interface Sci. 85 (2000) 61, written out here from the solved state, rel 1e-12); a blend
of two identical components gives the single surfactant's verdict and figures (rel 1e-9); a
component with a tiny share of the interface does not set the verdict; no check without every
component's diffusivity.
"""

from __future__ import annotations

import pytest

from sizing.case import loads_case
from sizing.model import solve_case
from sizing.planning.kinetics import MIN_SHARE, adsorption_check

HEAD = """
[case]
title = "blend kinetics"
system = "emulsion"
[batch]
volume = "1 m**3"
dispersed_fraction = 0.3
continuous_density = "1000 kg/m**3"
dispersed_density = "850 kg/m**3"
[drops]
d32 = "2 um"
[target]
coverage = 0.8
[process]
residence_time = "0.5 s"
"""
COMP = """
[[blend.component]]
name = "{name}"
fraction = {f}
molar_mass = "400 g/mol"
cmc = "{cmc} mM"
max_surface_excess = "3 umol/m**2"
adsorption_constant = "{k} m**3/mol"
{d}
"""


def _blend(parts):
    return loads_case(HEAD + '[blend]\nname = "pair"\n' + "".join(COMP.format(**p) for p in parts))


def test_each_component_diffuses_on_its_own():
    case = _blend([dict(name="a", f=0.5, cmc=1.0, k=50, d='diffusivity = "5e-10 m**2/s"'),
                   dict(name="b", f=0.5, cmc=0.1, k=500, d='diffusivity = "2e-10 m**2/s"')])
    sol = solve_case(case)
    chk = adsorption_check(case, sol)
    st = sol.components
    for i, row in enumerate(chk.components):
        c = float(st.free_concentration[..., i])
        g = float(st.coverage[..., i]) * 3e-6
        assert row["diffusion_time_s"] == pytest.approx((g / c) ** 2 / [5e-10, 2e-10][i], rel=1e-12)
    slow = max((r for r in chk.components if r["interface_share"] >= MIN_SHARE), key=lambda r: r["diffusion_time_s"])
    assert chk.diffusion_time_s == slow["diffusion_time_s"] and slow["name"] in chk.message


def test_two_identical_components_give_the_single_surfactant_check():
    d = 'diffusivity = "4e-10 m**2/s"'
    pair = _blend([dict(name="a", f=0.5, cmc=0.5, k=200, d=d), dict(name="b", f=0.5, cmc=0.5, k=200, d=d)])
    single = loads_case(HEAD + '[surfactant]\nmolar_mass = "400 g/mol"\ncmc = "0.5 mM"\n'
                        'max_surface_excess = "3 umol/m**2"\nadsorption_constant = "200 m**3/mol"\n' + d + "\n")
    a, b = adsorption_check(pair), adsorption_check(single)
    # each component holds half the interface at half the free monomer: the same depth Gamma/c
    assert a.diffusion_time_s == pytest.approx(b.diffusion_time_s, rel=1e-9)
    assert a.optimistic == b.optimistic


def test_a_trace_component_does_not_set_the_verdict_and_missing_data_gives_no_check():
    case = _blend([dict(name="main", f=0.999, cmc=1.0, k=100, d='diffusivity = "5e-10 m**2/s"'),
                   dict(name="trace", f=0.001, cmc=1.0, k=100, d='diffusivity = "1e-14 m**2/s"')])
    chk = adsorption_check(case)
    assert "main" in chk.message and chk.components[1]["interface_share"] < MIN_SHARE
    case = _blend([dict(name="a", f=0.5, cmc=1.0, k=100, d='diffusivity = "5e-10 m**2/s"'),
                   dict(name="b", f=0.5, cmc=1.0, k=100, d="")])
    assert adsorption_check(case) is None
