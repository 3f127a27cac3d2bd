"""Surfactant library: save the case's surfactant (or blend) under a name, reuse an entry in any case."""

import shutil
from pathlib import Path

import pandas as pd
import streamlit as st

from sizing import library
from sizing.errors import InputError
from sizing.outputs.htmlbits import num, unit_text
from sizing.units import parse
from ui import state

state.ensure_case()
st.title("Surfactant library")
st.caption("Named surfactants and blends kept as plain TOML files in a folder of your choice: the same files a "
           "case's `[surfactant] from = \"...\"` reads on the command line. The entries shipped with the tool "
           "hold typical values of a class of surfactant from published sources (each cites its source and the "
           "temperature it holds at); they are not a product's data: measure or fit your own before a trial.")

FOLDER_KEY = "library_folder"
st.session_state.setdefault(FOLDER_KEY, str(library.default_folder()))
folder_text = st.text_input("Library folder (on this computer)", key=FOLDER_KEY,
                            help="entries are written into this folder only; it is created on the first save")
folder = Path(folder_text.strip()).expanduser() if folder_text.strip() else library.default_folder()
if folder.exists() and not folder.is_dir():
    st.error(f"Library folder: {state.md_escape(folder_text)} is a file; expected a folder.", icon=":material/error:")
    folder = None


def _si(raw, dimension: str):
    text = raw.get("value") if isinstance(raw, dict) else raw
    try:
        return parse(text, "value", dimension)
    except (InputError, TypeError, ValueError):
        return None


def _g(x, scale: float = 1.0) -> str:
    return "" if x is None else num(x * scale, 4)


def _row(e: library.Entry) -> dict:
    b = e.block if e.kind == "surfactant" else {}
    gi = _si(b.get("max_surface_excess"), "surface_excess") if "max_surface_excess" in b else None
    load = _si(b.get("max_surface_excess"), "surface_load") if gi is None and "max_surface_excess" in b else None
    area = _si(b.get("area_per_molecule"), "area")
    gamma = (f"{num(gi * 1e6, 3)} µmol/m²" if gi is not None else f"{num(load * 1e6, 3)} mg/m²" if load is not None
             else f"{num(area * 1e18, 3)} nm² a molecule" if area is not None else "")
    return {"entry": e.name,
            "kind": "blend of " + str(len(e.block.get("component", []))) if e.kind == "blend" else "surfactant",
            "where": "shipped (typical values)" if e.builtin else "yours",
            "molar mass [g/mol]": _g(_si(b.get("molar_mass"), "molar_mass"), 1e3),
            "CMC [mM]": _g(_si(b.get("cmc"), "concentration")) if "cmc" in b else ("none" if b else ""),
            "Γ∞ (saturation)": gamma,
            "K [m³/mol]": _g(_si(b.get("adsorption_constant"), "adsorption_constant")),
            "temperature": unit_text(str(e.info.get("temperature") or e.provenance.get("temperature") or "")),
            "problem": e.problem or ""}


# ---- save the case's surfactant ---------------------------------------------------------------
data = state.ensure_case()
is_blend = isinstance(data.get("blend"), dict)
what = "blend" if is_blend else "surfactant"
with st.container(border=True):
    st.subheader(f"Save the case's {what}")
    default_name = str((data.get("blend") if is_blend else data.get("surfactant", {})).get("name") or what)
    c1, c2 = st.columns([2, 2])
    name = c1.text_input("Name of the entry", value=default_name, key="lib_name",
                         help="the file name is made from it (letters, digits, - and _)")
    notes = c2.text_input("Notes (optional)", value="", key="lib_notes", placeholder="where the values come from")
    replace = st.checkbox("Replace an entry of the same name", value=False, key="lib_replace")
    if st.button(f"Save the {what} in the library", key="btn_lib_save", type="primary",
                 icon=":material/bookmark_add:", disabled=folder is None):
        try:
            doc = library.entry_of_case(data, st.session_state[state.BASE], name, notes)
            path = library.save(folder, doc, overwrite=replace)
        except InputError as exc:
            st.session_state["lib_msg"] = ("error", [state.scrub(line) for line in exc.problems])
        except OSError as exc:
            st.session_state["lib_msg"] = ("error", [f"library folder: cannot write there ({exc.strerror})"])
        else:
            st.session_state["lib_msg"] = ("ok", [f"Saved as {path.name} in the library folder."])
        st.rerun()
    msg = st.session_state.pop("lib_msg", None)
    if msg and msg[0] == "error":
        st.error("Not saved:\n\n" + "\n".join(f"- {state.md_escape(line)}" for line in msg[1]), icon=":material/error:")
    elif msg:
        st.success(msg[1][0], icon=":material/check:")

# ---- the entries ------------------------------------------------------------------------------
found = library.entries(folder)
st.subheader("Entries")
if not found:
    st.info("The library is empty.", icon=":material/info:")
    st.stop()
st.dataframe(pd.DataFrame([_row(e) for e in found]), hide_index=True, width="stretch", key="lib_table")

pick = st.selectbox("Entry", range(len(found)), key="lib_pick",
                    format_func=lambda i: f"{found[i].name} ({'shipped' if found[i].builtin else 'yours'})")
entry = found[pick]
with st.expander("Where its values come from", expanded=entry.builtin):
    if entry.typical:
        st.warning("Typical values, not a product's data.", icon=":material/warning:")
    for key, value in entry.provenance.items():
        st.markdown(f"- **{state.md_escape(key.replace('_', ' '))}**: {state.md_escape(unit_text(value))}")
    if entry.info.get("notes"):
        st.caption(state.md_escape(entry.info["notes"]))

refer = st.checkbox("Also refer to the entry's file (`from = ...`), so the plan records its source", value=False,
                    key="lib_refer", disabled=entry.kind != "surfactant",
                    help="a copy of the file goes into the case's folder (and into the workspace file); "
                         "a blend is always copied into the case")
if st.button(f"Use it as the case's {entry.kind}", key="btn_lib_use", icon=":material/input:"):
    base = Path(st.session_state[state.BASE])
    problems = library.check_entry(entry, data, base) if not entry.problem else [entry.problem]
    if problems:
        st.session_state["lib_use_msg"] = ("error", [state.scrub(p) for p in problems])
    else:
        ref = None
        if refer and entry.kind == "surfactant":
            rel = f"library/{library.slug(entry.name)}.toml"
            (state.work_dir() / "library").mkdir(exist_ok=True)
            shutil.copyfile(entry.path, state.work_dir() / rel)
            ref = rel
        new = library.use(data, entry, ref)
        state.set_case(new, f"{st.session_state.get(state.SOURCE)} with library entry {entry.name}")
        st.session_state["lib_use_msg"] = ("ok", [f"The case now uses **{state.md_escape(entry.name)}**."])
    st.rerun()
use_msg = st.session_state.get("lib_use_msg")
if use_msg and use_msg[0] == "error":
    st.error("Not used; the case is unchanged. The case with this entry would have these problems:\n\n"
             + "\n".join(f"- {state.md_escape(p)}" for p in use_msg[1]), icon=":material/error:")
elif use_msg:
    u1, u2 = st.columns([3, 1])
    u1.success(use_msg[1][0] + " The previous case is kept aside.", icon=":material/check:")
    if u2.button("Undo", key="btn_lib_undo", icon=":material/undo:"):
        state.undo_replace()
        st.session_state.pop("lib_use_msg", None)
        st.rerun()
