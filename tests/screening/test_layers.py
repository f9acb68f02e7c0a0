"""Layer rules (shared design): the engineering core imports no web, database, unit or report library."""
from __future__ import annotations

import ast
import sys
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parents[2] / "jtcheck"
ALLOWED = {
    "thermo": ("jtcheck.thermo", "jtcheck.errors"),
    "letdown": ("jtcheck.thermo", "jtcheck.letdown", "jtcheck.errors"),
    "screening": ("jtcheck.thermo", "jtcheck.letdown", "jtcheck.screening", "jtcheck.errors"),
}
THIRD_PARTY = {"numpy", "scipy", "numba"}


def _imports(path: Path):
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.Import):
            yield from (a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            yield node.module


@pytest.mark.parametrize("path", [p for layer in ALLOWED for p in sorted((PKG / layer).glob("*.py"))],
                         ids=lambda p: f"{p.parent.name}/{p.name}")
def test_engineering_layers_import_only_what_the_design_allows(path):
    allowed = ALLOWED[path.parent.name]
    for name in _imports(path):
        top = name.split(".")[0]
        if top != "jtcheck":
            assert top in THIRD_PARTY or top in sys.stdlib_module_names, f"{path.name} imports {name}"
            continue
        assert name.startswith(allowed), f"{path.parent.name}/{path.name} imports {name}"
