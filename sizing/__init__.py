"""Surfactant dose sizing for emulsions and foams.

The engine: interfacial area from size distributions, adsorption isotherms, partitioning and
micelles in one mass balance, fits from lab data, scale-up and the plant-trial plan.  Pure
computation in SI floats and numpy arrays; units are parsed at the boundary (``sizing.units``).

The public API for scripted studies (see the README's "Use from Python"); after ``import sizing``::

    case = sizing.load_case("cases_demo/lotion_o_w.toml")
    sol = sizing.solve_case(case)                 # target -> dose, SI floats
    plan = sizing.build_plan(case)                # recommendation, trial matrix, parts
    html = sizing.render_report(plan)             # report.html text

Layers, lowest first: foundation (errors, units, constants, texts, files, labcsv) -> physics ->
fitting -> case -> model -> planning -> outputs -> views, cli.  ``tests/test_layers.py`` holds
the order.
"""

import importlib

from .version import __version__

# The public API is loaded on first use (PEP 562), so ``import sizing.cli`` (the command line,
# which starts by importing this package) pays only for the verb it runs.  name -> (module, attribute)
_API = {
    "Case": (".case", "Case"), "case_with": (".case", "case_with"), "dumps_case": (".case", "dumps_case"),
    "load_case": (".case", "load_case"), "loads_case": (".case", "loads_case"),
    "parse_case": (".case", "parse_case"),
    "CalculationError": (".errors", "CalculationError"), "InputError": (".errors", "InputError"),
    "SizingError": (".errors", "SizingError"),
    "fit_depletion": (".fitting.depletion", "fit_depletion"),
    "fit_partition": (".fitting.partition", "fit_partition"),
    "fit_tension": (".fitting.tension", "fit_tension"), "read_tension_csv": (".fitting.tension", "read_tension_csv"),
    "Inputs": (".model", "Inputs"), "Solution": (".model", "Solution"), "case_inputs": (".model", "case_inputs"),
    "solve": (".model", "solve"), "solve_case": (".model", "solve_case"),
    "dumps_json": (".outputs.jsonify", "dumps"),
    "build_outputs": (".outputs.plan_files", "build_outputs"),
    "write_outputs": (".outputs.plan_files", "write_outputs"),
    "render_report": (".outputs.report", "render"),
    "plan_json": (".outputs.result_json", "plan_json"),
    "solution_json": (".outputs.solve_json", "solution_json"),
    "achievable": (".planning.achievable", "achievable"),
    "Plan": (".planning.plan", "Plan"), "build_plan": (".planning.plan", "build_plan"),
    "scaleup_case": (".planning.scaleup", "scaleup_case"),
    "sweep": (".planning.sweep", "sweep"),
    "monte_carlo": (".planning.uncertainty", "monte_carlo"),
    "sensitivity": (".planning.uncertainty", "sensitivity"),
    "parse": (".units", "parse"),
    "Blend": (".physics.blend", "Blend"), "mixed_cmc": (".physics.blend", "mixed_cmc"),
    "apparent_cmc": (".physics.blend", "apparent_cmc"), "poisson_homologues": (".physics.blend", "poisson_homologues"),
    "fit_interaction": (".fitting.micelles", "fit_interaction"),
}


def __getattr__(name: str):
    try:
        module, attr = _API[name]
    except KeyError:
        raise AttributeError(f"module 'sizing' has no attribute {name!r}") from None
    value = getattr(importlib.import_module(module, __name__), attr)
    globals()[name] = value  # later look-ups are plain attribute reads
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))


__all__ = [
    # cases
    "Case", "load_case", "loads_case", "parse_case", "case_with", "dumps_case", "parse",
    # the balance
    "Inputs", "Solution", "case_inputs", "solve", "solve_case",
    # planning
    "Plan", "build_plan", "sweep", "monte_carlo", "sensitivity", "scaleup_case", "achievable",
    # outputs
    "solution_json", "plan_json", "render_report", "build_outputs", "write_outputs", "dumps_json",
    # lab fits
    "read_tension_csv", "fit_tension", "fit_depletion", "fit_partition", "fit_interaction",
    # blends
    "Blend", "mixed_cmc", "apparent_cmc", "poisson_homologues",
    # errors
    "SizingError", "InputError", "CalculationError",
    "__version__",
]
