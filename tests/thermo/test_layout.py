"""Layout of jtcheck.thermo: the compiled algorithms reach a model family only through the model interface,
no module imports another in a circle, and the subpackages keep the design's layer rule.

Imports are read from the source (AST), at module level and inside functions alike, so a lazy import
counts as much as a top-level one.
"""
from __future__ import annotations

import ast
import sys
from pathlib import Path

import pytest

import jtcheck

PACKAGE_ROOT = Path(jtcheck.__file__).parent
INTERFACE = "jtcheck.thermo.models.interface"


def module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE_ROOT.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def all_modules() -> dict[str, Path]:
    return {module_name(p): p for p in PACKAGE_ROOT.rglob("*.py")}


def imported_modules(path: Path, known: dict[str, Path]) -> set[str]:
    """jtcheck modules imported anywhere in ``path``; ``from a import b`` counts as ``a.b`` when that is a module."""
    package = module_name(path) if path.name == "__init__.py" else module_name(path).rpartition(".")[0]
    found = set()
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.Import):
            found.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = package.split(".")[: len(package.split(".")) - (node.level - 1)]
                base = ".".join(anchor + ([base] if base else []))
            for alias in node.names:
                sub = f"{base}.{alias.name}"
                found.add(sub if sub in known else base)
    return {m for m in found if m in known}


def import_graph() -> dict[str, set[str]]:
    known = all_modules()
    return {name: imported_modules(path, known) - {name} for name, path in known.items()}


NUMERICAL = {"numpy", "scipy", "numba"}
#: thermo's subpackages, which tests/screening/test_layers.py (one level deep) does not reach.
SUBPACKAGE_MODULES = sorted(p for p in (PACKAGE_ROOT / "thermo").rglob("*.py") if p.parent != PACKAGE_ROOT / "thermo")


@pytest.mark.parametrize("path", SUBPACKAGE_MODULES, ids=lambda p: str(p.relative_to(PACKAGE_ROOT / "thermo")))
def test_thermo_subpackages_import_only_numerical_libraries_thermo_and_errors(path):
    """The design's layer rule for thermo (numpy, scipy, numba, the standard library, jtcheck.errors)."""
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.Import):
            names = [alias.name for alias in node.names]
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            names = [node.module]
        else:
            continue
        for name in names:
            top = name.split(".")[0]
            if top == "jtcheck":
                assert name.startswith(("jtcheck.thermo", "jtcheck.errors")), f"{path.name} imports {name}"
            else:
                assert top in NUMERICAL or top in sys.stdlib_module_names, f"{path.name} imports {name}"


def test_flash_kernels_import_model_functions_only_through_the_interface():
    graph = import_graph()
    kernels = [m for m in graph if m.startswith("jtcheck.thermo.kernels")]
    assert kernels
    for mod in kernels:
        models = {m for m in graph[mod] if m.startswith("jtcheck.thermo.models")}
        assert models <= {INTERFACE}, f"{mod} imports {sorted(models - {INTERFACE})}"


def test_model_families_do_not_import_the_algorithms():
    graph = import_graph()
    for mod, deps in graph.items():
        if mod.startswith("jtcheck.thermo.models"):
            assert not {d for d in deps if d.startswith("jtcheck.thermo.kernels")}, mod


def test_no_module_of_thermo_imports_itself_in_a_circle():
    graph = import_graph()
    thermo = {m: {d for d in deps if d.startswith("jtcheck.thermo")}
              for m, deps in graph.items() if m.startswith("jtcheck.thermo")}
    state: dict[str, int] = {}   # 1 on the current path, 2 done

    def visit(mod: str, path: list[str]) -> None:
        state[mod] = 1
        for dep in sorted(thermo[mod]):
            if state.get(dep) == 1:
                raise AssertionError("import circle: " + " -> ".join(path[path.index(dep):] + [mod, dep]))
            if dep not in state:
                visit(dep, path + [mod])
        state[mod] = 2

    for mod in sorted(thermo):
        if mod not in state:
            visit(mod, [])
