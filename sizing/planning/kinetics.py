"""Adsorption speed: is the interface covered within the homogeniser's residence time?

The equilibrium dose assumes the surfactant reaches new interface while the drops are made.
Diffusion-controlled adsorption takes about ``tau_D = h**2 / D`` with the adsorption depth
``h = Gamma / c`` [m] (Gamma the surface excess to reach [mol/m**2], c the free monomer
[mol/m**3], D the monomer diffusivity [m**2/s]); tension equilibrates within 1-10 tau_D (Ferri
and Stebe 2000).  The short-time Ward-Tordai form ``Gamma(t) = 2 c sqrt(D t / pi)`` gives the
time to reach Gamma as ``(pi/4) tau_D``.

The check flags the equilibrium dose as optimistic when ``tau_D > 0.1 t_res``, i.e. when the
slow end of the equilibration window (10 tau_D) exceeds the residence time ``t_res``; adsorption
slower than about a tenth of the break-up time changes how drops break up (Hakansson and
Nilsson 2023).  Micelles, which can supply monomer faster, are ignored: the check is
conservative.

References
----------
1. Ferri, J. K. and Stebe, K. J., Adv. Colloid Interface Sci. 85 (2000) 61.
2. Ward, A. F. H. and Tordai, L., J. Chem. Phys. 14 (1946) 453 [short-time form from memory].
3. Hakansson, A. and Nilsson, L., Soft Matter (2023) [read; flag threshold].
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..model import solve_case

FLAG_RATIO = 0.1  # tau_D / t_res above which the equilibrium dose is flagged optimistic


@dataclass(frozen=True)
class AdsorptionSpeed:
    """Diffusion-time figures; arrays broadcast.

    Attributes
    ----------
    depth : h = Gamma / c [m]; diffusion_time : tau_D [s]; ward_tordai_time : (pi/4) tau_D [s]
    residence_time : t_res [s] (nan if not given); ratio : tau_D / t_res [-]
    optimistic : True where ratio > FLAG_RATIO
    """

    depth: np.ndarray
    diffusion_time: np.ndarray
    ward_tordai_time: np.ndarray
    residence_time: np.ndarray
    ratio: np.ndarray
    optimistic: np.ndarray


def diffusion_time(surface_excess, concentration, diffusivity):
    """Return ``(h, tau_D)``: adsorption depth [m] and diffusion time [s].

    Parameters
    ----------
    surface_excess : Gamma [mol/m**2]; concentration : c [mol/m**3], > 0
    diffusivity : D [m**2/s], > 0

    Examples
    --------
    Ferri and Stebe (2000) scale, worked example: 3 umol/m**2, 0.05 mM, 6e-10 m**2/s.

    >>> h, tau = diffusion_time(3e-6, 0.05, 6e-10)
    >>> round(float(h) * 1e6, 9), round(float(tau), 9)
    (60.0, 6.0)
    """
    g, c, d = (np.asarray(v, dtype=float) for v in (surface_excess, concentration, diffusivity))
    with np.errstate(divide="ignore"):
        h = np.where(c > 0, g / np.where(c > 0, c, 1.0), np.inf)
    return h, h * h / d


def adsorption_speed(surface_excess, concentration, diffusivity, residence_time=math.nan) -> AdsorptionSpeed:
    """Return the diffusion-time figures and the flag (vectorised).

    Examples
    --------
    >>> a = adsorption_speed(3e-6, 0.05, 6e-10, residence_time=30.0)
    >>> float(a.ratio), bool(a.optimistic)
    (0.2, True)
    """
    h, tau = diffusion_time(surface_excess, concentration, diffusivity)
    t = np.asarray(residence_time, dtype=float)
    ratio = tau / t
    return AdsorptionSpeed(depth=h, diffusion_time=tau, ward_tordai_time=0.25 * math.pi * tau,
                           residence_time=t + 0 * tau, ratio=ratio,
                           optimistic=np.asarray(np.isfinite(t) & (ratio > FLAG_RATIO)))


@dataclass(frozen=True)
class AdsorptionCheck:
    """The adsorption-speed check of a solved case (its JSON is ``adsorption`` in result.json).

    Attributes
    ----------
    depth_m : h = Gamma / c [m]; diffusion_time_s : tau_D = h**2 / D [s]
    ward_tordai_time_s : (pi/4) tau_D [s]; residence_time_s : t_res [s]
    ratio : tau_D / t_res [-]; threshold : the flag ratio :data:`FLAG_RATIO` [-]
    optimistic : the equilibrium dose is flagged optimistic (ratio above the threshold)
    free_concentration_mol_m3 : c [mol/m**3]; surface_excess_mol_m2 : Gamma [mol/m**2]
    diffusivity_m2_s : D [m**2/s]; message : the figures and the verdict in words
    """

    depth_m: float
    diffusion_time_s: float
    ward_tordai_time_s: float
    residence_time_s: float
    ratio: float
    threshold: float
    optimistic: bool
    free_concentration_mol_m3: float
    surface_excess_mol_m2: float
    diffusivity_m2_s: float
    message: str
    # a blend: one dict per component (name, share of the interface, c, Gamma, D, tau_D, ratio);
    # the scalar fields above are those of the slowest component holding at least MIN_SHARE of it
    components: tuple = ()


MIN_SHARE = 0.05  # a blend component with less of the interface than this does not set the verdict


def _verdict(figures: str, optimistic: bool, expect: str) -> str:
    """The check's message: the figures and, when flagged, why the equilibrium dose is optimistic."""
    if not optimistic:
        return "adsorption fast enough: " + figures
    return ("ADSORPTION MAY BE TOO SLOW: " + figures + f"; above {FLAG_RATIO:g} the new interface is not covered "
            f"while drops are made, so the equilibrium dose is OPTIMISTIC; {expect}, and test a higher level in "
            "the trial")


def adsorption_check(case, solution=None) -> AdsorptionCheck | None:
    """Return the adsorption-speed check of a case, or None when it lacks the data.

    Needs ``surfactant.diffusivity`` and ``[process] residence_time``; uses the free monomer and
    surface excess of the solved state (the target, or ``solution`` if given).
    """
    if case.surfactant is None:
        return _blend_check(case, solution)
    d = case.surfactant.diffusivity
    proc = getattr(case, "process", None)
    t_res = proc.residence_time if proc is not None else None
    if d is None or t_res is None:
        return None
    sol = solve_case(case) if solution is None else solution
    c = float(np.asarray(sol.state.free_concentration))
    g = float(np.asarray(sol.surface_excess))
    if not c > 0:
        raise InputError("adsorption check: the solved free monomer concentration is 0; nothing to adsorb")
    a = adsorption_speed(g, c, d.si, t_res.si)
    optimistic = bool(a.optimistic)
    figures = (f"tau_D = (Gamma/c)**2/D = ({g * 1e6:.3g} umol/m**2 / {c:.3g} mM)**2 / {d.si:.3g} m**2/s "
               f"= {a.diffusion_time:.3g} s against a residence time of {t_res.si:.3g} s "
               f"(ratio {float(a.ratio):.3g})")
    message = _verdict(figures, optimistic, "expect larger drops or more coalescence")
    return AdsorptionCheck(
        depth_m=float(a.depth), diffusion_time_s=float(a.diffusion_time),
        ward_tordai_time_s=float(a.ward_tordai_time), residence_time_s=float(a.residence_time),
        ratio=float(a.ratio), threshold=FLAG_RATIO, optimistic=optimistic,
        free_concentration_mol_m3=c, surface_excess_mol_m2=g, diffusivity_m2_s=d.si, message=message)


def _blend_check(case, solution=None) -> AdsorptionCheck | None:
    """The adsorption-speed check of a blend: each component diffuses to the interface on its own
    (``tau_i = (Gamma_i / c_i)**2 / D_i``, its own free monomer and surface excess); the verdict is
    that of the slowest component holding at least :data:`MIN_SHARE` of the interface."""
    comps = case.blend.component
    proc = getattr(case, "process", None)
    t_res = proc.residence_time if proc is not None else None
    if t_res is None or any(c.diffusivity is None for c in comps):
        return None
    sol = solve_case(case) if solution is None else solution
    st = sol.components
    gis = np.asarray(sol.inputs.blend.max_surface_excess, dtype=float)
    c = np.asarray(st.free_concentration, dtype=float).reshape(-1)
    g = (np.asarray(st.coverage, dtype=float) * gis).reshape(-1)
    d = np.array([x.diffusivity.si for x in comps])
    if not np.all(c > 0):
        raise InputError("adsorption check: a component's solved free monomer concentration is 0; nothing to adsorb")
    a = adsorption_speed(g, c, d, t_res.si)
    share = g / np.sum(g)
    rows = tuple({"name": x.name, "interface_share": float(sh), "free_concentration_mol_m3": float(ci),
                  "surface_excess_mol_m2": float(gi), "diffusivity_m2_s": float(di), "diffusion_time_s": float(t),
                  "ratio": float(r), "optimistic": bool(o)}
                 for x, sh, ci, gi, di, t, r, o in zip(comps, share, c, g, d, a.diffusion_time, a.ratio, a.optimistic))
    main = [i for i in range(len(comps)) if share[i] >= MIN_SHARE] or list(range(len(comps)))
    k = max(main, key=lambda i: float(a.diffusion_time[i]))
    optimistic = bool(a.optimistic[k])
    figures = (f"the slowest component holding {MIN_SHARE:.0%} or more of the interface, {comps[k].name}: "
               f"tau_D = ({g[k] * 1e6:.3g} umol/m**2 / {c[k]:.3g} mM)**2 / {d[k]:.3g} m**2/s = "
               f"{float(a.diffusion_time[k]):.3g} s against a residence time of {t_res.si:.3g} s "
               f"(ratio {float(a.ratio[k]):.3g})")
    message = _verdict(figures, optimistic, "the faster components take the fresh interface first; expect larger drops")
    return AdsorptionCheck(
        depth_m=float(a.depth[k]), diffusion_time_s=float(a.diffusion_time[k]),
        ward_tordai_time_s=float(a.ward_tordai_time[k]), residence_time_s=float(t_res.si),
        ratio=float(a.ratio[k]), threshold=FLAG_RATIO, optimistic=optimistic,
        free_concentration_mol_m3=float(c[k]), surface_excess_mol_m2=float(g[k]), diffusivity_m2_s=float(d[k]),
        message=message, components=rows)
