"""Resource limits for certificates from outside, and the one rejection type.

A certificate is untrusted input: sizes are bounded before any algebra runs,
and the wall time is checked between steps (``Limits.tick``), so no input can
make the checker work without bound.  Each limit names itself when it trips.
"""
from __future__ import annotations

import time
from dataclasses import dataclass, field


class Rejection(Exception):
    """A claim of the certificate does not hold: where, which rule, why."""

    def __init__(self, rule: str, reason: str, line: int = 0):
        super().__init__(reason)
        self.rule = rule
        self.reason = reason
        self.line = line


@dataclass
class Limits:
    max_bytes: int = 256 * 1024 * 1024
    max_degree: int = 200
    """Largest degree of a polynomial in any one variable."""
    max_coefficient_bits: int = 20_000
    max_steps: int = 2_000_000
    """Largest number of certificate statements (segments, nodes, inferences)."""
    max_sample_degree: int = 4_096
    """Largest product of the degrees of one sample's algebraic coordinates."""
    max_seconds: float = 3_600.0
    started: float = field(default_factory=time.monotonic)

    def tick(self, line: int = 0) -> None:
        """Reject once the wall-time budget is spent (called between steps)."""
        if time.monotonic() - self.started > self.max_seconds:
            raise Rejection("LIMITS", f"time limit of {self.max_seconds:g} s exceeded", line)
