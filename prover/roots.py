"""Root isolation, exact signs and sample selection for the prover (DESIGN §5, §8).

**Isolation** (:func:`isolate_real_roots`).  The polynomial is factored into
irreducible factors by flint (``fmpz_poly.factor``).  Linear factors give
rational roots.  An irreducible quadratic ``a x^2 + b x + c`` with
``D = b^2 - 4ac > 0`` (``D`` is not a square) has its roots isolated in closed
form: with ``s = isqrt(D)``, ``s < sqrt(D) < s + 1``, so the roots lie in
``((-b-s-1)/2a, (-b-s)/2a)`` and ``((-b+s)/2a, (-b+s+1)/2a)``, disjoint since
``s >= 1``.  Higher degrees go through the Vincent–Collins–Akritas bisection
with Descartes' rule of signs: positive roots of ``f(x)`` and of ``f(-x)``
(zero is never a root of an irreducible factor of degree >= 2) inside a
Fujiwara bound ``2^b``, on the unit interval after scaling; a node whose
Möbius transform ``(x+1)^n q(1/(x+1))`` has 0 sign variations has no root,
1 variation means exactly one root (the one-circle theorem), otherwise the
node is halved.  Roots of different factors are then sorted by exact
comparison (distinct irreducible polynomials have no common root, so
refinement separates them).

Why not ``fmpz_poly.complex_roots()``?  Observed behaviour in python-flint
0.9: it factors the polynomial into squarefree parts and returns
``(acb, multiplicity)`` pairs, factor by factor; within each squarefree factor
the roots proven real come first, in increasing order, with an imaginary part
that is *exactly* zero (``z.imag == 0``), then the non-real roots with an
imaginary ball that excludes zero; the balls are disjoint and rigorous
(exact rational roots may come back as exact points).  So real roots are not
globally sorted across factors of different multiplicity.  That is a valid
isolation (the tests use it as a second reference), but on the polynomials
that matter here (few real roots among many complex ones) it measured 2-10x
slower than the bisection above (e.g. 1.3 ms against 0.1 ms for a random
degree-10 polynomial), and its precision comes from the global
``flint.ctx.prec``.

**Signs** (:func:`sign_at`).  Rational coordinates are substituted exactly
(``fmpq_mpoly``); an all-rational point is a single exact evaluation.  The
irrational coordinates the polynomial actually involves generate a field
``K = Q(theta)`` given by one *primitive element* (see :func:`_field_of`):
``theta`` is a RealAlg with irreducible polynomial ``F`` and every coordinate
is a rational polynomial in ``theta``.  The value ``p(point)`` is then an
element ``a(theta)`` with ``deg a < deg F``; since ``F`` is the minimal
polynomial of ``theta``, ``a(theta) = 0`` iff ``a`` is the zero polynomial —
an exact zero test with no root-gap bound and no precision.  A non-zero value
gets its sign from arb evaluation at enclosures of ``theta`` of doubling
precision, which terminates because the value is non-zero.

**Roots over a sample** (:func:`real_roots_at`).  ``p(point, y)`` becomes a
polynomial ``C(y)`` over ``K``; it is nullified iff every coefficient is the
zero element.  Otherwise its norm ``N(y) = res_z(F(z), C(z, y))`` is a non-zero
integer polynomial (each coefficient has degree below ``deg F``, so no
conjugate of ``theta`` can annihilate ``C``) whose roots contain those of
``C(theta, y)``.  A real root ``rho`` of ``N`` where a 64-bit ball of
``C(theta, rho)`` excludes zero is dropped at once (most of them: they are
roots for other conjugates).  For each remaining irreducible factor ``G0`` of
``N`` we compute
``G = gcd(C, G0)`` over ``K`` and ``H = G0 / G``: if ``G`` is constant no root
of ``G0`` is a root of ``C``, if ``H`` is constant all are; otherwise exactly
one of ``G(theta, rho)`` and ``H(theta, rho)`` vanishes at a root ``rho`` of
``G0`` (``G0`` is squarefree, so ``G`` and ``H`` are coprime), and refining
balls until one of them excludes zero decides it.  Rational roots of ``N``
are tested by exact evaluation in ``K``.

**Primitive element** (:func:`_field_of`).  Coordinates are adjoined one at a
time: given ``theta`` (minimal polynomial ``F``) and ``beta`` (``g``), take
``theta' = beta + c*theta`` for the first ``c`` in 1, -1, 2, -2, ... with
``R(z) = res_x(F(x), g(z - c x))`` squarefree, so that ``theta'`` determines
the pair ``(theta, beta)`` among all conjugate pairs.  The minimal polynomial
of ``theta'`` is the irreducible factor of ``R`` that vanishes on a ball
around ``beta + c*theta`` (refined until exactly one does), and
``gcd(F(x), g(theta' - c x))`` over ``Q(theta')`` is ``x - theta``, which
expresses ``theta`` (and then ``beta``) as a polynomial in ``theta'``.  This
avoids the degenerate case of iterated resultants (a norm that vanishes
identically because some non-conjugate combination of roots annihilates the
polynomial) and makes every zero test exact.  Fields are cached per tuple of
coordinates.

**Caching.**  ``functools.lru_cache`` on pure functions keyed by hashable
data: factorizations and isolations per polynomial (coefficient tuples),
fields per tuple of coordinates.  Per object: each RealAlg keeps its enclosures
per precision, each field the powers of the coordinate images.  Results are
deterministic; only the current isolating intervals of shared RealAlg objects
depend on history (see :attr:`RealAlg.initial_interval`).

Floating point only filters (DESIGN §2): a sign is read from an arb ball only
when the ball excludes zero, and zero is only ever decided exactly.

**Samples** (:func:`sample_between`): the simplest rational strictly between
two numbers — an integer if there is one (the one closest to 0), otherwise
the dyadic number with the smallest denominator (unique in the interval).
"""
from __future__ import annotations

from functools import cmp_to_key, lru_cache
from typing import Sequence

from flint import arb, ctx, fmpq, fmpq_poly, fmpz, fmpz_mpoly_ctx, fmpz_poly

from .numbers import RealAlg, irreducible_factors, poly_key
from .polys import (
    Z,
    evaluate,
    integer_primitive,
    kpoly_divmod,
    kpoly_eval_arb,
    kpoly_from_rational,
    kpoly_gcd,
    kpoly_compose_linear,
    kpoly_trim,
    substitute,
    univariate,
)

__all__ = [
    "Nullified",
    "isolate_real_roots",
    "is_nullified",
    "real_roots_at",
    "sample_between",
    "sign_at",
]


class Nullified(ArithmeticError):
    """``p(point, x_k)`` is identically zero: it has no isolated roots."""


def _sign(v) -> int:
    return (v > 0) - (v < 0)


def _excludes_zero(b: arb) -> bool:
    return b > 0 or b < 0


# --------------------------------------------------------------------------
# Isolation of the real roots of an integer polynomial.

_X_PLUS_1 = fmpz_poly([1, 1])


def _variations(coeffs) -> int:
    """Sign variations of a coefficient sequence (zeros skipped)."""
    v, last = 0, 0
    for c in coeffs:
        if c:
            s = 1 if c > 0 else -1
            if s != last:
                if last:
                    v += 1
                last = s
    return v


def _bound_bits(c: list) -> int:
    """``b >= 0`` with every complex root of ``sum c[i] x^i`` below ``2^b`` in
    modulus (Fujiwara's bound ``2 max |c[n-i]/c[n]|^(1/i)``, rounded up to a
    power of two through bit lengths)."""
    n = len(c) - 1
    ln = int(abs(c[n]).bit_length())
    best = None
    for i in range(1, n + 1):
        a = c[n - i]
        if a:
            e = -((ln - 1 - int(abs(a).bit_length())) // i)  # ceil((bl(a) - ln + 1) / i)
            best = e if best is None or e > best else best
    return max(0, best + 1) if best is not None else 0


def _positive_root_intervals(f: fmpz_poly) -> list[tuple[fmpq, fmpq]]:
    """Isolating intervals, increasing, of the positive roots of a squarefree
    ``f`` with ``f(0) != 0`` and no rational root at a dyadic end
    (Vincent–Collins–Akritas; module docstring)."""
    c = f.coeffs()
    n = len(c) - 1
    b = _bound_bits(c)
    q = fmpz_poly([int(a) << (b * i) for i, a in enumerate(c)])
    out: list[tuple[fmpq, fmpq]] = []
    stack = [(q, 0, 0)]
    while stack:
        q, cc, k = stack.pop()
        v = _variations(fmpz_poly(q.coeffs()[::-1])(_X_PLUS_1).coeffs())
        if v == 0:
            continue
        if v == 1:
            out.append((fmpq(cc << b, 1 << k), fmpq((cc + 1) << b, 1 << k)))
            continue
        q1 = fmpz_poly([int(a) << (n - i) for i, a in enumerate(q.coeffs())])
        stack.append((q1(_X_PLUS_1), 2 * cc + 1, k + 1))
        stack.append((q1, 2 * cc, k + 1))
    return out


@lru_cache(maxsize=8192)
def _irreducible_roots(key: tuple) -> tuple[RealAlg, ...]:
    """The real roots, increasing, of a canonical irreducible polynomial."""
    f = fmpz_poly(list(key))
    d = f.degree()
    if d == 1:
        return (RealAlg.from_rational(fmpq(-f[0], f[1])),)
    if d == 2:
        a, b, c = f[2], f[1], f[0]
        disc = b * b - 4 * a * c
        if disc < 0:
            return ()
        s = disc.isqrt()
        den = 2 * a
        return (
            RealAlg._irreducible(f, fmpq(-b - s - 1, den), fmpq(-b - s, den)),
            RealAlg._irreducible(f, fmpq(-b + s, den), fmpq(-b + s + 1, den)),
        )
    neg = fmpz_poly([a if i % 2 == 0 else -a for i, a in enumerate(f.coeffs())])
    intervals = [(-hi, -lo) for lo, hi in reversed(_positive_root_intervals(neg))]
    intervals += _positive_root_intervals(f)
    return tuple(RealAlg._irreducible(f, lo, hi) for lo, hi in intervals)


def _compare(a: RealAlg, b: RealAlg) -> int:
    return a.compare(b)


@lru_cache(maxsize=4096)
def _isolate_key(key: tuple) -> tuple[RealAlg, ...]:
    roots: list[RealAlg] = []
    for f in irreducible_factors(fmpz_poly(list(key))):
        roots.extend(_irreducible_roots(poly_key(f)))
    roots.sort(key=cmp_to_key(_compare))
    return tuple(roots)


def isolate_real_roots(p) -> list[RealAlg]:
    """The distinct real roots of a non-zero univariate polynomial, increasing;
    each with an irreducible factor of ``p`` as its defining polynomial
    (rational roots as rationals).  Cached per polynomial; the RealAlg objects
    are shared between calls (refining one only shrinks its interval)."""
    if isinstance(p, fmpq_poly):
        p = integer_primitive(p)
    elif not isinstance(p, fmpz_poly):
        p = fmpz_poly(p)
    if p.is_zero():
        raise ValueError("the zero polynomial has no isolated roots")
    if p.degree() <= 0:
        return []
    return list(_isolate_key(poly_key(p)))


# --------------------------------------------------------------------------
# Primitive elements: the field generated by the irrational coordinates.

_XZ = fmpz_mpoly_ctx.get(("x", "z"), "lex")
_ZY = fmpz_mpoly_ctx.get(("z", "y"), "lex")


def _multipliers():
    c = 1
    while True:
        yield c
        yield -c
        c += 1


def _adjoin(theta: RealAlg, beta: RealAlg) -> tuple[RealAlg, fmpq_poly, int]:
    """``(theta2, A, c)`` with ``theta2 = beta + c*theta`` generating
    ``Q(theta, beta)`` and ``theta = A(theta2)`` (module docstring)."""
    x, z = _XZ.gens()
    Fx = _XZ.from_dict({(i, 0): a for i, a in enumerate(theta.poly.coeffs()) if a})
    for c in _multipliers():
        w = z - c * x
        G = _XZ.from_dict({})
        for a in reversed(beta.poly.coeffs()):
            G = G * w + int(a)
        R = integer_primitive(univariate(Fx.resultant(G, "x"), 1))
        if R.gcd(R.derivative()).degree() == 0:
            break
    factors = irreducible_factors(R)
    prec = 64
    while True:
        with ctx.workprec(prec):
            ball = beta.arb(prec) + c * theta.arb(prec)
            live = [f for f in factors if not _excludes_zero(f(ball))]
        if len(live) == 1:
            break
        prec *= 2
    M = live[0]
    roots = _irreducible_roots(poly_key(M))
    while True:
        with ctx.workprec(prec):
            ball = beta.arb(prec) + c * theta.arb(prec)
        near = [r for r in roots if r.arb(prec).overlaps(ball)]
        if len(near) == 1:
            break
        prec *= 2
    theta2 = near[0]
    Mq = fmpq_poly(M)
    gcd = kpoly_gcd(
        kpoly_from_rational(theta.poly),
        kpoly_compose_linear(beta.poly, Z, fmpq(-c), Mq),
        Mq,
    )
    if len(gcd) != 2:
        raise AssertionError("primitive element: the common root is not unique")
    return theta2, (-gcd[0]) % Mq, c


class _Field:
    """``K = Q(theta)`` with the images of some coordinates as polynomials in
    ``theta`` (module docstring)."""

    __slots__ = ("theta", "F", "Fint", "images", "_powers")

    def __init__(self, theta: RealAlg, images: list[fmpq_poly]):
        self.theta = theta
        self.Fint = theta.poly
        self.F = fmpq_poly(theta.poly)
        self.images = images
        self._powers = [[fmpq_poly([1])] for _ in images]

    def _power(self, j: int, e: int) -> fmpq_poly:
        pw = self._powers[j]
        while len(pw) <= e:
            pw.append((pw[-1] * self.images[j]) % self.F)
        return pw[e]

    def coefficients(self, q, alg: tuple[int, ...], var: int | None) -> list[fmpq_poly]:
        """``q`` (involving the coordinates ``alg`` and ``x_var``) as a list of
        K elements indexed by the degree in ``x_var`` (one element if None)."""
        F = self.F
        coeffs = q.coeffs()
        monoms = q.monoms()
        if len(alg) == 1 and self.images[0] == Z:
            i = alg[0]
            rows: dict[int, dict[int, object]] = {}
            for e, a in zip(monoms, coeffs):
                rows.setdefault(e[var] if var is not None else 0, {})[e[i]] = a
            size = max(rows) + 1 if rows else 1
            out = [fmpq_poly([])] * size
            for d, row in rows.items():
                lst = [0] * (max(row) + 1)
                for zd, a in row.items():
                    lst[zd] = a
                out[d] = fmpq_poly(lst) % F
            return out
        acc: dict[int, fmpq_poly] = {}
        for e, a in zip(monoms, coeffs):
            t = None
            for j, i in enumerate(alg):
                if e[i]:
                    t = self._power(j, e[i]) if t is None else t * self._power(j, e[i])
            t = fmpq_poly([a]) if t is None else t * a
            d = e[var] if var is not None else 0
            acc[d] = acc[d] + t if d in acc else t
        size = max(acc) + 1 if acc else 1
        out = [fmpq_poly([])] * size
        for d, t in acc.items():
            out[d] = t % F
        return out

    def sign(self, a: fmpq_poly) -> int:
        """Exact sign of the element ``a`` (reduced) at ``theta``."""
        if a == 0:
            return 0
        if a.degree() == 0:
            return _sign(a[0])
        num = a.numer()
        prec = 64
        while True:
            t = self.theta.arb(prec)
            with ctx.workprec(prec):
                v = num(t)
            if _excludes_zero(v):
                return 1 if v > 0 else -1
            prec *= 2

    def norm(self, C: list[fmpq_poly]) -> fmpz_poly:
        """``res_z(F(z), C(z, y))`` for a polynomial ``C`` over K (non-zero)."""
        den = fmpz(1)
        for c in C:
            den = den.lcm(c.denom())
        terms = {}
        for j, c in enumerate(C):
            for i, a in enumerate((c * den).numer().coeffs()):
                if a:
                    terms[(i, j)] = a
        Q = _ZY.from_dict(terms)
        Fz = _ZY.from_dict({(i, 0): a for i, a in enumerate(self.Fint.coeffs()) if a})
        return integer_primitive(univariate(Fz.resultant(Q, "z"), 1))

    def split(self, C: list[fmpq_poly], g: fmpz_poly) -> tuple[list, list]:
        """``(G, H)``: ``G = gcd(C, g)`` and ``H = g / G`` over K."""
        P = kpoly_from_rational(g)
        G = kpoly_gcd(C, P, self.F)
        H, rem = kpoly_divmod(P, G, self.F)
        if rem:
            raise AssertionError("gcd does not divide")
        return G, H

    def surely_nonzero(self, C: list, rho: RealAlg, prec: int = 64) -> bool:
        """A cheap filter: True if a ball of ``C(theta, rho)`` excludes zero."""
        t, r = self.theta.arb(prec), rho.arb(prec)
        with ctx.workprec(prec):
            return _excludes_zero(kpoly_eval_arb(C, t, r))

    def vanishes_first(self, G: list, H: list, rho: RealAlg) -> bool:
        """Whether ``G(theta, rho) = 0``, knowing exactly one of
        ``G(theta, rho)``, ``H(theta, rho)`` is zero."""
        prec = 64
        while True:
            t, r = self.theta.arb(prec), rho.arb(prec)
            with ctx.workprec(prec):
                if _excludes_zero(kpoly_eval_arb(G, t, r)):
                    return False
                if _excludes_zero(kpoly_eval_arb(H, t, r)):
                    return True
            prec *= 2


@lru_cache(maxsize=1024)
def _field_of(algs: tuple[RealAlg, ...]) -> _Field:
    """The field generated by irrational numbers, with their images."""
    theta = algs[0]
    images = [Z]
    for beta in algs[1:]:
        theta, A, c = _adjoin(theta, beta)
        F = fmpq_poly(theta.poly)
        images = [img(A) % F for img in images]
        images.append((Z - c * A) % F)
    return _Field(theta, images)


# --------------------------------------------------------------------------
# Signs and roots at sample points.


def _require_variables(p, count: int) -> None:
    """ValueError unless ``p`` involves only the first ``count`` variables."""
    if any(d > 0 for d in p.degrees()[count:]):
        raise ValueError(f"{p} involves variables beyond x{count}")


def _restrict(p, point: Sequence[RealAlg]):
    """``p`` with the rational coordinates substituted, and the indices of the
    irrational coordinates it still involves."""
    point = point[: p.context().nvars()]
    values = {i: a.value for i, a in enumerate(point) if a.value is not None}
    q = substitute(p, values)
    degs = q.degrees()
    alg = tuple(i for i, a in enumerate(point) if a.value is None and degs[i] > 0)
    return q, alg


def sign_at(p, point: Sequence[RealAlg]) -> int:
    """The exact sign of ``p`` at ``point``; ``p`` involves only
    the first ``len(point)`` variables."""
    _require_variables(p, len(point))
    if all(a.value is not None for a in point):
        return _sign(evaluate(p, [a.value for a in point]))
    q, alg = _restrict(p, point)
    if not alg:
        return 0 if q.is_zero() else _sign(q.coeffs()[0])
    field = _field_of(tuple(point[i] for i in alg))
    return field.sign(field.coefficients(q, alg, None)[0])


def _over_field(p, point: Sequence[RealAlg]):
    """``p(point, x_k)`` as ``(None, f)`` with ``f`` an fmpq_poly when no
    irrational coordinate is involved, else ``(field, C)`` with ``C`` a trimmed
    polynomial over the field."""
    k = len(point)
    if k >= p.context().nvars():
        raise ValueError(f"no variable x{k + 1} in the context of {p}")
    _require_variables(p, k + 1)
    q, alg = _restrict(p, point)
    if not alg:
        return None, univariate(q, k)
    field = _field_of(tuple(point[i] for i in alg))
    return field, kpoly_trim(field.coefficients(q, alg, k))


def is_nullified(p, point: Sequence[RealAlg]) -> bool:
    """Whether ``p(point, x_k)`` is identically zero in ``x_k`` (k = len(point))."""
    field, C = _over_field(p, point)
    return C == 0 if field is None else not C


def real_roots_at(p, point: Sequence[RealAlg]) -> list[RealAlg]:
    """The distinct real roots, increasing, of ``p(point, x_k)`` with
    ``k = len(point)``; raises :class:`Nullified` if it is identically zero."""
    field, C = _over_field(p, point)
    if field is None:
        if C == 0:
            raise Nullified(f"{p} vanishes identically over the sample")
        return isolate_real_roots(C) if C.degree() > 0 else []
    if not C:
        raise Nullified(f"{p} vanishes identically over the sample")
    if len(C) == 1:
        return []
    if all(c.degree() <= 0 for c in C):
        return isolate_real_roots(fmpq_poly([c[0] for c in C]))
    out: list[RealAlg] = []
    splits: dict[tuple, tuple[list, list]] = {}
    for rho in isolate_real_roots(field.norm(C)):
        if rho.value is not None:
            v = fmpq_poly([])
            for c in reversed(C):
                v = v * rho.value + c
            if v == 0:
                out.append(rho)
            continue
        if field.surely_nonzero(C, rho):
            continue
        key = poly_key(rho.poly)
        if key not in splits:
            splits[key] = field.split(C, rho.poly)
        G, H = splits[key]
        if len(G) <= 1:
            continue
        if len(H) <= 1 or field.vanishes_first(G, H, rho):
            out.append(rho)
    return out


# --------------------------------------------------------------------------
# Sample points.


def _simplest_between(low: fmpq | None, high: fmpq | None) -> fmpq:
    """The simplest rational in the open interval (low, high) (None = infinite):
    the integer closest to 0 if any, else the dyadic of least denominator."""
    lo_int = None if low is None else low.floor() + 1
    hi_int = None if high is None else high.ceil() - 1
    if lo_int is None or hi_int is None or lo_int <= hi_int:
        if (lo_int is None or lo_int <= 0) and (hi_int is None or hi_int >= 0):
            return fmpq(0)
        return fmpq(lo_int) if lo_int is not None and lo_int > 0 else fmpq(hi_int)
    k = 1
    while True:
        m = (low * (1 << k)).floor() + 1
        if fmpq(m, 1 << k) < high:
            return fmpq(m, 1 << k)
        k += 1


def sample_between(a: RealAlg | None, b: RealAlg | None) -> RealAlg:
    """The simplest rational strictly between ``a`` and ``b`` (None = -inf /
    +inf; module docstring).  Deterministic; ValueError if ``a >= b``."""
    if a is not None and b is not None and a.compare(b) >= 0:
        raise ValueError("sample_between needs a < b")
    while True:
        low = None if a is None else (a.value if a.value is not None else a.low)
        high = None if b is None else (b.value if b.value is not None else b.high)
        s = _simplest_between(low, high)
        # A failing candidate is cut out of the endpoint's isolating interval.
        if (a is None or a.compare(s) < 0) and (b is None or b.compare(s) > 0):
            return RealAlg.from_rational(s)


def forget_cached() -> None:
    """Empty this process's memo caches (factorizations, isolations, fields), so that the next
    proof costs what it would in a fresh process (the benchmark times each file this way)."""
    from . import numbers
    for cached in (_isolate_key, _irreducible_roots, _field_of, numbers._factors_of_key):
        cached.cache_clear()
