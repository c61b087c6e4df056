"""Real algebraic numbers for the checker: exact, small, and written to be audited.

A real algebraic number is a defining integer polynomial with an isolating
rational interval (:class:`RealAlgebraic`).  Everything here is decided by exact
rational arithmetic; an ``arb`` ball is only ever *produced* (:func:`enclosure`),
never consulted to decide.

Algorithms, each with the theorem it rests on:

* **Root counting** -- Sturm's theorem (Sturm 1829; see Basu, Pollack, Roy,
  *Algorithms in Real Algebraic Geometry*, ch. 2): for a squarefree ``p`` and
  ``a < b`` that are not roots of ``p``, the number of real roots of ``p`` in
  ``(a, b)`` is ``V(a) - V(b)``, where ``V(x)`` counts the sign changes in the
  Sturm sequence ``p, p', -rem(p, p'), ...`` evaluated at ``x``.  Sequences are
  computed over the rationals (``fmpq_poly``), so every remainder is exact.
* **Minimal form** -- a number is first reduced to the irreducible factor of its
  defining polynomial that vanishes at it (factorization over the integers;
  Gauss's lemma).  An irreducible polynomial is squarefree, and when its degree
  is at least 2 it has no rational root, so a bisection midpoint is never a
  root; a factor of degree 1 *is* the rational number.
* **Bisection** -- a squarefree polynomial changes sign at each of its (simple)
  roots and nowhere else; with exactly one root in ``(low, high)`` the sign at
  the midpoint tells which half holds it (intermediate value theorem).
* **Isolation** -- a quadratic by its closed form (:func:`isolate_quadratic`).
  Otherwise all real roots lie in ``(-B, B)`` with Cauchy's bound
  ``B = 1 + max_i |a_i / a_n|`` (Cauchy 1829).  Candidate intervals come from
  Arb's complex root enclosures (a hint only); they are accepted when ``g``
  changes sign across each (so each holds a root), they are disjoint, and their
  number equals the Sturm count on ``(-B, B)`` -- then each holds exactly one
  and together they hold every real root.  Otherwise ``(-B, B)`` is split by Sturm counts until each interval
  holds one root.
* **Equality** -- two irreducible primitive polynomials with a common root are
  equal up to sign (the minimal polynomial is unique), so two numbers are equal
  iff their minimal forms share the polynomial and a root in the intersection
  of their intervals (a sign change across it).  Unequal numbers are separated by bisecting both.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from functools import cmp_to_key

from flint import arb, ctx, fmpq, fmpq_poly, fmpz, fmpz_poly


class KernelError(Exception):
    """A claim about numbers that does not hold."""


def _sign(value) -> int:
    """The sign -1, 0 or 1 of an exact number."""
    return (value > 0) - (value < 0)


def _to_fmpq(q) -> fmpq:
    """An exact rational from an ``fmpq``, ``int``, ``fmpz`` or ``Fraction``."""
    if isinstance(q, Fraction):
        return fmpq(q.numerator, q.denominator)
    if isinstance(q, (fmpq, fmpz, int)):
        return fmpq(q)
    raise TypeError(f"not an exact rational: {q!r}")


@dataclass(frozen=True)
class RealAlgebraic:
    """The unique real root of `poly` in the open interval (low, high); or, when low == high, the rational low (and then poly(low) == 0)."""
    poly: fmpz_poly
    low: fmpq
    high: fmpq
    minimal: bool = field(default=False, compare=False)
    """Set only by :func:`reduced` and :func:`isolate`: already checked, with an irreducible poly."""

    def __post_init__(self):
        if not (isinstance(self.poly, fmpz_poly) and isinstance(self.low, fmpq)
                and isinstance(self.high, fmpq)):
            raise TypeError("RealAlgebraic needs an fmpz_poly and two fmpq bounds")

    @staticmethod
    def rational(q) -> RealAlgebraic:
        """The rational q = num/den, defined by den*x - num."""
        q = _to_fmpq(q)
        return RealAlgebraic(fmpz_poly([-q.p, q.q]), q, q, minimal=True)

    def __hash__(self):
        """Structural, like ``==`` (numeric equality is :func:`compare`)."""
        return hash((tuple(self.poly.coeffs()), self.low, self.high))

    def is_rational(self) -> bool:
        """Whether the number is given as the point interval [low, low]."""
        return self.low == self.high


# --------------------------------------------------------------------------
# Root counting.

def squarefree_part(p: fmpz_poly) -> fmpq_poly:
    """p / gcd(p, p'): the same roots, each simple (a multiple root is a root of p')."""
    p = fmpq_poly(p)
    return p // p.gcd(p.derivative())


def sturm_sequence(p: fmpq_poly) -> list[fmpq_poly]:
    """The Sturm sequence p, p', -rem(p, p'), ... down to the last non-zero remainder, each member
    scaled by a positive rational to a primitive integer polynomial (signs, hence counts, unchanged)."""
    seq = [p, p.derivative()]
    while not seq[-1].is_zero():
        r = (-(seq[-2] % seq[-1])).numer()
        seq.append(fmpq_poly(r / r.content()) if not r.is_zero() else fmpq_poly(0))
    return seq[:-1]


def sign_changes(seq: list[fmpq_poly], x: fmpq) -> int:
    """The number of sign changes in the values of `seq` at x, zeros dropped."""
    signs = [s for s in (_sign(f(x)) for f in seq) if s != 0]
    return sum(1 for u, v in zip(signs, signs[1:]) if u != v)


def count_roots(seq: list[fmpq_poly], a: fmpq, b: fmpq) -> int:
    """The number of real roots of squarefree p = seq[0] in (a, b), a < b not roots: Sturm's theorem."""
    if not a < b or seq[0](a) == 0 or seq[0](b) == 0:
        raise KernelError(f"Sturm count needs a < b, neither a root: ({a}, {b})")
    return sign_changes(seq, a) - sign_changes(seq, b)


def cauchy_bound(p: fmpz_poly) -> fmpq:
    """1 + max |a_i / a_n|: every complex root of p is strictly smaller in modulus (Cauchy)."""
    *lower, lead = p.coeffs()
    return 1 + max((fmpq(abs(c), abs(lead)) for c in lower), default=fmpq(0))


def check_isolating(a: RealAlgebraic) -> None:
    """Raise KernelError unless `a` is a valid defining polynomial with an isolating interval (Sturm's theorem on the squarefree part)."""
    if a.poly.degree() < 1:
        raise KernelError(f"defining polynomial {a.poly} has degree < 1")
    if a.low == a.high:
        if a.poly(a.low) != 0:
            raise KernelError(f"{a.low} is not a root of {a.poly}")
        return
    if a.low > a.high:
        raise KernelError(f"empty interval ({a.low}, {a.high})")
    s = squarefree_part(a.poly)
    if s(a.low) == 0 or s(a.high) == 0:
        raise KernelError(f"{a.poly} has a root at an end of ({a.low}, {a.high})")
    n = count_roots(sturm_sequence(s), a.low, a.high)
    if n != 1:
        raise KernelError(f"{a.poly} has {n} roots in ({a.low}, {a.high}), not 1")


# --------------------------------------------------------------------------
# Minimal form, bisection, enclosures.

def reduced(a: RealAlgebraic) -> RealAlgebraic:
    """`a` checked and redefined by the irreducible factor that vanishes at it (a rational if that factor is linear)."""
    if a.minimal:
        return a
    check_isolating(a)
    if a.is_rational():
        return a
    for g, _ in a.poly.factor()[1]:
        if count_roots(sturm_sequence(fmpq_poly(g)), a.low, a.high) == 1:
            if g.degree() == 1:
                return RealAlgebraic.rational(fmpq(-g[0], g[1]))
            return RealAlgebraic(g, a.low, a.high, minimal=True)
    raise KernelError(f"no factor of {a.poly} has its root in ({a.low}, {a.high})")


def _halve(a: RealAlgebraic) -> RealAlgebraic:
    """The half of a's interval that holds it, `a` in minimal form (intermediate value theorem at a simple root)."""
    if a.is_rational():
        return a
    mid = (a.low + a.high) / 2
    at_mid = _sign(a.poly(mid))
    if at_mid == 0:
        return RealAlgebraic.rational(mid)
    if at_mid == _sign(a.poly(a.low)):
        return RealAlgebraic(a.poly, mid, a.high, a.minimal)
    return RealAlgebraic(a.poly, a.low, mid, a.minimal)


def refine(a: RealAlgebraic, width: fmpq) -> RealAlgebraic:
    """`a` in minimal form, its interval no wider than `width`: around an Arb hint if g changes sign there, else by bisection."""
    a = reduced(a)
    if a.high - a.low > width and not a.is_rational():
        with ctx.workprec(max(64, int(width.q).bit_length() - int(width.p).bit_length() + 32)):
            for low, high in _hinted_intervals(a.poly, width / 8):
                low, high = max(low, a.low), min(high, a.high)
                if low < high <= low + width and _sign(a.poly(low)) * _sign(a.poly(high)) < 0:
                    a = RealAlgebraic(a.poly, low, high, a.minimal)
    while a.high - a.low > width:
        a = _halve(a)
    return a


def ball(a: RealAlgebraic) -> arb:
    """An arb ball containing the closed interval [a.low, a.high] (at the current working precision)."""
    return arb(a.low).union(arb(a.high))


def enclosure(a: RealAlgebraic, prec: int) -> arb:
    """A rigorous ball of radius about 2^-prec containing `a`, by bisection with exact sign tests."""
    a = refine(a, fmpq(1, 2 ** prec))
    with ctx.workprec(prec + 16):
        return ball(a)


# --------------------------------------------------------------------------
# Comparison and roots of univariate polynomials.

def _same_number(a: RealAlgebraic, b: RealAlgebraic) -> bool:
    """Equality of numbers in minimal form: the same minimal polynomial g (it is unique) and a root of g,
    which is simple, in the intersection of their intervals: a sign change (intermediate value theorem)."""
    if a.is_rational() or b.is_rational():
        return a.is_rational() and b.is_rational() and a.low == b.low
    if a.poly != b.poly and a.poly != -b.poly:
        return False
    low, high = max(a.low, b.low), min(a.high, b.high)
    return low < high and _sign(a.poly(low)) * _sign(a.poly(high)) < 0


def compare(a: RealAlgebraic, b: RealAlgebraic) -> int:
    """The exact sign of a - b: equality by minimal forms, otherwise bisect until the intervals are disjoint."""
    if a.is_rational() and b.is_rational():
        return _sign(a.low - b.low)
    a, b = reduced(a), reduced(b)
    if _same_number(a, b):
        return 0
    while True:
        if a.high <= b.low:
            return -1
        if b.high <= a.low:
            return 1
        a, b = _halve(a), _halve(b)


def isolate(g: fmpz_poly) -> list[RealAlgebraic]:
    """Isolating intervals for the real roots of g, irreducible of degree >= 2 (module docstring: Isolation)."""
    if g.degree() == 2:
        return isolate_quadratic(g)
    seq = sturm_sequence(fmpq_poly(g))
    bound = cauchy_bound(g)
    total = count_roots(seq, -bound, bound)
    hinted = sorted((l, h) for l, h in _hinted_intervals(g) if -bound < l and h < bound)
    if len(hinted) == total and all(h <= l for (_, h), (l, _) in zip(hinted, hinted[1:])):
        return [RealAlgebraic(g, low, high, minimal=True) for low, high in hinted]
    pending, found = [(-bound, bound)], []
    while pending:
        low, high = pending.pop()
        n = count_roots(seq, low, high)
        if n == 1:
            found.append(RealAlgebraic(g, low, high, minimal=True))
        elif n > 1:
            mid = (low + high) / 2
            pending += [(low, mid), (mid, high)]
    return found


def isolate_quadratic(g: fmpz_poly) -> list[RealAlgebraic]:
    """The roots (-b ± sqrt(D)) / 2a of irreducible g = a z^2 + b z + c, D = b^2 - 4ac: with s = isqrt(D 4^64),
    s < sqrt(D) 2^64 < s + 1 (D is no square), so each lies strictly inside its interval below."""
    c, b, a = g.coeffs()
    disc = b * b - 4 * a * c
    if disc < 0:
        return []
    s = (disc << 128).isqrt()
    if disc.isqrt() ** 2 == disc:
        raise KernelError(f"{g} is not irreducible")
    ends = sorted(fmpq((-b << 64) + d, a << 65) for d in (-s - 1, -s, s, s + 1))
    return [RealAlgebraic(g, ends[0], ends[1], minimal=True),
            RealAlgebraic(g, ends[2], ends[3], minimal=True)]


def _hinted_intervals(g: fmpz_poly, pad: fmpq = fmpq(1, 2 ** 64)) -> list[tuple[fmpq, fmpq]]:
    """Rational intervals around Arb's real root enclosures (padded) where g changes sign, so each holds a root."""
    out = []
    for z, _ in g.complex_roots():
        if not z.imag == 0:
            continue
        mid, rad = z.real.mid().man_exp(), z.real.rad().man_exp()
        centre = fmpq(mid[0]) * fmpq(2) ** int(mid[1])
        radius = 2 * fmpq(rad[0]) * fmpq(2) ** int(rad[1]) + pad
        if _sign(g(centre - radius)) * _sign(g(centre + radius)) < 0:
            out.append((centre - radius, centre + radius))
    return out


def real_roots(f: fmpz_poly) -> list[RealAlgebraic]:
    """The distinct real roots of f != 0 in increasing order, each isolated per irreducible factor of f (:func:`isolate`)."""
    if f.is_zero():
        raise KernelError("the zero polynomial has every number as a root")
    roots = []
    for g, _ in f.factor()[1]:
        if g.degree() == 1:
            roots.append(RealAlgebraic.rational(fmpq(-g[0], g[1])))
        else:
            roots += isolate(g)
    return sorted(roots, key=cmp_to_key(compare))
