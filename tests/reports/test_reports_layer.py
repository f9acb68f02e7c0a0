"""Layer rule of jtcheck.reports: it may use records, the engineering packages and units, never Flask or the web."""
from __future__ import annotations

import ast
from pathlib import Path

import pytest

REPORTS = Path(__file__).resolve().parents[2] / "jtcheck" / "reports"


def _imports(path: Path) -> set[str]:
    names = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            names.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            names.add(node.module)
    return names


@pytest.mark.parametrize("module", sorted(p.name for p in REPORTS.glob("*.py")))
def test_reports_never_import_flask_or_the_web(module):
    for name in _imports(REPORTS / module):
        top = name.split(".")[0]
        assert top not in ("flask", "flask_wtf", "flask_limiter", "werkzeug"), f"{module} imports {name}"
        assert not (name == "jtcheck.web" or name.startswith("jtcheck.web.")), f"{module} imports {name}"
        assert not (name == "jtcheck.cli" or name.startswith("jtcheck.cli.")), f"{module} imports {name}"
