"""The cylindrical algebraic covering procedure for a conjunction of literals.

This is the algorithm of Ábrahám, Davenport, England & Kremer (2021),
"Deciding the consistency of non-linear real arithmetic constraints with a
conflict driven search using cylindrical algebraic coverings", J. Log. Algebr.
Methods Program. 119, with the conservative characterization of
:mod:`prover.characterize` in place of theirs.

``cover(s)`` at level ``i = len(s) + 1`` works on the line of ``x_i`` over the
sample prefix ``s``:

1. every literal whose main variable is ``x_i`` contributes *direct*
   intervals: the sectors between consecutive real roots of ``p(s, x_i)`` and
   the roots themselves on which ``p`` has a constant sign that falsifies the
   literal (bounds are roots of ``p``'s irreducible factors).  A literal whose
   polynomial vanishes identically at ``s`` covers the whole line when ``0``
   falsifies it (``<``, ``>``, ``≠``), and nothing otherwise;
2. while the intervals leave a point ``t`` uncovered (a simple rational in a
   gap when there is one, else an uncovered root): at the last level ``(s, t)``
   is a model; otherwise recurse on ``(s, t)``.  A model below is a model here;
   a covering below is characterized (what it passes up, its *declared set*)
   and generalized to the *lifted* interval of ``x_i`` around ``t`` bounded by
   the nearest roots of the declared set's level-``i`` members (the point
   ``{t}`` when ``t`` is one of them);
3. when the line is covered, redundant intervals are dropped (greedy cover by
   region) and the node is returned with what it passes up.

The result is a :class:`Model` or a :class:`Node` tree, the covering that the
certificate records (SPEC §6).  The procedure takes any list of literals, so a
propositional search can call it for each conflict.
"""
from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import cmp_to_key

from flint import fmpz, fmpz_mpoly

from certformat.formula import relation_holds

from .characterize import PolyStore, poly_level
from .numbers import RealAlg
from .roots import Nullified, real_roots_at, sample_between, sign_at

FALSIFIED_BY_ZERO = ("<", ">", "!=")


class TimeLimit(Exception):
    """The deadline passed during the search."""


@dataclass(frozen=True, eq=False)
class Literal:
    """A literal of the conjunction: ``poly rel 0`` in the certificate order."""
    name: str
    """Certificate text of the literal (``a3``, ``~a3``)."""
    poly: fmpz_mpoly
    rel: str


@dataclass(frozen=True)
class Bound:
    """``root index of poly`` at the node's sample (``index`` 1-based)."""
    poly: int
    index: int
    value: RealAlg


@dataclass(eq=False)
class Interval:
    """One interval of a node: open ``(low, high)`` (None = infinite) or the point ``[low]``."""
    low: Bound | None
    high: Bound | None
    point: bool
    sample: RealAlg
    literal: Literal | None = None
    nullified: bool = False
    child: "Node | None" = None
    declared: tuple[int, ...] = ()


@dataclass(eq=False)
class Node:
    """A covering of the line of ``x(len(sample)+1)`` over ``sample``."""
    sample: tuple[RealAlg, ...]
    intervals: list[Interval]
    passed_up: tuple[int, ...] = ()

    def literals(self) -> set[Literal]:
        """The literals that justify a direct interval anywhere in the tree."""
        out: set[Literal] = set()
        stack = [self]
        while stack:
            node = stack.pop()
            for iv in node.intervals:
                if iv.literal is not None:
                    out.add(iv.literal)
                elif iv.child is not None:
                    stack.append(iv.child)
        return out

    def size(self) -> tuple[int, int]:
        """(nodes, intervals) of the tree."""
        nodes = intervals = 0
        stack = [self]
        while stack:
            node = stack.pop()
            nodes += 1
            intervals += len(node.intervals)
            stack.extend(iv.child for iv in node.intervals if iv.child is not None)
        return nodes, intervals


@dataclass(frozen=True)
class Model:
    """A point (certificate order) at which every literal holds."""
    point: tuple[RealAlg, ...]


@dataclass
class Stats:
    nodes: int = 0
    intervals: int = 0


_KEY = cmp_to_key(lambda a, b: a.compare(b))


class Covering:
    """One run of the covering procedure over a fixed list of literals."""

    def __init__(self, store: PolyStore, literals: Sequence[Literal],
                 deadline: float | None = None,
                 progress: Callable[[dict], None] | None = None):
        self.store = store
        self.nvars = store.nvars
        self.deadline = deadline
        self.progress = progress
        self.stats = Stats()
        self.by_level: dict[int, list[tuple[Literal, tuple[int, ...], tuple[int, ...]]]] = {}
        for lit in literals:
            level = poly_level(lit.poly)
            if level == 0:
                raise ValueError(f"literal {lit.name} has a constant polynomial")
            factors = store.factors(lit.poly)
            main = tuple(f for f in factors if store.levels[f] == level)
            lower = tuple(f for f in factors if store.levels[f] < level)
            self.by_level.setdefault(level, []).append((lit, main, lower))

    def run(self) -> Node | Model:
        """A model of the literals, or a covering tree refuting them.

        Raises :class:`Nullification` when the conservative rule cannot
        characterize a cell, :class:`TimeLimit` past the deadline.
        """
        return self._cover(())

    # ------------------------------------------------------------------ search

    def _tick(self) -> None:
        if self.deadline is not None and time.monotonic() > self.deadline:
            raise TimeLimit()

    def _cover(self, sample: tuple[RealAlg, ...]) -> Node | Model:
        level = len(sample) + 1
        self._tick()
        self.stats.nodes += 1
        if self.progress is not None:
            self.progress({"nodes": self.stats.nodes, "level": level})
        roots: dict[int, list[RealAlg]] = {}
        intervals: list[Interval] = []
        for lit, main, lower in self.by_level.get(level, ()):
            intervals += self._direct(lit, main, lower, sample, roots)
        while True:
            t = self._uncovered(intervals)
            if t is None:
                break
            if level == self.nvars:
                return Model(sample + (t,))
            child = self._cover(sample + (t,))
            if isinstance(child, Model):
                return child
            intervals.append(self._lift(child, t, sample, roots))
            self._tick()
        kept = prune(intervals)
        self.stats.intervals += len(kept)
        node = Node(sample, kept)
        if level >= 2:
            node.passed_up = self._characterize(node)
        return node

    def _direct(self, lit: Literal, main: tuple[int, ...], lower: tuple[int, ...],
                sample: tuple[RealAlg, ...], cache: dict) -> list[Interval]:
        """The intervals on which ``lit`` is false, each of constant sign."""
        store = self.store
        nullified = any(sign_at(store.polys[g], sample) == 0 for g in lower)
        labelled: list[tuple[RealAlg, int, int]] = []
        if not nullified:
            for f in main:
                if f not in cache:
                    try:
                        cache[f] = real_roots_at(store.polys[f], sample)
                    except Nullified:
                        nullified = True
                        break
                labelled += [(r, f, j) for j, r in enumerate(cache[f], 1)]
        if nullified:
            if lit.rel not in FALSIFIED_BY_ZERO:
                return []
            return [Interval(None, None, False, between(None, None), lit, nullified=True)]
        bounds = _distinct_sorted(labelled)
        out: list[Interval] = []
        previous: Bound | None = None
        for b in bounds + [None]:
            t = between(previous and previous.value, b and b.value)
            if not relation_holds(lit.rel, sign_at(lit.poly, sample + (t,))):
                out.append(Interval(previous, b, False, t, lit))
            if b is not None and lit.rel in FALSIFIED_BY_ZERO:
                out.append(Interval(b, b, True, b.value, lit))
            previous = b
        return out

    def _uncovered(self, intervals: list[Interval]) -> RealAlg | None:
        """A point outside every interval: rational in a gap if possible, else a root."""
        ends, ranges = regions(intervals)
        covered = bytearray(2 * len(ends) + 1)
        for lo, hi in ranges:
            covered[lo:hi + 1] = b"\x01" * (hi - lo + 1)
        for k in range(len(ends) + 1):
            if not covered[2 * k]:
                low = ends[k - 1].value if k > 0 else None
                high = ends[k].value if k < len(ends) else None
                return between(low, high)
        open_points = [ends[k - 1].value for k in range(1, len(ends) + 1) if not covered[2 * k - 1]]
        if not open_points:
            return None
        return min(open_points, key=lambda r: 1 if r.is_rational else r.poly.degree())

    def _lift(self, child: Node, t: RealAlg, sample: tuple[RealAlg, ...], cache: dict
              ) -> Interval:
        """The interval of ``x_i`` around ``t`` over which the child's covering holds."""
        store = self.store
        level = len(sample) + 1
        below: Bound | None = None
        above: Bound | None = None
        for q in child.passed_up:
            if store.levels[q] != level:
                continue
            rts = store.roots(q, sample, cache)
            lo, hi = 0, len(rts)
            while lo < hi:
                mid = (lo + hi) // 2
                if rts[mid].compare(t) < 0:
                    lo = mid + 1
                else:
                    hi = mid
            if lo < len(rts) and rts[lo].compare(t) == 0:
                b = Bound(q, lo + 1, rts[lo])
                return Interval(b, b, True, t, child=child, declared=child.passed_up)
            if lo > 0 and (below is None or rts[lo - 1].compare(below.value) > 0):
                below = Bound(q, lo, rts[lo - 1])
            if lo < len(rts) and (above is None or rts[lo].compare(above.value) < 0):
                above = Bound(q, lo + 1, rts[lo])
        return Interval(below, above, False, t, child=child, declared=child.passed_up)

    def _characterize(self, node: Node) -> tuple[int, ...]:
        """What ``node`` passes up (:meth:`PolyStore.passed_up`)."""
        bounds: set[int] = set()
        direct, nullified, declared = [], [], set()
        for iv in node.intervals:
            bounds.update(b.poly for b in (iv.low, iv.high) if b is not None)
            if iv.literal is not None:
                (nullified if iv.nullified else direct).append(iv.literal.poly)
            else:
                declared.update(iv.declared)
        return self.store.passed_up(len(node.sample) + 1, node.sample, bounds,
                                    _unique(direct), _unique(nullified), declared)


# ---------------------------------------------------------------------- samples

def floor_of(a: RealAlg) -> fmpz:
    """``floor(a)``, exactly, by bisection on integers with exact comparisons."""
    if a.is_rational:
        return a.value.floor()
    lo, hi = a.low.floor(), a.high.floor()
    while lo < hi:
        mid = (lo + hi + 1) // 2
        if a.compare(mid) > 0:
            lo = mid
        else:
            hi = mid - 1
    return lo


def between(a: RealAlg | None, b: RealAlg | None) -> RealAlg:
    """The simplest rational strictly between ``a`` and ``b`` (None = -inf / +inf).

    The same number as :func:`prover.roots.sample_between` (the integer
    closest to 0 if there is one, else the dyadic of least denominator),
    which depends only on the values of ``a`` and ``b``.  The integers in
    ``(a, b)`` are found from the exact floors of the ends, which stays fast
    when an end has a wide isolating interval; the dyadic case is left to
    the kernel.
    """
    lo = None if a is None else floor_of(a) + 1
    hi = None if b is None else b.value.ceil() - 1 if b.is_rational else floor_of(b)
    if lo is None or hi is None or lo <= hi:
        if (lo is None or lo <= 0) and (hi is None or hi >= 0):
            return RealAlg.from_rational(0)
        return RealAlg.from_rational(lo if lo is not None and lo > 0 else hi)
    return sample_between(a, b)


# ---------------------------------------------------------------------- regions

def _unique(polys: list[fmpz_mpoly]) -> list[fmpz_mpoly]:
    seen, out = set(), []
    for p in polys:
        k = str(p)
        if k not in seen:
            seen.add(k)
            out.append(p)
    return out


def _distinct_sorted(labelled: list[tuple[RealAlg, int, int]]) -> list[Bound]:
    """Labelled roots sorted by value, one (the first label) per distinct value."""
    labelled = sorted(labelled, key=lambda x: _KEY(x[0]))
    out: list[Bound] = []
    for value, pid, j in labelled:
        if out and out[-1].value.compare(value) == 0:
            continue
        out.append(Bound(pid, j, value))
    return out


def regions(intervals: list[Interval]) -> tuple[list[Bound], list[tuple[int, int]]]:
    """The distinct endpoints ``e1 < … < em`` and each interval's range of regions.

    Region ``2k`` is the sector ``(e_k, e_(k+1))`` (``e_0 = -inf``,
    ``e_(m+1) = +inf``); region ``2k-1`` is the point ``e_k``.  An open
    interval ``(e_a, e_b)`` covers regions ``2a … 2b-2``; a point ``[e_a]``
    covers region ``2a-1``.
    """
    labels: dict[tuple[int, int], Bound] = {}
    for iv in intervals:
        for b in (iv.low, iv.high):
            if b is not None:
                labels.setdefault((b.poly, b.index), b)
    ordered = sorted(labels.values(), key=lambda b: _KEY(b.value))
    ends: list[Bound] = []
    position: dict[tuple[int, int], int] = {}
    for b in ordered:
        if not ends or ends[-1].value.compare(b.value) != 0:
            ends.append(b)
        position[(b.poly, b.index)] = len(ends)
    m = len(ends)
    ranges = []
    for iv in intervals:
        a = position[(iv.low.poly, iv.low.index)] if iv.low is not None else 0
        if iv.point:
            ranges.append((2 * a - 1, 2 * a - 1))
        else:
            b = position[(iv.high.poly, iv.high.index)] if iv.high is not None else m + 1
            ranges.append((2 * a, 2 * b - 2))
    return ends, ranges


def prune(intervals: list[Interval]) -> list[Interval]:
    """A small subset that still covers the line, in order (greedy by reach).

    From the first uncovered region, take the interval that starts there or
    before and reaches furthest (direct before lifted, then first found);
    this gives a cover with the fewest intervals.
    """
    ends, ranges = regions(intervals)
    last = 2 * len(ends)
    order = sorted(range(len(intervals)), key=lambda k: ranges[k][0])
    kept: list[int] = []
    pos, k = 0, 0
    while pos <= last:
        best = None
        while k < len(order) and ranges[order[k]][0] <= pos:
            k += 1
        for j in order[:k]:
            lo, hi = ranges[j]
            if hi < pos:
                continue
            if best is None or _better(intervals[j], hi, intervals[best], ranges[best][1]):
                best = j
        if best is None:
            raise AssertionError("the intervals do not cover the line")
        kept.append(best)
        pos = ranges[best][1] + 1
    return [intervals[j] for j in kept]


def _better(a: Interval, a_reach: int, b: Interval, b_reach: int) -> bool:
    if a_reach != b_reach:
        return a_reach > b_reach
    return a.literal is not None and b.literal is None
