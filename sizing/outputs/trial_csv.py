"""trial_plan.csv of ``sizing plan``: one row a trial level, units in the header brackets.

The last column, ``pass criterion``, says what result accepts the level (the same text as the report).
"""

from __future__ import annotations

import csv
import io
import math

from ..planning.plan import Plan
from ..texts import pass_criterion
from .result_json import trial_levels_json
from .solve_json import solution_json

TRIAL_COLUMNS = ("level [x charge]", "product [kg/batch]", "active [kg/batch]", "active [mol/batch]",
                 "product [wt% of batch]", "coverage [-]", "free monomer [mM]", "tension [mN/m]",
                 "micelle share [%]", "batches [-]", "achievable d32 [um]", "drop size limited by", "measure",
                 "pass criterion")


def trial_csv(plan: Plan) -> str:
    """Return trial_plan.csv: one row a level, units in the header brackets."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(TRIAL_COLUMNS)

    def g(x, scale=1.0):
        return "" if not math.isfinite(x) else f"{x * scale:.6g}"

    extra = trial_levels_json(plan.achievable) or [{}] * len(plan.trial)
    d32_um = solution_json(plan.solution, plan.case)["d32_m"] * 1e6
    system, continuous = plan.case.case.system, plan.case.case.continuous
    for t, lv in zip(plan.trial, extra):
        d32 = lv.get("achievable_d32_m")
        w.writerow([f"{t.level:g}", g(t.kg_product), g(t.kg_active), g(t.mol), g(t.wt_percent),
                    g(t.coverage), g(t.free_concentration), g(t.tension, 1e3), g(t.micelle_share, 100),
                    t.batches, g(d32, 1e6) if d32 is not None else "", lv.get("limited_by", ""),
                    "; ".join(t.measure),
                    pass_criterion(system, continuous, t.level, d32_um).replace("\u00b5m", "um")])  # ASCII as the header
    return buf.getvalue()
