"""The register's modules import one another without circles (imports inside functions count too)."""
from __future__ import annotations

import ast
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]
PACKAGE = REPO / "jtcheck"


def _modules() -> dict[str, tuple[Path, bool]]:
    """Module name -> (file, is a package) for every module of jtcheck."""
    out = {}
    for path in PACKAGE.rglob("*.py"):
        parts = list(path.relative_to(REPO).with_suffix("").parts)
        is_package = parts[-1] == "__init__"
        out[".".join(parts[:-1] if is_package else parts)] = (path, is_package)
    return out


def _import_graph() -> dict[str, set[str]]:
    """Module -> the jtcheck modules it imports anywhere in its body (top level or inside functions)."""
    modules = _modules()

    def known(name: str) -> str | None:
        while name and name not in modules:
            name = name.rpartition(".")[0]
        return name or None

    graph: dict[str, set[str]] = {name: set() for name in modules}
    for name, (path, is_package) in modules.items():
        base = name if is_package else name.rpartition(".")[0]
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Import):
                targets = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                module = node.module or ""
                if node.level:
                    parent = base
                    for _ in range(node.level - 1):
                        parent = parent.rpartition(".")[0]
                    module = f"{parent}.{module}" if module else parent
                targets = [module, *(f"{module}.{a.name}" for a in node.names)]
            else:
                continue
            graph[name].update(t for t in map(known, targets) if t is not None and t != name)
    return graph


def _circles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components of more than one module (Tarjan, 1972)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []

    def visit(v: str) -> None:
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
                found.append(sorted(component))

    for v in sorted(graph):
        if v not in index:
            visit(v)
    return found


def test_no_import_circle_runs_through_the_register():
    circles = [c for c in _circles(_import_graph()) if any(m.startswith("jtcheck.records") for m in c)]
    assert not circles, "import circles: " + "; ".join(" <-> ".join(c) for c in circles)


def test_nothing_in_the_register_imports_its_service_namespace():
    """``jtcheck.records.service`` re-exports the register's modules, so none of them may import it."""
    graph = _import_graph()
    users = sorted(m for m, targets in graph.items()
                   if m.startswith("jtcheck.records.") and "jtcheck.records.service" in targets)
    assert users == []
