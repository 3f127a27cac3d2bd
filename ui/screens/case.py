"""Case: start from the demo, an uploaded case file or blank; edit the batch, target and trial; save."""

import re
from pathlib import Path

import streamlit as st

from sizing import views, workspace_file
from sizing.errors import InputError
from ui import state
from ui.state import field

state.ensure_case()
st.title("Case")
st.caption("Build the case: every value carries its unit as text (for example '2.1 m**3', '60 degC'). "
           "Checks are the same as the command line's; a problem shows under its field.")

PENDING = "pending_replace"  # ("demo", index) or ("blank", None) waiting for a yes
PENDING_WS = "pending_workspace"  # (file name, Workspace) read from an uploaded workspace file, waiting for a yes
PREV_SLOTS = "workspace_prev_lab_files"  # the lab files a restored workspace replaced (brought back by Undo)


def _replace(want) -> None:
    demos = views.demo_cases()
    if want[0] == "blank":
        state.set_case(views.blank_case(), "blank case")
    else:
        data, folder = views.load_demo(demos[want[1]][1])
        state.set_case(data, "demo case" if want[1] == 0 else f"demo {demos[want[1]][1].name}", folder)
    st.session_state["just_replaced"] = True
    st.session_state.pop(PREV_SLOTS, None)


def _workspace_zip():
    """Return a function making the zip of the working case, the files it names, the fits' lab CSVs
    and the scenarios (run when the button is clicked, on another thread: the session is read now)."""
    base = Path(st.session_state[state.BASE])
    lab = {k: Path(st.session_state[k]).name for k in state.LAB_SLOTS
           if st.session_state.get(k) and Path(st.session_state[k]).parent == base}
    case = views.case_copy(state.ensure_case())
    scenarios = {k: views.case_copy(v) for k, v in st.session_state.get(state.SCENARIOS, {}).items()}
    return lambda: workspace_file.pack(workspace_file.collect(case, base, extra=lab, scenarios=scenarios))


def _restore(name: str, ws) -> None:
    """Replace the case by a checked workspace (undoable): its files go into the case folder, its
    scenarios are added to the kept ones (a name already kept gets ' (from the file)')."""
    installed = workspace_file.install(ws, state.work_dir())
    prev = {k: st.session_state.get(k) for k in state.LAB_SLOTS}
    state.set_case(installed.case, f"workspace {name}")
    st.session_state[PREV_SLOTS] = prev
    for slot, rel in installed.lab_files.items():
        if slot in state.LAB_SLOTS:
            st.session_state[slot] = str(state.work_dir() / rel)
    kept = st.session_state.setdefault(state.SCENARIOS, {})
    for label, data in installed.scenarios.items():
        key = label if label not in kept else f"{label} (from the file)"
        kept[key] = data
    st.session_state["just_replaced"] = True


# ---- where the case comes from ---------------------------------------------------------------
if st.session_state.get("restored_at"):
    r1, r2 = st.columns([3, 1])
    r1.info(f"**Restored your working case** (saved {st.session_state['restored_at']} on this computer, found "
            "by the address of this page). Keep working, or start over.", icon=":material/restore:")
    if r2.button("Start over with the demo", key="btn_start_over"):
        _replace(("demo", 0))
        st.rerun()
undo = st.session_state.get(state.UNDO)
if st.session_state.get("just_replaced") and isinstance(undo, dict) and not state.edited_since_loaded():
    u1, u2 = st.columns([3, 1])
    old_title = (undo.get("case") or {}).get("case", {}).get("title", "untitled")
    u1.success(f"Case replaced; the previous one (**{state.md_escape(old_title)}**) is kept aside.",
               icon=":material/swap_horiz:")
    if u2.button("Undo the replacement", key="btn_undo_replace", icon=":material/undo:"):
        state.undo_replace()
        prev_slots = st.session_state.pop(PREV_SLOTS, None)
        if isinstance(prev_slots, dict):  # a restored workspace also set the fits' lab files
            for slot in state.LAB_SLOTS:
                if prev_slots.get(slot):
                    st.session_state[slot] = prev_slots[slot]
                else:
                    st.session_state.pop(slot, None)
        st.session_state.pop("just_replaced", None)
        st.rerun()
with st.container(border=True):
    c1, c2 = st.columns([2.6, 2])
    demos = views.demo_cases()
    pick = c1.selectbox("Demo case", range(len(demos)), format_func=lambda i: demos[i][0], key="sel_demo",
                        help="invented scenarios shipped with the tool (cases_demo/ in a source checkout)")
    b1, b2 = c1.columns(2)
    want = None
    if b1.button("Load the demo case", key="btn_demo", icon=":material/science:"):
        want = ("demo", pick)
    if b2.button("Start a blank case", key="btn_blank", icon=":material/note_add:"):
        want = ("blank", None)
    if want is not None:
        if state.edited_since_loaded():  # edits would be lost: ask first
            st.session_state[PENDING] = want
        else:
            _replace(want)
            st.rerun()
    pending = st.session_state.get(PENDING)
    if pending:
        what = "a blank case" if pending[0] == "blank" else f"the demo '{demos[pending[1]][0]}'"
        c1.warning(f"Replace the case being edited (**{state.md_escape(state.get('case.title') or 'untitled')}**, "
                   f"with your edits) by {state.md_escape(what)}? You can undo this afterwards.",
                   icon=":material/help:")
        k1, k2 = c1.columns(2)
        if k1.button("Replace the case", key="btn_confirm_replace", type="primary"):
            st.session_state.pop(PENDING, None)
            _replace(pending)
            st.rerun()
        if k2.button("Keep my case", key="btn_cancel_replace"):
            st.session_state.pop(PENDING, None)
            st.rerun()
    up = c2.file_uploader("Open a case file (.toml, at most 5 MB)", type=["toml"], key="up_case")
    if state.new_upload(up, "case"):
        try:
            data = state.case_from_upload(up.name, up.getvalue())
        except InputError as exc:
            st.session_state["upload_error"] = state.scrub(str(exc))
        else:
            st.session_state.pop("upload_error", None)
            state.set_case(data, f"uploaded {up.name}")
            st.session_state["just_replaced"] = True
            st.session_state.pop(PREV_SLOTS, None)
            st.rerun()
    if st.session_state.get("upload_error"):
        st.error(st.session_state["upload_error"] + " — the case being edited is unchanged.",
                 icon=":material/error:")
    st.caption(f"Editing: **{st.session_state.get(state.SOURCE)}**")
    others = state.recent_workspaces()
    if others:
        with c2.expander("Working cases saved earlier on this computer"):
            pick_ws = st.selectbox("Saved working case", range(len(others)), key="sel_workspace",
                                   format_func=lambda i: f"{others[i]['title']} (saved {others[i]['saved_at']})")
            if st.button("Open it (this one stays saved)", key="btn_open_workspace"):
                state.switch_workspace(others[pick_ws]["token"])
                st.rerun()

with st.container(border=True):
    w1, w2 = st.columns([2.6, 2])
    w1.markdown("**The whole workspace in one file**: the case, the files it names (size table, fitted "
                "surfactant block), the lab CSVs of the fits and the kept scenarios, as one .zip.")
    slug_ws = re.sub(r"[^a-z0-9]+", "_", str(state.get("case.title") or "case").lower()).strip("_") or "case"
    w1.download_button("Save the workspace (.zip)", data=_workspace_zip(), file_name=f"{slug_ws}_workspace.zip",
                       mime="application/zip", key="dl_workspace", icon=":material/folder_zip:",
                       help="open it again here (or on another computer) with 'Open a workspace file'")
    up_ws = w2.file_uploader(f"Open a workspace file (.zip, at most {workspace_file.MAX_ZIP_BYTES // 2**20} MB)",
                             type=["zip"], key="up_workspace")
    if state.new_upload(up_ws, "workspace"):
        try:
            ws = workspace_file.unpack(up_ws.getvalue(), up_ws.name)
            workspace_file.validate(ws)
        except InputError as exc:
            st.session_state["ws_upload_error"] = [state.scrub(line) for line in exc.problems]
            st.session_state.pop(PENDING_WS, None)
        else:
            st.session_state.pop("ws_upload_error", None)
            st.session_state[PENDING_WS] = (up_ws.name, ws)
    if st.session_state.get("ws_upload_error"):
        w2.error("The workspace file was refused; the case being edited is unchanged.\n\n"
                 + "\n".join(f"- {state.md_escape(line)}" for line in st.session_state["ws_upload_error"]),
                 icon=":material/error:")
    pending_ws = st.session_state.get(PENDING_WS)
    if pending_ws:
        ws_name, ws = pending_ws
        extra = f"; {len(ws.scenarios)} scenario(s) will be added to yours" if ws.scenarios else ""
        w1.warning(f"Replace the case being edited (**{state.md_escape(state.get('case.title') or 'untitled')}**) "
                   f"by the workspace **{state.md_escape(ws.title)}** from {state.md_escape(ws_name)} "
                   f"({len(ws.files)} file(s){extra})? You can undo this afterwards.", icon=":material/help:")
        k1, k2 = w1.columns(2)
        if k1.button("Replace by the workspace", key="btn_confirm_workspace", type="primary"):
            st.session_state.pop(PENDING_WS, None)
            try:
                _restore(ws_name, ws)
            except (InputError, OSError) as exc:
                st.session_state["ws_upload_error"] = [state.scrub(str(exc))]
            st.rerun()
        if k2.button("Keep my case", key="btn_cancel_workspace"):
            st.session_state.pop(PENDING_WS, None)
            st.rerun()

result = state.check()
if result["by_field"].get(""):
    for line in result["by_field"][""]:
        st.error(line, icon=":material/error:")
for section in ("case", "batch", "target", "trial", "uncertainty", "recommendation"):
    state.show_errors(section)

# ---- the case ----------------------------------------------------------------------------------
left, mid, right = st.columns(3, gap="large")
with left:
    st.subheader("Case")
    field("case.title", "Title", kind="text")
    field("case.system", "System", kind="choice", options=["emulsion", "foam"])
    if state.get("case.system") == "foam":
        st.caption("A foam's continuous phase is water; the gas holds no surfactant.")
    else:
        field("case.continuous", "Continuous phase", kind="choice", options=["water", "oil"],
              help="water: oil-in-water (O/W); oil: water-in-oil (W/O)")
    field("case.notes", "Notes", kind="text", optional=True)

with mid:
    st.subheader("Batch")
    choice = state.either("Batch size given as", ["batch.volume", "batch.mass"],
                          {"batch.volume": "volume", "batch.mass": "mass"},
                          {"batch.volume": "2 m**3", "batch.mass": "2000 kg"}, key="sel_batch_size")
    if choice == "batch.volume":
        field("batch.volume", "Batch volume [volume, e.g. 2 m**3 or 500 L]")
    else:
        field("batch.mass", "Batch mass [mass, e.g. 2000 kg]")
    frac = state.either("Dispersed share given as", ["batch.dispersed_fraction", "batch.dispersed_mass_fraction"],
                        {"batch.dispersed_fraction": "volume fraction", "batch.dispersed_mass_fraction": "mass fraction"},
                        {"batch.dispersed_fraction": 0.2, "batch.dispersed_mass_fraction": 0.2}, key="sel_fraction")
    if frac == "batch.dispersed_fraction":
        field("batch.dispersed_fraction", "Dispersed volume fraction phi [-]", kind="number",
              help="volume fraction of drops or bubbles, between 0 and 1")
    else:
        field("batch.dispersed_mass_fraction", "Dispersed mass fraction [-]", kind="number",
              help="a recipe's share of oil by mass, between 0 and 1; turned into the volume fraction "
                   "with both densities (give them below)")
    field("batch.temperature", "Temperature [e.g. 25 degC or 298.15 K]")
    field("batch.continuous_density", "Continuous-phase density [e.g. 997 kg/m**3]", optional=True,
          help="optional; needed for wt% and mass outputs")
    field("batch.dispersed_density", "Dispersed-phase density [e.g. 860 kg/m**3]", optional=True)

with right:
    st.subheader("Target")
    kinds = {"coverage": "coverage [-]", "tension": "tension", "free_concentration": "free concentration",
             "surface_load": "surface load (protein, polymer)"}
    defaults = {"coverage": 0.8, "tension": "35 mN/m", "free_concentration": "0.5 mM", "surface_load": "2 mg/m**2"}
    now = next((k for k in kinds if state.get(f"target.{k}") is not None), "coverage")
    kind = st.selectbox("Target kind", list(kinds), index=list(kinds).index(now),
                        format_func=kinds.get, key="sel_target_kind")
    if kind != now:
        state.switch([f"target.{k}" for k in kinds], f"target.{kind}", defaults[kind])
        st.rerun()
    if kind == "coverage":
        field("target.coverage", "Target coverage theta [-]", kind="number",
              help="fraction of the saturated surface excess, between 0 and 1")
    elif kind == "tension":
        field("target.tension", "Target tension [e.g. 35 mN/m]")
    elif kind == "surface_load":
        field("target.surface_load", "Target surface load [e.g. 2 mg/m**2 or 0.05 umol/m**2]",
              help="the adsorbed mass per area to reach; below the saturation load (max surface excess); "
                   "not for blends")
    else:
        field("target.free_concentration", "Target free monomer concentration [e.g. 0.5 mM]")
    if kind != "surface_load" and views.suggests_surface_load(state.ensure_case()):
        st.caption("A protein or polymer (no CMC, molar mass above 5 kg/mol): a surface-load target "
                   "(mg/m²) fits it better than a tension, which the model does not estimate for it.")
    field("target.margin", "Safety margin on the dose [-]", kind="number", help="0.15 = 15 % more than the balance")

    st.subheader("Charge and trial")
    field("recommendation.increment", "Round the charge up to [mass, e.g. 0.5 kg]", optional=True)
    field("trial.levels", "Trial levels [multiples of the recommended dose]", kind="list",
          placeholder="0.8, 1.0, 1.25", optional=True)
    field("trial.batches_per_level", "Batches per level [-]", kind="number", optional=True)

with st.expander("Uncertainty (Monte Carlo settings)", expanded=False):
    u1, u2, u3 = st.columns(3)
    field("uncertainty.samples", "Samples [-]", kind="number", optional=True, placeholder="100000", where=u1)
    field("uncertainty.seed", "Seed [-]", kind="number", optional=True, placeholder="20261201", where=u2)
    field("uncertainty.percentile", "Percentile for the charge [%]", kind="number", optional=True,
          placeholder="90", where=u3)
    st.caption("Spreads of single values are written in the case file as "
               "`{ value = \"2.4 um\", rel_sd = 0.15 }` or `{ value = ..., low = ..., high = ... }`; "
               "fields holding a spread show it beside their label.")

# ---- save ----------------------------------------------------------------------------------
st.divider()
result = state.check()
s1, s2 = st.columns([1, 2])
slug = re.sub(r"[^a-z0-9]+", "_", str(state.get("case.title") or "case").lower()).strip("_") or "case"
s1.download_button("Save the case (TOML)", data=result["toml"], file_name=f"{slug}.toml",
                   mime="application/toml", key="dl_case_toml", icon=":material/download:",
                   help=f"saved as {slug}.toml")
if result["problems"]:
    s2.warning(f"The case has {len(result['problems'])} problem(s); the saved file will be refused by "
               "the command line until they are fixed.", icon=":material/warning:")
else:
    s2.success("The case is valid; `sizing solve CASE.toml` accepts the saved file.", icon=":material/check:")
st.caption(f"The case is saved as `{slug}.toml`.")
with st.expander("Case file preview (TOML)"):
    st.code(result["toml"], language="toml")
