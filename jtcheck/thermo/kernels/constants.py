"""Status codes returned by the flash kernels, and the temperature window of their iterations.

:mod:`jtcheck.thermo.flash` turns the codes into messages; a code of 10 or more is a failure
(``converged=False``), never an answer.
"""
from __future__ import annotations

ST_SINGLE = 0          # stable single phase
ST_TWO = 1             # two phases
ST_PURE_SAT = 2        # pure component on the saturation line
ST_FAIL_SINGLE = 10    # single-phase temperature iteration failed
ST_FAIL_TWO = 11       # two-phase iteration failed
ST_FAIL_SPLIT = 12     # unstable feed but no phase split found
ST_FAIL_INPUT = 13     # non-finite input

#: Temperature window of every temperature iteration [K].
T_MIN = 5.0
T_MAX = 5000.0
