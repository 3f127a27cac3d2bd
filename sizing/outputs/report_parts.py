"""Report sections of the plan's optional parts: scale-up, achievable d32, uncertainty, adsorption.

Each renderer takes a :class:`sizing.planning.plan.Plan` and returns an HTML fragment, '' when
its part is absent (``None``).
"""

from __future__ import annotations

import math
import re

import numpy as np

from ..texts import field_label, words_for
from .htmlbits import chart, esc, hand_drawn, q, section, table, unit_text
from .result_json import achievable_part_json, adsorption_json, scaleup_part_json, uncertainty_part_json


def _input_name(path: str, components=()) -> str:
    """Name a sampled input as people say it (``"surfactant.cmc"`` -> ``"CMC"``), not its TOML path.

    The scale-up band is not a case field; a blend component's field is named with the component
    (``"blend.component[1].cmc"`` -> ``"nonionic B: CMC"``).
    """
    if path == "scaleup.plant_d32":
        return "plant d32 (scale-up band)"
    m = re.fullmatch(r"blend\.component\[(\d+)\]\.(\w+)", path)
    if m:
        i = int(m.group(1))
        who = components[i] if i < len(components) else f"component {i + 1}"
        return f"{who}: {field_label('surfactant.' + m.group(2))}"
    return field_label(path)


def render_scaleup(plan) -> str:
    if plan.scaleup is None:
        return ""
    j = scaleup_part_json(plan.scaleup)
    lo, hi = j["plant_d32_band_m"]
    rows = [("lab d32 (the case's [drops])", q(j["lab_d32_m"], "um", scale=1e6)),
            ("PLANT d32 used for the dose", q(j["plant_d32_m"], "um", scale=1e6)),
            ("plant d32 band", f"{q(lo, 'um', scale=1e6)} to {q(hi, 'um', scale=1e6)}"),
            ("band", j["band_method"]), ("method", j["method"] + (f", rule {j['rule']}" if j["rule"] else "")),
            ("exponent", f"{j['exponent']:.4g}" + (" (DEFAULT, not fitted)" if j["exponent_is_default"] else "")),
            ("exponent source", j["exponent_source"])]
    body = table(rows, numeric_cols=())
    body += "".join(f'<p class="warn">{esc(w)}</p>' for w in j["warnings"])
    body += ("<p>The dose, the charge and the trial levels use the plant d32; the lab d32 is shown for "
             "comparison. Confirm the plant drop size on the first trial batch.</p>")
    return section("scaleup", "Scale-up: plant drop size", body)


def render_achievable(plan) -> str:
    part = plan.achievable
    if part is None or not part.feasible:
        return ""
    j, cv = achievable_part_json(part), part.curve
    m, af = float(plan.inputs.molar_mass), float(plan.inputs.active_fraction)
    to_kg = m / af

    @hand_drawn
    def draw(fig):
        ax = fig.add_subplot()
        d = np.asarray(cv["d32_m"], dtype=float)
        ok = np.isfinite(d)
        ax.plot(np.asarray(cv["dose_mol"])[ok] * to_kg, d[ok] * 1e6, color="#1f5fa8", label="d32 reached")
        ax.axvline(cv["knee_dose_mol"] * to_kg, color="#c0392b", ls="--", lw=1,
                   label=f"knee {q(cv['knee_dose_mol'] * to_kg, 'kg')}")
        ax.plot([t.kg_product for t in plan.trial],
                [lv["achievable_d32_m"] * 1e6 if lv["achievable_d32_m"] else np.nan for lv in j["levels"]],
                "o", color="#555", ms=4, label="trial levels")
        ax.set_yscale("log")
        ax.set_xlabel("product charged per batch [kg]")
        ax.set_ylabel("d32 reached [um]")
        ax.legend(fontsize=7)

    eq = words_for(plan.case)["equipment"]  # result.json says 'homogeniser'; the table the case's word
    rows = [(f"{lv['level']:g} x", q(lv["kg_product"], "kg"), q(lv["achievable_d32_m"], "um", scale=1e6),
             eq if lv["limited_by"] == "homogeniser" else lv["limited_by"]) for lv in j["levels"]]
    body = chart(draw, "Surfactant-limited drop size: the d32 a charge can reach [um] against the product "
                       "charged [kg]; right of the knee more surfactant no longer makes smaller drops.")
    body += table(rows, ("level", "product [kg/batch]", "d32 reached [um]", "limited by"), numeric_cols=(1, 2))
    body += (f"<p>Knee dose {esc(q(j['knee_dose_kg_product'], 'kg product'))}: the {esc(eq)}'s own d32 "
             f"{esc(q(j['homogeniser_d32_m'], 'um', scale=1e6))} needs at least this much at coverage "
             f"{esc(q(j['min_coverage'], '(-)'))}. Below it the surfactant, not the {esc(eq)}, limits "
             "the drop size (equilibrium estimate).</p>")
    return section("achievable", "Drop size a charge can reach", body)


def render_uncertainty(plan) -> str:
    part = plan.uncertainty
    if part is None:
        return ""
    j, h = uncertainty_part_json(plan.case, part), part.histogram
    d = j["dose_kg_product"]
    charge = plan.recommendation.kg_product_per_batch

    def draw_hist(fig):
        ax = fig.add_subplot()
        e = np.asarray(h["edges_kg"])
        ax.stairs(h["counts"], e, fill=True, color="#9bbbe0", label="draws")
        for key, ls in (("p10", ":"), ("p50", "-"), ("p90", "--")):
            if d[key] is not None:
                ax.axvline(d[key], color="#1f5fa8", ls=ls, lw=1, label=f"{key.upper()} {q(d[key], 'kg')}")
        ax.axvline(charge, color="#c0392b", lw=1.5, label=f"charge {q(charge, 'kg')}")
        ax.set_xlabel("product needed per batch [kg]")
        ax.set_ylabel("draws [-]")
        ax.legend(fontsize=7)

    sens = j.get("sensitivity") or []
    comps = tuple(plan.inputs.blend.names) if getattr(plan.inputs, "blend", None) is not None else ()

    def draw_tornado(fig):
        ax = fig.add_subplot()
        base = j["deterministic_kg_product"] or 0.0
        names = [_input_name(s["path"], comps) for s in sens][::-1]
        for i, s in enumerate(sens[::-1]):
            lo, hi = s["dose_low_kg"], s["dose_high_kg"]
            if lo is None or hi is None:
                continue
            ax.barh(i, hi - base, left=base, color="#c0392b", alpha=0.7)
            ax.barh(i, lo - base, left=base, color="#1f5fa8", alpha=0.7)
        ax.set_yticks(range(len(names)), names, fontsize=8)
        ax.axvline(base, color="#333", lw=1)
        ax.set_xlabel("product needed per batch [kg] (blue: input at its low end, red: high end)")

    pct = j["percentile"]
    rows = [("samples", f"{j['samples']}"), ("P10", q(d["p10"], "kg product")), ("P50", q(d["p50"], "kg product")),
            ("P90", q(d["p90"], "kg product")),
            (f"P{pct:g} (covered by the charge)", q(j["dose_kg_product_at_percentile"], "kg product")),
            ("deterministic dose", q(j["deterministic_kg_product"], "kg product")),
            ("recommended charge", q(charge, "kg product")),
            ("probability the charge meets the target", q(100 * j["probability_target_met"], "%", 4)),
            ("draws whose target is above the CMC", q(100 * j["infeasible_fraction"], "%", 3))]
    body = (f"<p><b>The recommended charge covers the {pct:g}th percentile</b> of the dose needed over the "
            f"spreads given in the case, plus the margin ({esc(j['sampling'])}).</p>")
    body += table(rows, numeric_cols=(1,))
    body += chart(draw_hist, "Monte Carlo: product needed per batch [kg] over the input spreads, with "
                             "P10, P50, P90 and the recommended charge.")
    if sens:
        body += chart(draw_tornado, "Sensitivity (tornado): the dose with each input at its P10 and P90 "
                                    "(low and high for a uniform spread), the others at their values.")
        body += table([(_input_name(s["path"], comps), q(s["dose_low_kg"], "kg"), q(s["dose_high_kg"], "kg"),
                        q(s["elasticity"], "(-)")) for s in sens],
                      ("input", "dose at low [kg]", "dose at high [kg]", "elasticity d ln dose / d ln x"),
                      numeric_cols=(1, 2, 3))
    return section("uncertainty", "How sure: uncertainty and sensitivity", body)


def render_adsorption(plan) -> str:
    if plan.adsorption is None:
        return ""
    j = adsorption_json(plan.adsorption)
    rows = [("adsorption depth h = Gamma/c", q(j["depth_m"], "um", scale=1e6)),
            ("diffusion time tau_D = h**2/D", q(j["diffusion_time_s"], "s")),
            (f"residence time in the {words_for(plan.case)['equipment']}", q(j["residence_time_s"], "s")),
            ("tau_D / residence time", q(j["ratio"], "(-)") + f" (flag above {j['threshold']:g})")]
    cls = "muted"  # an optimistic verdict is also in the report's top box (plan_warnings)
    body = f'<p class="{cls}">{esc(unit_text(j["message"]))}</p>' + table(rows)
    return section("adsorption", "Adsorption speed", body)


_PLACE_COLORS = {"water": "#4c8bd6", "oil": "#d6a04c", "interface": "#4caf50", "micelles": "#9c6ad6"}
_COMPONENT_COLORS = ("#1f5fa8", "#d35400", "#27ae60", "#8e44ad", "#c0392b", "#16a085", "#7f8c8d", "#f39c12")


def render_blend(plan) -> str:
    """The blend: charge per component, where each goes, interface composition, apparent CMC, ratio."""
    part = plan.blend
    if part is None:
        return ""
    r = plan.recommendation
    comps = part.components
    rows = [(c.name, q(c.kg_product, "kg"), q(c.kg_active, "kg"), q(100 * c.mass_fraction, "%", 3),
             q(c.coverage, "(-)")) for c in comps]
    body = (f"<p>Charge each product separately: the blend total {esc(q(r.kg_product_per_batch, 'kg'))} "
            "splits as below (the trial levels are multiples of the whole blend at this ratio).</p>")
    body += table(rows, ("component", "product per batch [kg]", "active per batch [kg]",
                         "share of the active [% by mass]", "interface share at the charge [-]"),
                  numeric_cols=(1, 2, 3, 4))
    places = ("water", "oil", "interface", "micelles")

    def draw_split(fig):
        ax = fig.add_subplot()
        names = [c.name for c in comps]
        left = np.zeros(len(comps))
        for k in places:
            vals = np.array([c.split_mol[k] * (c.kg_active / c.mol if c.mol > 0 else 0.0) for c in comps])
            if np.all(vals == 0):
                continue
            ax.barh(names, vals, left=left, color=_PLACE_COLORS[k], label=k)
            left += vals
        ax.set_xlabel("active per batch at the recommended charge [kg]")
        ax.legend(loc="lower right", fontsize=8)
        ax.invert_yaxis()

    body += chart(draw_split, "Where each component goes at the recommended charge [kg active per batch].")
    dose, cov = part.dose_kg_product, part.coverage_by_component

    def draw_cov(fig):
        ax = fig.add_subplot()
        ax.stackplot(dose, cov.T, labels=[c.name for c in comps],
                     colors=[_COMPONENT_COLORS[j % len(_COMPONENT_COLORS)] for j in range(len(comps))], alpha=0.8)
        ax.axvline(r.kg_product_per_batch, color="#c0392b", ls="--", lw=1,
                   label=f"charge {q(r.kg_product_per_batch, 'kg')}")
        if math.isfinite(part.onset_kg_product):
            ax.axvline(part.onset_kg_product, color="#7d3c98", ls=":", lw=1,
                       label=f"mixed micelles from {q(part.onset_kg_product, 'kg')}")
        ax.set_xlim(0, dose[-1])
        ax.set_ylim(0, 1)
        ax.set_xlabel("blend charged per batch [kg product]")
        ax.set_ylabel("coverage theta_i [-] (stacked)")
        ax.legend(loc="lower right", fontsize=7)

    body += chart(draw_cov, "Interface composition against the blend charged: each band is one component's "
                            "share of the interface (the top edge is the total coverage). Above the onset of "
                            "mixed micelles the monomer composition keeps moving, so the total can fall.")
    if part.apparent_cmc.size and np.all(np.isfinite(part.apparent_cmc)):
        def draw_app(fig):
            ax = fig.add_subplot()
            ax.plot(part.oil_water_ratio, part.apparent_cmc, color="#1f5fa8", label="apparent CMC")
            ax.axhline(part.mixed_cmc, color="#555", ls=":", lw=1, label=f"in water alone {q(part.mixed_cmc, 'mM')}")
            if math.isfinite(part.batch_oil_water_ratio):
                ax.axvline(part.batch_oil_water_ratio, color="#c0392b", ls="--", lw=1,
                           label=f"this batch, V_oil/V_water = {part.batch_oil_water_ratio:.3g}")
            ax.set_xlabel("oil/water volume ratio V_oil/V_water [-]")
            ax.set_ylabel("apparent CMC [mM of water]")
            ax.legend(fontsize=7)

        body += chart(draw_app, "Apparent CMC of the blend against the oil/water ratio, the interface left "
                                "out: the oil takes the oil-soluble components, so more blend is needed before "
                                "micelles form; one reason a lab dose does not carry over to another phase ratio.")
    ch = part.cheapest
    if ch is not None:
        def draw_cost(fig):
            ax = fig.add_subplot()
            ax.plot(ch.grid, ch.cost, color="#1f5fa8", label="cost per batch (target met)")
            if math.isfinite(ch.fraction):
                ax.plot([ch.fraction], [ch.cost_per_batch], "D", color="#c0392b", ms=6,
                        label=f"cheapest at {ch.fraction:.3g}")
            ax.set_xlabel(f"{ch.basis} fraction of {ch.component} in the active blend [-]")
            ax.set_ylabel(f"blend cost per batch [{ch.currency}]")
            ax.legend(fontsize=7)

        if math.isfinite(ch.fraction):
            text = (f"<p>Cheapest ratio in the range given: {esc(ch.component)} at {ch.fraction:.3g} "
                    f"({ch.basis} fraction of the active), {esc(q(ch.kg_product, 'kg'))} of products for "
                    f"{esc(q(ch.cost_per_batch, ch.currency, digits=5))} per batch before margin and rounding"
                    + (" - at an end of the range: the optimum may lie beyond it." if ch.at_bound else ".")
                    + " Check emulsion stability and any legal limit on each emulsifier before changing the ratio.</p>")
        else:
            text = "<p>No ratio in the range given meets the target.</p>"
        body += text + chart(draw_cost, "Blend cost per batch for the target against the ratio (gaps: target "
                                        "not met at that ratio).")
    return section("blend", "The blend", body)


def render_conditions(plan) -> str:
    """Process and storage: the charge's coverage against temperature, batch to storage."""
    c = plan.conditions
    if c is None:
        return ""

    @hand_drawn
    def draw(fig):
        ax = fig.add_subplot()
        t = c.temperature - 273.15
        ax.plot(t, c.coverage, color="#1f5fa8", label="coverage of the charge")
        ax.axhline(c.target_coverage, color="#c0392b", ls="--", lw=1, label=f"target {c.target_coverage:.3g}")
        ax.axvline(c.batch_temperature - 273.15, color="#555", ls=":", lw=1,
                   label=f"batch {c.batch_temperature - 273.15:.4g} °C")
        if math.isfinite(c.storage_temperature):
            ax.axvline(c.storage_temperature - 273.15, color="#7d3c98", ls="-.", lw=1,
                       label=f"storage {c.storage_temperature - 273.15:.4g} °C")
        ax.set_xlabel("temperature [°C]")
        ax.set_ylabel("coverage theta [-]")
        ax.set_ylim(0, 1)
        ax.legend(fontsize=7)

    rows = [("batch temperature", q(c.batch_temperature - 273.15, "°C"))]
    if math.isfinite(c.storage_temperature):
        rows += [("storage temperature", q(c.storage_temperature - 273.15, "°C")),
                 ("coverage of the charge in storage", q(c.storage_coverage, "(-)"))]
    body = table(rows) + chart(draw, "Coverage of the recommended charge against temperature, the phases and "
                                     "the interfacial area held: K and the CMC move with the case's temperature "
                                     "laws (none given: they stay as measured). Equilibrium estimate; confirm "
                                     "stability by a storage test.")
    return section("conditions", "Process and storage", body)


def render_recipe(plan) -> str:
    """The recipe's current charge beside the plan: where it goes, the coverage it gives, its reserve."""
    r = plan.recipe
    if r is None:
        return ""
    total = sum(r.split_mol.values()) or 1.0
    places = words_for(plan.case)["places"]
    rows = [("current charge", f"{q(r.kg_product, 'kg product')} ({q(r.kg_active, 'kg active')})"),
            ("against the recommended charge", q(r.times_recommended, "x", digits=3)),
            ("coverage it gives", q(r.coverage, "(-)")),
            (f"{words_for(plan.case)['free']} it leaves", q(r.free_concentration, "mM"))]
    rows += [(f"of it: {k}", q(100 * v / total, "%", digits=3)) for k, v in r.split_mol.items()
             if (places is None or k in places or v > 0)]
    if r.kg_product >= r.demand_kg_product:
        rows.append(("reserve beyond the equilibrium demand", q(100 * r.reserve_share, "% of the charge", digits=3)))
    else:
        rows.append(("below the equilibrium demand", f"{q(r.demand_kg_product, 'kg product')} needed for the target"))
    text = ("<p>The reserve is what the recipe carries beyond the equilibrium demand of interface and phases "
            "for the target: it may be doing other work (storage stability, texture, process losses, "
            "ingredients that bind surfactant). Lower a recipe charge only through trials, within the legal "
            "limits for the product.</p>")
    return section("recipe", "The current recipe charge", table(rows) + text)
