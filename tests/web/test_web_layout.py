"""The shape of jtcheck.web: feature packages whose modules import each other without cycles."""
from __future__ import annotations

import importlib.util
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]


def _import_cycles():
    spec = importlib.util.spec_from_file_location("import_cycles", REPO / "tests" / "tools" / "import_cycles.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_no_module_of_the_web_package_imports_itself_through_others():
    """Function-level imports count: deferring an import hides a cycle, it does not break it."""
    tool = _import_cycles()
    graph = tool.import_graph([REPO / "jtcheck" / "web"])
    assert "jtcheck.web.case_page" in graph and "jtcheck.web.cases.views" in graph
    cycles = [c for c in tool.strongly_connected(graph) if len(c) > 1]
    assert not cycles, cycles


def test_the_cycle_check_sees_function_level_imports(tmp_path, monkeypatch):
    tool = _import_cycles()
    pkg = tmp_path / "pkg"
    pkg.mkdir()
    (pkg / "__init__.py").write_text("")
    (pkg / "a.py").write_text("from pkg import b\n")
    (pkg / "b.py").write_text("def f():\n    from pkg.a import x\n    return x\n")
    monkeypatch.setattr(tool, "REPO", tmp_path)
    graph = tool.import_graph([pkg])
    assert graph["pkg.a"] == {"pkg.b"} and graph["pkg.b"] == {"pkg.a"}
    assert [c for c in tool.strongly_connected(graph) if len(c) > 1] == [["pkg.a", "pkg.b"]]


def test_each_feature_is_a_package_with_its_blueprint_in_views():
    from flask import Blueprint

    for feature in ("accounts", "api", "batches", "cases", "fluids", "materials", "records"):
        assert (REPO / "jtcheck" / "web" / feature / "__init__.py").is_file(), feature
        assert isinstance(importlib.import_module(f"jtcheck.web.{feature}.views").bp, Blueprint), feature
