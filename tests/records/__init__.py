"""Tests of jtcheck.records, the case register (a package, so that its conftest does not shadow tests/conftest.py)."""
