"""Engineering calculations on letdowns: valves, chokes, pressure-reduction stations."""
from jtcheck.letdown.throttle import LetdownBatch, LetdownResult, letdown

__all__ = ["LetdownBatch", "LetdownResult", "letdown"]
