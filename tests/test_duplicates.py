"""No two places in jtcheck/ compute the same thing: a duplicate-code check over the package.

pylint's similarity checker (a general-purpose library) lists every run of 6 or more lines that stands in
two places, imports, docstrings, comments and signatures left out.  Shared logic belongs in one module
that both places import.
"""
from __future__ import annotations

import subprocess
import sys
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
#: Shortest run of equal lines that counts as a duplicate (the same as the review tool's default).
MIN_LINES = 6


def test_no_code_stands_twice_in_the_package():
    proc = subprocess.run(
        [sys.executable, "-m", "pylint", "--disable=all", "--enable=duplicate-code", "--score=n",
         f"--min-similarity-lines={MIN_LINES}", "--ignore-imports=y", "--ignore-docstrings=y",
         "--ignore-comments=y", "--ignore-signatures=y", "jtcheck"],
        cwd=REPO, capture_output=True, text=True, timeout=300, check=False)
    assert proc.returncode in (0, 8), proc.stderr    # 8: refactoring messages (the duplicates) were found
    pairs = [line for line in proc.stdout.splitlines() if line.startswith("==")]
    assert not pairs, "code that stands twice in jtcheck/ (move it to one module):\n" + proc.stdout
