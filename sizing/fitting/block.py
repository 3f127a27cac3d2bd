"""Lab data to parameters: the fitted ``[surfactant]`` block, its provenance and its plot.

The fits themselves live in :mod:`sizing.fitting.tension` (CMC and isotherm from a tension
series), :mod:`sizing.fitting.depletion` (surface excess by difference) and
:mod:`sizing.fitting.partition` (oil/water partition coefficient); this module re-exports them and
writes what a case file can reference: a TOML file with a ``[surfactant]`` table (case keys only)
and a ``[provenance]`` table, next to an SVG plot of the data, the fits and the residuals.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import io
import os
import tomllib
from pathlib import Path

import numpy as np
import tomli_w

from ..errors import InputError
from ..files import inside, read_regular, token, write_atomic
from ..physics.isotherm import area_from_surface_excess
from ..units import format_si, parse
from .depletion import DepletionFit, fit_depletion, fit_langmuir_excess, surface_excess_by_difference
from .partition import PartitionFit, fit_partition
from .tension import (
    CONFIDENCE,
    TensionData,
    TensionFit,
    fit_tension,
    fitted_curve,
    model_tension,
    read_tension_csv,
    select_model,
)

__all__ = [
    "DepletionFit", "PartitionFit", "TensionData", "TensionFit", "fit_depletion", "fit_langmuir_excess",
    "fit_partition", "fit_tension", "fitted_curve", "model_tension", "plot_svg_for_provenance",
    "read_tension_csv", "select_model", "surface_excess_by_difference", "surfactant_block",
    "tension_plot_svg", "write_fitted_block",
]

DIGITS = 6  # significant digits of the unit strings written to TOML
MAX_BLOCK_BYTES = 1024 * 1024  # a fitted block read back (a few kB when written here)
MAX_PLOT_BYTES = 2 * 1024 * 1024  # its SVG plot
_UNITS = {  # parameter -> (dimension, unit written)
    "max_surface_excess": ("surface_excess", "umol/m**2"),
    "adsorption_constant": ("adsorption_constant", "m**3/mol"),
    "cmc": ("concentration", "mM"),
    "clean_tension": ("tension", "mN/m"),
}


def _text(value: float, name: str) -> str:
    dim, unit = _UNITS[name]
    return format_si(float(value), dim, unit, DIGITS)


def block_stem(csv_path) -> str:
    """Return the name of the fitted block for a data file: its stem without ``_tension``.

    Parameters
    ----------
    csv_path : str or Path

    Returns
    -------
    str

    Raises
    ------
    None.

    Notes
    -----
    ``NAME_tension.csv`` gives ``NAME``; other names keep their stem.

    Examples
    --------
    >>> block_stem("lab/nonionic_tension.csv")
    'nonionic'

    References
    ----------
    1. Python documentation, ``pathlib.PurePath.stem``.
    """
    stem = Path(csv_path).stem
    for suffix in ("_tension", "-tension"):
        if stem.endswith(suffix) and len(stem) > len(suffix):
            return stem[: -len(suffix)]
    return stem


def surfactant_block(fit: TensionFit, *, plot: str | None = None, source_path: str | None = None,
                     measured_in: str = "water") -> dict:
    """Return ``{"surfactant": {...}, "provenance": {...}}`` for a tension fit.

    Parameters
    ----------
    fit : TensionFit
    plot : str, optional
        File name of the plot, recorded in the provenance.
    source_path : str, optional
        Path of the source CSV relative to the block, recorded so the plot can be re-rendered.
    measured_in : str
        ``"water"`` or ``"oil"``: the phase the series' concentrations were made up in, recorded as
        ``surfactant.measured_in`` so an oil-continuous case converts the constants through P.

    Returns
    -------
    dict
        ``surfactant`` holds only case keys (isotherm, max_surface_excess [umol/m**2],
        adsorption_constant [m**3/mol], interaction [-], gibbs_prefactor [-], cmc [mM],
        clean_tension [mN/m]) as unit strings rounded to 6 significant digits; ``provenance``
        records the source, date, model, temperature, AICc table, 95 % intervals, the plot file
        name and notes.

    Raises
    ------
    None.

    Notes
    -----
    The values are those of :func:`fit_tension`'s model used; six digits keep a case file
    readable and reproduce the fit to 5e-7 relative.

    Examples
    --------

    >>> import numpy as np
    >>> from sizing.fitting.tension import TensionData
    >>> c = np.logspace(-3, 0, 12)  # mol/m**3, noise-free Langmuir series with a CMC of 0.065
    >>> g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)
    >>> fit = fit_tension(TensionData("s_tension.csv", c, g, 298.15, {}, ()), model="langmuir")
    >>> surfactant_block(fit)["surfactant"]["cmc"]
    '0.065 mM'

    References
    ----------
    1. Tom Preston-Werner et al., TOML v1.0.0 specification (2021), https://toml.io/en/v1.0.0.
    2. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 (the fitted equation of state)
       [from memory].
    """
    b = fit.best
    p = b.params
    n = fit.gibbs_prefactor
    surf = {
        "isotherm": fit.model,
        "max_surface_excess": _text(p["max_surface_excess"], "max_surface_excess"),
        "adsorption_constant": _text(p["adsorption_constant"], "adsorption_constant"),
        "interaction": float(f"{p['interaction']:.{DIGITS}g}"),
        "gibbs_prefactor": int(n) if float(n).is_integer() else float(n),
        "cmc": _text(p["cmc"], "cmc"),
        "clean_tension": _text(p["clean_tension"], "clean_tension"),
        "measured_in": measured_in,
    }
    intervals = {k: [_text(v, k) for v in b.intervals[k]] for k in _UNITS}
    if fit.model == "frumkin":
        intervals["interaction"] = [f"{v:.4g}" for v in b.intervals["interaction"]]
    a = float(area_from_surface_excess(p["max_surface_excess"]))
    prov = {
        "kind": "tension series fit",
        "source": Path(fit.data.path).name,
        "fitted": _dt.date.today().isoformat(),
        "model": fit.model,
        "selection": fit.selection,
        "temperature": format_si(fit.temperature, "temperature", "degC", DIGITS),
        "gibbs_prefactor": surf["gibbs_prefactor"],
        "clean_tension_fitted": fit.clean_tension_fixed is None,
        "confidence": CONFIDENCE,
        "area_per_molecule": format_si(a, "area", "nm**2", 4),
        "points_below_cmc": fit.n_below,
        "points_above_cmc": fit.n_above,
        "residual_sd": format_si(float(np.sqrt(b.rss / max(len(b.residuals) - len(b.fitted), 1))),
                                 "tension", "mN/m", 3),
        "aicc": {m: round(f.aicc, 3) for m, f in fit.fits.items()},
        "intervals": intervals,
        "notes": list(fit.notes) + [f"warning: {w}" for w in fit.warnings],
    }
    if fit.bootstrap:
        prov["bootstrap_intervals"] = {k: [_text(v, k) for v in fit.bootstrap[k]] for k in _UNITS}
    if source_path:
        prov["source_path"] = source_path
    try:
        prov["source_sha256"] = hashlib.sha256(Path(fit.data.path).read_bytes()).hexdigest()
    except OSError:
        pass
    if plot:
        prov["plot"] = plot
    return {"surfactant": surf, "provenance": prov}


def write_fitted_block(fit: TensionFit, out_dir, *, name: str | None = None,
                       measured_in: str = "water") -> tuple[Path, Path]:
    """Write ``DIR/NAME.toml`` (the block) and ``DIR/NAME_tension_fit.svg`` (the plot), atomically.

    Parameters
    ----------
    fit : TensionFit
    out_dir : str or Path
        Folder to write into (must exist).
    name : str, optional
        NAME; by default :func:`block_stem` of the data file.
    measured_in : str
        The phase of the series' concentrations (see :func:`surfactant_block`).

    Returns
    -------
    (toml_path, svg_path) : tuple of Path

    Raises
    ------
    OSError
        When the folder cannot be written; a failed run keeps the previous files.
    InputError
        ``name`` holds a folder part (``'../x'``, ``'a/b'``): the files stay inside ``out_dir``.

    Notes
    -----
    The plot is rendered first, so a failure writes nothing; each file is written to a
    temporary file and renamed (:func:`sizing.files.write_atomic`).

    Examples
    --------

    >>> import numpy as np
    >>> from sizing.fitting.tension import TensionData
    >>> c = np.logspace(-3, 0, 12)  # mol/m**3, noise-free Langmuir series with a CMC of 0.065
    >>> g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)
    >>> fit = fit_tension(TensionData("s_tension.csv", c, g, 298.15, {}, ()), model="langmuir")
    >>> import tempfile
    >>> toml_path, svg_path = write_fitted_block(fit, tempfile.mkdtemp())
    >>> toml_path.name, svg_path.name
    ('s.toml', 's_tension_fit.svg')

    References
    ----------
    1. Tom Preston-Werner et al., TOML v1.0.0 specification (2021), https://toml.io/en/v1.0.0.
    2. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 (the fitted equation of state)
       [from memory].
    """
    out = Path(out_dir)
    stem = name or block_stem(fit.data.path)
    if name is not None and (not name.strip() or name in (".", "..") or Path(name).name != name
                             or "\\" in name or "\x00" in name):
        raise InputError(f"--name: expected a plain file name without folders (e.g. 'nonionic_a'), "
                         f"got {name[:40]!r}")
    toml_path, svg_path = out / f"{stem}.toml", out / f"{stem}_tension_fit.svg"
    svg = tension_plot_svg(fit)  # render first: a failure writes nothing
    rel = os.path.relpath(Path(fit.data.path).resolve(), out.resolve())
    block = surfactant_block(fit, plot=svg_path.name, source_path=Path(rel).as_posix(), measured_in=measured_in)
    text = (f"# Fitted with `sizing fit tension` from {Path(fit.data.path).name}; a case uses it with\n"
            f"# [surfactant] from = \".../{toml_path.name}\" (the path relative to the case file)\n"
            + tomli_w.dumps(block))
    write_atomic(svg_path, svg)
    write_atomic(toml_path, text)
    return toml_path, svg_path


def tension_plot_svg(fit: TensionFit) -> str:
    """Return an SVG plot: tension against log concentration with every model, CMC and residuals.

    Parameters
    ----------
    fit : TensionFit

    Returns
    -------
    str
        SVG text; tension in [mN/m], concentration in [mM] (= mol/m**3), residuals in [mN/m].

    Raises
    ------
    None.

    Notes
    -----
    Deterministic output (fixed hash salt, no date) so that the same fit gives the same file.

    Examples
    --------

    >>> import numpy as np
    >>> from sizing.fitting.tension import TensionData
    >>> c = np.logspace(-3, 0, 12)  # mol/m**3, noise-free Langmuir series with a CMC of 0.065
    >>> g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)
    >>> fit = fit_tension(TensionData("s_tension.csv", c, g, 298.15, {}, ()), model="langmuir")
    >>> tension_plot_svg(fit).lstrip().startswith("<?xml")
    True

    References
    ----------
    1. W3C, Scalable Vector Graphics (SVG) 1.1, 2nd ed. (2011).
    2. Hunter, J. D., "Matplotlib: a 2D graphics environment", Comput. Sci. Eng. 9 (2007) 90-95,
       doi:10.1109/MCSE.2007.55 [from memory].
    """
    import matplotlib  # deferred: matplotlib is heavy and only the plot needs it

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt  # deferred with matplotlib

    d = fit.data
    with matplotlib.rc_context({"svg.hashsalt": "sizing-fit", "svg.fonttype": "path"}):
        fig, (ax, axr) = plt.subplots(2, 1, sharex=True, figsize=(6.4, 5.6),
                                      gridspec_kw={"height_ratios": [3, 1]})
        cmc = fit.best.params["cmc"]
        lo, hi = fit.best.intervals["cmc"]
        for a in (ax, axr):
            a.axvspan(lo, hi, color="0.88", lw=0)
            a.axvline(cmc, color="0.4", lw=1, ls=":")
        styles = {"langmuir": "C0", "frumkin": "C1", "volmer": "C2"}
        for m in fit.fits:
            c, g = fitted_curve(fit, m)
            chosen = m == fit.model
            ax.plot(c, g * 1e3, color=styles.get(m, "k"), lw=2 if chosen else 1,
                    ls="-" if chosen else "--",
                    label=f"{m} (AICc {fit.fits[m].aicc:.1f}){' - used' if chosen else ''}")
        ax.plot(d.concentration, d.tension * 1e3, "o", color="k", ms=4, label="data")
        ax.annotate(f"CMC {cmc:.4g} mM\n95 %: {lo:.3g} to {hi:.3g} mM", xy=(cmc, ax.get_ylim()[1]),
                    xytext=(-4, -28), textcoords="offset points", fontsize=8, ha="right")
        ax.set_xscale("log")
        ax.set_ylabel("tension [mN/m]")
        ax.set_title(f"{Path(d.path).name}: {fit.model}, {fit.temperature - 273.15:.4g} degC, "
                     f"n = {fit.gibbs_prefactor:g}", fontsize=9)
        ax.legend(fontsize=8, loc="lower left")
        axr.axhline(0, color="0.5", lw=0.8)
        axr.plot(d.concentration, fit.best.residuals * 1e3, "o", color=styles.get(fit.model, "k"), ms=4)
        axr.set_ylabel("residual [mN/m]")
        axr.set_xlabel("concentration [mM] (= mol/m**3)")
        fig.tight_layout()
        buf = io.StringIO()
        fig.savefig(buf, format="svg", metadata={"Date": None})
        plt.close(fig)
    return buf.getvalue()


def plot_svg_for_provenance(toml_path, source_root=None) -> str | None:
    """Return the SVG plot of a fitted block, re-rendered from its source CSV if the file is gone.

    Parameters
    ----------
    toml_path : str or Path
        A TOML file written by :func:`write_fitted_block` (a regular file of at most 1 MB).
    source_root : str or Path, optional
        The folder the source CSV must lie in (symlinks resolved), e.g. the case file's folder;
        the block's own folder when None.

    Returns
    -------
    str or None
        The SVG text, or None when the file records no plot and no readable source.

    Raises
    ------
    InputError
        The TOML file is missing, unreadable or not a regular file; the recorded plot is not an
        ``.svg`` inside the block's folder, not a regular file or over 2 MB; the source CSV lies
        outside ``source_root``, or no longer fits.

    Notes
    -----
    The path policy is here, not in the caller: the block names files, and the block may come
    from someone else, so the plot is read only from the block's own folder and the source only
    from ``source_root`` (both with :func:`sizing.files.inside`, read with
    :func:`sizing.files.read_regular`: no device, FIFO or folder, size capped on what is read).
    The refit uses the recorded model, temperature, Gibbs prefactor and fixed clean tension.

    Examples
    --------

    >>> import numpy as np
    >>> from sizing.fitting.tension import TensionData
    >>> c = np.logspace(-3, 0, 12)  # mol/m**3, noise-free Langmuir series with a CMC of 0.065
    >>> g = model_tension(c, "langmuir", 52e-3, 3.3e-6, 850.0, 0.065, 298.15)
    >>> fit = fit_tension(TensionData("s_tension.csv", c, g, 298.15, {}, ()), model="langmuir")
    >>> import tempfile
    >>> toml_path, _ = write_fitted_block(fit, tempfile.mkdtemp())
    >>> "<svg" in plot_svg_for_provenance(toml_path)
    True

    References
    ----------
    1. Tom Preston-Werner et al., TOML v1.0.0 specification (2021), https://toml.io/en/v1.0.0.
    2. Szyszkowski, B. von, Z. Phys. Chem. 64 (1908) 385-414 (the fitted equation of state)
       [from memory].
    """
    path = Path(toml_path)
    raw = read_regular(path, "surfactant.from", MAX_BLOCK_BYTES)
    try:
        doc = tomllib.loads(raw.decode("utf-8-sig"))
    except (UnicodeDecodeError, tomllib.TOMLDecodeError, RecursionError) as exc:
        raise InputError(f"surfactant.from: cannot read {path} as TOML "
                         f"({str(exc).splitlines()[0][:120] if str(exc) else type(exc).__name__})") from None
    prov = doc.get("provenance") or {}
    if not isinstance(prov, dict):
        raise InputError(f"provenance: expected a table, got {type(prov).__name__}")
    folder = path.parent
    plot = prov.get("plot")
    if plot:
        plot_path = inside(plot, folder, "provenance.plot")
        if plot_path.suffix.lower() != ".svg":
            raise InputError(f"provenance.plot: {token(plot, 80)} is not an .svg file")
        if plot_path.exists():
            return read_regular(plot_path, "provenance.plot", MAX_PLOT_BYTES).decode("utf-8", "replace")
    src = prov.get("source_path")
    if not src:
        return None
    src_path = inside(Path(folder, str(src)), folder if source_root is None else source_root,
                      "provenance.source_path")
    if not src_path.exists():
        return None
    surf = doc.get("surfactant") or {}
    fixed = None
    if not prov.get("clean_tension_fitted", True) and "clean_tension" in surf:
        fixed = parse(surf["clean_tension"], "surfactant.clean_tension", "tension")
    temperature = parse(prov["temperature"], "provenance.temperature", "temperature") \
        if "temperature" in prov else None
    fit = fit_tension(src_path, temperature=temperature,
                      gibbs_prefactor=float(prov.get("gibbs_prefactor", surf.get("gibbs_prefactor", 1))),
                      model=prov.get("model"), clean_tension=fixed)
    return tension_plot_svg(fit)
