"""The shape of jtcheck.web: one package per feature, its blueprint in views (no circles: tests/test_structure.py)."""
from __future__ import annotations

import importlib
from pathlib import Path

import import_graph

REPO = Path(__file__).resolve().parents[2]


def test_the_structure_check_sees_the_web_feature_modules():
    modules = import_graph.jtcheck().modules
    assert "jtcheck.web.case_page" in modules and "jtcheck.web.cases.views" in modules


def test_each_feature_is_a_package_with_its_blueprint_in_views():
    from flask import Blueprint

    for feature in ("accounts", "api", "batches", "cases", "fluids", "materials", "records"):
        assert (REPO / "jtcheck" / "web" / feature / "__init__.py").is_file(), feature
        assert isinstance(importlib.import_module(f"jtcheck.web.{feature}.views").bp, Blueprint), feature
