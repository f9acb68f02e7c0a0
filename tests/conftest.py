"""Shared fixtures."""
from __future__ import annotations

import pytest

#: The six-component natural gas of the issue's public-interface example (mole fractions).
LEAN_GAS = {"methane": 0.85, "ethane": 0.07, "propane": 0.03, "n-butane": 0.01, "nitrogen": 0.02,
            "carbon dioxide": 0.02}

#: A richer gas whose letdown ends two-phase.
RICH_GAS = {"methane": 0.70, "ethane": 0.10, "propane": 0.08, "n-butane": 0.04, "n-pentane": 0.02,
            "n-hexane": 0.02, "nitrogen": 0.02, "carbon dioxide": 0.02}


@pytest.fixture(scope="session")
def lean_gas():
    from jtcheck import Fluid

    return Fluid(LEAN_GAS, eos="PR", kij=0)


@pytest.fixture(scope="session")
def rich_gas():
    from jtcheck import Fluid

    return Fluid(RICH_GAS, eos="PR", kij=0)


# --- Which tests touch a database -------------------------------------------------------------------------------
# `make test` runs the whole suite on SQLite, then the tests marked ``database`` on PostgreSQL (the rest compute
# without a database, so a second run would repeat them to the bit).  A test is marked when it uses a fixture that
# builds a register (below) or carries the mark itself.  The mark cannot be forgotten: every database connection
# opened while a test sets up or runs is watched, and a test that opens one without the mark fails with the reason.

#: Fixtures that build a database (tests/records, tests/web: ``db_url``; tests/e2e: ``live_app``).
DATABASE_FIXTURES = frozenset({"db_url", "live_app"})

_current: dict[str, object] = {"item": None, "phase": None}


def pytest_collection_modifyitems(config, items):
    for item in items:
        if DATABASE_FIXTURES.intersection(getattr(item, "fixturenames", ())):
            item.add_marker(pytest.mark.database)


def _on_connect(dbapi_connection, connection_record):
    item = _current["item"]
    if item is None or _current["phase"] == "teardown" or item.get_closest_marker("database") is not None:
        return
    item.stash.setdefault(_UNMARKED, []).append(type(dbapi_connection).__module__)


_UNMARKED = pytest.StashKey[list]()


def pytest_configure(config):
    from sqlalchemy import event
    from sqlalchemy.pool import Pool

    if not event.contains(Pool, "connect", _on_connect):
        event.listen(Pool, "connect", _on_connect)


@pytest.hookimpl(hookwrapper=True)
def pytest_runtest_setup(item):
    _current.update(item=item, phase="setup")
    yield


@pytest.hookimpl(hookwrapper=True)
def pytest_runtest_call(item):
    _current.update(item=item, phase="call")
    yield


@pytest.hookimpl(hookwrapper=True)
def pytest_runtest_teardown(item, nextitem):
    _current.update(item=item, phase="teardown")
    yield
    _current.update(item=None, phase=None)


@pytest.hookimpl(hookwrapper=True)
def pytest_runtest_makereport(item, call):
    outcome = yield
    report = outcome.get_result()
    drivers = item.stash.get(_UNMARKED, None)
    if call.when == "call" and drivers and report.passed:
        report.outcome = "failed"
        report.longrepr = (f"{item.nodeid} opened a database connection ({', '.join(sorted(set(drivers)))}) without "
                           "the `database` mark: mark it (pytest.mark.database) so that the PostgreSQL run of "
                           "`make test` includes it")
