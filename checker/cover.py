"""Replay of covering trees: rules LEMMA, COVER, BOUND, DIRECT, NULLIFIED, LIFT, PROJECT.

Each rule of SOUNDNESS.md §3–§4 is one function below, named after it.  The
top function, :func:`check_node`, reads like the induction of SOUNDNESS.md §4:
realize the node's intervals at its sample, require that they cover the line,
justify each, and return what the node passes up to its parent's cell.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import cmp_to_key
from itertools import combinations

from flint import fmpq, fmpq_poly, fmpz_mpoly

from certformat.certificate import NEG_INF, POS_INF, Certificate, Lemma, Node, Segment
from certformat.formula import relation_holds

from . import polys as P
from .algebraic import KernelError, RealAlgebraic, _sign, compare, refine, roots_of_factors
from .limits import Limits, Rejection
from .signs import at_rational_point, is_nullified, real_roots_at, roots_of_substituted, sign_at


@dataclass
class Replay:
    """What the rules read: the certificate's exact objects and the lemma being checked."""
    cert: Certificate
    polys: dict[str, fmpz_mpoly]
    numbers: dict[str, RealAlgebraic]
    literals: dict[str, tuple[fmpz_mpoly, str]] = field(default_factory=dict)
    """Literal text (``a3``, ``~a3``) of the current lemma -> (polynomial, effective relation)."""
    visited: set[str] = field(default_factory=set)
    limits: Limits = field(default_factory=Limits)
    factor_memo: dict[str, dict] = field(default_factory=dict)
    projections: dict[tuple, set] = field(default_factory=dict)
    seen: dict[int, tuple] = field(default_factory=dict)
    isolated: dict[tuple, list] = field(default_factory=dict)

    def _of(self, f: fmpz_mpoly) -> tuple:
        """(f, P.key(f), P.level(f)), once per object in this check (the entry keeps f alive, so
        its id stays its own)."""
        entry = self.seen.get(id(f))
        if entry is None:
            entry = self.seen[id(f)] = (f, P.key(f), P.level(f))
        return entry

    def key(self, f: fmpz_mpoly) -> str:
        return self._of(f)[1]

    def level(self, f: fmpz_mpoly) -> int:
        return self._of(f)[2]

    def factors(self, f: fmpz_mpoly) -> dict[str, fmpz_mpoly]:
        """Irreducible factors of f by their keys, each factorization done once per check (f's
        primitive part shares them, and each irreducible factor is its own factorization)."""
        k = self.key(f)
        if k not in self.factor_memo:
            g = P.normalized(f)
            found = self.factor_memo.get(self.key(g)) or {self.key(h): h for h in P.irreducible_factors(g)}
            for h, factor in found.items():
                self.factor_memo[h] = {h: factor}
            self.factor_memo[k] = self.factor_memo[self.key(g)] = found
        return self.factor_memo[k]


def check_lemma(r: Replay, lemma: Lemma, literals: dict[str, tuple[fmpz_mpoly, str]]) -> None:
    """Rule LEMMA: the covering rooted at ``lemma.root`` refutes the lemma's literals."""
    r.literals = literals
    root = r.cert.nodes.get(lemma.root)
    if root is None:
        raise Rejection("LEMMA", f"covering node {lemma.root} is not declared", lemma.line)
    if root.sample:
        raise Rejection("LEMMA", f"root node {root.id} must have the empty sample", root.line)
    check_node(r, root, ())


def check_node(r: Replay, node: Node, prefix: tuple[str, ...]) -> set[str]:
    """Rule COVER: the node's intervals cover the line at its sample; returns what it passes up."""
    r.limits.tick(node.line)
    if node.id in r.visited:
        raise Rejection("COVER", f"node {node.id} is used twice", node.line)
    r.visited.add(node.id)
    if node.sample != prefix:
        raise Rejection("COVER", f"node {node.id} has sample {' '.join(node.sample) or '-'}, "
                        f"expected {' '.join(prefix) or '-'}", node.line)
    sample = tuple(number(r, n, node.line) for n in prefix)
    level = len(sample) + 1
    if level > len(r.cert.variables):
        raise Rejection("COVER", f"node {node.id} is at level {level}, beyond the last variable",
                        node.line)
    require_sample_degree(r, sample, node.line)
    if not node.segments:
        raise Rejection("COVER", f"node {node.id} has no intervals", node.line)
    here = AtSample(sample, r.key, r.factor_memo.get, r.isolated)
    realized = [realize_interval(r, seg, here, level) for seg in node.segments]
    require_covers_line(realized, node)
    relevant: list[fmpz_mpoly] = []
    up: set[str] = set()
    for seg, (low, high) in zip(node.segments, realized):
        r.limits.tick(seg.line)
        relevant += [r.polys[b.poly] for b in (seg.interval.low, seg.interval.high)
                     if not isinstance(b, str)]
        t = number(r, seg.sample, seg.line)
        require_inside(t, low, high, seg)
        if seg.literal is not None:
            relevant += check_direct(r, seg, here, level, t, low, high, up)
        else:
            relevant += check_lift(r, seg, node, here, level, t, low, high)
    return up if level == 1 else up | project(r, relevant, here, level, node)   # a root's cell is a point


class AtSample:
    """Signs, nullification and real roots over one node's sample, each computed once per node;
    at a rational sample all from the substituted polynomial, at the empty one by the factors
    already known for it (SOUNDNESS.md, ROOTS)."""

    def __init__(self, sample, key, known=dict().get, isolated=None):
        self.key, self.known, self.isolated = key, known, isolated
        self.memo: dict[tuple, object] = {}
        self.rational = all(a.is_rational() for a in sample)
        self.sample = sample if self.rational else tuple(refine(a, fmpq(1, 2 ** 64)) for a in sample)  # once, not per sign

    def _once(self, rule, f: fmpz_mpoly):
        k = (rule.__name__, self.key(f))        # the rules have distinct names; a bound method is a new object per use
        if k not in self.memo:
            self.memo[k] = rule(f, self.sample)
        return self.memo[k]

    def _substituted(self, f: fmpz_mpoly, sample) -> fmpq_poly:
        return at_rational_point(f, [a.low for a in sample])

    def _substituted_roots(self, f: fmpz_mpoly, sample) -> list[RealAlgebraic]:
        known = None if sample else self.known(self.key(f))
        if known is None:
            return roots_of_substituted(f, self._once(self._substituted, f), self.isolated)
        return roots_of_factors([self._once(self._substituted, g).numer() for g in known.values()], self.isolated)

    def roots(self, f: fmpz_mpoly) -> list[RealAlgebraic]:
        return self._once(self._substituted_roots if self.rational else real_roots_at, f)

    def sign(self, f: fmpz_mpoly) -> int:
        """The sign of f, which involves only the sample's variables, at the sample."""
        if not self.rational:
            return self._once(sign_at, f)
        if any(f.degrees()[len(self.sample):]):
            raise KernelError(f"{f} involves a variable beyond the sample")
        return _sign(self._once(self._substituted, f)[0])

    def sign_next(self, f: fmpz_mpoly, t: RealAlgebraic) -> int:
        """The sign of f at the sample extended by t."""
        if self.rational and t.is_rational():
            return _sign(self._once(self._substituted, f)(t.low))
        return sign_at(f, self.sample + (t,))

    def nullified(self, f: fmpz_mpoly) -> bool:
        return self._once(self._substituted, f).is_zero() if self.rational else \
            self._once(is_nullified, f)


def number(r: Replay, nid: str, line: int) -> RealAlgebraic:
    """The checked number ``nid``."""
    if nid not in r.numbers:
        raise Rejection("NUMBER", f"number {nid} is not declared", line)
    return r.numbers[nid]


def require_sample_degree(r: Replay, sample, line: int) -> None:
    """Rule LIMITS: the sample's algebraic degree stays within the configured bound."""
    total = 1
    for a in sample:
        total *= 1 if a.is_rational() else a.poly.degree()
    if total > r.limits.max_sample_degree:
        raise Rejection("LIMITS", f"sample of algebraic degree {total} exceeds the limit "
                        f"{r.limits.max_sample_degree}", line)


def bound_value(r: Replay, bound, here: AtSample, level: int, line: int):
    """Rule BOUND: ``pK#j`` is the j-th distinct real root of pK(sample, x_level)."""
    if bound in (NEG_INF, POS_INF):
        return bound
    if bound.poly not in r.polys:
        raise Rejection("BOUND", f"polynomial {bound.poly} is not declared", line)
    q = r.polys[bound.poly]
    if r.level(q) > level:
        raise Rejection("BOUND", f"{bound.poly} involves a variable after x{level}", line)
    try:
        roots = here.roots(q)
    except KernelError as err:
        raise Rejection("BOUND", f"{bound}: {err}", line) from None
    if not 1 <= bound.index <= len(roots):
        raise Rejection("BOUND", f"{bound}: {bound.poly} has {len(roots)} real roots here, "
                        f"not {bound.index}", line)
    return roots[bound.index - 1]


def realize_interval(r: Replay, seg: Segment, here: AtSample, level: int):
    """The exact (low, high) of a segment; equal values for a point interval."""
    iv = seg.interval
    if iv.low == POS_INF or iv.high == NEG_INF or (iv.point and iv.low in (NEG_INF, POS_INF)):
        raise Rejection("BOUND", f"malformed interval {iv}", seg.line)
    low = bound_value(r, iv.low, here, level, seg.line)
    high = low if iv.point else bound_value(r, iv.high, here, level, seg.line)
    if not iv.point and less(high, low, inclusive=True):
        raise Rejection("BOUND", f"interval {iv} is empty", seg.line)
    return low, high


def less(a, b, inclusive=False) -> bool:
    """``a < b`` (or ``a <= b``) for numbers and the infinities (the strings ``-inf``, ``+inf``)."""
    if isinstance(a, str) or isinstance(b, str):
        if a == NEG_INF or b == POS_INF:
            return a != b or inclusive
        return inclusive and a == b
    c = compare(a, b)
    return c < 0 or (inclusive and c == 0)


def require_inside(t: RealAlgebraic, low, high, seg: Segment) -> None:
    """The segment's sample lies in its interval: equal to a point, strictly inside otherwise."""
    inside = (compare(t, low) == 0) if seg.interval.point else (less(low, t) and less(t, high))
    if not inside:
        raise Rejection("COVER", f"sample {seg.sample} is not inside {seg.interval}", seg.line)


def require_covers_line(realized, node: Node) -> None:
    """Rule COVER: read left to right, each segment starts at or before the first value not yet
    covered, and together they reach +inf (all x < reach are covered, and reach too if closed)."""
    reach, closed = NEG_INF, True
    for (low, high), seg in zip(realized, node.segments):
        if seg.interval.point:
            if less(reach, low):
                break
            closed = closed or not less(low, reach)
        elif less(low, reach) or (closed and not less(reach, low)):
            if less(reach, high):
                reach, closed = high, False
        else:
            break
    if reach != POS_INF:
        raise Rejection("COVER", f"node {node.id}: the intervals, read left to right, leave a gap "
                        f"at or after {'-inf' if reach == NEG_INF else 'a bound value'}", node.line)


def check_direct(r: Replay, seg: Segment, here: AtSample, level: int, t, low, high,
                 up: set) -> list:
    """Rule DIRECT: the literal has one sign on the interval and that sign falsifies it."""
    text = str(seg.literal)
    if text not in r.literals:
        raise Rejection("DIRECT", f"literal {text} is not a literal of this lemma", seg.line)
    p, rel = r.literals[text]
    if r.level(p) > level:
        raise Rejection("DIRECT", f"{text} involves a variable after x{level}", seg.line)
    if here.nullified(p):
        return check_nullified(r, seg, p, rel, level, up)
    roots = here.roots(p) if r.level(p) == level else []
    if seg.interval.point:
        on_root = any(compare(z, low) == 0 for z in roots)
        value_sign = 0 if on_root else here.sign_next(p, low)
    else:
        if any(less(low, z) and less(z, high) for z in roots):
            raise Rejection("DIRECT", f"{text} has a root inside {seg.interval}", seg.line)
        value_sign = here.sign_next(p, t)
    if relation_holds(rel, value_sign):
        raise Rejection("DIRECT", f"{text} holds on {seg.interval} (sign {value_sign})", seg.line)
    return [p]


def check_nullified(r: Replay, seg: Segment, p, rel: str, level: int, up: set) -> list:
    """Rule NULLIFIED: p vanishes identically over the sample, which falsifies ``<``, ``>``, ``!=``."""
    if rel not in ("<", ">", "!="):
        raise Rejection("NULLIFIED", f"{seg.literal} vanishes identically here, which does "
                        f"not falsify relation {rel}", seg.line)
    for c in P.coefficients_in(p, level - 1):
        if not c.is_zero():
            up.update(r.factors(c))
    return []


def check_lift(r: Replay, seg: Segment, node: Node, here: AtSample, level: int, t, low,
               high) -> list:
    """Rule LIFT: the child covers the next line; the declared set holds what it passes up and
    its level-``level`` members' nearest roots around the sample are the interval's bounds."""
    if level >= len(r.cert.variables):
        raise Rejection("LIFT", "the last variable's intervals cannot lift", seg.line)
    child = r.cert.nodes.get(seg.child)
    if child is None:
        raise Rejection("LIFT", f"node {seg.child} is not declared", seg.line)
    for pid in seg.keep:
        if pid not in r.polys:
            raise Rejection("LIFT", f"polynomial {pid} is not declared", seg.line)
        if r.level(r.polys[pid]) > level:
            raise Rejection("LIFT", f"declared {pid} involves a variable after x{level}", seg.line)
    passed = check_node(r, child, node.sample + (seg.sample,))   # first: its factors are then known
    declared: dict[str, fmpz_mpoly] = {}
    for pid in seg.keep:
        if not r.polys[pid].is_constant():
            declared.update(r.factors(r.polys[pid]))
    missing = passed - declared.keys()
    if missing:
        raise Rejection("PROJECT", f"projection not declared: {len(missing)} polynomial(s) that "
                        f"node {child.id} passes up are missing from 'keep'", seg.line)
    require_nearest_roots(seg, here, t, low, high,
                          [f for f in declared.values() if r.level(f) == level])
    return list(declared.values())


def require_nearest_roots(seg: Segment, here: AtSample, t, low, high, q) -> None:
    """Rule LIFT (bounds): the interval is the sector or section of the declared set around t."""
    roots = []
    for f in q:
        try:
            roots += here.roots(f)
        except KernelError:
            raise Rejection("LIFT", "a declared polynomial vanishes identically at the sample",
                            seg.line) from None
    on_root = any(compare(z, t) == 0 for z in roots)
    if on_root != seg.interval.point:
        raise Rejection("LIFT", f"{seg.interval} must be " +
                        ("the point of the section through the sample" if on_root else
                         "an open sector, the sample is on no declared section"), seg.line)
    if on_root:
        return
    below = [z for z in roots if compare(z, t) < 0]
    above = [z for z in roots if compare(z, t) > 0]
    want_low = max(below, key=cmp_to_key(compare)) if below else NEG_INF
    want_high = min(above, key=cmp_to_key(compare)) if above else POS_INF
    if less(low, want_low) or less(want_low, low) or less(high, want_high) or less(want_high, high):
        raise Rejection("LIFT", f"{seg.interval} is not bounded by the nearest roots of the "
                        "declared set around the sample", seg.line)


def project(r: Replay, relevant: list, here: AtSample, level: int, node: Node) -> set[str]:
    """Rule PROJECT (conservative, SOUNDNESS.md §4): what the node passes up."""
    main: dict[str, fmpz_mpoly] = {}
    up: set[str] = set()
    for g in {r.key(g): g for g in relevant}.values():
        for k, f in r.factors(g).items():
            if r.level(f) == level:
                main.setdefault(k, f)
            else:
                up.add(k)
    var = level - 1
    for k, f in main.items():
        r.limits.tick(node.line)
        up |= coefficient_chain(r, f, var, here, node)
        if f.degrees()[var] >= 2:
            up |= nonzero_factors(r, (k,), lambda: P.discriminant(f, var), "discriminant", node)
    for (k, f), (l, g) in combinations(main.items(), 2):
        r.limits.tick(node.line)
        up |= nonzero_factors(r, (k, l), lambda: P.resultant(f, g, var), "resultant", node)
    return up


def coefficient_chain(r: Replay, f, var: int, here: AtSample, node: Node) -> set[str]:
    """Coefficients of f in x_level from the leading one to the first non-zero at the sample."""
    out: set[str] = set()
    for c in P.coefficients_in(f, var):
        if c.is_zero():
            continue
        if c.is_constant():
            return out
        out |= r.factors(c).keys()
        if here.sign(c) != 0:
            return out
    raise Rejection("PROJECT", f"node {node.id}: a characterization polynomial vanishes "
                    "identically at the sample (nullification)", node.line)


def nonzero_factors(r: Replay, key: tuple, compute, what: str, node: Node) -> set[str]:
    """The irreducible factors of a projection polynomial, which must not be zero (once per check)."""
    if key not in r.projections:
        g = compute()
        if g.is_zero():
            raise Rejection("PROJECT", f"node {node.id}: a {what} is identically zero", node.line)
        r.projections[key] = set(r.factors(g)) if not g.is_constant() else set()
    return r.projections[key]
