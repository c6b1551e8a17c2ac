"""The package's shape: imports run one way through the layers, no cycles, small functions and
modules, and every element kind declares everything the layers above it ask of a kind.

Layers, bottom to top (a module may import its own layer and the ones below):

    model -> elements -> assembly -> checks -> search -> report, export -> io -> batch -> cli

The checks sit below the search because the search uses them (robust error over process
tolerances, verified error of the top designs); the report renders what io reads.
"""

from __future__ import annotations

import ast
import functools
from pathlib import Path

import pytest

SRC = Path(__file__).resolve().parents[2] / "src" / "springsynth"
LAYERS = ["model", "elements", "assembly", "checks", "search", "report", "io", "batch", "cli"]
#: layers that sit side by side (neither imports the other)
SAME = {"export": "report"}
#: third-party libraries the pure core must never import
UI_LIBS = ("pymoo", "pandas", "matplotlib", "typer", "rich", "dask", "distributed", "ezdxf")
MAX_FUNCTION_LINES = 80
MAX_MODULE_LINES = 700


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(SRC.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _layer(module: str) -> int | None:
    """Rank of a springsynth module's layer (None for the package root, the lazy public API)."""
    parts = module.split(".")
    if len(parts) < 2:
        return None
    top = parts[1]
    if top in ("cli", "_allocator"):
        top = "cli"
    top = SAME.get(top, top)
    if top not in LAYERS:
        raise AssertionError(f"{module}: {top!r} is not a known layer; add it to LAYERS")
    return LAYERS.index(top)


@functools.lru_cache(maxsize=1)
def _modules() -> dict[str, Path]:
    """Every module of the package by name (read once: the checks below ask for it per import)."""
    return {_module_name(p): p for p in SRC.rglob("*.py")}


def _imports(path: Path, module: str) -> list[tuple[str, int]]:
    """Every springsynth module imported by ``path`` (also inside functions), with the line.

    Imports under ``if TYPE_CHECKING:`` only name types for annotations and never run: left out.
    """
    out = []
    is_pkg = path.name == "__init__.py"
    tree = ast.parse(path.read_text(encoding="utf-8"))
    typing_only = {id(n) for block in ast.walk(tree)
                   if isinstance(block, ast.If) and isinstance(block.test, ast.Name) and block.test.id == "TYPE_CHECKING"
                   for n in ast.walk(block)}
    for node in ast.walk(tree):
        if id(node) in typing_only:
            continue
        if isinstance(node, ast.Import):
            out += [(a.name, node.lineno) for a in node.names if a.name.startswith("springsynth")]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = module.split(".")[: len(module.split(".")) - node.level + (1 if is_pkg else 0)]
                name = ".".join(base + ([node.module] if node.module else []))
            else:
                name = node.module or ""
            if name.startswith("springsynth"):
                mods = _modules()
                subs = [f"{name}.{a.name}" for a in node.names if f"{name}.{a.name}" in mods]
                out += [(s, node.lineno) for s in subs] or [(name, node.lineno)]
    return out


def _third_party(path: Path) -> set[str]:
    out = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            out |= {a.name.split(".")[0] for a in node.names}
        elif isinstance(node, ast.ImportFrom) and not node.level and node.module:
            out.add(node.module.split(".")[0])
    return out


def test_imports_run_downward_only():
    upward = []
    for module, path in _modules().items():
        mine = _layer(module)
        for imported, line in _imports(path, module):
            theirs = _layer(imported)
            if mine is None or theirs is None:
                if theirs is None and imported == "springsynth" and mine is not None:
                    upward.append(f"{path.relative_to(SRC.parent)}:{line} imports the package root")
                continue
            if theirs > mine:
                upward.append(f"{path.relative_to(SRC.parent)}:{line} ({LAYERS[mine]}) imports {imported} "
                              f"({LAYERS[theirs]})")
    assert not upward, "imports that run upward:\n" + "\n".join(upward)


def test_no_import_cycle():
    graph = {m: {i for i, _ in _imports(p, m) if i != m} for m, p in _modules().items()}
    # a package imports its own modules; an edge to the package itself is its __init__
    state: dict[str, int] = {}
    stack: list[str] = []

    def visit(m: str) -> list[str] | None:
        state[m] = 1
        stack.append(m)
        for n in sorted(graph.get(m, ())):
            if n not in graph:
                continue
            if state.get(n) == 1:
                return stack[stack.index(n):] + [n]
            if n not in state:
                found = visit(n)
                if found:
                    return found
        state[m] = 2
        stack.pop()
        return None

    for m in sorted(graph):
        if m not in state:
            cycle = visit(m)
            assert cycle is None, "import cycle: " + " -> ".join(cycle)


def test_the_core_never_imports_ui_or_search_libraries():
    bad = []
    for module, path in _modules().items():
        layer = _layer(module)
        if layer is not None and layer <= LAYERS.index("assembly"):
            used = _third_party(path) & set(UI_LIBS)
            if used:
                bad.append(f"{module}: {sorted(used)}")
    assert not bad, "\n".join(bad)


def test_functions_and_modules_stay_small():
    long = []
    for module, path in _modules().items():
        text = path.read_text(encoding="utf-8")
        n_lines = len(text.splitlines())
        if n_lines > MAX_MODULE_LINES:
            long.append(f"{module}: module of {n_lines} lines")
        for node in ast.walk(ast.parse(text)):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                n = node.end_lineno - node.lineno + 1
                if n > MAX_FUNCTION_LINES:
                    long.append(f"{module}.{node.name}: function of {n} lines")
    assert not long, "split these into named steps:\n" + "\n".join(long)


def test_the_layering_test_sees_an_upward_import(tmp_path):
    # the checker itself: a model module importing the search is caught
    assert _layer("springsynth.search.loop") > _layer("springsynth.model.study")
    assert _layer("springsynth.export.spec") == _layer("springsynth.report.html")
    with pytest.raises(AssertionError):
        _layer("springsynth.nowhere.x")


def test_every_kind_declares_glyph_tolerances_and_verification():
    from springsynth.checks.verify.solvers import SOLVERS
    from springsynth.elements import TOLERANCE_CLASSES, registry
    from springsynth.report.schematic import GLYPHS

    for kind in registry().values():
        assert kind.glyph in GLYPHS, f"{kind.name}: glyph {kind.glyph!r} is not drawn by the report"
        assert kind.verification == "none" or kind.verification in SOLVERS, \
            f"{kind.name}: verification {kind.verification!r} has no solver"
        for q in kind.params:
            assert q.tolerance in TOLERANCE_CLASSES, f"{kind.name}.{q.name}: tolerance {q.tolerance!r}"


def test_a_kind_missing_a_declaration_is_refused():
    import dataclasses

    from springsynth.elements import Param, missing_declarations
    from springsynth.elements.contact_sphere import KIND

    bare = dataclasses.replace(KIND, glyph="", params=(Param("radius_mm", "mm", 1.0, 2.0),))
    assert missing_declarations(bare) == ["glyph", "radius_mm.tolerance"]
    assert missing_declarations(KIND) == []
