"""Surface excess from depletion runs: what the dose lost to the interface, row by row.

Each row of the CSV is one experiment: a known dose ``N`` [mol] into a continuous phase of
volume ``V_c`` with a dispersed phase ``V_d`` giving the interfacial area ``A``; after
equilibration the continuous phase holds ``c_c`` and, where measured, the dispersed phase ``c_d``.
The surface excess by difference is::

    Gamma = (N - c_c V_c - c_d V_d) / A

with ``c_d = P c_c`` when it was not measured but a partition coefficient ``P`` is known, and 0
otherwise (said in the row's notes).  The standard deviation is first-order propagation of the
optional ``*_sd`` columns (independent errors).

Gamma is a Gibbs relative excess: it is negative for a solute depleted near the interface, as
inorganic salts are (Weissenborn and Pugh, J. Colloid Interface Sci. 184 (1996) 550).  Negative
values are kept and explained, never refused.  With at least four rows of positive excess for a
sample, a Langmuir isotherm ``Gamma = Gamma_inf K c / (1 + K c)`` is fitted to ``(c_c, Gamma)``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import curve_fit
from scipy.special import stdtrit  # Student t quantile, stdtrit(dof, q) = scipy.stats.t.ppf(q, dof)

from ..errors import CalculationError, InputError
from ..labcsv import read_lab_csv

MIN_LANGMUIR_ROWS = 4
CONFIDENCE = 0.95

_DIMS = {
    "dose": "amount",
    "continuous_volume": "volume",
    "dispersed_volume": "volume",
    "area": "area",
    "interfacial_area": "area",
    "continuous_concentration": "concentration",
    "dispersed_concentration": "concentration",
    "partition_coefficient": "dimensionless",
    "temperature": "temperature",
}
for _k in list(_DIMS):
    if _k not in ("partition_coefficient", "temperature", "interfacial_area"):
        _DIMS[_k + "_sd"] = _DIMS[_k]
_DIMS["area_sd"] = "area"
REQUIRED = ("dose", "continuous_volume", "dispersed_volume", "area", "continuous_concentration")

NEGATIVE_NOTE = (
    "negative surface excess: the solute is depleted near the interface (a Gibbs relative "
    "excess, as for inorganic salts; Weissenborn and Pugh 1996); kept as measured")


def surface_excess_by_difference(dose, continuous_volume, dispersed_volume, area,
                                 continuous_concentration, dispersed_concentration=0.0, *,
                                 dose_sd=0.0, continuous_volume_sd=0.0, dispersed_volume_sd=0.0,
                                 area_sd=0.0, continuous_concentration_sd=0.0,
                                 dispersed_concentration_sd=0.0, partition_coefficient=None):
    """Return the surface excess [mol/m**2] by difference and its standard deviation.

    Parameters
    ----------
    dose : float or ndarray
        N, surfactant put in [mol].
    continuous_volume, dispersed_volume : float or ndarray
        V_c, V_d [m**3].
    area : float or ndarray
        A, interfacial area [m**2].
    continuous_concentration : float or ndarray
        c_c after equilibration [mol/m**3].
    dispersed_concentration : float or ndarray
        c_d [mol/m**3], used where ``partition_coefficient`` is None or NaN.
    dose_sd, continuous_volume_sd, dispersed_volume_sd, area_sd, continuous_concentration_sd, dispersed_concentration_sd : float or ndarray
        Standard deviations, same units as their quantities.
    partition_coefficient : float or ndarray, optional
        P [-]; where given (not NaN), ``c_d = P c_c`` replaces the dispersed concentration.

    Returns
    -------
    (gamma, sd) : tuple of ndarray
        Gamma and its standard deviation [mol/m**2]; Gamma may be negative.

    Raises
    ------
    None.

    Notes
    -----
    ``Gamma = (N - c_c V_c - c_d V_d) / A`` (a Gibbs relative excess; negative for a solute
    depleted near the interface [1]);
    ``var = (sN**2 + (V_c + P V_d)**2 s_cc**2 + c_c**2 s_Vc**2 + c_d**2 s_Vd**2
    + V_d**2 s_cd**2) / A**2 + Gamma**2 (s_A / A)**2`` (P = 0 and s_cd from the column when
    c_d is measured), first-order propagation of independent errors [2].

    Examples
    --------
    >>> # 10 umol into 100 mL water + 20 mL oil, 2 m2, 0.02 mM left in water, 0.05 mM in oil
    >>> g, s = surface_excess_by_difference(10e-6, 100e-6, 20e-6, 2.0, 0.02, 0.05)
    >>> round(float(g) * 1e6, 12)   # umol/m2: (10 - 2 - 1) / 2
    3.5

    References
    ----------
    1. Weissenborn, P. K. and Pugh, R. J., "Surface tension of aqueous solutions of electrolytes:
       relationship with ion hydration, oxygen solubility, and bubble coalescence", J. Colloid
       Interface Sci. 184 (1996) 550-563, doi:10.1006/jcis.1996.0651 (negative excess of salts).
    2. Taylor, J. R., An Introduction to Error Analysis, 2nd ed., University Science Books (1997),
       ch. 3 (first-order propagation of independent errors) [from memory].
    3. Orear, J., "Least squares when both variables have uncertainties", Am. J. Phys. 50 (1982)
       912-916, doi:10.1119/1.12972 (effective variance) [from memory].
    4. Langmuir, I., J. Am. Chem. Soc. 40 (1918) 1361-1403, doi:10.1021/ja02242a004 [from memory].
    """
    n, vc, vd, a, cc = (np.asarray(v, dtype=float) for v in
                        (dose, continuous_volume, dispersed_volume, area, continuous_concentration))
    p = np.asarray(np.nan if partition_coefficient is None else partition_coefficient, dtype=float)
    use_p = np.isfinite(p)  # NaN: take the dispersed concentration as given
    p0 = np.where(use_p, p, 0.0)
    cd = np.where(use_p, p0 * cc, np.asarray(dispersed_concentration, dtype=float))
    dcc = vc + p0 * vd
    s_cd = np.where(use_p, 0.0, np.asarray(dispersed_concentration_sd, dtype=float))
    gamma = (n - cc * vc - cd * vd) / a
    var = (np.asarray(dose_sd) ** 2 + dcc**2 * np.asarray(continuous_concentration_sd) ** 2
           + cc**2 * np.asarray(continuous_volume_sd) ** 2 + cd**2 * np.asarray(dispersed_volume_sd) ** 2
           + vd**2 * s_cd**2) / a**2 + gamma**2 * (np.asarray(area_sd) / a) ** 2
    return gamma, np.sqrt(var)


@dataclass(frozen=True)
class DepletionFit:
    """Hold the rows (dicts in SI, row order), Langmuir fits per sample and notes.

    Attributes
    ----------
    path : str
        The file read.
    rows : list of dict
        One per CSV row: ``row``, ``sample``, ``surface_excess_mol_m2`` [mol/m**2] and its
        ``surface_excess_sd_mol_m2``, ``continuous_concentration_mol_m3``,
        ``dispersed_concentration_mol_m3`` [mol/m**3], ``dispersed_basis``,
        ``fraction_at_interface`` [-], ``notes``.
    langmuir : dict
        sample -> :func:`fit_langmuir_excess` result, or ``{"note": ...}`` why there is none.
    notes : tuple of str

    Examples
    --------
    >>> DepletionFit("runs.csv", [], {}, ()).rows
    []

    References
    ----------
    1. Weissenborn, P. K. and Pugh, R. J., "Surface tension of aqueous solutions of electrolytes:
       relationship with ion hydration, oxygen solubility, and bubble coalescence", J. Colloid
       Interface Sci. 184 (1996) 550-563, doi:10.1006/jcis.1996.0651 (negative excess of salts).
    2. Taylor, J. R., An Introduction to Error Analysis, 2nd ed., University Science Books (1997),
       ch. 3 (first-order propagation of independent errors) [from memory].
    3. Orear, J., "Least squares when both variables have uncertainties", Am. J. Phys. 50 (1982)
       912-916, doi:10.1119/1.12972 (effective variance) [from memory].
    4. Langmuir, I., J. Am. Chem. Soc. 40 (1918) 1361-1403, doi:10.1021/ja02242a004 [from memory].
    """

    path: str
    rows: list
    langmuir: dict  # sample -> dict of the fit, or a note why there is none
    notes: tuple


def fit_depletion(path, *, partition_coefficient=None, continuous: str = "water") -> DepletionFit:
    """Compute the surface excess of every depletion run and fit Langmuir where rows allow.

    Parameters
    ----------
    path : str or Path
        CSV with ``dose``, ``continuous_volume``, ``dispersed_volume``, ``area``,
        ``continuous_concentration`` (units in brackets) and optionally
        ``dispersed_concentration``, ``partition_coefficient``, ``*_sd``, ``sample``, ``notes``.
    partition_coefficient : float, optional
        P = c_oil/c_water [-] for rows without a measured dispersed concentration (a column wins).
    continuous : str
        ``"water"`` (O/W runs, drops hold P c) or ``"oil"`` (W/O runs, drops hold c/P).

    Returns
    -------
    DepletionFit

    Raises
    ------
    InputError
        A missing column or unit, a non-numeric or empty required cell, a non-positive area or
        continuous volume, a negative dose, volume, concentration or standard deviation, P = 0
        with a continuous oil.
    CalculationError
        A Langmuir fit that does not converge (see :func:`fit_langmuir_excess`).

    Notes
    -----
    Per row :func:`surface_excess_by_difference`; negative values are kept and explained [1];
    with at least four rows of positive excess per sample, :func:`fit_langmuir_excess`.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "runs.csv"
    >>> head = ("dose [umol],continuous_volume [mL],dispersed_volume [mL],area [m**2],"
    ...         "continuous_concentration [mM],dispersed_concentration [mM]")
    >>> _ = p.write_text(chr(10).join([head, "10,100,20,2,0.02,0.05"]))
    >>> round(fit_depletion(p).rows[0]["surface_excess_mol_m2"] * 1e6, 12)
    3.5

    References
    ----------
    1. Weissenborn, P. K. and Pugh, R. J., "Surface tension of aqueous solutions of electrolytes:
       relationship with ion hydration, oxygen solubility, and bubble coalescence", J. Colloid
       Interface Sci. 184 (1996) 550-563, doi:10.1006/jcis.1996.0651 (negative excess of salts).
    2. Taylor, J. R., An Introduction to Error Analysis, 2nd ed., University Science Books (1997),
       ch. 3 (first-order propagation of independent errors) [from memory].
    3. Orear, J., "Least squares when both variables have uncertainties", Am. J. Phys. 50 (1982)
       912-916, doi:10.1119/1.12972 (effective variance) [from memory].
    4. Langmuir, I., J. Am. Chem. Soc. 40 (1918) 1361-1403, doi:10.1021/ja02242a004 [from memory].
    """
    t = read_lab_csv(path, _DIMS, required=())
    cols = dict(t.columns)
    if "area" not in cols and "interfacial_area" in cols:
        cols["area"] = cols.pop("interfacial_area")
        t.units["area"] = t.units.get("interfacial_area", "")
    p = t.path
    missing = [c for c in REQUIRED if c not in cols]
    if missing:
        raise InputError(f"{p}: missing column(s) {', '.join(missing)}; expected a header like "
                         "'dose [umol],continuous_volume [mL],dispersed_volume [mL],area [m**2],"
                         "continuous_concentration [mM]' (optional: dispersed_concentration, "
                         "partition_coefficient, *_sd columns, sample, notes)")
    label = {k: (f"{k} [{t.units.get(k, '')}]" if t.units.get(k) else k) for k in cols}
    nrow = len(t)
    problems = []
    for k in REQUIRED:
        for i in np.flatnonzero(~np.isfinite(cols[k])):
            problems.append(f"{p}: row {i + 2}, column {label[k]!r}: the cell is empty; expected a number")
    for k in ("area", "continuous_volume"):
        for i in np.flatnonzero(np.isfinite(cols[k]) & (cols[k] <= 0)):
            problems.append(f"{p}: row {i + 2}, column {label[k]!r}: {cols[k][i]:g} (SI) is not "
                            "positive; expected a value > 0")
    for k in [c for c in cols if c in _DIMS and c not in ("area", "continuous_volume", "temperature")]:
        arr = np.asarray(cols[k], dtype=float)
        for i in np.flatnonzero(np.isfinite(arr) & (arr < 0)):
            problems.append(f"{p}: row {i + 2}, column {label[k]!r}: {arr[i]:g} (SI) is negative; "
                            "expected a value >= 0")
    if partition_coefficient is not None and not (np.isfinite(partition_coefficient)
                                                  and partition_coefficient >= 0):
        problems.append(f"--partition-coefficient: expected a number >= 0, got {partition_coefficient!r}")
    if continuous not in ("water", "oil"):
        problems.append(f"--continuous: expected 'water' or 'oil', got {continuous!r}")
    if problems:
        raise InputError(problems=problems)

    def col(name, default=0.0):
        arr = np.asarray(cols.get(name, np.full(nrow, np.nan)), dtype=float)
        return np.where(np.isfinite(arr), arr, default)

    cd_meas = np.asarray(cols.get("dispersed_concentration", np.full(nrow, np.nan)), dtype=float)
    p_col = np.asarray(cols.get("partition_coefficient", np.full(nrow, np.nan)), dtype=float)
    p_opt = np.nan if partition_coefficient is None else float(partition_coefficient)
    p_use = np.where(np.isfinite(p_col), p_col, p_opt)
    measured = np.isfinite(cd_meas)
    from_p = ~measured & np.isfinite(p_use)
    if continuous == "oil":
        # P = c_oil/c_water whatever the continuous phase: water drops in oil hold c_c / P
        if np.any(from_p & (p_use == 0)):
            raise InputError(f"{p}: partition coefficient 0 with a continuous oil phase means the "
                             "surfactant does not dissolve in the oil it was dosed into; expected P > 0")
        with np.errstate(divide="ignore"):
            p_use = np.where(from_p, 1.0 / p_use, p_use)
    cc = cols["continuous_concentration"]
    vd = cols["dispersed_volume"]
    gamma, sd = surface_excess_by_difference(
        cols["dose"], cols["continuous_volume"], vd, cols["area"], cc, np.where(measured, cd_meas, 0.0),
        dose_sd=col("dose_sd"), continuous_volume_sd=col("continuous_volume_sd"),
        dispersed_volume_sd=col("dispersed_volume_sd"), area_sd=col("area_sd"),
        continuous_concentration_sd=col("continuous_concentration_sd"),
        dispersed_concentration_sd=col("dispersed_concentration_sd"),
        partition_coefficient=np.where(from_p, p_use, np.nan))
    cd = np.where(measured, cd_meas, np.where(from_p, np.nan_to_num(p_use) * cc, 0.0))
    has_sd = any(k.endswith("_sd") for k in cols)
    samples = cols.get("sample", np.array([""] * nrow, dtype=object))
    notes_col = cols.get("notes", np.array([""] * nrow, dtype=object))
    file_notes = list(t.warnings)  # values outside their usual range (sizing.plausible)
    rows = []
    for i in range(nrow):
        rn = []
        if measured[i]:
            basis = "measured"
        elif from_p[i]:
            basis = (f"partition coefficient {p_use[i]:g} times the continuous concentration"
                     if continuous == "water" else
                     f"continuous (oil) concentration over the partition coefficient {1 / p_use[i]:g}")
        else:
            basis = "assumed zero"
            if vd[i] > 0:
                rn.append("no dispersed-phase concentration measured and no partition coefficient "
                          "given: the dispersed phase is assumed to hold none")
        if gamma[i] < 0:
            rn.append(NEGATIVE_NOTE)
        if has_sd and sd[i] > 0 and abs(gamma[i]) < 2 * sd[i]:
            rn.append("within two standard deviations of zero")
        n_i = cols["dose"][i]
        rows.append({
            "row": i + 2,
            "sample": str(samples[i]),
            "surface_excess_mol_m2": float(gamma[i]),
            "surface_excess_sd_mol_m2": float(sd[i]) if has_sd else None,
            "continuous_concentration_mol_m3": float(cc[i]),
            "dispersed_concentration_mol_m3": float(cd[i]),
            "dispersed_basis": basis,
            "fraction_at_interface": float(gamma[i] * cols["area"][i] / n_i) if n_i > 0 else None,
            "notes": rn + ([str(notes_col[i])] if str(notes_col[i]) else []),
        })
    if np.any(gamma < 0):
        file_notes.append(f"{int(np.sum(gamma < 0))} row(s) with a negative surface excess are kept "
                          "(depletion near the interface)")
    langmuir = {}
    for s in dict.fromkeys(str(x) for x in samples):
        idx = np.flatnonzero((np.asarray([str(x) for x in samples]) == s) & (gamma > 0) & (cc > 0))
        key = s or "all"
        if len(idx) < MIN_LANGMUIR_ROWS:
            langmuir[key] = {"note": f"{len(idx)} row(s) with a positive surface excess; a Langmuir "
                                     f"fit needs at least {MIN_LANGMUIR_ROWS}"}
            continue
        langmuir[key] = fit_langmuir_excess(cc[idx], gamma[idx], sd[idx] if has_sd else None,
                                            c_sd=col("continuous_concentration_sd")[idx])
    return DepletionFit(p, rows, langmuir, tuple(file_notes))


def fit_langmuir_excess(c, gamma, sd=None, c_sd=None) -> dict:
    """Fit ``Gamma = Gamma_inf K c / (1 + K c)`` to (c [mol/m**3], Gamma [mol/m**2]).

    Parameters
    ----------
    c : array_like
        Free concentrations, > 0 [mol/m**3].
    gamma : array_like
        Surface excesses, > 0 [mol/m**2].
    sd : array_like, optional
        Standard deviations of gamma [mol/m**2]; the fit is weighted when all are > 0.
    c_sd : array_like, optional
        Standard deviations of c [mol/m**3], through the effective variance.

    Returns
    -------
    dict
        ``max_surface_excess_mol_m2``, ``adsorption_constant_m3_mol``, ``intervals`` {same
        keys: [low, high]}, ``n_rows``, ``weighted``.

    Raises
    ------
    CalculationError
        When ``scipy.optimize.curve_fit`` does not converge.

    Notes
    -----
    Least squares (``scipy.optimize.curve_fit``) on ``ln Gamma_inf`` and ``ln K`` [4], weighted
    by ``sd**2 + (dGamma/dc c_sd)**2`` (effective variance [3], two passes); 95 % intervals from
    the covariance scaled by the residual scatter with Student's t on the log scale.  Valid
    for monolayer adsorption of one surfactant below its CMC.

    Examples
    --------
    >>> c = [0.001, 0.003, 0.01, 0.03, 0.1]
    >>> g = [3e-6 * 500 * x / (1 + 500 * x) for x in c]
    >>> f = fit_langmuir_excess(c, g)
    >>> round(f["max_surface_excess_mol_m2"] * 1e6, 9), round(f["adsorption_constant_m3_mol"], 6)
    (3.0, 500.0)

    References
    ----------
    1. Weissenborn, P. K. and Pugh, R. J., "Surface tension of aqueous solutions of electrolytes:
       relationship with ion hydration, oxygen solubility, and bubble coalescence", J. Colloid
       Interface Sci. 184 (1996) 550-563, doi:10.1006/jcis.1996.0651 (negative excess of salts).
    2. Taylor, J. R., An Introduction to Error Analysis, 2nd ed., University Science Books (1997),
       ch. 3 (first-order propagation of independent errors) [from memory].
    3. Orear, J., "Least squares when both variables have uncertainties", Am. J. Phys. 50 (1982)
       912-916, doi:10.1119/1.12972 (effective variance) [from memory].
    4. Langmuir, I., J. Am. Chem. Soc. 40 (1918) 1361-1403, doi:10.1021/ja02242a004 [from memory].
    """
    c, g = np.asarray(c, dtype=float), np.asarray(gamma, dtype=float)
    sd_g = None if sd is None else np.asarray(sd, dtype=float)
    sd_c = np.zeros_like(c) if c_sd is None else np.nan_to_num(np.asarray(c_sd, dtype=float))
    weighted = sd_g is not None and bool(np.all(sd_g > 0))

    def f(x, lg, lk):
        kc = np.exp(lk) * x
        return np.exp(lg) * kc / (1 + kc) * 1e6  # umol/m2 for conditioning

    bounds = ([math.log(1e-9), math.log(1e-6)], [math.log(1e-3), math.log(1e12)])
    popt = np.array([math.log(float(np.max(g)) * 1.2), math.log(1.0 / float(np.median(c)))])
    sigma = None
    for _ in range(3 if weighted else 1):
        if weighted:
            kk = math.exp(popt[1])
            slope = math.exp(popt[0]) * kk / (1 + kk * c) ** 2  # dGamma/dc [m]
            sigma = np.sqrt(sd_g**2 + (slope * sd_c) ** 2) * 1e6
        try:
            popt, pcov = curve_fit(f, c, g * 1e6, p0=popt, sigma=sigma, absolute_sigma=False,
                                   bounds=bounds, maxfev=20000)
        except RuntimeError as exc:  # curve_fit's "optimal parameters not found"
            raise CalculationError(f"the Langmuir fit of {len(c)} depletion rows did not converge "
                                   f"({exc}); check the rows, or use the surface excess per row") from exc
    dof = max(len(c) - 2, 1)
    tq = float(stdtrit(dof, 0.5 + CONFIDENCE / 2))
    se = np.sqrt(np.clip(np.diag(pcov), 0, None))
    with np.errstate(over="ignore"):
        iv = [(float(np.exp(popt[j] - tq * se[j])), float(np.exp(popt[j] + tq * se[j]))) for j in (0, 1)]
    return {"max_surface_excess_mol_m2": float(np.exp(popt[0])),
            "adsorption_constant_m3_mol": float(np.exp(popt[1])),
            "intervals": {"max_surface_excess_mol_m2": list(iv[0]), "adsorption_constant_m3_mol": list(iv[1])},
            "n_rows": int(len(c)), "weighted": weighted}
