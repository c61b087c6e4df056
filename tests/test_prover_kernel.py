"""The prover's exact kernel (prover/numbers.py, prover/roots.py, prover/polys.py).

Reference values come from sympy (an independent library with its own root
isolation, resultants and exact evaluation), from flint's own complex root
finder (a different algorithm from the prover's bisection), or from
constructions whose value is known by algebra (e.g. (x^2-2)*r + (y^3-3)*s
vanishes at (sqrt 2, cbrt 3)); each check names its source beside it.
"""
from __future__ import annotations

from fractions import Fraction

import pytest
import sympy
from flint import ctx, fmpq, fmpz_poly
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from certformat.formula import poly_context
from prover.numbers import RealAlg, irreducible_factors
from prover.polys import coefficients_in, squarefree_basis
from prover.roots import (
    Nullified, _field_of, _simplest_between, isolate_real_roots, is_nullified,
    real_roots_at, sample_between, sign_at,
)

X = sympy.symbols("x0:4")
CTX = poly_context(4)
x0, x1, x2, x3 = CTX.gens()
MANY = settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
FAST = settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
MEDIUM = settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
SLOW = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])


# --------------------------------------------------------------------------
# Helpers and strategies.

def q(x) -> fmpq:
    f = Fraction(x)
    return fmpq(f.numerator, f.denominator)


def sym_poly(f: fmpz_poly, var=X[0]) -> sympy.Poly:
    return sympy.Poly([int(c) for c in reversed(f.coeffs())] or [0], var)


def sym_expr(p) -> sympy.Expr:
    return sum((int(c) * sympy.Mul(*[X[i] ** e for i, e in enumerate(m)])
                for m, c in p.to_dict().items()), sympy.Integer(0))


def sym_eval(p, values) -> sympy.Rational:
    """sympy's exact value of p at rational values (sympy Poly over QQ)."""
    P = sympy.Poly.from_dict({m: int(c) for m, c in p.to_dict().items()} or {(0,) * 4: 0},
                             *X, domain=sympy.QQ)
    return P.eval(dict(zip(X, values)))


def sym_rational(v: fmpq) -> sympy.Rational:
    return sympy.Rational(int(v.p), int(v.q))


def inside(r: RealAlg, lo, hi) -> bool:
    """Exactly: lo <= r <= hi for sympy rationals lo, hi."""
    return r.compare(q(Fraction(int(lo.p), int(lo.q)))) >= 0 and \
        r.compare(q(Fraction(int(hi.p), int(hi.q)))) <= 0


small_coeffs = st.lists(st.integers(-12, 12), min_size=2, max_size=6).filter(lambda c: c[-1] != 0)


def _make_product(args) -> fmpz_poly:
    lead, factors, extra = args
    f = fmpz_poly([lead])
    for coeffs, mult in factors:
        f *= fmpz_poly(coeffs) ** mult
    if extra is not None:
        n, c0, c1 = extra
        f *= fmpz_poly([c0, c1] + [0] * (n - 2) + [1])
    return f


def products(max_factors=3):
    """A product of random factors with multiplicities (repeated factors on
    purpose), sometimes with a larger factor like x^7 - 3x - 1 (usually
    irreducible)."""
    return st.tuples(
        st.sampled_from([-5, -4, -3, -2, -1, 1, 2, 3, 4, 5]),
        st.lists(st.tuples(small_coeffs, st.integers(1, 3)), min_size=1, max_size=max_factors),
        st.one_of(st.none(), st.tuples(st.integers(5, 9), st.integers(-9, 9), st.integers(-9, 9))),
    ).map(_make_product)


def _make_algebraic(args) -> RealAlg:
    """A real algebraic number from drawn integers: the chosen real root of a
    random polynomial, or a rational (also when there is no irrational root,
    so that nothing is rejected)."""
    num, kind, den, middle, lead, pick = args
    if kind == 0:
        return RealAlg.from_rational(fmpq(num, den))
    c = [num] + middle + [lead]
    roots = [r for r in isolate_real_roots(fmpz_poly(c)) if not r.is_rational]
    if not roots:
        return RealAlg.from_rational(fmpq(num, 1 + abs(c[1])))
    return roots[pick % len(roots)]


def algebraic(max_degree=3):
    return st.tuples(st.integers(-9, 9), st.integers(0, 4), st.sampled_from([1, 2, 3, 4]),
                     st.lists(st.integers(-6, 6), min_size=1, max_size=max_degree - 1),
                     st.sampled_from([-3, -2, -1, 1, 2, 3]), st.integers(0, 3)).map(_make_algebraic)


ALG2, ALG3 = algebraic(2), algebraic(3)


def sym_value(a: RealAlg):
    """The sympy exact number for a RealAlg: a Rational, or the sympy CRootOf
    of its polynomial whose sympy isolating interval contains it."""
    if a.is_rational:
        return sym_rational(a.value)
    P = sym_poly(a.poly)
    for k, ((lo, hi), _) in enumerate(P.intervals()):
        if inside(a, lo, hi):
            return sympy.CRootOf(P.as_expr(), k)
    raise AssertionError("no sympy root interval contains the number")


_FLOATS: dict = {}


def sym_float(a: RealAlg, digits: int):
    """sympy's numeric value of a RealAlg (memoized per number and digits)."""
    key = (tuple(a.poly.coeffs()), a.to_float(), digits)
    if key not in _FLOATS:
        _FLOATS[key] = sympy.N(sym_value(a), digits)
    return _FLOATS[key]


# --------------------------------------------------------------------------
# Root isolation vs sympy and vs flint's complex root finder.

@MEDIUM
@given(products())
def test_isolate_matches_sympy(f):
    roots = isolate_real_roots(f)
    ref = sym_poly(f).intervals()             # sympy: isolating intervals, increasing
    assert len(roots) == len(ref)
    for r, ((lo, hi), _) in zip(roots, ref):
        assert inside(r, lo, hi)
        assert divmod(f, r.poly)[1] == 0      # the defining polynomial divides f
        assert sym_poly(r.poly).is_irreducible  # sympy: irreducible over Q
        if not r.is_rational:
            assert r.low < r.high and r.poly.degree() >= 2
            assert (r.poly(r.low) > 0) != (r.poly(r.high) > 0)
    for a, b in zip(roots, roots[1:]):
        assert a < b and a.compare(b) == -1 and b.compare(a) == 1


@FAST
@given(products(max_factors=2))
def test_isolate_matches_flint_complex_roots(f):
    """Second reference: flint's complex root finder (python-flint 0.9) lists,
    for each squarefree factor in turn, the proven-real roots with an
    imaginary part that is exactly 0, increasing, then the non-real ones; so
    the real roots are sorted here across factors."""
    ref = sorted((z for z, _ in f.complex_roots() if z.imag == 0), key=lambda z: float(z.real.mid()))
    roots = isolate_real_roots(f)
    assert len(roots) == len(ref)
    for r, z in zip(roots, ref):
        assert r.arb(80).overlaps(z.real)
    for z, _ in f.complex_roots():
        if z.imag != 0:
            assert not z.imag.contains(0)      # non-real roots come with a ball off the axis


def test_isolate_known_values():
    # Common-practice facts: sqrt 2 = 1.41421356..., cbrt 3 = 1.44224957...,
    # the roots of x^2 - x - 1 are (1 +- sqrt 5)/2.
    r = isolate_real_roots(fmpz_poly([-2, 0, 1]) * fmpz_poly([-3, 0, 0, 1]) * fmpz_poly([-1, -1, 1]))
    assert [round(a.to_float(), 8) for a in r] == [-1.41421356, -0.61803399, 1.41421356, 1.44224957, 1.61803399]
    assert isolate_real_roots(fmpz_poly([1, 0, 1])) == []
    assert isolate_real_roots(fmpz_poly([5])) == []
    with pytest.raises(ValueError):
        isolate_real_roots(fmpz_poly([]))
    # Mignotte-like polynomial x^20 - 2(100x - 1)^2: two roots about 10^-21
    # apart near 1/100 (sympy agrees on the count of 4 real roots).
    m = fmpz_poly([0] * 20 + [1]) - 2 * fmpz_poly([-1, 100]) ** 2
    roots = isolate_real_roots(m)
    assert len(roots) == 4 and roots[1] < roots[2]
    assert len(sym_poly(m).intervals()) == 4
    # Wilkinson's polynomial (textbook example of ill-conditioning): roots 1..20.
    w = fmpz_poly([1])
    for i in range(1, 21):
        w *= fmpz_poly([-i, 1])
    assert [r.value for r in isolate_real_roots(w)] == [fmpq(i) for i in range(1, 21)]
    # A degree-12 irreducible factor times its shifted copy (sympy: 4 real roots).
    f = fmpz_poly([-7, 3] + [0] * 10 + [1])
    g = f * f(fmpz_poly([1, 1]))
    assert len(isolate_real_roots(g)) == len(sym_poly(g).intervals())


@FAST
@given(st.lists(st.integers(-30, 30), min_size=3, max_size=3).filter(lambda c: c[2] != 0))
def test_quadratic_closed_form(c):
    f = fmpz_poly(c)
    roots = isolate_real_roots(f)
    disc = c[1] ** 2 - 4 * c[0] * c[2]
    assert len(roots) == (0 if disc < 0 else 1 if disc == 0 else 2)  # common-practice fact
    if disc > 0:   # the quadratic formula, in floats
        ref = sorted((-c[1] + s * disc ** 0.5) / (2 * c[2]) for s in (-1, 1))
        assert all(abs(r.to_float() - x) < 1e-9 for r, x in zip(roots, ref))
        assert all(r.is_rational == sympy.sqrt(disc).is_rational for r in roots)  # sympy


@MEDIUM
@given(products(max_factors=2), st.integers(10, 300))
def test_refine_and_arb(f, bits):
    for r in isolate_real_roots(f):
        if r.is_rational:
            continue
        low, high = r.low, r.high
        r.refine(bits)
        assert r.high - r.low <= fmpq(1, 2 ** bits)
        assert low <= r.low < r.high <= high
        assert (r.poly(r.low) > 0) != (r.poly(r.high) > 0)   # still a sign change
        ball = r.arb(bits)
        assert ball.contains(r.arb(bits + 50))
        v = float(sym_float(r, 20))                            # sympy numeric value
        assert abs(float(ball.mid()) - v) <= 2.0 ** (2 - bits) * max(1, abs(v)) + 1e-15


# --------------------------------------------------------------------------
# Signs at rational points vs sympy exact evaluation.

def trivariate(max_terms=12, max_degree=4):
    """A random integer polynomial in x0, x1, x2 (in the 4-variable context)."""
    e = st.integers(0, max_degree)
    return st.dictionaries(st.tuples(e, e, e, st.just(0)), st.integers(-20, 20),
                           min_size=1, max_size=max_terms).map(CTX.from_dict)


TRI, TRI_SMALL, TRI_TINY = trivariate(), trivariate(6, 3), trivariate(4, 2)
rationals = st.builds(Fraction, st.integers(-80, 80), st.sampled_from([1, 2, 3, 4, 5, 8, 16]))


@MANY
@given(TRI, st.lists(rationals, min_size=3, max_size=3))
def test_sign_at_rational_points(p, pt):
    point = [RealAlg.from_rational(q(v)) for v in pt]
    ref = sym_eval(p, [sympy.Rational(v.numerator, v.denominator) for v in pt] + [0])
    assert sign_at(p, point) == int(sympy.sign(ref))     # sympy exact rational arithmetic


# --------------------------------------------------------------------------
# Signs at algebraic points.

NEG_SQRT2, SQRT2 = isolate_real_roots(fmpz_poly([-2, 0, 1]))
CBRT3 = isolate_real_roots(fmpz_poly([-3, 0, 0, 1]))[0]


@FAST
@given(TRI_SMALL, TRI_SMALL,
       st.integers(-3, 3), rationals)
def test_constructed_zeros_at_sqrt2_cbrt3(r, s, k, eps):
    # Algebra: (x0^2 - 2) and (x1^3 - 3) vanish at (sqrt 2, cbrt 3), so any
    # combination of them does, whatever r and s are.
    p = (x0 ** 2 - 2) * r + (x1 ** 3 - 3) * s
    third = RealAlg.from_rational(q(Fraction(k, 2)))
    point = [SQRT2, CBRT3, third]
    assert sign_at(p, point) == 0
    e = q(eps)
    assert sign_at(p + CTX.from_dict({(0, 0, 0, 0): int(e.p)}), point) == (e.p > 0) - (e.p < 0)
    assert sign_at(p * (x0 - x1) + (x0 ** 2 - 2), point) == 0


@FAST
@given(st.integers(0, 4), st.integers(0, 3), st.integers(-3, 3))
def test_constructed_monomial_zeros(a, b, shift):
    # Algebra: sqrt2^(2a) * cbrt3^(3b) = 2^a * 3^b exactly.
    value = 2 ** a * 3 ** b
    m = x0 ** (2 * a) * x1 ** (3 * b)
    assert sign_at(m - value, [SQRT2, CBRT3]) == 0
    assert sign_at(m - value - shift, [SQRT2, CBRT3]) == (shift < 0) - (shift > 0)
    # (x0*x1)^6 = 72 at (sqrt 2, cbrt 3): (x*y - cbrt3*sqrt2)-style zero.
    assert sign_at((x0 * x1) ** 6 - 72, [SQRT2, CBRT3]) == 0
    assert sign_at(x0 * x1 - 2, [SQRT2, CBRT3]) == 1            # 2.0396 > 2 (common-practice value)


@FAST
@given(TRI_SMALL, ALG3, ALG3, rationals)
def test_sign_at_algebraic_points_vs_sympy(p, a, b, c):
    point = [a, b, RealAlg.from_rational(q(c))]
    ref = sympy.N(sym_expr(p).subs({X[0]: sym_float(a, 80), X[1]: sym_float(b, 80),
                                   X[2]: sympy.Rational(c.numerator, c.denominator)}), 70)
    s = sign_at(p, point)
    if abs(ref) > 1e-30:                       # sympy numeric value, far from 0
        assert s == (1 if ref > 0 else -1)
    elif abs(ref) < 1e-45:                     # numerically zero at 60 digits
        assert s == 0


@FAST
@given(ALG3, ALG3, TRI_TINY)
def test_sign_zero_iff_vanishing_by_construction(a, b, r):
    # Algebra: (a.poly)(x0) * r vanishes at a; adding (x1 - b)-multiples of
    # b's polynomial keeps it zero; adding 1 to a square makes it positive.
    p = CTX.from_dict({(i, 0, 0, 0): int(c) for i, c in enumerate(a.poly.coeffs()) if c}) * r
    g = CTX.from_dict({(0, i, 0, 0): int(c) for i, c in enumerate(b.poly.coeffs()) if c})
    point = [a, b, RealAlg.from_rational(fmpq(1, 3))]
    assert sign_at(p + g * (x0 + x2), point) == 0
    assert sign_at((p + x0 - x1) ** 2 + 1, point) == 1


# --------------------------------------------------------------------------
# Roots over a sample vs sympy.

def sym_roots_over(p, point, k):
    """sympy reference: real roots of p(point, y) as numbers with 40 digits:
    the real roots of the norm (sympy resultants of the defining polynomials),
    kept where p(point, root) is numerically zero at 60 digits."""
    y = X[k]
    expr = sym_expr(p)
    norm = expr
    for i, a in enumerate(point):
        if a.is_rational:
            norm = norm.subs(X[i], sym_rational(a.value))
    for i, a in enumerate(point):
        if not a.is_rational:
            norm = sympy.resultant(sym_poly(a.poly, X[i]).as_expr(), norm, X[i])
    subs = {X[i]: sym_float(a, 70) for i, a in enumerate(point)}
    at_point = sympy.Poly(expr.subs(subs), y)
    out = []
    for r in sympy.Poly(norm, y).real_roots():
        if r in out:
            continue
        if abs(at_point.eval(sympy.N(r, 70))) < 1e-35:
            out.append(r)
    return out


@MEDIUM
@given(ALG3, st.lists(st.integers(-4, 4), min_size=6, max_size=6), st.integers(0, 2))
def test_real_roots_over_one_algebraic(a, c, shape):
    # p(x0, x1) mixing the sample coordinate and the root variable.
    y = x1
    p = [c[0] * y ** 2 + c[1] * x0 * y + c[2] * x0 ** 2 - c[3],
         (y - x0) * (c[4] * y ** 2 + c[5] * x0 + 1),
         (y ** 2 - 2) * (y - c[0]) * (c[1] * x0 * y - 1)][shape]
    assume(not p.is_zero())
    point = [a]
    if is_nullified(p, point):
        with pytest.raises(Nullified):
            real_roots_at(p, point)
        return
    roots = real_roots_at(p, point)
    ref = sym_roots_over(p, point, 1)
    assert len(roots) == len(ref)
    for r, s in zip(roots, ref):
        assert abs(r.to_float() - float(sympy.N(s, 30))) < 1e-9
        assert sign_at(p, point + [r]) == 0        # consistency of the two kernels parts
    for u, v in zip(roots, roots[1:]):
        assert u < v


@SLOW
@given(ALG3, ALG2, st.lists(st.integers(-3, 3), min_size=4, max_size=4))
def test_real_roots_over_two_algebraic(a, b, c):
    y = x2
    p = (y ** 2 - c[0] * x0 * x1 - c[1]) * (y - x0 - c[2] * x1) + c[3] * (x1 ** 2 - x0)
    assume(not p.is_zero())
    point = [a, b]
    if is_nullified(p, point):
        return
    roots = real_roots_at(p, point)
    ref = sym_roots_over(p, point, 2)
    assert len(roots) == len(ref)
    for r, s in zip(roots, ref):
        assert abs(r.to_float() - float(sympy.N(s, 30))) < 1e-9


def test_real_roots_at_known_cases():
    # Algebra: at x0 = sqrt 2, y^2 - x0^2 = (y - sqrt2)(y + sqrt2).
    r = real_roots_at(x1 ** 2 - x0 ** 2, [SQRT2])
    assert len(r) == 2 and r[1] == SQRT2 and r[0] == NEG_SQRT2
    # Algebra: y - x0*x1 at (sqrt 2, cbrt 3) has the single root sqrt2*cbrt3 = 72^(1/6).
    r = real_roots_at(x2 - x0 * x1, [SQRT2, CBRT3])
    assert len(r) == 1 and r[0].poly == fmpz_poly([-72, 0, 0, 0, 0, 0, 1])
    # Nullification: (x0^2 - 2) * y vanishes identically at sqrt 2 ...
    with pytest.raises(Nullified):
        real_roots_at((x0 ** 2 - 2) * x1 + (x0 ** 2 - 2), [SQRT2])
    assert is_nullified((x0 ** 2 - 2) * x1, [SQRT2])
    # ... and a non-conjugate combination: at (sqrt2, sqrt2) the polynomial
    # (x0 + x1)(y + 1) is not nullified although at (sqrt2, -sqrt2) it is, so
    # the iterated-resultant norm vanishes identically; the field does not care.
    other = RealAlg.root(fmpz_poly([-2, 0, 1]), 1, 2)      # a second object for sqrt 2
    p = (x0 + x1) * (x2 + 1)
    assert not is_nullified(p, [SQRT2, other])
    assert [t.value for t in real_roots_at(p, [SQRT2, other])] == [-1]
    assert is_nullified(p, [SQRT2, NEG_SQRT2])
    assert sign_at(x0 + x1, [SQRT2, NEG_SQRT2]) == 0 and sign_at(x0 - x1, [SQRT2, other]) == 0
    # All-rational sample.
    half = RealAlg.from_rational(fmpq(1, 2))
    assert [t.value for t in real_roots_at(x1 ** 2 - x0 ** 2, [half])] == [fmpq(-1, 2), fmpq(1, 2)]
    assert real_roots_at(x1 ** 2 + x0, [half]) == []
    with pytest.raises(Nullified):
        real_roots_at((2 * x0 - 1) * x1, [half])


def test_primitive_element_images():
    f = _field_of((SQRT2, CBRT3))
    assert f.theta.poly.degree() == 6
    # Each image evaluated at theta reproduces its coordinate (arb check).
    for img, a in zip(f.images, (SQRT2, CBRT3)):
        with ctx.workprec(200):
            v = img.numer()(f.theta.arb(200)) / img.denom()
        assert v.overlaps(a.arb(200)) and v.rad() < 1e-40


# --------------------------------------------------------------------------
# Comparisons and samples.

@MANY
@given(ALG3, ALG3)
def test_compare_vs_sympy(a, b):
    ref = sympy.sign(sym_float(a, 40) - sym_float(b, 40))     # sympy numeric
    c = a.compare(b)
    assert c == -b.compare(a)
    if c == 0:
        assert a.poly == b.poly
    else:
        assert c == ref
    assert (a == b) == (c == 0) and (a < b) == (c < 0)
    if c == 0:
        assert hash(a) == hash(b)


bounds = st.one_of(st.none(), ALG3)


@settings(max_examples=1000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(bounds, bounds)
def test_sample_between(a, b):
    if a is not None and b is not None:
        c = a.compare(b)
        assume(c != 0)
        if c > 0:
            a, b = b, a
    s = sample_between(a, b)
    assert s.is_rational
    v = s.value
    assert a is None or a < s
    assert b is None or s < b
    if v.q == 1:
        # an integer: no integer closer to 0 lies between a and b
        if v != 0:
            closer = RealAlg.from_rational(v - (1 if v > 0 else -1))
            assert (a is not None and closer <= a) or (b is not None and closer >= b)
    else:
        # no integer between; no dyadic of a smaller denominator between
        assert v.q & (v.q - 1) == 0                     # dyadic
        coarser = v.q // 2
        lo = RealAlg.from_rational(fmpq((v * coarser).floor(), coarser))
        hi = RealAlg.from_rational(fmpq((v * coarser).ceil(), coarser))
        assert a is not None and b is not None and lo <= a and hi >= b
    # deterministic: again on fresh copies
    again = sample_between(None if a is None else RealAlg.root(a.poly, a.low, a.high) if not a.is_rational else a,
                           None if b is None else RealAlg.root(b.poly, b.low, b.high) if not b.is_rational else b)
    assert again.value == v


def test_sample_between_known():
    r = RealAlg.from_rational
    assert sample_between(None, None).value == 0
    assert sample_between(r(fmpq(1, 3)), r(fmpq(1, 2))).value == fmpq(3, 8)
    assert sample_between(r(-7), r(-2)).value == -3
    assert sample_between(r(2), None).value == 3
    assert sample_between(None, r(-2)).value == -3
    assert sample_between(SQRT2, CBRT3).value == fmpq(23, 16)      # 1.4142 < 1.4375 < 1.4422
    assert sample_between(r(1), SQRT2).value == fmpq(5, 4)
    with pytest.raises(ValueError):
        sample_between(CBRT3, SQRT2)
    assert _simplest_between(fmpq(-1, 2), fmpq(1, 2)) == 0


# --------------------------------------------------------------------------
# Construction and helpers.

def test_root_constructor_normalizes():
    # (x^2 - 2)(x - 3) has the single root sqrt 2 in (1, 2): the factor is kept.
    a = RealAlg.root(fmpz_poly([-2, 0, 1]) * fmpz_poly([-3, 1]), 1, 2)
    assert a.poly == fmpz_poly([-2, 0, 1]) and a == SQRT2
    b = RealAlg.root(-fmpz_poly([-2, 0, 1]) * fmpz_poly([-3, 1]), fmpq(5, 2), 4)
    assert b.is_rational and b.value == 3
    with pytest.raises(ValueError):
        RealAlg.root(fmpz_poly([-2, 0, 1]), 2, 3)
    assert RealAlg.from_rational(Fraction(6, 4)).value == fmpq(3, 2)
    assert RealAlg.from_rational(3) == 3 and RealAlg.from_rational(3) > SQRT2


def test_poly_helpers():
    p = (x0 ** 2 - 2) * (x1 + 1) * (x1 + 1) * 3
    coeffs = coefficients_in(p, 1)
    assert coeffs == [3 * (x0 ** 2 - 2), 6 * (x0 ** 2 - 2), 3 * (x0 ** 2 - 2)]
    basis = squarefree_basis([p, -(x1 + 1), x0 * 0 + 7])
    assert sorted(str(b) for b in basis) == ["x1^2 - 2", "x2 + 1"]
    factors = irreducible_factors(-fmpz_poly([-4, 0, 2]) * fmpz_poly([1, 1]) ** 3)
    assert sorted(str(f) for f in factors) == ["x + 1", "x^2 + (-2)"]


def test_tower_of_three_coordinates():
    # A cylindrical tower: alpha = the real root of x^3 - x - 1 (the plastic
    # number 1.3247..., a common-practice value), beta the roots of
    # y^2 - alpha*y - 1, gamma the roots of z^2 - beta - alpha.
    alpha = isolate_real_roots(fmpz_poly([-1, -1, 0, 1]))[0]
    assert abs(alpha.to_float() - 1.324717957) < 1e-9
    betas = real_roots_at(x1 ** 2 - x0 * x1 - 1, [alpha])
    assert len(betas) == 2                      # discriminant alpha^2 + 4 > 0 (algebra)
    for beta in betas:
        assert sign_at(x1 ** 2 - x0 * x1 - 1, [alpha, beta]) == 0
        assert sign_at(x1 ** 2 - x0 * x1, [alpha, beta]) == 1
        gammas = real_roots_at(x2 ** 2 - x1 - x0, [alpha, beta])
        # Algebra: real roots exist iff alpha + beta >= 0.
        assert len(gammas) == (2 if alpha.to_float() + beta.to_float() > 0 else 0)
        for gamma in gammas:
            point = [alpha, beta, gamma]
            assert sign_at(x2 ** 2 - x1 - x0, point) == 0
            assert sign_at(x2 ** 3 - (x0 + x1) * x2, point) == 0
            assert sign_at(x2 ** 2 - x1 - x0 + x3 - x3 + 1, point) == 1
            roots = real_roots_at((x3 - x2) * (x3 ** 2 - x0 - x1 - x2), point)
            s = alpha.to_float() + beta.to_float() + gamma.to_float()
            expected = sorted({gamma.to_float()} | ({s ** 0.5, -s ** 0.5} if s > 0 else set()))
            assert [round(r.to_float(), 9) for r in roots] == [round(v, 9) for v in expected]
            assert any(r == gamma for r in roots)


def test_initial_interval_is_history_independent():
    f = fmpz_poly([-5, 0, -7, 0, 1]) * fmpz_poly([-1, 0, 0, 3])
    first = [r.initial_interval for r in isolate_real_roots(f)]
    for r in isolate_real_roots(f):
        r.refine(100)
        assert r.initial_interval[0] <= r.low < r.high <= r.initial_interval[1]
    from prover.roots import forget_cached
    forget_cached()
    assert [r.initial_interval for r in isolate_real_roots(f)] == first


def test_variables_beyond_the_point_are_rejected():
    one = RealAlg.from_rational(1)
    with pytest.raises(ValueError):
        sign_at(x0 + x1, [one])
    with pytest.raises(ValueError):
        real_roots_at(x0 + x2, [one])
    assert sign_at(x0 + x1 - x1, [one]) == 1
