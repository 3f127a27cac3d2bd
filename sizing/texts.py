"""Every user-facing text that more than one place shows: cautions, model assumptions, advice
for an unreachable target, and readable names of case fields.

One home, so the report, result.json, the command line and the workbench never disagree.  Plain
strings and small functions of numbers; no computation.
"""

from __future__ import annotations

# cautions of every plan (report.html, result.json "cautions", the workbench's Plan page)
CAUTIONS = (
    "This is an equilibrium estimate from a mass balance; confirm the dose by a plant trial before "
    "adopting it.",
    "Handle surfactants per their safety data sheet (SDS), with suitable protective equipment "
    "(eye protection, gloves) and the site's handling procedures.",
    "Food, cosmetic and pharmaceutical products have legal limits on emulsifier levels; check the "
    "charge against the regulations that apply to the product and market.",
    "Defer to local codes, site procedures and qualified practice; a plant trial needs the usual "
    "approvals (management of change, hazard review).",
)

# the same four points, short (the workbench's side panel)
CAUTIONS_BRIEF = (
    "Equilibrium estimate: confirm the dose by a lab batch and a plant trial.",
    "Handle surfactants per their safety data sheet, with suitable protective equipment.",
    "Food, cosmetic and pharmaceutical uses have legal limits on emulsifier levels.",
    "Defer to local codes and qualified practice.",
)

# the closing lines of ``sizing plan`` on the terminal
CLI_CAUTION = ("Equilibrium estimate: confirm the dose by a plant trial. Handle surfactants per their safety "
               "data sheet;\nfood, cosmetic and pharmaceutical uses have legal emulsifier limits; defer to local "
               "codes and\nqualified practice (see the cautions in report.html).")

MODEL_ASSUMPTIONS = (
    "Equilibrium: adsorption, partitioning and micellisation have finished (no kinetic losses).",
    "Pseudo-phase model: the free monomer never exceeds the CMC; surfactant beyond it forms "
    "micelles in the continuous phase.",
    "The interfacial area is the shape factor times 6 V_d / d32 (the Sauter mean sets the area).",
    "One surface-active species; other ingredients neither adsorb nor bind the surfactant.",
    "The partition coefficient of the monomer is constant below the CMC.",
    "The isotherm constants, the CMC and the partition coefficient hold at the batch temperature as "
    "given (the temperature enters only through R T in the equation of state): measure them near "
    "the process temperature.",
    "Nothing is lost to vessel walls, foam or air (in an emulsion), or to solids and other ingredients "
    "that adsorb surfactant.",
)


# ---------------------------------------------------------------------------------------------
# a target the CMC does not allow
#
# The free monomer cannot exceed the CMC, so the largest coverage is theta(CMC).  Every isotherm
# here gives theta from the product K c alone (Langmuir: theta = Kc/(1 + Kc)), so the ceiling
# theta(K CMC) rises with K x CMC: stronger adsorption at the same CMC, or a HIGHER CMC at the
# same K.  A lower CMC at the same K lowers the ceiling.  Drop size and dose do not move it.


def unreachable_reason(max_coverage: float) -> str:
    """Return the one-line reason a target is not reachable (solve JSON ``unreachable``)."""
    return (f"the target needs a free concentration above the CMC; at equilibrium the coverage "
            f"cannot exceed {float(max_coverage):.4g}")


EOS_UNREACHABLE = ("the equation of state cannot lower the tension to the target at any coverage below 1 "
                   "(its surface pressure n R T Gamma_inf ln(1/(1 - theta)) is too small for this Gamma_inf); "
                   "for proteins and polymers the small-molecule equation of state understates the lowering "
                   "of the tension: use a coverage or surface-load target (target.surface_load, mg/m**2) and give the "
                   "measured plateau tension (surfactant.plateau_tension)")


def unreachable_options(max_coverage: float) -> tuple[str, ...]:
    """Return what an engineer can do when the target needs more than the CMC allows."""
    return (
        f"Accept a lower coverage: at equilibrium the CMC caps it at {max_coverage:.3g} "
        "(set target.coverage below that and re-plan).",
        "Choose another surfactant with a larger product K x CMC (adsorption constant times CMC): one "
        "that adsorbs more strongly at a similar CMC, or has a higher CMC at a similar adsorption "
        "constant. The coverage at the CMC rises with K x CMC; a lower CMC alone lowers it.",
        "Make larger drops or bubbles (less area): this lowers the dose but does not raise the "
        "coverage ceiling, which is set by K x CMC.",
        "A co-surfactant or salt changes both K and the CMC; what counts is the tension at the CMC (a lower "
        "tension at the CMC means a higher coverage there): measure it in the lab before relying on it.",
    )


def unreachable_explanation(what: str, needed_mM: float, needed_coverage: float, cmc_mM: float,
                            max_coverage: float) -> str:
    """Return the workbench's explanation of an unreachable target (numbers already in mM)."""
    return (
        f"The target ({what}) needs {needed_mM:.3g} mM of free surfactant in the continuous phase "
        f"(coverage {needed_coverage:.3g}), but the CMC is {cmc_mM:.3g} mM. Surfactant added "
        f"beyond the CMC forms micelles and the free concentration stops rising, so at equilibrium "
        f"the coverage cannot exceed {max_coverage:.3g}, whatever the dose. Lower the "
        f"target to at most that coverage, or choose a surfactant with a larger K x CMC: one that adsorbs "
        f"more strongly (a larger adsorption constant) or has a higher CMC."
    )


# ---------------------------------------------------------------------------------------------
# a missing adsorption constant: how to get one (the case-file error and ``check``)

ADSORPTION_CONSTANT_HINT = (
    "the isotherm constant K (e.g. '1.2 m**3/mol'); fit it from a tension isotherm with "
    "'sizing fit tension TENSION.csv' (tension against concentration below and above the CMC) and name the "
    "fitted block with surfactant.from; without data, typical orders of magnitude are (common practice, "
    "not a substitute for a fit): K about 10/CMC to 50/CMC, i.e. anionic sulfates and sulfonates or "
    "cationic quats (CMC 1-20 mM) 0.5-5 m**3/mol, ethoxylated nonionics (CMC 0.01-0.1 mM) 100-5000 m**3/mol")

# ---------------------------------------------------------------------------------------------
# readable names of case fields

FIELD_LABELS = {
    "batch.volume": "batch volume", "batch.mass": "batch mass",
    "batch.dispersed_fraction": "dispersed volume fraction", "batch.temperature": "temperature",
    "batch.dispersed_mass_fraction": "dispersed mass fraction",
    "batch.continuous_density": "continuous-phase density", "batch.dispersed_density": "dispersed-phase density",
    "drops.d32": "Sauter mean diameter d32", "drops.median": "median diameter", "drops.gsd": "geometric SD",
    "drops.characteristic_size": "RRSB characteristic size", "drops.spread": "RRSB spread",
    "drops.shape_factor": "shape factor", "surfactant.molar_mass": "molar mass",
    "surfactant.active_fraction": "active fraction of the product", "surfactant.cmc": "CMC",
    "surfactant.max_surface_excess": "maximum surface excess",
    "surfactant.area_per_molecule": "area per molecule",
    "surfactant.adsorption_constant": "adsorption constant K", "surfactant.interaction": "Frumkin beta",
    "surfactant.gibbs_prefactor": "Gibbs prefactor n", "surfactant.partition_coefficient": "partition coefficient",
    "surfactant.clean_tension": "clean-interface tension", "surfactant.price_per_kg": "price per kg of product",
    "surfactant.diffusivity": "monomer diffusivity", "target.coverage": "target coverage",
    "target.tension": "target tension", "target.free_concentration": "target free concentration",
    "target.margin": "safety margin", "recommendation.increment": "charge increment",
    "scaleup.plant": "plant process variable", "scaleup.plant_diameter": "plant impeller diameter",
    "scaleup.exponent": "power-law exponent b", "scaleup.lab_diameter": "lab impeller diameter",
    "scaleup.lab_speed": "lab speed", "scaleup.plant_speed": "plant speed",
    "scaleup.weber_exponent": "Weber exponent",
    "process.residence_time": "residence time where the drops or bubbles are made",
    "batch.salt": "salt concentration", "surfactant.micellisation_enthalpy": "micellisation enthalpy",
    "surfactant.adsorption_enthalpy": "adsorption enthalpy", "surfactant.counterion_binding": "counter-ion binding",
    "surfactant.fraction": "share in the blend", "surfactant.price": "price per kg of product",
    "blend.clean_tension": "clean-interface tension", "blend.interaction": "mixed-micelle interaction beta",
}


def field_label(path: str) -> str:
    """Return a readable name of a case field (``"drops.d32"`` -> ``"Sauter mean diameter d32"``).

    >>> field_label("drops.d32")
    'Sauter mean diameter d32'
    >>> field_label("batch.some_key")
    'some key'
    """
    return FIELD_LABELS.get(path) or path.partition(".")[2].replace("_", " ")


# ---------------------------------------------------------------------------------------------
# the number in context (beside the headline of the report and the terminal)

DOSE_CONTEXT = (
    "This is the equilibrium demand of the interface and the phases: the least surfactant that covers "
    "the drops or bubbles to the target once adsorption, partitioning and micelles have settled. It is "
    "often far below a recipe's use level (creams commonly carry 1-5 % emulsifier), which also pays for "
    "storage stability, texture, process losses and ingredients that bind surfactant; do not cut an "
    "existing recipe down to it without trials.")

DOSE_CONTEXT_SHORT = "equilibrium demand of interface and phases: often far below a recipe's use level"


# ---------------------------------------------------------------------------------------------
# what accepts a trial level (report and trial_plan.csv)

PASS_BAND = 0.10  # our choice of acceptance band on d32 (about a laser-diffraction repeatability); see PASS_NOTE

PASS_NOTE = ("Pass criteria use a 10 % band on the planned d32 as a starting point (our choice, about the "
             "repeatability of a size measurement); replace it by the product specification where one exists.")


def pass_criterion(system: str, continuous: str, level: float, d32_um: float) -> str:
    """Return what result accepts a trial level (``d32_um``: the planned Sauter mean in µm).

    >>> pass_criterion("emulsion", "water", 1.0, 3.0)[:60]
    'pass if the fresh d32 is at most 3.3 µm (planned 3 µm + 10 %'
    """
    limit = d32_um * (1 + PASS_BAND)
    if system == "foam":
        what = (f"pass if the fresh bubble d32 is at most {limit:.3g} µm (planned {d32_um:.3g} µm + 10 %), "
                "and overrun and drainage half-life meet the product specification")
    else:
        layer = "no free water layer or sediment" if continuous == "oil" else "no free oil and creaming"
        what = (f"pass if the fresh d32 is at most {limit:.3g} µm (planned {d32_um:.3g} µm + 10 %), within "
                f"10 % of it after 24 h, and {layer} beyond the product specification")
    if level < 1 - 1e-9:
        return what + "; a pass here says the charge could come down to this level (repeat before adopting it)"
    if level > 1 + 1e-9:
        return what + "; expected to pass: if the 1 x level fails and this one passes, adopt this level"
    return what + "; a pass confirms the recommended charge"


# ---------------------------------------------------------------------------------------------
# words that fit the system (report, terminal): what makes the drops, what the free surfactant
# is called, which places the surfactant can go to

EQUIPMENT_BY_SCALEUP = {"stirred_tank": "stirred tank", "tip_speed": "rotor-stator mixer",
                        "pressure": "homogeniser", "energy_density": "homogeniser"}

MACROMOLECULE_MOLAR_MASS = 5.0  # kg/mol: above this and without a CMC, a protein or polymer (our line)


def equipment_word(system: str, equipment: str | None = None, scaleup_method: str | None = None,
                   scaleup_variable: str | None = None) -> str:
    """Return what makes the drops or bubbles, as the case says it.

    ``[process] equipment`` wins; else a foam's is the aerator, a ``[scaleup]`` stirred tank or
    rotor-stator mixer (a tip-speed power law) is named so, and every other emulsion's is the
    homogeniser.

    >>> equipment_word("foam"), equipment_word("emulsion", scaleup_method="stirred_tank")
    ('aerator', 'stirred tank')
    >>> equipment_word("emulsion", "colloid mill"), equipment_word("emulsion", scaleup_variable="pressure")
    ('colloid mill', 'homogeniser')
    """
    if equipment:
        return equipment
    if system == "foam":
        return "aerator"
    if scaleup_method == "stirred_tank":
        return EQUIPMENT_BY_SCALEUP["stirred_tank"]
    return EQUIPMENT_BY_SCALEUP.get(scaleup_variable or "", "homogeniser")


def free_word(has_cmc: bool, molar_mass: float) -> str:
    """Return the name of the unadsorbed surfactant in the continuous phase.

    "surfactant monomer", never "monomer" alone (a monomer pre-emulsion has monomers of its own);
    a protein or polymer (no CMC, molar mass above 5 kg/mol) has no monomers to speak of.

    >>> free_word(True, 0.288), free_word(False, 23.6)
    ('free surfactant monomer', 'unadsorbed protein or polymer')
    """
    if not has_cmc and molar_mass > MACROMOLECULE_MOLAR_MASS:
        return "unadsorbed protein or polymer"
    return "free surfactant monomer"


def places(system: str, has_cmc: bool) -> tuple[str, ...]:
    """Return where the surfactant can go: no oil in a foam, no micelles without a CMC.

    >>> places("foam", False), places("emulsion", True)
    (('water', 'interface'), ('water', 'oil', 'interface', 'micelles'))
    """
    return tuple(p for p in ("water", "oil", "interface", "micelles")
                 if not (p == "oil" and system == "foam") and not (p == "micelles" and not has_cmc))


def applicable_assumptions(assumptions, has_cmc: bool, system: str) -> tuple[str, ...]:
    """Leave out the model assumptions about micelles (no CMC) and partitioning (a foam)."""
    out = []
    for a in assumptions:
        if not has_cmc and a.startswith("Pseudo-phase model"):
            continue
        if system == "foam" and a.startswith("The partition coefficient"):
            continue
        if a.startswith("The isotherm constants, the CMC and the partition coefficient"):
            held = ["the CMC"] * has_cmc + ["the partition coefficient"] * (system != "foam")
            if len(held) < 2:
                a = a.replace("The isotherm constants, the CMC and the partition coefficient hold",
                              "The isotherm constants" + "".join(f" and {h}" for h in held) + " hold", 1)
        if a.startswith("Equilibrium: adsorption, partitioning and micellisation have"):
            steps = ["adsorption"] + ["partitioning"] * (system != "foam") + ["micellisation"] * has_cmc
            a = a.replace("adsorption, partitioning and micellisation have",
                          (", ".join(steps[:-1]) + " and " + steps[-1] + " have") if len(steps) > 1
                          else "adsorption has", 1)
        out.append(a)
    return tuple(out)


def words_for(case) -> dict:
    """The words of :func:`equipment_word`, :func:`free_word` and :func:`places` for a case
    (duck-typed: ``case.case.system``, ``[surfactant]`` or ``[blend]``, ``[scaleup]``, ``[process]``)."""
    system = case.case.system
    comps = [case.surfactant] if getattr(case, "surfactant", None) is not None else list(case.blend.component)
    has_cmc = any(c.cmc is not None for c in comps)
    molar_mass = min(c.molar_mass.si for c in comps)
    s, p = getattr(case, "scaleup", None), getattr(case, "process", None)
    return {
        "system": system, "has_cmc": has_cmc,
        "equipment": equipment_word(system, getattr(p, "equipment", None), getattr(s, "method", None),
                                    getattr(s, "variable", None)),
        "free": free_word(has_cmc, molar_mass), "places": places(system, has_cmc),
    }
