"""Plant trials: enter or upload the trial batches, learn from them, and set the next charge.

The calibration is ``sizing calibrate CASE TRIALS.csv``: the case's spreads are the prior; the trial
measurements weight its Monte Carlo draws. The working case is never replaced without asking: the
updated case is offered as a download (or opened after a yes, with Undo).
"""

import hashlib
import json
import math
import tomllib
from pathlib import Path

import pandas as pd
import streamlit as st

from sizing import views
from sizing.errors import SizingError
from sizing.outputs.htmlbits import unit_text
from ui import charts, state
from ui.charts import UM, num

state.ensure_case()
st.title("Plant trials")
st.caption("Enter the trial batches (or upload the trials CSV), then learn from them: the inputs that carry a spread "
           "in the case are updated by the measured drop size, serum concentration and serum tension, and the next "
           "charge is planned at the same percentile, margin and rounding as the case.")
st.warning("**Plant trials.** Run trial batches under the plant's procedures and the supervision of qualified "
           "people; follow the safety data sheets of every product, any legal limits for emulsifiers in the "
           "product, and local codes. A calibrated charge is an estimate to confirm by the next trial, not a "
           "release of the batch.", icon=":material/health_and_safety:")

if st.session_state.get("calibrated_opened"):
    u1, u2 = st.columns([3, 1])
    u1.success("The updated case is now the working case; the one before is kept aside (calibrate from the original, not from this one).", icon=":material/swap_horiz:")
    if u2.button("Undo", key="btn_undo_calibrated", icon=":material/undo:"):
        state.undo_replace()
        st.session_state.pop("calibrated_opened", None)
        st.rerun()

TABLE = "trials_table"  # rows of the editor (list of dicts keyed by views.TRIAL_COLUMNS headers)
SOURCE = "trials_source"  # "table" or the name of the uploaded file used as it is
RUN = "trials_run"  # {"file": path, "digest": sha, "name": shown name} of the last calibration asked for
HEADS = [h for h, _, _ in views.TRIAL_COLUMNS]
EMPTY = [{h: None for h in HEADS} for _ in range(3)]

result = state.needs_valid_case()
case = result["case"]
if not case.spreads() and getattr(case, "scaleup", None) is None:
    st.info("The case carries no spread yet: the trials can only update inputs that are uncertain. Give the "
            "uncertain inputs a spread (Scale-up and uncertainty page, or `{ value = ..., rel_sd = ... }` in the "
            "case file) before calibrating.", icon=":material/info:")

# ---- the trial rows ----------------------------------------------------------------------------
st.subheader("Trial batches")
up = st.file_uploader("Upload a trials CSV (at most 5 MB): batch, charge [kg], and any of d32 [um], "
                      "serum concentration [mM], serum tension [mN/m], stable (yes/no)", type=["csv"],
                      key="up_trials")
if state.new_upload(up, "trials"):
    try:
        text = state.check_upload(up.name, up.getvalue(), (".csv",), "trials file")
        saved = state.save_upload(up.name, text, views.trials_rows)  # read as calibrate reads it, else refused
        rows = views.trials_rows(state.work_dir() / saved)
    except SizingError as exc:
        st.session_state["trials_error"] = state.scrub(str(exc)).replace(".incoming-", "")
    else:
        st.session_state.pop("trials_error", None)
        st.session_state[TABLE] = rows
        st.session_state["trials_file"] = str(state.work_dir() / saved)
        st.session_state[SOURCE] = saved
        st.session_state["trials_editor_v"] = st.session_state.get("trials_editor_v", 0) + 1
        st.session_state.pop(RUN, None)
if st.session_state.get("trials_error"):
    st.error(st.session_state["trials_error"] + " — nothing was read from the file.", icon=":material/error:")

files = st.session_state.get("trials_file")
options = ["table"] + ([st.session_state[SOURCE]] if files and st.session_state.get(SOURCE) not in (None, "table")
                       else [])
if st.session_state.get(SOURCE) not in options:
    st.session_state[SOURCE] = "table"
use = st.radio("Calibrate on", options, key=SOURCE, horizontal=True,
               format_func=lambda o: "the rows of the table" if o == "table" else f"the uploaded file {o} as it is",
               help="the uploaded file as it is keeps columns the table does not show (a batch volume or "
                    "temperature per row, a size table per row)") if len(options) > 1 else "table"

columns = {
    "batch": st.column_config.TextColumn("batch", help="the batch's name or number", required=True),
    "charge [kg]": st.column_config.NumberColumn("charge [kg]", help="product as delivered, per batch",
                                                 min_value=0.0, format="%.4g"),
    "d32 [um]": st.column_config.NumberColumn("d32 [µm]", help="Sauter mean diameter of the batch", min_value=0.0,
                                              format="%.4g"),
    "serum concentration [mM]": st.column_config.NumberColumn(
        "serum concentration [mM]", help="free surfactant left in the continuous phase (mM = mol/m³)",
        min_value=0.0, format="%.4g"),
    "serum tension [mN/m]": st.column_config.NumberColumn("serum tension [mN/m]", min_value=0.0, format="%.4g"),
    "stable": st.column_config.SelectboxColumn("stable", options=["yes", "no"],
                                               help="after the storage test: yes or no; empty when not tested"),
    "d32 sd [%]": st.column_config.NumberColumn("d32 sd [%]", help="measurement error of d32; empty: 10 %",
                                                min_value=0.0, format="%.3g"),
    "serum sd [%]": st.column_config.NumberColumn("serum sd [%]", help="measurement error of the serum analysis; "
                                                  "empty: 15 %", min_value=0.0, format="%.3g"),
    "notes": st.column_config.TextColumn("notes", help="not read by the calibration"),
}
EDITOR = f"trials_editor_{st.session_state.setdefault('trials_editor_v', 0)}"  # a new upload: a new editor
BASE_ROWS = "trials_base_rows"  # the rows the editor started from; its own state holds the edits since
if EDITOR not in st.session_state or BASE_ROWS not in st.session_state:
    # a fresh editor (first visit, back from another page, a new upload): start from the rows kept so far
    st.session_state[BASE_ROWS] = list(st.session_state.get(TABLE) or EMPTY)
frame = pd.DataFrame(st.session_state[BASE_ROWS], columns=HEADS)
TEXT = ("batch", "stable", "notes")
for col in HEADS:  # each column one type, whatever the rows held (a missing key is NaN otherwise)
    if col in TEXT:
        frame[col] = pd.Series([None if v is None or v is pd.NA or (isinstance(v, float) and math.isnan(v)) else
                                ("yes" if v is True else "no" if v is False else str(v)) for v in frame[col]],
                               dtype=object)
    else:
        frame[col] = pd.to_numeric(frame[col], errors="coerce").astype(float)
edited = st.data_editor(frame, num_rows="dynamic", column_config=columns, key=EDITOR, hide_index=True,
                        width="stretch", disabled=use != "table")
# the rows as edited, kept in the session: they survive moving to another page and back
st.session_state[TABLE] = views.apply_table_edits(st.session_state[BASE_ROWS], st.session_state.get(EDITOR) or {},
                                                  HEADS)
st.caption("Units as in the headers; empty cells are missing measurements, not zeros; rows are counted as in the "
           "CSV file (the first trial is row 2); stable: yes or no after the storage test, empty when not tested.")


def _rows_of(df: pd.DataFrame) -> list[dict]:
    out = []
    for rec in df.to_dict("records"):
        row = {}
        for h in HEADS:
            v = rec.get(h)
            if v is pd.NA or (isinstance(v, float) and math.isnan(v)):
                v = None
            row[h] = v
        out.append(row)
    return out


if st.button("Learn from the trials", key="btn_calibrate", type="primary", icon=":material/model_training:"):
    try:
        if use == "table":
            table_rows = _rows_of(edited)
            if not any(r.get("charge [kg]") is not None for r in table_rows):
                raise SizingError("trials table: no row has a charge; expected at least one trial batch with "
                                  "its charge [kg] of product")
            text = views.trials_csv(table_rows)
            path = state.work_dir() / state.save_upload("trials_entered.csv", text, views.trials_rows)
            name = "the table"
        else:
            path = Path(st.session_state["trials_file"])
            name = f"the uploaded file {use}"
        digest = hashlib.sha1(path.read_bytes()).hexdigest()
        st.session_state[RUN] = {"file": str(path), "digest": digest, "name": name}
        st.session_state.pop("trials_run_error", None)
    except SizingError as exc:
        st.session_state.pop(RUN, None)
        st.session_state["trials_run_error"] = (state.scrub(str(exc)).replace(".incoming-", "")
                                                .replace("trials_entered.csv", "trials table"))
if st.session_state.get("trials_run_error"):
    st.error(st.session_state["trials_run_error"], icon=":material/error:")

run = st.session_state.get(RUN)
if not run:
    st.stop()
if use == "table" and run["name"] == "the table":
    try:
        same = Path(run["file"]).read_text(encoding="utf-8") == views.trials_csv(_rows_of(edited))
    except OSError:
        same = False
    if not same:
        st.info("The table has changed since the last calibration: the figures below are for the rows as they were. "
                "Press **Learn from the trials** again.", icon=":material/info:")

try:
    cal = state.view("calibration_view", trials_path=run["file"], digest=run["digest"])
except SizingError as exc:
    msg = state.scrub(str(exc))
    if "effective sample size" in msg:
        st.error("**The trials cannot update this case.** The measured values lie where almost none of the case's "
                 "Monte Carlo draws are: the weights collapse onto a few draws, so the posterior would be noise. "
                 "Widen the spreads of the inputs the trials inform, or check the trial units and the batch size.\n\n"
                 + state.md_escape(msg), icon=":material/error:")
    else:
        st.error(state.md_escape(msg), icon=":material/error:")
    st.stop()

j = cal["result"]
nx = j["next"]
st.subheader("Next charge")
with st.container(border=True):
    charts.tiles([
        ("Next charge", num(nx["kg_product_per_batch"], "kg", 4), "product as delivered per batch, after the "
                                                                  "margin and rounding of the case"),
        (f"P{nx['percentile']:g} dose after the trials", num(nx["dose_kg_product"], "kg", 4),
         "posterior percentile dose for the target, before margin and rounding"),
        ("Charge before the trials", num(j.get("prior_charge_kg"), "kg", 4), "the same rule on the prior"),
        ("Target met, before the trials", num(100 * j["probability_target_met_before"], "%")
         if j.get("probability_target_met_before") is not None else "n/a",
         "share of the prior draws the charge before the trials covers"),
        ("Target met, after the trials", num(100 * nx["probability_target_met"], "%"),
         "share of the posterior weight the next charge covers"),
        ("Effective sample size", f"{j['effective_sample_size']:.0f} of {j['samples']}",
         "how many equally weighted draws the posterior is worth"),
    ])
stab_note = (j.get("stability") or {}).get("note")
for note in j["notes"]:
    if note == stab_note:  # shown under Stability
        continue
    if note.startswith("WARNING"):
        st.error(state.md_escape(unit_text(note)), icon=":material/warning:")
    else:
        st.caption(state.md_escape(unit_text(note)))
for w in j.get("warnings") or []:
    st.warning(state.md_escape(unit_text(w)), icon=":material/warning:")

st.subheader("What the trials taught: prior against posterior")
bands = cal["bands"]
by_path: dict = {}
for b in bands:
    by_path.setdefault(b["path"], []).append(b)
table = []
band_cols = st.columns(2, gap="large")
for k, (path, pair) in enumerate(by_path.items()):
    unit = pair[0]["unit"]
    title = f"{pair[0]['label']} [{unit}]" if unit else f"{pair[0]['label']} [-]"
    with band_cols[k % 2]:
        st.markdown(f"**{state.md_escape(title)}** ({path})")
        charts.draw("prior_posterior", pair, title, key=f"chart_band_{path}")
    for b in pair:
        table.append({"learned input": f"{b['label']} ({path})", "band": b["which"],
                      "p10": num(b["p10"], unit, 4), "p50": num(b["p50"], unit, 4), "p90": num(b["p90"], unit, 4)})
st.dataframe(pd.DataFrame(table), hide_index=True, width="stretch", key="table_posterior")
st.caption("Bars: p10 to p90; red tick: p50. Inputs without a spread were held as given.")

st.subheader("Each trial: measured against predicted")
trows, d32_pts, serum_pts = [], [], []
for r in j["trials"]:
    trows.append({"batch": r["batch"], "charge [kg]": num(r["charge_kg"], "", 4),
                  "d32 measured [µm]": num(r["d32_m"] and r["d32_m"] * UM, ""),
                  "d32 predicted [µm]": num(r["predicted_d32_m"] and r["predicted_d32_m"] * UM, ""),
                  "serum measured [mM]": num(r["serum_concentration_mol_m3"], ""),
                  "serum predicted [mM]": num(r["predicted_free_concentration_mol_m3"], ""),
                  "coverage predicted [-]": num(r["predicted_coverage"], ""),
                  "stable": "" if r["stable"] is None else ("yes" if r["stable"] else "no")})
    for which, key in (("measured", "d32_m"), ("predicted", "predicted_d32_m")):
        if r[key] is not None:
            d32_pts.append({"batch": r["batch"], "which": which, "value": r[key] * UM})
    for which, key in (("measured", "serum_concentration_mol_m3"), ("predicted", "predicted_free_concentration_mol_m3")):
        if r[key] is not None:
            serum_pts.append({"batch": r["batch"], "which": which, "value": r[key]})
st.dataframe(pd.DataFrame(trows), hide_index=True, width="stretch", key="table_trials_result")
c1, c2 = st.columns(2, gap="large")
if any(p["which"] == "measured" for p in d32_pts):
    with c1:
        charts.draw("measured_vs_predicted", d32_pts, "d32 [µm]", key="chart_trials_d32")
if any(p["which"] == "measured" for p in serum_pts):
    with c2:
        charts.draw("measured_vs_predicted", serum_pts, "serum concentration [mM]", key="chart_trials_serum")
st.caption("Predicted: the posterior-weighted mean of the Monte Carlo draws at each trial's charge.")

st.subheader("Stability")
stab = j.get("stability")
if not stab:
    st.caption("No row says whether the batch was stable: no stability model.")
elif stab.get("note"):
    st.info(state.md_escape(stab["note"]), icon=":material/info:")
else:
    items = [("Coverage for a 90 % chance of a stable batch", num(stab["coverage_for_90_percent"], "(-)"),
              f"logistic model of stable against the predicted coverage, {stab['rows']} rows, "
              f"{stab['stable_rows']} stable")]
    if stab.get("coverage_interval") and all(v is not None for v in stab["coverage_interval"]):
        lo, hi = stab["coverage_interval"]
        items.append(("Its interval", f"{num(lo, '')} to {num(hi, '')}", "of the coverage for a 90 % chance"))
    for key in ("dose_kg_product_for_90_percent", "kg_product_for_90_percent", "charge_kg_for_90_percent"):
        if stab.get(key) is not None:
            items.append(("Charge for a 90 % chance", num(stab[key], "kg", 4), "product as delivered per batch"))
            break
    charts.tiles(items)

st.subheader("The updated case")
st.caption(f"Calibrated on {state.md_escape(run['name'])}. The working case is unchanged: the updated case (each "
           "learned input at its posterior median with a spread from its posterior band, noted in the case's notes) "
           "is a separate file. Calibrate again from the original case, not from the updated one, so that no trial "
           "counts twice.")
slug = "".join(ch if ch.isalnum() else "_" for ch in str(state.get("case.title") or "case").lower()).strip("_")[:60]
with st.container(horizontal=True):
    st.download_button("updated case TOML", data=cal["updated_case"], file_name=f"{slug or 'case'}_calibrated.toml",
                       mime="application/toml", key="dl_updated_case", icon=":material/download:")
    st.download_button("calibration report.html", data=cal["report"], file_name="calibration_report.html",
                       mime="text/html", key="dl_calibration_report", icon=":material/download:")
    st.download_button("calibration result.json", data=json.dumps(j, indent=1), file_name="calibration_result.json",
                       mime="application/json", key="dl_calibration_json", icon=":material/download:")

PENDING = "pending_calibrated_case"
if st.button("Open the updated case for editing", key="btn_open_calibrated"):
    st.session_state[PENDING] = True
    st.rerun()
if st.session_state.get(PENDING):
    st.warning("Replace the working case by the updated case? The working case is kept aside: Undo brings it back.",
               icon=":material/help:")
    k1, k2 = st.columns(2)
    if k1.button("Replace the working case", key="btn_confirm_calibrated", type="primary"):
        st.session_state.pop(PENDING, None)
        state.set_case(tomllib.loads(cal["updated_case"]), "calibrated case")
        st.session_state.pop(RUN, None)  # the trials are in the new case already: no second count
        st.session_state["calibrated_opened"] = True
        st.rerun()
    if k2.button("Keep the working case", key="btn_cancel_calibrated"):
        st.session_state.pop(PENDING, None)
        st.rerun()
