"""``sizing fit tension|depletion|partition|interaction``: turn lab data into surfactant parameters."""

from __future__ import annotations

import sys
from dataclasses import replace

import numpy as np

from ..errors import InputError
from ..fitting.block import fit_depletion, fit_partition, fit_tension, read_tension_csv, write_fitted_block
from ..fitting.electrolyte import fit_electrolyte, rises_with_concentration
from ..fitting.micelles import fit_interaction
from ..labcsv import molar_mass_for_mass_columns
from ..outputs.fit_json import (
    depletion_fit_json,
    electrolyte_fit_json,
    interaction_fit_json,
    partition_fit_json,
    tension_fit_json,
)
from ..outputs.jsonify import dumps
from ..physics.isotherm import area_from_surface_excess
from ..physics.properties import water_surface_tension
from ..units import format_si, parse, sig


def register(subparsers) -> None:
    """Add the ``fit`` verb and its three sub-commands."""
    p = subparsers.add_parser("fit", help="fit surfactant parameters from lab data (CSV)",
                              description="Fit surfactant parameters from the engineer's own lab data.")
    sub = p.add_subparsers(dest="fit_kind", metavar="KIND")
    p.set_defaults(func=lambda args: (p.print_help(), 1)[1])

    t = sub.add_parser("tension", help="CMC and isotherm from a tension series",
                       description="Fit the CMC (a fitted breakpoint) and an isotherm to a tension "
                                   "series: CSV with 'concentration [unit],tension [unit]'. A series "
                                   "whose tension rises (a salt) is fitted as an electrolyte: tension "
                                   "increment and negative surface excess.")
    t.add_argument("data", metavar="DATA.csv")
    t.add_argument("--temperature", help="e.g. '25 degC' (default: the file's temperature column)")
    t.add_argument("--gibbs-prefactor", type=float, default=None,
                   help="n of the Gibbs equation: 1 nonionic (default), 2 a 1:1 ionic without salt "
                        "(and the default for --electrolyte: a 1:1 salt)")
    t.add_argument("--electrolyte", action="store_true",
                   help="the series is a salt's (tension rising with concentration): fit the tension "
                        "increment and the negative surface excess (chosen by itself for a rising series)")
    t.add_argument("--model", choices=("langmuir", "frumkin", "volmer"),
                   help="use this isotherm (default: chosen by AICc)")
    g = t.add_mutually_exclusive_group()
    g.add_argument("--clean-tension", help="hold the surfactant-free tension fixed, e.g. '52 mN/m'")
    g.add_argument("--interface", choices=("air-water",),
                   help="air-water: hold the clean tension at the IAPWS water value")
    t.add_argument("--bootstrap", type=int, default=0, metavar="N",
                   help="also give residual-bootstrap intervals from N refits (useful for few points)")
    t.add_argument("--seed", type=int, default=0, help="seed of the bootstrap (default 0)")
    t.add_argument("--json", action="store_true", help="print JSON")
    t.add_argument("--out", metavar="DIR", help="write DIR/NAME.toml ([surfactant] block) and its plot")
    t.add_argument("--name", help="NAME of the written block (default: the CSV name without _tension)")
    t.add_argument("--measured-in", choices=("water", "oil"), default="water",
                   help="phase the series' concentrations were made up in (default water); recorded in the "
                        "block so an oil-continuous case converts K and the CMC through the partition coefficient")
    t.set_defaults(func=_tension)

    d = sub.add_parser("depletion", help="surface excess by difference from depletion runs",
                       description="Surface excess per run: (dose - what both bulk phases hold) / area.")
    d.add_argument("data", metavar="DATA.csv")
    d.add_argument("--partition-coefficient", type=float,
                   help="c_oil/c_water for rows without a measured dispersed concentration")
    d.add_argument("--continuous", choices=("water", "oil"), default="water",
                   help="continuous phase of the runs (oil: W/O, the water drops hold c/P; default water)")
    d.add_argument("--json", action="store_true", help="print JSON")
    d.set_defaults(func=_depletion)

    q = sub.add_parser("partition", help="partition coefficient from paired oil/water concentrations",
                       description="Partition coefficient c_oil/c_water from the points below the CMC.")
    q.add_argument("data", metavar="DATA.csv")
    q.add_argument("--cmc", help="CMC in the water, e.g. '0.065 mM' (default: fitted breakpoint)")
    q.add_argument("--json", action="store_true", help="print JSON")
    q.set_defaults(func=_partition)

    m = sub.add_parser("interaction", help="mixed-micelle interaction beta from mixed CMCs",
                       description="Fit the regular-solution interaction beta of a two-component mixed "
                                   "micelle: CSV with 'fraction [-],cmc [unit]' (mole fraction of the first "
                                   "component; rows at 0 and 1 give the pure CMCs). beta = 0 is ideal mixing.")
    m.add_argument("data", metavar="DATA.csv")
    m.add_argument("--json", action="store_true", help="print JSON")
    m.set_defaults(func=_interaction)
    for parser in (t, d, q, m):
        _molar_mass_option(parser)


def _molar_mass_option(parser) -> None:
    """``--molar-mass``: read concentration columns given by mass (``[g/L]``) as mol/m**3."""
    parser.add_argument("--molar-mass", metavar="M", help="molar mass of the surfactant, e.g. '288.4 g/mol', "
                        "to read concentration columns in g/L or mg/L (or a '# molar_mass = ...' line of the file)")
    run = parser.get_default("func")

    def with_molar_mass(args):
        m = parse(args.molar_mass, "--molar-mass", "molar_mass") if args.molar_mass else None
        with molar_mass_for_mass_columns(m):
            return run(args)

    parser.set_defaults(func=with_molar_mass)


def _warn(lines) -> None:
    for w in lines:
        print(f"warning: {w}", file=sys.stderr)


def _tension(args) -> int:
    if args.bootstrap < 0:
        raise InputError(f"--bootstrap: expected a number of refits >= 0, got {args.bootstrap}")
    data = None
    if not args.electrolyte and args.model is None:
        try:  # a salt's series may start at a salt-free blank (0): read leniently to recognise it
            lenient = read_tension_csv(args.data, electrolyte=True)
        except InputError:
            lenient = None  # the strict read below names the problems
        if lenient is not None and rises_with_concentration(lenient.concentration, lenient.tension):
            data = lenient
    if data is None:
        data = read_tension_csv(args.data, electrolyte=args.electrolyte)
    temperature = parse(args.temperature, "--temperature", "temperature") if args.temperature else None
    clean = parse(args.clean_tension, "--clean-tension", "tension") if args.clean_tension else None
    if args.interface == "air-water":
        clean = float(water_surface_tension(temperature or data.temperature or 298.15))
    auto = (not args.electrolyte and args.model is None
            and rises_with_concentration(data.concentration, data.tension))
    if args.electrolyte or auto:
        return _electrolyte(args, data, temperature, clean, auto)
    fit = fit_tension(data, temperature=temperature,
                      gibbs_prefactor=1.0 if args.gibbs_prefactor is None else args.gibbs_prefactor,
                      model=args.model, clean_tension=clean, bootstrap=args.bootstrap, seed=args.seed)
    written = write_fitted_block(fit, args.out, name=args.name, measured_in=args.measured_in) if args.out else None
    if args.json:
        out = tension_fit_json(fit)
        if written:
            out["written"] = [str(p) for p in written]
        print(dumps(out))
    else:
        print(_tension_text(fit))
        if written:
            print(f"wrote {written[0]} and {written[1]}")
    _warn(fit.warnings)
    return 0


def _electrolyte(args, data, temperature, clean, auto) -> int:
    """``fit tension`` on a salt's series: the tension increment and the negative surface excess."""
    refused = [(opt, given) for opt, given in (("--model", args.model), ("--bootstrap", args.bootstrap),
                                               ("--out", args.out), ("--name", args.name)) if given]
    if refused:
        opt = refused[0][0]
        why = ("the tension rises with concentration, so the series was read as an electrolyte's"
               if auto else "--electrolyte was given")
        raise InputError(f"{opt}: not used for an electrolyte ({why}): a salt has no isotherm, CMC or "
                         "[surfactant] block; expected the option without it, or a surfactant's series")
    fit = fit_electrolyte(data, temperature=temperature,
                          gibbs_prefactor=2.0 if args.gibbs_prefactor is None else args.gibbs_prefactor,
                          clean_tension=clean)
    if auto:
        fit = replace(fit, notes=("the tension rises with concentration: fitted as an electrolyte "
                                  "(negative adsorption); give --electrolyte to say so, or --model to "
                                  "force an isotherm",) + fit.notes)
    if args.json:
        print(dumps(electrolyte_fit_json(fit)))
    else:
        print(_electrolyte_text(fit))
    _warn(fit.warnings)
    return 0


def _electrolyte_text(fit) -> str:
    per_l = 1e6  # N/m per mol/m**3 -> mN/m per mol/L
    k, (klo, khi) = fit.tension_increment, fit.tension_increment_interval
    d, (dlo, dhi) = fit.depletion_thickness, fit.depletion_thickness_interval
    g0, (glo, ghi) = fit.clean_tension, fit.clean_tension_interval
    lines = [f"{fit.path}: {int(fit.counts.sum())} points at {fit.concentration.size} concentrations, "
             f"{fit.temperature - 273.15:.4g} degC, n = {fit.gibbs_prefactor:g} (electrolyte: negative adsorption)",
             "", f"{'quantity':<28}{'value':>22}   95 % interval",
             f"{'tension increment':<28}{sig(k * per_l, 4) + ' mN/m per mol/L':>22}   "
             f"{sig(klo * per_l, 3)} to {sig(khi * per_l, 3)} mN/m per mol/L",
             f"{'clean tension':<28}{format_si(g0, 'tension', 'mN/m', 5):>22}   "
             + ("(fixed)" if fit.clean_tension_fixed else
                f"{format_si(glo, 'tension', 'mN/m', 4)} to {format_si(ghi, 'tension', 'mN/m', 4)}"),
             f"{'depleted layer -Gamma/c':<28}{format_si(d, 'length', 'nm', 4):>22}   "
             f"{format_si(dlo, 'length', 'nm', 3)} to {format_si(dhi, 'length', 'nm', 3)}",
             "", f"{'concentration':>16}{'rows':>6}{'mean tension':>15}{'surface excess (Gibbs)':>26}   95 % interval"]
    for c, m, g, e, (elo, ehi) in zip(fit.concentration, fit.counts, fit.mean_tension, fit.surface_excess,
                                      fit.surface_excess_interval):
        lines.append(f"{format_si(c, 'concentration', 'mM', 4):>16}{int(m):>6}{format_si(g, 'tension', 'mN/m', 5):>15}"
                     f"{format_si(e, 'surface_excess', 'umol/m**2', 4):>26}   "
                     f"{format_si(elo, 'surface_excess', 'umol/m**2', 3)} to {format_si(ehi, 'surface_excess', 'umol/m**2', 3)}")
    lines += ["", "Gamma = -(c / (n R T)) d gamma/d c: negative, the salt is depleted near the interface"]
    lines += [f"note: {n}" for n in fit.notes]
    return "\n".join(lines)


def _tension_text(fit) -> str:
    b = fit.best
    rows = [("CMC", "cmc", "concentration", "mM"),
            ("max surface excess", "max_surface_excess", "surface_excess", "umol/m**2"),
            ("adsorption constant K", "adsorption_constant", "adsorption_constant", "m**3/mol"),
            ("clean tension", "clean_tension", "tension", "mN/m")]
    if fit.model == "frumkin":
        rows.append(("interaction beta", "interaction", "dimensionless", None))
    lines = [f"{fit.data.path}: {len(fit.data.concentration)} points, {fit.n_below} below and "
             f"{fit.n_above} above the CMC, {fit.temperature - 273.15:.4g} degC, n = {fit.gibbs_prefactor:g}",
             f"model used: {fit.selection}",
             f"intervals: {b.interval_method}", "",
             f"{'parameter':<24}{'value':>22}   95 % interval"]
    for label, key, dim, unit in rows:
        v = format_si(b.params[key], dim, unit, 4)
        lo, hi = (format_si(x, dim, unit, 4) for x in b.intervals[key])
        tag = " (fixed)" if key == "clean_tension" and fit.clean_tension_fixed is not None else ""
        lines.append(f"{label:<24}{v:>22}   {lo} to {hi}{tag}")
        if fit.bootstrap and key in fit.bootstrap:
            blo, bhi = (format_si(x, dim, unit, 4) for x in fit.bootstrap[key])
            lines.append(f"{'':<24}{'bootstrap':>22}   {blo} to {bhi}")
    a = float(area_from_surface_excess(b.params["max_surface_excess"]))
    alo, ahi = sorted(float(area_from_surface_excess(x)) for x in b.intervals["max_surface_excess"])
    lines.append(f"{'area per molecule':<24}{format_si(a, 'area', 'nm**2', 4):>22}   "
                 f"{format_si(alo, 'area', 'nm**2', 3)} to {format_si(ahi, 'area', 'nm**2', 3)}")
    lines += ["", f"{'model':<12}{'AICc':>10}{'residual sd':>18}"]
    for m, f in fit.fits.items():
        sd = (f.rss / max(len(f.residuals) - len(f.fitted), 1)) ** 0.5
        lines.append(f"{m:<12}{f.aicc:>10.2f}{format_si(sd, 'tension', 'mN/m', 3):>18}"
                     f"{'   <- used' if m == fit.model else ''}")
    lines += _residual_table(fit)
    if fit.notes:
        lines += [""] + [f"note: {n}" for n in fit.notes]
    return "\n".join(lines)


def _residual_table(fit) -> list:
    """The residual table: one line per row, or per distinct concentration (mean, count) when
    the series has replicates; units converted once per column, not per cell."""
    fc, ft = (1.0 / parse(f"1 {u}", "unit", d) for u, d in (("mM", "concentration"), ("mN/m", "tension")))
    c, g, r = fit.data.concentration, fit.data.tension, fit.best.residuals
    u, inv, w = np.unique(c, return_inverse=True, return_counts=True)
    if len(u) == len(c):
        head, rows = f"{'concentration':>16}{'tension':>14}{'residual':>14}", zip(c, g, r)
        return ["", head] + [f"{sig(a * fc, 4) + ' mM':>16}{sig(b * ft, 4) + ' mN/m':>14}"
                             f"{sig(e * ft, 2) + ' mN/m':>14}" for a, b, e in rows]
    mean = lambda v: np.bincount(inv, weights=v, minlength=len(u)) / w  # noqa: E731
    head = f"{'concentration':>16}{'rows':>7}{'mean tension':>15}{'mean residual':>15}"
    return ["", head] + [f"{sig(a * fc, 4) + ' mM':>16}{k:>7}{sig(b * ft, 4) + ' mN/m':>15}"
                         f"{sig(e * ft, 2) + ' mN/m':>15}" for a, k, b, e in zip(u, w, mean(g), mean(r))]


def _depletion(args) -> int:
    res = fit_depletion(args.data, partition_coefficient=args.partition_coefficient,
                        continuous=args.continuous)
    if args.json:
        print(dumps(depletion_fit_json(res)))
        return 0
    lines = [f"{res.path}: surface excess by difference, (dose - c_c V_c - c_d V_d) / area", "",
             f"{'row':>4} {'sample':<12}{'surface excess':>20}{'sd':>18}{'c continuous':>16}"
             f"{'c dispersed':>16}  notes"]
    for r in res.rows:
        sd = r["surface_excess_sd_mol_m2"]
        lines.append(
            f"{r['row']:>4} {r['sample'][:12]:<12}"
            f"{format_si(r['surface_excess_mol_m2'], 'surface_excess', 'umol/m**2', 4):>20}"
            f"{(format_si(sd, 'surface_excess', 'umol/m**2', 2) if sd is not None else 'n/a'):>18}"
            f"{format_si(r['continuous_concentration_mol_m3'], 'concentration', 'mM', 4):>16}"
            f"{format_si(r['dispersed_concentration_mol_m3'], 'concentration', 'mM', 4):>16}"
            f"  {'; '.join(r['notes'])}")
    for s, f in res.langmuir.items():
        if "note" in f:
            lines.append(f"Langmuir fit ({s}): {f['note']}")
            continue
        iv = f["intervals"]
        lines.append(
            f"Langmuir fit ({s}, {f['n_rows']} rows): max surface excess "
            f"{format_si(f['max_surface_excess_mol_m2'], 'surface_excess', 'umol/m**2', 4)} "
            f"(95 %: {' to '.join(format_si(v, 'surface_excess', 'umol/m**2', 3) for v in iv['max_surface_excess_mol_m2'])}), "
            f"K {format_si(f['adsorption_constant_m3_mol'], 'adsorption_constant', 'm**3/mol', 4)} "
            f"(95 %: {' to '.join(format_si(v, 'adsorption_constant', 'm**3/mol', 3) for v in iv['adsorption_constant_m3_mol'])})")
    lines += [f"note: {n}" for n in res.notes]
    print("\n".join(lines))
    return 0


def _partition(args) -> int:
    cmc = parse(args.cmc, "--cmc", "concentration") if args.cmc else None
    res = fit_partition(args.data, cmc=cmc)
    if args.json:
        print(dumps(partition_fit_json(res)))
        return 0
    lo, hi = res.interval
    lines = [f"{res.path}: partition coefficient c_oil/c_water = {res.partition_coefficient:.4g} [-] "
             f"(95 %: {lo:.3g} to {hi:.3g} [-]), {res.method}",
             f"CMC: {format_si(res.cmc, 'concentration', 'mM', 4) if res.cmc else 'none'} ({res.cmc_source})",
             "", f"{'row':>4}{'c water':>16}{'c oil':>16}{'ratio [-]':>12}  flag"]
    for r in res.rows:
        lines.append(f"{r['row']:>4}{format_si(r['water_concentration_mol_m3'], 'concentration', 'mM', 4):>16}"
                     f"{format_si(r['oil_concentration_mol_m3'], 'concentration', 'mM', 4):>16}"
                     f"{r['ratio']:>12.4g}  {r['flag'] or ''}")
    lines += [f"note: {n}" for n in res.notes]
    print("\n".join(lines))
    return 0


def _interaction(args) -> int:
    res = fit_interaction(args.data)
    if args.json:
        print(dumps(interaction_fit_json(res)))
        return 0
    lo, hi = res.interaction_interval
    lines = [f"{res.path}: mixed-micelle interaction beta = {res.interaction:.4g} [-] (95 %: {lo:.3g} to {hi:.3g} [-]), "
             f"regular solution (Rubingh), {res.rows} rows",
             f"pure CMCs: first component {format_si(res.cmc_1, 'concentration', 'mM', 4)}, second "
             f"{format_si(res.cmc_2, 'concentration', 'mM', 4)}; rms residual of ln CMC {res.rms_ln:.3g}",
             "synergism: the mixed CMC falls below both pure CMCs" if res.synergism else
             "no synergism in the CMC (it stays between the pure CMCs)",
             f"use in a case: [blend] micelles = \"regular\", interaction = {res.interaction:.3g}"]
    lines += [f"note: {n}" for n in res.notes]
    print("\n".join(lines))
    return 0
