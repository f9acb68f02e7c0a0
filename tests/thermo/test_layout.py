"""Layout of jtcheck.thermo: the compiled algorithms reach a model family only through the model interface,
no module imports another in a circle, and the subpackages keep the design's layer rule.

Imports are read from the source (AST), at module level and inside functions alike, so a lazy import
counts as much as a top-level one.
"""
from __future__ import annotations

import ast
import sys
from pathlib import Path

import import_graph as graph_reader
import pytest

import jtcheck

PACKAGE_ROOT = Path(jtcheck.__file__).parent
INTERFACE = "jtcheck.thermo.models.interface"


def import_graph() -> dict[str, frozenset[str]]:
    """jtcheck's module graph (tests/import_graph.py: imports anywhere in a module count)."""
    return graph_reader.jtcheck().edges


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
