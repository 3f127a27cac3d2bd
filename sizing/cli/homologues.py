"""``sizing homologues``: a technical ethoxylate as homologue cuts, ready to paste as a ``[blend]``.

A nominal "C12 alcohol + 7 EO" is a Poisson spread of EO numbers; the short-EO homologues are
more oil-soluble and more surface-active, so the oil takes them and the apparent CMC of the whole
rises with the oil/water ratio.  This verb expands the nominal product with the log-linear rules
the user gives (CMC, partition coefficient and adsorption constant per EO unit), prints the cuts
and the apparent CMC against the oil/water ratio, and writes the ``[blend]`` block (mole
fractions, ideal mixed micelles) to paste into a case.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import tomli_w

from ..errors import InputError
from ..files import write_atomic
from ..physics import blend as blend_physics
from ..units import parse, sig
from .common import guarded, print_json

HELP = "a technical ethoxylate as homologue cuts (Poisson EO spread): [blend] block, apparent CMC"


def register(sub) -> None:
    p = sub.add_parser("homologues", help=HELP,
                       description="Expand a nominal ethoxylate into homologue cuts with a Poisson "
                                   "distribution of EO number, each with its own CMC, partition coefficient "
                                   "and adsorption constant from log-linear rules you give; print the cuts and "
                                   "the apparent CMC against the oil/water ratio, and write a [blend] block.")
    p.add_argument("--mean-eo", type=float, required=True, help="mean EO number of the product, e.g. 7")
    p.add_argument("--tail-molar-mass", required=True, help="molar mass without EO units, e.g. '186.3 g/mol'")
    p.add_argument("--cmc", required=True, help="CMC of the homologue with --at-eo EO units, e.g. '0.08 mM'")
    p.add_argument("--at-eo", type=float, default=None,
                   help="the EO number the --cmc, --partition-coefficient and --adsorption-constant values "
                        "hold at (default: the mean EO)")
    p.add_argument("--cmc-factor-per-eo", type=float, required=True,
                   help="CMC ratio of neighbouring homologues (one more EO unit), e.g. 1.14")
    p.add_argument("--partition-coefficient", type=float, default=0.0,
                   help="c_oil/c_water of the --at-eo homologue (default 0: none in the oil)")
    p.add_argument("--partition-factor-per-eo", type=float, default=1.0,
                   help="ratio of neighbouring homologues' partition coefficients, e.g. 0.55 (below 1: the "
                        "short-EO ones go into the oil)")
    p.add_argument("--max-surface-excess", required=True, help="saturation surface excess, e.g. '2.6 umol/m**2'")
    p.add_argument("--adsorption-constant", required=True, help="K of the --at-eo homologue, e.g. '300 m**3/mol'")
    p.add_argument("--adsorption-factor-per-eo", type=float, default=None,
                   help="ratio of neighbouring homologues' K (default: the inverse of the CMC factor, K CMC "
                        "held along the series)")
    p.add_argument("--share", type=float, default=0.999,
                   help="the cuts kept hold at least this share of the molecules (default 0.999)")
    p.add_argument("--name", default="technical ethoxylate", help="name of the blend")
    p.add_argument("--oil-water", default="0..2:9",
                   help="oil/water volume ratios for the apparent CMC, LOW..HIGH:N (default 0..2:9)")
    p.add_argument("--out", metavar="FILE.toml", help="write the [blend] block to FILE.toml (atomically)")
    p.add_argument("--json", action="store_true", help="print the cuts and the apparent CMC as JSON")
    p.set_defaults(func=guarded(run))


def _ratios(text: str) -> np.ndarray:
    try:
        span, n = text.split(":")
        lo, hi = span.split("..")
        lo, hi, n = float(lo), float(hi), int(n)
    except ValueError:
        raise InputError(f"--oil-water: expected LOW..HIGH:N, e.g. '0..2:9', got {text!r}") from None
    if not (0 <= lo <= hi and 1 <= n <= 1000 and math.isfinite(hi)):
        raise InputError(f"--oil-water: expected 0 <= LOW <= HIGH and 1 <= N <= 1000, got {text!r}")
    return np.linspace(lo, hi, n)


def _positive(name: str, value: float) -> float:
    if not (math.isfinite(value) and value > 0):
        raise InputError(f"{name}: expected a number > 0, got {value!r}")
    return value


def homologue_blend(args) -> dict:
    """The cuts (SI arrays) from the options; raises InputError naming the option."""
    nu = float(args.mean_eo)
    if not (0 < nu <= 100):
        raise InputError(f"--mean-eo: expected a mean EO number between 0 and 100, got {args.mean_eo!r}")
    if not (0.5 <= args.share < 1):
        raise InputError(f"--share: expected a share from 0.5 to below 1, got {args.share!r}")
    tail = parse(args.tail_molar_mass, "--tail-molar-mass", "molar_mass")
    cmc = parse(args.cmc, "--cmc", "concentration")
    gi = parse(args.max_surface_excess, "--max-surface-excess", "surface_excess")
    k = parse(args.adsorption_constant, "--adsorption-constant", "adsorption_constant")
    fc = _positive("--cmc-factor-per-eo", args.cmc_factor_per_eo)
    fp = _positive("--partition-factor-per-eo", args.partition_factor_per_eo)
    fk = _positive("--adsorption-factor-per-eo", args.adsorption_factor_per_eo or 1.0 / fc)
    if not (math.isfinite(args.partition_coefficient) and args.partition_coefficient >= 0):
        raise InputError(f"--partition-coefficient: expected a number >= 0, got {args.partition_coefficient!r}")
    for name, v in (("--tail-molar-mass", tail), ("--cmc", cmc), ("--max-surface-excess", gi),
                    ("--adsorption-constant", k)):
        _positive(name, v)
    at = nu if args.at_eo is None else float(args.at_eo)
    p_ref = float(args.partition_coefficient)
    h = blend_physics.poisson_homologues(
        nu, tail_molar_mass=tail, ln_cmc_at_zero=math.log(cmc) - math.log(fc) * at, ln_cmc_per_eo=math.log(fc),
        ln_p_at_zero=(math.log(p_ref) - math.log(fp) * at) if p_ref > 0 else 0.0,
        ln_p_per_eo=math.log(fp) if p_ref > 0 else 0.0, coverage_of_distribution=args.share)
    h["partition_coefficient"] = h["partition_coefficient"] if p_ref > 0 else np.zeros(h["eo"].size)
    h["adsorption_constant"] = k * fk ** (h["eo"] - at)
    h["max_surface_excess"] = np.full(h["eo"].size, gi)
    return h


def blend_toml(h: dict, name: str) -> str:
    """The ``[blend]`` block of the cuts (mole fractions, ideal mixed micelles), as TOML text."""
    def g(x):
        return float(f"{x:.6g}")
    comps = [{"name": f"EO {int(j)}", "fraction": g(a), "molar_mass": f"{g(m * 1e3)} g/mol",
              "cmc": f"{g(c)} mM", "max_surface_excess": f"{g(gi * 1e6)} umol/m**2",
              "adsorption_constant": f"{g(k)} m**3/mol", "partition_coefficient": g(p)}
             for j, a, m, c, gi, k, p in zip(h["eo"], h["mole_fraction"], h["molar_mass"], h["cmc"],
                                            h["max_surface_excess"], h["adsorption_constant"],
                                            h["partition_coefficient"])]
    total = sum(c["fraction"] for c in comps)
    comps[int(np.argmax([c["fraction"] for c in comps]))]["fraction"] = g(
        max(comps, key=lambda c: c["fraction"])["fraction"] + 1.0 - total)  # the rounded fractions add to 1
    head = ("# Homologue cuts of a technical ethoxylate (sizing homologues): Poisson EO spread, CMC,\n"
            "# partition coefficient and adsorption constant from the log-linear rules given on the\n"
            "# command line; paste into a case in place of [surfactant] and add clean_tension, price.\n")
    return head + tomli_w.dumps({"blend": {"name": name, "fractions": "mole", "micelles": "ideal",
                                           "component": comps}})


def run(args) -> int:
    h = homologue_blend(args)
    ratios = _ratios(args.oil_water)
    phys = blend_physics.Blend(h["mole_fraction"], h["cmc"], h["max_surface_excess"], h["adsorption_constant"],
                               h["partition_coefficient"])
    app = np.asarray(blend_physics.apparent_cmc(phys, ratios), dtype=float)
    text = blend_toml(h, args.name)
    if args.out:
        path = Path(args.out)
        if path.suffix.lower() != ".toml":
            raise InputError(f"--out: expected a file name ending in .toml, got {args.out!r}")
        write_atomic(path, text)
    if args.json:
        print_json({"eo": [int(j) for j in h["eo"]], "mole_fraction": h["mole_fraction"],
                    "molar_mass_kg_mol": h["molar_mass"], "cmc_mol_m3": h["cmc"],
                    "partition_coefficient": h["partition_coefficient"],
                    "adsorption_constant_m3_mol": h["adsorption_constant"],
                    "oil_water_ratio": ratios, "apparent_cmc_mol_m3": app,
                    "written": args.out})
        return 0
    mean = float(np.sum(h["eo"] * h["mole_fraction"]))
    lines = [f"{args.name}: {h['eo'].size} cuts, EO {int(h['eo'][0])} to {int(h['eo'][-1])}, mean EO {mean:.3g} "
             f"(Poisson, {args.share:.1%} of the molecules kept)", "",
             f"{'cut':>6}{'mole %':>9}{'molar mass':>14}{'CMC':>13}{'P (oil/water)':>15}{'K':>18}"]
    for j, a, m, c, p, k in zip(h["eo"], h["mole_fraction"], h["molar_mass"], h["cmc"],
                                h["partition_coefficient"], h["adsorption_constant"]):
        lines.append(f"{'EO ' + str(int(j)):>6}{100 * a:>9.3g}{sig(m * 1e3, 4) + ' g/mol':>14}{sig(c, 3) + ' mM':>13}"
                     f"{sig(p, 3):>15}{sig(k, 3) + ' m**3/mol':>18}")
    lines += ["", "apparent CMC (micelles first form; interface left out) against the oil/water volume ratio:",
              f"{'V_oil/V_water':>15}{'apparent CMC':>16}   (mol per m**3 of water = mM)"]
    lines += [f"{sig(r, 3):>15}{sig(a, 4) + ' mM':>16}" for r, a in zip(ratios, app)]
    if app.size > 1 and app[-1] > app[0]:
        lines.append(f"the oil takes the short-EO homologues: the apparent CMC rises {app[-1] / app[0]:.3g}x over "
                     "this range, one reason lab and plant doses differ when the oil/water ratio does")
    lines.append("")
    lines.append(f"wrote {args.out}" if args.out else text)
    print("\n".join(lines))
    return 0
