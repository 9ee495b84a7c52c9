"""The core is a one-way pipeline: base -> data -> science -> operations -> boundary.

Every import inside ``pycore/acidscape`` (at module level or inside a function) must point
to the same layer or a lower one, and the module graph must have no cycle. The layers are
the sub-packages, so the folder layout and this test say the same thing.
"""

from __future__ import annotations

import ast
from pathlib import Path

PKG = Path(__file__).resolve().parents[1] / "pycore" / "acidscape"

#: Rank of each layer; a module may import only from ranks <= its own.
LAYERS = {"base": 0, "data": 1, "science": 2, "operations": 3, "boundary": 4, "face": 5}
BASE = {"errors", "checks", "constants", "_version"}


def _module_name(path: Path) -> str:
    rel = path.relative_to(PKG.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _layer(module: str) -> str:
    parts = module.split(".")
    if len(parts) == 1 or parts[1] in ("__main__",):
        return "face"  # the package itself (its public face) and `python -m acidscape`
    if parts[1] in BASE:
        return "base"
    return parts[1]


def _imports(path: Path, module: str) -> set[str]:
    """Every acidscape module that ``path`` imports, resolved to its dotted name."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    is_pkg = path.name == "__init__.py"
    package = module if is_pkg else module.rpartition(".")[0]
    found: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names if a.name.startswith("acidscape"))
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if not target.startswith("acidscape"):
                continue
            for alias in node.names:  # "from .x import module" imports a module
                candidate = f"{target}.{alias.name}"
                sub = PKG.parent / Path(*candidate.split("."))
                found.add(candidate if (sub.with_suffix(".py").exists() or sub.is_dir()) else target)
    found.discard(module)
    return found


def _graph() -> dict[str, set[str]]:
    return {_module_name(p): _imports(p, _module_name(p)) for p in PKG.rglob("*.py")}


def test_every_module_sits_in_a_layer():
    for name in _graph():
        assert _layer(name) in LAYERS, f"{name} is in no layer; put it in one of {sorted(LAYERS)}"


def test_imports_point_down_the_pipeline():
    bad = []
    for name, targets in sorted(_graph().items()):
        for t in sorted(targets):
            if LAYERS[_layer(t)] > LAYERS[_layer(name)] and _layer(t) != "face":
                bad.append(f"{name} ({_layer(name)}) imports {t} ({_layer(t)})")
            if _layer(t) == "face" and _layer(name) != "face":
                bad.append(f"{name} imports the package face {t}; import the module that defines the name")
    assert not bad, "imports against the pipeline:\n" + "\n".join(bad)


def test_no_import_cycle():
    graph = _graph()
    state: dict[str, int] = {}
    stack: list[str] = []
    cycles = []

    def visit(n):
        state[n] = 1
        stack.append(n)
        for m in sorted(graph.get(n, ())):
            if m.endswith("__init__") or m == "acidscape":
                continue
            if state.get(m) == 1:
                cycles.append(" -> ".join(stack[stack.index(m):] + [m]))
            elif m in graph and not state.get(m):
                visit(m)
        stack.pop()
        state[n] = 2

    for n in sorted(graph):
        if not state.get(n):
            visit(n)
    assert not cycles, "import cycles:\n" + "\n".join(cycles)
