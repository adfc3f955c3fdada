"""The core's layers import only downward, and no module imports itself round a cycle.

Every import is read from the source (those inside functions too), so an import placed
in a function to hide a cycle or an upward reach is found as well. The layers, from the
bottom (DEVELOPERS.md, "Architecture"):

    errors, units, formula, model, store      the bottom: no project imports upward
    calc        calc types, input specs, the Sheet, hooks, the plugin set
    job         loading and validation, the schema, the safe-path rule
    document    compute each calc once, transforms, results, the verification cache
    render      assets, figures, math, HTML, theme, PDF adapter, self-check
    package     the archive, reading a package back, the one comparer
    pipeline    the plan of one build, the scheduler, commit, sets, Dask
    cli         argument parsing and every command (and the plugin authors' test kit)
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

CORE = Path(__file__).resolve().parent.parent / "reportgen"
BOTTOM = {"errors", "units", "formula", "model", "store", "_version"}
LAYERS = ["bottom", "calc", "job", "document", "render", "package", "pipeline", "cli"]


def layer_of(module: str) -> int:
    """The layer index of a ``reportgen`` module (a dotted name)."""
    parts = module.split(".")
    assert parts[0] == "reportgen", module
    if len(parts) == 1:
        return LAYERS.index("calc")  # the package itself: the plugin authors' API facade
    head = parts[1]
    if head in BOTTOM:
        return 0
    if head in ("testing", "__main__"):
        return LAYERS.index("cli")
    assert head in LAYERS, f"{module}: a module outside every layer"
    return LAYERS.index(head)


def module_name(path: Path) -> str:
    rel = path.relative_to(CORE.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def imports_of(path: Path) -> set[str]:
    """Every reportgen module ``path`` imports, at any depth of the file."""
    me = module_name(path)
    package = me if path.name == "__init__.py" else me.rpartition(".")[0]
    found: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names if a.name.split(".")[0] == "reportgen")
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if target.split(".")[0] != "reportgen":
                continue
            for alias in node.names:  # "from reportgen.x import y" may import module y
                sub = f"{target}.{alias.name}"
                found.add(sub if (CORE.parent / (sub.replace(".", "/") + ".py")).exists()
                          or (CORE.parent / sub.replace(".", "/")).is_dir() else target)
    found.discard(me)
    return found


MODULES = {module_name(p): p for p in sorted(CORE.rglob("*.py"))}
GRAPH = {m: {t for t in imports_of(p) if t in MODULES or t == "reportgen"}
         for m, p in MODULES.items()}


@pytest.mark.parametrize("module", sorted(MODULES))
def test_imports_go_only_downward(module):
    mine = layer_of(module)
    upward = sorted(t for t in GRAPH[module] if layer_of(t) > mine)
    assert not upward, (f"{module} ({LAYERS[mine]}) imports from a higher layer: "
                        + ", ".join(f"{t} ({LAYERS[layer_of(t)]})" for t in upward))


def test_no_import_cycles():
    """Tarjan's strongly connected components over the whole import graph."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on: set[str] = set()
    cycles: list[list[str]] = []
    counter = [0]

    def visit(v: str) -> None:
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on.add(v)
        for w in GRAPH.get(v, ()):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                cycles.append(sorted(comp))

    for v in sorted(GRAPH):
        if v not in index:
            visit(v)
    assert not cycles, "import cycles: " + "; ".join(" ↔ ".join(c) for c in cycles)


def test_every_module_is_in_a_layer():
    for module in MODULES:
        layer_of(module)  # asserts


def test_the_checker_sees_imports_inside_functions(tmp_path):
    """The graph is only as good as the parse: an import hidden in a function counts."""
    src = tmp_path / "reportgen" / "units.py"
    src.parent.mkdir()
    src.write_text("def f():\n    from reportgen.pipeline.plan import build_job\n")
    global CORE
    saved, CORE = CORE, tmp_path / "reportgen"
    try:
        assert "reportgen.pipeline.plan" in imports_of(src)
    finally:
        CORE = saved
