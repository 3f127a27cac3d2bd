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

from .case import Case, case_with, dumps_case, load_case, loads_case, parse_case
from .errors import CalculationError, InputError, SizingError
from .fitting.depletion import fit_depletion
from .fitting.partition import fit_partition
from .fitting.tension import fit_tension, read_tension_csv
from .model import Inputs, Solution, case_inputs, solve, solve_case
from .outputs.jsonify import dumps as dumps_json
from .outputs.plan_files import build_outputs, write_outputs
from .outputs.report import render as render_report
from .outputs.result_json import plan_json
from .outputs.solve_json import solution_json
from .planning.achievable import achievable
from .planning.plan import Plan, build_plan
from .planning.scaleup import scaleup_case
from .planning.sweep import sweep
from .planning.uncertainty import monte_carlo, sensitivity
from .units import parse
from .version import __version__

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
    "read_tension_csv", "fit_tension", "fit_depletion", "fit_partition",
    # errors
    "SizingError", "InputError", "CalculationError",
    "__version__",
]
