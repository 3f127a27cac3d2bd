"""Session state of the workbench: the case being edited, its validation and the field widgets.

The source of truth is ``st.session_state["case_dict"]``, the raw case as a TOML-like dict with
the user's unit strings.  Widgets are seeded from it and write back through ``on_change``
callbacks, so the case survives moving between pages (Streamlit forgets the state of widgets
that a page does not draw).  Validation is :func:`sizing.case.parse_case`, the same check as
the command line; its problem lines ``"path: message"`` are shown under the matching field.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import re
import secrets
import shutil
import time
from pathlib import Path

import streamlit as st

from sizing import views
from sizing.case import dumps_case, parse_case
from sizing.errors import InputError
from sizing.files import write_atomic
from sizing.texts import CAUTIONS_BRIEF

CASE = "case_dict"
BASE = "case_base_dir"
SOURCE = "case_source"
VERSION = "files_version"
STASH = "case_stash"  # values of fields hidden by a switch (restored when switched back)
PREFIX = "f:"
UNDO = "case_undo"  # the case a replacement put aside: {"case", "source", "stash", "loaded"}
SCENARIOS = "scenarios"  # named copies of the case dict, compared on the Scenarios page
LOADED = "case_loaded"  # the case text as loaded (to tell whether it has been edited since)
OPTIONAL_SECTIONS = ("recommendation", "trial", "uncertainty", "process", "recipe")

CAUTIONS = CAUTIONS_BRIEF  # one home for the texts: sizing.texts


# ---------------------------------------------------------------------------------------------
# the case in the session


# The working case is kept on this machine, one folder per browser workspace, named by a random
# token in the page address (``?ws=...``): a reload or a new tab with the same address finds it.

WS_PARAM = "ws"
_TOKEN = re.compile(r"^[A-Za-z0-9_-]{16,64}$")
SAVED = "workspace.json"
LAB_SLOTS = ("tension_file", "depletion_file", "partition_file")  # uploaded lab CSVs of the fits


def workspace_root() -> Path:
    """Return the folder holding the saved workspaces (``SIZING_WORKSPACES`` overrides it)."""
    env = os.environ.get("SIZING_WORKSPACES")
    if env:
        return Path(env)
    state_home = os.environ.get("XDG_STATE_HOME") or str(Path.home() / ".local" / "state")
    return Path(state_home) / "sizing" / "workspaces"


def workspace_token() -> str:
    """Return this session's workspace token, taken from the address or made new; keep it in the address."""
    tok = st.session_state.get("ws_token")
    if tok is None:
        given = st.query_params.get(WS_PARAM)
        tok = given if isinstance(given, str) and _TOKEN.match(given) else secrets.token_urlsafe(18)
        st.session_state["ws_token"] = tok
    if st.query_params.get(WS_PARAM) != tok:
        st.query_params[WS_PARAM] = tok
    return tok


def workspace_dir() -> Path:
    """Return this session's workspace folder (created on first use, private to the user)."""
    folder = workspace_root() / workspace_token()
    folder.mkdir(parents=True, exist_ok=True, mode=0o700)
    return folder


def work_dir() -> Path:
    """Return this session's folder for the case's files (uploads, copies of demo files)."""
    folder = workspace_dir() / "files"
    folder.mkdir(exist_ok=True, mode=0o700)
    return folder


def scrub(text: str) -> str:
    """Return a message without this server's folder names (the workspace is 'the case folder')."""
    text = str(text)
    # the longest first: the work dir lies inside the workspace root
    for folder in sorted({str(work_dir()), str(workspace_root()), str(st.session_state.get(BASE, ""))} - {""},
                         key=len, reverse=True):
        text = text.replace(folder + os.sep, "").replace(folder, "the case folder")
    return text


def _snapshot() -> dict:
    prev = st.session_state.get(UNDO)
    return {"version": 1, "case": st.session_state.get(CASE), "source": st.session_state.get(SOURCE),
            "stash": st.session_state.get(STASH, {}), "loaded": st.session_state.get(LOADED),
            "undo": prev, "scenarios": st.session_state.get(SCENARIOS, {}),
            "lab_files": {k: Path(st.session_state[k]).name for k in LAB_SLOTS if st.session_state.get(k)}}


def save_workspace() -> None:
    """Write the working case (with its undo copy and the names of uploaded lab files) to disk.

    Called after every run of the app; writes only when something changed.
    """
    if CASE not in st.session_state:
        return
    try:
        body = json.dumps(_snapshot(), sort_keys=True, default=str)
    except (TypeError, ValueError):  # a value JSON cannot hold: keep the last good save
        return
    if st.session_state.get("_saved_body") == body:
        return
    stamp = time.strftime("%Y-%m-%d %H:%M:%S UTC", time.gmtime())
    data = json.loads(body)
    data["saved_at"] = stamp
    try:
        write_atomic(workspace_dir() / SAVED, json.dumps(data, indent=1, sort_keys=True))
    except OSError:  # a full disk or a read-only home: the session goes on, unsaved
        return
    st.session_state["_saved_body"] = body
    st.session_state["saved_at"] = stamp


def _read_saved(folder: Path) -> dict | None:
    try:
        data = json.loads((folder / SAVED).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    return data if isinstance(data, dict) and isinstance(data.get("case"), dict) else None


def restore_workspace() -> bool:
    """Load the saved working case of this session's token; return False when there is none."""
    data = _read_saved(workspace_dir())
    if data is None:
        return False
    st.session_state[CASE] = data["case"]
    st.session_state[SOURCE] = str(data.get("source") or "restored case")
    st.session_state[STASH] = data.get("stash") or {}
    st.session_state[LOADED] = data.get("loaded")
    st.session_state[BASE] = str(work_dir())
    if isinstance(data.get("undo"), dict):
        st.session_state[UNDO] = data["undo"]
    if isinstance(data.get("scenarios"), dict):
        st.session_state[SCENARIOS] = {str(k): v for k, v in data["scenarios"].items() if isinstance(v, dict)}
    for k, name in (data.get("lab_files") or {}).items():
        if k in LAB_SLOTS and isinstance(name, str) and (work_dir() / Path(name).name).is_file():
            st.session_state[k] = str(work_dir() / Path(name).name)
    st.session_state["restored_at"] = data.get("saved_at", "earlier")
    st.session_state["_saved_body"] = json.dumps(_snapshot(), sort_keys=True, default=str)
    return True


def recent_workspaces(limit: int = 8) -> list[dict]:
    """Return the other workspaces saved on this machine, newest first: token, title, saved_at."""
    root = workspace_root()
    mine = st.session_state.get("ws_token")
    out = []
    try:
        folders = [p for p in root.iterdir() if p.is_dir() and _TOKEN.match(p.name) and p.name != mine]
    except OSError:
        return []
    folders.sort(key=lambda p: (p / SAVED).stat().st_mtime if (p / SAVED).is_file() else 0, reverse=True)
    for p in folders[:limit]:
        data = _read_saved(p)
        if data:
            out.append({"token": p.name, "title": str(data["case"].get("case", {}).get("title", "untitled")),
                        "saved_at": str(data.get("saved_at", ""))})
    return out


def switch_workspace(token: str) -> None:
    """Adopt another saved workspace: its token goes into the address and its case is loaded."""
    if not _TOKEN.match(token):
        return
    save_workspace()
    for k in [k for k in st.session_state if isinstance(k, str) and (k.startswith(PREFIX) or k in (
            CASE, UNDO, SCENARIOS, "_check", "_saved_body", "restored_at", *LAB_SLOTS))]:
        del st.session_state[k]
    st.session_state["ws_token"] = token
    st.query_params[WS_PARAM] = token
    restore_workspace()
    st.session_state[VERSION] = st.session_state.get(VERSION, 0) + 1


def _copy_referenced(data: dict, source_dir: Path | None) -> None:
    """Copy files a case names by relative path (size table, fitted block) into the work dir."""
    if source_dir is None:
        return
    refs = [data.get("drops", {}).get("file"), data.get("surfactant", {}).get("from")]
    for ref in refs:
        if not isinstance(ref, str) or Path(ref).is_absolute() or ".." in Path(ref).parts:
            continue
        src = source_dir / ref
        if src.is_file():
            dst = work_dir() / ref
            dst.parent.mkdir(parents=True, exist_ok=True)
            shutil.copyfile(src, dst)
            plot = views.fitted_plot_name(src) if src.suffix == ".toml" else None
            if plot and (src.parent / plot).is_file():  # the fit's plot, for the plan report
                shutil.copyfile(src.parent / plot, dst.parent / plot)


def set_case(data: dict, source: str, source_dir: Path | None = None) -> None:
    """Replace the case being edited (the old one is kept for :func:`undo_replace`).

    The field widgets are cleared so that they show the new values.
    """
    old = st.session_state.get(CASE)
    if old is not None:
        st.session_state[UNDO] = {"case": old, "source": st.session_state.get(SOURCE),
                                  "stash": st.session_state.get(STASH, {}),
                                  "loaded": st.session_state.get(LOADED)}
    _copy_referenced(data, source_dir)
    _install(views.case_copy(data), source, {})
    st.session_state[LOADED] = dumps_case(data)


def _install(data: dict, source: str, stash: dict) -> None:
    st.session_state[CASE] = data
    st.session_state[BASE] = str(work_dir())
    st.session_state[SOURCE] = source
    st.session_state[STASH] = stash
    st.session_state[VERSION] = st.session_state.get(VERSION, 0) + 1
    st.session_state.pop("restored_at", None)
    for key in [k for k in st.session_state if isinstance(k, str) and k.startswith(PREFIX)]:
        del st.session_state[key]


def forget_widgets() -> None:
    """Drop every field widget's value; each field is seeded again from the case when drawn."""
    for key in [k for k in st.session_state if isinstance(k, str) and k.startswith(PREFIX)]:
        del st.session_state[key]


def undo_replace() -> bool:
    """Bring back the case the last replacement put aside (the current one is put aside instead)."""
    prev = st.session_state.get(UNDO)
    if not isinstance(prev, dict) or not isinstance(prev.get("case"), dict):
        return False
    st.session_state[UNDO] = {"case": st.session_state.get(CASE), "source": st.session_state.get(SOURCE),
                              "stash": st.session_state.get(STASH, {}), "loaded": st.session_state.get(LOADED)}
    _install(prev["case"], str(prev.get("source") or "earlier case"), prev.get("stash") or {})
    st.session_state[LOADED] = prev.get("loaded")
    return True


def edited_since_loaded() -> bool:
    """Return True when the case differs from what was loaded (replacing it would lose edits)."""
    try:
        return dumps_case(ensure_case()) != st.session_state.get(LOADED)
    except Exception:  # a value TOML cannot hold: treat as edited
        return True


def ensure_case() -> dict:
    """Return the case dict: the session's, else the saved one of this workspace, else the demo."""
    if CASE not in st.session_state and not restore_workspace():
        data, folder = views.load_demo()
        set_case(data, "demo case", folder)
    st.session_state.setdefault(BASE, str(work_dir()))
    st.session_state.setdefault(STASH, {})
    st.session_state.setdefault(VERSION, 0)
    return st.session_state[CASE]


def case_toml() -> str:
    """Return the case being edited as TOML text (the user's strings, as a case file)."""
    return dumps_case(ensure_case())


_ITEM = re.compile(r"^(\w+)\[(\d+)\]$")


def _parent(data: dict, path: str, create: bool):
    """Return the dict holding the last part of a nested path (``blend.component[0].cmc``) and its key."""
    parts = path.split(".")
    node = data
    for part in parts[:-1]:
        m = _ITEM.match(part)
        if m:
            items = node.get(m.group(1)) if isinstance(node, dict) else None
            i = int(m.group(2))
            if not isinstance(items, list) or i >= len(items) or not isinstance(items[i], dict):
                return None, parts[-1]
            node = items[i]
        elif isinstance(node, dict):
            if create and not isinstance(node.get(part), dict):
                node[part] = {}
            node = node.get(part)
        if not isinstance(node, dict):
            return None, parts[-1]
    return node, parts[-1]


def get(path: str, default=None):
    if "[" in path or path.count(".") > 1:  # a key of a list item, e.g. blend.component[0].cmc
        node, key = _parent(ensure_case(), path, False)
        return default if node is None else node.get(key, default)
    section, _, key = path.partition(".")
    return ensure_case().get(section, {}).get(key, default)


def put(path: str, value) -> None:
    """Set (or, with None, remove) one ``section.key`` of the case dict (also ``blend.component[0].cmc``)."""
    data = ensure_case()
    if "[" in path or path.count(".") > 1:
        node, key = _parent(data, path, value is not None)
        if node is not None:
            if value is None:
                node.pop(key, None)
            else:
                node[key] = value
        return
    section, _, key = path.partition(".")
    if value is None:
        data.get(section, {}).pop(key, None)
        if section in OPTIONAL_SECTIONS and data.get(section) == {}:
            del data[section]
    else:
        data.setdefault(section, {})[key] = value


def switch(old_paths: list[str], new_path: str, default) -> None:
    """Replace one of several exclusive keys by ``new_path``, remembering the others' values."""
    stash = st.session_state.setdefault(STASH, {})
    for p in old_paths:
        if p != new_path and get(p) is not None:
            stash[p] = get(p)
            put(p, None)
    if get(new_path) is None:
        put(new_path, stash.pop(new_path, default))
    st.session_state.pop(PREFIX + new_path, None)


def either(label: str, paths: list[str], names: dict, defaults: dict, key: str) -> str:
    """Draw a radio between exclusive case keys (``batch.volume`` or ``batch.mass``); return the one used.

    Switching keeps the other key's value aside (see :func:`switch`) and reruns the page.
    """
    current = next((p for p in paths[1:] if get(p) is not None), paths[0])
    choice = st.radio(label, paths, index=paths.index(current), horizontal=True,
                      format_func=names.get, key=key)
    if choice != current:
        switch(paths, choice, defaults[choice])
        st.rerun()
    return choice


# ---------------------------------------------------------------------------------------------
# validation (the command line's checks) and the engine summary


def check() -> dict:
    """Validate the case and solve it once; memoised on the case text within the session.

    Returns ``{"case": Case | None, "problems": [line, ...], "by_field": {path: [msg]},
    "summary": solve dict | None, "toml": text, "base": folder}``.
    """
    data = ensure_case()
    base = st.session_state[BASE]
    try:
        text = dumps_case(data)
    except Exception as exc:  # a value TOML cannot hold; should not happen from the widgets
        text = f"# not writable as TOML: {exc}"
    key = hashlib.sha1(f"{text}\0{base}\0{st.session_state[VERSION]}".encode()).hexdigest()
    memo = st.session_state.get("_check")
    if memo and memo["key"] == key:
        return memo
    case = summary = None
    try:
        case = parse_case(data, base)
        summary = views.summary(case)
        problems: list[str] = []
    except InputError as exc:
        problems = [scrub(line) for line in exc.problems]
        if summary is None and case is not None and not problems:
            problems = [scrub(str(exc))]
    result = {"key": key, "case": case if not problems else None, "problems": problems,
              "by_field": views.problems_by_field(problems), "summary": summary if not problems else None,
              "toml": text, "base": base}
    st.session_state["_check"] = result
    return result


def needs_valid_case() -> dict:
    """Return the check result, or show the problems and stop the page when the case is invalid."""
    result = check()
    if result["case"] is None:
        st.error("The case has problems to fix before this page can compute "
                 "(each is also shown beside its field on the page that edits it):\n\n"
                 + "\n".join(f"- {line}" for line in result["problems"]))
        st.stop()
    return result


# ---------------------------------------------------------------------------------------------
# field widgets


def _shown(raw) -> str:
    if isinstance(raw, dict):
        raw = raw.get("value", "")
    if raw is None:
        return ""
    if isinstance(raw, bool):
        return str(raw).lower()
    if isinstance(raw, list):
        return ", ".join(_shown(v) for v in raw)
    if isinstance(raw, float) and raw.is_integer() and abs(raw) < 1e15:
        return repr(raw)
    return str(raw)


_INT = re.compile(r"^[-+]?\d+$")


def _number(text: str):
    """Return an int or float for a plain number, else the text (validation then names it)."""
    t = text.strip()
    if _INT.match(t):
        return int(t)
    try:
        x = float(t)
    except ValueError:
        return t
    return x if math.isfinite(x) else t


def _numbers(text: str):
    parts = [p for p in re.split(r"[,\s;]+", text.strip()) if p]
    out = [_number(p) for p in parts]
    return out if all(isinstance(v, (int, float)) for v in out) else text


def _store(path: str, kind: str, optional: bool) -> None:
    text = st.session_state.get(PREFIX + path, "")
    if kind == "choice":
        put(path, None if optional and text in ("", None) else text)  # an optional choice left empty: not given
        return
    text = str(text)
    if text.strip() == "" and optional:
        put(path, None)
        return
    value: object = text.strip() if kind != "text" else text
    if kind == "number":
        value = _number(text)
    elif kind == "list":
        value = _numbers(text)
    old = get(path)
    if isinstance(old, dict) and kind in ("quantity", "number"):
        new = dict(old)
        new["value"] = value
        value = new
    put(path, value)


def errors_for(path: str) -> list[str]:
    return check()["by_field"].get(path, [])


def show_errors(path: str, where=None) -> None:
    """Show the problems of one field (or section) as ``st.error`` naming it."""
    where = where or st
    for msg in errors_for(path):
        where.error(f"**{md_escape(label_of(path))}** ({path}): {md_escape(msg)}", icon=":material/error:")


def label_of(path: str) -> str:
    """Return the readable name of a case field or section (``drops.d32`` -> Sauter mean diameter d32)."""
    if path.startswith("blend.component["):  # name the component, not its index
        return views.component_field_label(path, ensure_case())
    return views.field_label(path) if "." in path else f"the {path} section"


def field(path: str, label: str, *, kind: str = "quantity", help: str | None = None,
          options: list | None = None, optional: bool = False, placeholder: str | None = None,
          where=None) -> None:
    """Draw one editable case field with its unit and any validation problem under it.

    ``kind``: ``quantity`` (text with its unit, e.g. ``"2.4 um"``), ``number`` (a plain number),
    ``text``, ``list`` (numbers separated by commas) or ``choice`` (one of ``options``).
    """
    where = where or st
    key = PREFIX + path
    raw = get(path)
    if kind == "choice":
        opts = list(options or [])
        if raw not in opts:
            opts = [raw] + opts if raw is not None else opts
        if key not in st.session_state:
            st.session_state[key] = raw if raw is not None else opts[0]
        where.selectbox(md_escape(label), opts, key=key, help=help, on_change=_store, args=(path, kind, optional))
    else:
        if key not in st.session_state:
            st.session_state[key] = _shown(raw)
        extra = ""
        if isinstance(raw, dict):
            spread = {k: v for k, v in raw.items() if k != "value"}
            extra = " (uncertain: " + ", ".join(f"{k} = {v}" for k, v in spread.items()) + ")"
        where.text_input(md_escape(label + extra), key=key, help=help, placeholder=placeholder,
                         on_change=_store, args=(path, kind, optional))
    for msg in errors_for(path):
        where.error(f"**{md_escape(label_of(path))}** ({path}): {md_escape(msg)}", icon=":material/error:")


def md_escape(text: str) -> str:
    """Escape the characters Streamlit's markdown would read as emphasis (``m**3`` stays literal)."""
    return str(text).replace("\\", "\\\\").replace("*", "\\*").replace("~", "\\~")


def sidebar_status() -> None:
    """Show the case title, where it came from and whether it validates, in the sidebar."""
    result = check()
    data = ensure_case()
    with st.sidebar:
        title = str(data.get("case", {}).get("title", "untitled case"))
        st.markdown("**" + "".join("\\" + ch if ch in "*_`[]<>#" else ch for ch in title) + "**")
        st.caption(f"from: {st.session_state.get(SOURCE, 'demo case')}")
        if result["problems"]:
            st.error(f"{len(result['problems'])} problem(s) in the case", icon=":material/error:")
        else:
            st.success("case valid", icon=":material/check_circle:")
            info = view("d32_info")
            if info["scaleup"]:
                st.caption(f"d32 for the dose: **plant {info['used_d32_m'] * 1e6:.3g} µm** (from the scale-up); "
                           f"lab {info['lab_d32_m'] * 1e6:.3g} µm")
            else:
                st.caption(f"d32 for the dose: {info['used_d32_m'] * 1e6:.3g} µm")
        with st.expander("Cautions", expanded=False):
            for line in CAUTIONS:
                st.caption(line)


# ---------------------------------------------------------------------------------------------
# uploads

MAX_UPLOAD_BYTES = 5 * 1024 * 1024


def check_upload(name: str, data: bytes, suffixes: tuple[str, ...], field: str) -> str:
    """Return an uploaded file's text, or raise InputError naming the field and what is allowed.

    Refuses files over 5 MB, with another suffix, or that are not UTF-8 text.
    """
    suffix = Path(name).suffix.lower()
    allowed = " or ".join(s.lstrip(".").upper() for s in suffixes)
    if suffix not in suffixes:
        raise InputError(f"{field}: {name!r} is not a {allowed} file; expected a file ending in "
                         f"{' or '.join(suffixes)}")
    if len(data) > MAX_UPLOAD_BYTES:
        raise InputError(f"{field}: {name!r} is {len(data) / 1e6:.1f} MB; expected at most 5 MB")
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError(f"{field}: {name!r} is not UTF-8 text; expected a plain {allowed} file") from None
    if "\x00" in text:
        raise InputError(f"{field}: {name!r} holds binary data; expected a plain {allowed} file")
    return text


def case_from_upload(name: str, data: bytes) -> dict:
    """Return the raw case dict of an uploaded TOML file, or raise InputError (nothing replaced)."""
    import tomllib

    text = check_upload(name, data, (".toml",), "case file")
    try:
        parsed = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"case file: {name!r} is not valid TOML ({exc})") from None
    active = "blend" if isinstance(parsed.get("blend"), dict) else "surfactant"  # a blend has no [surfactant]
    missing = [s for s in ("case", "batch", "drops", active, "target")
               if not isinstance(parsed.get(s), dict)]
    if missing:
        raise InputError(f"case file: {name!r} lacks the section(s) {', '.join('[' + m + ']' for m in missing)}; "
                         "expected a case file with [case], [batch], [drops], [surfactant] (or [blend]) "
                         "and [target]")
    return parsed


def save_upload(name: str, text: str, validate) -> str:
    """Write an uploaded CSV into the work dir after ``validate(path)`` accepts it; return its name.

    The file is first written under a temporary name; a file that fails validation is removed
    and the previous file of that name is kept.
    """
    safe = re.sub(r"[^A-Za-z0-9._-]+", "_", Path(name).name) or "upload.csv"
    folder = work_dir()
    tmp = folder / f".incoming-{safe}"
    tmp.write_text(text, encoding="utf-8")
    try:
        validate(tmp)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    tmp.replace(folder / safe)
    st.session_state[VERSION] = st.session_state.get(VERSION, 0) + 1
    return safe


def new_upload(uploaded, slot: str) -> bool:
    """Return True once per newly chosen file in an uploader ``slot`` (not on every rerun)."""
    if uploaded is None:
        return False
    ident = f"{uploaded.name}:{uploaded.size}:{getattr(uploaded, 'file_id', '')}"
    seen = st.session_state.setdefault("_uploads_seen", {})
    if seen.get(slot) == ident:
        return False
    seen[slot] = ident
    return True


# ---------------------------------------------------------------------------------------------
# cached engine views (plain data only)


@st.cache_data(max_entries=256, show_spinner=False)
def _view(name: str, toml_text: str, base: str, version: int, kwargs: tuple) -> object:
    from sizing.case import loads_case

    case = loads_case(toml_text, base)
    return getattr(views, name)(case, **dict(kwargs))


def view(name: str, **kwargs) -> object:
    """Return ``sizing.views.<name>(case, **kwargs)`` for the current valid case, cached."""
    result = check()
    return _view(name, result["toml"], result["base"], st.session_state.get(VERSION, 0),
                 tuple(sorted(kwargs.items())))
