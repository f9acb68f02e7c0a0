"""``python -m jtcheck.cli``."""
from jtcheck.cli import run

run()
