"""The import graph of a Python package, read from its source (AST), for the structure tests.

Every ``import`` statement counts, wherever it stands: at module level, inside a function (a deferred
import hides a circle, it does not break it) or under ``if TYPE_CHECKING``.  Relative imports are
resolved.  ``from pkg import name`` where ``pkg.name`` is a module counts as importing that module;
where ``name`` is not a module it counts as importing ``pkg``.  ``import a.b.c`` counts as importing
``a.b.c`` only, not the parent packages it also initialises (a package's ``__init__`` that re-exports its
own modules would otherwise sit in a circle with each of them).
"""
from __future__ import annotations

import ast
from dataclasses import dataclass
from functools import cache
from pathlib import Path

ROOT = "jtcheck"
PKG = Path(__file__).resolve().parents[1] / ROOT


@dataclass(frozen=True)
class Import:
    """One imported name as written in ``module``'s source: ``target`` is the absolute dotted name
    (``jtcheck.records.service``, ``jtcheck.units.parse_pressure`` or ``flask``), ``line`` its line."""
    module: str
    target: str
    line: int


@dataclass(frozen=True, eq=False)
class ImportGraph:
    """The modules of one package, every import they make, and the edges between the package's modules."""
    #: the package's folder
    package_dir: Path
    #: dotted module name -> source file (a package's ``__init__.py`` is the package)
    modules: dict[str, Path]
    #: every import of every module, in module and line order
    imports: tuple[Import, ...]
    #: module -> the package's modules it imports (itself excluded)
    edges: dict[str, frozenset[str]]

    def internal_module(self, target: str) -> str | None:
        """The package's module an imported name loads (``jtcheck.units.parse_pressure`` -> ``jtcheck.units``),
        or None for a name outside the package."""
        parts = target.split(".")
        for n in range(len(parts), 0, -1):
            if ".".join(parts[:n]) in self.modules:
                return ".".join(parts[:n])
        return None

    def location(self, imp: Import) -> str:
        """``jtcheck/records/service.py:43``: where an import stands (for failure messages)."""
        return f"{self.modules[imp.module].relative_to(self.package_dir.parent).as_posix()}:{imp.line}"

    def where(self, module: str, target_module: str) -> list[str]:
        """``path:line`` of each import in ``module`` that loads ``target_module`` (for failure messages)."""
        return [self.location(i) for i in self.imports
                if i.module == module and self.internal_module(i.target) == target_module]


def _module_name(path: Path, package_dir: Path) -> str:
    parts = path.relative_to(package_dir.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def _resolve_relative(module: str, is_package: bool, level: int, name: str | None) -> str:
    base = module.split(".") if is_package else module.split(".")[:-1]
    if level > 1:
        base = base[: len(base) - (level - 1)]
    return ".".join([*base, name] if name else base)


def _imports_of(module: str, path: Path, modules: dict[str, Path]) -> list[Import]:
    found = []
    for node in ast.walk(ast.parse(path.read_text(), filename=str(path))):
        if isinstance(node, ast.Import):
            found += [Import(module, a.name, node.lineno) for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            source = (_resolve_relative(module, path.name == "__init__.py", node.level, node.module) if node.level
                      else node.module)
            for alias in node.names:
                submodule = f"{source}.{alias.name}"
                found.append(Import(module, submodule if submodule in modules else source, node.lineno))
    return found


def read_package(package_dir: Path) -> ImportGraph:
    """The import graph of the package in ``package_dir`` (every ``*.py`` below it)."""
    modules = {_module_name(p, package_dir): p for p in sorted(package_dir.rglob("*.py"))
               if "__pycache__" not in p.parts}
    imports = tuple(sorted({i for m, p in modules.items() for i in _imports_of(m, p, modules)},
                           key=lambda i: (i.module, i.line, i.target)))
    graph = ImportGraph(package_dir, modules, imports, {})
    edges: dict[str, set[str]] = {m: set() for m in modules}
    for i in imports:
        target = graph.internal_module(i.target)
        if target is not None and target != i.module:
            edges[i.module].add(target)
    graph.edges.update({m: frozenset(t) for m, t in edges.items()})
    return graph


@cache
def jtcheck() -> ImportGraph:
    """The import graph of the jtcheck package (read once per test session)."""
    return read_package(PKG)


def strongly_connected_components(edges: dict[str, frozenset[str]]) -> list[frozenset[str]]:
    """Every strongly connected component of the directed graph ``edges`` (Tarjan 1972, iterative)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[frozenset[str]] = []

    def visit(node: str) -> tuple[str, list[str]]:
        index[node] = low[node] = len(index)
        stack.append(node)
        on_stack.add(node)
        return node, sorted(edges.get(node, ()))

    for start in sorted(edges):
        if start in index:
            continue
        work = [visit(start)]
        while work:
            node, successors = work[-1]
            if successors:
                nxt = successors.pop(0)
                if nxt not in index:
                    work.append(visit(nxt))
                elif nxt in on_stack:
                    low[node] = min(low[node], index[nxt])
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[node])
            if low[node] == index[node]:
                component = set()
                while True:
                    member = stack.pop()
                    on_stack.discard(member)
                    component.add(member)
                    if member == node:
                        break
                found.append(frozenset(component))
    return found


def circles(edges: dict[str, frozenset[str]]) -> list[frozenset[str]]:
    """The import circles: strongly connected components of more than one module."""
    return [c for c in strongly_connected_components(edges) if len(c) > 1]


def cycle_through(component: frozenset[str], edges: dict[str, frozenset[str]]) -> list[str]:
    """One closed path through a strongly connected component, for a failure message: ``[a, b, c, a]``
    (a shortest one through the component's first module, by breadth-first search)."""
    start = min(component)
    previous: dict[str, str] = {}
    frontier = [start]
    while frontier:
        next_frontier = []
        for node in frontier:
            for nxt in sorted(edges[node] & component):
                if nxt == start:
                    path = [node]
                    while path[-1] != start:
                        path.append(previous[path[-1]])
                    return [*reversed(path), start]
                if nxt not in previous:
                    previous[nxt] = node
                    next_frontier.append(nxt)
        frontier = next_frontier
    raise ValueError(f"{sorted(component)} is not strongly connected")
