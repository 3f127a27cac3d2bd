"""One file for a whole workspace: the case, the lab CSVs and fitted blocks it names, as a zip.

:func:`pack` builds the zip in memory: ``case.toml`` (the case as written), ``workspace.toml``
(which uploaded lab CSV feeds which fit, and the kept scenarios' names), the files the case and
its scenarios name (size table, fitted ``[surfactant]`` block), the lab CSVs, and each scenario
as ``scenarios/NN.toml``.  Paths inside the zip are the files' paths relative to the case
folder, so a ``from = "fits/block.toml"`` still finds its file after unpacking.

:func:`unpack` treats the file as hostile (it comes from a browser or a colleague's mail): a
size limit on the zip, a cap on the members and on their total size *as read* (a zip bomb
declares small sizes and inflates), no absolute path, no ``..``, no drive or backslash, no
symlink, no encrypted member, no duplicate, only ``.toml`` and ``.csv`` members of UTF-8 text.
The case is then validated against the unpacked files in a temporary folder
(:func:`validate`) before anything replaces the working case; messages name the workspace
file's members, never the temporary folder.

:func:`install` writes the members into a case folder without overwriting a different file of
the same name (the incoming one is renamed and the references follow), so undoing the
replacement finds the old files as they were.  No Streamlit here; the workbench's Case page
calls these.
"""

from __future__ import annotations

import copy
import io
import re
import stat
import tempfile
import tomllib
import zipfile
from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath

import tomli_w

from .case import dumps_case, parse_case
from .errors import InputError
from .files import inside, read_regular, token, write_atomic

CASE_MEMBER = "case.toml"
MANIFEST = "workspace.toml"
FORMAT = "sizing workspace"
FORMAT_VERSION = 1
SUFFIXES = (".toml", ".csv")

MAX_ZIP_BYTES = 20 * 2**20  # the uploaded zip
MAX_TOTAL_BYTES = 50 * 2**20  # all members uncompressed, as read
MAX_MEMBER_BYTES = 10 * 2**20  # one member uncompressed
MAX_MEMBERS = 200
FIELD = "workspace file"

_SAFE_PART = re.compile(r"^[A-Za-z0-9][A-Za-z0-9 ._()+-]{0,99}$")
#: the keys of a case (or scenario) that name a file relative to the case folder
REFERENCES = (("drops", "file"), ("surfactant", "from"))


@dataclass
class Workspace:
    """A workspace in memory: the case dict, the files by relative path, lab slots, scenarios."""

    case: dict
    files: dict[str, bytes] = field(default_factory=dict)
    lab_files: dict[str, str] = field(default_factory=dict)  # slot (e.g. "tension_file") -> relative path
    scenarios: dict[str, dict] = field(default_factory=dict)

    @property
    def title(self) -> str:
        return str(self.case.get("case", {}).get("title", "untitled case"))


# ---------------------------------------------------------------------------------------------
# packing


def references(data: dict) -> list[str]:
    """Return the relative file names a case dict names (size table, fitted block).

    >>> references({"drops": {"file": "sizes.csv"}, "surfactant": {"from": "fits/a.toml"}})
    ['sizes.csv', 'fits/a.toml']
    """
    out = []
    for section, key in REFERENCES:
        ref = data.get(section, {}).get(key) if isinstance(data.get(section), dict) else None
        if isinstance(ref, str) and ref.strip():
            out.append(ref)
    return out


def collect(data: dict, base: Path | str, extra: dict[str, str] | None = None,
            scenarios: dict[str, dict] | None = None) -> Workspace:
    """Gather a workspace from a case folder: the files the case and its scenarios name.

    ``extra`` maps lab slots to file names relative to ``base`` (the uploaded lab CSVs).  A
    reference that is missing, outside ``base`` or not a ``.toml``/``.csv`` file is left out
    (the case then says what is missing when it is checked).
    """
    base = Path(base)
    ws = Workspace(case=copy.deepcopy(data), scenarios=copy.deepcopy(scenarios or {}))
    wanted = list(references(data))
    for scen in ws.scenarios.values():
        wanted += references(scen)
    for slot, name in (extra or {}).items():
        wanted.append(name)
        ws.lab_files[slot] = name
    for ref in wanted:
        rel = _clean_name(ref, strict=False)
        if rel is None or rel in ws.files:
            continue
        try:
            path = inside(rel, base, "file")
            ws.files[rel] = read_regular(path, "file", MAX_MEMBER_BYTES)
        except InputError:
            continue
    ws.lab_files = {k: v for k, v in ws.lab_files.items() if _clean_name(v, strict=False) in ws.files}
    return ws


def pack(ws: Workspace) -> bytes:
    """Return the workspace as zip bytes (deflated; fixed member dates, so the same input gives the same bytes)."""
    manifest = {"format": FORMAT, "version": FORMAT_VERSION,
                "lab_files": dict(ws.lab_files),
                "scenarios": [{"name": name, "file": f"scenarios/{i:02d}.toml"}
                              for i, name in enumerate(ws.scenarios)]}
    members = {CASE_MEMBER: dumps_case(ws.case).encode("utf-8"),
               MANIFEST: tomli_w.dumps(manifest).encode("utf-8")}
    for i, scen in enumerate(ws.scenarios.values()):
        members[f"scenarios/{i:02d}.toml"] = dumps_case(scen).encode("utf-8")
    for rel, body in ws.files.items():
        members.setdefault(rel, body)
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", compression=zipfile.ZIP_DEFLATED) as zf:
        for name, body in members.items():
            info = zipfile.ZipInfo(name, date_time=(2000, 1, 1, 0, 0, 0))
            info.compress_type = zipfile.ZIP_DEFLATED
            info.external_attr = (stat.S_IFREG | 0o644) << 16
            zf.writestr(info, body)
    return buf.getvalue()


# ---------------------------------------------------------------------------------------------
# unpacking (hostile input)


def _clean_name(name: str, strict: bool = True) -> str | None:
    """Return a member name as a safe relative POSIX path, or None (``strict``: raise instead).

    >>> _clean_name("fits/a.toml"), _clean_name("../x.csv", strict=False), _clean_name("/etc/x.csv", strict=False)
    ('fits/a.toml', None, None)
    """
    def bad(why: str):
        if strict:
            raise InputError(f"{FIELD}: member {token(name, 60)} {why}; expected file names relative to the "
                             "workspace, such as 'case.toml' or 'fits/block.toml'")
        return None

    if not isinstance(name, str) or not name or "\x00" in name:
        return bad("has no usable name")
    if "\\" in name or re.match(r"^[A-Za-z]:", name):
        return bad("is a Windows path")
    p = PurePosixPath(name)
    if p.is_absolute():
        return bad("is an absolute path")
    parts = p.parts
    if any(part in ("..", ".") for part in parts) or name.startswith("./"):
        return bad("leaves the workspace ('..' or '.')")
    if len(parts) > 4 or not all(_SAFE_PART.match(part) for part in parts):
        return bad("has an unusual name (letters, digits, spaces and . _ - ( ) + only, at most 4 folders deep)")
    if p.suffix.lower() not in SUFFIXES:
        return bad(f"is a {p.suffix or 'suffix-less'} file; only .toml and .csv files belong in a workspace")
    return str(p)


def unpack(data: bytes, name: str = "workspace.zip") -> Workspace:
    """Read a workspace zip, refusing anything unexpected (see the module text); nothing is written.

    Raises
    ------
    InputError
        Naming the member and what is allowed.
    """
    if len(data) > MAX_ZIP_BYTES:
        raise InputError(f"{FIELD}: {token(name, 60)} is {len(data) / 2**20:.1f} MB; expected at most "
                         f"{MAX_ZIP_BYTES // 2**20} MB")
    try:
        zf = zipfile.ZipFile(io.BytesIO(data))
        infos = zf.infolist()
    except (zipfile.BadZipFile, zipfile.LargeZipFile, ValueError, OSError):
        raise InputError(f"{FIELD}: {token(name, 60)} is not a zip file; expected a workspace file saved by "
                         "'Save the workspace' (.zip)") from None
    with zf:
        files = [i for i in infos if not i.is_dir()]
        if len(infos) > MAX_MEMBERS:
            raise InputError(f"{FIELD}: {token(name, 60)} holds {len(infos)} entries; expected at most {MAX_MEMBERS}")
        declared = sum(i.file_size for i in files)
        if declared > MAX_TOTAL_BYTES:
            raise InputError(f"{FIELD}: {token(name, 60)} unpacks to {declared / 2**20:.0f} MB; expected at most "
                             f"{MAX_TOTAL_BYTES // 2**20} MB")
        texts: dict[str, bytes] = {}
        total = 0
        for info in files:
            mode = info.external_attr >> 16
            if stat.S_ISLNK(mode):
                raise InputError(f"{FIELD}: member {token(info.filename, 60)} is a symbolic link; "
                                 "expected plain files only")
            if stat.S_IFMT(mode) and not stat.S_ISREG(mode):  # no type bits (DOS attributes only): a file
                raise InputError(f"{FIELD}: member {token(info.filename, 60)} is not a plain file; "
                                 "expected plain files only")
            if info.flag_bits & 0x1:
                raise InputError(f"{FIELD}: member {token(info.filename, 60)} is encrypted; expected plain files")
            rel = _clean_name(info.filename)
            if rel in texts:
                raise InputError(f"{FIELD}: member {token(rel, 60)} appears twice; expected each file once")
            limit = min(MAX_MEMBER_BYTES, MAX_TOTAL_BYTES - total)
            try:
                with zf.open(info) as fh:
                    body = fh.read(limit + 1)  # never more than the cap, whatever the header says
            except (zipfile.BadZipFile, NotImplementedError, OSError, EOFError, ValueError) as exc:
                raise InputError(f"{FIELD}: member {token(rel, 60)} cannot be read ({type(exc).__name__}); "
                                 "expected a zip written by 'Save the workspace'") from None
            if len(body) > limit:
                raise InputError(f"{FIELD}: member {token(rel, 60)} unpacks to more than {limit / 2**20:.0f} MB; "
                                 f"expected at most {MAX_MEMBER_BYTES // 2**20} MB a file and "
                                 f"{MAX_TOTAL_BYTES // 2**20} MB in all")
            total += len(body)
            try:
                text = body.decode("utf-8-sig")
            except UnicodeDecodeError:
                raise InputError(f"{FIELD}: member {token(rel, 60)} is not UTF-8 text; expected plain "
                                 "TOML and CSV files") from None
            if "\x00" in text:
                raise InputError(f"{FIELD}: member {token(rel, 60)} holds binary data; expected plain text")
            texts[rel] = body
    if CASE_MEMBER not in texts:
        raise InputError(f"{FIELD}: {token(name, 60)} has no {CASE_MEMBER}; expected a workspace file saved by "
                         "'Save the workspace'")
    case = _toml(texts.pop(CASE_MEMBER), CASE_MEMBER)
    missing = [s for s in ("case", "batch", "drops", "target") if not isinstance(case.get(s), dict)]
    if not isinstance(case.get("surfactant"), dict) and not isinstance(case.get("blend"), dict):
        missing.append("surfactant")
    if missing:
        raise InputError(f"{FIELD}: {CASE_MEMBER} lacks the section(s) "
                         f"{', '.join('[' + m + ']' for m in missing)}; expected a case file")
    manifest = _toml(texts.pop(MANIFEST), MANIFEST) if MANIFEST in texts else {}
    ws = Workspace(case=case)
    lab = manifest.get("lab_files", {})
    if isinstance(lab, dict):
        for slot, rel in lab.items():
            if isinstance(slot, str) and re.match(r"^[a-z_]{1,40}$", slot) and isinstance(rel, str) and rel in texts:
                ws.lab_files[slot] = rel
    listed = manifest.get("scenarios", [])
    for entry in listed if isinstance(listed, list) else []:
        if not isinstance(entry, dict) or entry.get("file") not in texts:
            continue
        label = "".join(c for c in str(entry.get("name", "scenario")) if c.isprintable())[:80] or "scenario"
        scen = _toml(texts.pop(entry["file"]), entry["file"])
        ws.scenarios[label] = scen
    ws.files = texts
    return ws


def _toml(body: bytes, member: str) -> dict:
    try:
        return tomllib.loads(body.decode("utf-8-sig"))
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{FIELD}: {member} is not valid TOML ({exc})") from None
    except RecursionError:
        raise InputError(f"{FIELD}: {member} is nested too deeply to be a case file") from None


# ---------------------------------------------------------------------------------------------
# validating and installing


def _write_tree(folder: Path, files: dict[str, bytes]) -> None:
    for rel, body in files.items():
        target = folder / rel
        target.parent.mkdir(parents=True, exist_ok=True)
        write_atomic(target, body)


def validate(ws: Workspace):
    """Validate the workspace's case against its own files; return the :class:`~sizing.case.Case`.

    The files are unpacked into a temporary folder that is removed afterwards; problem lines
    name the members (``fits/block.toml``), never that folder.

    Raises
    ------
    InputError
        One line per problem, each starting with the case field's path.
    """
    with tempfile.TemporaryDirectory(prefix="sizing-ws-") as tmp:
        folder = Path(tmp)
        _write_tree(folder, ws.files)
        try:
            return parse_case(copy.deepcopy(ws.case), folder)
        except InputError as exc:
            real = str(folder.resolve())
            lines = [_scrub(line, (real, tmp)) for line in exc.problems]
            raise InputError(problems=lines) from None


def _scrub(text: str, folders: tuple[str, ...]) -> str:
    for f in folders:
        text = text.replace(f + "/", "").replace(f, "the workspace file")
    return text


def _free_name(folder: Path, rel: str, body: bytes, taken: set[str]) -> str:
    """Return ``rel`` when it is free in ``folder`` (or holds the same bytes), else ``stem-2.suffix`` ..."""
    p = PurePosixPath(rel)
    n = 1
    cand = rel
    while True:
        target = folder / cand
        if cand not in taken:
            if not target.exists() and not target.is_symlink():
                return cand
            if target.is_file() and not target.is_symlink():
                try:
                    if target.read_bytes() == body:
                        return cand
                except OSError:
                    pass
        n += 1
        cand = str(p.with_name(f"{p.stem}-{n}{p.suffix}"))


def install(ws: Workspace, folder: Path | str) -> Workspace:
    """Write the workspace's files into ``folder``; return the workspace with references renamed.

    A file already there with other content is kept: the incoming one gets a free name
    (``sizes-2.csv``) and the case, its scenarios and the lab slots refer to that name.  Every
    target is checked to stay inside ``folder`` (no symlinked subfolder leads out).
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    renamed: dict[str, str] = {}
    taken: set[str] = set()
    for rel, body in ws.files.items():
        new = _free_name(folder, rel, body, taken)
        taken.add(new)
        renamed[rel] = new
    for rel, new in renamed.items():
        inside(new, folder, FIELD)  # a symlinked subfolder pointing out is refused
    _write_tree(folder, {renamed[rel]: body for rel, body in ws.files.items()})

    def follow(data: dict) -> dict:
        data = copy.deepcopy(data)
        for section, key in REFERENCES:
            table = data.get(section)
            if isinstance(table, dict) and isinstance(table.get(key), str) and table[key] in renamed:
                table[key] = renamed[table[key]]
        return data

    return Workspace(case=follow(ws.case), files={renamed[k]: v for k, v in ws.files.items()},
                     lab_files={k: renamed.get(v, v) for k, v in ws.lab_files.items()},
                     scenarios={k: follow(v) for k, v in ws.scenarios.items()})
