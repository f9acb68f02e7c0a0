"""Structure of the jtcheck package (shared design, "The layers"): no import circles, and no import from a
lower layer into a higher one.

The import graph is read from the source by :mod:`import_graph`: module-level and function-level imports
both count, relative imports are resolved.  A new package gets one row in ``ALLOWED_IMPORTS``.
"""
from __future__ import annotations

from enum import IntEnum
from typing import NamedTuple

import import_graph

ROOT = import_graph.ROOT


class Layer(IntEnum):
    """Layers from bottom to top; a package may import only packages of its own layer or below, and of
    those only the ones its row in ``ALLOWED_IMPORTS`` lists."""
    CORE = 0          # errors, units, notices
    THERMO = 1        # components, EOS, flashes
    ENGINEERING = 2   # letdown, screening (and future case kinds, materials)
    RECORDS = 3       # the case register
    OUTPUT = 4        # reports, batch
    EDGE = 5          # web, cli


class Row(NamedTuple):
    layer: Layer
    #: jtcheck packages it may import, besides itself
    imports: frozenset[str]
    #: the only third-party libraries it may import (None: not restricted by this table; see
    #: tests/screening/test_layers.py)
    libraries: frozenset[str] | None = None


CORE_PACKAGES = frozenset({"errors", "marks", "units", "notices", "itemlists", "depressuring_lists"})
#: numerical libraries of the engineering core (and the standard library): no web, database, unit or report library
NUMERIC = frozenset({"numpy", "scipy", "numba"})
#: thermo and the engineering layer; "jtcheck" is jtcheck/__init__.py, the public API it re-exports (Fluid, letdown,
#: material_mdmt, hydrate_temperature, depressure)
ENGINEERING_PACKAGES = frozenset({"thermo", "letdown", "screening", "cases", "blowdown", ROOT})
BELOW_OUTPUT = CORE_PACKAGES | ENGINEERING_PACKAGES | {"records"}
BELOW_EDGE = BELOW_OUTPUT | {"reports", "batch"}

#: The table of allowed layer edges: package under jtcheck/ -> its layer and what it may import.
#: A new package is one row, e.g. ``"cases": Row(Layer.ENGINEERING, frozenset({"errors", "thermo"}), NUMERIC),``
ALLOWED_IMPORTS: dict[str, Row] = {
    # quantities marked in sentences (rendered in the user's units at the edges); no imports
    "marks": Row(Layer.CORE, frozenset()),
    "errors": Row(Layer.CORE, frozenset({"marks"})),
    "notices": Row(Layer.CORE, frozenset()),
    "units": Row(Layer.CORE, frozenset({"errors", "marks"})),
    # lists of items typed as text (header sections, settle-out volumes), read at the edges like units
    "itemlists": Row(Layer.CORE, frozenset({"errors", "units"})),
    # a vessel depressuring case's inputs typed as text (vessel, orifices, heat input, run), read at the edges
    "depressuring_lists": Row(Layer.CORE, frozenset({"errors", "units", "itemlists"})),
    "thermo": Row(Layer.THERMO, frozenset({"errors", "marks"}), NUMERIC),
    "letdown": Row(Layer.ENGINEERING, frozenset({"errors", "marks", "thermo"}), NUMERIC),
    # screening may import letdown; letdown never imports screening
    "screening": Row(Layer.ENGINEERING, frozenset({"errors", "marks", "thermo", "letdown"}), NUMERIC),
    # case kinds: each kind's inputs, computation and sections, over the engineering packages
    "cases": Row(Layer.ENGINEERING, frozenset({"errors", "marks", "thermo", "letdown", "screening", "blowdown"}),
                 NUMERIC),
    # vessel depressurisation in time: over thermo, the letdown (valve outlet) and the cold-metal screening
    "blowdown": Row(Layer.ENGINEERING, frozenset({"errors", "marks", "thermo", "letdown", "screening"}), NUMERIC),
    ROOT: Row(Layer.ENGINEERING, frozenset({"thermo", "letdown", "screening", "blowdown"}), NUMERIC),
    "records": Row(Layer.RECORDS, frozenset({"errors", "marks", *ENGINEERING_PACKAGES})),
    "reports": Row(Layer.OUTPUT, BELOW_OUTPUT),
    "batch": Row(Layer.OUTPUT, BELOW_OUTPUT),
    "web": Row(Layer.EDGE, BELOW_EDGE),
    "cli": Row(Layer.EDGE, BELOW_EDGE),   # never web
}

#: Flask and the libraries that come with it: only jtcheck.web imports them.
FLASK_LIBRARIES = frozenset({"flask", "flask_wtf", "flask_limiter", "werkzeug"})


def package_of(module: str) -> str:
    """The row of ``ALLOWED_IMPORTS`` a module belongs to: ``jtcheck.records.service`` -> ``records``,
    ``jtcheck.units`` -> ``units``, ``jtcheck`` -> ``jtcheck``."""
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else ROOT


def _describe_circle(circle: frozenset[str]) -> str:
    graph = import_graph.jtcheck()
    lines = [" -> ".join(import_graph.cycle_through(circle, graph.edges)),
             f"  modules: {', '.join(sorted(circle))}"]
    for module in sorted(circle):
        for target in sorted(graph.edges[module] & circle):
            lines.append(f"  {module} imports {target} ({', '.join(graph.where(module, target))})")
    return "\n".join(lines)


def _where(module: str, target: str) -> str:
    return ", ".join(import_graph.jtcheck().where(module, target))


def test_the_graph_reader_counts_every_kind_of_import(tmp_path):
    """The reader itself, on a small package: relative, deferred and ``from pkg import module`` imports."""
    files = {
        "__init__.py": "from .a import f\n",
        "a.py": "def f():\n    from . import b  # deferred, relative, a module\n",
        "b.py": "import os\nfrom pkg.sub import c\n",
        "sub/__init__.py": "",
        "sub/c.py": "from .. import a\nfrom ..b import thing  # not a module: counts as pkg.b\nfrom pkg import f\n",
    }
    for name, text in files.items():
        (tmp_path / "pkg" / name).parent.mkdir(parents=True, exist_ok=True)
        (tmp_path / "pkg" / name).write_text(text)
    graph = import_graph.read_package(tmp_path / "pkg")
    assert graph.edges == {"pkg": {"pkg.a"}, "pkg.a": {"pkg.b"}, "pkg.b": {"pkg.sub.c"}, "pkg.sub": set(),
                           "pkg.sub.c": {"pkg.a", "pkg.b", "pkg"}}
    assert import_graph.circles(graph.edges) == [{"pkg", "pkg.a", "pkg.b", "pkg.sub.c"}]
    assert import_graph.cycle_through(frozenset({"pkg", "pkg.a", "pkg.b", "pkg.sub.c"}), graph.edges) == \
        ["pkg", "pkg.a", "pkg.b", "pkg.sub.c", "pkg"]
    assert graph.where("pkg.sub.c", "pkg.b") == ["pkg/sub/c.py:2"]


def test_the_graph_sees_the_whole_package():
    """A reader that cannot see a package checks nothing."""
    graph = import_graph.jtcheck()
    assert {ROOT, "jtcheck.errors", "jtcheck.thermo.flash", "jtcheck.records.service"} <= set(graph.modules)
    assert "jtcheck.thermo.flash" in graph.edges["jtcheck.letdown.throttle"]


def test_no_import_circle():
    new = import_graph.circles(import_graph.jtcheck().edges)
    assert not new, ("import circles (break each: move the shared piece down into a module both can import, "
                     "or pass it in):\n" + "\n".join(_describe_circle(c) for c in new))


def test_every_package_has_a_layer():
    missing = sorted({package_of(m) for m in import_graph.jtcheck().modules} - set(ALLOWED_IMPORTS))
    assert not missing, (f"jtcheck packages in no layer: {missing}; add a row for each to ALLOWED_IMPORTS in "
                         "tests/test_structure.py (its Layer, the jtcheck packages it may import and, for the "
                         "engineering core, the libraries)")


def test_the_table_allows_no_upward_import():
    upward = [f"{name} ({row.layer.name}) may import {target} ({ALLOWED_IMPORTS[target].layer.name})"
              for name, row in ALLOWED_IMPORTS.items() for target in sorted(row.imports)
              if target in ALLOWED_IMPORTS and ALLOWED_IMPORTS[target].layer > row.layer]
    unknown = [f"{name} may import {target}, which has no row" for name, row in ALLOWED_IMPORTS.items()
               for target in sorted(row.imports - set(ALLOWED_IMPORTS))]
    assert not upward + unknown, "ALLOWED_IMPORTS allows imports from a lower layer into a higher one:\n" + \
        "\n".join(upward + unknown)


def test_no_import_from_a_lower_layer_into_a_higher_one():
    bad = []
    for module, targets in sorted(import_graph.jtcheck().edges.items()):
        package = package_of(module)
        if package not in ALLOWED_IMPORTS:
            continue   # reported by test_every_package_has_a_layer
        row = ALLOWED_IMPORTS[package]
        for target in sorted(targets):
            target_package = package_of(target)
            if target_package == package or target_package in row.imports:
                continue
            target_row = ALLOWED_IMPORTS.get(target_package)
            layer = target_row.layer.name if target_row else "no layer"
            bad.append(f"{module} ({row.layer.name}) imports {target} ({layer}) at "
                       f"{_where(module, target)}")
    assert not bad, ("imports the layers do not allow (tests/test_structure.py, ALLOWED_IMPORTS; a layer imports "
                     "only the layers below it):\n" + "\n".join(bad))


def test_cli_never_imports_web():
    assert "web" not in ALLOWED_IMPORTS["cli"].imports
    bad = [f"{m} imports {t} ({_where(m, t)})"
           for m, targets in sorted(import_graph.jtcheck().edges.items()) if package_of(m) == "cli"
           for t in sorted(targets) if package_of(t) == "web"]
    assert not bad, "the command line goes to the records layer directly, never through the web:\n" + "\n".join(bad)


def test_only_web_imports_flask():
    graph = import_graph.jtcheck()
    bad = [f"{i.module} imports {i.target} ({graph.location(i)})" for i in graph.imports
           if i.target.split(".")[0] in FLASK_LIBRARIES and package_of(i.module) != "web"]
    assert not bad, "only jtcheck.web imports Flask:\n" + "\n".join(bad)

