"""The register's modules never import its public facade (no circle anywhere: tests/test_structure.py)."""
from __future__ import annotations

import import_graph


def test_nothing_in_the_register_imports_its_service_namespace():
    """``jtcheck.records.service`` gathers the register's public operations, so none of its modules may import it."""
    edges = import_graph.jtcheck().edges
    users = sorted(m for m, targets in edges.items()
                   if m.startswith("jtcheck.records.") and "jtcheck.records.service" in targets)
    assert users == []
