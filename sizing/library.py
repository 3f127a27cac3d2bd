"""A surfactant library: named surfactants (or blends) as plain TOML files in a folder.

An entry is the file a case's ``[surfactant] from = "..."`` reads: a ``[surfactant]`` table (every
key of the surfactant, as a case writes it) and a ``[provenance]`` table (where the values come
from; the plan records it), plus a ``[library]`` table the case reader ignores (the entry's
name, kind, when it was saved, notes).  A blend is kept as a ``[blend]`` table with its
``[[blend.component]]`` entries; the case reader's ``from`` takes single surfactants only, so a
blend entry is reused by copying it into the case (the workbench does that for both kinds).

The folder is the user's choice (default: ``sizing/library`` under the user's state folder,
``SIZING_LIBRARY`` overrides it).  Names are sanitised to a file name (:func:`slug`); an entry is
written only inside the chosen folder (no symlink followed out, never over a symlink), atomically.
The package ships a few generic entries (``sizing/data/library``): typical values of a class of
surfactant from published sources, each with its citation and temperature; not a product's data.
"""

from __future__ import annotations

import copy
import os
import re
import time
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import tomli_w

from .case import _merge_from, parse_case
from .errors import InputError
from .files import read_regular, token, write_atomic

ENV = "SIZING_LIBRARY"
BUILTIN = Path(__file__).resolve().parent / "data" / "library"
MAX_ENTRY_BYTES = 256 * 1024
MAX_ENTRIES = 500
KINDS = ("surfactant", "blend")


def default_folder() -> Path:
    """Return the user's library folder: ``SIZING_LIBRARY``, else ``<state dir>/sizing/library``."""
    env = os.environ.get(ENV)
    if env:
        return Path(env).expanduser()
    state_home = os.environ.get("XDG_STATE_HOME") or str(Path.home() / ".local" / "state")
    return Path(state_home) / "sizing" / "library"


def slug(name: str) -> str:
    """Return the file stem for an entry name: lower-case letters, digits, ``-`` and ``_``.

    >>> slug("SDS (typical, 25 °C)"), slug("../../etc/passwd"), slug("  C12E6 / air-water ")
    ('sds_typical_25_c', 'etc_passwd', 'c12e6_air-water')
    """
    text = re.sub(r"[^a-z0-9_-]+", "_", str(name).strip().lower()).strip("_-")[:60].strip("_-")
    if not text:
        raise InputError(f"library name: {token(name, 40)} has no letter or digit; expected a name such as "
                         "'SDS lab batch 12'")
    return text


@dataclass
class Entry:
    """One library file: its name, kind, table, provenance and where it lives."""

    name: str
    kind: str  # "surfactant" or "blend"
    path: Path
    block: dict = field(default_factory=dict)
    provenance: dict = field(default_factory=dict)
    info: dict = field(default_factory=dict)  # the [library] table
    builtin: bool = False
    problem: str | None = None  # why the entry cannot be used (shown, never raised)

    @property
    def typical(self) -> bool:
        return bool(self.info.get("typical"))


# ---------------------------------------------------------------------------------------------
# from a case to an entry


def entry_of_case(data: dict, base: Path | str | None, name: str, notes: str = "") -> dict:
    """Return the library document of a case's surfactant (or blend), checked with the case.

    A surfactant that takes keys from a fitted block (``from``) is saved with the merged keys, so
    the entry stands alone; the fitted block's provenance comes with it.

    Raises
    ------
    InputError
        The case does not validate (one line per problem, each naming its field).
    """
    parse_case(data, base)  # only a surfactant the engine accepts goes into the library
    work = copy.deepcopy(data)
    slug(name)
    info = {"name": str(name).strip()[:80], "saved": time.strftime("%Y-%m-%d", time.gmtime())}
    if notes.strip():
        info["notes"] = notes.strip()
    if isinstance(work.get("blend"), dict):
        info["kind"] = "blend"
        return {"library": info, "blend": work["blend"],
                "provenance": {"kind": "library entry", "source": "typed or fitted in a case",
                               "case": str(data.get("case", {}).get("title", ""))}}
    prov = _merge_from(work, Path(base) if base is not None else None) or {}
    block = dict(work["surfactant"])
    block.pop("from", None)
    info["kind"] = "surfactant"
    provenance = {k: v for k, v in prov.items() if k not in ("file", "keys_from_file")}
    provenance.setdefault("kind", "library entry")
    provenance.setdefault("source", "typed in a case" if not prov else "fitted block")
    provenance["case"] = str(data.get("case", {}).get("title", ""))
    return {"library": info, "surfactant": block, "provenance": provenance}


# ---------------------------------------------------------------------------------------------
# the folder


def _folder(folder: Path | str) -> Path:
    p = Path(folder).expanduser()
    if p.is_symlink():
        raise InputError(f"library folder: {token(str(p), 80)} is a symbolic link; expected a folder")
    p.mkdir(parents=True, exist_ok=True, mode=0o700)
    if not p.is_dir():
        raise InputError(f"library folder: {token(str(p), 80)} is not a folder")
    return p.resolve()


def save(folder: Path | str, doc: dict, overwrite: bool = False) -> Path:
    """Write a library document as ``<folder>/<slug of its name>.toml``; return the path.

    Raises
    ------
    InputError
        The name exists (unless ``overwrite``), the target is a symlink or would leave the folder.
    """
    root = _folder(folder)
    name = str(doc.get("library", {}).get("name", ""))
    target = root / f"{slug(name)}.toml"
    if target.is_symlink():
        raise InputError(f"library name: {token(target.name, 60)} is a symbolic link in the library; "
                         "choose another name")
    if target.resolve().parent != root:
        raise InputError(f"library name: {token(name, 60)} would leave the library folder; choose another name")
    if target.exists() and not overwrite:
        raise InputError(f"library name: an entry {token(target.stem, 60)} exists already; choose another "
                         "name or replace it")
    write_atomic(target, tomli_w.dumps(doc))
    return target


def read_entry(path: Path | str, builtin: bool = False) -> Entry:
    """Read one library file; an unusable file gives an :class:`Entry` with ``problem`` set."""
    p = Path(path)
    entry = Entry(name=p.stem, kind="surfactant", path=p, builtin=builtin)
    try:
        raw = read_regular(p, p.name, MAX_ENTRY_BYTES)
        doc = tomllib.loads(raw.decode("utf-8-sig"))
    except InputError as exc:
        entry.problem = str(exc)
        return entry
    except (UnicodeDecodeError, tomllib.TOMLDecodeError) as exc:
        entry.problem = f"{p.name}: not a TOML text file ({type(exc).__name__})"
        return entry
    info = doc.get("library") if isinstance(doc.get("library"), dict) else {}
    entry.info = info
    entry.name = str(info.get("name") or p.stem)
    kind = "blend" if isinstance(doc.get("blend"), dict) else "surfactant"
    entry.kind = kind
    block = doc.get(kind)
    if not isinstance(block, dict):
        entry.problem = f"{p.name}: no [surfactant] or [blend] table"
        return entry
    entry.block = block
    entry.provenance = doc["provenance"] if isinstance(doc.get("provenance"), dict) else {}
    return entry


def entries(folder: Path | str | None, include_builtin: bool = True) -> list[Entry]:
    """Return the library's entries: the shipped ones first, then the folder's, each by name.

    Only regular ``.toml`` files directly in the folder are read (no symlinks, no subfolders).
    """
    out: list[Entry] = []
    if include_builtin and BUILTIN.is_dir():
        out += sorted((read_entry(p, builtin=True) for p in BUILTIN.glob("*.toml")), key=lambda e: e.name.lower())
    if folder is not None:
        p = Path(folder).expanduser()
        if p.is_dir() and not p.is_symlink():
            files = sorted(f for f in p.glob("*.toml") if f.is_file() and not f.is_symlink())[:MAX_ENTRIES]
            out += sorted((read_entry(f) for f in files), key=lambda e: e.name.lower())
    return out


# ---------------------------------------------------------------------------------------------
# from an entry to a case


def use(data: dict, entry: Entry, ref: str | None = None) -> dict:
    """Return a copy of the case dict with its surfactant (or blend) replaced by the entry's.

    ``ref`` (a path relative to the case folder where a copy of the entry lies) is written as
    ``surfactant.from``, so that the plan records the entry's provenance; the values are copied
    into the case as well (they win over the file's and stay editable).

    Raises
    ------
    InputError
        The entry cannot be used (its ``problem``).
    """
    if entry.problem:
        raise InputError(entry.problem)
    out = copy.deepcopy(data)
    if entry.kind == "blend":
        out.pop("surfactant", None)
        out["blend"] = copy.deepcopy(entry.block)
        return out
    out.pop("blend", None)
    block = copy.deepcopy(entry.block)
    block.pop("from", None)
    if ref is not None:
        block = {"from": ref, **block}
    out["surfactant"] = block
    return out


def check_entry(entry: Entry, data: dict, base: Path | str | None = None) -> list[str]:
    """Return the problems of a case that uses the entry (empty: it validates)."""
    try:
        parse_case(use(data, entry), base)
    except InputError as exc:
        return list(exc.problems)
    return []
