"""Database URL, engine settings, migration location, packaging and layer rules of jtcheck.records."""
from __future__ import annotations

import ast
import tomllib
from pathlib import Path

import pytest
from sqlalchemy import text

from jtcheck.records import db

#: Opens a database (see tests/conftest.py): the PostgreSQL run of `make test` includes this module.
pytestmark = pytest.mark.database

REPO = Path(__file__).resolve().parents[2]


def test_database_url_defaults_to_sqlite_in_the_instance_folder(monkeypatch, tmp_path):
    monkeypatch.delenv("DATABASE_URL", raising=False)
    assert db.database_url(tmp_path) == f"sqlite:///{(tmp_path / 'jtcheck.sqlite3').as_posix()}"


def test_empty_database_url_variable_counts_as_unset(monkeypatch, tmp_path):
    monkeypatch.setenv("DATABASE_URL", "  ")
    assert db.database_url(tmp_path).startswith("sqlite:///")


@pytest.mark.parametrize("given", ["postgres://u:p@db.example.org:5432/reg", "postgresql://u:p@db.example.org:5432/reg"])
def test_database_url_from_environment_uses_psycopg3(monkeypatch, tmp_path, given):
    monkeypatch.setenv("DATABASE_URL", given)
    assert db.database_url(tmp_path) == "postgresql+psycopg://u:p@db.example.org:5432/reg"


def test_other_urls_are_left_alone():
    assert db.normalise_database_url("sqlite:////tmp/x.db") == "sqlite:////tmp/x.db"
    assert db.normalise_database_url("postgresql+psycopg://h/db") == "postgresql+psycopg://h/db"


def test_sqlite_engine_has_foreign_keys_and_wal(tmp_path):
    engine = db.make_engine(f"sqlite:///{tmp_path / 'new' / 'folder' / 'x.sqlite3'}")
    try:
        with engine.connect() as conn:
            assert conn.execute(text("PRAGMA foreign_keys")).scalar() == 1
            assert conn.execute(text("PRAGMA journal_mode")).scalar() == "wal"
        assert (tmp_path / "new" / "folder").is_dir()
    finally:
        engine.dispose()


def test_sqlite_rollback_undoes_ddl_and_dml(tmp_path):
    """Real BEGIN/COMMIT: the driver's implicit transaction handling is replaced."""
    engine = db.make_engine(f"sqlite:///{tmp_path / 'x.sqlite3'}")
    try:
        with engine.connect() as conn:
            conn.execute(text("CREATE TABLE t (x INTEGER)"))
            conn.rollback()
            assert conn.execute(text("SELECT count(*) FROM sqlite_master WHERE name = 't'")).scalar() == 0
    finally:
        engine.dispose()


def test_postgres_engine_pings_its_pool():
    engine = db.make_engine("postgresql://nobody@127.0.0.1:1/none")
    try:
        assert engine.pool._pre_ping is True
        assert engine.url.drivername == "postgresql+psycopg"
    finally:
        engine.dispose()


def test_migrations_are_found_and_have_one_head():
    path = db.migrations_path()
    assert (path / "env.py").is_file()
    assert db.head_revision() == "0009"


def test_pyproject_ships_the_migrations_and_every_package():
    """The wheel must carry migrations/ (as jtcheck._migrations) and every package under jtcheck/."""
    config = tomllib.loads((REPO / "pyproject.toml").read_text())["tool"]["setuptools"]
    assert config["package-dir"]["jtcheck._migrations"] == "migrations"
    assert "script.py.mako" in config["package-data"]["jtcheck._migrations"]
    assert "jtcheck._migrations.versions" in config["packages"]
    listed = set(config["packages"])
    on_disk = {".".join(p.parent.relative_to(REPO).parts) for p in (REPO / "jtcheck").rglob("*.py")
               if "__pycache__" not in p.parts}
    missing = on_disk - listed
    assert not missing, f"add these packages to [tool.setuptools] packages in pyproject.toml: {sorted(missing)}"
    package_dir = {k: v for k, v in config["package-dir"].items() if k}
    for name in listed:
        parent = max((p for p in package_dir if name == p or name.startswith(p + ".")), key=len, default=None)
        rest = name[len(parent):].lstrip(".").split(".") if parent else name.split(".")
        folder = REPO.joinpath(package_dir[parent] if parent else "", *[r for r in rest if r])
        assert folder.is_dir(), f"pyproject.toml lists the package {name} but {folder} does not exist"


def _imports(path: Path) -> set[str]:
    names = set()
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.Import):
            names.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            names.add(node.module)
    return names


def test_migration_environment_imports_only_the_models():
    jtcheck_imports = {n for n in _imports(REPO / "migrations" / "env.py") if n.split(".")[0] == "jtcheck"}
    assert jtcheck_imports == {"jtcheck.records.models"}


@pytest.mark.parametrize("module", sorted(p.name for p in (REPO / "jtcheck" / "records").glob("*.py")))
def test_records_layer_imports_only_what_the_design_allows(module):
    allowed = ("sqlalchemy", "alembic", "jtcheck.records", "jtcheck.cases", "jtcheck.letdown", "jtcheck.screening",
               "jtcheck.thermo", "jtcheck.errors")
    for name in _imports(REPO / "jtcheck" / "records" / module):
        if name.split(".")[0] in ("sqlalchemy", "alembic") or name.split(".")[0] != "jtcheck":
            assert name.split(".")[0] not in ("flask", "pint", "weasyprint"), name
            continue
        assert name == "jtcheck" or name.startswith(allowed), f"{module} imports {name}"
