"""The package's layers: data flow one way, down; no import circle; nothing imports cli or ui.

The order is written once, in :data:`LAYERS` (lowest first).  A module may import modules of its
own layer or of a lower one, never of a higher one; inside a layer, the imports form no circle.
Imports are read with ``ast`` from the source (nothing is executed).  Function-local imports are
allowed only for the heavy optional libraries in :data:`DEFERRED_OK` (common practice: keep the
command line quick to start), and each carries a comment saying so.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "sizing"

#: lowest first; a module's layer is the first prefix that matches its dotted name
LAYERS = (
    ("foundation", ("sizing.errors", "sizing.version", "sizing.constants", "sizing.units", "sizing.texts",
                    "sizing.files", "sizing.plausible", "sizing.labcsv")),
    ("physics", ("sizing.physics",)),
    ("fitting", ("sizing.fitting",)),
    ("case", ("sizing.case", "sizing.workspace_file", "sizing.library")),
    ("model", ("sizing.model",)),
    ("planning", ("sizing.planning",)),
    ("outputs", ("sizing.outputs",)),
    ("views", ("sizing.views", "sizing.bench", "sizing.bench_blend", "sizing.data")),
    ("cli", ("sizing.cli", "sizing.__main__")),
    ("api", ("sizing",)),  # sizing/__init__.py: the public API re-exports from every layer below
)
DEFERRED_OK = ("matplotlib", "streamlit", "altair", "pandas", "scipy", "playwright", "importlib")


def module_name(path: Path) -> str:
    rel = path.relative_to(PACKAGE.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def layer_of(name: str, layers=LAYERS) -> int:
    for i, (_, prefixes) in enumerate(layers):
        for p in prefixes:
            if name == p or name.startswith(p + ".") and p != "sizing":
                return i
    raise AssertionError(f"{name}: not in any layer of tests/test_layers.py; add it to LAYERS")


def imports_of(path: Path, name: str):
    """Yield ``(target module, line, local)`` for each import of a sizing module in ``path``."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    is_pkg = path.name == "__init__.py"
    package = name if is_pkg else name.rpartition(".")[0]
    funcs = [n for n in ast.walk(tree) if isinstance(n, (ast.FunctionDef, ast.AsyncFunctionDef))]
    local_lines = {sub.lineno for f in funcs for sub in ast.walk(f) if isinstance(sub, (ast.Import, ast.ImportFrom))}
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for a in node.names:
                yield a.name, node.lineno, node.lineno in local_lines
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                mod = ".".join(base + ([node.module] if node.module else []))
            else:
                mod = node.module or ""
            for a in node.names:  # "from .physics import balance": balance may be a module itself
                yield f"{mod}.{a.name}", node.lineno, node.lineno in local_lines


def graph(package: Path = PACKAGE):
    """Return ``{module: [(target, line, local), ...]}`` of imports between sizing modules."""
    mods = {module_name(p): p for p in package.rglob("*.py")}
    out = {}
    for name, path in mods.items():
        edges = []
        for target, line, local in imports_of(path, name):
            if not target.startswith("sizing"):
                continue
            # "from .physics import balance" names a module; "from .model import solve" a symbol
            t = target if target in mods else target.rpartition(".")[0]
            if t not in mods:
                continue
            if t != name:
                edges.append((t, line, local))
        out[name] = edges
    return out


def problems(g, layers=LAYERS) -> list[str]:
    """Return every upward import and every circle of the import graph ``g``."""
    out = []
    for mod, edges in g.items():
        for t, line, _ in edges:
            if t == "sizing" and mod != "sizing":
                out.append(f"{mod}:{line} imports the package API (sizing/__init__.py); import the module itself")
            elif layer_of(t, layers) > layer_of(mod, layers):
                out.append(f"{mod}:{line} imports {t}: an upward import "
                           f"({layers[layer_of(mod, layers)][0]} -> {layers[layer_of(t, layers)][0]})")
    # circles: depth-first search over all edges (module level and local alike)
    state, stack = {}, []

    def visit(m):
        state[m] = 1
        stack.append(m)
        for t, _, _ in g.get(m, ()):
            if state.get(t) == 1:
                out.append("import circle: " + " -> ".join(stack[stack.index(t):] + [t]))
            elif state.get(t) is None:
                visit(t)
        stack.pop()
        state[m] = 2

    for m in sorted(g):
        if state.get(m) is None:
            visit(m)
    return out


def test_layers_and_no_circles():
    found = problems(graph())
    assert not found, "\n".join(found)


def test_no_function_local_imports_but_heavy_libraries():
    bad = []
    for path in PACKAGE.rglob("*.py"):
        text = path.read_text(encoding="utf-8")
        lines = text.splitlines()
        tree = ast.parse(text)
        for f in [n for n in ast.walk(tree) if isinstance(n, (ast.FunctionDef, ast.AsyncFunctionDef))]:
            for sub in ast.walk(f):
                if isinstance(sub, (ast.Import, ast.ImportFrom)):
                    mod = sub.module if isinstance(sub, ast.ImportFrom) else sub.names[0].name
                    top = (mod or "").split(".")[0]
                    where = f"{path.relative_to(PACKAGE.parent)}:{sub.lineno}"
                    if getattr(sub, "level", 0) or top not in DEFERRED_OK:
                        bad.append(f"{where}: function-local import of {mod or '.'} (move it to the top)")
                    elif "#" not in lines[sub.lineno - 1]:
                        bad.append(f"{where}: deferred import of {mod} without a comment saying why")
    assert not bad, "\n".join(bad)


def test_physics_knows_no_case_and_no_file():
    g = graph()
    for mod, edges in g.items():
        if mod.startswith("sizing.physics"):
            for t, line, _ in edges:
                assert layer_of(t) <= layer_of("sizing.physics"), f"{mod}:{line} imports {t}"
            src = (PACKAGE / Path(*mod.split(".")[1:])).with_suffix(".py")
            if src.exists():
                text = src.read_text(encoding="utf-8")
                assert "open(" not in text and "read_text(" not in text, f"{mod} reads a file"


@pytest.mark.parametrize("edge, expect", [
    (("sizing.physics.isotherm", "sizing.model"), "upward import"),
    (("sizing.units", "sizing.errors"), None),
])
def test_the_check_catches_an_upward_import(edge, expect):
    g = {m: list(e) for m, e in graph().items()}
    g[edge[0]] = g[edge[0]] + [(edge[1], 1, False)]
    found = problems(g)
    if expect is None:
        assert not found
    else:
        assert any(expect in p and edge[0] in p for p in found)


def test_the_check_catches_a_circle():
    g = {m: list(e) for m, e in graph().items()}
    # model imports case already; a case -> model edge closes a circle (and is upward)
    g["sizing.case"] = g["sizing.case"] + [("sizing.model", 1, False)]
    found = problems(g)
    assert any(p.startswith("import circle") and "sizing.case" in p and "sizing.model" in p for p in found)


def test_nothing_in_sizing_imports_cli_or_ui():
    for mod, path in ((module_name(p), p) for p in PACKAGE.rglob("*.py")):
        if mod.startswith("sizing.cli") or mod == "sizing.__main__":
            continue
        for target, line, _ in imports_of(path, mod):
            assert not target.startswith(("sizing.cli", "ui", "streamlit")), f"{mod}:{line} imports {target}"
