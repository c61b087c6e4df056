"""The data model of certificates (SPEC.md): plain, exact, free of flint objects; the small
records are named tuples (immutable, and quick to build: a certificate has thousands of them).

Polynomials are their text (SPEC §2, §3) with the blanks removed, in the certificate's
variables ``x1 … xn`` or, for a number, in ``z``; the checker hands it to flint's parser
(sparse, so the size limits apply before anything is expanded).  Every record keeps the line it was
read from (0 when built in memory) so that a rejection can name it.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from typing import NamedTuple

VERSION = 1


class VarDecl(NamedTuple):
    """``var xK = J "NAME"``: certificate variable K is the problem's J-th real variable."""
    index: int
    problem_index: int
    name: str
    line: int = 0


class Number(NamedTuple):
    """``num``: the rational ``low`` (when ``poly`` is None) or the root of ``poly`` in (low, high)."""
    poly: str | None
    low: Fraction
    high: Fraction
    line: int = 0


class AtomClaim(NamedTuple):
    """``atom aK = pJ REL 0``."""
    poly: str
    rel: str
    line: int = 0


class Literal(NamedTuple):
    """``aK``/``~aK`` (atoms), ``bK`` (Boolean variables), ``dK`` (definitions)."""
    name: str
    positive: bool = True

    def negated(self) -> "Literal":
        return Literal(self.name, not self.positive)

    def __str__(self) -> str:
        return self.name if self.positive else "~" + self.name


class Root(NamedTuple):
    """``pK#j``: the j-th smallest distinct real root of pK over the node's sample."""
    poly: str
    index: int

    def __str__(self) -> str:
        return f"{self.poly}#{self.index}"


NEG_INF = "-inf"
POS_INF = "+inf"
Bound = Root | str


class Interval(NamedTuple):
    """``(low, high)`` when not ``point``; ``[low]`` (and high == low) when ``point``."""
    low: Bound
    high: Bound
    point: bool = False

    def __str__(self) -> str:
        if self.point:
            return f"[{self.low}]"
        return f"({self.low}, {self.high})"


@dataclass
class Segment:
    """``seg INTERVAL at N by LIT`` (direct) or ``… lift cJ keep P…`` (lifted)."""
    interval: Interval
    sample: str
    literal: Literal | None = None
    child: str | None = None
    keep: tuple[str, ...] = ()
    line: int = 0


@dataclass
class Node:
    """``node cK sample …`` with its segments."""
    id: str
    sample: tuple[str, ...]
    segments: list[Segment] = field(default_factory=list)
    line: int = 0


@dataclass
class Lemma:
    """``lemma LK excludes LITS by cJ``."""
    id: str
    literals: tuple[Literal, ...]
    root: str
    line: int = 0


@dataclass
class Inference:
    """``infer LITS`` (``()`` is ``infer false``)."""
    literals: tuple[Literal, ...]
    line: int = 0


@dataclass
class Certificate:
    """A whole certificate: unsat (lemmas, nodes, refutation) or sat (values)."""
    kind: str
    sha256: str
    variables: list[VarDecl]
    polys: dict[str, str] = field(default_factory=dict)
    """Text of each polynomial, blanks removed (``-3*x1*x2+7``)."""
    numbers: dict[str, Number] = field(default_factory=dict)
    atoms: dict[str, AtomClaim] = field(default_factory=dict)
    lemmas: list[Lemma] = field(default_factory=list)
    nodes: dict[str, Node] = field(default_factory=dict)
    core: tuple[int, ...] = ()
    steps: list[Inference] = field(default_factory=list)
    values: dict[str, str] = field(default_factory=dict)
    bools: dict[int, bool] = field(default_factory=dict)
    version: int = VERSION
    lines: dict[str, int] = field(default_factory=dict)
    """Line of each id's declaration (polys, numbers, atoms, nodes, lemmas)."""
