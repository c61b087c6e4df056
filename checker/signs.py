"""Signs and roots of integer polynomials at real algebraic points (DESIGN §5).

Every coordinate of a point is first put in minimal form
(:func:`checker.algebraic.reduced`): checked, and defined by its irreducible
polynomial ``d_i``; rational coordinates are then substituted exactly, which
leaves ``q``, a positive integer multiple of ``p`` in the algebraic coordinates
only (and, for roots, in ``x_k``).

**Elimination.**  ``R = Res_{x_j}( ... Res_{x_i}(z - q, d_i) ..., d_j)`` over the
algebraic coordinates that occur.  By the product formula for the resultant
(``Res_x(F, d) = ± lc(d)^deg_x(F) · prod over roots b of d of F(b)``; e.g.
Basu, Pollack, Roy, *Algorithms in Real Algebraic Geometry*, ch. 4),
``R = c · prod (z - q(a', .))`` over all tuples ``a'`` of roots of the ``d_i``,
with ``c`` a non-zero integer.  So ``R`` is never zero (its leading
coefficient in ``z`` is a non-zero integer) and ``q(a)`` is a root of ``R``.

**Sign at a point.**  Rational point: exact evaluation.  Otherwise an arb
enclosure of ``q(a)`` (coordinates narrowed by :func:`refine`, exact sign
tests) decides the sign when it excludes zero.  Zero is decided only by the
root-gap bound of SOUNDNESS.md (rule SIGN), computed from degrees and
coefficient sizes without forming ``R`` (:func:`zero_bound`): every non-zero
root of ``R`` exceeds ``1 / (1 + C (1 + Q)^D)`` in modulus, so an enclosure
strictly inside that radius proves ``q(a) = 0``.  The loop doubles the precision
until one of the two happens, which it does: the enclosures shrink to ``q(a)``.
(The working precision, set with flint's ``ctx.workprec``, affects only how
tight a ball is; arb rounds outward, so every ball is rigorous.)

**Roots over a point.**  Write ``R(z, x_k) = z^m · S(z, x_k)`` with
``S(0, x_k) != 0``.  ``m`` counts the tuples ``a'`` with ``q(a', .) == 0``, so
``N = S(0, x_k)`` is ``c`` times the product of ``-q(a', x_k)`` over the other
tuples: a non-zero integer polynomial that vanishes at every root of
``q(a, x_k)`` once ``p`` is known not to be nullified at ``a`` (checked first).
This removes any degeneration of the plain norm ``R(0, x_k)`` (which is zero
when some conjugate tuple nullifies ``q``).  The real roots of ``N`` are
isolated exactly and each candidate ``r`` is kept iff ``p(a, .)`` changes sign
between rationals that separate ``r`` from the other roots of ``N`` (then its root
there is ``r``: intermediate value theorem), or else ``sign_at(p, a + (r,))`` is
zero; when no algebraic coordinate occurs, ``N = -q`` and all are kept.  The
plain norm (iterated resultant of ``q`` itself) is used when it is non-zero: it
is ``S(0, x_k)`` with ``m = 0``.
"""
from __future__ import annotations

from math import lcm, prod
from typing import Sequence

from flint import arb, ctx, fmpq, fmpq_poly, fmpz_mpoly, fmpz_mpoly_ctx, fmpz_poly

from .algebraic import (KernelError, RealAlgebraic, _sign, ball, real_roots, reduced, refine, root_bound,
                        roots_of_factors)
from .polys import coefficients_in


def _require_variables(p: fmpz_mpoly, count: int) -> None:
    """Raise KernelError if p involves a variable x_i with i >= count."""
    if any(d > 0 for d in p.degrees()[count:]):
        raise KernelError(f"{p} involves a variable beyond x{count}")


def _substitute_rationals(p: fmpz_mpoly, point: Sequence[RealAlgebraic]) -> fmpz_mpoly:
    """A positive integer multiple of p with every rational coordinate of `point` substituted
    (integers by flint's substitution, the others term by term)."""
    names = p.context().names()
    integers = {names[i]: a.low.p for i, a in enumerate(point) if a.is_rational() and a.low.q == 1}
    if integers:
        p = p.subs(integers)
    values = {i: a.low for i, a in enumerate(point) if a.is_rational() and a.low.q != 1}
    if not values:
        return p
    terms: dict[tuple, fmpq] = {}
    for exps, c in p.terms():
        value = fmpq(c)
        for i, v in values.items():
            value *= v ** exps[i]
        key = tuple(0 if i in values else e for i, e in enumerate(exps))
        terms[key] = terms.get(key, fmpq(0)) + value
    den = lcm(*(int(v.q) for v in terms.values()))
    return p.context().from_dict({e: v.p * (den // v.q) for e, v in terms.items() if v != 0})


def at_rational_point(p: fmpz_mpoly, values: Sequence[fmpq]) -> fmpq_poly:
    """p with x_i = values[i] substituted exactly, as a polynomial in x_k, k = len(values)."""
    k, degrees = len(values), p.degrees()
    if max(degrees[k + 1:], default=0) > 0:
        raise KernelError(f"{p} involves a variable beyond x{k + 1}")
    coeffs = [0] * (degrees[k] + 1 if k < len(degrees) else 1)
    for exps, c in zip(p.monoms(), p.coeffs()):
        for v, e in zip(values, exps):
            if e:
                c = c * v ** e
        coeffs[exps[k] if k < len(exps) else 0] += c
    return fmpq_poly(coeffs)


def roots_of_substituted(p: fmpz_mpoly, u: fmpq_poly, memo: dict | None = None) -> list[RealAlgebraic]:
    """The real roots of p at a rational point, from u = at_rational_point(p, point) (never given when u = 0)."""
    if u.is_zero():
        raise KernelError(f"{p} vanishes identically in the next variable at the point")
    return real_roots(u.numer(), memo)


def _eliminate_algebraic(F: fmpz_mpoly, point: Sequence[RealAlgebraic]) -> fmpz_mpoly:
    """F with each algebraic coordinate x_i that occurs eliminated: Res_{x_i}(F, d_i(x_i)), in turn."""
    ctx = F.context()
    for i, a in enumerate(point):
        if not a.is_rational() and F.degrees()[i] > 0:
            d = {tuple(j if v == i else 0 for v in range(ctx.nvars())): c
                 for j, c in enumerate(a.poly.coeffs())}
            F = F.resultant(ctx.from_dict(d), ctx.names()[i])
    return F


def _eliminate(q: fmpz_mpoly, point: Sequence[RealAlgebraic]) -> tuple[fmpz_mpoly, int]:
    """R = iterated resultant of z - q with the d_i of the coordinates that occur (module docstring), and the index of z."""
    names = q.context().names()
    z = len(names)
    zctx = fmpz_mpoly_ctx.get(names + ("z",), "lex")
    R = _eliminate_algebraic(zctx.gen(z) - zctx.from_dict({e + (0,): c for e, c in q.terms()}), point)
    if any(R.degrees()[:len(point)]):
        raise KernelError(f"elimination left a coordinate in {R}")
    return R, z


def zero_bound(q: fmpz_mpoly, point: Sequence[RealAlgebraic]) -> fmpq:
    """1 / (1 + C (1 + Q)^D): no non-zero q(a') over conjugate tuples a' is smaller (module docstring)."""
    degs = q.degrees()
    occurring = [(i, a.poly) for i, a in enumerate(point) if degs[i] > 0]
    D = prod(d.degree() for _, d in occurring)
    B = {i: fmpq(root_bound(d)) for i, d in occurring}
    Q = sum(abs(c) * prod(B[i] ** e[i] for i in B) for e, c in q.terms())
    C = prod(abs(d.coeffs()[-1]) ** (degs[i] * D // d.degree()) for i, d in occurring)
    return 1 / (1 + C * (1 + Q) ** D)


def _evaluate(q: fmpz_mpoly, point: Sequence[RealAlgebraic]) -> arb:
    """A ball containing q(point), in arb arithmetic over balls containing the coordinates' intervals."""
    balls = [ball(a) for a in point]
    total = arb(0)
    for exps, c in q.terms():
        term = arb(c)
        for i, e in enumerate(exps):
            if e:
                term *= balls[i] ** e
        total += term
    return total


def sign_at(p: fmpz_mpoly, point: Sequence[RealAlgebraic]) -> int:
    """The exact sign of p at `point` (interval filter, zero by the root-gap rule of DESIGN §5)."""
    _require_variables(p, len(point))
    point = [reduced(a) for a in point][: p.context().nvars()]
    if all(a.is_rational() for a in point):
        return _sign(at_rational_point(p, [a.low for a in point])[0])
    q = _substitute_rationals(p, point)
    if q.is_constant():
        return 0 if q.is_zero() else (1 if q.leading_coefficient() > 0 else -1)
    gap, prec = None, 64
    while True:
        point = [refine(a, fmpq(1, 2 ** prec)) for a in point]
        with ctx.workprec(prec):
            value = _evaluate(q, point)
            if value > 0:
                return 1
            if value < 0:
                return -1
            gap = zero_bound(q, point) if gap is None else gap
            if abs(value) < arb(gap):
                return 0
        prec *= 2


def is_nullified(p: fmpz_mpoly, point: Sequence[RealAlgebraic]) -> bool:
    """Whether every coefficient of p in x_k (k = len(point)) is zero at `point` (at a rational
    point: whether p with the point substituted is the zero polynomial)."""
    k = len(point)
    if p.context().nvars() <= k:
        raise KernelError(f"no variable x{k + 1} in the context of {p}")
    _require_variables(p, k + 1)
    point = [reduced(a) for a in point]
    if all(a.is_rational() for a in point):
        return at_rational_point(p, [a.low for a in point]).is_zero()
    return all(sign_at(c, point) == 0 for c in coefficients_in(p, k))


def _norm(q: fmpz_mpoly, point: Sequence[RealAlgebraic], k: int) -> fmpz_poly:
    """N(x_k): the plain iterated resultant of q with the d_i when it is non-zero (it equals
    S(0, x_k) with m = 0), else S(0, x_k) from the elimination with z (module docstring)."""
    N = _eliminate_algebraic(q, point)
    if not N.is_zero():
        coeffs = [0] * (N.degrees()[k] + 1)
        for exps, c in N.terms():
            coeffs[exps[k]] = c
        return fmpz_poly(coeffs)
    R, z = _eliminate(q, point)
    m = min(exps[z] for exps, _ in R.terms())
    norm = [0] * (R.degrees()[k] + 1)
    for exps, c in R.terms():
        if exps[z] == m:
            norm[exps[k]] = c
    return fmpz_poly(norm)


def real_roots_at(p: fmpz_mpoly, point: Sequence[RealAlgebraic]) -> list[RealAlgebraic]:
    """The distinct real roots of p(point, x_k), k = len(point), increasing, each checked (module docstring)."""
    k = len(point)
    if p.context().nvars() <= k:
        raise KernelError(f"no variable x{k + 1} in the context of {p}")
    _require_variables(p, k + 1)
    point = [reduced(a) for a in point]
    if all(a.is_rational() for a in point):
        return roots_of_substituted(p, at_rational_point(p, [a.low for a in point]))
    q = _substitute_rationals(p, point)
    if q.is_zero() or is_nullified(p, point):
        raise KernelError(f"{p} vanishes identically in x{k + 1} at the point")
    candidates = roots_of_factors([g for g, _ in _norm(q, point, k).factor()[1]])   # a norm splits, often finely
    if all(d == 0 for d in q.degrees()[:k]):
        return candidates
    cuts = _separators(candidates)
    return [r for r, a, b in zip(candidates, cuts, cuts[1:])
            if _sign_change(p, point, a, b) or sign_at(p, [*point, r]) == 0]


def _separators(roots: list[RealAlgebraic]) -> list[fmpq]:
    """Rationals c0 < r1 < c1 < ... < rn < cn, each strictly between consecutive roots."""
    if not roots:
        return [fmpq(0)]
    roots = list(roots)
    cuts = [roots[0].low - 1]
    for i in range(len(roots) - 1):
        while not roots[i].high < roots[i + 1].low:
            roots[i] = refine(roots[i], (roots[i].high - roots[i].low) / 2)
            roots[i + 1] = refine(roots[i + 1], (roots[i + 1].high - roots[i + 1].low) / 2)
        cuts.append((roots[i].high + roots[i + 1].low) / 2)
    return cuts + [roots[-1].high + 1]


def _sign_change(p: fmpz_mpoly, point, a: fmpq, b: fmpq) -> bool:
    """p(point, .) has opposite signs at a and b, so a root between them (intermediate value theorem)."""
    at = [sign_at(p, [*point, RealAlgebraic.rational(c)]) for c in (a, b)]
    return at[0] * at[1] < 0
