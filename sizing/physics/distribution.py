"""Drop and bubble size distributions: mean diameters, volume percentiles and interfacial area.

Four descriptions are supported, each giving the Sauter mean diameter d32 (= d_{3,2}) and,
where the description allows, the number-mean d10, the De Brouckere mean d43, the volume
percentiles dv10, dv50, dv90 and the span (dv90 - dv10)/dv50 (ISO 9276-2 notation):

- d32 given directly (no other statistics);
- log-normal with geometric standard deviation ``gsd`` and a median on a number basis (count
  median diameter CMD) or a volume basis (mass median diameter MMD), by the Hatch-Choate
  relations ``d_pq = CMD exp((p + q)/2 ln**2 gsd)``, ``MMD = CMD exp(3 ln**2 gsd)``;
- RRSB, volume-cumulative ``Q3(d) = 1 - exp(-(d/d')**n)``: ``d32 = d'/Gamma(1 - 1/n)`` (n > 1);
- a measured table of size classes, with the volume density taken uniform in ln d inside each
  class, so that ``1/d32 = sum_i w_i (1/a_i - 1/b_i)/ln(b_i/a_i)``: the class is integrated,
  not represented by its midpoint.

All functions take scalars or numpy arrays (broadcasting) and return the same kind.

References
----------
1. Hatch, T. and Choate, S. P., J. Franklin Inst. 207 (1929) 369 (log-normal moments).
2. ISO 9276-2, Representation of results of particle size analysis - Part 2: Calculation of
   average particle sizes/diameters and moments from particle size distributions.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError

# normal quantiles scipy.special.ndtri(0.1), ndtri(0.9) (= scipy.stats.norm.ppf), as constants: importing
# scipy.special costs about 0.2 s of every command's start-up (tests/test_distribution.py checks them)
Z10, Z90 = -1.2815515655446004, 1.2815515655446004


@dataclass(frozen=True)
class SizeStats:
    """Hold the mean diameters and volume percentiles of a size distribution [m]; nan where undefined.

    Attributes
    ----------
    d32 : float or ndarray
        Sauter mean diameter [m].
    d10, d43 : float or ndarray
        Number mean and De Brouckere mean diameters [m].
    dv10, dv50, dv90 : float or ndarray
        Volume percentiles [m].
    notes : tuple of str
        Warnings about the description (e.g. a table that does not add up).

    Notes
    -----
    ``span = (dv90 - dv10)/dv50`` [-]; ``as_dict()`` gives plain floats, None where undefined.

    Examples
    --------
    >>> SizeStats(2e-6).as_dict()["d32"], SizeStats(2e-6).as_dict()["span"]
    (2e-06, None)

    References
    ----------
    1. ISO 9276-2:2014, Representation of results of particle size analysis - Part 2: Calculation
       of average particle sizes/diameters and moments from particle size distributions.
    """

    d32: object
    d10: object = np.nan
    d43: object = np.nan
    dv10: object = np.nan
    dv50: object = np.nan
    dv90: object = np.nan
    notes: tuple = ()  # warnings about the description (e.g. a table that does not add up)

    @property
    def span(self):
        """(dv90 - dv10) / dv50 [-]."""
        return (np.asarray(self.dv90) - np.asarray(self.dv10)) / np.asarray(self.dv50)

    def as_dict(self) -> dict:
        out = {k: _f(getattr(self, k)) for k in ("d10", "d32", "d43", "dv10", "dv50", "dv90")}
        out["span"] = _f(self.span)
        return out


def _f(x):
    x = np.asarray(x, dtype=float)
    if x.ndim == 0:
        return None if not np.isfinite(x) else float(x)
    return x


# ---------------------------------------------------------------------------------------------
# log-normal (Hatch-Choate)

def lognormal_stats(median, gsd, basis: str = "number") -> SizeStats:
    """Return the statistics of a log-normal size distribution.

    Parameters
    ----------
    median : float or ndarray
        Count median diameter CMD (``basis="number"``) or volume median MMD (``basis="volume"``) [m].
    gsd : float or ndarray
        Geometric standard deviation, > 1 [-].
    basis : {"number", "volume"}

    Returns
    -------
    SizeStats

    Raises
    ------
    InputError
        For an unknown basis.

    Notes
    -----
    Hatch-Choate relations [1]: ``d_pq = CMD exp((p + q)/2 ln**2 gsd)``, so
    ``d32 = CMD exp(2.5 ln**2 gsd)``, ``d10 = CMD exp(0.5 ln**2 gsd)``, ``d43 = CMD exp(3.5 ln**2
    gsd)``, ``MMD = CMD exp(3 ln**2 gsd)``; volume percentiles ``MMD exp(z_p ln gsd)``.  Valid for
    any gsd > 1 (exact for the log-normal).

    Examples
    --------
    >>> s = lognormal_stats(1e-6, 1.5)
    >>> [round(float(v) * 1e6, 5) for v in (s.d32, s.dv50, s.d43)]
    [1.50833, 1.63756, 1.77785]

    References
    ----------
    1. Hatch, T. and Choate, S. P., "Statistical description of the size properties of non uniform
       particulate substances", J. Franklin Inst. 207 (1929) 369-387,
       doi:10.1016/S0016-0032(29)91451-4 [DOI from memory].
    2. ISO 9276-2:2014, Representation of results of particle size analysis - Part 2: Calculation
       of average particle sizes/diameters and moments from particle size distributions.
    """
    median = np.asarray(median, dtype=float)
    s2 = np.log(np.asarray(gsd, dtype=float)) ** 2
    if basis == "number":
        cmd = median
    elif basis == "volume":
        cmd = median * np.exp(-3.0 * s2)
    else:
        raise InputError(f"drops.basis: expected 'number' or 'volume', got {basis!r}")
    mmd = cmd * np.exp(3.0 * s2)
    ls = np.sqrt(s2)
    return SizeStats(
        d32=cmd * np.exp(2.5 * s2), d10=cmd * np.exp(0.5 * s2), d43=cmd * np.exp(3.5 * s2),
        dv10=mmd * np.exp(Z10 * ls), dv50=mmd, dv90=mmd * np.exp(Z90 * ls),
    )


def lognormal_volume_density(median, gsd, basis: str, diameters):
    """Return the volume density q3 per unit ln d [-] of a log-normal at ``diameters`` [m] (for plots).

    Parameters
    ----------
    median : float
        CMD or MMD [m] (see ``basis``).
    gsd : float
        Geometric standard deviation, > 1 [-].
    basis : {"number", "volume"}
    diameters : float or ndarray
        [m].

    Returns
    -------
    ndarray
        ``q3 = phi(ln(d/MMD)/ln gsd) / ln gsd`` [-] (normal pdf phi), integrating to 1 over ln d.

    Raises
    ------
    InputError
        For an unknown basis.

    Notes
    -----
    The volume distribution of a log-normal is log-normal with median MMD and the same gsd [1].

    Examples
    --------
    >>> round(float(lognormal_volume_density(1e-6, 1.5, "number", 1.63756e-6)), 12)
    0.983912727436

    References
    ----------
    1. Hatch, T. and Choate, S. P., "Statistical description of the size properties of non uniform
       particulate substances", J. Franklin Inst. 207 (1929) 369-387,
       doi:10.1016/S0016-0032(29)91451-4 [DOI from memory].
    2. ISO 9276-2:2014, Representation of results of particle size analysis - Part 2: Calculation
       of average particle sizes/diameters and moments from particle size distributions.
    """
    s = lognormal_stats(median, gsd, basis)
    ls = np.log(gsd)
    d = np.asarray(diameters, dtype=float)
    z = np.log(d / s.dv50) / ls
    return np.exp(-z * z / 2.0) / np.sqrt(2 * np.pi) / ls  # the normal pdf, as scipy.stats.norm.pdf


# ---------------------------------------------------------------------------------------------
# RRSB

def rrsb_stats(characteristic_size, spread) -> SizeStats:
    """Return the statistics of an RRSB distribution ``Q3 = 1 - exp(-(d/d')**n)``.

    Parameters
    ----------
    characteristic_size : float or ndarray
        d' [m], the size at Q3 = 63.2 %.
    spread : float or ndarray
        n, > 1 for a finite d32 [-]; d10 needs n > 3.

    Returns
    -------
    SizeStats
        nan where a moment diverges.

    Raises
    ------
    None.

    Notes
    -----
    Volume moments ``int d**k q3 dd = d'**k Gamma(1 + k/n)``; the number-based moment of
    order p is proportional to the volume moment of order p - 3, so ``d32 = d'/Gamma(1 - 1/n)``,
    ``d43 = d' Gamma(1 + 1/n)``; percentiles ``d' (-ln(1 - p))**(1/n)`` [1, 2].

    Examples
    --------
    >>> s = rrsb_stats(100e-6, 2.0)
    >>> round(float(s.d32) * 1e6, 3), round(float(s.dv50) * 1e6, 4), round(float(s.span), 5)
    (56.419, 83.2555, 1.43274)

    References
    ----------
    1. Rosin, P. and Rammler, E., "The laws governing the fineness of powdered coal", J. Inst. Fuel 7
       (1933) 29-36 [from memory].
    2. ISO 9276-2:2014, Representation of results of particle size analysis - Part 2.
    """
    x = np.asarray(characteristic_size, dtype=float)
    n = np.asarray(spread, dtype=float)
    from scipy.special import gamma as gamma_fn  # deferred: only RRSB needs it, and it is slow to import

    with np.errstate(invalid="ignore", divide="ignore"):
        d32 = x / gamma_fn(1.0 - 1.0 / n)
        d10 = np.where(n > 3, x * gamma_fn(1.0 - 2.0 / n) / gamma_fn(1.0 - 3.0 / n), np.nan)
        d43 = x * gamma_fn(1.0 + 1.0 / n)

        def pct(p):
            return x * (-np.log1p(-p)) ** (1.0 / n)

        return SizeStats(d32=d32, d10=d10, d43=d43, dv10=pct(0.1), dv50=pct(0.5), dv90=pct(0.9))


def rrsb_volume_density(characteristic_size, spread, diameters):
    """Return q3 per unit ln d [-] of an RRSB distribution at ``diameters`` [m].

    Parameters
    ----------
    characteristic_size : float
        d' [m].
    spread : float
        n [-].
    diameters : float or ndarray
        [m].

    Returns
    -------
    ndarray
        ``q3 = n z exp(-z)``, ``z = (d/d')**n`` [-].

    Raises
    ------
    None.

    Notes
    -----
    The derivative of ``Q3 = 1 - exp(-z)`` with respect to ln d [1].

    Examples
    --------
    >>> round(float(rrsb_volume_density(100e-6, 2.0, 100e-6)), 12)  # 2/e
    0.735758882343

    References
    ----------
    1. Rosin, P. and Rammler, E., "The laws governing the fineness of powdered coal", J. Inst. Fuel 7
       (1933) 29-36 [from memory].
    2. ISO 9276-2:2014, Representation of results of particle size analysis - Part 2.
    """
    z = (np.asarray(diameters, dtype=float) / characteristic_size) ** spread
    return spread * z * np.exp(-z)


# ---------------------------------------------------------------------------------------------
# measured size tables

@dataclass(frozen=True)
class SizeTable:
    """Hold size classes ``[lower, upper]`` [m] with their volume fractions (summing to 1) [-].

    Attributes
    ----------
    lower, upper : ndarray
        Class limits [m].
    volume_fraction : ndarray
        Share of the drop volume per class [-], sum 1.
    source : str
        The file read, for messages.
    basis : str
        ``"volume"`` (volume density taken uniform in ln d inside a class) or ``"count"``
        (number density uniform in ln d, with ``number_fraction`` the share of drops per class).
    number_fraction : ndarray or None
    notes : tuple of str

    Examples
    --------
    >>> t = table_from_columns({"lower": np.array([1e-6, 2e-6]), "upper": np.array([2e-6, 4e-6]),
    ...                         "volume": np.array([50.0, 50.0])}, "t.csv")
    >>> t.volume_fraction.tolist(), t.basis
    ([0.5, 0.5], 'volume')

    References
    ----------
    1. ISO 9276-2:2014, Representation of results of particle size analysis - Part 2: Calculation
       of average particle sizes/diameters and moments from particle size distributions.
    """

    lower: np.ndarray
    upper: np.ndarray
    volume_fraction: np.ndarray
    source: str = ""
    basis: str = "volume"
    number_fraction: np.ndarray | None = None
    notes: tuple = ()


def _mean_power(a, b, m):
    """Mean of d**m over [a, b] with weight uniform in ln d."""
    ln = np.log(b / a)
    if m == 0:
        return np.ones_like(a)
    return (b**m - a**m) / (m * ln)


def table_from_columns(columns: dict, source: str = "") -> SizeTable:
    """Build a :class:`SizeTable` from SI columns of a lab CSV.

    Parameters
    ----------
    columns : dict
        Column name -> ndarray, sizes in metres, amounts as read.  Accepted layouts:
        ``lower``, ``upper``, ``volume`` (per-class volume %, any total; normalised);
        ``upper``, ``volume`` (the first class starts at upper_0**2/upper_1, the geometric step);
        ``size``, ``undersize`` (cumulative volume % below each size, increasing);
        ``lower``/``upper`` or ``upper`` with ``count`` (number per class; volume by integration).
    source : str
        File name for messages.

    Returns
    -------
    SizeTable

    Raises
    ------
    InputError
        A missing column, sizes that do not increase, negative or non-numeric amounts, a table
        with no drops.

    Notes
    -----
    A volume column that does not add up to 100 (or 1) is rescaled and noted in ``notes``;
    count classes are turned into volume with ``<d**3>`` over the class, uniform in ln d [1].

    Examples
    --------
    >>> t = table_from_columns({"upper": np.array([1e-6, 2e-6, 4e-6]), "volume": np.array([20.0, 50.0, 30.0])})
    >>> round(float(t.lower[0]) * 1e6, 12), t.volume_fraction.tolist()
    (0.5, [0.2, 0.5, 0.3])

    References
    ----------
    1. ISO 9276-2:2014, Representation of results of particle size analysis - Part 2: Calculation
       of average particle sizes/diameters and moments from particle size distributions.
    """
    notes: list[str] = []

    def need(name):
        if name not in columns:
            raise InputError(f"{source}: size table needs a column {name!r}; found {', '.join(columns)}")
        return np.asarray(columns[name], dtype=float)

    if "size" in columns and ("undersize" in columns or "cumulative" in columns):
        size = need("size")
        cum = np.asarray(columns.get("undersize", columns.get("cumulative")), dtype=float)
        if np.any(np.diff(size) <= 0) or np.any(np.diff(cum) < 0):
            raise InputError(f"{source}: sizes must increase and the cumulative undersize must not fall")
        upper = size
        lower = np.concatenate([[size[0] ** 2 / size[1]], size[:-1]])
        weights = np.diff(np.concatenate([[0.0], cum]))
        kind = "volume"
        if cum.size and not (abs(cum[-1] - 100.0) <= 2.0 or abs(cum[-1] - 1.0) <= 0.02):
            notes.append(f"{source}: the cumulative undersize ends at {cum[-1]:g} (expected 100 %, or 1): "
                         "the classes were rescaled to 100 %; check the table")
    else:
        upper = need("upper")
        if "lower" in columns:
            lower = need("lower")
        else:
            if upper.size < 2:
                raise InputError(f"{source}: a table of upper sizes needs at least two classes")
            lower = np.concatenate([[upper[0] ** 2 / upper[1]], upper[:-1]])
        if lower.size and lower[0] == 0:
            lower = lower.copy()
            lower[0] = upper[0] ** 2 / upper[1] if upper.size > 1 else upper[0] / 2
        if "volume" in columns:
            weights, kind = need("volume"), "volume"
            total = float(np.nansum(weights))
            if not (abs(total - 100.0) <= 2.0 or abs(total - 1.0) <= 0.02):
                notes.append(f"{source}: the volume column adds up to {total:g} (expected 100 %, or 1): "
                             "the classes were rescaled to 100 %; check the table for a typing error")
        elif "count" in columns:
            weights, kind = need("count"), "count"
        else:
            raise InputError(
                f"{source}: size table needs a 'volume [%]', 'count' or 'undersize [%]' column; "
                f"found {', '.join(columns)}"
            )
    if np.any(~np.isfinite(weights)) or np.any(weights < 0):
        raise InputError(f"{source}: class amounts must be numbers >= 0")
    if np.any(lower <= 0) or np.any(upper <= lower):
        raise InputError(f"{source}: each class needs 0 < lower < upper (sizes must increase)")
    counts = None
    if kind == "count":
        if not weights.sum() > 0:
            raise InputError(f"{source}: the size table holds no drops (all amounts are zero)")
        counts = weights / weights.sum()
        weights = weights * _mean_power(lower, upper, 3)
    total = weights.sum()
    if not total > 0:
        raise InputError(f"{source}: the size table holds no drops (all amounts are zero)")
    return SizeTable(lower, upper, weights / total, source, kind, counts, tuple(notes))


def table_stats(table: SizeTable) -> SizeStats:
    """Return the statistics of a measured size table, integrating inside each class.

    Parameters
    ----------
    table : SizeTable

    Returns
    -------
    SizeStats

    Raises
    ------
    None.

    Notes
    -----
    Volume tables: volume density uniform in ln d inside a class, number moments
    ``M_k ~ sum_i w_i <d**(k-3)>_i``, so ``1/d32 = sum_i w_i (1/a_i - 1/b_i)/ln(b_i/a_i)``.
    Count tables: number density uniform in ln d inside a class, ``M_k ~ sum_i n_i <d**k>_i``.
    ``d10 = M1/M0``, ``d32 = M3/M2``, ``d43 = M4/M3``; volume percentiles invert the cumulative
    volume inside the class where it is reached (``x = a (b/a)**f`` for volume tables,
    ``x**3 = a**3 + f (b**3 - a**3)`` for count tables) [1].

    Examples
    --------
    >>> t = table_from_columns({"lower": np.array([1e-6, 2e-6]), "upper": np.array([2e-6, 4e-6]),
    ...                         "volume": np.array([50.0, 50.0])})
    >>> s = table_stats(t)
    >>> round(float(s.d32) * 1e6, 12), round(float(s.dv50) * 1e6, 12)
    (1.848392481493, 2.0)

    References
    ----------
    1. ISO 9276-2:2014, Representation of results of particle size analysis - Part 2: Calculation
       of average particle sizes/diameters and moments from particle size distributions.
    """
    a, b, w = table.lower, table.upper, table.volume_fraction
    if table.basis == "count":
        n = table.number_fraction

        def moment(k):
            return np.sum(n * _mean_power(a, b, k))
    else:
        def moment(k):
            return np.sum(w * _mean_power(a, b, k - 3))

    cum = np.concatenate([[0.0], np.cumsum(w)])

    def pct(p):
        i = int(np.clip(np.searchsorted(cum, p, side="left") - 1, 0, len(w) - 1))
        while w[i] == 0 and i < len(w) - 1:
            i += 1
        f = float(np.clip((p - cum[i]) / w[i], 0.0, 1.0)) if w[i] > 0 else 0.0
        if table.basis == "count":
            return float((a[i] ** 3 + f * (b[i] ** 3 - a[i] ** 3)) ** (1.0 / 3.0))
        return float(a[i] * (b[i] / a[i]) ** f)

    return SizeStats(
        d32=moment(3) / moment(2), d10=moment(1) / moment(0), d43=moment(4) / moment(3),
        dv10=pct(0.1), dv50=pct(0.5), dv90=pct(0.9), notes=table.notes,
    )


# ---------------------------------------------------------------------------------------------
# area

def interfacial_area(d32, dispersed_volume, shape_factor=1.0):
    """Return the interfacial area ``A = s 6 V_d / d32`` [m**2].

    Parameters
    ----------
    d32 : float or ndarray
        Sauter mean diameter [m].
    dispersed_volume : float or ndarray
        V_d [m**3].
    shape_factor : float or ndarray
        s, area against spheres of equal volume [-] (1 for spheres, about 1.1 for a dry
        polyhedral foam).

    Returns
    -------
    ndarray
        A [m**2].

    Raises
    ------
    None.

    Notes
    -----
    For spheres the area per dispersed volume is 6/d32 by the definition of d32 = M3/M2 [1];
    dry foam cells: Kelvin's tetrakaidecahedron 1.0970 [2].

    Examples
    --------
    >>> round(float(interfacial_area(1e-6, 0.2)), 6)  # phi = 0.2 in 1 m**3, d32 = 1 um
    1200000.0

    References
    ----------
    1. ISO 9276-2:2014, Representation of results of particle size analysis - Part 2.
    2. Princen, H. M. and Levinson, P., J. Colloid Interface Sci. 120 (1987) 172 [citation from
       memory].
    """
    return np.asarray(shape_factor) * 6.0 * np.asarray(dispersed_volume) / np.asarray(d32)
