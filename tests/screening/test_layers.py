"""Layer rules (shared design): the engineering core imports no web, database, unit or report library.

The packages of the core and the libraries each may import are the rows of ``ALLOWED_IMPORTS`` in
tests/test_structure.py that name their libraries; which jtcheck packages each may import is checked there.
"""
from __future__ import annotations

import sys

import import_graph
import pytest
from test_structure import ALLOWED_IMPORTS, package_of

GRAPH = import_graph.jtcheck()
RESTRICTED = sorted(m for m in GRAPH.modules
                    if package_of(m) in ALLOWED_IMPORTS and ALLOWED_IMPORTS[package_of(m)].libraries is not None)


def test_the_engineering_core_is_restricted():
    assert {"thermo", "letdown", "screening"} <= {package_of(m) for m in RESTRICTED}


@pytest.mark.parametrize("module", RESTRICTED)
def test_engineering_layers_import_only_what_the_design_allows(module):
    allowed = ALLOWED_IMPORTS[package_of(module)].libraries
    bad = [f"{GRAPH.location(i)} imports {i.target}" for i in GRAPH.imports
           if i.module == module and GRAPH.internal_module(i.target) is None
           and i.target.split(".")[0] not in allowed | sys.stdlib_module_names]
    assert not bad, (f"{module} may import only {sorted(allowed)} and the standard library (no web, database, "
                     "unit or report library):\n" + "\n".join(bad))
