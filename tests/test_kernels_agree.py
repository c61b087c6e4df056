"""The prover's fast kernel against the checker's small kernel (DESIGN §2).

Two independent implementations of the same exact operations: the prover's
(prover/numbers.py, prover/roots.py: bisection by Descartes' rule, interval
Newton, primitive elements) and the checker's (checker/algebraic.py,
checker/signs.py: Sturm sequences, bisection, iterated resultants with the
root-gap rule).  On hypothesis-generated polynomials and points both must give
the same signs and the same roots, and the checker must accept every number
the prover produces as a valid isolating representation.
"""
from __future__ import annotations

import pytest
from flint import fmpq, fmpz_poly
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

pytest.importorskip("checker.signs")

from certformat.formula import poly_context  # noqa: E402
from checker import algebraic as ck  # noqa: E402
from checker import signs as cks  # noqa: E402
from prover.numbers import RealAlg  # noqa: E402
from prover.roots import (  # noqa: E402
    Nullified, is_nullified, isolate_real_roots, real_roots_at, sample_between, sign_at,
)

CTX = poly_context(3)
x0, x1, x2 = CTX.gens()
FAST = settings(max_examples=600, deadline=None, suppress_health_check=[HealthCheck.too_slow])
MEDIUM = settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
SLOW = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def to_checker(a: RealAlg) -> ck.RealAlgebraic:
    """The checker's representation of a prover number (same poly and interval)."""
    if a.is_rational:
        return ck.RealAlgebraic.rational(a.value)
    return ck.RealAlgebraic(a.poly, a.low, a.high)


def same_roots(mine: list[RealAlg], theirs: list) -> None:
    assert len(mine) == len(theirs)
    for a, b in zip(mine, theirs):
        ck.check_isolating(to_checker(a))          # the checker accepts the prover's number
        assert ck.compare(to_checker(a), b) == 0


# --------------------------------------------------------------------------
# Strategies.

small_coeffs = st.lists(st.integers(-9, 9), min_size=2, max_size=5).filter(lambda c: c[-1] != 0)


def _make_product(args) -> fmpz_poly:
    f = fmpz_poly([1])
    for coeffs, mult in args:
        f *= fmpz_poly(coeffs) ** mult
    return f


products = st.lists(st.tuples(small_coeffs, st.integers(1, 2)), min_size=1, max_size=3).map(_make_product)


def _make_algebraic(args) -> RealAlg:
    num, kind, middle, lead, pick = args
    if kind == 0:
        return RealAlg.from_rational(fmpq(num, 1 + pick))
    roots = [r for r in isolate_real_roots(fmpz_poly([num] + middle + [lead])) if not r.is_rational]
    if not roots:
        return RealAlg.from_rational(fmpq(num, 2))
    return roots[pick % len(roots)]


def algebraic(max_degree):
    return st.tuples(st.integers(-7, 7), st.integers(0, 3),
                     st.lists(st.integers(-5, 5), min_size=1, max_size=max_degree - 1),
                     st.sampled_from([-2, -1, 1, 2]), st.integers(0, 3)).map(_make_algebraic)


ALG2, ALG3 = algebraic(2), algebraic(3)


def polys(max_terms, max_degree, nvars):
    e = st.integers(0, max_degree)
    exps = st.tuples(*([e] * nvars + [st.just(0)] * (3 - nvars)))
    return st.dictionaries(exps, st.integers(-9, 9), min_size=1, max_size=max_terms).map(CTX.from_dict)


BIVARIATE = polys(6, 3, 2)
TRIVARIATE = polys(6, 2, 3)


# --------------------------------------------------------------------------
# Univariate roots and comparisons.

@MEDIUM
@given(products)
def test_isolation_agrees(f):
    same_roots(isolate_real_roots(f), ck.real_roots(f))


@FAST
@given(ALG3, ALG3)
def test_compare_agrees(a, b):
    assert a.compare(b) == ck.compare(to_checker(a), to_checker(b))


@FAST
@given(st.one_of(st.none(), ALG3), st.one_of(st.none(), ALG3))
def test_samples_are_between_for_the_checker(a, b):
    if a is not None and b is not None:
        c = a.compare(b)
        if c == 0:
            return
        if c > 0:
            a, b = b, a
    s = to_checker(sample_between(a, b))
    assert a is None or ck.compare(to_checker(a), s) < 0
    assert b is None or ck.compare(s, to_checker(b)) < 0


# --------------------------------------------------------------------------
# Signs.

@FAST
@given(BIVARIATE, ALG3, st.integers(-6, 6))
def test_sign_agrees_one_algebraic(p, a, k):
    point = [a, RealAlg.from_rational(fmpq(k, 3))]
    assert sign_at(p, point) == cks.sign_at(p, [to_checker(c) for c in point])


@MEDIUM
@given(BIVARIATE, ALG3, ALG2)
def test_sign_agrees_two_algebraic(p, a, b):
    point = [a, b]
    assert sign_at(p, point) == cks.sign_at(p, [to_checker(c) for c in point])


@MEDIUM
@given(BIVARIATE, ALG3, ALG2, st.integers(-3, 3))
def test_sign_agrees_at_constructed_zeros(r, a, b, c):
    # Algebra: a's polynomial in x0 and b's in x1 vanish at (a, b).
    pa = CTX.from_dict({(i, 0, 0): int(v) for i, v in enumerate(a.poly.coeffs()) if v})
    pb = CTX.from_dict({(0, i, 0): int(v) for i, v in enumerate(b.poly.coeffs()) if v})
    p = pa * r + pb * (x0 - c) + c
    point = [a, b]
    mine = sign_at(p, point)
    assert mine == cks.sign_at(p, [to_checker(v) for v in point])
    assert mine == (c > 0) - (c < 0)


# --------------------------------------------------------------------------
# Roots over a sample.

def roots_agree(p, point) -> None:
    theirs_point = [to_checker(c) for c in point]
    null = is_nullified(p, point)
    assert null == cks.is_nullified(p, theirs_point)
    if null:
        with pytest.raises(Nullified):
            real_roots_at(p, point)
        with pytest.raises(ck.KernelError):
            cks.real_roots_at(p, theirs_point)
        return
    same_roots(real_roots_at(p, point), cks.real_roots_at(p, theirs_point))


@MEDIUM
@given(BIVARIATE, ALG3)
def test_roots_agree_one_algebraic(p, a):
    roots_agree(p, [a])


@MEDIUM
@given(st.lists(st.integers(-3, 3), min_size=5, max_size=5), ALG3)
def test_roots_agree_on_factored_polynomials(c, a):
    # Sections through the sample (y = x0, y = -x0), repeated factors, and a
    # coefficient that vanishes at a (a's own polynomial).
    pa = CTX.from_dict({(i, 0, 0): int(v) for i, v in enumerate(a.poly.coeffs()) if v})
    p = (x1 - x0) ** 2 * (x1 + x0 + c[0]) * (c[1] * x1 ** 2 + c[2] * x0 - c[3]) + c[4] * pa * x1
    if p.is_zero():
        return
    roots_agree(p, [a])


@SLOW
@given(TRIVARIATE, ALG2, ALG2)
def test_roots_agree_two_algebraic(p, a, b):
    roots_agree(p, [a, b])


def test_roots_agree_known_degenerate_norm():
    # At (sqrt2, sqrt2), (x0 + x1)(x2 + 1) is not nullified, but at the
    # non-conjugate combination (sqrt2, -sqrt2) it is: the plain iterated
    # resultant norm vanishes identically; both kernels must cope.
    s2 = RealAlg.root(fmpz_poly([-2, 0, 1]), 1, 2)
    t2 = RealAlg.root(fmpz_poly([-2, 0, 1]), 1, fmpq(3, 2))
    roots_agree((x0 + x1) * (x2 + 1), [s2, t2])
    roots_agree((x0 - x1) * (x2 + 1) + (x0 ** 2 - 2) * x2, [s2, t2])


def test_roots_agree_on_a_tower():
    # alpha: the real root of x^3 - x - 1; beta: the roots of y^2 - alpha*y - 1.
    alpha = isolate_real_roots(fmpz_poly([-1, -1, 0, 1]))[0]
    betas = real_roots_at(x1 ** 2 - x0 * x1 - 1, [alpha])
    same_roots(betas, cks.real_roots_at(x1 ** 2 - x0 * x1 - 1, [to_checker(alpha)]))
    for beta in betas:
        roots_agree(x2 ** 2 - x1 - x0, [alpha, beta])
        roots_agree((x2 - x1) * (x2 ** 2 - x0), [alpha, beta])
        point = [alpha, beta]
        for p in (x1 ** 2 - x0 * x1 - 1, x1 - x0, x1 ** 3 - x0 * x1 ** 2 - x1):
            assert sign_at(p, point) == cks.sign_at(p, [to_checker(c) for c in point])
