"""Import cycles between the modules of a package, read from the source (nothing is imported).

    python tests/tools/import_cycles.py [PACKAGE_DIR ...]        # default: jtcheck/web

Every ``import`` and ``from ... import`` counts, at module level and inside functions alike: an import
deferred into a function hides a cycle from the interpreter, it does not break it.  ``from pkg import name``
is an edge to the module ``pkg.name`` when there is one, else to ``pkg`` (its ``__init__``); relative imports
are resolved.  A package is not counted as imported when only one of its modules is (Python runs the
package's ``__init__`` first, but that is no dependency of the importing module on the package's other
modules).  Only edges between modules of the folders given are kept.

Prints the modules, the edges and every strongly connected component of more than one module (a set of
modules each of which imports, directly or not, every other); exits 1 when there is one.
"""
from __future__ import annotations

import ast
import sys
from collections.abc import Iterable, Mapping
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]


def module_files(package_dir: Path) -> dict[str, Path]:
    """Dotted module name -> file, for every ``.py`` file below ``package_dir`` (a package inside ``REPO``)."""
    out = {}
    for path in sorted(package_dir.rglob("*.py")):
        parts = list(path.relative_to(REPO).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out[".".join(parts)] = path
    return out


def _resolve(module: str, is_package: bool, level: int, target: str | None) -> str:
    """The absolute name of a relative import ``from <level dots><target> import ...`` inside ``module``."""
    if level == 0:
        return target or ""
    base = module.split(".") if is_package else module.split(".")[:-1]
    base = base[: len(base) - (level - 1)]
    return ".".join([*base, target] if target else base)


def imports_of(module: str, path: Path, known: Iterable[str]) -> set[str]:
    """The modules among ``known`` that ``module`` (the file ``path``) imports anywhere in its body."""
    known = set(known)
    found: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"), str(path))):
        if isinstance(node, ast.Import):
            for alias in node.names:
                name = alias.name
                while name and name not in known:      # ``import a.b.c`` of a module we do not scan
                    name = name.rpartition(".")[0]
                if name:
                    found.add(name)
        elif isinstance(node, ast.ImportFrom):
            base = _resolve(module, path.name == "__init__.py", node.level, node.module)
            for alias in node.names:
                sub = f"{base}.{alias.name}"
                if sub in known:
                    found.add(sub)
                elif base in known:
                    found.add(base)
    found.discard(module)
    return found


def import_graph(package_dirs: Iterable[Path]) -> dict[str, set[str]]:
    """Module -> the modules it imports, over every module below ``package_dirs``."""
    files: dict[str, Path] = {}
    for d in package_dirs:
        files.update(module_files(d))
    return {m: imports_of(m, p, files) for m, p in files.items()}


def strongly_connected(graph: Mapping[str, set[str]]) -> list[list[str]]:
    """The strongly connected components of ``graph`` (Tarjan 1972, iterative), each sorted, largest first."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    out: list[list[str]] = []
    counter = 0
    for root in sorted(graph):
        if root in index:
            continue
        work = [(root, iter(sorted(graph[root])))]
        index[root] = low[root] = counter
        counter += 1
        stack.append(root)
        on_stack.add(root)
        while work:
            node, children = work[-1]
            for child in children:
                if child not in index:
                    index[child] = low[child] = counter
                    counter += 1
                    stack.append(child)
                    on_stack.add(child)
                    work.append((child, iter(sorted(graph.get(child, ())))))
                    break
                if child in on_stack:
                    low[node] = min(low[node], index[child])
            else:
                work.pop()
                if work:
                    parent = work[-1][0]
                    low[parent] = min(low[parent], low[node])
                if low[node] == index[node]:
                    component = []
                    while True:
                        member = stack.pop()
                        on_stack.discard(member)
                        component.append(member)
                        if member == node:
                            break
                    out.append(sorted(component))
    return sorted(out, key=lambda c: (-len(c), c))


def main(argv: list[str] | None = None) -> int:
    dirs = [REPO / a for a in (argv if argv else ["jtcheck/web"])]
    graph = import_graph(dirs)
    cycles = [c for c in strongly_connected(graph) if len(c) > 1]
    print(f"{len(graph)} modules, {sum(len(v) for v in graph.values())} import edges "
          f"(module- and function-level) below {', '.join(str(d.relative_to(REPO)) for d in dirs)}")
    if not cycles:
        print("no import cycles: every strongly connected component is a single module")
        return 0
    for c in cycles:
        print(f"cycle of {len(c)} modules: {', '.join(c)}")
        for m in c:
            print(f"  {m} -> {', '.join(sorted(set(graph[m]) & set(c)))}")
    return 1


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
