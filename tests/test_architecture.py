"""The package's layers, read from its own imports.

Every module of ``wakes`` has a rank; a module may import modules of its own
rank or below, never above, and no two modules may import each other
through any chain (no cycles). Imports are read with :mod:`ast`, including
imports inside functions; ``from .x import y`` counts as importing ``x``
(and ``x.y`` when that is a module), ``from . import x`` as importing ``x``. Function-local
imports are allowed only for optional heavy libraries.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "wakes"

# The layer order, written once: the longest matching prefix gives a module's rank.
LAYERS = (
    ("base", ("wakes._version", "wakes._system", "wakes._validate", "wakes.errors",
              "wakes.io", "wakes.io.atomic", "wakes.io.tables",
              # pure arithmetic on a quantity's values at refinement levels: any layer may use it
              "wakes.uncertainty")),
    ("engine", ("wakes.induction",)),
    ("vortex physics", ("wakes.vortex", "wakes.exact")),
    ("lifting bodies", ("wakes.aero",)),
    ("case schema", ("wakes.case",)),
    ("files", ("wakes.io.vtk", "wakes.io.vtk_grid", "wakes.io.snapshots", "wakes.io.checkpoint",
               "wakes.io.runfolder")),
    ("time loop", ("wakes.estimate", "wakes.budget", "wakes.watchdog", "wakes.simulate")),
    ("edge", ("wakes.cluster", "wakes.plots", "wakes.probe", "wakes.templates",
              "wakes.progress", "wakes.verify", "wakes.run", "wakes.sweep",
              "wakes.refinement", "wakes.trim")),
    ("front doors", ("wakes.cli", "wakes")),
)

# Function-local imports are for optional heavy libraries only (loaded when used).
LOCAL_IMPORTS_ALLOWED = ("distributed", "dask", "matplotlib", "mpl_toolkits", "cycler", "pyarrow")


def _modules() -> dict[str, tuple[Path, bool]]:
    out = {}
    for path in PACKAGE.rglob("*.py"):
        parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
        is_package = parts[-1] == "__init__"
        if is_package:
            parts = parts[:-1]
        out[".".join(parts)] = (path, is_package)
    return out


MODULES = _modules()


def _imports(name: str) -> list[tuple[str, int, bool]]:
    """(imported module, line, inside a function) for every import of the package's modules,
    and of anything else when inside a function."""
    path, is_package = MODULES[name]
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = name if is_package else name.rpartition(".")[0]
    local_nodes = {id(n) for f in ast.walk(tree) if isinstance(f, (ast.FunctionDef, ast.AsyncFunctionDef))
                   for n in ast.walk(f)}
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            targets = [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - (node.level - 1)]
                module = ".".join(base + ([node.module] if node.module else []))
            else:
                module = node.module
            names = [f"{module}.{a.name}" for a in node.names]
            # "from . import x" imports the module x; "from .x import y" imports x
            targets = names if node.module is None else [module] + names
        else:
            continue
        for t in targets:
            if t in MODULES or id(node) in local_nodes:
                found.append((t, node.lineno, id(node) in local_nodes))
    return found


def _rank(name: str) -> int:
    best, rank = -1, None
    for k, (_, prefixes) in enumerate(LAYERS):
        for p in prefixes:
            if (name == p or name.startswith(p + ".")) and len(p) > best:
                best, rank = len(p), k
    return rank


def _graph() -> dict[str, set[str]]:
    return {m: {t for t, _, _ in _imports(m) if t in MODULES and t != m} for m in MODULES}


def test_every_module_has_a_layer():
    assert [m for m in MODULES if _rank(m) is None] == []


def test_no_import_runs_back_up_a_layer():
    back = [f"{m} ({LAYERS[_rank(m)][0]}) imports {t} ({LAYERS[_rank(t)][0]}) at line {line}"
            for m in sorted(MODULES) for t, line, _ in _imports(m)
            if t in MODULES and _rank(t) > _rank(m)]
    assert back == []


def test_no_cycle_between_modules():
    graph = _graph()
    index, low, stack, on_stack, cycles = {}, {}, [], set(), []

    def visit(v):   # Tarjan's strongly connected components
        index[v] = low[v] = len(index)
        stack.append(v)
        on_stack.add(v)
        for w in sorted(graph[v]):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            component = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                component.append(w)
                if w == v:
                    break
            if len(component) > 1:
                cycles.append(sorted(component))

    for v in sorted(graph):
        if v not in index:
            visit(v)
    assert cycles == []


def test_function_local_imports_only_for_optional_heavy_libraries():
    bad = [f"{m}:{line} imports {t}" for m in sorted(MODULES) for t, line, local in _imports(m)
           if local and t.split(".")[0] not in LOCAL_IMPORTS_ALLOWED]
    assert bad == []


@pytest.mark.parametrize("engine_module", sorted(m for m in MODULES if m.startswith("wakes.induction")))
def test_the_engine_imports_no_dask_and_no_case(engine_module):
    """The engine takes arrays and element objects: no Dask, no case types, no files."""
    path, _ = MODULES[engine_module]
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names = {a.name for n in ast.walk(tree) if isinstance(n, ast.Import) for a in n.names}
    names |= {n.module or "" for n in ast.walk(tree) if isinstance(n, ast.ImportFrom)}
    assert not {n for n in names if n.split(".")[0] in ("dask", "distributed")}
    assert not {n for n in names if n.lstrip(".").startswith(("case", "cluster", "io"))}


def test_every_folder_of_the_package_is_a_regular_package():
    """A folder without __init__.py imports as a namespace package but is left out of
    the built distribution and confuses doctest collection."""
    folders = {p.parent for p in PACKAGE.rglob("*.py")}
    assert sorted(str(f.relative_to(PACKAGE)) for f in folders if not (f / "__init__.py").is_file()) == []
