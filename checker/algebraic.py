"""Real algebraic numbers for the checker: exact, small, and written to be audited.

A real algebraic number is a defining integer polynomial with an isolating
rational interval (:class:`RealAlgebraic`).  Everything here is decided by exact
rational arithmetic, except that an ``arb`` ball enclosing ``g(x)`` that excludes zero
proves the sign of ``g`` at a rational ``x`` (:func:`sign_of_value`; DESIGN §2).

Algorithms, each with the theorem it rests on:

* **Root counting** -- Sturm's theorem (Sturm 1829; see Basu, Pollack, Roy,
  *Algorithms in Real Algebraic Geometry*, ch. 2): for a squarefree ``p`` and
  ``a < b`` that are not roots of ``p``, the number of real roots of ``p`` in
  ``(a, b)`` is ``V(a) - V(b)``, where ``V(x)`` counts the sign changes in the
  Sturm sequence ``p, p', -rem(p, p'), ...`` evaluated at ``x``.  Sequences are
  computed over the rationals (``fmpq_poly``), so every remainder is exact.
* **Isolating and minimal forms** -- a number is *isolating* once its polynomial is known
  squarefree with exactly one root in ``(low, high)`` and none at the ends (checked by
  Sturm's theorem, or so by construction); it is *minimal* when moreover the polynomial is
  irreducible (factorization over the integers; Gauss's lemma).  After the isolating check,
  the irreducible factor that vanishes at the number is the one that changes sign across
  the interval; a factor of degree 1 *is* the rational number.
* **Bisection** -- a squarefree polynomial changes sign at each of its (simple)
  roots and nowhere else; with exactly one root in ``(low, high)`` the sign at
  the midpoint tells which half holds it (intermediate value theorem).
* **Isolation** -- of the squarefree part, without factoring: a quadratic by its closed
  form (:func:`isolate_quadratic`).  Otherwise all complex roots lie in ``|z| < B``
  (Fujiwara's bound, :func:`root_bound`), and ``(-B, B)`` is split until each piece has 0
  or 1 sign variations by Descartes' rule of signs after the Möbius map of the piece onto
  ``(0, oo)`` (:func:`descartes_bound`; Collins and Akritas 1976), at its midpoint or, if
  that is a (rational) root, nearer its right end, so no end is ever a root.  For a
  squarefree polynomial this ends (Vincent's theorem; Alesina and Galuzzi 1998).
* **Refinement** -- Newton's iterates (in Arb arithmetic) only *suggest* a narrow
  interval; it is used when ``g`` changes sign across it, otherwise the interval is halved.
* **Signs at rationals** -- ``g(x)`` at a rational ``x`` is first enclosed by an Arb
  ball; a ball that excludes zero proves the sign (Arb rounds outward), otherwise the
  exact rational value decides (:func:`sign_of_value`).
* **Equality** -- of isolating numbers: a rational ``r`` is the number iff it lies in its
  interval and is a root of its polynomial; two irrational ones are equal iff the gcd of
  their polynomials has a root in the intersection of their intervals, that is, changes
  sign across it (it has at most one simple root there and none at its ends).  Unequal
  numbers are separated by bisecting both.
"""
from __future__ import annotations

from fractions import Fraction
from functools import cmp_to_key

from flint import arb, ctx, fmpq, fmpq_poly, fmpz, fmpz_poly


class KernelError(Exception):
    """A claim about numbers that does not hold."""


def _sign(value) -> int:
    """The sign -1, 0 or 1 of an exact number."""
    return (value > 0) - (value < 0)


def sign_of_value(g: fmpz_poly, x: fmpq) -> int:
    """The sign of g(x): proven by an Arb ball that excludes zero (DESIGN §2), else exact evaluation."""
    with ctx.workprec(int(x.q).bit_length() + 64):
        value = g(arb(x))
    return 1 if value > 0 else -1 if value < 0 else _sign(g(x))


def _to_fmpq(q) -> fmpq:
    """An exact rational from an ``fmpq``, ``int``, ``fmpz`` or ``Fraction``."""
    if isinstance(q, Fraction):
        return fmpq(q.numerator, q.denominator)
    if isinstance(q, (fmpq, fmpz, int)):
        return q if isinstance(q, fmpq) else fmpq(q)
    raise TypeError(f"not an exact rational: {q!r}")


class RealAlgebraic:
    """The unique real root of `poly` in the open interval (low, high); or, when low == high, the rational low (and
    then poly(low) == 0). ``isolating``: already checked (module docstring), set only by :func:`reduced` and the
    isolations; ``minimal``: isolating with an irreducible poly. Never changed once made (a plain class with
    slots: a check makes many)."""
    __slots__ = ("poly", "low", "high", "minimal", "isolating")

    def __init__(self, poly: fmpz_poly, low: fmpq, high: fmpq, minimal: bool = False, isolating: bool = False):
        if not (isinstance(poly, fmpz_poly) and isinstance(low, fmpq) and isinstance(high, fmpq)):
            raise TypeError("RealAlgebraic needs an fmpz_poly and two fmpq bounds")
        self.poly, self.low, self.high, self.minimal, self.isolating = poly, low, high, minimal, isolating or minimal

    def __eq__(self, other) -> bool:
        """Structural, like the hash: the same polynomial and interval (numeric equality is :func:`compare`)."""
        return isinstance(other, RealAlgebraic) and (self.poly, self.low, self.high) == (other.poly, other.low, other.high)

    def __repr__(self) -> str:
        return f"RealAlgebraic({self.poly!r}, {self.low!r}, {self.high!r})"

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


def root_bound(g: fmpz_poly) -> fmpz:
    """2^(1 + max(0, e_i)), e_i = ceil((bits(a_(n-i)) - bits(a_n) + 1) / i), so |a_(n-i) / a_n|^(1/i) < 2^e_i: every
    complex root of g is strictly smaller in modulus (Fujiwara's bound 2 max_i |a_(n-i) / a_n|^(1/i); Fujiwara 1916)."""
    *lower, lead = g.coeffs()
    n, top = len(lower), int(abs(lead).bit_length())
    e = max((-((top - 1 - int(abs(c).bit_length())) // (n - i)) for i, c in enumerate(lower) if c), default=0)
    return fmpz(2) ** (1 + max(e, 0))


def descartes_bound(g: fmpz_poly, a: fmpq, b: fmpq) -> int:
    """Sign variations of (1 + x)^n g((a + bx) / (1 + x)), n = deg g: x > 0 maps onto (a, b), so this bounds the roots
    of g in (a, b), counted with multiplicity, and has their parity (Descartes' rule of signs); 1 means exactly one."""
    shifted = fmpq_poly(g)(fmpq_poly([a, b - a])).numer()         # a positive multiple: the same signs
    signs = [c > 0 for c in fmpz_poly(shifted.coeffs()[::-1])(fmpz_poly([1, 1])).coeffs() if c]
    return sum(1 for u, v in zip(signs, signs[1:]) if u != v)


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
    """`a` checked and redefined by the irreducible factor that vanishes at it (a rational if that factor is linear):
    each factor g has no root at the ends and at most one, simple, inside, so it holds a's iff it changes sign."""
    if a.minimal:
        return a
    if not a.isolating:
        check_isolating(a)
    if a.is_rational():
        return a
    for g, _ in a.poly.factor()[1]:
        if sign_of_value(g, a.low) * sign_of_value(g, a.high) < 0:
            if g.degree() == 1:
                return RealAlgebraic.rational(fmpq(-g[0], g[1]))
            return RealAlgebraic(g, a.low, a.high, minimal=True)
    raise KernelError(f"no factor of {a.poly} has its root in ({a.low}, {a.high})")


def _halve(a: RealAlgebraic) -> RealAlgebraic:
    """The half of a's interval that holds it, `a` isolating (intermediate value theorem at a simple root)."""
    if a.is_rational():
        return a
    mid = (a.low + a.high) / 2
    at_mid = sign_of_value(a.poly, mid)
    if at_mid == 0:
        return RealAlgebraic.rational(mid)
    if at_mid == sign_of_value(a.poly, a.low):
        return RealAlgebraic(a.poly, mid, a.high, a.minimal, True)
    return RealAlgebraic(a.poly, a.low, mid, a.minimal, True)


def refine(a: RealAlgebraic, width: fmpq) -> RealAlgebraic:
    """`a` in minimal form, its interval no wider than `width`: around a Newton hint if g changes sign there, else by bisection."""
    a = reduced(a)
    while a.high - a.low > width and not a.is_rational():
        hint = _newton_hint(a, width)
        if hint is not None:
            low, high = max(hint - width / 2, a.low), min(hint + width / 2, a.high)
            if low < high and sign_of_value(a.poly, low) * sign_of_value(a.poly, high) < 0:
                return RealAlgebraic(a.poly, low, high, a.minimal, True)
        for _ in range(4):          # a missed hint: narrow by bisection before the next
            a = _halve(a) if a.high - a.low > width else a
    return a


def _newton_hint(a: RealAlgebraic, width: fmpq) -> fmpq | None:
    """Newton's iterates for a.poly from the midpoint, in Arb arithmetic, rounded to multiples of width / 4 (a hint, never a decision)."""
    unit, derivative = width / 4, a.poly.derivative()
    x = (a.low + a.high) / 2
    with ctx.workprec(int(unit.q).bit_length() + 64):
        for _ in range(int(width.q).bit_length().bit_length() + 4):
            slope = derivative(arb(x))
            if not (slope > 0 or slope < 0):
                return None
            step = a.poly(arb(x)) / slope
            man, exp = (x - step).mid().man_exp()
            x = fmpq(fmpq(man) * fmpq(2) ** int(exp) / unit).floor() * unit
            if not a.low < x < a.high:
                return None
            if abs(step) < arb(unit):
                return x
    return None


def ball(a: RealAlgebraic) -> arb:
    """An arb ball containing the closed interval [a.low, a.high] (at the current working precision)."""
    return arb(a.low).union(arb(a.high))


# --------------------------------------------------------------------------
# Comparison and roots of univariate polynomials.

def _same_number(a: RealAlgebraic, b: RealAlgebraic) -> bool:
    """Equality of isolating numbers: a rational r is x iff x.low < r < x.high and x.poly(r) = 0; two others iff
    g = gcd(a.poly, b.poly) has a root in the intersection (l, h) of their intervals. g divides both, so it has no
    root at l or h (each an end of one interval) and at most one, simple, inside: iff g(l) g(h) < 0 (IVT)."""
    if a.is_rational() or b.is_rational():
        if a.is_rational() and b.is_rational():
            return a.low == b.low
        r, x = (a.low, b) if a.is_rational() else (b.low, a)
        return x.low < r < x.high and x.poly(r) == 0
    g, low, high = a.poly.gcd(b.poly), max(a.low, b.low), min(a.high, b.high)
    return g.degree() > 0 and low < high and sign_of_value(g, low) * sign_of_value(g, high) < 0


def compare(a: RealAlgebraic, b: RealAlgebraic) -> int:
    """The exact sign of a - b: as isolating numbers, strictly disjoint intervals decide it, else equality, else bisection."""
    if a.is_rational() and b.is_rational():
        return (a.low > b.low) - (a.low < b.low)
    a, b = a if a.isolating else reduced(a), b if b.isolating else reduced(b)
    if not (a.high < b.low or b.high < a.low) and _same_number(a, b):
        return 0
    while True:
        if a.high <= b.low:
            return -1
        if b.high <= a.low:
            return 1
        a, b = _halve(a), _halve(b)


def isolate(g: fmpz_poly, irreducible: bool = False) -> list[RealAlgebraic]:
    """Isolating intervals, increasing, for the real roots of g, squarefree of degree >= 2 (module docstring:
    Isolation); in minimal form when g is irreducible."""
    if g.degree() == 2:
        return isolate_quadratic(g)
    bound = fmpq(root_bound(g))
    pending, found = [(-bound, bound)], []
    while pending:
        low, high = pending.pop()
        n = descartes_bound(g, low, high)
        if n == 1:
            found.append(RealAlgebraic(g, low, high, irreducible, True))
        elif n > 1:
            mid = (low + high) / 2
            while g(mid) == 0:              # a rational root: split beside it, so that no end is a root
                mid = (mid + high) / 2
            pending += [(mid, high), (low, mid)]
    return found


def isolate_quadratic(g: fmpz_poly) -> list[RealAlgebraic]:
    """The roots (-b ± sqrt(D)) / 2a of squarefree g = a z^2 + b z + c, D = b^2 - 4ac > 0: rational if D is a square;
    else with s = isqrt(D 4^64), s < sqrt(D) 2^64 < s + 1, so each lies strictly inside its interval below."""
    c, b, a = g.coeffs()
    disc = b * b - 4 * a * c
    if disc < 0:
        return []
    root = disc.isqrt()
    if root * root == disc:
        return sorted((RealAlgebraic.rational(fmpq(-b + d, 2 * a)) for d in (-root, root)), key=lambda z: z.low)
    s = (disc << 128).isqrt()
    ends = sorted(fmpq((-b << 64) + d, a << 65) for d in (-s - 1, -s, s, s + 1))
    return [RealAlgebraic(g, ends[0], ends[1], minimal=True),
            RealAlgebraic(g, ends[2], ends[3], minimal=True)]


def real_roots(f: fmpz_poly, memo: dict | None = None) -> list[RealAlgebraic]:
    """The distinct real roots of f != 0 in increasing order: those of its squarefree part f / gcd(f, f')
    (the same roots, each simple), isolated without factoring (:func:`roots_of_factors`)."""
    if f.is_zero():
        raise KernelError("the zero polynomial has every number as a root")
    s = f // f.gcd(f.derivative()) if f.degree() > 1 else f
    return roots_of_factors([s] if s.degree() > 0 else [], memo, irreducible=False)


def roots_of_factors(factors, memo: dict | None = None, irreducible: bool = True) -> list[RealAlgebraic]:
    """The real roots of distinct irreducible polynomials (no root is shared), or of a single squarefree one,
    increasing: -g0/g1 for a linear g, the closed form for a quadratic, else :func:`isolate` once per g kept in
    ``memo`` (it depends on g alone)."""
    memo, roots = {} if memo is None else memo, []
    for g in factors:
        if g.degree() > 2:
            k = (str(g), irreducible)
            roots += memo[k] if k in memo else memo.setdefault(k, isolate(g, irreducible))
        else:
            roots += [RealAlgebraic.rational(fmpq(-g[0], g[1]))] if g.degree() == 1 else isolate_quadratic(g)
    return roots if len(factors) == 1 else sorted(roots, key=cmp_to_key(compare))   # isolate's are increasing
